/* SPDX-License-Identifier: MIT
 *
 * sf-reliability.c — random durations.
 */
#include "sf-reliability.h"

#include <math.h>

double
sf_dist_draw (const SfDist *d, SfRng *rng)
{
  switch (d->kind)
    {
    case SF_DIST_FIXED:
      return d->mean;
    case SF_DIST_EXPONENTIAL:
      return sf_rng_exponential (rng, d->mean);
    case SF_DIST_WEIBULL:
      return sf_rng_weibull (rng, d->shape, d->scale);
    case SF_DIST_LOGNORMAL:
      return sf_rng_lognormal (rng, d->mean, d->sd);
    }
  return d->mean;
}

double
sf_dist_mean (const SfDist *d)
{
  if (d->kind == SF_DIST_WEIBULL)
    return d->scale * tgamma (1.0 + 1.0 / d->shape);
  return d->mean;
}
