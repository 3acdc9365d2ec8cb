/* SPDX-License-Identifier: MIT
 *
 * sf-scenario.c — the scenario loader: the only code in stripfleet that reads
 * JSON or CSV text (docs/scenario-format.md is the user-facing description;
 * the format is version 1, "stripfleet-scenario-1").
 *
 * Owns: turning a scenario file (and the section CSV files it names) into a
 * typed SfScenario, and the defaults of every optional value, including the
 * roster, reliability and simulation parts (sf_roster_defaults,
 * sf_simulation_defaults; their _clear functions free what they own and
 * sf_scenario_free calls them).  The cJSON
 * tree lives only inside load_text(): parse, check and convert in one pass,
 * then cJSON_Delete exactly once (through g_autoptr) whatever happened.
 *
 * Error policy.  Every key is checked, unknown keys are errors, and the
 * loader does not stop at the first problem: it collects one line per
 * problem, "FILE: PATH: expected WHAT, found VALUE" (CSV problems
 * "FILE.csv:LINE: ..."), and on any problem returns NULL with one GError whose
 * message is those lines joined by "\n" (at most MAX_REPORTED lines, then a
 * count of the rest).  The error code is the most basic kind of problem
 * seen: SF_SCENARIO_ERROR_IO (a file could not be read) over _SYNTAX (not
 * JSON / not the CSV layout) over _INVALID (values).  A value with a problem
 * is replaced by its default so that later checks can go on; checks that
 * depend on an earlier bad value are skipped rather than reported twice.
 *
 * Memory: the returned SfScenario owns everything it points to and is freed
 * with sf_scenario_free().  The reader context (Reader) owns its problem
 * lines and path buffer and is cleared on every exit by g_auto.
 */
#include "sf-scenario.h"

#include <cJSON.h>
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <string.h>
#include <unistd.h>
#include <glib/gstdio.h>

#include "sf-geom.h"

G_DEFINE_AUTOPTR_CLEANUP_FUNC (cJSON, cJSON_Delete)

#define SF_SCENARIO_FORMAT "stripfleet-scenario-1"
/* Problem lines kept in the error message; the rest are only counted. */
#define MAX_REPORTED 100
/* Largest scenario or section file read, bytes (a guard against reading a
 * wrong, huge file into memory). */
#define MAX_INPUT_BYTES (64 * 1024 * 1024)

/* Reads the whole of `path` into *text (NUL-terminated, caller frees), but
 * never more than MAX_INPUT_BYTES: a pipe or a device that does not end
 * (/dev/zero, /dev/stdin left open) is refused with the limit instead of
 * filling memory, and a FIFO with no writer reads as empty instead of
 * blocking.  Errors are G_FILE_ERROR with the system's reason (an input over
 * the limit is G_FILE_ERROR_FAILED). */
static gboolean
read_bounded (const char *path, char **text, gsize *len, GError **error)
{
  int fd = g_open (path, O_RDONLY | O_NONBLOCK | O_CLOEXEC, 0);
  if (fd < 0)
    {
      int e = errno;
      g_set_error_literal (error, G_FILE_ERROR, g_file_error_from_errno (e), g_strerror (e));
      return FALSE;
    }
  /* blocking reads from here on (O_NONBLOCK was only for opening a FIFO) */
  int fl = fcntl (fd, F_GETFL);
  if (fl >= 0)
    fcntl (fd, F_SETFL, fl & ~O_NONBLOCK);
  GString *buf = g_string_sized_new (4096);
  char chunk[65536];
  for (;;)
    {
      gssize n = read (fd, chunk, sizeof chunk);
      if (n < 0 && errno == EINTR)
        continue;
      if (n < 0)
        {
          int e = errno;
          g_set_error_literal (error, G_FILE_ERROR, g_file_error_from_errno (e), g_strerror (e));
          break;
        }
      if (n == 0)
        {
          close (fd);
          *len = buf->len;
          *text = g_string_free (buf, FALSE);
          return TRUE;
        }
      if (buf->len + (gsize) n > MAX_INPUT_BYTES)
        {
          g_set_error (error, G_FILE_ERROR, G_FILE_ERROR_FAILED,
                       "larger than the limit of %d bytes (no end found within it)",
                       MAX_INPUT_BYTES);
          break;
        }
      g_string_append_len (buf, chunk, n);
    }
  close (fd);
  g_string_free (buf, TRUE);
  return FALSE;
}

/* ==== defaults and small public helpers =================================== */

void
sf_material_defaults (SfMaterial *m)
{
  g_return_if_fail (m != NULL);
  /* The first three are required in a scenario file; these are the values
   * of the example in docs/scenario-format.md, for scenarios built in code. */
  m->bank_density_t_per_bcm = 2.4;
  m->swell = 0.25;
  m->repose_deg = 37.0;
  /* Optional in the file; these are the documented defaults. */
  m->soil_friction = 0.75;
  m->steel_friction = 0.45;
  m->cutting_resistance_kpa = 60.0;
  m->blade_fill_factor = 0.9;
}

void
sf_design_defaults (SfDesign *d)
{
  g_return_if_fail (d != NULL);
  *d = (SfDesign){
    .dozer_floor_above_coal_m = 10.0,
    .spoil_toe_offset_m = 0.0,
    .pivot = SF_PIVOT_STANDARD,
    .pivot_lift_m = 0.0,
    .lift_ramp_grade_pct = 10.0,
    .strategy = SF_SLICES_TIPOVER_LAYERS,
    .cutoff_grade_pct = 20.0,
    .layer_count = 4,
    .straight_count = 6,
    .min_push_grade_pct = 5.0,
    .slot_dozing = TRUE,
    .side_by_side = FALSE,
    .spill_per_m = 0.002,
    .slot_spill_factor = 0.5,
    .side_by_side_spill_factor = 0.6,
    .load_distance_m = 12.0,
  };
}

void
sf_factors_defaults (SfFactors *f)
{
  g_return_if_fail (f != NULL);
  f->operator_skill = 1.0;
  f->job_efficiency = 0.83;
  f->visibility = 1.0;
  f->material = 1.0;
}

/* The roster of a scenario without "roster": one 24 h shift from midnight,
 * one crew with an operator for every dozer, a pattern of one day, no
 * shift-change time, no meals, no night factor, no weather.  Overwrites *r
 * without freeing: r must be zeroed or cleared (sf_roster_clear) first.
 * Free with sf_roster_clear. */
void
sf_roster_defaults (SfRoster *r, guint n_dozers)
{
  g_return_if_fail (r != NULL);
  *r = (SfRoster){
    .n_shifts = 1,
    .n_crews = 1,
    .pattern_days = 1,
    .shift_change_min = 0.0,
    .meal_min = 0.0,
    .meal_after_h = 5.0,
    .hot_seat = FALSE,
    .night_factor = 1.0,
    .wet_day_probability = 0.0,
    .wet_stop_h = { .kind = SF_DIST_FIXED, .mean = 0.0 }, /* unused: no weather */
  };
  r->shifts[0] = (SfShift){ g_strdup ("all-day"), 0, 24.0, FALSE };
  r->crews[0] = (SfCrew){ g_strdup ("all"), MIN (n_dozers, SF_MAX_DOZERS), 1.0 };
  r->pattern = g_new0 (guint8, 1); /* day 0, shift 0: crew 0 */
}

/* Frees what the roster owns (names, pattern) and zeroes it.  Safe on a
 * zeroed or partly filled roster and on one cleared before. */
void
sf_roster_clear (SfRoster *r)
{
  if (!r)
    return;
  for (guint i = 0; i < SF_MAX_SHIFTS; i++)
    g_free (r->shifts[i].name);
  for (guint i = 0; i < SF_MAX_CREWS; i++)
    g_free (r->crews[i].name);
  g_free (r->pattern);
  memset (r, 0, sizeof *r);
}

/* The simulation settings of a scenario without "simulation".  The start is
 * a fixed date (Monday 4 January 2027, 06:00 UTC) so that results do not
 * depend on when the program runs; every block is workable at the start
 * (blast_h: n_blocks zeros; NULL when n_blocks is 0).  Overwrites *s without
 * freeing: s must be zeroed or cleared first.  Free with
 * sf_simulation_clear. */
void
sf_simulation_defaults (SfSimulation *s, guint n_blocks)
{
  g_return_if_fail (s != NULL);
  g_autoptr (GTimeZone) utc = g_time_zone_new_utc ();
  *s = (SfSimulation){
    .start = g_date_time_new (utc, 2027, 1, 4, 6, 0, 0.0),
    .seed = 1,
    .horizon_days = 3650.0,
    .dispatch = SF_DISPATCH_FINISH_BLOCK,
    .min_separation_lanes = 1,
    .max_slice_lead = 1,
    .tram_speed_kmh = 5.0,
    .fitters = 2,
    .blast_h = n_blocks ? g_new0 (double, n_blocks) : NULL,
  };
}

/* Releases the start time and the blast table and zeroes s.  Safe on a
 * zeroed simulation and on one cleared before. */
void
sf_simulation_clear (SfSimulation *s)
{
  if (!s)
    return;
  g_clear_pointer (&s->start, g_date_time_unref);
  g_free (s->blast_h);
  memset (s, 0, sizeof *s);
}

/* Rated blade capacity, loose m3.  A rated value given for the class wins.
 * Without one, only a straight blade has a published rating formula:
 * V = 0.8 W H^2 (SAE J1265, superseded by SAE J/ISO 9246; W the blade width,
 * H the effective height A/W).  The wing term of semi-U and U blades is not
 * reproduced here, so those classes must carry their rated value (the loader
 * insists on it). */
double
sf_dozer_class_rated_lcm (const SfDozerClass *c)
{
  g_return_val_if_fail (c != NULL, 0.0);
  if (c->blade_rated_lcm > 0.0)
    return c->blade_rated_lcm;
  g_return_val_if_fail (c->blade_type == SF_BLADE_STRAIGHT, 0.0);
  return 0.8 * c->blade_width_m * c->blade_height_m * c->blade_height_m;
}

void
sf_dozer_class_free (SfDozerClass *c)
{
  if (!c)
    return;
  g_free (c->name);
  g_free (c);
}

void
sf_section_spec_free (SfSectionSpec *s)
{
  if (!s)
    return;
  g_clear_pointer (&s->surface, g_array_unref);
  g_clear_pointer (&s->coal_roof, g_array_unref);
  g_free (s->source);
  g_free (s);
}

static void
section_spec_free_cb (gpointer p)
{
  sf_section_spec_free (p);
}

static void
dozer_class_free_cb (gpointer p)
{
  sf_dozer_class_free (p);
}

void
sf_scenario_free (SfScenario *sc)
{
  if (!sc)
    return;
  g_free (sc->path);
  g_free (sc->name);
  g_free (sc->description);
  g_clear_pointer (&sc->sections, g_ptr_array_unref);
  g_clear_pointer (&sc->classes, g_ptr_array_unref);
  g_clear_pointer (&sc->fleet, g_array_unref);
  sf_roster_clear (&sc->roster);
  sf_simulation_clear (&sc->sim);
  g_free (sc);
}

/* ==== getters ============================================================= */

const char *
sf_scenario_get_name (const SfScenario *sc)
{
  g_return_val_if_fail (sc != NULL, NULL);
  return sc->name;
}

const char *
sf_scenario_get_description (const SfScenario *sc)
{
  g_return_val_if_fail (sc != NULL, NULL);
  return sc->description;
}

guint
sf_scenario_get_n_blocks (const SfScenario *sc)
{
  g_return_val_if_fail (sc != NULL, 0);
  return sc->strip.n_blocks;
}

/* floor(block length / lane width).  The small guard keeps an exact fit
 * (50 m / 6.25 m = 8) from becoming 7 through binary rounding. */
static guint
lanes_in_block (double length_m, guint n_blocks, double lane_width_m)
{
  if (n_blocks == 0 || !(lane_width_m > 0.0))
    return 0;
  double q = length_m / n_blocks / lane_width_m;
  if (!(q >= 0.0))
    return 0;
  if (q > G_MAXUINT)
    return G_MAXUINT;
  return (guint)floor (q * (1.0 + 1e-12));
}

guint
sf_scenario_get_n_lanes (const SfScenario *sc)
{
  g_return_val_if_fail (sc != NULL, 0);
  return lanes_in_block (sc->strip.length_m, sc->strip.n_blocks, sc->strip.lane_width_m);
}

guint
sf_scenario_get_n_classes (const SfScenario *sc)
{
  g_return_val_if_fail (sc != NULL, 0);
  return sc->classes ? sc->classes->len : 0;
}

const char *
sf_scenario_get_class_name (const SfScenario *sc, guint class_index)
{
  g_return_val_if_fail (sc != NULL, NULL);
  g_return_val_if_fail (sc->classes != NULL && class_index < sc->classes->len, NULL);
  const SfDozerClass *c = g_ptr_array_index (sc->classes, class_index);
  return c->name;
}

guint
sf_scenario_get_n_crews (const SfScenario *sc)
{
  g_return_val_if_fail (sc != NULL, 0);
  return sc->roster.n_crews;
}

const char *
sf_scenario_get_crew_name (const SfScenario *sc, guint crew_index)
{
  g_return_val_if_fail (sc != NULL && crew_index < sc->roster.n_crews, NULL);
  return sc->roster.crews[crew_index].name;
}

int
sf_scenario_find_class (const SfScenario *sc, const char *name)
{
  g_return_val_if_fail (sc != NULL, -1);
  if (!name || !sc->classes)
    return -1;
  for (guint i = 0; i < sc->classes->len; i++)
    {
      const SfDozerClass *c = g_ptr_array_index (sc->classes, i);
      if (g_strcmp0 (c->name, name) == 0)
        return (int)i;
    }
  return -1;
}

/* ==== reader context and problem lines ==================================== */

typedef struct {
  const char *label;        /* file name in messages (borrowed) */
  const char *base_dir;     /* folder for relative CSV paths; NULL = cwd (borrowed) */
  GPtrArray *problems;      /* char *, owned: the kept problem lines */
  guint n_problems;         /* every problem found, kept or not */
  gboolean seen_io, seen_syntax;
  GString *path;            /* JSON path of the value being read, "" at the root */
  const char *note;         /* NULL, or a few words put before each message while set
                               ("impossible parameters for dist ..."; borrowed) */
} Reader;

static void
reader_clear (Reader *r)
{
  g_clear_pointer (&r->problems, g_ptr_array_unref);
  if (r->path)
    g_string_free (r->path, TRUE);
  r->path = NULL;
}
G_DEFINE_AUTO_CLEANUP_CLEAR_FUNC (Reader, reader_clear)

static void
add_line (Reader *r, SfScenarioError code, char *line /* owned */)
{
  r->n_problems++;
  if (code == SF_SCENARIO_ERROR_IO)
    r->seen_io = TRUE;
  else if (code == SF_SCENARIO_ERROR_SYNTAX)
    r->seen_syntax = TRUE;
  if (r->problems->len < MAX_REPORTED)
    g_ptr_array_add (r->problems, line);
  else
    g_free (line);
}

/* "LABEL: PATH: message", or "LABEL: message" at the root. */
G_GNUC_PRINTF (3, 4)
static void
problem (Reader *r, SfScenarioError code, const char *fmt, ...)
{
  va_list ap;
  va_start (ap, fmt);
  g_autofree char *msg = g_strdup_vprintf (fmt, ap);
  va_end (ap);
  g_autofree char *text = r->note ? g_strdup_printf ("%s: %s", r->note, msg) : g_strdup (msg);
  add_line (r, code,
            r->path->len ? g_strdup_printf ("%s: %s: %s", r->label, r->path->str, text)
                         : g_strdup_printf ("%s: %s", r->label, text));
}

#define invalid(r, ...) problem ((r), SF_SCENARIO_ERROR_INVALID, __VA_ARGS__)

/* "FILE:LINE: message" (line 0: "FILE: message"), for CSV and syntax errors. */
G_GNUC_PRINTF (5, 6)
static void
file_problem (Reader *r, SfScenarioError code, const char *file, guint line, const char *fmt, ...)
{
  va_list ap;
  va_start (ap, fmt);
  g_autofree char *msg = g_strdup_vprintf (fmt, ap);
  va_end (ap);
  add_line (r, code,
            line ? g_strdup_printf ("%s:%u: %s", file, line, msg)
                 : g_strdup_printf ("%s: %s", file, msg));
}

static gsize
path_key (Reader *r, const char *key)
{
  gsize mark = r->path->len;
  if (mark)
    g_string_append_c (r->path, '.');
  g_string_append (r->path, key);
  return mark;
}

static gsize
path_index (Reader *r, guint i)
{
  gsize mark = r->path->len;
  g_string_append_printf (r->path, "[%u]", i);
  return mark;
}

static void
path_pop (Reader *r, gsize mark)
{
  g_string_truncate (r->path, mark);
}

/* A number as text for messages: shortest-looking form, C locale whatever
 * the process locale ("%.15g" prints 0.1 as 0.1 and 1e6 as 1000000).  The
 * struct is returned by value so `num (x).s` can be used directly as a
 * printf argument (the temporary lives to the end of the full expression). */
typedef struct {
  char s[G_ASCII_DTOSTR_BUF_SIZE];
} NumText;

static NumText
num (double v)
{
  NumText t;
  if (isnan (v))
    g_strlcpy (t.s, "nan", sizeof t.s);
  else if (isinf (v))
    g_strlcpy (t.s, v > 0 ? "inf" : "-inf", sizeof t.s);
  else
    g_ascii_formatd (t.s, sizeof t.s, "%.15g", v);
  return t;
}

/* A computed length for messages, to the millimetre (values the user typed
 * are shown in full with num()). */
static NumText
num_mm (double v)
{
  return num (round (v * 1000.0) / 1000.0);
}

/* User text quoted for a one-line message: control characters escaped,
 * long text cut.  Newly allocated. */
static char *
quoted (const char *s)
{
  GString *q = g_string_new ("\"");
  guint n = 0;
  for (const char *p = s; *p; p++, n++)
    {
      if (n == 60)
        {
          g_string_append (q, "...");
          break;
        }
      unsigned char c = (unsigned char)*p;
      if (c == '"' || c == '\\')
        g_string_append_printf (q, "\\%c", c);
      else if (c < 0x20 || c == 0x7f)
        g_string_append_printf (q, "\\x%02x", c);
      else
        g_string_append_c (q, (char)c);
    }
  g_string_append_c (q, '"');
  return g_string_free (q, FALSE);
}

/* What a JSON value is, for "found ..." when the type is wrong. */
static const char *
kind_text (const cJSON *v)
{
  if (cJSON_IsNumber (v))
    return "a number";
  if (cJSON_IsString (v))
    return "a string";
  if (cJSON_IsTrue (v))
    return "true";
  if (cJSON_IsFalse (v))
    return "false";
  if (cJSON_IsNull (v))
    return "null";
  if (cJSON_IsArray (v))
    return "an array";
  if (cJSON_IsObject (v))
    return "an object";
  return "an unreadable value";
}

/* ==== typed member readers ================================================ */

/* A closed or open interval with the unit for messages ("(10, 2000] kW"). */
typedef struct {
  double lo, hi;
  gboolean lo_open, hi_open;
  const char *unit;
} Range;

static Range OO (double lo, double hi, const char *u) { return (Range){ lo, hi, TRUE, TRUE, u }; }
static Range OC (double lo, double hi, const char *u) { return (Range){ lo, hi, TRUE, FALSE, u }; }
static Range CO (double lo, double hi, const char *u) { return (Range){ lo, hi, FALSE, TRUE, u }; }
static Range CC (double lo, double hi, const char *u) { return (Range){ lo, hi, FALSE, FALSE, u }; }

static gboolean
in_range (Range rg, double v)
{
  if (rg.lo_open ? !(v > rg.lo) : !(v >= rg.lo))
    return FALSE;
  if (rg.hi_open ? !(v < rg.hi) : !(v <= rg.hi))
    return FALSE;
  return TRUE;
}

/* "a number in (10, 2000] kW"; newly allocated. */
static char *
range_text (Range rg)
{
  if (isinf (rg.lo) && isinf (rg.hi))
    return g_strdup ("a finite number");
  return g_strdup_printf ("a number in %c%s, %s%c%s%s", rg.lo_open ? '(' : '[', num (rg.lo).s,
                          num (rg.hi).s, rg.hi_open ? ')' : ']', rg.unit && *rg.unit ? " " : "",
                          rg.unit ? rg.unit : "");
}

static const cJSON *
member (const cJSON *obj, const char *key)
{
  return obj ? cJSON_GetObjectItemCaseSensitive (obj, key) : NULL;
}

/* Checks one JSON value (the reader's path already names it) as a number in
 * rg.  v == NULL means the key is absent: a problem when required.  *out is
 * written only with a valid value; returns TRUE when it was. */
static gboolean
check_number (Reader *r, const cJSON *v, Range rg, gboolean required, double *out)
{
  if (!v)
    {
      if (required)
        {
          g_autofree char *want = range_text (rg);
          invalid (r, "expected %s, found nothing (the key is missing)", want);
        }
      return FALSE;
    }
  if (!cJSON_IsNumber (v))
    {
      invalid (r, "expected a number, found %s", kind_text (v));
      return FALSE;
    }
  double x = v->valuedouble;
  if (!isfinite (x))
    {
      g_autofree char *want = range_text (rg);
      invalid (r, "expected %s, found a number too large to be finite", want);
      return FALSE;
    }
  if (!in_range (rg, x))
    {
      g_autofree char *want = range_text (rg);
      invalid (r, "expected %s, found %s", want, num (x).s);
      return FALSE;
    }
  *out = x;
  return TRUE;
}

/* obj.key as a number.  *out gets the value, or `def` when the key is
 * absent (optional) or has a problem.  Returns TRUE when *out is usable:
 * given and valid, or defaulted. */
static gboolean
read_number (Reader *r, const cJSON *obj, const char *key, Range rg, gboolean required,
             double def, double *out)
{
  const cJSON *v = member (obj, key);
  gsize mark = path_key (r, key);
  double x = def;
  gboolean ok = check_number (r, v, rg, required, &x);
  path_pop (r, mark);
  *out = ok ? x : def;
  return ok || (!v && !required);
}

#define req_number(r, o, k, rg, out) read_number ((r), (o), (k), (rg), TRUE, 0.0, (out))
#define opt_number(r, o, k, rg, def, out) read_number ((r), (o), (k), (rg), FALSE, (def), (out))

/* The value v as an integer in lo..hi.  `limit_what` (may be NULL) names
 * what hi counts when it is a hard limit, so that "found 5000" reads "the
 * limit is 2000 blocks". */
static gboolean
check_int (Reader *r, const cJSON *v, gint64 lo, gint64 hi, const char *limit_what,
           gboolean required, gint64 *out)
{
  if (!v)
    {
      if (required)
        invalid (r, "expected an integer in %" G_GINT64_FORMAT "..%" G_GINT64_FORMAT
                    ", found nothing (the key is missing)", lo, hi);
      return FALSE;
    }
  if (!cJSON_IsNumber (v))
    {
      invalid (r, "expected an integer, found %s", kind_text (v));
      return FALSE;
    }
  double x = v->valuedouble;
  if (!isfinite (x) || x != floor (x))
    {
      invalid (r, "expected an integer in %" G_GINT64_FORMAT "..%" G_GINT64_FORMAT ", found %s",
               lo, hi, isfinite (x) ? num (x).s : "a number too large to be finite");
      return FALSE;
    }
  if (x < (double)lo || x > (double)hi)
    {
      g_autofree char *limit = limit_what && x > (double)hi
          ? g_strdup_printf ("; the limit is %" G_GINT64_FORMAT " %s", hi, limit_what)
          : g_strdup ("");
      invalid (r, "expected an integer in %" G_GINT64_FORMAT "..%" G_GINT64_FORMAT ", found %s%s",
               lo, hi, num (x).s, limit);
      return FALSE;
    }
  *out = (gint64)x;
  return TRUE;
}

static gboolean
read_uint (Reader *r, const cJSON *obj, const char *key, gint64 lo, gint64 hi,
           const char *limit_what, gboolean required, guint def, guint *out)
{
  const cJSON *v = member (obj, key);
  gsize mark = path_key (r, key);
  gint64 x = def;
  gboolean ok = check_int (r, v, lo, hi, limit_what, required, &x);
  path_pop (r, mark);
  *out = ok ? (guint)x : def;
  return ok || (!v && !required);
}

/* obj.key as a string (borrowed from the tree), `def` when absent and
 * optional, NULL on a problem. */
static const char *
read_string (Reader *r, const cJSON *obj, const char *key, gboolean required, gboolean nonempty,
             const char *def)
{
  const cJSON *v = member (obj, key);
  const char *res = NULL;
  gsize mark = path_key (r, key);
  if (!v)
    {
      if (required)
        invalid (r, "expected a%s string, found nothing (the key is missing)",
                 nonempty ? " non-empty" : "");
      else
        res = def;
    }
  else if (!cJSON_IsString (v) || !v->valuestring)
    invalid (r, "expected a string, found %s", kind_text (v));
  else if (nonempty && !*v->valuestring)
    invalid (r, "expected a non-empty string, found an empty one");
  else
    res = v->valuestring;
  path_pop (r, mark);
  return res;
}

static void
read_bool (Reader *r, const cJSON *obj, const char *key, gboolean def, gboolean *out)
{
  const cJSON *v = member (obj, key);
  *out = def;
  if (!v)
    return;
  if (cJSON_IsBool (v))
    {
      *out = cJSON_IsTrue (v) ? TRUE : FALSE;
      return;
    }
  gsize mark = path_key (r, key);
  invalid (r, "expected true or false, found %s", kind_text (v));
  path_pop (r, mark);
}

/* obj.key as one of names[0..n-1]; *out gets the index (or def).  Returns
 * TRUE when *out is usable (a valid name, or absent and optional). */
static gboolean
read_enum (Reader *r, const cJSON *obj, const char *key, const char *const *names, guint n,
           gboolean required, guint def, guint *out)
{
  const cJSON *v = member (obj, key);
  *out = def;
  if (!v && !required)
    return TRUE;
  if (v && cJSON_IsString (v) && v->valuestring)
    for (guint i = 0; i < n; i++)
      if (strcmp (v->valuestring, names[i]) == 0)
        {
          *out = i;
          return TRUE;
        }
  g_autoptr (GString) want = g_string_new ("one of ");
  for (guint i = 0; i < n; i++)
    g_string_append_printf (want, "%s\"%s\"", i ? ", " : "", names[i]);
  g_autofree char *found = !v ? g_strdup ("nothing (the key is missing)")
                              : cJSON_IsString (v) ? quoted (v->valuestring)
                                                   : g_strdup (kind_text (v));
  gsize mark = path_key (r, key);
  invalid (r, "expected %s, found %s", want->str, found);
  path_pop (r, mark);
  return FALSE;
}

/* obj.key when it is an object (or array, for read_array); NULL when absent
 * (a problem if required) or of another type (always a problem). */
static const cJSON *
read_container (Reader *r, const cJSON *obj, const char *key, gboolean required,
                gboolean want_array)
{
  const cJSON *v = member (obj, key);
  const char *what = want_array ? "an array" : "an object";
  if (v && (want_array ? cJSON_IsArray (v) : cJSON_IsObject (v)))
    return v;
  if (v || required)
    {
      gsize mark = path_key (r, key);
      invalid (r, "expected %s, found %s", what, v ? kind_text (v) : "nothing (the key is missing)");
      path_pop (r, mark);
    }
  return NULL;
}

#define read_object(r, o, k, req) read_container ((r), (o), (k), (req), FALSE)
#define read_array(r, o, k, req) read_container ((r), (o), (k), (req), TRUE)

/* Rejects keys of obj not in allowed[] (NULL-terminated), and keys given
 * twice (cJSON keeps both; only the first would be read). */
static void
check_keys (Reader *r, const cJSON *obj, const char *const *allowed)
{
  g_autoptr (GHashTable) seen = g_hash_table_new (g_str_hash, g_str_equal);
  const cJSON *child;
  cJSON_ArrayForEach (child, obj)
  {
    const char *key = child->string ? child->string : "";
    gboolean known = FALSE;
    for (const char *const *a = allowed; *a; a++)
      if (strcmp (*a, key) == 0)
        known = TRUE;
    g_autofree char *shown = quoted (key);
    /* the key as it appears in the path: bare when it is printable */
    gboolean plain = strlen (shown) == strlen (key) + 2;
    gsize mark = path_key (r, plain ? key : shown);
    if (!known)
      {
        g_autofree char *list = g_strjoinv (", ", (char **)allowed);
        invalid (r, "unknown key; expected one of %s", list);
      }
    else if (g_hash_table_contains (seen, key))
      invalid (r, "key given twice; give each key once");
    path_pop (r, mark);
    g_hash_table_add (seen, (gpointer)key);
  }
}

/* ==== strings of section points =========================================== */

/* One x-monotone string of a cross-section while it is being read. */
typedef struct {
  GArray *pts;       /* SfPoint, owned */
  GArray *lines;     /* guint CSV line of each point; NULL for JSON */
  gboolean complete; /* every point was read (no malformed entries) */
  gboolean monotone; /* x strictly increasing so far */
} PointString;

static void
point_string_init (PointString *s, gboolean csv)
{
  s->pts = g_array_new (FALSE, FALSE, sizeof (SfPoint));
  s->lines = csv ? g_array_new (FALSE, FALSE, sizeof (guint)) : NULL;
  s->complete = TRUE;
  s->monotone = TRUE;
}

static void
point_string_clear (PointString *s)
{
  g_clear_pointer (&s->pts, g_array_unref);
  g_clear_pointer (&s->lines, g_array_unref);
}

/* Names point i for a message: "point 7" (JSON index) or "line 14" (CSV). */
static char *
point_name (const PointString *s, gsize i)
{
  if (s->lines)
    return g_strdup_printf ("line %u", g_array_index (s->lines, guint, i));
  return g_strdup_printf ("point %" G_GSIZE_FORMAT, i);
}

/* Whole-string checks, reported at the reader's current path: enough
 * points; when the string folds back, whether it also crosses itself (an
 * x-monotone string cannot cross itself, so good strings skip that
 * quadratic test); and that it spans the section range [xmin, xmax]
 * (have_range FALSE: the range itself was invalid, skip). */
static void
check_point_string (Reader *r, const PointString *s, gboolean have_range, double xmin, double xmax)
{
  guint n = s->pts->len;
  const SfPoint *p = (const SfPoint *)(void *)s->pts->data;
  if (n < 2)
    {
      if (s->complete)
        invalid (r, "expected at least 2 points [x, z], found %u", n);
      return;
    }
  if (!s->monotone && s->complete)
    {
      gsize a = 0, b = 0;
      if (sf_polyline_self_intersects (p, n, &a, &b))
        {
          g_autofree char *a0 = point_name (s, a), *a1 = point_name (s, a + 1);
          g_autofree char *b0 = point_name (s, b), *b1 = point_name (s, b + 1);
          invalid (r, "crosses itself: the segment from %s to %s meets the segment from %s to %s",
                   a0, a1, b0, b1);
        }
    }
  if (!s->monotone || !have_range)
    return;
  if (p[0].x_m > xmin)
    invalid (r, "must start at or before x = %s m (section_x_min_m), starts at x = %s m",
             num (xmin).s, num (p[0].x_m).s);
  if (p[n - 1].x_m < xmax)
    invalid (r, "must end at or after x = %s m (section_x_max_m), ends at x = %s m",
             num (xmax).s, num (p[n - 1].x_m).s);
}

/* The coal roof must not rise above the surface: checked at every vertex of
 * either string against the other (linear between vertices, so vertices are
 * where a crossing first shows), up to x_upto (the low-wall edge: beyond it
 * the previous strip's coal is mined and its floor lies below the roof).
 * One message names the first x in the order checked and how many other
 * vertices fail. */
static void
check_roof_below_surface (Reader *r, const GArray *surface, const GArray *roof, double x_upto)
{
  const double tol_m = 1e-9;
  const SfPoint *s = (const SfPoint *)(void *)surface->data;
  const SfPoint *c = (const SfPoint *)(void *)roof->data;
  guint n_bad = 0;
  SfPoint bad_roof = { 0 }, bad_surf = { 0 };
  for (guint i = 0; i < roof->len && c[i].x_m <= x_upto; i++)
    {
      double zs = sf_polyline_eval (s, surface->len, c[i].x_m);
      if (c[i].z_m > zs + tol_m && n_bad++ == 0)
        {
          bad_roof = c[i];
          bad_surf = (SfPoint){ c[i].x_m, zs };
        }
    }
  for (guint i = 0; i < surface->len && s[i].x_m <= x_upto; i++)
    {
      double zc = sf_polyline_eval (c, roof->len, s[i].x_m);
      if (zc > s[i].z_m + tol_m && n_bad++ == 0)
        {
          bad_roof = (SfPoint){ s[i].x_m, zc };
          bad_surf = s[i];
        }
    }
  if (n_bad)
    {
      g_autofree char *more = n_bad > 1 ? g_strdup_printf (" (and at %u more vert%s)", n_bad - 1,
                                                          n_bad == 2 ? "ex" : "ices")
                                        : g_strdup ("");
      invalid (r, "coal roof rises above the surface at x = %s m: roof z = %s m, surface z = %s m%s",
               num (bad_roof.x_m).s, num_mm (bad_roof.z_m).s, num_mm (bad_surf.z_m).s, more);
    }
}

/* obj.key: [[x, z], ...] into s (initialised for JSON). */
static void
read_json_points (Reader *r, const cJSON *obj, const char *key, PointString *s)
{
  const cJSON *arr = read_array (r, obj, key, TRUE);
  if (!arr)
    {
      s->complete = FALSE;
      return;
    }
  gsize mark = path_key (r, key);
  int n = cJSON_GetArraySize (arr);
  if (n > SF_MAX_SECTION_POINTS)
    {
      invalid (r, "expected at most %d points, found %d; the limit is %d points per string",
               SF_MAX_SECTION_POINTS, n, SF_MAX_SECTION_POINTS);
      s->complete = FALSE;
      path_pop (r, mark);
      return;
    }
  guint i = 0;
  const cJSON *pt;
  cJSON_ArrayForEach (pt, arr)
  {
    gsize m2 = path_index (r, i);
    double xz[2] = { 0, 0 };
    gboolean ok = cJSON_IsArray (pt) && cJSON_GetArraySize (pt) == 2;
    if (!ok)
      invalid (r, "expected a point [x, z] of two numbers, found %s",
               cJSON_IsArray (pt) ? "an array of another length" : kind_text (pt));
    else
      for (int k = 0; k < 2; k++)
        {
          const cJSON *v = cJSON_GetArrayItem (pt, k);
          if (!cJSON_IsNumber (v) || !isfinite (v->valuedouble))
            {
              invalid (r, "expected a point [x, z] of two finite numbers, found %s in place %d",
                       cJSON_IsNumber (v) ? "a number too large to be finite" : kind_text (v), k);
              ok = FALSE;
              break;
            }
          xz[k] = v->valuedouble;
        }
    if (!ok)
      s->complete = FALSE;
    else
      {
        SfPoint p = { xz[0], xz[1] };
        if (s->pts->len && s->complete)
          {
            double prev = g_array_index (s->pts, SfPoint, s->pts->len - 1).x_m;
            if (!(p.x_m > prev))
              {
                invalid (r, "folds back: x %s m is not greater than the previous x %s m",
                         num (p.x_m).s, num (prev).s);
                s->monotone = FALSE;
              }
          }
        g_array_append_val (s->pts, p);
      }
    path_pop (r, m2);
    i++;
  }
  path_pop (r, mark);
}

/* Reads a section CSV file (layout in docs/scenario-format.md) into surface
 * and roof (initialised for CSV).  `label` names the file in messages,
 * `file` is the path to open, `named_by` says which scenario key named it.
 * Rows are numbered as lines of the file, comments and blank lines included,
 * so "b23.csv:14" is line 14 in an editor. */
static void
read_csv_points (Reader *r, const char *label, const char *file, const char *named_by,
                 PointString *surface, PointString *roof)
{
  g_autofree char *text = NULL;
  gsize len = 0;
  g_autoptr (GError) err = NULL;
  GStatBuf st;
  surface->complete = roof->complete = FALSE; /* until read */
  if (g_stat (file, &st) == 0 && st.st_size > MAX_INPUT_BYTES)
    {
      file_problem (r, SF_SCENARIO_ERROR_IO, label, 0,
                    "file of %" G_GINT64_FORMAT " bytes is larger than the limit of %d bytes",
                    (gint64)st.st_size, MAX_INPUT_BYTES);
      return;
    }
  if (!g_file_test (file, G_FILE_TEST_EXISTS))
    {
      file_problem (r, SF_SCENARIO_ERROR_IO, label, 0,
                    "no such file (named by %s; a relative path is taken from the scenario's "
                    "folder)",
                    named_by);
      return;
    }
  if (!read_bounded (file, &text, &len, &err))
    {
      file_problem (r, SF_SCENARIO_ERROR_IO, label, 0, "cannot read this file (named by %s): %s",
                    named_by, err->message);
      return;
    }
  const char *bad = NULL;
  if (!g_utf8_validate_len (text, len, &bad))
    {
      guint line = 1;
      for (const char *p = text; p < bad; p++)
        line += *p == '\n';
      file_problem (r, SF_SCENARIO_ERROR_SYNTAX, label, line,
                    *bad ? "not valid UTF-8 text" : "a NUL byte: not a text file");
      return;
    }
  surface->complete = roof->complete = TRUE;
  const char *body = text;
  if (len >= 3 && memcmp (body, "\xEF\xBB\xBF", 3) == 0) /* byte-order mark */
    body += 3;
  g_auto (GStrv) lines = g_strsplit (body, "\n", -1);
  gboolean have_header = FALSE;
  for (guint ln = 0; lines[ln]; ln++)
    {
      guint line_no = ln + 1;
      char *line = g_strstrip (lines[ln]); /* also drops a '\r' of CRLF files */
      if (!*line || line[0] == '#')
        continue;
      g_auto (GStrv) col = g_strsplit (line, ",", -1);
      guint ncol = g_strv_length (col);
      for (guint k = 0; k < ncol; k++)
        g_strstrip (col[k]);
      if (!have_header)
        {
          have_header = TRUE;
          if (ncol != 3 || strcmp (col[0], "string") || strcmp (col[1], "x_m")
              || strcmp (col[2], "z_m"))
            {
              g_autofree char *q = quoted (line);
              file_problem (r, SF_SCENARIO_ERROR_SYNTAX, label, line_no,
                            "expected the header string,x_m,z_m, found %s", q);
              surface->complete = roof->complete = FALSE;
            }
          continue;
        }
      if (ncol != 3)
        {
          file_problem (r, SF_SCENARIO_ERROR_SYNTAX, label, line_no,
                        "expected 3 columns (string,x_m,z_m), found %u", ncol);
          surface->complete = roof->complete = FALSE;
          continue;
        }
      PointString *s = strcmp (col[0], "surface") == 0     ? surface
                       : strcmp (col[0], "coal_roof") == 0 ? roof
                                                           : NULL;
      if (!s)
        {
          g_autofree char *q = quoted (col[0]);
          file_problem (r, SF_SCENARIO_ERROR_SYNTAX, label, line_no,
                        "unknown string %s; expected surface or coal_roof", q);
          surface->complete = roof->complete = FALSE;
          continue;
        }
      double xz[2];
      gboolean ok = TRUE;
      for (int k = 0; k < 2; k++)
        {
          char *end = NULL;
          xz[k] = g_ascii_strtod (col[k + 1], &end);
          if (!*col[k + 1] || *end || !isfinite (xz[k]))
            {
              g_autofree char *q = quoted (col[k + 1]);
              file_problem (r, SF_SCENARIO_ERROR_SYNTAX, label, line_no,
                            "%s: expected a finite number, found %s", k ? "z_m" : "x_m", q);
              ok = FALSE;
            }
        }
      if (!ok)
        {
          s->complete = FALSE;
          continue;
        }
      if (s->pts->len >= SF_MAX_SECTION_POINTS)
        {
          if (s->complete)
            file_problem (r, SF_SCENARIO_ERROR_INVALID, label, line_no,
                          "more than %d %s points; the limit is %d points per string",
                          SF_MAX_SECTION_POINTS, col[0], SF_MAX_SECTION_POINTS);
          s->complete = FALSE;
          continue;
        }
      SfPoint p = { xz[0], xz[1] };
      if (s->pts->len && s->complete)
        {
          double prev = g_array_index (s->pts, SfPoint, s->pts->len - 1).x_m;
          if (!(p.x_m > prev))
            {
              file_problem (r, SF_SCENARIO_ERROR_INVALID, label, line_no,
                            "%s folds back: x %s m is not greater than the previous x %s m "
                            "(line %u)",
                            col[0], num (p.x_m).s, num (prev).s,
                            g_array_index (s->lines, guint, s->lines->len - 1));
              s->monotone = FALSE;
            }
        }
      g_array_append_val (s->pts, p);
      g_array_append_val (s->lines, line_no);
    }
  if (!have_header)
    {
      file_problem (r, SF_SCENARIO_ERROR_SYNTAX, label, 0,
                    "no header line; expected string,x_m,z_m and rows of points");
      surface->complete = roof->complete = FALSE;
      return;
    }
  const char *names[2] = { "surface", "coal_roof" };
  PointString *ss[2] = { surface, roof };
  for (int k = 0; k < 2; k++)
    if (ss[k]->pts->len == 0 && ss[k]->complete)
      {
        file_problem (r, SF_SCENARIO_ERROR_INVALID, label, 0,
                      "missing string %s: no rows; expected at least 2 points", names[k]);
        ss[k]->complete = FALSE;
      }
}

/* ==== sections ============================================================= */

typedef struct {
  gboolean blocks_ok;  /* strip.blocks valid */
  gboolean range_ok;   /* section_x_min_m / _max_m valid */
} StripState;

static void
read_generated (Reader *r, const cJSON *g, SfSectionParams *p)
{
  static const char *const keys[] = { "overburden_m", "strip_width_m", "coal_thickness_m",
                                      "dip_deg", "highwall_deg", "cast_fraction",
                                      "muckpile_grade_pct", "prev_spoil_height_m", NULL };
  check_keys (r, g, keys);
  req_number (r, g, "overburden_m", OC (0, 300, "m"), &p->overburden_m);
  req_number (r, g, "strip_width_m", OC (5, 300, "m"), &p->strip_width_m);
  req_number (r, g, "coal_thickness_m", OC (0, 30, "m"), &p->coal_thickness_m);
  opt_number (r, g, "dip_deg", OO (-30, 30, "deg"), 0.0, &p->dip_deg);
  req_number (r, g, "highwall_deg", OO (0, 90, "deg"), &p->highwall_deg);
  req_number (r, g, "cast_fraction", CC (0, 0.8, ""), &p->cast_fraction);
  opt_number (r, g, "muckpile_grade_pct", CO (0, 100, "%"), 25.0, &p->muckpile_grade_pct);
  opt_number (r, g, "prev_spoil_height_m", CC (0, 200, "m"), 0.0, &p->prev_spoil_height_m);
}

/* highwall_toe_x_m and low_wall_edge_x_m of obj, within the section range
 * and in order; and the optional coal_thickness_m. */
static void
read_toe_and_edge (Reader *r, const SfScenario *sc, const StripState *st, const cJSON *obj,
                   SfSectionSpec *spec)
{
  Range rg = st->range_ok ? CC (sc->strip.x_min_m, sc->strip.x_max_m, "m")
                          : OO (-HUGE_VAL, HUGE_VAL, "m");
  gboolean toe_ok = req_number (r, obj, "highwall_toe_x_m", rg, &spec->highwall_toe_x_m);
  gboolean edge_ok = req_number (r, obj, "low_wall_edge_x_m", rg, &spec->low_wall_edge_x_m);
  opt_number (r, obj, "coal_thickness_m", OC (0, 30, "m"), 0.0, &spec->coal_thickness_m);
  if (toe_ok && edge_ok && !(spec->low_wall_edge_x_m > spec->highwall_toe_x_m))
    {
      gsize mark = path_key (r, "low_wall_edge_x_m");
      invalid (r, "expected a number greater than highwall_toe_x_m (%s m), found %s",
               num (spec->highwall_toe_x_m).s, num (spec->low_wall_edge_x_m).s);
      path_pop (r, mark);
    }
}

/* Most ground over the coal roof that a section may show, m: the same limit
 * as generated.overburden_m.  Beyond the highwall toe everything between
 * the surface and the roof is loose material that the section lets settle
 * at the angle of repose, and a column kilometres high (a wrong unit, a
 * stray survey point) would take that settling hours. */
#define MAX_COVER_M 300.0

/* The surface at most MAX_COVER_M above the coal roof, checked at every
 * vertex of either string within [x_lo, x_hi] and at x_lo and x_hi when
 * finite (both strings are straight between those points, so that is
 * everywhere). */
static void
check_cover (Reader *r, const GArray *surface, const GArray *roof, double x_lo, double x_hi)
{
  const SfPoint *s = (const SfPoint *)(void *)surface->data;
  const SfPoint *c = (const SfPoint *)(void *)roof->data;
  guint n_bad = 0;
  double first_x = 0, first_s = 0, first_c = 0;
  const SfPoint ends[2] = { { x_lo, 0 }, { x_hi, 0 } };
  for (int k = 0; k < 3; k++)
    {
      const SfPoint *p = k == 0 ? s : k == 1 ? c : ends;
      guint n = k == 0 ? surface->len : k == 1 ? roof->len : 2;
      for (guint i = 0; i < n; i++)
        {
          if (!isfinite (p[i].x_m) || p[i].x_m < x_lo || p[i].x_m > x_hi)
            continue;
          double zs = k == 0 ? p[i].z_m : sf_polyline_eval (s, surface->len, p[i].x_m);
          double zc = k == 1 ? p[i].z_m : sf_polyline_eval (c, roof->len, p[i].x_m);
          if (zs - zc > MAX_COVER_M && n_bad++ == 0)
            {
              first_x = p[i].x_m;
              first_s = zs;
              first_c = zc;
            }
        }
    }
  if (n_bad)
    {
      g_autofree char *more = n_bad > 1 ? g_strdup_printf (" (and at %u more point%s)", n_bad - 1,
                                                          n_bad == 2 ? "" : "s")
                                        : g_strdup ("");
      invalid (r, "surface stands %s m above the coal roof at x = %s m (surface z = %s m, roof "
                  "z = %s m)%s; expected at most %g m of cover, as for generated.overburden_m",
               num_mm (first_s - first_c).s, num (first_x).s, num_mm (first_s).s,
               num_mm (first_c).s, more, MAX_COVER_M);
    }
}

/* Checks surface and roof as strings and against each other, at the
 * reader's current path/label, then moves them into spec. */
static void
finish_strings (Reader *r, const SfScenario *sc, const StripState *st, PointString *surface,
                PointString *roof, SfSectionSpec *spec)
{
  const char *names[2] = { "surface", "coal_roof" };
  PointString *ss[2] = { surface, roof };
  for (int k = 0; k < 2; k++)
    {
      gsize mark = path_key (r, names[k]);
      check_point_string (r, ss[k], st->range_ok, sc->strip.x_min_m, sc->strip.x_max_m);
      path_pop (r, mark);
    }
  if (surface->complete && surface->monotone && surface->pts->len >= 2 && roof->complete
      && roof->monotone && roof->pts->len >= 2)
    {
      check_roof_below_surface (r, surface->pts, roof->pts,
                                spec->low_wall_edge_x_m > spec->highwall_toe_x_m
                                  ? spec->low_wall_edge_x_m
                                  : INFINITY);
      check_cover (r, surface->pts, roof->pts, st->range_ok ? sc->strip.x_min_m : -INFINITY,
                   st->range_ok ? sc->strip.x_max_m : INFINITY);
    }
  spec->surface = g_steal_pointer (&surface->pts);
  spec->coal_roof = g_steal_pointer (&roof->pts);
}

static SfSectionSpec *
read_section (Reader *r, const SfScenario *sc, const StripState *st, const cJSON *obj,
              gboolean *block_ok)
{
  static const char *const keys[] = { "block", "generated", "strings", "csv",
                                      "highwall_toe_x_m", "low_wall_edge_x_m",
                                      "coal_thickness_m", NULL };
  static const char *const string_keys[] = { "surface", "coal_roof", "highwall_toe_x_m",
                                             "low_wall_edge_x_m", "coal_thickness_m", NULL };
  SfSectionSpec *spec = g_new0 (SfSectionSpec, 1);
  spec->source = g_strdup_printf ("%s:%s", r->label, r->path->str);
  *block_ok = FALSE;
  if (!cJSON_IsObject (obj))
    {
      invalid (r, "expected an object, found %s", kind_text (obj));
      return spec;
    }
  *block_ok = read_uint (r, obj, "block", 0, st->blocks_ok ? (gint64)sc->strip.n_blocks - 1 : SF_MAX_BLOCKS - 1,
             NULL, TRUE, 0, &spec->block);

  const cJSON *gen = member (obj, "generated"), *str = member (obj, "strings"),
              *csv = member (obj, "csv");
  int n_kinds = (gen != NULL) + (str != NULL) + (csv != NULL);
  if (n_kinds != 1)
    {
      invalid (r, "expected exactly one of generated, strings, csv, found %s",
               n_kinds == 0 ? "none" : "more than one");
      check_keys (r, obj, keys);
      return spec;
    }
  if (gen)
    {
      static const char *const k_gen[] = { "block", "generated", NULL };
      check_keys (r, obj, k_gen);
      spec->kind = SF_SECTION_GENERATED;
      const cJSON *g = read_object (r, obj, "generated", TRUE);
      if (g)
        {
          gsize mark = path_key (r, "generated");
          read_generated (r, g, &spec->params);
          path_pop (r, mark);
        }
      return spec;
    }

  spec->kind = SF_SECTION_STRINGS;
  PointString surface, roof;
  point_string_init (&surface, csv != NULL);
  point_string_init (&roof, csv != NULL);
  if (str)
    {
      static const char *const k_str[] = { "block", "strings", NULL };
      check_keys (r, obj, k_str);
      const cJSON *s = read_object (r, obj, "strings", TRUE);
      if (s)
        {
          gsize mark = path_key (r, "strings");
          check_keys (r, s, string_keys);
          read_json_points (r, s, "surface", &surface);
          read_json_points (r, s, "coal_roof", &roof);
          read_toe_and_edge (r, sc, st, s, spec);
          finish_strings (r, sc, st, &surface, &roof, spec);
          path_pop (r, mark);
        }
    }
  else
    {
      static const char *const k_csv[] = { "block", "csv", "highwall_toe_x_m",
                                           "low_wall_edge_x_m", "coal_thickness_m", NULL };
      check_keys (r, obj, k_csv);
      const char *rel = read_string (r, obj, "csv", TRUE, TRUE, NULL);
      read_toe_and_edge (r, sc, st, obj, spec);
      if (rel)
        {
          /* the CSV is named in messages as the scenario folder + the given path */
          g_autofree char *label = g_path_is_absolute (rel) || !r->base_dir
                                       ? g_strdup (rel)
                                       : g_build_filename (r->base_dir, rel, NULL);
          g_free (spec->source);
          spec->source = g_strdup (label);
          g_autofree char *named_by = g_strdup_printf ("%s: %s.csv", r->label, r->path->str);
          read_csv_points (r, label, label, named_by, &surface, &roof);
          /* whole-string problems are named "FILE.csv: surface: ..." */
          g_autofree char *saved_path = g_strdup (r->path->str);
          const char *saved_label = r->label;
          r->label = label;
          g_string_truncate (r->path, 0);
          if (surface.complete || roof.complete)
            finish_strings (r, sc, st, &surface, &roof, spec);
          r->label = saved_label;
          g_string_assign (r->path, saved_path);
        }
    }
  point_string_clear (&surface);
  point_string_clear (&roof);
  return spec;
}

static int
cmp_section_block (gconstpointer a, gconstpointer b)
{
  const SfSectionSpec *sa = *(const SfSectionSpec *const *)a;
  const SfSectionSpec *sb = *(const SfSectionSpec *const *)b;
  return (sa->block > sb->block) - (sa->block < sb->block);
}

static void
read_sections (Reader *r, const cJSON *root, SfScenario *sc, const StripState *st)
{
  const cJSON *arr = read_array (r, root, "sections", TRUE);
  if (!arr)
    return;
  gsize mark = path_key (r, "sections");
  int n = cJSON_GetArraySize (arr);
  if (n == 0)
    invalid (r, "expected at least one section, found none");
  else if (n > SF_MAX_BLOCKS)
    invalid (r, "expected at most %d sections, found %d; the limit is %d blocks", SF_MAX_BLOCKS,
             n, SF_MAX_BLOCKS);
  else
    {
      g_autoptr (GHashTable) by_block = g_hash_table_new (NULL, NULL); /* block+1 -> index+1 */
      guint i = 0;
      const cJSON *obj;
      cJSON_ArrayForEach (obj, arr)
      {
        gsize m2 = path_index (r, i);
        gboolean block_ok = FALSE;
        SfSectionSpec *spec = read_section (r, sc, st, obj, &block_ok);
        gpointer other = NULL;
        if (!block_ok)
          ;
        else if (g_hash_table_lookup_extended (by_block, GUINT_TO_POINTER (spec->block + 1), NULL,
                                             &other))
          {
            gsize m3 = path_key (r, "block");
            invalid (r, "block %u already has a section (sections[%u]); give one section per block",
                     spec->block, GPOINTER_TO_UINT (other) - 1);
            path_pop (r, m3);
          }
        else
          g_hash_table_insert (by_block, GUINT_TO_POINTER (spec->block + 1),
                               GUINT_TO_POINTER (i + 1));
        g_ptr_array_add (sc->sections, spec);
        path_pop (r, m2);
        i++;
      }
      g_ptr_array_sort (sc->sections, cmp_section_block);
    }
  path_pop (r, mark);
}

/* ==== strip, material ====================================================== */

static void
read_strip (Reader *r, const cJSON *root, SfScenario *sc, StripState *st)
{
  static const char *const keys[] = { "length_m", "blocks", "lane_width_m", "cell_m",
                                      "section_x_min_m", "section_x_max_m", NULL };
  const cJSON *o = read_object (r, root, "strip", TRUE);
  if (!o)
    return;
  gsize mark = path_key (r, "strip");
  SfStrip *s = &sc->strip;
  check_keys (r, o, keys);
  gboolean len_ok = req_number (r, o, "length_m", OC (0, 100000, "m"), &s->length_m);
  st->blocks_ok = read_uint (r, o, "blocks", 1, SF_MAX_BLOCKS, "blocks", TRUE, 0, &s->n_blocks);
  gboolean lane_ok = req_number (r, o, "lane_width_m", OC (2, 50, "m"), &s->lane_width_m);
  gboolean cell_ok = opt_number (r, o, "cell_m", CC (0.05, 2, "m"), 0.5, &s->cell_m);
  Range any = OO (-HUGE_VAL, HUGE_VAL, "m");
  gboolean min_ok = req_number (r, o, "section_x_min_m", any, &s->x_min_m);
  gboolean max_ok = req_number (r, o, "section_x_max_m", any, &s->x_max_m);

  if (min_ok && max_ok)
    {
      if (!(s->x_max_m > s->x_min_m))
        {
          gsize m2 = path_key (r, "section_x_max_m");
          invalid (r, "expected a number greater than section_x_min_m (%s m), found %s",
                   num (s->x_min_m).s, num (s->x_max_m).s);
          path_pop (r, m2);
        }
      else if (cell_ok)
        {
          double cells = (s->x_max_m - s->x_min_m) / s->cell_m;
          if (cells > SF_MAX_CELLS * (1.0 + 1e-12))
            invalid (r, "section_x_min_m..section_x_max_m (%s m) at cell_m %s m gives %s cells; "
                        "the limit is %d cells",
                     num (s->x_max_m - s->x_min_m).s, num (s->cell_m).s, num (ceil (cells)).s,
                     SF_MAX_CELLS);
          else
            st->range_ok = TRUE;
        }
    }
  if (len_ok && st->blocks_ok && lane_ok)
    {
      double block_m = s->length_m / s->n_blocks;
      guint lanes = lanes_in_block (s->length_m, s->n_blocks, s->lane_width_m);
      if (lanes < 1)
        invalid (r, "more lanes than fit: block length %s m (length_m / blocks) holds no lane of "
                    "%s m",
                 num (block_m).s, num (s->lane_width_m).s);
      else if (lanes > SF_MAX_LANES_PER_BLOCK)
        invalid (r, "block length %s m holds %u lanes of %s m; the limit is %d lanes per block",
                 num (block_m).s, lanes, num (s->lane_width_m).s, SF_MAX_LANES_PER_BLOCK);
    }
  path_pop (r, mark);
}

static void
read_material (Reader *r, const cJSON *root, SfMaterial *m)
{
  static const char *const keys[] = { "bank_density_t_per_bcm", "swell", "angle_of_repose_deg",
                                      "soil_friction", "steel_friction",
                                      "cutting_resistance_kpa", "blade_fill_factor", NULL };
  sf_material_defaults (m);
  const cJSON *o = read_object (r, root, "material", TRUE);
  if (!o)
    return;
  gsize mark = path_key (r, "material");
  check_keys (r, o, keys);
  req_number (r, o, "bank_density_t_per_bcm", OC (0.5, 5, "t/bcm"), &m->bank_density_t_per_bcm);
  req_number (r, o, "swell", CC (0, 1.5, ""), &m->swell);
  req_number (r, o, "angle_of_repose_deg", OO (10, 60, "deg"), &m->repose_deg);
  opt_number (r, o, "soil_friction", OC (0, 2, ""), 0.75, &m->soil_friction);
  opt_number (r, o, "steel_friction", OC (0, 2, ""), 0.45, &m->steel_friction);
  opt_number (r, o, "cutting_resistance_kpa", CC (0, 2000, "kPa"), 60.0,
              &m->cutting_resistance_kpa);
  opt_number (r, o, "blade_fill_factor", OC (0, 1.5, ""), 0.9, &m->blade_fill_factor);
  path_pop (r, mark);
}

/* ==== dozer classes and fleet ============================================== */

/* obj.key: 1..SF_MAX_GEARS speeds in (0, 30] km/h, strictly ascending.
 * Returns the number read (0 on a problem). */
static guint
read_speeds (Reader *r, const cJSON *obj, const char *key, double *kmh)
{
  const cJSON *arr = read_array (r, obj, key, TRUE);
  if (!arr)
    return 0;
  gsize mark = path_key (r, key);
  int n = cJSON_GetArraySize (arr);
  guint got = 0;
  if (n < 1 || n > SF_MAX_GEARS)
    invalid (r, "expected 1 to %d speeds, found %d%s", SF_MAX_GEARS, n,
             n > SF_MAX_GEARS ? "; the limit is " G_STRINGIFY (SF_MAX_GEARS) " gears" : "");
  else
    {
      gboolean ok = TRUE;
      for (int i = 0; i < n; i++)
        {
          gsize m2 = path_index (r, (guint)i);
          double v = 0;
          if (!check_number (r, cJSON_GetArrayItem (arr, i), OC (0, 30, "km/h"), TRUE, &v))
            ok = FALSE;
          else if (i > 0 && ok && !(v > kmh[i - 1]))
            {
              invalid (r, "expected speeds in ascending order: %s km/h is not greater than the "
                          "previous %s km/h",
                       num (v).s, num (kmh[i - 1]).s);
              ok = FALSE;
            }
          kmh[i] = v;
          path_pop (r, m2);
        }
      got = ok ? (guint)n : 0;
    }
  path_pop (r, mark);
  return got;
}

static gboolean
valid_class_name (const char *s)
{
  if (!*s)
    return FALSE;
  for (const char *p = s; *p; p++)
    if (!g_ascii_isalnum (*p) && *p != '_' && *p != '.' && *p != '-')
      return FALSE;
  return TRUE;
}

static void
read_blade (Reader *r, const cJSON *b, SfDozerClass *c)
{
  static const char *const keys[] = { "type", "width_m", "height_m", "rated_capacity_lcm",
                                      "carry_share", NULL };
  static const char *const types[] = { "straight", "semi-u", "u", "carry" };
  G_STATIC_ASSERT (SF_BLADE_STRAIGHT == 0 && SF_BLADE_SEMI_U == 1 && SF_BLADE_U == 2
                   && SF_BLADE_CARRY == 3);
  check_keys (r, b, keys);
  guint type = 0;
  gboolean type_ok = read_enum (r, b, "type", types, G_N_ELEMENTS (types), TRUE, 0, &type);
  c->blade_type = (SfBladeType)type;
  gboolean w_ok = req_number (r, b, "width_m", OC (1, 15, "m"), &c->blade_width_m);
  gboolean h_ok = req_number (r, b, "height_m", OC (0.3, 5, "m"), &c->blade_height_m);
  /* rated capacity: required unless the blade is straight (then SAE J1265 /
   * SAE J/ISO 9246, 0.8 W H^2, through sf_dozer_class_rated_lcm) */
  gboolean need_rated = type_ok && c->blade_type != SF_BLADE_STRAIGHT;
  read_number (r, b, "rated_capacity_lcm", OC (0, 150, "lcm"), need_rated, 0.0,
               &c->blade_rated_lcm);
  if (type_ok && c->blade_type == SF_BLADE_STRAIGHT && c->blade_rated_lcm == 0.0 && w_ok && h_ok)
    c->blade_rated_lcm = sf_dozer_class_rated_lcm (c);
  if (!type_ok)
    return;
  if (c->blade_type == SF_BLADE_CARRY)
    opt_number (r, b, "carry_share", CC (0, 0.6, ""), 0.2, &c->carry_share);
  else if (member (b, "carry_share"))
    {
      gsize mark = path_key (r, "carry_share");
      invalid (r, "only allowed for a blade of type \"carry\", found it on type \"%s\"",
               types[type]);
      path_pop (r, mark);
    }
}

/* ==== distributions and reliability ======================================== */

/* Largest mean, sd or scale of a distribution, in the unit of its field
 * (hours for every distribution of format 1). */
#define DIST_MAX 1e5

static const char *const dist_kinds[] = { "fixed", "exponential", "weibull", "lognormal" };
static const char *const dist_params[] = { "mean", "sd", "shape", "scale" };
G_STATIC_ASSERT (SF_DIST_FIXED == 0 && SF_DIST_EXPONENTIAL == 1 && SF_DIST_WEIBULL == 2
                 && SF_DIST_LOGNORMAL == 3);

/* Whether a distribution of kind k takes parameter dist_params[p]. */
static gboolean
dist_takes (guint k, guint p)
{
  static const gboolean takes[4][4] = {
    /*                mean   sd     shape  scale */
    /* fixed */       { TRUE, FALSE, FALSE, FALSE },
    /* exponential */ { TRUE, FALSE, FALSE, FALSE },
    /* weibull */     { FALSE, FALSE, TRUE, TRUE },
    /* lognormal */   { TRUE, TRUE, FALSE, FALSE },
  };
  return takes[k][p];
}

/* obj.key as a distribution ({"dist": "exponential", "mean": 80}; the kinds
 * and their parameters in docs/scenario-format.md) with means, sds and
 * scales in `unit`.  Absent: a problem when `required` (why_required says
 * why, for the message), else *out stays the unused fixed 0.  Returns TRUE
 * when the key was given and is valid. */
static gboolean
read_dist (Reader *r, const cJSON *obj, const char *key, const char *unit, gboolean required,
           const char *why_required, SfDist *out)
{
  static const char *const keys[] = { "dist", "mean", "sd", "shape", "scale", NULL };
  *out = (SfDist){ .kind = SF_DIST_FIXED };
  const cJSON *o = member (obj, key);
  if (!o && !required)
    return FALSE;
  gsize mark = path_key (r, key);
  gboolean ok = FALSE;
  if (!o)
    invalid (r, "expected a distribution object (%s), found nothing (the key is missing)",
             why_required ? why_required : "required");
  else if (!cJSON_IsObject (o))
    invalid (r, "expected a distribution object such as {\"dist\": \"exponential\", \"mean\": 80}, "
                "found %s",
             kind_text (o));
  else
    {
      check_keys (r, o, keys);
      guint kind = 0;
      if (read_enum (r, o, "dist", dist_kinds, G_N_ELEMENTS (dist_kinds), TRUE, 0, &kind))
        {
          out->kind = (SfDistKind)kind;
          /* missing or out-of-range parameters are "impossible parameters";
           * a value of the wrong type is only that */
          g_autofree char *note
              = g_strdup_printf ("impossible parameters for dist \"%s\"", dist_kinds[kind]);
          const Range rg[] = { OC (0, DIST_MAX, unit), OC (0, DIST_MAX, unit), OC (0.1, 20, ""),
                               OC (0, DIST_MAX, unit) };
          double *dst[] = { &out->mean, &out->sd, &out->shape, &out->scale };
          G_STATIC_ASSERT (G_N_ELEMENTS (rg) == G_N_ELEMENTS (dist_params));
          ok = TRUE;
          for (guint p = 0; p < G_N_ELEMENTS (dist_params); p++)
            if (dist_takes (kind, p))
              {
                const cJSON *v = member (o, dist_params[p]);
                r->note = !v || cJSON_IsNumber (v) ? note : NULL;
                ok &= req_number (r, o, dist_params[p], rg[p], dst[p]);
                r->note = NULL;
              }
          /* parameters of another kind: "sd" with an exponential */
          for (guint p = 0; p < G_N_ELEMENTS (dist_params); p++)
            if (!dist_takes (kind, p) && member (o, dist_params[p]))
              {
                /* the kinds that take it: "\"fixed\", \"exponential\" or \"lognormal\"" */
                g_autoptr (GString) which = g_string_new (NULL);
                guint n_take = 0, n = 0;
                for (guint k = 0; k < G_N_ELEMENTS (dist_kinds); k++)
                  n_take += dist_takes (k, p) ? 1 : 0;
                for (guint k = 0; k < G_N_ELEMENTS (dist_kinds); k++)
                  if (dist_takes (k, p))
                    {
                      if (n > 0)
                        g_string_append (which, n + 1 == n_take ? " or " : ", ");
                      g_string_append_printf (which, "\"%s\"", dist_kinds[k]);
                      n++;
                    }
                gsize m2 = path_key (r, dist_params[p]);
                invalid (r, "only allowed when dist is %s, found it with dist \"%s\"", which->str,
                         dist_kinds[kind]);
                path_pop (r, m2);
                ok = FALSE;
              }
        }
    }
  path_pop (r, mark);
  return ok;
}

/* dozer_classes[i].reliability (the reader's path names it). */
static void
read_reliability (Reader *r, const cJSON *o, SfReliability *rel)
{
  static const char *const keys[] = { "tbf_h", "ttr_h", "service_interval_h", "service_h",
                                      "refuel_min", NULL };
  check_keys (r, o, keys);
  /* A class fails when tbf_h is given (valid or not: a bad value is
   * reported and the file refused either way). */
  rel->failures = member (o, "tbf_h") != NULL;
  if (rel->failures)
    {
      read_dist (r, o, "tbf_h", "h", TRUE, NULL, &rel->tbf_h);
      read_dist (r, o, "ttr_h", "h", TRUE, "repair hours, required with tbf_h", &rel->ttr_h);
    }
  else if (member (o, "ttr_h"))
    {
      gsize mark = path_key (r, "ttr_h");
      invalid (r, "only allowed together with tbf_h (without tbf_h the class never fails)");
      path_pop (r, mark);
    }
  double interval_h = 0.0;
  gboolean interval_ok = opt_number (r, o, "service_interval_h", CC (0, DIST_MAX, "h"), 0.0,
                                     &interval_h);
  rel->service_interval_h = interval_h;
  /* service_h: required with a service interval; when the interval is 0
   * (services switched off) a given value is still checked, then unused */
  read_number (r, o, "service_h", OC (0, 1000, "h"), interval_ok && interval_h > 0.0, 0.0,
               &rel->service_h);
  opt_number (r, o, "refuel_min", CC (0, 240, "min"), 0.0, &rel->refuel_min);
}

static SfDozerClass *
read_class (Reader *r, const cJSON *o)
{
  static const char *const keys[] = { "name", "operating_mass_t", "net_power_kw",
                                      "drivetrain_efficiency", "blade", "forward_speeds_kmh",
                                      "reverse_speeds_kmh", "push_gear", "return_gear",
                                      "fixed_time_min", "traction_coefficient",
                                      "cost_per_operating_h", "reliability", NULL };
  SfDozerClass *c = g_new0 (SfDozerClass, 1);
  if (!cJSON_IsObject (o))
    {
      invalid (r, "expected an object, found %s", kind_text (o));
      c->name = g_strdup ("");
      return c;
    }
  check_keys (r, o, keys);
  const char *name = read_string (r, o, "name", TRUE, TRUE, NULL);
  if (name && !valid_class_name (name))
    {
      g_autofree char *q = quoted (name);
      gsize mark = path_key (r, "name");
      invalid (r, "expected a name of letters, digits, '_', '.' or '-', found %s", q);
      path_pop (r, mark);
    }
  c->name = g_strdup (name ? name : "");
  req_number (r, o, "operating_mass_t", OC (1, 500, "t"), &c->operating_mass_t);
  req_number (r, o, "net_power_kw", OC (10, 2000, "kW"), &c->net_power_kw);
  opt_number (r, o, "drivetrain_efficiency", OC (0, 1, ""), 0.8, &c->drivetrain_efficiency);
  const cJSON *b = read_object (r, o, "blade", TRUE);
  if (b)
    {
      gsize mark = path_key (r, "blade");
      read_blade (r, b, c);
      path_pop (r, mark);
    }
  c->n_fwd = read_speeds (r, o, "forward_speeds_kmh", c->fwd_kmh);
  c->n_rev = read_speeds (r, o, "reverse_speeds_kmh", c->rev_kmh);
  read_uint (r, o, "push_gear", 1, c->n_fwd ? c->n_fwd : SF_MAX_GEARS, NULL, FALSE, 1,
             &c->push_gear);
  read_uint (r, o, "return_gear", 1, c->n_rev ? c->n_rev : SF_MAX_GEARS, NULL, FALSE,
             MIN (2, MAX (c->n_rev, 1)), &c->return_gear);
  opt_number (r, o, "fixed_time_min", OC (0, 5, "min"), 0.05, &c->fixed_time_min);
  opt_number (r, o, "traction_coefficient", OC (0.05, 1.5, ""), 0.55, &c->traction_coefficient);
  opt_number (r, o, "cost_per_operating_h", CC (0, 1e6, "per h"), 0.0, &c->cost_per_operating_h);
  /* absent: the class never fails, no services, no refuelling stops (the
   * zeroed SfReliability) */
  const cJSON *rel = read_object (r, o, "reliability", FALSE);
  if (rel)
    {
      gsize mark = path_key (r, "reliability");
      read_reliability (r, rel, &c->reliability);
      path_pop (r, mark);
    }
  return c;
}

/* Returns FALSE when the class list could not be read at all (then fleet
 * references are not checked against it). */
static gboolean
read_classes (Reader *r, const cJSON *root, SfScenario *sc)
{
  const cJSON *arr = read_array (r, root, "dozer_classes", TRUE);
  if (!arr)
    return FALSE;
  gsize mark = path_key (r, "dozer_classes");
  int n = cJSON_GetArraySize (arr);
  gboolean ok = TRUE;
  if (n == 0)
    {
      invalid (r, "expected at least one dozer class, found none");
      ok = FALSE;
    }
  else if (n > SF_MAX_CLASSES)
    {
      invalid (r, "expected at most %d dozer classes, found %d; the limit is %d classes",
               SF_MAX_CLASSES, n, SF_MAX_CLASSES);
      ok = FALSE;
    }
  else
    {
      guint i = 0;
      const cJSON *o;
      cJSON_ArrayForEach (o, arr)
      {
        gsize m2 = path_index (r, i);
        SfDozerClass *c = read_class (r, o);
        int other = *c->name ? sf_scenario_find_class (sc, c->name) : -1;
        if (other >= 0)
          {
            g_autofree char *q = quoted (c->name);
            gsize m3 = path_key (r, "name");
            invalid (r, "class name %s is already used by dozer_classes[%d]; names must be unique",
                     q, other);
            path_pop (r, m3);
          }
        g_ptr_array_add (sc->classes, c);
        path_pop (r, m2);
        i++;
      }
    }
  path_pop (r, mark);
  return ok;
}

static void
read_fleet (Reader *r, const cJSON *root, SfScenario *sc, gboolean classes_ok)
{
  static const char *const keys[] = { "class", "count", NULL };
  const cJSON *arr = read_array (r, root, "fleet", TRUE);
  if (!arr)
    return;
  gsize mark = path_key (r, "fleet");
  int n = cJSON_GetArraySize (arr);
  if (n == 0)
    invalid (r, "expected at least one fleet entry, found none");
  else if (n > SF_MAX_DOZERS)
    invalid (r, "expected at most %d fleet entries, found %d; the limit is %d dozers",
             SF_MAX_DOZERS, n, SF_MAX_DOZERS);
  else
    {
      guint64 total = 0;
      gboolean counts_ok = TRUE;
      guint i = 0;
      const cJSON *o;
      cJSON_ArrayForEach (o, arr)
      {
        gsize m2 = path_index (r, i++);
        SfFleetEntry e = { 0, 0 };
        if (!cJSON_IsObject (o))
          {
            invalid (r, "expected an object, found %s", kind_text (o));
            counts_ok = FALSE;
            path_pop (r, m2);
            continue;
          }
        check_keys (r, o, keys);
        const char *cls = read_string (r, o, "class", TRUE, TRUE, NULL);
        if (cls && classes_ok)
          {
            int k = sf_scenario_find_class (sc, cls);
            if (k < 0)
              {
                g_autofree char *q = quoted (cls);
                g_autoptr (GString) names = g_string_new (NULL);
                for (guint j = 0; j < sc->classes->len; j++)
                  {
                    const SfDozerClass *c = g_ptr_array_index (sc->classes, j);
                    if (!*c->name)
                      continue; /* a class whose name could not be read */
                    g_autofree char *qn = quoted (c->name);
                    g_string_append_printf (names, "%s%s", names->len ? ", " : "", qn);
                  }
                gsize m3 = path_key (r, "class");
                invalid (r, "expected the name of a dozer class (%s), found %s", names->str, q);
                path_pop (r, m3);
              }
            else
              e.class_index = (guint)k;
          }
        if (read_uint (r, o, "count", 1, SF_MAX_DOZERS, "dozers", TRUE, 0, &e.count))
          total += e.count;
        else
          counts_ok = FALSE;
        g_array_append_val (sc->fleet, e);
        path_pop (r, m2);
      }
      if (counts_ok && total > SF_MAX_DOZERS)
        invalid (r, "expected at most %d dozers in total, found %" G_GUINT64_FORMAT
                    "; the limit is %d dozers",
                 SF_MAX_DOZERS, total, SF_MAX_DOZERS);
    }
  path_pop (r, mark);
}

/* ==== design, factors, coal ================================================ */

/* A key that belongs to another variant ("lift_m" with a standard pivot). */
static void
reject_other_variant (Reader *r, const cJSON *o, const char *const *keys, const char *what,
                      const char *variant)
{
  for (const char *const *k = keys; *k; k++)
    if (member (o, *k))
      {
        gsize mark = path_key (r, *k);
        invalid (r, "only allowed when %s is \"%s\"", what, variant);
        path_pop (r, mark);
      }
}

static void
read_pivot (Reader *r, const cJSON *p, SfDesign *d)
{
  static const char *const keys[] = { "kind", "lift_m", "ramp_grade_pct", NULL };
  static const char *const kinds[] = { "standard", "lifted" };
  static const char *const lifted_keys[] = { "lift_m", "ramp_grade_pct", NULL };
  G_STATIC_ASSERT (SF_PIVOT_STANDARD == 0 && SF_PIVOT_LIFTED == 1);
  check_keys (r, p, keys);
  guint kind = 0;
  if (!read_enum (r, p, "kind", kinds, G_N_ELEMENTS (kinds), FALSE, 0, &kind))
    return;
  d->pivot = (SfPivotKind)kind;
  if (d->pivot == SF_PIVOT_LIFTED)
    {
      req_number (r, p, "lift_m", OC (0, 50, "m"), &d->pivot_lift_m);
      opt_number (r, p, "ramp_grade_pct", OC (0, 50, "%"), 10.0, &d->lift_ramp_grade_pct);
    }
  else
    reject_other_variant (r, p, lifted_keys, "kind", "lifted");
}

static void
read_slices (Reader *r, const cJSON *s, SfDesign *d)
{
  static const char *const keys[] = { "strategy", "cutoff_grade_pct", "layers", "count",
                                      "min_grade_pct", NULL };
  static const char *const strategies[] = { "tip-over-layers", "straight-push" };
  static const char *const tipover_keys[] = { "cutoff_grade_pct", "layers", NULL };
  static const char *const straight_keys[] = { "count", "min_grade_pct", NULL };
  G_STATIC_ASSERT (SF_SLICES_TIPOVER_LAYERS == 0 && SF_SLICES_STRAIGHT == 1);
  check_keys (r, s, keys);
  guint strategy = 0;
  if (!read_enum (r, s, "strategy", strategies, G_N_ELEMENTS (strategies), FALSE, 0, &strategy))
    return;
  d->strategy = (SfSliceStrategy)strategy;
  if (d->strategy == SF_SLICES_TIPOVER_LAYERS)
    {
      opt_number (r, s, "cutoff_grade_pct", OC (0, 100, "%"), 20.0, &d->cutoff_grade_pct);
      read_uint (r, s, "layers", 1, SF_MAX_LAYERS, "layers", FALSE, 4, &d->layer_count);
      reject_other_variant (r, s, straight_keys, "strategy", "straight-push");
    }
  else
    {
      read_uint (r, s, "count", 1, SF_MAX_LAYERS, "slices", FALSE, 6, &d->straight_count);
      opt_number (r, s, "min_grade_pct", CO (0, 100, "%"), 5.0, &d->min_push_grade_pct);
      reject_other_variant (r, s, tipover_keys, "strategy", "tip-over-layers");
    }
}

static void
read_design (Reader *r, const cJSON *root, SfDesign *d)
{
  static const char *const keys[] = { "dozer_floor_above_coal_m", "spoil_toe_offset_m", "pivot",
                                      "slices", "slot_dozing", "side_by_side", "spill_per_m",
                                      "slot_spill_factor", "side_by_side_spill_factor",
                                      "load_distance_m", NULL };
  sf_design_defaults (d);
  const cJSON *o = read_object (r, root, "design", FALSE);
  if (!o)
    return;
  gsize mark = path_key (r, "design");
  check_keys (r, o, keys);
  opt_number (r, o, "dozer_floor_above_coal_m", CC (0, 300, "m"), 10.0,
              &d->dozer_floor_above_coal_m);
  opt_number (r, o, "spoil_toe_offset_m", CC (-100, 100, "m"), 0.0, &d->spoil_toe_offset_m);
  const cJSON *p = read_object (r, o, "pivot", FALSE);
  if (p)
    {
      gsize m2 = path_key (r, "pivot");
      read_pivot (r, p, d);
      path_pop (r, m2);
    }
  const cJSON *s = read_object (r, o, "slices", FALSE);
  if (s)
    {
      gsize m2 = path_key (r, "slices");
      read_slices (r, s, d);
      path_pop (r, m2);
    }
  read_bool (r, o, "slot_dozing", TRUE, &d->slot_dozing);
  read_bool (r, o, "side_by_side", FALSE, &d->side_by_side);
  opt_number (r, o, "spill_per_m", CC (0, 0.05, "per m"), 0.002, &d->spill_per_m);
  opt_number (r, o, "slot_spill_factor", CC (0, 1, ""), 0.5, &d->slot_spill_factor);
  opt_number (r, o, "side_by_side_spill_factor", CC (0, 1, ""), 0.6,
              &d->side_by_side_spill_factor);
  opt_number (r, o, "load_distance_m", OC (1, 100, "m"), 12.0, &d->load_distance_m);
  path_pop (r, mark);
}

static void
read_factors (Reader *r, const cJSON *root, SfFactors *f)
{
  static const char *const keys[] = { "operator_skill", "job_efficiency", "visibility",
                                      "material", NULL };
  sf_factors_defaults (f);
  const cJSON *o = read_object (r, root, "production_factors", FALSE);
  if (!o)
    return;
  gsize mark = path_key (r, "production_factors");
  check_keys (r, o, keys);
  opt_number (r, o, "operator_skill", OC (0, 1.5, ""), 1.0, &f->operator_skill);
  opt_number (r, o, "job_efficiency", OC (0, 1.5, ""), 0.83, &f->job_efficiency);
  opt_number (r, o, "visibility", OC (0, 1.5, ""), 1.0, &f->visibility);
  opt_number (r, o, "material", OC (0, 1.5, ""), 1.0, &f->material);
  path_pop (r, mark);
}

static void
read_coal (Reader *r, const cJSON *root, SfScenario *sc)
{
  static const char *const keys[] = { "density_t_per_m3", NULL };
  sc->coal_density_t_per_m3 = 0.0;
  const cJSON *o = read_object (r, root, "coal", FALSE);
  if (!o)
    return;
  gsize mark = path_key (r, "coal");
  check_keys (r, o, keys);
  req_number (r, o, "density_t_per_m3", OC (0.5, 3, "t/m3"), &sc->coal_density_t_per_m3);
  path_pop (r, mark);
}

/* ==== roster =============================================================== */

#define MIN_PER_DAY 1440
/* Shift ends and starts closer than this (minutes) meet: hours typed as
 * decimals (8.333333 h) need not hit the minute exactly. */
#define SHIFT_TOL_MIN 1e-3

/* User text for a message: bare when it is plain (no spaces, quotes or
 * control characters, not cut), else quoted.  Newly allocated. */
static char *
shown (const char *s)
{
  g_autofree char *q = quoted (s);
  if (*s && strlen (q) == strlen (s) + 2 && !strchr (s, ' '))
    return g_strdup (s);
  return g_steal_pointer (&q);
}

/* "HH:MM", two digits each, 00:00..23:59, as minutes after midnight. */
static gboolean
parse_clock (const char *s, guint *min)
{
  if (strlen (s) != 5 || s[2] != ':')
    return FALSE;
  for (int i = 0; i < 5; i++)
    if (i != 2 && !g_ascii_isdigit (s[i]))
      return FALSE;
  guint h = (guint)(s[0] - '0') * 10 + (guint)(s[1] - '0');
  guint m = (guint)(s[3] - '0') * 10 + (guint)(s[4] - '0');
  if (h > 23 || m > 59)
    return FALSE;
  *min = h * 60 + m;
  return TRUE;
}

/* Minutes after some midnight as a clock time "HH:MM" (to the minute). */
typedef struct {
  char s[8];
} ClockText;

static ClockText
clock_text (double min)
{
  ClockText t;
  long m = lround (fmod (min, MIN_PER_DAY));
  m = (m % MIN_PER_DAY + MIN_PER_DAY) % MIN_PER_DAY;
  g_snprintf (t.s, sizeof t.s, "%02ld:%02ld", m / 60, m % 60);
  return t;
}

/* A gap or overlap of `min` minutes for messages: "2.0 h", or "0.5 min"
 * when under 0.05 h.  Newly allocated. */
static char *
span_text (double min)
{
  char buf[G_ASCII_DTOSTR_BUF_SIZE];
  if (min >= 3.0)
    return g_strdup_printf ("%s h", g_ascii_formatd (buf, sizeof buf, "%.1f", min / 60.0));
  return g_strdup_printf ("%s min", g_ascii_formatd (buf, sizeof buf, "%.2g", min));
}

typedef struct {
  guint n_given;                  /* entries of "shifts" when their count is usable, else 0 */
  gboolean fields_ok;             /* every shift's name, start and hours valid */
  gboolean tiled;                 /* ... and they tile the day: stored in start order */
  guint to_stored[SF_MAX_SHIFTS]; /* index in the file -> index in SfRoster.shifts */
} ShiftState;

/* The shifts must tile the day in the order given: each starts where the
 * previous one ends (the last one wrapping to the first, mod 24 h) and the
 * hours add up to 24.  Pair problems name the pair; the sum is reported
 * only when every pair meets (then it is a multiple of 24 h) or there is a
 * single shift, since a gap or overlap already implies it. */
static gboolean
check_shifts_tile (Reader *r, const SfShift *sh, guint n)
{
  gboolean ok = TRUE;
  double sum_h = 0.0;
  for (guint i = 0; i < n; i++)
    sum_h += sh[i].hours;
  for (guint i = 0; n > 1 && i < n; i++)
    {
      const SfShift *a = &sh[i], *b = &sh[(i + 1) % n];
      double end_min = a->start_min + a->hours * 60.0;
      double d = fmod (b->start_min - end_min, MIN_PER_DAY); /* in (-1440, 1440) */
      if (d > MIN_PER_DAY / 2)
        d -= MIN_PER_DAY;
      else if (d <= -MIN_PER_DAY / 2)
        d += MIN_PER_DAY;
      if (fabs (d) <= SHIFT_TOL_MIN)
        continue;
      ok = FALSE;
      g_autofree char *na = shown (a->name), *nb = shown (b->name);
      g_autofree char *span = span_text (fabs (d));
      if (d < 0)
        invalid (r, "shifts %s and %s overlap by %s: %s runs %s h from %s to %s, %s starts at %s",
                 na, nb, span, na, num (a->hours).s, clock_text (a->start_min).s,
                 clock_text (end_min).s, nb, clock_text (b->start_min).s);
      else
        invalid (r, "shifts leave a gap of %s between %s and %s: %s runs %s h from %s to %s, %s "
                    "starts at %s",
                 span, na, nb, na, num (a->hours).s, clock_text (a->start_min).s,
                 clock_text (end_min).s, nb, clock_text (b->start_min).s);
    }
  if (ok && fabs (sum_h - 24.0) > SHIFT_TOL_MIN / 60.0)
    {
      invalid (r, "the shifts add up to %s h a day, expected exactly 24 h (each shift starts "
                  "where the previous one ends, the last one where the first begins)",
               num (sum_h).s);
      ok = FALSE;
    }
  return ok;
}

/* roster.shifts into ro->shifts, then rotated into start order when they
 * tile the day (a tiling is a rotation of start order). */
static void
read_shifts (Reader *r, const cJSON *o, SfRoster *ro, ShiftState *ss)
{
  static const char *const keys[] = { "name", "start", "hours", "night", NULL };
  *ss = (ShiftState){ 0 };
  for (guint g = 0; g < SF_MAX_SHIFTS; g++)
    ss->to_stored[g] = g;
  const cJSON *arr = read_array (r, o, "shifts", TRUE);
  if (!arr)
    return;
  gsize mark = path_key (r, "shifts");
  int n = cJSON_GetArraySize (arr);
  if (n == 0)
    invalid (r, "expected at least one shift, found none");
  else if (n > SF_MAX_SHIFTS)
    invalid (r, "expected at most %d shifts, found %d; the limit is %d shifts a day",
             SF_MAX_SHIFTS, n, SF_MAX_SHIFTS);
  else
    {
      ss->n_given = ro->n_shifts = (guint)n;
      gboolean ok = TRUE;
      guint i = 0;
      const cJSON *item;
      cJSON_ArrayForEach (item, arr)
      {
        gsize m2 = path_index (r, i);
        SfShift *sh = &ro->shifts[i];
        i++;
        if (!cJSON_IsObject (item))
          {
            invalid (r, "expected an object, found %s", kind_text (item));
            sh->name = g_strdup ("");
            ok = FALSE;
            path_pop (r, m2);
            continue;
          }
        check_keys (r, item, keys);
        const char *name = read_string (r, item, "name", TRUE, TRUE, NULL);
        for (guint j = 0; name && j + 1 < i; j++)
          if (g_strcmp0 (ro->shifts[j].name, name) == 0)
            {
              g_autofree char *q = quoted (name);
              gsize m3 = path_key (r, "name");
              invalid (r, "shift name %s is already used by shifts[%u]; names must be unique", q,
                       j);
              path_pop (r, m3);
              ok = FALSE;
              break;
            }
        ok &= name != NULL;
        sh->name = g_strdup (name ? name : "");
        const char *start = read_string (r, item, "start", TRUE, TRUE, NULL);
        if (start && !parse_clock (start, &sh->start_min))
          {
            g_autofree char *q = quoted (start);
            gsize m3 = path_key (r, "start");
            invalid (r, "expected a time of day \"HH:MM\" from 00:00 to 23:59, found %s", q);
            path_pop (r, m3);
            start = NULL;
          }
        ok &= start != NULL;
        ok &= req_number (r, item, "hours", OC (0, 24, "h"), &sh->hours);
        read_bool (r, item, "night", FALSE, &sh->night);
        path_pop (r, m2);
      }
      ss->fields_ok = ok;
      if (ok && check_shifts_tile (r, ro->shifts, ro->n_shifts))
        {
          guint k = 0;
          for (guint j = 1; j < ro->n_shifts; j++)
            if (ro->shifts[j].start_min < ro->shifts[k].start_min)
              k = j;
          SfShift tmp[SF_MAX_SHIFTS];
          for (guint j = 0; j < ro->n_shifts; j++)
            tmp[j] = ro->shifts[(k + j) % ro->n_shifts];
          memcpy (ro->shifts, tmp, ro->n_shifts * sizeof tmp[0]); /* names move, not copied */
          for (guint g = 0; g < ro->n_shifts; g++)
            ss->to_stored[g] = (g + ro->n_shifts - k) % ro->n_shifts;
          ss->tiled = TRUE;
        }
    }
  path_pop (r, mark);
}

/* roster.crews.  Returns TRUE when every crew has a usable, unique name (so
 * that the pattern can be checked against them). */
static gboolean
read_crews (Reader *r, const cJSON *o, SfRoster *ro)
{
  static const char *const keys[] = { "name", "operators", "skill", NULL };
  const cJSON *arr = read_array (r, o, "crews", TRUE);
  if (!arr)
    return FALSE;
  gsize mark = path_key (r, "crews");
  int n = cJSON_GetArraySize (arr);
  gboolean names_ok = FALSE;
  if (n == 0)
    invalid (r, "expected at least one crew, found none");
  else if (n > SF_MAX_CREWS)
    invalid (r, "expected at most %d crews, found %d; the limit is %d crews", SF_MAX_CREWS, n,
             SF_MAX_CREWS);
  else
    {
      names_ok = TRUE;
      ro->n_crews = (guint)n;
      guint i = 0;
      const cJSON *item;
      cJSON_ArrayForEach (item, arr)
      {
        gsize m2 = path_index (r, i);
        SfCrew *c = &ro->crews[i];
        i++;
        c->skill = 1.0;
        if (!cJSON_IsObject (item))
          {
            invalid (r, "expected an object, found %s", kind_text (item));
            c->name = g_strdup ("");
            names_ok = FALSE;
            path_pop (r, m2);
            continue;
          }
        check_keys (r, item, keys);
        const char *name = read_string (r, item, "name", TRUE, TRUE, NULL);
        for (guint j = 0; name && j + 1 < i; j++)
          if (g_strcmp0 (ro->crews[j].name, name) == 0)
            {
              g_autofree char *q = quoted (name);
              gsize m3 = path_key (r, "name");
              invalid (r, "crew name %s is already used by crews[%u]; names must be unique", q, j);
              path_pop (r, m3);
              names_ok = FALSE;
              break;
            }
        names_ok &= name != NULL;
        c->name = g_strdup (name ? name : "");
        read_uint (r, item, "operators", 0, SF_MAX_DOZERS, "operators", TRUE, 0, &c->operators);
        opt_number (r, item, "skill", OC (0, 1.5, ""), 1.0, &c->skill);
        path_pop (r, m2);
      }
    }
  path_pop (r, mark);
  return names_ok;
}

/* roster.pattern: one row per day of the cycle, one crew name (or null) per
 * shift in the order of "shifts"; stored by day in start order of the
 * shifts (ss->to_stored), SF_NO_CREW for null. */
static void
read_pattern (Reader *r, const cJSON *o, SfRoster *ro, const ShiftState *ss, gboolean crews_ok)
{
  G_STATIC_ASSERT (SF_MAX_CREWS < SF_NO_CREW && SF_NO_CREW <= G_MAXUINT8);
  const cJSON *arr = read_array (r, o, "pattern", TRUE);
  if (!arr)
    return;
  gsize mark = path_key (r, "pattern");
  int n = cJSON_GetArraySize (arr);
  if (n == 0)
    invalid (r, "expected at least one day, found none");
  else if (n > SF_MAX_PATTERN_DAYS)
    invalid (r, "expected at most %d days, found %d; the limit is %d pattern days",
             SF_MAX_PATTERN_DAYS, n, SF_MAX_PATTERN_DAYS);
  else
    {
      guint ns = ss->n_given;
      ro->pattern_days = (guint)n;
      if (ns)
        {
          ro->pattern = g_new (guint8, (gsize)n * ns);
          memset (ro->pattern, SF_NO_CREW, (gsize)n * ns);
        }
      /* for messages: the shifts in file order, the crews */
      g_autoptr (GString) shift_names = g_string_new (NULL);
      for (guint g = 0; g < ns; g++)
        {
          g_autofree char *s = shown (ro->shifts[ss->to_stored[g]].name);
          g_string_append_printf (shift_names, "%s%s", g ? ", " : "", s);
        }
      g_autoptr (GString) crew_names = g_string_new (NULL);
      for (guint c = 0; crews_ok && c < ro->n_crews; c++)
        {
          g_autofree char *q = quoted (ro->crews[c].name);
          g_string_append_printf (crew_names, "%s%s", c ? ", " : "", q);
        }
      guint d = 0;
      const cJSON *row;
      cJSON_ArrayForEach (row, arr)
      {
        gsize m2 = path_index (r, d);
        if (!cJSON_IsArray (row))
          {
            invalid (r, "expected an array with one crew name or null per shift, found %s",
                     kind_text (row));
            path_pop (r, m2);
            d++;
            continue;
          }
        int m = cJSON_GetArraySize (row);
        gboolean fits = ns && (guint)m == ns;
        if (ns && !fits)
          invalid (r, "expected %u entries, one crew name or null per shift (%s), found %d", ns,
                   shift_names->str, m);
        guint c = 0;
        const cJSON *e;
        cJSON_ArrayForEach (e, row)
        {
          gsize m3 = path_index (r, c);
          guint idx = SF_NO_CREW;
          if (cJSON_IsString (e) && e->valuestring)
            {
              if (crews_ok)
                {
                  for (guint k = 0; k < ro->n_crews && idx == SF_NO_CREW; k++)
                    if (strcmp (ro->crews[k].name, e->valuestring) == 0)
                      idx = k;
                  if (idx == SF_NO_CREW)
                    {
                      g_autofree char *q = quoted (e->valuestring);
                      invalid (r, "expected the name of a crew (%s) or null, found %s",
                               crew_names->str, q);
                    }
                }
            }
          else if (!cJSON_IsNull (e))
            invalid (r, "expected a crew name or null, found %s", kind_text (e));
          if (fits)
            ro->pattern[(gsize)d * ns + ss->to_stored[c]] = (guint8)idx;
          path_pop (r, m3);
          c++;
        }
        path_pop (r, m2);
        d++;
      }
    }
  path_pop (r, mark);
}

static void
read_weather (Reader *r, const cJSON *o, SfRoster *ro)
{
  static const char *const keys[] = { "wet_day_probability", "stop_h", NULL };
  const cJSON *w = read_object (r, o, "weather", FALSE);
  if (!w)
    return;
  gsize mark = path_key (r, "weather");
  check_keys (r, w, keys);
  double p = 0.0;
  gboolean p_ok = req_number (r, w, "wet_day_probability", CC (0, 1, ""), &p);
  ro->wet_day_probability = p;
  /* stop_h: required when wet days happen; with probability 0 a given
   * distribution is still checked, then unused */
  read_dist (r, w, "stop_h", "h", p_ok && p > 0.0,
             "hours of a wet-weather stop, required when wet_day_probability > 0",
             &ro->wet_stop_h);
  path_pop (r, mark);
}

static void
read_roster (Reader *r, const cJSON *root, SfScenario *sc)
{
  static const char *const keys[] = { "shifts", "crews", "pattern", "shift_change_min",
                                      "meal_min", "meal_after_h", "hot_seat", "night_factor",
                                      "weather", NULL };
  SfRoster *ro = &sc->roster;
  sf_roster_clear (ro);
  const cJSON *o = read_object (r, root, "roster", FALSE);
  if (!o)
    {
      guint64 total = 0;
      for (guint i = 0; i < sc->fleet->len; i++)
        total += g_array_index (sc->fleet, SfFleetEntry, i).count;
      sf_roster_defaults (ro, (guint)MIN (total, SF_MAX_DOZERS));
      return;
    }
  gsize mark = path_key (r, "roster");
  check_keys (r, o, keys);
  ShiftState ss;
  read_shifts (r, o, ro, &ss);
  gboolean crews_ok = read_crews (r, o, ro);
  read_pattern (r, o, ro, &ss, crews_ok);
  opt_number (r, o, "shift_change_min", CC (0, 180, "min"), 0.0, &ro->shift_change_min);
  opt_number (r, o, "meal_min", CC (0, 180, "min"), 0.0, &ro->meal_min);
  gboolean after_ok
      = opt_number (r, o, "meal_after_h", CO (0, 24, "h"), 5.0, &ro->meal_after_h);
  /* the meal must start within every shift (only when there are meals) */
  if (after_ok && ss.fields_ok && ro->meal_min > 0.0)
    for (guint i = 0; i < ro->n_shifts; i++)
      if (!(ro->meal_after_h < ro->shifts[i].hours))
        {
          g_autofree char *nm = shown (ro->shifts[i].name);
          gsize m2 = path_key (r, "meal_after_h");
          invalid (r, "expected less than the %s h of shift %s (the meal must start within "
                      "the shift), found %s",
                   num (ro->shifts[i].hours).s, nm, num (ro->meal_after_h).s);
          path_pop (r, m2);
        }
  read_bool (r, o, "hot_seat", FALSE, &ro->hot_seat);
  opt_number (r, o, "night_factor", OC (0, 1.5, ""), 1.0, &ro->night_factor);
  read_weather (r, o, ro);
  path_pop (r, mark);
}

/* ==== simulation =========================================================== */

/* obj.key as an ISO 8601 date-time with an explicit UTC offset ("Z" or
 * "+10:00"); NULL when absent or on a problem.  Returns a new reference. */
static GDateTime *
read_datetime (Reader *r, const cJSON *obj, const char *key, gboolean required)
{
  const char *text = read_string (r, obj, key, required, TRUE, NULL);
  if (!text)
    return NULL;
  /* with no default zone, text without an offset gives NULL */
  GDateTime *dt = g_date_time_new_from_iso8601 (text, NULL);
  if (!dt)
    {
      g_autofree char *q = quoted (text);
      gsize mark = path_key (r, key);
      invalid (r, "expected an ISO 8601 date-time with a UTC offset, such as "
                  "\"2027-03-01T06:00:00+10:00\", found %s",
               q);
      path_pop (r, mark);
    }
  return dt;
}

/* simulation.blasts into s->blast_h (hours after s->start; 0 for blocks not
 * named and for blasts at or before the start).  have_start FALSE: the start
 * was invalid, so hours are not computed. */
static void
read_blasts (Reader *r, const cJSON *o, SfSimulation *s, guint n_blocks, gboolean have_start)
{
  static const char *const keys[] = { "first_block", "last_block", "at", NULL };
  const cJSON *arr = read_array (r, o, "blasts", FALSE);
  if (!arr)
    return;
  gsize mark = path_key (r, "blasts");
  int n = cJSON_GetArraySize (arr);
  if (n > SF_MAX_BLOCKS)
    {
      invalid (r, "expected at most %d blasts, found %d; the limit is %d blocks", SF_MAX_BLOCKS,
               n, SF_MAX_BLOCKS);
      path_pop (r, mark);
      return;
    }
  /* without a valid block count, check against the limit only */
  guint hi = n_blocks ? n_blocks - 1 : SF_MAX_BLOCKS - 1;
  g_autofree gint *named_by = g_new (gint, hi + 1); /* blast naming each block, -1: none */
  for (guint k = 0; k <= hi; k++)
    named_by[k] = -1;
  guint i = 0;
  const cJSON *b;
  cJSON_ArrayForEach (b, arr)
  {
    gsize m2 = path_index (r, i);
    gint me = (gint)i++;
    if (!cJSON_IsObject (b))
      {
        invalid (r, "expected an object, found %s", kind_text (b));
        path_pop (r, m2);
        continue;
      }
    check_keys (r, b, keys);
    guint first = 0, last = 0;
    gboolean first_ok = read_uint (r, b, "first_block", 0, hi, NULL, TRUE, 0, &first);
    gboolean last_ok = read_uint (r, b, "last_block", 0, hi, NULL, TRUE, 0, &last);
    g_autoptr (GDateTime) at = read_datetime (r, b, "at", TRUE);
    if (first_ok && last_ok && last < first)
      {
        gsize m3 = path_key (r, "last_block");
        invalid (r, "expected an integer >= first_block (%u), found %u (the range is reversed)",
                 first, last);
        path_pop (r, m3);
      }
    else if (first_ok && last_ok)
      {
        guint n_twice = 0, twice = 0;
        gint other = -1;
        for (guint k = first; k <= last; k++)
          if (named_by[k] < 0)
            named_by[k] = me;
          else if (n_twice++ == 0)
            {
              twice = k;
              other = named_by[k];
            }
        if (n_twice)
          {
            g_autofree char *more
                = n_twice > 1 ? g_strdup_printf (" (and %u more blocks of this range)", n_twice - 1)
                              : g_strdup ("");
            invalid (r, "block %u is already named by blasts[%d]%s; name each block in one blast "
                        "at most",
                     twice, other, more);
          }
        if (at && have_start && s->blast_h)
          {
            double h = (double)g_date_time_difference (at, s->start) / (double)G_TIME_SPAN_HOUR;
            for (guint k = first; k <= last; k++)
              if (named_by[k] == me)
                s->blast_h[k] = MAX (h, 0.0);
          }
      }
    path_pop (r, m2);
  }
  path_pop (r, mark);
}

static void
read_simulation (Reader *r, const cJSON *root, SfScenario *sc, const StripState *st)
{
  static const char *const keys[] = { "start", "seed", "horizon_days", "dispatch",
                                      "min_separation_lanes", "max_slice_lead",
                                      "tram_speed_kmh", "fitters", "blasts", NULL };
  static const char *const dispatches[] = { "finish-block", "spread" };
  G_STATIC_ASSERT (SF_DISPATCH_FINISH_BLOCK == 0 && SF_DISPATCH_SPREAD == 1);
  SfSimulation *s = &sc->sim;
  guint n_blocks = st->blocks_ok ? sc->strip.n_blocks : 0;
  sf_simulation_clear (s);
  sf_simulation_defaults (s, n_blocks);
  const cJSON *o = read_object (r, root, "simulation", FALSE);
  if (!o)
    return;
  gsize mark = path_key (r, "simulation");
  check_keys (r, o, keys);
  gboolean start_ok = TRUE;
  if (member (o, "start"))
    {
      GDateTime *start = read_datetime (r, o, "start", TRUE);
      if (start)
        {
          g_date_time_unref (s->start);
          s->start = start;
        }
      else
        start_ok = FALSE;
    }
  const cJSON *seed = member (o, "seed");
  if (seed)
    {
      gint64 v = 0;
      gsize m2 = path_key (r, "seed");
      if (check_int (r, seed, 0, G_GINT64_CONSTANT (1) << 53, NULL, TRUE, &v))
        s->seed = (guint64)v;
      path_pop (r, m2);
    }
  opt_number (r, o, "horizon_days", OC (0, 36500, "days"), 3650.0, &s->horizon_days);
  guint dispatch = 0;
  read_enum (r, o, "dispatch", dispatches, G_N_ELEMENTS (dispatches), FALSE, 0, &dispatch);
  s->dispatch = (SfDispatch)dispatch;
  read_uint (r, o, "min_separation_lanes", 0, SF_MAX_LANES_PER_BLOCK, "lanes", FALSE, 1,
             &s->min_separation_lanes);
  read_uint (r, o, "max_slice_lead", 0, SF_MAX_LAYERS, "slices", FALSE, 1, &s->max_slice_lead);
  opt_number (r, o, "tram_speed_kmh", OC (0, 30, "km/h"), 5.0, &s->tram_speed_kmh);
  if (read_uint (r, o, "fitters", 0, 1000, NULL, FALSE, 2, &s->fitters) && s->fitters == 0)
    for (guint i = 0; i < sc->classes->len; i++)
      {
        const SfDozerClass *c = g_ptr_array_index (sc->classes, i);
        if (!c->reliability.failures)
          continue;
        g_autofree char *q = quoted (c->name);
        gsize m2 = path_key (r, "fitters");
        invalid (r, "expected at least 1 fitter because dozer class %s can fail "
                    "(dozer_classes[%u].reliability.tbf_h), found 0",
                 q, i);
        path_pop (r, m2);
        break;
      }
  read_blasts (r, o, s, n_blocks, start_ok);
  path_pop (r, mark);
}

/* ==== the whole file ======================================================= */

/* 1-based line and column (in characters) of byte offset `off` in text. */
static void
line_col (const char *text, gsize off, guint *line, guint *col)
{
  const char *start = text;
  guint l = 1;
  for (gsize i = 0; i < off; i++)
    if (text[i] == '\n')
      {
        l++;
        start = text + i + 1;
      }
  *line = l;
  *col = (guint)g_utf8_strlen (start, text + off - start) + 1;
}

static void
syntax_problem (Reader *r, const char *text, gsize off, const char *what)
{
  guint line, col;
  line_col (text, off, &line, &col);
  add_line (r, SF_SCENARIO_ERROR_SYNTAX, g_strdup_printf ("%s:%u:%u: %s", r->label, line, col, what));
}

/* Parses and checks `text` (len bytes, with text[len] == '\0'). */
static SfScenario *
load_text (const char *text, gsize len, const char *label, const char *base_dir, GError **error)
{
  g_auto (Reader) r = {
    .label = label,
    .base_dir = base_dir,
    .problems = g_ptr_array_new_with_free_func (g_free),
    .path = g_string_new (NULL),
  };
  g_autoptr (SfScenario) sc = g_new0 (SfScenario, 1);
  sc->path = g_strdup (label);
  sc->sections = g_ptr_array_new_with_free_func (section_spec_free_cb);
  sc->classes = g_ptr_array_new_with_free_func (dozer_class_free_cb);
  sc->fleet = g_array_new (FALSE, TRUE, sizeof (SfFleetEntry));
  sf_material_defaults (&sc->material);
  sf_design_defaults (&sc->design);
  sf_factors_defaults (&sc->factors);

  const char *bad = NULL;
  g_autoptr (cJSON) root = NULL;
  if (!g_utf8_validate_len (text, len, &bad))
    syntax_problem (&r, text, (gsize)(bad - text),
                    *bad ? "not valid JSON (not UTF-8 text)" : "not valid JSON (a NUL byte)");
  else
    {
      /* The length counts the terminating NUL: with require_null_terminated
       * cJSON wants to see it inside the buffer after the value. */
      const char *end = NULL;
      root = cJSON_ParseWithLengthOpts (text, len + 1, &end, TRUE);
      if (!root)
        syntax_problem (&r, text, end ? (gsize)(end - text) : 0, "not valid JSON");
    }

  if (root && !cJSON_IsObject (root))
    invalid (&r, "expected a JSON object at the top level, found %s", kind_text (root));
  else if (root)
    {
      static const char *const keys[] = { "format", "name", "description", "strip", "sections",
                                          "material", "dozer_classes", "fleet", "design",
                                          "production_factors", "coal", "roster",
                                          "simulation", NULL };
      check_keys (&r, root, keys);
      const cJSON *fmt = member (root, "format");
      if (!cJSON_IsString (fmt) || g_strcmp0 (fmt->valuestring, SF_SCENARIO_FORMAT) != 0)
        {
          g_autofree char *found = !fmt ? g_strdup ("nothing (the key is missing)")
                                   : cJSON_IsString (fmt) ? quoted (fmt->valuestring)
                                                          : g_strdup (kind_text (fmt));
          gsize mark = path_key (&r, "format");
          invalid (&r, "expected \"" SF_SCENARIO_FORMAT "\", found %s", found);
          path_pop (&r, mark);
        }
      sc->name = g_strdup (read_string (&r, root, "name", TRUE, TRUE, NULL));
      sc->description = g_strdup (read_string (&r, root, "description", FALSE, FALSE, ""));
      StripState st = { FALSE, FALSE };
      read_strip (&r, root, sc, &st);
      read_sections (&r, root, sc, &st);
      read_material (&r, root, &sc->material);
      gboolean classes_ok = read_classes (&r, root, sc);
      read_fleet (&r, root, sc, classes_ok);
      read_design (&r, root, &sc->design);
      read_factors (&r, root, &sc->factors);
      read_coal (&r, root, sc);
      /* after the fleet (roster default: an operator per dozer) and the
       * classes (fitters against failures) */
      read_roster (&r, root, sc);
      read_simulation (&r, root, sc, &st);
    }

  if (r.n_problems == 0)
    return g_steal_pointer (&sc);

  if (r.n_problems > r.problems->len)
    g_ptr_array_add (r.problems, g_strdup_printf ("%s: ... and %u more problems", label,
                                                  r.n_problems - r.problems->len));
  g_ptr_array_add (r.problems, NULL);
  g_autofree char *msg = g_strjoinv ("\n", (char **)r.problems->pdata);
  SfScenarioError code = r.seen_io       ? SF_SCENARIO_ERROR_IO
                         : r.seen_syntax ? SF_SCENARIO_ERROR_SYNTAX
                                         : SF_SCENARIO_ERROR_INVALID;
  g_set_error_literal (error, SF_SCENARIO_ERROR, code, msg);
  return NULL;
}

SfScenario *
sf_scenario_load_from_data (const char *json, gsize len, const char *label, const char *base_dir,
                            GError **error)
{
  g_return_val_if_fail (json != NULL || len == 0, NULL);
  g_return_val_if_fail (error == NULL || *error == NULL, NULL);
  /* a private NUL-terminated copy: the caller's text need not end in NUL */
  g_autofree char *text = g_malloc (len + 1);
  if (len)
    memcpy (text, json, len);
  text[len] = '\0';
  return load_text (text, len, label ? label : "<data>", base_dir, error);
}

SfScenario *
sf_scenario_load_from_file (const char *path, GError **error)
{
  g_return_val_if_fail (path != NULL, NULL);
  g_return_val_if_fail (error == NULL || *error == NULL, NULL);
  GStatBuf st;
  if (g_stat (path, &st) == 0 && st.st_size > MAX_INPUT_BYTES)
    {
      g_set_error (error, SF_SCENARIO_ERROR, SF_SCENARIO_ERROR_IO,
                   "%s: file of %" G_GINT64_FORMAT " bytes is larger than the limit of %d bytes",
                   path, (gint64)st.st_size, MAX_INPUT_BYTES);
      return NULL;
    }
  g_autofree char *text = NULL;
  gsize len = 0;
  g_autoptr (GError) err = NULL;
  if (!read_bounded (path, &text, &len, &err))
    {
      g_set_error (error, SF_SCENARIO_ERROR, SF_SCENARIO_ERROR_IO, "%s: cannot read the scenario: %s",
                   path, err->message);
      return NULL;
    }
  /* CSV paths are relative to the scenario's folder; "." stays implicit so
   * that messages read "b23.csv", not "./b23.csv". */
  g_autofree char *dir = g_path_get_dirname (path);
  return load_text (text, len, path, strcmp (dir, ".") ? dir : NULL, error);
}

const char *
sf_scenario_get_class_blade (const SfScenario *sc, guint class_index)
{
  g_return_val_if_fail (sc != NULL && class_index < sc->classes->len, NULL);
  const SfDozerClass *c = g_ptr_array_index (sc->classes, class_index);
  switch (c->blade_type)
    {
    case SF_BLADE_STRAIGHT:
      return "straight";
    case SF_BLADE_SEMI_U:
      return "semi-u";
    case SF_BLADE_U:
      return "u";
    case SF_BLADE_CARRY:
      return "carry";
    }
  return "?";
}
