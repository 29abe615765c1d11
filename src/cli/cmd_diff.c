/* cmd_diff.c - `tagwright diff OLD NEW`: what changed between two study revisions, compared
 * by equipment ID on the label content each would print (not on raw columns): added, removed,
 * changed (field by field), unchanged. --out prints the labels of the added and changed buses
 * (the reprint batch) and records them in the registry as new revisions; buses in OLD and
 * absent from NEW are marked removed there (the take-down list).
 *
 * study_id, study_date and review_due are left out of the comparison: they change for every
 * bus with every study, and a label whose hazard content is unchanged stays accurate.
 * Exit 0 compared, 1 a bus had errors (or the batch was refused), 2 usage, 3 I/O. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_atomic.h"
#include "cli/tw_batch.h"
#include "cli/tw_cli.h"
#include "base/tw_date.h"
#include "rules/tw_lifecycle.h"
#include "write/tw_print_run.h"
#include "write/tw_registry.h"
#include "rules/tw_study.h"
#include "base/tw_util.h"

static const char diff_usage[] =
    "usage: tagwright diff OLD NEW [--site SITE.json] [--format text|json]\n"
    "                      [--out labels.pdf [--manifest REG] [--reason TEXT]\n"
    "                       [--approved-by NAME]]\n"
    "                      [--layout NAME|FILE] [--date YYYY-MM-DD] [--columns MAP.json]\n"
    "  OLD, NEW    two study results files (CSV or JSON), compared by equipment ID\n"
    "  --format    text (default) or json, on standard output\n"
    "  --out       print labels for the added and changed buses only (the reprint batch)\n"
    "  --manifest  the label registry (default: site.json \"registry\"): the batch is recorded\n"
    "              as new revisions and buses absent from NEW are marked removed\n"
    "  --approved-by  who approved revisions that lower the hazard (refused without it)\n"
    "study_id, study_date and review_due are not compared: they change with every study.\n";

typedef struct {
    const char *old_path, *new_path, *site, *out, *manifest, *layout, *reason, *approved_by;
    const char *columns;
    int json;
    char date[11];
} diff_args;

static int parse_args(int argc, char **argv, diff_args *a)
{
    static const struct option opts[] = {
        {"site", required_argument, NULL, 's'},   {"format", required_argument, NULL, 'f'},
        {"out", required_argument, NULL, 'o'},    {"manifest", required_argument, NULL, 'm'},
        {"reason", required_argument, NULL, 'r'}, {"layout", required_argument, NULL, 'l'},
        {"date", required_argument, NULL, 't'},   {"help", no_argument, NULL, 'h'},
        {"columns", required_argument, NULL, 'C'},
        {"approved-by", required_argument, NULL, 'A'},
        {NULL, 0, NULL, 0},
    };
    memset(a, 0, sizeof *a);
    tw_date_format(tw_date_today(), a->date);
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "s:f:o:m:r:l:t:C:h", opts, NULL)) != -1) {
        switch (c) {
        case 's': a->site = optarg; break;
        case 'C': a->columns = optarg; break;
        case 'f':
            if (strcmp(optarg, "text") && strcmp(optarg, "json"))
                return tw_usage_error("diff", "--format: expected text or json, got '%s'", optarg);
            a->json = !strcmp(optarg, "json");
            break;
        case 'o': a->out = optarg; break;
        case 'm': a->manifest = optarg; break;
        case 'r': a->reason = optarg; break;
        case 'A': a->approved_by = optarg; break;
        case 'l': a->layout = optarg; break;
        case 't':
            if (tw_option_date(optarg, a->date) != 0)
                return tw_usage_error("diff", "--date: expected YYYY-MM-DD, got '%s'", optarg);
            break;
        case 'h': fputs(diff_usage, stdout); return -1;
        default: return tw_usage_error("diff", "unknown option; see 'tagwright diff --help'");
        }
    }
    if (optind != argc - 2)
        return tw_usage_error("diff", "expected two results files, OLD and NEW");
    if ((a->manifest || a->reason || a->approved_by) && !a->out)
        return tw_usage_error("diff", "--manifest, --reason and --approved-by record printed "
                              "labels; give --out as well");
    a->old_path = argv[optind];
    a->new_path = argv[optind + 1];
    return a->approved_by ? tw_approval_ok("diff", a->approved_by, a->reason) : 0;
}

/* ---- one side: a study and the label of every bus ----------------------------------------- */

typedef struct {
    const char *path;
    tw_study st;
    tw_label *labels;           /* labels[i] for st.buses.buses[i] */
} side;

/* 1 when bus i has no posting label (errors in the data or in its derivation). */
static int side_bad(const side *s, size_t i)
{
    return s->labels[i].draft || tw_bus_errors(&s->st.buses.buses[i]) > 0;
}

static int side_load(side *s, const char *path, const char *site, const char *columns,
                     const char *date)
{
    s->path = path;
    if (tw_study_load_mapped(&s->st, path, site, columns) != 0)
        return s->st.unreadable ? TW_EXIT_IO : TW_EXIT_DATA;
    size_t n = s->st.buses.count;
    const tw_bus **buses = calloc(n ? n : 1, sizeof *buses);
    s->labels = calloc(n ? n : 1, sizeof *s->labels);
    if (!buses || !s->labels) {
        free(buses);
        fprintf(stderr, "tagwright diff: out of memory\n");
        return TW_EXIT_IO;
    }
    for (size_t i = 0; i < n; i++)
        buses[i] = &s->st.buses.buses[i];
    tw_batch_derive(buses, n, &s->st.site, date, 0, s->labels, &s->st.diags);
    free(buses);
    return TW_EXIT_OK;
}

static void side_free(side *s)
{
    tw_batch_free(s->labels, s->st.buses.count);
    tw_study_free(&s->st);
}

/* The study ID and date of the first bus that has them, for the heading. */
static const char *side_value(const side *s, tw_label_key k)
{
    for (size_t i = 0; i < s->st.buses.count; i++)
        if (s->labels[i].value[k])
            return s->labels[i].value[k];
    return "(none)";
}

/* ---- the comparison ----------------------------------------------------------------------- */

typedef enum { K_ADDED, K_REMOVED, K_CHANGED, K_UNCHANGED, K_ERRORS, K_KINDS } kind;

static const char *const kind_name[K_KINDS] = {"added", "removed", "changed", "unchanged",
                                               "errors"};

typedef struct {
    kind k;
    const char *id;
    const tw_label *ol, *nl;    /* NULL when the bus is not on that side */
    int old_bad, new_bad;
} entry;

typedef struct {
    entry *e;
    size_t n;
    size_t count[K_KINDS];
} comparison;

static kind classify(entry *e)
{
    if (!e->ol)
        return e->new_bad ? K_ERRORS : K_ADDED;
    if (!e->nl)
        return K_REMOVED;
    if (e->new_bad)
        return K_ERRORS;
    if (e->old_bad)
        return K_CHANGED;   /* the old label cannot be derived: reprinting is the safe side */
    tw_field_change c[TW_L_COUNT];
    return tw_label_compare(e->ol, e->nl, TW_COMPARE_SKIP_RECORD, c) ? K_CHANGED : K_UNCHANGED;
}

static int compare(const side *o, const side *nw, comparison *c)
{
    memset(c, 0, sizeof *c);
    c->e = calloc(o->st.buses.count + nw->st.buses.count + 1, sizeof *c->e);
    if (!c->e)
        return -1;
    for (size_t i = 0; i < nw->st.buses.count; i++) {
        entry *e = &c->e[c->n++];
        const tw_bus *nb = &nw->st.buses.buses[i];
        const tw_bus *ob = tw_bus_set_find(&o->st.buses, nb->equipment_id);
        e->id = nb->equipment_id;
        e->nl = &nw->labels[i];
        e->new_bad = side_bad(nw, i);
        if (ob) {
            size_t j = (size_t)(ob - o->st.buses.buses);
            e->ol = &o->labels[j];
            e->old_bad = side_bad(o, j);
        }
    }
    for (size_t j = 0; j < o->st.buses.count; j++) {
        const tw_bus *ob = &o->st.buses.buses[j];
        if (tw_bus_set_find(&nw->st.buses, ob->equipment_id))
            continue;
        entry *e = &c->e[c->n++];
        e->id = ob->equipment_id;
        e->ol = &o->labels[j];
        e->old_bad = side_bad(o, j);
    }
    for (size_t i = 0; i < c->n; i++)
        c->count[c->e[i].k = classify(&c->e[i])]++;
    return 0;
}

/* ---- text and JSON ------------------------------------------------------------------------ */

static const char *or_none(const char *s)
{
    return s ? s : "(none)";
}

static void print_entry_text(const entry *e)
{
    printf("%-10s %s", kind_name[e->k], e->id);
    if (e->k == K_ADDED)
        printf("  (%s, %s)", or_none(e->nl->value[TW_L_SIGNAL_WORD]),
               e->nl->value[TW_L_INCIDENT_ENERGY] ? e->nl->value[TW_L_INCIDENT_ENERGY]
                                                  : or_none(e->nl->value[TW_L_MIN_ARC_RATING]));
    if (e->k == K_ERRORS)
        printf("  (errors in %s; see the findings)", e->ol && e->old_bad ? "OLD and NEW" : "NEW");
    if (e->k == K_CHANGED && e->old_bad)
        printf("  (errors in OLD: not comparable, reprinted)");
    printf("\n");
    if (e->k != K_CHANGED || e->old_bad)
        return;
    tw_field_change c[TW_L_COUNT];
    size_t n = tw_label_compare(e->ol, e->nl, TW_COMPARE_SKIP_RECORD, c);
    for (size_t i = 0; i < n; i++)
        printf("           %s: %s -> %s\n", tw_label_key_name(c[i].key), or_none(c[i].old_value),
               or_none(c[i].new_value));
}

static void print_text(const diff_args *a, const side *o, const side *nw, const comparison *c)
{
    printf("old: %s (study %s, %s)\n", a->old_path, side_value(o, TW_L_STUDY_ID),
           side_value(o, TW_L_STUDY_DATE));
    printf("new: %s (study %s, %s)\n", a->new_path, side_value(nw, TW_L_STUDY_ID),
           side_value(nw, TW_L_STUDY_DATE));
    printf("compared on label content; study_id, study_date and review_due are not compared\n\n");
    for (int k = 0; k < K_KINDS; k++)
        for (size_t i = 0; i < c->n; i++)
            if (c->e[i].k == (kind)k)
                print_entry_text(&c->e[i]);
    printf("\n%zu added, %zu removed, %zu changed, %zu unchanged, %zu with errors\n",
           c->count[K_ADDED], c->count[K_REMOVED], c->count[K_CHANGED], c->count[K_UNCHANGED],
           c->count[K_ERRORS]);
}

static cJSON *side_json(const char *path, const side *s)
{
    cJSON *o = cJSON_CreateObject();
    if (o && (!cJSON_AddStringToObject(o, "file", path) ||
              !cJSON_AddStringToObject(o, "study_id", side_value(s, TW_L_STUDY_ID)) ||
              !cJSON_AddStringToObject(o, "study_date", side_value(s, TW_L_STUDY_DATE)))) {
        cJSON_Delete(o);
        return NULL;
    }
    return o;
}

static cJSON *text_or_null(const char *s)
{
    return s ? cJSON_CreateString(s) : cJSON_CreateNull();
}

static cJSON *changed_json(const entry *e)
{
    cJSON *o = cJSON_CreateObject(), *list = o ? cJSON_AddArrayToObject(o, "changes") : NULL;
    if (!list || !cJSON_AddStringToObject(o, "equipment_id", e->id) ||
        !cJSON_AddBoolToObject(o, "old_has_errors", e->old_bad)) {
        cJSON_Delete(o);
        return NULL;
    }
    tw_field_change c[TW_L_COUNT];
    size_t n = e->old_bad ? 0 : tw_label_compare(e->ol, e->nl, TW_COMPARE_SKIP_RECORD, c);
    for (size_t i = 0; i < n; i++) {
        cJSON *f = cJSON_CreateObject();
        if (!f || !cJSON_AddItemToArray(list, f) ||
            !cJSON_AddStringToObject(f, "field", tw_label_key_name(c[i].key)) ||
            !cJSON_AddItemToObject(f, "old", text_or_null(c[i].old_value)) ||
            !cJSON_AddItemToObject(f, "new", text_or_null(c[i].new_value))) {
            cJSON_Delete(o);
            return NULL;
        }
    }
    return o;
}

static int print_json(const diff_args *a, const side *o, const side *nw, const comparison *c)
{
    cJSON *root = cJSON_CreateObject();
    int bad = !root || !cJSON_AddItemToObject(root, "old", side_json(a->old_path, o)) ||
              !cJSON_AddItemToObject(root, "new", side_json(a->new_path, nw));
    cJSON *lists[K_KINDS] = {0}, *summary = root ? cJSON_AddObjectToObject(root, "summary") : NULL;
    for (int k = 0; !bad && k < K_KINDS; k++) {
        lists[k] = cJSON_AddArrayToObject(root, kind_name[k]);
        bad = !lists[k] || !summary ||
              !cJSON_AddNumberToObject(summary, kind_name[k], (double)c->count[k]);
    }
    for (size_t i = 0; !bad && i < c->n; i++) {
        const entry *e = &c->e[i];
        cJSON *item = e->k == K_CHANGED ? changed_json(e) : cJSON_CreateString(e->id);
        bad = !item || !cJSON_AddItemToArray(lists[e->k], item);
    }
    char *text = bad ? NULL : cJSON_Print(root);
    cJSON_Delete(root);
    if (!text) {
        fprintf(stderr, "tagwright diff: out of memory\n");
        return TW_EXIT_IO;
    }
    printf("%s\n", text);
    free(text);
    return TW_EXIT_OK;
}

/* ---- the reprint batch -------------------------------------------------------------------- */

/* Buses absent from NEW leave the registry as removed without a label to print. */
static int record_removed_only(const diff_args *a, const char *registry, const char *const *removed,
                               size_t n, const char *reason)
{
    char err[1024] = "";
    tw_registry reg;
    int rc = tw_registry_open(&reg, registry, 1, err, sizeof err);
    if (rc == TW_EXIT_OK)
        rc = tw_registry_remove(&reg, removed, n, a->date, reason, err, sizeof err);
    tw_registry_close(&reg);
    if (rc != TW_EXIT_OK)
        fprintf(stderr, "tagwright diff: %s\n", err);
    return rc;
}

static int print_batch(const diff_args *a, side *nw, const side *o, const comparison *c)
{
    char err[1024] = "";
    const char *inputs[] = {a->old_path, a->new_path, a->site, a->manifest, a->layout,
                            nw->st.site.registry};
    if (tw_output_path_ok_n(a->out, inputs, 6, err, sizeof err) != 0) {
        fprintf(stderr, "tagwright diff: %s\n", err);
        return TW_EXIT_IO;
    }
    if (c->count[K_ERRORS] || nw->st.study_errors) {
        fprintf(stderr, "tagwright diff: %zu bus%s in %s with errors%s; no labels written\n",
                c->count[K_ERRORS], c->count[K_ERRORS] == 1 ? "" : "es", a->new_path,
                nw->st.study_errors ? ", and errors that concern no one bus" : "");
        return TW_EXIT_DATA;
    }
    size_t n = c->count[K_ADDED] + c->count[K_CHANGED], nremoved = c->count[K_REMOVED];
    tw_label *batch = calloc(n ? n : 1, sizeof *batch);
    const char **removed = calloc(nremoved ? nremoved : 1, sizeof *removed);
    tw_layout layout = {0};
    char *reason = a->reason ? tw_strdup(a->reason)
                             : tw_asprintf("study revision %s -> %s", side_value(o, TW_L_STUDY_ID),
                                           side_value(nw, TW_L_STUDY_ID));
    char *registry = n || nremoved ? tw_registry_choose("diff", a->manifest, &nw->st.site, a->out)
                                   : NULL;
    int rc = TW_EXIT_IO;
    if (!batch || !removed || !reason || ((n || nremoved) && !registry)) {
        snprintf(err, sizeof err, "out of memory");
        goto done;
    }
    size_t m = 0, r = 0;
    for (size_t i = 0; i < c->n; i++) {
        if (c->e[i].k == K_ADDED || c->e[i].k == K_CHANGED)
            batch[m++] = *c->e[i].nl;    /* shallow: the side owns the strings */
        else if (c->e[i].k == K_REMOVED)
            removed[r++] = c->e[i].id;
    }
    if (n == 0) {
        fprintf(stderr, "tagwright diff: nothing added or changed; %s not written\n", a->out);
        rc = nremoved ? record_removed_only(a, registry, removed, nremoved, reason) : TW_EXIT_OK;
        if (rc == TW_EXIT_OK && nremoved)
            fprintf(stderr, "%s: %zu bus%s marked removed\n", registry, nremoved,
                    nremoved == 1 ? "" : "es");
        goto done;
    }
    if (tw_batch_layout(a->layout, &nw->st.site, &layout, &nw->st.diags) != 0) {
        tw_diags_print(&nw->st.diags, stderr);
        rc = TW_EXIT_DATA;
        goto done;
    }
    tw_print_opts po = {a->out, registry, a->date, &layout, &nw->st.site, reason,
                        a->approved_by, removed, nremoved};
    rc = tw_print_labels(batch, m, &po, err, sizeof err);
    if (rc == TW_EXIT_OK)
        fprintf(stderr, "%s: %zu label%s (added and changed); %zu bus%s marked removed\n", a->out,
                m, m == 1 ? "" : "s", nremoved, nremoved == 1 ? "" : "es");
done:
    if (rc != TW_EXIT_OK && err[0])
        fprintf(stderr, "tagwright diff: %s\n", err);
    free(batch);
    free(removed);
    free(reason);
    free(registry);
    tw_layout_free(&layout);
    return rc;
}

/* Errors make a bus incomparable; they go to stderr (warnings are `check`'s business). */
static void print_errors(side *s)
{
    tw_diags_sort(&s->st.diags);
    for (size_t i = 0; i < s->st.diags.count; i++)
        if (s->st.diags.items[i].severity == TW_ERROR)
            tw_diag_print(&s->st.diags.items[i], stderr);
}

int cmd_diff(int argc, char **argv)
{
    diff_args a;
    int rc = parse_args(argc, argv, &a);
    if (rc != 0)
        return rc < 0 ? TW_EXIT_OK : rc;
    side o = {0}, nw = {0};
    comparison c = {0};
    rc = side_load(&o, a.old_path, a.site, a.columns, a.date);
    if (rc == TW_EXIT_OK)
        rc = side_load(&nw, a.new_path, a.site, a.columns, a.date);
    print_errors(&o);
    print_errors(&nw);
    if (rc != TW_EXIT_OK)
        goto done;
    if (compare(&o, &nw, &c) != 0) {
        fprintf(stderr, "tagwright diff: out of memory\n");
        rc = TW_EXIT_IO;
        goto done;
    }
    if (a.json)
        rc = print_json(&a, &o, &nw, &c);
    else
        print_text(&a, &o, &nw, &c);
    if (rc == TW_EXIT_OK && a.out)
        rc = print_batch(&a, &nw, &o, &c);
    int any_errors = c.count[K_ERRORS] > 0 || o.st.study_errors || nw.st.study_errors;
    for (size_t i = 0; i < c.n; i++)
        any_errors |= c.e[i].old_bad;
    if (rc == TW_EXIT_OK && any_errors)
        rc = TW_EXIT_DATA;
done:
    free(c.e);
    side_free(&o);
    side_free(&nw);
    return rc;
}
