/* SPDX-License-Identifier: MIT
 *
 * test-kernel.c — tests of the event kernel (sim/sf-kernel.h): event order,
 * cancellation, re-entrancy, a randomised comparison with a sorted reference
 * queue, random-stream determinism, distribution moments and FIFO resources.
 *
 * References: the event order is checked against a general-purpose sorted
 * array (GArray + g_array_sort, which GLib documents as a stable sort since
 * 2.32); distribution moments against textbook formulas (named at each
 * check); tgamma from the C library stands for the gamma function.
 * Everything a test creates it frees itself.
 */
#include "sf-test.h"

#include <math.h>

#include "sf-kernel.h"

/* ---- helpers ------------------------------------------------------------- */

/* Counts the criticals that g_return_val_if_fail logs in the library's
 * domain while a test expects one. */
static void
count_critical (const gchar *domain, GLogLevelFlags level, const gchar *message,
                gpointer user_data)
{
  (*(guint *) user_data)++;
}

typedef struct {
  SfTime time_ms;
  guint32 entity;
  guint type;
} Fired;

/* A handler that appends what fired to the GArray of Fired in user_data. */
static void
log_event (SfKernel *k, const SfEvent *ev, gpointer user_data)
{
  Fired f = { ev->time_ms, ev->entity, ev->type };
  assert_int_equal (ev->time_ms, sf_kernel_get_now (k));
  g_array_append_val ((GArray *) user_data, f);
}

static void
assert_kernel_ok (const SfKernel *k)
{
  g_autofree char *problem = NULL;
  gboolean ok = sf_kernel_check (k, &problem);
  if (!ok)
    fail_msg ("sf_kernel_check: %s", problem);
}

/* Sample moments with standard errors, for the distribution checks. */
typedef struct {
  double mean, var;
  double se_mean, se_var; /* estimated standard errors of mean and var */
} Moments;

static Moments
sample_moments (const double *x, guint n)
{
  double sum = 0.0;
  for (guint i = 0; i < n; i++)
    sum += x[i];
  double mean = sum / n;
  double m2 = 0.0, m4 = 0.0;
  for (guint i = 0; i < n; i++)
    {
      double d = x[i] - mean;
      m2 += d * d;
      m4 += d * d * d * d;
    }
  m2 /= n;
  m4 /= n;
  /* Var of the sample variance is about (mu4 - sigma^4) / n (large-sample
   * result, e.g. Kendall and Stuart; from memory). */
  Moments mo = { mean, m2 * n / (n - 1.0), sqrt (m2 / n), sqrt ((m4 - m2 * m2) / n) };
  return mo;
}

/* The sample mean and variance lie within 5 standard errors of the
 * theoretical values (a 5-sigma band: a fixed seed passes or fails for ever,
 * and a correct generator fails it with probability below 1e-6). */
#define assert_moments(mo, mean_ref, var_ref)                        \
  G_STMT_START                                                       \
  {                                                                  \
    sf_assert_close ((mo).mean, (mean_ref), 5.0 * (mo).se_mean, 0.0); \
    sf_assert_close ((mo).var, (var_ref), 5.0 * (mo).se_var, 0.0);    \
  }                                                                  \
  G_STMT_END

#define N_DRAWS 400000

/* ---- event order --------------------------------------------------------- */

/* Events fire by time, and same-time events in the order they were
 * scheduled, whatever order they were inserted in. */
static void
test_kernel_orders_by_time_then_sequence (void **state)
{
  g_autoptr (SfKernel) k = sf_kernel_new (1);
  g_autoptr (GArray) log = g_array_new (FALSE, FALSE, sizeof (Fired));
  sf_kernel_set_handler (k, 0, log_event, log);
  sf_kernel_set_paranoid (k, TRUE);
  const SfTime at[] = { 50, 30, 50, 10, 30, 50, 0, 10 };
  for (guint i = 0; i < G_N_ELEMENTS (at); i++)
    assert_true (sf_kernel_schedule (k, at[i], 0, i, SF_PAYLOAD_NONE) != SF_EVENT_ID_NONE);
  assert_int_equal (sf_kernel_get_n_pending (k), 8);
  assert_int_equal (sf_kernel_peek_time (k), 0);

  assert_int_equal (sf_kernel_run (k, SF_TIME_NEVER), 8);
  const guint32 order[] = { 6, 3, 7, 1, 4, 0, 2, 5 };
  assert_int_equal (log->len, G_N_ELEMENTS (order));
  for (guint i = 0; i < log->len; i++)
    {
      assert_int_equal (g_array_index (log, Fired, i).entity, order[i]);
      assert_int_equal (g_array_index (log, Fired, i).time_ms, at[order[i]]);
    }
  assert_int_equal (sf_kernel_get_n_pending (k), 0);
  assert_int_equal (sf_kernel_peek_time (k), SF_TIME_NEVER);
  assert_int_equal (sf_kernel_get_n_fired (k), 8);
}

/* An event scheduled at now from a handler fires after the events already
 * queued for now (its sequence number is larger). */
static void
schedule_at_now_once (SfKernel *k, const SfEvent *ev, gpointer user_data)
{
  log_event (k, ev, user_data);
  if (ev->entity == 1)
    sf_kernel_schedule_in (k, 0, 0, 99, SF_PAYLOAD_NONE);
}

static void
test_kernel_same_time_from_handler_fires_last (void **state)
{
  g_autoptr (SfKernel) k = sf_kernel_new (1);
  g_autoptr (GArray) log = g_array_new (FALSE, FALSE, sizeof (Fired));
  sf_kernel_set_handler (k, 0, schedule_at_now_once, log);
  for (guint32 e = 1; e <= 3; e++)
    sf_kernel_schedule (k, 20, 0, e, SF_PAYLOAD_NONE);
  sf_kernel_run (k, SF_TIME_NEVER);
  const guint32 order[] = { 1, 2, 3, 99 };
  assert_int_equal (log->len, 4);
  for (guint i = 0; i < 4; i++)
    {
      assert_int_equal (g_array_index (log, Fired, i).entity, order[i]);
      assert_int_equal (g_array_index (log, Fired, i).time_ms, 20);
    }
}

/* The typed fields travel unchanged; pop advances the clock and respects
 * the horizon. */
static void
test_kernel_pop_copies_event_and_respects_until (void **state)
{
  g_autoptr (SfKernel) k = sf_kernel_new (4);
  SfEventId a = sf_kernel_schedule (k, 1500, 3, 42, SF_PAYLOAD_DOUBLE (2.5));
  sf_kernel_schedule (k, 2500, 2, 7, SF_PAYLOAD_INT (-9));
  SfEvent ev;
  assert_false (sf_kernel_pop (k, 1499, &ev));
  assert_int_equal (sf_kernel_get_now (k), 0);
  assert_true (sf_kernel_pop (k, 1500, &ev));
  assert_int_equal (ev.time_ms, 1500);
  assert_int_equal (ev.type, 3);
  assert_int_equal (ev.entity, 42);
  assert_true (ev.payload.d == 2.5);
  assert_true (ev.id == a);
  assert_int_equal (sf_kernel_get_now (k), 1500);
  assert_false (sf_kernel_is_pending (k, a));
  assert_false (sf_kernel_pop (k, 2000, &ev));
  assert_true (sf_kernel_pop (k, SF_TIME_NEVER, &ev));
  assert_int_equal (ev.payload.i, -9);
  assert_int_equal (ev.type, 2);
  assert_false (sf_kernel_pop (k, SF_TIME_NEVER, &ev));
}

/* run(until) fires exactly the events at or before until, then sets now to
 * until; later events stay pending. */
static void
test_kernel_run_until_horizon (void **state)
{
  g_autoptr (SfKernel) k = sf_kernel_new (1);
  g_autoptr (GArray) log = g_array_new (FALSE, FALSE, sizeof (Fired));
  sf_kernel_set_handler (k, 0, log_event, log);
  for (SfTime t = 0; t <= 100; t += 10)
    sf_kernel_schedule (k, t, 0, (guint32) t, SF_PAYLOAD_NONE);
  assert_int_equal (sf_kernel_run (k, 55), 6);
  assert_int_equal (sf_kernel_get_now (k), 55);
  assert_int_equal (sf_kernel_get_n_pending (k), 5);
  assert_int_equal (sf_kernel_run (k, 60), 1); /* an event exactly at until fires */
  assert_int_equal (sf_kernel_get_now (k), 60);
}

static void
stop_at_entity_2 (SfKernel *k, const SfEvent *ev, gpointer user_data)
{
  log_event (k, ev, user_data);
  if (ev->entity == 2)
    sf_kernel_stop (k);
}

static void
test_kernel_stop_from_handler (void **state)
{
  g_autoptr (SfKernel) k = sf_kernel_new (1);
  g_autoptr (GArray) log = g_array_new (FALSE, FALSE, sizeof (Fired));
  sf_kernel_set_handler (k, 0, stop_at_entity_2, log);
  for (guint32 e = 0; e < 5; e++)
    sf_kernel_schedule (k, 10 * e, 0, e, SF_PAYLOAD_NONE);
  assert_int_equal (sf_kernel_run (k, 1000), 3);
  assert_int_equal (sf_kernel_get_now (k), 20); /* stopped early: now is not moved to until */
  assert_int_equal (sf_kernel_run (k, 1000), 2);
  assert_int_equal (sf_kernel_get_now (k), 1000);
}

/* Scheduling before now is a caller bug: refused, reported, queue untouched. */
static void
test_kernel_schedule_in_past_is_refused (void **state)
{
  g_autoptr (SfKernel) k = sf_kernel_new (2);
  sf_kernel_schedule (k, 100, 0, 0, SF_PAYLOAD_NONE);
  SfEvent ev;
  assert_true (sf_kernel_pop (k, SF_TIME_NEVER, &ev));
  guint n_crit = 0;
  guint h = g_log_set_handler (G_LOG_DOMAIN, G_LOG_LEVEL_CRITICAL, count_critical, &n_crit);
  assert_true (sf_kernel_schedule (k, 99, 0, 0, SF_PAYLOAD_NONE) == SF_EVENT_ID_NONE);
  assert_true (sf_kernel_schedule_in (k, -1, 0, 0, SF_PAYLOAD_NONE) == SF_EVENT_ID_NONE);
  assert_true (sf_kernel_schedule (k, 200, 2, 0, SF_PAYLOAD_NONE) == SF_EVENT_ID_NONE); /* type */
  g_log_remove_handler (G_LOG_DOMAIN, h);
  assert_int_equal (n_crit, 3);
  assert_int_equal (sf_kernel_get_n_pending (k), 0);
  assert_true (sf_kernel_schedule (k, 100, 0, 0, SF_PAYLOAD_NONE) != SF_EVENT_ID_NONE); /* at now */
  assert_kernel_ok (k);
}

/* ---- cancellation -------------------------------------------------------- */

static void
test_kernel_cancel_by_handle (void **state)
{
  g_autoptr (SfKernel) k = sf_kernel_new (1);
  SfEventId a = sf_kernel_schedule (k, 10, 0, 1, SF_PAYLOAD_NONE);
  SfEventId b = sf_kernel_schedule (k, 20, 0, 2, SF_PAYLOAD_NONE);
  SfEventId c = sf_kernel_schedule (k, 30, 0, 3, SF_PAYLOAD_NONE);
  assert_true (sf_kernel_is_pending (k, b));
  assert_true (sf_kernel_cancel (k, b));
  assert_false (sf_kernel_is_pending (k, b));
  assert_false (sf_kernel_cancel (k, b)); /* twice */
  assert_false (sf_kernel_cancel (k, SF_EVENT_ID_NONE));
  assert_kernel_ok (k);
  SfEvent ev;
  assert_true (sf_kernel_pop (k, SF_TIME_NEVER, &ev));
  assert_int_equal (ev.entity, 1);
  assert_false (sf_kernel_cancel (k, a)); /* already fired */
  /* The freed slots are reused; the old handles stay stale. */
  SfEventId d = sf_kernel_schedule (k, 40, 0, 4, SF_PAYLOAD_NONE);
  SfEventId e = sf_kernel_schedule (k, 50, 0, 5, SF_PAYLOAD_NONE);
  assert_true (d != a && d != b && e != a && e != b);
  assert_false (sf_kernel_is_pending (k, a));
  assert_false (sf_kernel_is_pending (k, b));
  assert_false (sf_kernel_cancel (k, a));
  assert_true (sf_kernel_is_pending (k, c));
  assert_true (sf_kernel_is_pending (k, d));
  assert_int_equal (sf_kernel_get_n_pending (k), 3);
  assert_true (sf_kernel_pop (k, SF_TIME_NEVER, &ev));
  assert_int_equal (ev.entity, 3);
  assert_kernel_ok (k);
}

/* Cancelling the event that would fire next exposes the one after it. */
static void
test_kernel_cancel_the_next_event (void **state)
{
  g_autoptr (SfKernel) k = sf_kernel_new (1);
  SfEventId first = sf_kernel_schedule (k, 5, 0, 1, SF_PAYLOAD_NONE);
  sf_kernel_schedule (k, 5, 0, 2, SF_PAYLOAD_NONE);
  sf_kernel_schedule (k, 7, 0, 3, SF_PAYLOAD_NONE);
  assert_true (sf_kernel_cancel (k, first));
  assert_int_equal (sf_kernel_peek_time (k), 5);
  SfEvent ev;
  assert_true (sf_kernel_pop (k, SF_TIME_NEVER, &ev));
  assert_int_equal (ev.entity, 2);
  assert_kernel_ok (k);
}

/* A handler cancels events (the one that is next, one later) and schedules
 * new ones while the run loop is running; it cannot cancel itself. */
typedef struct {
  GArray *log;
  SfEventId next_same_time;
  SfEventId later;
  SfEventId self;
  gboolean cancelled_next, cancelled_later, cancelled_self;
} CancelCtx;

static void
cancelling_handler (SfKernel *k, const SfEvent *ev, gpointer user_data)
{
  CancelCtx *c = user_data;
  log_event (k, ev, c->log);
  if (ev->entity == 1)
    {
      c->cancelled_self = sf_kernel_cancel (k, c->self);
      c->cancelled_next = sf_kernel_cancel (k, c->next_same_time);
      c->cancelled_later = sf_kernel_cancel (k, c->later);
      sf_kernel_schedule_in (k, 1, 0, 10, SF_PAYLOAD_NONE);
    }
}

static void
test_kernel_cancel_from_handler (void **state)
{
  g_autoptr (SfKernel) k = sf_kernel_new (1);
  g_autoptr (GArray) log = g_array_new (FALSE, FALSE, sizeof (Fired));
  CancelCtx c = { .log = log };
  sf_kernel_set_handler (k, 0, cancelling_handler, &c);
  sf_kernel_set_paranoid (k, TRUE);
  c.self = sf_kernel_schedule (k, 100, 0, 1, SF_PAYLOAD_NONE);
  c.next_same_time = sf_kernel_schedule (k, 100, 0, 2, SF_PAYLOAD_NONE);
  sf_kernel_schedule (k, 100, 0, 3, SF_PAYLOAD_NONE);
  c.later = sf_kernel_schedule (k, 500, 0, 4, SF_PAYLOAD_NONE);
  sf_kernel_run (k, SF_TIME_NEVER);
  assert_false (c.cancelled_self);
  assert_true (c.cancelled_next);
  assert_true (c.cancelled_later);
  const guint32 order[] = { 1, 3, 10 };
  assert_int_equal (log->len, 3);
  for (guint i = 0; i < 3; i++)
    assert_int_equal (g_array_index (log, Fired, i).entity, order[i]);
  assert_int_equal (g_array_index (log, Fired, 2).time_ms, 101);
}

/* ---- randomised comparison with a sorted reference ----------------------- */

typedef struct {
  SfTime time_ms;
  guint64 order; /* the reference's own scheduling counter */
  SfEventId id;
  guint32 entity;
} RefEvent;

static gint
ref_cmp (gconstpointer pa, gconstpointer pb)
{
  const RefEvent *a = pa, *b = pb;
  if (a->time_ms != b->time_ms)
    return a->time_ms < b->time_ms ? -1 : 1;
  return a->order < b->order ? -1 : (a->order > b->order);
}

/* Many random schedule / cancel / pop operations; after each pop the kernel
 * must agree with a plain array sorted by (time, scheduling order) with
 * g_array_sort.  Times come from a small range so that ties are frequent,
 * and cancels hit random pending, fired and cancelled handles. */
static void
test_kernel_random_ops_match_sorted_reference (void **state)
{
  g_autoptr (SfKernel) k = sf_kernel_new (1);
  sf_kernel_set_paranoid (k, TRUE);
  g_autoptr (GArray) ref = g_array_new (FALSE, FALSE, sizeof (RefEvent));
  g_autoptr (GArray) all_ids = g_array_new (FALSE, FALSE, sizeof (SfEventId));
  g_autoptr (GRand) rand = g_rand_new_with_seed (20240611);
  guint64 order = 0;
  guint32 next_entity = 0;
  guint n_pop = 0, n_cancel_hit = 0, n_cancel_stale = 0;
  gboolean sorted = TRUE;

  for (guint op = 0; op < 60000; op++)
    {
      guint r = g_rand_int_range (rand, 0, 100);
      /* Phases: grow the queue, then drain it, so both deep and empty heaps occur. */
      gboolean grow_phase = (op / 5000) % 2 == 0;
      if (r < (grow_phase ? 55u : 30u))
        {
          SfTime at = sf_kernel_get_now (k) + g_rand_int_range (rand, 0, 50);
          RefEvent re = { at, order++, SF_EVENT_ID_NONE, next_entity++ };
          re.id = sf_kernel_schedule (k, at, 0, re.entity, SF_PAYLOAD_INT (re.entity));
          assert_true (re.id != SF_EVENT_ID_NONE);
          g_array_append_val (ref, re);
          g_array_append_val (all_ids, re.id);
          sorted = FALSE;
        }
      else if (r < 75)
        {
          if (all_ids->len == 0)
            continue;
          SfEventId id = g_array_index (all_ids, SfEventId, g_rand_int_range (rand, 0, all_ids->len));
          guint idx = G_MAXUINT;
          for (guint i = 0; i < ref->len; i++)
            if (g_array_index (ref, RefEvent, i).id == id)
              idx = i;
          gboolean was_pending = idx != G_MAXUINT;
          assert_int_equal (sf_kernel_is_pending (k, id), was_pending);
          assert_int_equal (sf_kernel_cancel (k, id), was_pending);
          if (was_pending)
            {
              g_array_remove_index (ref, idx); /* keeps the order of the rest */
              n_cancel_hit++;
            }
          else
            n_cancel_stale++;
        }
      else
        {
          if (!sorted)
            g_array_sort (ref, ref_cmp);
          sorted = TRUE;
          SfEvent ev;
          gboolean got = sf_kernel_pop (k, SF_TIME_NEVER, &ev);
          assert_int_equal (got, ref->len > 0);
          if (!got)
            continue;
          RefEvent want = g_array_index (ref, RefEvent, 0);
          g_array_remove_index (ref, 0);
          assert_int_equal (ev.time_ms, want.time_ms);
          assert_int_equal (ev.entity, want.entity);
          assert_int_equal (ev.payload.i, want.entity);
          assert_true (ev.id == want.id);
          n_pop++;
        }
      assert_int_equal (sf_kernel_get_n_pending (k), ref->len);
    }
  /* Drain what is left and compare to the end. */
  g_array_sort (ref, ref_cmp);
  for (guint i = 0; i < ref->len; i++)
    {
      SfEvent ev;
      assert_true (sf_kernel_pop (k, SF_TIME_NEVER, &ev));
      assert_int_equal (ev.entity, g_array_index (ref, RefEvent, i).entity);
    }
  assert_int_equal (sf_kernel_get_n_pending (k), 0);
  /* The run must actually have exercised every path. */
  assert_true (n_pop > 10000);
  assert_true (n_cancel_hit > 1000);
  assert_true (n_cancel_stale > 1000);
  assert_kernel_ok (k);
}

/* ---- random streams ------------------------------------------------------ */

static void
test_rng_same_key_same_draws (void **state)
{
  g_autoptr (SfRng) a = sf_rng_new (12345, 2, 7, 1);
  g_autoptr (SfRng) b = sf_rng_new (12345, 2, 7, 1);
  for (int i = 0; i < 1000; i++)
    {
      assert_true (sf_rng_uniform (a) == sf_rng_uniform (b));
      assert_true (sf_rng_lognormal (a, 3.0, 1.0) == sf_rng_lognormal (b, 3.0, 1.0));
    }
}

/* Entity 3's draws do not depend on how many other entities exist or on how
 * their draws interleave with its own; every key component matters. */
static void
test_rng_streams_independent_of_entity_count (void **state)
{
  double alone[200];
  {
    g_autoptr (SfRng) r = sf_rng_new (99, 0, 3, 2);
    for (int i = 0; i < 200; i++)
      alone[i] = sf_rng_exponential (r, 4.0);
  }
  SfRng *many[40];
  for (guint32 e = 0; e < 40; e++)
    many[e] = sf_rng_new (99, 0, e, 2);
  for (int i = 0; i < 200; i++)
    for (guint32 e = 0; e < 40; e++)
      {
        double x = sf_rng_exponential (many[e], 4.0);
        if (e == 3)
          assert_true (x == alone[i]);
      }
  for (guint32 e = 0; e < 40; e++)
    sf_rng_free (many[e]);

  /* Streams that differ in seed, replication, entity or purpose differ. */
  const guint32 keys[][4] = { { 99, 0, 3, 2 }, { 98, 0, 3, 2 }, { 99, 1, 3, 2 },
                              { 99, 0, 4, 2 }, { 99, 0, 3, 1 } };
  double first[G_N_ELEMENTS (keys)];
  for (guint i = 0; i < G_N_ELEMENTS (keys); i++)
    {
      g_autoptr (SfRng) r = sf_rng_new (keys[i][0], keys[i][1], keys[i][2], keys[i][3]);
      first[i] = sf_rng_uniform (r);
    }
  for (guint i = 0; i < G_N_ELEMENTS (keys); i++)
    for (guint j = i + 1; j < G_N_ELEMENTS (keys); j++)
      assert_true (first[i] != first[j]);
  /* The high half of a 64-bit seed counts too. */
  g_autoptr (SfRng) lo = sf_rng_new (5, 0, 0, 0);
  g_autoptr (SfRng) hi = sf_rng_new (5 + ((guint64) 1 << 32), 0, 0, 0);
  assert_true (sf_rng_uniform (lo) != sf_rng_uniform (hi));
}

/* Neighbouring entity streams are uncorrelated: the sample correlation of
 * paired uniforms is within 5 standard errors (1/sqrt(n)) of 0 (the
 * large-sample distribution of r under independence; from memory). */
static void
test_rng_neighbour_streams_uncorrelated (void **state)
{
  g_autoptr (SfRng) a = sf_rng_new (7, 0, 0, 1);
  g_autoptr (SfRng) b = sf_rng_new (7, 0, 1, 1);
  double sa = 0, sb = 0, sab = 0, saa = 0, sbb = 0;
  for (int i = 0; i < N_DRAWS; i++)
    {
      double x = sf_rng_uniform (a), y = sf_rng_uniform (b);
      sa += x, sb += y, sab += x * y, saa += x * x, sbb += y * y;
    }
  double n = N_DRAWS;
  double r = (sab - sa * sb / n) / sqrt ((saa - sa * sa / n) * (sbb - sb * sb / n));
  sf_assert_close (r, 0.0, 5.0 / sqrt (n), 0.0);
}

/* U(0,1): mean 1/2, variance 1/12 (analytic). */
static void
test_rng_uniform_moments (void **state)
{
  g_autoptr (SfRng) r = sf_rng_new (1, 0, 0, 0);
  g_autofree double *x = g_new (double, N_DRAWS);
  for (int i = 0; i < N_DRAWS; i++)
    {
      x[i] = sf_rng_uniform (r);
      assert_true (x[i] >= 0.0 && x[i] < 1.0);
    }
  Moments mo = sample_moments (x, N_DRAWS);
  assert_moments (mo, 0.5, 1.0 / 12.0);
}

/* N(0,1): mean 0, variance 1 (Law, Simulation Modeling and Analysis, 5th
 * ed., table 6.3, from memory). */
static void
test_rng_normal_moments (void **state)
{
  g_autoptr (SfRng) r = sf_rng_new (2, 0, 0, 0);
  g_autofree double *x = g_new (double, N_DRAWS);
  for (int i = 0; i < N_DRAWS; i++)
    x[i] = sf_rng_normal (r);
  Moments mo = sample_moments (x, N_DRAWS);
  assert_moments (mo, 0.0, 1.0);
}

/* Exponential with mean beta: mean beta, variance beta^2 (Law, Simulation
 * Modeling and Analysis, 5th ed., table 6.3, from memory). */
static void
test_rng_exponential_moments (void **state)
{
  const double means[] = { 0.25, 1.0, 120.0 };
  for (guint j = 0; j < G_N_ELEMENTS (means); j++)
    {
      g_autoptr (SfRng) r = sf_rng_new (3, 0, j, 0);
      g_autofree double *x = g_new (double, N_DRAWS);
      for (int i = 0; i < N_DRAWS; i++)
        {
          x[i] = sf_rng_exponential (r, means[j]);
          assert_true (x[i] >= 0.0 && isfinite (x[i]));
        }
      Moments mo = sample_moments (x, N_DRAWS);
      assert_moments (mo, means[j], means[j] * means[j]);
    }
}

/* Weibull(shape k, scale lambda): mean lambda Gamma(1 + 1/k), variance
 * lambda^2 [Gamma(1 + 2/k) - Gamma(1 + 1/k)^2] (Law, Simulation Modeling and
 * Analysis, 5th ed., table 6.3, from memory), with tgamma from libm as the
 * gamma function; and P(X <= lambda) = 1 - 1/e from the CDF itself
 * (analytic), with a binomial 5-sigma band. */
static void
test_rng_weibull_moments (void **state)
{
  const double shape[] = { 0.8, 1.5, 3.0 };
  const double scale[] = { 2.0, 45.0, 1.0 };
  for (guint j = 0; j < G_N_ELEMENTS (shape); j++)
    {
      g_autoptr (SfRng) r = sf_rng_new (4, 0, j, 0);
      g_autofree double *x = g_new (double, N_DRAWS);
      guint below = 0;
      for (int i = 0; i < N_DRAWS; i++)
        {
          x[i] = sf_rng_weibull (r, shape[j], scale[j]);
          below += x[i] <= scale[j];
        }
      double g1 = tgamma (1.0 + 1.0 / shape[j]);
      double g2 = tgamma (1.0 + 2.0 / shape[j]);
      Moments mo = sample_moments (x, N_DRAWS);
      assert_moments (mo, scale[j] * g1, scale[j] * scale[j] * (g2 - g1 * g1));
      double p = 1.0 - exp (-1.0);
      sf_assert_close ((double) below / N_DRAWS, p, 5.0 * sqrt (p * (1 - p) / N_DRAWS), 0.0);
    }
}

/* Lognormal given the mean m and sd s of the variable: the sample mean and
 * variance approach m and s^2 (the parametrisation of Law, 5th ed., table
 * 6.3, from memory: mean exp(mu + sigma^2/2), variance
 * exp(2 mu + sigma^2)(exp(sigma^2) - 1)), and ln X has mean
 * mu = ln m - sigma^2/2 and variance sigma^2 = ln(1 + s^2/m^2). */
static void
test_rng_lognormal_moments (void **state)
{
  const double mean[] = { 10.0, 30.0, 1.0 };
  const double sd[] = { 4.0, 30.0, 0.1 };
  for (guint j = 0; j < G_N_ELEMENTS (mean); j++)
    {
      g_autoptr (SfRng) r = sf_rng_new (5, 0, j, 0);
      g_autofree double *x = g_new (double, N_DRAWS);
      g_autofree double *lx = g_new (double, N_DRAWS);
      for (int i = 0; i < N_DRAWS; i++)
        {
          x[i] = sf_rng_lognormal (r, mean[j], sd[j]);
          assert_true (x[i] > 0.0);
          lx[i] = log (x[i]);
        }
      Moments mo = sample_moments (x, N_DRAWS);
      assert_moments (mo, mean[j], sd[j] * sd[j]);
      double sigma2 = log (1.0 + sd[j] * sd[j] / (mean[j] * mean[j]));
      Moments ml = sample_moments (lx, N_DRAWS);
      assert_moments (ml, log (mean[j]) - 0.5 * sigma2, sigma2);
    }
  g_autoptr (SfRng) r = sf_rng_new (5, 0, 9, 0);
  assert_true (sf_rng_lognormal (r, 7.0, 0.0) == 7.0);
}

/* ---- FIFO resources ------------------------------------------------------ */

static void
assert_resource_ok (const SfResource *res)
{
  g_autofree char *problem = NULL;
  if (!sf_resource_check (res, &problem))
    fail_msg ("sf_resource_check: %s", problem);
}

/* Units go to requesters first come, first served; a released unit passes
 * straight to the head of the line. */
static void
test_resource_fifo_order (void **state)
{
  g_autoptr (SfResource) res = sf_resource_new (2);
  guint32 got = 0;
  assert_true (sf_resource_request (res, 10));
  assert_true (sf_resource_request (res, 11));
  assert_false (sf_resource_request (res, 12));
  assert_false (sf_resource_request (res, 13));
  assert_false (sf_resource_request (res, 14));
  assert_int_equal (sf_resource_get_n_waiting (res), 3);
  assert_int_equal (sf_resource_get_waiting (res, 0), 12);
  assert_int_equal (sf_resource_get_waiting (res, 2), 14);
  assert_resource_ok (res);

  assert_true (sf_resource_release (res, &got));
  assert_int_equal (got, 12);
  assert_false (sf_resource_request (res, 15)); /* joins behind 13 and 14 */
  const guint32 expect[] = { 13, 14, 15 };
  for (guint i = 0; i < 3; i++)
    {
      assert_true (sf_resource_release (res, &got));
      assert_int_equal (got, expect[i]);
      assert_int_equal (sf_resource_get_in_use (res), 2);
      assert_resource_ok (res);
    }
  assert_false (sf_resource_release (res, &got));
  assert_false (sf_resource_release (res, &got));
  assert_int_equal (sf_resource_get_in_use (res), 0);
  assert_true (sf_resource_request (res, 16)); /* free again */

  guint n_crit = 0;
  guint h = g_log_set_handler (G_LOG_DOMAIN, G_LOG_LEVEL_CRITICAL, count_critical, &n_crit);
  assert_false (sf_resource_release (res, &got));
  assert_false (sf_resource_release (res, &got)); /* nothing in use: a caller bug */
  g_log_remove_handler (G_LOG_DOMAIN, h);
  assert_int_equal (n_crit, 1);
}

/* A long line that wraps around the ring buffer and makes it grow keeps its
 * order (checked against a GQueue as the reference FIFO). */
static void
test_resource_long_line_keeps_order (void **state)
{
  g_autoptr (SfResource) res = sf_resource_new (1);
  GQueue ref = G_QUEUE_INIT;
  g_autoptr (GRand) rand = g_rand_new_with_seed (77);
  guint32 next = 0, got;
  assert_true (sf_resource_request (res, next++));
  for (int op = 0; op < 20000; op++)
    {
      /* Mostly join early on, mostly leave later: the line grows past the
       * ring's initial size, then drains while wrapping. */
      gboolean join = g_rand_int_range (rand, 0, 100) < (op < 10000 ? 70 : 30);
      if (join || g_queue_is_empty (&ref))
        {
          assert_false (sf_resource_request (res, next));
          g_queue_push_tail (&ref, GUINT_TO_POINTER (next));
          next++;
        }
      else
        {
          assert_true (sf_resource_release (res, &got));
          assert_int_equal (got, GPOINTER_TO_UINT (g_queue_pop_head (&ref)));
        }
      assert_int_equal (sf_resource_get_n_waiting (res), g_queue_get_length (&ref));
    }
  assert_resource_ok (res);
  g_queue_clear (&ref);
}

int
main (void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test (test_kernel_orders_by_time_then_sequence),
    cmocka_unit_test (test_kernel_same_time_from_handler_fires_last),
    cmocka_unit_test (test_kernel_pop_copies_event_and_respects_until),
    cmocka_unit_test (test_kernel_run_until_horizon),
    cmocka_unit_test (test_kernel_stop_from_handler),
    cmocka_unit_test (test_kernel_schedule_in_past_is_refused),
    cmocka_unit_test (test_kernel_cancel_by_handle),
    cmocka_unit_test (test_kernel_cancel_the_next_event),
    cmocka_unit_test (test_kernel_cancel_from_handler),
    cmocka_unit_test (test_kernel_random_ops_match_sorted_reference),
    cmocka_unit_test (test_rng_same_key_same_draws),
    cmocka_unit_test (test_rng_streams_independent_of_entity_count),
    cmocka_unit_test (test_rng_neighbour_streams_uncorrelated),
    cmocka_unit_test (test_rng_uniform_moments),
    cmocka_unit_test (test_rng_normal_moments),
    cmocka_unit_test (test_rng_exponential_moments),
    cmocka_unit_test (test_rng_weibull_moments),
    cmocka_unit_test (test_rng_lognormal_moments),
    cmocka_unit_test (test_resource_fifo_order),
    cmocka_unit_test (test_resource_long_line_keeps_order),
  };
  return cmocka_run_group_tests_name ("kernel", tests, NULL, NULL);
}
