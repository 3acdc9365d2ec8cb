/* SPDX-License-Identifier: MIT
 *
 * test-geom.c — unit tests of sim/sf-geom.c (polygons, x-monotone strings,
 * profiles, relaxation and dump faces at the angle of repose).
 *
 * Every expected value is worked out by hand from plane geometry ("analytic")
 * or by an independent method written here (brute-force pair tests in exact
 * integer arithmetic; the pile formula solved by bisection).  Each check
 * names its source beside it.  The tests allocate with GLib and free
 * everything they allocate.
 */
#include "sf-test.h"

#include <math.h>
#include <string.h>

#include "sf-geom.h"

#define N_OF(a) (sizeof (a) / sizeof ((a)[0]))

static const double TAN37 = 0.75355405010279419; /* tan 37 deg, a spoil angle of repose */

static double
sum_of (const double *z, guint n)
{
  double s = 0;
  for (guint i = 0; i < n; i++)
    s += z[i];
  return s;
}

/* ---- polygons ---------------------------------------------------------- */

static void
test_poly_triangle (void **state)
{
  (void) state;
  const SfPoint t[] = { { 0, 0 }, { 4, 0 }, { 0, 3 } };
  SfPoint c = { -1, -1 };
  double a = 0;
  sf_assert_close (sf_poly_area (t, 3), 6.0, 1e-15, 0); /* analytic: base 4 x height 3 / 2 */
  assert_true (sf_poly_centroid (t, 3, &c, &a));
  sf_assert_close (a, 6.0, 1e-15, 0);                   /* analytic */
  sf_assert_close (c.x_m, 4.0 / 3.0, 1e-15, 0);         /* analytic: mean of the vertices */
  sf_assert_close (c.z_m, 1.0, 1e-15, 0);               /* analytic: mean of the vertices */
}

static void
test_poly_rectangle_far (void **state)
{
  (void) state;
  /* A 4 x 2 rectangle 1e5 m from the origin: the shift keeps full accuracy. */
  const double o = 1e5;
  const SfPoint r[] = { { o + 1, o + 1 }, { o + 5, o + 1 }, { o + 5, o + 3 }, { o + 1, o + 3 } };
  SfPoint c;
  double a;
  sf_assert_close (sf_poly_area (r, 4), 8.0, 1e-12, 0); /* analytic: 4 x 2 */
  assert_true (sf_poly_centroid (r, 4, &c, &a));
  sf_assert_close (c.x_m, o + 3, 1e-10, 0);              /* analytic: centre of the rectangle */
  sf_assert_close (c.z_m, o + 2, 1e-10, 0);              /* analytic: centre of the rectangle */
}

static void
test_poly_lshape (void **state)
{
  (void) state;
  /* L = [0,2]x[0,1] (area 2, centre (1, 0.5)) + [0,1]x[1,2] (area 1, centre (0.5, 1.5)). */
  const SfPoint l[] = { { 0, 0 }, { 2, 0 }, { 2, 1 }, { 1, 1 }, { 1, 2 }, { 0, 2 } };
  SfPoint c;
  double a;
  assert_true (sf_poly_centroid (l, N_OF (l), &c, &a));
  sf_assert_close (a, 3.0, 1e-15, 0);             /* analytic: 2 + 1 */
  sf_assert_close (c.x_m, 2.5 / 3.0, 1e-15, 0);   /* analytic: (2*1 + 1*0.5) / 3 */
  sf_assert_close (c.z_m, 2.5 / 3.0, 1e-15, 0);   /* analytic: (2*0.5 + 1*1.5) / 3 */
}

static void
test_poly_clockwise (void **state)
{
  (void) state;
  const SfPoint t[] = { { 0, 0 }, { 0, 3 }, { 4, 0 } };
  SfPoint c;
  double a;
  sf_assert_close (sf_poly_area (t, 3), -6.0, 1e-15, 0); /* analytic: clockwise gives minus */
  assert_true (sf_poly_centroid (t, 3, &c, &a));
  sf_assert_close (a, -6.0, 1e-15, 0);                   /* analytic */
  sf_assert_close (c.x_m, 4.0 / 3.0, 1e-15, 0);          /* analytic: orientation-free */
  sf_assert_close (c.z_m, 1.0, 1e-15, 0);                /* analytic */
}

static void
test_poly_degenerate (void **state)
{
  (void) state;
  const SfPoint p[] = { { 0, 0 }, { 1, 1 }, { 2, 2 } };
  SfPoint c = { 7, 7 };
  double a = 9;
  assert_true (sf_poly_area (NULL, 0) == 0.0); /* analytic: no polygon */
  assert_true (sf_poly_area (p, 1) == 0.0);    /* analytic */
  assert_true (sf_poly_area (p, 2) == 0.0);    /* analytic */
  assert_true (sf_poly_area (p, 3) == 0.0);    /* analytic: collinear, no area */
  assert_false (sf_poly_centroid (p, 3, &c, &a));
  assert_true (a == 0.0);
  assert_true (c.x_m == 7 && c.z_m == 7); /* contract: untouched when the area is zero */
  assert_false (sf_poly_centroid (p, 0, &c, NULL));
  assert_false (sf_poly_centroid (NULL, 0, NULL, NULL));
}

/* ---- self-intersection ------------------------------------------------- */

static void
test_selfx_bowtie (void **state)
{
  (void) state;
  const SfPoint b[] = { { 0, 0 }, { 2, 2 }, { 2, 0 }, { 0, 2 } };
  gsize a = 99, c = 99;
  /* analytic: the diagonals 0 and 2 cross at (1, 1) */
  assert_true (sf_polygon_self_intersects (b, 4, &a, &c));
  assert_int_equal (a, 0);
  assert_int_equal (c, 2);
  a = c = 99;
  assert_true (sf_polyline_self_intersects (b, 4, &a, &c));
  assert_int_equal (a, 0);
  assert_int_equal (c, 2);
  /* analytic: the area of a bow-tie cancels (two opposite triangles of area 1) */
  sf_assert_close (sf_poly_area (b, 4), 0.0, 1e-15, 0);
}

static void
test_selfx_clean (void **state)
{
  (void) state;
  const SfPoint zig[] = { { 0, 0 }, { 1, 2 }, { 2, 0 }, { 3, 2 }, { 4, 0 }, { 5, 2 } };
  const SfPoint sq[] = { { 0, 0 }, { 1, 0 }, { 1, 1 }, { 0, 1 } };
  const SfPoint l[] = { { 0, 0 }, { 2, 0 }, { 2, 1 }, { 1, 1 }, { 1, 2 }, { 0, 2 } };
  /* A folded string going out and back that never meets itself. */
  const SfPoint hook[] = { { 0, 0 }, { 10, 0 }, { 10, 1 }, { 1, 1 }, { 1, 2 }, { 12, 2 } };
  gsize a = 77, c = 77;
  assert_false (sf_polyline_self_intersects (zig, N_OF (zig), &a, &c)); /* analytic */
  assert_true (a == 77 && c == 77);
  assert_false (sf_polygon_self_intersects (sq, 4, NULL, NULL));        /* analytic */
  assert_false (sf_polygon_self_intersects (l, N_OF (l), NULL, NULL));  /* analytic */
  assert_false (sf_polyline_self_intersects (hook, N_OF (hook), NULL, NULL)); /* analytic */
  /* Closing the hook joins (12,2) to (0,0) along z = x/6, which crosses
   * segment 2 (z = 1) at (6, 1) (analytic). */
  assert_true (sf_polygon_self_intersects (hook, N_OF (hook), &a, &c));
  assert_int_equal (a, 2);
  assert_int_equal (c, 5);
  /* Degenerate inputs: no segments or only neighbours */
  assert_false (sf_polyline_self_intersects (NULL, 0, NULL, NULL));
  assert_false (sf_polyline_self_intersects (zig, 1, NULL, NULL));
  assert_false (sf_polyline_self_intersects (zig, 2, NULL, NULL));
  assert_false (sf_polyline_self_intersects (zig, 3, NULL, NULL));
  assert_false (sf_polygon_self_intersects (zig, 2, NULL, NULL));
  assert_false (sf_polygon_self_intersects (zig, 3, NULL, NULL));
}

static void
test_selfx_touch_and_overlap (void **state)
{
  (void) state;
  gsize a, c;
  /* The last vertex lands on segment 0 at (2, 0): touching counts (analytic). */
  const SfPoint touch[] = { { 0, 0 }, { 4, 0 }, { 4, 2 }, { 2, 2 }, { 2, 0 } };
  assert_true (sf_polyline_self_intersects (touch, N_OF (touch), &a, &c));
  assert_int_equal (a, 0);
  assert_int_equal (c, 3);
  /* Segment 4 runs back along segment 0 (collinear overlap, analytic). */
  const SfPoint over[] = { { 0, 0 }, { 4, 0 }, { 4, 1 }, { 6, 1 }, { 6, 0 }, { 2, 0 } };
  assert_true (sf_polyline_self_intersects (over, N_OF (over), &a, &c));
  assert_int_equal (a, 0);
  assert_int_equal (c, 4);
  /* Collinear but apart: (0,0)-(1,0) and (2,0)-(3,0) do not meet (analytic). */
  const SfPoint gap[] = { { 0, 0 }, { 1, 0 }, { 1, 1 }, { 2, 1 }, { 2, 0 }, { 3, 0 } };
  assert_false (sf_polyline_self_intersects (gap, N_OF (gap), NULL, NULL));
  /* Vertical pieces stacked on one x: (1,0)-(1,1) and (1,2)-(1,3) apart, then touching. */
  const SfPoint stack_apart[] = { { 0, 0 }, { 1, 0 }, { 1, 1 }, { 2, 1 },
                                  { 2, 2 }, { 1, 2 }, { 1, 3 } };
  assert_false (sf_polyline_self_intersects (stack_apart, N_OF (stack_apart), NULL, NULL));
  const SfPoint stack_touch[] = { { 0, 0 }, { 1, 0 }, { 1, 1 }, { 2, 1 },
                                  { 2, 2 }, { 1, 2 }, { 1, 1 } };
  assert_true (sf_polyline_self_intersects (stack_touch, N_OF (stack_touch), &a, &c));
  assert_int_equal (a, 1); /* analytic: the last vertex (1,1) ends segment 1 */
  assert_int_equal (c, 5);
  /* A neighbour that doubles back: (0,0)-(2,0)-(1,0) (analytic: overlap on [1,2]). */
  const SfPoint fold[] = { { 0, 0 }, { 2, 0 }, { 1, 0 } };
  assert_true (sf_polyline_self_intersects (fold, 3, &a, &c));
  assert_int_equal (a, 0);
  assert_int_equal (c, 1);
  /* The same as a polygon: a zero-width spike (analytic). */
  assert_true (sf_polygon_self_intersects (fold, 3, NULL, NULL));
  /* A straight continuation is not a fold (analytic). */
  const SfPoint straight[] = { { 0, 0 }, { 1, 0 }, { 2, 0 } };
  assert_false (sf_polyline_self_intersects (straight, 3, NULL, NULL));
}

static void
test_selfx_far_from_origin (void **state)
{
  (void) state;
  /* Exact predicates: a vertex exactly on a segment 1e6 m from the origin
   * touches; nudged off the line by one unit in the last place it does not. */
  const double o = 1e6 + 0.125;
  SfPoint p[] = { { o, o }, { o + 3, o + 1 }, { o + 3, o + 2 }, { o + 1.5, o + 0.5 } };
  /* analytic: (o+1.5, o+0.5) lies on segment 0 */
  assert_true (sf_polyline_self_intersects (p, 4, NULL, NULL));
  p[3].z_m = nextafter (o + 0.5, INFINITY);
  assert_false (sf_polyline_self_intersects (p, 4, NULL, NULL)); /* analytic: above the line */
  p[3].z_m = nextafter (o + 0.5, -INFINITY);
  /* analytic: below the line, segment 2 crosses segment 0 */
  assert_true (sf_polyline_self_intersects (p, 4, NULL, NULL));
}

/* Brute force in exact integer arithmetic (textbook segment test by
 * orientation signs, e.g. Cormen et al., Introduction to Algorithms, 33.1). */
static int
iorient (const gint64 *a, const gint64 *b, const gint64 *c)
{
  gint64 d = (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]);
  return (d > 0) - (d < 0);
}

static gboolean
ion (const gint64 *a, const gint64 *b, const gint64 *c)
{
  return MIN (a[0], b[0]) <= c[0] && c[0] <= MAX (a[0], b[0]) && MIN (a[1], b[1]) <= c[1]
         && c[1] <= MAX (a[1], b[1]);
}

static gboolean
imeet (const gint64 *a, const gint64 *b, const gint64 *c, const gint64 *d)
{
  int o1 = iorient (a, b, c), o2 = iorient (a, b, d);
  int o3 = iorient (c, d, a), o4 = iorient (c, d, b);
  if (o1 * o2 < 0 && o3 * o4 < 0)
    return TRUE;
  return (o1 == 0 && ion (a, b, c)) || (o2 == 0 && ion (a, b, d)) || (o3 == 0 && ion (c, d, a))
         || (o4 == 0 && ion (c, d, b));
}

/* p -> q -> r with r going back over q (collinear and opposite). */
static gboolean
ifold (const gint64 *p, const gint64 *q, const gint64 *r)
{
  if (iorient (p, q, r) != 0)
    return FALSE;
  gint64 d = (q[0] - p[0]) * (r[0] - q[0]) + (q[1] - p[1]) * (r[1] - q[1]);
  return d < 0;
}

static gboolean
brute_selfx (gint64 (*v)[2], gsize n, gboolean closed, gsize *fa, gsize *fb)
{
  gsize m = closed ? n : n - 1;
  for (gsize a = 0; a < m; a++)
    for (gsize b = a + 1; b < m; b++)
      {
        gboolean adj = b == a + 1 || (closed && a == 0 && b == m - 1);
        gboolean hit;
        if (adj)
          {
            gsize s = b == a + 1 ? a : b; /* segment that comes first around the shared vertex */
            gsize t = b == a + 1 ? b : a;
            hit = ifold (v[s], v[(s + 1) % n], v[(t + 1) % n]);
          }
        else
          hit = imeet (v[a], v[(a + 1) % n], v[b], v[(b + 1) % n]);
        if (hit)
          {
            *fa = a;
            *fb = b;
            return TRUE;
          }
      }
  return FALSE;
}

static void
test_selfx_random_vs_brute (void **state)
{
  (void) state;
  g_autoptr (GRand) r = g_rand_new_with_seed (20261201);
  int hits = 0, clean = 0;
  enum { NMAX = 700 };
  gint64 (*v)[2] = g_malloc (sizeof (gint64[2]) * NMAX);
  SfPoint *p = g_new (SfPoint, NMAX);
  for (int trial = 0; trial < 4100; trial++)
    {
      /* Small strings, then long ones with hundreds of monotone runs. */
      gsize n = trial < 4000 ? 3 + g_rand_int_range (r, 0, 10) : 300 + g_rand_int_range (r, 0, 400);
      int span = trial < 4000 ? g_rand_int_range (r, 2, 8) : 400;
      /* Mostly marching right with small coordinates, so touching,
       * collinear and vertical cases are frequent. */
      gint64 x = 0;
      for (gsize i = 0; i < n; i++)
        {
          x += g_rand_int_range (r, -2, 4);
          v[i][0] = x;
          v[i][1] = g_rand_int_range (r, 0, span);
          p[i].x_m = 1000.0 + 0.5 * (double) v[i][0]; /* exact scaled copies */
          p[i].z_m = -200.0 + 0.5 * (double) v[i][1];
        }
      if (trial >= 4000 && trial % 2)
        for (gsize i = 0; i < n; i++) /* a string that mostly keeps clear of itself */
          {
            v[i][1] = (gint64) i * 3 + g_rand_int_range (r, 0, 3);
            p[i].z_m = -200.0 + 0.5 * (double) v[i][1];
          }
      for (int closed = 0; closed < 2; closed++)
        {
          gsize ea = 0, eb = 0, ga = 0, gb = 0;
          gboolean want = brute_selfx (v, n, closed, &ea, &eb);
          gboolean got = closed ? sf_polygon_self_intersects (p, n, &ga, &gb)
                                : sf_polyline_self_intersects (p, n, &ga, &gb);
          /* textbook brute force in exact integers (see brute_selfx) */
          assert_int_equal (got, want);
          if (want)
            {
              assert_int_equal (ga, ea);
              assert_int_equal (gb, eb);
              hits++;
            }
          else
            clean++;
        }
    }
  assert_true (hits > 500 && clean > 500); /* both outcomes were exercised */
  g_free (v);
  g_free (p);
}

/* ---- x-monotone strings ------------------------------------------------ */

/* A trapezoid bank: up 2 over 2 m, flat 4 m at 3, down 2 over 2 m. */
static const SfPoint TRAP[] = { { 0, 1 }, { 2, 3 }, { 6, 3 }, { 8, 1 } };

static void
test_polyline_eval (void **state)
{
  (void) state;
  /* analytic: held constant beyond the start */
  sf_assert_close (sf_polyline_eval (TRAP, 4, -5), 1.0, 0, 0);
  sf_assert_close (sf_polyline_eval (TRAP, 4, 0), 1.0, 0, 0);   /* analytic: vertex */
  sf_assert_close (sf_polyline_eval (TRAP, 4, 1), 2.0, 1e-15, 0); /* analytic: half way up */
  sf_assert_close (sf_polyline_eval (TRAP, 4, 2), 3.0, 1e-15, 0); /* analytic: vertex */
  sf_assert_close (sf_polyline_eval (TRAP, 4, 4.5), 3.0, 1e-15, 0); /* analytic: top */
  sf_assert_close (sf_polyline_eval (TRAP, 4, 7.5), 1.5, 1e-15, 0); /* analytic: 3 - 1.5 */
  sf_assert_close (sf_polyline_eval (TRAP, 4, 8), 1.0, 1e-15, 0);   /* analytic: vertex */
  /* analytic: held constant beyond the end; one point is a constant */
  sf_assert_close (sf_polyline_eval (TRAP, 4, 100), 1.0, 0, 0);
  sf_assert_close (sf_polyline_eval (TRAP, 1, 100), 1.0, 0, 0);
  /* contract: an empty string is 0 */
  sf_assert_close (sf_polyline_eval (NULL, 0, 1), 0.0, 0, 0);
}

static void
test_polyline_integral (void **state)
{
  (void) state;
  /* analytic: 2*(1+3)/2 + 4*3 + 2*(3+1)/2 = 20 */
  sf_assert_close (sf_polyline_integral (TRAP, 4, 0, 8), 20.0, 1e-13, 0);
  /* analytic: 20 + 2*1 + 2*1 with the ends held constant */
  sf_assert_close (sf_polyline_integral (TRAP, 4, -2, 10), 24.0, 1e-13, 0);
  /* analytic: 1*(2+3)/2 + 4*3 + 1*(3+2)/2 = 17 */
  sf_assert_close (sf_polyline_integral (TRAP, 4, 1, 7), 17.0, 1e-13, 0);
  /* analytic: inside one segment, (2.5 + 3)/2 * 1 on [1.5, 2.5] -> 0.5*(2.5+3)/2 + 0.5*3 */
  sf_assert_close (sf_polyline_integral (TRAP, 4, 1.5, 2.5), 0.5 * 2.75 + 1.5, 1e-14, 0);
  /* analytic: entirely beyond the ends */
  sf_assert_close (sf_polyline_integral (TRAP, 4, -7, -3), 4.0, 1e-14, 0);
  sf_assert_close (sf_polyline_integral (TRAP, 4, 9, 12), 3.0, 1e-14, 0);
  /* analytic: reversed limits change sign, equal limits give 0 */
  sf_assert_close (sf_polyline_integral (TRAP, 4, 7, 1), -17.0, 1e-13, 0);
  sf_assert_close (sf_polyline_integral (TRAP, 4, 3, 3), 0.0, 0, 0);
  /* analytic: one point is a constant; none is 0 */
  sf_assert_close (sf_polyline_integral (TRAP, 1, -1, 2), 3.0, 1e-15, 0);
  sf_assert_close (sf_polyline_integral (NULL, 0, -1, 2), 0.0, 0, 0);
}

/* ---- profiles ---------------------------------------------------------- */

static void
test_profile_new_copy_cell (void **state)
{
  (void) state;
  g_autoptr (SfProfile) p = sf_profile_new (10.0, 0.5, 4);
  assert_non_null (p);
  for (guint i = 0; i < 4; i++)
    assert_true (p->z[i] == 0.0); /* contract: a new profile is flat at 0 */
  p->z[2] = 5;
  g_autoptr (SfProfile) c = sf_profile_copy (p);
  /* contract: a deep copy */
  assert_true (c->z != p->z && c->z[2] == 5 && c->n == 4 && c->dx_m == 0.5 && c->x0_m == 10.0);
  sf_assert_close (sf_profile_x (p, 1), 10.75, 0, 0); /* analytic: 10 + 1.5 * 0.5 */
  assert_int_equal (sf_profile_cell (p, 9.0), 0);     /* analytic: clamped below */
  assert_int_equal (sf_profile_cell (p, 10.49), 0);   /* analytic */
  assert_int_equal (sf_profile_cell (p, 10.5), 1);    /* analytic: left edge belongs to the cell */
  assert_int_equal (sf_profile_cell (p, 11.9), 3);    /* analytic */
  assert_int_equal (sf_profile_cell (p, 50.0), 3);    /* analytic: clamped above */
  assert_int_equal (sf_profile_cell (p, NAN), 0);    /* contract: clamped */
  /* Degenerate: an empty profile */
  g_autoptr (SfProfile) e = sf_profile_new (0, 1, 0);
  assert_non_null (e);
  g_autoptr (SfProfile) ec = sf_profile_copy (e);
  assert_non_null (ec);
  assert_int_equal (sf_profile_cell (e, 3), 0);
  sf_profile_sample_polyline (e, TRAP, 4); /* nothing to do, must not crash */
  sf_profile_free (NULL);
  assert_null (sf_profile_copy (NULL));
}

static void
test_profile_sample_line (void **state)
{
  (void) state;
  /* z = 2 + 0.3 x given by three collinear vertices; cells x0 = 3, dx = 0.5. */
  const SfPoint line[] = { { -10, -1 }, { 40, 14 }, { 200, 62 } };
  g_autoptr (SfProfile) p = sf_profile_new (3.0, 0.5, 300);
  sf_profile_sample_polyline (p, line, 3);
  for (guint i = 0; i < p->n; i++)
    /* analytic: the mean of a linear function over a cell is its value at the centre */
    sf_assert_close (p->z[i], 2 + 0.3 * sf_profile_x (p, i), 1e-12, 0);
}

static void
test_profile_sample_v (void **state)
{
  (void) state;
  /* V: z = |x - 10.2| on [0, 20], held at 10.2 / 9.8 beyond. */
  const SfPoint v[] = { { 0, 10.2 }, { 10.2, 0 }, { 20, 9.8 } };
  g_autoptr (SfProfile) p = sf_profile_new (-1.0, 0.5, 46); /* [-1, 22] */
  sf_profile_sample_polyline (p, v, 3);
  /* analytic: cell [10, 10.5] holds the vertex: (0.2^2/2 + 0.3^2/2) / 0.5 = 0.13 */
  guint iv = sf_profile_cell (p, 10.2);
  assert_int_equal (iv, 22);
  sf_assert_close (p->z[iv], 0.13, 1e-13, 0);
  /* analytic: away from the vertex the mean is the value at the centre */
  sf_assert_close (p->z[10], fabs (sf_profile_x (p, 10) - 10.2), 1e-13, 0);
  sf_assert_close (p->z[30], fabs (sf_profile_x (p, 30) - 10.2), 1e-13, 0);
  /* analytic: beyond the ends the string is held constant */
  sf_assert_close (p->z[0], 10.2, 1e-13, 0);
  sf_assert_close (p->z[45], 9.8, 1e-13, 0);
  /* analytic: sum z dx over [0, 20] = 10.2^2/2 + 9.8^2/2 = 100.04 */
  sf_assert_close (sum_of (p->z + 2, 40) * 0.5, 100.04, 1e-12, 0);
}

static void
test_area_between_wedge (void **state)
{
  (void) state;
  /* Triangle wedge between z = 0.5 x and z = 0 over [0, 10], 20 cells. */
  const SfPoint w[] = { { 0, 0 }, { 10, 5 } };
  g_autoptr (SfProfile) up = sf_profile_new (0, 0.5, 20);
  sf_profile_sample_polyline (up, w, 2);
  double lower[20] = { 0 };
  double cx = -1, cz = -1;
  double a = sf_heights_area_between (up->z, lower, 0, 20, 0, 0.5, &cx, &cz);
  sf_assert_close (a, 25.0, 1e-12, 0); /* analytic: 10 * 5 / 2 */
  /* analytic: the cells are rectangles of height 0.5 x_i; with the midpoint
   * rule sum x_i^2 dx = L^3/3 - L dx^2/12, so cx = 0.5 (L^3/3 - L dx^2/12) / A
   * and cz = 0.125 (L^3/3 - L dx^2/12) / A.  They tend to the triangle's
   * centroid (2L/3, H/3) = (6.667, 1.667) as dx -> 0. */
  double m2 = 1000.0 / 3.0 - 10 * 0.25 / 12.0;
  sf_assert_close (cx, 0.5 * m2 / 25.0, 1e-12, 0);
  sf_assert_close (cz, 0.125 * m2 / 25.0, 1e-12, 0);
  sf_assert_close (cx, 20.0 / 3.0, 0.01, 0); /* analytic: triangle centroid, within O(dx^2) */
  sf_assert_close (cz, 5.0 / 3.0, 0.01, 0);  /* analytic */
  /* Only the part where upper > lower counts; reversed arrays give 0 and leave cx, cz. */
  cx = cz = -1;
  sf_assert_close (sf_heights_area_between (lower, up->z, 0, 20, 0, 0.5, &cx, &cz), 0.0, 0, 0);
  assert_true (cx == -1 && cz == -1); /* contract: untouched when the area is 0 */
  /* analytic: cells [10, 20) span x in [5, 10]: 25 - 5 * 2.5 / 2 = 18.75 */
  double a_sub = sf_heights_area_between (up->z, lower, 10, 20, 0, 0.5, NULL, NULL);
  sf_assert_close (a_sub, 18.75, 1e-12, 0);
  /* analytic: an empty range holds nothing */
  sf_assert_close (sf_heights_area_between (up->z, lower, 5, 5, 0, 0.5, NULL, NULL), 0.0, 0, 0);
}

/* ---- relaxation -------------------------------------------------------- */

/* Post-condition of sf_heights_relax checked pair by pair. */
static void
assert_stable (const double *z, const double *base, guint n, double dx, double tn, double tol)
{
  for (guint i = 0; i + 1 < n; i++)
    {
      guint h = z[i] > z[i + 1] ? i : i + 1;
      if (base && !(z[h] > base[h] + tol))
        continue;
      double s = fabs (z[i + 1] - z[i]) / dx;
      /* analytic: at rest no loose slope is steeper than repose (one cell's tolerance) */
      sf_assert_close (MIN (s, tn + tol / dx), s, 1e-12, 0);
    }
  /* analytic: the same through the library's own measure */
  assert_true (sf_heights_max_loose_slope (z, base, n, dx, tol) <= tn + tol / dx + 1e-12);
}

static void
test_relax_spike (void **state)
{
  (void) state;
  enum { N = 300 };
  const double dx = 0.5, tol = 1e-6;
  double z[N] = { 0 };
  z[150] = 20.0; /* a 20 m column one cell wide: 10 m2 of section */
  double s0 = sum_of (z, N);
  guint lo, hi;
  guint moves = sf_heights_relax (z, NULL, N, dx, TAN37, 150, 151, tol, &lo, &hi);
  assert_true (moves > 0);
  assert_stable (z, NULL, N, dx, TAN37, tol);
  sf_assert_close (sum_of (z, N), s0, 0, 1e-12); /* analytic: material is conserved */
  /* analytic: a pile at repose holding A = 10 m2 has height sqrt(A tan) = 2.75 m
   * and half-width sqrt(A / tan) = 3.64 m (7.3 cells); a discrete pile that is
   * stable may stand lower and wider, never higher than a cell's slope above it */
  double peak = 0;
  for (guint i = 0; i < N; i++)
    peak = MAX (peak, z[i]);
  assert_true (peak <= sqrt (10.0 * TAN37) + dx * TAN37);
  assert_true (peak >= 0.5 * sqrt (10.0 * TAN37));
  /* contract: local, only cells [lo, hi) changed and the rest is bit for bit as before */
  assert_true (lo < 150 && hi > 151 && hi - lo < 60);
  for (guint i = 0; i < N; i++)
    if (i < lo || i >= hi)
      assert_true (z[i] == 0.0);
  /* analytic: a profile at rest stays at rest; the touched range is empty */
  assert_int_equal (sf_heights_relax (z, NULL, N, dx, TAN37, 0, N, tol, &lo, &hi), 0);
  assert_int_equal (lo, hi);
}

static void
test_relax_step (void **state)
{
  (void) state;
  enum { N = 300 };
  const double dx = 0.5, tol = 1e-9;
  double z[N], base[N];
  for (guint i = 0; i < N; i++)
    {
      base[i] = 0.0;
      z[i] = i < 150 ? 10.0 : 0.0; /* a 10 m vertical step of loose spoil on flat ground */
    }
  double s0 = sum_of (z, N);
  sf_heights_relax (z, base, N, dx, TAN37, 149, 151, tol, NULL, NULL);
  assert_stable (z, base, N, dx, TAN37, tol);
  sf_assert_close (sum_of (z, N), s0, 0, 1e-12); /* analytic: conserved */
  for (guint i = 0; i < N; i++)
    assert_true (z[i] >= base[i]); /* contract: never below the base */
  /* analytic: the step falls to a slope no steeper than repose; its toe runs
   * out at least H / (2 tan) = 6.6 m ahead of the old edge (area balance) */
  assert_true (z[150 + 12] > 0.0);
  assert_true (z[0] == 10.0 && z[N - 1] == 0.0); /* analytic: far cells untouched */
}

static void
test_relax_highwall_untouched (void **state)
{
  (void) state;
  enum { N = 300 };
  const double dx = 0.5, tol = 1e-9;
  double z[N], base[N], z0[N];
  for (guint i = 0; i < N; i++)
    base[i] = z[i] = i < 100 ? 30.0 : 0.0; /* a 30 m vertical highwall of in-situ rock */
  z[50] += 4.0;                           /* loose spill on the bench above it */
  memcpy (z0, z, sizeof z);
  double s0 = sum_of (z, N);
  sf_heights_relax (z, base, N, dx, TAN37, 50, 51, tol, NULL, NULL);
  assert_stable (z, base, N, dx, TAN37, tol);
  sf_assert_close (sum_of (z, N), s0, 0, 1e-12); /* analytic: conserved */
  for (guint i = 0; i < N; i++)
    assert_true (z[i] >= base[i]); /* contract: never below the base */
  /* analytic: the non-erodible step holds no loose material and stays as it was */
  for (guint i = 70; i < N; i++)
    assert_true (z[i] == z0[i]);
  assert_true (z[99] - z[100] == 30.0);
}

static void
test_relax_highwall_edge (void **state)
{
  (void) state;
  enum { N = 300 };
  const double dx = 0.5, tol = 1e-9;
  double z[N], base[N];
  for (guint i = 0; i < N; i++)
    base[i] = z[i] = i < 100 ? 30.0 : 0.0;
  z[99] += 2.0; /* loose material right on the crest */
  double s0 = sum_of (z, N);
  sf_heights_relax (z, base, N, dx, TAN37, 99, 100, tol, NULL, NULL);
  assert_stable (z, base, N, dx, TAN37, tol);
  sf_assert_close (sum_of (z, N), s0, 0, 1e-12); /* analytic: conserved */
  /* analytic: nothing loose (more than the tolerance) stays on the crest cell */
  assert_true (z[99] >= base[99] && z[99] <= base[99] + tol);
  for (guint i = 0; i < N; i++)
    assert_true (z[i] >= base[i]);
  /* analytic: of the 1 m2, what stayed on the bench plus what fell to the
   * foot is 1 m2, and the bench keeps at most a repose wedge behind the
   * crest (a few cells of < dx tan each), so most of it fell */
  double bench = 0, foot = 0;
  for (guint i = 0; i < N; i++)
    {
      if (i < 100)
        bench += (z[i] - base[i]) * dx;
      else
        foot += (z[i] - base[i]) * dx;
    }
  sf_assert_close (bench + foot, 1.0, 1e-12, 0);
  assert_true (foot > 0.5);
}

static void
test_relax_random (void **state)
{
  (void) state;
  enum { N = 300 };
  const double dx = 0.5, tol = 1e-6;
  g_autoptr (GRand) r = g_rand_new_with_seed (7);
  for (int trial = 0; trial < 20; trial++)
    {
      double z[N], base[N];
      for (guint i = 0; i < N; i++)
        {
          base[i] = 2.0 * sin (i * 0.05) + (i > 200 ? -15.0 : 0.0);
          z[i] = base[i] + g_rand_double_range (r, 0, 3) * (g_rand_int_range (r, 0, 4) == 0);
        }
      double s0 = sum_of (z, N);
      sf_heights_relax (z, base, N, dx, TAN37, 0, N, tol, NULL, NULL);
      assert_stable (z, base, N, dx, TAN37, tol);
      sf_assert_close (sum_of (z, N), s0, 0, 1e-12); /* analytic: conserved */
      for (guint i = 0; i < N; i++)
        assert_true (z[i] >= base[i]); /* contract */
    }
}

static void
test_relax_degenerate (void **state)
{
  (void) state;
  double z[2] = { 5.0, 0.0 };
  guint lo = 9, hi = 9;
  assert_int_equal (sf_heights_relax (NULL, NULL, 0, 0.5, TAN37, 0, 0, 1e-9, &lo, &hi), 0);
  assert_int_equal (lo, hi);
  assert_int_equal (sf_heights_relax (z, NULL, 1, 0.5, TAN37, 0, 1, 1e-9, NULL, NULL), 0);
  assert_true (z[0] == 5.0);
  /* contract: a window beyond the profile is empty */
  assert_int_equal (sf_heights_relax (z, NULL, 2, 0.5, TAN37, 5, 9, 1e-9, NULL, NULL), 0);
  /* analytic: two cells 5 m apart, limit 0.5 tan: (5 - 0.5 tan)/2 moves in one step */
  assert_int_equal (sf_heights_relax (z, NULL, 2, 0.5, TAN37, 0, 2, 1e-9, &lo, &hi), 1);
  sf_assert_close (z[0] - z[1], 0.5 * TAN37, 1e-12, 0); /* ends exactly at the limit */
  sf_assert_close (z[0] + z[1], 5.0, 1e-15, 0);
  assert_int_equal (lo, 0);
  assert_int_equal (hi, 2);
  /* Loose material short of the excess: all of it goes (analytic). */
  double zb[2] = { 10.0, 0.0 }, bb[2] = { 9.0, 0.0 };
  assert_int_equal (sf_heights_relax (zb, bb, 2, 0.5, TAN37, 0, 2, 1e-9, NULL, NULL), 1);
  assert_true (zb[0] == 9.0 && zb[1] == 1.0);
  /* Bad parameters change nothing. */
  double zc[3] = { 9, 0, 0 };
  assert_int_equal (sf_heights_relax (zc, NULL, 3, 0.0, TAN37, 0, 3, 1e-9, NULL, NULL), 0);
  assert_int_equal (sf_heights_relax (zc, NULL, 3, 0.5, -1.0, 0, 3, 1e-9, NULL, NULL), 0);
  assert_int_equal (sf_heights_relax (zc, NULL, 3, 0.5, NAN, 0, 3, 1e-9, NULL, NULL), 0);
  assert_true (zc[0] == 9);
}

static void
test_max_loose_slope (void **state)
{
  (void) state;
  const double z[] = { 0, 1, 3, 3, 13 };
  const double base[] = { 0, 0, 0, 0, 13 };
  /* analytic: 10 m over 0.5 m */
  sf_assert_close (sf_heights_max_loose_slope (z, NULL, 5, 0.5, 1e-9), 20.0, 1e-15, 0);
  /* analytic: with cell 4 non-erodible the steepest loose pair is 1 -> 3 over 0.5 m */
  sf_assert_close (sf_heights_max_loose_slope (z, base, 5, 0.5, 1e-9), 4.0, 1e-15, 0);
  sf_assert_close (sf_heights_max_loose_slope (z, NULL, 1, 0.5, 1e-9), 0.0, 0, 0);
  sf_assert_close (sf_heights_max_loose_slope (NULL, NULL, 0, 0.5, 1e-9), 0.0, 0, 0);
}

/* ---- dump faces -------------------------------------------------------- */

/* The pile formula max(z_old, min(z_top, z_top - (x - x_f) tan)) over every
 * cell beyond the crest, with x_f found by bisection (independent method). */
static void
reference_face (const double *z_old, double *z_ref, guint n, double x0, double dx, guint ic,
                double z_top, double tn, double area)
{
  double lo = x0 - 1e4, hi = x0 + n * dx + 1e4;
  for (int it = 0; it < 300; it++)
    {
      double mid = 0.5 * (lo + hi), f = 0;
      for (guint j = ic + 1; j < n; j++)
        {
          double x = x0 + (j + 0.5) * dx;
          f += MAX (0.0, MIN (z_top, z_top - (x - mid) * tn) - z_old[j]) * dx;
        }
      if (f < area)
        lo = mid;
      else
        hi = mid;
    }
  memcpy (z_ref, z_old, n * sizeof (double));
  for (guint j = ic + 1; j < n; j++)
    {
      double x = x0 + (j + 0.5) * dx;
      z_ref[j] = MAX (z_old[j], MIN (z_top, z_top - (x - lo) * tn));
    }
}

static double
added_area (const double *a, const double *b, guint n, double dx)
{
  double s = 0;
  for (guint i = 0; i < n; i++)
    s += a[i] - b[i];
  return s * dx;
}

static void
test_deposit_on_flat (void **state)
{
  (void) state;
  enum { N = 300 };
  const double dx = 0.5, x0 = 0, z_top = 5.0, A = 20.0;
  double z[N] = { 0 }, z0[N], zr[N];
  guint ic = 100, front = 0;
  memcpy (z0, z, sizeof z);
  double left = sf_heights_deposit_face (z, N, x0, dx, ic, z_top, TAN37, A, &front);
  sf_assert_close (left, 0.0, 0, 0);                       /* analytic: room enough */
  sf_assert_close (added_area (z, z0, N, dx), A, 0, 1e-12); /* analytic: exactly the area given */
  assert_true (z[ic] == z_top);                            /* contract: crest raised to the top */
  /* analytic: 2.5 m2 raise the crest; 17.5 m2 form the face, whose continuous
   * triangle alone holds H^2/(2 tan) = 16.59 m2: the toe is ~ H/tan = 6.6 m out */
  assert_true (front > ic + 10 && front < ic + 18);
  for (guint i = 0; i < N; i++)
    {
      assert_true (z[i] <= z_top);                 /* contract: never above the top */
      assert_true (z[i] >= z0[i]);                 /* contract: only adds */
      if (i < ic || i > front)
        assert_true (z[i] == z0[i]);               /* contract: outside the face unchanged */
    }
  /* analytic: on the face, neighbouring cells differ by exactly dx tan */
  int on_face = 0;
  for (guint j = ic + 1; j + 1 < front; j++)
    if (z[j] < z_top && z[j + 1] > 0)
      {
        sf_assert_close ((z[j] - z[j + 1]) / dx, TAN37, 1e-9, 0);
        on_face++;
      }
  assert_true (on_face >= 8);
  /* The same surface as the pile formula solved by bisection (independent method). */
  double zc[N];
  memcpy (zc, z0, sizeof z);
  zc[ic] = z_top;
  reference_face (zc, zr, N, x0, dx, ic, z_top, TAN37, A - (z_top - z0[ic]) * dx);
  for (guint i = 0; i < N; i++)
    sf_assert_close (z[i], zr[i], 1e-9, 0);
}

static void
test_deposit_into_void (void **state)
{
  (void) state;
  enum { N = 300 };
  const double dx = 0.5, x0 = -50;
  double z[N], z0[N], zr[N];
  /* Bench at 0 to cell 119, a vertical 20 m drop to the void floor, and the
   * far side rising 1:1 from cell 220 up to 0 again. */
  for (guint i = 0; i < N; i++)
    z[i] = i < 120 ? 0.0 : i < 220 ? -20.0 : MIN (0.0, -20.0 + (i - 219) * dx);
  memcpy (z0, z, sizeof z);
  for (int k = 0; k < 3; k++)
    {
      const double A[] = { 0.3, 60.0, 250.0 };
      memcpy (z, z0, sizeof z);
      guint front = 0;
      double left = sf_heights_deposit_face (z, N, x0, dx, 119, 0.0, TAN37, A[k], &front);
      sf_assert_close (left, 0.0, 0, 0);                          /* analytic: fits */
      sf_assert_close (added_area (z, z0, N, dx), A[k], 0, 1e-12); /* analytic: exact area */
      for (guint i = 0; i < N; i++)
        if (i < 119 || i > front)
          assert_true (z[i] == z0[i]); /* contract: only i_crest..i_front change */
      reference_face (z0, zr, N, x0, dx, 119, 0.0, TAN37, A[k]);
      for (guint i = 0; i < N; i++)
        sf_assert_close (z[i], zr[i], 1e-8, 0); /* independent: bisection on the pile formula */
      assert_true (front < 220);
    }
}

static void
test_deposit_leftover_at_end (void **state)
{
  (void) state;
  enum { N = 300 };
  const double dx = 0.5;
  double z[N] = { 0 }, z0[N];
  memcpy (z0, z, sizeof z);
  guint front = 0;
  double left = sf_heights_deposit_face (z, N, 0, dx, N - 5, 5.0, TAN37, 100.0, &front);
  /* analytic: crest + 4 cells to the end, each 5 m x 0.5 m: 12.5 m2 fit, 87.5 m2 do not */
  sf_assert_close (left, 87.5, 1e-12, 0);
  assert_int_equal (front, N - 1);
  for (guint i = N - 5; i < N; i++)
    assert_true (z[i] == 5.0);
  for (guint i = 0; i < N - 5; i++)
    assert_true (z[i] == 0.0);
  /* analytic: with the crest on the last cell only the crest cell takes any */
  memcpy (z, z0, sizeof z);
  left = sf_heights_deposit_face (z, N, 0, dx, N - 1, 5.0, TAN37, 10.0, &front);
  sf_assert_close (left, 7.5, 1e-12, 0);
  assert_int_equal (front, N - 1);
}

static void
test_deposit_stopped_by_rise (void **state)
{
  (void) state;
  enum { N = 300 };
  const double dx = 0.5;
  double z[N] = { 0 }, z0[N];
  z[110] = 6.0; /* a rise above the 5 m top ten cells ahead of the crest */
  memcpy (z0, z, sizeof z);
  guint front = 0;
  double left = sf_heights_deposit_face (z, N, 0, dx, 100, 5.0, TAN37, 100.0, &front);
  /* analytic: crest and cells 101..109 fill to 5 m: 10 x 2.5 = 25 m2 fit */
  sf_assert_close (left, 75.0, 1e-12, 0);
  assert_int_equal (front, 109);
  for (guint i = 100; i < 110; i++)
    assert_true (z[i] == 5.0);
  for (guint i = 110; i < N; i++)
    assert_true (z[i] == z0[i]);
}

static void
test_deposit_tops_a_rise (void **state)
{
  (void) state;
  enum { N = 300 };
  const double dx = 0.5;
  double z[N] = { 0 }, z0[N];
  z[106] = 2.0; /* a low rise with a dip behind it */
  for (guint i = 107; i < 140; i++)
    z[i] = -6.0;
  memcpy (z0, z, sizeof z);
  for (double A = 2.0; A <= 40.0; A += 0.7)
    {
      memcpy (z, z0, sizeof z);
      guint front = 0;
      double left = sf_heights_deposit_face (z, N, 0, dx, 100, 5.0, TAN37, A, &front);
      sf_assert_close (left, 0.0, 0, 0);
      sf_assert_close (added_area (z, z0, N, dx), A, 0, 1e-12); /* analytic: exact area */
      for (guint i = 0; i < N; i++)
        {
          assert_true (z[i] >= z0[i] && z[i] <= MAX (z0[i], 5.0)); /* contract */
          if (i < 100 || i > front)
            assert_true (z[i] == z0[i]); /* contract */
        }
    }
}

static void
test_deposit_small_and_degenerate (void **state)
{
  (void) state;
  double z[10] = { 0 };
  guint front = 77;
  /* analytic: 1 m2 into a crest cell that can take 2.5 m2 raises it by 1 / 0.5 */
  sf_assert_close (sf_heights_deposit_face (z, 10, 0, 0.5, 3, 5.0, TAN37, 1.0, &front), 0.0, 0, 0);
  sf_assert_close (z[3], 2.0, 1e-15, 0);
  assert_int_equal (front, 3);
  for (guint i = 0; i < 10; i++)
    if (i != 3)
      assert_true (z[i] == 0.0);
  /* Zero area changes nothing (contract). */
  double zz[10] = { 0 };
  assert_true (sf_heights_deposit_face (zz, 10, 0, 0.5, 3, 5.0, TAN37, 0.0, &front) == 0.0);
  assert_int_equal (front, 3);
  for (guint i = 0; i < 10; i++)
    assert_true (zz[i] == 0.0);
  /* Nothing to deposit into: all of it is returned (contract). */
  assert_true (sf_heights_deposit_face (NULL, 0, 0, 0.5, 0, 5.0, TAN37, 3.0, &front) == 3.0);
  assert_true (sf_heights_deposit_face (zz, 10, 0, 0.5, 10, 5.0, TAN37, 3.0, &front) == 3.0);
  double one[1] = { 0 }, two[2] = { 0, 0 };
  /* analytic: one cell takes 5 x 0.5 = 2.5 m2, 0.5 m2 left; two cells take it all */
  sf_assert_close (sf_heights_deposit_face (one, 1, 0, 0.5, 0, 5.0, TAN37, 3.0, NULL), 0.5,
                   1e-15, 0);
  sf_assert_close (sf_heights_deposit_face (two, 2, 0, 0.5, 0, 5.0, TAN37, 3.0, NULL), 0.0, 0, 0);
  sf_assert_close ((two[0] + two[1]) * 0.5, 3.0, 1e-14, 0); /* analytic: exact area */
  /* A flat "face" (tan 0) fills cell after cell (analytic). */
  double zf[6] = { 0 };
  sf_assert_close (sf_heights_deposit_face (zf, 6, 0, 0.5, 0, 2.0, 0.0, 3.0, &front), 0.0, 0, 0);
  assert_true (zf[0] == 2.0 && zf[1] == 2.0 && zf[2] == 2.0);
  assert_int_equal (front, 2);
}

int
main (void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test (test_poly_triangle),
    cmocka_unit_test (test_poly_rectangle_far),
    cmocka_unit_test (test_poly_lshape),
    cmocka_unit_test (test_poly_clockwise),
    cmocka_unit_test (test_poly_degenerate),
    cmocka_unit_test (test_selfx_bowtie),
    cmocka_unit_test (test_selfx_clean),
    cmocka_unit_test (test_selfx_touch_and_overlap),
    cmocka_unit_test (test_selfx_far_from_origin),
    cmocka_unit_test (test_selfx_random_vs_brute),
    cmocka_unit_test (test_polyline_eval),
    cmocka_unit_test (test_polyline_integral),
    cmocka_unit_test (test_profile_new_copy_cell),
    cmocka_unit_test (test_profile_sample_line),
    cmocka_unit_test (test_profile_sample_v),
    cmocka_unit_test (test_area_between_wedge),
    cmocka_unit_test (test_relax_spike),
    cmocka_unit_test (test_relax_step),
    cmocka_unit_test (test_relax_highwall_untouched),
    cmocka_unit_test (test_relax_highwall_edge),
    cmocka_unit_test (test_relax_random),
    cmocka_unit_test (test_relax_degenerate),
    cmocka_unit_test (test_max_loose_slope),
    cmocka_unit_test (test_deposit_on_flat),
    cmocka_unit_test (test_deposit_into_void),
    cmocka_unit_test (test_deposit_leftover_at_end),
    cmocka_unit_test (test_deposit_stopped_by_rise),
    cmocka_unit_test (test_deposit_tops_a_rise),
    cmocka_unit_test (test_deposit_small_and_degenerate),
  };
  return cmocka_run_group_tests (tests, NULL, NULL);
}
