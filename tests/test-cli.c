/* SPDX-License-Identifier: MIT
 *
 * test-cli.c — end-to-end tests of the stripfleet command line.
 *
 * Runs the built program (env SF_CLI; scenarios from SF_SOURCE_DIR) with
 * g_spawn_sync and checks exit codes, messages and output files against
 * docs/cli.md and docs/robustness.md: 0 done, 1 runtime failure, 2 bad
 * command line, 3 invalid input.  When SF_CLI_WRAPPER is set (the meson test
 * setup 'valgrind' sets it to a valgrind memcheck command with
 * --error-exitcode=97) every run of the program goes through it, and exit
 * status 97 means that memcheck found a leak or an invalid access.
 *
 * Memory: one temporary folder per test group (removed at teardown) holds a
 * reduced copy of the invented demo scenario and the run outputs.
 */
#include <errno.h>
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>

#include <cjson/cJSON.h>
#include <glib.h>
#include <glib/gstdio.h>

#include "sf-test.h"
#include "stripfleet.h"

/* the wrapper's exit status for "memcheck found errors" */
#define WRAPPER_ERROR_EXIT 97

typedef struct {
  int status;   /* exit code, or -1 when killed by a signal */
  char *out, *err;
} CliResult;

static void
cli_result_clear (CliResult *r)
{
  g_clear_pointer (&r->out, g_free);
  g_clear_pointer (&r->err, g_free);
}
G_DEFINE_AUTO_CLEANUP_CLEAR_FUNC (CliResult, cli_result_clear)

/* Runs `stripfleet ARGS...` (NULL-terminated) through SF_CLI_WRAPPER, if set. */
static CliResult
cli_run_v (const char *const *args)
{
  const char *cli = g_getenv ("SF_CLI");
  if (!cli)
    fail_msg ("SF_CLI is not set (run the tests with meson test)");
  g_autoptr (GPtrArray) argv = g_ptr_array_new_with_free_func (g_free);
  const char *wrapper = g_getenv ("SF_CLI_WRAPPER");
  if (wrapper && *wrapper)
    {
      g_auto (GStrv) w = NULL;
      if (!g_shell_parse_argv (wrapper, NULL, &w, NULL))
        fail_msg ("SF_CLI_WRAPPER cannot be parsed: %s", wrapper);
      for (guint i = 0; w[i]; i++)
        g_ptr_array_add (argv, g_strdup (w[i]));
    }
  g_ptr_array_add (argv, g_strdup (cli));
  for (guint i = 0; args[i]; i++)
    g_ptr_array_add (argv, g_strdup (args[i]));
  g_ptr_array_add (argv, NULL);
  CliResult r = { -1, NULL, NULL };
  int wait_status = 0;
  g_autoptr (GError) err = NULL;
  if (!g_spawn_sync (NULL, (char **) argv->pdata, NULL, G_SPAWN_DEFAULT, NULL, NULL, &r.out,
                     &r.err, &wait_status, &err))
    fail_msg ("cannot run %s: %s", cli, err->message);
  r.status = WIFEXITED (wait_status) ? WEXITSTATUS (wait_status) : -1;
  if (r.status == WRAPPER_ERROR_EXIT || r.status < 0)
    {
      g_autofree char *cmd = g_strjoinv (" ", (char **) argv->pdata);
      print_error ("%s: %s\n%s\n", cmd,
                   r.status < 0 ? "killed by a signal" : "memcheck found errors", r.err);
      fail ();
    }
  return r;
}

#define cli_run(...) cli_run_v ((const char *const[]){ __VA_ARGS__, NULL })

static void
assert_contains (const char *text, const char *fragment)
{
  if (!strstr (text, fragment))
    fail_msg ("expected \"%s\" in:\n%s", fragment, text);
}

/* ---- a reduced demo: two blocks, one blast --------------------------------- */

typedef struct {
  char *dir;       /* temporary folder */
  char *demo;      /* scenarios/demo-strip.json */
  char *small;     /* dir/small.json */
} Fixture;

static cJSON *
read_json (const char *path)
{
  g_autofree char *text = NULL;
  gsize len = 0;
  if (!g_file_get_contents (path, &text, &len, NULL))
    return NULL;
  return cJSON_ParseWithLength (text, len);
}

/* The invented demo cut to 2 blocks of 50 m (the sections of blocks 0 and 10
 * as blocks 0 and 1, both blasted at the start): a whole run in a fraction of
 * a second, so that it can run under memcheck. */
static char *
write_small_scenario (const char *demo, const char *dir)
{
  cJSON *root = read_json (demo);
  assert_non_null (root);
  cJSON_ReplaceItemInObject (root, "name", cJSON_CreateString ("demo-strip-small"));
  cJSON *strip = cJSON_GetObjectItem (root, "strip");
  cJSON_ReplaceItemInObject (strip, "length_m", cJSON_CreateNumber (100));
  cJSON_ReplaceItemInObject (strip, "blocks", cJSON_CreateNumber (2));
  cJSON *sections = cJSON_CreateArray ();
  const cJSON *s;
  cJSON_ArrayForEach (s, cJSON_GetObjectItem (root, "sections"))
  {
    int b = cJSON_GetObjectItem (s, "block")->valueint;
    if (b != 0 && b != 10)
      continue;
    cJSON *c = cJSON_Duplicate (s, TRUE);
    cJSON_ReplaceItemInObject (c, "block", cJSON_CreateNumber (b == 0 ? 0 : 1));
    cJSON_AddItemToArray (sections, c);
  }
  assert_int_equal (cJSON_GetArraySize (sections), 2);
  cJSON_ReplaceItemInObject (root, "sections", sections);
  cJSON *sim = cJSON_GetObjectItem (root, "simulation");
  cJSON *blasts = cJSON_Parse ("[ { \"first_block\": 0, \"last_block\": 1, "
                               "\"at\": \"2027-03-01T06:00:00+10:00\" } ]");
  cJSON_ReplaceItemInObject (sim, "blasts", blasts);
  char *text = cJSON_Print (root);
  cJSON_Delete (root);
  char *path = g_build_filename (dir, "small.json", NULL);
  assert_true (g_file_set_contents (path, text, -1, NULL));
  cJSON_free (text);
  return path;
}

static int
setup (void **state)
{
  Fixture *f = g_new0 (Fixture, 1);
  f->dir = g_dir_make_tmp ("sf-cli-XXXXXX", NULL);
  f->demo = sf_test_source_path ("scenarios/demo-strip.json");
  f->small = write_small_scenario (f->demo, f->dir);
  *state = f;
  return f->dir ? 0 : -1;
}


static int
teardown (void **state)
{
  Fixture *f = *state;
  sf_test_remove_tree (f->dir);
  g_free (f->dir);
  g_free (f->demo);
  g_free (f->small);
  g_free (f);
  return 0;
}

/* ---- help, version and usage errors (docs/cli.md) --------------------------- */

static void
test_version (void **state)
{
  (void) state;
  g_auto (CliResult) r = cli_run ("--version");
  assert_int_equal (r.status, SF_EXIT_OK);
  assert_string_equal (r.out, "stripfleet " SF_VERSION "\n");
}

static void
test_help (void **state)
{
  (void) state;
  static const char *const verbs[] = { "validate", "plan", "lane", "compare", "handover",
                                       "run" };
  g_auto (CliResult) r = cli_run ("--help");
  assert_int_equal (r.status, SF_EXIT_OK);
  assert_contains (r.out, "Usage: stripfleet VERB");
  for (gsize i = 0; i < G_N_ELEMENTS (verbs); i++)
    {
      assert_contains (r.out, verbs[i]);
      g_auto (CliResult) v = cli_run (verbs[i], "--help");
      assert_int_equal (v.status, SF_EXIT_OK);
      g_autofree char *usage = g_strdup_printf ("stripfleet %s [OPTION", verbs[i]);
      assert_contains (v.out, usage);
    }
}

static void
test_usage_errors (void **state)
{
  Fixture *f = *state;
  {
    g_auto (CliResult) r = cli_run ("frobnicate", f->demo);
    assert_int_equal (r.status, SF_EXIT_USAGE);
    assert_contains (r.err, "unknown verb 'frobnicate'");
  }
  {
    g_auto (CliResult) r = cli_run_v ((const char *const[]){ NULL });
    assert_int_equal (r.status, SF_EXIT_USAGE);
    assert_contains (r.err, "Usage:");
  }
  {
    g_auto (CliResult) r = cli_run ("run", "--no-such-option", f->demo);
    assert_int_equal (r.status, SF_EXIT_USAGE);
    assert_contains (r.err, "--no-such-option");
  }
  {
    g_auto (CliResult) r = cli_run ("validate");
    assert_int_equal (r.status, SF_EXIT_USAGE);
    assert_contains (r.err, "expected 1 argument");
  }
  {
    g_auto (CliResult) r = cli_run ("plan", "--block", "-1", f->demo);
    assert_int_equal (r.status, SF_EXIT_USAGE);
  }
}

/* ---- validate: exit 0 on the demo, 3 naming the file on bad input ----------- */

static void
test_validate_demo (void **state)
{
  Fixture *f = *state;
  g_auto (CliResult) r = cli_run ("validate", f->demo);
  assert_int_equal (r.status, SF_EXIT_OK);
  assert_contains (r.out, "valid (30 blocks, 8 lanes per block, 3 dozer classes)");
}

static void
test_validate_bad (void **state)
{
  (void) state;
  /* files of the bad-input corpus, with a fragment of their message
   * (tests/test-scenario.c holds the full table) */
  static const struct {
    const char *file, *fragment;
  } cases[] = {
    { "01-not-json.json", "01-not-json.json:3:17: not valid JSON" },
    { "19-three-problems.json", "fleet[0].count: expected an integer in 1..500, found 0" },
    { "57-csv-bad-number.json", "57-csv-bad-number.csv:5: z_m: expected a finite number" },
    { "102-csv-cover-too-high.json", "expected at most 300 m of cover" },
  };
  for (gsize i = 0; i < G_N_ELEMENTS (cases); i++)
    {
      g_autofree char *rel = g_build_filename ("tests", "bad", cases[i].file, NULL);
      g_autofree char *path = sf_test_source_path (rel);
      g_auto (CliResult) r = cli_run ("validate", path);
      assert_int_equal (r.status, SF_EXIT_INVALID);
      assert_contains (r.err, cases[i].fragment);
      /* named by its path: the scenario, or the CSV file beside it */
      g_autofree char *stem = g_strndup (path, strlen (path) - strlen (".json"));
      assert_contains (r.err, stem);
      assert_string_equal (r.out, "");
    }
}

/* Files that are not scenarios: missing, a folder, an endless device; each
 * is refused with exit 3 and a message naming it, without reading forever. */
static void
test_validate_not_a_file (void **state)
{
  Fixture *f = *state;
  g_autofree char *missing = g_build_filename (f->dir, "no-such.json", NULL);
  struct {
    const char *path, *fragment;
  } cases[] = {
    { missing, "cannot read the scenario" },
    { f->dir, "cannot read the scenario" },
    { "/dev/zero", "larger than the limit of 67108864 bytes" },
  };
  for (gsize i = 0; i < G_N_ELEMENTS (cases); i++)
    {
      g_auto (CliResult) r = cli_run ("validate", cases[i].path);
      assert_int_equal (r.status, SF_EXIT_INVALID);
      assert_contains (r.err, cases[i].path);
      assert_contains (r.err, cases[i].fragment);
    }
}

/* ---- the block studies on the demo ----------------------------------------- */

static void
test_studies_demo (void **state)
{
  Fixture *f = *state;
  {
    g_auto (CliResult) r = cli_run ("plan", "--block", "15", f->demo);
    assert_int_equal (r.status, SF_EXIT_OK);
    assert_contains (r.out, "Slice plan, block 15 of 'demo-strip'");
    assert_contains (r.out, "Planning estimate only");
  }
  {
    g_auto (CliResult) r = cli_run ("lane", "--block", "0", "--lane", "3", f->demo);
    assert_int_equal (r.status, SF_EXIT_OK);
    assert_contains (r.out, "Block 0, lane 3 of 'demo-strip'");
    assert_contains (r.out, "lane loose-volume balance");
  }
  {
    g_auto (CliResult) r = cli_run ("compare", "--block", "0", f->demo);
    assert_int_equal (r.status, SF_EXIT_OK);
    assert_contains (r.out, "gain of straight pushes");
    assert_contains (r.out, "Planning estimate only");
  }
  {
    /* where dozing should stop, against a truck-and-shovel fleet; and without
     * any alternative: a usage error */
    g_auto (CliResult) h = cli_run ("handover", "--block", "1", "--truck-cost", "0.95", f->small);
    assert_int_equal (h.status, SF_EXIT_OK);
    assert_contains (h.out, "least cost:");
    assert_contains (h.out, "Planning estimate only");
    g_auto (CliResult) all = cli_run ("handover", "--all-blocks", "--dragline-cost", "1.2", f->small);
    assert_int_equal (all.status, SF_EXIT_OK);
    assert_contains (all.out, "All 2 blocks of 'demo-strip-small'");
    assert_contains (all.out, "strip (lane 0 of every block):");
    g_auto (CliResult) none = cli_run ("handover", "--block", "1", f->small);
    assert_int_equal (none.status, SF_EXIT_USAGE);
    assert_contains (none.err, "at least one greater than 0");
  }
  {
    /* every block of the two-block scenario, with the chart */
    g_autofree char *png = g_build_filename (f->dir, "compare.png", NULL);
    g_auto (CliResult) r = cli_run ("compare", "--all-blocks", "--chart", png, f->small);
    assert_int_equal (r.status, SF_EXIT_OK);
    assert_contains (r.out, "All 2 blocks of 'demo-strip-small'");
    assert_contains (r.out, "straight pushes, net:");
    assert_contains (r.out, "chart written to");
    assert_true (g_file_test (png, G_FILE_TEST_IS_REGULAR));
  }
  {
    /* a block the strip does not have: invalid input for this scenario */
    g_auto (CliResult) r = cli_run ("plan", "--block", "30", f->demo);
    assert_int_equal (r.status, SF_EXIT_INVALID);
    assert_contains (r.err, "block 30 does not exist");
  }
}

/* ---- run: the four output files --------------------------------------------- */

/* Number of lines of `text` and whether it ends with a newline. */
static guint
count_lines (const char *text, gboolean *ends_nl)
{
  guint n = 0;
  for (const char *p = text; *p; p++)
    n += *p == '\n';
  gsize len = strlen (text);
  *ends_nl = len > 0 && text[len - 1] == '\n';
  return n;
}

/* The four files of a complete run of `scenario` in dir, read back. */
static void
assert_run_outputs (const char *dir, const char *scenario)
{
  g_autofree char *summary = g_build_filename (dir, "summary.json", NULL);
  cJSON *root = read_json (summary);
  assert_non_null (root);
  const cJSON *name = cJSON_GetObjectItem (root, "scenario");
  assert_true (cJSON_IsString (name));
  assert_string_equal (name->valuestring, scenario);
  assert_true (cJSON_IsTrue (cJSON_GetObjectItem (root, "complete")));
  assert_true (cJSON_IsNumber (cJSON_GetObjectItem (root, "seed")));
  const cJSON *dozers = cJSON_GetObjectItem (root, "dozers");
  assert_true (cJSON_IsArray (dozers) && cJSON_GetArraySize (dozers) > 0);
  cJSON_Delete (root);
  static const struct {
    const char *file, *first;
  } files[] = {
    { "schedule.csv", "block,lane,slice,kind," },
    { "daily.csv", "date,pushes,dumped_bcm,operating_h\n" },
    { "events.log", "# stripfleet-run-1 events\n" },
  };
  for (gsize i = 0; i < G_N_ELEMENTS (files); i++)
    {
      g_autofree char *p = g_build_filename (dir, files[i].file, NULL);
      g_autofree char *text = NULL;
      if (!g_file_get_contents (p, &text, NULL, NULL))
        fail_msg ("%s is missing", p);
      assert_true (g_str_has_prefix (text, files[i].first));
      gboolean nl;
      assert_true (count_lines (text, &nl) >= 2);
      assert_true (nl);
    }
}

static void
test_run_small (void **state)
{
  Fixture *f = *state;
  g_autofree char *out = g_build_filename (f->dir, "out", NULL);
  g_auto (CliResult) r = cli_run ("run", "--quiet", "--out", out, f->small);
  assert_int_equal (r.status, SF_EXIT_OK);
  assert_contains (r.out, "Fleet run of 'demo-strip-small'");
  assert_contains (r.out, "complete");
  assert_contains (r.out, "Planning estimate only");
  assert_run_outputs (out, "demo-strip-small");
  /* nothing else but the outputs (charts included) is left in the folder:
   * no temporary files */
  g_autoptr (GDir) d = g_dir_open (out, 0, NULL);
  const char *n;
  while ((n = g_dir_read_name (d)))
    if (n[0] == '.')
      fail_msg ("temporary file %s left in %s", n, out);
}

/* A folder holding another scenario's outputs is refused unless --overwrite;
 * an output folder that cannot be made is a runtime failure naming it. */
static void
test_run_folder_errors (void **state)
{
  Fixture *f = *state;
  g_autofree char *out = g_build_filename (f->dir, "other", NULL);
  {
    g_auto (CliResult) r = cli_run ("run", "-q", "--no-charts", "--out", out, f->small);
    assert_int_equal (r.status, SF_EXIT_OK);
  }
  /* the same folder, another scenario name */
  cJSON *root = read_json (f->small);
  cJSON_ReplaceItemInObject (root, "name", cJSON_CreateString ("another-small"));
  char *text = cJSON_Print (root);
  cJSON_Delete (root);
  g_autofree char *other = g_build_filename (f->dir, "another.json", NULL);
  assert_true (g_file_set_contents (other, text, -1, NULL));
  cJSON_free (text);
  {
    g_auto (CliResult) r = cli_run ("run", "-q", "--no-charts", "--out", out, other);
    assert_int_equal (r.status, SF_EXIT_RUNTIME);
    assert_contains (r.err, "holds the outputs of scenario 'demo-strip-small'");
    assert_run_outputs (out, "demo-strip-small");
  }
  {
    g_auto (CliResult) r
      = cli_run ("run", "-q", "--no-charts", "--overwrite", "--out", out, other);
    assert_int_equal (r.status, SF_EXIT_OK);
    assert_run_outputs (out, "another-small");
  }
  /* folders that cannot be made or written, whoever runs the test (root
   * ignores permission bits: use /proc and a file in place of the folder) */
  g_autofree char *file = g_build_filename (f->dir, "a-file", NULL);
  assert_true (g_file_set_contents (file, "not a folder\n", -1, NULL));
  g_autofree char *under_file = g_build_filename (file, "out", NULL);
  const char *bad[] = { "/proc/stripfleet-no-such/out", file, under_file };
  for (gsize i = 0; i < G_N_ELEMENTS (bad); i++)
    {
      g_auto (CliResult) r = cli_run ("run", "-q", "--no-charts", "--out", bad[i], f->small);
      assert_int_equal (r.status, SF_EXIT_RUNTIME);
      assert_contains (r.err, bad[i]);
      assert_contains (r.err, "stripfleet run: ");
    }
}

int
main (void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test (test_version),
    cmocka_unit_test (test_help),
    cmocka_unit_test (test_usage_errors),
    cmocka_unit_test (test_validate_demo),
    cmocka_unit_test (test_validate_bad),
    cmocka_unit_test (test_validate_not_a_file),
    cmocka_unit_test (test_studies_demo),
    cmocka_unit_test (test_run_small),
    cmocka_unit_test (test_run_folder_errors),
  };
  return cmocka_run_group_tests_name ("cli", tests, setup, teardown);
}
