/* SPDX-License-Identifier: MIT
 *
 * test-section.c — generated cross-sections and the push design laid on
 * them, against analytic geometry.
 */
#include "sf-test.h"

#include <math.h>
#include <string.h>

#include "sf-section.h"
#include "sf-util.h"

#define N 600
#define X0 -40.0
#define DX 0.5

static void
params (SfSectionParams *p)
{
  memset (p, 0, sizeof *p);
  p->overburden_m = 40.0;
  p->strip_width_m = 60.0;
  p->coal_thickness_m = 5.0;
  p->dip_deg = 0.0;
  p->highwall_deg = 70.0;
  p->cast_fraction = 0.30;
  p->muckpile_grade_pct = 5.0;
  p->prev_spoil_height_m = 5.0;
}

static void
material (SfMaterial *m)
{
  sf_material_defaults (m);
  m->swell = 0.25;
  m->repose_deg = 37.0;
}

typedef struct {
  double s[N], b[N], r[N];
  double x_toe, x_edge, bank, cast;
} Gen;

static gboolean
generate (const SfSectionParams *p, const SfMaterial *m, Gen *g, GError **error)
{
  return sf_section_generate (p, m, X0, DX, N, g->s, g->b, g->r, &g->x_toe, &g->x_edge, &g->bank,
                              &g->cast, error);
}

/* Analytic: with no dip the overburden block between the new and the old
 * highwall faces is a parallelogram of area W_s x T = 60 x 40 = 2400 m2; the
 * highwall toe lies at T / tan 70 deg = 14.559 m from the crest. */
static void
test_generated_block_geometry (void **state)
{
  (void) state;
  SfSectionParams p;
  SfMaterial m;
  params (&p);
  material (&m);
  Gen g;
  g_autoptr (GError) err = NULL;
  assert_true (generate (&p, &m, &g, &err));
  sf_assert_close (g.bank, 2400.0, 0, 1e-12);
  sf_assert_close (g.x_toe, 40.0 / tan (70.0 * G_PI / 180.0), 0, 1e-12);
  sf_assert_close (g.x_edge, g.x_toe + 60.0, 0, 1e-12);
  /* coal roof flat at -40 m with no dip; natural ground untouched behind the crest */
  sf_assert_close (g.r[300], -40.0, 0, 1e-12);
  for (guint i = 0; i < 80; i++) /* x < 0 */
    sf_assert_close (g.s[i], 0.0, 1e-12, 0);
}

/* Volume balance (swell definition, Peurifoy et al. ch. "Soil and rock"):
 * the loose area above the base is the bank area x (1 + swell), and the share
 * beyond the low-wall edge is the cast fraction, both to the solver's
 * tolerance. */
static void
test_generated_volume_balance (void **state)
{
  (void) state;
  SfSectionParams p;
  SfMaterial m;
  params (&p);
  material (&m);
  Gen g;
  g_autoptr (GError) err = NULL;
  assert_true (generate (&p, &m, &g, &err));
  double loose = 0, beyond = 0;
  for (guint i = 0; i < N; i++)
    {
      double a = (g.s[i] - g.b[i]) * DX;
      assert_true (a >= -1e-12);
      loose += a;
      if (X0 + (i + 0.5) * DX >= g.x_edge)
        beyond += a;
    }
  sf_assert_close (loose, 2400.0 * 1.25, 0, 1e-6);
  sf_assert_close (beyond, 0.30 * loose, 0, 1e-6);
  sf_assert_close (g.cast, beyond, 0, 1e-9);
  /* no loose slope steeper than the angle of repose (within one cell) */
  double max_slope = 0;
  for (guint i = 0; i + 1 < N; i++)
    {
      double hi = MAX (g.s[i], g.s[i + 1]);
      double base_hi = g.s[i] > g.s[i + 1] ? g.b[i] : g.b[i + 1];
      if (hi > base_hi + 1e-9)
        max_slope = MAX (max_slope, fabs (g.s[i + 1] - g.s[i]) / DX);
    }
  assert_true (max_slope <= tan (37.0 * G_PI / 180.0) + 1e-9);
}

/* A cast fraction the muckpile cannot hold is refused with a message. */
static void
test_generated_cast_infeasible (void **state)
{
  (void) state;
  SfSectionParams p;
  SfMaterial m;
  params (&p);
  material (&m);
  p.cast_fraction = 0.0;
  p.muckpile_grade_pct = 60.0;
  Gen g;
  g_autoptr (GError) err = NULL;
  assert_false (generate (&p, &m, &g, &err));
  assert_non_null (err);
  assert_non_null (strstr (err->message, "cast_fraction"));
}

/* A scenario with one generated section, built in code. */
static SfScenario *
scenario (double floor_m, SfPivotKind pivot, double lift_m)
{
  SfScenario *sc = g_new0 (SfScenario, 1);
  sc->name = g_strdup ("test");
  sc->strip = (SfStrip){ 100.0, 4, 6.25, DX, X0, X0 + N * DX };
  sc->sections = g_ptr_array_new_with_free_func ((GDestroyNotify) sf_section_spec_free);
  SfSectionSpec *a = g_new0 (SfSectionSpec, 1);
  a->block = 0;
  a->kind = SF_SECTION_GENERATED;
  params (&a->params);
  SfSectionSpec *b = g_new0 (SfSectionSpec, 1);
  *b = *a;
  b->block = 2;
  b->params.overburden_m = 50.0;
  g_ptr_array_add (sc->sections, a);
  g_ptr_array_add (sc->sections, b);
  material (&sc->material);
  sc->classes = g_ptr_array_new_with_free_func ((GDestroyNotify) sf_dozer_class_free);
  sc->fleet = g_array_new (FALSE, TRUE, sizeof (SfFleetEntry));
  sf_design_defaults (&sc->design);
  sf_factors_defaults (&sc->factors);
  sc->design.dozer_floor_above_coal_m = floor_m;
  sc->design.pivot = pivot;
  sc->design.pivot_lift_m = lift_m;
  sc->design.lift_ramp_grade_pct = 10.0;
  return sc;
}

/* Analytic: the final spoil line rises from the low-wall toe (edge, coal
 * roof at -40 m) at the angle of repose and meets the floor 20 m above coal
 * at x = x_edge + 20 / tan 37 deg. */
static void
test_standard_pivot (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = scenario (20.0, SF_PIVOT_STANDARD, 0);
  g_autoptr (GError) err = NULL;
  g_autoptr (SfBlockSection) bs = sf_block_section_new (sc, 0, &err);
  assert_non_null (bs);
  double x_edge = 40.0 / tan (70.0 * G_PI / 180.0) + 60.0;
  sf_assert_close (bs->x_pivot_m, x_edge + 20.0 / tan (37.0 * G_PI / 180.0), 0, 1e-9);
  sf_assert_close (bs->z_pivot_m, -20.0, 0, 1e-9);
  sf_assert_close (sf_block_section_spoil_line (bs, x_edge), -40.0, 0, 1e-9);
  for (guint i = 0; i < bs->n; i++)
    sf_assert_close (bs->floor[i], -20.0, 0, 1e-12);
}

/* A lifted pivot stands `lift` above the standard one; the floor ramps up to
 * it at the ramp grade (10 %: 3 m lift -> 30 m ramp). */
static void
test_lifted_pivot_ramp (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = scenario (20.0, SF_PIVOT_LIFTED, 3.0);
  g_autoptr (GError) err = NULL;
  g_autoptr (SfBlockSection) bs = sf_block_section_new (sc, 0, &err);
  assert_non_null (bs);
  sf_assert_close (bs->z_pivot_m, bs->z_pivot_std_m + 3.0, 0, 1e-12);
  sf_assert_close (bs->x_pivot_m, bs->x_pivot_std_m, 0, 1e-12);
  for (guint i = 0; i < bs->n; i++)
    {
      double x = bs->x0_m + (i + 0.5) * bs->dx_m;
      double expect = x <= bs->x_pivot_m ? MAX (-20.0, -17.0 - 0.10 * (bs->x_pivot_m - x)) : -20.0;
      sf_assert_close (bs->floor[i], expect, 0, 1e-9);
    }
}

/* Sections between given blocks are interpolated linearly, cell by cell
 * (block 1 lies halfway between blocks 0 and 2); the blend then settles at
 * the angle of repose where the two highwall faces differ, which moves
 * material but keeps its volume (analytic). */
static void
test_interpolation_midway (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = scenario (20.0, SF_PIVOT_STANDARD, 0);
  g_autoptr (GError) err = NULL;
  g_autoptr (SfBlockSection) b0 = sf_block_section_new (sc, 0, &err);
  g_autoptr (SfBlockSection) b1 = sf_block_section_new (sc, 1, &err);
  g_autoptr (SfBlockSection) b2 = sf_block_section_new (sc, 2, &err);
  g_autoptr (SfBlockSection) b3 = sf_block_section_new (sc, 3, &err);
  assert_non_null (b0);
  assert_non_null (b1);
  assert_non_null (b2);
  assert_non_null (b3);
  double v0 = 0, v1 = 0, v2 = 0;
  for (guint i = 0; i < b1->n; i++)
    {
      sf_assert_close (b1->coal_roof[i], 0.5 * (b0->coal_roof[i] + b2->coal_roof[i]), 1e-12, 0);
      sf_assert_close (b1->base[i], 0.5 * (b0->base[i] + b2->base[i]), 1e-12, 0);
      sf_assert_close (b3->surface[i], b2->surface[i], 1e-12, 0); /* held past the last */
      v0 += b0->surface[i] - b0->base[i];
      v1 += b1->surface[i] - b1->base[i];
      v2 += b2->surface[i] - b2->base[i];
    }
  sf_assert_close (v1, 0.5 * (v0 + v2), 0, 1e-12);
  sf_assert_close (b1->bank_area_m2, 0.5 * (2400.0 + 3000.0), 0, 1e-12);
}

/* The seam thickness of a surveyed section: the invented demo's block 15 is
 * given as strings without one, between generated sections at blocks 10
 * (5.8 m) and 20 (7.0 m), so it takes 5.8 + 5/10 x (7.0 - 5.8) = 6.4 m and
 * blocks 12 and 17 interpolate on to it (analytic: linear in the block
 * index); a thickness given with the strings is used as it is. */
static void
test_strings_coal_thickness (void **state)
{
  (void) state;
  g_autofree char *path = sf_test_source_path ("scenarios/demo-strip.json");
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc = sf_scenario_load_from_file (path, &err);
  assert_non_null (sc);
  static const struct {
    guint block;
    double want_m;
  } cases[] = { { 15, 6.4 }, { 12, 5.8 + 0.4 * 0.6 }, { 17, 6.4 + 0.4 * 0.6 } };
  for (gsize c = 0; c < G_N_ELEMENTS (cases); c++)
    {
      g_autoptr (SfBlockSection) bs = sf_block_section_new (sc, cases[c].block, &err);
      assert_non_null (bs);
      sf_assert_close (bs->coal_thickness_m, cases[c].want_m, 1e-12, 0);
    }
  for (guint k = 0; k < sc->sections->len; k++)
    {
      SfSectionSpec *spec = g_ptr_array_index (sc->sections, k);
      if (spec->block == 15)
        spec->coal_thickness_m = 9.0;
    }
  g_autoptr (SfBlockSection) b15 = sf_block_section_new (sc, 15, &err);
  assert_non_null (b15);
  sf_assert_close (b15->coal_thickness_m, 9.0, 0, 0);
}

/* A floor that the spoil line never meets inside the section is refused
 * with a message naming the block. */
static void
test_floor_without_pivot (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = scenario (250.0, SF_PIVOT_STANDARD, 0);
  g_autoptr (GError) err = NULL;
  g_autoptr (SfBlockSection) bs = sf_block_section_new (sc, 1, &err);
  assert_null (bs);
  assert_non_null (err);
  assert_non_null (strstr (err->message, "block 1"));
  g_clear_error (&err);
  assert_null (sf_block_section_new (sc, 9, &err));
  assert_int_equal (err->code, SF_MODEL_ERROR_ARGUMENT);
}

int
main (void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test (test_generated_block_geometry),
    cmocka_unit_test (test_generated_volume_balance),
    cmocka_unit_test (test_generated_cast_infeasible),
    cmocka_unit_test (test_standard_pivot),
    cmocka_unit_test (test_lifted_pivot_ramp),
    cmocka_unit_test (test_interpolation_midway),
    cmocka_unit_test (test_floor_without_pivot),
    cmocka_unit_test (test_strings_coal_thickness),
  };
  return cmocka_run_group_tests_name ("section", tests, NULL, NULL);
}
