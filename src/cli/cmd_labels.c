/* cmd_labels.c - `tagwright labels RESULTS --out labels.pdf`: one posting label per bus, from the
 * worst case across its scenarios, recorded in the site's registry.
 *
 * Fails closed: if any selected bus has an error, nothing is written (exit 1) unless --draft,
 * which prints watermarked drafts for those buses instead. */
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli/tw_cli.h"
#include "base/tw_date.h"
#include "base/tw_atomic.h"
#include "cli/tw_batch.h"
#include "rules/tw_label.h"
#include "write/tw_layout.h"
#include "write/tw_print_run.h"
#include "rules/tw_study.h"
#include "base/tw_util.h"

static const char labels_usage[] =
    "usage: tagwright labels RESULTS [--site SITE.json] [--out labels.pdf] [--manifest REG]\n"
    "                        [--bus ID]... [--draft] [--layout NAME|FILE] [--date YYYY-MM-DD]\n"
    "                        [--volume-size N] [--jobs N] [--reason TEXT]\n"
    "                        [--approved-by NAME --reason TEXT] [--columns MAP.json]\n"
    "  --out       PDF to write (default labels.pdf); written only if every label can be made\n"
    "  --manifest  the label registry to record in (default: site.json \"registry\")\n"
    "  --approved-by  who approved labels that lower the hazard (refused without it)\n"
    "  --reason    why these revisions were made; recorded with them\n"
    "  --bus       print only this equipment ID (repeatable)\n"
    "  --draft     print buses with errors as watermarked drafts, not for posting\n"
    "  --layout    shipped layout name or layout file (default 4x6)\n"
    "  --date      print date on labels, manifest and PDF metadata (default today, UTC)\n"
    "  --volume-size  labels per PDF volume (default 1000, at most 30000); more labels are\n"
    "              written as NAME-001.pdf, NAME-002.pdf, ...\n"
    "  --jobs      volumes drawn at once, each by a process of its own (default: one per\n"
    "              processor, at most 4); the output is the same whatever the number\n";

typedef struct {
    const char *results, *site, *out, *manifest, *layout, *reason, *approved_by;
    const char *columns;
    const char **buses;
    size_t bus_count;
    int draft;
    char date[11];
    size_t volume_size;     /* 0: the default */
    int jobs;               /* 0: one per processor, at most 4 */
} labels_args;

/* --jobs: a whole number from 1 to 64. */
static int parse_jobs(const char *s, int *out)
{
    char *end;
    long v = 0;
    if (*s >= '0' && *s <= '9')
        v = strtol(s, &end, 10);
    if (!(*s >= '0' && *s <= '9') || *end || v < 1 || v > 64)
        return tw_usage_error("labels", "--jobs: expected a whole number from 1 to 64, got '%s'",
                              s);
    *out = (int)v;
    return 0;
}

/* --volume-size: a whole number from 1 to TW_MAX_VOLUME_SIZE. */
static int parse_volume_size(const char *s, size_t *out)
{
    char *end;
    unsigned long long v = 0;
    if (*s >= '0' && *s <= '9')
        v = strtoull(s, &end, 10);
    if (!(*s >= '0' && *s <= '9') || *end || v < 1 || v > TW_MAX_VOLUME_SIZE)
        return tw_usage_error("labels", "--volume-size: expected a whole number of labels from "
                              "1 to %d, got '%s'", TW_MAX_VOLUME_SIZE, s);
    *out = (size_t)v;
    return 0;
}

static int parse_args(int argc, char **argv, labels_args *a)
{
    static const struct option opts[] = {
        {"site", required_argument, NULL, 's'},   {"out", required_argument, NULL, 'o'},
        {"manifest", required_argument, NULL, 'm'}, {"bus", required_argument, NULL, 'b'},
        {"draft", no_argument, NULL, 'd'},        {"layout", required_argument, NULL, 'l'},
        {"date", required_argument, NULL, 't'},   {"help", no_argument, NULL, 'h'},
        {"volume-size", required_argument, NULL, 'V'}, {"jobs", required_argument, NULL, 'j'},
        {"columns", required_argument, NULL, 'C'},
        {"reason", required_argument, NULL, 'r'}, {"approved-by", required_argument, NULL, 'A'},
        {NULL, 0, NULL, 0},
    };
    memset(a, 0, sizeof *a);
    a->out = "labels.pdf";
    tw_date_format(tw_date_today(), a->date);
    a->buses = calloc((size_t)argc, sizeof *a->buses);
    if (!a->buses)
        return tw_usage_error("labels", "out of memory");
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "s:o:m:b:dl:t:C:h", opts, NULL)) != -1) {
        switch (c) {
        case 's': a->site = optarg; break;
        case 'C': a->columns = optarg; break;
        case 'o': a->out = optarg; break;
        case 'm': a->manifest = optarg; break;
        case 'r': a->reason = optarg; break;
        case 'A': a->approved_by = optarg; break;
        case 'b': a->buses[a->bus_count++] = optarg; break;
        case 'd': a->draft = 1; break;
        case 'l': a->layout = optarg; break;
        case 't':
            if (tw_option_date(optarg, a->date) != 0)
                return tw_usage_error("labels", "--date: expected YYYY-MM-DD, got '%s'", optarg);
            break;
        case 'V':
            if (parse_volume_size(optarg, &a->volume_size) != 0)
                return TW_EXIT_USAGE;
            break;
        case 'j':
            if (parse_jobs(optarg, &a->jobs) != 0)
                return TW_EXIT_USAGE;
            break;
        case 'h': fputs(labels_usage, stdout); return -1;
        default: return tw_usage_error("labels", "unknown option; see 'tagwright labels --help'");
        }
    }
    if (optind != argc - 1)
        return tw_usage_error("labels", "expected one results file (CSV or JSON)");
    a->results = argv[optind];
    return tw_approval_ok("labels", a->approved_by, a->reason);
}

/* The buses to print: all, or those named with --bus (an unknown ID is an error finding). */
static const tw_bus **select_buses(tw_study *st, const labels_args *a, size_t *n,
                                   size_t *unknown)
{
    size_t want = a->bus_count ? a->bus_count : st->buses.count;
    const tw_bus **sel = calloc(want ? want : 1, sizeof *sel);
    if (!sel)
        return NULL;
    *n = 0;
    for (size_t i = 0; i < want; i++) {
        const tw_bus *b = a->bus_count ? tw_bus_set_find(&st->buses, a->buses[i])
                                       : &st->buses.buses[i];
        int again = 0; /* --bus X given twice prints one label */
        for (size_t k = 0; a->bus_count && b && k < *n; k++)
            again |= sel[k] == b;
        if (b && !again)
            sel[(*n)++] = b;
        else if (!b && ++*unknown)
            fprintf(stderr, "%s: error: %s: equipment_id: --bus names equipment that is not in "
                    "the results\n", a->results, a->buses[i]);
    }
    return sel;
}

static int is_selected(const tw_diag *g, const tw_bus **sel, size_t n, int all)
{
    if (all || !g->equipment_id)
        return 1;
    for (size_t i = 0; i < n; i++)
        if (!strcmp(g->equipment_id, sel[i]->equipment_id))
            return 1;
    return 0;
}

/* Findings for the selected buses (and those about no bus in particular) go to stderr. */
static void print_findings(const tw_diags *d, const tw_bus **sel, size_t n, int all)
{
    for (size_t i = 0; i < d->count; i++)
        if (is_selected(&d->items[i], sel, n, all))
            tw_diag_print(&d->items[i], stderr);
    tw_diags_print_unlisted(d, stderr);
}

/* "labels.pdf: 12 labels", or the first and last volume when the run was split. */
static void print_written(const labels_args *a, size_t n)
{
    size_t per = a->volume_size ? a->volume_size : TW_DEFAULT_VOLUME_SIZE;
    size_t vols = (n + per - 1) / per;
    if (vols <= 1) {
        printf("%s: %zu label%s\n", a->out, n, n == 1 ? "" : "s");
        return;
    }
    char *first = tw_volume_path(a->out, 1), *last = tw_volume_path(a->out, vols);
    printf("%s ... %s: %zu labels in %zu volumes of up to %zu\n", first ? first : a->out,
           last ? last : a->out, n, vols, per);
    free(first);
    free(last);
}

static int run(tw_study *st, const labels_args *a)
{
    char err[1024] = "";
    /* Every file the run reads or writes besides the PDF. The layout is a file only when it
     * names one; a shipped name never clashes. */
    const char *inputs[] = {a->results, a->site, a->manifest, a->layout, st->site.registry};
    if (tw_output_path_ok_n(a->out, inputs, 5, err, sizeof err) != 0) {
        fprintf(stderr, "tagwright labels: %s\n", err);
        return TW_EXIT_IO;
    }
    char *registry = NULL;
    size_t n = 0, unknown_bus = 0;
    const tw_bus **sel = select_buses(st, a, &n, &unknown_bus);
    tw_label *labels = calloc(n ? n : 1, sizeof *labels);
    tw_layout layout = {0};
    int rc = TW_EXIT_IO;
    if (!sel || !labels) {
        fprintf(stderr, "tagwright labels: out of memory\n");
        goto done;
    }
    size_t refused = tw_batch_derive(sel, n, &st->site, a->date, a->draft, labels, &st->diags);
    int layout_bad = tw_batch_layout(a->layout, &st->site, &layout, &st->diags) != 0;
    tw_diags_sort(&st->diags);
    print_findings(&st->diags, sel, n, a->bus_count == 0);
    if (refused || layout_bad || unknown_bus) {
        if (refused)
            fprintf(stderr, "tagwright labels: %zu bus%s with errors; no labels written (fix the "
                    "data, or use --draft for watermarked drafts not for posting)\n",
                    refused, refused == 1 ? "" : "es");
        rc = TW_EXIT_DATA;
        goto done;
    }
    if (n == 0) {
        fprintf(stderr, "tagwright labels: no buses in %s; nothing written\n", a->results);
        rc = TW_EXIT_DATA;
        goto done;
    }
    /* The labels hold copies of all they print: the rows can go before the PDFs are drawn,
     * which keeps the peak memory of a large run down (docs/performance.md). */
    tw_bus_set_free(&st->buses);
    tw_results_free(&st->results);
    free(sel);
    sel = NULL;
    registry = tw_registry_choose("labels", a->manifest, &st->site, a->out);
    tw_print_opts po = {a->out, registry, a->date, &layout, &st->site, a->reason,
                        a->approved_by, NULL, 0};
    rc = tw_print_labels_jobs(labels, n, &po, a->volume_size, a->jobs, err, sizeof err);
    if (rc != TW_EXIT_OK)
        fprintf(stderr, "tagwright labels: %s\n", err);
    else
        print_written(a, n);
done:
    free(registry);
    for (size_t i = 0; labels && i < n; i++)
        tw_label_free(&labels[i]);
    free(labels);
    free(sel);
    tw_layout_free(&layout);
    return rc;
}

int cmd_labels(int argc, char **argv)
{
    labels_args a;
    int rc = parse_args(argc, argv, &a);
    if (rc != 0) {
        free(a.buses);
        return rc < 0 ? TW_EXIT_OK : rc;
    }
    tw_study st;
    if (tw_study_load_mapped(&st, a.results, a.site, a.columns) != 0) {
        tw_diags_print(&st.diags, stderr);
        rc = st.unreadable ? TW_EXIT_IO : TW_EXIT_DATA;
    } else {
        rc = run(&st, &a);
    }
    tw_study_free(&st);
    free(a.buses);
    return rc;
}
