/* SPDX-License-Identifier: MIT
 *
 * sf-section.c — block cross-sections and their push design.
 *
 * Generated sections (docs/model.md §2).  With x = 0 at the highwall crest
 * and z = 0 at the natural surface:
 *   highwall toe      x_t = T / tan(a_hw)                 (T overburden)
 *   coal roof         roof(x) = -T - (x - x_t) tan(dip)
 *   low-wall edge     x_w = x_t + W_s                      (W_s strip width)
 *   previous floor    roof(x) - t_coal for x >= x_w
 *   previous spoil    rises at the angle of repose from x_w + W_s, up to h_ps
 * The overburden block of the strip is the parallelogram between the new
 * highwall face and the old one (the face of the previous strip); its bank
 * area A_b comes from the shoelace formula, its loose area is
 * A_l = A_b (1 + swell).  The blast leaves a surface
 *   s(x) = max(base(x), min(z_h - g_m (x - x_t), z_fl + (x_f - x) tan(a_r)))
 * — a muckpile top falling at the muckpile grade g_m from the highwall and
 * an outer face at the angle of repose a_r — whose two unknowns (z_h, x_f)
 * are solved so that the loose area above the base is A_l and the share of
 * it beyond the low-wall edge is the cast fraction.  Both areas are monotone
 * in each unknown, so nested bisection converges without fail.
 */
#include "sf-section.h"

#include <math.h>
#include "sf-util.h"

#define BISECT_ITERS 80
/* Watchdog on settling a block's surface at the angle of repose
 * (sf_heights_relax_max): pair moves allowed before the section is refused.
 * The demo strip needs at most 1.7e7 at 0.5 m cells and 5e8 at 0.1 m; the
 * cost grows with the square of the over-steep length in cells, and 1e9
 * moves take some 5 s (optimised build).  Fuzzing builds set a smaller
 * budget (meson.build) so that every input ends in seconds under the
 * sanitizers. */
#ifndef SF_SETTLE_MAX_MOVES
#define SF_SETTLE_MAX_MOVES 1000000000
#endif
#define SETTLE_MAX_MOVES ((guint64) (SF_SETTLE_MAX_MOVES))

typedef struct {
  const SfSectionParams *p;
  double tan_r;
  double x_w, z_fl_w, x_t;
  double x0, dx;
  guint n;
  const double *base;
  double *surface;
} GenCtx;

/* Fills ctx->surface for (z_h, x_f) and returns the total loose area; the
 * area beyond the low-wall edge goes to *cast. */
static double
gen_fill (GenCtx *g, double z_h, double x_f, double *cast)
{
  double total = 0, beyond = 0;
  double gm = g->p->muckpile_grade_pct / 100.0;
  for (guint i = 0; i < g->n; i++)
    {
      double x = g->x0 + (i + 0.5) * g->dx;
      double top = z_h - gm * (x - g->x_t);
      double face = g->z_fl_w + (x_f - x) * g->tan_r;
      /* behind the highwall crest the ground is undisturbed */
      double s = x <= 0 ? g->base[i] : MAX (g->base[i], MIN (top, face));
      g->surface[i] = s;
      double a = (s - g->base[i]) * g->dx;
      total += a;
      if (x >= g->x_w)
        beyond += a;
    }
  if (cast)
    *cast = beyond;
  return total;
}

/* z_h giving the loose area `target` for face position x_f; FALSE when even
 * an unbounded muckpile cannot hold it in front of that face. */
static gboolean
gen_solve_zh (GenCtx *g, double x_f, double target, double *z_h)
{
  double lo = -10.0 * g->p->overburden_m - 1000.0;
  double hi = 10.0 * g->p->overburden_m + 1000.0;
  if (gen_fill (g, hi, x_f, NULL) < target)
    return FALSE;
  for (int it = 0; it < BISECT_ITERS; it++)
    {
      double mid = 0.5 * (lo + hi);
      if (gen_fill (g, mid, x_f, NULL) < target)
        lo = mid;
      else
        hi = mid;
    }
  *z_h = hi;
  return TRUE;
}

gboolean
sf_section_generate (const SfSectionParams *p, const SfMaterial *m, double x0_m, double dx_m,
                     guint n, double *surface, double *base, double *coal_roof, double *x_toe_m,
                     double *x_edge_m, double *bank_area_m2, double *cast_area_m2,
                     GError **error)
{
  const double T = p->overburden_m;
  const double tan_hw = tan (sf_deg2rad (p->highwall_deg));
  const double tan_dip = tan (sf_deg2rad (p->dip_deg));
  const double tan_r = tan (sf_deg2rad (m->repose_deg));
  const double x_t = T / tan_hw;
  const double x_w = x_t + p->strip_width_m;
  const double x_ps = x_w + p->strip_width_m;
#define ROOF(x) (-T - ((x) - x_t) * tan_dip)
  const double z_fl_w = ROOF (x_w) - p->coal_thickness_m;
  const double z_fl_ps = ROOF (x_ps) - p->coal_thickness_m;

  if (x0_m > -1.0 || x0_m + n * dx_m < x_ps + 1.0)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_GEOMETRY,
                   "the section range [%.1f, %.1f] m must hold the highwall crest at x = 0 and "
                   "reach past the previous spoil toe at x = %.1f m",
                   x0_m, x0_m + n * dx_m, x_ps);
      return FALSE;
    }

  for (guint i = 0; i < n; i++)
    {
      double x = x0_m + (i + 0.5) * dx_m;
      double roof = ROOF (x);
      coal_roof[i] = roof;
      double b;
      if (x <= 0)
        b = 0.0;
      else if (x < x_t)
        b = MAX (-x * tan_hw, roof);
      else if (x < x_w)
        b = roof;
      else
        {
          double fl = roof - p->coal_thickness_m;
          double sp = MIN (z_fl_ps + (x - x_ps) * tan_r, p->prev_spoil_height_m);
          b = MAX (fl, sp);
        }
      base[i] = b;
    }

  /* Bank area of the overburden block: shoelace over its four corners. */
  const double z_w = ROOF (x_w);
  SfPoint block[4] = {
    { 0.0, 0.0 },
    { x_w + z_w / tan_hw, 0.0 }, /* old crest: the old face rises from (x_w, z_w) */
    { x_w, z_w },
    { x_t, -T },
  };
  const double bank = fabs (sf_poly_area (block, 4));
  const double loose = bank * (1.0 + m->swell);
  const double cast_target = p->cast_fraction * loose;

  GenCtx g = { p, tan_r, x_w, z_fl_w, x_t, x0_m, dx_m, n, base, surface };
  const double xf_hi = x0_m + n * dx_m;
  double xf_lo = x_t;
  double z_h = 0;
  if (!gen_solve_zh (&g, xf_hi, loose, &z_h))
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_GEOMETRY,
                   "the blasted overburden (%.0f m2 loose) does not fit in the section range; "
                   "extend section_x_max_m",
                   loose);
      return FALSE;
    }
  /* Smallest feasible face position. */
  double a = xf_lo, b = xf_hi;
  if (!gen_solve_zh (&g, a, loose, &z_h))
    {
      for (int it = 0; it < BISECT_ITERS; it++)
        {
          double mid = 0.5 * (a + b);
          if (gen_solve_zh (&g, mid, loose, &z_h))
            b = mid;
          else
            a = mid;
        }
      a = b;
    }
  double cast = 0;
  gen_solve_zh (&g, a, loose, &z_h);
  gen_fill (&g, z_h, a, &cast);
  if (cast > cast_target + 1e-6 * loose)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_GEOMETRY,
                   "cast_fraction %.2f cannot be met with muckpile_grade_pct %.1f: the muckpile "
                   "face alone throws %.0f %% of the overburden into the void; raise "
                   "cast_fraction or lower muckpile_grade_pct",
                   p->cast_fraction, p->muckpile_grade_pct, 100.0 * cast / loose);
      return FALSE;
    }
  gen_fill (&g, z_h, xf_hi, &cast);
  gen_solve_zh (&g, xf_hi, loose, &z_h);
  gen_fill (&g, z_h, xf_hi, &cast);
  if (cast < cast_target)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_GEOMETRY,
                   "cast_fraction %.2f does not fit in the section range; extend "
                   "section_x_max_m",
                   p->cast_fraction);
      return FALSE;
    }
  b = xf_hi;
  for (int it = 0; it < BISECT_ITERS; it++)
    {
      double mid = 0.5 * (a + b);
      gen_solve_zh (&g, mid, loose, &z_h);
      gen_fill (&g, z_h, mid, &cast);
      if (cast < cast_target)
        a = mid;
      else
        b = mid;
    }
  gen_solve_zh (&g, b, loose, &z_h);
  gen_fill (&g, z_h, b, &cast);

  *x_toe_m = x_t;
  *x_edge_m = x_w;
  *bank_area_m2 = bank;
  *cast_area_m2 = cast;
#undef ROOF
  return TRUE;
}

/* Cross-section of one given spec on the grid. */
typedef struct {
  double *surface, *base, *roof;
  double x_toe, x_edge, bank, cast, coal_m;
  double coal_m_est;  /* coal_m from the neighbours along strike when not given */
} Sampled;

static void
sampled_clear (Sampled *s)
{
  g_free (s->surface);
  g_free (s->base);
  g_free (s->roof);
}

static gboolean
sample_spec (const SfScenario *sc, const SfSectionSpec *spec, Sampled *out, GError **error)
{
  const SfStrip *st = &sc->strip;
  guint n = (guint) llround ((st->x_max_m - st->x_min_m) / st->cell_m);
  out->surface = g_new (double, n);
  out->base = g_new (double, n);
  out->roof = g_new (double, n);
  out->bank = out->cast = out->coal_m = 0;
  if (spec->kind == SF_SECTION_GENERATED)
    {
      out->coal_m = spec->params.coal_thickness_m;
      GError *e = NULL;
      if (!sf_section_generate (&spec->params, &sc->material, st->x_min_m, st->cell_m, n,
                                out->surface, out->base, out->roof, &out->x_toe, &out->x_edge,
                                &out->bank, &out->cast, &e))
        {
          g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_GEOMETRY, "%s: %s",
                       spec->source ? spec->source : "section", e->message);
          g_error_free (e);
          return FALSE;
        }
      return TRUE;
    }
  SfProfile prof = { st->x_min_m, st->cell_m, n, out->surface };
  sf_profile_sample_polyline (&prof, &g_array_index (spec->surface, SfPoint, 0),
                              spec->surface->len);
  prof.z = out->roof;
  sf_profile_sample_polyline (&prof, &g_array_index (spec->coal_roof, SfPoint, 0),
                              spec->coal_roof->len);
  out->x_toe = spec->highwall_toe_x_m;
  out->x_edge = spec->low_wall_edge_x_m;
  out->coal_m = spec->coal_thickness_m;
  for (guint i = 0; i < n; i++)
    {
      double x = st->x_min_m + (i + 0.5) * st->cell_m;
      out->base[i] = x < out->x_toe ? out->surface[i] : MIN (out->surface[i], out->roof[i]);
    }
  return TRUE;
}

struct _SfSectionSet {
  guint n;          /* given sections */
  Sampled *sampled; /* one per given section, in scenario order */
};

void
sf_section_set_free (SfSectionSet *set)
{
  if (!set)
    return;
  for (guint k = 0; k < set->n; k++)
    sampled_clear (&set->sampled[k]);
  g_free (set->sampled);
  g_free (set);
}

SfSectionSet *
sf_section_set_new (const SfScenario *sc, GError **error)
{
  SfSectionSet *set = g_new0 (SfSectionSet, 1);
  set->n = sc->sections->len;
  set->sampled = g_new0 (Sampled, set->n);
  for (guint k = 0; k < set->n; k++)
    if (!sample_spec (sc, g_ptr_array_index (sc->sections, k), &set->sampled[k], error))
      {
        sf_section_set_free (set);
        return NULL;
      }
  /* A surveyed section without a seam thickness takes it from the nearest
   * given sections along strike that have one: linear in the block index
   * between two, the nearest one's beyond the last (sections are sorted by
   * block).  With none at all it stays unknown (0). */
  for (guint k = 0; k < set->n; k++)
    {
      if (set->sampled[k].coal_m > 0)
        continue;
      int p = (int) k - 1, q = (int) k + 1;
      while (p >= 0 && !(set->sampled[p].coal_m > 0))
        p--;
      while (q < (int) set->n && !(set->sampled[q].coal_m > 0))
        q++;
      /* only given thicknesses count: fill from the specs, not from sections
       * filled in this loop */
      const SfSectionSpec *sk = g_ptr_array_index (sc->sections, k);
      if (p >= 0 && q < (int) set->n)
        {
          const SfSectionSpec *sp = g_ptr_array_index (sc->sections, p);
          const SfSectionSpec *sq = g_ptr_array_index (sc->sections, q);
          double w = (double) (sk->block - sp->block) / (double) (sq->block - sp->block);
          set->sampled[k].coal_m_est = (1 - w) * set->sampled[p].coal_m + w * set->sampled[q].coal_m;
        }
      else if (p >= 0)
        set->sampled[k].coal_m_est = set->sampled[p].coal_m;
      else if (q < (int) set->n)
        set->sampled[k].coal_m_est = set->sampled[q].coal_m;
    }
  for (guint k = 0; k < set->n; k++)
    if (!(set->sampled[k].coal_m > 0))
      set->sampled[k].coal_m = set->sampled[k].coal_m_est;
  return set;
}

void
sf_block_section_free (SfBlockSection *bs)
{
  if (!bs)
    return;
  g_free (bs->surface);
  g_free (bs->base);
  g_free (bs->coal_roof);
  g_free (bs->floor);
  g_free (bs);
}

/* Linear interpolation on the sampled coal roof between cell centres. */
static double
roof_at (const SfBlockSection *bs, double x)
{
  double u = (x - bs->x0_m) / bs->dx_m - 0.5;
  if (u <= 0)
    return bs->coal_roof[0];
  if (u >= bs->n - 1)
    return bs->coal_roof[bs->n - 1];
  guint i = (guint) u;
  double f = u - i;
  return bs->coal_roof[i] * (1 - f) + bs->coal_roof[i + 1] * f;
}

double
sf_block_section_spoil_line (const SfBlockSection *bs, double x)
{
  return bs->z_pivot_std_m + (x - bs->x_pivot_std_m) * bs->tan_repose;
}

SfBlockSection *
sf_block_section_new (const SfScenario *sc, guint block, GError **error)
{
  g_return_val_if_fail (sc != NULL, NULL);
  if (block >= sc->strip.n_blocks)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_ARGUMENT,
                   "block %u does not exist: the strip has blocks 0 to %u", block,
                   sc->strip.n_blocks - 1);
      return NULL;
    }
  g_autoptr (SfSectionSet) set = sf_section_set_new (sc, error);
  if (!set)
    return NULL;
  return sf_block_section_new_from_set (set, sc, block, error);
}

SfBlockSection *
sf_block_section_new_from_set (const SfSectionSet *set, const SfScenario *sc, guint block,
                               GError **error)
{
  g_return_val_if_fail (sc != NULL && set != NULL, NULL);
  if (block >= sc->strip.n_blocks)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_ARGUMENT,
                   "block %u does not exist: the strip has blocks 0 to %u", block,
                   sc->strip.n_blocks - 1);
      return NULL;
    }
  g_return_val_if_fail (sc->sections->len > 0, NULL);

  /* Nearest given sections at or below and at or above the block. */
  gint ilo = -1, ihi = -1;
  for (guint k = 0; k < sc->sections->len; k++)
    {
      const SfSectionSpec *s = g_ptr_array_index (sc->sections, k);
      if (s->block <= block)
        ilo = (gint) k;
      if (s->block >= block && ihi < 0)
        ihi = (gint) k;
    }
  if (ilo < 0)
    ilo = ihi;
  if (ihi < 0)
    ihi = ilo;
  const SfSectionSpec *lo = g_ptr_array_index (sc->sections, ilo);
  const SfSectionSpec *hi = g_ptr_array_index (sc->sections, ihi);
  const Sampled *a = &set->sampled[ilo], *b = &set->sampled[ihi];

  const SfStrip *st = &sc->strip;
  g_autoptr (SfBlockSection) bs = g_new0 (SfBlockSection, 1);
  bs->block = block;
  bs->n = (guint) llround ((st->x_max_m - st->x_min_m) / st->cell_m);
  bs->x0_m = st->x_min_m;
  bs->dx_m = st->cell_m;
  bs->tan_repose = tan (sf_deg2rad (sc->material.repose_deg));

  double w = (hi != lo) ? (double) (block - lo->block) / (double) (hi->block - lo->block) : 0.0;
  bs->surface = g_new (double, bs->n);
  bs->base = g_new (double, bs->n);
  bs->coal_roof = g_new (double, bs->n);
  for (guint i = 0; i < bs->n; i++)
    {
      bs->surface[i] = (1 - w) * a->surface[i] + w * b->surface[i];
      bs->base[i] = (1 - w) * a->base[i] + w * b->base[i];
      bs->coal_roof[i] = (1 - w) * a->roof[i] + w * b->roof[i];
    }
  bs->x_highwall_toe_m = (1 - w) * a->x_toe + w * b->x_toe;
  bs->x_low_wall_edge_m = (1 - w) * a->x_edge + w * b->x_edge;
  bs->bank_area_m2 = (1 - w) * a->bank + w * b->bank;
  bs->cast_area_m2 = (1 - w) * a->cast + w * b->cast;
  bs->coal_thickness_m = a->coal_m > 0 && b->coal_m > 0 ? (1 - w) * a->coal_m + w * b->coal_m
                                                        : MAX (a->coal_m, b->coal_m);
  /* Loose ground cannot stand steeper than its angle of repose: surveyed or
   * interpolated strings that do (by survey roughness, say) settle first. */
  gboolean settled = TRUE;
  sf_heights_relax_max (bs->surface, bs->base, bs->n, bs->dx_m, bs->tan_repose, 0, bs->n, 1e-9,
                        SETTLE_MAX_MOVES, NULL, NULL, &settled);
  if (!settled)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_GEOMETRY,
                   "block %u: the loose ground does not settle at the angle of repose within "
                   "%.0e cell moves: it stands far steeper than %g deg over a long stretch "
                   "(is highwall_toe_x_m where the highwall face ends?); a coarser strip.cell_m "
                   "than %g m also settles faster",
                   block, (double) SETTLE_MAX_MOVES, sc->material.repose_deg, bs->dx_m);
      return NULL;
    }

  /* Standard pivot: the final spoil line rises from the low-wall toe (the
   * far edge of this strip's coal + toe offset, on the coal roof) away from
   * the highwall at the angle of repose; the pivot is where it meets the
   * dozer floor (coal roof + floor height).  Spoil on the highwall side of
   * that line lies where the next fleet must dig it again. */
  const SfDesign *d = &sc->design;
  const double x_q = bs->x_low_wall_edge_m + d->spoil_toe_offset_m;
  const double z_q = roof_at (bs, x_q);
  const double x_end = bs->x0_m + bs->n * bs->dx_m;
#define GAP(x) (z_q + ((x) - x_q) * bs->tan_repose - (roof_at (bs, (x)) + d->dozer_floor_above_coal_m))
  double xa = x_q, xb = x_end;
  if (!(GAP (xa) < 0) || !(GAP (xb) >= 0))
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_GEOMETRY,
                   "block %u: the final spoil line from the low-wall toe at x = %.1f m does not "
                   "meet the dozer floor (%.1f m above coal) inside the section (to x = %.1f m); "
                   "extend section_x_max_m or lower dozer_floor_above_coal_m",
                   block, x_q, d->dozer_floor_above_coal_m, x_end);
      return NULL;
    }
  for (int it = 0; it < BISECT_ITERS; it++)
    {
      double mid = 0.5 * (xa + xb);
      if (GAP (mid) < 0)
        xa = mid;
      else
        xb = mid;
    }
#undef GAP
  bs->x_pivot_std_m = 0.5 * (xa + xb);
  bs->z_pivot_std_m = roof_at (bs, bs->x_pivot_std_m) + d->dozer_floor_above_coal_m;
  bs->x_pivot_m = bs->x_pivot_std_m;
  bs->z_pivot_m = bs->z_pivot_std_m;
  if (d->pivot == SF_PIVOT_LIFTED)
    bs->z_pivot_m += d->pivot_lift_m;
  bs->i_pivot = (guint) CLAMP ((bs->x_pivot_m - bs->x0_m) / bs->dx_m, 0, bs->n - 1);

  /* Dozer floor: coal roof + floor height; a lifted pivot adds a ramp rising
   * to it at the ramp grade (the key left under the lifted pivot). */
  bs->floor = g_new (double, bs->n);
  const double g_ramp = d->lift_ramp_grade_pct / 100.0;
  for (guint i = 0; i < bs->n; i++)
    {
      double x = bs->x0_m + (i + 0.5) * bs->dx_m;
      double f = bs->coal_roof[i] + d->dozer_floor_above_coal_m;
      if (d->pivot == SF_PIVOT_LIFTED && x <= bs->x_pivot_m)
        f = MAX (f, bs->z_pivot_m - (bs->x_pivot_m - x) * g_ramp);
      bs->floor[i] = f;
    }
  if (bs->surface[bs->i_pivot] < bs->floor[bs->i_pivot] - 50.0)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_GEOMETRY,
                   "block %u: the pivot at x = %.1f m lies more than 50 m above the ground",
                   block, bs->x_pivot_m);
      return NULL;
    }
  return g_steal_pointer (&bs);
}
