/* diag.c - the list of findings (see tw_diag.h). */
#include "base/tw_diag.h"

#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_util.h"

void tw_diags_init(tw_diags *d)
{
    memset(d, 0, sizeof *d);
}

void tw_diags_free(tw_diags *d)
{
    for (size_t i = 0; i < d->count; i++) {
        tw_diag *g = &d->items[i];
        free(g->file);
        free(g->path);
        free(g->equipment_id);
        free(g->field);
        free(g->message);
    }
    free(d->items);
    tw_diags_init(d);
}

static tw_diag *diag_slot(tw_diags *d)
{
    if (d->count >= TW_MAX_FINDINGS)
        return NULL;
    if (d->count == d->cap) {
        size_t cap = d->cap ? d->cap * 2 : 16;
        tw_diag *items = realloc(d->items, cap * sizeof *items);
        if (!items)
            return NULL;
        d->items = items;
        d->cap = cap;
    }
    tw_diag *g = &d->items[d->count++];
    memset(g, 0, sizeof *g);
    return g;
}

void tw_diag_vadd(tw_diags *d, tw_severity sev, const tw_source *src, const char *equipment_id,
                  const char *field, const char *fmt, va_list ap)
{
    if (sev == TW_ERROR)
        d->errors++;
    else
        d->warnings++;
    tw_diag *g = diag_slot(d);
    if (!g)
        return;
    g->severity = sev;
    if (src) {
        g->file = tw_strdup(src->file);
        g->line = src->line;
        g->path = tw_strdup(src->path);
    }
    g->equipment_id = tw_strdup(equipment_id);
    g->field = tw_strdup(field);
    g->message = tw_vasprintf(fmt, ap);
}

void tw_diag_add(tw_diags *d, tw_severity sev, const tw_source *src, const char *equipment_id,
                 const char *field, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    tw_diag_vadd(d, sev, src, equipment_id, field, fmt, ap);
    va_end(ap);
}

void tw_diag_print(const tw_diag *g, FILE *out)
{
    fputs(g->file ? g->file : "-", out);
    if (g->path)
        fprintf(out, ":%s", g->path);
    else if (g->line > 0)
        fprintf(out, ":%ld", g->line);
    fprintf(out, ": %s: ", g->severity == TW_ERROR ? "error" : "warning");
    if (g->equipment_id)
        fprintf(out, "%s: ", g->equipment_id);
    if (g->field)
        fprintf(out, "%s: ", g->field);
    fprintf(out, "%s\n", g->message ? g->message : "(out of memory)");
}

size_t tw_diags_unlisted(const tw_diags *d)
{
    size_t counted = d->errors + d->warnings;
    return counted > d->count ? counted - d->count : 0;
}

void tw_diags_print_unlisted(const tw_diags *d, FILE *out)
{
    size_t n = tw_diags_unlisted(d);
    if (n)
        fprintf(out, "... and %zu more finding%s, counted but not listed (at most %d are kept)\n",
                n, n == 1 ? "" : "s", TW_MAX_FINDINGS);
}

void tw_diags_print(const tw_diags *d, FILE *out)
{
    for (size_t i = 0; i < d->count; i++)
        tw_diag_print(&d->items[i], out);
    tw_diags_print_unlisted(d, out);
}

/* qsort is not stable, so ties are broken by the original position. */
typedef struct {
    tw_diag g;
    size_t pos;
} ranked;

static int by_file_line(const void *a, const void *b)
{
    const ranked *x = a, *y = b;
    int f = strcmp(x->g.file ? x->g.file : "", y->g.file ? y->g.file : "");
    if (f)
        return f;
    if (x->g.line != y->g.line)
        return x->g.line < y->g.line ? -1 : 1;
    return x->pos < y->pos ? -1 : x->pos > y->pos;
}

void tw_diags_sort(tw_diags *d)
{
    if (d->count < 2)
        return;
    ranked *r = malloc(d->count * sizeof *r);
    if (!r)
        return; /* unsorted is still correct, only less convenient */
    for (size_t i = 0; i < d->count; i++) {
        r[i].g = d->items[i];
        r[i].pos = i;
    }
    qsort(r, d->count, sizeof *r, by_file_line);
    for (size_t i = 0; i < d->count; i++)
        d->items[i] = r[i].g;
    free(r);
}
