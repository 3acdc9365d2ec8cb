/* SPDX-License-Identifier: MIT
 *
 * sf-layout.h — every block of a strip laid out for work (internal to sim/).
 *
 * Owns: for each block, its cross-section settled at the angle of repose,
 * its slice plan, its standard final spoil line and its final design — what
 * a fleet run needs before its first event, and what `validate` checks.
 * Built once from one set of given sections, the blocks in parallel on a
 * GThreadPool (each block is independent and reads the shared set only, so
 * the layout does not depend on the number of threads), and then never
 * changed: replications share one layout read-only.
 *
 * Memory: sf_layout_new returns an owned SfLayout; sf_layout_free frees it
 * and everything in it.
 */
#pragma once

#include <glib.h>
#include "sf-scenario.h"
#include "sf-section.h"
#include "sf-slice.h"

G_BEGIN_DECLS

typedef struct {
  SfBlockSection *bs;
  SfSlicePlan *plan;
  double *final;         /* final design in the zone (+inf outside); bs->n cells */
  double *spoil;         /* standard final spoil line; bs->n cells */
} SfBlockLayout;

typedef struct {
  guint n_blocks;
  SfBlockLayout *blocks; /* all NULL for a block out of scope */
} SfLayout;

/* Lays out every block (only `only_block` when it is >= 0) on up to as
 * many threads as there are processors.  When any block cannot be laid
 * out: NULL, *n_bad (may be NULL) the number of such blocks, and one error
 * with a line per such block in block order (the domain and code of the
 * first).  `progress`: a line on stderr while it works, when stderr is a
 * terminal. */
SfLayout *sf_layout_new (const SfScenario *sc, int only_block, gboolean progress, guint *n_bad,
                         GError **error);
void sf_layout_free (SfLayout *lay);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfLayout, sf_layout_free)

G_END_DECLS
