/* SPDX-License-Identifier: MIT
 *
 * bench-run.c — speed and memory benchmark of a whole fleet run (sf_run).
 *
 * Loads a scenario, optionally lengthens its strip in memory, then runs it
 * R times (--repeat, default 3) with no output folder and no progress line,
 * timing each sf_run with g_get_monotonic_time.  Loading is timed apart and
 * is not part of wall_s.  Every repeat must give the same pushes and events
 * (the run is deterministic for a seed); the program fails if they differ.
 *
 * Output: one `name=value` line per measure, the unit in the name:
 *   wall_s_best, wall_s_median   wall-clock seconds of one sf_run
 *   cpu_s_best, cpu_s_median     CPU seconds (user + system) of one sf_run: less
 *                                sensitive than wall_s to other load on the machine
 *   events_per_s, pushes_per_s   kernel events and pushes per wall second, best run
 *   peak_rss_mb                  getrusage(RUSAGE_SELF).ru_maxrss at the end
 *   vm_hwm_mb, vm_hwm_load_mb    VmHWM of /proc/self/status at the end and after
 *                                loading (before the first run); -1 when unreadable
 *   calendar_h, pushes, events   what the run simulated
 *
 * Why two peaks: Linux keeps ru_maxrss across execve, so it is never below
 * the resident size of the process that forked this one at the time of the
 * fork (about 28 MB under `meson test`, which runs from a Python process).
 * VmHWM belongs to this program's own address space only.  Both are peaks
 * of the whole process (loading and every repeat); each run frees its world,
 * so the peak is that of one run.
 *
 * --scale-length F (F >= 1) multiplies the number of blocks by F (rounded)
 * and the strip length with it, so blocks keep their length and lane count.
 * This is white-box: it includes the internal sim/sf-scenario.h (as the tests
 * do) and edits the loaded scenario before any run.  Cross-sections of the
 * new blocks beyond the last given section are those of the last given one
 * (interpolation holds the end sections constant).  Blast times of the new
 * blocks repeat the scenario's pattern: copy k of block j becomes workable at
 * blast_h[j] + k * span, where span is the latest given blast time plus the
 * shortest gap between two distinct given blast times (0 when every block is
 * workable at the start).  --dozers N and --operators N are those of
 * `stripfleet run` (SfRunOptions): a resized fleet keeps the scenario's share
 * of manned machines (the demo's crews man 5 of 6, so with --dozers 20 each
 * crew mans 17 and 3 stand unmanned, still holding their memory);
 * --operators N mans N outright.
 *
 * Owns: the scenario (g_autoptr) and one SfRunSummary per repeat, cleared
 * after use.  The demo scenario is invented; the figures measure the code,
 * not any operation.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>

#include <glib.h>

#include "stripfleet.h"
#include "sf-scenario.h"

static double
peak_rss_mb (void)
{
  struct rusage ru;
  if (getrusage (RUSAGE_SELF, &ru) != 0)
    return -1.0;
  return (double) ru.ru_maxrss / 1024.0; /* Linux: kilobytes */
}

/* CPU seconds (user + system) used by this process so far. */
static double
cpu_s (void)
{
  struct rusage ru;
  if (getrusage (RUSAGE_SELF, &ru) != 0)
    return 0.0;
  return (double) (ru.ru_utime.tv_sec + ru.ru_stime.tv_sec)
         + (double) (ru.ru_utime.tv_usec + ru.ru_stime.tv_usec) / 1e6;
}

/* Peak resident size of this address space ("VmHWM:" in /proc/self/status,
 * kilobytes) in MB; -1 when it cannot be read (not Linux). */
static double
vm_hwm_mb (void)
{
  g_autofree char *text = NULL;
  if (!g_file_get_contents ("/proc/self/status", &text, NULL, NULL))
    return -1.0;
  const char *p = strstr (text, "\nVmHWM:");
  if (p == NULL)
    return -1.0;
  return g_ascii_strtod (p + strlen ("\nVmHWM:"), NULL) / 1024.0;
}

static int
cmp_double (const void *a, const void *b)
{
  double x = *(const double *) a, y = *(const double *) b;
  return (x > y) - (x < y);
}

/* Smallest and median of v[0..n). */
static void
best_median (const double *v, gint n, double *best, double *median)
{
  g_autofree double *s = g_memdup2 (v, (gsize) n * sizeof (double));
  qsort (s, (size_t) n, sizeof (double), cmp_double);
  *best = s[0];
  *median = n % 2 ? s[n / 2] : 0.5 * (s[n / 2 - 1] + s[n / 2]);
}

/* The pattern span of the given blast times (see the top comment). */
static double
blast_span_h (const double *blast_h, guint n)
{
  g_autofree double *t = g_memdup2 (blast_h, n * sizeof (double));
  qsort (t, n, sizeof (double), cmp_double);
  double gap_h = 0.0;
  for (guint i = 1; i < n; i++)
    {
      double d = t[i] - t[i - 1];
      if (d > 1e-9 && (gap_h == 0.0 || d < gap_h))
        gap_h = d;
    }
  return t[n - 1] > 0.0 ? t[n - 1] + gap_h : 0.0;
}

/* Lengthens the strip of `sc` by `factor` (>= 1); FALSE and a message when
 * the result would break the loader's limits. */
static gboolean
scale_strip (SfScenario *sc, double factor, GError **error)
{
  const guint n0 = sc->strip.n_blocks;
  const double n1_d = round (n0 * factor);
  if (n0 == 0 || n1_d > SF_MAX_BLOCKS)
    {
      g_set_error (error, SF_SCENARIO_ERROR, SF_SCENARIO_ERROR_INVALID,
                   "--scale-length %g gives %.0f blocks; the limit is %d", factor, n1_d,
                   SF_MAX_BLOCKS);
      return FALSE;
    }
  const guint n1 = (guint) n1_d;
  if (n1 == n0)
    return TRUE;
  const double span_h = sc->sim.blast_h ? blast_span_h (sc->sim.blast_h, n0) : 0.0;
  sc->strip.length_m *= (double) n1 / (double) n0;
  sc->strip.n_blocks = n1;
  sc->sim.blast_h = g_renew (double, sc->sim.blast_h, n1);
  for (guint b = n0; b < n1; b++)
    sc->sim.blast_h[b] = sc->sim.blast_h[b % n0] + (double) (b / n0) * span_h;
  return TRUE;
}

int
main (int argc, char **argv)
{
  g_autofree char *scenario_path = NULL;
  gint repeat = 3, dozers = 0, operators = 0;
  gint64 seed = -1;
  double scale_length = 1.0;
  GOptionEntry entries[] = {
    { "scenario", 0, 0, G_OPTION_ARG_FILENAME, &scenario_path, "Scenario file (required)",
      "FILE" },
    { "repeat", 0, 0, G_OPTION_ARG_INT, &repeat, "Runs to time (default 3)", "N" },
    { "dozers", 0, 0, G_OPTION_ARG_INT, &dozers,
      "Dozers (classes in fleet order, repeated; default: the scenario's fleet)", "N" },
    { "seed", 0, 0, G_OPTION_ARG_INT64, &seed, "Random seed (default: the scenario's)", "N" },
    { "scale-length", 0, 0, G_OPTION_ARG_DOUBLE, &scale_length,
      "Multiply the strip's length and blocks by F >= 1 (default 1)", "F" },
    { "operators", 0, 0, G_OPTION_ARG_INT, &operators,
      "Operators of every crew (default: as the scenario)", "N" },
    G_OPTION_ENTRY_NULL
  };
  g_autoptr (GOptionContext) ctx = g_option_context_new ("- fleet run speed and memory benchmark");
  g_option_context_add_main_entries (ctx, entries, NULL);
  g_autoptr (GError) error = NULL;
  if (!g_option_context_parse (ctx, &argc, &argv, &error))
    {
      g_printerr ("bench-run: %s (try --help)\n", error->message);
      return 2;
    }
  if (scenario_path == NULL || repeat < 1 || repeat > 1000 || dozers < 0
      || dozers > SF_MAX_DOZERS || operators < 0 || !(scale_length >= 1.0 && scale_length <= 100.0))
    {
      g_printerr ("bench-run: need --scenario FILE, 1 <= --repeat <= 1000, 0 <= --dozers <= %d, "
                  "--operators >= 0, 1 <= --scale-length <= 100 (try --help)\n",
                  SF_MAX_DOZERS);
      return 2;
    }

  gint64 t0 = g_get_monotonic_time ();
  g_autoptr (SfScenario) sc = sf_scenario_load_from_file (scenario_path, &error);
  if (!sc)
    {
      g_printerr ("bench-run: %s\n", error->message);
      return 3;
    }
  double load_s = (double) (g_get_monotonic_time () - t0) / 1e6;
  if (!scale_strip (sc, scale_length, &error))
    {
      g_printerr ("bench-run: %s\n", error->message);
      return 2;
    }
  double hwm_load_mb = vm_hwm_mb ();

  SfRunOptions opt = SF_RUN_OPTIONS_INIT;
  opt.out_dir = NULL;
  opt.progress = FALSE;
  opt.seed = seed;
  opt.n_dozers = dozers;
  opt.operators = operators;

  g_autofree double *wall_s = g_new (double, repeat);
  g_autofree double *run_cpu_s = g_new (double, repeat);
  SfRunSummary first = { 0 };
  guint n_dozers_run = 0;
  for (gint r = 0; r < repeat; r++)
    {
      SfRunSummary sum = { 0 };
      double c0 = cpu_s ();
      t0 = g_get_monotonic_time ();
      gboolean ok = sf_run (sc, &opt, &sum, &error);
      wall_s[r] = (double) (g_get_monotonic_time () - t0) / 1e6;
      run_cpu_s[r] = cpu_s () - c0;
      if (!ok)
        {
          g_printerr ("bench-run: run %d failed: %s\n", r + 1, error->message);
          sf_run_summary_clear (&first);
          return 1;
        }
      if (r == 0)
        {
          n_dozers_run = sum.dozers ? sum.dozers->len : 0;
          first = sum; /* keeps the first summary; cleared at the end */
          continue;
        }
      gboolean same = sum.pushes == first.pushes && sum.events == first.events
                      && sum.calendar_ms == first.calendar_ms;
      sf_run_summary_clear (&sum);
      if (!same)
        {
          g_printerr ("bench-run: run %d differs from run 1 (not deterministic)\n", r + 1);
          sf_run_summary_clear (&first);
          return 1;
        }
    }

  double best_s, median_s, cpu_best_s, cpu_median_s;
  best_median (wall_s, repeat, &best_s, &median_s);
  best_median (run_cpu_s, repeat, &cpu_best_s, &cpu_median_s);

  printf ("scenario=%s\n", sf_scenario_get_name (sc));
  printf ("strip_length_m=%.0f\n", sc->strip.length_m);
  printf ("blocks=%u\n", sf_scenario_get_n_blocks (sc));
  printf ("lanes_per_block=%u\n", sf_scenario_get_n_lanes (sc));
  printf ("dozers=%u\n", n_dozers_run);
  printf ("repeat=%d\n", repeat);
  printf ("load_s=%.3f\n", load_s);
  for (gint r = 0; r < repeat; r++)
    printf ("wall_s_run%d=%.3f\n", r + 1, wall_s[r]);
  printf ("wall_s_best=%.3f\n", best_s);
  printf ("wall_s_median=%.3f\n", median_s);
  printf ("cpu_s_best=%.3f\n", cpu_best_s);
  printf ("cpu_s_median=%.3f\n", cpu_median_s);
  printf ("events_per_s=%.0f\n", best_s > 0 ? (double) first.events / best_s : 0.0);
  printf ("pushes_per_s=%.0f\n", best_s > 0 ? (double) first.pushes / best_s : 0.0);
  printf ("peak_rss_mb=%.1f\n", peak_rss_mb ());
  printf ("vm_hwm_mb=%.1f\n", vm_hwm_mb ());
  printf ("vm_hwm_load_mb=%.1f\n", hwm_load_mb);
  printf ("calendar_h=%.1f\n", first.calendar_h);
  printf ("pushes=%u\n", first.pushes);
  printf ("events=%" G_GUINT64_FORMAT "\n", first.events);
  printf ("end_reason=%s\n", first.end_reason ? first.end_reason : "");
  sf_run_summary_clear (&first);
  return 0;
}
