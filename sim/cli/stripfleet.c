/* SPDX-License-Identifier: MIT */
#include <stdio.h>
#include "stripfleet.h"
int
main (int argc, char **argv)
{
  printf ("stripfleet %s\n", SF_VERSION);
  return 0;
}
