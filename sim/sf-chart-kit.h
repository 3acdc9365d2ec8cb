/* SPDX-License-Identifier: MIT
 *
 * sf-chart-kit.h — the small drawing kit shared by the chart modules
 * (internal to sim/; built only with cairo, SF_HAVE_CAIRO).
 *
 * Owns nothing: static helpers for sf-chart.c (block studies),
 * sf-chart-run.c (fleet runs) and the replay viewer (viewer/replay-frame.c)
 * — colours (the time-usage colours and labels among them), text in the C locale and anchored
 * at a point, a data-to-pixel frame, axes with "nice" ticks
 * (sf_chart_tick_step in sf-chart.h), legends, the page (white surface,
 * titles, the caution footer) and writing a PNG atomically.
 *
 * Memory: strings from fmt() and tick_label() are newly allocated (g_free);
 * every cairo object belongs to the caller.  page_new() returns a surface
 * and a context the caller destroys; page_write() neither keeps nor frees
 * the surface.
 *
 * Determinism: numbers are printed in the C locale whatever the caller's
 * locale, font metrics are not hinted, and cairo's PNG writer stores no
 * time stamp, so the same drawing gives the same bytes on the same system.
 */
#pragma once

#ifndef SF_HAVE_CAIRO
#error "sf-chart-kit.h needs cairo (SF_HAVE_CAIRO)"
#endif

#include <cairo.h>
#include <locale.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include <glib.h>

#include "sf-chart.h"
#include "sf-util.h"
#include "stripfleet.h"

#define FONT_FACE "DejaVu Sans"

typedef struct {
  double r, g, b;
} Rgb;

/* Time-usage colours, one per SfUse and fixed, shared by the run charts and
 * the replay viewer so that a planner reads both alike: greens for work,
 * yellows and oranges for waiting, reds for unplanned repairs, purples for
 * planned servicing, blues for the roster's stops, greys for no operator,
 * weather and no more work. */
static inline const Rgb *
use_rgb (SfUse u)
{
  static const Rgb rgb[] = {
    [SF_USE_OPERATING] = { 0.000, 0.620, 0.451 },
    [SF_USE_WAIT_LANE] = { 0.902, 0.624, 0.000 },
    [SF_USE_WAIT_BLAST] = { 0.960, 0.820, 0.420 },
    [SF_USE_TRAMMING] = { 0.550, 0.800, 0.550 },
    [SF_USE_BREAKDOWN] = { 0.835, 0.369, 0.000 },
    [SF_USE_WAIT_FITTER] = { 0.600, 0.100, 0.100 },
    [SF_USE_SERVICE] = { 0.800, 0.475, 0.655 },
    [SF_USE_REFUEL] = { 0.500, 0.350, 0.650 },
    [SF_USE_SHIFT_CHANGE] = { 0.000, 0.447, 0.698 },
    [SF_USE_MEAL] = { 0.337, 0.706, 0.914 },
    [SF_USE_UNMANNED] = { 0.550, 0.550, 0.550 },
    [SF_USE_WEATHER] = { 0.300, 0.380, 0.460 },
    [SF_USE_IDLE_DONE] = { 0.850, 0.850, 0.850 },
  };
  G_STATIC_ASSERT (G_N_ELEMENTS (rgb) == SF_USE_N);
  return &rgb[u < SF_USE_N ? u : SF_USE_IDLE_DONE];
}

/* What each time-usage category means, for legends. */
static inline const char *
use_label (SfUse u)
{
  static const char *const label[] = {
    [SF_USE_OPERATING] = "operating (pushing)",
    [SF_USE_WAIT_LANE] = "waiting for a free lane",
    [SF_USE_WAIT_BLAST] = "waiting for a blast",
    [SF_USE_TRAMMING] = "tramming",
    [SF_USE_BREAKDOWN] = "breakdown, under repair",
    [SF_USE_WAIT_FITTER] = "waiting for a fitter",
    [SF_USE_SERVICE] = "planned service",
    [SF_USE_REFUEL] = "refuelling",
    [SF_USE_SHIFT_CHANGE] = "shift change",
    [SF_USE_MEAL] = "meal break",
    [SF_USE_UNMANNED] = "unmanned (no operator)",
    [SF_USE_WEATHER] = "weather stop",
    [SF_USE_IDLE_DONE] = "idle, no more work",
  };
  G_STATIC_ASSERT (G_N_ELEMENTS (label) == SF_USE_N);
  return u < SF_USE_N ? label[u] : "?";
}

static const Rgb RGB_TEXT = { 0.10, 0.10, 0.10 };
static const Rgb RGB_GRID = { 0.88, 0.88, 0.88 };
static const Rgb RGB_SURFACE = { 0.45, 0.27, 0.10 }; /* post-blast surface; legend KEY_GROUND */

static inline void
set_rgb (cairo_t *cr, const Rgb *c)
{
  cairo_set_source_rgb (cr, c->r, c->g, c->b);
}

static inline void
set_rgba (cairo_t *cr, const Rgb *c, double a)
{
  cairo_set_source_rgba (cr, c->r, c->g, c->b, a);
}

/* ---- text ------------------------------------------------------------------ */

/* printf into a new string, numbers in the C locale (a chart must not
 * change with the caller's LC_NUMERIC). */
static inline char *G_GNUC_PRINTF (1, 2)
fmt (const char *format, ...)
{
  locale_t c_loc = newlocale (LC_ALL_MASK, "C", (locale_t) 0);
  locale_t old = c_loc ? uselocale (c_loc) : (locale_t) 0;
  va_list ap;
  va_start (ap, format);
  char *s = g_strdup_vprintf (format, ap);
  va_end (ap);
  if (c_loc)
    {
      uselocale (old);
      freelocale (c_loc);
    }
  return s;
}

static inline void
font (cairo_t *cr, double size_px, gboolean bold)
{
  cairo_select_font_face (cr, FONT_FACE, CAIRO_FONT_SLANT_NORMAL,
                          bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
  cairo_set_font_size (cr, size_px);
}

static inline double
text_width (cairo_t *cr, const char *s)
{
  cairo_text_extents_t te;
  cairo_text_extents (cr, s, &te);
  return te.x_advance;
}

/* Draws s with its box anchored at (x, y): ha 0 left, 0.5 centre, 1 right;
 * va 0 top, 0.5 middle, 1 bottom of the font's ascent + descent. */
static inline void
text_at (cairo_t *cr, double x, double y, double ha, double va, const char *s)
{
  cairo_font_extents_t fe;
  cairo_font_extents (cr, &fe);
  double w = text_width (cr, s);
  double h = fe.ascent + fe.descent;
  cairo_move_to (cr, x - ha * w, y - va * h + fe.ascent);
  cairo_show_text (cr, s);
}

/* ---- frames and axes -------------------------------------------------------- */

typedef struct {
  double left, top, width, height; /* pixels */
  double x_lo, x_hi, y_lo, y_hi;   /* data */
} Frame;

static inline double
px (const Frame *f, double x)
{
  return f->left + (x - f->x_lo) / (f->x_hi - f->x_lo) * f->width;
}

static inline double
py (const Frame *f, double y)
{
  return f->top + (f->y_hi - y) / (f->y_hi - f->y_lo) * f->height;
}

static inline void
clip_frame (cairo_t *cr, const Frame *f)
{
  cairo_rectangle (cr, f->left, f->top, f->width, f->height);
  cairo_clip (cr);
}

/* Tick label with as many decimals as the step needs. */
static inline char *
tick_label (double v, double step)
{
  int dec = step >= 1.0 ? 0 : (int) ceil (-log10 (step) - 1e-9);
  if (fabs (v) < 0.5 * step * 1e-6)
    v = 0.0; /* no "-0" */
  return fmt ("%.*f", dec, v);
}

/* Grid, ticks and labels of the left (y) and bottom (x) axes.
 * xlabel may be NULL (no x ticks either), and so may ylabel (no y grid,
 * ticks or labels: the caller labels a y axis of categories itself). */
static inline void
draw_axes (cairo_t *cr, const Frame *f, const char *xlabel, const char *ylabel, guint max_xt,
           guint max_yt)
{
  cairo_save (cr);
  cairo_set_line_width (cr, 1.0);
  double ys = sf_chart_tick_step (f->y_hi - f->y_lo, max_yt);
  double xs = sf_chart_tick_step (f->x_hi - f->x_lo, max_xt);
  /* grid */
  set_rgb (cr, &RGB_GRID);
  if (ylabel)
    for (double y = ceil (f->y_lo / ys - 1e-9) * ys; y <= f->y_hi + 1e-9 * ys; y += ys)
      {
        double v = floor (py (f, y)) + 0.5;
        cairo_move_to (cr, f->left, v);
        cairo_line_to (cr, f->left + f->width, v);
      }
  if (xlabel)
    for (double x = ceil (f->x_lo / xs - 1e-9) * xs; x <= f->x_hi + 1e-9 * xs; x += xs)
      {
        double u = floor (px (f, x)) + 0.5;
        cairo_move_to (cr, u, f->top);
        cairo_line_to (cr, u, f->top + f->height);
      }
  cairo_stroke (cr);
  /* ticks and labels */
  set_rgb (cr, &RGB_TEXT);
  font (cr, 13, FALSE);
  double label_w = 0;
  if (ylabel)
    for (double y = ceil (f->y_lo / ys - 1e-9) * ys; y <= f->y_hi + 1e-9 * ys; y += ys)
      {
        double v = floor (py (f, y)) + 0.5;
        cairo_move_to (cr, f->left - 5, v);
        cairo_line_to (cr, f->left, v);
        g_autofree char *s = tick_label (y, ys);
        label_w = MAX (label_w, text_width (cr, s));
        text_at (cr, f->left - 8, v, 1.0, 0.5, s);
      }
  if (xlabel)
    for (double x = ceil (f->x_lo / xs - 1e-9) * xs; x <= f->x_hi + 1e-9 * xs; x += xs)
      {
        double u = floor (px (f, x)) + 0.5;
        cairo_move_to (cr, u, f->top + f->height);
        cairo_line_to (cr, u, f->top + f->height + 5);
        g_autofree char *s = tick_label (x, xs);
        text_at (cr, u, f->top + f->height + 8, 0.5, 0.0, s);
      }
  cairo_stroke (cr);
  /* axis titles */
  font (cr, 14, FALSE);
  if (xlabel)
    text_at (cr, f->left + 0.5 * f->width, f->top + f->height + 28, 0.5, 0.0, xlabel);
  if (ylabel)
    {
      cairo_save (cr);
      cairo_translate (cr, f->left - label_w - 18, f->top + 0.5 * f->height);
      cairo_rotate (cr, -G_PI / 2);
      text_at (cr, 0, 0, 0.5, 1.0, ylabel);
      cairo_restore (cr);
    }
  cairo_restore (cr);
}

/* The frame's border, drawn last so that fills do not cover it. */
static inline void
draw_frame_box (cairo_t *cr, const Frame *f)
{
  cairo_save (cr);
  cairo_set_line_width (cr, 1.0);
  cairo_set_source_rgb (cr, 0.3, 0.3, 0.3);
  cairo_rectangle (cr, floor (f->left) + 0.5, floor (f->top) + 0.5, floor (f->width),
                   floor (f->height));
  cairo_stroke (cr);
  cairo_restore (cr);
}

/* ---- legends -------------------------------------------------------------- */

typedef enum {
  KEY_LINE,
  KEY_GROUND, /* loose ground: fill with the surface line on top */
  KEY_FILL,
  KEY_PIVOT,
  KEY_BAR,
  KEY_DOT,
} KeyKind;

typedef struct {
  double x, y;   /* next entry's top-left */
  double width;  /* of the legend column */
} Legend;

static inline void
legend_heading (cairo_t *cr, Legend *lg, const char *s)
{
  font (cr, 14, TRUE);
  set_rgb (cr, &RGB_TEXT);
  text_at (cr, lg->x, lg->y, 0.0, 0.0, s);
  lg->y += 24;
}

/* One legend entry: a 34 px sample and the text (one or two lines). */
static inline void
legend_entry (cairo_t *cr, Legend *lg, KeyKind kind, const Rgb *c, double alpha, double width,
              const double *dash, int n_dash, const char *s, const char *s2)
{
  const double sx = lg->x, sy = lg->y + 9, sw = 34;
  cairo_save (cr);
  switch (kind)
    {
    case KEY_LINE:
      set_rgb (cr, c);
      cairo_set_line_width (cr, width);
      cairo_set_dash (cr, dash, n_dash, 0);
      cairo_move_to (cr, sx, sy);
      cairo_line_to (cr, sx + sw, sy);
      cairo_stroke (cr);
      break;
    case KEY_GROUND:
      set_rgb (cr, c);
      cairo_rectangle (cr, sx, sy - 7, sw, 14);
      cairo_fill (cr);
      set_rgb (cr, &RGB_SURFACE);
      cairo_set_line_width (cr, width);
      cairo_move_to (cr, sx, sy - 7 + 0.5 * width);
      cairo_line_to (cr, sx + sw, sy - 7 + 0.5 * width);
      cairo_stroke (cr);
      break;
    case KEY_FILL:
    case KEY_BAR:
      set_rgba (cr, c, alpha);
      cairo_rectangle (cr, sx, sy - 7, sw, 14);
      cairo_fill (cr);
      if (width > 0)
        {
          set_rgb (cr, c);
          cairo_set_line_width (cr, width);
          cairo_move_to (cr, sx, sy + 7);
          cairo_line_to (cr, sx + sw, sy + 7);
          cairo_stroke (cr);
        }
      break;
    case KEY_PIVOT:
      cairo_move_to (cr, sx + 0.5 * sw, sy + 6);
      cairo_line_to (cr, sx + 0.5 * sw - 7, sy - 6);
      cairo_line_to (cr, sx + 0.5 * sw + 7, sy - 6);
      cairo_close_path (cr);
      if (alpha > 0)
        cairo_set_source_rgb (cr, 0, 0, 0);
      else
        cairo_set_source_rgb (cr, 1, 1, 1);
      cairo_fill_preserve (cr);
      cairo_set_source_rgb (cr, 0, 0, 0);
      cairo_set_line_width (cr, 1.5);
      cairo_stroke (cr);
      break;
    case KEY_DOT:
      set_rgb (cr, c);
      cairo_set_line_width (cr, width);
      cairo_move_to (cr, sx, sy);
      cairo_line_to (cr, sx + sw, sy);
      cairo_stroke (cr);
      cairo_arc (cr, sx + 0.5 * sw, sy, 4.5, 0, 2 * G_PI);
      cairo_fill (cr);
      break;
    }
  cairo_restore (cr);
  font (cr, 13, FALSE);
  set_rgb (cr, &RGB_TEXT);
  text_at (cr, sx + sw + 10, sy, 0.0, 0.5, s);
  lg->y += 22;
  if (s2)
    {
      font (cr, 12, FALSE);
      cairo_set_source_rgb (cr, 0.35, 0.35, 0.35);
      text_at (cr, sx + sw + 10, sy + 17, 0.0, 0.5, s2);
      lg->y += 18;
    }
}

/* Lines of small grey text under a legend (NULL-terminated), 17 px apart. */
static inline void
legend_notes (cairo_t *cr, Legend *lg, const char *const *lines)
{
  font (cr, 12, FALSE);
  cairo_set_source_rgb (cr, 0.35, 0.35, 0.35);
  for (; *lines; lines++)
    {
      text_at (cr, lg->x, lg->y, 0.0, 0.0, *lines);
      lg->y += 17;
    }
}

/* ---- page ------------------------------------------------------------------ */

static inline cairo_surface_t *
page_new (int w, int h, cairo_t **cr_out)
{
  cairo_surface_t *surf = cairo_image_surface_create (CAIRO_FORMAT_RGB24, w, h);
  cairo_t *cr = cairo_create (surf);
  cairo_font_options_t *fo = cairo_font_options_create ();
  cairo_font_options_set_hint_metrics (fo, CAIRO_HINT_METRICS_OFF);
  cairo_font_options_set_hint_style (fo, CAIRO_HINT_STYLE_NONE);
  cairo_font_options_set_antialias (fo, CAIRO_ANTIALIAS_GRAY);
  cairo_set_font_options (cr, fo);
  cairo_font_options_destroy (fo);
  cairo_set_source_rgb (cr, 1, 1, 1);
  cairo_paint (cr);
  *cr_out = cr;
  return surf;
}

static inline void
page_titles (cairo_t *cr, const char *title, const char *subtitle)
{
  set_rgb (cr, &RGB_TEXT);
  font (cr, 21, TRUE);
  text_at (cr, 24, 14, 0.0, 0.0, title);
  font (cr, 14, FALSE);
  cairo_set_source_rgb (cr, 0.3, 0.3, 0.3);
  text_at (cr, 24, 44, 0.0, 0.0, subtitle);
}

/* The footer: a rule, the caution line (and `extra` after a bar, when not
 * NULL) on the left, the program and version on the right. */
static inline void
page_caution (cairo_t *cr, int w, int h, const char *extra)
{
  g_autofree char *left = fmt ("Planning estimate only - not a work instruction%s%s",
                               extra ? "  |  " : "", extra ? extra : "");
  cairo_set_source_rgb (cr, 0.85, 0.85, 0.85);
  cairo_set_line_width (cr, 1.0);
  cairo_move_to (cr, 16, h - 34.5);
  cairo_line_to (cr, w - 16, h - 34.5);
  cairo_stroke (cr);
  set_rgb (cr, &RGB_TEXT);
  font (cr, 14, TRUE);
  text_at (cr, 24, h - 12, 0.0, 1.0, left);
  font (cr, 12, FALSE);
  cairo_set_source_rgb (cr, 0.4, 0.4, 0.4);
  g_autofree char *right = fmt ("stripfleet %s", SF_VERSION);
  text_at (cr, w - 24, h - 12, 1.0, 1.0, right);
}

/* Writes the surface as PNG under a temporary name beside png_path, then
 * renames it into place.  Errors name png_path. */
typedef struct {
  FILE *fp;
  gboolean failed;
} PngSink;

static inline cairo_status_t
png_write (void *closure, const unsigned char *data, unsigned int length)
{
  PngSink *s = closure;
  if (fwrite (data, 1, length, s->fp) != length)
    {
      s->failed = TRUE;
      return CAIRO_STATUS_WRITE_ERROR;
    }
  return CAIRO_STATUS_SUCCESS;
}

static inline gboolean
page_write (cairo_surface_t *surf, const char *png_path, GError **error)
{
  cairo_surface_flush (surf);
  if (cairo_surface_status (surf) != CAIRO_STATUS_SUCCESS)
    {
      g_set_error (error, G_FILE_ERROR, G_FILE_ERROR_FAILED, "cannot draw chart %s: %s",
                   png_path, cairo_status_to_string (cairo_surface_status (surf)));
      return FALSE;
    }
  SfAtomicFile *af = sf_atomic_file_open (png_path, error);
  if (!af)
    return FALSE;
  PngSink sink = { af->fp, FALSE };
  cairo_status_t st = cairo_surface_write_to_png_stream (surf, png_write, &sink);
  if (st != CAIRO_STATUS_SUCCESS || sink.failed)
    {
      g_set_error (error, G_FILE_ERROR, G_FILE_ERROR_IO, "cannot write chart %s: %s", png_path,
                   cairo_status_to_string (st != CAIRO_STATUS_SUCCESS ? st
                                                                      : CAIRO_STATUS_WRITE_ERROR));
      sf_atomic_file_abort (af);
      return FALSE;
    }
  return sf_atomic_file_commit (af, error);
}

/* Ends a page: releases the context, writes the surface as PNG to png_path
 * (page_write) and releases the surface. */
static inline gboolean
page_finish (cairo_surface_t *surf, cairo_t *cr, const char *png_path, GError **error)
{
  cairo_destroy (cr);
  gboolean ok = page_write (surf, png_path, error);
  cairo_surface_destroy (surf);
  return ok;
}

/* A label's box in pixels, for placing labels clear of each other. */
typedef struct {
  double x0, y0, x1, y1;
} Box;

static inline gboolean
box_overlap (const Box *a, const Box *b)
{
  return a->x0 < b->x1 && b->x0 < a->x1 && a->y0 < b->y1 && b->y0 < a->y1;
}

/* A halo behind a label so that it reads over lines and fills. */
static inline void
halo_text (cairo_t *cr, double x, double y, double ha, double va, const char *s)
{
  cairo_font_extents_t fe;
  cairo_font_extents (cr, &fe);
  double w = text_width (cr, s), h = fe.ascent + fe.descent;
  cairo_save (cr);
  cairo_set_source_rgba (cr, 1, 1, 1, 0.8);
  cairo_rectangle (cr, x - ha * w - 2, y - va * h - 1, w + 4, h + 2);
  cairo_fill (cr);
  cairo_restore (cr);
  text_at (cr, x, y, ha, va, s);
}

/* Right-hand axis of a frame for a second series over [0, y_hi]. */
static inline void
draw_right_axis (cairo_t *cr, const Frame *f, double y_hi, const char *label, guint max_t)
{
  Frame r = *f;
  r.y_lo = 0;
  r.y_hi = y_hi;
  double ys = sf_chart_tick_step (y_hi, max_t);
  cairo_save (cr);
  set_rgb (cr, &RGB_TEXT);
  cairo_set_line_width (cr, 1.0);
  font (cr, 13, FALSE);
  double right = f->left + f->width;
  double label_w = 0;
  for (double y = 0; y <= y_hi + 1e-9 * ys; y += ys)
    {
      double v = floor (py (&r, y)) + 0.5;
      cairo_move_to (cr, right, v);
      cairo_line_to (cr, right + 5, v);
      g_autofree char *s = tick_label (y, ys);
      label_w = MAX (label_w, text_width (cr, s));
      text_at (cr, right + 8, v, 0.0, 0.5, s);
    }
  cairo_stroke (cr);
  font (cr, 14, FALSE);
  cairo_translate (cr, right + label_w + 18, f->top + 0.5 * f->height);
  cairo_rotate (cr, G_PI / 2);
  text_at (cr, 0, 0, 0.5, 1.0, label);
  cairo_restore (cr);
}
