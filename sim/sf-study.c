/* SPDX-License-Identifier: MIT
 *
 * sf-study.c — block studies for the public API: the slice plan of a block,
 * one lane of a block pushed out by one machine, the four lane studies of a
 * comparison (sf_study_compare), the priced hand-over study
 * (sf_study_handover: where dozing should stop) and the check that every
 * block can be laid out (sf_study_check_blocks).  Wires the section, slice
 * and push modules together; owns nothing beyond the call.  The wiring
 * itself (SfStudyBlock, sf-study.h) is shared with the charts.
 */
#include <math.h>
#include <string.h>

#include "sf-layout.h"
#include "sf-study.h"

static void
design_with_options (const SfScenario *sc, const SfStudyOptions *opt, SfDesign *d)
{
  *d = sc->design;
  if (!opt)
    return;
  if (opt->strategy == 0)
    d->strategy = SF_SLICES_TIPOVER_LAYERS;
  else if (opt->strategy == 1)
    d->strategy = SF_SLICES_STRAIGHT;
  if (opt->pivot == 0)
    d->pivot = SF_PIVOT_STANDARD;
  else if (opt->pivot == 1)
    {
      d->pivot = SF_PIVOT_LIFTED;
      if (opt->pivot_lift_m > 0)
        d->pivot_lift_m = opt->pivot_lift_m;
      if (d->pivot_lift_m <= 0)
        d->pivot_lift_m = 3.0;
    }
}

/* A copy of the scenario's view with another design: the section module
 * reads the design from the scenario, so the study builds its section on a
 * shallow copy whose design is replaced. */
static SfBlockSection *
study_section (const SfScenario *sc, const SfDesign *d, guint block, GError **error)
{
  SfScenario tmp = *sc;
  tmp.design = *d;
  return sf_block_section_new (&tmp, block, error);
}

GArray *
sf_study_slice_plan (const SfScenario *sc, guint block, const SfStudyOptions *opt,
                     GError **error)
{
  g_return_val_if_fail (sc != NULL, NULL);
  g_autoptr (SfStudyBlock) sb = sf_study_block_new (sc, block, opt, error);
  if (!sb)
    return NULL;
  const SfSlicePlan *plan = sb->plan;
  const double lcm2bcm = 1.0 / (1.0 + sc->material.swell);
  GArray *out = g_array_new (FALSE, TRUE, sizeof (SfSliceInfo));
  for (guint k = 0; k < plan->slices->len; k++)
    {
      const SfSlice *s = g_ptr_array_index (plan->slices, k);
      SfSliceInfo info = {
        .index = k,
        .kind = sf_slice_kind_to_str (s->kind),
        .target_grade_pct = 100.0 * s->grade,
        .cut_lcm = s->cut_lcm,
        .cut_bcm = s->cut_lcm * lcm2bcm,
        .fill_lcm = s->fill_lcm,
        .cut_centroid_x_m = s->cut_cx_m,
        .fill_centroid_x_m = s->fill_cx_m,
        .push_distance_m = s->push_distance_m,
        .push_grade_pct = 100.0 * s->push_grade,
      };
      g_array_append_val (out, info);
    }
  return out;
}

gboolean
sf_study_compare (const SfScenario *sc, guint block, guint class_strategy, guint class_a,
                  guint class_b, SfCompareResult *out, GError **error)
{
  g_return_val_if_fail (sc != NULL && out != NULL, FALSE);
  memset (out, 0, sizeof *out);
  out->block = block;
  /* the strategy changes the slices, not the section: one section, three
   * plans' worth of designs */
  SfStudyOptions layers = SF_STUDY_OPTIONS_INIT, straight = SF_STUDY_OPTIONS_INIT;
  layers.strategy = 0;
  straight.strategy = 1;
  g_autoptr (SfStudyBlock) sl = sf_study_block_new (sc, block, &layers, error);
  if (!sl)
    return FALSE;
  SfStudyBlock ss = { sl->design, sl->section, NULL }, sd = ss;
  design_with_options (sc, &straight, &ss.design);
  design_with_options (sc, NULL, &sd.design);
  g_autoptr (SfSlicePlan) ps = sf_slice_plan_new (sl->section, &ss.design, sc->strip.lane_width_m,
                                                  error);
  g_autoptr (SfSlicePlan) pd = ps ? sf_slice_plan_new (sl->section, &sd.design,
                                                       sc->strip.lane_width_m, error)
                                  : NULL;
  if (!pd)
    return FALSE;
  ss.plan = ps;
  sd.plan = pd;
  const struct {
    const SfStudyBlock *sb;
    guint cls;
    SfLaneTotals *t;
  } cases[4] = { { sl, class_strategy, &out->layers }, { &ss, class_strategy, &out->straight },
                 { &sd, class_a, &out->blade_a }, { &sd, class_b, &out->blade_b } };
  for (int i = 0; i < 4; i++)
    {
      g_autoptr (GArray) res = g_array_new (FALSE, TRUE, sizeof (SfSliceResult));
      g_autoptr (SfLane) ln = sf_study_block_work_lane (sc, cases[i].sb, 0, cases[i].cls, res,
                                                        cases[i].t, error);
      if (!ln)
        return FALSE;
    }
  const SfLaneTotals *tl = &out->layers, *ts = &out->straight;
  out->straight_gain_gross_pct = 100.0 * (ts->bcm_per_operating_h / tl->bcm_per_operating_h - 1.0);
  /* net: only what left the dozing zone for good counts */
  out->straight_gain_net_pct
    = 100.0 * ((ts->uncovered_bcm / ts->operating_h) / (tl->uncovered_bcm / tl->operating_h) - 1.0);
  out->blade_gain_pct
    = 100.0 * (out->blade_a.bcm_per_operating_h / out->blade_b.bcm_per_operating_h - 1.0);
  return TRUE;
}

GArray *
sf_study_handover (const SfScenario *sc, guint block, guint lane, guint class_index,
                   const SfStudyOptions *opt, double dragline_cost_per_bcm,
                   double truck_cost_per_bcm, SfHandoverTotals *totals, GError **error)
{
  g_return_val_if_fail (sc != NULL && totals != NULL, NULL);
  memset (totals, 0, sizeof *totals);
  const gboolean dl = dragline_cost_per_bcm > 0 && isfinite (dragline_cost_per_bcm);
  const gboolean ts = truck_cost_per_bcm > 0 && isfinite (truck_cost_per_bcm);
  if (!dl && !ts)
    {
      g_set_error_literal (error, SF_MODEL_ERROR, SF_MODEL_ERROR_ARGUMENT,
                           "no alternative to price against: give a dragline or a "
                           "truck-and-shovel cost per bcm greater than 0");
      return NULL;
    }
  if (class_index >= sc->classes->len)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_ARGUMENT,
                   "dozer class %u does not exist: the scenario defines %u", class_index,
                   sc->classes->len);
      return NULL;
    }
  const SfDozerClass *cls = g_ptr_array_index (sc->classes, class_index);
  if (!(cls->cost_per_operating_h > 0))
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_ARGUMENT,
                   "dozer class '%s' has no cost_per_operating_h: the hand-over study needs it",
                   cls->name);
      return NULL;
    }
  SfLaneTotals lt;
  g_autoptr (GArray) res = sf_study_push_lane (sc, block, lane, class_index, opt, &lt, error);
  if (!res)
    return NULL;
  g_autoptr (GArray) plan = sf_study_slice_plan (sc, block, opt, error);
  if (!plan)
    return NULL;
  const double lcm2bcm = 1.0 / (1.0 + sc->material.swell);
  totals->dozer_cost_per_h = cls->cost_per_operating_h;
  totals->alternative = dl && (!ts || dragline_cost_per_bcm <= truck_cost_per_bcm)
                          ? "dragline"
                          : "truck-and-shovel";
  totals->alt_cost_per_bcm = g_str_equal (totals->alternative, "dragline") ? dragline_cost_per_bcm
                                                                            : truck_cost_per_bcm;
  /* one row per slice of the plan, its design volume; the slices the lane
   * worked carry the dozer's cost (the lane works them in plan order and may
   * stop early: the slices it never reached go to the alternative whatever
   * the choice) */
  const guint n = plan->len;
  GArray *out = g_array_sized_new (FALSE, TRUE, sizeof (SfHandoverSlice), n);
  for (guint k = 0; k < n; k++)
    {
      const SfSliceInfo *si = &g_array_index (plan, SfSliceInfo, k);
      SfHandoverSlice h = { .slice = si->index, .kind = si->kind, .volume_bcm = si->cut_bcm,
                            .dozer_cost = NAN, .unit_cost_per_bcm = INFINITY };
      g_array_append_val (out, h);
      totals->volume_bcm += h.volume_bcm;
    }
  guint worked = 0;
  for (guint r = 0; r < res->len; r++)
    {
      const SfSliceResult *sr = &g_array_index (res, SfSliceResult, r);
      if (sr->slice >= n || sr->slice != worked)
        break; /* only a run of slices from the first counts */
      SfHandoverSlice *h = &g_array_index (out, SfHandoverSlice, sr->slice);
      h->dozer_cost = cls->cost_per_operating_h * sr->operating_h;
      h->over_spoil_bcm = sr->over_spoil_lcm * lcm2bcm;
      h->rehandle_cost = dl ? h->over_spoil_bcm * dragline_cost_per_bcm : 0.0;
      h->unit_cost_per_bcm = h->volume_bcm > 0
                               ? (h->dozer_cost + h->rehandle_cost) / h->volume_bcm
                               : INFINITY;
      worked++;
    }
  /* total(k), k = 0 .. worked: dozing of slices 0 .. k-1 plus the alternative
   * for slices k .. n-1 (incremental analysis of the choices) */
  double dozed = 0.0;
  totals->best_total_cost = INFINITY;
  for (guint k = 0; k <= worked; k++)
    {
      double left = 0.0; /* summed afresh: no rounding carried from slice to slice */
      for (guint j = k; j < n; j++)
        left += g_array_index (out, SfHandoverSlice, j).volume_bcm;
      double total = dozed + totals->alt_cost_per_bcm * left;
      if (k < n)
        g_array_index (out, SfHandoverSlice, k).total_if_stop_here = total;
      if (k == 0)
        totals->none_dozed_cost = total;
      if (k == worked)
        totals->all_dozed_cost = total;
      if (total < totals->best_total_cost - 1e-9 * fabs (total))
        {
          totals->best_total_cost = total;
          totals->best_slices = k;
        }
      if (k < worked)
        {
          const SfHandoverSlice *h = &g_array_index (out, SfHandoverSlice, k);
          dozed += h->dozer_cost + h->rehandle_cost;
        }
    }
  for (guint k = worked + 1; k < n; k++)
    g_array_index (out, SfHandoverSlice, k).total_if_stop_here = NAN;
  totals->n_slices = n;
  totals->n_worked = worked;
  return out;
}

gboolean
sf_study_check_blocks (const SfScenario *sc, guint *n_bad, GError **error)
{
  g_return_val_if_fail (sc != NULL, FALSE);
  g_autoptr (SfLayout) lay = sf_layout_new (sc, -1, FALSE, n_bad, error);
  return lay != NULL;
}

SfStudyBlock *
sf_study_block_new (const SfScenario *sc, guint block, const SfStudyOptions *opt,
                    GError **error)
{
  g_return_val_if_fail (sc != NULL, NULL);
  g_autoptr (SfStudyBlock) sb = g_new0 (SfStudyBlock, 1);
  design_with_options (sc, opt, &sb->design);
  sb->section = study_section (sc, &sb->design, block, error);
  if (!sb->section)
    return NULL;
  sb->plan = sf_slice_plan_new (sb->section, &sb->design, sc->strip.lane_width_m, error);
  if (!sb->plan)
    return NULL;
  return g_steal_pointer (&sb);
}

void
sf_study_block_free (SfStudyBlock *sb)
{
  if (!sb)
    return;
  sf_slice_plan_free (sb->plan);
  sf_block_section_free (sb->section);
  g_free (sb);
}

SfLane *
sf_study_block_work_lane (const SfScenario *sc, const SfStudyBlock *sb, guint lane,
                          guint class_index, GArray *out, SfLaneTotals *totals, GError **error)
{
  g_return_val_if_fail (sc != NULL && sb != NULL && out != NULL && totals != NULL, NULL);
  if (class_index >= sc->classes->len)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_ARGUMENT,
                   "dozer class %u does not exist: the scenario defines %u", class_index,
                   sc->classes->len);
      return NULL;
    }
  if (lane >= sf_scenario_get_n_lanes (sc))
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_ARGUMENT,
                   "lane %u does not exist: each block has lanes 0 to %u", lane,
                   sf_scenario_get_n_lanes (sc) - 1);
      return NULL;
    }
  const SfBlockSection *bs = sb->section;
  const SfDozerClass *c = g_ptr_array_index (sc->classes, class_index);
  SfPushMachine pm;
  sf_push_machine_init (&pm, c, &sc->material, &sb->design);
  SfLane *ln = sf_lane_new (bs->surface, bs->base, bs->n, bs->x0_m, bs->dx_m,
                            sc->strip.lane_width_m, bs->tan_repose);
  g_autofree double *spoil = g_new (double, bs->n);
  for (guint i = 0; i < bs->n; i++)
    spoil[i] = sf_block_section_spoil_line (bs, bs->x0_m + (i + 0.5) * bs->dx_m);
  ln->spoil_line = spoil;
  sf_lane_work (&pm, ln, sb->plan, &sc->factors, sc->material.swell, out, totals, NULL, NULL);
  ln->spoil_line = NULL; /* borrowed from this call only */
  return ln;
}

GArray *
sf_study_push_lane (const SfScenario *sc, guint block, guint lane, guint class_index,
                    const SfStudyOptions *opt, SfLaneTotals *totals, GError **error)
{
  g_return_val_if_fail (sc != NULL && totals != NULL, NULL);
  g_autoptr (SfStudyBlock) sb = sf_study_block_new (sc, block, opt, error);
  if (!sb)
    return NULL;
  g_autoptr (GArray) out = g_array_new (FALSE, TRUE, sizeof (SfSliceResult));
  g_autoptr (SfLane) ln = sf_study_block_work_lane (sc, sb, lane, class_index, out, totals, error);
  if (!ln)
    return NULL;
  return g_steal_pointer (&out);
}
