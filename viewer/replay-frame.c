/* SPDX-License-Identifier: MIT
 *
 * replay-frame.c — one frame of a run's replay, drawn with cairo (see
 * replay-frame.h).
 *
 * Owns: the picture only.  Everything it shows comes from the library's
 * replay state (stripfleet.h, section "replay"); the drawing helpers
 * (text in the C locale, legends, the page and its caution footer) are the
 * chart kit's (sim/sf-chart-kit.h).  The picture:
 *   - the whole strip: every block along strike, every lane a bar filled by
 *     its share of slices finished, done lanes marked, blocks not yet
 *     blasted hatched, each dozer a tick above its lane;
 *   - a detail of the blocks where the fleet is: lanes across strike, each
 *     dozer a marker on its lane at its estimated blade position x (an
 *     estimate for display, stripfleet.h), coloured by its time-usage
 *     category and labelled dz01, ...;
 *   - the clock (local time of the run), shift and crew, a wet-weather stop,
 *     fleet totals so far, a table of the dozers, the legend, and the
 *     caution footer.
 *
 * Memory: replay_frame_draw() returns a surface the caller destroys; every
 * string is freed before it returns.
 */
#include "replay-frame.h"

#include <math.h>
#include <string.h>

#include "sf-chart-kit.h"

#define W REPLAY_FRAME_WIDTH_PX
#define H REPLAY_FRAME_HEIGHT_PX


/* The strip's own colours: browns and slate, apart from the categories. */
static const Rgb RGB_LANE_NEW = { 0.955, 0.935, 0.880 };   /* nothing finished */
static const Rgb RGB_LANE_WORK = { 0.780, 0.650, 0.440 };  /* slices finished (share) */
static const Rgb RGB_LANE_DONE = { 0.560, 0.600, 0.680 };  /* lane worked out */
static const Rgb RGB_UNBLASTED = { 0.860, 0.860, 0.860 };
static const Rgb RGB_WET = { 0.160, 0.380, 0.700 };

/* Layout, pixels. */
#define LEFT 78.0
#define PLAN_W 842.0
#define COL_X 952.0
#define OV_TOP 104.0
#define OV_H 60.0
#define DT_TOP 222.0
#define DT_H 326.0
#define TABLE_TOP 640.0
#define ROW_H 20.0
#define DETAIL_MAX_BLOCKS 6
#define DETAIL_MIN_BLOCKS 4

static double
lane_share (const SfReplayLane *ln)
{
  if (ln->done)
    return 1.0;
  return ln->slices_total ? (double) ln->slices_done / ln->slices_total : 0.0;
}

/* Mixes a and b: t = 0 is a, 1 is b. */
static Rgb
mix (const Rgb *a, const Rgb *b, double t)
{
  return (Rgb) { a->r + (b->r - a->r) * t, a->g + (b->g - a->g) * t, a->b + (b->b - a->b) * t };
}

/* A whole number with its digits in threes (SI Brochure, 9th edition 2019,
 * 5.4.4: a space between groups when there are more than four digits). */
static char *
grouped (double v)
{
  g_autofree char *s = fmt ("%.0f", fabs (v) < 0.5 ? 0.0 : v);
  const gsize n = strlen (s);
  GString *g = g_string_new (NULL);
  for (gsize i = 0; i < n; i++)
    {
      if (n > 4 && i > 0 && (n - i) % 3 == 0)
        g_string_append_c (g, ' ');
      g_string_append_c (g, s[i]);
    }
  return g_string_free (g, FALSE);
}

static void
hatch (cairo_t *cr, double x, double y, double w, double h)
{
  cairo_save (cr);
  cairo_rectangle (cr, x, y, w, h);
  cairo_clip (cr);
  set_rgb (cr, &RGB_UNBLASTED);
  cairo_paint (cr);
  cairo_set_source_rgb (cr, 0.70, 0.70, 0.70);
  cairo_set_line_width (cr, 1.0);
  for (double d = -h; d < w; d += 7)
    {
      cairo_move_to (cr, x + d, y + h);
      cairo_line_to (cr, x + d + h, y);
    }
  cairo_stroke (cr);
  cairo_restore (cr);
}

/* The blocks shown in detail: those the fleet holds, at least
 * DETAIL_MIN_BLOCKS and at most DETAIL_MAX_BLOCKS, centred on them. */
static void
detail_window (const SfReplayState *st, guint *b0, guint *nb)
{
  int lo = -1, hi = -1;
  for (guint i = 0; i < st->n_dozers; i++)
    if (st->dozers[i].block >= 0)
      {
        lo = lo < 0 ? st->dozers[i].block : MIN (lo, st->dozers[i].block);
        hi = MAX (hi, st->dozers[i].block);
      }
  if (lo < 0) /* nobody holds a lane: the first block with work left */
    {
      lo = hi = (int) st->n_blocks - 1;
      for (guint b = 0; b < st->n_blocks && lo == (int) st->n_blocks - 1; b++)
        for (guint l = 0; l < st->n_lanes; l++)
          if (!st->lanes[b * st->n_lanes + l].done)
            {
              lo = hi = (int) b;
              break;
            }
    }
  guint span = (guint) (hi - lo + 1);
  guint n = MIN (st->n_blocks, CLAMP (span, DETAIL_MIN_BLOCKS, DETAIL_MAX_BLOCKS));
  int start = span >= n ? lo : lo - (int) (n - span) / 2;
  *b0 = (guint) CLAMP (start, 0, (int) (st->n_blocks - n));
  *nb = n;
}

/* ---- the whole strip ------------------------------------------------------------- */

static void
draw_overview (cairo_t *cr, const SfReplayState *st, guint b0, guint nb)
{
  const guint nl = st->n_blocks * st->n_lanes;
  const double lw = PLAN_W / nl;
  font (cr, 14, TRUE);
  set_rgb (cr, &RGB_TEXT);
  g_autofree char *head = fmt ("Whole strip: %u blocks of %u lanes along strike", st->n_blocks,
                               st->n_lanes);
  text_at (cr, LEFT, OV_TOP - 33, 0.0, 0.0, head);
  for (guint b = 0; b < st->n_blocks; b++)
    {
      const double bx = LEFT + b * st->n_lanes * lw;
      if (!st->block_open[b])
        {
          hatch (cr, bx, OV_TOP, st->n_lanes * lw, OV_H);
          continue;
        }
      for (guint l = 0; l < st->n_lanes; l++)
        {
          const SfReplayLane *ln = &st->lanes[b * st->n_lanes + l];
          const double x = bx + l * lw;
          set_rgb (cr, &RGB_LANE_NEW);
          cairo_rectangle (cr, x, OV_TOP, lw, OV_H);
          cairo_fill (cr);
          const double s = lane_share (ln);
          set_rgb (cr, ln->done ? &RGB_LANE_DONE : &RGB_LANE_WORK);
          cairo_rectangle (cr, x, OV_TOP + OV_H * (1 - s), lw, OV_H * s);
          cairo_fill (cr);
        }
    }
  /* block boundaries, numbers every fifth block */
  cairo_set_line_width (cr, 1.0);
  font (cr, 12, FALSE);
  for (guint b = 0; b <= st->n_blocks; b++)
    {
      const double x = floor (LEFT + b * st->n_lanes * lw) + 0.5;
      cairo_set_source_rgb (cr, 0.55, 0.55, 0.55);
      cairo_move_to (cr, x, OV_TOP);
      cairo_line_to (cr, x, OV_TOP + OV_H + (b % 5 == 0 ? 5 : 0));
      cairo_stroke (cr);
      if (b % 5 == 0 && b < st->n_blocks)
        {
          set_rgb (cr, &RGB_TEXT);
          g_autofree char *s = fmt ("%u", b);
          text_at (cr, x + 2, OV_TOP + OV_H + 3, 0.0, 0.0, s);
        }
    }
  set_rgb (cr, &RGB_TEXT);
  text_at (cr, LEFT - 8, OV_TOP + 0.5 * OV_H, 1.0, 0.5, "block");
  /* the detail's blocks */
  cairo_set_source_rgb (cr, 0.1, 0.1, 0.1);
  cairo_set_line_width (cr, 2.0);
  cairo_rectangle (cr, LEFT + b0 * st->n_lanes * lw - 1, OV_TOP - 1, nb * st->n_lanes * lw + 2,
                   OV_H + 2);
  cairo_stroke (cr);
  /* dozers: a tick above their lane, in their category's colour */
  for (guint i = 0; i < st->n_dozers; i++)
    {
      const SfReplayDozer *d = &st->dozers[i];
      if (d->block < 0)
        continue;
      const double x = LEFT + (d->block * st->n_lanes + d->lane + 0.5) * lw;
      cairo_move_to (cr, x, OV_TOP - 2);
      cairo_line_to (cr, x - 5, OV_TOP - 11);
      cairo_line_to (cr, x + 5, OV_TOP - 11);
      cairo_close_path (cr);
      set_rgb (cr, use_rgb (d->use));
      cairo_fill_preserve (cr);
      cairo_set_source_rgb (cr, 0.2, 0.2, 0.2);
      cairo_set_line_width (cr, 0.8);
      cairo_stroke (cr);
    }
}

/* ---- the detail ------------------------------------------------------------------- */

typedef struct {
  double x, y;      /* marker centre */
  gboolean known;   /* position known */
} Marker;

static void
draw_detail (cairo_t *cr, const SfReplay *rp, const SfReplayState *st, guint b0, guint nb)
{
  double x_lo, x_hi;
  sf_replay_get_x_range (rp, &x_lo, &x_hi);
  if (!(x_hi > x_lo))
    x_lo = -1, x_hi = 1;
  const double pad = 0.04 * (x_hi - x_lo);
  x_lo -= pad, x_hi += pad;
  const guint nlanes = nb * st->n_lanes;
  const double lw = PLAN_W / nlanes;
  /* x across the strip grows downwards: the highwall side at the top, the
   * void (the push direction) at the bottom */
#define PY(xm) (DT_TOP + ((xm) - x_lo) / (x_hi - x_lo) * DT_H)

  font (cr, 14, TRUE);
  set_rgb (cr, &RGB_TEXT);
  g_autofree char *head
    = fmt ("Blocks %u to %u: dozers at their estimated blade position (estimate for display)",
           b0, b0 + nb - 1);
  text_at (cr, LEFT, DT_TOP - 26, 0.0, 0.0, head);

  for (guint b = b0; b < b0 + nb; b++)
    {
      const double bx = LEFT + (b - b0) * st->n_lanes * lw;
      if (!st->block_open[b])
        {
          hatch (cr, bx, DT_TOP, st->n_lanes * lw, DT_H);
          continue;
        }
      for (guint l = 0; l < st->n_lanes; l++)
        {
          const SfReplayLane *ln = &st->lanes[b * st->n_lanes + l];
          Rgb c = ln->done ? RGB_LANE_DONE
                           : mix (&RGB_LANE_NEW, &RGB_LANE_WORK, lane_share (ln));
          set_rgb (cr, &c);
          cairo_rectangle (cr, bx + l * lw, DT_TOP, lw, DT_H);
          cairo_fill (cr);
        }
    }
  /* x grid and ticks (left) */
  const double step = sf_chart_tick_step (x_hi - x_lo, 6);
  cairo_set_line_width (cr, 1.0);
  font (cr, 12, FALSE);
  for (double v = ceil (x_lo / step) * step; v <= x_hi; v += step)
    {
      const double y = floor (PY (v)) + 0.5;
      cairo_set_source_rgba (cr, 1, 1, 1, 0.6);
      cairo_move_to (cr, LEFT, y);
      cairo_line_to (cr, LEFT + PLAN_W, y);
      cairo_stroke (cr);
      set_rgb (cr, &RGB_TEXT);
      cairo_move_to (cr, LEFT - 5, y);
      cairo_line_to (cr, LEFT, y);
      cairo_stroke (cr);
      g_autofree char *s = tick_label (v, step);
      text_at (cr, LEFT - 8, y, 1.0, 0.5, s);
    }
  cairo_save (cr);
  font (cr, 13, FALSE);
  cairo_translate (cr, LEFT - 48, DT_TOP + 0.5 * DT_H);
  cairo_rotate (cr, -G_PI / 2);
  text_at (cr, 0, 0, 0.5, 1.0, "x across the strip, m  (push direction: down)");
  cairo_restore (cr);
  /* lane and block lines, block numbers, lane numbers of the first block */
  for (guint k = 0; k <= nlanes; k++)
    {
      const double x = floor (LEFT + k * lw) + 0.5;
      const gboolean block_edge = k % st->n_lanes == 0;
      cairo_set_line_width (cr, block_edge ? 2.0 : 1.0);
      if (block_edge)
        cairo_set_source_rgb (cr, 0.35, 0.35, 0.35);
      else
        cairo_set_source_rgba (cr, 1, 1, 1, 0.9);
      cairo_move_to (cr, x, DT_TOP);
      cairo_line_to (cr, x, DT_TOP + DT_H);
      cairo_stroke (cr);
    }
  for (guint b = b0; b < b0 + nb; b++)
    {
      const double bx = LEFT + (b - b0) * st->n_lanes * lw;
      guint done = 0;
      for (guint l = 0; l < st->n_lanes; l++)
        done += st->lanes[b * st->n_lanes + l].done;
      font (cr, 13, TRUE);
      set_rgb (cr, &RGB_TEXT);
      g_autofree char *s = fmt ("block %u", b);
      text_at (cr, bx + 0.5 * st->n_lanes * lw, DT_TOP + DT_H + 6, 0.5, 0.0, s);
      font (cr, 11, FALSE);
      cairo_set_source_rgb (cr, 0.35, 0.35, 0.35);
      g_autofree char *s2 = !st->block_open[b] ? g_strdup ("not blasted yet")
                                                : fmt ("%u of %u lanes done", done, st->n_lanes);
      text_at (cr, bx + 0.5 * st->n_lanes * lw, DT_TOP + DT_H + 23, 0.5, 0.0, s2);
      /* done lanes: a tick mark at the top */
      cairo_set_source_rgb (cr, 1, 1, 1);
      cairo_set_line_width (cr, 2.0);
      for (guint l = 0; l < st->n_lanes; l++)
        if (st->lanes[b * st->n_lanes + l].done && lw >= 10)
          {
            const double cx = bx + (l + 0.5) * lw, cy = DT_TOP + 12;
            cairo_move_to (cr, cx - 4, cy);
            cairo_line_to (cr, cx - 1, cy + 3);
            cairo_line_to (cr, cx + 4, cy - 4);
            cairo_stroke (cr);
          }
    }
  draw_frame_box (cr, &(Frame) { LEFT, DT_TOP, PLAN_W, DT_H, 0, 1, 0, 1 });

  /* dozers: markers first, then labels placed clear of markers and of
   * each other */
  g_autofree Marker *mk = g_new0 (Marker, st->n_dozers);
  g_autoptr (GArray) taken = g_array_new (FALSE, FALSE, sizeof (Box));
  for (guint i = 0; i < st->n_dozers; i++)
    {
      const SfReplayDozer *d = &st->dozers[i];
      if (d->block < (int) b0 || d->block >= (int) (b0 + nb))
        continue;
      Marker *m = &mk[i];
      m->x = LEFT + ((d->block - b0) * st->n_lanes + d->lane + 0.5) * lw;
      m->known = isfinite (d->x_m);
      m->y = m->known ? PY (d->x_m) : DT_TOP + 10;
      const double r = 7;
      if (d->pushing) /* the push direction: a wedge ahead (down) */
        {
          cairo_move_to (cr, m->x - 5, m->y + r - 1);
          cairo_line_to (cr, m->x + 5, m->y + r - 1);
          cairo_line_to (cr, m->x, m->y + r + 7);
          cairo_close_path (cr);
          cairo_set_source_rgb (cr, 0.15, 0.15, 0.15);
          cairo_fill (cr);
        }
      cairo_new_sub_path (cr);
      cairo_arc (cr, m->x, m->y, r, 0, 2 * G_PI);
      set_rgb (cr, use_rgb (d->use));
      if (m->known)
        cairo_fill_preserve (cr);
      else
        {
          static const double dash[] = { 3, 2 };
          cairo_set_dash (cr, dash, 2, 0);
        }
      cairo_set_source_rgb (cr, 0.1, 0.1, 0.1);
      cairo_set_line_width (cr, m->known ? 1.2 : 2.0);
      cairo_stroke (cr);
      cairo_set_dash (cr, NULL, 0, 0);
      Box b = { m->x - r - 1, m->y - r - 1, m->x + r + 1, m->y + r + 8 };
      g_array_append_val (taken, b);
    }
  font (cr, 12, TRUE);
  cairo_font_extents_t fe;
  cairo_font_extents (cr, &fe);
  const double th = fe.ascent + fe.descent;
  for (guint i = 0; i < st->n_dozers; i++)
    {
      const SfReplayDozer *d = &st->dozers[i];
      if (d->block < (int) b0 || d->block >= (int) (b0 + nb))
        continue;
      const Marker *m = &mk[i];
      const double tw = text_width (cr, d->name);
      /* candidates: right, left, above, below, then further out */
      const double cand[][2] = {
        { m->x + 10, m->y - 0.5 * th },      { m->x - 10 - tw, m->y - 0.5 * th },
        { m->x + 8, m->y - 9 - th },         { m->x - 8 - tw, m->y - 9 - th },
        { m->x + 8, m->y + 9 },              { m->x - 8 - tw, m->y + 9 },
        { m->x - 0.5 * tw, m->y - 10 - th }, { m->x - 0.5 * tw, m->y + 16 },
        { m->x + 10, m->y - 1.6 * th - 9 },  { m->x + 10, m->y + th + 10 },
        { m->x - 10 - tw, m->y - 1.6 * th - 9 }, { m->x - 10 - tw, m->y + th + 10 },
      };
      guint pick = 0;
      for (guint c = 0; c < G_N_ELEMENTS (cand); c++)
        {
          Box bx = { cand[c][0] - 2, cand[c][1] - 1, cand[c][0] + tw + 2, cand[c][1] + th + 1 };
          gboolean clear = bx.x0 >= LEFT && bx.x1 <= LEFT + PLAN_W && bx.y0 >= DT_TOP
                           && bx.y1 <= DT_TOP + DT_H;
          for (guint k = 0; clear && k < taken->len; k++)
            clear = !box_overlap (&bx, &g_array_index (taken, Box, k));
          if (clear)
            {
              pick = c;
              break;
            }
        }
      Box bx = { cand[pick][0] - 2, cand[pick][1] - 1, cand[pick][0] + tw + 2,
                 cand[pick][1] + th + 1 };
      g_array_append_val (taken, bx);
      set_rgb (cr, &RGB_TEXT);
      halo_text (cr, cand[pick][0], cand[pick][1], 0.0, 0.0, d->name);
    }
#undef PY
}

/* ---- the dozers as a table ---------------------------------------------------------- */

static void
draw_table (cairo_t *cr, const SfReplayState *st)
{
  font (cr, 14, TRUE);
  set_rgb (cr, &RGB_TEXT);
  text_at (cr, LEFT, TABLE_TOP - 44, 0.0, 0.0, "Dozers");
  font (cr, 12, FALSE);
  cairo_set_source_rgb (cr, 0.35, 0.35, 0.35);
  text_at (cr, LEFT + 62, TABLE_TOP - 42, 0.0, 0.0,
           "category now, lane held (block, lane), estimated x, pushes and bcm so far (gross)");
  const guint rows = 6, cols = 2;
  const double col_w = PLAN_W / cols;
  const guint shown = MIN (st->n_dozers, rows * cols);
  const guint per_col = MIN (rows, (shown + cols - 1) / cols);
  /* column heads, and where each column's text sits (right-aligned numbers) */
  for (guint c = 0; c < MIN (cols, (shown + per_col - 1) / per_col); c++)
    {
      const double x = LEFT + c * col_w;
      text_at (cr, x + 62, TABLE_TOP - 20, 0.0, 0.0, "category");
      text_at (cr, x + 236, TABLE_TOP - 20, 0.0, 0.0, "lane");
      text_at (cr, x + 300, TABLE_TOP - 20, 1.0, 0.0, "x, m");
      text_at (cr, x + 350, TABLE_TOP - 20, 1.0, 0.0, "pushes");
      text_at (cr, x + col_w - 8, TABLE_TOP - 20, 1.0, 0.0, "bcm");
    }
  for (guint i = 0; i < shown; i++)
    {
      const SfReplayDozer *d = &st->dozers[i];
      const double x = LEFT + (i / per_col) * col_w, y = TABLE_TOP + (i % per_col) * ROW_H;
      cairo_new_sub_path (cr);
      cairo_arc (cr, x + 7, y + 8, 6, 0, 2 * G_PI);
      set_rgb (cr, use_rgb (d->use));
      cairo_fill_preserve (cr);
      cairo_set_source_rgb (cr, 0.1, 0.1, 0.1);
      cairo_set_line_width (cr, 1.0);
      cairo_stroke (cr);
      set_rgb (cr, &RGB_TEXT);
      font (cr, 13, TRUE);
      text_at (cr, x + 20, y + 8, 0.0, 0.5, d->name);
      font (cr, 13, FALSE);
      text_at (cr, x + 62, y + 8, 0.0, 0.5, use_label (d->use));
      g_autofree char *lane = d->block >= 0 ? fmt ("%d, %d", d->block, d->lane)
                                            : g_strdup ("none");
      text_at (cr, x + 236, y + 8, 0.0, 0.5, lane);
      g_autofree char *xs = isfinite (d->x_m) ? fmt ("%.0f", d->x_m) : g_strdup ("-");
      text_at (cr, x + 300, y + 8, 1.0, 0.5, xs);
      g_autofree char *pb = grouped (d->pushes);
      text_at (cr, x + 350, y + 8, 1.0, 0.5, pb);
      g_autofree char *bcm = grouped (d->dumped_bcm);
      text_at (cr, x + col_w - 8, y + 8, 1.0, 0.5, bcm);
    }
  if (shown < st->n_dozers)
    {
      font (cr, 12, FALSE);
      g_autofree char *more = fmt ("... and %u more dozers (see the strip above)",
                                   st->n_dozers - shown);
      text_at (cr, LEFT, TABLE_TOP + per_col * ROW_H + 4, 0.0, 0.0, more);
    }
}

/* ---- the right-hand column ----------------------------------------------------------- */

static void
draw_status (cairo_t *cr, const SfReplay *rp, const SfReplayState *st, const ReplayView *view)
{
  double y = 78;
  g_autoptr (GDateTime) now = g_date_time_add (sf_replay_get_start (rp), st->t_ms * 1000);
  g_autofree char *clock = g_date_time_format (now, "%Y-%m-%d  %H:%M");
  g_autofree char *zone = g_date_time_format (now, "%:z");
  set_rgb (cr, &RGB_TEXT);
  font (cr, 26, TRUE);
  text_at (cr, COL_X, y, 0.0, 0.0, clock);
  y += 36;
  font (cr, 13, FALSE);
  const double end_h = sf_replay_get_end_ms (rp) / 3.6e6;
  g_autofree char *local = fmt ("local time of the run (UTC%s)", zone);
  text_at (cr, COL_X, y, 0.0, 0.0, local);
  y += 19;
  g_autofree char *elapsed = fmt ("%.1f h of %.1f h since the start", st->t_ms / 3.6e6, end_h);
  text_at (cr, COL_X, y, 0.0, 0.0, elapsed);
  y += 22;
  g_autofree char *shift
    = st->shift < 0 ? g_strdup ("no shift yet")
      : st->crew_name ? fmt ("day %d, %s shift: crew %s, %d operators", st->day + 1,
                             st->shift_name, st->crew_name, st->operators)
                      : fmt ("day %d, %s shift: nobody rostered", st->day + 1, st->shift_name);
  /* scenario names can be long: the line shrinks to fit the column */
  double size = 14;
  for (font (cr, size, TRUE); size > 9 && text_width (cr, shift) > W - 24 - COL_X; size -= 0.5)
    font (cr, size - 0.5, TRUE);
  text_at (cr, COL_X, y, 0.0, 0.0, shift);
  y += 26;
  if (st->wet_stop)
    {
      set_rgb (cr, &RGB_WET);
      cairo_rectangle (cr, COL_X, y - 2, W - 24 - COL_X, 24);
      cairo_fill (cr);
      cairo_set_source_rgb (cr, 1, 1, 1);
      font (cr, 14, TRUE);
      text_at (cr, COL_X + 8, y + 10, 0.0, 0.5, "Wet-weather stop: no pushing");
    }
  else
    {
      font (cr, 13, FALSE);
      cairo_set_source_rgb (cr, 0.4, 0.4, 0.4);
      text_at (cr, COL_X, y + 10, 0.0, 0.5, "no wet-weather stop");
    }
  y += 34;
  set_rgb (cr, &RGB_TEXT);
  g_autofree char *bcm = grouped (st->dumped_bcm);
  g_autofree char *pushes = grouped (st->pushes);
  font (cr, 14, TRUE);
  g_autofree char *l1 = fmt ("%s bcm dumped so far (gross)", bcm);
  text_at (cr, COL_X, y, 0.0, 0.0, l1);
  y += 21;
  font (cr, 13, FALSE);
  g_autofree char *l2 = fmt ("%s pushes; %u of %u lanes done", pushes, st->lanes_done,
                             st->n_blocks * st->n_lanes);
  text_at (cr, COL_X, y, 0.0, 0.0, l2);
  y += 19;
  if (view->interactive)
    {
      g_autofree char *pl = fmt ("playback %s%.3g simulated h per second", view->paused
                                 ? "paused; " : "", view->speed_h_per_s);
      text_at (cr, COL_X, y, 0.0, 0.0, pl);
    }
  y += 30;

  Legend lg = { COL_X, y, W - 24 - COL_X };
  legend_heading (cr, &lg, "Time-usage category");
  for (int k = 0; k < SF_USE_N; k++)
    legend_entry (cr, &lg, KEY_FILL, use_rgb (k), 1.0, 0, NULL, 0, use_label (k), NULL);
  lg.y += 8;
  legend_heading (cr, &lg, "Lanes (fill: share of slices finished)");
  legend_entry (cr, &lg, KEY_FILL, &RGB_LANE_WORK, 1.0, 0, NULL, 0, "slices finished", NULL);
  legend_entry (cr, &lg, KEY_FILL, &RGB_LANE_DONE, 1.0, 0, NULL, 0, "lane done", NULL);
  legend_entry (cr, &lg, KEY_FILL, &RGB_UNBLASTED, 1.0, 0, NULL, 0, "block not blasted yet",
                NULL);
}

cairo_surface_t *
replay_frame_draw (const SfReplay *rp, const SfReplayState *st, const ReplayView *view)
{
  cairo_t *cr;
  cairo_surface_t *surf = page_new (W, H, &cr);
  g_autofree char *title = fmt ("Replay of a fleet run  -  scenario '%s'",
                                sf_replay_get_scenario_name (rp));
  g_autofree char *sub
    = view->interactive
        ? g_strdup ("keys: space pause   + / - speed   left / right one hour   Home / End   q quit")
        : fmt ("%u dozers, seed %" G_GUINT64_FORMAT "; frame at %.2f h of the run",
               st->n_dozers, sf_replay_get_seed (rp), st->t_ms / 3.6e6);
  page_titles (cr, title, sub);
  guint b0, nb;
  detail_window (st, &b0, &nb);
  draw_overview (cr, st, b0, nb);
  draw_detail (cr, rp, st, b0, nb);
  draw_table (cr, st);
  draw_status (cr, rp, st, view);
  g_autofree char *extra = fmt ("replay of scenario '%s'%s; positions are estimates",
                                sf_replay_get_scenario_name (rp),
                                view->invented ? " (invented scenario)" : "");
  page_caution (cr, W, H, extra);
  cairo_destroy (cr);
  cairo_surface_flush (surf);
  return surf;
}
