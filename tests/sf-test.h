/* SPDX-License-Identifier: MIT
 * sf-test.h — helpers shared by the cmocka tests. */
#pragma once

#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>
#include <glib.h>

/* cmocka 1.1.5 has no double assert; this one names what differed.
 * Passes when |a-b| <= abs_tol + rel_tol*|b|. */
#define sf_assert_close(a, b, abs_tol, rel_tol) \
  sf_assert_close_impl ((a), (b), (abs_tol), (rel_tol), #a, #b, __FILE__, __LINE__)
void sf_assert_close_impl (double a, double b, double abs_tol, double rel_tol, const char *sa,
                           const char *sb, const char *file, int line);

/* Path of a file in the source tree (SF_SOURCE_DIR), newly allocated. */
char *sf_test_source_path (const char *rel);

/* Removes a file or a folder tree that a test made (recursively). */
void sf_test_remove_tree (const char *path);

/* The whole of dir/name, newly allocated (its length in *len, may be NULL);
 * fails the test when it cannot be read. */
char *sf_test_read_file (const char *dir, const char *name, gsize *len);
