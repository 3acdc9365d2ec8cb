/* SPDX-License-Identifier: MIT */
#pragma once
#include <glib.h>
