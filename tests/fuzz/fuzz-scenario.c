/* SPDX-License-Identifier: MIT
 *
 * fuzz-scenario.c — libFuzzer target: the scenario loader on arbitrary bytes.
 *
 * Every input is handed to sf_scenario_load_from_data() as the text of a
 * scenario file whose folder is a private temporary folder holding a copy of
 * the demo's section CSV (so that mutations of the demo scenario still reach
 * the CSV reader).  The loader must refuse or accept every input without a
 * crash, a leak or undefined behaviour; an accepted scenario is also read
 * back through the public getters.  Seeds: tests/fuzz/corpus-scenario/.
 *
 * Memory: the temporary folder is created once and removed at exit; each
 * input's scenario and error are freed before the next.
 */
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>

#include <glib.h>
#include <glib/gstdio.h>

#include "stripfleet.h"

int LLVMFuzzerInitialize (int *argc, char ***argv);
int LLVMFuzzerTestOneInput (const uint8_t *data, size_t size);

#define DEMO_CSV "demo-strip-b15.csv"

static char *base_dir;

static void
remove_base_dir (void)
{
  if (!base_dir)
    return;
  g_autofree char *csv = g_build_filename (base_dir, DEMO_CSV, NULL);
  g_unlink (csv);
  g_rmdir (base_dir);
  g_clear_pointer (&base_dir, g_free);
}

int
LLVMFuzzerInitialize (int *argc, char ***argv)
{
  (void) argc;
  (void) argv;
  g_autoptr (GError) err = NULL;
  base_dir = g_dir_make_tmp ("sf-fuzz-scenario-XXXXXX", &err);
  if (!base_dir)
    g_error ("fuzz-scenario: %s", err->message);
  g_autofree char *src = g_build_filename (SF_FUZZ_SOURCE_DIR, "scenarios", DEMO_CSV, NULL);
  g_autofree char *dst = g_build_filename (base_dir, DEMO_CSV, NULL);
  g_autofree char *text = NULL;
  gsize len = 0;
  if (!g_file_get_contents (src, &text, &len, &err) || !g_file_set_contents (dst, text, (gssize) len, &err))
    g_error ("fuzz-scenario: %s", err->message);
  atexit (remove_base_dir);
  return 0;
}

int
LLVMFuzzerTestOneInput (const uint8_t *data, size_t size)
{
  g_autoptr (GError) err = NULL;
  g_autoptr (SfScenario) sc
    = sf_scenario_load_from_data ((const char *) data, size, "fuzz.json", base_dir, &err);
  if (!sc)
    {
      /* refused: exactly one error with a message */
      if (!err || !err->message || !*err->message)
        abort ();
      return 0;
    }
  if (err)
    abort ();
  /* accepted: the getters see a consistent scenario */
  if (!sf_scenario_get_name (sc) || sf_scenario_get_n_blocks (sc) == 0
      || sf_scenario_get_n_lanes (sc) == 0 || sf_scenario_get_n_classes (sc) == 0)
    abort ();
  for (guint k = 0; k < sf_scenario_get_n_classes (sc); k++)
    if (sf_scenario_find_class (sc, sf_scenario_get_class_name (sc, k)) != (int) k
        || !sf_scenario_get_class_blade (sc, k))
      abort ();
  return 0;
}
