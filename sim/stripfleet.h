/* SPDX-License-Identifier: MIT
 *
 * stripfleet.h — the public interface of the stripfleet library.
 *
 * The command-line program and the viewer use only what is declared here.
 * Opaque handles are created with *_new / *_load_* and freed with *_free;
 * functions named *_get_* return borrowed data that lives as long as the
 * handle; plain result records (SfSliceInfo, SfSliceResult, ...) are owned by
 * the caller's arrays.  Failures that the caller can recover from come back
 * as GError in one of the domains below; programming errors are caught with
 * g_return_val_if_fail.
 */
#pragma once

#include <signal.h>
#include <glib.h>

G_BEGIN_DECLS

#define SF_VERSION "0.1.0"

/* Process exit codes shared by every client (documented in docs/cli.md). */
enum {
  SF_EXIT_OK = 0,
  SF_EXIT_RUNTIME = 1,  /* a run failed: I/O, no progress, interrupted */
  SF_EXIT_USAGE = 2,    /* bad command line */
  SF_EXIT_INVALID = 3,  /* the scenario or a file it references is invalid */
};

/* ---- errors -------------------------------------------------------------- */

#define SF_SCENARIO_ERROR (sf_scenario_error_quark ())
GQuark sf_scenario_error_quark (void);

typedef enum {
  SF_SCENARIO_ERROR_IO,        /* cannot read a file */
  SF_SCENARIO_ERROR_SYNTAX,    /* not JSON / not CSV as expected */
  SF_SCENARIO_ERROR_INVALID,   /* a value is missing, of the wrong type, or out of range */
  SF_SCENARIO_ERROR_GEOMETRY,  /* sections that cannot be built */
} SfScenarioError;

#define SF_MODEL_ERROR (sf_model_error_quark ())
GQuark sf_model_error_quark (void);

typedef enum {
  SF_MODEL_ERROR_GEOMETRY,     /* a block's design cannot be laid out */
  SF_MODEL_ERROR_NO_PROGRESS,  /* a push or slice made no progress */
  SF_MODEL_ERROR_ARGUMENT,     /* block / lane / class index out of range */
  SF_MODEL_ERROR_INTERRUPTED,  /* a run was stopped through SfRunOptions.cancel */
} SfModelError;

/* ---- scenario ------------------------------------------------------------ */

typedef struct _SfScenario SfScenario;

/* Reads and checks a scenario file.  On failure returns NULL and sets one
 * error whose message lists every problem found, one per line, each naming
 * the file, the JSON path (or CSV line) and what was expected. */
SfScenario *sf_scenario_load_from_file (const char *path, GError **error);

/* The same from a JSON text in memory; `label` stands for the file name in
 * messages, `base_dir` resolves relative CSV paths (may be NULL: cwd). */
SfScenario *sf_scenario_load_from_data (const char *json, gsize len, const char *label,
                                        const char *base_dir, GError **error);

void sf_scenario_free (SfScenario *sc);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfScenario, sf_scenario_free)

const char *sf_scenario_get_name (const SfScenario *sc);
const char *sf_scenario_get_description (const SfScenario *sc);
guint sf_scenario_get_n_blocks (const SfScenario *sc);
guint sf_scenario_get_n_lanes (const SfScenario *sc); /* lanes in every block */
guint sf_scenario_get_n_classes (const SfScenario *sc);
const char *sf_scenario_get_class_name (const SfScenario *sc, guint class_index);
/* Crews of the roster (the default roster has one, "all"), in scenario order. */
guint sf_scenario_get_n_crews (const SfScenario *sc);
const char *sf_scenario_get_crew_name (const SfScenario *sc, guint crew_index);
/* Index of the class named `name`, or -1. */
int sf_scenario_find_class (const SfScenario *sc, const char *name);
/* Blade type of a class: "straight", "semi-u", "u" or "carry" (static). */
const char *sf_scenario_get_class_blade (const SfScenario *sc, guint class_index);

/* ---- block studies: slice plans and one lane pushed out -------------------- */

/* Overrides of the scenario's design for a study; -1 / negative = as given. */
typedef struct {
  int strategy;          /* 0 tip-over-layers, 1 straight-push, -1 as scenario */
  int pivot;             /* 0 standard, 1 lifted, -1 as scenario */
  double pivot_lift_m;   /* used when pivot = 1 and > 0 */
} SfStudyOptions;

#define SF_STUDY_OPTIONS_INIT { -1, -1, -1.0 }

/* One slice of a block's plan, per lane (volumes loose m3 and bank m3). */
typedef struct {
  guint index;
  const char *kind;      /* "tip-over", "layer", "straight"; static string */
  double target_grade_pct;
  double cut_lcm, cut_bcm, fill_lcm;
  double cut_centroid_x_m, fill_centroid_x_m;
  double push_distance_m;
  double push_grade_pct; /* + uphill in the push direction */
} SfSliceInfo;

/* One slice worked out on one lane by one machine. */
typedef struct {
  guint slice;
  const char *kind;
  guint pushes;
  double removed_lcm, deposited_lcm, dropped_lcm, spilled_lcm, rehandled_lcm;
  double over_spoil_lcm;    /* dumped on the highwall side of the standard final spoil line (dragline rehandle) */
  double moved_bcm;          /* deposited at the dump front, bank m3 */
  double operating_h;        /* sum of cycle times / production factors */
  double bcm_per_operating_h;
  double mean_load_lcm;      /* mean load at the dump */
  double mean_push_m;        /* mean distance from cut start to dump */
  double mean_cycle_min;
  const char *end_reason;    /* static string */
} SfSliceResult;

typedef struct {
  guint pushes;
  double planned_bcm;        /* above the final target in the cut zones at the start */
  double moved_bcm;          /* dumped at the dump front (gross, rehandle included) */
  double uncovered_bcm;      /* planned - left: net taken out of the dozing zone */
  double left_bcm;           /* still above the final design in the zone at the end */
  double rehandled_bcm;      /* dumped fill cut again by later pushes */
  double key_bcm;            /* left under a lifted pivot's ramp */
  double moved_out_bcm;      /* net carried out of the dozing zone */
  double dropped_in_zone_bcm;/* left in the zone's footprint below the design */
  double over_spoil_bcm;    /* dumped where the next fleet digs: dragline rehandle */
  double operating_h, bcm_per_operating_h;
  double lane_volume_error;  /* relative change of the lane's total loose volume */
} SfLaneTotals;

/* The slice plan of `block` (per lane); GArray of SfSliceInfo, caller frees. */
GArray *sf_study_slice_plan (const SfScenario *sc, guint block, const SfStudyOptions *opt,
                             GError **error);

/* The comparisons of `stripfleet compare` on lane 0 of one block. */
typedef struct {
  guint block;
  SfLaneTotals layers;      /* class_strategy, tip-over and layer slices */
  SfLaneTotals straight;    /* class_strategy, straight pushes */
  SfLaneTotals blade_a;     /* class_a, the scenario's slices */
  SfLaneTotals blade_b;     /* class_b, the scenario's slices */
  double straight_gain_gross_pct; /* bcm dumped per operating hour, straight over layers */
  double straight_gain_net_pct;   /* bcm uncovered per operating hour, straight over layers */
  double blade_gain_pct;          /* bcm dumped per operating hour, class_a over class_b */
} SfCompareResult;

/* Pushes lane 0 of `block` out four times — class_strategy with tip-over and
 * layer slices and with straight pushes, then class_a and class_b with the
 * scenario's slices — on one laid-out section, and fills *out.  The same
 * numbers as four sf_study_push_lane() calls. */
gboolean sf_study_compare (const SfScenario *sc, guint block, guint class_strategy,
                           guint class_a, guint class_b, SfCompareResult *out, GError **error);

/* ---- where dozing should stop: the hand-over study ----------------------- */

/* One slice of a block's plan, priced. */
typedef struct {
  guint slice;
  const char *kind;          /* static */
  double volume_bcm;         /* the slice's design volume (its cut in the plan) */
  double dozer_cost;         /* class cost per operating hour x the operating hours the lane
                                took on the slice; NAN when the lane never reached it */
  double over_spoil_bcm;     /* dozed spoil dumped over the final spoil line ... */
  double rehandle_cost;      /* ... and what the dragline charges to dig it again */
  double unit_cost_per_bcm;  /* (dozer_cost + rehandle_cost) / volume_bcm: the marginal cost;
                                INFINITY when not dozed */
  double total_if_stop_here; /* the lane's total cost when dozing stops before this slice and
                                the alternative takes this slice and the ones after it; NAN
                                past the last slice worked + 1 */
} SfHandoverSlice;

typedef struct {
  double dozer_cost_per_h;   /* the class's cost_per_operating_h */
  double alt_cost_per_bcm;   /* the cheaper alternative given */
  const char *alternative;   /* "dragline" or "truck-and-shovel"; static */
  guint n_slices;            /* of the plan */
  guint n_worked;            /* slices the lane worked, from the first (<= n_slices) */
  guint best_slices;         /* slices to doze for the least total cost (0 .. n_worked) */
  double best_total_cost;
  double all_dozed_cost;     /* every slice worked dozed, the rest by the alternative */
  double none_dozed_cost;    /* every slice left to the alternative */
  double volume_bcm;         /* all slices of the plan */
} SfHandoverTotals;

/* Prices lane `lane` of `block` worked slice by slice by one machine of
 * `class_index` (its cost_per_operating_h must be given) against leaving the
 * rest to a dragline (dragline_cost_per_bcm, also charged for dozed spoil
 * over the final spoil line) or a truck-and-shovel fleet
 * (truck_cost_per_bcm); a cost <= 0 means "not available", and at least one
 * must be given.  For k = 0 .. n slices dozed the lane's total cost is the
 * dozer and rehandle cost of slices 0 .. k-1 plus the alternative's cost of
 * the design volume of slices k .. n-1 (the plan's cut); the least is the
 * answer.  Returns a GArray of SfHandoverSlice, one per slice of the plan
 * (caller frees). */
GArray *sf_study_handover (const SfScenario *sc, guint block, guint lane, guint class_index,
                           const SfStudyOptions *opt, double dragline_cost_per_bcm,
                           double truck_cost_per_bcm, SfHandoverTotals *totals,
                           GError **error);

/* Lays out every block of the scenario as a run would (its section settled
 * at the angle of repose, its design and slice plan), building the given
 * sections once.  FALSE when any block cannot be laid out: one error whose
 * message has a line per such block, each naming it.  *n_bad (may be NULL)
 * receives the number of such blocks. */
gboolean sf_study_check_blocks (const SfScenario *sc, guint *n_bad, GError **error);

/* Pushes one lane of `block` to completion with one machine of class
 * `class_index`; returns a GArray of SfSliceResult (caller frees) and fills
 * *totals. */
GArray *sf_study_push_lane (const SfScenario *sc, guint block, guint lane, guint class_index,
                            const SfStudyOptions *opt, SfLaneTotals *totals, GError **error);

/* ---- fleet runs: several dozers working the strip through time ------------ */

/* Time-usage categories of a dozer; they add up to calendar time exactly. */
typedef enum {
  SF_USE_OPERATING = 0,  /* pushing (load, carry, dump, return) */
  SF_USE_WAIT_LANE,      /* work exists but no lane is free under the work-area rules */
  SF_USE_WAIT_BLAST,     /* every open block is done or taken; the next is not blasted yet */
  SF_USE_TRAMMING,       /* moving between lanes or blocks */
  SF_USE_BREAKDOWN,      /* under repair */
  SF_USE_WAIT_FITTER,    /* broken down, every fitter busy */
  SF_USE_SERVICE,        /* planned service */
  SF_USE_REFUEL,         /* refuelling */
  SF_USE_SHIFT_CHANGE,   /* operators changing over */
  SF_USE_MEAL,           /* meal break */
  SF_USE_UNMANNED,       /* no operator rostered for this machine */
  SF_USE_WEATHER,        /* wet-weather stop */
  SF_USE_IDLE_DONE,      /* no more work for this machine */
  SF_USE_N
} SfUse;

/* Key of a category in outputs ("operating", "wait_lane", ...); static. */
const char *sf_use_to_str (SfUse u);

typedef struct {
  const char *out_dir;      /* folder for the output files; NULL writes none */
  gboolean overwrite;       /* replace outputs that another scenario left in out_dir */
  gint64 seed;              /* < 0: the scenario's seed */
  int n_dozers;             /* <= 0: the scenario's fleet; else this many, classes taken in
                               fleet order and repeated; each crew's operators are scaled
                               with the fleet (ceil(operators x n_dozers / fleet size), at
                               most n_dozers) unless `operators` is set */
  gboolean progress;        /* a progress line on stderr when it is a terminal (with
                               replications: the number done) */
  gboolean no_randomness;   /* no breakdowns and no weather (what-if runs, tests) */
  gboolean constant_lanes;  /* test lanes: the ground is put back after every push, so every
                               push repeats the first (constant push distance) */
  int only_block;           /* >= 0: only this block is worked (tests) */
  int only_lane;            /* >= 0: only this lane of each block is worked (tests) */
  guint replication;        /* index of the replication: selects the random streams */
  const volatile sig_atomic_t *cancel; /* NULL, or a flag (set by a signal handler, say):
                               when it becomes non-zero the run stops within about a
                               thousand events and fails with SF_MODEL_ERROR_INTERRUPTED,
                               writing nothing (the previous outputs stay as they were) */
  gboolean charts;          /* also draw daily.png, usage.png and schedule.png into out_dir
                               (sf_chart_run_outputs), and spread.png with replications
                               (sf_chart_run_spread); a chart that cannot be drawn is a
                               notice, not a failure */
  int operators;            /* > 0: operators in every crew (dozers beyond stand unmanned);
                               <= 0: the scenario's, scaled with n_dozers */
} SfRunOptions;

#define SF_RUN_OPTIONS_INIT { NULL, FALSE, -1, 0, FALSE, FALSE, FALSE, -1, -1, 0, NULL, FALSE, 0 }

typedef struct {
  char *name;               /* "dz01", ... */
  char *class_name;
  guint pushes;
  guint failures;
  double moved_bcm;         /* dumped at the dump front (gross) */
  double engine_h;          /* operating + tramming: the hours failures and services count */
  double bcm_per_operating_h;
  double cost;              /* class cost per operating hour x (operating + tramming) hours */
  gint64 use_ms[SF_USE_N];  /* time usage, milliseconds; the sum is the calendar time */
} SfDozerResult;

typedef struct {
  gboolean complete;        /* every lane of every block worked out */
  char *end_reason;         /* "complete" or why the run stopped */
  char *start_iso, *end_iso;
  gint64 calendar_ms;       /* run start to end */
  double calendar_h;
  double planned_bcm;       /* above the final design in the dozing zones at the start */
  double moved_bcm;         /* carried out of the zones (net) */
  double dropped_bcm;       /* left in the zones' footprint below the design */
  double left_bcm;          /* still above the final design */
  double dumped_bcm, rehandled_bcm, over_spoil_bcm;
  double operating_h;       /* fleet */
  double bcm_per_operating_h, bcm_per_calendar_h; /* moved / hours */
  double strip_m_per_day;   /* strip length uncovered per calendar day */
  double coal_t_per_day;    /* 0 when coal density or thickness is unknown */
  double cost, cost_per_bcm;
  guint pushes;
  guint64 events;
  GArray *dozers;           /* SfDozerResult, owned */
  guint replication;        /* the replication's index (its random streams) */
  gboolean randomness;      /* breakdowns and weather were drawn (FALSE with no_randomness) */
  GArray *crew_operators;   /* guint per scenario crew: operators it manned in this run (the
                               scenario's, scaled with n_dozers, or SfRunOptions.operators);
                               owned */
  gboolean charts_drawn;    /* SfRunOptions.charts asked for and all three drawn */
  char *notice;             /* NULL, or lines for the user about the output folder (a chart
                               not drawn, entries of the earlier folder kept aside); owned */
} SfRunSummary;

void sf_run_summary_clear (SfRunSummary *s);

/* Runs the scenario once: every dozer of the fleet works the strip push by
 * push through simulated time, and fills *sum.  With opt->out_dir it writes
 * summary.json, schedule.csv, daily.csv and events.log (and the charts when
 * opt->charts) as one set: all into a private staging folder, which then
 * replaces the output folder in one step, keeping the user's own files in it
 * (docs/robustness.md) — a run killed at any moment leaves the previous
 * complete set or the new one.  Fails when the scenario cannot be laid out,
 * the output folder cannot be written or holds another scenario's outputs
 * (unless overwrite), or opt->cancel was set (SF_MODEL_ERROR_INTERRUPTED,
 * nothing written).  A run that stops short of the end (horizon, no
 * progress, event limit) succeeds with sum->complete FALSE and the reason in
 * sum->end_reason. */
gboolean sf_run (const SfScenario *sc, const SfRunOptions *opt, SfRunSummary *sum,
                 GError **error);

/* Runs replications 0 .. n-1 of the scenario (opt->replication is ignored)
 * on up to n_threads threads (GThreadPool) and fills sums[0 .. n-1] in
 * replication order.  The output set (opt->out_dir, committed as in sf_run
 * once every replication is done) holds replication 0's files and, for
 * n > 1, replications.csv with one row per replication; the notice goes to
 * sums[0].
 * Each replication draws from its own random streams, so the results do not
 * depend on the number of threads.  On failure returns FALSE with the first
 * error (in replication order); sums are then all cleared. */
gboolean sf_run_replications (const SfScenario *sc, const SfRunOptions *opt, guint n,
                              guint n_threads, SfRunSummary *sums, GError **error);

/* Spread of one measure over replications. */
typedef struct {
  double mean, sd, min, p10, p50, p90, max;
} SfSpread;

/* Mean, standard deviation (n-1), minimum, 10/50/90th percentiles (linear
 * between order statistics, Hyndman & Fan type 7) and maximum of x[0..n-1]. */
void sf_spread (const double *x, guint n, SfSpread *out);

/* ---- charts: the block studies and fleet runs as PNG pictures -------------- */

/* Draws the gains of `n` compare results (blocks in order) as a PNG: per
 * block the net gain of straight pushes and the gain of class_a over class_b
 * as bars, with the trade's rules of thumb as shaded bands (+10 to +15 %,
 * +20 to +25 %: common practice, no source).  Written atomically. */
/* Draws a hand-over study (sf_study_handover's rows and totals) as a PNG:
 * the cost per bcm of each slice against the alternative's, and the lane's
 * total cost against the number of slices dozed, the least marked.  Written
 * atomically. */
gboolean sf_study_chart_handover (const SfScenario *sc, guint block, guint lane,
                                  guint class_index, const SfHandoverSlice *rows,
                                  const SfHandoverTotals *totals, const char *png_path,
                                  GError **error);

gboolean sf_study_chart_compare (const SfScenario *sc, const SfCompareResult *rows, guint n,
                                 guint class_strategy, guint class_a, guint class_b,
                                 const char *png_path, GError **error);

/* Draws the cross-section of `block` under `opt` (may be NULL) with its
 * slice plan — post-blast surface, natural surface level, base, coal roof,
 * dozer floor, final spoil line, pivot, each slice's cut band and target in
 * its own colour, a push arrow from the slice's cut to its fill — as a PNG
 * written atomically to `png_path` (a temporary file beside it, renamed into
 * place).  Fails with the study's SF_MODEL_ERROR, or with a G_FILE_ERROR
 * naming png_path when it cannot be written; G_FILE_ERROR_NOSYS when the
 * library was built without cairo.  The image says that it is a planning
 * estimate, and "invented scenario" when the scenario's description says
 * so.  The same input gives a byte-identical file. */
gboolean sf_study_chart_plan (const SfScenario *sc, guint block, const SfStudyOptions *opt,
                              const char *png_path, GError **error);

/* Draws one lane of `block` worked out by one machine of class `class_index`
 * (as sf_study_push_lane): the lane profile before and after with the floor,
 * spoil line and pivot, and per worked slice a bar of bcm per operating hour
 * with the mean push distance as a second series.  Writes and fails as
 * sf_study_chart_plan(). */
gboolean sf_study_chart_lane (const SfScenario *sc, guint block, guint lane, guint class_index,
                              const SfStudyOptions *opt, const char *png_path, GError **error);

/* Draws the charts of a fleet run from the files that sf_run() wrote into
 * `out_dir` (summary.json, daily.csv, schedule.csv), and writes them there,
 * each atomically: daily.png (bcm dumped per day, bars, and the cumulative
 * total, line on a right axis), usage.png (one bar per dozer of its calendar
 * time by usage category, with its bcm per operating hour) and schedule.png
 * (every lane slice as a bar from its first push to its end, one row per
 * block, coloured by the dozer that made its last push).  The inputs are
 * read strictly as sf_run() writes them, and all of them before anything is
 * drawn: a missing file fails with its G_FILE_ERROR (naming the file), a
 * file that is not as written with SF_SCENARIO_ERROR_SYNTAX or _INVALID
 * naming the file and the line (or the JSON path), and then no chart is
 * written.  Fails with a G_FILE_ERROR naming the chart when one cannot be
 * written (the charts before it stay), G_FILE_ERROR_NOSYS when the library
 * was built without cairo.  The charts carry the scenario's name and the
 * planning-estimate caution; the same files give byte-identical charts. */
gboolean sf_chart_run_outputs (const char *out_dir, GError **error);

/* Draws spread.png from out_dir/replications.csv (and summary.json for the
 * scenario's name): for the days to finish, bcm per calendar hour, coal t
 * (or strip m) per day and cost per bcm, a histogram over the replications
 * with the 10th, 50th and 90th percentiles.  The reader is as strict as
 * sf_chart_run_outputs' (file and line in every message); fewer than two
 * replications is an error.  Same errors otherwise. */
gboolean sf_chart_run_spread (const char *out_dir, GError **error);

/* ---- replay: a finished run read back from its events.log, for display ------ */

/* A run's events.log (docs/output-formats.md) held in memory and indexed by
 * time, so that the state of the fleet at any moment can be asked for: a
 * replay viewer's data.  Immutable once loaded; free with sf_replay_free. */
typedef struct _SfReplay SfReplay;

/* Reads `events_path` strictly: the header must carry the format tag
 * "stripfleet-run-1" and the name of scenario `sc` (the scenario the run was
 * made from); every line must be as sf_run() writes it, times must not go
 * back, and dozer, block, lane, shift and crew indices must exist in `sc`
 * with a fleet of `n_dozers` (0: the length of the "dozers" array of the
 * summary.json beside the log, else the scenario's fleet).  The first problem fails the load with an
 * SF_SCENARIO_ERROR naming the file and line, the field and what was
 * expected (a G_FILE_ERROR when the file cannot be read).  Memory grows with
 * the log: about 50 bytes a line. */
SfReplay *sf_replay_load (const char *events_path, const SfScenario *sc, guint n_dozers,
                          GError **error);
void sf_replay_free (SfReplay *rp);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfReplay, sf_replay_free)

const char *sf_replay_get_scenario_name (const SfReplay *rp);
/* The run's start as the header gives it (local time with its UTC offset);
 * borrowed.  Times in the log are milliseconds after it. */
GDateTime *sf_replay_get_start (const SfReplay *rp);
guint64 sf_replay_get_seed (const SfReplay *rp);
gint64 sf_replay_get_end_ms (const SfReplay *rp);   /* time of the last line (0 when none) */
guint sf_replay_get_n_events (const SfReplay *rp);  /* lines after the header */
guint sf_replay_get_n_dozers (const SfReplay *rp);
guint sf_replay_get_n_blocks (const SfReplay *rp);
guint sf_replay_get_n_lanes (const SfReplay *rp);   /* per block */
/* Smallest and largest x (m, along the section axis) of any push start or
 * dump point in the log; 0, 0 when there is no push. */
void sf_replay_get_x_range (const SfReplay *rp, double *x_lo_m, double *x_hi_m);

typedef struct {
  char name[12];            /* "dz01", ... */
  SfUse use;                /* time-usage category at t */
  int block, lane;          /* lane held at t, or -1, -1 */
  /* Blade position along the section axis, m: an ESTIMATE FOR DISPLAY ONLY.
   * While a push is under way it is interpolated in time between the push's
   * start x and its dump x over the interval from the dozer's previous log
   * line to the push line (which the log writes when the cycle ends); the
   * cycle's return leg and any speed changes are not in the log.  Otherwise
   * the start x of its next push on the lane it holds, else the dump x of its
   * last push there, else NAN (position unknown). */
  double x_m;
  gboolean pushing;         /* x_m is interpolated within a push */
  guint pushes;             /* push lines so far */
  guint failures;
  double dumped_bcm;        /* its pushes' loose volume / (1 + swell), gross */
  gint64 use_ms[SF_USE_N];  /* time in each category from 0 to t */
} SfReplayDozer;

typedef struct {
  guint slices_done;        /* slice lines so far */
  guint slices_total;       /* slice lines of this lane in the whole log */
  gboolean done;            /* lane_done line seen */
  double dumped_bcm;        /* pushes on this lane so far, gross */
} SfReplayLane;

/* The fleet at one moment, as the log tells it: every line with t_ms <= t
 * applied.  Created for one replay by sf_replay_state_new; its arrays are
 * owned by it. */
typedef struct {
  gint64 t_ms;
  guint n_dozers, n_blocks, n_lanes;
  SfReplayDozer *dozers;    /* n_dozers */
  SfReplayLane *lanes;      /* n_blocks x n_lanes, [block * n_lanes + lane] */
  gboolean *block_open;     /* n_blocks: workable (no blast line in the log, or blasted) */
  guint pushes;             /* fleet totals so far */
  double dumped_bcm;
  guint slices_done, lanes_done;
  int shift;                /* index of the shift within the day, -1 before the first */
  int day;                  /* local day index of that shift (0 = the start's date), -1 */
  const char *shift_name;   /* the scenario's names, borrowed from the replay; NULL for none */
  const char *crew_name;    /* NULL: nobody rostered or no shift yet */
  int operators;            /* manned this shift, -1 before the first */
  gboolean wet_stop;        /* a wet-weather stop is on */
  guint events;             /* log lines applied */
  /*< private >*/
  const SfReplay *replay;
  gint64 wet_end_ms;
} SfReplayState;

SfReplayState *sf_replay_state_new (const SfReplay *rp);
void sf_replay_state_free (SfReplayState *st);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfReplayState, sf_replay_state_free)

/* Fills *st with the state at t_ms (clamped to 0 .. end).  Costs O(log n)
 * plus at most a few hundred lines replayed from the nearest stored
 * checkpoint, and amortised O(1) when t_ms moves forward from st's last
 * time (forward playback).  st must come from sf_replay_state_new (rp). */
void sf_replay_state_at (const SfReplay *rp, gint64 t_ms, SfReplayState *st);

G_END_DECLS
