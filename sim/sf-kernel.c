/* SPDX-License-Identifier: MIT
 *
 * sf-kernel.c — the discrete-event kernel: indexed binary heap of events,
 * handler dispatch, random streams on GRand, FIFO counting resources.
 *
 * The contract (ordering, ties, cancellation, re-entrancy, cost) is written
 * in sf-kernel.h; this file keeps it.  Memory: the kernel owns `heap`,
 * `slots` and `handlers` (g_free in sf_kernel_free); an SfRng owns its GRand;
 * an SfResource owns its ring buffer.
 *
 * Queue layout.  Two arrays of the same capacity:
 *   heap[0 .. n_pending-1]  binary min-heap of Node {time, seq, slot}, keyed
 *                           by (time, seq); the key sits in the node so that
 *                           sifting never leaves the heap array;
 *   slots[0 .. n_slots-1]   one Slot per event ever in flight: type, entity,
 *                           payload, generation, and `pos`, which is the
 *                           event's index in heap[] while it is pending, or
 *                           SLOT_FREE | next-free-slot while it is free.
 * Invariants (sf_kernel_check): heap order; for every heap index i,
 * slots[heap[i].slot].pos == i; every pending time >= now; every pending
 * seq < next_seq; exactly n_slots - n_pending slots on the free list.
 * Sifting moves a "hole" instead of swapping, so each level costs one node
 * copy and one pos write.
 */
#include "sf-kernel.h"

#include <math.h>

/* ---- event queue --------------------------------------------------------- */

#define SLOT_FREE 0x80000000u  /* flag in Slot.pos: slot is on the free list */
#define SLOT_NIL 0x7fffffffu   /* end of the free list */
#define MAX_SLOTS SLOT_NIL     /* slot indices stay below the flag bit */

typedef struct {
  SfTime time;
  guint64 seq;
  guint32 slot;
} Node;

typedef struct {
  SfPayload payload;
  guint32 entity;
  guint32 type;
  guint32 gen; /* generation: changes each time the slot is freed; never 0 */
  guint32 pos; /* heap index while pending; SLOT_FREE | next while free */
} Slot;

typedef struct {
  SfEventHandler fn;
  gpointer user_data;
} Handler;

struct _SfKernel {
  Node *heap;
  Slot *slots;
  guint n_pending;  /* heap size */
  guint n_slots;    /* slots ever used (pending + free list) */
  guint capacity;   /* allocated length of heap[] and slots[] */
  guint32 free_head;
  SfTime now;
  guint64 next_seq;
  guint64 n_fired;
  Handler *handlers;
  guint n_types;
  gboolean stop;
  gboolean paranoid;
};

static inline SfEventId
make_id (guint32 gen, guint32 slot)
{
  return ((guint64) gen << 32) | slot;
}

static inline gboolean
node_before (const Node *a, const Node *b)
{
  return a->time < b->time || (a->time == b->time && a->seq < b->seq);
}

SfKernel *
sf_kernel_new (guint n_types)
{
  g_return_val_if_fail (n_types >= 1, NULL);
  SfKernel *k = g_new0 (SfKernel, 1);
  k->capacity = 16;
  k->heap = g_new (Node, k->capacity);
  k->slots = g_new (Slot, k->capacity);
  k->free_head = SLOT_NIL;
  k->handlers = g_new0 (Handler, n_types);
  k->n_types = n_types;
  return k;
}

void
sf_kernel_free (SfKernel *k)
{
  if (k == NULL)
    return;
  g_free (k->heap);
  g_free (k->slots);
  g_free (k->handlers);
  g_free (k);
}

void
sf_kernel_set_handler (SfKernel *k, guint type, SfEventHandler handler, gpointer user_data)
{
  g_return_if_fail (k != NULL);
  g_return_if_fail (type < k->n_types);
  k->handlers[type].fn = handler;
  k->handlers[type].user_data = user_data;
}

SfTime
sf_kernel_get_now (const SfKernel *k)
{
  g_return_val_if_fail (k != NULL, 0);
  return k->now;
}

guint
sf_kernel_get_n_pending (const SfKernel *k)
{
  g_return_val_if_fail (k != NULL, 0);
  return k->n_pending;
}

guint64
sf_kernel_get_n_fired (const SfKernel *k)
{
  g_return_val_if_fail (k != NULL, 0);
  return k->n_fired;
}

SfTime
sf_kernel_peek_time (const SfKernel *k)
{
  g_return_val_if_fail (k != NULL, SF_TIME_NEVER);
  return k->n_pending > 0 ? k->heap[0].time : SF_TIME_NEVER;
}

/* Places `node` at heap index `pos` or above, moving larger parents down. */
static inline void
sift_up (SfKernel *k, guint pos, Node node)
{
  Node *heap = k->heap;
  while (pos > 0)
    {
      guint parent = (pos - 1) / 2;
      if (!node_before (&node, &heap[parent]))
        break;
      heap[pos] = heap[parent];
      k->slots[heap[pos].slot].pos = pos;
      pos = parent;
    }
  heap[pos] = node;
  k->slots[node.slot].pos = pos;
}

/* Places `node` at heap index `pos` or below, moving smaller children up. */
static inline void
sift_down (SfKernel *k, guint pos, Node node)
{
  Node *heap = k->heap;
  guint n = k->n_pending;
  for (;;)
    {
      guint child = 2 * pos + 1;
      if (child >= n)
        break;
      if (child + 1 < n && node_before (&heap[child + 1], &heap[child]))
        child++;
      if (!node_before (&heap[child], &node))
        break;
      heap[pos] = heap[child];
      k->slots[heap[pos].slot].pos = pos;
      pos = child;
    }
  heap[pos] = node;
  k->slots[node.slot].pos = pos;
}

/* Takes the node at heap index `pos` out of the heap (its slot stays). */
static inline void
heap_remove_at (SfKernel *k, guint pos)
{
  guint last = --k->n_pending;
  if (pos == last)
    return;
  Node moved = k->heap[last];
  if (pos > 0 && node_before (&moved, &k->heap[(pos - 1) / 2]))
    sift_up (k, pos, moved);
  else
    sift_down (k, pos, moved);
}

static inline void
slot_release (SfKernel *k, guint32 slot)
{
  Slot *s = &k->slots[slot];
  if (G_UNLIKELY (++s->gen == 0))
    s->gen = 1;
  s->pos = SLOT_FREE | k->free_head;
  k->free_head = slot;
}

G_GNUC_NO_INLINE static void
grow (SfKernel *k)
{
  g_assert (k->capacity < MAX_SLOTS);
  guint cap = k->capacity > MAX_SLOTS / 2 ? MAX_SLOTS : k->capacity * 2;
  k->heap = g_renew (Node, k->heap, cap);
  k->slots = g_renew (Slot, k->slots, cap);
  k->capacity = cap;
}

static inline guint32
slot_acquire (SfKernel *k)
{
  if (k->free_head != SLOT_NIL)
    {
      guint32 slot = k->free_head;
      k->free_head = k->slots[slot].pos & ~SLOT_FREE;
      return slot;
    }
  if (G_UNLIKELY (k->n_slots == k->capacity))
    grow (k);
  guint32 slot = k->n_slots++;
  k->slots[slot].gen = 1;
  return slot;
}

SfEventId
sf_kernel_schedule (SfKernel *k, SfTime at_ms, guint type, guint32 entity, SfPayload payload)
{
  g_return_val_if_fail (k != NULL, SF_EVENT_ID_NONE);
  g_return_val_if_fail (at_ms >= k->now, SF_EVENT_ID_NONE); /* the past: a model bug */
  g_return_val_if_fail (type < k->n_types, SF_EVENT_ID_NONE);

  guint32 slot = slot_acquire (k);
  Slot *s = &k->slots[slot];
  s->payload = payload;
  s->entity = entity;
  s->type = type;
  Node node = { .time = at_ms, .seq = k->next_seq++, .slot = slot };
  sift_up (k, k->n_pending++, node);
  return make_id (s->gen, slot);
}

SfEventId
sf_kernel_schedule_in (SfKernel *k, SfTime delay_ms, guint type, guint32 entity,
                       SfPayload payload)
{
  g_return_val_if_fail (k != NULL, SF_EVENT_ID_NONE);
  g_return_val_if_fail (delay_ms >= 0 && delay_ms <= SF_TIME_NEVER - k->now, SF_EVENT_ID_NONE);
  return sf_kernel_schedule (k, k->now + delay_ms, type, entity, payload);
}

/* The slot of a pending event's handle, or -1. */
static inline gint64
pending_slot (const SfKernel *k, SfEventId id)
{
  guint32 slot = (guint32) id;
  guint32 gen = (guint32) (id >> 32);
  if (id == SF_EVENT_ID_NONE || slot >= k->n_slots)
    return -1;
  const Slot *s = &k->slots[slot];
  if (s->gen != gen || (s->pos & SLOT_FREE))
    return -1;
  return slot;
}

gboolean
sf_kernel_is_pending (const SfKernel *k, SfEventId id)
{
  g_return_val_if_fail (k != NULL, FALSE);
  return pending_slot (k, id) >= 0;
}

gboolean
sf_kernel_cancel (SfKernel *k, SfEventId id)
{
  g_return_val_if_fail (k != NULL, FALSE);
  gint64 slot = pending_slot (k, id);
  if (slot < 0)
    return FALSE;
  heap_remove_at (k, k->slots[slot].pos);
  slot_release (k, (guint32) slot);
  return TRUE;
}

static void
check_or_die (const SfKernel *k)
{
  g_autofree char *problem = NULL;
  if (!sf_kernel_check (k, &problem))
    g_error ("event kernel invariant broken (kernel bug or memory corruption): %s", problem);
}

/* Removes the next event if it fires at or before until_ms; shared by the
 * two run loops so that the table loop pays no call per event. */
static inline gboolean
pop_next (SfKernel *k, SfTime until_ms, SfEvent *ev)
{
  if (k->n_pending == 0 || k->heap[0].time > until_ms)
    return FALSE;

  Node top = k->heap[0];
  heap_remove_at (k, 0);
  const Slot *s = &k->slots[top.slot];
  ev->time_ms = top.time;
  ev->seq = top.seq;
  ev->id = make_id (s->gen, top.slot);
  ev->type = s->type;
  ev->entity = s->entity;
  ev->payload = s->payload;
  slot_release (k, top.slot);
  k->now = top.time;
  k->n_fired++;
  return TRUE;
}

gboolean
sf_kernel_pop (SfKernel *k, SfTime until_ms, SfEvent *ev)
{
  g_return_val_if_fail (k != NULL && ev != NULL, FALSE);
  if (!pop_next (k, until_ms, ev))
    return FALSE;
  if (G_UNLIKELY (k->paranoid))
    check_or_die (k);
  return TRUE;
}

guint64
sf_kernel_run (SfKernel *k, SfTime until_ms)
{
  g_return_val_if_fail (k != NULL, 0);
  guint64 n = 0;
  SfEvent ev;
  k->stop = FALSE;
  while (!k->stop && pop_next (k, until_ms, &ev))
    {
      const Handler *h = &k->handlers[ev.type];
      if (G_UNLIKELY (h->fn == NULL))
        {
          g_critical ("no handler for event type %u (model bug): event dropped", ev.type);
          continue;
        }
      h->fn (k, &ev, h->user_data);
      n++;
      if (G_UNLIKELY (k->paranoid))
        check_or_die (k);
    }
  if (!k->stop && until_ms != SF_TIME_NEVER && until_ms > k->now)
    k->now = until_ms;
  k->stop = FALSE;
  return n;
}

void
sf_kernel_stop (SfKernel *k)
{
  g_return_if_fail (k != NULL);
  k->stop = TRUE;
}

void
sf_kernel_set_paranoid (SfKernel *k, gboolean paranoid)
{
  g_return_if_fail (k != NULL);
  k->paranoid = paranoid;
}

#define FAIL(...)                                   \
  G_STMT_START                                      \
  {                                                 \
    if (problem != NULL)                            \
      *problem = g_strdup_printf (__VA_ARGS__);     \
    return FALSE;                                   \
  }                                                 \
  G_STMT_END

gboolean
sf_kernel_check (const SfKernel *k, char **problem)
{
  g_return_val_if_fail (k != NULL, FALSE);
  if (k->n_pending > k->n_slots || k->n_slots > k->capacity)
    FAIL ("sizes: %u pending, %u slots, capacity %u", k->n_pending, k->n_slots, k->capacity);
  for (guint i = 0; i < k->n_pending; i++)
    {
      const Node *nd = &k->heap[i];
      if (nd->slot >= k->n_slots)
        FAIL ("heap[%u] names slot %u of %u", i, nd->slot, k->n_slots);
      if (k->slots[nd->slot].pos != i)
        FAIL ("heap[%u] -> slot %u, whose pos is %u", i, nd->slot, k->slots[nd->slot].pos);
      if (nd->time < k->now)
        FAIL ("event seq %" G_GUINT64_FORMAT " at %" G_GINT64_FORMAT
              " ms is pending in the past (now %" G_GINT64_FORMAT " ms)",
              nd->seq, nd->time, k->now);
      if (nd->seq >= k->next_seq)
        FAIL ("heap[%u] seq %" G_GUINT64_FORMAT " not yet issued", i, nd->seq);
      if (i > 0 && node_before (nd, &k->heap[(i - 1) / 2]))
        FAIL ("heap order broken between index %u and its parent", i);
    }
  guint n_free = 0;
  for (guint32 s = k->free_head; s != SLOT_NIL; s = k->slots[s].pos & ~SLOT_FREE)
    {
      if (s >= k->n_slots || !(k->slots[s].pos & SLOT_FREE) || ++n_free > k->n_slots)
        FAIL ("free list broken at slot %u", s);
    }
  if (n_free + k->n_pending != k->n_slots)
    FAIL ("%u free + %u pending != %u slots", n_free, k->n_pending, k->n_slots);
  return TRUE;
}

/* ---- random streams ------------------------------------------------------ */

struct _SfRng {
  GRand *rand;
  double spare_normal; /* the polar method's second variate */
  gboolean has_spare;
};

SfRng *
sf_rng_new (guint64 seed, guint32 replication, guint32 entity, guint32 purpose)
{
  const guint32 key[5] = { (guint32) seed, (guint32) (seed >> 32), replication, entity, purpose };
  SfRng *r = g_new0 (SfRng, 1);
  r->rand = g_rand_new_with_seed_array (key, G_N_ELEMENTS (key));
  return r;
}

void
sf_rng_free (SfRng *r)
{
  if (r == NULL)
    return;
  g_rand_free (r->rand);
  g_free (r);
}

double
sf_rng_uniform (SfRng *r)
{
  return g_rand_double (r->rand);
}

/* Polar method of Marsaglia and Bray (1964), as given in Law, Simulation
 * Modeling and Analysis, 5th ed., sec. 8.3.6 (from memory): V = 2U - 1 for two
 * uniforms, W = V1^2 + V2^2, accept W in (0, 1), then Y = sqrt(-2 ln W / W)
 * and X1 = V1 Y, X2 = V2 Y are independent N(0, 1).  X2 is kept for the next
 * call, so the stream's draw order stays deterministic. */
double
sf_rng_normal (SfRng *r)
{
  if (r->has_spare)
    {
      r->has_spare = FALSE;
      return r->spare_normal;
    }
  double v1, v2, w;
  do
    {
      v1 = 2.0 * g_rand_double (r->rand) - 1.0;
      v2 = 2.0 * g_rand_double (r->rand) - 1.0;
      w = v1 * v1 + v2 * v2;
    }
  while (w >= 1.0 || w == 0.0);
  double y = sqrt (-2.0 * log (w) / w);
  r->spare_normal = v2 * y;
  r->has_spare = TRUE;
  return v1 * y;
}

/* Inversion, Law 5th ed. sec. 8.3.2 (from memory): X = -mean ln(1 - U).
 * U is in [0, 1), so 1 - U is in (0, 1] and the logarithm is finite. */
double
sf_rng_exponential (SfRng *r, double mean)
{
  return -mean * log (1.0 - g_rand_double (r->rand));
}

/* Inversion of F(x) = 1 - exp(-(x/scale)^shape), Law 5th ed. sec. 8.3.2 /
 * table 6.3 (from memory): X = scale (-ln(1 - U))^(1/shape). */
double
sf_rng_weibull (SfRng *r, double shape, double scale)
{
  return scale * pow (-log (1.0 - g_rand_double (r->rand)), 1.0 / shape);
}

/* If ln X ~ N(mu, sigma^2) then E X = exp(mu + sigma^2/2) and
 * Var X = exp(2 mu + sigma^2)(exp(sigma^2) - 1) (Law 5th ed. table 6.3, from
 * memory), hence sigma^2 = ln(1 + sd^2/mean^2) and mu = ln mean - sigma^2/2.
 * A zero sd returns the mean without drawing. */
double
sf_rng_lognormal (SfRng *r, double mean, double sd)
{
  if (sd == 0.0)
    return mean;
  double sigma2 = log1p ((sd * sd) / (mean * mean));
  double mu = log (mean) - 0.5 * sigma2;
  return exp (mu + sqrt (sigma2) * sf_rng_normal (r));
}

/* ---- FIFO counting resources --------------------------------------------- */

struct _SfResource {
  guint capacity;
  guint in_use;
  guint32 *ring;   /* waiting entities, head first; length ring_len (power of 2) */
  guint ring_len;
  guint head;
  guint n_waiting;
};

SfResource *
sf_resource_new (guint capacity)
{
  g_return_val_if_fail (capacity >= 1, NULL);
  SfResource *res = g_new0 (SfResource, 1);
  res->capacity = capacity;
  res->ring_len = 8;
  res->ring = g_new (guint32, res->ring_len);
  return res;
}

void
sf_resource_free (SfResource *res)
{
  if (res == NULL)
    return;
  g_free (res->ring);
  g_free (res);
}

/* Doubles the ring and unrolls it so that the head is at index 0. */
G_GNUC_NO_INLINE static void
ring_grow (SfResource *res)
{
  g_assert (res->ring_len <= G_MAXUINT / 2);
  guint len = res->ring_len * 2;
  guint32 *ring = g_new (guint32, len);
  for (guint i = 0; i < res->n_waiting; i++)
    ring[i] = res->ring[(res->head + i) & (res->ring_len - 1)];
  g_free (res->ring);
  res->ring = ring;
  res->ring_len = len;
  res->head = 0;
}

gboolean
sf_resource_request (SfResource *res, guint32 entity)
{
  g_return_val_if_fail (res != NULL, FALSE);
  if (res->in_use < res->capacity) /* then nobody waits (invariant) */
    {
      res->in_use++;
      return TRUE;
    }
  if (G_UNLIKELY (res->n_waiting == res->ring_len))
    ring_grow (res);
  res->ring[(res->head + res->n_waiting) & (res->ring_len - 1)] = entity;
  res->n_waiting++;
  return FALSE;
}

gboolean
sf_resource_release (SfResource *res, guint32 *granted_entity)
{
  g_return_val_if_fail (res != NULL && granted_entity != NULL, FALSE);
  g_return_val_if_fail (res->in_use > 0, FALSE); /* releasing what nobody holds */
  if (res->n_waiting == 0)
    {
      res->in_use--;
      return FALSE;
    }
  /* The unit passes straight to the head of the line: in_use is unchanged. */
  *granted_entity = res->ring[res->head];
  res->head = (res->head + 1) & (res->ring_len - 1);
  res->n_waiting--;
  return TRUE;
}

guint
sf_resource_get_capacity (const SfResource *res)
{
  g_return_val_if_fail (res != NULL, 0);
  return res->capacity;
}

guint
sf_resource_get_in_use (const SfResource *res)
{
  g_return_val_if_fail (res != NULL, 0);
  return res->in_use;
}

guint
sf_resource_get_n_waiting (const SfResource *res)
{
  g_return_val_if_fail (res != NULL, 0);
  return res->n_waiting;
}

guint32
sf_resource_get_waiting (const SfResource *res, guint i)
{
  g_return_val_if_fail (res != NULL && i < res->n_waiting, 0);
  return res->ring[(res->head + i) & (res->ring_len - 1)];
}

gboolean
sf_resource_check (const SfResource *res, char **problem)
{
  g_return_val_if_fail (res != NULL, FALSE);
  if (res->in_use > res->capacity)
    FAIL ("%u units in use of %u", res->in_use, res->capacity);
  if (res->n_waiting > 0 && res->in_use < res->capacity)
    FAIL ("%u waiting while %u of %u units are free", res->n_waiting,
          res->capacity - res->in_use, res->capacity);
  if (res->n_waiting > res->ring_len || res->head >= res->ring_len
      || (res->ring_len & (res->ring_len - 1)) != 0)
    FAIL ("waiting line broken: %u waiting, head %u, length %u", res->n_waiting, res->head,
          res->ring_len);
  return TRUE;
}
