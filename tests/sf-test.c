/* SPDX-License-Identifier: MIT */
#include "sf-test.h"
#include <math.h>
#include <stdio.h>
#include <glib/gstdio.h>

void
sf_assert_close_impl (double a, double b, double abs_tol, double rel_tol, const char *sa,
                      const char *sb, const char *file, int line)
{
  double tol = abs_tol + rel_tol * fabs (b);
  if (!(fabs (a - b) <= tol))
    {
      char msg[512];
      snprintf (msg, sizeof msg, "%s = %.12g, expected %s = %.12g (tolerance %.3g)", sa, a, sb, b,
                tol);
      _assert_true (0, msg, file, line);
    }
}

char *
sf_test_source_path (const char *rel)
{
  const char *root = g_getenv ("SF_SOURCE_DIR");
  return g_build_filename (root ? root : ".", rel, NULL);
}

void
sf_test_remove_tree (const char *path)
{
  g_autoptr (GDir) d = g_dir_open (path, 0, NULL);
  if (d)
    {
      const char *n;
      while ((n = g_dir_read_name (d)))
        {
          g_autofree char *p = g_build_filename (path, n, NULL);
          sf_test_remove_tree (p);
        }
      g_rmdir (path);
    }
  else
    g_unlink (path);
}

char *
sf_test_read_file (const char *dir, const char *name, gsize *len)
{
  g_autofree char *path = g_build_filename (dir, name, NULL);
  char *text = NULL;
  if (!g_file_get_contents (path, &text, len, NULL))
    fail_msg ("cannot read %s", path);
  return text;
}
