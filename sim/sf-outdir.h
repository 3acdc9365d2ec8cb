/* SPDX-License-Identifier: MIT
 *
 * sf-outdir.h — the output folder of a run, replaced as one set (internal to
 * sim/).
 *
 * Owns: the staging folder that a run writes all its files into, and the one
 * step that turns it into the output folder.  A run never writes into the
 * output folder itself:
 *
 *   begin   checks the folder (a folder, not another scenario's outputs unless
 *           overwriting), clears what killed runs left, and makes a private
 *           staging folder beside it, PARENT/.NAME.staging-XXXXXX (locked
 *           with flock while the run lives);
 *   write   every file of the run goes into sf_outdir_staging();
 *   commit  syncs every staged file, hard-links the user's own files of the
 *           output folder into the staging folder, then swaps the two
 *           folders in one system call (renameat2 RENAME_EXCHANGE) — a reader
 *           sees the old set or the new one, never a mix — and empties the old
 *           folder: the run's names go, user entries that could not be linked
 *           (sub-folders, say) are moved across, anything else is kept there
 *           and named in the notice.
 *
 * When the swap cannot be done — the parent folder is not writable, the
 * output folder is a mount point or "/", the file system lacks
 * RENAME_EXCHANGE — the staging folder goes inside the output folder
 * (OUT/.staging-XXXXXX) and commit renames file by file, summary.json last:
 * then a kill inside those few renames can leave a mix (docs/robustness.md).
 *
 * A staging folder left by a killed run is found by its name, is known to be
 * dead because its lock is free, and is emptied by the same rule as the old
 * folder of a commit (so a kill at any step loses none of the user's files).
 *
 * Memory: sf_outdir_begin returns an owned SfOutDir; commit and abort free
 * it.  Strings returned by getters belong to the SfOutDir.
 */
#pragma once

#include <glib.h>

G_BEGIN_DECLS

typedef struct _SfOutDir SfOutDir;

typedef enum {
  SF_OUTDIR_SWAP,  /* staging beside the folder; the folders swap in one step */
  SF_OUTDIR_FILES, /* staging inside the folder; files renamed one by one */
} SfOutDirHow;

/* The names a run writes, in the order of a file-by-file commit
 * (summary.json last); NULL-terminated.  These names in the output folder
 * belong to the run: a commit replaces or removes them. */
extern const char *const sf_outdir_names[];

/* Starts an output set for `out_dir` (created with its parents when
 * missing).  Fails naming out_dir when it is not a folder, cannot be
 * written, or holds the outputs of a scenario other than scenario_name
 * (unless overwrite).  force_files: stage inside the folder even when a swap
 * is possible (tests). */
SfOutDir *sf_outdir_begin (const char *out_dir, const char *scenario_name, gboolean overwrite,
                           gboolean force_files, GError **error);

const char *sf_outdir_staging (const SfOutDir *od); /* write the files here */
SfOutDirHow sf_outdir_how (const SfOutDir *od);

/* msg with the staging folder's path replaced by the output folder as the
 * caller named it (newly allocated): for messages about staged files. */
char *sf_outdir_shown (const SfOutDir *od, const char *msg);

/* Makes the staged files the output folder (see above); frees od.  On
 * failure the previous folder is as it was.  *notice (may be NULL) receives
 * NULL or a newly allocated text for the user (entries kept aside). */
gboolean sf_outdir_commit (SfOutDir *od, char **notice, GError **error);

/* Removes the staging folder and what it holds; frees od.  NULL is fine. */
void sf_outdir_abort (SfOutDir *od);

G_END_DECLS
