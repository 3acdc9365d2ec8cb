/* SPDX-License-Identifier: MIT
 *
 * sf-report.c — the output files of a fleet run (formats: docs/output-formats.md).
 */
#include "sf-report.h"

#include <errno.h>
#include <stdio.h>
#include <string.h>

#include <cjson/cJSON.h>
#include <glib/gstdio.h>

#include "sf-scenario.h"
#include "sf-util.h"

#define FORMAT_TAG "stripfleet-run-1"

struct _SfReport {
  char *dir;                 /* where the files go (a staging folder); NULL: nothing is written */
  GDateTime *start;          /* borrowed from the scenario */
  char *shown;               /* the folder as the user named it, for messages */
  FILE *log;                 /* events.log being written */
  GArray *schedule;          /* SfScheduleRow */
  GArray *daily;             /* SfDailyRow */
  guint64 seed;
  gboolean log_failed;
  int log_errno;
};

char *
sf_report_iso (GDateTime *start, SfTime t_ms)
{
  g_autoptr (GDateTime) t = g_date_time_add (start, (GTimeSpan) t_ms * 1000);
  return g_date_time_format (t, "%Y-%m-%dT%H:%M:%S%:z");
}

/* dir/name, opened for writing; NULL with the error naming shown/name */
static FILE *
open_out (const SfReport *rep, const char *name, GError **error)
{
  g_autofree char *path = g_build_filename (rep->dir, name, NULL);
  FILE *fp = fopen (path, "we");
  if (!fp)
    {
      int e = errno;
      g_set_error (error, G_FILE_ERROR, g_file_error_from_errno (e), "cannot write %s/%s: %s",
                   rep->shown, name, g_strerror (e));
    }
  return fp;
}

/* Closes fp, reporting a failed write (a full disk, say) naming shown/name. */
static gboolean
close_out (const SfReport *rep, FILE *fp, const char *name, int earlier_errno, GError **error)
{
  int e = earlier_errno;
  if (fflush (fp) != 0 || ferror (fp))
    e = e ? e : (errno ? errno : EIO);
  if (fclose (fp) != 0)
    e = e ? e : errno;
  if (e)
    g_set_error (error, G_FILE_ERROR, g_file_error_from_errno (e), "cannot write %s/%s: %s",
                 rep->shown, name, g_strerror (e));
  return e == 0;
}

SfReport *
sf_report_new (const char *write_dir, const char *shown_dir, const char *scenario_name,
               GDateTime *start, guint64 seed, GError **error)
{
  SfReport *rep = g_new0 (SfReport, 1);
  rep->start = start;
  rep->seed = seed;
  rep->schedule = g_array_new (FALSE, TRUE, sizeof (SfScheduleRow));
  rep->daily = g_array_new (FALSE, TRUE, sizeof (SfDailyRow));
  if (!write_dir)
    return rep;
  rep->dir = g_strdup (write_dir);
  rep->shown = g_strdup (shown_dir ? shown_dir : write_dir);
  rep->log = open_out (rep, "events.log", error);
  if (!rep->log)
    {
      sf_report_abort (rep);
      return NULL;
    }
  g_autofree char *iso = sf_report_iso (start, 0);
  fprintf (rep->log,
           "# %s events\n# scenario: %s\n# start: %s\n# seed: %" G_GUINT64_FORMAT "\n"
           "# t_ms kind dozer block lane slice a b c\n",
           FORMAT_TAG, scenario_name, iso, seed);
  return rep;
}

void
sf_report_event (SfReport *rep, SfTime t_ms, const char *kind, int dozer, int block, int lane,
                 int slice, double a, double b, double c)
{
  if (!rep || !rep->log)
    return;
  if (fprintf (rep->log, "%" G_GINT64_FORMAT " %s %d %d %d %d %.3f %.3f %.3f\n", t_ms, kind,
               dozer, block, lane, slice, a, b, c)
      < 0 && !rep->log_failed)
    {
      rep->log_failed = TRUE;
      rep->log_errno = errno;
    }
}

gboolean
sf_report_failed (const SfReport *rep)
{
  return rep && rep->log_failed;
}

void
sf_report_schedule (SfReport *rep, const SfScheduleRow *row)
{
  g_array_append_val (rep->schedule, *row);
}

void
sf_report_daily (SfReport *rep, const SfDailyRow *row)
{
  g_array_append_val (rep->daily, *row);
}

void
sf_report_abort (SfReport *rep)
{
  if (!rep)
    return;
  if (rep->log)
    fclose (rep->log);
  g_free (rep->shown);
  g_array_unref (rep->schedule);
  g_array_unref (rep->daily);
  g_free (rep->dir);
  g_free (rep);
}

static char *
schedule_csv (SfReport *rep)
{
  GString *s = g_string_new ("block,lane,slice,kind,start,finish,start_h,finish_h,dozer,pushes,"
                             "moved_bcm,end\n");
  for (guint i = 0; i < rep->schedule->len; i++)
    {
      const SfScheduleRow *r = &g_array_index (rep->schedule, SfScheduleRow, i);
      g_autofree char *a = sf_report_iso (rep->start, r->start_ms);
      g_autofree char *b = sf_report_iso (rep->start, r->finish_ms);
      g_string_append_printf (s, "%u,%u,%u,%s,%s,%s,%.4f,%.4f,dz%02u,%u,%.2f,%s\n", r->block, r->lane,
                              r->slice, r->kind, a, b, (double) r->start_ms / SF_TIME_MS_PER_H,
                              (double) r->finish_ms / SF_TIME_MS_PER_H, r->dozer + 1, r->pushes,
                              r->moved_bcm, r->end_reason ? r->end_reason : "");
    }
  return g_string_free (s, FALSE);
}

static char *
daily_csv (SfReport *rep)
{
  GString *s = g_string_new ("date,pushes,dumped_bcm,operating_h\n");
  g_autoptr (GDateTime) d0 = g_date_time_new (g_date_time_get_timezone (rep->start),
                                              g_date_time_get_year (rep->start),
                                              g_date_time_get_month (rep->start),
                                              g_date_time_get_day_of_month (rep->start), 0, 0, 0);
  for (guint i = 0; i < rep->daily->len; i++)
    {
      const SfDailyRow *r = &g_array_index (rep->daily, SfDailyRow, i);
      g_autoptr (GDateTime) d = g_date_time_add_days (d0, (gint) r->day);
      g_autofree char *date = g_date_time_format (d, "%Y-%m-%d");
      g_string_append_printf (s, "%s,%u,%.2f,%.3f\n", date, r->pushes, r->dumped_bcm,
                              r->operating_h);
    }
  return g_string_free (s, FALSE);
}

static cJSON *
summary_json (const SfScenario *sc, const SfRunSummary *sum, guint64 seed)
{
  cJSON *root = cJSON_CreateObject ();
  cJSON_AddStringToObject (root, "format", FORMAT_TAG);
  cJSON_AddStringToObject (root, "scenario", sc->name);
  cJSON_AddStringToObject (root, "description", sc->description ? sc->description : "");
  cJSON_AddStringToObject (root, "note", "Planning estimate only, not a work instruction; defer "
                                         "to local regulations, site procedures and licensed "
                                         "practice.");
  cJSON_AddNumberToObject (root, "seed", (double) seed);
  /* how the run was made, beside the seed: enough to make it again */
  cJSON *ro = cJSON_AddObjectToObject (root, "run");
  cJSON_AddNumberToObject (ro, "replication", sum->replication);
  cJSON_AddNumberToObject (ro, "dozers", sum->dozers->len);
  cJSON_AddBoolToObject (ro, "breakdowns_and_weather", sum->randomness);
  cJSON *ops = cJSON_AddObjectToObject (ro, "crew_operators");
  for (guint c = 0; sum->crew_operators && c < sum->crew_operators->len; c++)
    {
      g_autofree char *fallback = g_strdup_printf ("crew %u", c);
      const char *name = sc->roster.crews[c].name ? sc->roster.crews[c].name : fallback;
      cJSON_AddNumberToObject (ops, name, g_array_index (sum->crew_operators, guint, c));
    }
  cJSON_AddBoolToObject (root, "complete", sum->complete);
  cJSON_AddStringToObject (root, "end_reason", sum->end_reason);
  cJSON_AddStringToObject (root, "start", sum->start_iso);
  cJSON_AddStringToObject (root, "end", sum->end_iso);
  cJSON_AddNumberToObject (root, "calendar_h", sum->calendar_h);
  cJSON *v = cJSON_AddObjectToObject (root, "volumes_bcm");
  cJSON_AddNumberToObject (v, "planned", sum->planned_bcm);
  cJSON_AddNumberToObject (v, "moved", sum->moved_bcm);
  cJSON_AddNumberToObject (v, "dropped_in_place", sum->dropped_bcm);
  cJSON_AddNumberToObject (v, "left", sum->left_bcm);
  cJSON_AddNumberToObject (v, "dumped_gross", sum->dumped_bcm);
  cJSON_AddNumberToObject (v, "dozer_rehandle", sum->rehandled_bcm);
  cJSON_AddNumberToObject (v, "over_final_spoil_line", sum->over_spoil_bcm);
  cJSON *r = cJSON_AddObjectToObject (root, "rates");
  cJSON_AddNumberToObject (r, "fleet_operating_h", sum->operating_h);
  cJSON_AddNumberToObject (r, "bcm_per_operating_h", sum->bcm_per_operating_h);
  cJSON_AddNumberToObject (r, "bcm_per_calendar_h", sum->bcm_per_calendar_h);
  cJSON_AddNumberToObject (r, "strip_m_per_day", sum->strip_m_per_day);
  cJSON_AddNumberToObject (r, "coal_t_per_day", sum->coal_t_per_day);
  cJSON_AddNumberToObject (r, "pushes", sum->pushes);
  cJSON_AddNumberToObject (r, "events", (double) sum->events);
  cJSON *c = cJSON_AddObjectToObject (root, "cost");
  cJSON_AddNumberToObject (c, "total", sum->cost);
  cJSON_AddNumberToObject (c, "per_bcm", sum->cost_per_bcm);
  cJSON *dz = cJSON_AddArrayToObject (root, "dozers");
  for (guint i = 0; i < sum->dozers->len; i++)
    {
      const SfDozerResult *d = &g_array_index (sum->dozers, SfDozerResult, i);
      cJSON *o = cJSON_CreateObject ();
      cJSON_AddStringToObject (o, "name", d->name);
      cJSON_AddStringToObject (o, "class", d->class_name);
      cJSON_AddNumberToObject (o, "pushes", d->pushes);
      cJSON_AddNumberToObject (o, "failures", d->failures);
      cJSON_AddNumberToObject (o, "dumped_bcm", d->moved_bcm);
      cJSON_AddNumberToObject (o, "bcm_per_operating_h", d->bcm_per_operating_h);
      cJSON_AddNumberToObject (o, "engine_h", d->engine_h);
      cJSON_AddNumberToObject (o, "cost", d->cost);
      cJSON *u = cJSON_AddObjectToObject (o, "time_h");
      gint64 total = 0;
      for (int k = 0; k < SF_USE_N; k++)
        {
          cJSON_AddNumberToObject (u, sf_use_to_str (k), (double) d->use_ms[k] / SF_TIME_MS_PER_H);
          total += d->use_ms[k];
        }
      cJSON_AddNumberToObject (o, "calendar_ms", (double) total);
      cJSON_AddItemToArray (dz, o);
    }
  return root;
}

/* Writes shown/name from text. */
static gboolean
write_out (const SfReport *rep, const char *name, const char *text, GError **error)
{
  FILE *fp = open_out (rep, name, error);
  if (!fp)
    return FALSE;
  int e = fputs (text, fp) < 0 ? errno : 0;
  return close_out (rep, fp, name, e, error);
}

gboolean
sf_report_finish (SfReport *rep, const SfScenario *sc, const SfRunSummary *sum, GError **error)
{
  if (!rep->dir)
    {
      sf_report_abort (rep);
      return TRUE;
    }
  FILE *log = g_steal_pointer (&rep->log);
  if (!close_out (rep, log, "events.log", rep->log_failed ? rep->log_errno : 0, error))
    {
      sf_report_abort (rep);
      return FALSE;
    }
  g_autofree char *sched = schedule_csv (rep);
  g_autofree char *daily = daily_csv (rep);
  cJSON *root = summary_json (sc, sum, rep->seed);
  char *js = cJSON_Print (root);
  cJSON_Delete (root);
  g_autofree char *js2 = g_strconcat (js, "\n", NULL);
  cJSON_free (js);
  /* into the run's staging folder: the files become the output folder
   * together, when the run commits its output set (sf-outdir.h) */
  gboolean ok = write_out (rep, "schedule.csv", sched, error)
                && write_out (rep, "daily.csv", daily, error)
                && write_out (rep, "summary.json", js2, error);
  sf_report_abort (rep);
  return ok;
}
