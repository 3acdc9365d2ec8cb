/* SPDX-License-Identifier: MIT
 *
 * sf-roster.c — shifts, crews and the calendar.
 */
#include "sf-roster.h"

void
sf_calendar_init (SfCalendar *cal, GDateTime *start)
{
  /* seconds since local midnight of the start date (local = the start's offset) */
  gint64 s = (gint64) g_date_time_get_hour (start) * 3600 + g_date_time_get_minute (start) * 60
             + g_date_time_get_second (start);
  cal->midnight0_ms = -s * SF_TIME_MS_PER_S - g_date_time_get_microsecond (start) / 1000;
}

gint64
sf_calendar_day_of (const SfCalendar *cal, SfTime t)
{
  SfTime rel = t - cal->midnight0_ms;
  const SfTime day = 24 * SF_TIME_MS_PER_H;
  return rel >= 0 ? rel / day : -((-rel + day - 1) / day);
}

SfTime
sf_roster_shift_start (const SfRoster *r, const SfCalendar *cal, gint64 day, guint shift)
{
  return sf_calendar_day_start (cal, day) + (SfTime) r->shifts[shift].start_min * SF_TIME_MS_PER_MIN;
}

void
sf_roster_shift_at (const SfRoster *r, const SfCalendar *cal, SfTime t, gint64 *day, guint *shift)
{
  /* The shift that started last at or before t: look at today and yesterday
   * (a night shift started yesterday may still run). */
  gint64 d = sf_calendar_day_of (cal, t);
  SfTime best = G_MININT64;
  for (gint64 dd = d - 1; dd <= d; dd++)
    for (guint s = 0; s < r->n_shifts; s++)
      {
        SfTime st = sf_roster_shift_start (r, cal, dd, s);
        if (st <= t && st > best)
          {
            best = st;
            *day = dd;
            *shift = s;
          }
      }
}

guint
sf_roster_crew_on (const SfRoster *r, gint64 day, guint shift)
{
  if (r->pattern_days == 0 || !r->pattern)
    return SF_NO_CREW;
  gint64 p = day % (gint64) r->pattern_days;
  if (p < 0)
    p += r->pattern_days;
  return r->pattern[p * r->n_shifts + shift];
}
