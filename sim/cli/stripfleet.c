/* SPDX-License-Identifier: MIT
 *
 * stripfleet — command-line client of the stripfleet library.
 *
 * A thin client: it parses options (GOptionContext, one context per verb),
 * calls the public API in stripfleet.h and prints tables.  Exit codes are the
 * SF_EXIT_* values (docs/cli.md).
 */
#include <locale.h>
#include <math.h>
#include <signal.h>
#include <stdio.h>
#include <string.h>

#include "stripfleet.h"

static const char CAUTION[] =
  "Planning estimate only: not a work instruction. Dozing near crests, voids and highwalls\n"
  "can kill; edge windrows, spacing between machines, ground stability and fatigue are governed\n"
  "by local regulations, site procedures and licensed practice.\n";

typedef int (*VerbFn) (int argc, char **argv);

typedef struct {
  const char *name;
  const char *summary;
  VerbFn fn;
} Verb;

static int verb_validate (int argc, char **argv);
static int verb_plan (int argc, char **argv);
static int verb_lane (int argc, char **argv);
static int verb_compare (int argc, char **argv);
static int verb_handover (int argc, char **argv);
static int verb_run (int argc, char **argv);

static const Verb VERBS[] = {
  { "validate", "check a scenario and report every problem", verb_validate },
  { "plan", "print a block's slice plan (volumes, push distances, grades)", verb_plan },
  { "lane", "push one lane of a block to completion with one dozer", verb_lane },
  { "compare", "production gain of straight pushes and of a carry blade", verb_compare },
  { "handover", "where dozing should stop and a dragline or trucks take the rest", verb_handover },
  { "run", "simulate the whole fleet working the strip through time", verb_run },
};

/* Parses verb options; on failure prints the message and a hint. */
static gboolean
parse_verb (GOptionContext *ctx, const char *verb, int *argc, char ***argv, int want_args)
{
  g_autoptr (GError) err = NULL;
  if (!g_option_context_parse (ctx, argc, argv, &err))
    {
      g_printerr ("stripfleet %s: %s\nTry 'stripfleet %s --help'.\n", verb, err->message, verb);
      return FALSE;
    }
  if (*argc - 1 != want_args)
    {
      g_printerr ("stripfleet %s: expected %d argument%s (SCENARIO), found %d\nTry 'stripfleet "
                  "%s --help'.\n",
                  verb, want_args, want_args == 1 ? "" : "s", *argc - 1, verb);
      return FALSE;
    }
  return TRUE;
}

/* The end of a study verb after its table: the chart's outcome when one was
 * asked for (drawn, or the reason and exit 1), then the caution. */
static int
study_end (const char *verb, const char *chart, gboolean drawn, const GError *err)
{
  if (chart && !drawn)
    {
      g_printerr ("stripfleet %s: %s\n", verb, err->message);
      return SF_EXIT_RUNTIME;
    }
  if (chart)
    printf ("\nchart written to %s\n", chart);
  printf ("\n%s", CAUTION);
  return SF_EXIT_OK;
}

static SfScenario *
load_or_report (const char *path, int *rc)
{
  g_autoptr (GError) err = NULL;
  SfScenario *sc = sf_scenario_load_from_file (path, &err);
  if (!sc)
    {
      g_printerr ("%s\n", err->message);
      /* unreadable, missing or invalid: all are bad input (docs/cli.md) */
      *rc = SF_EXIT_INVALID;
    }
  return sc;
}

static int
verb_validate (int argc, char **argv)
{
  g_autoptr (GOptionContext) ctx = g_option_context_new ("SCENARIO - check a scenario file");
  g_option_context_set_summary (ctx, "Reads SCENARIO, checks every field, and reports every "
                                     "problem (file, JSON path or CSV line, what was expected).\n"
                                     "Exit 0 only when the scenario is valid; 3 when it is not.");
  if (!parse_verb (ctx, "validate", &argc, &argv, 1))
    return SF_EXIT_USAGE;
  int rc = SF_EXIT_OK;
  g_autoptr (SfScenario) sc = load_or_report (argv[1], &rc);
  if (!sc)
    return rc;
  /* The loader checks fields; laying out every block (section and plan)
   * checks the geometry. */
  g_autoptr (GError) err = NULL;
  if (!sf_study_check_blocks (sc, NULL, &err))
    {
      g_auto (GStrv) lines = g_strsplit (err->message, "\n", -1);
      for (char **l = lines; *l; l++)
        g_printerr ("%s: %s\n", argv[1], *l);
      return SF_EXIT_INVALID;
    }
  printf ("%s: valid (%u blocks, %u lanes per block, %u dozer classes)\n", argv[1],
          sf_scenario_get_n_blocks (sc), sf_scenario_get_n_lanes (sc),
          sf_scenario_get_n_classes (sc));
  return SF_EXIT_OK;
}

static char *opt_strategy = NULL;
static char *opt_pivot = NULL;
static double opt_lift_m = -1;
static int opt_block = 0;
static int opt_lane = 0;
static char *opt_class = NULL;
static char *opt_against = NULL;
static char *opt_carry = NULL;

static GOptionEntry design_entries[] = {
  { "block", 'b', 0, G_OPTION_ARG_INT, &opt_block, "Block number, from 0 (default 0)", "N" },
  { "strategy", 's', 0, G_OPTION_ARG_STRING, &opt_strategy,
    "Slice strategy: tip-over-layers or straight-push (default: as in the scenario)", "NAME" },
  { "pivot", 'p', 0, G_OPTION_ARG_STRING, &opt_pivot,
    "Pivot: standard or lifted (default: as in the scenario)", "KIND" },
  { "lift-m", 0, 0, G_OPTION_ARG_DOUBLE, &opt_lift_m, "Lift of a lifted pivot, m", "H" },
  G_OPTION_ENTRY_NULL
};

static gboolean
study_options (SfStudyOptions *o)
{
  *o = (SfStudyOptions) SF_STUDY_OPTIONS_INIT;
  if (opt_strategy)
    {
      if (!strcmp (opt_strategy, "tip-over-layers"))
        o->strategy = 0;
      else if (!strcmp (opt_strategy, "straight-push"))
        o->strategy = 1;
      else
        {
          g_printerr ("stripfleet: --strategy: expected tip-over-layers or straight-push, found "
                      "'%s'\n",
                      opt_strategy);
          return FALSE;
        }
    }
  if (opt_pivot)
    {
      if (!strcmp (opt_pivot, "standard"))
        o->pivot = 0;
      else if (!strcmp (opt_pivot, "lifted"))
        o->pivot = 1;
      else
        {
          g_printerr ("stripfleet: --pivot: expected standard or lifted, found '%s'\n", opt_pivot);
          return FALSE;
        }
    }
  o->pivot_lift_m = opt_lift_m;
  if (opt_block < 0)
    {
      g_printerr ("stripfleet: --block: expected a block number from 0, found %d\n", opt_block);
      return FALSE;
    }
  return TRUE;
}

static int
verb_plan (int argc, char **argv)
{
  g_autoptr (GOptionContext) ctx = g_option_context_new ("SCENARIO - print a block's slice plan");
  g_option_context_set_summary (ctx, "Prints the ordered slices of one block, per lane: cut and "
                                     "fill volumes, centroid-to-centroid push distance and grade.");
  g_option_context_add_main_entries (ctx, design_entries, NULL);
  g_autofree char *chart = NULL;
  GOptionEntry chart_entries[] = {
    { "chart", 0, 0, G_OPTION_ARG_FILENAME, &chart,
      "Also draw the block's cross-section and slice plan as a PNG chart", "FILE.png" },
    G_OPTION_ENTRY_NULL
  };
  g_option_context_add_main_entries (ctx, chart_entries, NULL);
  if (!parse_verb (ctx, "plan", &argc, &argv, 1))
    return SF_EXIT_USAGE;
  SfStudyOptions o;
  if (!study_options (&o))
    return SF_EXIT_USAGE;
  int rc = SF_EXIT_OK;
  g_autoptr (SfScenario) sc = load_or_report (argv[1], &rc);
  if (!sc)
    return rc;
  g_autoptr (GError) err = NULL;
  g_autoptr (GArray) plan = sf_study_slice_plan (sc, (guint) opt_block, &o, &err);
  if (!plan)
    {
      g_printerr ("%s: %s\n", argv[1], err->message);
      return SF_EXIT_INVALID;
    }
  printf ("Slice plan, block %d of '%s' (per lane)\n\n", opt_block, sf_scenario_get_name (sc));
  printf ("%5s %-9s %8s %10s %10s %10s %10s %10s\n", "slice", "kind", "grade%", "cut_lcm",
          "cut_bcm", "fill_lcm", "push_m", "push_gr%");
  double tc = 0, tb = 0, wd = 0;
  for (guint k = 0; k < plan->len; k++)
    {
      const SfSliceInfo *s = &g_array_index (plan, SfSliceInfo, k);
      printf ("%5u %-9s %8.1f %10.1f %10.1f %10.1f %10.1f %10.1f\n", s->index, s->kind,
              s->target_grade_pct, s->cut_lcm, s->cut_bcm, s->fill_lcm, s->push_distance_m,
              s->push_grade_pct);
      tc += s->cut_lcm;
      tb += s->cut_bcm;
      wd += s->cut_bcm * s->push_distance_m;
    }
  printf ("%5s %-9s %8s %10.1f %10.1f %10s %10.1f\n", "all", "", "", tc, tb, "",
          tb > 0 ? wd / tb : 0.0);
  gboolean drawn = chart && sf_study_chart_plan (sc, (guint) opt_block, &o, chart, &err);
  return study_end ("plan", chart, drawn, err);
}

/* First class with the given blade type, or -1. */
static int
class_with_blade (const SfScenario *sc, const char *blade)
{
  for (guint k = 0; k < sf_scenario_get_n_classes (sc); k++)
    if (!strcmp (sf_scenario_get_class_blade (sc, k), blade))
      return (int) k;
  return -1;
}

static int
resolve_class (const SfScenario *sc, const char *name, int fallback)
{
  if (!name)
    return fallback;
  int k = sf_scenario_find_class (sc, name);
  if (k < 0)
    g_printerr ("stripfleet: no dozer class named '%s' in the scenario\n", name);
  return k;
}

static void
print_lane (const GArray *res, const SfLaneTotals *t)
{
  printf ("%5s %-9s %7s %9s %9s %9s %9s %9s %9s %8s %8s %8s  %s\n", "slice", "kind", "pushes",
          "moved_bcm", "drop_lcm", "spill_lcm", "rehdl_lcm", "op_h", "bcm/op_h", "load_lcm",
          "push_m", "cyc_min", "end");
  for (guint k = 0; k < res->len; k++)
    {
      const SfSliceResult *r = &g_array_index (res, SfSliceResult, k);
      printf ("%5u %-9s %7u %9.1f %9.1f %9.1f %9.1f %9.2f %9.1f %8.1f %8.1f %8.2f  %s\n", r->slice,
              r->kind, r->pushes, r->moved_bcm, r->dropped_lcm, r->spilled_lcm, r->rehandled_lcm,
              r->operating_h, r->bcm_per_operating_h, r->mean_load_lcm, r->mean_push_m,
              r->mean_cycle_min, r->end_reason);
    }
  double rehandled_lcm = 0;
  for (guint k = 0; k < res->len; k++)
    rehandled_lcm += g_array_index (res, SfSliceResult, k).rehandled_lcm;
  printf ("%5s %-9s %7u %9.1f %9s %9s %9.1f %9.2f %9.1f\n", "all", "", t->pushes, t->moved_bcm,
          "", "", rehandled_lcm, t->operating_h, t->bcm_per_operating_h);
  printf ("\nplanned %.1f bcm = moved out of the zone %.1f + dropped in the zone %.1f + left "
          "above the final design %.1f\n",
          t->planned_bcm, t->moved_out_bcm, t->dropped_in_zone_bcm, t->left_bcm);
  printf ("planned %.1f bcm; uncovered %.1f bcm; left above the final target %.1f bcm\n"
          "dumped %.1f bcm, of which dozer rehandle %.1f bcm; dumped over the final spoil line "
          "(dragline rehandle) %.1f bcm;\nkey left under a lifted pivot %.1f bcm\n",
          t->planned_bcm, t->uncovered_bcm, t->left_bcm, t->moved_bcm, t->rehandled_bcm,
          t->over_spoil_bcm, t->key_bcm);
  printf ("lane loose-volume balance: relative error %.2e\n", t->lane_volume_error);
}

static int
verb_lane (int argc, char **argv)
{
  g_autoptr (GOptionContext) ctx
    = g_option_context_new ("SCENARIO - push one lane of a block to completion");
  g_autofree char *chart = NULL;
  GOptionEntry entries[] = {
    { "lane", 'l', 0, G_OPTION_ARG_INT, &opt_lane, "Lane number within the block, from 0", "N" },
    { "class", 'c', 0, G_OPTION_ARG_STRING, &opt_class,
      "Dozer class name (default: the first class)", "NAME" },
    { "chart", 0, 0, G_OPTION_ARG_FILENAME, &chart,
      "Also draw the lane before and after and the production per slice as a PNG chart",
      "FILE.png" },
    G_OPTION_ENTRY_NULL
  };
  g_option_context_set_summary (ctx, "Works one lane of one block through its slice plan, push "
                                     "by push, with one dozer, and reports production per slice.");
  g_option_context_add_main_entries (ctx, design_entries, NULL);
  g_option_context_add_main_entries (ctx, entries, NULL);
  if (!parse_verb (ctx, "lane", &argc, &argv, 1))
    return SF_EXIT_USAGE;
  SfStudyOptions o;
  if (!study_options (&o))
    return SF_EXIT_USAGE;
  int rc = SF_EXIT_OK;
  g_autoptr (SfScenario) sc = load_or_report (argv[1], &rc);
  if (!sc)
    return rc;
  int k = resolve_class (sc, opt_class, 0);
  if (opt_lane < 0)
    g_printerr ("stripfleet lane: --lane: expected a lane number from 0, found %d\n", opt_lane);
  if (k < 0 || opt_lane < 0)
    return SF_EXIT_USAGE;
  g_autoptr (GError) err = NULL;
  SfLaneTotals t;
  g_autoptr (GArray) res
    = sf_study_push_lane (sc, (guint) opt_block, (guint) opt_lane, (guint) k, &o, &t, &err);
  if (!res)
    {
      g_printerr ("%s: %s\n", argv[1], err->message);
      return SF_EXIT_INVALID;
    }
  printf ("Block %d, lane %d of '%s', one %s dozer\n\n", opt_block, opt_lane,
          sf_scenario_get_name (sc), sf_scenario_get_class_name (sc, (guint) k));
  print_lane (res, &t);
  gboolean drawn = chart && sf_study_chart_lane (sc, (guint) opt_block, (guint) opt_lane,
                                                (guint) k, &o, chart, &err);
  return study_end ("lane", chart, drawn, err);
}

static int
verb_compare (int argc, char **argv)
{
  static gboolean all_blocks = FALSE;
  g_autofree char *chart = NULL;
  g_autoptr (GOptionContext) ctx = g_option_context_new (
    "SCENARIO - production gains of straight pushes and of a carry blade");
  GOptionEntry entries[] = {
    { "block", 'b', 0, G_OPTION_ARG_INT, &opt_block, "Block number, from 0 (default 0)", "N" },
    { "class", 'c', 0, G_OPTION_ARG_STRING, &opt_class,
      "Dozer class for the strategy comparison (default: the first class)", "NAME" },
    { "carry", 0, 0, G_OPTION_ARG_STRING, &opt_carry,
      "First side of the blade comparison (default: the first carry-blade class)", "NAME" },
    { "against", 'a', 0, G_OPTION_ARG_STRING, &opt_against,
      "Other side of the blade comparison (default: the first U-blade class)", "NAME" },
    { "all-blocks", 0, 0, G_OPTION_ARG_NONE, &all_blocks,
      "Compare on every block of the strip (one line each) instead of --block", NULL },
    { "chart", 0, 0, G_OPTION_ARG_FILENAME, &chart,
      "Also draw the gains per block as a PNG chart", "FILE.png" },
    G_OPTION_ENTRY_NULL
  };
  g_option_context_set_summary (
    ctx, "Pushes lane 0 of a block out four times and reports the production gains:\n"
         "  straight pushes over tip-over-and-layer slices (same machine, --class), and\n"
         "  --carry over --against (same slices), e.g. a carry blade over a U blade.");
  g_option_context_add_main_entries (ctx, entries, NULL);
  if (!parse_verb (ctx, "compare", &argc, &argv, 1))
    return SF_EXIT_USAGE;
  int rc = SF_EXIT_OK;
  g_autoptr (SfScenario) sc = load_or_report (argv[1], &rc);
  if (!sc)
    return rc;
  int ks = resolve_class (sc, opt_class, 0);
  int def_a = class_with_blade (sc, "carry"), def_b = class_with_blade (sc, "u");
  int ka = resolve_class (sc, opt_carry, def_a >= 0 ? def_a : 0);
  int kb = resolve_class (sc, opt_against, def_b >= 0 ? def_b : 0);
  if (opt_block < 0)
    g_printerr ("stripfleet compare: --block: expected a block number from 0, found %d\n",
                opt_block);
  if (ks < 0 || ka < 0 || kb < 0 || opt_block < 0)
    return SF_EXIT_USAGE;
  const guint n_blocks = sf_scenario_get_n_blocks (sc);
  if (!all_blocks && (guint) opt_block >= n_blocks)
    {
      g_printerr ("%s: block %d does not exist: the strip has blocks 0 to %u\n", argv[1],
                  opt_block, n_blocks - 1);
      return SF_EXIT_INVALID;
    }
  const guint first = all_blocks ? 0 : (guint) opt_block;
  const guint last = all_blocks ? n_blocks - 1 : (guint) opt_block;
  g_autoptr (GArray) rows = g_array_new (FALSE, TRUE, sizeof (SfCompareResult));
  const gboolean tty = isatty (2);
  for (guint b = first; b <= last; b++)
    {
      if (all_blocks && tty)
        g_printerr ("\r  block %u of %u", b + 1, n_blocks);
      g_autoptr (GError) err = NULL;
      SfCompareResult r;
      if (!sf_study_compare (sc, b, (guint) ks, (guint) ka, (guint) kb, &r, &err))
        {
          if (all_blocks && tty)
            g_printerr ("\n");
          g_printerr ("%s: %s\n", argv[1], err->message);
          return SF_EXIT_INVALID;
        }
      g_array_append_val (rows, r);
    }
  if (all_blocks && tty)
    g_printerr ("\r%-30s\r", "");
  const char *name_s = sf_scenario_get_class_name (sc, (guint) ks);
  const char *name_a = sf_scenario_get_class_name (sc, (guint) ka);
  const char *name_b = sf_scenario_get_class_name (sc, (guint) kb);
  if (!all_blocks)
    {
      const SfCompareResult *r = &g_array_index (rows, SfCompareResult, 0);
      printf ("Block %d of '%s', lane 0; strategies with one %s dozer\n\n", opt_block,
              sf_scenario_get_name (sc), name_s);
      printf ("%-22s %10s %10s %10s %10s %12s %12s\n", "case", "dumped_bcm", "rehdl_bcm",
              "uncov_bcm", "op_h", "gross/op_h", "uncov/op_h");
      const SfLaneTotals *tt[2] = { &r->layers, &r->straight };
      const char *names[2] = { "tip-over + layers", "straight push" };
      for (int i = 0; i < 2; i++)
        printf ("%-22s %10.1f %10.1f %10.1f %10.2f %12.1f %12.1f\n", names[i], tt[i]->moved_bcm,
                tt[i]->rehandled_bcm, tt[i]->uncovered_bcm, tt[i]->operating_h,
                tt[i]->bcm_per_operating_h, tt[i]->uncovered_bcm / tt[i]->operating_h);
      printf ("  gain of straight pushes: %+.1f %% gross, %+.1f %% net (uncovered per operating "
              "hour; rule of thumb about +10 to +15 %% net: common practice, no source)\n\n",
              r->straight_gain_gross_pct, r->straight_gain_net_pct);
      printf ("%-38s %10.1f %10.2f %10.1f\n", name_a, r->blade_a.moved_bcm,
              r->blade_a.operating_h, r->blade_a.bcm_per_operating_h);
      printf ("%-38s %10.1f %10.2f %10.1f\n", name_b, r->blade_b.moved_bcm,
              r->blade_b.operating_h, r->blade_b.bcm_per_operating_h);
      printf ("  gain of %s over %s: %+.1f %% (for a carry blade over a U blade the rule of "
              "thumb is +20 to +25 %%: common practice, no source)\n",
              name_a, name_b, r->blade_gain_pct);
    }
  else
    {
      printf ("All %u blocks of '%s', lane 0 of each; strategies with one %s dozer; %s over %s\n\n",
              n_blocks, sf_scenario_get_name (sc), name_s, name_a, name_b);
      printf ("%5s %12s %12s %10s %10s %12s %12s %10s\n", "block", "layers/op_h",
              "straight/op_h", "gain_gross", "gain_net", "a bcm/op_h", "b bcm/op_h", "gain_a_b");
      double s_min = G_MAXDOUBLE, s_max = -G_MAXDOUBLE, s_sum = 0;
      double b_min = G_MAXDOUBLE, b_max = -G_MAXDOUBLE, b_sum = 0;
      for (guint i = 0; i < rows->len; i++)
        {
          const SfCompareResult *r = &g_array_index (rows, SfCompareResult, i);
          printf ("%5u %12.1f %12.1f %+9.1f%% %+9.1f%% %12.1f %12.1f %+9.1f%%\n", r->block,
                  r->layers.uncovered_bcm / r->layers.operating_h,
                  r->straight.uncovered_bcm / r->straight.operating_h, r->straight_gain_gross_pct,
                  r->straight_gain_net_pct, r->blade_a.bcm_per_operating_h,
                  r->blade_b.bcm_per_operating_h, r->blade_gain_pct);
          s_min = MIN (s_min, r->straight_gain_net_pct);
          s_max = MAX (s_max, r->straight_gain_net_pct);
          s_sum += r->straight_gain_net_pct;
          b_min = MIN (b_min, r->blade_gain_pct);
          b_max = MAX (b_max, r->blade_gain_pct);
          b_sum += r->blade_gain_pct;
        }
      printf ("  (rates of layers and straight pushes are net: bcm uncovered per operating hour)\n");
      printf ("  straight pushes, net: %+.1f to %+.1f %%, mean %+.1f %% (rule of thumb +10 to "
              "+15 %%: common practice, no source)\n",
              s_min, s_max, s_sum / rows->len);
      printf ("  %s over %s: %+.1f to %+.1f %%, mean %+.1f %% (carry over U blade: +20 to +25 "
              "%%, common practice, no source)\n",
              name_a, name_b, b_min, b_max, b_sum / rows->len);
    }
  g_autoptr (GError) err = NULL;
  gboolean drawn = chart && sf_study_chart_compare (sc, (const SfCompareResult *) (void *) rows->data,
                                                   rows->len, (guint) ks, (guint) ka, (guint) kb,
                                                   chart, &err);
  return study_end ("compare", chart, drawn, err);
}

/* The hand-over study on every block: one line each, and the strip's totals. */
static int
handover_all_blocks (const SfScenario *sc, const char *path, guint lane, guint k,
                     const SfStudyOptions *o, double dragline_cost, double truck_cost)
{
  const guint n_blocks = sf_scenario_get_n_blocks (sc);
  const gboolean tty = isatty (2);
  double vol = 0, dozed_vol = 0, best = 0, all = 0, none = 0;
  const char *alt = NULL;
  double alt_cost = 0;
  GString *table = g_string_new (NULL);
  for (guint b = 0; b < n_blocks; b++)
    {
      if (tty)
        g_printerr ("\r  block %u of %u", b + 1, n_blocks);
      g_autoptr (GError) err = NULL;
      SfHandoverTotals t;
      g_autoptr (GArray) rows
        = sf_study_handover (sc, b, lane, k, o, dragline_cost, truck_cost, &t, &err);
      if (!rows)
        {
          if (tty)
            g_printerr ("\n");
          g_printerr ("%s: %s\n", path, err->message);
          g_string_free (table, TRUE);
          return SF_EXIT_INVALID;
        }
      double d = 0;
      for (guint i = 0; i < t.best_slices; i++)
        d += g_array_index (rows, SfHandoverSlice, i).volume_bcm;
      g_string_append_printf (table, "%5u %7u of %-3u %12.1f %12.1f %6.1f%% %12.1f %12.1f %12.1f\n",
                              b, t.best_slices, t.n_slices, t.volume_bcm, d,
                              t.volume_bcm > 0 ? 100.0 * d / t.volume_bcm : 0.0,
                              t.best_total_cost, t.all_dozed_cost, t.none_dozed_cost);
      vol += t.volume_bcm;
      dozed_vol += d;
      best += t.best_total_cost;
      all += t.all_dozed_cost;
      none += t.none_dozed_cost;
      alt = t.alternative;
      alt_cost = t.alt_cost_per_bcm;
    }
  if (tty)
    g_printerr ("\r%-30s\r", "");
  printf ("All %u blocks of '%s', lane %u of each, one %s dozer; the rest to the %s at %.2f per "
          "bcm\n\n",
          n_blocks, sf_scenario_get_name (sc), lane, sf_scenario_get_class_name (sc, k), alt,
          alt_cost);
  printf ("%5s %14s %12s %12s %7s %12s %12s %12s\n", "block", "slices_dozed", "volume_bcm",
          "dozed_bcm", "share", "least_cost", "all_dozed", "none_dozed");
  fputs (table->str, stdout);
  g_string_free (table, TRUE);
  printf ("  strip (lane %u of every block): %.1f of %.1f bcm dozed (%.1f %%); least cost %.1f, "
          "against %.1f with every slice dozed and %.1f with none\n",
          lane, dozed_vol, vol, vol > 0 ? 100.0 * dozed_vol / vol : 0.0, best, all, none);
  printf ("  (per block as `handover --block N`; docs/model.md §6.4)\n");
  printf ("\n%s", CAUTION);
  return SF_EXIT_OK;
}

static int
verb_handover (int argc, char **argv)
{
  static double dragline_cost = 0, truck_cost = 0;
  static gboolean all_blocks = FALSE;
  g_autofree char *chart = NULL;
  g_autoptr (GOptionContext) ctx = g_option_context_new (
    "SCENARIO - where dozing should stop and a dragline or trucks take the rest");
  GOptionEntry entries[] = {
    { "lane", 'l', 0, G_OPTION_ARG_INT, &opt_lane, "Lane number within the block, from 0", "N" },
    { "class", 'c', 0, G_OPTION_ARG_STRING, &opt_class,
      "Dozer class name (default: the first class); its cost_per_operating_h is used", "NAME" },
    { "dragline-cost", 0, 0, G_OPTION_ARG_DOUBLE, &dragline_cost,
      "Dragline cost per bcm (rehandle and the rest of the lane); 0: no dragline", "C" },
    { "truck-cost", 0, 0, G_OPTION_ARG_DOUBLE, &truck_cost,
      "Truck-and-shovel cost per bcm for the rest of the lane; 0: none", "C" },
    { "all-blocks", 0, 0, G_OPTION_ARG_NONE, &all_blocks,
      "The study on every block of the strip (one line each) instead of --block", NULL },
    { "chart", 0, 0, G_OPTION_ARG_FILENAME, &chart,
      "Also draw the cost per slice and the total against the slices dozed as a PNG chart",
      "FILE.png" },
    G_OPTION_ENTRY_NULL
  };
  g_option_context_set_summary (
    ctx, "Works one lane of a block slice by slice with one dozer, prices every slice (the\n"
         "class's cost per operating hour, and a dragline's for spoil dozed over the final\n"
         "spoil line) and finds how many slices to doze before the cheaper alternative\n"
         "takes the rest, by the least total cost of the lane. Costs in the scenario's\n"
         "currency units.");
  g_option_context_add_main_entries (ctx, design_entries, NULL);
  g_option_context_add_main_entries (ctx, entries, NULL);
  if (!parse_verb (ctx, "handover", &argc, &argv, 1))
    return SF_EXIT_USAGE;
  SfStudyOptions o;
  if (!study_options (&o))
    return SF_EXIT_USAGE;
  if (!(dragline_cost >= 0 && truck_cost >= 0 && isfinite (dragline_cost)
        && isfinite (truck_cost))
      || (dragline_cost <= 0 && truck_cost <= 0))
    {
      g_printerr ("stripfleet handover: --dragline-cost and --truck-cost: expected costs per "
                  "bcm >= 0, at least one greater than 0\n");
      return SF_EXIT_USAGE;
    }
  int rc = SF_EXIT_OK;
  g_autoptr (SfScenario) sc = load_or_report (argv[1], &rc);
  if (!sc)
    return rc;
  int k = resolve_class (sc, opt_class, 0);
  if (opt_lane < 0)
    g_printerr ("stripfleet handover: --lane: expected a lane number from 0, found %d\n",
                opt_lane);
  if (k < 0 || opt_lane < 0)
    return SF_EXIT_USAGE;
  if (all_blocks && chart)
    {
      g_printerr ("stripfleet handover: --chart draws one block: give --block, not --all-blocks\n");
      return SF_EXIT_USAGE;
    }
  if (all_blocks)
    return handover_all_blocks (sc, argv[1], (guint) opt_lane, (guint) k, &o, dragline_cost,
                                truck_cost);
  g_autoptr (GError) err = NULL;
  SfHandoverTotals t;
  g_autoptr (GArray) rows = sf_study_handover (sc, (guint) opt_block, (guint) opt_lane, (guint) k,
                                               &o, dragline_cost, truck_cost, &t, &err);
  if (!rows)
    {
      g_printerr ("%s: %s\n", argv[1], err->message);
      return SF_EXIT_INVALID;
    }
  printf ("Block %d, lane %d of '%s', one %s dozer at %.2f an operating hour; the rest to the "
          "%s at %.2f per bcm\n\n",
          opt_block, opt_lane, sf_scenario_get_name (sc),
          sf_scenario_get_class_name (sc, (guint) k), t.dozer_cost_per_h, t.alternative,
          t.alt_cost_per_bcm);
  printf ("%5s %-9s %11s %11s %12s %13s %11s %16s\n", "slice", "kind", "volume_bcm",
          "dozer_cost", "overspl_bcm", "rehandle_cost", "cost/bcm", "total_stop_here");
  for (guint i = 0; i < rows->len; i++)
    {
      const SfHandoverSlice *h = &g_array_index (rows, SfHandoverSlice, i);
      if (i < t.n_worked)
        printf ("%5u %-9s %11.1f %11.1f %12.1f %13.1f %11.3f %16.1f\n", h->slice, h->kind,
                h->volume_bcm, h->dozer_cost, h->over_spoil_bcm, h->rehandle_cost,
                h->unit_cost_per_bcm, h->total_if_stop_here);
      else
        printf ("%5u %-9s %11.1f %11s %12s %13s %11s %16s\n", h->slice, h->kind, h->volume_bcm,
                "not dozed", "", "", "", "");
    }
  printf ("%5s %-9s %11.1f %52s %16.1f\n", "all", "", t.volume_bcm, "", t.all_dozed_cost);
  printf ("\n  (volume_bcm: the slice's design volume, its cut in the plan; total_stop_here: the "
          "lane's cost when dozing stops before that slice and the %s moves it and the slices "
          "after it)\n",
          t.alternative);
  if (t.n_worked < t.n_slices)
    printf ("  the lane reached %u of the %u slices (see `lane`); the others go to the %s in "
            "every choice\n",
            t.n_worked, t.n_slices, t.alternative);
  double dozed_bcm = 0;
  for (guint i = 0; i < t.best_slices; i++)
    dozed_bcm += g_array_index (rows, SfHandoverSlice, i).volume_bcm;
  if (t.best_slices == 0)
    printf ("  least cost: doze nothing; the %s moves all %.1f bcm: %.1f, against %.1f with "
            "every slice dozed\n",
            t.alternative, t.volume_bcm, t.best_total_cost, t.all_dozed_cost);
  else if (t.best_slices == t.n_slices)
    printf ("  least cost: doze every slice (%.1f bcm): %.1f, against %.1f with none dozed\n",
            t.volume_bcm, t.best_total_cost, t.none_dozed_cost);
  else if (t.best_slices == 1)
    printf ("  least cost: doze slice 0 (%.1f bcm), leave slices 1 to %u (%.1f bcm) to the %s: "
            "%.1f, against %.1f with every slice dozed and %.1f with none\n",
            dozed_bcm, t.n_slices - 1, t.volume_bcm - dozed_bcm, t.alternative,
            t.best_total_cost, t.all_dozed_cost, t.none_dozed_cost);
  else
    printf ("  least cost: doze slices 0 to %u (%.1f bcm), leave slices %u to %u (%.1f bcm) to "
            "the %s: %.1f, against %.1f with every slice dozed and %.1f with none\n",
            t.best_slices - 1, dozed_bcm, t.best_slices, t.n_slices - 1, t.volume_bcm - dozed_bcm,
            t.alternative, t.best_total_cost, t.all_dozed_cost, t.none_dozed_cost);
  printf ("  (the rule: incremental analysis of the %u choices, engineering economy; common "
          "practice, no source)\n",
          t.n_worked + 1);
  gboolean drawn = chart && sf_study_chart_handover (sc, (guint) opt_block, (guint) opt_lane,
                                                    (guint) k,
                                                    (const SfHandoverSlice *) (void *) rows->data,
                                                    &t, chart, &err);
  return study_end ("handover", chart, drawn, err);
}

static void
print_run_summary (const SfScenario *sc, const SfRunSummary *s, const char *out_dir,
                   gboolean replications)
{
  printf ("Fleet run of '%s' (%s)\n", sf_scenario_get_name (sc), sf_scenario_get_description (sc));
  printf ("  start %s   end %s   %s\n", s->start_iso, s->end_iso, s->end_reason);
  printf ("  calendar %.1f h (%.1f days); %u pushes; %" G_GUINT64_FORMAT " events\n\n",
          s->calendar_h, s->calendar_h / 24.0, s->pushes, s->events);
  printf ("  volumes (bcm): planned %.0f = moved %.0f + dropped in place %.0f + left %.0f\n",
          s->planned_bcm, s->moved_bcm, s->dropped_bcm, s->left_bcm);
  printf ("  fleet: %.1f bcm per operating hour, %.1f bcm per calendar hour\n",
          s->bcm_per_operating_h, s->bcm_per_calendar_h);
  printf ("  uncover rate: %.1f strip m/day", s->strip_m_per_day);
  if (s->coal_t_per_day > 0)
    printf (", %.0f t coal/day", s->coal_t_per_day);
  printf ("\n  cost: %.0f in all, %.2f per bcm moved\n\n", s->cost, s->cost_per_bcm);
  printf ("  %-5s %-18s %7s %9s %8s", "dozer", "class", "pushes", "bcm", "bcm/op_h");
  for (int k = 0; k < SF_USE_N; k++)
    printf (" %8.8s", sf_use_to_str (k));
  printf ("\n");
  for (guint i = 0; i < s->dozers->len; i++)
    {
      const SfDozerResult *d = &g_array_index (s->dozers, SfDozerResult, i);
      printf ("  %-5s %-18s %7u %9.0f %8.1f", d->name, d->class_name, d->pushes, d->moved_bcm,
              d->bcm_per_operating_h);
      for (int k = 0; k < SF_USE_N; k++)
        printf (" %8.1f", (double) d->use_ms[k] / 3.6e6);
      printf ("\n");
    }
  printf ("  (time in hours by category; each row adds up to the calendar time)\n");
  if (s->crew_operators && s->crew_operators->len > 0)
    {
      printf ("  operators a crew:");
      for (guint c = 0; c < s->crew_operators->len; c++)
        printf (" %s %u%s", sf_scenario_get_crew_name (sc, c),
                g_array_index (s->crew_operators, guint, c),
                c + 1 < s->crew_operators->len ? "," : "");
      printf (" (for %u dozers)\n", s->dozers->len);
    }
  if (out_dir)
    printf ("\n  outputs in %s: summary.json, schedule.csv, daily.csv, events.log%s\n", out_dir,
            replications ? ", replications.csv" : "");
}

static void
print_spread (const SfRunSummary *sums, guint n)
{
  printf ("\nSpread over %u replications (replication 0 above; its files in --out):\n", n);
  printf ("  %-26s %10s %9s %10s %10s %10s %10s %10s\n", "measure", "mean", "sd", "min", "p10",
          "p50", "p90", "max");
  g_autofree double *x = g_new (double, n);
  static const char *const names[] = { "completion (days)", "bcm per operating hour",
                                       "bcm per calendar hour", "strip m per day",
                                       "coal t per day", "cost per bcm" };
  for (guint m = 0; m < G_N_ELEMENTS (names); m++)
    {
      for (guint r = 0; r < n; r++)
        {
          const SfRunSummary *s = &sums[r];
          double v[] = { s->calendar_h / 24.0, s->bcm_per_operating_h, s->bcm_per_calendar_h,
                         s->strip_m_per_day, s->coal_t_per_day, s->cost_per_bcm };
          x[r] = v[m];
        }
      SfSpread sp;
      sf_spread (x, n, &sp);
      printf ("  %-26s %10.2f %9.2f %10.2f %10.2f %10.2f %10.2f %10.2f\n", names[m], sp.mean, sp.sd,
              sp.min, sp.p10, sp.p50, sp.p90, sp.max);
    }
}

/* Set by SIGINT / SIGTERM during a run; the library stops at its next look
 * (SfRunOptions.cancel) and writes nothing. */
static volatile sig_atomic_t interrupted = 0;

static void
on_interrupt (int sig)
{
  (void) sig;
  interrupted = 1;
}

/* SIGINT and SIGTERM set `interrupted`; a second one acts as usual (the
 * handler is reset after the first), so a run that does not stop can still
 * be killed.  A signal ignored at startup (nohup, a background job of a
 * non-interactive shell) stays ignored. */
static void
catch_interrupts (void)
{
  static const int sigs[] = { SIGINT, SIGTERM };
  for (gsize i = 0; i < G_N_ELEMENTS (sigs); i++)
    {
      struct sigaction old;
      if (sigaction (sigs[i], NULL, &old) == 0 && old.sa_handler == SIG_IGN)
        continue;
      struct sigaction sa;
      memset (&sa, 0, sizeof sa);
      sa.sa_handler = on_interrupt;
      sigemptyset (&sa.sa_mask);
      sa.sa_flags = SA_RESETHAND;
      sigaction (sigs[i], &sa, NULL);
    }
}

static int
verb_run (int argc, char **argv)
{
  static char *out = NULL;
  static gint64 seed = -1;
  static int dozers = 0, operators = 0;
  static gboolean overwrite = FALSE, no_random = FALSE, quiet = FALSE;
  static gboolean no_charts = FALSE;
  static int replications = 1, threads = 0;
  GOptionEntry entries[] = {
    { "out", 'o', 0, G_OPTION_ARG_FILENAME, &out, "Folder for the output files", "DIR" },
    { "seed", 0, 0, G_OPTION_ARG_INT64, &seed, "Random seed (default: the scenario's)", "N" },
    { "dozers", 'n', 0, G_OPTION_ARG_INT, &dozers,
      "Number of dozers (classes taken in fleet order; default: the scenario's fleet); the crews' "
      "operators are scaled with it", "N" },
    { "operators", 0, 0, G_OPTION_ARG_INT, &operators,
      "Operators in every crew (default: the scenario's, scaled with --dozers)", "N" },
    { "overwrite", 0, 0, G_OPTION_ARG_NONE, &overwrite,
      "Replace another scenario's outputs in DIR", NULL },
    { "no-randomness", 0, 0, G_OPTION_ARG_NONE, &no_random, "No breakdowns and no weather", NULL },
    { "quiet", 'q', 0, G_OPTION_ARG_NONE, &quiet, "No progress line", NULL },
    { "no-charts", 0, 0, G_OPTION_ARG_NONE, &no_charts,
      "Do not draw daily.png, usage.png and schedule.png into DIR", NULL },
    { "replications", 'r', 0, G_OPTION_ARG_INT, &replications,
      "Run N replications (their own random streams) and report the spread (default 1)", "N" },
    { "threads", 't', 0, G_OPTION_ARG_INT, &threads,
      "Threads for the replications (default: the number of processors)", "T" },
    G_OPTION_ENTRY_NULL
  };
  g_autoptr (GOptionContext) ctx
    = g_option_context_new ("SCENARIO - simulate the fleet working the whole strip");
  g_option_context_set_summary (ctx, "Every dozer of the fleet works the strip push by push through "
                                     "simulated time, with shifts, breaks, breakdowns, weather and "
                                     "blast dates.\nPrints a summary and writes summary.json, "
                                     "schedule.csv, daily.csv and events.log into --out, and "
                                     "charts of them\n(daily.png, usage.png, schedule.png) unless "
                                     "--no-charts.");
  g_option_context_add_main_entries (ctx, entries, NULL);
  if (!parse_verb (ctx, "run", &argc, &argv, 1))
    return SF_EXIT_USAGE;
  if (dozers < 0)
    {
      g_printerr ("stripfleet run: --dozers: expected a positive number, found %d\n", dozers);
      return SF_EXIT_USAGE;
    }
  if (operators < 0 || operators > 500)
    {
      g_printerr ("stripfleet run: --operators: expected 1 to 500, found %d\n", operators);
      return SF_EXIT_USAGE;
    }
  int rc = SF_EXIT_OK;
  g_autoptr (SfScenario) sc = load_or_report (argv[1], &rc);
  if (!sc)
    return rc;
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  o.out_dir = out;
  o.overwrite = overwrite;
  o.seed = seed;
  o.n_dozers = dozers;
  o.operators = operators;
  o.progress = !quiet;
  o.no_randomness = no_random;
  o.cancel = &interrupted;
  o.charts = out && !no_charts;
  if (replications < 1 || replications > 10000 || threads < 0)
    {
      g_printerr ("stripfleet run: --replications: expected 1 to 10000, --threads: 0 or more\n");
      return SF_EXIT_USAGE;
    }
  g_autofree SfRunSummary *sums = g_new0 (SfRunSummary, replications);
  g_autoptr (GError) err = NULL;
  catch_interrupts ();
  gboolean ran = replications == 1
                   ? sf_run (sc, &o, &sums[0], &err)
                   : sf_run_replications (sc, &o, (guint) replications,
                                          threads > 0 ? (guint) threads : g_get_num_processors (),
                                          sums, &err);
  if (!ran && g_error_matches (err, SF_MODEL_ERROR, SF_MODEL_ERROR_INTERRUPTED))
    {
      g_printerr ("stripfleet run: interrupted; previous outputs (if any) left as they were\n");
      return SF_EXIT_RUNTIME;
    }
  if (!ran)
    {
      g_printerr ("stripfleet run: %s\n", err->message);
      return err->domain == SF_MODEL_ERROR && err->code == SF_MODEL_ERROR_GEOMETRY
               ? SF_EXIT_INVALID
               : SF_EXIT_RUNTIME;
    }
  print_run_summary (sc, &sums[0], out, replications > 1);
  if (sums[0].charts_drawn)
    printf ("  charts: daily.png, usage.png, schedule.png%s\n",
            replications > 1 ? ", spread.png" : "");
  if (sums[0].notice)
    {
      /* one warning line per line of the notice */
      g_auto (GStrv) lines = g_strsplit (sums[0].notice, "\n", -1);
      for (char **l = lines; *l; l++)
        g_printerr ("stripfleet run: warning: %s\n", *l);
    }
  if (replications > 1)
    print_spread (sums, (guint) replications);
  printf ("\n%s", CAUTION);
  gboolean complete = TRUE;
  for (int r = 0; r < replications; r++)
    {
      complete = complete && sums[r].complete;
      sf_run_summary_clear (&sums[r]);
    }
  return complete ? SF_EXIT_OK : SF_EXIT_RUNTIME;
}

static void
usage (FILE *f)
{
  fprintf (f, "Usage: stripfleet VERB [OPTION...] SCENARIO\n\n"
              "Simulates crawler dozers pushing a designed strip push by push.\n\nVerbs:\n");
  for (gsize i = 0; i < G_N_ELEMENTS (VERBS); i++)
    fprintf (f, "  %-10s %s\n", VERBS[i].name, VERBS[i].summary);
  fprintf (f, "\nOptions:\n  --version  print the version\n  --help     this text\n\n"
              "'stripfleet VERB --help' describes a verb.\n");
}

int
main (int argc, char **argv)
{
  setlocale (LC_ALL, "");
  setlocale (LC_NUMERIC, "C"); /* JSON and CSV numbers use '.' */
  if (argc < 2)
    {
      usage (stderr);
      return SF_EXIT_USAGE;
    }
  if (!strcmp (argv[1], "--version") || !strcmp (argv[1], "-V"))
    {
      printf ("stripfleet %s\n", SF_VERSION);
      return SF_EXIT_OK;
    }
  if (!strcmp (argv[1], "--help") || !strcmp (argv[1], "-h") || !strcmp (argv[1], "help"))
    {
      usage (stdout);
      return SF_EXIT_OK;
    }
  for (gsize i = 0; i < G_N_ELEMENTS (VERBS); i++)
    if (!strcmp (argv[1], VERBS[i].name))
      {
        /* The verb sees its own name as argv[0]. */
        g_autofree char *prg = g_strdup_printf ("stripfleet %s", VERBS[i].name);
        g_set_prgname (prg);
        return VERBS[i].fn (argc - 1, argv + 1);
      }
  fprintf (stderr, "stripfleet: unknown verb '%s'\n", argv[1]);
  usage (stderr);
  return SF_EXIT_USAGE;
}
