/* SPDX-License-Identifier: MIT
 *
 * test-push.c — push physics against hand calculations and published
 * methods: force balance, load-versus-grade curve, the handbook cycle-time and
 * production-factor method, and conservation of every push.
 */
#include "sf-test.h"

#include <math.h>
#include <string.h>

#include "sf-geom.h"
#include "sf-push.h"

#define G0 9.80665

/* A 100 t machine with hand-chosen constants, so the force balance can be
 * worked by hand in the comments below. */
static void
hand_machine (SfPushMachine *pm)
{
  memset (pm, 0, sizeof *pm);
  pm->mass_kg = 100e3;
  pm->weight_n = 100e3 * G0;          /* 980.665 kN */
  pm->drawbar_power_w = 500e3;        /* eta P */
  pm->mu_traction = 0.6;              /* loose earth, tracks (from memory; Peurifoy et al.) */
  pm->blade_lcm = 40.0;
  pm->blade_width_m = 6.0;
  pm->carry_share = 0.0;
  pm->rho_loose_kg_m3 = 2400.0 / 1.25; /* 1920 kg/lcm */
  pm->mu_soil = 0.7;
  pm->mu_steel = 0.4;
  double c55 = cos (55.0 * G_PI / 180.0);
  pm->lift_factor = c55 * c55;         /* 0.328990 */
  pm->k_cut_pa = 0.0;
  pm->v_push_ms = 1.0;
  pm->v_work_ms = 0.5;                 /* power limit 500 kW / 0.5 m/s = 1000 kN */
  pm->v_return_ms = 2.4;
  pm->return_resistance = 0.03;
  pm->fixed_time_s = 3.0;
  pm->spill_per_m = 0.001;
  pm->load_distance_m = 12.0;
  pm->max_drive_grade = 0.45;
}

/* Force balance by hand (docs/model.md §4; traction F = mu_t W, Merritt,
 * Standard Handbook for Civil Engineers, "usable pull P = f W"; load drag and
 * blade-face lift after Alekseeva et al. 1992, from memory):
 *   per newton of load: (mu_s cos t + mu_b cos^2 55 + sin t)
 *   traction side:      mu_t W cos t - W sin t
 * 0 %:   per = 0.7 + 0.4 x 0.328990 = 0.831596; traction 0.6 x 980.665 = 588.399 kN
 *        (power side 1000 kN does not bind) -> G = 707.549 kN = 72 150.4 kg
 *        = 37.578 lcm at 1920 kg/lcm (below the 40 lcm blade: traction-limited)
 * -30 %: t = -16.699 deg; per = 0.7 x 0.957826 + 0.131596 - 0.287348 = 0.514726;
 *        traction 588.399 x 0.957826 + 980.665 x 0.287348 = 845.376 kN
 *        -> G = 167 476 kg = 87.2 lcm -> capped by the 40 lcm blade
 * +30 %: per = 0.670478 + 0.131596 + 0.287348 = 1.089422;
 *        traction 563.584 - 281.792 = 281.792 kN -> G = 26 376.2 kg = 13.738 lcm */
static void
test_force_balance_by_hand (void **state)
{
  (void) state;
  SfPushMachine pm;
  hand_machine (&pm);
  SfLoadLimit lim;
  sf_assert_close (sf_push_max_load_kg (&pm, 0.0, 0.0, &lim), 72150.42, 0.0, 1e-5);
  assert_int_equal (lim, SF_LIMIT_TRACTION);
  sf_assert_close (sf_push_max_load_lcm (&pm, 0.0, 0.0, &lim), 37.5783, 0.0, 1e-4);
  assert_int_equal (lim, SF_LIMIT_TRACTION);

  sf_assert_close (sf_push_max_load_kg (&pm, -0.30, 0.0, NULL), 167476.06, 0.0, 1e-5);
  sf_assert_close (sf_push_max_load_lcm (&pm, -0.30, 0.0, &lim), 40.0, 0.0, 1e-12);
  assert_int_equal (lim, SF_LIMIT_VOLUME);

  sf_assert_close (sf_push_max_load_kg (&pm, 0.30, 0.0, &lim), 26376.17, 0.0, 1e-5);
  assert_int_equal (lim, SF_LIMIT_TRACTION);
  sf_assert_close (sf_push_max_load_lcm (&pm, 0.30, 0.0, NULL), 13.7376, 0.0, 1e-4);
}

/* Usable pull = min(traction, power) — check value CV13 of the reference
 * sheet (derived from F = mu W and F = eta P / v): 70 t, mu 0.60 -> 412.0 kN;
 * 450 kW x 0.80 at 1.0 m/s -> 360.0 kN: power-limited.  On the flat with no
 * carry share the largest load is then 360.0 kN / per. */
static void
test_usable_pull_cv13 (void **state)
{
  (void) state;
  SfPushMachine pm;
  hand_machine (&pm);
  pm.mass_kg = 70e3;
  pm.weight_n = 70e3 * G0;
  pm.drawbar_power_w = 450e3 * 0.80;
  pm.v_work_ms = 1.0;
  sf_assert_close (pm.mu_traction * pm.weight_n, 411.879e3, 0.0, 1e-4); /* 412.0 kN */
  SfLoadLimit lim;
  double kg = sf_push_max_load_kg (&pm, 0.0, 0.0, &lim);
  assert_int_equal (lim, SF_LIMIT_POWER);
  double per = 0.7 + 0.4 * pm.lift_factor;
  sf_assert_close (kg * G0, 360.0e3 / per, 0.0, 1e-9);
}

/* Load-versus-grade curve: monotonic non-increasing from -50 % to +50 %,
 * equal to the blade on steep downhill, zero where the machine cannot climb
 * (force balance above), and its +30 %/0 % ratio equal to the hand value
 * 13.7376 / 37.5783 = 0.365570. */
static void
test_load_curve_monotonic (void **state)
{
  (void) state;
  SfPushMachine pm;
  hand_machine (&pm);
  double prev = INFINITY;
  for (int gpct = -50; gpct <= 80; gpct++)
    {
      double v = sf_push_max_load_lcm (&pm, gpct / 100.0, 0.0, NULL);
      assert_true (v <= prev + 1e-12);
      assert_true (v >= 0.0);
      prev = v;
    }
  for (int gpct = -50; gpct <= -20; gpct += 5)
    sf_assert_close (sf_push_max_load_lcm (&pm, gpct / 100.0, 0.0, NULL), pm.blade_lcm, 0, 1e-12);
  /* mu_t cos t < sin t: at 60 % (t = 30.96 deg) 0.6 x 0.857 = 0.514 = sin t; beyond, nothing */
  sf_assert_close (sf_push_max_load_lcm (&pm, 0.70, 0.0, NULL), 0.0, 1e-12, 0);
  double r = sf_push_max_load_lcm (&pm, 0.30, 0, NULL) / sf_push_max_load_lcm (&pm, 0.0, 0, NULL);
  sf_assert_close (r, 13.73759 / 37.57834, 0.0, 1e-5);
}

/* A carry share moves load weight off the ground onto the tracks:
 * traction side gains c mu_t G cos t, drag loses c mu_s G cos t. By hand at
 * 0 %, c = 0.2: per = 0.8 x 0.7 + 0.131596 - 0.2 x 0.6 = 0.571596
 * -> G = 588.399 / 0.571596 = 1029.40 kN (power side 1000 / 0.691596 =
 * 1445.93 kN does not bind). */
static void
test_carry_share_by_hand (void **state)
{
  (void) state;
  SfPushMachine pm;
  hand_machine (&pm);
  pm.carry_share = 0.2;
  pm.blade_lcm = 1000;
  SfLoadLimit lim;
  double kg = sf_push_max_load_kg (&pm, 0.0, 0.0, &lim);
  sf_assert_close (kg * G0, 588.399e3 / (0.56 + 0.4 * pm.lift_factor - 0.12), 0, 1e-9);
  assert_int_equal (lim, SF_LIMIT_TRACTION);
  hand_machine (&pm);
  pm.blade_lcm = 1000;
  assert_true (kg > sf_push_max_load_kg (&pm, 0.0, 0.0, NULL));
}

/* Speed from the drawbar-pull/speed relation: v = eta P / F, capped by the
 * gear (physics; F = eta P / v, reference sheet §4). */
static void
test_speed_power_limited (void **state)
{
  (void) state;
  SfPushMachine pm;
  hand_machine (&pm);
  sf_assert_close (sf_push_speed_ms (&pm, 1000e3, 1.0), 0.5, 0, 1e-12);
  sf_assert_close (sf_push_speed_ms (&pm, 100e3, 1.0), 1.0, 0, 1e-12);
  sf_assert_close (sf_push_speed_ms (&pm, -5.0, 1.0), 1.0, 0, 1e-12);
}

/* Check value CV3 (derived from the textbook cycle-time method, Peurifoy et
 * al. ch. "Dozers"; FM 5-434 ch. 2): D = 60 m, 2.4 km/h forward, 7.2 km/h
 * reverse, 0.05 min fixed -> 2.050 min; 20 lcm, 50-min hour -> 487.8 lcm/h;
 * load factor 0.77 -> 375.6 bcm/h. */
static void
test_handbook_cycle_cv3 (void **state)
{
  (void) state;
  double t = sf_handbook_cycle_min (0.05, 60.0, 2.4, 7.2);
  sf_assert_close (t, 2.050, 0, 1e-9);
  double p = sf_handbook_production_lcm_h (20.0, t, 50.0);
  sf_assert_close (p, 487.8, 0, 1e-3);
  sf_assert_close (p * 0.77, 375.6, 0, 1e-3);
}

/* US Army FM 5-434, Earthmoving Operations (2000), ch. 2 worked example (as
 * reproduced in the reference sheet, CV4): ideal 300 lcy/h; material weight
 * 0.92, operator 0.75, material 0.80, slot 1.20, visibility 1.00, efficiency
 * 0.83, grade 1.15 -> 0.63226 -> 189.7 lcy/h (the source rounds to 190);
 * 3 000 lcy take 15.8 h; 3 dozers for 3 000 lcy in 7 h. */
static void
test_handbook_fm5434 (void **state)
{
  (void) state;
  SfFactors f = { .operator_skill = 0.75, .job_efficiency = 0.83, .visibility = 1.00,
                  .material = 0.80 };
  double others = 0.92 * 1.20 * 1.15; /* weight, slot, grade */
  double total = sf_factors_product (&f) * others;
  sf_assert_close (total, 0.63226, 0, 1e-4);
  double p = 300.0 * total;
  sf_assert_close (p, 189.7, 0, 1e-3);
  sf_assert_close (3000.0 / p, 15.8, 0, 2e-3);
  assert_int_equal ((int) ceil (3000.0 / 7.0 / p), 3);
}

/* A test lane: a 5 m thick loose block on a flat non-erodible floor, a flat
 * run to a pit edge at x = 60 m, a 20 m deep pit beyond. */
#define TN 200
#define TDX 0.5

static SfLane *
test_lane (double **base_out, double **target_out)
{
  double *base = g_new (double, TN), *z = g_new (double, TN), *target = g_new (double, TN);
  for (guint i = 0; i < TN; i++)
    {
      double x = (i + 0.5) * TDX;
      base[i] = x < 60 ? 0.0 : -20.0;
      z[i] = (x >= 10 && x < 50) ? 5.0 : base[i];
      target[i] = base[i];
    }
  SfLane *l = sf_lane_new (z, base, TN, 0.0, TDX, 6.0, tan (37.0 * G_PI / 180.0));
  g_free (z);
  *base_out = base;
  *target_out = target;
  return l;
}

static double
loose_sum (const SfLane *l)
{
  double s = 0;
  for (guint i = 0; i < l->n; i++)
    s += (l->z[i] - l->base[i]) * l->dx_m * l->width_m;
  return s;
}

/* Conservation (analytic: every push only moves material): for every push,
 * removed = deposited + dropped + spilled to 1e-9 relative, and the lane's
 * loose volume never changes; no loose slope ends steeper than the angle of
 * repose (within one cell); the block is pushed out to its target. */
static void
test_push_conservation_and_repose (void **state)
{
  (void) state;
  SfPushMachine pm;
  hand_machine (&pm);
  double *base, *target;
  g_autoptr (SfLane) l = test_lane (&base, &target);
  const double v0 = loose_sum (l);
  const guint i_cut_end = 120; /* x = 60 m */
  guint pushes = 0;
  SfPushResult r;
  SfPushStatus st;
  SfPushSpec spec = { target, i_cut_end, 0.02, 0.25 * pm.blade_lcm, FALSE, FALSE };
  while ((st = sf_push_cycle (&pm, l, &spec, &r)) == SF_PUSH_DONE)
    {
      pushes++;
      double out = r.deposited_lcm + r.dropped_lcm + r.spilled_lcm;
      sf_assert_close (out, r.removed_lcm, 0, 1e-9);
      sf_assert_close (loose_sum (l), v0, 0, 1e-9);
      assert_true (r.t_cycle_s > 0 && isfinite (r.t_cycle_s));
      assert_true (r.removed_lcm <= pm.blade_lcm + 1e-9);
      assert_true (pushes < 10000);
    }
  assert_int_equal (st, SF_PUSH_NOTHING_LEFT);
  assert_true (pushes > 10);
  double left = sf_lane_volume_above (l, target, 0, i_cut_end);
  assert_true (left < 0.25 * pm.blade_lcm + 0.02 * i_cut_end * TDX * 6.0);
  double tr = tan (37.0 * G_PI / 180.0);
  assert_true (sf_heights_max_loose_slope (l->z, l->base, l->n, l->dx_m, 1e-6)
               <= tr + 1e-6 / TDX + 1e-9);
  g_free (base);
  g_free (target);
}

/* On the flat the machine is traction-limited below the blade (hand value
 * 37.58 lcm at 0 %), so loads at the dump never exceed it; pushes cut near
 * the pit first, so push distance grows as the block is worked. */
static void
test_push_distance_grows (void **state)
{
  (void) state;
  SfPushMachine pm;
  hand_machine (&pm);
  double *base, *target;
  g_autoptr (SfLane) l = test_lane (&base, &target);
  SfPushResult first, r;
  SfPushSpec spec = { target, 120, 0.02, 10.0, FALSE, FALSE };
  assert_int_equal (sf_push_cycle (&pm, l, &spec, &first), SF_PUSH_DONE);
  assert_true (first.deposited_lcm <= 37.5784);
  double last_push = 0;
  while (sf_push_cycle (&pm, l, &spec, &r) == SF_PUSH_DONE)
    last_push = r.x_dump_m - r.x_start_m;
  assert_true (last_push > first.x_dump_m - first.x_start_m + 10.0);
  g_free (base);
  g_free (target);
}

/* A lane whose only way is up a 70 % ramp: the blade can hold nothing
 * (force balance: mu_t cos t < sin t), so the push stalls with nothing
 * removed instead of looping. */
static void
test_push_stalls_uphill (void **state)
{
  (void) state;
  SfPushMachine pm;
  hand_machine (&pm);
  double base[TN], z[TN], target[TN];
  for (guint i = 0; i < TN; i++)
    {
      double x = (i + 0.5) * TDX;
      base[i] = 0.7 * x;
      target[i] = base[i];
      z[i] = base[i] + (x < 20 ? 1.0 : 0.0);
    }
  g_autoptr (SfLane) l = sf_lane_new (z, base, TN, 0, TDX, 6.0, 10.0);
  SfPushResult r;
  SfPushSpec spec = { target, 40, 0.02, 1.0, FALSE, FALSE };
  assert_int_equal (sf_push_cycle (&pm, l, &spec, &r), SF_PUSH_STALLED);
  sf_assert_close (r.removed_lcm, 0.0, 1e-12, 0);
}

/* Nothing to doze: a lane already at target reports it at once. */
static void
test_push_nothing_left (void **state)
{
  (void) state;
  SfPushMachine pm;
  hand_machine (&pm);
  double base[TN] = { 0 }, target[TN] = { 0 };
  g_autoptr (SfLane) l = sf_lane_new (base, base, TN, 0, TDX, 6.0, 0.75);
  SfPushResult r;
  SfPushSpec spec = { target, TN, 0.02, 1.0, FALSE, FALSE };
  assert_int_equal (sf_push_cycle (&pm, l, &spec, &r), SF_PUSH_NOTHING_LEFT);
}

int
main (void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test (test_force_balance_by_hand),
    cmocka_unit_test (test_usable_pull_cv13),
    cmocka_unit_test (test_load_curve_monotonic),
    cmocka_unit_test (test_carry_share_by_hand),
    cmocka_unit_test (test_speed_power_limited),
    cmocka_unit_test (test_handbook_cycle_cv3),
    cmocka_unit_test (test_handbook_fm5434),
    cmocka_unit_test (test_push_conservation_and_repose),
    cmocka_unit_test (test_push_distance_grows),
    cmocka_unit_test (test_push_stalls_uphill),
    cmocka_unit_test (test_push_nothing_left),
  };
  return cmocka_run_group_tests_name ("push", tests, NULL, NULL);
}
