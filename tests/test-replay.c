/* SPDX-License-Identifier: MIT
 *
 * test-replay.c — the replay of a run's events.log (sim/sf-replay.c)
 * against the other output files of the same run.
 *
 * The reference is the documented format, docs/output-formats.md (sections
 * "events.log", "summary.json", "schedule.csv"): one demo run is made into
 * a temporary folder, its events.log is loaded through the public API, and
 * what the replay says at the end of the run is compared with summary.json
 * and schedule.csv written by the same run.  Replaying the category lines
 * must give each dozer's time usage (the documented contract: "Replaying
 * these lines gives each dozer's time usage"); counts that only grow must
 * not fall; the state reached through a checkpoint must equal the state
 * reached by playing forward; damaged logs are refused naming file:line.
 *
 * The scenario is scenarios/demo-strip.json, invented (no real site).
 * Memory: everything made here is freed in the group teardown.
 */
#include "sf-test.h"

#include <math.h>
#include <string.h>

#include <cjson/cJSON.h>
#include <glib/gstdio.h>

#include "stripfleet.h"

typedef struct {
  SfScenario *sc;
  char *dir;
  char *log_path;
  SfRunSummary sum;
  SfReplay *rp;
  cJSON *summary;
  double load_s;
} Run;

static int
setup_run (void **state)
{
  Run *r = g_new0 (Run, 1);
  g_autofree char *path = sf_test_source_path ("scenarios/demo-strip.json");
  g_autoptr (GError) err = NULL;
  r->sc = sf_scenario_load_from_file (path, &err);
  if (!r->sc)
    fail_msg ("%s", err->message);
  r->dir = g_dir_make_tmp ("sf-replay-XXXXXX", NULL);
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  o.out_dir = r->dir;
  if (!sf_run (r->sc, &o, &r->sum, &err))
    fail_msg ("%s", err->message);
  r->log_path = g_build_filename (r->dir, "events.log", NULL);
  gint64 t0 = g_get_monotonic_time ();
  r->rp = sf_replay_load (r->log_path, r->sc, 0, &err);
  r->load_s = (g_get_monotonic_time () - t0) * 1e-6;
  if (!r->rp)
    fail_msg ("%s", err->message);
  gsize len;
  g_autofree char *js = sf_test_read_file (r->dir, "summary.json", &len);
  r->summary = cJSON_ParseWithLength (js, len);
  assert_non_null (r->summary);
  *state = r;
  return 0;
}

static int
teardown_run (void **state)
{
  Run *r = *state;
  cJSON_Delete (r->summary);
  sf_replay_free (r->rp);
  sf_run_summary_clear (&r->sum);
  sf_test_remove_tree (r->dir);
  g_free (r->dir);
  g_free (r->log_path);
  sf_scenario_free (r->sc);
  g_free (r);
  return 0;
}

static double
json_num (const cJSON *o, const char *key)
{
  const cJSON *v = cJSON_GetObjectItemCaseSensitive (o, key);
  if (!cJSON_IsNumber (v))
    fail_msg ("summary.json: %s is not a number", key);
  return v->valuedouble;
}

/* ---- the end of the run against summary.json --------------------------------- */

/* Source: docs/output-formats.md.  "pushes" in summary.json counts the
 * pushes credited, and a push line is written when a push is credited, so
 * the push lines of the whole log number rates.pushes exactly; per dozer
 * likewise dozers[i].pushes and .failures (one failure line per
 * breakdown).  The category lines replayed give dozers[i].time_h, the
 * calendar time split by category; the summary prints hours unrounded, the
 * log milliseconds, so they agree to well under 1e-3 h (analytic: the same
 * log).  Volumes: push lines carry lcm with three decimals, bcm = lcm /
 * (1 + swell), so the gross bcm dumped agrees with volumes_bcm.dumped_gross
 * to half a unit of the last place per push. */
static void
test_end_matches_summary (void **state)
{
  Run *r = *state;
  const SfReplay *rp = r->rp;
  g_autoptr (SfReplayState) st = sf_replay_state_new (rp);
  sf_replay_state_at (rp, G_MAXINT64, st);
  const cJSON *rates = cJSON_GetObjectItemCaseSensitive (r->summary, "rates");
  const cJSON *vol = cJSON_GetObjectItemCaseSensitive (r->summary, "volumes_bcm");
  const cJSON *dz = cJSON_GetObjectItemCaseSensitive (r->summary, "dozers");

  assert_int_equal (st->events, sf_replay_get_n_events (rp));
  assert_int_equal (st->pushes, (guint) json_num (rates, "pushes"));
  assert_int_equal (st->pushes, r->sum.pushes);
  /* the last line is at the run's end (calendar_ms of every dozer) */
  assert_int_equal (sf_replay_get_end_ms (rp), r->sum.calendar_ms);
  assert_int_equal (st->t_ms, r->sum.calendar_ms);
  sf_assert_close (st->t_ms / 3.6e6, json_num (r->summary, "calendar_h"), 1e-6, 0);

  assert_int_equal (st->n_dozers, (guint) cJSON_GetArraySize (dz));
  const double half_unit_lcm = 0.0005;
  for (guint i = 0; i < st->n_dozers; i++)
    {
      const SfReplayDozer *d = &st->dozers[i];
      const cJSON *jd = cJSON_GetArrayItem (dz, (int) i);
      const cJSON *name = cJSON_GetObjectItemCaseSensitive (jd, "name");
      assert_string_equal (d->name, name->valuestring);
      assert_int_equal (d->pushes, (guint) json_num (jd, "pushes"));
      assert_int_equal (d->failures, (guint) json_num (jd, "failures"));
      sf_assert_close (d->dumped_bcm, json_num (jd, "dumped_bcm"), d->pushes * half_unit_lcm, 0);
      const cJSON *th = cJSON_GetObjectItemCaseSensitive (jd, "time_h");
      gint64 total = 0;
      for (int k = 0; k < SF_USE_N; k++)
        {
          sf_assert_close (d->use_ms[k] / 3.6e6, json_num (th, sf_use_to_str (k)), 1e-3, 0);
          total += d->use_ms[k];
        }
      /* analytic: the categories tile the calendar time */
      assert_int_equal (total, st->t_ms);
    }
  sf_assert_close (st->dumped_bcm, json_num (vol, "dumped_gross"), st->pushes * half_unit_lcm,
                   0);
  print_message ("# replayed %u lines (%u pushes, %u slices, %u lanes done) of %s in %.3f s\n",
                 st->events, st->pushes, st->slices_done, st->lanes_done,
                 sf_replay_get_scenario_name (rp), r->load_s);
}

/* ---- lanes against schedule.csv ------------------------------------------------ */

/* Source: docs/output-formats.md, schedule.csv: one row per slice of every
 * lane, written when the slice ends, as is each slice line of events.log;
 * moved_bcm (two decimals) is the slice's gross bcm.  Every lane with rows
 * has its slices counted, its volume summed, and in a complete run
 * (summary.json "complete": true) every lane is done. */
static void
test_lanes_match_schedule (void **state)
{
  Run *r = *state;
  const SfReplay *rp = r->rp;
  g_autoptr (SfReplayState) st = sf_replay_state_new (rp);
  sf_replay_state_at (rp, sf_replay_get_end_ms (rp), st);
  const guint nl = st->n_blocks * st->n_lanes;
  g_autofree guint *rows = g_new0 (guint, nl);
  g_autofree double *bcm = g_new0 (double, nl);
  gsize len;
  g_autofree char *csv = sf_test_read_file (r->dir, "schedule.csv", &len);
  g_auto (GStrv) lines = g_strsplit (csv, "\n", -1);
  assert_true (g_str_has_prefix (lines[0], "block,lane,slice,"));
  guint n_rows = 0;
  for (guint i = 1; lines[i] && lines[i][0]; i++)
    {
      g_auto (GStrv) f = g_strsplit (lines[i], ",", -1);
      assert_int_equal (g_strv_length (f), 12);
      guint b = (guint) atoi (f[0]), l = (guint) atoi (f[1]);
      assert_true (b < st->n_blocks && l < st->n_lanes);
      rows[b * st->n_lanes + l]++;
      bcm[b * st->n_lanes + l] += g_ascii_strtod (f[10], NULL);
      n_rows++;
    }
  assert_int_equal (n_rows, st->slices_done);
  const cJSON *complete = cJSON_GetObjectItemCaseSensitive (r->summary, "complete");
  guint done = 0;
  for (guint i = 0; i < nl; i++)
    {
      const SfReplayLane *ln = &st->lanes[i];
      assert_int_equal (ln->slices_done, rows[i]);
      assert_int_equal (ln->slices_total, rows[i]);
      /* two-decimal rows, three-decimal lcm per push: a few hundredths */
      sf_assert_close (ln->dumped_bcm, bcm[i], 0.005 * rows[i] + 0.05, 0);
      if (cJSON_IsTrue (complete))
        assert_true (ln->done);
      done += ln->done;
    }
  assert_int_equal (done, st->lanes_done);
  assert_true (cJSON_IsTrue (complete) == (done == nl));
}

/* ---- the first moment ------------------------------------------------------------ */

/* Source: docs/output-formats.md, events.log example, "Reading it": at the
 * start the day shift begins with crew A (index 0) and 5 operators, so dz06
 * stands unmanned and the other five start on lanes 0, 2, 4 and 6 of block 0
 * and lane 0 of block 1; nothing is pushed yet. */
static void
test_state_at_zero (void **state)
{
  Run *r = *state;
  g_autoptr (SfReplayState) st = sf_replay_state_new (r->rp);
  /* before any query: every dozer waits for a blast without a lane */
  for (guint i = 0; i < st->n_dozers; i++)
    {
      assert_int_equal (st->dozers[i].use, SF_USE_WAIT_BLAST);
      assert_int_equal (st->dozers[i].block, -1);
    }
  sf_replay_state_at (r->rp, 0, st);
  assert_int_equal (st->t_ms, 0);
  assert_int_equal (st->pushes, 0);
  assert_int_equal (st->slices_done, 0);
  assert_int_equal (st->lanes_done, 0);
  assert_int_equal (st->shift, 0);
  assert_int_equal (st->day, 0);
  assert_string_equal (st->shift_name, "day");
  assert_string_equal (st->crew_name, "A");
  assert_int_equal (st->operators, 5);
  assert_false (st->wet_stop);
  assert_int_equal (st->dozers[5].use, SF_USE_UNMANNED);
  const int lanes[5][2] = { { 0, 0 }, { 0, 2 }, { 0, 4 }, { 0, 6 }, { 1, 0 } };
  for (guint i = 0; i < 5; i++)
    {
      assert_int_equal (st->dozers[i].use, SF_USE_OPERATING);
      assert_int_equal (st->dozers[i].block, lanes[i][0]);
      assert_int_equal (st->dozers[i].lane, lanes[i][1]);
      assert_true (isfinite (st->dozers[i].x_m));
    }
  /* blocks blasted later are not workable yet (a block workable at the
   * start gets no blast line) */
  assert_true (st->block_open[0]);
  assert_false (st->block_open[st->n_blocks - 1]);
}

/* ---- time moving on ------------------------------------------------------------------ */

static void
assert_same_state (const SfReplayState *a, const SfReplayState *b)
{
  assert_int_equal (a->t_ms, b->t_ms);
  assert_int_equal (a->events, b->events);
  assert_int_equal (a->pushes, b->pushes);
  assert_int_equal (a->slices_done, b->slices_done);
  assert_int_equal (a->lanes_done, b->lanes_done);
  assert_int_equal (a->shift, b->shift);
  assert_int_equal (a->wet_stop, b->wet_stop);
  assert_true (a->dumped_bcm == b->dumped_bcm);
  assert_memory_equal (a->block_open, b->block_open, sizeof (gboolean) * a->n_blocks);
  for (guint i = 0; i < a->n_dozers; i++)
    {
      const SfReplayDozer *x = &a->dozers[i], *y = &b->dozers[i];
      assert_int_equal (x->use, y->use);
      assert_int_equal (x->block, y->block);
      assert_int_equal (x->lane, y->lane);
      assert_int_equal (x->pushes, y->pushes);
      assert_memory_equal (x->use_ms, y->use_ms, sizeof x->use_ms);
      assert_true ((isnan (x->x_m) && isnan (y->x_m)) || x->x_m == y->x_m);
    }
  for (guint i = 0; i < a->n_blocks * a->n_lanes; i++)
    {
      assert_int_equal (a->lanes[i].slices_done, b->lanes[i].slices_done);
      assert_int_equal (a->lanes[i].done, b->lanes[i].done);
      assert_true (a->lanes[i].dumped_bcm == b->lanes[i].dumped_bcm);
    }
}

/* Analytic: counts of things done only grow with time, and a dozer's time
 * in its categories adds up to the time elapsed.  A state reached by
 * playing forward equals the one reached through the stored checkpoints
 * (fresh state) and the one reached going back in time. */
static void
test_forward_playback (void **state)
{
  Run *r = *state;
  const SfReplay *rp = r->rp;
  const gint64 end = sf_replay_get_end_ms (rp);
  g_autoptr (SfReplayState) fwd = sf_replay_state_new (rp);
  g_autoptr (SfReplayState) back = sf_replay_state_new (rp);
  sf_replay_state_at (rp, end, back);
  const guint steps = 997; /* not a divisor of anything in the log */
  guint last_pushes = 0, last_slices = 0, last_done = 0, last_events = 0;
  double last_bcm = 0;
  guint pushing = 0, wet = 0;
  for (guint s = 0; s <= steps; s++)
    {
      const gint64 t = end * (gint64) s / steps;
      sf_replay_state_at (rp, t, fwd);
      assert_int_equal (fwd->t_ms, t);
      assert_true (fwd->pushes >= last_pushes && fwd->slices_done >= last_slices
                   && fwd->lanes_done >= last_done && fwd->events >= last_events
                   && fwd->dumped_bcm >= last_bcm);
      last_pushes = fwd->pushes, last_slices = fwd->slices_done, last_done = fwd->lanes_done;
      last_events = fwd->events, last_bcm = fwd->dumped_bcm;
      for (guint i = 0; i < fwd->n_dozers; i++)
        {
          gint64 total = 0;
          for (int k = 0; k < SF_USE_N; k++)
            total += fwd->dozers[i].use_ms[k];
          assert_int_equal (total, t);
          pushing += fwd->dozers[i].pushing;
          if (fwd->dozers[i].pushing)
            {
              /* within the run's push extents */
              double lo, hi;
              sf_replay_get_x_range (rp, &lo, &hi);
              assert_true (fwd->dozers[i].x_m >= lo - 1e-9 && fwd->dozers[i].x_m <= hi + 1e-9);
            }
        }
      wet += fwd->wet_stop;
      if (s % 37 == 0)
        {
          g_autoptr (SfReplayState) fresh = sf_replay_state_new (rp);
          sf_replay_state_at (rp, t, fresh);
          assert_same_state (fwd, fresh);
          sf_replay_state_at (rp, t, back); /* from the end, going back */
          assert_same_state (fwd, back);
        }
    }
  assert_true (pushing > 0);
  assert_true (wet > 0); /* the demo has wet-weather stops (docs/output-formats.md example) */

  /* timing of a random-access query on this log */
  GRand *rand = g_rand_new_with_seed (7);
  g_autoptr (SfReplayState) q = sf_replay_state_new (rp);
  const guint n_q = 2000;
  gint64 t0 = g_get_monotonic_time ();
  for (guint i = 0; i < n_q; i++)
    sf_replay_state_at (rp, (gint64) (g_rand_double (rand) * (double) end), q);
  double random_us = (double) (g_get_monotonic_time () - t0) / n_q;
  g_rand_free (rand);
  t0 = g_get_monotonic_time ();
  for (guint i = 0; i <= n_q; i++)
    sf_replay_state_at (rp, end * (gint64) i / n_q, q);
  double forward_us = (double) (g_get_monotonic_time () - t0) / n_q;
  print_message ("# query: %.1f us at random times, %.1f us playing forward (%u lines)\n",
                 random_us, forward_us, sf_replay_get_n_events (rp));
}

/* ---- damaged logs ------------------------------------------------------------------------ */

#define HEADER                                                                                  \
  "# stripfleet-run-1 events\n# scenario: demo-strip\n# start: 2027-03-01T06:00:00+10:00\n"    \
  "# seed: 42\n# t_ms kind dozer block lane slice a b c\n"
#define GOOD_LINES                                                                              \
  "0 shift -1 -1 -1 0 0.000 0.000 5.000\n"                                                      \
  "0 operating 0 0 0 -1 0.000 0.000 0.000\n"                                                    \
  "15543 push 0 0 0 0 71.500 76.500 30.585\n"

/* Source: docs/output-formats.md, events.log: the header lines, nine
 * space-separated fields, the kinds and their fields, non-decreasing time;
 * the fleet of the demo scenario has 6 dozers (index 0 to 5) and 30 blocks
 * of 8 lanes.  Each damaged log must be refused with its file:line and a
 * word naming what is wrong. */
static void
test_bad_logs (void **state)
{
  Run *r = *state;
  static const struct {
    const char *text;
    guint line;
    const char *words;
  } cases[] = {
    { HEADER GOOD_LINES "15543 push 0 0 0\n", 9, "expected 9 fields" },
    { HEADER GOOD_LINES "20000 refuel 0 0 0 -1 0.000 0.000", 9, "cut short" },
    { HEADER GOOD_LINES "20000 pusj 0 0 0 0 1.000 2.000 3.000\n", 9, "field 'kind'" },
    { HEADER GOOD_LINES "15542 refuel 0 0 0 -1 0.000 0.000 0.000\n", 9, "time goes back" },
    { HEADER GOOD_LINES "20000 operating 6 0 0 -1 0.000 0.000 0.000\n", 9,
      "field 'dozer': expected a dozer index from 0 to 5" },
    { HEADER GOOD_LINES "20000 tram 1 30 0 -1 6.250 0.000 0.000\n", 9, "field 'block'" },
    { HEADER GOOD_LINES "20000 tram 1 0 8 -1 6.250 0.000 0.000\n", 9, "field 'lane'" },
    { HEADER GOOD_LINES "20000 push 0 0 0 0 71.5 76.500 30.585\n", 9, "three decimals" },
    { HEADER GOOD_LINES "20000 shift -1 -1 -1 0 1.000 4.000 5.000\n", 9, "crew index" },
    { HEADER GOOD_LINES "20000 refuel 0 0 0 -1 1.000 0.000 0.000\n", 9, "field 'a'" },
    { "# stripfleet-run-2 events\n# scenario: demo-strip\n# start: 2027-03-01T06:00:00+10:00\n"
      "# seed: 42\n# t_ms kind dozer block lane slice a b c\n",
      1, "format tag" },
    { "# stripfleet-run-1 events\n# scenario: other\n# start: 2027-03-01T06:00:00+10:00\n"
      "# seed: 42\n# t_ms kind dozer block lane slice a b c\n",
      2, "scenario 'other'" },
    { "# stripfleet-run-1 events\n# scenario: demo-strip\n# start: 2027-03-01\n"
      "# seed: 42\n# t_ms kind dozer block lane slice a b c\n",
      3, "UTC offset" },
    { "# stripfleet-run-1 events\n", 2, "header lines" },
  };
  g_autofree char *path = g_build_filename (r->dir, "bad-events.log", NULL);
  for (gsize i = 0; i < G_N_ELEMENTS (cases); i++)
    {
      assert_true (g_file_set_contents (path, cases[i].text, -1, NULL));
      g_autoptr (GError) err = NULL;
      g_autoptr (SfReplay) rp = sf_replay_load (path, r->sc, 0, &err);
      assert_null (rp);
      assert_non_null (err);
      assert_true (err->domain == SF_SCENARIO_ERROR);
      g_autofree char *where = g_strdup_printf ("%s:%u: ", path, cases[i].line);
      if (!g_str_has_prefix (err->message, where) || !strstr (err->message, cases[i].words))
        fail_msg ("case %zu: expected '%s...%s', got '%s'", i, where, cases[i].words,
                  err->message);
    }
  /* the good lines alone load; a fleet given larger than the scenario's
   * accepts dz07 */
  assert_true (g_file_set_contents (path, HEADER GOOD_LINES
                                    "20000 operating 6 0 0 -1 0.000 0.000 0.000\n", -1, NULL));
  g_autoptr (GError) err = NULL;
  g_autoptr (SfReplay) ok = sf_replay_load (path, r->sc, 7, &err);
  assert_non_null (ok);
  assert_int_equal (sf_replay_get_n_events (ok), 4);
  /* ... and so does a summary.json beside the log whose "dozers" lists
   * seven (a run made with --dozers 7), without being told */
  g_autofree char *sub = g_build_filename (r->dir, "seven", NULL);
  g_autofree char *sub_log = g_build_filename (sub, "events.log", NULL);
  g_autofree char *sub_sum = g_build_filename (sub, "summary.json", NULL);
  assert_int_equal (g_mkdir_with_parents (sub, 0755), 0);
  assert_true (g_file_set_contents (sub_log, HEADER GOOD_LINES
                                    "20000 operating 6 0 0 -1 0.000 0.000 0.000\n", -1, NULL));
  assert_true (g_file_set_contents (sub_sum, "{\"dozers\": [{}, {}, {}, {}, {}, {}, {}]}\n", -1,
                                    NULL));
  g_autoptr (SfReplay) seven = sf_replay_load (sub_log, r->sc, 0, &err);
  assert_non_null (seven);
  assert_int_equal (sf_replay_get_n_dozers (seven), 7);
  g_unlink (sub_log);
  g_unlink (sub_sum);
  g_rmdir (sub);
  g_unlink (path);
  /* a missing file: the file error, naming it */
  g_autoptr (GError) err2 = NULL;
  g_autoptr (SfReplay) none = sf_replay_load (path, r->sc, 0, &err2);
  assert_null (none);
  assert_true (err2->domain == G_FILE_ERROR);
  assert_non_null (strstr (err2->message, path));
}

int
main (void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test (test_end_matches_summary),
    cmocka_unit_test (test_lanes_match_schedule),
    cmocka_unit_test (test_state_at_zero),
    cmocka_unit_test (test_forward_playback),
    cmocka_unit_test (test_bad_logs),
  };
  return cmocka_run_group_tests_name ("replay", tests, setup_run, teardown_run);
}
