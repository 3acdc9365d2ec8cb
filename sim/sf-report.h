/* SPDX-License-Identifier: MIT
 *
 * sf-report.h — the output files of a fleet run (internal to sim/).
 *
 * Owns: the four files of one run (docs/output-formats.md):
 *   events.log    one line per event, streamed while the run goes;
 *   schedule.csv  one row per block, lane and slice;
 *   daily.csv     one row per local calendar day;
 *   summary.json  volumes, rates, time usage and costs.
 * The files are written into the folder the caller gives — the staging
 * folder of the run's output set (sf-outdir.h), which becomes the output
 * folder as a whole when the run commits; messages name the folder the user
 * named instead.
 *
 * Memory: sf_report_new returns an owned SfReport; sf_report_finish and
 * sf_report_abort free it.  Rows are copied.
 */
#pragma once

#include <glib.h>
#include "sf-kernel.h"
#include "stripfleet.h"

G_BEGIN_DECLS

typedef struct _SfReport SfReport;

typedef struct {
  guint block, lane, slice;
  const char *kind;          /* static */
  const char *end_reason;    /* static */
  SfTime start_ms, finish_ms;
  guint dozer;               /* the dozer that made the last push */
  guint pushes;
  double moved_bcm;
} SfScheduleRow;

typedef struct {
  gint64 day;                /* local day index from the start date */
  guint pushes;
  double dumped_bcm;
  double operating_h;
  double weather_h;
} SfDailyRow;

/* write_dir NULL: a report that writes nothing (rows are still kept).
 * shown_dir (NULL: write_dir) stands for write_dir in messages. */
SfReport *sf_report_new (const char *write_dir, const char *shown_dir, const char *scenario_name,
                         GDateTime *start, guint64 seed, GError **error);

/* One event-log line: time, kind, dozer, then up to three numbers. */
void sf_report_event (SfReport *rep, SfTime t_ms, const char *kind, int dozer, int block, int lane,
                      int slice, double a, double b, double c);
void sf_report_schedule (SfReport *rep, const SfScheduleRow *row);
void sf_report_daily (SfReport *rep, const SfDailyRow *row);
/* TRUE once a write to the event log has failed (a full disk, say): the run
 * can stop there, and sf_report_finish() fails with the reason.  NULL is
 * fine (FALSE). */
gboolean sf_report_failed (const SfReport *rep);

/* Closes events.log and writes schedule.csv, daily.csv and summary.json
 * beside it.  Frees rep in every case. */
gboolean sf_report_finish (SfReport *rep, const SfScenario *sc, const SfRunSummary *sum,
                           GError **error);
void sf_report_abort (SfReport *rep);

/* ISO 8601 local time of run time t (newly allocated). */
char *sf_report_iso (GDateTime *start, SfTime t_ms);

G_END_DECLS
