/* SPDX-License-Identifier: MIT
 *
 * sf-replay.c — a finished fleet run read back from its events.log and
 * indexed by time, for the replay viewer (public API: stripfleet.h,
 * section "replay").
 *
 * Owns: a strict reader of events.log (format "stripfleet-run-1",
 * docs/output-formats.md, written by sf-report.c: it accepts exactly what
 * that writer produces and names file:line, the field and what was expected
 * of anything else), the log as one GArray of compact records, per dozer
 * the indices of its push lines (for the position estimate), and a
 * checkpoint of the whole fleet state every CHECK_EVERY lines, so that the
 * state at any time is a binary search plus at most CHECK_EVERY lines
 * replayed, and forward playback continues from the caller's state.
 *
 * Memory: SfReplay owns everything it holds (records, push indices,
 * checkpoints, the names copied from the scenario) and frees it in
 * sf_replay_free(); it keeps no pointer to the scenario.  An SfReplayState
 * owns its arrays; its shift_name and crew_name are borrowed from the
 * replay, which must outlive it.
 *
 * The blade positions are estimates for display (stripfleet.h): the log
 * holds where each push started and dumped and when its cycle ended, not
 * where the machine was in between.
 */
#include <errno.h>
#include <math.h>
#include <string.h>
#include <sys/stat.h>

#include <cjson/cJSON.h>
#include <glib/gstdio.h>

#include "sf-scenario.h"
#include "stripfleet.h"

#define FORMAT_TAG "stripfleet-run-1"
#define HEADER_LINES 5
#define FIELDS 9
/* a full state is kept every so many lines (a query replays at most these) */
#define CHECK_EVERY 512
/* the reader refuses larger files (a demo run of 22 days writes 2.3 MB) */
#define MAX_LOG_BYTES ((gsize) 1 << 30)

/* Kinds of line: the time-usage categories are their SfUse values. */
enum {
  K_PUSH = SF_USE_N,
  K_SLICE,
  K_LANE_DONE,
  K_TRAM,
  K_FAILURE,
  K_REPAIRED,
  K_SERVICE,   /* the service event (a > 0); a = 0 is the category line */
  K_SHIFT,
  K_WET_STOP,
  K_BLAST,
  K_N
};

static const char *const EVENT_NAMES[K_N - SF_USE_N] = {
  "push", "slice", "lane_done", "tram", "failure", "repaired", "service", "shift", "wet_stop",
  "blast",
};

typedef struct {
  gint64 t_ms;
  double a, b, c;
  gint32 block, slice;
  gint16 dozer, lane;
  guint8 kind;
} Rec;

/* One push line of a dozer and the time of that dozer's own line before it
 * (0 when none): the interval over which the position is interpolated. */
typedef struct {
  guint rec;
  gint64 t_from_ms;
} PushRef;

struct _SfReplay {
  char *path;
  char *scenario;
  GDateTime *start;
  guint64 seed;
  guint n_dozers, n_blocks, n_lanes;
  double swell;                 /* lcm = bcm * (1 + swell) */
  GArray *recs;                 /* Rec, in file order */
  GPtrArray *pushes;            /* per dozer: GArray of PushRef */
  guint *slices_total;          /* per lane: slice lines in the log */
  gboolean *blasted;            /* per block: a blast line exists */
  GPtrArray *shift_names;       /* char *, owned */
  GPtrArray *crew_names;        /* char *, owned */
  double x_lo_m, x_hi_m;
  GPtrArray *checkpoints;       /* SfReplayState *, the state after line k * CHECK_EVERY */
};

/* ---- errors ----------------------------------------------------------------- */

static gboolean G_GNUC_PRINTF (5, 6)
fail_at (GError **error, int code, const char *path, guint line, const char *format, ...)
{
  va_list ap;
  va_start (ap, format);
  g_autofree char *msg = g_strdup_vprintf (format, ap);
  va_end (ap);
  g_set_error (error, SF_SCENARIO_ERROR, code, "%s:%u: %s", path, line, msg);
  return FALSE;
}

/* ---- fields ------------------------------------------------------------------ */

/* A whole number as the writer prints it (%d, %lld): optional '-', digits. */
static gboolean
parse_int (const char *s, gint64 lo, gint64 hi, gint64 *out)
{
  const char *p = s[0] == '-' ? s + 1 : s;
  if (!g_ascii_isdigit (*p))
    return FALSE;
  for (const char *q = p; *q; q++)
    if (!g_ascii_isdigit (*q) || q - p > 17)
      return FALSE;
  return g_ascii_string_to_signed (s, 10, lo, hi, out, NULL);
}

/* A number with three decimals as the writer prints it (%.3f). */
static gboolean
parse_dec3 (const char *s, double *out)
{
  const char *p = s[0] == '-' ? s + 1 : s;
  gsize n = 0;
  while (g_ascii_isdigit (p[n]))
    n++;
  if (n == 0 || n > 15 || p[n] != '.' || !g_ascii_isdigit (p[n + 1])
      || !g_ascii_isdigit (p[n + 2]) || !g_ascii_isdigit (p[n + 3]) || p[n + 4])
    return FALSE;
  *out = g_ascii_strtod (s, NULL);
  return isfinite (*out);
}

static int
kind_of (const char *s)
{
  for (int k = 0; k < SF_USE_N; k++)
    if (strcmp (s, sf_use_to_str (k)) == 0)
      return k;
  for (int k = SF_USE_N; k < K_N; k++)
    if (strcmp (s, EVENT_NAMES[k - SF_USE_N]) == 0)
      return k;
  return -1;
}

static const char *
kind_name (int k)
{
  return k < SF_USE_N ? sf_use_to_str (k) : EVENT_NAMES[k - SF_USE_N];
}

/* What one kind of line carries in its index fields. */
typedef enum { IDX_NONE, IDX_REQUIRED, IDX_OPTIONAL } IdxRule;

typedef struct {
  const SfReplay *rp;
  const char *path;
  guint line;
  char *const *f;               /* the nine fields */
} LineCtx;

static gboolean
expect_minus_one (const LineCtx *c, const char *field, gint64 v, const char *kind, GError **error)
{
  if (v == -1)
    return TRUE;
  return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, c->path, c->line,
                  "field '%s': expected -1 on a '%s' line, found %" G_GINT64_FORMAT, field, kind,
                  v);
}

static gboolean
check_dozer (const LineCtx *c, gint64 v, IdxRule rule, const char *kind, GError **error)
{
  if (rule == IDX_NONE)
    return expect_minus_one (c, "dozer", v, kind, error);
  if (v >= 0 && v < c->rp->n_dozers)
    return TRUE;
  return fail_at (error, SF_SCENARIO_ERROR_INVALID, c->path, c->line,
                  "field 'dozer': expected a dozer index from 0 to %u (a fleet of %u), found "
                  "%" G_GINT64_FORMAT,
                  c->rp->n_dozers - 1, c->rp->n_dozers, v);
}

static gboolean
check_block (const LineCtx *c, gint64 v, IdxRule rule, const char *kind, GError **error)
{
  if (rule == IDX_NONE)
    return expect_minus_one (c, "block", v, kind, error);
  if ((v >= 0 && v < c->rp->n_blocks) || (rule == IDX_OPTIONAL && v == -1))
    return TRUE;
  return fail_at (error, SF_SCENARIO_ERROR_INVALID, c->path, c->line,
                  "field 'block': expected a block index from 0 to %u%s (the scenario has %u "
                  "blocks), found %" G_GINT64_FORMAT,
                  c->rp->n_blocks - 1, rule == IDX_OPTIONAL ? " or -1" : "", c->rp->n_blocks, v);
}

static gboolean
check_lane (const LineCtx *c, gint64 block, gint64 v, IdxRule rule, const char *kind,
            GError **error)
{
  if (rule == IDX_NONE)
    return expect_minus_one (c, "lane", v, kind, error);
  if (block == -1)
    return v == -1 ? TRUE
                   : fail_at (error, SF_SCENARIO_ERROR_SYNTAX, c->path, c->line,
                              "field 'lane': expected -1 with block -1, found %" G_GINT64_FORMAT,
                              v);
  if (v >= 0 && v < c->rp->n_lanes)
    return TRUE;
  return fail_at (error, SF_SCENARIO_ERROR_INVALID, c->path, c->line,
                  "field 'lane': expected a lane index from 0 to %u (the scenario has %u lanes "
                  "per block), found %" G_GINT64_FORMAT,
                  c->rp->n_lanes - 1, c->rp->n_lanes, v);
}

static gboolean
check_zero (const LineCtx *c, const char *field, double v, const char *kind, GError **error)
{
  if (v == 0)
    return TRUE;
  return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, c->path, c->line,
                  "field '%s': expected 0.000 on a '%s' line, found '%s'", field, kind,
                  c->f[field[0] - 'a' + 6]);
}

/* a, b or c as a whole number in [lo, hi] (shift lines, pushes of a slice) */
static gboolean
check_whole (const LineCtx *c, const char *field, double v, double lo, double hi, const char *what,
             GError **error)
{
  if (v == floor (v) && v >= lo && v <= hi)
    return TRUE;
  return fail_at (error, SF_SCENARIO_ERROR_INVALID, c->path, c->line,
                  "field '%s': expected %s, found '%s'", field, what, c->f[field[0] - 'a' + 6]);
}

/* Parses and checks one event line (fields split, NUL-terminated). */
static gboolean
parse_line (SfReplay *rp, const LineCtx *c, gint64 prev_t, Rec *r, GError **error)
{
  static const char *const NAMES[FIELDS] = { "t_ms", "kind", "dozer", "block", "lane",
                                             "slice", "a", "b", "c" };
  char *const *f = c->f;
  gint64 t, iv[4];
  double dv[3];
  if (!parse_int (f[0], 0, G_MAXINT64 / 2, &t))
    return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, c->path, c->line,
                    "field 't_ms': expected whole milliseconds >= 0, found '%s'", f[0]);
  if (t < prev_t)
    return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, c->path, c->line,
                    "field 't_ms': time goes back: %" G_GINT64_FORMAT " after %" G_GINT64_FORMAT
                    " (expected times in non-decreasing order)",
                    t, prev_t);
  int k = kind_of (f[1]);
  if (k < 0)
    return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, c->path, c->line,
                    "field 'kind': expected an event (push, slice, lane_done, tram, failure, "
                    "repaired, service, shift, wet_stop, blast) or a time-usage category "
                    "(operating, wait_lane, ...), found '%s'",
                    f[1]);
  for (int i = 0; i < 4; i++)
    if (!parse_int (f[2 + i], -1, G_MAXINT32, &iv[i]))
      return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, c->path, c->line,
                      "field '%s': expected a whole number >= -1, found '%s'", NAMES[2 + i],
                      f[2 + i]);
  for (int i = 0; i < 3; i++)
    if (!parse_dec3 (f[6 + i], &dv[i]))
      return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, c->path, c->line,
                      "field '%s': expected a number with three decimals, found '%s'",
                      NAMES[6 + i], f[6 + i]);
  if (k == SF_USE_SERVICE && dv[0] > 0)
    k = K_SERVICE;
  const char *kn = kind_name (k);
  const gint64 dozer = iv[0], block = iv[1], lane = iv[2], slice = iv[3];
  IdxRule rd, rb;
  gboolean slice_used = FALSE;
  switch (k)
    {
    case K_PUSH:
    case K_SLICE:
      rd = IDX_REQUIRED, rb = IDX_REQUIRED, slice_used = TRUE;
      break;
    case K_LANE_DONE:
    case K_TRAM:
      rd = IDX_REQUIRED, rb = IDX_REQUIRED;
      break;
    case K_SHIFT:
    case K_WET_STOP:
      rd = IDX_NONE, rb = IDX_NONE, slice_used = k == K_SHIFT;
      break;
    case K_BLAST:
      rd = IDX_NONE, rb = IDX_REQUIRED;
      break;
    default: /* categories, failure, repaired, the service event */
      rd = IDX_REQUIRED, rb = IDX_OPTIONAL;
      break;
    }
  if (!check_dozer (c, dozer, rd, kn, error) || !check_block (c, block, rb, kn, error)
      || !check_lane (c, block, lane, k == K_BLAST ? IDX_NONE : rb, kn, error))
    return FALSE;
  if (!slice_used && !expect_minus_one (c, "slice", slice, kn, error))
    return FALSE;
  if (slice_used && slice < 0)
    return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, c->path, c->line,
                    "field 'slice': expected %s >= 0 on a '%s' line, found %" G_GINT64_FORMAT,
                    k == K_SHIFT ? "a shift index" : "a slice index", kn, slice);
  gboolean ok = TRUE;
  switch (k)
    {
    case K_PUSH:
      ok = dv[2] >= 0 ? TRUE
                      : fail_at (error, SF_SCENARIO_ERROR_INVALID, c->path, c->line,
                                 "field 'c': expected a volume >= 0 lcm, found '%s'", f[8]);
      break;
    case K_SLICE:
      ok = (dv[0] >= 0 ? TRUE
                       : fail_at (error, SF_SCENARIO_ERROR_INVALID, c->path, c->line,
                                  "field 'a': expected a volume >= 0 bcm, found '%s'", f[6]))
           && check_whole (c, "b", dv[1], 0, G_MAXUINT32, "a whole number of pushes >= 0", error)
           && check_zero (c, "c", dv[2], kn, error);
      break;
    case K_TRAM:
      ok = (dv[0] >= 0 ? TRUE
                       : fail_at (error, SF_SCENARIO_ERROR_INVALID, c->path, c->line,
                                  "field 'a': expected a distance >= 0 m, found '%s'", f[6]))
           && check_zero (c, "b", dv[1], kn, error) && check_zero (c, "c", dv[2], kn, error);
      break;
    case K_SERVICE:
    case K_WET_STOP:
      ok = (dv[0] > 0 ? TRUE
                      : fail_at (error, SF_SCENARIO_ERROR_INVALID, c->path, c->line,
                                 "field 'a': expected a length > 0 h, found '%s'", f[6]))
           && check_zero (c, "b", dv[1], kn, error) && check_zero (c, "c", dv[2], kn, error);
      break;
    case K_SHIFT:
      {
        g_autofree char *crews = g_strdup_printf ("a crew index from -1 to %u",
                                                  rp->crew_names->len - 1);
        if (slice >= rp->shift_names->len)
          return fail_at (error, SF_SCENARIO_ERROR_INVALID, c->path, c->line,
                          "field 'slice': expected a shift index from 0 to %u (the scenario "
                          "has %u shifts a day), found %" G_GINT64_FORMAT,
                          rp->shift_names->len - 1, rp->shift_names->len, slice);
        ok = check_whole (c, "a", dv[0], 0, G_MAXINT32, "a day index >= 0", error)
             && check_whole (c, "b", dv[1], -1, rp->crew_names->len - 1.0, crews, error)
             && check_whole (c, "c", dv[2], 0, G_MAXINT32, "a number of operators >= 0", error);
      }
      break;
    default:
      ok = check_zero (c, "a", dv[0], kn, error) && check_zero (c, "b", dv[1], kn, error)
           && check_zero (c, "c", dv[2], kn, error);
      break;
    }
  if (!ok)
    return FALSE;
  *r = (Rec) { .t_ms = t, .a = dv[0], .b = dv[1], .c = dv[2], .block = (gint32) block,
               .slice = (gint32) slice, .dozer = (gint16) dozer, .lane = (gint16) lane,
               .kind = (guint8) k };
  return TRUE;
}

/* ---- the header ------------------------------------------------------------------ */

static gboolean
parse_header (SfReplay *rp, char **lines, GError **error)
{
  const char *path = rp->path;
  g_autofree char *tag = g_strdup_printf ("# %s events", FORMAT_TAG);
  if (strcmp (lines[0], tag) != 0)
    return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, path, 1,
                    "expected the format tag line '%s' (the event log of a stripfleet run), "
                    "found '%.60s'",
                    tag, lines[0]);
  if (!g_str_has_prefix (lines[1], "# scenario: "))
    return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, path, 2,
                    "expected '# scenario: NAME', found '%.60s'", lines[1]);
  const char *name = lines[1] + strlen ("# scenario: ");
  if (strcmp (name, rp->scenario) != 0)
    return fail_at (error, SF_SCENARIO_ERROR_INVALID, path, 2,
                    "the log is of scenario '%.60s', not '%s' (expected the scenario the run "
                    "was made from)",
                    name, rp->scenario);
  if (!g_str_has_prefix (lines[2], "# start: ")
      || !(rp->start = g_date_time_new_from_iso8601 (lines[2] + strlen ("# start: "), NULL)))
    return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, path, 3,
                    "expected '# start: ' and a local time in ISO 8601 with its UTC offset, "
                    "found '%.60s'",
                    lines[2]);
  guint64 seed;
  if (!g_str_has_prefix (lines[3], "# seed: ")
      || !g_ascii_string_to_unsigned (lines[3] + strlen ("# seed: "), 10, 0, G_MAXUINT64,
                                      &seed, NULL))
    return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, path, 4,
                    "expected '# seed: ' and a whole number, found '%.60s'", lines[3]);
  rp->seed = seed;
  if (strcmp (lines[4], "# t_ms kind dozer block lane slice a b c") != 0)
    return fail_at (error, SF_SCENARIO_ERROR_SYNTAX, path, 5,
                    "expected the column line '# t_ms kind dozer block lane slice a b c', "
                    "found '%.60s'",
                    lines[4]);
  return TRUE;
}

/* ---- the state ------------------------------------------------------------------- */

static SfReplayState *
state_alloc (const SfReplay *rp)
{
  SfReplayState *st = g_new0 (SfReplayState, 1);
  st->replay = rp;
  st->n_dozers = rp->n_dozers;
  st->n_blocks = rp->n_blocks;
  st->n_lanes = rp->n_lanes;
  st->dozers = g_new0 (SfReplayDozer, rp->n_dozers);
  st->lanes = g_new0 (SfReplayLane, (gsize) rp->n_blocks * rp->n_lanes);
  st->block_open = g_new0 (gboolean, rp->n_blocks);
  return st;
}

/* The state before the first line: every dozer waiting for a blast without a
 * lane (docs/output-formats.md: "Every dozer starts the run in wait_blast
 * without a line"). */
static void
state_reset (const SfReplay *rp, SfReplayState *st)
{
  for (guint i = 0; i < rp->n_dozers; i++)
    {
      SfReplayDozer *d = &st->dozers[i];
      memset (d, 0, sizeof *d);
      g_snprintf (d->name, sizeof d->name, "dz%02u", i + 1);
      d->use = SF_USE_WAIT_BLAST;
      d->block = d->lane = -1;
      d->x_m = NAN;
    }
  for (guint i = 0; i < rp->n_blocks * rp->n_lanes; i++)
    st->lanes[i] = (SfReplayLane) { 0, rp->slices_total[i], FALSE, 0.0 };
  for (guint b = 0; b < rp->n_blocks; b++)
    st->block_open[b] = !rp->blasted[b];
  st->t_ms = 0;
  st->pushes = st->slices_done = st->lanes_done = st->events = 0;
  st->dumped_bcm = 0;
  st->shift = st->day = st->operators = -1;
  st->shift_name = st->crew_name = NULL;
  st->wet_stop = FALSE;
  st->wet_end_ms = 0;
}

static void
state_copy (SfReplayState *dst, const SfReplayState *src)
{
  SfReplayDozer *dz = dst->dozers;
  SfReplayLane *ln = dst->lanes;
  gboolean *bo = dst->block_open;
  *dst = *src;
  dst->dozers = memcpy (dz, src->dozers, sizeof *dz * src->n_dozers);
  dst->lanes = memcpy (ln, src->lanes, sizeof *ln * src->n_blocks * src->n_lanes);
  dst->block_open = memcpy (bo, src->block_open, sizeof *bo * src->n_blocks);
}

/* Moves the clock to t: the time since goes to each dozer's category. */
static void
advance_time (SfReplayState *st, gint64 t)
{
  if (t <= st->t_ms)
    return;
  for (guint i = 0; i < st->n_dozers; i++)
    st->dozers[i].use_ms[st->dozers[i].use] += t - st->t_ms;
  st->t_ms = t;
}

static void
apply (const SfReplay *rp, SfReplayState *st, const Rec *r)
{
  advance_time (st, r->t_ms);
  SfReplayDozer *d = r->dozer >= 0 ? &st->dozers[r->dozer] : NULL;
  SfReplayLane *ln = r->lane >= 0 ? &st->lanes[r->block * rp->n_lanes + r->lane] : NULL;
  switch (r->kind)
    {
    case K_PUSH:
      {
        double bcm = r->c / (1.0 + rp->swell);
        d->pushes++;
        d->dumped_bcm += bcm;
        ln->dumped_bcm += bcm;
        st->pushes++;
        st->dumped_bcm += bcm;
      }
      break;
    case K_SLICE:
      ln->slices_done++;
      st->slices_done++;
      break;
    case K_LANE_DONE:
      if (!ln->done)
        st->lanes_done++;
      ln->done = TRUE;
      break;
    case K_FAILURE:
      d->failures++;
      break;
    case K_SHIFT:
      st->shift = r->slice;
      st->day = (int) r->a;
      st->shift_name = g_ptr_array_index (rp->shift_names, r->slice);
      st->crew_name = r->b >= 0 ? g_ptr_array_index (rp->crew_names, (guint) r->b) : NULL;
      st->operators = (int) r->c;
      break;
    case K_WET_STOP:
      st->wet_end_ms = MAX (st->wet_end_ms, r->t_ms + (gint64) llround (r->a * 3.6e6));
      break;
    case K_BLAST:
      st->block_open[r->block] = TRUE;
      break;
    default:
      if (r->kind < SF_USE_N)
        d->use = r->kind;
      break;
    }
  /* the lane a dozer holds: every line of its own (not slice or lane_done,
   * which name a dozer by attribution) */
  if (d && r->kind != K_SLICE && r->kind != K_LANE_DONE)
    {
      d->block = r->block;
      d->lane = r->lane;
    }
  st->events++;
}

/* The estimated position of dozer i at st's time (stripfleet.h). */
static void
estimate_x (const SfReplay *rp, SfReplayState *st, guint i)
{
  SfReplayDozer *d = &st->dozers[i];
  const GArray *pa = g_ptr_array_index (rp->pushes, i);
  /* first push line not yet applied */
  guint lo = 0, hi = pa->len;
  while (lo < hi)
    {
      guint mid = lo + (hi - lo) / 2;
      if (g_array_index (pa, PushRef, mid).rec < st->events)
        lo = mid + 1;
      else
        hi = mid;
    }
  const PushRef *next = lo < pa->len ? &g_array_index (pa, PushRef, lo) : NULL;
  const PushRef *last = lo > 0 ? &g_array_index (pa, PushRef, lo - 1) : NULL;
  const Rec *nr = next ? &g_array_index (rp->recs, Rec, next->rec) : NULL;
  const Rec *lr = last ? &g_array_index (rp->recs, Rec, last->rec) : NULL;
  d->pushing = FALSE;
  d->x_m = NAN;
  if (d->block < 0)
    return;
  gboolean next_here = nr && nr->block == d->block && nr->lane == d->lane;
  if (next_here && d->use == SF_USE_OPERATING && next->t_from_ms <= st->t_ms
      && nr->t_ms > next->t_from_ms)
    {
      double f = (double) (st->t_ms - next->t_from_ms) / (double) (nr->t_ms - next->t_from_ms);
      d->x_m = nr->a + (nr->b - nr->a) * f;
      d->pushing = TRUE;
    }
  else if (next_here)
    d->x_m = nr->a;
  else if (lr && lr->block == d->block && lr->lane == d->lane)
    d->x_m = lr->b;
}

/* Applies lines up to (not including) `target` and moves the clock to t. */
static void
run_to (const SfReplay *rp, SfReplayState *st, guint target, gint64 t)
{
  for (guint i = st->events; i < target; i++)
    apply (rp, st, &g_array_index (rp->recs, Rec, i));
  advance_time (st, t);
}

/* ---- loading --------------------------------------------------------------------- */

void
sf_replay_free (SfReplay *rp)
{
  if (!rp)
    return;
  g_free (rp->path);
  g_free (rp->scenario);
  g_clear_pointer (&rp->start, g_date_time_unref);
  g_clear_pointer (&rp->recs, g_array_unref);
  g_clear_pointer (&rp->pushes, g_ptr_array_unref);
  g_free (rp->slices_total);
  g_free (rp->blasted);
  g_clear_pointer (&rp->shift_names, g_ptr_array_unref);
  g_clear_pointer (&rp->crew_names, g_ptr_array_unref);
  g_clear_pointer (&rp->checkpoints, g_ptr_array_unref);
  g_free (rp);
}

/* The fleet size of the run whose summary.json lies beside events_path (its
 * "dozers" array), or 0 when there is none to read: a run made with
 * `--dozers N` replays without being told N. */
static guint
fleet_from_summary (const char *events_path)
{
  g_autofree char *dir = g_path_get_dirname (events_path);
  g_autofree char *path = g_build_filename (dir, "summary.json", NULL);
  g_autofree char *text = NULL;
  gsize len = 0;
  if (!g_file_get_contents (path, &text, &len, NULL))
    return 0;
  cJSON *root = cJSON_ParseWithLength (text, len);
  const cJSON *dz = cJSON_GetObjectItemCaseSensitive (root, "dozers");
  int n = cJSON_IsArray (dz) ? cJSON_GetArraySize (dz) : 0;
  cJSON_Delete (root);
  return n > 0 ? (guint) n : 0;
}

SfReplay *
sf_replay_load (const char *events_path, const SfScenario *sc, guint n_dozers, GError **error)
{
  g_return_val_if_fail (events_path != NULL, NULL);
  g_return_val_if_fail (sc != NULL, NULL);
  g_return_val_if_fail (error == NULL || *error == NULL, NULL);

  g_autoptr (SfReplay) rp = g_new0 (SfReplay, 1);
  rp->path = g_strdup (events_path);
  rp->scenario = g_strdup (sc->name);
  guint fleet = 0;
  for (guint i = 0; i < sc->fleet->len; i++)
    fleet += g_array_index (sc->fleet, SfFleetEntry, i).count;
  if (n_dozers == 0)
    n_dozers = fleet_from_summary (events_path);
  rp->n_dozers = n_dozers > 0 ? n_dozers : fleet;
  rp->n_blocks = sf_scenario_get_n_blocks (sc);
  rp->n_lanes = sf_scenario_get_n_lanes (sc);
  rp->swell = sc->material.swell;
  rp->shift_names = g_ptr_array_new_with_free_func (g_free);
  for (guint i = 0; i < sc->roster.n_shifts; i++)
    g_ptr_array_add (rp->shift_names, g_strdup (sc->roster.shifts[i].name));
  rp->crew_names = g_ptr_array_new_with_free_func (g_free);
  for (guint i = 0; i < sc->roster.n_crews; i++)
    g_ptr_array_add (rp->crew_names, g_strdup (sc->roster.crews[i].name));
  if (rp->n_dozers > G_MAXINT16 || rp->n_lanes > G_MAXINT16)
    {
      g_set_error (error, SF_SCENARIO_ERROR, SF_SCENARIO_ERROR_INVALID,
                   "%s: a fleet of %u dozers and %u lanes a block cannot be replayed",
                   events_path, rp->n_dozers, rp->n_lanes);
      return NULL;
    }

  /* the whole file, bounded */
  GStatBuf sb;
  if (g_stat (events_path, &sb) != 0)
    {
      int e = errno;
      g_set_error (error, G_FILE_ERROR, g_file_error_from_errno (e), "cannot read %s: %s",
                   events_path, g_strerror (e));
      return NULL;
    }
  if (!S_ISREG (sb.st_mode) || (gsize) sb.st_size > MAX_LOG_BYTES)
    {
      g_set_error (error, G_FILE_ERROR, G_FILE_ERROR_INVAL,
                   "cannot read %s: expected a regular file of at most %zu MiB",
                   events_path, MAX_LOG_BYTES >> 20);
      return NULL;
    }
  g_autofree char *text = NULL;
  gsize len = 0;
  if (!g_file_get_contents (events_path, &text, &len, error))
    return NULL;
  if (memchr (text, '\0', len))
    {
      guint line = 1;
      for (const char *p = text; *p; p++)
        line += *p == '\n';
      fail_at (error, SF_SCENARIO_ERROR_SYNTAX, events_path, line,
               "a NUL byte (expected text)");
      return NULL;
    }

  /* lines: each must end with a newline */
  g_autoptr (GPtrArray) lines = g_ptr_array_new ();
  for (char *p = text; p < text + len;)
    {
      char *nl = memchr (p, '\n', (gsize) (text + len - p));
      if (!nl)
        {
          fail_at (error, SF_SCENARIO_ERROR_SYNTAX, events_path, lines->len + 1,
                   "the line is cut short (expected a line ending; the file was not written "
                   "to its end)");
          return NULL;
        }
      *nl = '\0';
      g_ptr_array_add (lines, p);
      p = nl + 1;
    }
  if (lines->len < HEADER_LINES)
    {
      fail_at (error, SF_SCENARIO_ERROR_SYNTAX, events_path, lines->len + 1,
               "expected the %d header lines of an event log, the file ends after %u",
               HEADER_LINES, lines->len);
      return NULL;
    }
  if (!parse_header (rp, (char **) lines->pdata, error))
    return NULL;

  rp->recs = g_array_sized_new (FALSE, FALSE, sizeof (Rec), lines->len - HEADER_LINES);
  gint64 prev_t = 0;
  for (guint i = HEADER_LINES; i < lines->len; i++)
    {
      char *s = g_ptr_array_index (lines, i);
      char *f[FIELDS];
      guint n = 0;
      for (char *q = s;;)
        {
          char *sp = strchr (q, ' ');
          if (n < FIELDS)
            f[n] = q;
          n++;
          if (!sp)
            break;
          *sp = '\0';
          q = sp + 1;
        }
      if (n != FIELDS)
        {
          fail_at (error, SF_SCENARIO_ERROR_SYNTAX, events_path, i + 1,
                   "expected %d fields separated by single spaces (t_ms kind dozer block lane "
                   "slice a b c), found %u",
                   FIELDS, n);
          return NULL;
        }
      const LineCtx c = { rp, events_path, i + 1, f };
      Rec r;
      if (!parse_line (rp, &c, prev_t, &r, error))
        return NULL;
      prev_t = r.t_ms;
      g_array_append_val (rp->recs, r);
    }

  /* indices over the whole log */
  rp->pushes = g_ptr_array_new_with_free_func ((GDestroyNotify) g_array_unref);
  for (guint i = 0; i < rp->n_dozers; i++)
    g_ptr_array_add (rp->pushes, g_array_new (FALSE, FALSE, sizeof (PushRef)));
  g_autofree gint64 *last_own = g_new0 (gint64, rp->n_dozers);
  rp->slices_total = g_new0 (guint, (gsize) rp->n_blocks * rp->n_lanes);
  rp->blasted = g_new0 (gboolean, rp->n_blocks);
  gboolean any_push = FALSE;
  for (guint i = 0; i < rp->recs->len; i++)
    {
      const Rec *r = &g_array_index (rp->recs, Rec, i);
      if (r->kind == K_PUSH)
        {
          PushRef pr = { i, last_own[r->dozer] };
          g_array_append_val (g_ptr_array_index (rp->pushes, r->dozer), pr);
          double lo = MIN (r->a, r->b), hi = MAX (r->a, r->b);
          rp->x_lo_m = any_push ? MIN (rp->x_lo_m, lo) : lo;
          rp->x_hi_m = any_push ? MAX (rp->x_hi_m, hi) : hi;
          any_push = TRUE;
        }
      if (r->kind == K_SLICE)
        rp->slices_total[r->block * rp->n_lanes + r->lane]++;
      if (r->kind == K_BLAST)
        rp->blasted[r->block] = TRUE;
      if (r->dozer >= 0 && r->kind != K_SLICE && r->kind != K_LANE_DONE)
        last_own[r->dozer] = r->t_ms;
    }

  /* checkpoints: the state after every CHECK_EVERY lines */
  rp->checkpoints = g_ptr_array_new_with_free_func ((GDestroyNotify) sf_replay_state_free);
  SfReplayState *st = state_alloc (rp);
  state_reset (rp, st);
  for (guint k = 0;; k++)
    {
      SfReplayState *cp = state_alloc (rp);
      guint target = MIN (k * CHECK_EVERY, rp->recs->len);
      run_to (rp, st, target, st->t_ms);
      state_copy (cp, st);
      g_ptr_array_add (rp->checkpoints, cp);
      if (target == rp->recs->len)
        break;
    }
  sf_replay_state_free (st);
  return g_steal_pointer (&rp);
}

/* ---- queries ------------------------------------------------------------------------ */

const char *
sf_replay_get_scenario_name (const SfReplay *rp)
{
  g_return_val_if_fail (rp != NULL, NULL);
  return rp->scenario;
}

GDateTime *
sf_replay_get_start (const SfReplay *rp)
{
  g_return_val_if_fail (rp != NULL, NULL);
  return rp->start;
}

guint64
sf_replay_get_seed (const SfReplay *rp)
{
  g_return_val_if_fail (rp != NULL, 0);
  return rp->seed;
}

gint64
sf_replay_get_end_ms (const SfReplay *rp)
{
  g_return_val_if_fail (rp != NULL, 0);
  return rp->recs->len ? g_array_index (rp->recs, Rec, rp->recs->len - 1).t_ms : 0;
}

guint
sf_replay_get_n_events (const SfReplay *rp)
{
  g_return_val_if_fail (rp != NULL, 0);
  return rp->recs->len;
}

guint
sf_replay_get_n_dozers (const SfReplay *rp)
{
  g_return_val_if_fail (rp != NULL, 0);
  return rp->n_dozers;
}

guint
sf_replay_get_n_blocks (const SfReplay *rp)
{
  g_return_val_if_fail (rp != NULL, 0);
  return rp->n_blocks;
}

guint
sf_replay_get_n_lanes (const SfReplay *rp)
{
  g_return_val_if_fail (rp != NULL, 0);
  return rp->n_lanes;
}

void
sf_replay_get_x_range (const SfReplay *rp, double *x_lo_m, double *x_hi_m)
{
  g_return_if_fail (rp != NULL);
  if (x_lo_m)
    *x_lo_m = rp->x_lo_m;
  if (x_hi_m)
    *x_hi_m = rp->x_hi_m;
}

SfReplayState *
sf_replay_state_new (const SfReplay *rp)
{
  g_return_val_if_fail (rp != NULL, NULL);
  SfReplayState *st = state_alloc (rp);
  state_copy (st, g_ptr_array_index (rp->checkpoints, 0));
  return st;
}

void
sf_replay_state_free (SfReplayState *st)
{
  if (!st)
    return;
  g_free (st->dozers);
  g_free (st->lanes);
  g_free (st->block_open);
  g_free (st);
}

void
sf_replay_state_at (const SfReplay *rp, gint64 t_ms, SfReplayState *st)
{
  g_return_if_fail (rp != NULL && st != NULL);
  g_return_if_fail (st->replay == rp);
  const gint64 t = CLAMP (t_ms, 0, sf_replay_get_end_ms (rp));
  /* target: the first line later than t (binary search, upper bound) */
  guint lo = 0, hi = rp->recs->len;
  while (lo < hi)
    {
      guint mid = lo + (hi - lo) / 2;
      if (g_array_index (rp->recs, Rec, mid).t_ms <= t)
        lo = mid + 1;
      else
        hi = mid;
    }
  const guint target = lo;
  const guint ck = target / CHECK_EVERY;
  /* go on from st when it lies between the checkpoint and t (forward
   * playback); otherwise start from the checkpoint */
  if (!(st->t_ms <= t && st->events <= target && st->events >= ck * CHECK_EVERY))
    state_copy (st, g_ptr_array_index (rp->checkpoints, ck));
  run_to (rp, st, target, t);
  st->wet_stop = st->wet_end_ms > st->t_ms;
  for (guint i = 0; i < rp->n_dozers; i++)
    estimate_x (rp, st, i);
}
