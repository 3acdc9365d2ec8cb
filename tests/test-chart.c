/* SPDX-License-Identifier: MIT
 *
 * test-chart.c — the PNG charts of the block studies: the plan and lane
 * charts of block 10 of the demo strip are valid PNG files of the promised
 * size (read back with cairo, a general-purpose reference library), the same
 * input gives the same bytes, a path that cannot be written fails naming it
 * and leaves nothing behind, and the axis tick steps are Heckbert's nice
 * numbers.  The charts of a fleet run (a short run of the demo: block 3,
 * three dozers) are valid PNGs of their sizes, byte-identical when drawn
 * again, and missing or damaged run files fail naming the file (and line)
 * without writing a chart.  Without cairo, the entry points fail with
 * "built without cairo".
 *
 * Every file is written in a fresh temporary folder that the test removes.
 */
#include "sf-test.h"

#include <locale.h>
#include <math.h>
#include <string.h>
#include <glib/gstdio.h>

#include "sf-chart.h"
#include "stripfleet.h"

#ifdef SF_HAVE_CAIRO
#include <cairo.h>
#include <cjson/cJSON.h>
#endif

#define DEMO_BLOCK 10

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

static int
compare_names (gconstpointer a, gconstpointer b)
{
  /* g_ptr_array_sort passes pointers to the elements */
  return strcmp (*(const char *const *) a, *(const char *const *) b);
}

/* Names of the entries of a folder, sorted (the order g_dir gives is not
 * defined). */
static GPtrArray *
dir_entries (const char *dir)
{
  GPtrArray *names = g_ptr_array_new_with_free_func (g_free);
  g_autoptr (GDir) d = g_dir_open (dir, 0, NULL);
  assert_non_null (d);
  const char *name;
  while ((name = g_dir_read_name (d)))
    g_ptr_array_add (names, g_strdup (name));
  g_ptr_array_sort (names, compare_names);
  return names;
}

static void
remove_dir (const char *dir)
{
  g_autoptr (GPtrArray) names = dir_entries (dir);
  for (guint i = 0; i < names->len; i++)
    {
      g_autofree char *p = g_build_filename (dir, (const char *) g_ptr_array_index (names, i), NULL);
      g_unlink (p);
    }
  g_rmdir (dir);
}

#ifdef SF_HAVE_CAIRO

/* The PNG signature: the first eight bytes of every PNG file (PNG
 * specification, ISO/IEC 15948:2004, section 5.2). */
static const guchar PNG_SIGNATURE[8] = { 0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n' };

/* The file is a PNG that cairo (reference library) reads back without error
 * at the promised size, and it is not blank: at least min_ink of its pixels
 * are not white, and at least min_colour are coloured (data are drawn in
 * colour, frames, grids and text in greys: a chart with no data has none). */
static void
check_png_ink (const char *path, int width, int height, double min_ink, double min_colour)
{
  g_autofree char *data = NULL;
  gsize len = 0;
  assert_true (g_file_get_contents (path, &data, &len, NULL));
  assert_true (len > sizeof PNG_SIGNATURE);
  assert_memory_equal (data, PNG_SIGNATURE, sizeof PNG_SIGNATURE); /* ISO/IEC 15948 §5.2 */
  cairo_surface_t *img = cairo_image_surface_create_from_png (path);
  assert_int_equal (cairo_surface_status (img), CAIRO_STATUS_SUCCESS);
  assert_int_equal (cairo_image_surface_get_width (img), width);
  assert_int_equal (cairo_image_surface_get_height (img), height);
  /* not blank: a chart covers a good share of the page with ink (a plain
   * white page would have none; common practice, no source) */
  cairo_surface_flush (img);
  const unsigned char *px = cairo_image_surface_get_data (img);
  const int stride = cairo_image_surface_get_stride (img);
  long inked = 0, coloured = 0;
  for (int y = 0; y < height; y++)
    for (int x = 0; x < width; x++)
      {
        guint32 v;
        memcpy (&v, px + (gsize) y * stride + (gsize) x * 4, 4);
        if ((v & 0xffffff) != 0xffffff)
          inked++;
        /* CAIRO_FORMAT_RGB24: 0x00RRGGBB in a native 32-bit word */
        int r = (v >> 16) & 0xff, g = (v >> 8) & 0xff, b = v & 0xff;
        if (MAX (r, MAX (g, b)) - MIN (r, MIN (g, b)) > 40)
          coloured++;
      }
  assert_true (inked > min_ink * width * height);
  assert_true (coloured >= min_colour * width * height);
  cairo_surface_destroy (img);
}

/* The study charts: a good share of the page is ink. */
static void
check_png (const char *path, int width, int height)
{
  check_png_ink (path, width, height, 0.10, 0.0);
}

/* Plan chart of block 10: a valid PNG of SF_CHART_PLAN_* pixels, and the
 * folder holds only that file afterwards (no temporary left: project rule,
 * DEVELOPERS.md "outputs are written to a temporary file and renamed"). */
static void
test_plan_chart (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  g_autofree char *dir = g_dir_make_tmp ("sf-chart-XXXXXX", NULL);
  assert_non_null (dir);
  g_autofree char *path = g_build_filename (dir, "plan.png", NULL);
  g_autoptr (GError) err = NULL;
  gboolean ok = sf_study_chart_plan (sc, DEMO_BLOCK, NULL, path, &err);
  if (!ok)
    fail_msg ("%s", err->message);
  check_png (path, SF_CHART_PLAN_WIDTH_PX, SF_CHART_PLAN_HEIGHT_PX);
  g_autoptr (GPtrArray) names = dir_entries (dir);
  assert_int_equal (names->len, 1);
  assert_string_equal (g_ptr_array_index (names, 0), "plan.png");
  /* the other strategy and pivot draw too */
  SfStudyOptions o = SF_STUDY_OPTIONS_INIT;
  o.strategy = 1;
  o.pivot = 1;
  assert_true (sf_study_chart_plan (sc, DEMO_BLOCK, &o, path, &err));
  check_png (path, SF_CHART_PLAN_WIDTH_PX, SF_CHART_PLAN_HEIGHT_PX);
  remove_dir (dir);
}

/* Lane chart of block 10, lane 0, first class: a valid PNG of
 * SF_CHART_LANE_* pixels, nothing else left in the folder (project rule as
 * above). */
static void
test_lane_chart (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  g_autofree char *dir = g_dir_make_tmp ("sf-chart-XXXXXX", NULL);
  assert_non_null (dir);
  g_autofree char *path = g_build_filename (dir, "lane.png", NULL);
  g_autoptr (GError) err = NULL;
  gboolean ok = sf_study_chart_lane (sc, DEMO_BLOCK, 0, 0, NULL, path, &err);
  if (!ok)
    fail_msg ("%s", err->message);
  check_png (path, SF_CHART_LANE_WIDTH_PX, SF_CHART_LANE_HEIGHT_PX);
  g_autoptr (GPtrArray) names = dir_entries (dir);
  assert_int_equal (names->len, 1);
  assert_string_equal (g_ptr_array_index (names, 0), "lane.png");
  remove_dir (dir);
}

static void
assert_same_bytes (const char *a, const char *b)
{
  g_autofree char *da = NULL, *db = NULL;
  gsize la = 0, lb = 0;
  assert_true (g_file_get_contents (a, &da, &la, NULL));
  assert_true (g_file_get_contents (b, &db, &lb, NULL));
  assert_int_equal (la, lb);
  assert_memory_equal (da, db, la);
}

/* Drawing twice gives byte-identical files (project rule: deterministic
 * outputs, DEVELOPERS.md), for both charts, also with a different numeric
 * locale in force when one is installed (the labels must not change). */
static void
test_deterministic (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  g_autofree char *dir = g_dir_make_tmp ("sf-chart-XXXXXX", NULL);
  g_autofree char *p1 = g_build_filename (dir, "a.png", NULL);
  g_autofree char *p2 = g_build_filename (dir, "b.png", NULL);
  g_autofree char *l1 = g_build_filename (dir, "c.png", NULL);
  g_autofree char *l2 = g_build_filename (dir, "d.png", NULL);
  g_autoptr (GError) err = NULL;
  assert_true (sf_study_chart_plan (sc, DEMO_BLOCK, NULL, p1, &err));
  assert_true (sf_study_chart_lane (sc, DEMO_BLOCK, 0, 0, NULL, l1, &err));
  /* a comma decimal separator, when the system has such a locale */
  const char *commas[] = { "de_DE.UTF-8", "fr_FR.UTF-8", "de_DE.utf8", "fr_FR.utf8" };
  g_autofree char *old = g_strdup (setlocale (LC_NUMERIC, NULL));
  for (gsize i = 0; i < G_N_ELEMENTS (commas); i++)
    if (setlocale (LC_NUMERIC, commas[i]))
      break;
  gboolean ok_plan = sf_study_chart_plan (sc, DEMO_BLOCK, NULL, p2, &err);
  gboolean ok_lane = ok_plan && sf_study_chart_lane (sc, DEMO_BLOCK, 0, 0, NULL, l2, &err);
  setlocale (LC_NUMERIC, old);
  assert_true (ok_plan && ok_lane);
  assert_same_bytes (p1, p2);
  assert_same_bytes (l1, l2);
  remove_dir (dir);
}

/* A path that cannot be written: FALSE, a G_FILE_ERROR whose message names
 * the path, and no file (final or temporary) left behind. */
static void
test_unwritable (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  g_autoptr (GError) err = NULL;
  const char *proc = "/proc/nope/x.png";
  assert_false (sf_study_chart_plan (sc, DEMO_BLOCK, NULL, proc, &err));
  assert_non_null (err);
  assert_true (err->domain == G_FILE_ERROR);
  assert_non_null (strstr (err->message, proc));
  assert_false (g_file_test (proc, G_FILE_TEST_EXISTS));
  g_clear_error (&err);

  g_autofree char *dir = g_dir_make_tmp ("sf-chart-XXXXXX", NULL);
  g_autofree char *missing = g_build_filename (dir, "no-such-folder", "lane.png", NULL);
  assert_false (sf_study_chart_lane (sc, DEMO_BLOCK, 0, 0, NULL, missing, &err));
  assert_non_null (err);
  assert_true (err->domain == G_FILE_ERROR);
  assert_non_null (strstr (err->message, missing));
  g_clear_error (&err);
  assert_false (sf_study_chart_plan (sc, DEMO_BLOCK, NULL, missing, &err));
  assert_non_null (strstr (err->message, missing));
  g_clear_error (&err);
  g_autoptr (GPtrArray) names = dir_entries (dir);
  assert_int_equal (names->len, 0);
  remove_dir (dir);
}

/* A block, lane or class that does not exist: the study's own error
 * (SF_MODEL_ERROR_ARGUMENT), and no file. */
static void
test_bad_arguments (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  g_autofree char *dir = g_dir_make_tmp ("sf-chart-XXXXXX", NULL);
  g_autofree char *path = g_build_filename (dir, "x.png", NULL);
  g_autoptr (GError) err = NULL;
  assert_false (sf_study_chart_plan (sc, 9999, NULL, path, &err));
  assert_true (err->domain == SF_MODEL_ERROR && err->code == SF_MODEL_ERROR_ARGUMENT);
  g_clear_error (&err);
  assert_false (sf_study_chart_lane (sc, DEMO_BLOCK, 9999, 0, NULL, path, &err));
  assert_true (err->domain == SF_MODEL_ERROR && err->code == SF_MODEL_ERROR_ARGUMENT);
  g_clear_error (&err);
  assert_false (sf_study_chart_lane (sc, DEMO_BLOCK, 0, 9999, NULL, path, &err));
  assert_true (err->domain == SF_MODEL_ERROR && err->code == SF_MODEL_ERROR_ARGUMENT);
  g_autoptr (GPtrArray) names = dir_entries (dir);
  assert_int_equal (names->len, 0);
  remove_dir (dir);
}

/* Nice tick steps (P. S. Heckbert, "Nice numbers for graph labels",
 * Graphics Gems, 1990): the step is 1, 2 or 5 times a power of ten, gives
 * at most max_ticks intervals, and the next smaller nice step would give
 * more. */
static void
test_tick_step (void **state)
{
  (void) state;
  /* worked by hand from the definition */
  sf_assert_close (sf_chart_tick_step (260.0, 14), 20.0, 0, 1e-12); /* 18.6 -> 20 */
  sf_assert_close (sf_chart_tick_step (100.0, 10), 10.0, 0, 1e-12); /* exactly 10 */
  sf_assert_close (sf_chart_tick_step (1.0, 5), 0.2, 0, 1e-12);
  sf_assert_close (sf_chart_tick_step (0.37, 4), 0.1, 0, 1e-12);    /* 0.0925 -> 0.1 */
  sf_assert_close (sf_chart_tick_step (2300.0, 6), 500.0, 0, 1e-12); /* 383 -> 500 */
  sf_assert_close (sf_chart_tick_step (61.0, 8), 10.0, 0, 1e-12);    /* 7.6 -> 10 */
  /* the definition over many ranges */
  for (double range = 0.013; range < 1e6; range *= 1.37)
    for (guint t = 1; t <= 15; t++)
      {
        double s = sf_chart_tick_step (range, t);
        double e = floor (log10 (s) + 1e-9);
        double mant = s / pow (10.0, e);
        assert_true (fabs (mant - 1) < 1e-9 || fabs (mant - 2) < 1e-9 || fabs (mant - 5) < 1e-9);
        assert_true (range / s <= t * (1 + 1e-9));
        double smaller = fabs (mant - 1) < 1e-9 ? 0.5 * s : fabs (mant - 2) < 1e-9 ? 0.5 * s : 0.4 * s;
        assert_true (range / smaller > t * (1 - 1e-9));
      }
}

/* ---- charts of a fleet run ------------------------------------------------------ */

static const char *const RUN_PNGS[] = { "daily.png", "usage.png", "schedule.png" };

/* A short fleet run of the demo into a new temporary folder (block 3 only,
 * three dozers: enough for every chart, quick under the sanitizers). */
static char *
short_run (void)
{
  g_autoptr (SfScenario) sc = demo ();
  char *dir = g_dir_make_tmp ("sf-chart-run-XXXXXX", NULL);
  assert_non_null (dir);
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  o.out_dir = dir;
  o.only_block = 3;
  o.n_dozers = 3;
  SfRunSummary sum;
  g_autoptr (GError) err = NULL;
  if (!sf_run (sc, &o, &sum, &err))
    fail_msg ("%s", err->message);
  sf_run_summary_clear (&sum);
  return dir;
}

static void
put_file (const char *dir, const char *name, const char *text)
{
  g_autofree char *path = g_build_filename (dir, name, NULL);
  assert_true (g_file_set_contents (path, text, -1, NULL));
}

/* The three charts: valid PNGs of the promised sizes, not blank (check_png:
 * ISO/IEC 15948 signature, read back by cairo), nothing but the run's files
 * and the charts in the folder (no temporary left: DEVELOPERS.md, outputs
 * are written to a temporary file and renamed); drawn again, also under a
 * comma decimal locale when one is installed, byte for byte the same
 * (project rule: deterministic outputs, DEVELOPERS.md). */
static void
test_run_charts (void **state)
{
  (void) state;
  g_autofree char *dir = short_run ();
  g_autoptr (GError) err = NULL;
  if (!sf_chart_run_outputs (dir, &err))
    fail_msg ("%s", err->message);
  const int heights[] = { SF_CHART_DAILY_HEIGHT_PX, SF_CHART_USAGE_HEIGHT_PX,
                          SF_CHART_SCHEDULE_HEIGHT_PX };
  char *first[G_N_ELEMENTS (RUN_PNGS)];
  gsize first_len[G_N_ELEMENTS (RUN_PNGS)];
  for (gsize i = 0; i < G_N_ELEMENTS (RUN_PNGS); i++)
    {
      g_autofree char *path = g_build_filename (dir, RUN_PNGS[i], NULL);
      /* a short run draws little; at least 3 % ink and 0.5 % colour
       * (common practice, no source) */
      check_png_ink (path, SF_CHART_RUN_WIDTH_PX, heights[i], 0.03, 0.005);
      first[i] = sf_test_read_file (dir, RUN_PNGS[i], &first_len[i]);
    }
  g_autoptr (GPtrArray) names = dir_entries (dir);
  const char *expected[] = { "daily.csv", "daily.png", "events.log", "schedule.csv",
                             "schedule.png", "summary.json", "usage.png" };
  assert_int_equal (names->len, G_N_ELEMENTS (expected));
  for (gsize i = 0; i < G_N_ELEMENTS (expected); i++)
    assert_string_equal (g_ptr_array_index (names, i), expected[i]);

  const char *commas[] = { "de_DE.UTF-8", "fr_FR.UTF-8", "de_DE.utf8", "fr_FR.utf8" };
  g_autofree char *old = g_strdup (setlocale (LC_NUMERIC, NULL));
  for (gsize i = 0; i < G_N_ELEMENTS (commas); i++)
    if (setlocale (LC_NUMERIC, commas[i]))
      break;
  gboolean again = sf_chart_run_outputs (dir, &err);
  setlocale (LC_NUMERIC, old);
  if (!again)
    fail_msg ("%s", err->message);
  for (gsize i = 0; i < G_N_ELEMENTS (RUN_PNGS); i++)
    {
      gsize len = 0;
      g_autofree char *second = sf_test_read_file (dir, RUN_PNGS[i], &len);
      assert_int_equal (len, first_len[i]);
      assert_memory_equal (second, first[i], len);
      g_free (first[i]);
    }
  remove_dir (dir);
}

/* The spread chart of replications: drawn into the run's set with
 * SfRunOptions.charts (a valid PNG of the promised size, not blank: ISO/IEC
 * 15948 signature read back by cairo), byte for byte the same when drawn
 * again (project rule: deterministic outputs); a replications.csv whose
 * rows are out of order, or with one replication only, is refused naming
 * the file and line, and no spread.png is written (stripfleet.h). */
static void
test_spread_chart (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  g_autofree char *dir = g_dir_make_tmp ("sf-chart-spread-XXXXXX", NULL);
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  o.out_dir = dir;
  o.only_block = 3;
  o.n_dozers = 3;
  o.charts = TRUE;
  SfRunSummary sums[5];
  g_autoptr (GError) err = NULL;
  if (!sf_run_replications (sc, &o, G_N_ELEMENTS (sums), 2, sums, &err))
    fail_msg ("%s", err->message);
  assert_true (sums[0].charts_drawn);
  assert_null (sums[0].notice);
  for (gsize r = 0; r < G_N_ELEMENTS (sums); r++)
    sf_run_summary_clear (&sums[r]);
  g_autofree char *path = g_build_filename (dir, "spread.png", NULL);
  check_png_ink (path, SF_CHART_RUN_WIDTH_PX, SF_CHART_SPREAD_HEIGHT_PX, 0.03, 0.005);
  gsize len1 = 0, len2 = 0;
  g_autofree char *first = sf_test_read_file (dir, "spread.png", &len1);
  assert_true (sf_chart_run_spread (dir, &err));
  g_autofree char *second = sf_test_read_file (dir, "spread.png", &len2);
  assert_int_equal (len1, len2);
  assert_memory_equal (first, second, len1);

  /* damaged replications.csv: rows out of order, then a single row */
  g_autofree char *csv = sf_test_read_file (dir, "replications.csv", NULL);
  g_auto (GStrv) lines = g_strsplit (csv, "\n", -1);
  g_autofree char *swapped = g_strdup_printf ("%s\n%s\n%s\n", lines[0], lines[2], lines[1]);
  g_autofree char *single = g_strdup_printf ("%s\n%s\n", lines[0], lines[1]);
  g_autofree char *csv_path = g_build_filename (dir, "replications.csv", NULL);
  const struct {
    const char *text, *want;
  } bad[] = {
    { swapped, "replications.csv line 2: replication: expected replication 0" },
    { single, "replications.csv line 3: expected a row per replication, at least 2, found 1" },
  };
  for (gsize i = 0; i < G_N_ELEMENTS (bad); i++)
    {
      g_unlink (path);
      put_file (dir, "replications.csv", bad[i].text);
      g_clear_error (&err);
      assert_false (sf_chart_run_spread (dir, &err));
      if (!strstr (err->message, bad[i].want) || !strstr (err->message, csv_path))
        fail_msg ("expected '%s' naming %s, got: %s", bad[i].want, csv_path, err->message);
      assert_false (g_file_test (path, G_FILE_TEST_EXISTS));
    }
  remove_dir (dir);
}

/* The compare chart of three blocks: a valid PNG of the promised size, not
 * blank, byte for byte the same when drawn again (deterministic outputs);
 * no block to draw is an argument error. */
static void
test_compare_chart (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  int ku = sf_scenario_find_class (sc, "u-blade-100t");
  int kc = sf_scenario_find_class (sc, "carry-blade-100t");
  SfCompareResult rows[3];
  g_autoptr (GError) err = NULL;
  for (guint b = 0; b < 3; b++)
    if (!sf_study_compare (sc, 9 + b, (guint) ku, (guint) kc, (guint) ku, &rows[b], &err))
      fail_msg ("%s", err->message);
  g_autofree char *dir = g_dir_make_tmp ("sf-chart-cmp-XXXXXX", NULL);
  g_autofree char *path = g_build_filename (dir, "compare.png", NULL);
  assert_true (sf_study_chart_compare (sc, rows, 3, (guint) ku, (guint) kc, (guint) ku, path,
                                       &err));
  check_png_ink (path, SF_CHART_COMPARE_WIDTH_PX, SF_CHART_COMPARE_HEIGHT_PX, 0.03, 0.005);
  gsize len1 = 0, len2 = 0;
  g_autofree char *first = sf_test_read_file (dir, "compare.png", &len1);
  assert_true (sf_study_chart_compare (sc, rows, 3, (guint) ku, (guint) kc, (guint) ku, path,
                                       &err));
  g_autofree char *second = sf_test_read_file (dir, "compare.png", &len2);
  assert_int_equal (len1, len2);
  assert_memory_equal (first, second, len1);
  assert_false (sf_study_chart_compare (sc, rows, 0, 0, 0, 0, path, &err));
  assert_true (err->domain == SF_MODEL_ERROR && err->code == SF_MODEL_ERROR_ARGUMENT);
  remove_dir (dir);
}

/* The hand-over chart of block 10: a valid PNG of the promised size, not
 * blank, byte for byte the same when drawn again. */
static void
test_handover_chart (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  int ku = sf_scenario_find_class (sc, "u-blade-100t");
  SfHandoverTotals t;
  g_autoptr (GError) err = NULL;
  g_autoptr (GArray) rows = sf_study_handover (sc, 10, 0, (guint) ku, NULL, 0.0, 0.95, &t, &err);
  assert_non_null (rows);
  g_autofree char *dir = g_dir_make_tmp ("sf-chart-ho-XXXXXX", NULL);
  g_autofree char *path = g_build_filename (dir, "handover.png", NULL);
  const SfHandoverSlice *r = (const SfHandoverSlice *) (void *) rows->data;
  assert_true (sf_study_chart_handover (sc, 10, 0, (guint) ku, r, &t, path, &err));
  check_png_ink (path, SF_CHART_HANDOVER_WIDTH_PX, SF_CHART_HANDOVER_HEIGHT_PX, 0.03, 0.005);
  gsize len1 = 0, len2 = 0;
  g_autofree char *first = sf_test_read_file (dir, "handover.png", &len1);
  assert_true (sf_study_chart_handover (sc, 10, 0, (guint) ku, r, &t, path, &err));
  g_autofree char *second = sf_test_read_file (dir, "handover.png", &len2);
  assert_int_equal (len1, len2);
  assert_memory_equal (first, second, len1);
  remove_dir (dir);
}

/* No chart in the folder (stripfleet.h: inputs are checked before anything
 * is drawn). */
static void
assert_no_png (const char *dir)
{
  g_autoptr (GPtrArray) names = dir_entries (dir);
  for (guint i = 0; i < names->len; i++)
    assert_false (g_str_has_suffix (g_ptr_array_index (names, i), ".png"));
}

/* sf_chart_run_outputs fails, its message holds every string of `want`
 * (NULL-terminated), and no chart is written (stripfleet.h contract). */
static void
assert_run_charts_fail (const char *dir, const char *const *want)
{
  g_autoptr (GError) err = NULL;
  assert_false (sf_chart_run_outputs (dir, &err));
  assert_non_null (err);
  for (; *want; want++)
    if (!strstr (err->message, *want))
      fail_msg ("expected '%s' in the message: %s", *want, err->message);
  assert_no_png (dir);
}

/* A missing or damaged daily.csv: FALSE, the message names the file (and the
 * line when there is one), no chart written.  Each damage is one that a
 * reader of our own format must not take for data. */
static void
test_run_charts_bad_daily (void **state)
{
  (void) state;
  g_autofree char *dir = short_run ();
  gsize len = 0;
  g_autofree char *daily = sf_test_read_file (dir, "daily.csv", &len);
  g_autofree char *daily_path = g_build_filename (dir, "daily.csv", NULL);

  /* missing */
  assert_int_equal (g_unlink (daily_path), 0);
  const char *missing[] = { "daily.csv", NULL };
  assert_run_charts_fail (dir, missing);

  /* a number that is not one, on the first data line */
  g_auto (GStrv) lines = g_strsplit (daily, "\n", -1);
  assert_true (g_strv_length (lines) >= 3);
  g_auto (GStrv) f = g_strsplit (lines[1], ",", -1);
  g_autofree char *bad_row = g_strdup_printf ("%s,%s,12x.5,%s", f[0], f[1], f[3]);
  g_autofree char *bad = g_strdup_printf ("%s\n%s\n", lines[0], bad_row);
  put_file (dir, "daily.csv", bad);
  const char *bad_number[] = { "daily.csv", "line 2", "dumped_bcm", NULL };
  assert_run_charts_fail (dir, bad_number);

  /* cut short: the last line does not end */
  g_autofree char *cut = g_strndup (daily, len - 3);
  put_file (dir, "daily.csv", cut);
  const char *cut_short[] = { "daily.csv", "line", NULL };
  assert_run_charts_fail (dir, cut_short);

  /* a field missing */
  g_autofree char *short_row = g_strdup_printf ("%s\n%s,%s,%s\n", lines[0], f[0], f[1], f[2]);
  put_file (dir, "daily.csv", short_row);
  const char *fields[] = { "daily.csv", "line 2", "fields", NULL };
  assert_run_charts_fail (dir, fields);

  /* another header */
  put_file (dir, "daily.csv", "day,bcm\n1,2\n");
  const char *header[] = { "daily.csv", "line 1", NULL };
  assert_run_charts_fail (dir, header);

  /* rows that do not add up to the summary's volume: another run's file */
  g_autofree char *halved = g_strdup_printf ("%s\n%s,%s,0.00,%s\n", lines[0], f[0], f[1], f[3]);
  put_file (dir, "daily.csv", halved);
  const char *other_run[] = { "daily.csv", "summary.json", NULL };
  assert_run_charts_fail (dir, other_run);
  remove_dir (dir);
}

/* Damaged summary.json and schedule.csv: the same contract (file and line,
 * or the JSON path, in the message; no chart). */
static void
test_run_charts_bad_other (void **state)
{
  (void) state;
  g_autofree char *dir = short_run ();
  gsize len = 0;
  g_autofree char *summary = sf_test_read_file (dir, "summary.json", &len);
  g_autofree char *schedule = sf_test_read_file (dir, "schedule.csv", &len);

  /* JSON broken on its third line */
  g_auto (GStrv) jl = g_strsplit (summary, "\n", 4);
  g_autofree char *broken = g_strdup_printf ("%s\n%s\n%s,,\n%s", jl[0], jl[1], jl[2], jl[3]);
  put_file (dir, "summary.json", broken);
  const char *json_line[] = { "summary.json", "line 3", NULL };
  assert_run_charts_fail (dir, json_line);

  /* a dozer's time usage without one category */
  cJSON *root = cJSON_Parse (summary);
  cJSON *dz0 = cJSON_GetArrayItem (cJSON_GetObjectItem (root, "dozers"), 0);
  cJSON_DeleteItemFromObject (cJSON_GetObjectItem (dz0, "time_h"), "meal");
  char *js = cJSON_Print (root);
  cJSON_Delete (root);
  put_file (dir, "summary.json", js);
  cJSON_free (js);
  const char *json_path[] = { "summary.json", "dozers[0].time_h.meal", NULL };
  assert_run_charts_fail (dir, json_path);
  put_file (dir, "summary.json", summary);

  /* a slice of a dozer that is not in the summary, on the second line */
  g_auto (GStrv) sl = g_strsplit (schedule, "\n", 3);
  g_auto (GStrv) f = g_strsplit (sl[1], ",", -1);
  assert_int_equal (g_strv_length (f), 12);
  g_free (f[8]);
  f[8] = g_strdup ("zz99");
  g_autofree char *row = g_strjoinv (",", f);
  g_autofree char *sched = g_strdup_printf ("%s\n%s\n%s", sl[0], row, sl[2]);
  put_file (dir, "schedule.csv", sched);
  const char *unknown[] = { "schedule.csv", "line 2", "zz99", NULL };
  assert_run_charts_fail (dir, unknown);

  /* and everything put back draws again */
  put_file (dir, "schedule.csv", schedule);
  g_autoptr (GError) err = NULL;
  if (!sf_chart_run_outputs (dir, &err))
    fail_msg ("%s", err->message);
  remove_dir (dir);
}

/* The leak checker of the sanitizer build (LeakSanitizer) reads its
 * default suppressions from this hook.  fontconfig keeps the configuration
 * it parses at first use for the life of the process and cannot give it
 * back (cairo_debug_reset_static_data, called at the end of main, releases
 * cairo's own caches).  Only blocks that fontconfig allocated itself are
 * suppressed (the fast unwinder sees no deeper than its frames). */
const char *__lsan_default_suppressions (void);
const char *
__lsan_default_suppressions (void)
{
  return "leak:libfontconfig.so\n";
}

#else /* !SF_HAVE_CAIRO */

/* Built without cairo: both charts fail with G_FILE_ERROR_NOSYS, say why,
 * name the path and write nothing (stripfleet.h contract). */
static void
test_without_cairo (void **state)
{
  (void) state;
  g_autoptr (SfScenario) sc = demo ();
  g_autofree char *dir = g_dir_make_tmp ("sf-chart-XXXXXX", NULL);
  g_autofree char *path = g_build_filename (dir, "x.png", NULL);
  g_autoptr (GError) err = NULL;
  assert_false (sf_study_chart_plan (sc, DEMO_BLOCK, NULL, path, &err));
  assert_true (err->domain == G_FILE_ERROR && err->code == G_FILE_ERROR_NOSYS);
  assert_non_null (strstr (err->message, "built without cairo"));
  assert_non_null (strstr (err->message, path));
  g_clear_error (&err);
  assert_false (sf_study_chart_lane (sc, DEMO_BLOCK, 0, 0, NULL, path, &err));
  assert_non_null (strstr (err->message, "built without cairo"));
  g_clear_error (&err);
  assert_false (sf_chart_run_outputs (dir, &err));
  assert_true (err->domain == G_FILE_ERROR && err->code == G_FILE_ERROR_NOSYS);
  assert_non_null (strstr (err->message, "built without cairo"));
  g_clear_error (&err);
  assert_false (sf_chart_run_spread (dir, &err));
  assert_non_null (strstr (err->message, "built without cairo"));
  g_autoptr (GPtrArray) names = dir_entries (dir);
  assert_int_equal (names->len, 0);
  remove_dir (dir);
}

#endif

int
main (void)
{
  const struct CMUnitTest tests[] = {
#ifdef SF_HAVE_CAIRO
    cmocka_unit_test (test_plan_chart),
    cmocka_unit_test (test_lane_chart),
    cmocka_unit_test (test_deterministic),
    cmocka_unit_test (test_unwritable),
    cmocka_unit_test (test_bad_arguments),
    cmocka_unit_test (test_tick_step),
    cmocka_unit_test (test_run_charts),
    cmocka_unit_test (test_run_charts_bad_daily),
    cmocka_unit_test (test_run_charts_bad_other),
    cmocka_unit_test (test_spread_chart),
    cmocka_unit_test (test_compare_chart),
    cmocka_unit_test (test_handover_chart),
#else
    cmocka_unit_test (test_without_cairo),
#endif
  };
  int failed = cmocka_run_group_tests_name ("chart", tests, NULL, NULL);
#ifdef SF_HAVE_CAIRO
  /* cairo keeps font caches for the life of the process; drop them so that
   * the leak checker of the sanitizer build sees only real leaks */
  cairo_debug_reset_static_data ();
#endif
  return failed;
}
