/* SPDX-License-Identifier: MIT
 *
 * sf-geom.h — plane geometry of a strip cross-section (internal to sim/).
 *
 * Owns: polylines and polygons in the (x, z) section plane (areas and
 * centroids by the shoelace formula, self-intersection tests, evaluation of
 * x-monotone strings), and the 1-D height profile a lane carries across the
 * strip, with the two operations that change loose material on it at the
 * angle of repose: local relaxation and direct construction of a dump face.
 *
 * Conventions: x across the strip, + in the push direction (towards the
 * void); z up.  A profile is a run of n equal cells; cell i covers
 * [x0 + i dx, x0 + (i+1) dx] and z[i] is the mean height over the cell, so
 * the cross-section area of the material above a level L is sum (z[i]-L) dx
 * exactly.  Slopes are taken between neighbouring cell centres.
 *
 * No function here allocates except sf_profile_new / sf_profile_copy; the
 * caller frees those with sf_profile_free.  No clock, no randomness, no I/O.
 */
#pragma once

#include <glib.h>
#include "sf-scenario.h"

G_BEGIN_DECLS

/* ---- polylines and polygons ------------------------------------------- */

/* Signed area of the closed polygon p[0..n-1] (shoelace), + when the
 * vertices run counter-clockwise.  n < 3 gives 0. */
double sf_poly_area (const SfPoint *p, gsize n);

/* Area (signed, as above) and centroid of the closed polygon.  Returns FALSE
 * (centroid untouched) when the area is zero. */
gboolean sf_poly_centroid (const SfPoint *p, gsize n, SfPoint *centroid, double *area);

/* TRUE when two non-adjacent segments of the open polyline p[0..n-1] cross or
 * touch, or when a segment doubles back along its neighbour; *seg_a and
 * *seg_b (may be NULL) receive the first offending pair (smallest *seg_a,
 * then smallest *seg_b; *seg_a < *seg_b).  Exact predicates. */
gboolean sf_polyline_self_intersects (const SfPoint *p, gsize n, gsize *seg_a, gsize *seg_b);

/* The same for the closed polygon (the closing segment n-1 -> 0 included). */
gboolean sf_polygon_self_intersects (const SfPoint *p, gsize n, gsize *seg_a, gsize *seg_b);

/* z at x on an x-monotone polyline (x strictly increasing), linear between
 * vertices, held constant beyond either end (n = 0 gives 0). */
double sf_polyline_eval (const SfPoint *p, gsize n, double x);

/* Exact integral of that polyline over [xa, xb] (xa < xb), constant
 * extension beyond the ends. */
double sf_polyline_integral (const SfPoint *p, gsize n, double xa, double xb);

/* ---- profiles ---------------------------------------------------------- */

typedef struct {
  double x0_m;   /* left edge of cell 0 */
  double dx_m;   /* cell width */
  guint n;       /* number of cells */
  double *z;     /* n mean heights, owned */
} SfProfile;

SfProfile *sf_profile_new (double x0_m, double dx_m, guint n);
SfProfile *sf_profile_copy (const SfProfile *p);
void sf_profile_free (SfProfile *p);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfProfile, sf_profile_free)

/* Centre of cell i. */
static inline double
sf_profile_x (const SfProfile *p, guint i)
{
  return p->x0_m + (i + 0.5) * p->dx_m;
}

/* Index of the cell holding x, clamped to [0, n-1]. */
guint sf_profile_cell (const SfProfile *p, double x);

/* Sets every z[i] to the mean of the x-monotone polyline over cell i. */
void sf_profile_sample_polyline (SfProfile *prof, const SfPoint *p, gsize n);

/* Area (m2 of section) of the region where upper > lower over cells
 * [i0, i1) of two height arrays with cell width dx: sum max(0, u-l) dx.
 * When cx / cz are not NULL they receive the centroid of that region
 * (cells taken as rectangles); both are left untouched if the area is 0. */
double sf_heights_area_between (const double *upper, const double *lower, guint i0, guint i1,
                                double x0_m, double dx_m, double *cx, double *cz);

/* ---- loose material at the angle of repose ---------------------------- */

/* Relaxes loose material so that no slope between neighbouring cells exceeds
 * tan_repose (within tol_m of height difference), moving material downhill
 * only, never below base[] (the non-erodible ground: in-situ rock, coal; NULL
 * means everything is loose).  Only the window [i0, i1) that was disturbed is
 * examined at first; the window grows as material moves.  The total of z is
 * conserved to rounding.  tol_m below 1e-9 m is taken as 1e-9 m.  Returns the
 * number of pair adjustments (a pair adjusted twice counts twice; 0 means
 * nothing moved).  *touched_lo / *touched_hi (may be NULL) receive the
 * changed range [lo, hi) (empty, lo = hi, when nothing moved). */
guint sf_heights_relax (double *z, const double *base, guint n, double dx_m, double tan_repose,
                        guint i0, guint i1, double tol_m, guint *touched_lo, guint *touched_hi);

/* The same with a budget: stops after max_moves pair adjustments, leaving z
 * mass-conserving but not yet settled, and says so in *settled (may be
 * NULL).  The cost of settling grows with the square of the length of
 * over-steep ground in cells (each move evens one pair, and an excess spreads
 * like heat), so a long stretch far steeper than repose at fine cells can
 * take hours; callers that settle whole sections bound it with this.  Below
 * the budget the result is exactly that of sf_heights_relax(). */
guint64 sf_heights_relax_max (double *z, const double *base, guint n, double dx_m,
                              double tan_repose, guint i0, guint i1, double tol_m,
                              guint64 max_moves, guint *touched_lo, guint *touched_hi,
                              gboolean *settled);

/* Deposits `area_m2` of section area at a dump front: the material leaves the
 * blade at cell i_crest at level z_top_m and runs down ahead of it, so the new
 * surface beyond the crest is max(z_old, min(z_top, z_top - (x - x_f) tan))
 * (x at cell centres) for a front position x_f chosen so that exactly area_m2
 * is added (the pile is built at the angle of repose directly, no iteration
 * over the whole profile).  Cell i_crest is raised to z_top first if it is
 * lower.  The face runs from the crest to its toe, the first cell whose old
 * surface is at or above the face line; cells beyond the toe keep their
 * surface (the face does not reach behind ground that stands in its way), so
 * only cells i_crest .. *i_front change and the cost follows them.  A cell at
 * or above z_top stops the face for good.  When the face just tops a rise and
 * the rest of the area is less than the dip behind it would take under the
 * line, that dip is filled part way, in proportion.  Returns the area that did
 * not fit before the end of the profile or a cell at or above z_top (0 when
 * all fitted; area_m2 <= 0 changes nothing).  *i_front receives the last
 * cell changed (i_crest when none beyond it). */
double sf_heights_deposit_face (double *z, guint n, double x0_m, double dx_m, guint i_crest,
                                double z_top_m, double tan_repose, double area_m2, guint *i_front);

/* Like sf_heights_deposit_face, but the pile's top follows a cap (n
 * heights, e.g. a slice's sloping target line) instead of the flat level
 * z_top: new z = max(old, min(cap, z_top, z_top - (x - x_f) tan)).  The
 * material reaches cells from the crest up to the first one standing at or
 * above min(cap, z_top).  Returns the area that did not fit. */
double sf_heights_deposit_capped (double *z, const double *cap, guint n, double x0_m, double dx_m,
                                  guint i_crest, double z_top_m, double tan_repose, double area_m2,
                                  guint *i_front);

/* Collapses a face of loose material steeper than the angle of repose in
 * one step: the face whose low side starts at cell `toe` and whose high side
 * lies at smaller indices (dir = +1) or larger ones (dir = -1) becomes a line
 * at the angle of repose, placed so that what it takes from the high side
 * (never below base, which may be NULL) equals what it adds on the low side.
 * The cost follows the face's extent, not the profile's.  Used for the cut
 * faces a push leaves; returns FALSE (nothing changed) when the face is not
 * steeper than the angle of repose. */
gboolean sf_heights_collapse_face (double *z, const double *base, guint n, double dx_m,
                                   double tan_repose, guint toe, int dir);

/* Largest |z[i+1]-z[i]| / dx over cells where the higher cell holds loose
 * material (z > base + tol; base may be NULL). */
double sf_heights_max_loose_slope (const double *z, const double *base, guint n, double dx_m,
                                   double tol_m);

G_END_DECLS
