/* SPDX-License-Identifier: MIT
 *
 * sf-section.h — the cross-section of one block and its push design
 * (internal to sim/).
 *
 * Owns: turning the sections of a scenario into one sampled cross-section
 * per block (generated from parameters, or from surveyed strings,
 * interpolated between the blocks that have one), and laying out the design
 * on it: the non-erodible base, the coal roof, the dozer floor, the standard
 * pivot and, when asked, the lifted pivot with its ramp.
 *
 * A block section is built once per block and is immutable afterwards; the
 * lanes of the block copy its surface and share its base.  The caller frees
 * it with sf_block_section_free().
 */
#pragma once

#include <glib.h>
#include "sf-geom.h"
#include "sf-scenario.h"

G_BEGIN_DECLS

typedef struct {
  guint block;
  guint n;              /* cells */
  double x0_m, dx_m;    /* profile grid (shared by every block of the strip) */
  double *surface;      /* post-blast ground, n */
  double *base;         /* non-erodible ground under the loose material, n */
  double *coal_roof;    /* n */
  double *floor;        /* design dozer floor (with the lifted-pivot ramp), n */
  double x_highwall_toe_m, x_low_wall_edge_m;
  double x_pivot_m, z_pivot_m;         /* pivot in use (standard or lifted) */
  double x_pivot_std_m, z_pivot_std_m; /* standard pivot */
  guint i_pivot;        /* cell holding the pivot in use */
  double tan_repose;
  /* bank and loose section areas of the original overburden block, m2
   * (generated sections only; 0 for strings). */
  double bank_area_m2, cast_area_m2;
  double coal_thickness_m;   /* seam thickness; 0 when no given section has one */
} SfBlockSection;

/* Builds the section of `block` (0-based).  Interpolates linearly between the
 * nearest given sections (heights cell by cell, pivot-defining x positions
 * linearly).  Fails with SF_MODEL_ERROR_GEOMETRY and a message naming the
 * block when the design cannot be laid out (no pivot, floor above the
 * surface everywhere, cast too large for the void ...). */
SfBlockSection *sf_block_section_new (const SfScenario *sc, guint block, GError **error);
void sf_block_section_free (SfBlockSection *bs);

/* The given sections of a scenario sampled once on the profile grid, so that
 * building many blocks does not generate the same section again. */
typedef struct _SfSectionSet SfSectionSet;
SfSectionSet *sf_section_set_new (const SfScenario *sc, GError **error);
void sf_section_set_free (SfSectionSet *set);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfSectionSet, sf_section_set_free)
SfBlockSection *sf_block_section_new_from_set (const SfSectionSet *set, const SfScenario *sc,
                                               guint block, GError **error);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfBlockSection, sf_block_section_free)

/* The final spoil line of the standard design at x: through the low-wall toe
 * (low-wall edge + toe offset, on the coal roof) and the standard pivot,
 * rising away from the highwall at the angle of repose.  Dozed spoil above
 * it (on its highwall side) lies in the next fleet's digging and is counted
 * as rehandle. */
double sf_block_section_spoil_line (const SfBlockSection *bs, double x);

/* Generates the post-blast surface, base and coal roof of a parametric
 * section on the grid (x0, dx, n).  Exposed for tests.  Fills the x of the
 * highwall toe and low-wall edge. */
gboolean sf_section_generate (const SfSectionParams *p, const SfMaterial *m, double x0_m,
                              double dx_m, guint n, double *surface, double *base,
                              double *coal_roof, double *x_toe_m, double *x_edge_m,
                              double *bank_area_m2, double *cast_area_m2, GError **error);

G_END_DECLS
