/* SPDX-License-Identifier: MIT
 *
 * sf-util.h — small helpers shared by the library (internal to sim/).
 *
 * Owns: error quarks, unit conversions, and atomic output files (a file is
 * written under a temporary name in its final folder and renamed into place
 * only when complete, so a reader never sees a half-written result).  The
 * temporary name of FOLDER/NAME is FOLDER/.NAME.XXXXXX (hidden); one left
 * behind by a killed process in a run's output folder is removed by the next
 * run into it (sf-outdir.c).  And failpoints for the interrupted-run tests.
 */
#pragma once

#include <stdio.h>
#include <glib.h>
#include "stripfleet.h"

G_BEGIN_DECLS

#define SF_G_MS2 9.80665          /* standard gravity, m/s2 (CGPM 1901) */
#define SF_KMH_TO_MS (1.0 / 3.6)

static inline double sf_deg2rad (double d) { return d * G_PI / 180.0; }

/* Writes `len` bytes to `path` atomically (temporary file + fsync + rename,
 * through g_file_set_contents_full).  The message names the path. */
gboolean sf_write_file_atomic (const char *path, const char *data, gssize len, GError **error);

/* A streamed output file that appears under its final name only on commit. */
typedef struct {
  FILE *fp;         /* write to this */
  char *tmp_path;   /* owned */
  char *final_path; /* owned */
} SfAtomicFile;

SfAtomicFile *sf_atomic_file_open (const char *path, GError **error);
/* Flushes, syncs, closes and renames into place; frees af in every case. */
gboolean sf_atomic_file_commit (SfAtomicFile *af, GError **error);
/* Closes and removes the temporary file; frees af.  NULL is fine. */
void sf_atomic_file_abort (SfAtomicFile *af);

/* A failpoint for the tests of interrupted runs: when the environment
 * variable SF_FAILPOINT equals `name`, the process kills itself there
 * (SIGKILL), as a power cut or `kill -9` would.  Nothing happens otherwise.
 * The names are listed in DEVELOPERS.md. */
void sf_failpoint (const char *name);

G_END_DECLS
