/* SPDX-License-Identifier: MIT
 *
 * sf-kernel.h — the discrete-event kernel (internal to sim/): simulated
 * clock, event queue, random streams and FIFO counting resources.  It knows
 * events and time and nothing about dozers; the model layers (fleet, roster,
 * reliability) give meaning to event types and entity ids.
 *
 * Owns: an SfKernel owns its event queue and handler table; an SfRng owns its
 * generator state; an SfResource owns its waiting line.  Each is created with
 * *_new and freed with *_free (g_autoptr works); none of them keeps a pointer
 * to the others or to caller data except the user_data given with a handler,
 * which it borrows.
 *
 * ---- Contract of the event queue -----------------------------------------
 *
 * Time.  Simulated time is an integer, SfTime, in milliseconds from the start
 * of the run.  Only the kernel advances it (sf_kernel_pop / sf_kernel_run);
 * model code reads it with sf_kernel_get_now() and never from a clock.
 *
 * Order.  Every scheduled event receives a sequence number from a 64-bit
 * counter that only increases.  Events fire in increasing (time, sequence)
 * order, so events scheduled for the same time fire in the order in which
 * they were scheduled (deterministic tie-breaking, no float compare).
 *
 * Past.  Scheduling an event earlier than now is a bug in the caller:
 * g_return_val_if_fail reports it and nothing is scheduled.  Scheduling at
 * now is allowed; such an event fires after everything already queued for
 * now.
 *
 * Cancellation.  sf_kernel_schedule returns a handle (SfEventId).
 * sf_kernel_cancel removes a pending event at once (the heap is indexed, see
 * below) and returns FALSE for a handle whose event already fired or was
 * cancelled, so "cancel if still pending" needs no bookkeeping by the model.
 * A handle is a slot index plus a 32-bit generation that changes every time
 * the slot is reused; a stale handle is recognised unless the same slot has
 * been reused exactly 2^32 times in between.  SF_EVENT_ID_NONE (0) is never
 * a valid handle.
 *
 * Re-entrancy.  An event is removed from the queue before it is handed to the
 * model, so handlers (and code between pops) may schedule and cancel freely,
 * including cancelling the event that is now next.  Cancelling the event
 * being handled returns FALSE: it has already fired.
 *
 * Dispatch.  Two ways, which may be mixed:
 *   - table: the model registers one handler per event type and calls
 *     sf_kernel_run(k, until), which pops and dispatches;
 *   - pop: the model calls sf_kernel_pop(k, until, &ev) in its own loop and
 *     switches on ev.type.  This costs no indirect call.
 *
 * Data structure and cost.  A binary min-heap of (time, seq, slot) nodes in a
 * plain array, plus a slot array holding each event's type, entity, payload,
 * generation and current heap position (an "indexed heap").  With n pending
 * events: schedule O(log n), pop O(log n), cancel O(log n) (the node is
 * removed at once, so the heap never holds dead events and its size is
 * exactly the number pending), peek O(1), is_pending O(1).  Both arrays grow
 * by doubling; freed slots are reused through a free list, so a steady-state
 * run does not allocate.  Lazy deletion was the alternative: cheaper cancel
 * (O(1)) but dead nodes stay in the heap until they surface, which a model
 * that cancels many timeouts pays for in heap depth and memory; the indexed
 * heap keeps the invariants simple to check.
 *
 * Checking.  sf_kernel_check verifies the heap property, the slot/heap
 * cross-index and that no pending event lies in the past; with
 * sf_kernel_set_paranoid(k, TRUE) the run loop and sf_kernel_pop call it
 * after every event and abort on the first violation (tests turn it on).
 *
 * ---- Random streams ------------------------------------------------------
 *
 * SfRng is one independent stream per (seed, replication, entity, purpose),
 * so that adding an entity or a purpose never changes another stream's
 * draws.  It wraps GRand (Mersenne Twister MT19937, which GLib documents as
 * giving the same sequence on every platform for the same seed), seeded with
 * g_rand_new_with_seed_array over {seed low 32 bits, seed high 32 bits,
 * replication, entity, purpose}.  Distributions are built on g_rand_double
 * by inversion (exponential, Weibull) and the polar method (normal, hence
 * lognormal); see sf-kernel.c for the formulas and their source.
 *
 * ---- FIFO counting resources ---------------------------------------------
 *
 * SfResource is a counting resource with `capacity` units and a first-in
 * first-out line of waiting entity ids.  It is passive: it never schedules
 * anything.  sf_resource_request either grants a unit at once (TRUE) or puts
 * the entity at the tail of the line (FALSE); sf_resource_release hands the
 * freed unit straight to the head of the line and tells the caller which
 * entity got it, and the model then schedules that entity's resumption (for
 * example an event at now).  Invariant: entities wait only while every unit
 * is in use.  The line is a ring buffer that grows by doubling, so waiting
 * costs no allocation per request.
 */
#pragma once

#include <glib.h>

G_BEGIN_DECLS

/* ---- time ---------------------------------------------------------------- */

typedef gint64 SfTime; /* simulated milliseconds since the start of the run */

#define SF_TIME_MS_PER_S ((SfTime) 1000)
#define SF_TIME_MS_PER_MIN ((SfTime) 60000)
#define SF_TIME_MS_PER_H ((SfTime) 3600000)
#define SF_TIME_NEVER G_MAXINT64 /* "no time": an empty queue's next time */

/* Rounds a duration in minutes to the nearest millisecond.  `min` must be
 * finite, >= 0 and small enough to fit (about 1.5e11 minutes). */
static inline SfTime
sf_time_from_min (double min)
{
  return (SfTime) (min * (double) SF_TIME_MS_PER_MIN + 0.5);
}

static inline double
sf_time_to_min (SfTime t_ms)
{
  return (double) t_ms / (double) SF_TIME_MS_PER_MIN;
}

/* ---- events -------------------------------------------------------------- */

typedef guint64 SfEventId;
#define SF_EVENT_ID_NONE ((SfEventId) 0)

/* The payload of an event: the event type says which member is meant. */
typedef union {
  gint64 i;
  double d;
} SfPayload;

#define SF_PAYLOAD_INT(x) ((SfPayload){ .i = (x) })
#define SF_PAYLOAD_DOUBLE(x) ((SfPayload){ .d = (x) })
#define SF_PAYLOAD_NONE SF_PAYLOAD_INT (0)

/* An event as handed to the model (a copy: the kernel keeps nothing of it). */
typedef struct {
  SfTime time_ms;  /* when it fires; equals now while it is handled */
  guint64 seq;     /* its sequence number */
  SfEventId id;    /* the handle sf_kernel_schedule returned (now stale) */
  guint type;      /* < the kernel's n_types */
  guint32 entity;  /* the model's id of whatever the event is about */
  SfPayload payload;
} SfEvent;

typedef struct _SfKernel SfKernel;

/* A handler for one event type.  `ev` is borrowed for the call. */
typedef void (*SfEventHandler) (SfKernel *k, const SfEvent *ev, gpointer user_data);

/* A kernel at time 0 with an empty queue and room for event types
 * 0 .. n_types-1 in its handler table (n_types >= 1). */
SfKernel *sf_kernel_new (guint n_types);
void sf_kernel_free (SfKernel *k);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfKernel, sf_kernel_free)

/* Registers the handler that sf_kernel_run calls for events of `type`
 * (replacing any earlier one; NULL removes it).  user_data is borrowed. */
void sf_kernel_set_handler (SfKernel *k, guint type, SfEventHandler handler, gpointer user_data);

SfTime sf_kernel_get_now (const SfKernel *k);
/* Number of events pending (scheduled, not yet fired, not cancelled). */
guint sf_kernel_get_n_pending (const SfKernel *k);
/* Events fired so far (by pop or run). */
guint64 sf_kernel_get_n_fired (const SfKernel *k);
/* Time of the next event, or SF_TIME_NEVER when none is pending. */
SfTime sf_kernel_peek_time (const SfKernel *k);

/* Schedules an event at absolute time `at_ms` (>= now; earlier is a bug and
 * returns SF_EVENT_ID_NONE).  `type` must be < n_types. */
SfEventId sf_kernel_schedule (SfKernel *k, SfTime at_ms, guint type, guint32 entity,
                              SfPayload payload);
/* The same at now + delay_ms (delay_ms >= 0). */
SfEventId sf_kernel_schedule_in (SfKernel *k, SfTime delay_ms, guint type, guint32 entity,
                                 SfPayload payload);

/* Removes a pending event.  TRUE if it was pending, FALSE if the handle is
 * stale (fired or cancelled already) or SF_EVENT_ID_NONE. */
gboolean sf_kernel_cancel (SfKernel *k, SfEventId id);
gboolean sf_kernel_is_pending (const SfKernel *k, SfEventId id);

/* Pop-style run loop.  If the next event fires at or before until_ms,
 * removes it, advances now to its time, copies it into *ev and returns TRUE;
 * otherwise returns FALSE and changes nothing. */
gboolean sf_kernel_pop (SfKernel *k, SfTime until_ms, SfEvent *ev);

/* Table-style run loop: pops and dispatches every event with time <= until_ms
 * to the handler of its type (an event whose type has no handler is a bug and
 * is reported with g_critical, then dropped).  Stops early after a handler
 * calls sf_kernel_stop.  When it did not stop early and until_ms is not
 * SF_TIME_NEVER, now becomes until_ms.  Returns the number of events
 * dispatched by this call. */
guint64 sf_kernel_run (SfKernel *k, SfTime until_ms);
/* Asks sf_kernel_run to return after the current handler. */
void sf_kernel_stop (SfKernel *k);

/* Verifies the queue's invariants: heap order by (time, seq), the slot <->
 * heap cross-index, no pending event before now, sequence numbers below the
 * next one to be issued.  Returns TRUE when all hold; otherwise FALSE and, if
 * problem is not NULL, a newly allocated description in *problem. */
gboolean sf_kernel_check (const SfKernel *k, char **problem);
/* When on, sf_kernel_pop and sf_kernel_run call sf_kernel_check after every
 * event and abort (g_error) on a violation.  Off by default. */
void sf_kernel_set_paranoid (SfKernel *k, gboolean paranoid);

/* ---- random streams ------------------------------------------------------ */

typedef struct _SfRng SfRng;

/* The stream for (seed, replication, entity, purpose).  Two calls with the
 * same four values give identical streams; streams that differ in any value
 * are seeded differently and used as independent. */
SfRng *sf_rng_new (guint64 seed, guint32 replication, guint32 entity, guint32 purpose);
void sf_rng_free (SfRng *r);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfRng, sf_rng_free)

/* Uniform on [0, 1). */
double sf_rng_uniform (SfRng *r);
/* Standard normal N(0, 1). */
double sf_rng_normal (SfRng *r);
/* Exponential with the given mean (> 0). */
double sf_rng_exponential (SfRng *r, double mean);
/* Weibull with shape k > 0 and scale lambda > 0:
 * F(x) = 1 - exp(-(x/lambda)^k); mean lambda * Gamma(1 + 1/k). */
double sf_rng_weibull (SfRng *r, double shape, double scale);
/* Lognormal given the mean (> 0) and standard deviation (>= 0) of the
 * variable itself, not of its logarithm. */
double sf_rng_lognormal (SfRng *r, double mean, double sd);

/* ---- FIFO counting resources --------------------------------------------- */

typedef struct _SfResource SfResource;

/* A resource with `capacity` units (>= 1), all free, nobody waiting. */
SfResource *sf_resource_new (guint capacity);
void sf_resource_free (SfResource *res);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfResource, sf_resource_free)

/* Asks for one unit for `entity`.  TRUE: granted now.  FALSE: the entity is
 * now last in the line and will be named by a later sf_resource_release. */
gboolean sf_resource_request (SfResource *res, guint32 entity);
/* Returns one unit (one must be in use).  If somebody waits, the unit passes
 * to the head of the line: returns TRUE and sets *granted_entity; the caller
 * resumes that entity.  Otherwise the unit becomes free and returns FALSE. */
gboolean sf_resource_release (SfResource *res, guint32 *granted_entity);

guint sf_resource_get_capacity (const SfResource *res);
guint sf_resource_get_in_use (const SfResource *res);
guint sf_resource_get_n_waiting (const SfResource *res);
/* The i-th waiting entity, 0 = head of the line (i < n_waiting). */
guint32 sf_resource_get_waiting (const SfResource *res, guint i);
/* TRUE when in_use <= capacity and nobody waits while a unit is free. */
gboolean sf_resource_check (const SfResource *res, char **problem);

G_END_DECLS
