/* SPDX-License-Identifier: MIT
 *
 * sf-study.h — the wiring shared by the block studies (sf-study.c) and their
 * charts (sf-chart.c) (internal to sim/).
 *
 * Owns: one block laid out for a study — the scenario's design with the
 * study options applied, the block's section and its slice plan — and
 * working one lane of it with one machine.  An SfStudyBlock owns its section
 * and plan and is freed with sf_study_block_free(); the worked lane returned
 * by sf_study_block_work_lane() borrows the section's base and is freed by
 * the caller with sf_lane_free() before the block.
 */
#pragma once

#include <glib.h>
#include "sf-push.h"
#include "sf-scenario.h"
#include "sf-section.h"
#include "sf-slice.h"
#include "stripfleet.h"

G_BEGIN_DECLS

typedef struct {
  SfDesign design;          /* the scenario's design with the options applied */
  SfBlockSection *section;  /* owned */
  SfSlicePlan *plan;        /* owned */
} SfStudyBlock;

/* Builds the section and slice plan of `block` under `opt` (may be NULL). */
SfStudyBlock *sf_study_block_new (const SfScenario *sc, guint block, const SfStudyOptions *opt,
                                  GError **error);
void sf_study_block_free (SfStudyBlock *sb);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfStudyBlock, sf_study_block_free)

/* Works `lane` of the block through its plan with one machine of class
 * `class_index`: appends one SfSliceResult per slice worked to `out` and
 * fills *totals.  Returns the lane as left at the end (caller frees), or
 * NULL with SF_MODEL_ERROR_ARGUMENT when the lane or class does not exist. */
SfLane *sf_study_block_work_lane (const SfScenario *sc, const SfStudyBlock *sb, guint lane,
                                  guint class_index, GArray *out, SfLaneTotals *totals,
                                  GError **error);

G_END_DECLS
