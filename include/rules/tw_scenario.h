/*
 * tw_scenario.h - buses and their scenarios, and the worst credible case per bus.
 *
 * Rows sharing an equipment_id are one bus; each row is a scenario (utility maximum, minimum,
 * infinite bus, stepped reductions of the source fault current...). The label uses the
 * governing row chosen by tw_worst_case(), the one place that choice is made.
 *
 * A tw_bus_set points into a tw_results, which must outlive it. tw_bus_set_free() accepts a
 * zeroed set.
 */
#ifndef TW_SCENARIO_H
#define TW_SCENARIO_H

#include <stddef.h>

#include "base/tw_diag.h"
#include "base/tw_map.h"
#include "read/tw_results.h"

typedef struct {
    const char *equipment_id;
    tw_row **rows;          /* scenarios in input order */
    size_t count;
    tw_row *governing;      /* worst case; NULL only when count is 0 */
    unsigned other_errors;  /* error findings that block this bus besides its rows' own
                             * counts: those naming it, and those that name no bus
                             * (tw_bus_set_attribute) */
} tw_bus;

typedef struct {
    tw_bus *buses;          /* in order of first appearance in the input */
    size_t count;
    tw_row **slots;         /* storage for all bus->rows arrays */
    tw_map index;           /* equipment_id -> position in buses */
} tw_bus_set;

/* The worst case among rows: highest incident energy, ties broken by the larger arc-flash
 * boundary; a row with only a PPE category counts as that category's minimum arc rating.
 * Rows without an equipment ID are skipped. NULL when no row qualifies. */
tw_row *tw_worst_case(tw_row *const *rows, size_t n);

/* Group rows by equipment_id (rows without one are left out). 0, or -1 when out of memory. */
int tw_bus_set_build(tw_results *r, tw_bus_set *out);

/* The bus with this ID, or NULL. */
const tw_bus *tw_bus_set_find(const tw_bus_set *s, const char *equipment_id);

/* The one test of whether a bus may be posted: 0 when no error blocks it, else how many
 * findings do (a finding may be counted twice: compare with 0 only). Counts the errors recorded
 * against its scenario rows and, once tw_bus_set_attribute() has run, every error finding
 * that names it or that cannot be attributed to one bus. */
unsigned tw_bus_errors(const tw_bus *b);

/* Attribute the error findings of d to the buses of s (docs/limits.md, "Fail closed"). A
 * finding that names a bus blocks that bus; every other error - one naming no bus (a row
 * without a usable ID, the file as a whole, a JSON `study` object), one naming an ID that is
 * not a bus, one counted but not kept (past TW_MAX_FINDINGS or out of memory) - blocks every
 * bus, since nothing shows that it does not concern the bus in hand. Returns the number of
 * errors that block every bus. Findings added later (label derivation) are not seen. */
size_t tw_bus_set_attribute(tw_bus_set *s, const tw_diags *d);

void tw_bus_set_free(tw_bus_set *s);

#endif
