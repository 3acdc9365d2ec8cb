/* SPDX-License-Identifier: MIT
 *
 * stripfleet-replay.c — the replay viewer: plays back a finished fleet run
 * from its events.log in a window (SDL2), or draws one frame into a PNG.
 *
 *   stripfleet-replay [--speed H] [--at HOURS] [--dozers N] [--png FILE.png]
 *                     [--frames N] SCENARIO DIR
 *
 * A thin client: the log is read and indexed by the library
 * (stripfleet.h, section "replay"), each frame is drawn by replay-frame.c
 * into a cairo surface, and the program only copies that surface into an
 * SDL texture and handles the keys.  With --png nothing of SDL is
 * initialised, so it runs headless.
 *
 * Memory: the scenario, the replay, the state and the SDL objects live for
 * the whole program and are freed before it returns; each frame's surface
 * is destroyed once copied.
 *
 * The pictures are planning estimates, not work instructions (docs/viewer.md).
 */
#define SDL_MAIN_HANDLED
#include <SDL.h>

#include <math.h>
#include <stdio.h>
#include <string.h>

#include <glib.h>

#include "replay-frame.h"
#include "sf-chart-kit.h" /* page_write: the PNG written atomically */
#include "stripfleet.h"

#define PROG "stripfleet-replay"
#define MS_PER_H 3600000.0
#define SPEED_MIN_H_PER_S (1.0 / 64)
#define SPEED_MAX_H_PER_S 256.0

static int
exit_code_of (const GError *err)
{
  return err->domain == SF_SCENARIO_ERROR ? SF_EXIT_INVALID : SF_EXIT_RUNTIME;
}

/* Copies the cairo frame (RGB24: 32-bit xRGB in native order) into the
 * texture. */
static gboolean
show_frame (SDL_Renderer *ren, SDL_Texture *tex, cairo_surface_t *surf)
{
  if (SDL_UpdateTexture (tex, NULL, cairo_image_surface_get_data (surf),
                         cairo_image_surface_get_stride (surf))
      != 0)
    return FALSE;
  SDL_RenderClear (ren);
  SDL_RenderCopy (ren, tex, NULL, NULL);
  SDL_RenderPresent (ren);
  return TRUE;
}

typedef struct {
  const SfReplay *rp;
  SfReplayState *st;
  ReplayView view;
  double t_ms;        /* playback clock, simulated ms (fractional while playing) */
  gint64 end_ms;
} Player;

static void
handle_key (Player *p, SDL_Keycode key, gboolean *quit)
{
  switch (key)
    {
    case SDLK_q:
    case SDLK_ESCAPE:
      *quit = TRUE;
      break;
    case SDLK_SPACE:
      p->view.paused = !p->view.paused;
      if (!p->view.paused && p->t_ms >= p->end_ms)
        p->t_ms = 0; /* play again from the start */
      break;
    case SDLK_PLUS:
    case SDLK_EQUALS:
    case SDLK_KP_PLUS:
      p->view.speed_h_per_s = MIN (p->view.speed_h_per_s * 2, SPEED_MAX_H_PER_S);
      break;
    case SDLK_MINUS:
    case SDLK_KP_MINUS:
      p->view.speed_h_per_s = MAX (p->view.speed_h_per_s / 2, SPEED_MIN_H_PER_S);
      break;
    case SDLK_RIGHT:
      p->t_ms = MIN (p->t_ms + MS_PER_H, (double) p->end_ms);
      break;
    case SDLK_LEFT:
      p->t_ms = MAX (p->t_ms - MS_PER_H, 0.0);
      break;
    case SDLK_HOME:
      p->t_ms = 0;
      break;
    case SDLK_END:
      p->t_ms = (double) p->end_ms;
      break;
    default:
      break;
    }
}

static int
run_window (Player *p, int frames)
{
  if (SDL_Init (SDL_INIT_VIDEO) != 0)
    {
      g_printerr (PROG ": cannot open a window: %s\n", SDL_GetError ());
      return SF_EXIT_RUNTIME;
    }
  int rc = SF_EXIT_OK;
  SDL_Window *win = NULL;
  SDL_Renderer *ren = NULL;
  SDL_Texture *tex = NULL;
  g_autofree char *title = g_strdup_printf ("stripfleet replay - %s (planning estimate)",
                                            sf_replay_get_scenario_name (p->rp));
  win = SDL_CreateWindow (title, SDL_WINDOWPOS_UNDEFINED, SDL_WINDOWPOS_UNDEFINED,
                          REPLAY_FRAME_WIDTH_PX, REPLAY_FRAME_HEIGHT_PX, SDL_WINDOW_RESIZABLE);
  if (win)
    ren = SDL_CreateRenderer (win, -1, SDL_RENDERER_PRESENTVSYNC);
  if (win && !ren)
    ren = SDL_CreateRenderer (win, -1, SDL_RENDERER_SOFTWARE);
  if (ren)
    {
      SDL_RenderSetLogicalSize (ren, REPLAY_FRAME_WIDTH_PX, REPLAY_FRAME_HEIGHT_PX);
      tex = SDL_CreateTexture (ren, SDL_PIXELFORMAT_RGB888, SDL_TEXTUREACCESS_STREAMING,
                               REPLAY_FRAME_WIDTH_PX, REPLAY_FRAME_HEIGHT_PX);
    }
  if (!tex)
    {
      g_printerr (PROG ": cannot open a window: %s\n", SDL_GetError ());
      rc = SF_EXIT_RUNTIME;
    }
  gboolean quit = FALSE;
  Uint64 last = SDL_GetTicks64 ();
  for (int n = 0; tex && !quit && (frames <= 0 || n < frames); n++)
    {
      SDL_Event ev;
      while (SDL_PollEvent (&ev))
        {
          if (ev.type == SDL_QUIT)
            quit = TRUE;
          else if (ev.type == SDL_KEYDOWN)
            handle_key (p, ev.key.keysym.sym, &quit);
        }
      Uint64 now = SDL_GetTicks64 ();
      if (!p->view.paused)
        {
          p->t_ms += (double) (now - last) * 1e-3 * p->view.speed_h_per_s * MS_PER_H;
          if (p->t_ms >= p->end_ms)
            {
              p->t_ms = (double) p->end_ms;
              p->view.paused = TRUE; /* stop at the end */
            }
        }
      last = now;
      sf_replay_state_at (p->rp, (gint64) p->t_ms, p->st);
      cairo_surface_t *surf = replay_frame_draw (p->rp, p->st, &p->view);
      gboolean shown = show_frame (ren, tex, surf);
      cairo_surface_destroy (surf);
      if (!shown)
        {
          g_printerr (PROG ": cannot show the frame: %s\n", SDL_GetError ());
          rc = SF_EXIT_RUNTIME;
          break;
        }
      SDL_Delay (10);
    }
  if (tex)
    SDL_DestroyTexture (tex);
  if (ren)
    SDL_DestroyRenderer (ren);
  if (win)
    SDL_DestroyWindow (win);
  SDL_Quit ();
  return rc;
}

int
main (int argc, char **argv)
{
  double speed = 4.0, at_h = 0.0;
  int frames = 0, dozers = 0;
  g_autofree char *png = NULL;
  const GOptionEntry entries[] = {
    { "speed", 's', 0, G_OPTION_ARG_DOUBLE, &speed,
      "Playback speed in simulated hours per second (default 4)", "H" },
    { "at", 'a', 0, G_OPTION_ARG_DOUBLE, &at_h, "Start at this many hours into the run", "HOURS" },
    { "dozers", 'n', 0, G_OPTION_ARG_INT, &dozers,
      "The fleet size the run was made with (stripfleet run --dozers; default: the scenario's)",
      "N" },
    { "png", 'p', 0, G_OPTION_ARG_FILENAME, &png,
      "Draw the frame at --at into this PNG and exit (no window)", "FILE.png" },
    { "frames", 'f', 0, G_OPTION_ARG_INT, &frames, "Show this many frames, then exit", "N" },
    G_OPTION_ENTRY_NULL,
  };
  g_autoptr (GOptionContext) ctx = g_option_context_new ("SCENARIO DIR");
  g_option_context_set_summary (
    ctx, "Plays back a finished run of stripfleet (DIR/events.log of 'stripfleet run SCENARIO "
         "--out DIR')\nso that the fleet can be watched working the strip through time.\n"
         "Positions are estimates for display. Planning estimate only - not a work "
         "instruction.");
  g_option_context_add_main_entries (ctx, entries, NULL);
  g_autoptr (GError) err = NULL;
  if (!g_option_context_parse (ctx, &argc, &argv, &err))
    {
      g_printerr (PROG ": %s\n", err->message);
      return SF_EXIT_USAGE;
    }
  if (argc != 3)
    {
      g_printerr (PROG ": expected SCENARIO and DIR (try --help)\n");
      return SF_EXIT_USAGE;
    }
  if (!(isfinite (speed) && speed >= SPEED_MIN_H_PER_S && speed <= SPEED_MAX_H_PER_S))
    {
      g_printerr (PROG ": --speed: expected %g to %g simulated hours per second, found %g\n",
                  SPEED_MIN_H_PER_S, SPEED_MAX_H_PER_S, speed);
      return SF_EXIT_USAGE;
    }
  if (!(isfinite (at_h) && at_h >= 0 && at_h < 1e6))
    {
      g_printerr (PROG ": --at: expected hours >= 0, found %g\n", at_h);
      return SF_EXIT_USAGE;
    }
  if (frames < 0 || dozers < 0)
    {
      g_printerr (PROG ": --%s: expected a number >= 0, found %d\n",
                  frames < 0 ? "frames" : "dozers", frames < 0 ? frames : dozers);
      return SF_EXIT_USAGE;
    }

  g_autoptr (SfScenario) sc = sf_scenario_load_from_file (argv[1], &err);
  if (!sc)
    {
      g_printerr (PROG ": %s\n", err->message);
      return SF_EXIT_INVALID;
    }
  g_autofree char *log = g_build_filename (argv[2], "events.log", NULL);
  g_autoptr (SfReplay) rp = sf_replay_load (log, sc, (guint) dozers, &err);
  if (!rp)
    {
      g_printerr (PROG ": %s\n", err->message);
      return exit_code_of (err);
    }
  const gint64 end_ms = sf_replay_get_end_ms (rp);
  const gint64 at_ms = (gint64) llround (at_h * MS_PER_H);
  if (at_ms > end_ms)
    {
      g_printerr (PROG ": --at: the run lasts %.2f h, asked for %g h\n", end_ms / MS_PER_H, at_h);
      return SF_EXIT_USAGE;
    }
  const char *desc = sf_scenario_get_description (sc);
  Player p = {
    .rp = rp,
    .st = sf_replay_state_new (rp),
    .view = { png == NULL, FALSE, speed, desc && strstr (desc, "nvented") != NULL },
    .t_ms = (double) at_ms,
    .end_ms = end_ms,
  };
  int rc = SF_EXIT_OK;
  if (png)
    {
      sf_replay_state_at (rp, at_ms, p.st);
      cairo_surface_t *surf = replay_frame_draw (rp, p.st, &p.view);
      if (!page_write (surf, png, &err))
        {
          g_printerr (PROG ": %s\n", err->message);
          rc = SF_EXIT_RUNTIME;
        }
      cairo_surface_destroy (surf);
    }
  else
    rc = run_window (&p, frames);
  sf_replay_state_free (p.st);
  return rc;
}
