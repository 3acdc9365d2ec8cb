/* SPDX-License-Identifier: MIT
 *
 * sf-outdir.c — the output folder of a run, replaced as one set (see the
 * header for the steps and docs/robustness.md for what a kill leaves).
 */
#include "sf-outdir.h"

#include <errno.h>
#include <fcntl.h>
#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cjson/cJSON.h>
#include <glib/gstdio.h>

#include "sf-util.h"

const char *const sf_outdir_names[] = { "events.log",  "schedule.csv", "daily.csv",
                                        "replications.csv", "daily.png", "usage.png",
                                        "schedule.png", "spread.png", "summary.json", NULL };

#define STAGING_TAG "staging-"
/* NAME_MAX less ".", ".staging-" and the six random characters */
#define MAX_SWAP_NAME (NAME_MAX - 16)

struct _SfOutDir {
  char *shown;     /* the output folder as the caller named it */
  char *final;     /* its absolute path, links resolved */
  char *staging;   /* absolute */
  SfOutDirHow how;
  int lock_fd;     /* the staging folder, flock()ed while the run lives */
  GString *notice; /* for the user; empty when nothing to say */
};

/* ---- names ------------------------------------------------------------------- */

static gboolean
is_run_name (const char *e)
{
  for (const char *const *n = sf_outdir_names; *n; n++)
    if (strcmp (e, *n) == 0)
      return TRUE;
  return FALSE;
}

/* s ends in exactly six characters of a mkstemp/mkdtemp template */
static gboolean
tail6 (const char *s)
{
  if (strlen (s) != 6)
    return FALSE;
  for (; *s; s++)
    if (!g_ascii_isalnum (*s) && *s != '_')
      return FALSE;
  return TRUE;
}

/* The temporary name of one of the run's files (.NAME.XXXXXX), left by a
 * killed writer or by an earlier version that staged file by file. */
static gboolean
is_run_temp (const char *e)
{
  if (e[0] != '.')
    return FALSE;
  for (const char *const *n = sf_outdir_names; *n; n++)
    {
      gsize ln = strlen (*n);
      if (strncmp (e + 1, *n, ln) == 0 && e[1 + ln] == '.' && tail6 (e + 2 + ln))
        return TRUE;
    }
  return FALSE;
}

/* e is a staging folder's name: ".BASE.staging-XXXXXX" beside the output
 * folder BASE (base non-NULL), or ".staging-XXXXXX" inside it. */
static gboolean
is_staging_name (const char *e, const char *base)
{
  if (e[0] != '.')
    return FALSE;
  const char *p = e + 1;
  if (base)
    {
      gsize lb = strlen (base);
      if (strncmp (p, base, lb) != 0 || p[lb] != '.')
        return FALSE;
      p += lb + 1;
    }
  return g_str_has_prefix (p, STAGING_TAG) && tail6 (p + strlen (STAGING_TAG));
}

static gint
cmp_names (gconstpointer a, gconstpointer b)
{
  return strcmp (*(const char *const *) a, *(const char *const *) b);
}

/* The entries of dir, sorted by name. */
static GPtrArray *
list_dir (const char *dir)
{
  GPtrArray *names = g_ptr_array_new_with_free_func (g_free);
  g_autoptr (GDir) d = g_dir_open (dir, 0, NULL);
  const char *e;
  while (d && (e = g_dir_read_name (d)))
    g_ptr_array_add (names, g_strdup (e));
  /* a fixed order, so that what a commit does does not depend on the file
   * system's */
  g_ptr_array_sort (names, cmp_names);
  return names;
}

static void
fsync_dir (const char *dir)
{
  int fd = g_open (dir, O_RDONLY | O_DIRECTORY | O_CLOEXEC, 0);
  if (fd >= 0)
    {
      fsync (fd);
      close (fd);
    }
}

static gboolean
same_file (const GStatBuf *a, const GStatBuf *b)
{
  return a->st_dev == b->st_dev && a->st_ino == b->st_ino;
}

/* Moves from/e to into/e unless into/e exists (then FALSE, EEXIST). */
static gboolean
move_noreplace (const char *from, const char *into)
{
  if (renameat2 (AT_FDCWD, from, AT_FDCWD, into, RENAME_NOREPLACE) == 0)
    return TRUE;
  if (errno != EINVAL && errno != ENOSYS)
    return FALSE;
  /* a file system without RENAME_NOREPLACE: look, then rename */
  GStatBuf st;
  if (g_lstat (into, &st) == 0)
    {
      errno = EEXIST;
      return FALSE;
    }
  return g_rename (from, into) == 0;
}

/* Empties `from` into the output folder `into` by one rule, used both for the
 * old folder after a swap and for a staging folder a killed run left:
 *   - the run's names and their temporary names are removed;
 *   - an entry that is the very file of the same name in `into` (a hard link
 *     made before the swap) is removed;
 *   - any other entry that `into` lacks is moved there;
 *   - the rest is kept, and `from` with it; named in od->notice.
 * Then `from` is removed when empty. */
static void
drain (SfOutDir *od, const char *from, const char *into)
{
  g_autoptr (GPtrArray) names = list_dir (from);
  g_autoptr (GPtrArray) kept = g_ptr_array_new ();
  for (guint i = 0; i < names->len; i++)
    {
      const char *e = names->pdata[i];
      g_autofree char *fp = g_build_filename (from, e, NULL);
      g_autofree char *ip = g_build_filename (into, e, NULL);
      if ((is_run_name (e) || is_run_temp (e)) && (g_unlink (fp) == 0 || errno == ENOENT))
        ;
      else
        {
          GStatBuf a, b;
          if (g_lstat (fp, &a) != 0)
            continue; /* gone meanwhile */
          if (g_lstat (ip, &b) == 0)
            {
              if (!(same_file (&a, &b) && (g_unlink (fp) == 0 || errno == ENOENT)))
                g_ptr_array_add (kept, (gpointer) e);
            }
          else if (!move_noreplace (fp, ip) && errno != ENOENT)
            g_ptr_array_add (kept, (gpointer) e);
        }
      if (i == 0)
        sf_failpoint ("outdir-drain-first");
    }
  if (kept->len == 0 && g_rmdir (from) == 0)
    return;
  if (kept->len == 0)
    return; /* another run is emptying it too */
  if (od->notice->len)
    g_string_append_c (od->notice, '\n');
  g_string_append_printf (od->notice, "%u entr%s of the earlier %s could not be put back and %s "
                                      "kept in %s:",
                          kept->len, kept->len == 1 ? "y" : "ies", od->shown,
                          kept->len == 1 ? "is" : "are", from);
  for (guint i = 0; i < kept->len; i++)
    g_string_append_printf (od->notice, " %s", (const char *) kept->pdata[i]);
}

/* Removes what a staging folder holds (the run's files and hard links to the
 * user's files: never anything else) and the folder. */
static void
remove_staging (const char *dir)
{
  g_autoptr (GPtrArray) names = list_dir (dir);
  for (guint i = 0; i < names->len; i++)
    {
      g_autofree char *p = g_build_filename (dir, (const char *) names->pdata[i], NULL);
      g_unlink (p);
    }
  g_rmdir (dir);
}

/* Staging folders of killed runs in `dir` (named for `base`, or inside the
 * output folder when base is NULL) whose lock is free: emptied into `final`.
 * The run's temporary files left in the output folder itself go too. */
static void
clear_leftovers (SfOutDir *od, const char *dir, const char *base)
{
  g_autoptr (GPtrArray) names = list_dir (dir);
  for (guint i = 0; i < names->len; i++)
    {
      const char *e = names->pdata[i];
      g_autofree char *p = g_build_filename (dir, e, NULL);
      if (!base && is_run_temp (e))
        {
          g_unlink (p);
          continue;
        }
      if (!is_staging_name (e, base))
        continue;
      int fd = g_open (p, O_RDONLY | O_DIRECTORY | O_NOFOLLOW | O_CLOEXEC, 0);
      if (fd < 0)
        continue;
      if (flock (fd, LOCK_EX | LOCK_NB) == 0) /* else a live run's */
        drain (od, p, od->final);
      close (fd);
    }
}

/* ---- begin ------------------------------------------------------------------- */

/* The scenario named by an existing summary.json in dir, or NULL. */
static char *
existing_scenario (const char *dir)
{
  g_autofree char *path = g_build_filename (dir, "summary.json", NULL);
  g_autofree char *text = NULL;
  gsize len = 0;
  if (!g_file_get_contents (path, &text, &len, NULL))
    return NULL;
  cJSON *root = cJSON_ParseWithLength (text, len);
  char *name = NULL;
  const cJSON *sc = cJSON_GetObjectItemCaseSensitive (root, "scenario");
  if (cJSON_IsString (sc))
    name = g_strdup (sc->valuestring);
  else
    name = g_strdup ("(unreadable summary.json)");
  cJSON_Delete (root);
  return name;
}

static void
outdir_free (SfOutDir *od)
{
  if (od->lock_fd >= 0)
    close (od->lock_fd);
  g_free (od->shown);
  g_free (od->final);
  g_free (od->staging);
  g_string_free (od->notice, TRUE);
  g_free (od);
}

static gboolean
fail_errno (GError **error, int e, const char *what, const char *path)
{
  g_set_error (error, G_FILE_ERROR, g_file_error_from_errno (e), "%s %s: %s", what, path,
               g_strerror (e));
  return FALSE;
}

/* Makes the staging folder from template tmpl (…XXXXXX); its lock taken.
 * FALSE with errno set when it cannot be made. */
static gboolean
make_staging (SfOutDir *od, char *tmpl, const GStatBuf *like)
{
  if (!g_mkdtemp_full (tmpl, 0777))
    return FALSE;
  od->staging = tmpl;
  od->lock_fd = g_open (tmpl, O_RDONLY | O_DIRECTORY | O_CLOEXEC, 0);
  if (od->lock_fd < 0 || flock (od->lock_fd, LOCK_EX) != 0)
    {
      int e = errno;
      g_rmdir (tmpl);
      g_clear_pointer (&od->staging, g_free);
      errno = e;
      return FALSE;
    }
  if (like)
    {
      /* the swapped-in folder keeps the old one's permissions (and owner,
       * when we may set it) */
      if (fchmod (od->lock_fd, like->st_mode & 07777) != 0)
        { /* best effort */
        }
      if (geteuid () == 0 && fchown (od->lock_fd, like->st_uid, like->st_gid) != 0)
        { /* best effort */
        }
    }
  return TRUE;
}

SfOutDir *
sf_outdir_begin (const char *out_dir, const char *scenario_name, gboolean overwrite,
                 gboolean force_files, GError **error)
{
  g_return_val_if_fail (out_dir != NULL && *out_dir, NULL);
  SfOutDir *od = g_new0 (SfOutDir, 1);
  od->lock_fd = -1;
  od->shown = g_strdup (out_dir);
  od->notice = g_string_new (NULL);

  GStatBuf st, lst;
  gboolean exists = g_stat (out_dir, &st) == 0;
  if (!exists && errno == ENOENT && g_lstat (out_dir, &lst) == 0)
    {
      g_set_error (error, G_FILE_ERROR, G_FILE_ERROR_NOENT,
                   "the output folder %s is a link to nothing", out_dir);
      outdir_free (od);
      return NULL;
    }
  if (!exists && errno != ENOENT)
    {
      fail_errno (error, errno, "cannot use the output folder", out_dir);
      outdir_free (od);
      return NULL;
    }
  if (exists && !S_ISDIR (st.st_mode))
    {
      g_set_error (error, G_FILE_ERROR, G_FILE_ERROR_NOTDIR,
                   "the output folder %s is not a folder", out_dir);
      outdir_free (od);
      return NULL;
    }
  if (exists)
    {
      char *rp = realpath (out_dir, NULL);
      if (!rp)
        {
          fail_errno (error, errno, "cannot use the output folder", out_dir);
          outdir_free (od);
          return NULL;
        }
      od->final = g_strdup (rp);
      free (rp);
    }
  else
    {
      /* "runs/a/", "runs/./a": the folder a, in runs */
      g_autofree char *canon = g_canonicalize_filename (out_dir, NULL);
      g_autofree char *parent = g_path_get_dirname (canon);
      g_autofree char *base = g_path_get_basename (canon);
      char *rp = NULL;
      if (g_mkdir_with_parents (parent, 0777) != 0 || !(rp = realpath (parent, NULL)))
        {
          fail_errno (error, errno, "cannot create the output folder", out_dir);
          outdir_free (od);
          return NULL;
        }
      od->final = g_build_filename (rp, base, NULL);
      free (rp);
    }

  g_autofree char *other = exists ? existing_scenario (od->final) : NULL;
  if (other && g_strcmp0 (other, scenario_name) != 0 && !overwrite)
    {
      g_set_error (error, G_FILE_ERROR, G_FILE_ERROR_EXIST,
                   "the output folder %s holds the outputs of scenario '%s', not '%s'; choose "
                   "another folder or allow overwriting (--overwrite)",
                   out_dir, other, scenario_name);
      outdir_free (od);
      return NULL;
    }

  g_autofree char *parent = g_path_get_dirname (od->final);
  g_autofree char *base = g_path_get_basename (od->final);
  GStatBuf pst;
  gboolean can_swap = !force_files && strcmp (od->final, "/") != 0
                      && strlen (base) <= MAX_SWAP_NAME && g_stat (parent, &pst) == 0
                      && (!exists || pst.st_dev == st.st_dev); /* not a mount point */

  /* what killed runs left: staging folders beside and inside the folder */
  if (can_swap)
    clear_leftovers (od, parent, base);
  if (exists)
    clear_leftovers (od, od->final, NULL);

  if (can_swap)
    {
      g_autofree char *name = g_strdup_printf (".%s." STAGING_TAG "XXXXXX", base);
      char *tmpl = g_build_filename (parent, name, NULL);
      if (make_staging (od, tmpl, exists ? &st : NULL))
        {
          od->how = SF_OUTDIR_SWAP;
          return od;
        }
      g_free (tmpl);
      /* a parent folder we may not write in, say: stage inside the folder */
    }
  if (!exists && g_mkdir (od->final, 0777) != 0 && errno != EEXIST)
    {
      fail_errno (error, errno, "cannot create the output folder", out_dir);
      outdir_free (od);
      return NULL;
    }
  char *tmpl = g_build_filename (od->final, "." STAGING_TAG "XXXXXX", NULL);
  if (!make_staging (od, tmpl, NULL))
    {
      g_free (tmpl);
      fail_errno (error, errno, "cannot write in the output folder", out_dir);
      outdir_free (od);
      return NULL;
    }
  od->how = SF_OUTDIR_FILES;
  return od;
}

const char *
sf_outdir_staging (const SfOutDir *od)
{
  return od->staging;
}

SfOutDirHow
sf_outdir_how (const SfOutDir *od)
{
  return od->how;
}

char *
sf_outdir_shown (const SfOutDir *od, const char *msg)
{
  GString *s = g_string_new (msg);
  g_string_replace (s, od->staging, od->shown, 0);
  return g_string_free (s, FALSE);
}

/* ---- commit ------------------------------------------------------------------ */

/* Every staged file and the staging folder itself on disk. */
static gboolean
sync_staged (SfOutDir *od, GError **error)
{
  g_autoptr (GPtrArray) names = list_dir (od->staging);
  for (guint i = 0; i < names->len; i++)
    {
      const char *e = names->pdata[i];
      g_autofree char *p = g_build_filename (od->staging, e, NULL);
      int fd = g_open (p, O_RDONLY | O_NOFOLLOW | O_CLOEXEC, 0);
      if (fd < 0 || fsync (fd) != 0)
        {
          int err = errno;
          if (fd >= 0)
            close (fd);
          g_autofree char *shown = g_build_filename (od->shown, e, NULL);
          return fail_errno (error, err, "cannot write", shown);
        }
      close (fd);
    }
  if (fsync (od->lock_fd) != 0)
    return fail_errno (error, errno, "cannot write in the output folder", od->shown);
  return TRUE;
}

/* File by file into the output folder, summary.json last; the run's names
 * the new set lacks (charts of an earlier run, say) are removed after. */
static gboolean
commit_files (SfOutDir *od, GError **error)
{
  gboolean in_set[G_N_ELEMENTS (sf_outdir_names)] = { FALSE };
  gboolean first = TRUE;
  for (guint i = 0; sf_outdir_names[i]; i++)
    {
      g_autofree char *from = g_build_filename (od->staging, sf_outdir_names[i], NULL);
      g_autofree char *to = g_build_filename (od->final, sf_outdir_names[i], NULL);
      GStatBuf st;
      if (g_lstat (from, &st) != 0)
        continue;
      in_set[i] = TRUE;
      if (g_rename (from, to) != 0)
        {
          g_autofree char *shown = g_build_filename (od->shown, sf_outdir_names[i], NULL);
          return fail_errno (error, errno, "cannot write", shown);
        }
      if (first)
        sf_failpoint ("outdir-file-first");
      first = FALSE;
    }
  for (guint i = 0; sf_outdir_names[i]; i++)
    {
      g_autofree char *to = g_build_filename (od->final, sf_outdir_names[i], NULL);
      GStatBuf st;
      if (!in_set[i] && g_lstat (to, &st) == 0 && !S_ISDIR (st.st_mode))
        g_unlink (to);
    }
  return TRUE;
}

/* Hard links of the user's own entries of the output folder into the
 * staging folder, so that the swap carries them; an entry that cannot be
 * linked (a folder) is moved across after the swap by drain(). */
static void
link_user_entries (SfOutDir *od)
{
  g_autoptr (GPtrArray) names = list_dir (od->final);
  for (guint i = 0; i < names->len; i++)
    {
      const char *e = names->pdata[i];
      if (is_run_name (e) || is_run_temp (e))
        continue;
      g_autofree char *from = g_build_filename (od->final, e, NULL);
      g_autofree char *to = g_build_filename (od->staging, e, NULL);
      if (linkat (AT_FDCWD, from, AT_FDCWD, to, 0) != 0)
        { /* drain() moves it after the swap */
        }
    }
}

gboolean
sf_outdir_commit (SfOutDir *od, char **notice, GError **error)
{
  g_return_val_if_fail (od != NULL, FALSE);
  if (notice)
    *notice = NULL;
  if (!sync_staged (od, error))
    {
      sf_outdir_abort (od);
      return FALSE;
    }
  sf_failpoint ("outdir-synced");
  g_autofree char *parent = g_path_get_dirname (od->final);
  if (od->how == SF_OUTDIR_SWAP)
    {
      /* a new folder: one rename, unless it appeared meanwhile */
      if (move_noreplace (od->staging, od->final))
        {
          fsync_dir (parent);
          goto done;
        }
      if (errno != EEXIST && errno != ENOTEMPTY)
        {
          fail_errno (error, errno, "cannot create the output folder", od->shown);
          goto fail;
        }
      link_user_entries (od);
      sf_failpoint ("outdir-linked");
      if (renameat2 (AT_FDCWD, od->staging, AT_FDCWD, od->final, RENAME_EXCHANGE) == 0)
        {
          fsync_dir (parent);
          sf_failpoint ("outdir-swapped");
          /* the staging path now names the old folder */
          drain (od, od->staging, od->final);
          goto done;
        }
      int e = errno;
      if (e != EINVAL && e != ENOSYS && e != EXDEV && e != EBUSY && e != EPERM)
        {
          fail_errno (error, e, "cannot replace the output folder", od->shown);
          goto fail;
        }
      /* no swap on this file system: file by file from beside the folder */
      od->how = SF_OUTDIR_FILES;
    }
  if (!commit_files (od, error))
    goto fail;
  fsync_dir (od->final);
  drain (od, od->staging, od->final);
done:
  if (notice && od->notice->len)
    *notice = g_strdup (od->notice->str);
  outdir_free (od);
  return TRUE;
fail:
  sf_outdir_abort (od);
  return FALSE;
}

void
sf_outdir_abort (SfOutDir *od)
{
  if (!od)
    return;
  if (od->staging)
    remove_staging (od->staging);
  outdir_free (od);
}
