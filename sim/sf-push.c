/* SPDX-License-Identifier: MIT
 *
 * sf-push.c — push physics (equations and sources: docs/model.md §3-§6).
 *
 * Invariants kept by sf_push_cycle():
 *  - every push conserves loose volume: removed = deposited + dropped +
 *    spilled, so the sum of a lane's heights never changes;
 *  - nothing moves below the lane's non-erodible base;
 *  - after a push, no loose slope the push touched is steeper than the angle
 *    of repose (the cut faces, drops and spill are relaxed locally and the
 *    dump face is built at the angle of repose).
 */
#include "sf-push.h"

#include <math.h>
#include <string.h>
#include "sf-geom.h"
#include "sf-util.h"

/* Blade cutting angle used for the lift of the soil prism along the blade
 * face: 55 degrees (from memory; Alekseeva, Artem'ev & Zelenin, Machines for
 * Earthmoving Work, 1992). */
#define SF_BLADE_CUTTING_ANGLE_DEG 55.0
/* A loaded dozer lugs down to about half the top speed of its push gear before
 * the operator sheds load: the engine power limit is taken at that speed
 * (common practice, no source). */
#define SF_WORK_SPEED_SHARE 0.5
/* Extra resistance on the return over loose blasted ground, fraction of the
 * weight (crawler ratings are net of track rolling resistance; this is the
 * soft-ground allowance; common practice, no source). */
#define SF_RETURN_RESISTANCE 0.03
/* A downgrade ahead steeper than this is a dump edge, not a push path
 * (common practice, no source). */
#define SF_MAX_DRIVE_GRADE 0.45
/* Half-width of the window over which the grade under the machine is taken:
 * about half a large dozer's track length on the ground (from memory). */
#define SF_GRADE_HALF_WINDOW_M 2.0

void
sf_push_machine_init (SfPushMachine *pm, const SfDozerClass *c, const SfMaterial *m,
                      const SfDesign *d)
{
  memset (pm, 0, sizeof *pm);
  pm->mass_kg = c->operating_mass_t * 1000.0;
  pm->weight_n = pm->mass_kg * SF_G_MS2;
  pm->drawbar_power_w = c->net_power_kw * 1000.0 * c->drivetrain_efficiency;
  pm->mu_traction = c->traction_coefficient;
  pm->blade_lcm = sf_dozer_class_rated_lcm (c) * m->blade_fill_factor;
  pm->blade_width_m = c->blade_width_m;
  pm->carry_share = c->blade_type == SF_BLADE_CARRY ? c->carry_share : 0.0;
  pm->rho_loose_kg_m3 = m->bank_density_t_per_bcm * 1000.0 / (1.0 + m->swell);
  pm->mu_soil = m->soil_friction;
  pm->mu_steel = m->steel_friction;
  double ca = cos (sf_deg2rad (SF_BLADE_CUTTING_ANGLE_DEG));
  pm->lift_factor = ca * ca;
  pm->k_cut_pa = m->cutting_resistance_kpa * 1000.0;
  guint pg = CLAMP (c->push_gear, 1u, c->n_fwd) - 1;
  guint rg = CLAMP (c->return_gear, 1u, c->n_rev) - 1;
  pm->v_push_ms = c->fwd_kmh[pg] * SF_KMH_TO_MS;
  pm->v_work_ms = SF_WORK_SPEED_SHARE * pm->v_push_ms;
  pm->v_return_ms = c->rev_kmh[rg] * SF_KMH_TO_MS;
  pm->return_resistance = SF_RETURN_RESISTANCE;
  pm->fixed_time_s = c->fixed_time_min * 60.0;
  double spill = d->spill_per_m;
  if (d->slot_dozing)
    spill *= d->slot_spill_factor;
  if (d->side_by_side)
    spill *= d->side_by_side_spill_factor;
  pm->spill_per_m = spill;
  pm->load_distance_m = d->load_distance_m;
  pm->max_drive_grade = SF_MAX_DRIVE_GRADE;
}

/* Largest G with A G <= B (G >= 0). */
static double
largest_load (double A, double B)
{
  if (A > 0)
    return B > 0 ? B / A : 0.0;
  return B >= 0 ? INFINITY : 0.0;
}

double
sf_push_max_load_kg (const SfPushMachine *pm, double grade, double cut_depth_m,
                     SfLoadLimit *limit)
{
  /* cos and sin of the slope angle from its tangent, without atan:
   * cos t = 1 / sqrt (1 + g^2), sin t = g cos t */
  const double ct = 1.0 / sqrt (1.0 + grade * grade), st = grade * ct;
  const double c = pm->carry_share;
  const double Wm = pm->weight_n;
  const double f_cut = pm->k_cut_pa * pm->blade_width_m * MAX (cut_depth_m, 0.0);
  /* resistance per newton of load weight */
  const double per_g = (1.0 - c) * pm->mu_soil * ct + pm->mu_steel * pm->lift_factor + st;
  /* traction: mu_t (W + c G) cos t >= G per_g + W sin t + F_cut */
  double g_trac = largest_load (per_g - c * pm->mu_traction * ct,
                                pm->mu_traction * Wm * ct - Wm * st - f_cut);
  /* power at the lowest working speed */
  double g_pow = largest_load (per_g, pm->drawbar_power_w / pm->v_work_ms - Wm * st - f_cut);
  double g_max = MIN (g_trac, g_pow);
  if (limit)
    *limit = g_trac <= g_pow ? SF_LIMIT_TRACTION : SF_LIMIT_POWER;
  return g_max / SF_G_MS2;
}

double
sf_push_max_load_lcm (const SfPushMachine *pm, double grade, double cut_depth_m,
                      SfLoadLimit *limit)
{
  SfLoadLimit lim;
  double v = sf_push_max_load_kg (pm, grade, cut_depth_m, &lim) / pm->rho_loose_kg_m3;
  if (v >= pm->blade_lcm)
    {
      v = pm->blade_lcm;
      lim = SF_LIMIT_VOLUME;
    }
  if (limit)
    *limit = lim;
  return v;
}

double
sf_push_force_needed_n (const SfPushMachine *pm, double load_kg, double grade,
                        double cut_depth_m)
{
  /* cos and sin of the slope angle from its tangent, without atan:
   * cos t = 1 / sqrt (1 + g^2), sin t = g cos t */
  const double ct = 1.0 / sqrt (1.0 + grade * grade), st = grade * ct;
  const double G = load_kg * SF_G_MS2;
  const double per_g = (1.0 - pm->carry_share) * pm->mu_soil * ct
                       + pm->mu_steel * pm->lift_factor + st;
  return G * per_g + pm->weight_n * st + pm->k_cut_pa * pm->blade_width_m * MAX (cut_depth_m, 0.0);
}

double
sf_push_speed_ms (const SfPushMachine *pm, double force_n, double gear_top_ms)
{
  if (force_n <= pm->drawbar_power_w / gear_top_ms)
    return gear_top_ms;
  return pm->drawbar_power_w / force_n;
}

/* ---- lanes ---------------------------------------------------------------- */

SfLane *
sf_lane_new (const double *surface, const double *base, guint n, double x0_m, double dx_m,
             double width_m, double tan_repose)
{
  SfLane *l = g_new0 (SfLane, 1);
  l->n = n;
  l->x0_m = x0_m;
  l->dx_m = dx_m;
  l->width_m = width_m;
  l->z = g_memdup2 (surface, n * sizeof (double));
  l->base = base;
  l->dumped = g_new0 (double, n);
  l->scratch = g_new0 (double, n);
  l->undo_z = g_new0 (double, n);
  l->undo_dumped = g_new0 (double, n);
  l->tan_repose = tan_repose;
  return l;
}

void
sf_lane_free (SfLane *lane)
{
  if (!lane)
    return;
  g_free (lane->z);
  g_free (lane->dumped);
  g_free (lane->scratch);
  g_free (lane->undo_z);
  g_free (lane->undo_dumped);
  g_free (lane);
}

double
sf_lane_volume_above (const SfLane *lane, const double *level, guint i0, guint i1)
{
  double a = sf_heights_area_between (lane->z, level, i0, MIN (i1, lane->n), lane->x0_m,
                                      lane->dx_m, NULL, NULL);
  return a * lane->width_m;
}

/* Grade under a machine centred on cell i of heights h (rise over run in +x),
 * over cells i-k .. i+k of width dx. */
static double
grade_at (const double *h, guint n, double dx, guint i, guint k)
{
  guint a = i >= k ? i - k : 0;
  guint b = MIN (i + k, n - 1);
  return b > a ? (h[b] - h[a]) / ((double) (b - a) * dx) : 0.0;
}

gboolean
sf_heights_is_edge (const double *z, guint n, double dx_m, guint i, double grade)
{
  if (i + 1 >= n)
    return FALSE;
  guint m = MAX (1u, (guint) lround (SF_EDGE_RUN_M / dx_m));
  guint j = MIN (i + m, n - 1);
  return (z[j] - z[i]) / ((double) (j - i) * dx_m) < -grade
         && (z[i + 1] - z[i]) / dx_m < -grade;
}

/* A push whose load finds no dump room is not made: the lane goes back to
 * how it was before the push (from cell i_s on) and the result says how
 * much would not have fitted. */
static SfPushStatus
push_not_made (SfLane *lane, guint i_s, guint i_end, double lost_lcm, SfPushResult *res)
{
  const gsize len = (lane->n - i_s) * sizeof (double);
  memcpy (lane->z + i_s, lane->undo_z + i_s, len);
  memcpy (lane->dumped + i_s, lane->undo_dumped + i_s, len);
  memset (res, 0, sizeof *res);
  res->unplaced_lcm = lost_lcm;
  res->x_start_m = lane->x0_m + i_s * lane->dx_m;
  res->x_dump_m = lane->x0_m + i_end * lane->dx_m;
  return SF_PUSH_NO_ROOM;
}

/* Distance below the target at which ground ahead counts as a drop-off (m). */
#define SF_DESIGN_EDGE_M 0.5

SfPushStatus
sf_push_cycle (const SfPushMachine *pm, SfLane *lane, const SfPushSpec *spec, SfPushResult *res)
{
  const double *target = spec->target;
  guint i_cut_end = spec->i_cut_end;
  const double tol_m = spec->tol_m, min_volume_lcm = spec->min_volume_lcm;
  memset (res, 0, sizeof *res);
  const guint n = lane->n;
  const double dx = lane->dx_m, w = lane->width_m, cell_area = dx * w;
  double *z = lane->z;
  i_cut_end = MIN (i_cut_end, n);
  const guint k = MAX (1u, (guint) lround (SF_GRADE_HALF_WINDOW_M / dx));

  /* Front and back of the cut zone and what is left in it. */
  double left = 0;
  gint i_f = -1, i_b = -1;
  for (guint i = 0; i < i_cut_end; i++)
    {
      double e = z[i] - target[i];
      if (e > tol_m)
        {
          left += e * cell_area;
          i_f = (gint) i;
          if (i_b < 0)
            i_b = (gint) i;
        }
    }
  if (i_f < 0 || left < min_volume_lcm)
    return SF_PUSH_NOTHING_LEFT;

  /* The machine cuts to grade: everything above the target along its path
   * goes into the blade until it is full, so it starts just far enough back
   * from the front of the cut zone to fill the blade.  The cutting edge
   * itself works at the nominal depth that fills the blade over the load
   * distance; deeper material slumps into the blade from the face. */
  const double h_edge = pm->blade_lcm / (w * pm->load_distance_m);
  double acc = 0;
  gint i_s = i_f;
  /* (never further back than the last material: a part load starts there) */
  while (i_s > i_b)
    {
      double e = z[i_s] - target[i_s];
      if (e > tol_m)
        acc += e * cell_area;
      if (acc >= pm->blade_lcm)
        break;
      i_s--;
    }

  /* Keep what the push may change, in case its load finds no dump room. */
  memcpy (lane->undo_z + i_s, z + i_s, (n - (guint) i_s) * sizeof (double));
  memcpy (lane->undo_dumped + i_s, lane->dumped + i_s, (n - (guint) i_s) * sizeof (double));

  /* Load and carry. */
  double V = 0, t_load = 0, t_carry = 0, grade_sum = 0;
  guint dirty_lo = (guint) i_s > 0 ? (guint) i_s - 1 : 0, dirty_hi = (guint) i_f + 2;
  gint i_last_cut = i_s;
  guint i = (guint) i_s;
  for (;; i++)
    {
      if ((gint) i <= i_f)
        {
          /* Loading: the machine rides on the target it cuts to. */
          double g = grade_at (target, n, dx, i, k);
          double e = z[i] - MAX (target[i], lane->base[i]);
          double h = e > tol_m ? e : 0.0;
          double h_cut = MIN (h, h_edge);
          double take = 0;
          if (h > 0)
            {
              double cap = sf_push_max_load_lcm (pm, g, h_cut, NULL);
              take = MIN (h * cell_area, MAX (cap - V, 0.0));
            }
          if (take > 0)
            {
              double dz = take / cell_area;
              z[i] -= dz;
              double r = MIN (lane->dumped[i], dz);
              lane->dumped[i] -= r;
              res->rehandled_lcm += r * cell_area;
              res->removed_lcm += take;
              V += take;
              i_last_cut = (gint) i;
            }
          double f = sf_push_force_needed_n (pm, V * pm->rho_loose_kg_m3, g, take > 0 ? h_cut : 0.0);
          t_load += dx / sf_push_speed_ms (pm, f, pm->v_push_ms);
          grade_sum += g;
        }
      else
        {
          /* Carrying: drop what the force balance cannot hold here. */
          double g = grade_at (z, n, dx, i, k);
          double cap = sf_push_max_load_lcm (pm, g, 0.0, NULL);
          if (V > cap)
            {
              double drop = V - cap;
              z[i] += drop / cell_area;
              res->dropped_lcm += drop;
              V = cap;
              dirty_hi = MAX (dirty_hi, i + 2);
            }
          double f = sf_push_force_needed_n (pm, V * pm->rho_loose_kg_m3, g, 0.0);
          t_carry += dx / sf_push_speed_ms (pm, f, pm->v_push_ms);
          grade_sum += g;
        }
      /* Side spill over this cell. */
      if (V > 0 && pm->spill_per_m > 0)
        {
          double s = V * MIN (pm->spill_per_m * dx, 1.0);
          z[i] += s / cell_area;
          res->spilled_lcm += s;
          V -= s;
          dirty_hi = MAX (dirty_hi, i + 2);
        }
      res->peak_load_lcm = MAX (res->peak_load_lcm, V);
      /* Dump edge ahead, end of profile, or nothing left on the blade. */
      if (i + 1 >= n)
        break;
      if ((gint) i >= i_f
          && (spec->dump_at_design ? z[i + 1] < target[i + 1] - SF_DESIGN_EDGE_M
                                   : sf_heights_is_edge (z, n, dx, i, pm->max_drive_grade)))
        break;
      if ((gint) i >= i_f && V <= 0)
        break;
      /* Past the cut with a load, the ground ahead rises above the design or
       * steeper than drivable before any drop-off: the fill has reached the
       * far side (the previous spoil), there is no dump room left. */
      if ((gint) i >= i_f && spec->dump_at_design && V > 0
          && (z[i + 1] > target[i + 1] + SF_DESIGN_EDGE_M
              || (z[i + 1] - z[i]) / dx > pm->max_drive_grade))
        {
          return push_not_made (lane, (guint) i_s, i + 1, V, res);
        }
    }
  const guint i_c = i;

  /* Dump: the load runs down ahead of the blade at the angle of repose. */
  if (V > 0)
    {
      guint from = i_c + 1 < n ? i_c + 1 : i_c;
      memcpy (lane->scratch + from, z + from, (n - from) * sizeof (double));
      guint i_front = i_c;
      /* Fill placed under a sloping design line follows it (straight pushes);
       * otherwise the pad is level with the crest. */
      double unfit = spec->fill_under_target
                       ? sf_heights_deposit_capped (z, target, n, lane->x0_m, dx, i_c, z[i_c],
                                                    lane->tan_repose, V / w, &i_front)
                       : sf_heights_deposit_face (z, n, lane->x0_m, dx, i_c, z[i_c],
                                                  lane->tan_repose, V / w, &i_front);
      for (guint j = from; j <= i_front && j < n; j++)
        {
          lane->dumped[j] += z[j] - lane->scratch[j];
          if (lane->spoil_line)
            res->over_spoil_lcm
              += MAX (0.0, z[j] - MAX (lane->scratch[j], lane->spoil_line[j])) * cell_area;
        }
      if (unfit > 0)
        {
          /* No room beyond the edge: an operator would not make this push. */
          return push_not_made (lane, (guint) i_s, i_c + 1, unfit * w, res);
        }
      res->deposited_lcm = V;
      dirty_hi = MAX (dirty_hi, i_front + 2);
    }

  /* The faces the cut left behind the start and ahead of the last cut cell
   * collapse at the angle of repose (built directly, not by relaxation);
   * drops and spill then settle locally. */
  if (i_s > 0)
    sf_heights_collapse_face (z, lane->base, n, dx, lane->tan_repose, (guint) i_s, 1);
  if ((guint) i_last_cut + 1 < n)
    sf_heights_collapse_face (z, lane->base, n, dx, lane->tan_repose, (guint) i_last_cut, -1);
  sf_heights_relax (z, lane->base, n, dx, lane->tan_repose, dirty_lo, MIN (dirty_hi, n), 1e-9,
                    NULL, NULL);

  /* Return in reverse to the start point over the new ground. */
  double t_ret = 0;
  for (guint j = (guint) i_s; j <= i_c; j++)
    {
      double g_back = -grade_at (z, n, dx, j, k); /* travelling in -x */
      double cb = 1.0 / sqrt (1.0 + g_back * g_back);
      double f = pm->weight_n * (g_back * cb + pm->return_resistance * cb);
      t_ret += dx / sf_push_speed_ms (pm, f, pm->v_return_ms);
    }

  res->x_start_m = lane->x0_m + i_s * dx;
  res->x_cut_end_m = lane->x0_m + (i_last_cut + 1) * dx;
  res->x_dump_m = lane->x0_m + (i_c + 1) * dx;
  res->load_m = res->x_cut_end_m - res->x_start_m;
  res->carry_m = res->x_dump_m - res->x_cut_end_m;
  res->return_m = res->x_dump_m - res->x_start_m;
  res->grade_mean = grade_sum / (double) (i_c - (guint) i_s + 1);
  res->t_fixed_s = pm->fixed_time_s;
  res->t_load_s = t_load;
  res->t_carry_s = t_carry;
  res->t_return_s = t_ret;
  res->t_cycle_s = pm->fixed_time_s + t_load + t_carry + t_ret;

  if (res->removed_lcm <= 0)
    return SF_PUSH_STALLED;
  return SF_PUSH_DONE;
}

/* ---- handbook method ------------------------------------------------------ */

double
sf_handbook_cycle_min (double fixed_min, double distance_m, double v_fwd_kmh, double v_rev_kmh)
{
  /* km/h -> m/min: x 1000 / 60 */
  return fixed_min + distance_m / (v_fwd_kmh * 1000.0 / 60.0)
         + distance_m / (v_rev_kmh * 1000.0 / 60.0);
}

double
sf_handbook_production_lcm_h (double blade_lcm, double cycle_min, double minutes_per_h)
{
  return blade_lcm * minutes_per_h / cycle_min;
}

double
sf_factors_product (const SfFactors *f)
{
  return f->operator_skill * f->job_efficiency * f->visibility * f->material;
}
