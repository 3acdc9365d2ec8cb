/* SPDX-License-Identifier: MIT
 *
 * stripfleet.h — the public interface of the stripfleet library.
 *
 * The command-line program and the viewer use only what is declared here.
 * Opaque handles are created with *_new / *_load_* and freed with *_free;
 * functions named *_get_* return borrowed data that lives as long as the
 * handle; plain result records (SfSliceInfo, SfSliceResult, ...) are owned by
 * the caller's arrays.  Failures that the caller can recover from come back
 * as GError in one of the domains below; programming errors are caught with
 * g_return_val_if_fail.
 */
#pragma once

#include <glib.h>

G_BEGIN_DECLS

#define SF_VERSION "0.1.0"

/* Process exit codes shared by every client (documented in docs/cli.md). */
enum {
  SF_EXIT_OK = 0,
  SF_EXIT_RUNTIME = 1,  /* a run failed: I/O, no progress, interrupted */
  SF_EXIT_USAGE = 2,    /* bad command line */
  SF_EXIT_INVALID = 3,  /* the scenario or a file it references is invalid */
};

/* ---- errors -------------------------------------------------------------- */

#define SF_SCENARIO_ERROR (sf_scenario_error_quark ())
GQuark sf_scenario_error_quark (void);

typedef enum {
  SF_SCENARIO_ERROR_IO,        /* cannot read a file */
  SF_SCENARIO_ERROR_SYNTAX,    /* not JSON / not CSV as expected */
  SF_SCENARIO_ERROR_INVALID,   /* a value is missing, of the wrong type, or out of range */
  SF_SCENARIO_ERROR_GEOMETRY,  /* sections that cannot be built */
} SfScenarioError;

#define SF_MODEL_ERROR (sf_model_error_quark ())
GQuark sf_model_error_quark (void);

typedef enum {
  SF_MODEL_ERROR_GEOMETRY,     /* a block's design cannot be laid out */
  SF_MODEL_ERROR_NO_PROGRESS,  /* a push or slice made no progress */
  SF_MODEL_ERROR_ARGUMENT,     /* block / lane / class index out of range */
} SfModelError;

/* ---- scenario ------------------------------------------------------------ */

typedef struct _SfScenario SfScenario;

/* Reads and checks a scenario file.  On failure returns NULL and sets one
 * error whose message lists every problem found, one per line, each naming
 * the file, the JSON path (or CSV line) and what was expected. */
SfScenario *sf_scenario_load_from_file (const char *path, GError **error);

/* The same from a JSON text in memory; `label` stands for the file name in
 * messages, `base_dir` resolves relative CSV paths (may be NULL: cwd). */
SfScenario *sf_scenario_load_from_data (const char *json, gsize len, const char *label,
                                        const char *base_dir, GError **error);

void sf_scenario_free (SfScenario *sc);
G_DEFINE_AUTOPTR_CLEANUP_FUNC (SfScenario, sf_scenario_free)

const char *sf_scenario_get_name (const SfScenario *sc);
const char *sf_scenario_get_description (const SfScenario *sc);
guint sf_scenario_get_n_blocks (const SfScenario *sc);
guint sf_scenario_get_n_lanes (const SfScenario *sc); /* lanes in every block */
guint sf_scenario_get_n_classes (const SfScenario *sc);
const char *sf_scenario_get_class_name (const SfScenario *sc, guint class_index);
/* Index of the class named `name`, or -1. */
int sf_scenario_find_class (const SfScenario *sc, const char *name);

G_END_DECLS
