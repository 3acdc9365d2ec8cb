/* SPDX-License-Identifier: MIT
 *
 * sf-slice.c — slice plans and working a lane through them.
 */
#include "sf-slice.h"

#include <math.h>
#include <string.h>
#include "sf-geom.h"
#include "sf-util.h"

/* Cells closer than this to their target count as cut (m). */
#define SF_CUT_TOL_M 0.02
/* A slice is finished when its cut zone holds less than this share of a
 * blade load: the last scraps go with the next slice (common practice, no
 * source). */
#define SF_SLICE_DONE_SHARE 0.25
/* Planning crest rule, the same as the push's dump edge. */
#define SF_PLAN_EDGE_GRADE 0.45
/* ... to at least this far below the slice target (m). */
#define SF_EDGE_BELOW_TARGET_M 0.5
/* Safety stop on pushes per slice per lane (a push that removes something
 * always progresses, so this is never reached on sane input). */
#define SF_MAX_PUSHES_PER_SLICE 100000

const char *
sf_slice_kind_to_str (SfSliceKind k)
{
  switch (k)
    {
    case SF_SLICE_TIPOVER:
      return "tip-over";
    case SF_SLICE_LAYER:
      return "layer";
    case SF_SLICE_STRAIGHT:
      return "straight";
    }
  return "?";
}

static void
slice_free (gpointer p)
{
  SfSlice *s = p;
  g_free (s->target);
  g_free (s);
}

void
sf_slice_plan_free (SfSlicePlan *plan)
{
  if (!plan)
    return;
  g_ptr_array_unref (plan->slices);
  g_free (plan);
}

guint
sf_slice_cut_end (const SfSlice *s, const double *z, guint limit, double tol_m)
{
  for (gint i = (gint) limit; i >= 0; i--)
    if (z[i] > s->target[i] + tol_m)
      return (guint) i + 1;
  return 0;
}

/* First dump edge at or after cell i0: the ground falls away steeper than a
 * drivable grade to below the slice target (a face of uncut material falling
 * onto the cut surface is not an edge). */
static guint
find_edge (const double *z, const double *target, guint n, double dx, guint i0)
{
  const guint m = MAX (1u, (guint) lround (SF_EDGE_RUN_M / dx));
  for (guint i = i0; i + 1 < n; i++)
    {
      guint j = MIN (i + m, n - 1);
      if (sf_heights_is_edge (z, n, dx, i, SF_PLAN_EDGE_GRADE)
          && z[j] < target[j] - SF_EDGE_BELOW_TARGET_M)
        return i;
    }
  return n - 1;
}

guint
sf_slice_limit (const SfSlice *s, const double *z, guint n, double dx_m)
{
  guint e = find_edge (z, s->target, n, dx_m, s->through_pivot ? s->i_pivot : s->i_from);
  return MIN (e, s->i_bound > 0 ? s->i_bound - 1 : 0);
}

typedef struct {
  guint n, i_from, i_pivot, i_bound;
} SliceFrame;

static SfSlice *
slice_new (const SliceFrame *fr, SfSliceKind kind, double grade, gboolean through_pivot)
{
  SfSlice *s = g_new0 (SfSlice, 1);
  s->kind = kind;
  s->grade = grade;
  s->target = g_new (double, fr->n);
  s->through_pivot = through_pivot;
  s->i_from = fr->i_from;
  s->i_pivot = fr->i_pivot;
  s->i_bound = fr->i_bound;
  return s;
}

/* The far side of the slice's fill: past the pivot, beyond any ground that
 * the slice still cuts, the void under the target ends where the ground
 * that stood there before dozing (the previous spoil) rises above the
 * target.  The cut zone never reaches it. */
static void
slice_bound (SfSlice *s, const SfBlockSection *bs)
{
  /* Nothing is cut below the non-erodible ground (the natural surface behind
   * the highwall crest, the highwall face, the coal). */
  for (guint j = 0; j < bs->n; j++)
    s->target[j] = MAX (s->target[j], bs->base[j]);
  guint i = s->i_pivot + 1;
  while (i < bs->n && bs->surface[i] > s->target[i] + SF_CUT_TOL_M)
    i++;
  while (i < bs->n && bs->surface[i] <= s->target[i] + SF_CUT_TOL_M)
    i++;
  s->i_bound = i;
}

/* Applies a slice to the planning surface z: cuts to target, dumps the cut at
 * the crest, and records volumes, centroids and push distance. */
static void
plan_apply (SfSlice *s, const SfBlockSection *bs, double *z, double *before, double w)
{
  const guint n = bs->n;
  const double dx = bs->dx_m;
  guint end = sf_slice_cut_end (s, z, sf_slice_limit (s, z, n, dx), SF_CUT_TOL_M);
  double cx = 0, cz = 0;
  double area = sf_heights_area_between (z, s->target, 0, end, bs->x0_m, dx, &cx, &cz);
  s->cut_lcm = area * w;
  s->cut_cx_m = cx;
  s->cut_cz_m = cz;
  for (guint i = 0; i < end; i++)
    if (z[i] > s->target[i])
      z[i] = s->target[i];
  if (area <= 0)
    return;
  guint crest = find_edge (z, s->target, n, dx, end > 0 ? end - 1 : 0);
  memcpy (before, z, n * sizeof (double));
  guint front = crest;
  /* as the pushes do: straight lines are filled up to the line */
  double unfit = s->kind == SF_SLICE_STRAIGHT && !s->through_pivot
                   ? sf_heights_deposit_capped (z, s->target, n, bs->x0_m, dx, crest, z[crest],
                                                bs->tan_repose, area, &front)
                   : sf_heights_deposit_face (z, n, bs->x0_m, dx, crest, z[crest],
                                              bs->tan_repose, area, &front);
  double fx = 0, fz = 0;
  double fill = sf_heights_area_between (z, before, 0, n, bs->x0_m, dx, &fx, &fz);
  s->fill_lcm = fill * w;
  (void) unfit;
  if (fill > 0)
    {
      s->fill_cx_m = fx;
      s->fill_cz_m = fz;
      s->push_distance_m = fx - cx;
      s->push_grade = s->push_distance_m > 0 ? (fz - cz) / s->push_distance_m : 0.0;
    }
}

SfSlicePlan *
sf_slice_plan_new (const SfBlockSection *bs, const SfDesign *d, double lane_width_m,
                   GError **error)
{
  const guint n = bs->n;
  const double dx = bs->dx_m, x0 = bs->x0_m;
  const double g_c = d->cutoff_grade_pct / 100.0;
  g_autoptr (SfSlicePlan) plan = g_new0 (SfSlicePlan, 1);
  plan->slices = g_ptr_array_new_with_free_func (slice_free);
  plan->n = n;
  plan->lane_width_m = lane_width_m;

  g_autofree double *z = g_memdup2 (bs->surface, n * sizeof (double));
  g_autofree double *before = g_new (double, n);
  const guint i_p = bs->i_pivot;
  const guint i_toe = (guint) CLAMP ((bs->x_highwall_toe_m - x0) / dx, 0, n - 1);
  SliceFrame fr = { n, i_toe, i_p, n };
  /* Where ground first stands above the pivot level past the pivot (the far
   * end of straight lines). */
  guint i_far = n - 1;
  for (guint i = i_p + 1; i < n; i++)
    if (bs->surface[i] > bs->z_pivot_m + SF_CUT_TOL_M)
      {
        i_far = i;
        break;
      }

  /* The cut-off ramp through the pivot; beyond the pivot it keeps falling. */
  g_autofree double *ramp = g_new (double, n);
  for (guint i = 0; i < n; i++)
    {
      double x = x0 + (i + 0.5) * dx;
      ramp[i] = MAX (bs->base[i], bs->z_pivot_m + g_c * (bs->x_pivot_m - x));
      if (i <= i_p)
        ramp[i] = MAX (ramp[i], bs->floor[i]);
    }

  /* The final target left of the pivot is the dozer floor. */
  g_autofree double *floor_b = g_new (double, n);
  for (guint i = 0; i < n; i++)
    floor_b[i] = MAX (bs->floor[i], bs->base[i]);
  plan->dozable_lcm = sf_heights_area_between (bs->surface, floor_b, 0, i_p + 1, x0, dx, NULL,
                                               NULL)
                      * lane_width_m;
  if (d->pivot == SF_PIVOT_LIFTED)
    {
      g_autofree double *std_floor = g_new (double, n);
      for (guint i = 0; i < n; i++)
        std_floor[i] = bs->coal_roof[i] + d->dozer_floor_above_coal_m;
      /* the key: between the ramped floor and the standard floor, under the
       * ground */
      g_autofree double *capped = g_new (double, n);
      for (guint i = 0; i < n; i++)
        capped[i] = MIN (bs->floor[i], bs->surface[i]);
      plan->key_lcm = sf_heights_area_between (capped, std_floor, 0, i_p + 1, x0, dx, NULL, NULL)
                      * lane_width_m;
    }

  if (plan->dozable_lcm <= 0)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_GEOMETRY,
                   "block %u: the ground never stands above the dozer floor on the highwall side "
                   "of the pivot (x = %.1f m): nothing to doze",
                   bs->block, bs->x_pivot_m);
      return NULL;
    }

  if (d->strategy == SF_SLICES_TIPOVER_LAYERS)
    {
      SfSlice *s0 = slice_new (&fr, SF_SLICE_TIPOVER, g_c, FALSE);
      memcpy (s0->target, ramp, n * sizeof (double));
      slice_bound (s0, bs);
      g_ptr_array_add (plan->slices, s0);
      plan_apply (s0, bs, z, before, lane_width_m);
      /* Layers: from the highest ground left on the ramp down to the pivot. */
      double z_top = bs->z_pivot_m;
      for (guint i = 0; i <= i_p; i++)
        if (z[i] > bs->base[i] + SF_CUT_TOL_M)
          z_top = MAX (z_top, MIN (z[i], ramp[i]));
      for (guint k = 1; k <= d->layer_count; k++)
        {
          double level = bs->z_pivot_m + (z_top - bs->z_pivot_m) * (double) (d->layer_count - k)
                                             / (double) d->layer_count;
          SfSlice *s = slice_new (&fr, SF_SLICE_LAYER, 0.0, TRUE);
          for (guint i = 0; i < n; i++)
            s->target[i] = i <= i_p ? MAX (bs->floor[i], MIN (level, ramp[i])) : bs->z_pivot_m;
          if (k == d->layer_count)
            for (guint i = 0; i <= i_p; i++)
              s->target[i] = bs->floor[i];
          slice_bound (s, bs);
          g_ptr_array_add (plan->slices, s);
          plan_apply (s, bs, z, before, lane_width_m);
        }
    }
  else
    {
      /* Straight lines rotating slice by slice: the cut end (at the highwall
       * toe) drops from the top of the ground to the dozer floor while the
       * fill end (at the far side of the void, where ground first stands above
       * the pivot level) rises from the bottom of the void to the pivot level.
       * The pivot of each line (where it crosses the ground) so moves towards
       * the highwall as the strip is worked.  No line is flatter than the
       * flattest push grade (min_push_grade_pct) until the last slice, which
       * is the final design: the floor, then the pivot level. */
      const double g_min = d->min_push_grade_pct / 100.0;
      const double x_a = x0 + (i_toe + 0.5) * dx;
      const guint i_b = i_far > i_p + 1 ? i_far - 1 : MIN (i_p + 1, n - 1);
      const double x_b = x0 + (i_b + 0.5) * dx;
      double z_top = bs->floor[i_toe], z_bot = bs->z_pivot_m;
      for (guint i = i_toe; i <= i_p; i++)
        if (bs->surface[i] > bs->base[i] + SF_CUT_TOL_M)
          z_top = MAX (z_top, bs->surface[i]);
      for (guint i = i_p; i <= i_b; i++)
        z_bot = MIN (z_bot, bs->surface[i]);
      const guint m = d->straight_count;
      for (guint k = 1; k <= m; k++)
        {
          double f = (double) k / (double) m;
          double za = z_top + (bs->floor[i_toe] - z_top) * f;
          double zb = z_bot + (bs->z_pivot_m - z_bot) * f;
          double g = (za - zb) / MAX (x_b - x_a, dx);
          if (k < m && g < g_min)
            {
              g = g_min;
              zb = za - g * (x_b - x_a);
            }
          SfSlice *s = slice_new (&fr, SF_SLICE_STRAIGHT, g, k == m);
          for (guint i = 0; i < n; i++)
            {
              double x = x0 + (i + 0.5) * dx;
              double line = za - g * (x - x_a);
              s->target[i] = i <= i_p ? MAX (bs->floor[i], line) : MAX (bs->base[i], line);
            }
          if (k == m)
            for (guint i = 0; i < n; i++)
              s->target[i] = i <= i_p ? bs->floor[i] : bs->z_pivot_m;
          slice_bound (s, bs);
          g_ptr_array_add (plan->slices, s);
          plan_apply (s, bs, z, before, lane_width_m);
        }
    }
  for (guint k = 0; k < plan->slices->len; k++)
    ((SfSlice *) g_ptr_array_index (plan->slices, k))->index = k;
  return g_steal_pointer (&plan);
}

/* The final design inside the dozing zone: left of the pivot the last
 * slice's target, past the pivot (out to the tip-over limit) the tip-over
 * target; beyond the zone +inf. */
void
sf_slice_plan_final (const SfSlicePlan *plan, guint lim0, double *final, guint n)
{
  const SfSlice *s0 = g_ptr_array_index (plan->slices, 0);
  const SfSlice *last = g_ptr_array_index (plan->slices, plan->slices->len - 1);
  for (guint i = 0; i < n; i++)
    final[i] = i > lim0 ? INFINITY : i <= last->i_pivot ? last->target[i] : s0->target[i];
}

guint
sf_slice_plan_zone_end (const SfSlicePlan *plan, const SfLane *lane)
{
  const SfSlice *s0 = g_ptr_array_index (plan->slices, 0);
  return MAX (sf_slice_limit (s0, lane->z, lane->n, lane->dx_m), s0->i_pivot);
}

void
sf_lane_account (const double *z0, const double *z1, const double *final, guint n, double cell_m3,
                 SfLaneAccount *acc)
{
  memset (acc, 0, sizeof *acc);
  for (guint i = 0; i < n; i++)
    {
      if (isinf (final[i]))
        {
          acc->moved_lcm += (z1[i] - z0[i]) * cell_m3;
          continue;
        }
      acc->planned_lcm += MAX (0.0, z0[i] - final[i]) * cell_m3;
      acc->left_lcm += MAX (0.0, z1[i] - final[i]) * cell_m3;
      acc->dropped_lcm += (MIN (z1[i], final[i]) - MIN (z0[i], final[i])) * cell_m3;
    }
}

void
sf_lane_cursor_init (SfLaneCursor *c, const SfSlicePlan *plan, SfLane *lane)
{
  memset (c, 0, sizeof *c);
  c->plan = plan;
  c->lane = lane;
  c->best_left = INFINITY;
  c->end_reason = "done";
}

SfStepKind
sf_lane_cursor_step (SfLaneCursor *c, const SfPushMachine *pm, SfPushResult *pr)
{
  const guint n_slices = c->plan->slices->len;
  if (c->slice >= n_slices)
    return SF_STEP_LANE_DONE;
  SfLane *lane = c->lane;
  const SfSlice *s = g_ptr_array_index (c->plan->slices, c->slice);
  const char *reason = NULL;
  if (c->pushes_in_slice >= SF_MAX_PUSHES_PER_SLICE)
    reason = "push limit";
  else
    {
      guint limit = sf_slice_limit (s, lane->z, lane->n, lane->dx_m);
      guint end = sf_slice_cut_end (s, lane->z, limit, SF_CUT_TOL_M);
      SfPushSpec spec = { s->target, end, SF_CUT_TOL_M, SF_SLICE_DONE_SHARE * pm->blade_lcm,
                          s->through_pivot || s->kind == SF_SLICE_STRAIGHT,
                          s->kind == SF_SLICE_STRAIGHT && !s->through_pivot };
      switch (sf_push_cycle (pm, lane, &spec, pr))
        {
        case SF_PUSH_DONE:
          {
            c->pushes_in_slice++;
            /* Watchdog: material dropped where traction runs out can be
             * pushed back and forth without ever reaching the dump. */
            double left = sf_lane_volume_above (lane, s->target, 0, end);
            if (left < c->best_left - 0.01 * pm->blade_lcm)
              {
                c->best_left = left;
                c->since_best = 0;
                return SF_STEP_PUSHED;
              }
            if (++c->since_best <= 200)
              return SF_STEP_PUSHED;
            /* this push counts; the slice ends after it */
            c->end_reason = "no progress";
            c->slice = n_slices;
            return SF_STEP_PUSHED;
          }
        case SF_PUSH_NOTHING_LEFT:
          reason = "done";
          break;
        case SF_PUSH_STALLED:
          reason = "cannot cut";
          break;
        case SF_PUSH_NO_ROOM:
          reason = "no dump room";
          break;
        }
    }
  c->end_reason = reason;
  c->pushes_in_slice = 0;
  c->best_left = INFINITY;
  c->since_best = 0;
  /* A slice that ran out of dump room hands over to the next, whose fill
   * reaches higher; the last one, or one that cannot cut, ends the lane. */
  if (g_strcmp0 (reason, "done") == 0 || (g_strcmp0 (reason, "no dump room") == 0 && !s->through_pivot))
    c->slice++;
  else
    c->slice = n_slices;
  return c->slice >= n_slices ? SF_STEP_LANE_DONE : SF_STEP_SLICE_DONE;
}

static void
slice_result_finish (SfSliceResult *r, double fprod, double lcm2bcm, double load_sum,
                     double push_sum, double t_sum)
{
  r->moved_bcm = r->deposited_lcm * lcm2bcm;
  r->operating_h = t_sum / 3600.0 / fprod;
  r->bcm_per_operating_h = r->operating_h > 0 ? r->moved_bcm / r->operating_h : 0.0;
  if (r->pushes > 0)
    {
      r->mean_load_lcm = load_sum / r->pushes;
      r->mean_push_m = push_sum / r->pushes;
      r->mean_cycle_min = t_sum / r->pushes / 60.0;
    }
}

void
sf_lane_work (const SfPushMachine *pm, SfLane *lane, const SfSlicePlan *plan,
              const SfFactors *factors, double swell, GArray *out, SfLaneTotals *totals,
              SfPushObserver push_cb, gpointer user_data)
{
  const double fprod = sf_factors_product (factors);
  const double lcm2bcm = 1.0 / (1.0 + swell);
  const guint n = lane->n;
  /* Loose volume of the lane: it must not change (every push conserves it). */
  double sum0 = 0;
  for (guint i = 0; i < n; i++)
    sum0 += lane->z[i] - lane->base[i];
  memset (totals, 0, sizeof *totals);
  const guint lim0 = sf_slice_plan_zone_end (plan, lane);
  g_autofree double *final = g_new (double, n);
  g_autofree double *z0 = g_memdup2 (lane->z, n * sizeof (double));
  sf_slice_plan_final (plan, lim0, final, n);

  SfLaneCursor cur;
  sf_lane_cursor_init (&cur, plan, lane);
  guint k = 0;
  SfSliceResult r = { 0 };
  double load_sum = 0, push_sum = 0, t_sum = 0;
  for (;;)
    {
      if (r.pushes == 0 && !r.kind)
        {
          r.slice = k;
          r.kind = sf_slice_kind_to_str (((SfSlice *) g_ptr_array_index (plan->slices, k))->kind);
        }
      SfPushResult pr;
      SfStepKind st = sf_lane_cursor_step (&cur, pm, &pr);
      if (st == SF_STEP_PUSHED)
        {
          if (push_cb)
            push_cb (&pr, k, user_data);
          r.pushes++;
          r.removed_lcm += pr.removed_lcm;
          r.deposited_lcm += pr.deposited_lcm;
          r.dropped_lcm += pr.dropped_lcm;
          r.spilled_lcm += pr.spilled_lcm;
          r.rehandled_lcm += pr.rehandled_lcm;
          r.over_spoil_lcm += pr.over_spoil_lcm;
          load_sum += pr.deposited_lcm;
          push_sum += pr.x_dump_m - pr.x_start_m;
          t_sum += pr.t_cycle_s;
          if (cur.slice == k)
            continue;
        }
      /* the slice k ended */
      r.end_reason = cur.end_reason;
      slice_result_finish (&r, fprod, lcm2bcm, load_sum, push_sum, t_sum);
      g_array_append_val (out, r);
      totals->pushes += r.pushes;
      totals->moved_bcm += r.moved_bcm;
      totals->rehandled_bcm += r.rehandled_lcm * lcm2bcm;
      totals->over_spoil_bcm += r.over_spoil_lcm * lcm2bcm;
      totals->operating_h += r.operating_h;
      if (cur.slice >= plan->slices->len)
        break;
      k = cur.slice;
      memset (&r, 0, sizeof r);
      load_sum = push_sum = t_sum = 0;
    }
  totals->bcm_per_operating_h = totals->operating_h > 0 ? totals->moved_bcm / totals->operating_h
                                                        : 0.0;
  totals->key_bcm = plan->key_lcm * lcm2bcm;
  SfLaneAccount acc;
  sf_lane_account (z0, lane->z, final, n, lane->dx_m * lane->width_m, &acc);
  totals->planned_bcm = acc.planned_lcm * lcm2bcm;
  totals->left_bcm = acc.left_lcm * lcm2bcm;
  totals->uncovered_bcm = totals->planned_bcm - totals->left_bcm;
  totals->moved_out_bcm = acc.moved_lcm * lcm2bcm;
  totals->dropped_in_zone_bcm = acc.dropped_lcm * lcm2bcm;
  double sum1 = 0;
  for (guint i = 0; i < n; i++)
    sum1 += lane->z[i] - lane->base[i];
  totals->lane_volume_error = fabs (sum1 - sum0) / MAX (fabs (sum0), 1e-300);
}
