/* scenario.c - rows grouped into buses, and the worst case of each (see tw_scenario.h). */
#include "rules/tw_scenario.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "rules/tw_rules.h"

/* The energy a row stands for (tw_row_rating), -1 when it has none. */
static double row_energy(const tw_row *r)
{
    double rating = tw_row_rating(r);
    return isnan(rating) ? -1 : rating;
}

static double row_boundary(const tw_row *r)
{
    return tw_row_has(r, TW_F_ARC_FLASH_BOUNDARY_MM) ? r->num[TW_F_ARC_FLASH_BOUNDARY_MM] : -1;
}

tw_row *tw_worst_case(tw_row *const *rows, size_t n)
{
    tw_row *worst = NULL;
    double worst_e = 0, worst_b = 0;
    for (size_t i = 0; i < n; i++) {
        tw_row *r = rows[i];
        if (!tw_row_has(r, TW_F_EQUIPMENT_ID))
            continue;
        double e = row_energy(r);
        if (e < 0)
            continue;
        double b = row_boundary(r);
        /* Strict comparisons: on a full tie the first row in input order stays. */
        if (!worst || e > worst_e || (e == worst_e && b > worst_b)) {
            worst = r;
            worst_e = e;
            worst_b = b;
        }
    }
    return worst;
}

/* Look up or add the bus for a row's ID; returns its position, or (size_t)-1 when out of
 * memory. */
static size_t bus_for(tw_bus_set *s, const char *id)
{
    size_t at;
    int had = tw_map_get_or_put(&s->index, id, s->count, &at);
    if (had < 0)
        return (size_t)-1;
    if (had)
        return at;
    s->buses[s->count].equipment_id = id;
    return s->count++;
}

int tw_bus_set_build(tw_results *r, tw_bus_set *out)
{
    memset(out, 0, sizeof *out);
    tw_map_init(&out->index);
    size_t n = r->count;
    size_t *owner = malloc((n ? n : 1) * sizeof *owner);
    out->buses = calloc(n ? n : 1, sizeof *out->buses);
    out->slots = malloc((n ? n : 1) * sizeof *out->slots);
    if (!owner || !out->buses || !out->slots)
        goto fail;
    /* Pass 1: which bus each row belongs to, and how many rows each bus has. A bus's
     * scenarios usually follow one another, so the previous row's bus is tried first. */
    const char *prev_id = NULL;
    size_t prev_bus = 0;
    for (size_t i = 0; i < n; i++) {
        const char *id = r->rows[i].text[TW_F_EQUIPMENT_ID];
        owner[i] = (size_t)-1;
        if (!id || !tw_row_has(&r->rows[i], TW_F_EQUIPMENT_ID))
            continue;
        size_t b = prev_id && strcmp(prev_id, id) == 0 ? prev_bus : bus_for(out, id);
        if (b == (size_t)-1)
            goto fail;
        owner[i] = b;
        out->buses[b].count++;
        prev_id = id;
        prev_bus = b;
    }
    /* Pass 2: each bus gets its stretch of slots, filled in input order. */
    size_t next = 0;
    for (size_t b = 0; b < out->count; b++) {
        out->buses[b].rows = out->slots + next;
        next += out->buses[b].count;
        out->buses[b].count = 0;
    }
    for (size_t i = 0; i < n; i++) {
        if (owner[i] == (size_t)-1)
            continue;
        tw_bus *bus = &out->buses[owner[i]];
        bus->rows[bus->count++] = &r->rows[i];
    }
    for (size_t b = 0; b < out->count; b++) {
        tw_bus *bus = &out->buses[b];
        bus->governing = tw_worst_case(bus->rows, bus->count);
        if (!bus->governing)
            bus->governing = bus->rows[0]; /* no row qualifies: validation reports why */
    }
    free(owner);
    return 0;
fail:
    free(owner);
    tw_bus_set_free(out);
    return -1;
}

const tw_bus *tw_bus_set_find(const tw_bus_set *s, const char *equipment_id)
{
    size_t at;
    if (!equipment_id || !tw_map_get(&s->index, equipment_id, &at))
        return NULL;
    return &s->buses[at];
}

unsigned tw_bus_errors(const tw_bus *b)
{
    unsigned n = b->other_errors;
    for (size_t i = 0; i < b->count; i++)
        n += b->rows[i]->errors;
    return n;
}

/* Adds without wrapping round to 0, which would post a bus. */
static unsigned add_capped(unsigned a, size_t b)
{
    return b >= (size_t)(~0u - a) ? ~0u : a + (unsigned)b;
}

size_t tw_bus_set_attribute(tw_bus_set *s, const tw_diags *d)
{
    size_t kept = 0, everywhere = 0;
    for (size_t i = 0; i < d->count; i++) {
        const tw_diag *g = &d->items[i];
        if (g->severity != TW_ERROR)
            continue;
        kept++;
        size_t at;
        if (g->equipment_id && tw_map_get(&s->index, g->equipment_id, &at))
            s->buses[at].other_errors = add_capped(s->buses[at].other_errors, 1);
        else
            everywhere++;
    }
    everywhere += d->errors > kept ? d->errors - kept : 0;
    for (size_t b = 0; everywhere && b < s->count; b++)
        s->buses[b].other_errors = add_capped(s->buses[b].other_errors, everywhere);
    return everywhere;
}

void tw_bus_set_free(tw_bus_set *s)
{
    free(s->buses);
    free(s->slots);
    tw_map_free(&s->index);
    memset(s, 0, sizeof *s);
}
