/* SPDX-License-Identifier: MIT
 *
 * test-degenerate.c — degenerate geometry and stalled runs end, within a
 * bounded time, with a stated reason (docs/robustness.md).
 *
 * Each case is a small invented scenario (no real site) built from JSON
 * text and loaded with sf_scenario_load_from_data(): a dozer floor above
 * the ground, a block whose void is already full, a blade that can carry
 * nothing up a lifted pivot's ramp, a skin of material just above the floor,
 * a hundred straight-push slices on one block, loose ground far steeper than
 * the angle of repose at fine cells, a roster with nobody to drive, and a
 * horizon of a few hours.  For each, the slice plan, one lane pushed out and
 * a whole fleet run either succeed or fail with a message, and
 *   - the wall time stays under a bound (the section-settling watchdog, the
 *     no-progress watchdog, the horizon);
 *   - a finished lane or run states why it ended (end_reason);
 *   - no volume, rate or time is NaN, infinite or negative (to rounding,
 *     1e-6), and a run's volumes balance: planned = moved + dropped + left
 *     (conservation of volume; analytic), its dozers' time categories add up
 *     to the calendar time (analytic).
 *
 * Memory: every scenario, plan, result array and summary is freed in the
 * case that made it.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>
#include <glib.h>

#include "sf-test.h"
#include "stripfleet.h"

/* bound on the wall time of one case (plan + lane + run), generous for
 * sanitizer builds on a loaded machine */
#define CASE_MAX_S 120.0
#define VOLUME_TOL 1e-6

/* An ordinary block, invented: 30 m of overburden over 5 m of coal, a 50 m
 * strip, one U-blade class, two dozers, a 30-day horizon. */
static const char BASE[] =
  "{ \"format\": \"stripfleet-scenario-1\", \"name\": \"degenerate\",\n"
  "  \"description\": \"Invented test case; no real site.\",\n"
  "  \"strip\": { \"length_m\": 50, \"blocks\": 1, \"lane_width_m\": 10, \"cell_m\": 0.5,\n"
  "             \"section_x_min_m\": -20, \"section_x_max_m\": 120 },\n"
  "  \"sections\": [ { \"block\": 0, \"generated\": { \"overburden_m\": 30, \"strip_width_m\": 50,\n"
  "      \"coal_thickness_m\": 5, \"highwall_deg\": 70, \"cast_fraction\": 0.3,\n"
  "      \"prev_spoil_height_m\": 5 } } ],\n"
  "  \"material\": { \"bank_density_t_per_bcm\": 2.4, \"swell\": 0.25,\n"
  "                \"angle_of_repose_deg\": 37 },\n"
  "  \"dozer_classes\": [ { \"name\": \"u-100t\", \"operating_mass_t\": 105,\n"
  "      \"net_power_kw\": 650,\n"
  "      \"blade\": { \"type\": \"u\", \"width_m\": 6.3, \"height_m\": 2.2,\n"
  "                 \"rated_capacity_lcm\": 34 },\n"
  "      \"forward_speeds_kmh\": [3.8, 6.8, 11.8], \"reverse_speeds_kmh\": [4.9, 8.7, 15.0] } ],\n"
  "  \"fleet\": [ { \"class\": \"u-100t\", \"count\": 2 } ],\n"
  "  \"design\": { \"dozer_floor_above_coal_m\": 10 },\n"
  "  \"simulation\": { \"horizon_days\": 30 } }\n";

/* Sets obj.path (dots between keys; every key but the last must exist) to a
 * value parsed from JSON text. */
static void
set_json (cJSON *root, const char *path, const char *json)
{
  g_auto (GStrv) keys = g_strsplit (path, ".", -1);
  cJSON *o = root;
  guint n = g_strv_length (keys);
  for (guint i = 0; i + 1 < n; i++)
    {
      cJSON *next = cJSON_IsArray (o) ? cJSON_GetArrayItem (o, atoi (keys[i]))
                                      : cJSON_GetObjectItem (o, keys[i]);
      if (!next)
        fail_msg ("no %s in %s", keys[i], path);
      o = next;
    }
  cJSON *v = cJSON_Parse (json);
  if (!v)
    fail_msg ("bad JSON for %s: %s", path, json);
  if (cJSON_GetObjectItem (o, keys[n - 1]))
    cJSON_ReplaceItemInObject (o, keys[n - 1], v);
  else
    cJSON_AddItemToObject (o, keys[n - 1], v);
}

/* The base scenario with the edits (path, JSON value; NULL-terminated). */
static SfScenario *
scenario_with (const char *const *edits)
{
  cJSON *root = cJSON_Parse (BASE);
  assert_non_null (root);
  for (guint i = 0; edits[i]; i += 2)
    set_json (root, edits[i], edits[i + 1]);
  char *text = cJSON_Print (root);
  cJSON_Delete (root);
  g_autoptr (GError) err = NULL;
  SfScenario *sc = sf_scenario_load_from_data (text, strlen (text), "degenerate.json", NULL, &err);
  if (!sc)
    fail_msg ("the case does not load: %s", err->message);
  cJSON_free (text);
  return sc;
}

static void
assert_volume (double v, const char *what)
{
  if (!isfinite (v) || v < -VOLUME_TOL)
    fail_msg ("%s = %g: expected a finite value >= 0", what, v);
}

/* What one case came to, for the checks and the record. */
typedef struct {
  gboolean plan_ok, lane_ok, run_ok;
  char plan_msg[512], lane_msg[512], run_msg[512];
  guint lane_pushes, run_pushes;
  double run_left_bcm, run_planned_bcm;
  double seconds;
} Outcome;

static void
keep_message (char *dst, const GError *err)
{
  g_strlcpy (dst, err && err->message && *err->message ? err->message : "(no message)", 512);
  if (!err || !err->message || !*err->message)
    fail_msg ("a failure without a message");
}

enum { DO_PLAN = 1, DO_LANE = 2, DO_RUN = 4, DO_ALL = 7 };

/* The slice plan, lane 0 with class 0, and a run without randomness, as
 * `what` says (a study not made counts as failed with an empty message);
 * checks every number and the bound on the wall time. */
static Outcome
run_case (const char *name, SfScenario *sc, guint what)
{
  Outcome o;
  memset (&o, 0, sizeof o);
  gint64 t0 = g_get_monotonic_time ();

  g_autoptr (GError) err = NULL;
  g_autoptr (GArray) plan = what & DO_PLAN ? sf_study_slice_plan (sc, 0, NULL, &err) : NULL;
  o.plan_ok = plan != NULL;
  if (!plan && (what & DO_PLAN))
    keep_message (o.plan_msg, err);
  else if (plan)
    for (guint k = 0; k < plan->len; k++)
      {
        const SfSliceInfo *s = &g_array_index (plan, SfSliceInfo, k);
        assert_volume (s->cut_lcm, "plan cut_lcm");
        assert_volume (s->cut_bcm, "plan cut_bcm");
        assert_volume (s->fill_lcm, "plan fill_lcm");
        assert_volume (s->push_distance_m, "plan push_distance_m");
        assert_true (isfinite (s->target_grade_pct) && isfinite (s->push_grade_pct));
      }
  g_clear_error (&err);

  SfLaneTotals t;
  g_autoptr (GArray) lane = what & DO_LANE ? sf_study_push_lane (sc, 0, 0, 0, NULL, &t, &err)
                                           : NULL;
  o.lane_ok = lane != NULL;
  if (!lane && (what & DO_LANE))
    keep_message (o.lane_msg, err);
  else if (lane)
    {
      for (guint k = 0; k < lane->len; k++)
        {
          const SfSliceResult *r = &g_array_index (lane, SfSliceResult, k);
          assert_non_null (r->end_reason);
          assert_true (*r->end_reason);
          assert_volume (r->removed_lcm, "lane removed_lcm");
          assert_volume (r->deposited_lcm, "lane deposited_lcm");
          assert_volume (r->dropped_lcm, "lane dropped_lcm");
          assert_volume (r->moved_bcm, "lane moved_bcm");
          assert_volume (r->operating_h, "lane operating_h");
          assert_volume (r->bcm_per_operating_h, "lane bcm_per_operating_h");
          assert_volume (r->mean_push_m, "lane mean_push_m");
          assert_volume (r->mean_cycle_min, "lane mean_cycle_min");
        }
      /* the end of the last slice worked says why the lane ended */
      if (lane->len)
        g_strlcpy (o.lane_msg, g_array_index (lane, SfSliceResult, lane->len - 1).end_reason,
                   sizeof o.lane_msg);
      o.lane_pushes = t.pushes;
      assert_volume (t.planned_bcm, "lane planned_bcm");
      assert_volume (t.left_bcm, "lane left_bcm");
      assert_volume (t.moved_out_bcm, "lane moved_out_bcm");
      assert_volume (t.operating_h, "lane operating_h");
      assert_true (isfinite (t.lane_volume_error) && fabs (t.lane_volume_error) < 1e-9);
    }
  g_clear_error (&err);

  SfRunOptions opt = SF_RUN_OPTIONS_INIT;
  opt.no_randomness = TRUE;
  SfRunSummary s;
  o.run_ok = what & DO_RUN ? sf_run (sc, &opt, &s, &err) : FALSE;
  if (!o.run_ok && (what & DO_RUN))
    keep_message (o.run_msg, err);
  else if (o.run_ok)
    {
      assert_non_null (s.end_reason);
      assert_true (*s.end_reason);
      g_strlcpy (o.run_msg, s.end_reason, sizeof o.run_msg);
      assert_volume (s.planned_bcm, "run planned_bcm");
      assert_volume (s.moved_bcm, "run moved_bcm");
      assert_volume (s.dropped_bcm, "run dropped_bcm");
      assert_volume (s.left_bcm, "run left_bcm");
      assert_volume (s.dumped_bcm, "run dumped_bcm");
      assert_volume (s.calendar_h, "run calendar_h");
      assert_volume (s.operating_h, "run operating_h");
      assert_volume (s.bcm_per_operating_h, "run bcm_per_operating_h");
      assert_volume (s.strip_m_per_day, "run strip_m_per_day");
      assert_volume (s.cost_per_bcm, "run cost_per_bcm");
      /* conservation (analytic): what was planned was moved, dropped or left */
      sf_assert_close (s.moved_bcm + s.dropped_bcm + s.left_bcm, s.planned_bcm, 1e-6, 1e-9);
      for (guint i = 0; i < s.dozers->len; i++)
        {
          const SfDozerResult *d = &g_array_index (s.dozers, SfDozerResult, i);
          gint64 sum = 0;
          for (int k = 0; k < SF_USE_N; k++)
            {
              assert_true (d->use_ms[k] >= 0);
              sum += d->use_ms[k];
            }
          assert_int_equal (sum, s.calendar_ms);
        }
      o.run_pushes = s.pushes;
      o.run_left_bcm = s.left_bcm;
      o.run_planned_bcm = s.planned_bcm;
      sf_run_summary_clear (&s);
    }
  o.seconds = (double) (g_get_monotonic_time () - t0) / 1e6;
  print_message ("# %s (%.2f s): plan: %s; lane: %s (%u pushes); run: %s (%u pushes)\n", name,
                 o.seconds, o.plan_ok ? "ok" : o.plan_msg, o.lane_ok ? o.lane_msg : o.lane_msg,
                 o.lane_pushes, o.run_msg, o.run_pushes);
  if (o.seconds > CASE_MAX_S)
    fail_msg ("%s took %.1f s, more than %.0f s", name, o.seconds, CASE_MAX_S);
  return o;
}

#define SCENARIO(...) scenario_with ((const char *const[]){ __VA_ARGS__, NULL })

/* ---- the cases ------------------------------------------------------------- */

/* The dozer floor 35 m above the coal stands 5 m above the natural surface:
 * nothing to doze, said by every study and by the run. */
static void
test_floor_above_ground (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = SCENARIO ("design.dozer_floor_above_coal_m", "35",
                                        "strip.section_x_max_m", "300");
  Outcome o = run_case ("floor above the ground", sc, DO_ALL);
  assert_false (o.plan_ok || o.lane_ok || o.run_ok);
  assert_non_null (strstr (o.plan_msg, "nothing to doze"));
  assert_non_null (strstr (o.run_msg, "nothing to doze"));
  /* the check of every block (validate) says the same, once per block */
  g_autoptr (GError) err = NULL;
  guint n_bad = 99;
  assert_false (sf_study_check_blocks (sc, &n_bad, &err));
  assert_int_equal (n_bad, 1);
  assert_non_null (strstr (err->message, "nothing to doze"));
  assert_null (strchr (err->message, '\n'));
  g_autoptr (SfScenario) ok = SCENARIO (NULL);
  assert_true (sf_study_check_blocks (ok, &n_bad, NULL));
  assert_int_equal (n_bad, 0);
}

/* A surveyed block whose void is already full to the natural surface: no
 * push can dump; the lane ends at once with "no dump room", the run ends
 * with everything left. */
static void
test_no_dump_room (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = SCENARIO (
    "sections",
    "[ { \"block\": 0, \"strings\": { \"surface\": [[-20, 0], [120, 0]],"
    " \"coal_roof\": [[-20, -30], [120, -30]], \"highwall_toe_x_m\": 11,"
    " \"low_wall_edge_x_m\": 61 } } ]");
  Outcome o = run_case ("no dump room", sc, DO_ALL);
  assert_true (o.plan_ok && o.lane_ok && o.run_ok);
  assert_string_equal (o.lane_msg, "no dump room");
  assert_int_equal (o.lane_pushes, 0);
  assert_int_equal (o.run_pushes, 0);
  sf_assert_close (o.run_left_bcm, o.run_planned_bcm, 1e-6, 1e-9);
}

/* Traction 0.06 cannot push a blade up a 50 % ramp (a lifted pivot 50 m
 * high): grade resistance 0.5 W exceeds the usable pull 0.06 W
 * (force balance; analytic).  The lane ends "cannot cut" without a push. */
static void
test_blade_cannot_climb (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = SCENARIO (
    "dozer_classes.0.traction_coefficient", "0.06",
    "design.pivot", "{ \"kind\": \"lifted\", \"lift_m\": 50, \"ramp_grade_pct\": 50 }");
  Outcome o = run_case ("blade that carries nothing uphill", sc, DO_ALL);
  assert_true (o.plan_ok && o.lane_ok && o.run_ok);
  assert_string_equal (o.lane_msg, "cannot cut");
  assert_int_equal (o.lane_pushes, 0);
  assert_int_equal (o.run_pushes, 0);
}

/* The floor 0.1 m under the top of the ground: pushes that carry almost
 * nothing still end the lane. */
static void
test_skin_above_floor (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = SCENARIO ("design.dozer_floor_above_coal_m", "29.9");
  Outcome o = run_case ("skin above the floor", sc, DO_ALL);
  assert_true (o.plan_ok && o.lane_ok && o.run_ok);
  assert_true (*o.lane_msg);
  assert_string_equal (o.run_msg, "complete");
}

/* A hundred straight-push slices on one block: most of them are empty
 * (zero-length pushes, nothing cut) and are passed over. */
static void
test_empty_slices (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = SCENARIO (
    "design.slices", "{ \"strategy\": \"straight-push\", \"count\": 100, \"min_grade_pct\": 0 }");
  Outcome o = run_case ("a hundred straight slices", sc, DO_ALL);
  assert_true (o.plan_ok && o.lane_ok && o.run_ok);
  assert_true (o.run_pushes > 0);
}

/* Loose ground rising 290 m over 90 m beyond the highwall toe (within the
 * 300 m cover limit), at 0.1 m cells:
 * settling it at the angle of repose would take minutes; the watchdog on
 * settling refuses the section with its reason. */
static void
test_oversteep_fine_cells (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = SCENARIO (
    "strip.cell_m", "0.1",
    "sections",
    "[ { \"block\": 0, \"strings\": { \"surface\": [[-20, 0], [10, -40], [100, 250], [120, 250]],"
    " \"coal_roof\": [[-20, -42], [120, -42]], \"highwall_toe_x_m\": 10,"
    " \"low_wall_edge_x_m\": 60 } } ]");
  /* the run only: the studies lay the section out the same way, and each
   * refusal spends the whole budget (some 5 s) */
  Outcome o = run_case ("over-steep loose ground at fine cells", sc, DO_RUN);
  assert_false (o.run_ok);
  assert_non_null (strstr (o.run_msg, "does not settle at the angle of repose"));
}

/* Nobody on the roster: no push is ever made; the no-progress watchdog
 * stops the run after 60 days, well before its 10-year horizon. */
static void
test_nobody_to_drive (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = SCENARIO (
    "simulation.horizon_days", "3650",
    "roster",
    "{ \"shifts\": [ { \"name\": \"all\", \"start\": \"00:00\", \"hours\": 24 } ],"
    " \"crews\": [ { \"name\": \"A\", \"operators\": 0 } ], \"pattern\": [ [ \"A\" ] ] }");
  Outcome o = run_case ("nobody to drive", sc, DO_ALL);
  assert_true (o.run_ok);
  assert_int_equal (o.run_pushes, 0);
  assert_non_null (strstr (o.run_msg, "no progress"));
}

/* A horizon of three hours stops the run with work left. */
static void
test_short_horizon (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = SCENARIO ("simulation.horizon_days", "0.125");
  Outcome o = run_case ("short horizon", sc, DO_ALL);
  assert_true (o.run_ok);
  assert_true (o.run_pushes > 0);
  assert_string_equal (o.run_msg, "horizon reached with work left");
}

int
main (void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test (test_floor_above_ground),
    cmocka_unit_test (test_no_dump_room),
    cmocka_unit_test (test_blade_cannot_climb),
    cmocka_unit_test (test_skin_above_floor),
    cmocka_unit_test (test_empty_slices),
    cmocka_unit_test (test_oversteep_fine_cells),
    cmocka_unit_test (test_nobody_to_drive),
    cmocka_unit_test (test_short_horizon),
  };
  return cmocka_run_group_tests_name ("degenerate", tests, NULL, NULL);
}
