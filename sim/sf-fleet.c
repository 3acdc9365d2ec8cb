/* SPDX-License-Identifier: MIT
 *
 * sf-fleet.c — one replication of the fleet working the strip through time
 * (the "world"; docs/model.md §7-§8).
 *
 * Owns: the run's kernel, random streams, block and lane states, dozers and
 * their state, the maintenance crew, the roster state and the recorders.
 * It is the only module that knows all the others; everything it owns is
 * freed by world_free().
 *
 * Dozers.  A dozer has at most one activity (a push cycle, a tram, a
 * planned service or a refuel) and may be held by calendar stops (shift
 * change, meal, weather, unmanned) or a breakdown.  A cycle or tram runs only
 * while nothing holds it: a hold pauses it, keeping the time left, and the
 * release resumes it.  Engine time (cycles and trams) drives the failure and
 * service clocks.  Services and refuels run to the end once started.  The
 * push physics of a cycle is applied to the lane when the cycle starts (the
 * lane belongs to that dozer alone until it leaves) and its production is
 * credited when the cycle ends.
 *
 * Time usage.  Every change of a dozer's state passes through dozer_update(),
 * which closes the interval of the previous category at the current time and
 * opens the next, so the categories add up to calendar time exactly (integer
 * milliseconds).
 *
 * Determinism.  Integer time, events ordered by (time, sequence), random
 * draws only from per-purpose streams (failures per dozer, weather), and
 * every loop over dozers or lanes in index order.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include <glib/gstdio.h>

#include "sf-kernel.h"
#include "sf-layout.h"
#include "sf-outdir.h"
#include "sf-push.h"
#include "sf-reliability.h"
#include "sf-report.h"
#include "sf-roster.h"
#include "sf-scenario.h"
#include "sf-section.h"
#include "sf-slice.h"
#include "sf-util.h"
#include "stripfleet.h"

enum {
  EV_ACT_END = 0,
  EV_FAIL,
  EV_REPAIR_END,
  EV_SHIFT,
  EV_SHIFT_CHANGE_END,
  EV_MEAL_START,
  EV_MEAL_END,
  EV_DAY,
  EV_WEATHER_START,
  EV_WEATHER_END,
  EV_BLAST,
  EV_HORIZON,
  EV_N
};

typedef enum { ACT_NONE = 0, ACT_CYCLE, ACT_TRAM, ACT_SERVICE, ACT_REFUEL } Act;

enum {
  HOLD_SHIFT_CHANGE = 1u << 0,
  HOLD_MEAL = 1u << 1,
  HOLD_WEATHER = 1u << 2,
  HOLD_UNMANNED = 1u << 3,
};

/* Random stream purposes (SfRng). */
enum { RNG_FAILURE = 1, RNG_REPAIR = 2, RNG_WEATHER = 3 };

/* Stop when no push has been made for this long while work is left and no
 * blast is to come (simulated days). */
#define NO_PROGRESS_DAYS 60.0
#define MAX_EVENTS G_GUINT64_CONSTANT (2000000000)

typedef struct {
  SfLane *lane;
  SfLaneCursor cur;
  double *z0;            /* ground at the start, for the volume account */
  double *z_keep, *dumped_keep; /* constant-lanes test mode: the ground to put back */
  int dozer;             /* occupying dozer, -1 */
  gboolean done, in_scope;
  SfTime slice_start;    /* first push of the current slice, -1 */
  guint slice_pushes, slice_dozer;
  double slice_moved;
  guint work_slice;      /* the slice last worked (valid index) */
} LaneState;


typedef struct {
  const SfBlockSection *bs;  /* these four borrowed from the SfLayout */
  const SfSlicePlan *plan;
  const double *final;
  double *spoil;
  LaneState *lanes;
  gboolean open;
  guint n_dozers;        /* lanes held */
  guint lanes_left;      /* in scope and not done */
} BlockState;

typedef struct {
  guint id;
  guint cls;
  SfPushMachine pm;
  char name[8];
  int block, lane;       /* lane held, -1 */
  int at_block, at_lane; /* where the machine stands */
  Act act;
  SfTime remaining;      /* of a cycle or tram */
  SfTime resumed_at;
  gboolean running;
  SfEventId ev;          /* activity end or failure, when running; service/refuel end */
  guint holds;
  gboolean broken, waiting_fitter, waiting_work;
  SfTime ttf;            /* engine time to the next failure */
  SfTime service_left;   /* engine time to the next planned service */
  gboolean refuel_due;
  SfPushResult pr;       /* the push of the current cycle */
  SfUse cat;
  SfTime cat_since;
  gint64 use_ms[SF_USE_N];
  guint pushes, failures;
  double moved_bcm, rehandled_bcm, over_spoil_bcm;
  SfTime engine_ms;
  SfRng *rng_fail, *rng_repair;
} Dozer;

typedef struct {
  const SfScenario *sc;
  SfRunOptions opt;
  guint64 seed;
  SfKernel *k;
  SfCalendar cal;
  BlockState *blocks;
  guint n_blocks, n_lanes;
  Dozer *dz;
  guint n_dz;
  SfResource *fitters;
  gboolean failures_on, weather_on;
  SfRng *rng_weather;
  guint weather_count;
  gboolean meal_on, change_on;
  guint crew;
  double shift_factor;   /* crew skill x night factor */
  double factors;        /* product of the scenario's production factors */
  guint lanes_left;
  guint blasts_pending;
  SfReport *rep;
  gboolean stop;
  gboolean cancelled;    /* stopped through opt.cancel */
  const char *end_reason;
  SfTime last_push;
  SfDailyRow day;
  double block_len_m;
  gint64 progress_next_us;
  guint64 events;
  guint64 pushes;
  guint crew_operators[SF_MAX_CREWS]; /* operators each crew mans in this run */
} World;

const char *
sf_use_to_str (SfUse u)
{
  static const char *const names[SF_USE_N] = {
    "operating", "wait_lane", "wait_blast", "tramming", "breakdown", "wait_fitter", "service",
    "refuel",    "shift_change", "meal",   "unmanned", "weather",  "idle_done",
  };
  return u < SF_USE_N ? names[u] : "?";
}

static inline SfTime
now_of (World *w)
{
  return sf_kernel_get_now (w->k);
}

static SfTime
hours_ms (double h)
{
  return (SfTime) llround (h * (double) SF_TIME_MS_PER_H);
}

/* ---- time usage ---------------------------------------------------------- */

static gboolean work_exists_open (World *w);

static SfUse
dozer_category (World *w, const Dozer *d)
{
  if (d->broken)
    return d->waiting_fitter ? SF_USE_WAIT_FITTER : SF_USE_BREAKDOWN;
  if (d->act == ACT_SERVICE)
    return SF_USE_SERVICE;
  if (d->act == ACT_REFUEL)
    return SF_USE_REFUEL;
  if (d->holds & HOLD_UNMANNED)
    return SF_USE_UNMANNED;
  if (d->holds & HOLD_WEATHER)
    return SF_USE_WEATHER;
  if (d->holds & HOLD_SHIFT_CHANGE)
    return SF_USE_SHIFT_CHANGE;
  if (d->holds & HOLD_MEAL)
    return SF_USE_MEAL;
  if (d->act == ACT_CYCLE)
    return SF_USE_OPERATING;
  if (d->act == ACT_TRAM)
    return SF_USE_TRAMMING;
  if (w->lanes_left == 0)
    return SF_USE_IDLE_DONE;
  return work_exists_open (w) ? SF_USE_WAIT_LANE : SF_USE_WAIT_BLAST;
}

static void
dozer_set_category (World *w, Dozer *d)
{
  SfUse c = dozer_category (w, d);
  if (c == d->cat)
    return;
  SfTime t = now_of (w);
  d->use_ms[d->cat] += t - d->cat_since;
  d->cat = c;
  d->cat_since = t;
  sf_report_event (w->rep, t, sf_use_to_str (c), (int) d->id, d->block, d->lane, -1, 0, 0, 0);
}

/* ---- running, pausing, resuming ------------------------------------------ */

/* Charges the engine time since the activity last resumed. */
static void
dozer_charge (World *w, Dozer *d)
{
  SfTime el = now_of (w) - d->resumed_at;
  d->remaining -= el;
  d->ttf -= el;
  d->service_left -= el;
  d->engine_ms += el;
  d->resumed_at = now_of (w);
}

/* Makes the running state match the holds, then the category. */
static void
dozer_update (World *w, Dozer *d)
{
  gboolean should = (d->act == ACT_CYCLE || d->act == ACT_TRAM) && !d->broken && d->holds == 0;
  if (should && !d->running)
    {
      d->running = TRUE;
      d->resumed_at = now_of (w);
      if (w->failures_on && d->ttf < d->remaining)
        d->ev = sf_kernel_schedule_in (w->k, MAX (d->ttf, 0), EV_FAIL, d->id, SF_PAYLOAD_NONE);
      else
        d->ev = sf_kernel_schedule_in (w->k, MAX (d->remaining, 0), EV_ACT_END, d->id,
                                       SF_PAYLOAD_NONE);
    }
  else if (!should && d->running)
    {
      dozer_charge (w, d);
      sf_kernel_cancel (w->k, d->ev);
      d->ev = SF_EVENT_ID_NONE;
      d->running = FALSE;
    }
  dozer_set_category (w, d);
}

/* Categories of waiting dozers depend on the state of the work. */
static void
update_waiting_categories (World *w)
{
  for (guint i = 0; i < w->n_dz; i++)
    if (w->dz[i].act == ACT_NONE && !w->dz[i].broken)
      dozer_set_category (w, &w->dz[i]);
}

/* ---- lanes and dispatch -------------------------------------------------- */

static LaneState *
lane_of (World *w, int b, int l)
{
  return &w->blocks[b].lanes[l];
}

static guint
lane_slice (const LaneState *ls)
{
  return ls->done ? G_MAXUINT / 2 : ls->cur.slice;
}

/* Is the dozer on lane l of block b already pushing blade to blade with a
 * neighbour? */
static gboolean
has_partner (World *w, guint b, guint l)
{
  const BlockState *bk = &w->blocks[b];
  int me = bk->lanes[l].dozer;
  for (int dl = -1; dl <= 1; dl += 2)
    {
      int nl = (int) l + dl;
      if (nl >= 0 && nl < (int) w->n_lanes && bk->lanes[nl].dozer >= 0 && bk->lanes[nl].dozer != me
          && w->dz[bk->lanes[nl].dozer].cls == w->dz[me].cls)
        return TRUE;
    }
  return FALSE;
}

/* May a dozer take lane l of block b now? */
static gboolean
lane_available (World *w, guint b, guint l, const Dozer *d)
{
  const BlockState *bk = &w->blocks[b];
  const LaneState *ls = &bk->lanes[l];
  if (!bk->open || !ls->in_scope || ls->done || ls->dozer >= 0)
    return FALSE;
  const SfSimulation *sim = &w->sc->sim;
  /* Slice precedence: not more than max_slice_lead slices ahead of a
   * neighbour that still has work. */
  guint s = ls->cur.slice;
  for (int dl = -1; dl <= 1; dl += 2)
    {
      int nl = (int) l + dl;
      if (nl < 0 || nl >= (int) w->n_lanes || !bk->lanes[nl].in_scope)
        continue;
      if (s > lane_slice (&bk->lanes[nl]) + sim->max_slice_lead)
        return FALSE;
    }
  /* Separation from other dozers in the block.  With side-by-side dozing
   * two machines of one class may push blade to blade in neighbouring lanes:
   * one neighbour that has no partner yet is allowed. */
  int sep = (int) sim->min_separation_lanes;
  int partner = -1;
  for (int ol = (int) l - sep; ol <= (int) l + sep; ol++)
    {
      if (ol < 0 || ol >= (int) w->n_lanes || bk->lanes[ol].dozer < 0
          || bk->lanes[ol].dozer == (int) d->id)
        continue;
      const Dozer *o = &w->dz[bk->lanes[ol].dozer];
      if (w->sc->design.side_by_side && abs (ol - (int) l) == 1 && partner < 0
          && o->cls == d->cls && !has_partner (w, b, (guint) ol))
        {
          partner = ol;
          continue;
        }
      return FALSE;
    }
  return TRUE;
}

static gboolean
work_exists_open (World *w)
{
  for (guint b = 0; b < w->n_blocks; b++)
    if (w->blocks[b].open && w->blocks[b].lanes_left > 0)
      return TRUE;
  return FALSE;
}

static void dozer_work (World *w, Dozer *d);

/* Sends a free dozer to a lane (docs/model.md §8 dispatch rules), or lets
 * it wait.  Returns TRUE when it got one. */
static gboolean
dispatch (World *w, Dozer *d)
{
  const SfSimulation *sim = &w->sc->sim;
  int best_b = -1, best_l = -1;
  double best_key = INFINITY;
  for (guint b = 0; b < w->n_blocks; b++)
    {
      const BlockState *bk = &w->blocks[b];
      if (!bk->open || bk->lanes_left == 0)
        continue;
      for (guint l = 0; l < w->n_lanes; l++)
        {
          if (!lane_available (w, b, l, d))
            continue;
          /* Keys in order of preference, each dominating the next. */
          double blk;
          if (sim->dispatch == SF_DISPATCH_SPREAD)
            blk = (double) bk->n_dozers * 1e4 + b;
          else
            blk = ((int) b == d->at_block ? -1.0 : (double) b);
          double key = blk * 1e8 + (double) bk->lanes[l].cur.slice * 1e4
                       + fabs ((double) l - (double) MAX (d->at_lane, 0)) * 10 + l * 1e-3;
          if (key < best_key)
            {
              best_key = key;
              best_b = (int) b;
              best_l = (int) l;
            }
        }
    }
  if (best_b < 0)
    {
      d->waiting_work = TRUE;
      d->act = ACT_NONE;
      dozer_update (w, d);
      return FALSE;
    }
  d->waiting_work = FALSE;
  LaneState *ls = lane_of (w, best_b, best_l);
  ls->dozer = (int) d->id;
  w->blocks[best_b].n_dozers++;
  d->block = best_b;
  d->lane = best_l;
  /* along strike: a lane's place is its block's start plus its lanes */
  const double lw = w->sc->strip.lane_width_m;
  double dist_m = fabs ((best_b * w->block_len_m + best_l * lw)
                        - (MAX (d->at_block, 0) * w->block_len_m + MAX (d->at_lane, 0) * lw));
  if (d->at_block < 0)
    dist_m = 0; /* starts at its first lane */
  if (dist_m > 0)
    {
      d->act = ACT_TRAM;
      d->remaining = (SfTime) llround (dist_m / (sim->tram_speed_kmh / 3.6) * 1000.0);
      sf_report_event (w->rep, now_of (w), "tram", (int) d->id, best_b, best_l, -1, dist_m, 0, 0);
      dozer_update (w, d);
    }
  else
    {
      d->at_block = best_b;
      d->at_lane = best_l;
      dozer_work (w, d);
    }
  return TRUE;
}

/* Offers free lanes to waiting dozers, in dozer order. */
static void
redispatch (World *w)
{
  for (guint i = 0; i < w->n_dz; i++)
    {
      Dozer *d = &w->dz[i];
      if (d->waiting_work && !d->broken && d->act == ACT_NONE && !(d->holds & HOLD_UNMANNED))
        dispatch (w, d);
    }
  update_waiting_categories (w);
}

static void
lane_release (World *w, Dozer *d)
{
  if (d->block < 0)
    return;
  LaneState *ls = lane_of (w, d->block, d->lane);
  ls->dozer = -1;
  w->blocks[d->block].n_dozers--;
  d->block = d->lane = -1;
}

static void
record_slice (World *w, int b, int l, LaneState *ls, guint slice)
{
  const SfSlice *s = g_ptr_array_index (w->blocks[b].plan->slices, slice);
  SfScheduleRow row = {
    .block = (guint) b,
    .lane = (guint) l,
    .slice = slice,
    .kind = sf_slice_kind_to_str (s->kind),
    .end_reason = ls->cur.end_reason,
    .start_ms = ls->slice_start >= 0 ? ls->slice_start : now_of (w),
    .finish_ms = now_of (w),
    .dozer = ls->slice_dozer,
    .pushes = ls->slice_pushes,
    .moved_bcm = ls->slice_moved,
  };
  sf_report_schedule (w->rep, &row);
  sf_report_event (w->rep, now_of (w), "slice", (int) ls->slice_dozer, b, l, (int) slice,
                   ls->slice_moved, ls->slice_pushes, 0);
  ls->slice_start = -1;
  ls->slice_pushes = 0;
  ls->slice_moved = 0;
}

/* The dozer is on its lane with nothing to do: make the next push, or leave
 * the lane when its slice is done and the next may not start yet. */
static void
dozer_work (World *w, Dozer *d)
{
  if (d->block < 0)
    {
      dispatch (w, d);
      return;
    }
  BlockState *bk = &w->blocks[d->block];
  LaneState *ls = lane_of (w, d->block, d->lane);
  for (;;)
    {
      guint slice = ls->cur.slice;
      if (slice < bk->plan->slices->len)
        ls->work_slice = slice;
      SfStepKind st = sf_lane_cursor_step (&ls->cur, &d->pm, &d->pr);
      if (st == SF_STEP_PUSHED)
        {
          if (w->opt.constant_lanes)
            {
              memcpy (ls->lane->z, ls->z_keep, ls->lane->n * sizeof (double));
              memcpy (ls->lane->dumped, ls->dumped_keep, ls->lane->n * sizeof (double));
              /* the same slice, for ever (until the run stops) */
              sf_lane_cursor_init (&ls->cur, ls->cur.plan, ls->lane);
              ls->cur.slice = slice;
            }
          if (ls->slice_start < 0)
            ls->slice_start = now_of (w);
          ls->slice_pushes++;
          ls->slice_dozer = d->id;
          ls->slice_moved += d->pr.deposited_lcm / (1.0 + w->sc->material.swell);
          d->act = ACT_CYCLE;
          double f = w->factors * w->shift_factor;
          d->remaining = (SfTime) llround (d->pr.t_cycle_s / f * 1000.0);
          if (d->remaining < 1)
            d->remaining = 1;
          dozer_update (w, d);
          return;
        }
      /* The slice ended (st == SLICE_DONE or LANE_DONE); a push that ended
       * the lane (no progress) left the slice index past the end. */
      record_slice (w, d->block, d->lane, ls, ls->work_slice);
      if (st == SF_STEP_LANE_DONE)
        {
          ls->done = TRUE;
          bk->lanes_left--;
          w->lanes_left--;
          sf_report_event (w->rep, now_of (w), "lane_done", (int) d->id, d->block, d->lane, -1, 0,
                           0, 0);
          lane_release (w, d);
          if (w->lanes_left == 0)
            {
              w->stop = TRUE;
              w->end_reason = "complete";
              return;
            }
          d->act = ACT_NONE;
          redispatch (w);
          if (d->act == ACT_NONE && !d->waiting_work)
            dispatch (w, d);
          return;
        }
      /* Next slice: may it start (precedence with the neighbours)? */
      int b = d->block, l = d->lane;
      ls->dozer = -1;
      gboolean ok = lane_available (w, (guint) b, (guint) l, d);
      ls->dozer = (int) d->id;
      if (!ok)
        {
          lane_release (w, d);
          d->act = ACT_NONE;
          redispatch (w);
          if (d->act == ACT_NONE && !d->waiting_work)
            dispatch (w, d);
          return;
        }
      /* neighbours waiting on this lane's progress may go now */
      redispatch (w);
    }
}

/* Next thing a dozer does when its activity ends. */
static void
dozer_next (World *w, Dozer *d)
{
  const SfReliability *rel = &((SfDozerClass *) g_ptr_array_index (w->sc->classes, d->cls))->reliability;
  if (rel->service_interval_h > 0 && d->service_left <= 0)
    {
      d->act = ACT_SERVICE;
      d->service_left = hours_ms (rel->service_interval_h);
      d->ev = sf_kernel_schedule_in (w->k, hours_ms (rel->service_h), EV_ACT_END, d->id,
                                     SF_PAYLOAD_NONE);
      sf_report_event (w->rep, now_of (w), "service", (int) d->id, d->block, d->lane, -1,
                       rel->service_h, 0, 0);
      dozer_set_category (w, d);
      return;
    }
  if (d->refuel_due && rel->refuel_min > 0 && !(d->holds & HOLD_UNMANNED))
    {
      d->refuel_due = FALSE;
      d->act = ACT_REFUEL;
      d->ev = sf_kernel_schedule_in (w->k, sf_time_from_min (rel->refuel_min), EV_ACT_END, d->id,
                                     SF_PAYLOAD_NONE);
      dozer_set_category (w, d);
      return;
    }
  d->act = ACT_NONE;
  if (d->holds & HOLD_UNMANNED)
    {
      /* nobody to drive it: leave the lane to others */
      lane_release (w, d);
      d->waiting_work = TRUE;
      dozer_set_category (w, d);
      redispatch (w);
      return;
    }
  dozer_work (w, d);
}

/* ---- event handlers ------------------------------------------------------ */

static void
on_act_end (World *w, Dozer *d)
{
  d->ev = SF_EVENT_ID_NONE;
  if (d->act == ACT_CYCLE || d->act == ACT_TRAM)
    {
      dozer_charge (w, d);
      d->running = FALSE;
    }
  if (d->act == ACT_CYCLE)
    w->day.operating_h += d->pr.t_cycle_s / (w->factors * w->shift_factor) / 3600.0;
  if (d->act == ACT_CYCLE)
    {
      const SfPushResult *r = &d->pr;
      double bcm = r->deposited_lcm / (1.0 + w->sc->material.swell);
      d->pushes++;
      d->moved_bcm += bcm;
      d->rehandled_bcm += r->rehandled_lcm / (1.0 + w->sc->material.swell);
      d->over_spoil_bcm += r->over_spoil_lcm / (1.0 + w->sc->material.swell);
      w->last_push = now_of (w);
      w->day.pushes++;
      w->pushes++;
      w->day.dumped_bcm += bcm;
      sf_report_event (w->rep, now_of (w), "push", (int) d->id, d->block, d->lane,
                       (int) lane_of (w, d->block, d->lane)->cur.slice, r->x_start_m, r->x_dump_m,
                       r->deposited_lcm);
    }
  else if (d->act == ACT_TRAM)
    {
      d->at_block = d->block;
      d->at_lane = d->lane;
    }
  d->act = ACT_NONE;
  dozer_next (w, d);
}

static void
start_repair (World *w, Dozer *d)
{
  const SfReliability *rel = &((SfDozerClass *) g_ptr_array_index (w->sc->classes, d->cls))->reliability;
  d->waiting_fitter = FALSE;
  double h = sf_dist_draw (&rel->ttr_h, d->rng_repair);
  sf_kernel_schedule_in (w->k, MAX (hours_ms (h), 1), EV_REPAIR_END, d->id, SF_PAYLOAD_NONE);
  dozer_set_category (w, d);
}

static void
on_fail (World *w, Dozer *d)
{
  d->ev = SF_EVENT_ID_NONE;
  dozer_charge (w, d);
  d->running = FALSE;
  d->broken = TRUE;
  d->failures++;
  sf_report_event (w->rep, now_of (w), "failure", (int) d->id, d->block, d->lane, -1, 0, 0, 0);
  if (sf_resource_request (w->fitters, d->id))
    start_repair (w, d);
  else
    {
      d->waiting_fitter = TRUE;
      dozer_set_category (w, d);
    }
}

static void
on_repair_end (World *w, Dozer *d)
{
  const SfReliability *rel = &((SfDozerClass *) g_ptr_array_index (w->sc->classes, d->cls))->reliability;
  d->broken = FALSE;
  d->ttf = MAX (hours_ms (sf_dist_draw (&rel->tbf_h, d->rng_fail)), 1);
  guint32 next;
  if (sf_resource_release (w->fitters, &next))
    start_repair (w, &w->dz[next]);
  sf_report_event (w->rep, now_of (w), "repaired", (int) d->id, d->block, d->lane, -1, 0, 0, 0);
  if (d->act == ACT_NONE)
    {
      dozer_set_category (w, d);
      if (d->block >= 0)
        dozer_work (w, d);
      else
        redispatch (w);
    }
  else
    dozer_update (w, d);
}

static void
set_holds (World *w, guint mask, gboolean on)
{
  for (guint i = 0; i < w->n_dz; i++)
    {
      Dozer *d = &w->dz[i];
      guint before = d->holds;
      d->holds = on ? (d->holds | mask) : (d->holds & ~mask);
      if (d->holds != before)
        dozer_update (w, d);
    }
}

/* Crew, manning and factors for the shift starting now. */
static void
begin_shift (World *w, gint64 day, guint shift, gboolean at_start)
{
  const SfRoster *r = &w->sc->roster;
  w->crew = sf_roster_crew_on (r, day, shift);
  guint operators = w->crew == SF_NO_CREW ? 0 : w->crew_operators[w->crew];
  double skill = w->crew == SF_NO_CREW ? 1.0 : r->crews[w->crew].skill;
  w->shift_factor = skill * (r->shifts[shift].night ? r->night_factor : 1.0);
  SfTime shift_t0 = sf_roster_shift_start (r, &w->cal, day, shift);
  sf_report_event (w->rep, now_of (w), "shift", -1, -1, -1, (int) shift, (double) day,
                   w->crew == SF_NO_CREW ? -1.0 : (double) w->crew, operators);
  /* The first `operators` machines in fleet order are manned. */
  for (guint i = 0; i < w->n_dz; i++)
    {
      Dozer *d = &w->dz[i];
      guint before = d->holds;
      if (i < operators)
        d->holds &= ~HOLD_UNMANNED;
      else
        d->holds |= HOLD_UNMANNED;
      const SfReliability *rel
        = &((SfDozerClass *) g_ptr_array_index (w->sc->classes, d->cls))->reliability;
      if (rel->refuel_min > 0)
        d->refuel_due = TRUE;
      if (d->holds != before)
        dozer_update (w, d);
    }
  if (!at_start && r->shift_change_min > 0)
    {
      set_holds (w, HOLD_SHIFT_CHANGE, TRUE);
      sf_kernel_schedule_in (w->k, sf_time_from_min (r->shift_change_min), EV_SHIFT_CHANGE_END, 0,
                             SF_PAYLOAD_NONE);
    }
  if (r->meal_min > 0 && !r->hot_seat)
    {
      SfTime m0 = shift_t0 + hours_ms (r->meal_after_h);
      if (m0 >= now_of (w))
        {
          sf_kernel_schedule (w->k, m0, EV_MEAL_START, 0, SF_PAYLOAD_NONE);
          sf_kernel_schedule (w->k, m0 + sf_time_from_min (r->meal_min), EV_MEAL_END, 0,
                              SF_PAYLOAD_NONE);
        }
    }
  /* The next shift: shifts are held in order of start time within the day,
   * so after the last one comes the first of the next day. */
  guint ns = (shift + 1) % r->n_shifts;
  gint64 nd = ns == 0 ? day + 1 : day;
  sf_kernel_schedule (w->k, sf_roster_shift_start (r, &w->cal, nd, ns), EV_SHIFT, ns,
                      SF_PAYLOAD_INT (nd));
  /* machines that were idle for want of an operator may work now */
  redispatch (w);
  for (guint i = 0; i < w->n_dz; i++)
    {
      Dozer *d = &w->dz[i];
      if (d->act == ACT_NONE && !d->broken && d->block >= 0 && !(d->holds & HOLD_UNMANNED))
        dozer_next (w, d);
    }
}

static void
draw_weather (World *w, gint64 day)
{
  if (!w->weather_on)
    return;
  const SfRoster *r = &w->sc->roster;
  if (sf_rng_uniform (w->rng_weather) >= r->wet_day_probability)
    return;
  SfTime t0 = sf_calendar_day_start (&w->cal, day)
              + (SfTime) (sf_rng_uniform (w->rng_weather) * 24.0 * SF_TIME_MS_PER_H);
  double h = sf_dist_draw (&r->wet_stop_h, w->rng_weather);
  if (t0 < now_of (w))
    t0 = now_of (w);
  SfTime len = MAX (hours_ms (h), 1);
  sf_kernel_schedule (w->k, t0, EV_WEATHER_START, 0, SF_PAYLOAD_INT (len));
}

static void
flush_day (World *w, gint64 day)
{
  w->day.day = day;
  sf_report_daily (w->rep, &w->day);
  memset (&w->day, 0, sizeof w->day);
}

static void
open_block (World *w, guint b)
{
  if (w->blocks[b].open)
    return;
  w->blocks[b].open = TRUE;
  sf_report_event (w->rep, now_of (w), "blast", -1, (int) b, -1, -1, 0, 0, 0);
  redispatch (w);
}

/* ---- world --------------------------------------------------------------- */

static void
world_free (World *w)
{
  if (!w)
    return;
  for (guint b = 0; b < w->n_blocks; b++)
    {
      BlockState *bk = &w->blocks[b];
      for (guint l = 0; bk->lanes && l < w->n_lanes; l++)
        {
          sf_lane_free (bk->lanes[l].lane);
          g_free (bk->lanes[l].z0);
          g_free (bk->lanes[l].z_keep);
          g_free (bk->lanes[l].dumped_keep);
        }
      g_free (bk->lanes);
    }
  g_free (w->blocks);
  for (guint i = 0; i < w->n_dz; i++)
    {
      sf_rng_free (w->dz[i].rng_fail);
      sf_rng_free (w->dz[i].rng_repair);
    }
  g_free (w->dz);
  sf_rng_free (w->rng_weather);
  if (w->fitters)
    sf_resource_free (w->fitters);
  if (w->k)
    sf_kernel_free (w->k);
  g_free (w);
}

/* A world over `lay` (borrowed; it must outlive the world). */
static World *
world_new (const SfScenario *sc, const SfRunOptions *opt, const SfLayout *lay)
{
  World *w = g_new0 (World, 1);
  w->sc = sc;
  w->opt = *opt;
  w->seed = opt->seed >= 0 ? (guint64) opt->seed : sc->sim.seed;
  w->k = sf_kernel_new (EV_N);
  sf_calendar_init (&w->cal, sc->sim.start);
  w->n_blocks = sc->strip.n_blocks;
  w->n_lanes = sf_scenario_get_n_lanes (sc);
  w->block_len_m = sc->strip.length_m / sc->strip.n_blocks;
  w->factors = sf_factors_product (&sc->factors);
  w->shift_factor = 1.0;
  w->blocks = g_new0 (BlockState, w->n_blocks);
  for (guint b = 0; b < w->n_blocks; b++)
    {
      BlockState *bk = &w->blocks[b];
      gboolean in_scope = opt->only_block < 0 || (guint) opt->only_block == b;
      if (!in_scope)
        continue;
      const SfBlockLayout *bl = &lay->blocks[b];
      g_assert (bl->bs != NULL);
      bk->bs = bl->bs;
      bk->plan = bl->plan;
      bk->spoil = bl->spoil;
      bk->final = bl->final;
      const guint n = bk->bs->n;
      bk->lanes = g_new0 (LaneState, w->n_lanes);
      for (guint l = 0; l < w->n_lanes; l++)
        {
          LaneState *ls = &bk->lanes[l];
          ls->dozer = -1;
          ls->slice_start = -1;
          ls->in_scope = opt->only_lane < 0 || (guint) opt->only_lane == l;
          ls->lane = sf_lane_new (bk->bs->surface, bk->bs->base, n, bk->bs->x0_m, bk->bs->dx_m,
                                  sc->strip.lane_width_m, bk->bs->tan_repose);
          ls->lane->spoil_line = bk->spoil;
          ls->z0 = g_memdup2 (ls->lane->z, n * sizeof (double));
          if (opt->constant_lanes)
            {
              ls->z_keep = g_memdup2 (ls->lane->z, n * sizeof (double));
              ls->dumped_keep = g_memdup2 (ls->lane->dumped, n * sizeof (double));
            }
          sf_lane_cursor_init (&ls->cur, bk->plan, ls->lane);
          if (ls->in_scope)
            {
              bk->lanes_left++;
              w->lanes_left++;
            }
        }
    }

  /* Fleet: the scenario's, or n_dozers taken in fleet order, repeated. */
  GArray *order = g_array_new (FALSE, FALSE, sizeof (guint));
  for (guint f = 0; f < sc->fleet->len; f++)
    {
      const SfFleetEntry *e = &g_array_index (sc->fleet, SfFleetEntry, f);
      for (guint c = 0; c < e->count; c++)
        g_array_append_val (order, e->class_index);
    }
  w->n_dz = opt->n_dozers > 0 ? (guint) opt->n_dozers : order->len;
  /* Operators: the scenario's crews; a fleet resized with n_dozers keeps
   * each crew's share of machines manned (rounded up, at most the fleet);
   * opt->operators sets every crew's number outright. */
  for (guint c = 0; c < sc->roster.n_crews; c++)
    {
      guint op = sc->roster.crews[c].operators;
      if (opt->operators > 0)
        op = (guint) opt->operators;
      else if (opt->n_dozers > 0 && order->len > 0)
        op = (guint) MIN ((guint64) w->n_dz,
                          ((guint64) op * w->n_dz + order->len - 1) / order->len);
      w->crew_operators[c] = op;
    }
  w->dz = g_new0 (Dozer, w->n_dz);
  w->failures_on = !opt->no_randomness;
  for (guint i = 0; i < w->n_dz; i++)
    {
      Dozer *d = &w->dz[i];
      d->id = i;
      d->cls = g_array_index (order, guint, i % order->len);
      const SfDozerClass *c = g_ptr_array_index (sc->classes, d->cls);
      sf_push_machine_init (&d->pm, c, &sc->material, &sc->design);
      g_snprintf (d->name, sizeof d->name, "dz%02u", i + 1);
      d->block = d->lane = d->at_block = d->at_lane = -1;
      d->cat = SF_USE_WAIT_BLAST;
      d->rng_fail = sf_rng_new (w->seed, opt->replication, i, RNG_FAILURE);
      d->rng_repair = sf_rng_new (w->seed, opt->replication, i, RNG_REPAIR);
      d->ttf = c->reliability.failures && w->failures_on
                 ? MAX (hours_ms (sf_dist_draw (&c->reliability.tbf_h, d->rng_fail)), 1)
                 : G_MAXINT64 / 4;
      d->service_left = c->reliability.service_interval_h > 0
                          ? hours_ms (c->reliability.service_interval_h)
                          : G_MAXINT64 / 4;
    }
  g_array_unref (order);
  w->fitters = sf_resource_new (MAX (sc->sim.fitters, 1u));
  w->weather_on = !opt->no_randomness && sc->roster.wet_day_probability > 0;
  w->rng_weather = sf_rng_new (w->seed, opt->replication, 0, RNG_WEATHER);
  w->end_reason = "stopped";
  return w;
}

static void
progress_line (World *w, gboolean final)
{
  if (!w->opt.progress || !isatty (2))
    return;
  gint64 now_us = g_get_monotonic_time ();
  if (!final && now_us < w->progress_next_us)
    return;
  w->progress_next_us = now_us + 200000;
  guint total = 0;
  for (guint b = 0; b < w->n_blocks; b++)
    for (guint l = 0; w->blocks[b].lanes && l < w->n_lanes; l++)
      total += w->blocks[b].lanes[l].in_scope;
  fprintf (stderr, "\r  day %6.1f   lanes done %4u/%-4u   pushes %8" G_GUINT64_FORMAT "%s",
           sf_time_to_min (now_of (w)) / 1440.0, total - w->lanes_left, total, w->pushes,
           final ? "\n" : "");
}

static void
run_loop (World *w)
{
  const SfRoster *r = &w->sc->roster;
  /* the shift in progress at the start */
  gint64 day;
  guint shift;
  sf_roster_shift_at (r, &w->cal, 0, &day, &shift);
  begin_shift (w, day, shift, TRUE);
  /* days, weather and blasts */
  gint64 d0 = sf_calendar_day_of (&w->cal, 0);
  draw_weather (w, d0);
  sf_kernel_schedule (w->k, sf_calendar_day_start (&w->cal, d0 + 1), EV_DAY, 0,
                      SF_PAYLOAD_INT (d0 + 1));
  for (guint b = 0; b < w->n_blocks; b++)
    {
      if (!w->blocks[b].lanes)
        continue;
      double h = w->sc->sim.blast_h ? w->sc->sim.blast_h[b] : 0.0;
      if (h <= 0)
        w->blocks[b].open = TRUE;
      else
        {
          sf_kernel_schedule (w->k, hours_ms (h), EV_BLAST, b, SF_PAYLOAD_NONE);
          w->blasts_pending++;
        }
    }
  for (guint i = 0; i < w->n_dz; i++)
    {
      Dozer *d = &w->dz[i];
      d->waiting_work = TRUE;
      if (!(d->holds & HOLD_UNMANNED))
        dispatch (w, d);
      else
        dozer_set_category (w, d);
    }
  if (w->lanes_left == 0)
    {
      w->stop = TRUE;
      w->end_reason = "complete";
    }
  const SfTime horizon = hours_ms (w->sc->sim.horizon_days * 24.0);
  sf_kernel_schedule (w->k, horizon, EV_HORIZON, 0, SF_PAYLOAD_NONE);
  SfEvent ev;
  while (!w->stop && sf_kernel_pop (w->k, horizon, &ev))
    {
      w->events++;
      Dozer *d = ev.entity < w->n_dz ? &w->dz[ev.entity] : NULL;
      switch (ev.type)
        {
        case EV_ACT_END:
          on_act_end (w, d);
          break;
        case EV_FAIL:
          on_fail (w, d);
          break;
        case EV_REPAIR_END:
          on_repair_end (w, d);
          break;
        case EV_SHIFT:
          begin_shift (w, ev.payload.i, ev.entity, FALSE);
          break;
        case EV_SHIFT_CHANGE_END:
          set_holds (w, HOLD_SHIFT_CHANGE, FALSE);
          break;
        case EV_MEAL_START:
          set_holds (w, HOLD_MEAL, TRUE);
          break;
        case EV_MEAL_END:
          set_holds (w, HOLD_MEAL, FALSE);
          break;
        case EV_DAY:
          flush_day (w, ev.payload.i - 1);
          draw_weather (w, ev.payload.i);
          sf_kernel_schedule (w->k, sf_calendar_day_start (&w->cal, ev.payload.i + 1), EV_DAY, 0,
                              SF_PAYLOAD_INT (ev.payload.i + 1));
          if (w->blasts_pending == 0
              && (double) (now_of (w) - w->last_push) > NO_PROGRESS_DAYS * 24 * SF_TIME_MS_PER_H)
            {
              w->stop = TRUE;
              w->end_reason = "no progress: no push for 60 days while work is left";
            }
          break;
        case EV_WEATHER_START:
          if (w->weather_count++ == 0)
            set_holds (w, HOLD_WEATHER, TRUE);
          sf_kernel_schedule_in (w->k, ev.payload.i, EV_WEATHER_END, 0, SF_PAYLOAD_NONE);
          sf_report_event (w->rep, now_of (w), "wet_stop", -1, -1, -1, -1,
                           (double) ev.payload.i / SF_TIME_MS_PER_H, 0, 0);
          break;
        case EV_WEATHER_END:
          if (--w->weather_count == 0)
            set_holds (w, HOLD_WEATHER, FALSE);
          break;
        case EV_BLAST:
          w->blasts_pending--;
          open_block (w, ev.entity);
          break;
        case EV_HORIZON:
          w->stop = TRUE;
          w->end_reason = "horizon reached with work left";
          break;
        }
      if ((w->events & 4095) == 0)
        progress_line (w, FALSE);
      /* a cancel flag (set by a signal handler) and the event log are
       * looked at every 1024 events: a few milliseconds of work.  A log
       * that cannot be written (a full disk) ends the run at once; the
       * report then fails with the reason and writes nothing. */
      if ((w->events & 1023) == 0 && w->opt.cancel && *w->opt.cancel)
        {
          w->stop = TRUE;
          w->cancelled = TRUE;
          w->end_reason = "interrupted";
        }
      else if ((w->events & 1023) == 0 && sf_report_failed (w->rep))
        {
          w->stop = TRUE;
          w->end_reason = "the event log cannot be written";
        }
      if (w->events >= MAX_EVENTS)
        {
          w->stop = TRUE;
          w->end_reason = "event limit reached";
        }
    }
  if (!w->stop)
    w->end_reason = "horizon reached with work left";
}

static void
world_summarise (World *w, SfRunSummary *s, SfTime end)
{
  const SfScenario *sc = w->sc;
  const double lcm2bcm = 1.0 / (1.0 + sc->material.swell);
  memset (s, 0, sizeof *s);
  s->complete = w->lanes_left == 0;
  s->end_reason = g_strdup (w->end_reason);
  s->start_iso = sf_report_iso (sc->sim.start, 0);
  s->end_iso = sf_report_iso (sc->sim.start, end);
  s->calendar_ms = end;
  s->calendar_h = (double) end / SF_TIME_MS_PER_H;
  s->events = w->events;
  s->replication = w->opt.replication;
  s->randomness = !w->opt.no_randomness;
  s->crew_operators = g_array_sized_new (FALSE, FALSE, sizeof (guint), sc->roster.n_crews);
  g_array_append_vals (s->crew_operators, w->crew_operators, sc->roster.n_crews);
  double uncovered_m = 0, coal_t = 0;
  for (guint b = 0; b < w->n_blocks; b++)
    {
      BlockState *bk = &w->blocks[b];
      if (!bk->lanes)
        continue;
      double planned_b = 0, left_b = 0;
      for (guint l = 0; l < w->n_lanes; l++)
        {
          LaneState *ls = &bk->lanes[l];
          if (!ls->in_scope)
            continue;
          SfLaneAccount acc;
          sf_lane_account (ls->z0, ls->lane->z, bk->final, ls->lane->n,
                           ls->lane->dx_m * ls->lane->width_m, &acc);
          s->planned_bcm += acc.planned_lcm * lcm2bcm;
          s->moved_bcm += acc.moved_lcm * lcm2bcm;
          s->dropped_bcm += acc.dropped_lcm * lcm2bcm;
          s->left_bcm += acc.left_lcm * lcm2bcm;
          planned_b += acc.planned_lcm;
          left_b += acc.left_lcm;
        }
      /* strip uncovered: the block's length in proportion to the share of
       * its planned dozing done */
      double share = planned_b > 0 ? (planned_b - left_b) / planned_b : 1.0;
      double lanes_share = 0;
      for (guint l = 0; l < w->n_lanes; l++)
        lanes_share += bk->lanes[l].in_scope;
      lanes_share /= w->n_lanes;
      double m = share * w->block_len_m * lanes_share;
      uncovered_m += m;
      if (sc->coal_density_t_per_m3 > 0 && bk->bs->coal_thickness_m > 0)
        coal_t += m * (bk->bs->x_low_wall_edge_m - bk->bs->x_highwall_toe_m)
                  * bk->bs->coal_thickness_m * sc->coal_density_t_per_m3;
    }
  s->dozers = g_array_new (FALSE, TRUE, sizeof (SfDozerResult));
  for (guint i = 0; i < w->n_dz; i++)
    {
      Dozer *d = &w->dz[i];
      const SfDozerClass *c = g_ptr_array_index (sc->classes, d->cls);
      SfDozerResult r = { 0 };
      r.name = g_strdup (d->name);
      r.class_name = g_strdup (c->name);
      r.pushes = d->pushes;
      r.failures = d->failures;
      r.moved_bcm = d->moved_bcm;
      r.engine_h = (double) d->engine_ms / SF_TIME_MS_PER_H;
      memcpy (r.use_ms, d->use_ms, sizeof r.use_ms);
      double op_h = (double) d->use_ms[SF_USE_OPERATING] / SF_TIME_MS_PER_H;
      r.bcm_per_operating_h = op_h > 0 ? d->moved_bcm / op_h : 0;
      r.cost = c->cost_per_operating_h
               * (double) (d->use_ms[SF_USE_OPERATING] + d->use_ms[SF_USE_TRAMMING])
               / SF_TIME_MS_PER_H;
      s->operating_h += op_h;
      s->dumped_bcm += d->moved_bcm;
      s->rehandled_bcm += d->rehandled_bcm;
      s->over_spoil_bcm += d->over_spoil_bcm;
      s->pushes += d->pushes;
      s->cost += r.cost;
      g_array_append_val (s->dozers, r);
    }
  s->bcm_per_operating_h = s->operating_h > 0 ? s->moved_bcm / s->operating_h : 0;
  s->bcm_per_calendar_h = s->calendar_h > 0 ? s->moved_bcm / s->calendar_h : 0;
  double days = s->calendar_h / 24.0;
  s->strip_m_per_day = days > 0 ? uncovered_m / days : 0;
  s->coal_t_per_day = days > 0 ? coal_t / days : 0;
  s->cost_per_bcm = s->moved_bcm > 0 ? s->cost / s->moved_bcm : 0;
}

void
sf_run_summary_clear (SfRunSummary *s)
{
  if (!s)
    return;
  g_free (s->end_reason);
  g_free (s->start_iso);
  g_free (s->end_iso);
  if (s->dozers)
    {
      for (guint i = 0; i < s->dozers->len; i++)
        {
          SfDozerResult *r = &g_array_index (s->dozers, SfDozerResult, i);
          g_free (r->name);
          g_free (r->class_name);
        }
      g_array_unref (s->dozers);
    }
  g_free (s->notice);
  if (s->crew_operators)
    g_array_unref (s->crew_operators);
  memset (s, 0, sizeof *s);
}

/* One run over `lay`; its four files go into write_dir (NULL: none), named
 * in messages as shown_dir. */
static gboolean
run_one (const SfScenario *sc, const SfRunOptions *opt, const SfLayout *lay, const char *write_dir,
         const char *shown_dir, SfRunSummary *sum, GError **error)
{
  SfRunOptions o = *opt; /* checked by run_set */
  memset (sum, 0, sizeof *sum);
  World *w = world_new (sc, &o, lay);
  w->rep = sf_report_new (write_dir, shown_dir, sc->name, sc->sim.start, w->seed, error);
  if (!w->rep)
    {
      world_free (w);
      return FALSE;
    }
  if (!(o.cancel && *o.cancel))
    run_loop (w);
  else
    w->cancelled = TRUE;
  if (w->cancelled)
    {
      /* nothing is kept: the caller drops the staging folder, and the
       * previous outputs in out_dir stay as they were */
      progress_line (w, TRUE);
      sf_report_abort (w->rep);
      w->rep = NULL;
      world_free (w);
      g_set_error_literal (error, SF_MODEL_ERROR, SF_MODEL_ERROR_INTERRUPTED, "interrupted");
      return FALSE;
    }
  SfTime end = now_of (w);
  /* close every dozer's last interval at the end of the run */
  for (guint i = 0; i < w->n_dz; i++)
    {
      Dozer *d = &w->dz[i];
      if (d->running)
        dozer_charge (w, d);
      d->use_ms[d->cat] += end - d->cat_since;
      d->cat_since = end;
    }
  flush_day (w, sf_calendar_day_of (&w->cal, end));
  progress_line (w, TRUE);
  world_summarise (w, sum, end);
  gboolean ok = sf_report_finish (w->rep, sc, sum, error);
  w->rep = NULL;
  world_free (w);
  if (!ok)
    sf_run_summary_clear (sum);
  return ok;
}

/* ---- replications and the output set ------------------------------------- */

typedef struct {
  const SfScenario *sc;
  SfRunOptions opt;
  const SfLayout *layout;   /* shared read-only by every replication */
  const char *write_dir;  /* replication 0's files; NULL: none */
  gboolean count_done;    /* a "replications done" line on stderr */
  gint n_done;            /* atomic */
  guint n;
  GMutex print_lock;
  SfRunSummary *sums;
  GError **errors;
  gboolean *ok;
} RepJob;

static void
rep_worker (gpointer data, gpointer user_data)
{
  RepJob *job = user_data;
  guint r = GPOINTER_TO_UINT (data) - 1;
  SfRunOptions o = job->opt;
  o.replication += r;
  if (r > 0)
    o.progress = FALSE;
  job->ok[r] = run_one (job->sc, &o, job->layout, r == 0 ? job->write_dir : NULL,
                        r == 0 ? job->opt.out_dir : NULL, &job->sums[r], &job->errors[r]);
  if (job->count_done)
    {
      gint done = g_atomic_int_add (&job->n_done, 1) + 1;
      g_mutex_lock (&job->print_lock);
      fprintf (stderr, "\r  replications done %d of %u%s", done, job->n,
               (guint) done == job->n ? "\n" : "");
      g_mutex_unlock (&job->print_lock);
    }
}

static char *
replications_csv (const SfRunSummary *sums, guint n)
{
  GString *csv = g_string_new ("replication,complete,calendar_h,moved_bcm,"
                               "bcm_per_operating_h,bcm_per_calendar_h,strip_m_per_day,"
                               "coal_t_per_day,cost_per_bcm,failures\n");
  for (guint r = 0; r < n; r++)
    {
      guint failures = 0;
      for (guint i = 0; i < sums[r].dozers->len; i++)
        failures += g_array_index (sums[r].dozers, SfDozerResult, i).failures;
      g_string_append_printf (csv, "%u,%d,%.4f,%.2f,%.3f,%.3f,%.3f,%.1f,%.4f,%u\n", r,
                              sums[r].complete, sums[r].calendar_h, sums[r].moved_bcm,
                              sums[r].bcm_per_operating_h, sums[r].bcm_per_calendar_h,
                              sums[r].strip_m_per_day, sums[r].coal_t_per_day,
                              sums[r].cost_per_bcm, failures);
    }
  return g_string_free (csv, FALSE);
}

/* Replications first .. first+n-1 into sums[0 .. n-1], on up to n_threads
 * threads, and the output set: begun before the first event (a folder that
 * cannot be used fails at once), written by replication 0 and the steps
 * after it, committed as a whole at the end — or dropped on any failure. */
static gboolean
run_set (const SfScenario *sc, const SfRunOptions *opt, guint first, guint n, guint n_threads,
         SfRunSummary *sums, GError **error)
{
  for (guint r = 0; r < n; r++)
    memset (&sums[r], 0, sizeof sums[r]);
  if (opt->only_block >= (int) sc->strip.n_blocks
      || opt->only_lane >= (int) sf_scenario_get_n_lanes (sc))
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_ARGUMENT,
                   "block %d / lane %d does not exist in the scenario", opt->only_block,
                   opt->only_lane);
      return FALSE;
    }
  if (opt->n_dozers > SF_MAX_DOZERS)
    {
      g_set_error (error, SF_MODEL_ERROR, SF_MODEL_ERROR_ARGUMENT,
                   "%d dozers asked for; the limit is %d", opt->n_dozers, SF_MAX_DOZERS);
      return FALSE;
    }
  SfOutDir *od = NULL;
  if (opt->out_dir && !(od = sf_outdir_begin (opt->out_dir, sc->name, opt->overwrite, FALSE, error)))
    return FALSE;
  /* the blocks' sections and designs, once for every replication */
  SfLayout *lay = sf_layout_new (sc, opt->only_block, opt->progress, NULL, error);
  if (!lay)
    {
      sf_outdir_abort (od);
      return FALSE;
    }
  RepJob job = { .sc = sc, .opt = *opt, .layout = lay, .sums = sums,
                 .write_dir = od ? sf_outdir_staging (od) : NULL,
                 .errors = g_new0 (GError *, n), .ok = g_new0 (gboolean, n), .n = n };
  g_mutex_init (&job.print_lock);
  /* one run shows its own progress line; several count what is done */
  job.count_done = n > 1 && opt->progress && isatty (2);
  if (n > 1)
    job.opt.progress = FALSE;
  job.opt.replication = first;
  if (n_threads <= 1 || n == 1)
    for (guint r = 0; r < n; r++)
      rep_worker (GUINT_TO_POINTER (r + 1), &job);
  else
    {
      GThreadPool *pool = g_thread_pool_new (rep_worker, &job, (gint) MIN (n_threads, n), TRUE,
                                             NULL);
      for (guint r = 0; r < n; r++)
        g_thread_pool_push (pool, GUINT_TO_POINTER (r + 1), NULL);
      g_thread_pool_free (pool, FALSE, TRUE);
    }
  gboolean ok = TRUE;
  for (guint r = 0; r < n; r++)
    if (!job.ok[r] && ok)
      {
        ok = FALSE;
        g_propagate_error (error, job.errors[r]);
        job.errors[r] = NULL;
      }
  if (ok && od && n > 1)
    {
      g_autofree char *csv = replications_csv (sums, n);
      g_autofree char *path = g_build_filename (job.write_dir, "replications.csv", NULL);
      g_autoptr (GError) werr = NULL;
      if (!g_file_set_contents (path, csv, -1, &werr))
        {
          g_autofree char *m = sf_outdir_shown (od, werr->message);
          g_set_error_literal (error, G_FILE_ERROR, werr->code, m);
          ok = FALSE;
        }
    }
  GString *notice = g_string_new (NULL);
  if (ok && od && opt->charts)
    {
      g_autoptr (GError) cerr = NULL;
      sums[0].charts_drawn = sf_chart_run_outputs (job.write_dir, &cerr)
                             && (n < 2 || sf_chart_run_spread (job.write_dir, &cerr));
      if (!sums[0].charts_drawn)
        {
          g_autofree char *m = sf_outdir_shown (od, cerr->message);
          g_string_append_printf (notice, "charts not drawn: %s", m);
          /* no chart of this run's set rather than some */
          static const char *const pngs[] = { "daily.png", "usage.png", "schedule.png",
                                              "spread.png" };
          for (gsize i = 0; i < G_N_ELEMENTS (pngs); i++)
            {
              g_autofree char *p = g_build_filename (job.write_dir, pngs[i], NULL);
              g_unlink (p);
            }
        }
    }
  if (ok && od)
    {
      g_autofree char *kept = NULL;
      ok = sf_outdir_commit (g_steal_pointer (&od), &kept, error);
      if (kept)
        g_string_append_printf (notice, "%s%s", notice->len ? "\n" : "", kept);
    }
  sf_outdir_abort (od);
  sf_layout_free (lay);
  if (ok && notice->len)
    sums[0].notice = g_strdup (notice->str);
  g_string_free (notice, TRUE);
  for (guint r = 0; r < n; r++)
    {
      g_clear_error (&job.errors[r]);
      if (!ok)
        sf_run_summary_clear (&sums[r]);
    }
  g_free (job.errors);
  g_free (job.ok);
  g_mutex_clear (&job.print_lock);
  return ok;
}

gboolean
sf_run (const SfScenario *sc, const SfRunOptions *opt, SfRunSummary *sum, GError **error)
{
  g_return_val_if_fail (sc != NULL && sum != NULL, FALSE);
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  if (opt)
    o = *opt;
  return run_set (sc, &o, o.replication, 1, 1, sum, error);
}

gboolean
sf_run_replications (const SfScenario *sc, const SfRunOptions *opt, guint n, guint n_threads,
                     SfRunSummary *sums, GError **error)
{
  g_return_val_if_fail (sc != NULL && sums != NULL && n > 0, FALSE);
  SfRunOptions o = SF_RUN_OPTIONS_INIT;
  if (opt)
    o = *opt;
  return run_set (sc, &o, 0, n, n_threads, sums, error);
}

static int
cmp_double (gconstpointer a, gconstpointer b)
{
  double x = *(const double *) a, y = *(const double *) b;
  return x < y ? -1 : x > y;
}

static double
quantile7 (const double *sorted, guint n, double p)
{
  double h = (n - 1) * p;
  guint lo = (guint) floor (h);
  guint hi = MIN (lo + 1, n - 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

void
sf_spread (const double *x, guint n, SfSpread *out)
{
  memset (out, 0, sizeof *out);
  if (n == 0)
    return;
  g_autofree double *s = g_memdup2 (x, n * sizeof (double));
  qsort (s, n, sizeof (double), (int (*) (const void *, const void *)) cmp_double);
  double sum = 0;
  for (guint i = 0; i < n; i++)
    sum += s[i];
  out->mean = sum / n;
  double ss = 0;
  for (guint i = 0; i < n; i++)
    ss += (s[i] - out->mean) * (s[i] - out->mean);
  out->sd = n > 1 ? sqrt (ss / (n - 1)) : 0.0;
  out->min = s[0];
  out->max = s[n - 1];
  out->p10 = quantile7 (s, n, 0.10);
  out->p50 = quantile7 (s, n, 0.50);
  out->p90 = quantile7 (s, n, 0.90);
}
