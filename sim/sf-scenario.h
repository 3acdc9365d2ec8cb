/* SPDX-License-Identifier: MIT
 *
 * sf-scenario.h — the typed, immutable scenario (internal to sim/).
 *
 * Owns: the plain C description of one planning case after it has been read
 * and checked: the strip, the cross-sections as given, material, dozer
 * classes, the fleet, the push design and the production correction factors.
 *
 * The loader (sf-scenario.c) is the only code that sees JSON or CSV text; it
 * builds an SfScenario and nothing downstream ever parses anything.  Every
 * number is in the unit named by its field suffix (SI-metric: m, t, kW, km/h,
 * min, degrees, fractions).  An SfScenario is immutable once loaded: modules
 * take `const SfScenario *` and never write into it.
 *
 * Memory: sf_scenario_free() frees the scenario and everything it points to
 * (strings, GArrays).  Nothing else owns any part of it.
 */
#pragma once

#include <glib.h>
#include "stripfleet.h"

G_BEGIN_DECLS

#define SF_MAX_GEARS 6
/* Hard limits that protect memory; the loader refuses anything beyond them
 * and names the limit in its message. */
#define SF_MAX_BLOCKS 2000
#define SF_MAX_LANES_PER_BLOCK 200
#define SF_MAX_CELLS 20000
#define SF_MAX_SECTION_POINTS 100000
#define SF_MAX_CLASSES 64
#define SF_MAX_DOZERS 500
#define SF_MAX_LAYERS 100

typedef struct {
  double x_m; /* across the strip, + towards the void (push direction) */
  double z_m; /* elevation, + up; 0 is the natural surface before mining */
} SfPoint;

typedef enum {
  SF_BLADE_STRAIGHT = 0,
  SF_BLADE_SEMI_U,
  SF_BLADE_U,
  SF_BLADE_CARRY,
} SfBladeType;

/* A random duration or interval.  Parameters are in the unit of the field
 * that holds the distribution (hours or minutes, named there). */
typedef enum {
  SF_DIST_FIXED = 0,            /* always `mean` */
  SF_DIST_EXPONENTIAL,          /* mean */
  SF_DIST_WEIBULL,              /* shape k, scale lambda: mean = lambda Gamma(1 + 1/k) */
  SF_DIST_LOGNORMAL,            /* mean and sd of the variable itself (not of its log) */
} SfDistKind;

typedef struct {
  SfDistKind kind;
  double mean;                  /* FIXED, EXPONENTIAL, LOGNORMAL */
  double sd;                    /* LOGNORMAL */
  double shape, scale;          /* WEIBULL */
} SfDist;

/* Breakdowns and maintenance of one dozer class (docs/model.md §8). */
typedef struct {
  gboolean failures;            /* FALSE: the class never breaks down */
  SfDist tbf_h;                 /* engine hours between failures */
  SfDist ttr_h;                 /* hours a fitter works on a repair */
  double service_interval_h;    /* engine hours between planned services; 0 = none */
  double service_h;             /* hours of a planned service */
  double refuel_min;            /* refuelling once a shift; 0 = none */
} SfReliability;

typedef struct {
  char *name;
  double operating_mass_t;      /* machine with blade, operating */
  double net_power_kw;          /* flywheel net power */
  double drivetrain_efficiency; /* net power -> drawbar power, 0..1 */
  SfBladeType blade_type;
  double blade_width_m;         /* W, outside to outside, excluding end bits */
  double blade_height_m;        /* effective height H = A / W */
  double blade_rated_lcm;       /* rated capacity (loose m3); for a straight
                                   blade the loader fills 0.8 W H^2 when absent */
  double carry_share;           /* share of the load weight borne by the blade
                                   (carry-type blades), 0..0.6; 0 otherwise */
  double fwd_kmh[SF_MAX_GEARS]; /* top speed in each forward gear, ascending */
  guint n_fwd;
  double rev_kmh[SF_MAX_GEARS]; /* top speed in each reverse gear, ascending */
  guint n_rev;
  guint push_gear;              /* 1-based forward gear used to load and push */
  guint return_gear;            /* 1-based reverse gear used to return */
  double fixed_time_min;        /* manoeuvre and gear-change time per cycle */
  double traction_coefficient;  /* track-ground coefficient of traction */
  double cost_per_operating_h;  /* owning and operating cost, currency/h; 0 = not given */
  SfReliability reliability;
} SfDozerClass;

typedef struct {
  double bank_density_t_per_bcm;
  double swell;                 /* lcm = bcm * (1 + swell) */
  double repose_deg;            /* angle of repose of the loose material */
  double soil_friction;         /* soil-on-soil friction coefficient, tan(phi) */
  double steel_friction;        /* soil-on-steel friction coefficient, tan(delta) */
  double cutting_resistance_kpa;/* specific cutting resistance k: F = k b h */
  double blade_fill_factor;     /* actual/rated blade load in this material */
} SfMaterial;

/* Parameters of a generated cross-section (see docs/model.md §2). */
typedef struct {
  double overburden_m;          /* natural surface to coal roof at the highwall toe */
  double strip_width_m;         /* width of coal uncovered by one strip */
  double coal_thickness_m;
  double dip_deg;               /* coal dip across the strip, + deepening towards the void */
  double highwall_deg;          /* highwall face angle from horizontal */
  double cast_fraction;         /* share of the overburden the blast throws into the void */
  double muckpile_grade_pct;    /* grade of the blasted muckpile top, falling towards the void */
  double prev_spoil_height_m;   /* height of the previous spoil ridge above natural surface */
} SfSectionParams;

typedef enum {
  SF_SECTION_GENERATED = 0,
  SF_SECTION_STRINGS,
} SfSectionKind;

/* One cross-section as given in the scenario, for one block.  Blocks without
 * a section of their own are interpolated between the nearest given ones. */
typedef struct {
  guint block;                  /* 0-based block index */
  SfSectionKind kind;
  SfSectionParams params;       /* when GENERATED */
  GArray *surface;              /* SfPoint, x strictly increasing; when STRINGS */
  GArray *coal_roof;            /* SfPoint, x strictly increasing; when STRINGS */
  double highwall_toe_x_m;      /* x of the highwall toe on the coal roof; when STRINGS */
  double low_wall_edge_x_m;     /* x of the far edge of this strip's coal; when STRINGS */
  double coal_thickness_m;      /* STRINGS: the seam's thickness if given, else 0 (then taken
                                   from the nearest given sections along strike) */
  char *source;                 /* "file.json:sections[3]" or CSV path, for messages */
} SfSectionSpec;

typedef struct {
  double length_m;              /* along strike */
  guint n_blocks;
  double lane_width_m;          /* one dozer slot */
  double cell_m;                /* profile cell size across the strip */
  double x_min_m, x_max_m;      /* extent of every profile across the strip */
} SfStrip;

typedef enum {
  SF_PIVOT_STANDARD = 0,
  SF_PIVOT_LIFTED,
} SfPivotKind;

typedef enum {
  SF_SLICES_TIPOVER_LAYERS = 0, /* tip-over slice, then layers through the pivot */
  SF_SLICES_STRAIGHT,           /* straight-line slices from cut to fill */
} SfSliceStrategy;

typedef struct {
  double dozer_floor_above_coal_m; /* level the dozers cut down to, above coal roof */
  double spoil_toe_offset_m;       /* final spoil toe, beyond the low-wall coal edge */
  SfPivotKind pivot;
  double pivot_lift_m;             /* LIFTED only */
  double lift_ramp_grade_pct;      /* LIFTED only: uphill grade of the last push to the lifted crest */
  SfSliceStrategy strategy;
  double cutoff_grade_pct;         /* tip-over slice: cut down to this grade (default 20) */
  guint layer_count;               /* layered slices after the tip-over slice */
  guint straight_count;            /* straight-push slices */
  double min_push_grade_pct;       /* straight push: flattest grade of a straight slice */
  gboolean slot_dozing;            /* windrows kept between lanes */
  gboolean side_by_side;           /* two blades pushing together */
  double spill_per_m;              /* open-blade side spill, fraction of load per metre */
  double slot_spill_factor;        /* spill multiplier in a slot */
  double side_by_side_spill_factor;/* spill multiplier blade to blade */
  double load_distance_m;          /* nominal cut length to fill the blade */
} SfDesign;

/* Named production multipliers (docs/model.md §6 gives defaults and sources). */
typedef struct {
  double operator_skill;
  double job_efficiency;
  double visibility;
  double material;
} SfFactors;

typedef struct {
  guint class_index;            /* into SfScenario.classes */
  guint count;
} SfFleetEntry;

/* ---- time: calendar, roster, blasts (docs/model.md §7) -------------------- */

#define SF_MAX_SHIFTS 4
#define SF_MAX_CREWS 12
#define SF_MAX_PATTERN_DAYS 366
#define SF_NO_CREW 255

typedef struct {
  char *name;
  guint start_min;              /* minutes after local midnight */
  double hours;                 /* length; the shifts of a day tile 24 h exactly */
  gboolean night;               /* the night-shift factor applies */
} SfShift;

typedef struct {
  char *name;
  guint operators;              /* dozers beyond this stand unmanned on the crew's shifts */
  double skill;                 /* production multiplier of the crew, (0, 1.5] */
} SfCrew;

typedef struct {
  guint n_shifts;
  SfShift shifts[SF_MAX_SHIFTS];   /* in order of start time within the day */
  guint n_crews;
  SfCrew crews[SF_MAX_CREWS];
  guint pattern_days;              /* length of the repeating pattern, days */
  guint8 *pattern;                 /* pattern_days x n_shifts crew indices, SF_NO_CREW = nobody */
  double shift_change_min;         /* lost at the start of every shift */
  double meal_min;                 /* one meal break a shift ... */
  double meal_after_h;             /* ... starting this long after the shift starts */
  gboolean hot_seat;               /* relief operators: no machine stops for meals */
  double night_factor;             /* production multiplier on night shifts */
  double wet_day_probability;      /* chance that a day has a wet-weather stop */
  SfDist wet_stop_h;               /* length of a wet-weather stop, hours */
} SfRoster;

typedef enum {
  SF_DISPATCH_FINISH_BLOCK = 0,    /* fill the lowest open block first */
  SF_DISPATCH_SPREAD,              /* send each dozer to the open block with fewest dozers */
} SfDispatch;

typedef struct {
  GDateTime *start;                /* run start, local time with offset; owned (unref) */
  guint64 seed;
  double horizon_days;             /* watchdog on simulated time */
  SfDispatch dispatch;
  guint min_separation_lanes;      /* free lanes kept between dozers in one block */
  guint max_slice_lead;            /* neighbouring lanes may differ by at most this many slices */
  double tram_speed_kmh;
  guint fitters;                   /* maintenance crew: repairs at once */
  double *blast_h;                 /* per block: hours after start when it becomes workable */
} SfSimulation;

struct _SfScenario {
  char *path;                   /* file it was read from, for messages */
  char *name;
  char *description;
  SfStrip strip;
  GPtrArray *sections;          /* SfSectionSpec *, owned, sorted by block */
  SfMaterial material;
  GPtrArray *classes;           /* SfDozerClass *, owned */
  GArray *fleet;                /* SfFleetEntry */
  SfDesign design;
  SfFactors factors;
  double coal_density_t_per_m3; /* 0 = not given */
  SfRoster roster;              /* default: one crew, one 24 h shift, enough operators, no stops */
  SfSimulation sim;             /* default: see sf_simulation_defaults */
};

void sf_roster_defaults (SfRoster *r, guint n_dozers);
void sf_simulation_defaults (SfSimulation *s, guint n_blocks);
void sf_roster_clear (SfRoster *r);
void sf_simulation_clear (SfSimulation *s);

/* Defaults used by the loader and by tests that build scenarios in code. */
void sf_material_defaults (SfMaterial *m);
void sf_design_defaults (SfDesign *d);
void sf_factors_defaults (SfFactors *f);

/* Blade capacity of a class in loose m3 (rated; before fill factor). */
double sf_dozer_class_rated_lcm (const SfDozerClass *c);

void sf_dozer_class_free (SfDozerClass *c);
void sf_section_spec_free (SfSectionSpec *s);

G_END_DECLS
