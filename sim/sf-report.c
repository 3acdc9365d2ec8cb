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
  char *dir;                 /* NULL: nothing is written */
  GDateTime *start;          /* borrowed from the scenario */
  SfAtomicFile *log;         /* events.log being written */
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

/* The scenario named by an existing summary.json in dir, or NULL. */
static char *
existing_scenario (const char *dir)
{
  g_autofree char *path = g_build_filename (dir, "summary.json", NULL);
  g_autofree char *text = NULL;
  gsize len = 0;
  if (!g_file_get_contents (path, &text, &len, NULL))
    return NULL;
  cJSON *root = cJSON_ParseWithLength (text, len);
  char *name = NULL;
  const cJSON *sc = cJSON_GetObjectItemCaseSensitive (root, "scenario");
  if (cJSON_IsString (sc))
    name = g_strdup (sc->valuestring);
  else
    name = g_strdup ("(unreadable summary.json)");
  cJSON_Delete (root);
  return name;
}

SfReport *
sf_report_new (const char *out_dir, const char *scenario_name, gboolean overwrite,
               GDateTime *start, guint64 seed, GError **error)
{
  SfReport *rep = g_new0 (SfReport, 1);
  rep->start = start;
  rep->seed = seed;
  rep->schedule = g_array_new (FALSE, TRUE, sizeof (SfScheduleRow));
  rep->daily = g_array_new (FALSE, TRUE, sizeof (SfDailyRow));
  if (!out_dir)
    return rep;
  if (g_mkdir_with_parents (out_dir, 0755) != 0)
    {
      int e = errno;
      g_set_error (error, G_FILE_ERROR, g_file_error_from_errno (e),
                   "cannot create the output folder %s: %s", out_dir, g_strerror (e));
      sf_report_abort (rep);
      return NULL;
    }
  g_autofree char *other = existing_scenario (out_dir);
  if (other && g_strcmp0 (other, scenario_name) != 0 && !overwrite)
    {
      g_set_error (error, G_FILE_ERROR, G_FILE_ERROR_EXIST,
                   "the output folder %s holds the outputs of scenario '%s', not '%s'; choose "
                   "another folder or allow overwriting (--overwrite)",
                   out_dir, other, scenario_name);
      sf_report_abort (rep);
      return NULL;
    }
  rep->dir = g_strdup (out_dir);
  /* temporary files of a run that was killed before it could clean up */
  static const char *const names[] = { "events.log", "schedule.csv", "daily.csv", "summary.json",
                                       NULL };
  sf_atomic_file_remove_stale (out_dir, names);
  g_autofree char *log_path = g_build_filename (out_dir, "events.log", NULL);
  rep->log = sf_atomic_file_open (log_path, error);
  if (!rep->log)
    {
      sf_report_abort (rep);
      return NULL;
    }
  g_autofree char *iso = sf_report_iso (start, 0);
  fprintf (rep->log->fp,
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
  if (fprintf (rep->log->fp, "%" G_GINT64_FORMAT " %s %d %d %d %d %.3f %.3f %.3f\n", t_ms, kind,
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
  sf_atomic_file_abort (rep->log);
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

/* Opens a temporary file for dir/name holding text; NULL with the error
 * naming the final path when it cannot be created or written. */
static SfAtomicFile *
stage_text (const char *dir, const char *name, const char *text, GError **error)
{
  g_autofree char *path = g_build_filename (dir, name, NULL);
  SfAtomicFile *af = sf_atomic_file_open (path, error);
  if (af && fputs (text, af->fp) < 0)
    {
      int e = errno;
      g_set_error (error, G_FILE_ERROR, g_file_error_from_errno (e), "cannot write %s: %s", path,
                   g_strerror (e));
      sf_atomic_file_abort (af);
      return NULL;
    }
  return af;
}

gboolean
sf_report_finish (SfReport *rep, const SfScenario *sc, const SfRunSummary *sum, GError **error)
{
  if (!rep->dir)
    {
      sf_report_abort (rep);
      return TRUE;
    }
  if (rep->log_failed)
    {
      g_set_error (error, G_FILE_ERROR, g_file_error_from_errno (rep->log_errno),
                   "cannot write %s/events.log: %s", rep->dir, g_strerror (rep->log_errno));
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
  /* All four files are written and synced under temporary names before any
   * of them is renamed, then renamed back to back; the summary last, so a
   * summary always has its log, schedule and days beside it. */
  SfAtomicFile *set[4] = { NULL, NULL, rep->log, NULL };
  rep->log = NULL;
  set[0] = stage_text (rep->dir, "schedule.csv", sched, error);
  if (set[0])
    set[1] = stage_text (rep->dir, "daily.csv", daily, error);
  if (set[1])
    set[3] = stage_text (rep->dir, "summary.json", js2, error);
  gboolean ok;
  if (set[0] && set[1] && set[3])
    ok = sf_atomic_file_commit_all (set, G_N_ELEMENTS (set), error);
  else
    {
      for (gsize i = 0; i < G_N_ELEMENTS (set); i++)
        sf_atomic_file_abort (set[i]);
      ok = FALSE;
    }
  sf_report_abort (rep);
  return ok;
}
