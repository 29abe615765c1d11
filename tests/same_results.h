/*
 * same_results.h - whether two readings of a results file are the same, row by row and finding
 * by finding. Shared by the unit tests and the fuzzers: a CSV file read in pieces (as files
 * are) must read exactly as it does whole (as tests and fuzzers give it).
 */
#ifndef TW_SAME_RESULTS_H
#define TW_SAME_RESULTS_H

#include <string.h>

#include "base/tw_diag.h"
#include "read/tw_results.h"

static inline int tw_same_text(const char *a, const char *b)
{
    return a == b || (a && b && strcmp(a, b) == 0);
}

/* NULL when the two readings agree, else what differs first. */
static inline const char *tw_same_results(const tw_results *a, const tw_diags *da,
                                          const tw_results *b, const tw_diags *db)
{
    if (a->count != b->count)
        return "row count";
    for (size_t i = 0; i < a->count; i++) {
        const tw_row *x = &a->rows[i], *y = &b->rows[i];
        if (x->present != y->present || x->invalid != y->invalid || x->line != y->line ||
            x->errors != y->errors || x->warnings != y->warnings || !tw_same_text(x->path, y->path))
            return "a row's line, counts or present fields";
        for (int f = 0; f < TW_F_COUNT; f++) {
            if (!tw_row_has(x, (tw_field)f))
                continue;
            if (f < TW_TEXT_FIELDS ? !tw_same_text(x->text[f], y->text[f]) : x->num[f] != y->num[f])
                return "a row's value";
        }
    }
    if (da->count != db->count || da->errors != db->errors || da->warnings != db->warnings)
        return "finding count";
    for (size_t i = 0; i < da->count; i++) {
        const tw_diag *x = &da->items[i], *y = &db->items[i];
        if (x->severity != y->severity || x->line != y->line || !tw_same_text(x->file, y->file) ||
            !tw_same_text(x->path, y->path) || !tw_same_text(x->equipment_id, y->equipment_id) ||
            !tw_same_text(x->field, y->field) || !tw_same_text(x->message, y->message))
            return "a finding";
    }
    return NULL;
}

#endif
