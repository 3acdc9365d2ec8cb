/* SPDX-License-Identifier: MIT
 *
 * sf-chart-run.c — PNG charts of a fleet run, drawn with cairo from the
 * run's own output files.
 *
 * Owns: sf_chart_run_outputs() (stripfleet.h): a strict reader of the
 * summary.json, daily.csv and schedule.csv that sf_run() writes (format
 * "stripfleet-run-1", sf-report.c; it accepts exactly what that writer
 * produces and names the file and line, or the JSON path, of anything
 * else), and three charts written atomically beside them:
 *   daily.png     bcm dumped per local day (bars) and the running total (line);
 *   usage.png     each dozer's calendar time split by usage category;
 *   schedule.png  every lane slice of schedule.csv as a bar in time, per block.
 * All three inputs are read and checked before anything is drawn, so an
 * input that fails leaves no new chart.
 *
 * Memory: the parsed run (RunData) lives for one call and is freed before it
 * returns, like every cairo object; nothing is kept between calls.
 *
 * Determinism: the charts depend only on the three files; no clock, no
 * random numbers, no hash-table order; numbers printed in the C locale; see
 * sf-chart-kit.h for the PNG bytes.
 */
#include "sf-chart.h"

#include <cairo.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "sf-chart-kit.h"
#include "stripfleet.h"

/* The format tag that sf-report.c writes into summary.json. */
#define RUN_FORMAT_TAG "stripfleet-run-1"

/* The headers that sf-report.c writes. */
#define DAILY_HEADER "date,pushes,dumped_bcm,operating_h"
#define DAILY_FIELDS 4
#define SCHEDULE_HEADER                                                                    \
  "block,lane,slice,kind,start,finish,start_h,finish_h,dozer,pushes,moved_bcm,end"
#define SCHEDULE_FIELDS 12
#define REPLICATIONS_HEADER                                                                \
  "replication,complete,calendar_h,moved_bcm,bcm_per_operating_h,bcm_per_calendar_h,"     \
  "strip_m_per_day,coal_t_per_day,cost_per_bcm,failures"
#define REPLICATIONS_FIELDS 10

/* Numbers in the CSV files carry two (bcm) or four (hours) decimals: a
 * total of n rows may differ from the summary's unrounded figure by n half
 * units of the last place. */
#define CSV_BCM_HALF_UNIT 0.005

/* ---- the run as read from its files ---------------------------------------- */

typedef struct {
  char *name;       /* "d01", ... */
  char *class_name;
  double dumped_bcm;
  double bcm_per_operating_h;
  double use_h[SF_USE_N];
} RunDozer;

typedef struct {
  guint32 julian;   /* GDate Julian day number */
  guint year, month, day;
  guint pushes;
  double dumped_bcm;
  double operating_h;
} RunDay;

typedef struct {
  guint block, lane, slice;
  guint dozer;      /* index into RunData.dozers */
  double start_h, finish_h;
  guint pushes;
  double moved_bcm;
} RunSlice;

typedef struct {
  char *scenario;
  gboolean invented;     /* the scenario's description says it is invented */
  char *start_iso;
  GDateTime *start;
  gboolean complete;
  char *end_reason;
  double calendar_h;
  double dumped_bcm;      /* volumes_bcm.dumped_gross */
  double fleet_operating_h;
  double bcm_per_operating_h;
  GArray *dozers;         /* RunDozer */
  GArray *days;           /* RunDay */
  GArray *slices;         /* RunSlice */
  GArray *reps;           /* RunRep (spread.png only) */
} RunData;

/* One row of replications.csv: the measures spread.png shows. */
typedef struct {
  gboolean complete;
  double days, bcm_per_calendar_h, strip_m_per_day, coal_t_per_day, cost_per_bcm;
} RunRep;

static void
run_dozer_clear (gpointer p)
{
  RunDozer *d = p;
  g_free (d->name);
  g_free (d->class_name);
}

static void
run_data_clear (RunData *rd)
{
  g_free (rd->scenario);
  g_free (rd->start_iso);
  g_clear_pointer (&rd->start, g_date_time_unref);
  g_free (rd->end_reason);
  g_clear_pointer (&rd->dozers, g_array_unref);
  g_clear_pointer (&rd->days, g_array_unref);
  g_clear_pointer (&rd->slices, g_array_unref);
  g_clear_pointer (&rd->reps, g_array_unref);
}

/* ---- summary.json ------------------------------------------------------------ */

static gboolean G_GNUC_PRINTF (3, 4)
input_error (GError **error, int code, const char *format, ...)
{
  va_list ap;
  va_start (ap, format);
  g_autofree char *msg = g_strdup_vprintf (format, ap);
  va_end (ap);
  g_set_error_literal (error, SF_SCENARIO_ERROR, code, msg);
  return FALSE;
}

/* Line (from 1) of byte `offset` of `text`. */
static guint
line_of (const char *text, gsize offset)
{
  guint line = 1;
  for (gsize i = 0; i < offset && text[i]; i++)
    if (text[i] == '\n')
      line++;
  return line;
}

static gboolean
json_number (const cJSON *obj, const char *key, const char *where, const char *path,
             double lo, double *out, GError **error)
{
  const cJSON *v = cJSON_GetObjectItemCaseSensitive (obj, key);
  if (!cJSON_IsNumber (v) || !isfinite (v->valuedouble) || v->valuedouble < lo)
    return input_error (error, SF_SCENARIO_ERROR_INVALID, "%s: %s%s: expected a number%s",
                        path, where, key, lo == 0 ? " >= 0" : "");
  *out = v->valuedouble;
  return TRUE;
}

static gboolean
json_string (const cJSON *obj, const char *key, const char *where, const char *path, char **out,
             GError **error)
{
  const cJSON *v = cJSON_GetObjectItemCaseSensitive (obj, key);
  if (!cJSON_IsString (v) || !v->valuestring[0])
    return input_error (error, SF_SCENARIO_ERROR_INVALID, "%s: %s%s: expected a text", path,
                        where, key);
  *out = g_strdup (v->valuestring);
  return TRUE;
}

static const cJSON *
json_object (const cJSON *obj, const char *key, const char *where, const char *path,
             GError **error)
{
  const cJSON *v = cJSON_GetObjectItemCaseSensitive (obj, key);
  if (!cJSON_IsObject (v))
    input_error (error, SF_SCENARIO_ERROR_INVALID, "%s: %s%s: expected an object", path, where,
                 key);
  return cJSON_IsObject (v) ? v : NULL;
}

static gboolean
read_dozer (const cJSON *o, guint i, const char *path, RunDozer *d, GError **error)
{
  g_autofree char *where = g_strdup_printf ("dozers[%u].", i);
  if (!cJSON_IsObject (o))
    return input_error (error, SF_SCENARIO_ERROR_INVALID, "%s: dozers[%u]: expected an object",
                        path, i);
  if (!json_string (o, "name", where, path, &d->name, error)
      || !json_string (o, "class", where, path, &d->class_name, error)
      || !json_number (o, "dumped_bcm", where, path, 0, &d->dumped_bcm, error)
      || !json_number (o, "bcm_per_operating_h", where, path, 0, &d->bcm_per_operating_h, error))
    return FALSE;
  const cJSON *t = json_object (o, "time_h", where, path, error);
  if (!t)
    return FALSE;
  g_autofree char *twhere = g_strdup_printf ("dozers[%u].time_h.", i);
  for (int k = 0; k < SF_USE_N; k++)
    if (!json_number (t, sf_use_to_str (k), twhere, path, 0, &d->use_h[k], error))
      return FALSE;
  if (cJSON_GetArraySize (t) != SF_USE_N)
    return input_error (error, SF_SCENARIO_ERROR_INVALID,
                        "%s: dozers[%u].time_h: expected the %d usage categories only, found %d "
                        "entries",
                        path, i, SF_USE_N, cJSON_GetArraySize (t));
  return TRUE;
}

static gboolean
read_summary (RunData *rd, const char *dir, GError **error)
{
  g_autofree char *path = g_build_filename (dir, "summary.json", NULL);
  g_autofree char *text = NULL;
  gsize len = 0;
  if (!g_file_get_contents (path, &text, &len, error))
    return FALSE;
  const char *end = NULL;
  cJSON *root = cJSON_ParseWithLengthOpts (text, len, &end, FALSE);
  if (!root)
    {
      gsize off = end && end >= text ? (gsize) (end - text) : 0;
      return input_error (error, SF_SCENARIO_ERROR_SYNTAX, "%s line %u: not valid JSON", path,
                          line_of (text, off));
    }
  gsize off = (gsize) (end - text);
  while (off < len && g_ascii_isspace (text[off]))
    off++;
  gboolean ok = TRUE;
  if (off < len)
    ok = input_error (error, SF_SCENARIO_ERROR_SYNTAX,
                      "%s line %u: text after the end of the JSON object", path,
                      line_of (text, off));
  const cJSON *fmt_tag = cJSON_GetObjectItemCaseSensitive (root, "format");
  if (ok && !(cJSON_IsString (fmt_tag) && !strcmp (fmt_tag->valuestring, RUN_FORMAT_TAG)))
    ok = input_error (error, SF_SCENARIO_ERROR_INVALID,
                      "%s: format: expected \"%s\" (the summary of a stripfleet run)", path,
                      RUN_FORMAT_TAG);
  const cJSON *vol = NULL, *rates = NULL, *dz = NULL;
  ok = ok && json_string (root, "scenario", "", path, &rd->scenario, error)
       && json_string (root, "start", "", path, &rd->start_iso, error)
       && json_string (root, "end_reason", "", path, &rd->end_reason, error)
       && json_number (root, "calendar_h", "", path, 0, &rd->calendar_h, error)
       && (vol = json_object (root, "volumes_bcm", "", path, error))
       && json_number (vol, "dumped_gross", "volumes_bcm.", path, 0, &rd->dumped_bcm, error)
       && (rates = json_object (root, "rates", "", path, error))
       && json_number (rates, "fleet_operating_h", "rates.", path, 0, &rd->fleet_operating_h,
                       error)
       && json_number (rates, "bcm_per_operating_h", "rates.", path, 0,
                       &rd->bcm_per_operating_h, error);
  const cJSON *desc = cJSON_GetObjectItemCaseSensitive (root, "description");
  rd->invented = cJSON_IsString (desc) && strstr (desc->valuestring, "nvented") != NULL;
  if (ok)
    {
      const cJSON *c = cJSON_GetObjectItemCaseSensitive (root, "complete");
      if (!cJSON_IsBool (c))
        ok = input_error (error, SF_SCENARIO_ERROR_INVALID, "%s: complete: expected true or false",
                          path);
      else
        rd->complete = cJSON_IsTrue (c);
    }
  if (ok && !(rd->start = g_date_time_new_from_iso8601 (rd->start_iso, NULL)))
    ok = input_error (error, SF_SCENARIO_ERROR_INVALID,
                      "%s: start: expected an ISO 8601 time with its UTC offset, found '%s'", path,
                      rd->start_iso);
  if (ok)
    {
      dz = cJSON_GetObjectItemCaseSensitive (root, "dozers");
      if (!cJSON_IsArray (dz) || cJSON_GetArraySize (dz) < 1)
        ok = input_error (error, SF_SCENARIO_ERROR_INVALID,
                          "%s: dozers: expected an array of at least one dozer", path);
    }
  for (int i = 0; ok && i < cJSON_GetArraySize (dz); i++)
    {
      RunDozer d = { 0 };
      ok = read_dozer (cJSON_GetArrayItem (dz, i), (guint) i, path, &d, error);
      g_array_append_val (rd->dozers, d); /* freed with the array, also on failure */
      for (guint j = 0; ok && j + 1 < rd->dozers->len; j++)
        if (!strcmp (g_array_index (rd->dozers, RunDozer, j).name, d.name))
          ok = input_error (error, SF_SCENARIO_ERROR_INVALID,
                            "%s: dozers[%d].name: '%s' is also dozers[%u].name", path, i, d.name,
                            j);
      /* the categories add up to the calendar time (sf_run's invariant) */
      double sum_h = 0;
      for (int k = 0; k < SF_USE_N; k++)
        sum_h += d.use_h[k];
      if (ok && fabs (sum_h - rd->calendar_h) > 1e-6 * (1.0 + rd->calendar_h))
        ok = input_error (error, SF_SCENARIO_ERROR_INVALID,
                          "%s: dozers[%d].time_h: the categories add up to %.6f h, not the "
                          "calendar time %.6f h",
                          path, i, sum_h, rd->calendar_h);
    }
  cJSON_Delete (root);
  return ok;
}

/* ---- CSV files ------------------------------------------------------------------ */

typedef gboolean (*RowFn) (RunData *rd, char **f, const char *path, guint line, GError **error);

static gboolean
field_error (GError **error, const char *path, guint line, const char *column, const char *what,
             const char *found)
{
  return input_error (error, SF_SCENARIO_ERROR_SYNTAX, "%s line %u: %s: expected %s, found '%s'",
                      path, line, column, what, found);
}

static gboolean
field_uint (const char *s, const char *path, guint line, const char *column, guint *out,
            GError **error)
{
  guint64 v = 0;
  if (!g_ascii_string_to_unsigned (s, 10, 0, G_MAXUINT, &v, NULL))
    return field_error (error, path, line, column, "a whole number >= 0", s);
  *out = (guint) v;
  return TRUE;
}

static gboolean
field_double (const char *s, const char *path, guint line, const char *column, double *out,
              GError **error)
{
  /* sf-report.c prints fixed-point decimals ("%.2f"): digits and a point,
   * a minus sign only on a rounded zero */
  gboolean digits = s[0] != '\0';
  for (const char *c = s[0] == '-' ? s + 1 : s; *c && digits; c++)
    digits = g_ascii_isdigit (*c) || *c == '.';
  char *end = NULL;
  double v = digits ? g_ascii_strtod (s, &end) : NAN;
  if (!digits || *end || !isfinite (v) || v < 0)
    return field_error (error, path, line, column, "a number >= 0", s);
  *out = v;
  return TRUE;
}

/* Reads a CSV file as sf-report.c writes it: the header line, then rows of
 * exactly n_fields comma-separated fields, every line ended by '\n'. */
static gboolean
read_csv (RunData *rd, const char *path, const char *header, guint n_fields, RowFn row,
          GError **error)
{
  g_autofree char *text = NULL;
  gsize len = 0;
  if (!g_file_get_contents (path, &text, &len, error))
    return FALSE;
  if (strlen (text) != len)
    return input_error (error, SF_SCENARIO_ERROR_SYNTAX, "%s line %u: a NUL byte", path,
                        line_of (text, strlen (text)));
  if (len == 0 || text[len - 1] != '\n')
    return input_error (error, SF_SCENARIO_ERROR_SYNTAX,
                        "%s line %u: the line does not end (the file is cut short)", path,
                        line_of (text, len));
  g_auto (GStrv) lines = g_strsplit (text, "\n", -1);
  const guint n = g_strv_length (lines) - 1; /* the last piece follows the last '\n' */
  if (strcmp (lines[0], header) != 0)
    return input_error (error, SF_SCENARIO_ERROR_SYNTAX, "%s line 1: expected the header '%s'",
                        path, header);
  for (guint i = 1; i < n; i++)
    {
      g_auto (GStrv) f = g_strsplit (lines[i], ",", -1);
      guint nf = g_strv_length (f);
      if (nf != n_fields)
        return input_error (error, SF_SCENARIO_ERROR_SYNTAX,
                            "%s line %u: expected %u comma-separated fields, found %u", path,
                            i + 1, n_fields, nf);
      if (!row (rd, f, path, i + 1, error))
        return FALSE;
    }
  return TRUE;
}

/* A local date as YYYY-MM-DD. */
static gboolean
parse_date (const char *s, RunDay *d)
{
  if (strlen (s) != 10 || s[4] != '-' || s[7] != '-')
    return FALSE;
  for (int i = 0; i < 10; i++)
    if (i != 4 && i != 7 && !g_ascii_isdigit (s[i]))
      return FALSE;
  d->year = (guint) atoi (s);
  d->month = (guint) atoi (s + 5);
  d->day = (guint) atoi (s + 8);
  if (!g_date_valid_dmy ((GDateDay) d->day, (GDateMonth) d->month, (GDateYear) d->year))
    return FALSE;
  g_autoptr (GDate) gd = g_date_new_dmy ((GDateDay) d->day, (GDateMonth) d->month,
                                         (GDateYear) d->year);
  d->julian = g_date_get_julian (gd);
  return TRUE;
}

static gboolean
daily_row (RunData *rd, char **f, const char *path, guint line, GError **error)
{
  RunDay d = { 0 };
  if (!parse_date (f[0], &d))
    return field_error (error, path, line, "date", "a date YYYY-MM-DD", f[0]);
  if (!field_uint (f[1], path, line, "pushes", &d.pushes, error)
      || !field_double (f[2], path, line, "dumped_bcm", &d.dumped_bcm, error)
      || !field_double (f[3], path, line, "operating_h", &d.operating_h, error))
    return FALSE;
  if (rd->days->len > 0)
    {
      const RunDay *p = &g_array_index (rd->days, RunDay, rd->days->len - 1);
      if (d.julian != p->julian + 1)
        return input_error (error, SF_SCENARIO_ERROR_INVALID,
                            "%s line %u: date %s does not follow %04u-%02u-%02u (one row per "
                            "day, in order)",
                            path, line, f[0], p->year, p->month, p->day);
    }
  g_array_append_val (rd->days, d);
  return TRUE;
}

static gboolean
schedule_row (RunData *rd, char **f, const char *path, guint line, GError **error)
{
  RunSlice s = { 0 };
  if (!field_uint (f[0], path, line, "block", &s.block, error)
      || !field_uint (f[1], path, line, "lane", &s.lane, error)
      || !field_uint (f[2], path, line, "slice", &s.slice, error))
    return FALSE;
  const char *text_cols[][2] = { { "kind", f[3] }, { "start", f[4] }, { "finish", f[5] },
                                 { "end", f[11] } };
  for (gsize i = 0; i < G_N_ELEMENTS (text_cols); i++)
    if (!text_cols[i][1][0])
      return field_error (error, path, line, text_cols[i][0], "a text", "");
  if (!field_double (f[6], path, line, "start_h", &s.start_h, error)
      || !field_double (f[7], path, line, "finish_h", &s.finish_h, error))
    return FALSE;
  if (s.finish_h < s.start_h)
    return input_error (error, SF_SCENARIO_ERROR_INVALID,
                        "%s line %u: finish_h %s is before start_h %s", path, line, f[7], f[6]);
  gboolean found = FALSE;
  for (guint i = 0; i < rd->dozers->len && !found; i++)
    if (!strcmp (g_array_index (rd->dozers, RunDozer, i).name, f[8]))
      {
        s.dozer = i;
        found = TRUE;
      }
  if (!found)
    return input_error (error, SF_SCENARIO_ERROR_INVALID,
                        "%s line %u: dozer '%s' is not among the dozers of summary.json", path,
                        line, f[8]);
  if (!field_uint (f[9], path, line, "pushes", &s.pushes, error)
      || !field_double (f[10], path, line, "moved_bcm", &s.moved_bcm, error))
    return FALSE;
  g_array_append_val (rd->slices, s);
  return TRUE;
}

/* Reads and checks the three files; nothing is drawn before all pass. */
static gboolean
run_data_read (RunData *rd, const char *dir, GError **error)
{
  rd->dozers = g_array_new (FALSE, TRUE, sizeof (RunDozer));
  g_array_set_clear_func (rd->dozers, run_dozer_clear);
  rd->days = g_array_new (FALSE, TRUE, sizeof (RunDay));
  rd->slices = g_array_new (FALSE, TRUE, sizeof (RunSlice));
  if (!read_summary (rd, dir, error))
    return FALSE;
  g_autofree char *daily = g_build_filename (dir, "daily.csv", NULL);
  if (!read_csv (rd, daily, DAILY_HEADER, DAILY_FIELDS, daily_row, error))
    return FALSE;
  if (rd->days->len == 0)
    return input_error (error, SF_SCENARIO_ERROR_INVALID,
                        "%s line 2: expected a row per day of the run, found none", daily);
  /* the days add up to the summary's gross volume: the files are of one run */
  double sum_bcm = 0;
  for (guint i = 0; i < rd->days->len; i++)
    sum_bcm += g_array_index (rd->days, RunDay, i).dumped_bcm;
  if (fabs (sum_bcm - rd->dumped_bcm)
      > CSV_BCM_HALF_UNIT * (rd->days->len + 1) + 1e-9 * rd->dumped_bcm)
    return input_error (error, SF_SCENARIO_ERROR_INVALID,
                        "%s: the days add up to %.2f bcm dumped, but summary.json says %.2f bcm "
                        "(files of different runs?)",
                        daily, sum_bcm, rd->dumped_bcm);
  g_autofree char *sched = g_build_filename (dir, "schedule.csv", NULL);
  return read_csv (rd, sched, SCHEDULE_HEADER, SCHEDULE_FIELDS, schedule_row, error);
}

/* ---- shared by the three charts ------------------------------------------------- */

/* Dozer colours: the Okabe-Ito colour-blind-safe palette (M. Okabe and
 * K. Ito, "Color Universal Design", 2008), yellow left out (too faint on
 * white), cycled for larger fleets (the legend says so). */
static const Rgb DOZER_RGB[] = {
  { 0.000, 0.447, 0.698 }, /* blue */
  { 0.902, 0.624, 0.000 }, /* orange */
  { 0.000, 0.620, 0.451 }, /* bluish green */
  { 0.835, 0.369, 0.000 }, /* vermillion */
  { 0.800, 0.475, 0.655 }, /* reddish purple */
  { 0.337, 0.706, 0.914 }, /* sky blue */
  { 0.000, 0.000, 0.000 }, /* black */
};


static const char *const MONTH_ABBR[12] = { "Jan", "Feb", "Mar", "Apr", "May", "Jun",
                                            "Jul", "Aug", "Sep", "Oct", "Nov", "Dec" };

static const Rgb *
dozer_rgb (guint i)
{
  return &DOZER_RGB[i % G_N_ELEMENTS (DOZER_RGB)];
}

/* A whole number, its digits set apart in threes by spaces when it has more
 * than four (SI Brochure, 9th edition 2019, section 5.4.4). */
static char *
grouped (double v)
{
  g_autofree char *s = fmt ("%.0f", fabs (v) < 0.5 ? 0.0 : v);
  const char *digits = s[0] == '-' ? s + 1 : s;
  const gsize n = strlen (digits);
  GString *g = g_string_new (s[0] == '-' ? "-" : "");
  for (gsize i = 0; i < n; i++)
    {
      if (n > 4 && i > 0 && (n - i) % 3 == 0)
        g_string_append_c (g, ' ');
      g_string_append_c (g, digits[i]);
    }
  return g_string_free (g, FALSE);
}

/* Axis values above this are shown in thousands. */
#define THOUSANDS_FROM 1e5

/* Text on a fill of colour c: white on dark fills, dark on light ones
 * (relative luminance weights of ITU-R BT.709). */
static void
set_text_on (cairo_t *cr, const Rgb *c)
{
  double lum = 0.2126 * c->r + 0.7152 * c->g + 0.0722 * c->b;
  if (lum < 0.5)
    cairo_set_source_rgb (cr, 1, 1, 1);
  else
    set_rgb (cr, &RGB_TEXT);
}

/* A y-axis title turned a quarter left, centred on the frame's height. */
static void
y_title (cairo_t *cr, const Frame *f, double x, const char *s)
{
  cairo_save (cr);
  set_rgb (cr, &RGB_TEXT);
  font (cr, 14, FALSE);
  cairo_translate (cr, x, f->top + 0.5 * f->height);
  cairo_rotate (cr, -G_PI / 2);
  text_at (cr, 0, 0, 0.5, 1.0, s);
  cairo_restore (cr);
}

static char *
start_label (const RunData *rd)
{
  return g_date_time_format (rd->start, "%Y-%m-%d %H:%M %:z");
}

/* The line under the title that every run chart carries. */
static char *
run_state (const RunData *rd)
{
  return rd->complete ? g_strdup ("run complete")
                      : fmt ("run stopped early: %s", rd->end_reason);
}

static void
run_footer (cairo_t *cr, const RunData *rd, int w, int h)
{
  g_autofree char *extra = fmt ("fleet run of scenario '%s'%s", rd->scenario,
                                rd->invented ? " (invented scenario)" : "");
  page_caution (cr, w, h, extra);
}

static gboolean
finish_page (cairo_surface_t *surf, cairo_t *cr, const char *dir, const char *name,
             GError **error)
{
  g_autofree char *path = g_build_filename (dir, name, NULL);
  return page_finish (surf, cr, path, error);
}

/* ---- daily.png ---------------------------------------------------------------- */

static const Rgb RGB_DAY_BAR = { 0.337, 0.706, 0.914 };
static const Rgb RGB_CUMULATIVE = { 0.835, 0.369, 0.000 };

static gboolean
draw_daily (const RunData *rd, const char *dir, GError **error)
{
  const int W = SF_CHART_RUN_WIDTH_PX, H = SF_CHART_DAILY_HEIGHT_PX;
  const guint n = rd->days->len;
  double max_day = 0, total = 0, best = -1;
  guint best_i = 0, idle_days = 0;
  for (guint i = 0; i < n; i++)
    {
      const RunDay *d = &g_array_index (rd->days, RunDay, i);
      max_day = MAX (max_day, d->dumped_bcm);
      total += d->dumped_bcm;
      if (d->dumped_bcm > best)
        {
          best = d->dumped_bcm;
          best_i = i;
        }
      if (d->pushes == 0)
        idle_days++;
    }
  cairo_t *cr;
  cairo_surface_t *surf = page_new (W, H, &cr);
  g_autofree char *title = fmt ("Production per day  -  scenario '%s'", rd->scenario);
  g_autofree char *start = start_label (rd);
  g_autofree char *state = run_state (rd);
  g_autofree char *total_s = grouped (rd->dumped_bcm);
  g_autofree char *subtitle
    = fmt ("start %s, %.1f days; %s bcm dumped by %u dozers, fleet %.0f bcm per operating "
           "hour; %s",
           start, rd->calendar_h / 24.0, total_s, rd->dozers->len, rd->bcm_per_operating_h,
           state);
  page_titles (cr, title, subtitle);

  /* each axis up to whole nice steps above its largest value, in thousands
   * when the numbers grow long */
  const double l_scale = MAX (max_day, 1.0) * 1.08 >= THOUSANDS_FROM ? 1e3 : 1.0;
  const double r_scale = MAX (total, 1.0) * 1.04 >= THOUSANDS_FROM ? 1e3 : 1.0;
  const double l_max = MAX (max_day, 1.0) * 1.08 / l_scale;
  const double r_max = MAX (total, 1.0) * 1.04 / r_scale;
  const double l_step = sf_chart_tick_step (l_max, 6), r_step = sf_chart_tick_step (r_max, 6);
  const Frame f = { 92, 100, W - 92 - 400, H - 100 - 112, 0.0, n, 0.0,
                    ceil (l_max / l_step - 1e-9) * l_step };
  Frame fr = f;
  fr.y_hi = ceil (r_max / r_step - 1e-9) * r_step;

  draw_axes (cr, &f, NULL, l_scale > 1 ? "thousand bcm dumped in the day" : "bcm dumped in the day",
             6, 6);
  draw_right_axis (cr, &f, fr.y_hi,
                   r_scale > 1 ? "cumulative, thousand bcm dumped" : "cumulative bcm dumped", 6);

  /* bars */
  const double slot = f.width / n;
  const double bw = MIN (0.7 * slot, 44.0);
  cairo_save (cr);
  clip_frame (cr, &f);
  set_rgba (cr, &RGB_DAY_BAR, 0.9);
  for (guint i = 0; i < n; i++)
    {
      const RunDay *d = &g_array_index (rd->days, RunDay, i);
      double v = py (&f, d->dumped_bcm / l_scale);
      cairo_rectangle (cr, px (&f, i + 0.5) - 0.5 * bw, v, bw, f.top + f.height - v);
    }
  cairo_fill (cr);
  /* days without a push: a small mark on the axis, so that they read as
   * zero and not as missing */
  font (cr, 11, FALSE);
  cairo_set_source_rgb (cr, 0.45, 0.45, 0.45);
  if (slot >= 10)
    for (guint i = 0; i < n; i++)
      if (g_array_index (rd->days, RunDay, i).pushes == 0)
        text_at (cr, px (&f, i + 0.5), f.top + f.height - 3, 0.5, 1.0, "0");
  cairo_restore (cr);

  /* the running total at the end of each day */
  cairo_save (cr);
  set_rgb (cr, &RGB_CUMULATIVE);
  cairo_set_line_width (cr, 2.0);
  cairo_set_line_join (cr, CAIRO_LINE_JOIN_ROUND);
  double cum = 0;
  cairo_move_to (cr, px (&f, 0), py (&fr, 0));
  for (guint i = 0; i < n; i++)
    {
      cum += g_array_index (rd->days, RunDay, i).dumped_bcm;
      cairo_line_to (cr, px (&f, i + 1.0), py (&fr, cum / r_scale));
    }
  cairo_stroke (cr);
  const double dot_r = slot >= 12 ? 3.5 : 2.0;
  cum = 0;
  for (guint i = 0; i < n; i++)
    {
      cum += g_array_index (rd->days, RunDay, i).dumped_bcm;
      cairo_arc (cr, px (&f, i + 1.0), py (&fr, cum / r_scale), dot_r, 0, 2 * G_PI);
      cairo_fill (cr);
    }
  cairo_restore (cr);

  /* dates under the bars: every day ticked, as many labelled as fit */
  font (cr, 12, FALSE);
  double label_w = 0;
  for (guint i = 0; i < n; i++)
    {
      const RunDay *d = &g_array_index (rd->days, RunDay, i);
      g_autofree char *s = fmt ("%u %s", d->day, MONTH_ABBR[d->month - 1]);
      label_w = MAX (label_w, text_width (cr, s));
    }
  guint every = (guint) ceil ((label_w + 10.0) / slot);
  static const guint NICE_EVERY[] = { 1, 2, 3, 4, 5, 7, 10, 14, 15, 20, 28, 30, 50, 60, 90, 100 };
  for (gsize k = 0; k < G_N_ELEMENTS (NICE_EVERY); k++)
    if (NICE_EVERY[k] >= every)
      {
        every = NICE_EVERY[k];
        break;
      }
  cairo_save (cr);
  set_rgb (cr, &RGB_TEXT);
  cairo_set_line_width (cr, 1.0);
  for (guint i = 0; i < n; i++)
    {
      const RunDay *d = &g_array_index (rd->days, RunDay, i);
      double u = floor (px (&f, i + 0.5)) + 0.5;
      gboolean labelled = i % every == 0;
      cairo_move_to (cr, u, f.top + f.height);
      cairo_line_to (cr, u, f.top + f.height + (labelled ? 5 : 3));
      cairo_stroke (cr);
      if (labelled)
        {
          g_autofree char *s = fmt ("%u %s", d->day, MONTH_ABBR[d->month - 1]);
          text_at (cr, u, f.top + f.height + 8, 0.5, 0.0, s);
        }
    }
  const RunDay *d0 = &g_array_index (rd->days, RunDay, 0);
  const RunDay *d1 = &g_array_index (rd->days, RunDay, n - 1);
  g_autofree char *years = d0->year == d1->year ? fmt ("%u", d0->year)
                                                : fmt ("%u to %u", d0->year, d1->year);
  g_autofree char *xlabel = fmt ("local calendar day at the site, %s", years);
  font (cr, 14, FALSE);
  text_at (cr, f.left + 0.5 * f.width, f.top + f.height + 28, 0.5, 0.0, xlabel);
  cairo_restore (cr);
  draw_frame_box (cr, &f);

  /* legend and totals */
  const double col_x = f.left + f.width + 92;
  Legend lg = { col_x, f.top, W - col_x - 16 };
  legend_heading (cr, &lg, "Per day");
  legend_entry (cr, &lg, KEY_BAR, &RGB_DAY_BAR, 0.9, 0, NULL, 0, "bcm dumped in the day",
                "(left axis)");
  legend_entry (cr, &lg, KEY_DOT, &RGB_CUMULATIVE, 1.0, 2.0, NULL, 0,
                "cumulative at the end of the day", "(right axis)");
  lg.y += 10;
  legend_heading (cr, &lg, "Run totals");
  const RunDay *bd = &g_array_index (rd->days, RunDay, best_i);
  g_autofree char *mean_s = grouped (rd->dumped_bcm * 24.0 / MAX (rd->calendar_h, 1e-9));
  g_autofree char *best_s = grouped (bd->dumped_bcm);
  g_autofree char *op_s = grouped (rd->fleet_operating_h);
  g_autofree char *t1 = fmt ("%s bcm dumped (gross)", total_s);
  g_autofree char *t2 = fmt ("%u calendar days, %u without a push", n, idle_days);
  g_autofree char *t3 = fmt ("mean %s bcm per calendar day", mean_s);
  g_autofree char *t4 = fmt ("best day %u %s %u: %s bcm", bd->day, MONTH_ABBR[bd->month - 1],
                             bd->year, best_s);
  g_autofree char *t5 = fmt ("fleet %.0f bcm per operating hour", rd->bcm_per_operating_h);
  g_autofree char *t6 = fmt ("over %s operating hours", op_s);
  const char *tl[] = { t1, t2, t3, t4, t5, t6 };
  font (cr, 13, FALSE);
  set_rgb (cr, &RGB_TEXT);
  for (gsize i = 0; i < G_N_ELEMENTS (tl); i++)
    {
      text_at (cr, lg.x, lg.y, 0.0, 0.0, tl[i]);
      lg.y += 19;
    }
  lg.y += 10;
  static const char *const notes[] = { "Gross: dozer rehandle included.",
                                       "Days run midnight to midnight,",
                                       "local time at the site; the first",
                                       "and last are part days.", NULL };
  legend_notes (cr, &lg, notes);

  run_footer (cr, rd, W, H);
  return finish_page (surf, cr, dir, "daily.png", error);
}

/* ---- usage.png ---------------------------------------------------------------- */

static gboolean
draw_usage (const RunData *rd, const char *dir, GError **error)
{
  const int W = SF_CHART_RUN_WIDTH_PX, H = SF_CHART_USAGE_HEIGHT_PX;
  const guint n = rd->dozers->len;
  double fleet_h[SF_USE_N] = { 0 };
  double all_h = 0;
  for (guint i = 0; i < n; i++)
    for (int k = 0; k < SF_USE_N; k++)
      {
        fleet_h[k] += g_array_index (rd->dozers, RunDozer, i).use_h[k];
        all_h += g_array_index (rd->dozers, RunDozer, i).use_h[k];
      }
  cairo_t *cr;
  cairo_surface_t *surf = page_new (W, H, &cr);
  g_autofree char *title = fmt ("Time usage per dozer  -  scenario '%s'", rd->scenario);
  g_autofree char *state = run_state (rd);
  g_autofree char *subtitle
    = fmt ("each bar is one dozer's %.1f calendar hours (%.1f days), split by what it was doing; "
           "fleet %.0f bcm per operating hour; %s",
           rd->calendar_h, rd->calendar_h / 24.0, rd->bcm_per_operating_h, state);
  page_titles (cr, title, subtitle);

  /* the legend: four columns under the chart */
  const guint legend_cols = 4, legend_rows = (SF_USE_N + legend_cols - 1) / legend_cols;
  const double legend_top = H - 46.0 - legend_rows * 22.0;
  const Frame f = { 150, 100, W - 150 - 190, legend_top - 74 - 100, 0.0,
                    MAX (rd->calendar_h, 1e-3), 0.0, n };
  draw_axes (cr, &f, "hours by category, end to end: every bar is the calendar time", NULL, 12,
             1);
  y_title (cr, &f, 24, "dozer");

  const double slot = f.height / n;
  const double bh = MIN (0.62 * slot, 46.0);
  const gboolean two_line_names = slot >= 34;
  for (guint i = 0; i < n; i++)
    {
      const RunDozer *d = &g_array_index (rd->dozers, RunDozer, i);
      const double vc = f.top + (i + 0.5) * slot; /* bar centre */
      const double v0 = vc - 0.5 * bh;
      /* the segments, in category order */
      double h0 = 0;
      for (int k = 0; k < SF_USE_N; k++)
        {
          if (d->use_h[k] <= 0)
            continue;
          double u0 = px (&f, h0), u1 = px (&f, h0 + d->use_h[k]);
          set_rgb (cr, use_rgb (k));
          cairo_rectangle (cr, u0, v0, u1 - u0, bh);
          cairo_fill (cr);
          h0 += d->use_h[k];
        }
      /* hours in the segments wide and tall enough to hold them */
      h0 = 0;
      font (cr, 11, FALSE);
      for (int k = 0; k < SF_USE_N; k++)
        {
          double u0 = px (&f, h0), u1 = px (&f, h0 + d->use_h[k]);
          h0 += d->use_h[k];
          if (d->use_h[k] <= 0 || bh < 13)
            continue;
          g_autofree char *s = fmt ("%.0f h", d->use_h[k]);
          if (text_width (cr, s) + 6 > u1 - u0)
            continue;
          set_text_on (cr, use_rgb (k));
          text_at (cr, 0.5 * (u0 + u1), vc, 0.5, 0.5, s);
        }
      /* a thin outline so that light segments keep their edge */
      cairo_save (cr);
      cairo_set_source_rgba (cr, 0.2, 0.2, 0.2, 0.6);
      cairo_set_line_width (cr, 1.0);
      cairo_rectangle (cr, floor (px (&f, 0)) + 0.5, floor (v0) + 0.5,
                       floor (px (&f, h0)) - floor (px (&f, 0)), floor (bh));
      cairo_stroke (cr);
      cairo_restore (cr);
      /* the dozer at the left */
      set_rgb (cr, &RGB_TEXT);
      if (two_line_names)
        {
          font (cr, 14, TRUE);
          text_at (cr, f.left - 10, vc - 1, 1.0, 1.0, d->name);
          font (cr, 12, FALSE);
          cairo_set_source_rgb (cr, 0.3, 0.3, 0.3);
          text_at (cr, f.left - 10, vc + 1, 1.0, 0.0, d->class_name);
        }
      else
        {
          g_autofree char *s = fmt ("%s %s", d->name, d->class_name);
          double size = 12;
          font (cr, size, FALSE);
          while (size > 8 && text_width (cr, s) > f.left - 50)
            font (cr, --size, FALSE);
          text_at (cr, f.left - 8, vc, 1.0, 0.5, s);
        }
      /* production at the end of the bar */
      g_autofree char *rate = d->use_h[SF_USE_OPERATING] > 0
                                ? fmt ("%.0f bcm/op h", d->bcm_per_operating_h)
                                : g_strdup ("no operating time");
      font (cr, 13, d->use_h[SF_USE_OPERATING] > 0);
      set_rgb (cr, &RGB_TEXT);
      text_at (cr, px (&f, h0) + 8, vc, 0.0, 0.5, rate);
    }
  draw_frame_box (cr, &f);

  /* legend: colour, what it means, fleet hours and share */
  set_rgb (cr, &RGB_TEXT);
  font (cr, 14, TRUE);
  text_at (cr, 24, legend_top - 24, 0.0, 0.0,
           "Time usage (fleet hours and share of all dozer hours):");
  const double col_w = (W - 48.0) / legend_cols;
  for (int k = 0; k < SF_USE_N; k++)
    {
      guint col = (guint) k / legend_rows, row = (guint) k % legend_rows;
      double x = 24 + col * col_w, y = legend_top + row * 22.0;
      set_rgb (cr, use_rgb (k));
      cairo_rectangle (cr, x, y + 2, 26, 14);
      cairo_fill (cr);
      cairo_set_source_rgba (cr, 0.2, 0.2, 0.2, 0.6);
      cairo_set_line_width (cr, 1.0);
      cairo_rectangle (cr, x + 0.5, y + 2.5, 25, 13);
      cairo_stroke (cr);
      g_autofree char *s = fmt ("%s  %.0f h, %.1f %%", use_label (k), fleet_h[k],
                                all_h > 0 ? 100.0 * fleet_h[k] / all_h : 0.0);
      font (cr, 13, FALSE);
      set_rgb (cr, &RGB_TEXT);
      text_at (cr, x + 34, y + 9, 0.0, 0.5, s);
    }

  run_footer (cr, rd, W, H);
  return finish_page (surf, cr, dir, "usage.png", error);
}

/* ---- schedule.png --------------------------------------------------------------- */

static gboolean
draw_schedule (const RunData *rd, const char *dir, GError **error)
{
  const int W = SF_CHART_RUN_WIDTH_PX, H = SF_CHART_SCHEDULE_HEIGHT_PX;
  const guint m = rd->slices->len;
  guint b_lo = G_MAXUINT, b_hi = 0, n_lanes = 1;
  double t_hi_h = rd->calendar_h;
  g_autofree guint *dz_slices = g_new0 (guint, rd->dozers->len);
  g_autofree double *dz_bcm = g_new0 (double, rd->dozers->len);
  for (guint i = 0; i < m; i++)
    {
      const RunSlice *s = &g_array_index (rd->slices, RunSlice, i);
      b_lo = MIN (b_lo, s->block);
      b_hi = MAX (b_hi, s->block);
      n_lanes = MAX (n_lanes, s->lane + 1);
      t_hi_h = MAX (t_hi_h, s->finish_h);
      dz_slices[s->dozer]++;
      dz_bcm[s->dozer] += s->moved_bcm;
    }
  if (m == 0)
    b_lo = b_hi = 0;
  const guint nb = b_hi - b_lo + 1;
  /* each block's span: the first slice's start to the last slice's end */
  g_autofree double *span_lo_h = g_new (double, nb);
  g_autofree double *span_hi_h = g_new (double, nb);
  for (guint b = 0; b < nb; b++)
    {
      span_lo_h[b] = G_MAXDOUBLE;
      span_hi_h[b] = -1;
    }
  for (guint i = 0; i < m; i++)
    {
      const RunSlice *s = &g_array_index (rd->slices, RunSlice, i);
      span_lo_h[s->block - b_lo] = MIN (span_lo_h[s->block - b_lo], s->start_h);
      span_hi_h[s->block - b_lo] = MAX (span_hi_h[s->block - b_lo], s->finish_h);
    }

  cairo_t *cr;
  cairo_surface_t *surf = page_new (W, H, &cr);
  g_autofree char *title = fmt ("Lane slices in time  -  scenario '%s'", rd->scenario);
  g_autofree char *state = run_state (rd);
  g_autofree char *subtitle
    = fmt ("%u lane slices worked in blocks %u to %u over %.1f days; each block's row holds "
           "its %u lanes, lane 0 at the top; %s",
           m, b_lo, b_hi, rd->calendar_h / 24.0, n_lanes, state);
  page_titles (cr, title, subtitle);

  const Frame f = { 110, 100, W - 110 - 330, H - 100 - 110, 0.0,
                    MAX (t_hi_h / 24.0 * 1.02, 1e-3), 0.0, nb };
  g_autofree char *start = start_label (rd);
  g_autofree char *xlabel = fmt ("days since the start of the run (%s)", start);
  /* alternate blocks shaded, then the grid over them */
  const double row_h = f.height / nb;
  cairo_save (cr);
  cairo_set_source_rgb (cr, 0.955, 0.955, 0.955);
  for (guint b = 0; b < nb; b += 2)
    cairo_rectangle (cr, f.left, f.top + b * row_h, f.width, row_h);
  cairo_fill (cr);
  cairo_restore (cr);
  draw_axes (cr, &f, xlabel, NULL, 14, 1);
  y_title (cr, &f, 28, "block");

  /* block labels, as many as fit */
  font (cr, 12, FALSE);
  cairo_font_extents_t fe;
  cairo_font_extents (cr, &fe);
  const guint every = (guint) MAX (1.0, ceil ((fe.ascent + fe.descent + 2) / row_h));
  set_rgb (cr, &RGB_TEXT);
  for (guint b = 0; b < nb; b++)
    if ((b_lo + b) % every == 0 || nb == 1)
      {
        g_autofree char *s = fmt ("%u", b_lo + b);
        text_at (cr, f.left - 8, f.top + (b + 0.5) * row_h, 1.0, 0.5, s);
      }

  /* the slices: a thin bar per lane, coloured by dozer */
  cairo_save (cr);
  clip_frame (cr, &f);
  const double lane_h = row_h / n_lanes;
  const double bar_h = CLAMP (lane_h * (lane_h >= 3 ? 0.75 : 1.0), 1.0, 16.0);
  for (guint i = 0; i < m; i++)
    {
      const RunSlice *s = &g_array_index (rd->slices, RunSlice, i);
      double u0 = px (&f, s->start_h / 24.0), u1 = px (&f, s->finish_h / 24.0);
      if (u1 - u0 < 1.0)
        u1 = u0 + 1.0; /* a slice worked in less than a pixel stays visible */
      double v = f.top + (s->block - b_lo) * row_h + s->lane * lane_h + 0.5 * (lane_h - bar_h);
      set_rgb (cr, dozer_rgb (s->dozer));
      cairo_rectangle (cr, u0, v, u1 - u0, bar_h);
      cairo_fill (cr);
    }
  /* each block's span outlined, with its length in days beside it */
  cairo_set_line_width (cr, 1.0);
  font (cr, 11, FALSE);
  for (guint b = 0; b < nb; b++)
    {
      if (span_hi_h[b] < 0)
        continue;
      const double u0 = floor (px (&f, span_lo_h[b] / 24.0)) - 0.5;
      const double u1 = ceil (px (&f, span_hi_h[b] / 24.0)) + 1.5;
      const double v0 = floor (f.top + b * row_h) + 0.5;
      cairo_set_source_rgba (cr, 0.25, 0.25, 0.25, 0.7);
      cairo_rectangle (cr, u0, v0, u1 - u0, floor (row_h) - 1.0);
      cairo_stroke (cr);
      g_autofree char *len = fmt ("%.1f d", (span_hi_h[b] - span_lo_h[b]) / 24.0);
      if (row_h >= 11 && u1 + 4 + text_width (cr, len) < f.left + f.width - 2)
        {
          cairo_set_source_rgb (cr, 0.3, 0.3, 0.3);
          text_at (cr, u1 + 4, f.top + (b + 0.5) * row_h, 0.0, 0.5, len);
        }
    }
  cairo_restore (cr);
  if (m == 0)
    {
      font (cr, 16, TRUE);
      set_rgb (cr, &RGB_TEXT);
      text_at (cr, f.left + 0.5 * f.width, f.top + 0.5 * f.height, 0.5, 0.5,
               "no lane slice was worked in this run");
    }
  draw_frame_box (cr, &f);

  /* legend: the dozers */
  const double col_x = f.left + f.width + 28;
  Legend lg = { col_x, f.top, W - col_x - 16 };
  legend_heading (cr, &lg, "Dozers");
  const double room = H - 60.0;
  for (guint i = 0; i < rd->dozers->len; i++)
    {
      const RunDozer *d = &g_array_index (rd->dozers, RunDozer, i);
      if (lg.y + 40.0 * 2 > room && i + 1 < rd->dozers->len)
        {
          g_autofree char *more = fmt ("... and %u more dozers", rd->dozers->len - i);
          font (cr, 13, FALSE);
          set_rgb (cr, &RGB_TEXT);
          text_at (cr, lg.x, lg.y, 0.0, 0.0, more);
          lg.y += 22;
          break;
        }
      g_autofree char *l1 = fmt ("%s  %s", d->name, d->class_name);
      g_autofree char *bcm_s = grouped (dz_bcm[i]);
      g_autofree char *l2 = dz_slices[i] > 0
                              ? fmt ("last push of %u slices, %s bcm", dz_slices[i], bcm_s)
                              : g_strdup ("no slice finished");
      legend_entry (cr, &lg, KEY_FILL, dozer_rgb (i), 1.0, 0, NULL, 0, l1, l2);
    }
  lg.y += 8;
  static const char *const notes[] = { "A bar runs from the start of a",
                                       "slice's first push to its end, stops",
                                       "included, in the colour of the dozer",
                                       "that made its last push. A box",
                                       "spans a block from its first push",
                                       "to its end, its length in days", "beside it.", NULL };
  legend_notes (cr, &lg, notes);
  if (rd->dozers->len > G_N_ELEMENTS (DOZER_RGB))
    {
      g_autofree char *s = fmt ("Colours repeat after %u dozers.", (guint) G_N_ELEMENTS (DOZER_RGB));
      text_at (cr, lg.x, lg.y, 0.0, 0.0, s);
    }

  run_footer (cr, rd, W, H);
  return finish_page (surf, cr, dir, "schedule.png", error);
}

/* ---- spread.png: the replications --------------------------------------------- */

static gboolean
replication_row (RunData *rd, char **f, const char *path, guint line, GError **error)
{
  guint index = 0, complete = 0, failures = 0;
  double cal_h = 0, moved = 0, per_op = 0, per_cal = 0, strip = 0, coal = 0, cost = 0;
  if (!field_uint (f[0], path, line, "replication", &index, error)
      || !field_uint (f[1], path, line, "complete", &complete, error)
      || !field_double (f[2], path, line, "calendar_h", &cal_h, error)
      || !field_double (f[3], path, line, "moved_bcm", &moved, error)
      || !field_double (f[4], path, line, "bcm_per_operating_h", &per_op, error)
      || !field_double (f[5], path, line, "bcm_per_calendar_h", &per_cal, error)
      || !field_double (f[6], path, line, "strip_m_per_day", &strip, error)
      || !field_double (f[7], path, line, "coal_t_per_day", &coal, error)
      || !field_double (f[8], path, line, "cost_per_bcm", &cost, error)
      || !field_uint (f[9], path, line, "failures", &failures, error))
    return FALSE;
  if (index != rd->reps->len)
    {
      g_autofree char *want = fmt ("replication %u (rows in order from 0)", rd->reps->len);
      return field_error (error, path, line, "replication", want, f[0]);
    }
  if (complete > 1)
    return field_error (error, path, line, "complete", "0 or 1", f[1]);
  RunRep r = { complete == 1, cal_h / 24.0, per_cal, strip, coal, cost };
  g_array_append_val (rd->reps, r);
  return TRUE;
}

static const Rgb RGB_SPREAD_BAR = { 0.337, 0.706, 0.914 };
static const Rgb RGB_SPREAD_MID = { 0.835, 0.369, 0.000 };

/* One measure over the replications: a histogram, the 10th and 90th
 * percentiles (dashed) and the median (solid), with their values. */
static void
draw_spread_panel (cairo_t *cr, double left, double top, double width, double height,
                   const double *x, guint n, const char *title, int dec)
{
  SfSpread sp;
  sf_spread (x, n, &sp);
  /* bins: about the square root of the count, 5 to 20 (common practice,
   * no source), over the range padded by half a bin */
  guint k = (guint) CLAMP (ceil (sqrt ((double) n)), 5.0, 20.0);
  double span = sp.max - sp.min;
  if (!(span > 0))
    span = MAX (fabs (sp.max) * 0.01, 1e-6);
  double bin = span / k;
  double lo = sp.min - 0.5 * bin, hi = lo + (k + 1) * bin;
  g_autofree guint *count = g_new0 (guint, k + 1);
  guint top_count = 0;
  for (guint i = 0; i < n; i++)
    {
      guint b = (guint) CLAMP (floor ((x[i] - lo) / bin), 0.0, (double) k);
      count[b]++;
      top_count = MAX (top_count, count[b]);
    }
  double ys = sf_chart_tick_step (top_count * 1.25, 5);
  ys = MAX (ys, 1.0);
  const Frame f = { left, top + 28, width, height - 28 - 56, lo, hi, 0.0,
                    ceil (top_count * 1.25 / ys - 1e-9) * ys };
  set_rgb (cr, &RGB_TEXT);
  font (cr, 15, TRUE);
  text_at (cr, left, top, 0.0, 0.0, title);
  draw_axes (cr, &f, " ", "replications", 6, 5);
  cairo_save (cr);
  clip_frame (cr, &f);
  set_rgba (cr, &RGB_SPREAD_BAR, 0.9);
  for (guint b = 0; b <= k; b++)
    if (count[b])
      {
        double u0 = px (&f, lo + b * bin) + 1, u1 = px (&f, lo + (b + 1) * bin) - 1;
        double v = py (&f, count[b]);
        cairo_rectangle (cr, u0, v, MAX (u1 - u0, 1.0), f.top + f.height - v);
      }
  cairo_fill (cr);
  /* the percentiles */
  const double q[3] = { sp.p10, sp.p50, sp.p90 };
  const char *name[3] = { "p10", "p50", "p90" };
  cairo_set_line_width (cr, 2.0);
  set_rgb (cr, &RGB_SPREAD_MID);
  for (int i = 0; i < 3; i++)
    {
      double dash[] = { 6.0, 4.0 };
      cairo_set_dash (cr, dash, i == 1 ? 0 : 2, 0);
      double u = floor (px (&f, q[i])) + 0.5;
      cairo_move_to (cr, u, f.top);
      cairo_line_to (cr, u, f.top + f.height);
      cairo_stroke (cr);
    }
  cairo_set_dash (cr, NULL, 0, 0);
  font (cr, 12, FALSE);
  for (int i = 0; i < 3; i++)
    {
      g_autofree char *v = fmt ("%.*f", dec, q[i]);
      g_autofree char *s = fmt ("%s %s", name[i], v);
      double u = px (&f, q[i]), w = text_width (cr, s);
      /* p10 to the left of its line, p90 to the right, p50 on top; each
       * turned to the other side when the frame's edge is in the way */
      double ha = i == 0 ? 1.0 : i == 2 ? 0.0 : 0.5;
      if (i == 0 && u - 4 - w < f.left)
        ha = 0.0;
      else if (i == 2 && u + 4 + w > f.left + f.width)
        ha = 1.0;
      else if (i == 1)
        ha = CLAMP ((u - f.left) / f.width, 0.0, 1.0) < 0.1 ? 0.0
             : (u - f.left) / f.width > 0.9            ? 1.0
                                                        : 0.5;
      double du = ha == 1.0 ? -4.0 : ha == 0.0 ? 4.0 : 0.0;
      halo_text (cr, u + du, f.top + 4 + (i == 1 ? 0 : 16), ha, 0.0, s);
    }
  cairo_restore (cr);
  draw_frame_box (cr, &f);
  /* the numbers under the panel */
  g_autofree char *mean = fmt ("%.*f", dec, sp.mean);
  g_autofree char *sd = fmt ("%.*f", dec, sp.sd);
  g_autofree char *mn = fmt ("%.*f", dec, sp.min);
  g_autofree char *mx = fmt ("%.*f", dec, sp.max);
  g_autofree char *line = fmt ("mean %s, sd %s, min %s, max %s", mean, sd, mn, mx);
  font (cr, 13, FALSE);
  cairo_set_source_rgb (cr, 0.3, 0.3, 0.3);
  text_at (cr, left + 0.5 * width, f.top + f.height + 26, 0.5, 0.0, line);
}

static gboolean
draw_spread (const RunData *rd, const char *dir, GError **error)
{
  const int W = SF_CHART_RUN_WIDTH_PX, H = SF_CHART_SPREAD_HEIGHT_PX;
  const guint n = rd->reps->len;
  cairo_t *cr;
  cairo_surface_t *surf = page_new (W, H, &cr);
  guint incomplete = 0;
  for (guint i = 0; i < n; i++)
    incomplete += !g_array_index (rd->reps, RunRep, i).complete;
  g_autofree char *title = fmt ("Spread over %u replications  -  scenario '%s'", n, rd->scenario);
  g_autofree char *subtitle
    = fmt ("each replication with its own random streams (breakdowns, repairs, weather); "
           "%u of %u stopped short of the end; replication 0's files are the others in "
           "this folder",
           incomplete, n);
  page_titles (cr, title, subtitle);
  gboolean coal = FALSE;
  for (guint i = 0; i < n; i++)
    coal = coal || g_array_index (rd->reps, RunRep, i).coal_t_per_day > 0;
  g_autofree double *x = g_new (double, n);
  static const char *const titles[] = { "Days to finish the strip", "bcm per calendar hour",
                                        "coal t per day", "strip m per day", "cost per bcm" };
  static const int decimals[] = { 2, 0, 0, 1, 3 };
  const int measures[4] = { 0, 1, coal ? 2 : 3, 4 };
  const double pw = (W - 2 * 92.0 - 80) / 2, ph = (H - 90 - 60) / 2.0;
  for (int m = 0; m < 4; m++)
    {
      for (guint i = 0; i < n; i++)
        {
          const RunRep *r = &g_array_index (rd->reps, RunRep, i);
          const double v[5] = { r->days, r->bcm_per_calendar_h, r->coal_t_per_day,
                                r->strip_m_per_day, r->cost_per_bcm };
          x[i] = v[measures[m]];
        }
      double left = 92 + (m % 2) * (pw + 120);
      double top = 84 + (m / 2) * ph;
      draw_spread_panel (cr, left, top, pw, ph, x, n, titles[measures[m]], decimals[measures[m]]);
    }
  run_footer (cr, rd, W, H);
  return finish_page (surf, cr, dir, "spread.png", error);
}

/* ---- entry point ---------------------------------------------------------------- */

gboolean
sf_chart_run_outputs (const char *out_dir, GError **error)
{
  g_return_val_if_fail (out_dir != NULL, FALSE);
  RunData rd = { 0 };
  gboolean ok = run_data_read (&rd, out_dir, error) && draw_daily (&rd, out_dir, error)
                && draw_usage (&rd, out_dir, error) && draw_schedule (&rd, out_dir, error);
  run_data_clear (&rd);
  return ok;
}

gboolean
sf_chart_run_spread (const char *out_dir, GError **error)
{
  g_return_val_if_fail (out_dir != NULL, FALSE);
  RunData rd = { 0 };
  rd.dozers = g_array_new (FALSE, TRUE, sizeof (RunDozer));
  g_array_set_clear_func (rd.dozers, run_dozer_clear);
  rd.reps = g_array_new (FALSE, TRUE, sizeof (RunRep));
  g_autofree char *path = g_build_filename (out_dir, "replications.csv", NULL);
  gboolean ok = read_summary (&rd, out_dir, error)
                && read_csv (&rd, path, REPLICATIONS_HEADER, REPLICATIONS_FIELDS, replication_row,
                             error);
  if (ok && rd.reps->len < 2)
    ok = input_error (error, SF_SCENARIO_ERROR_INVALID,
                      "%s line %u: expected a row per replication, at least 2, found %u", path,
                      rd.reps->len + 2, rd.reps->len);
  ok = ok && draw_spread (&rd, out_dir, error);
  run_data_clear (&rd);
  return ok;
}
