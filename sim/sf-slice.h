/* SPDX-License-Identifier: MIT
 *
 * sf-slice.h — slice plans: the order in which a block's material is dozed
 * (internal to sim/).
 *
 * Owns: turning a block section and a design into an ordered sequence of
 * slices, each a target surface across the lane with the cut zone it
 * applies to, and the planned (geometric) cut and fill volumes, centroids,
 * push distance and grade of each slice; and working one lane through its
 * slices push by push with one machine.
 *
 * Strategies (docs/model.md §5):
 *  - tip-over then layers: slice 0 cuts everything above the cut-off ramp, a
 *    line through the pivot rising towards the highwall at the cut-off grade,
 *    out to the crest of the blasted ground, and tips it over the crest; then
 *    horizontal layers down to the dozer floor, each ending on the ramp and
 *    pushed through the pivot;
 *  - straight push: straight target lines from the highwall end to the fill,
 *    their grade easing from the cut-off grade to the flattest grade and their
 *    highwall end dropping to the dozer floor; each line's pivot is where it
 *    crosses the ground at the start of the slice, so it moves slice by slice,
 *    and fill placed under one line and above the next is cut again
 *    (rehandle, counted per push).
 *
 * A plan owns its slices and their target arrays; free with
 * sf_slice_plan_free().
 */
#pragma once

#include <glib.h>
#include "sf-push.h"
#include "sf-section.h"
#include "stripfleet.h"

G_BEGIN_DECLS

typedef enum {
  SF_SLICE_TIPOVER = 0,
  SF_SLICE_LAYER,
  SF_SLICE_STRAIGHT,
} SfSliceKind;

const char *sf_slice_kind_to_str (SfSliceKind k);

typedef struct {
  guint index;
  SfSliceKind kind;
  double grade;          /* design grade of the target line, fall towards the void (rise/run) */
  double *target;        /* n heights, owned */
  /* Cut zone, found again before every push: from the highwall to the
   * current dump edge (sought from the highwall toe, or from the pivot for a
   * slice pushed through the pivot: layers and the last straight slice, flat
   * at the pivot level beyond it), but never onto ground that stood above
   * the pivot level before dozing (the previous spoil).  Fill that earlier
   * pushes left above the target inside it is cut again (rehandle). */
  gboolean through_pivot;
  guint i_from;          /* highwall toe cell: edges are sought from here */
  guint i_pivot;
  guint i_bound;         /* first cell past the pivot whose original ground stands above it */
  /* planned on the design sequence, per lane (loose m3) */
  double cut_lcm, fill_lcm;
  double cut_cx_m, cut_cz_m, fill_cx_m, fill_cz_m;
  double push_distance_m; /* centroid of cut to centroid of fill */
  double push_grade;      /* (fill cz - cut cz) / push distance */
} SfSlice;

typedef struct {
  GPtrArray *slices;     /* SfSlice *, owned */
  guint n;               /* cells */
  double lane_width_m;
  double dozable_lcm;    /* above the final target inside the cut zones, per lane */
  double key_lcm;        /* material left under a lifted pivot's ramp, per lane */
} SfSlicePlan;

SfSlicePlan *sf_slice_plan_new (const SfBlockSection *bs, const SfDesign *d, double lane_width_m,
                                GError **error);
void sf_slice_plan_free (SfSlicePlan *plan);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfSlicePlan, sf_slice_plan_free)

/* Last cell the slice may cut on the current lane z (see SfSlice). */
guint sf_slice_limit (const SfSlice *s, const double *z, guint n, double dx_m);

/* Cut-zone end: one past the last cell at or before `limit` that stands more
 * than tol above the target; 0 when none does. */
guint sf_slice_cut_end (const SfSlice *s, const double *z, guint limit, double tol_m);

/* The final design inside the dozing zone, cell by cell (+inf outside the
 * zone, i.e. past `lim0`, the tip-over limit at the start). */
void sf_slice_plan_final (const SfSlicePlan *plan, guint lim0, double *final, guint n);
/* The end of the dozing zone on a lane before any work: the tip-over limit. */
guint sf_slice_plan_zone_end (const SfSlicePlan *plan, const SfLane *lane);

/* Volume accounting of a lane between two states z0 -> z1 against the final
 * design (loose m3).  With Z the zone cells and O the rest:
 *   planned = sum_Z max(0, z0 - final), left = sum_Z max(0, z1 - final),
 *   dropped = sum_Z [min(z1, final) - min(z0, final)]  (left in the zone's
 *             footprint below the design: drops, spill, fill of low spots),
 *   moved   = sum_O (z1 - z0)                          (carried out of the zone).
 * Because every push conserves volume, planned = moved + dropped + left. */
typedef struct {
  double planned_lcm, moved_lcm, dropped_lcm, left_lcm;
} SfLaneAccount;
void sf_lane_account (const double *z0, const double *z1, const double *final, guint n,
                      double cell_m3, SfLaneAccount *acc);

/* A lane being worked slice by slice, one push at a time (the fleet
 * simulation drives it push by push; sf_lane_work runs it to the end). */
typedef enum {
  SF_STEP_PUSHED = 0,    /* a push was made (it may also have ended the lane: see slice) */
  SF_STEP_SLICE_DONE,    /* no push: the slice ended (end_reason), the next one starts */
  SF_STEP_LANE_DONE,     /* no push: the lane is finished */
} SfStepKind;

typedef struct {
  const SfSlicePlan *plan; /* borrowed */
  SfLane *lane;            /* borrowed */
  guint slice;             /* current slice; plan->slices->len when finished */
  guint pushes_in_slice;
  double best_left;        /* watchdog */
  guint since_best;
  const char *end_reason;  /* why the last slice ended (static string) */
} SfLaneCursor;

void sf_lane_cursor_init (SfLaneCursor *c, const SfSlicePlan *plan, SfLane *lane);
SfStepKind sf_lane_cursor_step (SfLaneCursor *c, const SfPushMachine *pm, SfPushResult *pr);

/* Works one lane through every slice of the plan with one machine.  Appends
 * one SfSliceResult per slice to `out` (GArray of SfSliceResult) and fills
 * the totals.  Pushes are made until each slice holds less than the
 * completion threshold (a quarter of a blade load) or a push stalls; the
 * reason is recorded.  `push_cb`, when not NULL, sees every push. */
typedef void (*SfPushObserver) (const SfPushResult *r, guint slice, gpointer user_data);

void sf_lane_work (const SfPushMachine *pm, SfLane *lane, const SfSlicePlan *plan,
                   const SfFactors *factors, double swell, GArray *out, SfLaneTotals *totals,
                   SfPushObserver push_cb, gpointer user_data);

G_END_DECLS
