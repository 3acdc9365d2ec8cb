/* SPDX-License-Identifier: MIT
 *
 * sf-roster.h — shifts, crews and the calendar (internal to sim/).
 *
 * Owns: turning the roster of a scenario into answers about time: which
 * shift holds a given minute of the day, which crew works a shift on a
 * given day of the pattern, where local midnights fall in run time.  Pure
 * functions on the immutable scenario; no allocation.
 *
 * Run time is integer milliseconds from the run start (SfTime).  Local clock
 * time comes from the start's UTC offset (held fixed for the run: daylight
 * saving changes are not followed; docs/model.md §7).
 */
#pragma once

#include "sf-kernel.h"
#include "sf-scenario.h"

G_BEGIN_DECLS

typedef struct {
  SfTime midnight0_ms;      /* run time of local midnight starting day 0 (<= 0) */
} SfCalendar;

void sf_calendar_init (SfCalendar *cal, GDateTime *start);

/* Run time at which local day `day` (0 = the start's date) begins. */
static inline SfTime
sf_calendar_day_start (const SfCalendar *cal, gint64 day)
{
  return cal->midnight0_ms + day * 24 * SF_TIME_MS_PER_H;
}

/* Local day index of run time t (floor). */
gint64 sf_calendar_day_of (const SfCalendar *cal, SfTime t);

/* Run time at which shift `shift` of local day `day` starts. */
SfTime sf_roster_shift_start (const SfRoster *r, const SfCalendar *cal, gint64 day, guint shift);

/* The shift holding run time t, with the local day it started on. */
void sf_roster_shift_at (const SfRoster *r, const SfCalendar *cal, SfTime t, gint64 *day,
                         guint *shift);

/* Crew index working `shift` on local day `day` (SF_NO_CREW for nobody). */
guint sf_roster_crew_on (const SfRoster *r, gint64 day, guint shift);

G_END_DECLS
