/*
 * tw_validate.h - checks on study results before anything is posted.
 *
 * Checks are a table of small functions (src/rules/validate.c), each documented in docs/checks.md
 * with its source. A check adds findings through tw_row_diag(), which counts errors on the row,
 * so a bus with any error in any scenario gets no posting label.
 */
#ifndef TW_VALIDATE_H
#define TW_VALIDATE_H

#include "base/tw_diag.h"
#include "read/tw_results.h"
#include "rules/tw_scenario.h"
#include "read/tw_site.h"

/* Check every row (required fields, ranges, dates, physics) and every bus (duplicate IDs within
 * a scenario, voltage agreement across scenarios). Returns the number of errors found. */
size_t tw_validate(tw_results *r, const tw_bus_set *buses, const tw_site *site, tw_diags *d);

#endif
