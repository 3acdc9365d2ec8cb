/* SPDX-License-Identifier: MIT
 *
 * fuzz-csv.c — libFuzzer target: the section CSV reader on arbitrary bytes.
 *
 * Each input is written to f.csv in a private temporary folder and read
 * through the public loader with a fixed, otherwise valid scenario whose only
 * section names that file (so the target covers the size and UTF-8 checks,
 * the row reader and the string checks exactly as a user's file meets them).
 * When the loader accepts the strings, block 0's section and slice plan are
 * built from them too: whatever the loader lets through must be laid out or
 * refused with an error, never crash.  Seeds: tests/fuzz/corpus-csv/.
 *
 * Memory: the temporary folder and its f.csv are removed at exit; each
 * input's scenario, plan and errors are freed before the next.
 */
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

#include <glib.h>
#include <glib/gstdio.h>

#include "stripfleet.h"

int LLVMFuzzerInitialize (int *argc, char ***argv);
int LLVMFuzzerTestOneInput (const uint8_t *data, size_t size);

/* Invented test scenario (no real site): one 50 m block, section range
 * -20..100 m at 1 m cells; the toe and low-wall edge bracket the strip. */
static const char SCENARIO[] =
  "{ \"format\": \"stripfleet-scenario-1\", \"name\": \"fuzz-csv\",\n"
  "  \"description\": \"Invented test case; no real site.\",\n"
  "  \"strip\": { \"length_m\": 50, \"blocks\": 1, \"lane_width_m\": 10, \"cell_m\": 1,\n"
  "             \"section_x_min_m\": -20, \"section_x_max_m\": 100 },\n"
  "  \"sections\": [ { \"block\": 0, \"csv\": \"f.csv\", \"highwall_toe_x_m\": 10,\n"
  "                  \"low_wall_edge_x_m\": 60 } ],\n"
  "  \"material\": { \"bank_density_t_per_bcm\": 2.4, \"swell\": 0.25,\n"
  "                \"angle_of_repose_deg\": 37 },\n"
  "  \"dozer_classes\": [ { \"name\": \"u-100t\", \"operating_mass_t\": 105,\n"
  "      \"net_power_kw\": 650,\n"
  "      \"blade\": { \"type\": \"u\", \"width_m\": 6.3, \"height_m\": 2.2,\n"
  "                 \"rated_capacity_lcm\": 34 },\n"
  "      \"forward_speeds_kmh\": [3.8, 6.8, 11.8], \"reverse_speeds_kmh\": [4.9, 8.7, 15.0] } ],\n"
  "  \"fleet\": [ { \"class\": \"u-100t\", \"count\": 1 } ] }\n";

static char *base_dir;
static char *csv_path;

static void
remove_base_dir (void)
{
  if (!base_dir)
    return;
  g_unlink (csv_path);
  g_rmdir (base_dir);
  g_clear_pointer (&csv_path, g_free);
  g_clear_pointer (&base_dir, g_free);
}

int
LLVMFuzzerInitialize (int *argc, char ***argv)
{
  (void) argc;
  (void) argv;
  g_autoptr (GError) err = NULL;
  base_dir = g_dir_make_tmp ("sf-fuzz-csv-XXXXXX", &err);
  if (!base_dir)
    g_error ("fuzz-csv: %s", err->message);
  csv_path = g_build_filename (base_dir, "f.csv", NULL);
  atexit (remove_base_dir);
  return 0;
}

int
LLVMFuzzerTestOneInput (const uint8_t *data, size_t size)
{
  FILE *f = fopen (csv_path, "wb");
  if (!f || (size && fwrite (data, 1, size, f) != size) || fclose (f) != 0)
    g_error ("fuzz-csv: cannot write %s", csv_path);
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc
    = sf_scenario_load_from_data (SCENARIO, sizeof SCENARIO - 1, "fuzz.json", base_dir, &err);
  if (!sc)
    {
      /* refused: one error, and it names the CSV file (the scenario is fine) */
      if (!err || !err->message || !g_strstr_len (err->message, -1, "f.csv"))
        abort ();
      return 0;
    }
  /* accepted: lay the section out; a geometry refusal is fine, a crash is not */
  g_clear_error (&err);
  g_autoptr (GArray) plan = sf_study_slice_plan (sc, 0, NULL, &err);
  if (!plan && !err)
    abort ();
  return 0;
}
