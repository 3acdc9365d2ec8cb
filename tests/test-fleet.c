/* SPDX-License-Identifier: MIT
 *
 * test-fleet.c — the fleet run: determinism, time usage, stops, the single
 * lane against the lane study and the textbook cycle, availability against
 * renewal theory, fleet-size returns, conservation and the output folder.
 */
#include "sf-test.h"

#include <math.h>
#include <string.h>

#include <cjson/cJSON.h>
#include <glib/gstdio.h>

#include "sf-push.h"
#include "sf-scenario.h"
#include "sf-section.h"
#include "sf-slice.h"
#include "stripfleet.h"

static SfScenario *
demo (void)
{
  g_autofree char *path = sf_test_source_path ("scenarios/demo-strip.json");
  g_autoptr (GError) err = NULL;
  SfScenario *sc = sf_scenario_load_from_file (path, &err);
  if (!sc)
    fail_msg ("%s", err->message);
  return sc;
}

/* Round-the-clock roster: one 24 h shift, enough operators, no stops; and
 * every block workable from the start. */
static void
plain_roster (SfScenario *sc, guint operators)
{
  sf_roster_clear (&sc->roster);
  sf_roster_defaults (&sc->roster, operators);
  for (guint b = 0; b < sc->strip.n_blocks; b++)
    sc->sim.blast_h[b] = 0;
}

static void
rm_rf (const char *dir)
{
  static const char *const files[] = { "summary.json", "schedule.csv", "daily.csv", "events.log" };
  for (gsize i = 0; i < G_N_ELEMENTS (files); i++)
    {
      g_autofree char *p = g_build_filename (dir, files[i], NULL);
      g_unlink (p);
    }
  g_rmdir (dir);
}

/* One full demo run (breakdowns, weather, shifts, blasts all on) shared by
 * the tests that only read it. */
typedef struct {
  SfScenario *sc;
  char *dir;
  SfRunSummary sum;
} DemoRun;

static int
setup_demo (void **state)
{
  DemoRun *r = g_new0 (DemoRun, 1);
  r->sc = demo ();
  r->dir = g_dir_make_tmp ("sf-fleet-XXXXXX", NULL);
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  o.out_dir = r->dir;
  g_autoptr (GError) err = NULL;
  if (!sf_run (r->sc, &o, &r->sum, &err))
    fail_msg ("%s", err->message);
  *state = r;
  return 0;
}

static int
teardown_demo (void **state)
{
  DemoRun *r = *state;
  sf_run_summary_clear (&r->sum);
  rm_rf (r->dir);
  g_free (r->dir);
  sf_scenario_free (r->sc);
  g_free (r);
  return 0;
}

/* Every dozer's time-usage categories add up to calendar time to the
 * millisecond (GMG time-usage model: calendar time is the sum of its
 * categories; the categories here are finer). */
static void
test_time_usage_adds_up (void **state)
{
  DemoRun *r = *state;
  assert_true (r->sum.complete);
  assert_true (r->sum.dozers->len == 6);
  for (guint i = 0; i < r->sum.dozers->len; i++)
    {
      const SfDozerResult *d = &g_array_index (r->sum.dozers, SfDozerResult, i);
      gint64 total = 0;
      for (int k = 0; k < SF_USE_N; k++)
        {
          assert_true (d->use_ms[k] >= 0);
          total += d->use_ms[k];
        }
      assert_int_equal (total, r->sum.calendar_ms);
    }
  /* the summary file says the same */
  gsize len;
  g_autofree char *js = sf_test_read_file (r->dir, "summary.json", &len);
  cJSON *root = cJSON_ParseWithLength (js, len);
  assert_non_null (root);
  const cJSON *dz = cJSON_GetObjectItemCaseSensitive (root, "dozers");
  assert_int_equal (cJSON_GetArraySize (dz), 6);
  const cJSON *d0 = cJSON_GetArrayItem (dz, 0);
  sf_assert_close (cJSON_GetObjectItemCaseSensitive (d0, "calendar_ms")->valuedouble,
                   (double) r->sum.calendar_ms, 0, 0);
  cJSON_Delete (root);
}

/* Conservation over the whole run (analytic: pushes only move material):
 * planned = moved + dropped in place + left, to 1e-6 relative. */
static void
test_run_conservation (void **state)
{
  DemoRun *r = *state;
  const SfRunSummary *s = &r->sum;
  assert_true (s->planned_bcm > 1e5);
  sf_assert_close (s->moved_bcm + s->dropped_bcm + s->left_bcm, s->planned_bcm, 0, 1e-6);
  assert_true (s->moved_bcm > 0.5 * s->planned_bcm);
}

/* Production only while operating: replaying the event log, every push ends
 * while its dozer is in the operating category, and none ends inside a
 * shift change or a weather stop.  The run must contain each kind of stop
 * for the test to mean anything. */
static void
test_no_production_in_stops (void **state)
{
  DemoRun *r = *state;
  gsize len;
  g_autofree char *log = sf_test_read_file (r->dir, "events.log", &len);
  g_auto (GStrv) lines = g_strsplit (log, "\n", -1);
  char cat[64][32] = { { 0 } };
  guint seen_shift_change = 0, seen_meal = 0, seen_weather = 0, seen_unmanned = 0, seen_broken = 0;
  guint pushes = 0;
  const double change_ms = r->sc->roster.shift_change_min * 60000.0;
  GArray *stops = g_array_new (FALSE, FALSE, sizeof (double) * 2);
  for (char **l = lines; *l; l++)
    {
      if (**l == '#' || **l == 0)
        continue;
      gint64 t;
      char kind[32];
      int dozer, block, lane, slice;
      double a, b, c;
      if (sscanf (*l, "%" G_GINT64_FORMAT " %31s %d %d %d %d %lf %lf %lf", &t, kind, &dozer, &block,
                  &lane, &slice, &a, &b, &c)
          != 9)
        fail_msg ("bad event line: %s", *l);
      if (!strcmp (kind, "shift"))
        {
          double w[2] = { (double) t, (double) t + change_ms };
          if (t > 0)
            g_array_append_val (stops, w);
        }
      else if (!strcmp (kind, "wet_stop"))
        {
          double w[2] = { (double) t, (double) t + a * 3.6e6 };
          g_array_append_val (stops, w);
        }
      else if (!strcmp (kind, "push"))
        {
          pushes++;
          assert_string_equal (cat[dozer], "operating");
          for (guint k = 0; k < stops->len; k++)
            {
              const double *w = &g_array_index (stops, double, 2 * k);
              assert_false ((double) t > w[0] && (double) t < w[1]);
            }
        }
      else if (dozer >= 0 && dozer < 64)
        {
          for (int u = 0; u < SF_USE_N; u++)
            if (!strcmp (kind, sf_use_to_str (u)))
              {
                g_strlcpy (cat[dozer], kind, sizeof cat[dozer]);
                seen_shift_change += u == SF_USE_SHIFT_CHANGE;
                seen_meal += u == SF_USE_MEAL;
                seen_weather += u == SF_USE_WEATHER;
                seen_unmanned += u == SF_USE_UNMANNED;
                seen_broken += u == SF_USE_BREAKDOWN;
              }
        }
    }
  g_array_unref (stops);
  assert_int_equal (pushes, r->sum.pushes);
  assert_true (seen_shift_change > 0 && seen_meal > 0 && seen_weather > 0 && seen_unmanned > 0
               && seen_broken > 0);
  /* and the hours say so too: the unmanned machine never pushed */
  const SfDozerResult *unmanned = &g_array_index (r->sum.dozers, SfDozerResult, 5);
  assert_int_equal (unmanned->pushes, 0);
  assert_int_equal (unmanned->use_ms[SF_USE_OPERATING], 0);
}

static gboolean
same_file (const char *a, const char *b, const char *name)
{
  gsize la, lb;
  g_autofree char *ta = sf_test_read_file (a, name, &la);
  g_autofree char *tb = sf_test_read_file (b, name, &lb);
  return la == lb && memcmp (ta, tb, la) == 0;
}

/* Same scenario and seed -> byte-identical output files; another seed ->
 * different results (breakdowns and weather are random). */
static void
test_determinism (void **state)
{
  DemoRun *r = *state;
  g_autofree char *dir2 = g_dir_make_tmp ("sf-fleet-XXXXXX", NULL);
  g_autofree char *dir3 = g_dir_make_tmp ("sf-fleet-XXXXXX", NULL);
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  SfRunSummary s2, s3;
  g_autoptr (GError) err = NULL;
  o.out_dir = dir2;
  assert_true (sf_run (r->sc, &o, &s2, &err));
  o.out_dir = dir3;
  o.seed = (gint64) r->sc->sim.seed + 1;
  assert_true (sf_run (r->sc, &o, &s3, &err));
  static const char *const files[] = { "summary.json", "schedule.csv", "daily.csv", "events.log" };
  for (gsize i = 0; i < G_N_ELEMENTS (files); i++)
    assert_true (same_file (r->dir, dir2, files[i]));
  assert_false (same_file (r->dir, dir3, "summary.json"));
  assert_false (same_file (r->dir, dir3, "events.log"));
  sf_run_summary_clear (&s2);
  sf_run_summary_clear (&s3);
  rm_rf (dir2);
  rm_rf (dir3);
}

/* One dozer, one lane, no randomness: the run's production equals the sum
 * of its push cycles exactly, i.e. the lane study of the same lane with the
 * same machine (same pushes, same volumes, same operating hours to the
 * millisecond rounding of each cycle). */
static void
test_one_lane_equals_push_sum (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  plain_roster (sc, 1);
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  o.n_dozers = 1;
  o.only_block = 10;
  o.only_lane = 0;
  o.no_randomness = TRUE;
  SfRunSummary s;
  g_autoptr (GError) err = NULL;
  assert_true (sf_run (sc, &o, &s, &err));
  assert_true (s.complete);
  SfLaneTotals t;
  g_autoptr (GArray) res = sf_study_push_lane (sc, 10, 0, 0, NULL, &t, &err);
  assert_non_null (res);
  assert_int_equal (s.pushes, t.pushes);
  sf_assert_close (s.dumped_bcm, t.moved_bcm, 0, 1e-12);
  sf_assert_close (s.operating_h, t.operating_h, s.pushes * 1e-3 / 3600.0, 0);
  sf_assert_close (s.planned_bcm, t.planned_bcm, 0, 1e-12);
  sf_assert_close (s.left_bcm, t.left_bcm, 1e-9, 1e-12);
  sf_run_summary_clear (&s);
}

/* Constant-distance test lane (the ground is put back after every push, so
 * every push repeats the first) with a machine whose gear speeds always bind:
 * the operating time per push matches the textbook cycle-time method
 * t = fixed + D / v_forward + D / v_reverse (Peurifoy et al., Construction
 * Planning, Equipment, and Methods, ch. "Dozers"; US Army FM 5-434 ch. 2)
 * within 1 %. */
static void
test_constant_lane_textbook (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  plain_roster (sc, 1);
  sc->sim.horizon_days = 2.0;
  SfDozerClass *c = g_ptr_array_index (sc->classes, 0);
  c->net_power_kw = 2000.0; /* drawbar 1600 kW: 1515 kN at first-gear top speed */
  sc->design.cutoff_grade_pct = 100.0; /* no tip-over: the first push goes through the pivot */
  /* the push the lane will repeat, taken by hand: the first block whose
   * first push is at least 20 m long */
  g_autoptr (GError) err = NULL;
  SfPushMachine pm;
  sf_push_machine_init (&pm, c, &sc->material, &sc->design);
  SfPushResult pr;
  guint block = 0;
  for (; block < sc->strip.n_blocks; block++)
    {
      g_autoptr (SfBlockSection) bs = sf_block_section_new (sc, block, &err);
      g_autoptr (SfSlicePlan) plan = sf_slice_plan_new (bs, &sc->design, sc->strip.lane_width_m,
                                                        &err);
      g_autoptr (SfLane) lane = sf_lane_new (bs->surface, bs->base, bs->n, bs->x0_m, bs->dx_m,
                                             sc->strip.lane_width_m, bs->tan_repose);
      SfLaneCursor cur;
      sf_lane_cursor_init (&cur, plan, lane);
      SfStepKind st;
      while ((st = sf_lane_cursor_step (&cur, &pm, &pr)) == SF_STEP_SLICE_DONE)
        ; /* an empty tip-over slice */
      assert_int_equal (st, SF_STEP_PUSHED);
      if (pr.x_dump_m - pr.x_start_m >= 20.0)
        break;
    }
  assert_true (block < sc->strip.n_blocks);
  const double D = pr.x_dump_m - pr.x_start_m;
  const double t_book_min = sf_handbook_cycle_min (c->fixed_time_min, D, c->fwd_kmh[0],
                                                   c->rev_kmh[1]);

  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  o.n_dozers = 1;
  o.only_block = (int) block;
  o.only_lane = 0;
  o.no_randomness = TRUE;
  o.constant_lanes = TRUE;
  SfRunSummary s;
  assert_true (sf_run (sc, &o, &s, &err));
  assert_false (s.complete); /* a test lane never ends: the horizon stops it */
  assert_true (s.pushes > 500);
  const SfDozerResult *d = &g_array_index (s.dozers, SfDozerResult, 0);
  double t_op_min = (double) d->use_ms[SF_USE_OPERATING] / 60000.0 / s.pushes;
  /* the production factors stretch operating time; the textbook cycle is
   * before them */
  double t_model_min = t_op_min * sf_factors_product (&sc->factors);
  sf_assert_close (t_model_min, t_book_min, 0, 0.01);
  /* and the volume per push is the same every time */
  sf_assert_close (s.dumped_bcm, s.pushes * pr.deposited_lcm / (1 + sc->material.swell), 0, 1e-9);
  sf_run_summary_clear (&s);
}

/* Mechanical availability over a long run: operating / (operating + repair
 * + waiting for a fitter) lies within 2 percentage points of
 * MTBF / (MTBF + MTTR) (renewal-reward theorem: Ross, Introduction to
 * Probability Models, ch. "Renewal theory"; Barlow & Proschan, Statistical
 * Theory of Reliability and Life Testing, 1975; both from memory).
 * MTBF 0.5 h, MTTR 0.125 h (exponential) -> 80 %. */
static void
test_availability_renewal (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  plain_roster (sc, 1);
  sc->sim.horizon_days = 60.0;
  sc->sim.fitters = 1;
  SfDozerClass *c = g_ptr_array_index (sc->classes, 0);
  c->reliability.failures = TRUE;
  c->reliability.tbf_h = (SfDist){ .kind = SF_DIST_EXPONENTIAL, .mean = 0.5 };
  c->reliability.ttr_h = (SfDist){ .kind = SF_DIST_EXPONENTIAL, .mean = 0.125 };
  c->reliability.service_interval_h = 0;
  c->reliability.refuel_min = 0;
  sc->roster.wet_day_probability = 0;
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  o.n_dozers = 1;
  o.only_block = 10;
  o.only_lane = 0;
  o.constant_lanes = TRUE;
  SfRunSummary s;
  g_autoptr (GError) err = NULL;
  assert_true (sf_run (sc, &o, &s, &err));
  const SfDozerResult *d = &g_array_index (s.dozers, SfDozerResult, 0);
  assert_true (d->failures > 1000);
  double up = (double) d->use_ms[SF_USE_OPERATING];
  double down = (double) (d->use_ms[SF_USE_BREAKDOWN] + d->use_ms[SF_USE_WAIT_FITTER]);
  double ma = up / (up + down);
  sf_assert_close (ma, 0.5 / (0.5 + 0.125), 0.02, 0);
  sf_run_summary_clear (&s);
}

/* Fleet size 1, 2, 4, 8 (one class) on the demo strip with its blast dates:
 * fleet production rises with diminishing returns while production per dozer
 * falls, and the time spent waiting for a workable lane (no free lane under
 * the work-area rules, or every blasted block taken) explains it
 * (interference and the blast schedule; the trade's experience, common
 * practice, no source). */
static void
test_fleet_size_returns (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  g_array_set_size (sc->fleet, 1);
  g_array_index (sc->fleet, SfFleetEntry, 0).count = 1; /* the first class only */
  sf_roster_clear (&sc->roster);
  sf_roster_defaults (&sc->roster, 40);
  static const int sizes[] = { 1, 2, 4, 8 };
  double rate[4], per[4], wait[4];
  for (int q = 0; q < 4; q++)
    {
      SfRunOptions o = SF_RUN_OPTIONS_INIT;
      o.n_dozers = sizes[q];
      o.no_randomness = TRUE;
      SfRunSummary s;
      g_autoptr (GError) err = NULL;
      assert_true (sf_run (sc, &o, &s, &err));
      assert_true (s.complete);
      rate[q] = s.moved_bcm / s.calendar_h;
      per[q] = rate[q] / sizes[q];
      double w = 0;
      for (guint i = 0; i < s.dozers->len; i++)
        {
          const SfDozerResult *d = &g_array_index (s.dozers, SfDozerResult, i);
          w += (double) (d->use_ms[SF_USE_WAIT_LANE] + d->use_ms[SF_USE_WAIT_BLAST]);
        }
      wait[q] = w / ((double) s.calendar_ms * sizes[q]);
      sf_run_summary_clear (&s);
    }
  for (int q = 1; q < 4; q++)
    {
      assert_true (rate[q] > rate[q - 1]);        /* more dozers, more production */
      assert_true (per[q] < per[q - 1]);          /* each dozer less */
      assert_true (wait[q] > wait[q - 1]);        /* because they wait more */
    }
  /* diminishing returns: the gain per added dozer shrinks */
  assert_true ((rate[3] - rate[2]) / 4 < (rate[2] - rate[1]) / 2);
  assert_true ((rate[2] - rate[1]) / 2 < (rate[1] - rate[0]));
}

/* The output folder: another scenario's outputs are not overwritten unless
 * asked; an unwritable folder is a clear error naming the path; nothing is
 * left half-written. */
static void
test_output_folder_rules (void **state)
{
  DemoRun *r = *state;
  g_autoptr (SfScenario) sc = demo ();
  g_free (sc->name);
  sc->name = g_strdup ("another-scenario");
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  o.out_dir = r->dir;
  o.only_block = 0;
  o.only_lane = 0;
  o.n_dozers = 1;
  SfRunSummary s;
  g_autoptr (GError) err = NULL;
  assert_false (sf_run (sc, &o, &s, &err));
  assert_non_null (strstr (err->message, "demo-strip"));
  g_clear_error (&err);
  o.out_dir = "/proc/no-such-folder/out";
  assert_false (sf_run (sc, &o, &s, &err));
  assert_non_null (strstr (err->message, "/proc/no-such-folder/out"));
}

/* Side-by-side dozing: two machines of one class may push blade to blade in
 * neighbouring lanes, so more of a block's lanes work at once: six dozers on
 * one block of eight lanes wait less and finish sooner than with one free
 * lane kept between every two (the work-area rules; side-by-side dozing as
 * a method: Peurifoy et al., Table "job condition correction factors",
 * 1.15-1.25, from the reference sheet). */
static void
test_side_by_side_pairs (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  g_array_set_size (sc->fleet, 1);
  g_array_index (sc->fleet, SfFleetEntry, 0).count = 1;
  plain_roster (sc, 40);
  double cal[2], wait[2];
  for (int sbs = 0; sbs < 2; sbs++)
    {
      sc->design.side_by_side = sbs;
      SfRunOptions o = SF_RUN_OPTIONS_INIT;
      o.n_dozers = 6;
      o.only_block = 10;
      o.no_randomness = TRUE;
      SfRunSummary s;
      g_autoptr (GError) err = NULL;
      assert_true (sf_run (sc, &o, &s, &err));
      assert_true (s.complete);
      cal[sbs] = s.calendar_h;
      wait[sbs] = 0;
      for (guint i = 0; i < s.dozers->len; i++)
        wait[sbs] += (double) g_array_index (s.dozers, SfDozerResult, i).use_ms[SF_USE_WAIT_LANE];
      sf_run_summary_clear (&s);
    }
  assert_true (cal[1] < cal[0]);
  assert_true (wait[1] < wait[0]);
}

/* Manning when the fleet is resized: the demo's crews have 5 operators for a
 * fleet of 6, so with 12 dozers each crew mans ceil(5 x 12 / 6) = 10 and
 * dz11, dz12 stand unmanned the whole run, while dz10 works; with
 * operators = 3 set outright dz04 .. dz12 never work (analytic: the rule
 * stated in stripfleet.h, SfRunOptions.n_dozers and .operators). */
static void
test_manning_scales_with_fleet (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  assert_int_equal (sc->roster.crews[0].operators, 5);
  static const struct {
    int operators;
    guint manned;
  } cases[] = { { 0, 10 }, { 3, 3 } };
  for (gsize c = 0; c < G_N_ELEMENTS (cases); c++)
    {
      SfRunOptions o = SF_RUN_OPTIONS_INIT;
      o.n_dozers = 12;
      o.operators = cases[c].operators;
      o.only_block = 0;
      o.no_randomness = TRUE;
      SfRunSummary s;
      g_autoptr (GError) err = NULL;
      assert_true (sf_run (sc, &o, &s, &err));
      assert_int_equal (s.dozers->len, 12);
      /* the summary says how the crews were manned */
      assert_int_equal (s.crew_operators->len, sc->roster.n_crews);
      for (guint k = 0; k < s.crew_operators->len; k++)
        assert_int_equal (g_array_index (s.crew_operators, guint, k), cases[c].manned);
      for (guint i = 0; i < 12; i++)
        {
          const SfDozerResult *d = &g_array_index (s.dozers, SfDozerResult, i);
          if (i >= cases[c].manned)
            assert_int_equal (d->use_ms[SF_USE_UNMANNED], s.calendar_ms);
          else
            assert_true (d->use_ms[SF_USE_UNMANNED] < s.calendar_ms);
        }
      sf_run_summary_clear (&s);
    }
}

/* Replications draw from their own streams: the results do not depend on the
 * number of threads (GThreadPool), and replications differ from each other
 * (analytic: independent streams). */
static void
test_replications_threads (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  for (guint b = 0; b < sc->strip.n_blocks; b++)
    sc->sim.blast_h[b] = 0;
  for (guint k = 0; k < sc->classes->len; k++) /* frequent failures: the streams matter */
    ((SfDozerClass *) g_ptr_array_index (sc->classes, k))->reliability.tbf_h
      = (SfDist){ .kind = SF_DIST_EXPONENTIAL, .mean = 4.0 };
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  o.only_block = 3;
  o.n_dozers = 3;
  SfRunSummary a[4], b[4];
  g_autoptr (GError) err = NULL;
  assert_true (sf_run_replications (sc, &o, 4, 1, a, &err));
  assert_true (sf_run_replications (sc, &o, 4, 3, b, &err));
  for (guint r = 0; r < 4; r++)
    {
      assert_int_equal (a[r].calendar_ms, b[r].calendar_ms);
      assert_int_equal (a[r].pushes, b[r].pushes);
      sf_assert_close (a[r].moved_bcm, b[r].moved_bcm, 0, 0);
    }
  gboolean differ = FALSE;
  for (guint r = 1; r < 4; r++)
    differ = differ || a[r].calendar_ms != a[0].calendar_ms;
  assert_true (differ);
  /* the spread of four values, by hand: 1, 2, 3, 4 -> mean 2.5, sd 1.290994,
   * p10 1.3, p50 2.5, p90 3.7 (Hyndman & Fan 1996, type 7) */
  SfSpread sp;
  sf_spread ((double[]){ 4, 1, 3, 2 }, 4, &sp);
  sf_assert_close (sp.mean, 2.5, 0, 1e-12);
  sf_assert_close (sp.sd, 1.2909944487, 0, 1e-9);
  sf_assert_close (sp.p10, 1.3, 0, 1e-12);
  sf_assert_close (sp.p50, 2.5, 0, 1e-12);
  sf_assert_close (sp.p90, 3.7, 0, 1e-12);
  for (guint r = 0; r < 4; r++)
    {
      sf_run_summary_clear (&a[r]);
      sf_run_summary_clear (&b[r]);
    }
}

int
main (void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test (test_time_usage_adds_up),
    cmocka_unit_test (test_run_conservation),
    cmocka_unit_test (test_no_production_in_stops),
    cmocka_unit_test (test_determinism),
    cmocka_unit_test (test_output_folder_rules),
    cmocka_unit_test (test_one_lane_equals_push_sum),
    cmocka_unit_test (test_constant_lane_textbook),
    cmocka_unit_test (test_availability_renewal),
    cmocka_unit_test (test_fleet_size_returns),
    cmocka_unit_test (test_replications_threads),
    cmocka_unit_test (test_side_by_side_pairs),
    cmocka_unit_test (test_manning_scales_with_fleet),
  };
  /* the group setup runs the full demo once; the tests that need it read it */
  return cmocka_run_group_tests_name ("fleet", tests, setup_demo, teardown_demo);
}
