/* SPDX-License-Identifier: MIT
 *
 * sf-geom.c — plane geometry of a strip cross-section and the height profile
 * of a lane (see sf-geom.h for the contract).
 *
 * Owns: nothing beyond SfProfile.  sf_profile_new / sf_profile_copy return a
 * profile the caller frees with sf_profile_free (or g_autoptr); every other
 * function works in the caller's arrays and allocates nothing (the relaxation
 * work-list lives on the C stack).
 *
 * Numerics:
 *  - Orientation tests are exact: a floating-point filter (error bound after
 *    Shewchuk, "Adaptive precision floating-point arithmetic and fast robust
 *    geometric predicates", 1997) and, when the filter cannot decide, the
 *    exact sign of the determinant from error-free products (fma) summed as
 *    a floating-point expansion.  Collinear touching and overlap are decided
 *    by exact comparisons.
 *  - Self-intersection splits the chain of segments into runs that are
 *    monotone in x; two runs are compared by a merge over x, so a string that
 *    is mostly monotone costs O(n) instead of O(n^2) pair tests.
 *  - Relaxation uses a work-list of cell pairs seeded with the disturbed
 *    window; a pair that moves material queues its two neighbours, so the cost
 *    follows the material, never the profile length.
 *  - The dump face is solved piecewise-linearly in the front position x_f
 *    while walking forward from the crest, so it touches only the cells it
 *    changes (plus the one that stops it).
 */
#include "sf-geom.h"

#include <math.h>
#include <string.h>

/* ---- exact orientation ------------------------------------------------- */

/* a + b = s + e exactly (Knuth's TwoSum, no ordering needed). */
static inline void
two_sum (double a, double b, double *s, double *e)
{
  double x = a + b;
  double bv = x - a;
  double av = x - bv;
  *s = x;
  *e = (a - av) + (b - bv);
}

/* Adds b to the non-overlapping expansion e[0..len-1] (increasing
 * magnitude), dropping zero components; returns the new length. */
static int
expansion_grow (double *e, int len, double b)
{
  double q = b;
  int k = 0;
  for (int i = 0; i < len; i++)
    {
      double h;
      two_sum (q, e[i], &q, &h);
      if (h != 0.0)
        e[k++] = h;
    }
  if (q != 0.0)
    e[k++] = q;
  return k;
}

/* Exact sign of sum_k x[k] * y[k] (k < 6). */
static int
exact_dot_sign (const double x[6], const double y[6])
{
  double e[12];
  int len = 0;
  for (int k = 0; k < 6; k++)
    {
      double hi = x[k] * y[k];
      double lo = fma (x[k], y[k], -hi);
      len = expansion_grow (e, len, lo);
      len = expansion_grow (e, len, hi);
    }
  if (len == 0)
    return 0;
  return e[len - 1] > 0 ? 1 : -1;
}

/* +1 when a, b, c turn counter-clockwise, -1 clockwise, 0 collinear (exact). */
static int
orient (SfPoint a, SfPoint b, SfPoint c)
{
  double detl = (a.x_m - c.x_m) * (b.z_m - c.z_m);
  double detr = (a.z_m - c.z_m) * (b.x_m - c.x_m);
  double det = detl - detr;
  /* Shewchuk's ccwerrboundA = (3 + 16 eps) eps, eps = 2^-53. */
  double bound = 3.3306690738754716e-16 * (fabs (detl) + fabs (detr));
  if (det > bound)
    return 1;
  if (-det > bound)
    return -1;
  /* det = ax bz - ax cz - cx bz - az bx + az cx + cz bx */
  const double xs[6] = { a.x_m, -a.x_m, -c.x_m, -a.z_m, a.z_m, c.z_m };
  const double ys[6] = { b.z_m, c.z_m, b.z_m, b.x_m, c.x_m, b.x_m };
  return exact_dot_sign (xs, ys);
}

static inline gboolean
pt_equal (SfPoint a, SfPoint b)
{
  return a.x_m == b.x_m && a.z_m == b.z_m;
}

/* q inside the bounding box of a, b (exact). */
static inline gboolean
in_box (SfPoint a, SfPoint b, SfPoint q)
{
  return q.x_m >= MIN (a.x_m, b.x_m) && q.x_m <= MAX (a.x_m, b.x_m) && q.z_m >= MIN (a.z_m, b.z_m)
         && q.z_m <= MAX (a.z_m, b.z_m);
}

/* Closed segments ab and cd share at least one point. */
static gboolean
segments_meet (SfPoint a, SfPoint b, SfPoint c, SfPoint d)
{
  if (MAX (a.x_m, b.x_m) < MIN (c.x_m, d.x_m) || MAX (c.x_m, d.x_m) < MIN (a.x_m, b.x_m)
      || MAX (a.z_m, b.z_m) < MIN (c.z_m, d.z_m) || MAX (c.z_m, d.z_m) < MIN (a.z_m, b.z_m))
    return FALSE;
  if (pt_equal (a, b))
    return orient (c, d, a) == 0 && in_box (c, d, a);
  if (pt_equal (c, d))
    return orient (a, b, c) == 0 && in_box (a, b, c);
  int o1 = orient (a, b, c);
  int o2 = orient (a, b, d);
  if (o1 == 0 && o2 == 0)
    return TRUE; /* collinear, and the boxes overlap: the segments overlap */
  int o3 = orient (c, d, a);
  int o4 = orient (c, d, b);
  return o1 * o2 <= 0 && o3 * o4 <= 0;
}

static inline int
sign_diff (double to, double from)
{
  return (to > from) - (to < from);
}

/* Segments p->q and q->r (sharing q) overlap beyond q: q doubles back. */
static gboolean
folds_back (SfPoint p, SfPoint q, SfPoint r)
{
  if (pt_equal (p, q) || pt_equal (q, r) || orient (p, q, r) != 0)
    return FALSE;
  return sign_diff (q.x_m, p.x_m) * sign_diff (r.x_m, q.x_m) < 0
         || sign_diff (q.z_m, p.z_m) * sign_diff (r.z_m, q.z_m) < 0;
}

/* ---- polygons ---------------------------------------------------------- */

double
sf_poly_area (const SfPoint *p, gsize n)
{
  if (p == NULL || n < 3)
    return 0.0;
  /* Coordinates relative to p[0] keep the products small. */
  const double ox = p[0].x_m, oz = p[0].z_m;
  double s = 0.0;
  for (gsize i = 1; i + 1 < n; i++)
    s += (p[i].x_m - ox) * (p[i + 1].z_m - oz) - (p[i + 1].x_m - ox) * (p[i].z_m - oz);
  return 0.5 * s;
}

gboolean
sf_poly_centroid (const SfPoint *p, gsize n, SfPoint *centroid, double *area)
{
  double a2 = 0.0, sx = 0.0, sz = 0.0;
  if (p != NULL && n >= 3)
    {
      const double ox = p[0].x_m, oz = p[0].z_m;
      for (gsize i = 1; i + 1 < n; i++)
        {
          double x1 = p[i].x_m - ox, z1 = p[i].z_m - oz;
          double x2 = p[i + 1].x_m - ox, z2 = p[i + 1].z_m - oz;
          double cr = x1 * z2 - x2 * z1;
          a2 += cr;
          sx += (x1 + x2) * cr;
          sz += (z1 + z2) * cr;
        }
    }
  if (area)
    *area = 0.5 * a2;
  if (a2 == 0.0)
    return FALSE;
  if (centroid)
    {
      centroid->x_m = p[0].x_m + sx / (3.0 * a2);
      centroid->z_m = p[0].z_m + sz / (3.0 * a2);
    }
  return TRUE;
}

/* ---- self-intersection ------------------------------------------------- */

typedef struct {
  const SfPoint *p;
  gsize n;        /* vertices */
  gsize m;        /* segments: n-1 open, n closed */
  gboolean closed;
  gsize best_a;   /* first offending pair found so far; best_a == m: none */
  gsize best_b;
} SelfX;

typedef struct {
  gsize first, end; /* segments [first, end) */
  gboolean up;      /* TRUE: x non-decreasing along the run */
  double lo, hi;    /* x range */
  double zlo, zhi;  /* z range */
} XRun;

/* Runs are handled in blocks of this many (on the stack), so each run is
 * found once per block rather than once per run before it. */
#define SF_XRUN_BLOCK 128

static inline SfPoint
seg_a (const SelfX *s, gsize k)
{
  return s->p[k];
}

static inline SfPoint
seg_b (const SelfX *s, gsize k)
{
  return s->p[k + 1 == s->n ? 0 : k + 1];
}

static inline double
seg_lo (const SelfX *s, gsize k)
{
  return MIN (seg_a (s, k).x_m, seg_b (s, k).x_m);
}

static inline double
seg_hi (const SelfX *s, gsize k)
{
  return MAX (seg_a (s, k).x_m, seg_b (s, k).x_m);
}

static inline gboolean
adjacent (const SelfX *s, gsize a, gsize b)
{
  return b == a + 1 || (s->closed && a == 0 && b + 1 == s->m);
}

static inline gboolean
before_best (const SelfX *s, gsize a, gsize b)
{
  return a < s->best_a || (a == s->best_a && b < s->best_b);
}

static void
consider (SelfX *s, gsize a, gsize b)
{
  if (a > b)
    {
      gsize t = a;
      a = b;
      b = t;
    }
  if (a == b || adjacent (s, a, b) || !before_best (s, a, b))
    return;
  if (segments_meet (seg_a (s, a), seg_b (s, a), seg_a (s, b), seg_b (s, b)))
    {
      s->best_a = a;
      s->best_b = b;
    }
}

/* The maximal x-monotone run of segments starting at `first`. */
static XRun
xrun_at (const SelfX *s, gsize first)
{
  XRun r = { first, first, TRUE, 0, 0, seg_a (s, first).z_m, seg_a (s, first).z_m };
  int dir = 0;
  gsize k = first;
  for (; k < s->m; k++)
    {
      SfPoint b = seg_b (s, k);
      int d = sign_diff (b.x_m, seg_a (s, k).x_m);
      if (d != 0)
        {
          if (dir == 0)
            dir = d;
          else if (d != dir)
            break;
        }
      r.zlo = MIN (r.zlo, b.z_m);
      r.zhi = MAX (r.zhi, b.z_m);
    }
  r.end = k;
  r.up = dir >= 0;
  r.lo = MIN (seg_a (s, first).x_m, seg_b (s, k - 1).x_m);
  r.hi = MAX (seg_a (s, first).x_m, seg_b (s, k - 1).x_m);
  return r;
}

/* t-th segment of the run in increasing x. */
static inline gsize
xrun_seg (const XRun *r, gsize t)
{
  return r->up ? r->first + t : r->end - 1 - t;
}

static void
check_run_self (SelfX *s, const XRun *r)
{
  /* Consecutive segments of a run share their x interval ends, so only a
   * vertical stretch can bring non-adjacent ones within reach. */
  gsize len = r->end - r->first;
  for (gsize ta = 0; ta < len; ta++)
    {
      gsize a = xrun_seg (r, ta);
      double ahi = seg_hi (s, a);
      for (gsize tb = ta + 2; tb < len && seg_lo (s, xrun_seg (r, tb)) <= ahi; tb++)
        consider (s, a, xrun_seg (r, tb));
    }
}

static void
check_run_pair (SelfX *s, const XRun *ra, const XRun *rb)
{
  if (ra->first > s->best_a || ra->hi < rb->lo || rb->hi < ra->lo || ra->zhi < rb->zlo
      || rb->zhi < ra->zlo)
    return;
  gsize lena = ra->end - ra->first, lenb = rb->end - rb->first;
  gsize tb0 = 0;
  for (gsize ta = 0; ta < lena; ta++)
    {
      gsize a = xrun_seg (ra, ta);
      double alo = seg_lo (s, a), ahi = seg_hi (s, a);
      if (alo > rb->hi)
        break;
      while (tb0 < lenb && seg_hi (s, xrun_seg (rb, tb0)) < alo)
        tb0++;
      for (gsize tb = tb0; tb < lenb && seg_lo (s, xrun_seg (rb, tb)) <= ahi; tb++)
        consider (s, a, xrun_seg (rb, tb));
    }
}

static gboolean
self_intersects (const SfPoint *p, gsize n, gboolean closed, gsize *seg_a_out, gsize *seg_b_out)
{
  if (p == NULL || n < 3)
    return FALSE;
  SelfX s = { p, n, closed ? n : n - 1, closed, 0, 0 };
  s.best_a = s.m;
  s.best_b = s.m;

  /* Neighbours that double back along each other. */
  for (gsize k = 0; k + 1 < s.m; k++)
    if (before_best (&s, k, k + 1) && folds_back (seg_a (&s, k), seg_b (&s, k), seg_b (&s, k + 1)))
      {
        s.best_a = k;
        s.best_b = k + 1;
        break;
      }
  if (closed && before_best (&s, 0, s.m - 1)
      && folds_back (seg_a (&s, s.m - 1), seg_a (&s, 0), seg_b (&s, 0)))
    {
      s.best_a = 0;
      s.best_b = s.m - 1;
    }

  /* Non-adjacent pairs, run against run, a block of runs at a time. */
  XRun ablk[SF_XRUN_BLOCK], bblk[SF_XRUN_BLOCK];
  for (gsize fa = 0; fa < s.m && fa <= s.best_a;)
    {
      guint na = 0;
      for (; na < SF_XRUN_BLOCK && fa < s.m; na++)
        {
          ablk[na] = xrun_at (&s, fa);
          fa = ablk[na].end;
        }
      for (guint i = 0; i < na; i++)
        {
          check_run_self (&s, &ablk[i]);
          for (guint j = i + 1; j < na; j++)
            check_run_pair (&s, &ablk[i], &ablk[j]);
        }
      for (gsize fb = fa; fb < s.m && ablk[0].first <= s.best_a;)
        {
          guint nb = 0;
          for (; nb < SF_XRUN_BLOCK && fb < s.m; nb++)
            {
              bblk[nb] = xrun_at (&s, fb);
              fb = bblk[nb].end;
            }
          for (guint i = 0; i < na; i++)
            for (guint j = 0; j < nb; j++)
              check_run_pair (&s, &ablk[i], &bblk[j]);
        }
    }

  if (s.best_a == s.m)
    return FALSE;
  if (seg_a_out)
    *seg_a_out = s.best_a;
  if (seg_b_out)
    *seg_b_out = s.best_b;
  return TRUE;
}

gboolean
sf_polyline_self_intersects (const SfPoint *p, gsize n, gsize *seg_a_out, gsize *seg_b_out)
{
  return self_intersects (p, n, FALSE, seg_a_out, seg_b_out);
}

gboolean
sf_polygon_self_intersects (const SfPoint *p, gsize n, gsize *seg_a_out, gsize *seg_b_out)
{
  return self_intersects (p, n, TRUE, seg_a_out, seg_b_out);
}

/* ---- x-monotone strings ------------------------------------------------ */

/* i in [0, n-2] with p[i].x <= x < p[i+1].x, clamped to the end segments.
 * n >= 2. */
static gsize
string_segment (const SfPoint *p, gsize n, double x)
{
  gsize lo = 0, hi = n - 1;
  while (hi - lo > 1)
    {
      gsize mid = lo + (hi - lo) / 2;
      if (p[mid].x_m <= x)
        lo = mid;
      else
        hi = mid;
    }
  return lo;
}

/* z on the line of segment i at x. */
static inline double
segment_z (const SfPoint *p, gsize i, double x)
{
  double x1 = p[i].x_m, x2 = p[i + 1].x_m;
  if (!(x2 > x1))
    return p[i].z_m;
  return p[i].z_m + (p[i + 1].z_m - p[i].z_m) * ((x - x1) / (x2 - x1));
}

double
sf_polyline_eval (const SfPoint *p, gsize n, double x)
{
  if (p == NULL || n == 0)
    return 0.0;
  if (n == 1 || x <= p[0].x_m)
    return p[0].z_m;
  if (x >= p[n - 1].x_m)
    return p[n - 1].z_m;
  return segment_z (p, string_segment (p, n, x), x);
}

double
sf_polyline_integral (const SfPoint *p, gsize n, double xa, double xb)
{
  if (p == NULL || n == 0 || !(xa != xb))
    return 0.0;
  if (xb < xa)
    return -sf_polyline_integral (p, n, xb, xa);
  const double xfirst = p[0].x_m, xlast = p[n - 1].x_m;
  double s = 0.0;
  if (xa < xfirst)
    s += p[0].z_m * (MIN (xb, xfirst) - xa);
  if (xb > xlast)
    s += p[n - 1].z_m * (xb - MAX (xa, xlast));
  double lo = MAX (xa, xfirst), hi = MIN (xb, xlast);
  if (n >= 2 && lo < hi)
    {
      for (gsize i = string_segment (p, n, lo); i + 1 < n && p[i].x_m < hi; i++)
        {
          double u = MAX (lo, p[i].x_m), v = MIN (hi, p[i + 1].x_m);
          if (v > u)
            s += 0.5 * (v - u) * (segment_z (p, i, u) + segment_z (p, i, v));
        }
    }
  return s;
}

/* ---- profiles ---------------------------------------------------------- */

SfProfile *
sf_profile_new (double x0_m, double dx_m, guint n)
{
  g_return_val_if_fail (dx_m > 0 && isfinite (dx_m) && isfinite (x0_m), NULL);
  SfProfile *p = g_new0 (SfProfile, 1);
  p->x0_m = x0_m;
  p->dx_m = dx_m;
  p->n = n;
  p->z = g_new0 (double, n);
  return p;
}

SfProfile *
sf_profile_copy (const SfProfile *p)
{
  if (p == NULL)
    return NULL;
  SfProfile *c = g_new0 (SfProfile, 1);
  *c = *p;
  c->z = p->n ? g_memdup2 (p->z, sizeof (double) * p->n) : NULL;
  return c;
}

void
sf_profile_free (SfProfile *p)
{
  if (p == NULL)
    return;
  g_free (p->z);
  g_free (p);
}

guint
sf_profile_cell (const SfProfile *p, double x)
{
  if (p == NULL || p->n == 0)
    return 0;
  double f = floor ((x - p->x0_m) / p->dx_m);
  if (!(f > 0)) /* also NaN */
    return 0;
  if (f >= (double) (p->n - 1))
    return p->n - 1;
  return (guint) f;
}

void
sf_profile_sample_polyline (SfProfile *prof, const SfPoint *p, gsize n)
{
  if (prof == NULL || prof->n == 0)
    return;
  for (guint i = 0; i < prof->n; i++)
    {
      double a = prof->x0_m + i * prof->dx_m;
      double b = prof->x0_m + (i + 1) * prof->dx_m;
      /* Divide by the width the edges actually span, so a constant or a
       * straight line comes back exactly. */
      prof->z[i] = b > a ? sf_polyline_integral (p, n, a, b) / (b - a)
                         : sf_polyline_eval (p, n, 0.5 * (a + b));
    }
}

double
sf_heights_area_between (const double *upper, const double *lower, guint i0, guint i1,
                         double x0_m, double dx_m, double *cx, double *cz)
{
  if (upper == NULL || lower == NULL)
    return 0.0;
  double a = 0.0, mx = 0.0, mz = 0.0;
  for (guint i = i0; i < i1; i++)
    {
      double h = upper[i] - lower[i];
      if (!(h > 0))
        continue;
      a += h;
      mx += h * (x0_m + (i + 0.5) * dx_m);
      mz += h * 0.5 * (upper[i] + lower[i]);
    }
  if (a > 0)
    {
      if (cx)
        *cx = mx / a;
      if (cz)
        *cz = mz / a;
    }
  return a * dx_m;
}

/* ---- loose material at the angle of repose ---------------------------- */

/* Height tolerance below which relaxation stops; keeps the number of moves
 * finite whatever the caller passes. */
#define SF_RELAX_TOL_FLOOR_M 1e-9
/* Work-list capacity (cell pairs); more pending pairs spill into a range. */
#define SF_RELAX_QUEUE 256

typedef struct {
  guint q[SF_RELAX_QUEUE];
  guint head, count;
  guint spill_lo, spill_hi; /* pairs [spill_lo, spill_hi) also still to examine */
} RelaxQueue;

static inline void
rq_push (RelaxQueue *w, guint k)
{
  if (w->count > 0 && w->q[(w->head + w->count - 1) % SF_RELAX_QUEUE] == k)
    return;
  if (w->count < SF_RELAX_QUEUE)
    {
      w->q[(w->head + w->count) % SF_RELAX_QUEUE] = k;
      w->count++;
      return;
    }
  if (w->spill_lo >= w->spill_hi)
    {
      w->spill_lo = k;
      w->spill_hi = k + 1;
    }
  else
    {
      w->spill_lo = MIN (w->spill_lo, k);
      w->spill_hi = MAX (w->spill_hi, k + 1);
    }
}

static inline gboolean
rq_pop (RelaxQueue *w, guint *k)
{
  if (w->count == 0)
    {
      while (w->count < SF_RELAX_QUEUE && w->spill_lo < w->spill_hi)
        w->q[(w->head + w->count++) % SF_RELAX_QUEUE] = w->spill_lo++;
      if (w->count == 0)
        return FALSE;
    }
  *k = w->q[w->head];
  w->head = (w->head + 1) % SF_RELAX_QUEUE;
  w->count--;
  return TRUE;
}

guint
sf_heights_relax (double *z, const double *base, guint n, double dx_m, double tan_repose,
                  guint i0, guint i1, double tol_m, guint *touched_lo, guint *touched_hi)
{
  guint64 moves = sf_heights_relax_max (z, base, n, dx_m, tan_repose, i0, i1, tol_m, G_MAXUINT64,
                                        touched_lo, touched_hi, NULL);
  return (guint) MIN (moves, (guint64) G_MAXUINT);
}

guint64
sf_heights_relax_max (double *z, const double *base, guint n, double dx_m, double tan_repose,
                      guint i0, guint i1, double tol_m, guint64 max_moves, guint *touched_lo,
                      guint *touched_hi, gboolean *settled)
{
  guint lo = MIN (i0, n), hi = lo;
  guint64 moves = 0;
  gboolean stopped = FALSE;
  i1 = MIN (i1, n);
  if (z != NULL && n >= 2 && dx_m > 0 && tan_repose >= 0 && isfinite (tan_repose) && i0 < i1)
    {
      const double limit = tan_repose * dx_m;
      const double tol = tol_m > SF_RELAX_TOL_FLOOR_M ? tol_m : SF_RELAX_TOL_FLOOR_M;
      /* Pair k is cells (k, k+1); the window's pairs are those touching it. */
      RelaxQueue w; /* q[] needs no clearing */
      w.head = 0;
      w.count = 0;
      w.spill_lo = i0 > 0 ? i0 - 1 : 0;
      w.spill_hi = MIN (i1, n - 1);
      guint k;
      while (rq_pop (&w, &k))
        {
          guint h = z[k] > z[k + 1] ? k : k + 1;
          guint l = h == k ? k + 1 : k;
          double d = z[h] - z[l];
          if (!(d > limit + tol))
            continue;
          if (base != NULL && !(z[h] > base[h] + tol))
            continue; /* nothing loose up there */
          if (moves >= max_moves)
            {
              stopped = TRUE; /* a move is due but the budget is spent */
              break;
            }
          /* Half the excess over the limit leaves the pair exactly at it. */
          double m = 0.5 * (d - limit);
          if (base != NULL && m >= z[h] - base[h])
            {
              /* Not enough loose material: all of it goes. */
              z[l] += z[h] - base[h];
              z[h] = base[h];
            }
          else
            {
              z[h] -= m;
              z[l] += m;
            }
          moves++;
          lo = MIN (lo, k);
          hi = MAX (hi, k + 2);
          if (k > 0)
            rq_push (&w, k - 1);
          if (k + 2 < n)
            rq_push (&w, k + 1);
        }
    }
  if (touched_lo)
    *touched_lo = lo;
  if (touched_hi)
    *touched_hi = hi;
  if (settled)
    *settled = !stopped;
  return moves;
}

/* What the dump face needs to know about the old surface. */
typedef struct {
  const double *z;
  double x0_m, dx_m, z_top_m, tan_repose;
} FaceGeom;

/* Centre of cell j. */
static inline double
face_xc (const FaceGeom *f, guint j)
{
  return f->x0_m + (j + 0.5) * f->dx_m;
}

/* Front position x_f at which the face line reaches cell j's old surface. */
static inline double
face_meets (const FaceGeom *f, guint j)
{
  return face_xc (f, j) - (f->z_top_m - f->z[j]) / f->tan_repose;
}

/* Cell j stands at or above the top: the face never covers it. */
static inline gboolean
face_blocks (const FaceGeom *f, guint j)
{
  return !(f->z[j] < f->z_top_m);
}

/* Flat face (tan = 0): cells fill to z_top one after another. */
static double
deposit_flat (double *z, guint n, double dx_m, guint first, double z_top_m, double rest,
              guint *front)
{
  for (guint j = first; j < n && rest > 0; j++)
    {
      if (!(z[j] < z_top_m))
        break; /* a rise at or above the top stops the fill */
      double room = (z_top_m - z[j]) * dx_m;
      if (room >= rest)
        {
          z[j] += rest / dx_m;
          *front = j;
          return 0.0;
        }
      double old = z[j];
      z[j] = z_top_m;
      rest -= (z[j] - old) * dx_m;
      *front = j;
    }
  return rest;
}

double
sf_heights_deposit_face (double *z, guint n, double x0_m, double dx_m, guint i_crest,
                         double z_top_m, double tan_repose, double area_m2, guint *i_front)
{
  guint front = n > 0 ? MIN (i_crest, n - 1) : 0;
  if (i_front)
    *i_front = front;
  if (!(area_m2 > 0))
    return 0.0;
  if (z == NULL || i_crest >= n || !(dx_m > 0) || !isfinite (z_top_m) || !(tan_repose >= 0)
      || !isfinite (tan_repose) || !isfinite (x0_m))
    return area_m2;

  double rest = area_m2;
  /* The crest cell comes up to the top first. */
  if (z[i_crest] < z_top_m)
    {
      double room = (z_top_m - z[i_crest]) * dx_m;
      if (room >= rest)
        {
          z[i_crest] += rest / dx_m;
          return 0.0;
        }
      double old = z[i_crest];
      z[i_crest] = z_top_m;
      rest -= (z[i_crest] - old) * dx_m;
    }
  const guint r0 = i_crest + 1;
  if (r0 >= n)
    return rest;
  if (tan_repose == 0.0)
    {
      rest = deposit_flat (z, n, dx_m, r0, z_top_m, rest, &front);
      if (i_front)
        *i_front = front;
      return rest;
    }

  /* The face line through (x_f, z_top) meets cell j's old surface at
   * s_j = x_j - (z_top - z_j) / tan and covers the cell centre x_j fully
   * (z = z_top) once x_f >= x_j.  The face reaches from the crest to the
   * first cell still above the line (its toe): the run [r0, c).  Within the
   * run, cells [sat, c) are still on the slope ("active").  The added area
   * grows by tan dx per active cell per metre of x_f. */
  const double tn = tan_repose;
  const double rate = tn * dx_m;
  const FaceGeom fg = { z, x0_m, dx_m, z_top_m, tn };

  if (face_blocks (&fg, r0))
    return rest;
  guint c = r0, sat = r0;
  double X = face_meets (&fg, r0); /* face just touching cell r0 */
  double F = 0.0;                  /* area added at X */
  gboolean all_full = FALSE;
  guint jump_lo = 0, jump_hi = 0; /* cells poured into only in part (see below) */
  double jump_t = 1.0;

  for (;;)
    {
      /* Release the toe when the line has passed over it; cells beyond it
       * that are already under the line join at once. */
      if (c < n && !face_blocks (&fg, c) && X >= face_meets (&fg, c))
        {
          guint j = c + 1;
          double J = 0.0;
          while (j < n && !face_blocks (&fg, j) && face_meets (&fg, j) < X)
            {
              J += rate * (X - face_meets (&fg, j));
              j++;
            }
          if (J > 0 && F + J > rest)
            {
              /* The face tops a rise and the material pours into the dip
               * behind it: the dip takes the remainder in proportion. */
              jump_lo = c + 1;
              jump_hi = j;
              jump_t = (rest - F) / J;
              c = c + 1; /* the run ends at the rise */
              break;
            }
          F += J;
          c = j;
        }
      while (sat < c && face_xc (&fg, sat) <= X)
        sat++;
      guint act = c - sat;
      double x_rel = (c < n && !face_blocks (&fg, c)) ? face_meets (&fg, c) : INFINITY;
      if (act == 0)
        {
          if (x_rel == INFINITY)
            {
              all_full = TRUE;
              break;
            }
          X = x_rel;
          continue;
        }
      double x_next = MIN (face_xc (&fg, sat), x_rel);
      double f_next = F + rate * act * (x_next - X);
      if (f_next >= rest)
        {
          X += (rest - F) / (rate * act);
          break;
        }
      F = f_next;
      X = x_next;
    }

  /* Write the new surface and add up what it really holds. */
  double added = 0.0, best_gain = -1.0;
  guint best = r0, last = i_crest;
  for (guint j = r0; j < c; j++)
    {
      double xj = face_xc (&fg, j);
      double znew = (all_full || xj <= X) ? z_top_m : z_top_m - (xj - X) * tn;
      if (znew > z[j])
        {
          double gain = znew - z[j];
          z[j] = znew;
          added += gain;
          last = j;
          if (gain > best_gain && znew < z_top_m)
            {
              best_gain = gain;
              best = j;
            }
        }
    }
  for (guint j = jump_lo; j < jump_hi; j++)
    {
      double line = z_top_m - (face_xc (&fg, j) - X) * tn;
      double znew = z[j] + jump_t * (MIN (line, z_top_m) - z[j]);
      if (znew > z[j])
        {
          double gain = znew - z[j];
          z[j] = znew;
          added += gain;
          last = j;
          if (gain > best_gain)
            {
              best_gain = gain;
              best = j;
            }
        }
    }
  if (i_front)
    *i_front = last;
  if (all_full)
    return MAX (rest - added * dx_m, 0.0);
  /* The last rounding residual goes to the cell that gained most while
   * staying below the top, so it stays between old surface and top. */
  if (best_gain > 0)
    for (int pass = 0; pass < 2; pass++)
      {
        double before = z[best];
        z[best] += (rest - added * dx_m) / dx_m;
        added += z[best] - before;
      }
  return 0.0;
}

double
sf_heights_max_loose_slope (const double *z, const double *base, guint n, double dx_m,
                            double tol_m)
{
  double worst = 0.0;
  if (z == NULL || n < 2 || !(dx_m > 0))
    return 0.0;
  for (guint i = 0; i + 1 < n; i++)
    {
      guint h = z[i] > z[i + 1] ? i : i + 1;
      if (base != NULL && !(z[h] > base[h] + tol_m))
        continue;
      double s = fabs (z[i + 1] - z[i]) / dx_m;
      if (s > worst)
        worst = s;
    }
  return worst;
}

/* ---- face collapse -------------------------------------------------------- */

/* Loss above and gain below the line of height c at cell `toe`, falling by
 * `drop` per cell away from the high side (dir = +1: high side at smaller
 * indices). */
static void
collapse_balance (const double *z, const double *base, guint n, gint toe, int dir, double drop,
                  double c, double *loss, double *gain)
{
  double ls = 0, gn = 0;
  for (gint j = toe - dir; j >= 0 && j < (gint) n; j -= dir)
    {
      double L = c + drop * (double) ((toe - j) * dir);
      if (!(z[j] > L))
        break;
      double floor_j = base ? MAX (L, base[j]) : L;
      if (z[j] > floor_j)
        ls += z[j] - floor_j;
    }
  for (gint j = toe; j >= 0 && j < (gint) n; j += dir)
    {
      double L = c - drop * (double) ((j - toe) * dir);
      if (!(z[j] < L))
        break;
      gn += L - z[j];
    }
  *loss = ls;
  *gain = gn;
}

gboolean
sf_heights_collapse_face (double *z, const double *base, guint n, double dx_m, double tan_repose,
                          guint toe, int dir)
{
  if (n < 2 || toe >= n || (dir != 1 && dir != -1) || !(dx_m > 0) || !(tan_repose > 0))
    return FALSE;
  gint t = (gint) toe, hi = t - dir;
  if (hi < 0 || hi >= (gint) n)
    return FALSE;
  const double drop = tan_repose * dx_m;
  if (!(z[hi] - z[t] > drop * (1 + 1e-12)) || (base && !(z[hi] > base[hi])))
    return FALSE;
  /* The line's height at the toe, c, balances the loss above it with the
   * gain below it; loss falls and gain rises with c. */
  double a = z[t], b = z[hi] + drop;
  for (int it = 0; it < 100 && b - a > 1e-12 * (1.0 + fabs (b)); it++)
    {
      double m = 0.5 * (a + b), ls, gn;
      collapse_balance (z, base, n, t, dir, drop, m, &ls, &gn);
      if (ls > gn)
        a = m;
      else
        b = m;
    }
  const double c = 0.5 * (a + b);
  /* Apply: cut the high side down to the line (never below base), fill the
   * low side up to it; the last filled cell takes the rounding remainder. */
  double ls = 0, gn = 0;
  for (gint j = t - dir; j >= 0 && j < (gint) n; j -= dir)
    {
      double L = c + drop * (double) ((t - j) * dir);
      if (!(z[j] > L))
        break;
      double floor_j = base ? MAX (L, base[j]) : L;
      if (z[j] > floor_j)
        {
          ls += z[j] - floor_j;
          z[j] = floor_j;
        }
    }
  gint last = t;
  for (gint j = t; j >= 0 && j < (gint) n; j += dir)
    {
      double L = c - drop * (double) ((j - t) * dir);
      if (!(z[j] < L) || gn + (L - z[j]) > ls)
        {
          if (z[j] < L && gn < ls)
            {
              z[j] += ls - gn; /* part of a cell: the remainder */
              gn = ls;
              last = j;
            }
          break;
        }
      gn += L - z[j];
      z[j] = L;
      last = j;
    }
  if (gn < ls)
    z[last] += ls - gn;
  return TRUE;
}

/* ---- dump face under a sloping cap ------------------------------------------ */

static double
capped_added (const double *z, const double *cap, guint a, guint b, double x0_m, double dx_m,
              double z_top_m, double tan_repose, double x_f)
{
  double s = 0;
  for (guint j = a; j < b; j++)
    {
      double xc = x0_m + (j + 0.5) * dx_m;
      double top = MIN (MIN (cap[j], z_top_m), z_top_m - (xc - x_f) * tan_repose);
      if (top > z[j])
        s += top - z[j];
    }
  return s * dx_m;
}

double
sf_heights_deposit_capped (double *z, const double *cap, guint n, double x0_m, double dx_m,
                           guint i_crest, double z_top_m, double tan_repose, double area_m2,
                           guint *i_front)
{
  if (i_front)
    *i_front = MIN (i_crest, n ? n - 1 : 0);
  if (!(area_m2 > 0))
    return 0.0;
  if (!z || !cap || i_crest + 1 >= n || !(dx_m > 0) || !(tan_repose > 0))
    return area_m2;
  /* The run of cells the material can reach: up to the first cell standing
   * at or above what could cover it. */
  const guint a = i_crest + 1;
  guint b = a;
  while (b < n && z[b] < MIN (cap[b], z_top_m))
    b++;
  if (b == a)
    return area_m2;
  double room = 0;
  for (guint j = a; j < b; j++)
    room += MIN (cap[j], z_top_m) - z[j];
  room *= dx_m;
  if (area_m2 >= room)
    {
      for (guint j = a; j < b; j++)
        z[j] = MIN (cap[j], z_top_m);
      if (i_front)
        *i_front = b - 1;
      return area_m2 - room;
    }
  /* The face position x_f: the added area grows with it. */
  double zmin = z[a];
  for (guint j = a; j < b; j++)
    zmin = MIN (zmin, z[j]);
  double lo = x0_m + (a + 0.5) * dx_m - (z_top_m - zmin) / tan_repose - dx_m;
  double hi = x0_m + (b + 0.5) * dx_m + dx_m;
  for (int it = 0; it < 80; it++)
    {
      double mid = 0.5 * (lo + hi);
      if (capped_added (z, cap, a, b, x0_m, dx_m, z_top_m, tan_repose, mid) < area_m2)
        lo = mid;
      else
        hi = mid;
    }
  const double x_f = hi;
  double added = 0;
  guint last = a;
  for (guint j = a; j < b; j++)
    {
      double xc = x0_m + (j + 0.5) * dx_m;
      double top = MIN (MIN (cap[j], z_top_m), z_top_m - (xc - x_f) * tan_repose);
      if (top > z[j])
        {
          added += (top - z[j]) * dx_m;
          z[j] = top;
          last = j;
        }
    }
  z[last] += (area_m2 - added) / dx_m; /* rounding remainder */
  if (i_front)
    *i_front = last;
  return 0.0;
}
