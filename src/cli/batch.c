/* batch.c - derive a list of labels for the commands that print them (see tw_batch.h). */
#include "cli/tw_batch.h"

#include <stdlib.h>
#include <string.h>

size_t tw_batch_derive(const tw_bus *const *buses, size_t n, const tw_site *site,
                       const char *print_date, int draft, tw_label *labels, tw_diags *d)
{
    size_t refused = 0;
    for (size_t i = 0; i < n; i++) {
        int bad = tw_label_derive(buses[i], site, print_date, &labels[i], d) != 0;
        bad |= tw_bus_errors(buses[i]) > 0;
        if (bad && draft) {
            labels[i].draft = 1;
            tw_label_rehash(&labels[i]);
        } else if (bad) {
            refused++;
        }
    }
    return refused;
}

int tw_batch_layout(const char *name, const tw_site *site, tw_layout *l, tw_diags *d)
{
    if (!name)
        name = site->layout;
    if (!name)
        return tw_layout_default(l);
    return tw_layout_load(name, tw_layouts_dir(), l, d);
}

static int concerns(const tw_diag *g, const tw_bus *const *buses, size_t n)
{
    if (!g->equipment_id)
        return 1;
    for (size_t i = 0; i < n; i++)
        if (buses[i]->equipment_id && !strcmp(g->equipment_id, buses[i]->equipment_id))
            return 1;
    return 0;
}

void tw_batch_print_findings(const tw_diags *d, const tw_bus *const *buses, size_t n, FILE *out)
{
    for (size_t i = 0; i < d->count; i++)
        if (concerns(&d->items[i], buses, n))
            tw_diag_print(&d->items[i], out);
}

void tw_batch_free(tw_label *labels, size_t n)
{
    for (size_t i = 0; labels && i < n; i++)
        tw_label_free(&labels[i]);
    free(labels);
}
