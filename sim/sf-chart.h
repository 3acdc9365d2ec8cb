/* SPDX-License-Identifier: MIT
 *
 * sf-chart.h — PNG charts of the block studies and of fleet runs (internal
 * to sim/).
 *
 * Owns: drawing a block's cross-section with its slice plan, and one lane
 * before and after it is worked out with its production per slice, as PNG
 * images drawn with cairo (the public entry points are
 * sf_study_chart_plan() and sf_study_chart_lane() in stripfleet.h).  The
 * charts reuse the study wiring of sf-study.h, so a chart shows exactly what
 * the matching table prints.  The charts of a fleet run (sf-chart-run.c,
 * sf_chart_run_outputs() in stripfleet.h) are drawn from the run's output
 * files alone.  The drawing kit both share is sf-chart-kit.h.
 *
 * sf-chart.c is built only when cairo is found (SF_HAVE_CAIRO); otherwise
 * sf-chart-none.c provides the public entry points, which fail with
 * G_FILE_ERROR_NOSYS ("built without cairo").  Nothing here keeps state
 * between calls: every chart is drawn on its own surface, written under a
 * temporary name beside the target and renamed into place (sf-util.h), so
 * the same input gives a byte-identical file.
 */
#pragma once

#include <glib.h>

G_BEGIN_DECLS

/* Image sizes in pixels. */
#define SF_CHART_PLAN_WIDTH_PX 1280
#define SF_CHART_PLAN_HEIGHT_PX 720
#define SF_CHART_LANE_WIDTH_PX 1280
#define SF_CHART_LANE_HEIGHT_PX 960
/* The fleet-run charts of sf_chart_run_outputs() (sf-chart-run.c). */
#define SF_CHART_RUN_WIDTH_PX 1280
#define SF_CHART_DAILY_HEIGHT_PX 720
#define SF_CHART_USAGE_HEIGHT_PX 720
#define SF_CHART_SCHEDULE_HEIGHT_PX 900
#define SF_CHART_SPREAD_HEIGHT_PX 720
#define SF_CHART_COMPARE_WIDTH_PX 1280
#define SF_CHART_COMPARE_HEIGHT_PX 720
#define SF_CHART_HANDOVER_WIDTH_PX 1280
#define SF_CHART_HANDOVER_HEIGHT_PX 720

/* Axis tick spacing for a data range: the smallest step of the form 1, 2 or
 * 5 times a power of ten that gives at most `max_ticks` intervals over
 * `range` ("nice numbers", after P. S. Heckbert, "Nice numbers for graph
 * labels", Graphics Gems, Academic Press 1990).  range > 0, max_ticks >= 1.
 * Built only with cairo (SF_HAVE_CAIRO). */
double sf_chart_tick_step (double range, guint max_ticks);

G_END_DECLS
