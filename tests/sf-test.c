/* SPDX-License-Identifier: MIT */
#include "sf-test.h"
#include <math.h>
#include <stdio.h>

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
