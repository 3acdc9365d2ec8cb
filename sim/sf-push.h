/* SPDX-License-Identifier: MIT
 *
 * sf-push.h — push physics: one dozer, one push cycle on one lane profile
 * (internal to sim/).
 *
 * Owns: the machine-and-material constants of a push (SfPushMachine), the
 * force balance that limits the blade load at every point of a push, the
 * speed from the drawbar-pull/speed relation, and one push cycle on a lane:
 * load (cut down to the slice target), carry (dropping what traction cannot
 * hold, spilling to the sides), dump at the crest (material runs down at the
 * angle of repose), return.  Also the handbook cycle-time and
 * production-factor method used as a cross-check.
 *
 * Pure computation: no clock, no randomness, no I/O.  A lane (SfLane) owns
 * its arrays and is freed with sf_lane_free(); its base pointer is borrowed
 * from the block section that created it.  Equations and sources:
 * docs/model.md §3-§6.
 */
#pragma once

#include <glib.h>
#include "sf-scenario.h"

G_BEGIN_DECLS

/* Constants of one dozer class working one material under one design, in SI
 * units (N, kg, m, s, W). */
typedef struct {
  double mass_kg;
  double weight_n;           /* M g */
  double drawbar_power_w;    /* net power x drivetrain efficiency */
  double mu_traction;
  double blade_lcm;          /* rated capacity x blade fill factor: the volume limit */
  double blade_width_m;
  double carry_share;        /* share of the load weight borne by the blade */
  double rho_loose_kg_m3;
  double mu_soil;            /* load sliding on the ground */
  double mu_steel;           /* load sliding up the blade face */
  double lift_factor;        /* cos^2 of the blade cutting angle */
  double k_cut_pa;           /* specific cutting resistance */
  double v_push_ms;          /* top speed of the push gear */
  double v_work_ms;          /* lowest working speed (power limit applies here) */
  double v_return_ms;        /* top speed of the return gear */
  double return_resistance;  /* rolling allowance on the return, fraction of weight */
  double fixed_time_s;
  double spill_per_m;        /* side spill, fraction of the load per metre carried */
  double load_distance_m;    /* nominal cut length to fill the blade */
  double max_drive_grade;    /* steeper downgrade ahead = dump edge */
} SfPushMachine;

void sf_push_machine_init (SfPushMachine *pm, const SfDozerClass *c, const SfMaterial *m,
                           const SfDesign *d);

typedef enum {
  SF_LIMIT_VOLUME = 0,   /* blade full */
  SF_LIMIT_TRACTION,     /* tracks slip first */
  SF_LIMIT_POWER,        /* engine lugs below the working speed first */
} SfLoadLimit;

/* Largest load (kg) the machine can keep moving at `grade` (rise over run,
 * + uphill in the direction of travel) while cutting a layer `cut_depth_m`
 * deep (0 when only carrying).  Force balance, docs/model.md §4:
 *   needed    F = G[(1-c) mu_s cos t + mu_b k + sin t] + M g sin t + k_c b h
 *   available F = min(mu_t (M g + c G) cos t, eta P / v_work)
 * Returns G_max / g, or +inf when the grade carries any load; *limit (may be
 * NULL) tells which side of the balance binds. */
double sf_push_max_load_kg (const SfPushMachine *pm, double grade, double cut_depth_m,
                            SfLoadLimit *limit);

/* The same as a loose volume, capped by the blade (m3 loose). */
double sf_push_max_load_lcm (const SfPushMachine *pm, double grade, double cut_depth_m,
                             SfLoadLimit *limit);

/* Force needed to move a load of load_kg at grade while cutting (N). */
double sf_push_force_needed_n (const SfPushMachine *pm, double load_kg, double grade,
                               double cut_depth_m);

/* Speed at a drawbar force (m/s): power-limited eta P / F, capped by the top
 * speed of the gear. */
double sf_push_speed_ms (const SfPushMachine *pm, double force_n, double gear_top_ms);

/* ---- lanes ---------------------------------------------------------------- */

typedef struct {
  guint n;
  double x0_m, dx_m, width_m;
  double *z;             /* current surface, owned */
  const double *base;    /* non-erodible ground, borrowed from the block section */
  double *dumped;        /* thickness of dumped fill on each cell (for rehandle), owned */
  double *scratch;       /* n doubles of working space, owned */
  double *undo_z, *undo_dumped; /* n doubles each: the lane before a push, owned */
  double tan_repose;
  const double *spoil_line; /* final spoil line of the standard design, n heights, borrowed;
                               NULL = not counted.  Dump fill above it lies on the highwall
                               side of the line, in the next fleet's digging (dragline
                               rehandle). */
} SfLane;

SfLane *sf_lane_new (const double *surface, const double *base, guint n, double x0_m,
                     double dx_m, double width_m, double tan_repose);
void sf_lane_free (SfLane *lane);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfLane, sf_lane_free)

/* Loose volume (m3) of the lane above `level` (per cell) over [i0, i1). */
double sf_lane_volume_above (const SfLane *lane, const double *level, guint i0, guint i1);

/* TRUE when the ground falls away ahead of cell i: over the next
 * SF_EDGE_RUN_M it drops faster than `grade` on average (a crest, not a
 * notch left by a cut). */
#define SF_EDGE_RUN_M 2.0
gboolean sf_heights_is_edge (const double *z, guint n, double dx_m, guint i, double grade);

/* ---- one push cycle ------------------------------------------------------ */

typedef enum {
  SF_PUSH_DONE = 0,      /* a push was made */
  SF_PUSH_NOTHING_LEFT,  /* the cut zone holds less than the completion threshold */
  SF_PUSH_STALLED,       /* the machine cannot cut or keep any load here */
  SF_PUSH_NO_ROOM,       /* the load would not fit beyond the dump edge: the push
                            is not made and the lane is left as it was */
} SfPushStatus;

typedef struct {
  /* volumes, loose m3 */
  double removed_lcm;    /* cut from the profile */
  double deposited_lcm;  /* left the blade at the dump front */
  double dropped_lcm;    /* left on the path where traction ran out */
  double spilled_lcm;    /* lost to the sides along the path */
  double rehandled_lcm;  /* part of removed that earlier pushes had dumped */
  double over_spoil_lcm; /* part of deposited lying above (highwall side of) the spoil line */
  double unplaced_lcm;   /* load that found no room beyond the dump edge (NO_ROOM) */
  double peak_load_lcm;
  /* distances, m */
  double x_start_m, x_cut_end_m, x_dump_m;
  double load_m, carry_m, return_m;
  double grade_mean;     /* mean grade over the loaded path (rise/run) */
  /* times, s */
  double t_fixed_s, t_load_s, t_carry_s, t_return_s, t_cycle_s;
} SfPushResult;

/* What one push works towards. */
typedef struct {
  const double *target;   /* n heights: the slice's target surface */
  guint i_cut_end;        /* the cut zone is cells [0, i_cut_end) ... */
  double tol_m;           /* ... standing more than tol_m above target */
  double min_volume_lcm;  /* completion threshold of the cut zone */
  gboolean dump_at_design;/* dump where the ground ahead falls below the target
                             (a pad built up to the target level, e.g. the pivot
                             level); otherwise at a crest steeper than drivable */
  gboolean fill_under_target; /* the fill's top follows the target beyond the crest (a
                                 sloping straight-push line); otherwise it is level */
} SfPushSpec;

/* Makes one push on `lane`.  The push starts far enough back from the front
 * of the cut zone to fill the blade, cuts to grade going forward, carries to
 * the dump edge and dumps; the dozer then reverses to the start point.
 * Conservation holds for every push:
 *   removed = deposited + dropped + spilled    (to rounding). */
SfPushStatus sf_push_cycle (const SfPushMachine *pm, SfLane *lane, const SfPushSpec *spec,
                            SfPushResult *res);

/* ---- the handbook method (cross-check) ------------------------------------ */

/* Textbook cycle time (min): fixed + D / v_forward + D / v_reverse, speeds in
 * km/h, D in m.  Peurifoy et al., Construction Planning, Equipment and
 * Methods, ch. "Dozers"; US Army FM 5-434 ch. 2. */
double sf_handbook_cycle_min (double fixed_min, double distance_m, double v_fwd_kmh,
                              double v_rev_kmh);

/* Loose production per hour: blade load (loose) x working minutes per hour /
 * cycle minutes. */
double sf_handbook_production_lcm_h (double blade_lcm, double cycle_min, double minutes_per_h);

/* Product of the named correction factors. */
double sf_factors_product (const SfFactors *f);

G_END_DECLS
