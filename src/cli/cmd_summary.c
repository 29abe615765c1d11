/* cmd_summary.c - `tagwright summary RESULTS --out FILE.pdf [--site SITE] [--date DATE]`: the
 * study summary PDF (tw_summary.h). Each bus is summarised as its label would read
 * (tw_label_derive) with its envelope (tw_envelope_bus).
 *
 * Data with errors gets no summary (findings on stderr, exit 1): a summary that quietly left
 * out a bus, or showed numbers that failed their checks, would mislead its reader.
 * Exit 0 fine, 1 bad data, 2 bad usage, 3 unreadable input or unwritable output. */
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "rules/tw_analysis.h"
#include "base/tw_atomic.h"
#include "cli/tw_cli.h"
#include "base/tw_date.h"
#include "rules/tw_label.h"
#include "rules/tw_study.h"
#include "write/tw_summary_pdf.h"

static const char summary_usage[] =
    "usage: tagwright summary RESULTS --out FILE.pdf [--site SITE.json] [--date YYYY-MM-DD]\n"
    "                         [--columns MAP.json]\n"
    "A PDF for the engineer and the owner: a table of every bus as its label reads, a bar\n"
    "chart of incident energy by bus with the site's PPE ratings, and a plot of incident\n"
    "energy against source fault current for each bus with a scenario sweep. --date sets the\n"
    "date printed and the PDF's dates (default: today, UTC).\n";

typedef struct {
    const char *results, *out, *site, *columns;
    char date[11];
} summary_opts;

static int parse_opts(int argc, char **argv, summary_opts *o, int *done)
{
    static const struct option opts[] = {
        {"out", required_argument, NULL, 'o'},
        {"site", required_argument, NULL, 's'},
        {"date", required_argument, NULL, 'd'},
        {"columns", required_argument, NULL, 'C'},
        {"help", no_argument, NULL, 'h'},
        {NULL, 0, NULL, 0},
    };
    *o = (summary_opts){0};
    *done = 0;
    tw_date_format(tw_date_today(), o->date);
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "o:s:d:C:h", opts, NULL)) != -1) {
        if (c == 'o')
            o->out = optarg;
        else if (c == 's')
            o->site = optarg;
        else if (c == 'C')
            o->columns = optarg;
        else if (c == 'd') {
            if (tw_option_date(optarg, o->date) != 0)
                return tw_usage_error("summary", "--date: expected YYYY-MM-DD, got '%s'",
                                      optarg);
        } else if (c == 'h') {
            fputs(summary_usage, stdout);
            *done = 1;
            return TW_EXIT_OK;
        } else
            return tw_usage_error("summary", "unknown option; see 'tagwright summary --help'");
    }
    if (optind != argc - 1)
        return tw_usage_error("summary", "expected one results file (CSV or JSON)");
    if (!o->out)
        return tw_usage_error("summary", "--out FILE.pdf is required");
    o->results = argv[optind];
    return TW_EXIT_OK;
}

/* Findings to stderr: every error, and warnings as a count (`tagwright check` lists them). */
static int report_findings(const tw_study *st, int loaded)
{
    if (st->diags.errors || loaded != 0) {
        tw_diags_print(&st->diags, stderr);
        fprintf(stderr, "tagwright summary: %zu error%s; no summary is written for data with "
                "errors\n", st->diags.errors, st->diags.errors == 1 ? "" : "s");
        return st->unreadable ? TW_EXIT_IO : TW_EXIT_DATA;
    }
    if (st->diags.warnings)
        fprintf(stderr, "tagwright summary: %zu warning%s; 'tagwright check' lists them\n",
                st->diags.warnings, st->diags.warnings == 1 ? "" : "s");
    return TW_EXIT_OK;
}

/* Labels and envelopes of every bus; errors in the derivation are findings in st->diags. */
static int derive_all(tw_study *st, const summary_opts *o, tw_label *labels, tw_envelope *env)
{
    for (size_t i = 0; i < st->buses.count; i++) {
        tw_label_derive(&st->buses.buses[i], &st->site, o->date, &labels[i], &st->diags);
        if (tw_envelope_bus(&st->buses.buses[i], NAN, &env[i]) != 0)
            return -1;
    }
    return 0;
}

static int write_summary(tw_study *st, const summary_opts *o)
{
    size_t n = st->buses.count ? st->buses.count : 1;
    tw_label *labels = calloc(n, sizeof *labels);
    tw_envelope *env = calloc(n, sizeof *env);
    int rc = TW_EXIT_OK;
    if (!labels || !env || derive_all(st, o, labels, env) != 0) {
        fprintf(stderr, "tagwright summary: out of memory\n");
        rc = TW_EXIT_IO;
    } else if (st->diags.errors) {
        rc = report_findings(st, 0);
    } else {
        tw_summary_input in = {&st->buses, env, labels, &st->site, o->results, o->date};
        char err[512];
        if (tw_summary_write(&in, o->out, err, sizeof err) != 0) {
            fprintf(stderr, "tagwright summary: %s\n", err);
            rc = TW_EXIT_IO;
        } else {
            printf("wrote %s: %zu bus%s\n", o->out, st->buses.count,
                   st->buses.count == 1 ? "" : "es");
        }
    }
    for (size_t i = 0; i < st->buses.count; i++) {
        if (labels)
            tw_label_free(&labels[i]);
        if (env)
            tw_envelope_free(&env[i]);
    }
    free(labels);
    free(env);
    return rc;
}

int cmd_summary(int argc, char **argv)
{
    summary_opts o;
    int done, rc = parse_opts(argc, argv, &o, &done);
    if (rc != TW_EXIT_OK || done)
        return rc;
    char err[512];
    const char *inputs[] = {o.results, o.site, NULL};
    if (tw_output_path_ok(o.out, inputs, err, sizeof err) != 0) {
        fprintf(stderr, "tagwright summary: %s\n", err);
        return TW_EXIT_IO;
    }
    tw_study st;
    int loaded = tw_study_load_mapped(&st, o.results, o.site, o.columns);
    rc = report_findings(&st, loaded);
    if (rc == TW_EXIT_OK)
        rc = write_summary(&st, &o);
    tw_study_free(&st);
    return rc;
}
