/* SPDX-License-Identifier: MIT
 *
 * test-scenario.c — tests of the scenario loader (sim/sf-scenario.c).
 *
 * Covers: the demo scenario loads and its values come back as written; every
 * scenario in scenarios/ loads; defaults of optional values; the straight
 * blade rating of SAE J1265 / SAE J/ISO 9246; every file of the bad-input
 * corpus tests/bad/ is refused with the expected error code, line count and
 * message fragment (one cmocka test per table row, json-glib style); the
 * corpus and the table list the same files; messages are one line per
 * problem, each naming the file; the problem cap.  The simulation parts:
 * reliability, roster and simulation of the demo come back as written; the
 * defaults when they are absent (one 24 h shift, one crew, every block
 * workable at the start); shifts stored in start order with the pattern
 * columns following them; every distribution kind; blast hours across UTC
 * offsets.
 *
 * Sources of expected values are named beside each check: "round trip" means
 * the value written in the scenario file; "spec" means the documented
 * default of docs/scenario-format.md; "analytic" is plain arithmetic;
 * "Python datetime" means the value was computed offline with the Python 3
 * standard library (datetime.fromisoformat, timestamp()), a general-purpose
 * reference implementation of ISO 8601 date-times with offsets.
 */
#include "sf-test.h"

#include <math.h>
#include <string.h>

#include "sf-scenario.h"

/* ---- helpers ------------------------------------------------------------- */

static SfScenario *
load_source_file (const char *rel, GError **error)
{
  g_autofree char *path = sf_test_source_path (rel);
  return sf_scenario_load_from_file (path, error);
}

static SfScenario *
load_text (const char *json, GError **error)
{
  return sf_scenario_load_from_data (json, strlen (json), "mem.json", NULL, error);
}

static guint
count_lines (const char *msg)
{
  guint n = 1;
  for (const char *p = msg; *p; p++)
    n += *p == '\n';
  return n;
}

/* Asserts that err carries SF_SCENARIO_ERROR / code and that its message
 * contains `fragment`; prints the message when it does not. */
static void
assert_scenario_error (const GError *err, int code, const char *fragment)
{
  assert_non_null (err);
  assert_int_equal (err->domain, SF_SCENARIO_ERROR);
  if (err->code != code || !strstr (err->message, fragment))
    print_error ("code %d (want %d); message:\n%s\nwanted fragment: %s\n", err->code, code,
                 err->message, fragment);
  assert_int_equal (err->code, code);
  assert_non_null (strstr (err->message, fragment));
}

static const SfDozerClass *
class_named (const SfScenario *sc, const char *name)
{
  int k = sf_scenario_find_class (sc, name);
  assert_true (k >= 0);
  return g_ptr_array_index (sc->classes, k);
}

/* A minimal valid scenario with a placeholder "@EXTRA@" at the root and
 * "@CLASS@" for the body of the one dozer class. */
static const char *const MINIMAL =
  "{ \"format\": \"stripfleet-scenario-1\", \"name\": \"minimal\", @EXTRA@\n"
  "  \"strip\": { \"length_m\": 200, \"blocks\": 4, \"lane_width_m\": 10,\n"
  "             \"section_x_min_m\": -20, \"section_x_max_m\": 100 },\n"
  "  \"sections\": [ { \"block\": 0, \"generated\": { \"overburden_m\": 30, \"strip_width_m\": 50,\n"
  "      \"coal_thickness_m\": 5, \"highwall_deg\": 70, \"cast_fraction\": 0.3 } } ],\n"
  "  \"material\": { \"bank_density_t_per_bcm\": 2.4, \"swell\": 0.25, \"angle_of_repose_deg\": 37 },\n"
  "  \"dozer_classes\": [ { \"name\": \"c1\", \"operating_mass_t\": 105, \"net_power_kw\": 650,\n"
  "      @CLASS@ } ],\n"
  "  \"fleet\": [ { \"class\": \"c1\", \"count\": 2 } ] }\n";

static const char *const U_CLASS =
  "\"blade\": { \"type\": \"u\", \"width_m\": 6.3, \"height_m\": 2.2, \"rated_capacity_lcm\": 34 },"
  " \"forward_speeds_kmh\": [3.8, 6.8, 11.8], \"reverse_speeds_kmh\": [4.9, 8.7, 15.0]";

static char *
minimal_with (const char *extra, const char *cls)
{
  g_autoptr (GString) s = g_string_new (MINIMAL);
  g_string_replace (s, "@EXTRA@", extra ? extra : "", 1);
  g_string_replace (s, "@CLASS@", cls ? cls : U_CLASS, 1);
  return g_string_free (g_steal_pointer (&s), FALSE);
}

/* ---- the demo scenario ---------------------------------------------------- */

static void
test_demo_loads_and_round_trips (void **state)
{
  (void)state;
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = load_source_file ("scenarios/demo-strip.json", &err);
  if (err)
    print_error ("%s\n", err->message);
  assert_null (err);
  assert_non_null (sc);

  /* round trip: the values written in scenarios/demo-strip.json */
  assert_string_equal (sf_scenario_get_name (sc), "demo-strip");
  assert_non_null (strstr (sf_scenario_get_description (sc), "Invented for demonstration"));
  assert_non_null (strstr (sc->path, "demo-strip.json"));
  sf_assert_close (sc->strip.length_m, 1500.0, 0, 0);
  assert_int_equal (sf_scenario_get_n_blocks (sc), 30);
  sf_assert_close (sc->strip.lane_width_m, 6.25, 0, 0);
  sf_assert_close (sc->strip.cell_m, 0.5, 0, 0);
  sf_assert_close (sc->strip.x_min_m, -40.0, 0, 0);
  sf_assert_close (sc->strip.x_max_m, 220.0, 0, 0);
  /* analytic: floor(1500 m / 30 blocks / 6.25 m) = floor(8.0) = 8 lanes */
  assert_int_equal (sf_scenario_get_n_lanes (sc), 8);

  /* sections come back sorted by block: 0, 10, 15 (CSV), 20, 29 */
  static const guint blocks[] = { 0, 10, 15, 20, 29 };
  assert_int_equal (sc->sections->len, G_N_ELEMENTS (blocks));
  for (guint i = 0; i < G_N_ELEMENTS (blocks); i++)
    {
      const SfSectionSpec *s = g_ptr_array_index (sc->sections, i);
      assert_int_equal (s->block, blocks[i]);
      assert_int_equal (s->kind, blocks[i] == 15 ? SF_SECTION_STRINGS : SF_SECTION_GENERATED);
      assert_non_null (s->source);
    }
  const SfSectionSpec *g0 = g_ptr_array_index (sc->sections, 0);
  assert_non_null (strstr (g0->source, "demo-strip.json:sections[0]"));
  sf_assert_close (g0->params.overburden_m, 34.0, 0, 0);
  sf_assert_close (g0->params.strip_width_m, 60.0, 0, 0);
  sf_assert_close (g0->params.coal_thickness_m, 5.0, 0, 0);
  sf_assert_close (g0->params.highwall_deg, 70.0, 0, 0);
  sf_assert_close (g0->params.cast_fraction, 0.28, 0, 0);
  const SfSectionSpec *g20 = g_ptr_array_index (sc->sections, 3);
  sf_assert_close (g20->params.overburden_m, 46.0, 0, 0);
  sf_assert_close (g20->params.dip_deg, 3.0, 0, 0);
  sf_assert_close (g20->params.cast_fraction, 0.35, 0, 0);

  const SfSectionSpec *b15 = g_ptr_array_index (sc->sections, 2);
  assert_non_null (strstr (b15->source, "demo-strip-b15.csv"));
  sf_assert_close (b15->highwall_toe_x_m, 15.3, 0, 0);
  sf_assert_close (b15->low_wall_edge_x_m, 75.3, 0, 0);
  assert_int_equal (b15->surface->len, 32);
  assert_int_equal (b15->coal_roof->len, 7);
  /* round trip: first and last rows of scenarios/demo-strip-b15.csv */
  sf_assert_close (g_array_index (b15->surface, SfPoint, 0).x_m, -40.0, 0, 0);
  sf_assert_close (g_array_index (b15->surface, SfPoint, 0).z_m, 0.0, 0, 0);
  sf_assert_close (g_array_index (b15->coal_roof, SfPoint, 6).x_m, 220.0, 0, 0);
  sf_assert_close (g_array_index (b15->coal_roof, SfPoint, 6).z_m, -47.1, 0, 0);

  sf_assert_close (sc->material.bank_density_t_per_bcm, 2.40, 0, 0);
  sf_assert_close (sc->material.swell, 0.25, 0, 0);
  sf_assert_close (sc->material.repose_deg, 37.0, 0, 0);
  sf_assert_close (sc->material.soil_friction, 0.75, 0, 0);
  sf_assert_close (sc->material.steel_friction, 0.45, 0, 0);
  sf_assert_close (sc->material.cutting_resistance_kpa, 60.0, 0, 0);
  sf_assert_close (sc->material.blade_fill_factor, 0.9, 0, 0);

  assert_int_equal (sf_scenario_get_n_classes (sc), 3);
  assert_string_equal (sf_scenario_get_class_name (sc, 0), "u-blade-100t");
  assert_int_equal (sf_scenario_find_class (sc, "semi-u-70t"), 2);
  assert_int_equal (sf_scenario_find_class (sc, "no-such-class"), -1);
  const SfDozerClass *u = class_named (sc, "u-blade-100t");
  sf_assert_close (u->operating_mass_t, 105.0, 0, 0);
  sf_assert_close (u->net_power_kw, 650.0, 0, 0);
  assert_int_equal (u->blade_type, SF_BLADE_U);
  sf_assert_close (u->blade_width_m, 6.3, 0, 0);
  sf_assert_close (u->blade_height_m, 2.2, 0, 0);
  sf_assert_close (sf_dozer_class_rated_lcm (u), 34.0, 0, 0);
  assert_int_equal (u->n_fwd, 3);
  assert_int_equal (u->n_rev, 3);
  sf_assert_close (u->fwd_kmh[0], 3.8, 0, 0);
  sf_assert_close (u->fwd_kmh[2], 11.8, 0, 0);
  sf_assert_close (u->rev_kmh[1], 8.7, 0, 0);
  assert_int_equal (u->push_gear, 1);
  assert_int_equal (u->return_gear, 2);
  sf_assert_close (u->fixed_time_min, 0.05, 0, 0);
  sf_assert_close (u->traction_coefficient, 0.55, 0, 0);
  sf_assert_close (u->cost_per_operating_h, 520.0, 0, 0);
  const SfDozerClass *carry = class_named (sc, "carry-blade-100t");
  assert_int_equal (carry->blade_type, SF_BLADE_CARRY);
  sf_assert_close (carry->carry_share, 0.2, 0, 0);
  sf_assert_close (sf_dozer_class_rated_lcm (carry), 44.0, 0, 0);
  sf_assert_close (carry->blade_width_m, 6.5, 0, 0);
  const SfDozerClass *semi = class_named (sc, "semi-u-70t");
  assert_int_equal (semi->blade_type, SF_BLADE_SEMI_U);
  sf_assert_close (semi->net_power_kw, 455.0, 0, 0);
  sf_assert_close (sf_dozer_class_rated_lcm (semi), 19.0, 0, 0);
  sf_assert_close (semi->cost_per_operating_h, 330.0, 0, 0);
  sf_assert_close (semi->carry_share, 0.0, 0, 0);

  /* fleet: 3 + 2 + 1, in file order */
  assert_int_equal (sc->fleet->len, 3);
  static const guint counts[] = { 3, 2, 1 };
  guint total = 0;
  for (guint i = 0; i < 3; i++)
    {
      const SfFleetEntry *e = &g_array_index (sc->fleet, SfFleetEntry, i);
      assert_int_equal (e->class_index, i);
      assert_int_equal (e->count, counts[i]);
      total += e->count;
    }
  assert_int_equal (total, 6);

  sf_assert_close (sc->design.dozer_floor_above_coal_m, 20.0, 0, 0);
  assert_int_equal (sc->design.pivot, SF_PIVOT_STANDARD);
  assert_int_equal (sc->design.strategy, SF_SLICES_TIPOVER_LAYERS);
  sf_assert_close (sc->design.cutoff_grade_pct, 20.0, 0, 0);
  assert_int_equal (sc->design.layer_count, 4);
  assert_true (sc->design.slot_dozing);
  assert_false (sc->design.side_by_side);
  sf_assert_close (sc->factors.operator_skill, 0.83, 0, 0);
  sf_assert_close (sc->factors.job_efficiency, 0.83, 0, 0);
  sf_assert_close (sc->factors.visibility, 1.0, 0, 0);
  sf_assert_close (sc->factors.material, 1.0, 0, 0);
  sf_assert_close (sc->coal_density_t_per_m3, 1.40, 0, 0);
}

/* Every scenario shipped in scenarios/ must load (like a data validation
 * pass over a quirks folder). */
static void
test_every_shipped_scenario_loads (void **state)
{
  (void)state;
  g_autofree char *dir_path = sf_test_source_path ("scenarios");
  g_autoptr (GError) err = NULL;
  g_autoptr (GDir) dir = g_dir_open (dir_path, 0, &err);
  assert_non_null (dir);
  g_autoptr (GPtrArray) names = g_ptr_array_new_with_free_func (g_free);
  const char *n;
  while ((n = g_dir_read_name (dir)))
    if (g_str_has_suffix (n, ".json"))
      g_ptr_array_add (names, g_strdup (n));
  assert_true (names->len >= 1);
  for (guint i = 0; i < names->len; i++)
    {
      g_autofree char *p = g_build_filename (dir_path, g_ptr_array_index (names, i), NULL);
      g_autoptr (GError) e = NULL;
      g_autoptr (SfScenario) sc = sf_scenario_load_from_file (p, &e);
      if (e)
        print_error ("%s\n", e->message);
      assert_non_null (sc);
    }
}

/* ---- defaults and blade rating ------------------------------------------- */

static void
test_defaults_applied (void **state)
{
  (void)state;
  /* one reverse gear: return_gear defaults to min(2, 1) = 1 */
  g_autofree char *json = minimal_with (
    NULL, "\"blade\": { \"type\": \"carry\", \"width_m\": 6.5, \"height_m\": 2.4,"
          " \"rated_capacity_lcm\": 44 },"
          " \"forward_speeds_kmh\": [3.8, 6.8], \"reverse_speeds_kmh\": [4.9]");
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = load_text (json, &err);
  if (err)
    print_error ("%s\n", err->message);
  assert_non_null (sc);
  assert_string_equal (sf_scenario_get_description (sc), "");
  /* spec: cell_m 0.5 */
  sf_assert_close (sc->strip.cell_m, 0.5, 0, 0);
  /* spec: material defaults */
  sf_assert_close (sc->material.soil_friction, 0.75, 0, 0);
  sf_assert_close (sc->material.steel_friction, 0.45, 0, 0);
  sf_assert_close (sc->material.cutting_resistance_kpa, 60.0, 0, 0);
  sf_assert_close (sc->material.blade_fill_factor, 0.9, 0, 0);
  /* spec: generated section defaults */
  const SfSectionSpec *s = g_ptr_array_index (sc->sections, 0);
  sf_assert_close (s->params.dip_deg, 0.0, 0, 0);
  sf_assert_close (s->params.muckpile_grade_pct, 25.0, 0, 0);
  sf_assert_close (s->params.prev_spoil_height_m, 0.0, 0, 0);
  assert_string_equal (s->source, "mem.json:sections[0]");
  /* spec: class defaults; carry_share 0.2 for a carry blade */
  const SfDozerClass *c = class_named (sc, "c1");
  sf_assert_close (c->drivetrain_efficiency, 0.8, 0, 0);
  sf_assert_close (c->carry_share, 0.2, 0, 0);
  assert_int_equal (c->push_gear, 1);
  assert_int_equal (c->return_gear, 1);
  sf_assert_close (c->fixed_time_min, 0.05, 0, 0);
  sf_assert_close (c->traction_coefficient, 0.55, 0, 0);
  sf_assert_close (c->cost_per_operating_h, 0.0, 0, 0);
  /* spec: design, factors, coal defaults; also what the *_defaults give */
  SfDesign d;
  sf_design_defaults (&d);
  sf_assert_close (sc->design.dozer_floor_above_coal_m, 10.0, 0, 0);
  sf_assert_close (sc->design.spoil_toe_offset_m, 0.0, 0, 0);
  assert_int_equal (sc->design.pivot, SF_PIVOT_STANDARD);
  sf_assert_close (sc->design.lift_ramp_grade_pct, 10.0, 0, 0);
  assert_int_equal (sc->design.strategy, SF_SLICES_TIPOVER_LAYERS);
  sf_assert_close (sc->design.cutoff_grade_pct, 20.0, 0, 0);
  assert_int_equal (sc->design.layer_count, 4);
  assert_int_equal (sc->design.straight_count, 6);
  sf_assert_close (sc->design.min_push_grade_pct, 5.0, 0, 0);
  assert_true (sc->design.slot_dozing);
  assert_false (sc->design.side_by_side);
  sf_assert_close (sc->design.spill_per_m, 0.002, 0, 0);
  sf_assert_close (sc->design.slot_spill_factor, 0.5, 0, 0);
  sf_assert_close (sc->design.side_by_side_spill_factor, 0.6, 0, 0);
  sf_assert_close (sc->design.load_distance_m, 12.0, 0, 0);
  assert_int_equal (d.layer_count, sc->design.layer_count);
  sf_assert_close (d.load_distance_m, sc->design.load_distance_m, 0, 0);
  sf_assert_close (sc->factors.operator_skill, 1.0, 0, 0);
  sf_assert_close (sc->factors.job_efficiency, 0.83, 0, 0);
  sf_assert_close (sc->factors.visibility, 1.0, 0, 0);
  sf_assert_close (sc->factors.material, 1.0, 0, 0);
  sf_assert_close (sc->coal_density_t_per_m3, 0.0, 0, 0);
  /* analytic: floor(200 m / 4 / 10 m) = 5 lanes */
  assert_int_equal (sf_scenario_get_n_lanes (sc), 5);
}

static void
test_design_variants_load (void **state)
{
  (void)state;
  g_autofree char *json = minimal_with (
    "\"design\": { \"pivot\": { \"kind\": \"lifted\", \"lift_m\": 3 },"
    " \"slices\": { \"strategy\": \"straight-push\", \"count\": 5 }, \"side_by_side\": true },", NULL);
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = load_text (json, &err);
  if (err)
    print_error ("%s\n", err->message);
  assert_non_null (sc);
  /* round trip, plus spec defaults ramp 10 % and min grade 5 % */
  assert_int_equal (sc->design.pivot, SF_PIVOT_LIFTED);
  sf_assert_close (sc->design.pivot_lift_m, 3.0, 0, 0);
  sf_assert_close (sc->design.lift_ramp_grade_pct, 10.0, 0, 0);
  assert_int_equal (sc->design.strategy, SF_SLICES_STRAIGHT);
  assert_int_equal (sc->design.straight_count, 5);
  sf_assert_close (sc->design.min_push_grade_pct, 5.0, 0, 0);
  assert_true (sc->design.side_by_side);
}

/* SAE J1265 "Capacity rating - dozer blades" (superseded 2003 by SAE J/ISO
 * 9246): straight blade V = 0.8 W H^2.  Check value CV1 of the shared
 * domain sheet: W = 5.0 m, H = 2.0 m -> 0.8 * 5 * 4 = 16.0 m3 loose. */
static void
test_straight_blade_default_capacity (void **state)
{
  (void)state;
  SfDozerClass c = { 0 };
  c.blade_type = SF_BLADE_STRAIGHT;
  c.blade_width_m = 5.0;
  c.blade_height_m = 2.0;
  sf_assert_close (sf_dozer_class_rated_lcm (&c), 16.0, 0, 1e-3); /* SAE J1265, CV1 */

  /* the loader fills the same value when the file gives none */
  g_autofree char *json = minimal_with (
    NULL, "\"blade\": { \"type\": \"straight\", \"width_m\": 5.0, \"height_m\": 2.0 },"
          " \"forward_speeds_kmh\": [3.8], \"reverse_speeds_kmh\": [4.9]");
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = load_text (json, &err);
  if (err)
    print_error ("%s\n", err->message);
  assert_non_null (sc);
  const SfDozerClass *lc = class_named (sc, "c1");
  sf_assert_close (lc->blade_rated_lcm, 16.0, 0, 1e-3);        /* SAE J1265, CV1 */
  sf_assert_close (sf_dozer_class_rated_lcm (lc), 16.0, 0, 1e-3); /* SAE J1265, CV1 */
  assert_int_equal (lc->return_gear, 1); /* spec: min(2, one reverse gear) */
}

/* A rated value given for the class wins over the formula (round trip). */
static void
test_rated_capacity_given_wins (void **state)
{
  (void)state;
  SfDozerClass c = { 0 };
  c.blade_type = SF_BLADE_STRAIGHT;
  c.blade_width_m = 5.0;
  c.blade_height_m = 2.0;
  c.blade_rated_lcm = 17.5;
  sf_assert_close (sf_dozer_class_rated_lcm (&c), 17.5, 0, 0);
}

/* ---- sections given as strings ------------------------------------------- */

static void
test_inline_strings_section_loads (void **state)
{
  (void)state;
  g_autofree char *json = minimal_with (NULL, NULL);
  g_autoptr (GString) s = g_string_new (json);
  g_string_replace (s, "\"sections\": [ ",
                    "\"sections\": [ { \"block\": 3, \"strings\": {"
                    " \"surface\": [[-20, 0], [0, 0], [40, -10], [100, -12]],"
                    " \"coal_roof\": [[-25, -30], [105, -31]],"
                    " \"highwall_toe_x_m\": 10, \"low_wall_edge_x_m\": 60 } }, ",
                    1);
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = load_text (s->str, &err);
  if (err)
    print_error ("%s\n", err->message);
  assert_non_null (sc);
  assert_int_equal (sc->sections->len, 2);
  /* sorted by block: the generated block 0 first, the strings of block 3 second */
  const SfSectionSpec *g = g_ptr_array_index (sc->sections, 0);
  const SfSectionSpec *st = g_ptr_array_index (sc->sections, 1);
  assert_int_equal (g->block, 0);
  assert_int_equal (st->block, 3);
  assert_int_equal (st->kind, SF_SECTION_STRINGS);
  assert_string_equal (st->source, "mem.json:sections[0]");
  assert_int_equal (st->surface->len, 4);
  assert_int_equal (st->coal_roof->len, 2);
  sf_assert_close (g_array_index (st->surface, SfPoint, 2).x_m, 40.0, 0, 0);
  sf_assert_close (g_array_index (st->surface, SfPoint, 2).z_m, -10.0, 0, 0);
  sf_assert_close (st->highwall_toe_x_m, 10.0, 0, 0);
  sf_assert_close (st->low_wall_edge_x_m, 60.0, 0, 0);
}

/* load_from_data resolves a relative CSV path against base_dir and names
 * the section by that path. */
static void
test_csv_relative_to_base_dir (void **state)
{
  (void)state;
  g_autofree char *json = minimal_with (NULL, NULL);
  g_autoptr (GString) s = g_string_new (json);
  g_string_replace (s, "\"section_x_min_m\": -20, \"section_x_max_m\": 100",
                    "\"section_x_min_m\": -40, \"section_x_max_m\": 220", 1);
  g_string_replace (s, "\"sections\": [ ",
                    "\"sections\": [ { \"block\": 2, \"csv\": \"demo-strip-b15.csv\","
                    " \"highwall_toe_x_m\": 15, \"low_wall_edge_x_m\": 75 }, ",
                    1);
  g_autofree char *dir = sf_test_source_path ("scenarios");
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc
    = sf_scenario_load_from_data (s->str, s->len, "mem.json", dir, &err);
  if (err)
    print_error ("%s\n", err->message);
  assert_non_null (sc);
  const SfSectionSpec *b2 = g_ptr_array_index (sc->sections, 1);
  assert_int_equal (b2->block, 2);
  g_autofree char *want = g_build_filename (dir, "demo-strip-b15.csv", NULL);
  assert_string_equal (b2->source, want);

  /* without base_dir the same text looks in the current folder */
  g_autoptr (GError) err2 = NULL;
  g_autofree char *cwd = g_get_current_dir ();
  g_autofree char *here = g_build_filename (cwd, "demo-strip-b15.csv", NULL);
  if (!g_file_test (here, G_FILE_TEST_EXISTS))
    {
      g_autoptr (SfScenario) sc2 = sf_scenario_load_from_data (s->str, s->len, NULL, NULL, &err2);
      assert_null (sc2);
      assert_scenario_error (err2, SF_SCENARIO_ERROR_IO, "demo-strip-b15.csv: no such file");
    }
}

/* ---- reliability, roster, simulation -------------------------------------- */

static SfScenario *
load_ok (const char *json)
{
  g_autoptr (GError) err = NULL;
  SfScenario *sc = load_text (json, &err);
  if (err)
    print_error ("%s\n", err->message);
  assert_non_null (sc);
  return sc;
}

static void
assert_dist (const SfDist *d, SfDistKind kind, double mean, double sd, double shape, double scale)
{
  assert_int_equal (d->kind, kind);
  sf_assert_close (d->mean, mean, 0, 0);
  sf_assert_close (d->sd, sd, 0, 0);
  sf_assert_close (d->shape, shape, 0, 0);
  sf_assert_close (d->scale, scale, 0, 0);
}

static void
test_demo_roster_and_simulation_round_trip (void **state)
{
  (void)state;
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = load_source_file ("scenarios/demo-strip.json", &err);
  if (err)
    print_error ("%s\n", err->message);
  assert_non_null (sc);
  /* round trip: the unmanned dozer is documented in the description */
  assert_non_null (strstr (sf_scenario_get_description (sc), "one dozer stands unmanned"));

  /* reliability, round trip: 90 h (semi-U class 110 h) exponential between
   * failures, lognormal repairs 5 h mean 3 h sd, 250 h services of 8 h,
   * 20 min refuelling */
  for (guint i = 0; i < sf_scenario_get_n_classes (sc); i++)
    {
      const SfDozerClass *c = g_ptr_array_index (sc->classes, i);
      const SfReliability *rel = &c->reliability;
      assert_true (rel->failures);
      double tbf = strcmp (c->name, "semi-u-70t") == 0 ? 110.0 : 90.0;
      assert_dist (&rel->tbf_h, SF_DIST_EXPONENTIAL, tbf, 0, 0, 0);
      assert_dist (&rel->ttr_h, SF_DIST_LOGNORMAL, 5.0, 3.0, 0, 0);
      sf_assert_close (rel->service_interval_h, 250.0, 0, 0);
      sf_assert_close (rel->service_h, 8.0, 0, 0);
      sf_assert_close (rel->refuel_min, 20.0, 0, 0);
    }

  /* roster, round trip */
  const SfRoster *ro = &sc->roster;
  assert_int_equal (ro->n_shifts, 2);
  assert_string_equal (ro->shifts[0].name, "day");
  assert_string_equal (ro->shifts[1].name, "night");
  assert_int_equal (ro->shifts[0].start_min, 360);  /* analytic: 06:00 = 6 x 60 min */
  assert_int_equal (ro->shifts[1].start_min, 1080); /* analytic: 18:00 = 18 x 60 min */
  sf_assert_close (ro->shifts[0].hours, 12.0, 0, 0);
  sf_assert_close (ro->shifts[1].hours, 12.0, 0, 0);
  assert_false (ro->shifts[0].night);
  assert_true (ro->shifts[1].night);
  assert_int_equal (ro->n_crews, 4);
  static const char *const crew_names[] = { "A", "B", "C", "D" };
  static const double skills[] = { 1.0, 0.95, 1.0, 0.97 };
  for (guint i = 0; i < 4; i++)
    {
      assert_string_equal (ro->crews[i].name, crew_names[i]);
      assert_int_equal (ro->crews[i].operators, 5);
      sf_assert_close (ro->crews[i].skill, skills[i], 0, 0);
    }
  /* pattern indices, round trip: days 1-4 A day / C night, days 5-8 B day /
   * D night; stored by day, shifts in start order */
  assert_int_equal (ro->pattern_days, 8);
  assert_non_null (ro->pattern);
  for (guint d = 0; d < 8; d++)
    {
      assert_int_equal (ro->pattern[d * 2 + 0], d < 4 ? 0 : 1);
      assert_int_equal (ro->pattern[d * 2 + 1], d < 4 ? 2 : 3);
    }
  sf_assert_close (ro->shift_change_min, 20.0, 0, 0);
  sf_assert_close (ro->meal_min, 30.0, 0, 0);
  sf_assert_close (ro->meal_after_h, 5.0, 0, 0);
  assert_false (ro->hot_seat);
  sf_assert_close (ro->night_factor, 0.95, 0, 0);
  sf_assert_close (ro->wet_day_probability, 0.06, 0, 0);
  assert_dist (&ro->wet_stop_h, SF_DIST_LOGNORMAL, 5.0, 3.0, 0, 0);

  /* simulation, round trip */
  const SfSimulation *sim = &sc->sim;
  assert_non_null (sim->start);
  assert_int_equal (g_date_time_get_year (sim->start), 2027);
  assert_int_equal (g_date_time_get_month (sim->start), 3);
  assert_int_equal (g_date_time_get_day_of_month (sim->start), 1);
  assert_int_equal (g_date_time_get_hour (sim->start), 6);
  assert_true (g_date_time_get_utc_offset (sim->start) == 10 * G_TIME_SPAN_HOUR);
  /* Python datetime: 2027-03-01T06:00:00+10:00 is Unix time 1803844800 */
  assert_true (g_date_time_to_unix (sim->start) == G_GINT64_CONSTANT (1803844800));
  assert_true (sim->seed == 42);
  sf_assert_close (sim->horizon_days, 365.0, 0, 0);
  assert_int_equal (sim->dispatch, SF_DISPATCH_FINISH_BLOCK);
  assert_int_equal (sim->min_separation_lanes, 1);
  assert_int_equal (sim->max_slice_lead, 1);
  sf_assert_close (sim->tram_speed_kmh, 5.0, 0, 0);
  assert_int_equal (sim->fitters, 2);
  assert_non_null (sim->blast_h);
  /* Python datetime: 2027-03-08T07:00+10:00 is 169 h after the start,
   * 2027-03-15T07:00+10:00 is 337 h after (analytic: 7 x 24 + 1, 14 x 24 + 1) */
  for (guint b = 0; b < 30; b++)
    sf_assert_close (sim->blast_h[b], b < 10 ? 0.0 : b < 20 ? 169.0 : 337.0, 0, 0);
}

/* Without "roster", "simulation" and "reliability" the documented defaults
 * apply. */
static void
test_roster_and_simulation_defaults_when_absent (void **state)
{
  (void)state;
  g_autofree char *json = minimal_with (NULL, NULL);
  g_autoptr (SfScenario) sc = load_ok (json);

  /* spec: a class without reliability never fails, no services, no refuelling */
  const SfDozerClass *c = class_named (sc, "c1");
  assert_false (c->reliability.failures);
  sf_assert_close (c->reliability.service_interval_h, 0.0, 0, 0);
  sf_assert_close (c->reliability.refuel_min, 0.0, 0, 0);

  /* spec: one 24 h shift "all-day" from 00:00, one crew "all" with an
   * operator for each of the 2 dozers of the fleet, skill 1, a one-day
   * pattern, no change time, no meals, night factor 1, no weather */
  const SfRoster *ro = &sc->roster;
  assert_int_equal (ro->n_shifts, 1);
  assert_string_equal (ro->shifts[0].name, "all-day");
  assert_int_equal (ro->shifts[0].start_min, 0);
  sf_assert_close (ro->shifts[0].hours, 24.0, 0, 0);
  assert_false (ro->shifts[0].night);
  assert_int_equal (ro->n_crews, 1);
  assert_string_equal (ro->crews[0].name, "all");
  assert_int_equal (ro->crews[0].operators, 2);
  sf_assert_close (ro->crews[0].skill, 1.0, 0, 0);
  assert_int_equal (ro->pattern_days, 1);
  assert_non_null (ro->pattern);
  assert_int_equal (ro->pattern[0], 0);
  sf_assert_close (ro->shift_change_min, 0.0, 0, 0);
  sf_assert_close (ro->meal_min, 0.0, 0, 0);
  assert_false (ro->hot_seat);
  sf_assert_close (ro->night_factor, 1.0, 0, 0);
  sf_assert_close (ro->wet_day_probability, 0.0, 0, 0);

  /* spec: start 2027-01-04T06:00:00+00:00, seed 1, 3650 days, finish-block,
   * separation 1, lead 1, 5 km/h, 2 fitters, every block workable at once */
  const SfSimulation *sim = &sc->sim;
  assert_non_null (sim->start);
  assert_true (g_date_time_get_utc_offset (sim->start) == 0);
  /* Python datetime: 2027-01-04T06:00:00+00:00 is Unix time 1799042400 (a Monday) */
  assert_true (g_date_time_to_unix (sim->start) == G_GINT64_CONSTANT (1799042400));
  assert_int_equal (g_date_time_get_day_of_week (sim->start), 1);
  assert_true (sim->seed == 1);
  sf_assert_close (sim->horizon_days, 3650.0, 0, 0);
  assert_int_equal (sim->dispatch, SF_DISPATCH_FINISH_BLOCK);
  assert_int_equal (sim->min_separation_lanes, 1);
  assert_int_equal (sim->max_slice_lead, 1);
  sf_assert_close (sim->tram_speed_kmh, 5.0, 0, 0);
  assert_int_equal (sim->fitters, 2);
  assert_non_null (sim->blast_h);
  for (guint b = 0; b < 4; b++)
    sf_assert_close (sim->blast_h[b], 0.0, 0, 0); /* spec: blast_h all 0 */

  /* spec: optional members of a given roster and simulation default too */
  g_autofree char *json2 = minimal_with (
    "\"roster\": { \"shifts\": [ { \"name\": \"s\", \"start\": \"07:30\", \"hours\": 24 } ],"
    " \"crews\": [ { \"name\": \"x\", \"operators\": 1 } ], \"pattern\": [ [\"x\"] ] },"
    " \"simulation\": { \"seed\": 9007199254740992 },", NULL);
  g_autoptr (SfScenario) sc2 = load_ok (json2);
  assert_int_equal (sc2->roster.shifts[0].start_min, 450); /* analytic: 7 x 60 + 30 */
  assert_false (sc2->roster.shifts[0].night);
  sf_assert_close (sc2->roster.crews[0].skill, 1.0, 0, 0);
  sf_assert_close (sc2->roster.meal_after_h, 5.0, 0, 0);
  sf_assert_close (sc2->roster.night_factor, 1.0, 0, 0);
  sf_assert_close (sc2->roster.wet_day_probability, 0.0, 0, 0);
  assert_true (sc2->sim.seed == G_GUINT64_CONSTANT (9007199254740992)); /* spec: up to 2^53 */
  assert_true (g_date_time_to_unix (sc2->sim.start) == G_GINT64_CONSTANT (1799042400));
  assert_int_equal (sc2->sim.fitters, 2);
}

/* The *_defaults and *_clear functions used by code that builds a scenario
 * without a file. */
static void
test_defaults_and_clear_in_code (void **state)
{
  (void)state;
  SfRoster r = { 0 };
  sf_roster_defaults (&r, 6);
  assert_int_equal (r.crews[0].operators, 6); /* spec: operators = fleet size */
  assert_int_equal (r.pattern_days, 1);
  sf_roster_clear (&r);
  assert_null (r.pattern);
  assert_null (r.shifts[0].name);
  sf_roster_clear (&r); /* a second clear is harmless */

  SfSimulation s = { 0 };
  sf_simulation_defaults (&s, 0);
  assert_null (s.blast_h); /* no blocks, no table */
  assert_non_null (s.start);
  sf_simulation_clear (&s);
  assert_null (s.start);
  sf_simulation_defaults (&s, 3);
  sf_assert_close (s.blast_h[2], 0.0, 0, 0); /* spec: every block workable at the start */
  sf_simulation_clear (&s);
  sf_simulation_clear (&s);
}

/* Shifts given in any rotation of the day are stored in start order; the
 * pattern columns (given in the order of "shifts") follow them. */
static void
test_shifts_stored_in_start_order (void **state)
{
  (void)state;
  g_autofree char *json = minimal_with (
    "\"roster\": {"
    " \"shifts\": [ { \"name\": \"night\", \"start\": \"22:00\", \"hours\": 8, \"night\": true },"
    "              { \"name\": \"day\", \"start\": \"06:00\", \"hours\": 8 },"
    "              { \"name\": \"evening\", \"start\": \"14:00\", \"hours\": 8 } ],"
    " \"crews\": [ { \"name\": \"N\", \"operators\": 2 }, { \"name\": \"D\", \"operators\": 2 },"
    "             { \"name\": \"E\", \"operators\": 1, \"skill\": 0.9 } ],"
    " \"pattern\": [ [\"N\", \"D\", \"E\"], [null, \"D\", \"E\"] ],"
    " \"meal_min\": 30, \"meal_after_h\": 4 },", NULL);
  g_autoptr (SfScenario) sc = load_ok (json);
  const SfRoster *ro = &sc->roster;
  assert_int_equal (ro->n_shifts, 3);
  /* analytic: day 06:00 = 360 min, evening 14:00 = 840, night 22:00 = 1320 */
  assert_string_equal (ro->shifts[0].name, "day");
  assert_int_equal (ro->shifts[0].start_min, 360);
  assert_string_equal (ro->shifts[1].name, "evening");
  assert_int_equal (ro->shifts[1].start_min, 840);
  assert_string_equal (ro->shifts[2].name, "night");
  assert_int_equal (ro->shifts[2].start_min, 1320);
  assert_true (ro->shifts[2].night);
  assert_false (ro->shifts[0].night);
  /* round trip, columns in start order: day D (1), evening E (2), night N (0);
   * null is SF_NO_CREW */
  assert_int_equal (ro->pattern_days, 2);
  static const guint8 want[2][3] = { { 1, 2, 0 }, { 1, 2, SF_NO_CREW } };
  for (guint d = 0; d < 2; d++)
    for (guint k = 0; k < 3; k++)
      assert_int_equal (ro->pattern[d * 3 + k], want[d][k]);
  sf_assert_close (ro->crews[2].skill, 0.9, 0, 0);
  sf_assert_close (ro->meal_after_h, 4.0, 0, 0);
}

/* Every distribution kind loads with its own parameters (round trip); a
 * service interval of 0 switches services off and a given service_h is only
 * checked; weather with probability 0 needs no stop_h. */
static void
test_distribution_kinds_load (void **state)
{
  (void)state;
  g_autoptr (GString) cls = g_string_new (U_CLASS);
  g_string_append (cls, ", \"reliability\": {"
                        " \"tbf_h\": { \"dist\": \"weibull\", \"shape\": 1.5, \"scale\": 90 },"
                        " \"ttr_h\": { \"dist\": \"fixed\", \"mean\": 4 },"
                        " \"service_interval_h\": 0, \"service_h\": 8 }");
  g_autofree char *json = minimal_with (
    "\"roster\": { \"shifts\": [ { \"name\": \"a\", \"start\": \"00:00\", \"hours\": 24 } ],"
    " \"crews\": [ { \"name\": \"x\", \"operators\": 2 } ], \"pattern\": [ [\"x\"] ],"
    " \"weather\": { \"wet_day_probability\": 0 } },"
    " \"simulation\": { \"dispatch\": \"spread\", \"fitters\": 1 },",
    cls->str);
  g_autoptr (SfScenario) sc = load_ok (json);
  const SfReliability *rel = &class_named (sc, "c1")->reliability;
  assert_true (rel->failures);
  assert_dist (&rel->tbf_h, SF_DIST_WEIBULL, 0, 0, 1.5, 90.0);
  assert_dist (&rel->ttr_h, SF_DIST_FIXED, 4.0, 0, 0, 0);
  sf_assert_close (rel->service_interval_h, 0.0, 0, 0);
  sf_assert_close (rel->service_h, 8.0, 0, 0);
  sf_assert_close (sc->roster.wet_day_probability, 0.0, 0, 0);
  assert_int_equal (sc->sim.dispatch, SF_DISPATCH_SPREAD);
  assert_int_equal (sc->sim.fitters, 1);

  /* fitters 0 is fine when no class can fail (spec) */
  g_autofree char *json2 = minimal_with ("\"simulation\": { \"fitters\": 0 },", NULL);
  g_autoptr (SfScenario) sc2 = load_ok (json2);
  assert_int_equal (sc2->sim.fitters, 0);
}

/* Blast times are hours after the start whatever the offsets of the two
 * date-times; blasts before the start and blocks not named give 0. */
static void
test_blast_hours_across_offsets (void **state)
{
  (void)state;
  g_autofree char *json = minimal_with (
    "\"simulation\": { \"start\": \"2027-03-01T06:00:00+10:00\", \"blasts\": ["
    " { \"first_block\": 1, \"last_block\": 1, \"at\": \"2027-03-01T00:00:00Z\" },"
    " { \"first_block\": 2, \"last_block\": 2, \"at\": \"2027-02-20T00:00:00+10:00\" },"
    " { \"first_block\": 3, \"last_block\": 3, \"at\": \"2027-03-02T06:30:00+09:30\" } ] },",
    NULL);
  g_autoptr (SfScenario) sc = load_ok (json);
  const double *h = sc->sim.blast_h;
  sf_assert_close (h[0], 0.0, 0, 0);  /* spec: not named, workable at the start */
  sf_assert_close (h[1], 4.0, 0, 0);  /* Python datetime: 00:00Z is 10:00+10:00, 4 h after */
  sf_assert_close (h[2], 0.0, 0, 0);  /* Python datetime: 222 h before the start; spec: 0 */
  sf_assert_close (h[3], 25.0, 0, 0); /* Python datetime: 06:30+09:30 next day, 25 h after */
}

/* ---- messages ------------------------------------------------------------- */

static void
test_invalid_json_names_line_and_column (void **state)
{
  (void)state;
  /* analytic: the stray '}' is the 3rd character of line 3; cJSON stops
   * after reading it while looking for a key, so the reported column is the
   * one just past it (the message points at or just after the fault) */
  const char *json = "{\n  \"format\": \"stripfleet-scenario-1\",\n  }\n";
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = load_text (json, &err);
  assert_null (sc);
  assert_scenario_error (err, SF_SCENARIO_ERROR_SYNTAX, "mem.json:3:4: not valid JSON");
  assert_int_equal (count_lines (err->message), 1);

  /* a NUL byte inside the text is refused, not read as the end */
  static const char with_nul[] = "{ \"a\": 1 }\0garbage";
  g_autoptr (GError) err2 = NULL;
  g_autoptr (SfScenario) sc2
    = sf_scenario_load_from_data (with_nul, sizeof with_nul - 1, "nul.json", NULL, &err2);
  assert_null (sc2);
  assert_scenario_error (err2, SF_SCENARIO_ERROR_SYNTAX, "nul.json:1:11: not valid JSON (a NUL byte)");
}

static void
test_missing_scenario_file_is_io_error (void **state)
{
  (void)state;
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = sf_scenario_load_from_file ("/nonexistent/dir/none.json", &err);
  assert_null (sc);
  assert_scenario_error (err, SF_SCENARIO_ERROR_IO, "/nonexistent/dir/none.json: cannot read");
}

/* Each distinct problem is one line; three problems, three lines. */
static void
test_every_problem_reported_in_one_run (void **state)
{
  (void)state;
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = load_source_file ("tests/bad/19-three-problems.json", &err);
  assert_null (sc);
  assert_scenario_error (err, SF_SCENARIO_ERROR_INVALID, "strip.lane_width_m");
  g_auto (GStrv) lines = g_strsplit (err->message, "\n", -1);
  assert_int_equal (g_strv_length (lines), 3);
  assert_non_null (strstr (lines[0], "19-three-problems.json: strip.lane_width_m: expected a number in (2, 50] m, found 1"));
  assert_non_null (strstr (lines[1], "19-three-problems.json: material.swell: expected a number in [0, 1.5], found -0.1"));
  assert_non_null (strstr (lines[2], "19-three-problems.json: fleet[0].count: expected an integer in 1..500, found 0"));
}

/* Hundreds of problems: the message keeps MAX_REPORTED (100) lines and
 * counts the rest in one more line. */
static void
test_problem_lines_are_capped (void **state)
{
  (void)state;
  g_autoptr (GString) pts = g_string_new ("[[-20, 0]");
  for (int i = 0; i < 250; i++)
    g_string_append_printf (pts, ", [%d, 0]", i % 2 ? -10 : 50); /* folds back at every other point */
  g_string_append (pts, ", [100, 0]]");
  g_autofree char *json = minimal_with (NULL, NULL);
  g_autoptr (GString) s = g_string_new (json);
  g_autofree char *sec = g_strdup_printf (
    "\"sections\": [ { \"block\": 3, \"strings\": { \"surface\": %s,"
    " \"coal_roof\": [[-20, -30], [100, -31]], \"highwall_toe_x_m\": 10,"
    " \"low_wall_edge_x_m\": 60 } }, ",
    pts->str);
  g_string_replace (s, "\"sections\": [ ", sec, 1);
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = load_text (s->str, &err);
  assert_null (sc);
  assert_scenario_error (err, SF_SCENARIO_ERROR_INVALID, "folds back");
  assert_int_equal (count_lines (err->message), 101);
  assert_non_null (strstr (err->message, "mem.json: ... and "));
}

/* ---- the bad-input corpus (tests/bad/) ----------------------------------- */

typedef struct {
  const char *file;     /* in tests/bad/ */
  int code;             /* SfScenarioError */
  guint lines;          /* problem lines expected */
  const char *fragment; /* expected in the message */
} BadCase;

#define IO SF_SCENARIO_ERROR_IO
#define SYN SF_SCENARIO_ERROR_SYNTAX
#define INV SF_SCENARIO_ERROR_INVALID

/* Expected messages follow docs/scenario-format.md ("FILE: PATH: expected
 * WHAT, found VALUE"; "FILE:LINE:COL: not valid JSON"; "FILE.csv:LINE: ...").
 * Line:column values are analytic (counted in the file). */
static const BadCase bad_cases[] = {
  { "01-not-json.json", SYN, 1, "01-not-json.json:3:17: not valid JSON" },
  { "02-trailing-garbage.json", SYN, 1, "02-trailing-garbage.json:59:1: not valid JSON" },
  { "03-top-level-array.json", INV, 1, "expected a JSON object at the top level, found an array" },
  { "04-wrong-format.json", INV, 1, "format: expected \"stripfleet-scenario-1\", found \"stripfleet-scenario-2\"" },
  { "05-missing-name.json", INV, 1, "name: expected a non-empty string, found nothing (the key is missing)" },
  { "06-unknown-root-key.json", INV, 1, "06-unknown-root-key.json: notes: unknown key; expected one of format, name," },
  { "07-unknown-strip-key.json", INV, 2, "07-unknown-strip-key.json: strip.lenght_m: unknown key; expected one of length_m, blocks, lane_width_m, cell_m, section_x_min_m, section_x_max_m" },
  { "08-duplicate-key.json", INV, 1, "name: key given twice" },
  { "09-wrong-type-number.json", INV, 1, "material.swell: expected a number, found a string" },
  { "10-wrong-type-object.json", INV, 1, "strip: expected an object, found a number" },
  { "11-out-of-range-power.json", INV, 1, "dozer_classes[0].net_power_kw: expected a number in (10, 2000] kW, found -5" },
  { "12-not-finite.json", INV, 1, "strip.length_m: expected a number in (0, 100000] m, found a number too large to be finite" },
  { "13-blocks-not-integer.json", INV, 1, "strip.blocks: expected an integer in 1..2000, found 2.5" },
  { "14-huge-blocks.json", INV, 1, "strip.blocks: expected an integer in 1..2000, found 1000000; the limit is 2000 blocks" },
  { "15-more-lanes-than-fit.json", INV, 1, "strip: more lanes than fit: block length 40 m (length_m / blocks) holds no lane of 45 m" },
  { "16-too-many-lanes.json", INV, 1, "holds 40000 lanes of 2.5 m; the limit is 200 lanes per block" },
  { "17-too-many-cells.json", INV, 1, "gives 40000 cells; the limit is 20000 cells" },
  { "18-section-range-reversed.json", INV, 1, "strip.section_x_max_m: expected a number greater than section_x_min_m (-20 m), found -30" },
  { "19-three-problems.json", INV, 3, "fleet[0].count: expected an integer in 1..500, found 0" },
  { "20-no-sections.json", INV, 1, "sections: expected at least one section, found none" },
  { "21-section-block-out-of-range.json", INV, 1, "sections[0].block: expected an integer in 0..3, found 4" },
  { "22-section-duplicate-block.json", INV, 1, "sections[1].block: block 0 already has a section (sections[0])" },
  { "23-section-two-kinds.json", INV, 1, "sections[0]: expected exactly one of generated, strings, csv, found more than one" },
  { "24-generated-missing-key.json", INV, 1, "sections[0].generated.highwall_deg: expected a number in (0, 90) deg, found nothing" },
  { "25-highwall-90.json", INV, 1, "sections[0].generated.highwall_deg: expected a number in (0, 90) deg, found 90" },
  { "26-fold-back.json", INV, 1, "sections[1].strings.surface[3]: folds back: x 31 m is not greater than the previous x 32.5 m" },
  { "27-self-intersecting.json", INV, 2, "sections[1].strings.surface: crosses itself: the segment from point 0 to point 1 meets the segment from point 2 to point 3" },
  { "28-roof-above-surface.json", INV, 1, "sections[1].strings: coal roof rises above the surface at x = 50 m: roof z = -5 m, surface z = -10.333 m" },
  { "29-string-short-span.json", INV, 1, "sections[1].strings.surface: must start at or before x = -20 m (section_x_min_m), starts at x = -10 m" },
  { "30-string-one-point.json", INV, 1, "sections[1].strings.coal_roof: expected at least 2 points [x, z], found 1" },
  { "31-point-not-pair.json", INV, 1, "sections[1].strings.surface[1]: expected a point [x, z] of two numbers" },
  { "32-low-wall-before-toe.json", INV, 1, "low_wall_edge_x_m: expected a number greater than highwall_toe_x_m (60 m), found 10" },
  { "33-toe-outside-range.json", INV, 2, "sections[1].strings.highwall_toe_x_m: expected a number in [-20, 100] m, found 150" },
  { "34-blade-type-unknown.json", INV, 1, "blade.type: expected one of \"straight\", \"semi-u\", \"u\", \"carry\", found \"angled\"" },
  { "35-carry-share-on-u-blade.json", INV, 1, "blade.carry_share: only allowed for a blade of type \"carry\"" },
  { "36-rated-missing-u-blade.json", INV, 1, "blade.rated_capacity_lcm: expected a number in (0, 150] lcm, found nothing" },
  { "37-speeds-not-ascending.json", INV, 1, "reverse_speeds_kmh[2]: expected speeds in ascending order" },
  { "38-too-many-gears.json", INV, 1, "forward_speeds_kmh: expected 1 to 6 speeds, found 7; the limit is 6 gears" },
  { "39-push-gear-beyond.json", INV, 1, "push_gear: expected an integer in 1..3, found 4" },
  { "40-class-name-bad-chars.json", INV, 1, "dozer_classes[0].name: expected a name of letters, digits" },
  { "41-duplicate-class-name.json", INV, 1, "dozer_classes[1].name: class name \"u-100t\" is already used by dozer_classes[0]" },
  { "42-unknown-blade-key.json", INV, 1, "dozer_classes[0].blade.wing_angle_deg: unknown key" },
  { "43-too-many-classes.json", INV, 1, "dozer_classes: expected at most 64 dozer classes, found 65; the limit is 64 classes" },
  { "44-fleet-unknown-class.json", INV, 1, "fleet[0].class: expected the name of a dozer class (\"u-100t\"), found \"u-200t\"" },
  { "45-fleet-huge-count.json", INV, 1, "fleet[0].count: expected an integer in 1..500, found 100000; the limit is 500 dozers" },
  { "46-fleet-total-over-limit.json", INV, 1, "fleet: expected at most 500 dozers in total, found 602; the limit is 500 dozers" },
  { "47-fleet-empty.json", INV, 1, "fleet: expected at least one fleet entry, found none" },
  { "48-pivot-lifted-without-lift.json", INV, 1, "design.pivot.lift_m: expected a number in (0, 50] m, found nothing" },
  { "49-lift-on-standard-pivot.json", INV, 1, "design.pivot.lift_m: only allowed when kind is \"lifted\"" },
  { "50-slices-mixed-keys.json", INV, 1, "design.slices.count: only allowed when strategy is \"straight-push\"" },
  { "51-huge-layers.json", INV, 1, "design.slices.layers: expected an integer in 1..100, found 5000; the limit is 100 layers" },
  { "52-bool-wrong-type.json", INV, 1, "design.slot_dozing: expected true or false, found a string" },
  { "53-factor-out-of-range.json", INV, 1, "production_factors.operator_skill: expected a number in (0, 1.5], found 2" },
  { "54-coal-density-range.json", INV, 1, "coal.density_t_per_m3: expected a number in (0.5, 3] t/m3, found 4" },
  { "55-csv-missing.json", IO, 1, "55-csv-missing-no-such-file.csv: no such file (named by " },
  { "56-csv-wrong-columns.json", SYN, 1, "56-csv-wrong-columns.csv:5: expected 3 columns (string,x_m,z_m), found 2" },
  { "57-csv-bad-number.json", SYN, 1, "57-csv-bad-number.csv:5: z_m: expected a finite number, found \"-1O\"" },
  { "58-csv-unknown-string.json", SYN, 1, "58-csv-unknown-string.csv:7: unknown string \"coalroof\"; expected surface or coal_roof" },
  { "59-csv-x-not-increasing.json", INV, 1, "59-csv-x-not-increasing.csv:5: surface folds back: x -5 m is not greater than the previous x 0 m (line 4)" },
  { "60-csv-missing-string.json", INV, 1, "60-csv-missing-string.csv: missing string coal_roof" },
  { "61-csv-bad-header.json", SYN, 1, "61-csv-bad-header.csv:2: expected the header string,x_m,z_m, found \"name,x,z\"" },
  { "62-csv-roof-above-surface.json", INV, 1, "62-csv-roof-above-surface.csv: coal roof rises above the surface at x = 40 m" },
  { "63-csv-short-span.json", INV, 1, "63-csv-short-span.csv: surface: must end at or after x = 100 m (section_x_max_m), ends at x = 90 m" },
  { "64-empty-file.json", SYN, 1, "64-empty-file.json:1:1: not valid JSON" },
  { "65-not-utf8.json", SYN, 1, "65-not-utf8.json:3:15: not valid JSON (not UTF-8 text)" },
  /* roster, reliability, simulation (/work/notes/scenario-spec-sim.md rules,
   * docs/scenario-format.md); hours of gaps and overlaps are analytic */
  { "66-shifts-overlap.json", INV, 1, "roster.shifts: shifts day and night overlap by 2.0 h: day runs 14 h from 06:00 to 20:00, night starts at 18:00" },
  { "67-shifts-gap.json", INV, 1, "roster.shifts: shifts leave a gap of 1.0 h between day and night: day runs 11 h from 06:00 to 17:00" },
  { "68-shift-hours-not-24.json", INV, 1, "roster.shifts: the shifts add up to 20 h a day, expected exactly 24 h" },
  { "69-pattern-unknown-crew.json", INV, 1, "roster.pattern[1][1]: expected the name of a crew (\"A\", \"B\", \"C\", \"D\") or null, found \"E\"" },
  { "70-pattern-row-length.json", INV, 1, "roster.pattern[0]: expected 2 entries, one crew name or null per shift (day, night), found 3" },
  { "71-dist-negative-mean.json", INV, 1, "dozer_classes[0].reliability.tbf_h.mean: impossible parameters for dist \"exponential\": expected a number in (0, 100000] h, found -80" },
  { "72-weibull-shape-zero.json", INV, 1, "dozer_classes[0].reliability.tbf_h.shape: impossible parameters for dist \"weibull\": expected a number in (0.1, 20], found 0" },
  { "73-lognormal-without-sd.json", INV, 1, "dozer_classes[0].reliability.ttr_h.sd: impossible parameters for dist \"lognormal\": expected a number in (0, 100000] h, found nothing" },
  { "74-dist-two-kinds.json", INV, 1, "dozer_classes[0].reliability.tbf_h.shape: only allowed when dist is \"weibull\", found it with dist \"exponential\"" },
  { "75-ttr-without-tbf.json", INV, 1, "dozer_classes[0].reliability.ttr_h: only allowed together with tbf_h" },
  { "76-tbf-without-ttr.json", INV, 1, "dozer_classes[0].reliability.ttr_h: expected a distribution object (repair hours, required with tbf_h), found nothing" },
  { "77-service-without-hours.json", INV, 1, "dozer_classes[0].reliability.service_h: expected a number in (0, 1000] h, found nothing" },
  { "78-start-without-offset.json", INV, 1, "simulation.start: expected an ISO 8601 date-time with a UTC offset, such as \"2027-03-01T06:00:00+10:00\", found \"2027-03-01T06:00:00\"" },
  { "79-blast-range-reversed.json", INV, 1, "simulation.blasts[0].last_block: expected an integer >= first_block (3), found 1 (the range is reversed)" },
  { "80-blast-block-twice.json", INV, 1, "simulation.blasts[1]: block 2 is already named by blasts[0]; name each block in one blast at most" },
  { "81-fitters-zero-with-failures.json", INV, 1, "simulation.fitters: expected at least 1 fitter because dozer class \"u-100t\" can fail" },
  { "82-horizon-out-of-range.json", INV, 1, "simulation.horizon_days: expected a number in (0, 36500] days, found 40000" },
  { "83-pattern-too-long.json", INV, 1, "roster.pattern: expected at most 366 days, found 367; the limit is 366 pattern days" },
  { "84-too-many-shifts.json", INV, 1, "roster.shifts: expected at most 4 shifts, found 5; the limit is 4 shifts a day" },
  { "85-shift-start-bad.json", INV, 1, "roster.shifts[1].start: expected a time of day \"HH:MM\" from 00:00 to 23:59, found \"18.00\"" },
  { "86-duplicate-crew.json", INV, 1, "roster.crews[1].name: crew name \"A\" is already used by crews[0]" },
  { "87-meal-after-too-late.json", INV, 1, "roster.meal_after_h: expected less than the 4 h of shift early (the meal must start within the shift), found 5" },
  { "88-wet-without-stop.json", INV, 1, "roster.weather.stop_h: expected a distribution object (hours of a wet-weather stop, required when wet_day_probability > 0), found nothing" },
  { "89-unknown-roster-key.json", INV, 1, "roster.shift_change: unknown key; expected one of shifts, crews, pattern, shift_change_min," },
  { "90-dispatch-unknown.json", INV, 1, "simulation.dispatch: expected one of \"finish-block\", \"spread\", found \"nearest\"" },
  { "91-blast-block-out-of-range.json", INV, 1, "simulation.blasts[0].last_block: expected an integer in 0..3, found 4" },
  { "92-dist-unknown-kind.json", INV, 1, "dozer_classes[0].reliability.tbf_h.dist: expected one of \"fixed\", \"exponential\", \"weibull\", \"lognormal\", found \"gamma\"" },
  { "93-seed-not-integer.json", INV, 1, "simulation.seed: expected an integer in 0..9007199254740992, found 1.5" },
  { "94-crew-operators-over-limit.json", INV, 1, "roster.crews[0].operators: expected an integer in 0..500, found 501; the limit is 500 operators" },
  { "95-blast-at-not-a-date.json", INV, 1, "simulation.blasts[0].at: expected an ISO 8601 date-time with a UTC offset" },
  { "96-roster-missing-pattern.json", INV, 1, "roster.pattern: expected an array, found nothing (the key is missing)" },
  { "97-pattern-empty.json", INV, 1, "roster.pattern: expected at least one day, found none" },
  { "98-refuel-out-of-range.json", INV, 1, "dozer_classes[0].reliability.refuel_min: expected a number in [0, 240] min, found 300" },
  { "99-weibull-huge-scale.json", INV, 1, "dozer_classes[0].reliability.tbf_h.scale: impossible parameters for dist \"weibull\": expected a number in (0, 100000] h, found 1000000" },
  { "100-shift-name-duplicate.json", INV, 1, "roster.shifts[1].name: shift name \"day\" is already used by shifts[0]" },
  { "101-roster-sim-three-problems.json", INV, 3, "simulation.fitters: expected an integer in 0..1000, found 1001" },
  /* found by fuzzing (docs/robustness.md); the cover limit is that of
   * generated.overburden_m, and 637.76 - (-42.657) m is analytic (the
   * surface interpolated at the roof vertex x = 40.25 m) */
  { "102-csv-cover-too-high.json", INV, 1, "102-csv-cover-too-high.csv: surface stands 680.417 m above the coal roof at x = 40.25 m (surface z = 637.76 m, roof z = -42.657 m) (and at 1 more point); expected at most 300 m of cover" },
  { "103-strings-coal-thickness.json", INV, 1, "sections[1].strings.coal_thickness_m: expected a number in (0, 30] m, found -2" },
};

/* One table row: refused, right domain/code, the fragment, one line per
 * problem, each line naming a file (the scenario or a .csv beside it). */
static void
test_bad_case (void **state)
{
  const BadCase *bc = *state;
  g_autofree char *rel = g_build_filename ("tests", "bad", bc->file, NULL);
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = load_source_file (rel, &err);
  assert_null (sc);
  assert_scenario_error (err, bc->code, bc->fragment);
  if (count_lines (err->message) != bc->lines)
    print_error ("expected %u lines, got:\n%s\n", bc->lines, err->message);
  assert_int_equal (count_lines (err->message), bc->lines);
  g_autofree char *dir = sf_test_source_path ("tests/bad");
  g_auto (GStrv) lines = g_strsplit (err->message, "\n", -1);
  for (guint i = 0; lines[i]; i++)
    {
      assert_true (g_str_has_prefix (lines[i], dir));
      assert_true (strstr (lines[i], ".json: ") || strstr (lines[i], ".json:")
                   || strstr (lines[i], ".csv:"));
    }
}

/* The table and the folder list the same scenario files. */
static void
test_bad_corpus_matches_table (void **state)
{
  (void)state;
  g_autofree char *dir_path = sf_test_source_path ("tests/bad");
  g_autoptr (GDir) dir = g_dir_open (dir_path, 0, NULL);
  assert_non_null (dir);
  guint n_json = 0;
  const char *n;
  while ((n = g_dir_read_name (dir)))
    {
      if (!g_str_has_suffix (n, ".json"))
        continue;
      n_json++;
      gboolean listed = FALSE;
      for (guint i = 0; i < G_N_ELEMENTS (bad_cases); i++)
        listed |= strcmp (bad_cases[i].file, n) == 0;
      if (!listed)
        print_error ("tests/bad/%s is not in bad_cases[]\n", n);
      assert_true (listed);
    }
  assert_int_equal (n_json, G_N_ELEMENTS (bad_cases));
}

/* ---- registration --------------------------------------------------------- */

int
main (void)
{
  static const struct CMUnitTest fixed[] = {
    cmocka_unit_test (test_demo_loads_and_round_trips),
    cmocka_unit_test (test_every_shipped_scenario_loads),
    cmocka_unit_test (test_defaults_applied),
    cmocka_unit_test (test_design_variants_load),
    cmocka_unit_test (test_straight_blade_default_capacity),
    cmocka_unit_test (test_rated_capacity_given_wins),
    cmocka_unit_test (test_demo_roster_and_simulation_round_trip),
    cmocka_unit_test (test_roster_and_simulation_defaults_when_absent),
    cmocka_unit_test (test_defaults_and_clear_in_code),
    cmocka_unit_test (test_shifts_stored_in_start_order),
    cmocka_unit_test (test_distribution_kinds_load),
    cmocka_unit_test (test_blast_hours_across_offsets),
    cmocka_unit_test (test_inline_strings_section_loads),
    cmocka_unit_test (test_csv_relative_to_base_dir),
    cmocka_unit_test (test_invalid_json_names_line_and_column),
    cmocka_unit_test (test_missing_scenario_file_is_io_error),
    cmocka_unit_test (test_every_problem_reported_in_one_run),
    cmocka_unit_test (test_problem_lines_are_capped),
    cmocka_unit_test (test_bad_corpus_matches_table),
  };
  /* one group (one TAP plan): the fixed tests, then one test per bad file */
  struct CMUnitTest tests[G_N_ELEMENTS (fixed) + G_N_ELEMENTS (bad_cases)];
  for (guint i = 0; i < G_N_ELEMENTS (fixed); i++)
    tests[i] = fixed[i];
  for (guint i = 0; i < G_N_ELEMENTS (bad_cases); i++)
    tests[G_N_ELEMENTS (fixed) + i] = (struct CMUnitTest){
      .name = bad_cases[i].file,
      .test_func = test_bad_case,
      .initial_state = (void *)&bad_cases[i],
    };
  return cmocka_run_group_tests_name ("scenario", tests, NULL, NULL);
}
