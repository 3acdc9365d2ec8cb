/* SPDX-License-Identifier: MIT */
#include "sf-util.h"

#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <string.h>
#include <unistd.h>
#include <glib/gstdio.h>

G_DEFINE_QUARK (sf-scenario-error-quark, sf_scenario_error)
G_DEFINE_QUARK (sf-model-error-quark, sf_model_error)

gboolean
sf_write_file_atomic (const char *path, const char *data, gssize len, GError **error)
{
  return g_file_set_contents_full (path, data, len,
                                   G_FILE_SET_CONTENTS_CONSISTENT | G_FILE_SET_CONTENTS_DURABLE,
                                   0644, error);
}

SfAtomicFile *
sf_atomic_file_open (const char *path, GError **error)
{
  g_autofree char *dir = g_path_get_dirname (path);
  g_autofree char *base = g_path_get_basename (path);
  g_autofree char *tmp_name = g_strdup_printf (".%s.XXXXXX", base);
  g_autofree char *tmpl = g_build_filename (dir, tmp_name, NULL);
  int fd = g_mkstemp_full (tmpl, O_WRONLY | O_CREAT | O_EXCL, 0644);
  if (fd < 0)
    {
      int e = errno;
      g_set_error (error, G_FILE_ERROR, g_file_error_from_errno (e),
                   "cannot create a temporary file beside %s: %s", path, g_strerror (e));
      return NULL;
    }
  SfAtomicFile *af = g_new0 (SfAtomicFile, 1);
  af->fp = fdopen (fd, "w");
  if (!af->fp)
    {
      int e = errno;
      close (fd);
      g_unlink (tmpl);
      g_free (af);
      g_set_error (error, G_FILE_ERROR, g_file_error_from_errno (e), "cannot open %s: %s", path,
                   g_strerror (e));
      return NULL;
    }
  af->tmp_path = g_steal_pointer (&tmpl);
  af->final_path = g_strdup (path);
  return af;
}

/* Flushes, syncs and closes af's temporary file; on failure sets the error
 * (naming the final path) and removes the temporary file.  af is not freed. */
static gboolean
atomic_file_sync (SfAtomicFile *af, GError **error)
{
  gboolean ok = TRUE;
  int e = 0;
  if (fflush (af->fp) != 0 || ferror (af->fp) || fsync (fileno (af->fp)) != 0)
    {
      ok = FALSE;
      e = errno;
    }
  if (fclose (af->fp) != 0 && ok)
    {
      ok = FALSE;
      e = errno;
    }
  af->fp = NULL;
  if (!ok)
    {
      g_set_error (error, G_FILE_ERROR, g_file_error_from_errno (e ? e : EIO),
                   "cannot write %s: %s", af->final_path, g_strerror (e ? e : EIO));
      g_unlink (af->tmp_path);
    }
  return ok;
}

static void
atomic_file_free (SfAtomicFile *af)
{
  g_free (af->tmp_path);
  g_free (af->final_path);
  g_free (af);
}

gboolean
sf_atomic_file_commit (SfAtomicFile *af, GError **error)
{
  gboolean ok = atomic_file_sync (af, error);
  if (ok && g_rename (af->tmp_path, af->final_path) != 0)
    {
      int e = errno;
      g_set_error (error, G_FILE_ERROR, g_file_error_from_errno (e), "cannot write %s: %s",
                   af->final_path, g_strerror (e));
      g_unlink (af->tmp_path);
      ok = FALSE;
    }
  if (ok)
    {
      /* the rename itself on disk (a crash of the machine, not only of the
       * process, keeps it) */
      g_autofree char *dir = g_path_get_dirname (af->final_path);
      int fd = g_open (dir, O_RDONLY | O_CLOEXEC, 0);
      if (fd >= 0)
        {
          fsync (fd);
          close (fd);
        }
    }
  atomic_file_free (af);
  return ok;
}

void
sf_atomic_file_abort (SfAtomicFile *af)
{
  if (!af)
    return;
  if (af->fp)
    fclose (af->fp);
  g_unlink (af->tmp_path);
  atomic_file_free (af);
}

void
sf_failpoint (const char *name)
{
  const char *fp = g_getenv ("SF_FAILPOINT");
  if (fp && strcmp (fp, name) == 0)
    raise (SIGKILL);
}
