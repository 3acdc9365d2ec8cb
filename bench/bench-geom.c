/* SPDX-License-Identifier: MIT
 *
 * bench-geom.c — micro-benchmark of the profile operations in sim/sf-geom.c.
 *
 * Owns nothing beyond its own stack arrays and one GRand (freed at exit).
 * On a 300-cell lane profile with 0.5 m cells it times, with many
 * repetitions and g_get_monotonic_time:
 *   relax_full_us   a relaxation of the whole profile to rest after a random
 *                   disturbance of every cell;
 *   relax_local_us  one local relaxation after a single-cell deposit on a
 *                   profile at rest;
 *   deposit_face_us one dump face of about 20 m2 built into a void.
 * Each repetition starts from a fresh copy of the input; the time of the copy
 * alone is measured separately and taken off.  Output: `name_us=value` lines,
 * mean microseconds per operation.  The profiles are invented test shapes.
 * The seed is fixed, so every run does the same work.
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include <glib.h>

#include "sf-geom.h"

enum { N_CELLS = 300 };
static const double DX_M = 0.5;
static const double X0_M = 0.0;
static const double TAN_REPOSE = 0.75355405010279419; /* 37 deg */
static const double TOL_M = 1e-9;

/* Ground of the benchmark lane: a bench at 0 m, a vertical 20 m highwall
 * down to the void floor from cell 150, the floor rising gently beyond. */
static void
make_ground (double *base)
{
  for (guint i = 0; i < N_CELLS; i++)
    base[i] = i < 150 ? 0.0 : -20.0 + 0.02 * (i - 150) * DX_M;
}

/* Mean microseconds per repetition of copying `src` into `dst`. */
static double
time_copy_us (double *dst, const double *src, guint reps)
{
  gint64 t0 = g_get_monotonic_time ();
  for (guint r = 0; r < reps; r++)
    {
      memcpy (dst, src, N_CELLS * sizeof (double));
      __asm__ __volatile__ ("" : : "r"(dst) : "memory"); /* keep the copy */
    }
  return (double) (g_get_monotonic_time () - t0) / reps;
}

int
main (void)
{
  double base[N_CELLS], start[N_CELLS], rest[N_CELLS], z[N_CELLS];
  g_autoptr (GRand) rng = g_rand_new_with_seed (4242);
  make_ground (base);

  /* (a) Loose spoil 0..3 m deep on every cell, relaxed over the whole lane. */
  for (guint i = 0; i < N_CELLS; i++)
    start[i] = base[i] + g_rand_double_range (rng, 0.0, 3.0);
  const guint reps_a = 2000;
  guint moves_a = 0;
  gint64 t0 = g_get_monotonic_time ();
  for (guint r = 0; r < reps_a; r++)
    {
      memcpy (z, start, sizeof z);
      moves_a = sf_heights_relax (z, base, N_CELLS, DX_M, TAN_REPOSE, 0, N_CELLS, TOL_M, NULL,
                                  NULL);
    }
  double full_us = (double) (g_get_monotonic_time () - t0) / reps_a;
  full_us -= time_copy_us (z, start, reps_a);
  memcpy (rest, z, sizeof z); /* the lane at rest */

  /* (b) 1 m2 dropped on one cell of the lane at rest, relaxed locally.  The
   * cell walks over the bench and the spoil so the work varies. */
  const guint reps_b = 200000;
  guint64 moves_b = 0;
  t0 = g_get_monotonic_time ();
  for (guint r = 0; r < reps_b; r++)
    {
      guint i = 20 + (r * 37) % 260;
      memcpy (z, rest, sizeof z);
      z[i] += 1.0 / DX_M;
      moves_b += sf_heights_relax (z, base, N_CELLS, DX_M, TAN_REPOSE, i, i + 1, TOL_M, NULL, NULL);
    }
  double local_us = (double) (g_get_monotonic_time () - t0) / reps_b;
  local_us -= time_copy_us (z, rest, reps_b);

  /* (c) A 20 m2 dump face from the highwall crest (cell 149) into the void. */
  for (guint i = 0; i < N_CELLS; i++)
    start[i] = base[i];
  const guint reps_c = 500000;
  guint front = 0;
  double unfit = 0;
  t0 = g_get_monotonic_time ();
  for (guint r = 0; r < reps_c; r++)
    {
      memcpy (z, start, sizeof z);
      unfit += sf_heights_deposit_face (z, N_CELLS, X0_M, DX_M, 149, 0.0, TAN_REPOSE,
                                        19.5 + 0.001 * (r % 1000), &front);
    }
  double face_us = (double) (g_get_monotonic_time () - t0) / reps_c;
  face_us -= time_copy_us (z, start, reps_c);

  printf ("cells=%d\n", N_CELLS);
  printf ("cell_m=%.2f\n", DX_M);
  printf ("relax_full_moves=%u\n", moves_a);
  printf ("relax_full_us=%.3f\n", full_us);
  printf ("relax_local_moves_mean=%.1f\n", (double) moves_b / reps_b);
  printf ("relax_local_us=%.3f\n", local_us);
  printf ("deposit_face_cells=%u\n", front - 149);
  printf ("deposit_face_us=%.3f\n", face_us);
  return unfit == 0.0 ? 0 : 1;
}
