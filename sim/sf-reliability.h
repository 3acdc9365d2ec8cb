/* SPDX-License-Identifier: MIT
 *
 * sf-reliability.h — random durations for breakdowns, repairs and weather
 * (internal to sim/).
 *
 * Owns: drawing from a scenario distribution (SfDist) on a random stream and
 * its analytic mean, so that availability can be checked against
 * MTBF / (MTBF + MTTR).  No allocation.
 */
#pragma once

#include "sf-kernel.h"
#include "sf-scenario.h"

G_BEGIN_DECLS

/* One draw (in the distribution's own unit), never negative. */
double sf_dist_draw (const SfDist *d, SfRng *rng);

/* Mean: exponential and lognormal and fixed: mean; Weibull: scale x
 * Gamma(1 + 1/shape) (Law, Simulation Modeling and Analysis, 5th ed., ch. 6;
 * from memory). */
double sf_dist_mean (const SfDist *d);

G_END_DECLS
