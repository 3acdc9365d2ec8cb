/* SPDX-License-Identifier: MIT
 *
 * test-outdir.c — a run's output folder is replaced as one set
 * (sim/sf-outdir.c, docs/robustness.md).
 *
 * The reference is the Linux system-call contract the module builds on:
 * rename(2)/renameat2(2) (Linux man-pages: RENAME_EXCHANGE "atomically
 * exchange oldpath and newpath", RENAME_NOREPLACE "don't overwrite newpath"),
 * link(2) (a hard link is the same inode: st_dev and st_ino equal) and
 * flock(2) (a lock held by a live process makes LOCK_NB fail with
 * EWOULDBLOCK; a dead process's locks are gone).  Each test states the
 * outcome that contract implies for the folder.
 *
 * Memory: each test works in its own temporary folder, removed at the end.
 */
#include <errno.h>
#include <fcntl.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <glib.h>
#include <glib/gstdio.h>

#include "sf-outdir.h"
#include "sf-test.h"

typedef struct {
  char *dir; /* temporary parent */
  char *out; /* dir/out */
} Fx;

static int
setup (void **state)
{
  Fx *f = g_new0 (Fx, 1);
  f->dir = g_dir_make_tmp ("sf-outdir-XXXXXX", NULL);
  f->out = g_build_filename (f->dir, "out", NULL);
  *state = f;
  return f->dir ? 0 : -1;
}

static int
teardown (void **state)
{
  Fx *f = *state;
  sf_test_remove_tree (f->dir);
  g_free (f->dir);
  g_free (f->out);
  g_free (f);
  return 0;
}

static void
put (const char *dir, const char *name, const char *text)
{
  g_autofree char *p = g_build_filename (dir, name, NULL);
  assert_true (g_file_set_contents (p, text, -1, NULL));
}

static char *
get (const char *dir, const char *name)
{
  g_autofree char *p = g_build_filename (dir, name, NULL);
  char *text = NULL;
  if (!g_file_get_contents (p, &text, NULL, NULL))
    return NULL;
  return text;
}

static void
assert_file (const char *dir, const char *name, const char *want)
{
  g_autofree char *got = get (dir, name);
  if (!got)
    fail_msg ("%s/%s is missing", dir, name);
  assert_string_equal (got, want);
}

static void
assert_absent (const char *dir, const char *name)
{
  g_autofree char *p = g_build_filename (dir, name, NULL);
  GStatBuf st;
  if (g_lstat (p, &st) == 0)
    fail_msg ("%s should not exist", p);
}

/* A summary naming a scenario, as the run writes it. */
static char *
summary_of (const char *scenario, int seed)
{
  return g_strdup_printf ("{\"scenario\": \"%s\", \"seed\": %d}\n", scenario, seed);
}

/* Writes a complete set (its summary naming seed) into od's staging folder. */
static void
stage_set (SfOutDir *od, int seed, gboolean charts)
{
  const char *st = sf_outdir_staging (od);
  g_autofree char *tag = g_strdup_printf ("seed %d\n", seed);
  put (st, "events.log", tag);
  put (st, "schedule.csv", tag);
  put (st, "daily.csv", tag);
  if (charts)
    put (st, "daily.png", tag);
  g_autofree char *sum = summary_of ("s", seed);
  put (st, "summary.json", sum);
}

/* One whole run's commit: begin, stage, commit; the notice is returned. */
static char *
run_set (const char *out, int seed, gboolean charts, gboolean force_files)
{
  g_autoptr (GError) err = NULL;
  SfOutDir *od = sf_outdir_begin (out, "s", FALSE, force_files, &err);
  if (!od)
    fail_msg ("begin: %s", err->message);
  stage_set (od, seed, charts);
  char *notice = NULL;
  if (!sf_outdir_commit (od, &notice, &err))
    fail_msg ("commit: %s", err->message);
  return notice;
}

static guint
count_staging (const char *dir)
{
  g_autoptr (GDir) d = g_dir_open (dir, 0, NULL);
  guint n = 0;
  const char *e;
  while (d && (e = g_dir_read_name (d)))
    n += strstr (e, "staging-") != NULL;
  return n;
}

/* A new folder (and its parents) appears whole, by one rename (NOREPLACE):
 * the set and nothing else; no staging folder left. */
static void
test_new_folder (void **state)
{
  Fx *f = *state;
  g_autofree char *deep = g_build_filename (f->dir, "a", "b", "out", NULL);
  g_autofree char *notice = run_set (deep, 1, FALSE, FALSE);
  assert_null (notice);
  assert_file (deep, "events.log", "seed 1\n");
  g_autofree char *sum = summary_of ("s", 1);
  assert_file (deep, "summary.json", sum);
  g_autofree char *parent = g_path_get_dirname (deep);
  assert_int_equal (count_staging (parent), 0);
  /* a new folder named with a trailing slash and "." parts is that folder,
   * not one inside it */
  g_autofree char *odd = g_strconcat (f->dir, "/./c/new/", NULL);
  g_free (run_set (odd, 2, FALSE, FALSE));
  g_autofree char *plain = g_build_filename (f->dir, "c", "new", NULL);
  assert_file (plain, "events.log", "seed 2\n");
  assert_absent (plain, "new");
}

/* A second run swaps the folder (RENAME_EXCHANGE: the folder's inode
 * changes) and carries the user's entries across — a file (hard link: the
 * same inode), a symbolic link, a hidden file, a sub-folder with its
 * contents — keeps the folder's permissions, and drops the earlier run's
 * names the new set lacks (its chart), so the set stays one run's. */
static void
test_swap_keeps_user_entries (void **state)
{
  Fx *f = *state;
  g_free (run_set (f->out, 1, TRUE, FALSE));
  put (f->out, "notes.txt", "mine\n");
  put (f->out, ".hidden", "mine too\n");
  g_autofree char *sub = g_build_filename (f->out, "sub", NULL);
  assert_int_equal (g_mkdir (sub, 0755), 0);
  put (sub, "inner.txt", "deep\n");
  g_autofree char *lnk = g_build_filename (f->out, "link", NULL);
  assert_int_equal (symlink ("notes.txt", lnk), 0);
  assert_int_equal (g_chmod (f->out, 0750), 0);
  GStatBuf before, notes_before;
  assert_int_equal (g_stat (f->out, &before), 0);
  g_autofree char *notes = g_build_filename (f->out, "notes.txt", NULL);
  assert_int_equal (g_stat (notes, &notes_before), 0);

  g_autofree char *notice = run_set (f->out, 2, FALSE, FALSE);
  assert_null (notice);
  GStatBuf after, notes_after;
  assert_int_equal (g_stat (f->out, &after), 0);
  assert_true (after.st_ino != before.st_ino);     /* swapped, not written in place */
  assert_int_equal (after.st_mode & 07777, 0750);  /* permissions kept */
  assert_file (f->out, "events.log", "seed 2\n");
  assert_absent (f->out, "daily.png");             /* the earlier run's chart */
  assert_file (f->out, "notes.txt", "mine\n");
  assert_int_equal (g_stat (notes, &notes_after), 0);
  assert_true (notes_after.st_ino == notes_before.st_ino); /* the very file */
  assert_file (f->out, ".hidden", "mine too\n");
  assert_file (sub, "inner.txt", "deep\n");
  char target[64] = { 0 };
  assert_int_equal (readlink (lnk, target, sizeof target - 1), 9);
  assert_string_equal (target, "notes.txt");
  assert_int_equal (count_staging (f->dir), 0);
}

/* An output folder named through a symbolic link: the folder it points to
 * is replaced, the link stays a link. */
static void
test_through_link (void **state)
{
  Fx *f = *state;
  g_free (run_set (f->out, 1, FALSE, FALSE));
  g_autofree char *lnk = g_build_filename (f->dir, "latest", NULL);
  assert_int_equal (symlink ("out", lnk), 0);
  g_free (run_set (lnk, 3, FALSE, FALSE));
  GStatBuf st;
  assert_int_equal (g_lstat (lnk, &st), 0);
  assert_true (S_ISLNK (st.st_mode));
  assert_file (f->out, "events.log", "seed 3\n");
  assert_int_equal (count_staging (f->dir), 0);
}

/* Staging inside the folder (the fall-back when no swap can be made): the
 * files are renamed one by one; the user's files are untouched, the earlier
 * run's chart is dropped, nothing is left. */
static void
test_file_by_file (void **state)
{
  Fx *f = *state;
  g_free (run_set (f->out, 1, TRUE, FALSE));
  put (f->out, "notes.txt", "mine\n");
  g_autoptr (GError) err = NULL;
  SfOutDir *od = sf_outdir_begin (f->out, "s", FALSE, TRUE, &err);
  assert_non_null (od);
  assert_int_equal (sf_outdir_how (od), SF_OUTDIR_FILES);
  g_autofree char *st_parent = g_path_get_dirname (sf_outdir_staging (od));
  g_autofree char *real_out = realpath (f->out, NULL);
  assert_string_equal (st_parent, real_out);
  stage_set (od, 4, FALSE);
  assert_true (sf_outdir_commit (od, NULL, &err));
  assert_file (f->out, "events.log", "seed 4\n");
  assert_absent (f->out, "daily.png");
  assert_file (f->out, "notes.txt", "mine\n");
  assert_int_equal (count_staging (f->out), 0);
}

/* Abort: the staging folder goes, the folder is as it was. */
static void
test_abort (void **state)
{
  Fx *f = *state;
  g_free (run_set (f->out, 1, FALSE, FALSE));
  put (f->out, "notes.txt", "mine\n");
  for (int force = 0; force < 2; force++)
    {
      g_autoptr (GError) err = NULL;
      SfOutDir *od = sf_outdir_begin (f->out, "s", FALSE, force, &err);
      assert_non_null (od);
      stage_set (od, 9, FALSE);
      sf_outdir_abort (od);
      assert_file (f->out, "events.log", "seed 1\n");
      assert_file (f->out, "notes.txt", "mine\n");
      assert_int_equal (count_staging (f->dir), 0);
      assert_int_equal (count_staging (f->out), 0);
    }
}

/* What killed runs leave: a staging folder whose lock is free is emptied by
 * the next run — the run's names dropped, an entry the folder lacks (a
 * user's sub-folder set aside by a swap) put back, an entry that clashes
 * with a different file of the same name kept and named in the notice — and
 * a staging folder whose lock is held (a live run) is left alone; so is a
 * run's temporary file inside the folder removed. */
static void
test_leftovers (void **state)
{
  Fx *f = *state;
  g_free (run_set (f->out, 1, FALSE, FALSE));
  put (f->out, "notes.txt", "current\n");
  put (f->out, ".summary.json.Ab12Cd", "half");
  g_autofree char *dead = g_build_filename (f->dir, ".out.staging-dead01", NULL);
  g_autofree char *live = g_build_filename (f->dir, ".out.staging-live01", NULL);
  assert_int_equal (g_mkdir (dead, 0755), 0);
  assert_int_equal (g_mkdir (live, 0755), 0);
  put (dead, "summary.json", "old");
  put (dead, "notes.txt", "an older, different file\n");
  g_autofree char *dsub = g_build_filename (dead, "sub", NULL);
  assert_int_equal (g_mkdir (dsub, 0755), 0);
  put (dsub, "inner.txt", "deep\n");
  put (live, "events.log", "being written");
  int fd = g_open (live, O_RDONLY | O_DIRECTORY, 0);
  assert_true (fd >= 0);
  assert_int_equal (flock (fd, LOCK_EX), 0);

  g_autofree char *notice = run_set (f->out, 2, FALSE, FALSE);
  close (fd);
  assert_non_null (notice);
  assert_non_null (strstr (notice, "1 entry of the earlier"));
  assert_non_null (strstr (notice, "notes.txt"));
  assert_non_null (strstr (notice, dead));
  assert_file (f->out, "notes.txt", "current\n");
  g_autofree char *sub = g_build_filename (f->out, "sub", NULL);
  assert_file (sub, "inner.txt", "deep\n");
  assert_file (dead, "notes.txt", "an older, different file\n");
  assert_absent (dead, "summary.json");
  assert_file (live, "events.log", "being written");
  assert_absent (f->out, ".summary.json.Ab12Cd");
  assert_file (f->out, "events.log", "seed 2\n");
}

/* Folders that cannot take a run, each named in the message. */
static void
test_refusals (void **state)
{
  Fx *f = *state;
  g_autoptr (GError) err = NULL;
  g_autofree char *file = g_build_filename (f->dir, "a-file", NULL);
  assert_true (g_file_set_contents (file, "x", -1, NULL));
  assert_null (sf_outdir_begin (file, "s", FALSE, FALSE, &err));
  assert_non_null (strstr (err->message, "is not a folder"));
  assert_non_null (strstr (err->message, file));
  g_clear_error (&err);

  g_autofree char *dangling = g_build_filename (f->dir, "dangling", NULL);
  assert_int_equal (symlink ("no-such-folder", dangling), 0);
  assert_null (sf_outdir_begin (dangling, "s", FALSE, FALSE, &err));
  assert_non_null (strstr (err->message, "a link to nothing"));
  g_clear_error (&err);

  g_free (run_set (f->out, 1, FALSE, FALSE));
  assert_null (sf_outdir_begin (f->out, "another", FALSE, FALSE, &err));
  assert_non_null (strstr (err->message, "holds the outputs of scenario 's', not 'another'"));
  g_clear_error (&err);
  SfOutDir *od = sf_outdir_begin (f->out, "another", TRUE, FALSE, &err);
  assert_non_null (od);
  /* messages about staged files name the folder as the user named it */
  g_autofree char *msg = g_strdup_printf ("cannot write %s/daily.png: No space left on device",
                                          sf_outdir_staging (od));
  g_autofree char *shown = sf_outdir_shown (od, msg);
  g_autofree char *want = g_strdup_printf ("cannot write %s/daily.png: No space left on device",
                                           f->out);
  assert_string_equal (shown, want);
  sf_outdir_abort (od);
}

int
main (void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test_setup_teardown (test_new_folder, setup, teardown),
    cmocka_unit_test_setup_teardown (test_swap_keeps_user_entries, setup, teardown),
    cmocka_unit_test_setup_teardown (test_through_link, setup, teardown),
    cmocka_unit_test_setup_teardown (test_file_by_file, setup, teardown),
    cmocka_unit_test_setup_teardown (test_abort, setup, teardown),
    cmocka_unit_test_setup_teardown (test_leftovers, setup, teardown),
    cmocka_unit_test_setup_teardown (test_refusals, setup, teardown),
  };
  return cmocka_run_group_tests_name ("outdir", tests, NULL, NULL);
}
