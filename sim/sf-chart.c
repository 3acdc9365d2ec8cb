/* SPDX-License-Identifier: MIT
 *
 * sf-chart.c — PNG charts of the block studies, drawn with cairo.
 *
 * Owns: the study charts (sf_study_chart_plan, sf_study_chart_lane,
 * sf_study_chart_compare, sf_study_chart_handover in stripfleet.h), their
 * profile lines, bands and bars, and sf_chart_tick_step();
 * the drawing kit they share with the run charts (frames, axes, text,
 * legends, page, atomic PNG writing) is in sf-chart-kit.h.
 *
 * The charts are built from the same wiring as the tables (sf-study.h): the
 * plan chart from the block's section and slice plan, the lane chart from
 * the lane as sf_lane_work() leaves it and the per-slice results.
 *
 * Memory: every cairo object and study object lives for one call and is
 * released before it returns; nothing is kept between calls.
 *
 * Determinism: no clock, no random numbers, numbers printed in the C locale
 * whatever the caller's locale, hinting of font metrics off; cairo's PNG
 * writer stores no time stamp, so the same input gives the same bytes on the
 * same system (fonts come from the system's font configuration).
 */
#include "sf-chart.h"

#include <cairo.h>
#include <locale.h>
#include <math.h>
#include <string.h>

#include "sf-chart-kit.h"
#include "sf-study.h"
#include "sf-util.h"

/* Cells this close to a slice target count as cut (m): the drawing
 * tolerance of the cut bands. */
#define CHART_CUT_TOL_M 0.02

/* Slice colours: the Okabe-Ito colour-blind-safe palette (M. Okabe and
 * K. Ito, "Color Universal Design", 2008), yellow left out (too faint on
 * white), cycled when a plan has more slices. */
static const Rgb SLICE_RGB[] = {
  { 0.902, 0.624, 0.000 }, /* orange */
  { 0.337, 0.706, 0.914 }, /* sky blue */
  { 0.000, 0.620, 0.451 }, /* bluish green */
  { 0.800, 0.475, 0.655 }, /* reddish purple */
  { 0.000, 0.447, 0.698 }, /* blue */
  { 0.835, 0.369, 0.000 }, /* vermillion */
};

static const Rgb RGB_LOOSE = { 0.96, 0.91, 0.80 };
static const Rgb RGB_BASE_FILL = { 0.80, 0.80, 0.80 };
static const Rgb RGB_BASE_LINE = { 0.45, 0.45, 0.45 };
static const Rgb RGB_ROOF = { 0.0, 0.0, 0.0 };
static const Rgb RGB_FLOOR = { 0.15, 0.15, 0.15 };
static const Rgb RGB_SPOIL = { 0.60, 0.05, 0.15 };
static const Rgb RGB_NATURAL = { 0.55, 0.55, 0.55 };
static const Rgb RGB_AFTER = { 0.000, 0.447, 0.698 };
static const Rgb RGB_REMOVED = { 0.902, 0.624, 0.000 };
static const Rgb RGB_PLACED = { 0.337, 0.706, 0.914 };
static const Rgb RGB_PUSH = { 0.10, 0.10, 0.10 };

static const double DASH_FLOOR[] = { 8.0, 4.0 };
static const double DASH_SPOIL[] = { 14.0, 4.0, 3.0, 4.0 };
static const double DASH_NATURAL[] = { 2.0, 4.0 };

static const Rgb *
slice_rgb (guint k)
{
  return &SLICE_RGB[k % G_N_ELEMENTS (SLICE_RGB)];
}

double
sf_chart_tick_step (double range, guint max_ticks)
{
  g_return_val_if_fail (range > 0 && max_ticks >= 1, 1.0);
  double raw = range / max_ticks;
  double mag = pow (10.0, floor (log10 (raw)));
  double norm = raw / mag;
  /* guard against log10 rounding on exact powers of ten */
  if (norm < 1.0)
    {
      mag /= 10.0;
      norm *= 10.0;
    }
  double nice;
  if (norm <= 1.0 + 1e-9)
    nice = 1.0;
  else if (norm <= 2.0 + 1e-9)
    nice = 2.0;
  else if (norm <= 5.0 + 1e-9)
    nice = 5.0;
  else
    nice = 10.0;
  return nice * mag;
}

/* ---- profiles -------------------------------------------------------------- */

typedef struct {
  double x0_m, dx_m;
  guint n;
} Grid;

static double
cell_x (const Grid *g, guint i)
{
  return g->x0_m + (i + 0.5) * g->dx_m;
}

/* Polyline through the cell centres [i0, i1) of z. */
static void
path_profile (cairo_t *cr, const Frame *f, const Grid *g, const double *z, guint i0, guint i1)
{
  for (guint i = i0; i < i1 && i < g->n; i++)
    {
      if (i == i0)
        cairo_move_to (cr, px (f, cell_x (g, i)), py (f, z[i]));
      else
        cairo_line_to (cr, px (f, cell_x (g, i)), py (f, z[i]));
    }
}

static void
stroke_profile (cairo_t *cr, const Frame *f, const Grid *g, const double *z, guint i0, guint i1,
                const Rgb *c, double width, const double *dash, int n_dash)
{
  cairo_save (cr);
  set_rgb (cr, c);
  cairo_set_line_width (cr, width);
  cairo_set_line_join (cr, CAIRO_LINE_JOIN_ROUND);
  cairo_set_dash (cr, dash, n_dash, 0);
  path_profile (cr, f, g, z, i0, i1);
  cairo_stroke (cr);
  cairo_restore (cr);
}

/* Fills where upper stands above lower over [i0, i1); lower NULL = the
 * bottom of the frame. */
static void
fill_between (cairo_t *cr, const Frame *f, const Grid *g, const double *upper,
              const double *lower, guint i0, guint i1, const Rgb *c, double alpha)
{
  if (i1 <= i0)
    return;
  cairo_save (cr);
  set_rgba (cr, c, alpha);
  path_profile (cr, f, g, upper, i0, i1);
  for (guint i = i1; i-- > i0;)
    {
      double lo = lower ? MIN (lower[i], upper[i]) : f->y_lo;
      cairo_line_to (cr, px (f, cell_x (g, i)), py (f, lo));
    }
  cairo_close_path (cr);
  cairo_fill (cr);
  cairo_restore (cr);
}

/* A pivot marker: a downward triangle standing on the point. */
static void
draw_pivot (cairo_t *cr, const Frame *f, double x, double z, gboolean hollow, const char *label)
{
  double u = px (f, x), v = py (f, z);
  cairo_save (cr);
  cairo_move_to (cr, u, v);
  cairo_line_to (cr, u - 7, v - 12);
  cairo_line_to (cr, u + 7, v - 12);
  cairo_close_path (cr);
  if (hollow)
    {
      cairo_set_source_rgb (cr, 1, 1, 1);
      cairo_fill_preserve (cr);
    }
  else
    {
      cairo_set_source_rgb (cr, 0, 0, 0);
      cairo_fill_preserve (cr);
    }
  cairo_set_source_rgb (cr, 0, 0, 0);
  cairo_set_line_width (cr, 1.5);
  cairo_stroke (cr);
  if (label)
    {
      font (cr, 13, TRUE);
      /* white halo so the label reads over lines and fills */
      cairo_font_extents_t fe;
      cairo_font_extents (cr, &fe);
      double w = text_width (cr, label);
      cairo_set_source_rgba (cr, 1, 1, 1, 0.85);
      cairo_rectangle (cr, u - 0.5 * w - 3, v - 16 - fe.ascent - fe.descent - 1, w + 6,
                       fe.ascent + fe.descent + 2);
      cairo_fill (cr);
      set_rgb (cr, &RGB_TEXT);
      text_at (cr, u, v - 16, 0.5, 1.0, label);
    }
  cairo_restore (cr);
}

static void
draw_arrow (cairo_t *cr, double x0, double y0, double x1, double y1, double head_px)
{
  double a = atan2 (y1 - y0, x1 - x0);
  cairo_move_to (cr, x0, y0);
  cairo_line_to (cr, x1 - 0.8 * head_px * cos (a), y1 - 0.8 * head_px * sin (a));
  cairo_stroke (cr);
  cairo_move_to (cr, x1, y1);
  cairo_line_to (cr, x1 - head_px * cos (a - 0.4), y1 - head_px * sin (a - 0.4));
  cairo_line_to (cr, x1 - head_px * cos (a + 0.4), y1 - head_px * sin (a + 0.4));
  cairo_close_path (cr);
  cairo_fill (cr);
}

/* Ends a study chart: the caution line, with `what` (may be NULL) and
 * "invented scenario" when the scenario says so, then the page written to
 * png_path (page_finish). */
static gboolean
study_page_finish (cairo_surface_t *surf, cairo_t *cr, const SfScenario *sc, const char *what,
                   int w, int h, const char *png_path, GError **error)
{
  const char *desc = sf_scenario_get_description (sc);
  gboolean invented = desc && strstr (desc, "nvented") != NULL;
  g_autofree char *extra
    = what ? fmt ("%s of scenario '%s'%s", what, sf_scenario_get_name (sc),
                  invented ? " (invented scenario)" : "")
           : invented ? g_strdup ("invented scenario")
                      : NULL;
  page_caution (cr, w, h, extra);
  return page_finish (surf, cr, png_path, error);
}

/* ---- section frame ---------------------------------------------------------- */

/* Vertical exaggerations offered, smallest first. */
static const double VERT_EXAG[] = { 1.0, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 8.0, 10.0 };

/* A section frame over the whole grid in x and [z_lo, z_hi] in z (at least),
 * with a round vertical exaggeration that fits the box; the z range grows to
 * fill the box.  *ve receives the exaggeration. */
static Frame
section_frame (double left, double top, double width, double height, const Grid *g, double z_lo,
               double z_hi, double *ve)
{
  Frame f = { left, top, width, height, g->x0_m, g->x0_m + g->n * g->dx_m, z_lo, z_hi };
  double sx = width / (f.x_hi - f.x_lo);
  double fit = height / ((z_hi - z_lo) * sx);
  double e = fit;
  for (gsize k = 0; k < G_N_ELEMENTS (VERT_EXAG); k++)
    if (VERT_EXAG[k] <= fit)
      e = VERT_EXAG[k];
  if (fit > VERT_EXAG[G_N_ELEMENTS (VERT_EXAG) - 1])
    e = VERT_EXAG[G_N_ELEMENTS (VERT_EXAG) - 1];
  double span = height / (sx * e);
  double mid = 0.5 * (z_lo + z_hi);
  f.y_lo = mid - 0.5 * span;
  f.y_hi = mid + 0.5 * span;
  *ve = e;
  return f;
}

static char *
z_axis_label (double ve)
{
  if (fabs (ve - 1.0) < 1e-9)
    return g_strdup ("elevation, m (true scale)");
  return fmt ("elevation, m (vertical scale x%g)", ve);
}

/* The final spoil line of the standard design from the low-wall toe on. */
static void
draw_spoil_line (cairo_t *cr, const Frame *f, const Grid *g, const SfBlockSection *bs,
                 const SfDesign *d)
{
  g_autofree double *spoil = g_new (double, g->n);
  for (guint i = 0; i < g->n; i++)
    spoil[i] = sf_block_section_spoil_line (bs, cell_x (g, i));
  double x_q = bs->x_low_wall_edge_m + d->spoil_toe_offset_m;
  guint i_q = (guint) CLAMP ((x_q - g->x0_m) / g->dx_m, 0, g->n - 1);
  stroke_profile (cr, f, g, spoil, i_q, g->n, &RGB_SPOIL, 1.8, DASH_SPOIL,
                  G_N_ELEMENTS (DASH_SPOIL));
}

static guint
cell_of (const Grid *g, double x)
{
  return (guint) CLAMP ((x - g->x0_m) / g->dx_m, 0, g->n - 1);
}

static void
draw_floor (cairo_t *cr, const Frame *f, const Grid *g, const SfBlockSection *bs)
{
  stroke_profile (cr, f, g, bs->floor, cell_of (g, bs->x_highwall_toe_m), bs->i_pivot + 1,
                  &RGB_FLOOR, 1.6, DASH_FLOOR, G_N_ELEMENTS (DASH_FLOOR));
}

static void
draw_pivots (cairo_t *cr, const Frame *f, const SfBlockSection *bs, const SfDesign *d)
{
  if (d->pivot == SF_PIVOT_LIFTED)
    {
      draw_pivot (cr, f, bs->x_pivot_std_m, bs->z_pivot_std_m, TRUE, NULL);
      draw_pivot (cr, f, bs->x_pivot_m, bs->z_pivot_m, FALSE, "lifted pivot");
    }
  else
    draw_pivot (cr, f, bs->x_pivot_m, bs->z_pivot_m, FALSE, "pivot");
}

/* Legend entries of the design lines shared by both charts. */
static void
legend_design (cairo_t *cr, Legend *lg, const SfDesign *d)
{
  legend_entry (cr, lg, KEY_FILL, &RGB_BASE_FILL, 1.0, 1.0, NULL, 0, "base (non-erodible ground)",
                NULL);
  legend_entry (cr, lg, KEY_LINE, &RGB_FLOOR, 0, 1.6, DASH_FLOOR, G_N_ELEMENTS (DASH_FLOOR),
                "dozer floor", NULL);
  legend_entry (cr, lg, KEY_LINE, &RGB_SPOIL, 0, 1.8, DASH_SPOIL, G_N_ELEMENTS (DASH_SPOIL),
                "final spoil line", NULL);
  legend_entry (cr, lg, KEY_PIVOT, NULL, 1.0, 0, NULL, 0,
                d->pivot == SF_PIVOT_LIFTED ? "lifted pivot" : "pivot", NULL);
  if (d->pivot == SF_PIVOT_LIFTED)
    legend_entry (cr, lg, KEY_PIVOT, NULL, 0.0, 0, NULL, 0, "standard pivot", NULL);
}

/* ---- the plan chart ------------------------------------------------------- */

static const char *
strategy_name (const SfDesign *d)
{
  return d->strategy == SF_SLICES_STRAIGHT ? "straight pushes" : "tip-over then layers";
}

gboolean
sf_study_chart_plan (const SfScenario *sc, guint block, const SfStudyOptions *opt,
                     const char *png_path, GError **error)
{
  g_return_val_if_fail (sc != NULL && png_path != NULL, FALSE);
  g_autoptr (SfStudyBlock) sb = sf_study_block_new (sc, block, opt, error);
  if (!sb)
    return FALSE;
  const SfBlockSection *bs = sb->section;
  const SfSlicePlan *plan = sb->plan;
  const SfDesign *d = &sb->design;
  const Grid g = { bs->x0_m, bs->dx_m, bs->n };
  const guint n = bs->n;
  const double lcm2bcm = 1.0 / (1.0 + sc->material.swell);
  const int W = SF_CHART_PLAN_WIDTH_PX, H = SF_CHART_PLAN_HEIGHT_PX;

  /* z extent: the ground and the design, and the natural surface level */
  double z_lo = 0.0, z_hi = 0.0;
  for (guint i = 0; i < n; i++)
    {
      z_lo = MIN (z_lo, MIN (bs->base[i], bs->coal_roof[i]));
      z_hi = MAX (z_hi, bs->surface[i]);
    }
  z_lo -= 4.0;
  z_hi += 8.0;

  cairo_t *cr;
  cairo_surface_t *surf = page_new (W, H, &cr);
  double ve = 1;
  const Frame f = section_frame (92, 84, W - 92 - 380, H - 84 - 104, &g, z_lo, z_hi, &ve);

  double tot_bcm = 0;
  for (guint k = 0; k < plan->slices->len; k++)
    tot_bcm += ((const SfSlice *) g_ptr_array_index (plan->slices, k))->cut_lcm * lcm2bcm;
  g_autofree char *title = fmt ("Block %u cross-section and slice plan  -  scenario '%s'", block,
                                sf_scenario_get_name (sc));
  g_autofree char *subtitle
    = fmt ("%s, %s pivot at x = %.1f m, z = %.1f m; %u slices moving %.0f bcm per %.2f m lane",
           strategy_name (d), d->pivot == SF_PIVOT_LIFTED ? "lifted" : "standard", bs->x_pivot_m,
           bs->z_pivot_m, plan->slices->len, tot_bcm, sc->strip.lane_width_m);
  page_titles (cr, title, subtitle);
  g_autofree char *zlabel = z_axis_label (ve);
  draw_axes (cr, &f, "x across the strip, m (pushes run to the right, towards the void)", zlabel,
             14, 8);

  cairo_save (cr);
  clip_frame (cr, &f);
  /* the ground: base down to the bottom of the frame, loose material on it */
  fill_between (cr, &f, &g, bs->base, NULL, 0, n, &RGB_BASE_FILL, 1.0);
  fill_between (cr, &f, &g, bs->surface, bs->base, 0, n, &RGB_LOOSE, 1.0);

  /* Slice cut bands: each slice's target laid on the ground left by the
   * slices before it, over the cut zone the plan uses (fill left out: the
   * bands show where each slice cuts, the arrows where it goes). */
  g_autofree double *top = g_memdup2 (bs->surface, n * sizeof (double));
  g_autofree gboolean *cuts = g_new0 (gboolean, (gsize) n * plan->slices->len);
  for (guint k = 0; k < plan->slices->len; k++)
    {
      const SfSlice *s = g_ptr_array_index (plan->slices, k);
      guint lim = sf_slice_limit (s, top, n, bs->dx_m);
      guint end = sf_slice_cut_end (s, top, lim, CHART_CUT_TOL_M);
      fill_between (cr, &f, &g, top, s->target, 0, end, slice_rgb (k), 0.6);
      for (guint i = 0; i < end; i++)
        if (top[i] > s->target[i] + CHART_CUT_TOL_M)
          {
            cuts[(gsize) k * n + i] = TRUE;
            top[i] = s->target[i];
          }
    }
  /* their target lines where they cut */
  for (guint k = 0; k < plan->slices->len; k++)
    {
      const SfSlice *s = g_ptr_array_index (plan->slices, k);
      const gboolean *c = cuts + (gsize) k * n;
      for (guint i = 0; i < n;)
        {
          if (!c[i])
            {
              i++;
              continue;
            }
          guint j = i;
          while (j < n && c[j])
            j++;
          stroke_profile (cr, &f, &g, s->target, i, j, slice_rgb (k), 2.0, NULL, 0);
          i = j;
        }
    }

  /* design lines */
  stroke_profile (cr, &f, &g, bs->base, 0, n, &RGB_BASE_LINE, 1.0, NULL, 0);
  stroke_profile (cr, &f, &g, bs->coal_roof, 0, cell_of (&g, bs->x_low_wall_edge_m) + 1,
                  &RGB_ROOF, 1.6, NULL, 0);
  {
    cairo_save (cr);
    set_rgb (cr, &RGB_NATURAL);
    cairo_set_line_width (cr, 1.4);
    cairo_set_dash (cr, DASH_NATURAL, G_N_ELEMENTS (DASH_NATURAL), 0);
    cairo_move_to (cr, f.left, py (&f, 0.0));
    cairo_line_to (cr, f.left + f.width, py (&f, 0.0));
    cairo_stroke (cr);
    cairo_restore (cr);
  }
  draw_floor (cr, &f, &g, bs);
  draw_spoil_line (cr, &f, &g, bs, d);
  stroke_profile (cr, &f, &g, bs->surface, 0, n, &RGB_SURFACE, 2.2, NULL, 0);

  /* push arrows: cut centroid to fill centroid, numbered at the cut */
  for (guint k = 0; k < plan->slices->len; k++)
    {
      const SfSlice *s = g_ptr_array_index (plan->slices, k);
      if (!(s->fill_lcm > 0 && s->cut_lcm > 0))
        continue;
      double u0 = px (&f, s->cut_cx_m), v0 = py (&f, s->cut_cz_m);
      double u1 = px (&f, s->fill_cx_m), v1 = py (&f, s->fill_cz_m);
      cairo_save (cr);
      cairo_set_source_rgba (cr, 0.1, 0.1, 0.1, 0.8);
      cairo_set_line_width (cr, 1.2);
      draw_arrow (cr, u0 + 9, v0, u1, v1, 9);
      const Rgb *c = slice_rgb (k);
      cairo_arc (cr, u0, v0, 9, 0, 2 * G_PI);
      cairo_set_source_rgb (cr, 1, 1, 1);
      cairo_fill_preserve (cr);
      set_rgb (cr, c);
      cairo_set_line_width (cr, 2.0);
      cairo_stroke (cr);
      set_rgb (cr, &RGB_TEXT);
      font (cr, 12, TRUE);
      g_autofree char *num = fmt ("%u", k);
      text_at (cr, u0, v0, 0.5, 0.5, num);
      cairo_restore (cr);
    }
  draw_pivots (cr, &f, bs, d);
  /* place names */
  font (cr, 13, FALSE);
  cairo_set_source_rgb (cr, 0.3, 0.3, 0.3);
  halo_text (cr, f.left + 6, py (&f, 0.0) - 4, 0.0, 1.0, "natural surface level, z = 0");
  halo_text (cr, px (&f, bs->x_highwall_toe_m) + 8, py (&f, bs->coal_roof[cell_of (&g, bs->x_highwall_toe_m)]) + 6,
             0.0, 0.0, "highwall toe");
  cairo_restore (cr);
  draw_frame_box (cr, &f);

  /* legend */
  Legend lg = { f.left + f.width + 28, f.top, W - (f.left + f.width + 28) - 16 };
  legend_heading (cr, &lg, "Ground and design");
  legend_entry (cr, &lg, KEY_GROUND, &RGB_LOOSE, 1.0, 2.2, NULL, 0,
                "post-blast surface, loose ground", NULL);
  legend_entry (cr, &lg, KEY_LINE, &RGB_NATURAL, 0, 1.4, DASH_NATURAL,
                G_N_ELEMENTS (DASH_NATURAL), "natural surface level", NULL);
  legend_entry (cr, &lg, KEY_LINE, &RGB_ROOF, 0, 1.6, NULL, 0, "coal roof", NULL);
  legend_design (cr, &lg, d);
  lg.y += 10;
  legend_heading (cr, &lg, "Slices (per lane; arrow: push)");
  const double room = H - 60.0;
  gboolean two_lines = lg.y + plan->slices->len * 40.0 <= room;
  for (guint k = 0; k < plan->slices->len; k++)
    {
      const SfSlice *s = g_ptr_array_index (plan->slices, k);
      if (lg.y + (two_lines ? 40.0 : 22.0) * 2 > room && k + 1 < plan->slices->len)
        {
          g_autofree char *more = fmt ("... and %u more slices (see the table)",
                                       plan->slices->len - k);
          font (cr, 13, FALSE);
          set_rgb (cr, &RGB_TEXT);
          text_at (cr, lg.x, lg.y, 0.0, 0.0, more);
          break;
        }
      g_autofree char *l1 = fmt ("%u  %s, target grade %.0f %%", k, sf_slice_kind_to_str (s->kind),
                                 100.0 * s->grade);
      g_autofree char *l2 = fmt ("%.0f bcm, push %.0f m at %+.0f %%", s->cut_lcm * lcm2bcm,
                                 s->push_distance_m, 100.0 * s->push_grade);
      if (two_lines)
        legend_entry (cr, &lg, KEY_FILL, slice_rgb (k), 0.6, 2.0, NULL, 0, l1, l2);
      else
        {
          g_autofree char *l = fmt ("%u %s: %.0f bcm, %.0f m", k, sf_slice_kind_to_str (s->kind),
                                    s->cut_lcm * lcm2bcm, s->push_distance_m);
          legend_entry (cr, &lg, KEY_FILL, slice_rgb (k), 0.6, 2.0, NULL, 0, l, NULL);
        }
    }
  return study_page_finish (surf, cr, sc, NULL, W, H, png_path, error);
}

/* ---- the lane chart ------------------------------------------------------- */

gboolean
sf_study_chart_lane (const SfScenario *sc, guint block, guint lane, guint class_index,
                     const SfStudyOptions *opt, const char *png_path, GError **error)
{
  g_return_val_if_fail (sc != NULL && png_path != NULL, FALSE);
  g_autoptr (SfStudyBlock) sb = sf_study_block_new (sc, block, opt, error);
  if (!sb)
    return FALSE;
  g_autoptr (GArray) res = g_array_new (FALSE, TRUE, sizeof (SfSliceResult));
  SfLaneTotals t;
  g_autoptr (SfLane) ln = sf_study_block_work_lane (sc, sb, lane, class_index, res, &t, error);
  if (!ln)
    return FALSE;
  const SfBlockSection *bs = sb->section;
  const SfDesign *d = &sb->design;
  const Grid g = { bs->x0_m, bs->dx_m, bs->n };
  const guint n = bs->n;
  const int W = SF_CHART_LANE_WIDTH_PX, H = SF_CHART_LANE_HEIGHT_PX;

  double z_lo = 0.0, z_hi = 0.0;
  for (guint i = 0; i < n; i++)
    {
      z_lo = MIN (z_lo, MIN (bs->base[i], bs->floor[i]));
      z_hi = MAX (z_hi, MAX (bs->surface[i], ln->z[i]));
    }
  z_lo -= 4.0;
  z_hi += 8.0;

  cairo_t *cr;
  cairo_surface_t *surf = page_new (W, H, &cr);
  const double plot_w = W - 92 - 380;
  double ve = 1;
  const Frame f = section_frame (92, 100, plot_w, 390, &g, z_lo, z_hi, &ve);

  g_autofree char *title = fmt ("Block %u, lane %u worked out  -  scenario '%s'", block, lane,
                                sf_scenario_get_name (sc));
  g_autofree char *subtitle = fmt (
    "one %s dozer, %s, %s pivot; %u pushes, %.0f bcm dumped in %.1f operating h: %.0f bcm per "
    "operating hour",
    sf_scenario_get_class_name (sc, class_index), strategy_name (d),
    d->pivot == SF_PIVOT_LIFTED ? "lifted" : "standard", t.pushes, t.moved_bcm, t.operating_h,
    t.bcm_per_operating_h);
  page_titles (cr, title, subtitle);

  /* ---- top panel: the lane profile ---- */
  set_rgb (cr, &RGB_TEXT);
  font (cr, 15, TRUE);
  text_at (cr, f.left, f.top - 8, 0.0, 1.0, "Lane profile before and after");
  g_autofree char *zlabel = z_axis_label (ve);
  draw_axes (cr, &f, "x across the strip, m (pushes run to the right, towards the void)", zlabel,
             14, 7);
  cairo_save (cr);
  clip_frame (cr, &f);
  fill_between (cr, &f, &g, bs->base, NULL, 0, n, &RGB_BASE_FILL, 1.0);
  fill_between (cr, &f, &g, ln->z, bs->base, 0, n, &RGB_LOOSE, 1.0);
  fill_between (cr, &f, &g, bs->surface, ln->z, 0, n, &RGB_REMOVED, 0.55);
  fill_between (cr, &f, &g, ln->z, bs->surface, 0, n, &RGB_PLACED, 0.55);
  stroke_profile (cr, &f, &g, bs->base, 0, n, &RGB_BASE_LINE, 1.0, NULL, 0);
  draw_floor (cr, &f, &g, bs);
  draw_spoil_line (cr, &f, &g, bs, d);
  stroke_profile (cr, &f, &g, bs->surface, 0, n, &RGB_SURFACE, 1.6, NULL, 0);
  stroke_profile (cr, &f, &g, ln->z, 0, n, &RGB_AFTER, 2.2, NULL, 0);
  draw_pivots (cr, &f, bs, d);
  cairo_restore (cr);
  draw_frame_box (cr, &f);

  const double col_x = f.left + f.width + 88;
  Legend lg = { col_x, f.top - 16, W - col_x - 16 };
  legend_heading (cr, &lg, "Lane profile");
  legend_entry (cr, &lg, KEY_LINE, &RGB_SURFACE, 0, 1.6, NULL, 0, "post-blast surface", NULL);
  legend_entry (cr, &lg, KEY_LINE, &RGB_AFTER, 0, 2.2, NULL, 0, "surface after the lane", NULL);
  legend_entry (cr, &lg, KEY_FILL, &RGB_REMOVED, 0.55, 0, NULL, 0, "cut out", NULL);
  legend_entry (cr, &lg, KEY_FILL, &RGB_PLACED, 0.55, 0, NULL, 0, "dumped", NULL);
  legend_design (cr, &lg, d);

  /* ---- bottom panel: production per slice ---- */
  const guint m = res->len;
  const guint n_plan = sb->plan->slices->len;
  double max_rate = 0, max_push = 0;
  for (guint k = 0; k < m; k++)
    {
      const SfSliceResult *r = &g_array_index (res, SfSliceResult, k);
      max_rate = MAX (max_rate, r->bcm_per_operating_h);
      max_push = MAX (max_push, r->mean_push_m);
    }
  double rs = sf_chart_tick_step (MAX (max_rate, 1.0) * 1.15, 6);
  double ps = sf_chart_tick_step (MAX (max_push, 1.0) * 1.15, 6);
  const Frame b = { 92, 612, plot_w, 230, 0.0, MAX (m, 1u), 0.0,
                    ceil (MAX (max_rate, 1.0) * 1.15 / rs) * rs };
  const double push_hi = ceil (MAX (max_push, 1.0) * 1.15 / ps) * ps;
  Frame bp = b;
  bp.y_lo = 0;
  bp.y_hi = push_hi;

  set_rgb (cr, &RGB_TEXT);
  font (cr, 15, TRUE);
  g_autofree char *ptitle
    = m + 1 == n_plan ? fmt ("Production per slice (slice %u not worked: the lane ended)", m)
      : m < n_plan    ? fmt ("Production per slice (slices %u to %u not worked: the lane ended)",
                             m, n_plan - 1)
                      : g_strdup ("Production per slice");
  text_at (cr, b.left, b.top - 8, 0.0, 1.0, ptitle);
  draw_axes (cr, &b, NULL, "bcm per operating hour", 6, 6);
  draw_right_axis (cr, &b, push_hi, "mean push distance, m", 6);
  const double slot = b.width / MAX (m, 1u);
  const double bw = MIN (0.5 * slot, 120.0);
  for (guint k = 0; k < m; k++)
    {
      const SfSliceResult *r = &g_array_index (res, SfSliceResult, k);
      double u = px (&b, k + 0.5);
      double v = py (&b, r->bcm_per_operating_h);
      cairo_save (cr);
      set_rgba (cr, slice_rgb (r->slice), 0.85);
      cairo_rectangle (cr, u - 0.5 * bw, v, bw, b.top + b.height - v);
      cairo_fill (cr);
      cairo_restore (cr);
      /* labels under the bar: slice and kind, pushes, why it ended early */
      g_autofree char *l1 = fmt ("slice %u", r->slice);
      g_autofree char *l3 = fmt ("%u pushes", r->pushes);
      g_autofree char *l4 = g_strcmp0 (r->end_reason, "done") == 0
                              ? NULL
                              : fmt ("ended: %s", r->end_reason);
      const char *lines[] = { l1, r->kind, l3, l4 };
      double y = b.top + b.height + 6;
      for (gsize i = 0; i < G_N_ELEMENTS (lines) && lines[i]; i++)
        {
          double size = i == 0 ? 13 : 12;
          font (cr, size, i == 0);
          while (size > 8 && text_width (cr, lines[i]) > slot - 6)
            font (cr, --size, i == 0);
          if (i == 0)
            set_rgb (cr, &RGB_TEXT);
          else
            cairo_set_source_rgb (cr, 0.3, 0.3, 0.3);
          text_at (cr, u, y, 0.5, 0.0, lines[i]);
          y += 16;
        }
    }
  /* the mean push distance as a second series on the right axis */
  cairo_save (cr);
  set_rgb (cr, &RGB_PUSH);
  cairo_set_line_width (cr, 1.6);
  gboolean first = TRUE;
  for (guint k = 0; k < m; k++)
    {
      const SfSliceResult *r = &g_array_index (res, SfSliceResult, k);
      if (r->pushes == 0)
        continue;
      double u = px (&b, k + 0.5), v = py (&bp, r->mean_push_m);
      if (first)
        cairo_move_to (cr, u, v);
      else
        cairo_line_to (cr, u, v);
      first = FALSE;
    }
  cairo_stroke (cr);
  for (guint k = 0; k < m; k++)
    {
      const SfSliceResult *r = &g_array_index (res, SfSliceResult, k);
      if (r->pushes == 0)
        continue;
      cairo_arc (cr, px (&b, k + 0.5), py (&bp, r->mean_push_m), 5, 0, 2 * G_PI);
      cairo_fill (cr);
    }
  cairo_restore (cr);
  /* Values last, so that nothing covers them: the bar's value and the
   * dot's distance each take the first of a few places that overlaps
   * neither the other label nor the dot. */
  for (guint k = 0; k < m; k++)
    {
      const SfSliceResult *r = &g_array_index (res, SfSliceResult, k);
      const double u = px (&b, k + 0.5), vb = py (&b, r->bcm_per_operating_h);
      const gboolean dot = r->pushes > 0;
      const double vd = dot ? py (&bp, r->mean_push_m) : -1e6;
      g_autofree char *val = fmt ("%.0f", r->bcm_per_operating_h);
      g_autofree char *dist = fmt ("%.0f m", r->mean_push_m);
      font (cr, 13, TRUE);
      cairo_font_extents_t fe;
      cairo_font_extents (cr, &fe);
      const double h = fe.ascent + fe.descent;
      const double wv = text_width (cr, val);
      font (cr, 13, FALSE);
      const double wd = text_width (cr, dist);
      const Box dot_box = { u - 6, vd - 6, u + 6, vd + 6 };
      Box vals[3] = {
        { u - 0.5 * wv, vb - 3 - h, u + 0.5 * wv, vb - 3 },          /* above, centred */
        { u - 0.5 * wv, vb + 3, u + 0.5 * wv, vb + 3 + h },          /* inside the top */
        { u - 10 - wv, vb - 3 - h, u - 10, vb - 3 },                 /* above, to the left */
      };
      Box dists[3] = {
        { u + 9, vd - 0.5 * h, u + 9 + wd, vd + 0.5 * h },           /* right */
        { u + 9, vd + 6, u + 9 + wd, vd + 6 + h },                   /* right, below */
        { u + 9, vd - 6 - h, u + 9 + wd, vd - 6 },                   /* right, above */
      };
      const guint n_vals = b.top + b.height - vb >= h + 8 ? 3 : 1;
      guint iv = 0, id = 0;
      gboolean found = FALSE;
      for (guint i = 0; i < 3 && !found; i++)
        {
          if (i == 1 && n_vals < 3)
            continue;
          for (guint j = 0; j < 3 && !found; j++)
            if (!dot
                || (!box_overlap (&vals[i], &dists[j]) && !box_overlap (&vals[i], &dot_box)))
              {
                iv = i;
                id = j;
                found = TRUE;
              }
        }
      font (cr, 13, TRUE);
      set_rgb (cr, &RGB_TEXT);
      halo_text (cr, vals[iv].x0, vals[iv].y0, 0.0, 0.0, val);
      if (dot)
        {
          font (cr, 13, FALSE);
          halo_text (cr, dists[id].x0, dists[id].y0, 0.0, 0.0, dist);
        }
    }
  draw_frame_box (cr, &b);

  Legend lb = { col_x, b.top - 16, W - col_x - 16 };
  legend_heading (cr, &lb, "Per slice");
  legend_entry (cr, &lb, KEY_BAR, slice_rgb (0), 0.85, 0, NULL, 0, "bcm per operating hour",
                "(left axis)");
  legend_entry (cr, &lb, KEY_DOT, &RGB_PUSH, 1.0, 1.6, NULL, 0, "mean push distance",
                "(right axis)");
  lb.y += 8;
  legend_heading (cr, &lb, "Lane totals");
  font (cr, 13, FALSE);
  set_rgb (cr, &RGB_TEXT);
  g_autofree char *t1 = fmt ("planned %.0f bcm", t.planned_bcm);
  g_autofree char *t2 = fmt ("uncovered %.0f bcm, left %.0f bcm", t.uncovered_bcm, t.left_bcm);
  g_autofree char *t3 = fmt ("dozer rehandle %.0f bcm", t.rehandled_bcm);
  g_autofree char *t4 = fmt ("over the final spoil line %.0f bcm", t.over_spoil_bcm);
  const char *tl[] = { t1, t2, t3, t4 };
  for (gsize i = 0; i < G_N_ELEMENTS (tl); i++)
    {
      text_at (cr, lb.x, lb.y, 0.0, 0.0, tl[i]);
      lb.y += 19;
    }

  return study_page_finish (surf, cr, sc, NULL, W, H, png_path, error);
}

/* ---- the compare chart: gains along the strip ---------------------------------- */

static const Rgb RGB_GAIN_STRAIGHT = { 0.000, 0.447, 0.698 }; /* blue */
static const Rgb RGB_GAIN_BLADE = { 0.902, 0.624, 0.000 };    /* orange */

gboolean
sf_study_chart_compare (const SfScenario *sc, const SfCompareResult *rows, guint n,
                        guint class_strategy, guint class_a, guint class_b,
                        const char *png_path, GError **error)
{
  g_return_val_if_fail (sc != NULL && png_path != NULL && (rows != NULL || n == 0), FALSE);
  if (n == 0)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_ARGUMENT,
                   "no block to chart in %s", png_path);
      return FALSE;
    }
  const int W = SF_CHART_COMPARE_WIDTH_PX, H = SF_CHART_COMPARE_HEIGHT_PX;
  /* the axis: from the lowest gain (or 0) to the highest (or the top of the
   * upper band), in nice steps */
  double lo = 0.0, hi = 25.0, sum_s = 0, sum_b = 0;
  for (guint i = 0; i < n; i++)
    {
      lo = MIN (lo, MIN (rows[i].straight_gain_net_pct, rows[i].blade_gain_pct));
      hi = MAX (hi, MAX (rows[i].straight_gain_net_pct, rows[i].blade_gain_pct));
      sum_s += rows[i].straight_gain_net_pct;
      sum_b += rows[i].blade_gain_pct;
    }
  double step = sf_chart_tick_step ((hi - lo) * 1.1, 8);
  const Frame f = { 92, 100, W - 92 - 380, H - 100 - 120, -0.5, n - 0.5,
                    floor (lo / step + 1e-9) * step,
                    ceil (hi * 1.1 / step - 1e-9) * step };

  cairo_t *cr;
  cairo_surface_t *surf = page_new (W, H, &cr);
  g_autofree char *title = fmt ("Production gains along the strip  -  scenario '%s'",
                                sf_scenario_get_name (sc));
  g_autofree char *subtitle
    = fmt ("lane 0 of %u block%s; mean gain of straight pushes %+.1f %% (net), of %s over %s "
           "%+.1f %%",
           n, n == 1 ? "" : "s", sum_s / n, sf_scenario_get_class_name (sc, class_a),
           sf_scenario_get_class_name (sc, class_b), sum_b / n);
  page_titles (cr, title, subtitle);

  /* the rules of thumb as bands behind everything */
  cairo_save (cr);
  clip_frame (cr, &f);
  set_rgba (cr, &RGB_GAIN_STRAIGHT, 0.12);
  cairo_rectangle (cr, f.left, py (&f, 15.0), f.width, py (&f, 10.0) - py (&f, 15.0));
  cairo_fill (cr);
  set_rgba (cr, &RGB_GAIN_BLADE, 0.16);
  cairo_rectangle (cr, f.left, py (&f, 25.0), f.width, py (&f, 20.0) - py (&f, 25.0));
  cairo_fill (cr);
  cairo_restore (cr);

  /* blocks along the bottom: label as many as fit */
  draw_axes (cr, &f, NULL, "gain, % of bcm per operating hour", 6, 8);
  set_rgb (cr, &RGB_TEXT);
  font (cr, 13, FALSE);
  const double slot = f.width / n;
  guint every = (guint) MAX (1.0, ceil (34.0 / slot));
  for (guint i = 0; i < n; i += every)
    {
      g_autofree char *s = fmt ("%u", rows[i].block);
      text_at (cr, px (&f, i), f.top + f.height + 8, 0.5, 0.0, s);
    }
  font (cr, 14, FALSE);
  text_at (cr, f.left + 0.5 * f.width, f.top + f.height + 28, 0.5, 0.0, "block");

  /* the bars, two a block */
  cairo_save (cr);
  clip_frame (cr, &f);
  const double bw = MIN (0.38 * slot, 30.0);
  for (guint i = 0; i < n; i++)
    {
      const double v[2] = { rows[i].straight_gain_net_pct, rows[i].blade_gain_pct };
      const Rgb *c[2] = { &RGB_GAIN_STRAIGHT, &RGB_GAIN_BLADE };
      for (int k = 0; k < 2; k++)
        {
          double u = px (&f, i) + (k == 0 ? -bw : 0.0);
          double y0 = py (&f, 0.0), y1 = py (&f, v[k]);
          set_rgba (cr, c[k], 0.9);
          cairo_rectangle (cr, u, MIN (y0, y1), bw, fabs (y1 - y0));
          cairo_fill (cr);
        }
    }
  /* zero line */
  cairo_set_source_rgb (cr, 0.2, 0.2, 0.2);
  cairo_set_line_width (cr, 1.0);
  cairo_move_to (cr, f.left, floor (py (&f, 0.0)) + 0.5);
  cairo_line_to (cr, f.left + f.width, floor (py (&f, 0.0)) + 0.5);
  cairo_stroke (cr);
  cairo_restore (cr);
  draw_frame_box (cr, &f);

  /* legend */
  Legend lg = { f.left + f.width + 28, f.top, W - (f.left + f.width + 28) - 16 };
  legend_heading (cr, &lg, "Gains");
  g_autofree char *s_label = fmt ("straight pushes over tip-over");
  g_autofree char *s_sub = fmt ("and layers, net; one %s",
                                sf_scenario_get_class_name (sc, class_strategy));
  legend_entry (cr, &lg, KEY_BAR, &RGB_GAIN_STRAIGHT, 0.9, 0, NULL, 0, s_label, s_sub);
  g_autofree char *b_label = fmt ("%s", sf_scenario_get_class_name (sc, class_a));
  g_autofree char *b_sub = fmt ("over %s, same slices", sf_scenario_get_class_name (sc, class_b));
  legend_entry (cr, &lg, KEY_BAR, &RGB_GAIN_BLADE, 0.9, 0, NULL, 0, b_label, b_sub);
  lg.y += 10;
  legend_heading (cr, &lg, "Rules of thumb");
  legend_entry (cr, &lg, KEY_FILL, &RGB_GAIN_STRAIGHT, 0.12, 0, NULL, 0,
                "+10 to +15 %: straight pushes", "common practice (no source)");
  legend_entry (cr, &lg, KEY_FILL, &RGB_GAIN_BLADE, 0.16, 0, NULL, 0,
                "+20 to +25 %: carry over U blade", "common practice (no source)");
  lg.y += 10;
  static const char *const notes[] = { "Net: bcm that left the dozing",
                                       "zone for good, per operating",
                                       "hour. Each block's lane 0 pushed",
                                       "out four times by one machine.", NULL };
  legend_notes (cr, &lg, notes);

  return study_page_finish (surf, cr, sc, "block studies", W, H, png_path, error);
}

/* ---- the hand-over chart: where dozing should stop ------------------------------ */

static const Rgb RGB_DOZE = { 0.902, 0.624, 0.000 };   /* orange: the dozer's cost */
static const Rgb RGB_REHANDLE = { 0.60, 0.05, 0.15 };  /* the spoil line's red */
static const Rgb RGB_ALT = { 0.000, 0.447, 0.698 };    /* blue: the alternative */
static const Rgb RGB_TOTAL = { 0.10, 0.10, 0.10 };

gboolean
sf_study_chart_handover (const SfScenario *sc, guint block, guint lane, guint class_index,
                         const SfHandoverSlice *rows, const SfHandoverTotals *t,
                         const char *png_path, GError **error)
{
  g_return_val_if_fail (sc != NULL && t != NULL && png_path != NULL, FALSE);
  const guint n = t->n_slices, nw = t->n_worked;
  if (n == 0 || !rows)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_ARGUMENT, "no slice to chart in %s",
                   png_path);
      return FALSE;
    }
  const int W = SF_CHART_HANDOVER_WIDTH_PX, H = SF_CHART_HANDOVER_HEIGHT_PX;
  cairo_t *cr;
  cairo_surface_t *surf = page_new (W, H, &cr);
  g_autofree char *title = fmt ("Where dozing should stop: block %u, lane %u  -  scenario '%s'",
                                block, lane, sf_scenario_get_name (sc));
  g_autofree char *best
    = t->best_slices == nw ? fmt ("doze every slice the lane reached")
      : t->best_slices == 0 ? fmt ("doze nothing")
      : t->best_slices == 1 ? fmt ("doze slice 0, the %s takes the rest", t->alternative)
                            : fmt ("doze slices 0 to %u, the %s takes the rest", t->best_slices - 1,
                                   t->alternative);
  g_autofree char *subtitle
    = fmt ("one %s dozer at %.0f an operating hour, the %s at %.2f per bcm: least total cost "
           "%.0f (%s)",
           sf_scenario_get_class_name (sc, class_index), t->dozer_cost_per_h, t->alternative,
           t->alt_cost_per_bcm, t->best_total_cost, best);
  page_titles (cr, title, subtitle);

  /* left panel: cost per bcm of each slice, stacked dozer + rehandle */
  double top_u = t->alt_cost_per_bcm;
  for (guint i = 0; i < n; i++)
    if (isfinite (rows[i].unit_cost_per_bcm))
      top_u = MAX (top_u, rows[i].unit_cost_per_bcm);
  double ys = sf_chart_tick_step (top_u * 1.15, 6);
  const double pw = (W - 92 - 80 - 360) / 2.0;
  const Frame f1 = { 92, 110, pw, H - 110 - 120, -0.5, n - 0.5, 0.0,
                     ceil (top_u * 1.15 / ys - 1e-9) * ys };
  set_rgb (cr, &RGB_TEXT);
  font (cr, 15, TRUE);
  text_at (cr, f1.left, f1.top - 10, 0.0, 1.0, "Cost per bcm of each slice");
  draw_axes (cr, &f1, NULL, "cost per bcm of the slice's design volume", 6, 6);
  cairo_save (cr);
  clip_frame (cr, &f1);
  const double slot = f1.width / n, bw = MIN (0.6 * slot, 60.0);
  for (guint i = 0; i < n; i++)
    {
      const SfHandoverSlice *h = &rows[i];
      if (!(h->volume_bcm > 0) || !isfinite (h->dozer_cost))
        continue; /* never dozed: no bar */
      double dz = h->dozer_cost / h->volume_bcm, rh = h->rehandle_cost / h->volume_bcm;
      double u = px (&f1, i) - 0.5 * bw;
      set_rgba (cr, &RGB_DOZE, 0.9);
      cairo_rectangle (cr, u, py (&f1, dz), bw, py (&f1, 0) - py (&f1, dz));
      cairo_fill (cr);
      if (rh > 0)
        {
          set_rgba (cr, &RGB_REHANDLE, 0.85);
          cairo_rectangle (cr, u, py (&f1, dz + rh), bw, py (&f1, dz) - py (&f1, dz + rh));
          cairo_fill (cr);
        }
    }
  set_rgb (cr, &RGB_ALT);
  cairo_set_line_width (cr, 2.5);
  double dash[] = { 8.0, 5.0 };
  cairo_set_dash (cr, dash, 2, 0);
  cairo_move_to (cr, f1.left, py (&f1, t->alt_cost_per_bcm));
  cairo_line_to (cr, f1.left + f1.width, py (&f1, t->alt_cost_per_bcm));
  cairo_stroke (cr);
  cairo_set_dash (cr, NULL, 0, 0);
  cairo_restore (cr);
  draw_frame_box (cr, &f1);
  font (cr, 13, FALSE);
  set_rgb (cr, &RGB_TEXT);
  for (guint i = 0; i < n; i++)
    {
      g_autofree char *s = fmt ("%u", rows[i].slice);
      text_at (cr, px (&f1, i), f1.top + f1.height + 8, 0.5, 0.0, s);
    }
  font (cr, 14, FALSE);
  text_at (cr, f1.left + 0.5 * f1.width, f1.top + f1.height + 28, 0.5, 0.0,
           "slice, in the order dozed");

  /* right panel: total cost of the lane against slices dozed */
  double lo = INFINITY, hi = 0;
  for (guint k = 0; k <= nw; k++)
    {
      double v = k < nw ? rows[k].total_if_stop_here : t->all_dozed_cost;
      lo = MIN (lo, v);
      hi = MAX (hi, v);
    }
  double ts = sf_chart_tick_step (MAX (hi - lo, hi * 0.05) * 1.3, 6);
  const Frame f2 = { f1.left + pw + 80 + 12, 110, pw - 12, f1.height, -0.4, nw + 0.4,
                     MAX (0.0, floor ((lo - 0.15 * (hi - lo + ts)) / ts) * ts),
                     ceil ((hi + 0.1 * (hi - lo + ts)) / ts) * ts };
  set_rgb (cr, &RGB_TEXT);
  font (cr, 15, TRUE);
  text_at (cr, f2.left, f2.top - 10, 0.0, 1.0, "Total cost of the lane");
  draw_axes (cr, &f2, NULL, "cost of the lane", 6, 6);
  cairo_save (cr);
  clip_frame (cr, &f2);
  set_rgb (cr, &RGB_TOTAL);
  cairo_set_line_width (cr, 2.0);
  for (guint k = 0; k <= nw; k++)
    {
      double v = k < nw ? rows[k].total_if_stop_here : t->all_dozed_cost;
      if (k == 0)
        cairo_move_to (cr, px (&f2, k), py (&f2, v));
      else
        cairo_line_to (cr, px (&f2, k), py (&f2, v));
    }
  cairo_stroke (cr);
  for (guint k = 0; k <= nw; k++)
    {
      double v = k < nw ? rows[k].total_if_stop_here : t->all_dozed_cost;
      cairo_arc (cr, px (&f2, k), py (&f2, v), k == t->best_slices ? 7.0 : 4.0, 0, 2 * G_PI);
      if (k == t->best_slices)
        set_rgb (cr, &RGB_ALT);
      else
        set_rgb (cr, &RGB_TOTAL);
      cairo_fill (cr);
    }
  cairo_restore (cr);
  draw_frame_box (cr, &f2);
  font (cr, 13, FALSE);
  set_rgb (cr, &RGB_TEXT);
  for (guint k = 0; k <= nw; k++)
    {
      g_autofree char *s = fmt ("%u", k);
      text_at (cr, px (&f2, k), f2.top + f2.height + 8, 0.5, 0.0, s);
    }
  font (cr, 14, FALSE);
  text_at (cr, f2.left + 0.5 * f2.width, f2.top + f2.height + 28, 0.5, 0.0,
           "slices dozed before the hand-over");
  {
    double v = t->best_total_cost;
    g_autofree char *s = fmt ("least: %.0f", v);
    font (cr, 13, TRUE);
    set_rgb (cr, &RGB_ALT);
    double u = px (&f2, t->best_slices);
    double ha = t->best_slices > nw / 2 ? 1.0 : 0.0;
    halo_text (cr, u + (ha > 0.5 ? -10 : 10), py (&f2, v) - 10, ha, 1.0, s);
  }

  /* legend */
  Legend lg = { f2.left + f2.width + 28, f2.top, W - (f2.left + f2.width + 28) - 16 };
  legend_heading (cr, &lg, "Cost per bcm");
  legend_entry (cr, &lg, KEY_BAR, &RGB_DOZE, 0.9, 0, NULL, 0, "dozer",
                "operating hours x cost per hour");
  legend_entry (cr, &lg, KEY_BAR, &RGB_REHANDLE, 0.85, 0, NULL, 0, "dragline rehandle",
                "dozed over the final spoil line");
  g_autofree char *alt = fmt ("the %s", t->alternative);
  legend_entry (cr, &lg, KEY_LINE, &RGB_ALT, 1.0, 2.5, dash, 2, alt, "its cost per bcm");
  lg.y += 10;
  legend_heading (cr, &lg, "Total of the lane");
  legend_entry (cr, &lg, KEY_DOT, &RGB_TOTAL, 1.0, 2.0, NULL, 0, "slices 0 .. k-1 dozed,",
                "the rest by the alternative");
  lg.y += 10;
  static const char *const notes[] = { "The least total is the answer",
                                       "(incremental analysis). Volumes",
                                       "are the slices' design volumes",
                                       "(the plan's cut).", NULL };
  legend_notes (cr, &lg, notes);

  return study_page_finish (surf, cr, sc, "hand-over study", W, H, png_path, error);
}
