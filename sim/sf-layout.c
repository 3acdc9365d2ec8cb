/* SPDX-License-Identifier: MIT
 *
 * sf-layout.c — every block of a strip laid out for work (see the header).
 */
#include "sf-layout.h"

#include <stdio.h>
#include <string.h>
#include <unistd.h>

void
sf_layout_free (SfLayout *lay)
{
  if (!lay)
    return;
  for (guint b = 0; b < lay->n_blocks; b++)
    {
      SfBlockLayout *bl = &lay->blocks[b];
      g_free (bl->final);
      g_free (bl->spoil);
      sf_slice_plan_free (bl->plan);
      sf_block_section_free (bl->bs);
    }
  g_free (lay->blocks);
  g_free (lay);
}

/* Laying out the blocks on a thread pool: each block is independent of the
 * others and reads only the shared set of given sections, so the layout is
 * the same whatever the number of threads. */
typedef struct {
  const SfScenario *sc;
  const SfSectionSet *set;
  SfLayout *lay;
  GError **errors;   /* per block */
  gboolean progress;
  gint n_done;       /* atomic */
  guint n_todo;
  GMutex print_lock;
} LayoutJob;

/* Block b's section (settled at the angle of repose: most of the set-up
 * time), slice plan, spoil line and final design, or errors[b]. */
static void
layout_block (gpointer data, gpointer user_data)
{
  LayoutJob *job = user_data;
  const SfScenario *sc = job->sc;
  guint b = GPOINTER_TO_UINT (data) - 1;
  SfBlockLayout *bl = &job->lay->blocks[b];
  GError **error = &job->errors[b];
  bl->bs = sf_block_section_new_from_set (job->set, sc, b, error);
  if (bl->bs)
    bl->plan = sf_slice_plan_new (bl->bs, &sc->design, sc->strip.lane_width_m, error);
  if (bl->plan)
    {
      const guint n = bl->bs->n;
      bl->spoil = g_new (double, n);
      for (guint i = 0; i < n; i++)
        bl->spoil[i]
          = sf_block_section_spoil_line (bl->bs, bl->bs->x0_m + (i + 0.5) * bl->bs->dx_m);
      /* the final design, from a lane as it stands at the start */
      SfLane *lane = sf_lane_new (bl->bs->surface, bl->bs->base, n, bl->bs->x0_m, bl->bs->dx_m,
                                  sc->strip.lane_width_m, bl->bs->tan_repose);
      bl->final = g_new (double, n);
      sf_slice_plan_final (bl->plan, sf_slice_plan_zone_end (bl->plan, lane), bl->final, n);
      sf_lane_free (lane);
    }
  if (job->progress)
    {
      gint done = g_atomic_int_add (&job->n_done, 1) + 1;
      g_mutex_lock (&job->print_lock);
      fprintf (stderr, "\r  laying out blocks: %d of %u", done, job->n_todo);
      g_mutex_unlock (&job->print_lock);
    }
}

SfLayout *
sf_layout_new (const SfScenario *sc, int only_block, gboolean progress, guint *n_bad,
               GError **error)
{
  SfLayout *lay = g_new0 (SfLayout, 1);
  lay->n_blocks = sc->strip.n_blocks;
  lay->blocks = g_new0 (SfBlockLayout, lay->n_blocks);
  if (n_bad)
    *n_bad = 0;
  g_autoptr (SfSectionSet) set = sf_section_set_new (sc, error);
  if (!set)
    {
      if (n_bad)
        *n_bad = lay->n_blocks;
      sf_layout_free (lay);
      return NULL;
    }
  LayoutJob job = { .sc = sc, .set = set, .lay = lay,
                    .errors = g_new0 (GError *, lay->n_blocks),
                    .progress = progress && isatty (2),
                    .n_todo = only_block >= 0 ? 1 : lay->n_blocks };
  g_mutex_init (&job.print_lock);
  guint n_threads = MIN ((guint) g_get_num_processors (), job.n_todo);
  GThreadPool *pool = n_threads > 1
                        ? g_thread_pool_new (layout_block, &job, (gint) n_threads, TRUE, NULL)
                        : NULL;
  for (guint b = 0; b < lay->n_blocks; b++)
    {
      if (only_block >= 0 && (guint) only_block != b)
        continue;
      if (pool)
        g_thread_pool_push (pool, GUINT_TO_POINTER (b + 1), NULL);
      else
        layout_block (GUINT_TO_POINTER (b + 1), &job);
    }
  if (pool)
    g_thread_pool_free (pool, FALSE, TRUE);
  if (job.progress)
    fprintf (stderr, "\r%-40s\r", "");
  /* every block that failed, one line each, in block order */
  GError *first = NULL;
  g_autoptr (GString) lines = g_string_new (NULL);
  guint bad = 0;
  for (guint b = 0; b < lay->n_blocks; b++)
    if (job.errors[b])
      {
        g_string_append_printf (lines, "%s%s", bad ? "\n" : "", job.errors[b]->message);
        if (!first)
          first = g_steal_pointer (&job.errors[b]);
        g_clear_error (&job.errors[b]);
        bad++;
      }
  g_free (job.errors);
  if (n_bad)
    *n_bad = bad;
  gboolean ok = bad == 0;
  if (first)
    {
      g_set_error_literal (error, first->domain, first->code, lines->str);
      g_error_free (first);
    }
  g_mutex_clear (&job.print_lock);
  if (!ok)
    {
      sf_layout_free (lay);
      return NULL;
    }
  return lay;
}
