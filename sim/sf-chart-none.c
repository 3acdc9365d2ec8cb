/* SPDX-License-Identifier: MIT
 *
 * sf-chart-none.c — the chart entry points of stripfleet.h (block studies
 * and fleet runs) when the library is built without cairo (meson option
 * charts=disabled, or cairo not found): they draw nothing and fail with
 * G_FILE_ERROR_NOSYS.  Owns nothing.
 */
#include "stripfleet.h"

static gboolean
no_charts (const char *png_path, GError **error)
{
  g_set_error (error, G_FILE_ERROR, G_FILE_ERROR_NOSYS,
               "cannot draw chart %s: stripfleet was built without cairo (meson option "
               "'charts')",
               png_path ? png_path : "(none)");
  return FALSE;
}

gboolean
sf_study_chart_plan (const SfScenario *sc, guint block, const SfStudyOptions *opt,
                     const char *png_path, GError **error)
{
  (void) sc;
  (void) block;
  (void) opt;
  return no_charts (png_path, error);
}

gboolean
sf_study_chart_lane (const SfScenario *sc, guint block, guint lane, guint class_index,
                     const SfStudyOptions *opt, const char *png_path, GError **error)
{
  (void) sc;
  (void) block;
  (void) lane;
  (void) class_index;
  (void) opt;
  return no_charts (png_path, error);
}

gboolean
sf_chart_run_outputs (const char *out_dir, GError **error)
{
  g_set_error (error, G_FILE_ERROR, G_FILE_ERROR_NOSYS,
               "cannot draw the charts of the run in %s: stripfleet was built without cairo "
               "(meson option 'charts')",
               out_dir ? out_dir : "(none)");
  return FALSE;
}

gboolean
sf_chart_run_spread (const char *out_dir, GError **error)
{
  return sf_chart_run_outputs (out_dir, error);
}

gboolean
sf_study_chart_compare (const SfScenario *sc, const SfCompareResult *rows, guint n,
                        guint class_strategy, guint class_a, guint class_b,
                        const char *png_path, GError **error)
{
  (void) sc;
  (void) rows;
  (void) n;
  (void) class_strategy;
  (void) class_a;
  (void) class_b;
  return no_charts (png_path, error);
}

gboolean
sf_study_chart_handover (const SfScenario *sc, guint block, guint lane, guint class_index,
                         const SfHandoverSlice *rows, const SfHandoverTotals *totals,
                         const char *png_path, GError **error)
{
  (void) sc;
  (void) block;
  (void) lane;
  (void) class_index;
  (void) rows;
  (void) totals;
  return no_charts (png_path, error);
}
