/* SPDX-License-Identifier: MIT
 *
 * replay-frame.h — draws one frame of a run's replay (the viewer's picture)
 * into a cairo image surface, from the fleet state that the library's
 * replay gives (stripfleet.h, section "replay").
 *
 * Owns nothing between calls: replay_frame_draw() returns a new surface the
 * caller destroys (cairo_surface_destroy); the replay, the state and the
 * view are only read.  The same state and view give the same pixels.
 */
#pragma once

#include <cairo.h>
#include <glib.h>

#include "stripfleet.h"

G_BEGIN_DECLS

#define REPLAY_FRAME_WIDTH_PX 1280
#define REPLAY_FRAME_HEIGHT_PX 800

/* What the frame says about playback (the window shows it; a PNG does not). */
typedef struct {
  gboolean interactive;     /* show the playback line (speed, paused, keys) */
  gboolean paused;
  double speed_h_per_s;     /* simulated hours per second of playback */
  gboolean invented;        /* the scenario says it is invented: the footer says so */
} ReplayView;

/* Draws the state `st` of replay `rp` (st from sf_replay_state_new (rp)) as a
 * REPLAY_FRAME_WIDTH_PX x REPLAY_FRAME_HEIGHT_PX RGB24 image. */
cairo_surface_t *replay_frame_draw (const SfReplay *rp, const SfReplayState *st,
                                    const ReplayView *view);

G_END_DECLS
