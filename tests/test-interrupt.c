/* SPDX-License-Identifier: MIT
 *
 * test-interrupt.c — interrupted and failing runs leave the output folder
 * whole (docs/robustness.md).
 *
 * Starts the built program (env SF_CLI) on the invented demo scenario into a
 * folder that already holds a complete earlier run and files of the user's
 * own (a file and a sub-folder), and
 *   - kills it with SIGKILL at several moments, from 50 ms to just before the
 *     end of a run (timed on this machine), and proves after each kill that
 *     the folder holds one complete set of outputs from one run — the earlier
 *     one or the new one — by parsing every file, and that the user's files
 *     are whole;
 *   - kills it at each step of the commit that swaps the new set in (the
 *     failpoints of sim/sf-outdir.c, env SF_FAILPOINT): the earlier set
 *     before the swap, the new one from the swap on, the user's files kept,
 *     and the next run clears what the killed one left;
 *   - stops it with SIGINT and with SIGTERM: exit 1, the message, the earlier
 *     files byte for byte and no temporary file left;
 *   - lets it run out of room (a file-size limit, RLIMIT_FSIZE, stands in for
 *     a full disk, whoever runs the test): exit 1, a message naming the
 *     file, the earlier files untouched.
 * After every run that finishes, the output folder holds the outputs and the
 * user's files only, and no staging folder is left beside it.
 * The reference for "complete and consistent" is the output format
 * (docs/output-formats.md) and counting: every push of a run is one "push"
 * line of its events.log, and its summary, daily.csv and schedule.csv count
 * the same pushes (analytic).
 *
 * Memory: the temporary folder is removed at teardown; each parsed file is
 * freed where it is read.
 */
#include <errno.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cjson/cJSON.h>
#include <glib.h>
#include <glib/gstdio.h>

#include "sf-test.h"
#include "stripfleet.h"

static const char *const OUT_FILES[] = { "summary.json", "schedule.csv", "daily.csv",
                                         "events.log" };

typedef struct {
  char *dir;        /* temporary folder */
  char *out;        /* dir/out: the output folder under test */
  char *demo;
  gint64 run_us;    /* wall time of one whole run on this machine */
  gint64 seed;      /* seed of the run whose outputs are in out */
} Fixture;

/* ---- starting and stopping the program ------------------------------------ */

typedef struct {
  gboolean fsize_limit; /* limit files to 64 KiB, SIGXFSZ ignored */
} ChildSetup;

/* In the child before exec: default signal actions (an ignored SIGINT
 * inherited from a shell would hide the handler), and the file-size limit. */
static void
child_setup (gpointer data)
{
  const ChildSetup *cs = data;
  signal (SIGINT, SIG_DFL);
  signal (SIGTERM, SIG_DFL);
  if (cs && cs->fsize_limit)
    {
      struct rlimit rl = { 64 * 1024, 64 * 1024 };
      signal (SIGXFSZ, SIG_IGN); /* writes fail with EFBIG instead */
      setrlimit (RLIMIT_FSIZE, &rl);
    }
}

/* Starts `stripfleet run -q --no-charts --seed SEED --out OUT DEMO`; stderr
 * goes to *err_fd when err_fd is not NULL, else to /dev/null.  failpoint:
 * NULL, or the failpoint where the program kills itself. */
static GPid
start_run_at (const Fixture *f, gint64 seed, const ChildSetup *cs, int *err_fd,
              const char *failpoint)
{
  g_autofree char *seed_s = g_strdup_printf ("%" G_GINT64_FORMAT, seed);
  const char *cli = g_getenv ("SF_CLI");
  if (!cli)
    fail_msg ("SF_CLI is not set (run the tests with meson test)");
  const char *argv[] = { cli, "run", "-q", "--no-charts", "--overwrite", "--seed", seed_s,
                         "--out", f->out, f->demo, NULL };
  GPid pid = 0;
  g_autoptr (GError) err = NULL;
  GSpawnFlags flags = G_SPAWN_DO_NOT_REAP_CHILD | G_SPAWN_STDOUT_TO_DEV_NULL;
  if (!err_fd)
    flags |= G_SPAWN_STDERR_TO_DEV_NULL;
  g_auto (GStrv) env = g_get_environ ();
  env = failpoint ? g_environ_setenv (env, "SF_FAILPOINT", failpoint, TRUE)
                  : g_environ_unsetenv (env, "SF_FAILPOINT");
  if (!g_spawn_async_with_pipes (NULL, (char **) argv, env, flags, child_setup, (gpointer) cs,
                                 &pid, NULL, NULL, err_fd, &err))
    fail_msg ("cannot start %s: %s", cli, err->message);
  return pid;
}

static GPid
start_run (const Fixture *f, gint64 seed, const ChildSetup *cs, int *err_fd)
{
  return start_run_at (f, seed, cs, err_fd, NULL);
}

/* Waits for the child; its exit code, or -(signal) when a signal ended it. */
static int
wait_child (GPid pid)
{
  int st = 0;
  while (waitpid (pid, &st, 0) < 0)
    if (errno != EINTR)
      fail_msg ("waitpid: %s", g_strerror (errno));
  g_spawn_close_pid (pid);
  return WIFEXITED (st) ? WEXITSTATUS (st) : -WTERMSIG (st);
}

static char *
read_all (int fd)
{
  GString *s = g_string_new (NULL);
  char buf[4096];
  gssize n;
  while ((n = read (fd, buf, sizeof buf)) > 0 || (n < 0 && errno == EINTR))
    if (n > 0)
      g_string_append_len (s, buf, n);
  close (fd);
  return g_string_free (s, FALSE);
}

/* ---- reading the folder back ------------------------------------------------ */

static char *
read_out (const Fixture *f, const char *name)
{
  g_autofree char *p = g_build_filename (f->out, name, NULL);
  char *text = NULL;
  if (!g_file_get_contents (p, &text, NULL, NULL))
    fail_msg ("%s is missing", p);
  return text;
}

/* Lines of a CSV file: the header is `header`, every line ends in a newline
 * and has the header's number of fields; returns the sum of column `col`. */
static double
check_csv (const char *name, const char *text, const char *header, guint col)
{
  if (!g_str_has_prefix (text, header))
    fail_msg ("%s: header is not %s", name, header);
  gsize len = strlen (text);
  if (len == 0 || text[len - 1] != '\n')
    fail_msg ("%s: the last line is cut short", name);
  g_auto (GStrv) h = g_strsplit (header, ",", -1);
  guint n_fields = g_strv_length (h);
  g_auto (GStrv) lines = g_strsplit (text, "\n", -1);
  double sum = 0;
  for (guint i = 1; lines[i] && lines[i][0]; i++)
    {
      g_auto (GStrv) fields = g_strsplit (lines[i], ",", -1);
      if (g_strv_length (fields) != n_fields)
        fail_msg ("%s:%u: %u fields, expected %u", name, i + 1, g_strv_length (fields), n_fields);
      char *end = NULL;
      double v = g_ascii_strtod (fields[col], &end);
      if (end == fields[col] || *end)
        fail_msg ("%s:%u: column %u is not a number", name, i + 1, col + 1);
      sum += v;
    }
  return sum;
}

/* The folder holds one complete set of outputs from one run: every file
 * parses, and all four name the same run (seed) and count the same pushes.
 * Returns that run's seed. */
static gint64
check_complete_set (const Fixture *f)
{
  g_autofree char *summary = read_out (f, "summary.json");
  cJSON *root = cJSON_Parse (summary);
  if (!root)
    fail_msg ("summary.json does not parse");
  const cJSON *name = cJSON_GetObjectItem (root, "scenario");
  assert_true (cJSON_IsString (name));
  assert_string_equal (name->valuestring, "demo-strip");
  const cJSON *seed_j = cJSON_GetObjectItem (root, "seed");
  assert_true (cJSON_IsNumber (seed_j));
  gint64 seed = (gint64) seed_j->valuedouble;
  assert_true (cJSON_IsTrue (cJSON_GetObjectItem (root, "complete")));
  const cJSON *pushes_j = cJSON_GetObjectItem (cJSON_GetObjectItem (root, "rates"), "pushes");
  assert_true (cJSON_IsNumber (pushes_j));
  double pushes = pushes_j->valuedouble;
  cJSON_Delete (root);
  assert_true (pushes > 0);

  /* events.log: same seed in the header, one "push" line per push, last
   * line whole */
  g_autofree char *log = read_out (f, "events.log");
  gsize len = strlen (log);
  assert_true (len > 0 && log[len - 1] == '\n');
  g_autofree char *seed_line = g_strdup_printf ("\n# seed: %" G_GINT64_FORMAT "\n", seed);
  if (!strstr (log, seed_line))
    fail_msg ("events.log is not from the run of summary.json (seed %" G_GINT64_FORMAT ")", seed);
  /* one pass by hand: strstr from every match is quadratic under ASan,
   * whose strstr measures the whole rest of the text each time */
  guint push_lines = 0;
  for (const char *p = log; *p;)
    {
      const char *sp = p;
      while (*sp && *sp != ' ' && *sp != '\n')
        sp++;
      if (*sp == ' ' && strncmp (sp, " push ", 6) == 0)
        push_lines++;
      while (*p && *p != '\n')
        p++;
      if (*p)
        p++;
    }
  assert_int_equal (push_lines, (guint) pushes);

  g_autofree char *daily = read_out (f, "daily.csv");
  sf_assert_close (check_csv ("daily.csv", daily, "date,pushes,dumped_bcm,operating_h\n", 1),
                   pushes, 0, 0);
  g_autofree char *sched = read_out (f, "schedule.csv");
  sf_assert_close (check_csv ("schedule.csv", sched,
                              "block,lane,slice,kind,start,finish,start_h,finish_h,dozer,pushes,"
                              "moved_bcm,end\n",
                              9),
                   pushes, 0, 0);
  return seed;
}

/* ---- the user's own files and what killed runs leave ------------------------ */

static const char NOTES[] = "planner's notes: block 12 re-surveyed\n";

/* A file and a sub-folder of the user's in the output folder. */
static void
put_user_files (const Fixture *f)
{
  g_autofree char *notes = g_build_filename (f->out, "notes.txt", NULL);
  g_autofree char *sub = g_build_filename (f->out, "mine", NULL);
  g_autofree char *inner = g_build_filename (sub, "sketch.txt", NULL);
  assert_true (g_file_set_contents (notes, NOTES, -1, NULL));
  assert_int_equal (g_mkdir_with_parents (sub, 0755), 0);
  assert_true (g_file_set_contents (inner, NOTES, -1, NULL));
}

static gboolean
file_is (const char *path, const char *want)
{
  g_autofree char *text = NULL;
  return g_file_get_contents (path, &text, NULL, NULL) && strcmp (text, want) == 0;
}

/* Staging folders (.out.staging-XXXXXX) beside the output folder. */
static GPtrArray *
staging_folders (const Fixture *f)
{
  GPtrArray *found = g_ptr_array_new_with_free_func (g_free);
  g_autoptr (GDir) d = g_dir_open (f->dir, 0, NULL);
  const char *e;
  while (d && (e = g_dir_read_name (d)))
    if (g_str_has_prefix (e, ".out.staging-"))
      g_ptr_array_add (found, g_build_filename (f->dir, e, NULL));
  return found;
}

/* The user's file and sub-folder are whole: in the output folder, or — only
 * when `allow_aside` (a kill between the swap and the end of the commit) —
 * in a staging folder that the next run puts back. */
static void
check_user_files (const Fixture *f, gboolean allow_aside)
{
  g_autofree char *notes = g_build_filename (f->out, "notes.txt", NULL);
  if (!file_is (notes, NOTES))
    fail_msg ("%s is missing or changed", notes);
  g_autofree char *inner = g_build_filename (f->out, "mine", "sketch.txt", NULL);
  if (file_is (inner, NOTES))
    return;
  g_autoptr (GPtrArray) st = staging_folders (f);
  for (guint i = 0; allow_aside && i < st->len; i++)
    {
      g_autofree char *aside = g_build_filename (st->pdata[i], "mine", "sketch.txt", NULL);
      if (file_is (aside, NOTES))
        return;
    }
  fail_msg ("%s is missing or changed", inner);
}

/* Names in the output folder other than the four outputs and the user's
 * two. */
static guint
count_other_files (const Fixture *f)
{
  g_autoptr (GDir) d = g_dir_open (f->out, 0, NULL);
  assert_non_null (d);
  guint n = 0;
  const char *e;
  while ((e = g_dir_read_name (d)))
    {
      gboolean known = strcmp (e, "notes.txt") == 0 || strcmp (e, "mine") == 0;
      for (gsize i = 0; i < G_N_ELEMENTS (OUT_FILES); i++)
        known |= strcmp (e, OUT_FILES[i]) == 0;
      if (!known)
        {
          print_message ("# unexpected %s in the output folder\n", e);
          n++;
        }
    }
  return n;
}

/* After a run that finished: the user's files in place, nothing else in the
 * output folder, no staging folder beside it. */
static void
check_clean (const Fixture *f)
{
  check_user_files (f, FALSE);
  assert_int_equal (count_other_files (f), 0);
  g_autoptr (GPtrArray) st = staging_folders (f);
  if (st->len)
    fail_msg ("%s was left behind", (const char *) st->pdata[0]);
}

/* Waits until the run has opened its event log in its staging folder: the
 * simulation is under way, with a second or more to go on the demo.  FALSE
 * when the child ended first. */
static gboolean
wait_for_run_loop (const Fixture *f, GPid pid)
{
  for (int i = 0; i < 60000; i++)
    {
      g_autoptr (GPtrArray) st = staging_folders (f);
      for (guint k = 0; k < st->len; k++)
        {
          g_autofree char *log = g_build_filename (st->pdata[k], "events.log", NULL);
          if (g_file_test (log, G_FILE_TEST_EXISTS))
            return TRUE;
        }
      int status;
      if (waitpid (pid, &status, WNOHANG) == pid)
        return FALSE;
      g_usleep (2000);
    }
  return FALSE;
}

/* The four files, concatenated, to compare byte for byte. */
static char *
snapshot (const Fixture *f)
{
  GString *s = g_string_new (NULL);
  for (gsize i = 0; i < G_N_ELEMENTS (OUT_FILES); i++)
    {
      g_autofree char *t = read_out (f, OUT_FILES[i]);
      g_string_append_printf (s, "== %s\n%s", OUT_FILES[i], t);
    }
  return g_string_free (s, FALSE);
}

/* ---- fixture: a complete earlier run, and how long a run takes -------------- */

static int
setup (void **state)
{
  Fixture *f = g_new0 (Fixture, 1);
  f->dir = g_dir_make_tmp ("sf-interrupt-XXXXXX", NULL);
  if (!f->dir)
    return -1;
  f->out = g_build_filename (f->dir, "out", NULL);
  f->demo = sf_test_source_path ("scenarios/demo-strip.json");
  f->seed = 1;
  gint64 t0 = g_get_monotonic_time ();
  ChildSetup cs = { FALSE };
  GPid pid = start_run (f, f->seed, &cs, NULL);
  int rc = wait_child (pid);
  f->run_us = g_get_monotonic_time () - t0;
  *state = f;
  if (rc != SF_EXIT_OK)
    return -1;
  put_user_files (f);
  return 0;
}


static int
teardown (void **state)
{
  Fixture *f = *state;
  sf_test_remove_tree (f->dir);
  g_free (f->dir);
  g_free (f->out);
  g_free (f->demo);
  g_free (f);
  return 0;
}

/* ---- the tests ----------------------------------------------------------- */

static void
test_earlier_run_complete (void **state)
{
  Fixture *f = *state;
  assert_int_equal (check_complete_set (f), f->seed);
  check_clean (f);
}

/* SIGKILL at fixed moments and at shares of a whole run (the last ones
 * close to the final writing): each time one complete set, the earlier
 * run's or the new one's, the user's files whole, and nothing else in the
 * output folder; then a run left to finish clears what the killed ones left
 * behind. */
static void
test_sigkill_anytime (void **state)
{
  Fixture *f = *state;
  const gint64 fixed_ms[] = { 50, 200, 500, 900 };
  const double shares[] = { 0.5, 0.9, 0.97, 0.995 };
  guint n_new = 0, n_old = 0;
  for (gsize i = 0; i < G_N_ELEMENTS (fixed_ms) + G_N_ELEMENTS (shares); i++)
    {
      gint64 wait_us = i < G_N_ELEMENTS (fixed_ms)
                         ? fixed_ms[i] * 1000
                         : (gint64) (shares[i - G_N_ELEMENTS (fixed_ms)] * (double) f->run_us);
      gint64 seed = 100 + (gint64) i;
      ChildSetup cs = { FALSE };
      GPid pid = start_run (f, seed, &cs, NULL);
      g_usleep ((gulong) wait_us);
      kill (pid, SIGKILL);
      int rc = wait_child (pid);
      gint64 got = check_complete_set (f);
      if (got == seed)
        n_new++;
      else if (got == f->seed)
        n_old++;
      else
        fail_msg ("after a kill at %.0f ms the folder holds seed %" G_GINT64_FORMAT
                  ", neither %" G_GINT64_FORMAT " nor %" G_GINT64_FORMAT,
                  wait_us / 1000.0, got, f->seed, seed);
      /* a run that finished before the kill exits 0 and leaves its set */
      assert_true (rc == -SIGKILL || (rc == SF_EXIT_OK && got == seed));
      f->seed = got;
      check_user_files (f, TRUE);
      assert_int_equal (count_other_files (f), 0);
    }
  print_message ("# %u kills left the earlier set, %u a new one (run %.2f s)\n", n_old, n_new,
                 f->run_us / 1e6);
  ChildSetup cs = { FALSE };
  GPid pid = start_run (f, 7, &cs, NULL);
  assert_int_equal (wait_child (pid), SF_EXIT_OK);
  f->seed = check_complete_set (f);
  assert_int_equal (f->seed, 7);
  check_clean (f);
}

/* SIGKILL at each step of the commit (sim/sf-outdir.c failpoints): before
 * the swap the earlier set stays, from the swap on the new set is there;
 * the user's files are never lost, and the next run clears what the killed
 * one left (a staging folder, the old folder with the user's sub-folder). */
static void
test_sigkill_in_commit (void **state)
{
  Fixture *f = *state;
  static const struct {
    const char *failpoint;
    gboolean new_set;
  } steps[] = {
    { "outdir-synced", FALSE },  /* every staged file on disk */
    { "outdir-linked", FALSE },  /* the user's files linked into the staging folder */
    { "outdir-swapped", TRUE },  /* the folders swapped, the old one not emptied */
    { "outdir-drain-first", TRUE }, /* the old folder partly emptied */
  };
  for (gsize i = 0; i < G_N_ELEMENTS (steps); i++)
    {
      gint64 seed = 400 + (gint64) i;
      ChildSetup cs = { FALSE };
      GPid pid = start_run_at (f, seed, &cs, NULL, steps[i].failpoint);
      int rc = wait_child (pid);
      if (rc != -SIGKILL)
        fail_msg ("%s: the run ended with %d, not at the failpoint", steps[i].failpoint, rc);
      gint64 got = check_complete_set (f);
      gint64 want = steps[i].new_set ? seed : f->seed;
      if (got != want)
        fail_msg ("killed at %s: the folder holds seed %" G_GINT64_FORMAT ", expected %"
                  G_GINT64_FORMAT, steps[i].failpoint, got, want);
      f->seed = got;
      check_user_files (f, TRUE);
      assert_int_equal (count_other_files (f), 0);
      g_autoptr (GPtrArray) st = staging_folders (f);
      assert_int_equal (st->len, 1); /* the killed run's, to clear */
      print_message ("# killed at %-19s -> %s set\n", steps[i].failpoint,
                     steps[i].new_set ? "new" : "earlier");
      /* the next run clears it (and finishes) */
      pid = start_run (f, 500 + (gint64) i, &cs, NULL);
      assert_int_equal (wait_child (pid), SF_EXIT_OK);
      f->seed = check_complete_set (f);
      assert_int_equal (f->seed, 500 + (gint64) i);
      check_clean (f);
    }
}

/* SIGINT and SIGTERM stop a run cleanly: exit 1, the message, nothing
 * written and nothing left behind.  The signal goes as soon as the run has
 * opened its event log, so that it meets the simulation under way whatever
 * the speed of the machine. */
static void
test_sigint_sigterm (void **state)
{
  Fixture *f = *state;
  const int sigs[] = { SIGINT, SIGTERM };
  for (gsize i = 0; i < G_N_ELEMENTS (sigs); i++)
    {
      g_autofree char *before = snapshot (f);
      int err_fd = -1;
      ChildSetup cs = { FALSE };
      GPid pid = start_run (f, 200 + (gint64) i, &cs, &err_fd);
      if (!wait_for_run_loop (f, pid))
        fail_msg ("signal %d: the run ended before its event log appeared", sigs[i]);
      kill (pid, sigs[i]);
      g_autofree char *err = read_all (err_fd);
      int rc = wait_child (pid);
      if (rc != SF_EXIT_RUNTIME)
        fail_msg ("signal %d: exit %d, expected 1; stderr:\n%s", sigs[i], rc, err);
      assert_non_null (
        strstr (err, "stripfleet run: interrupted; previous outputs (if any) left as they were"));
      g_autofree char *after = snapshot (f);
      assert_string_equal (before, after);
      check_clean (f);
    }
}

/* Out of room: writes fail (EFBIG under a 64 KiB file-size limit, as ENOSPC
 * on a full disk); exit 1 naming the file, the earlier set untouched, no
 * temporary file left. */
static void
test_out_of_room (void **state)
{
  Fixture *f = *state;
  g_autofree char *before = snapshot (f);
  int err_fd = -1;
  ChildSetup cs = { TRUE };
  GPid pid = start_run (f, 300, &cs, &err_fd);
  g_autofree char *err = read_all (err_fd);
  int rc = wait_child (pid);
  if (rc != SF_EXIT_RUNTIME)
    fail_msg ("exit %d, expected 1; stderr:\n%s", rc, err);
  assert_non_null (strstr (err, "stripfleet run: cannot write "));
  assert_non_null (strstr (err, f->out));
  g_autofree char *after = snapshot (f);
  assert_string_equal (before, after);
  check_clean (f);
}

int
main (void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test (test_earlier_run_complete),
    cmocka_unit_test (test_sigkill_anytime),
    cmocka_unit_test (test_sigkill_in_commit),
    cmocka_unit_test (test_sigint_sigterm),
    cmocka_unit_test (test_out_of_room),
  };
  return cmocka_run_group_tests_name ("interrupt", tests, setup, teardown);
}
