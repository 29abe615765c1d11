/* cmd_reprint.c - `tagwright reprint RESULTS --bus ID --clearing-time S | --incident-energy E`:
 * one label revised after a protective-device setting change, recorded in the manifest as a
 * new revision that supersedes the posted one.
 *
 * The governing scenario's incident energy is rescaled in proportion to the clearing time
 * (or replaced by a value from a re-run study), the arc-flash boundary is recomputed from it,
 * and the label is derived again from the revised scenario so that everything that follows
 * from the energy (signal word, PPE level, minimum arc rating) follows. docs/lifecycle.md.
 * Exit 0 printed (warnings allowed), 1 bad data, 2 usage, 3 I/O. */
#include <getopt.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "rules/tw_analysis.h"
#include "base/tw_atomic.h"
#include "cli/tw_batch.h"
#include "cli/tw_cli.h"
#include "base/tw_date.h"
#include "rules/tw_lifecycle.h"
#include "write/tw_print_run.h"
#include "rules/tw_study.h"
#include "base/tw_util.h"

static const char reprint_usage[] =
    "usage: tagwright reprint RESULTS --bus ID (--clearing-time S | --incident-energy E)\n"
    "                         [--site SITE.json] [--out label.pdf] [--manifest REG]\n"
    "                         [--reason TEXT] [--approved-by NAME] [--layout NAME|FILE]\n"
    "                         [--date YYYY-MM-DD] [--columns MAP.json]\n"
    "  --bus              the equipment ID whose label is revised\n"
    "  --clearing-time    new clearing time of its protective device, s: the energy of the\n"
    "                     governing scenario is rescaled by new time / study time\n"
    "  --incident-energy  new incident energy, cal/cm2, from a re-run study\n"
    "  --out              PDF to write (default label.pdf)\n"
    "  --manifest         the label registry (default: site.json \"registry\"); the revision it\n"
    "                     holds for the bus is marked superseded\n"
    "  --reason           why (e.g. a change order number); recorded with the new revision\n"
    "  --approved-by      who approved a revision that lowers the hazard (refused without it;\n"
    "                     needs --reason)\n"
    "A re-run study is the proper source of new values; rescaling is an estimate.\n";

typedef struct {
    const char *results, *site, *out, *manifest, *layout, *bus, *reason, *approved_by;
    const char *columns;
    double clearing_time;       /* 0: not given */
    double incident_energy;     /* 0: not given */
    const char *given;          /* the option and value as given, for messages */
    char given_buf[96];
    char date[11];
} reprint_args;

/* A number option of at least min (the value below which the label would print 0: half its
 * last printed digit, as for the results file, docs/checks.md); -1 (usage error printed)
 * otherwise. Keeps the option as given for the messages about the values it makes. */
static int positive_option(reprint_args *a, const char *name, const char *value, double min,
                           double *out)
{
    if (tw_parse_double(value, out) != 0 || !(*out >= min) || !isfinite(*out)) {
        tw_usage_error("reprint", "--%s: expected a number of at least %g (smaller prints as 0 "
                       "on the label), got '%s'", name, min, value);
        return -1;
    }
    snprintf(a->given_buf, sizeof a->given_buf, "--%s %s", name, value);
    a->given = a->given_buf;
    return 0;
}

static int parse_args(int argc, char **argv, reprint_args *a)
{
    static const struct option opts[] = {
        {"bus", required_argument, NULL, 'b'},       {"clearing-time", required_argument, NULL, 'c'},
        {"incident-energy", required_argument, NULL, 'e'}, {"site", required_argument, NULL, 's'},
        {"out", required_argument, NULL, 'o'},       {"manifest", required_argument, NULL, 'm'},
        {"reason", required_argument, NULL, 'r'},    {"layout", required_argument, NULL, 'l'},
        {"date", required_argument, NULL, 't'},      {"help", no_argument, NULL, 'h'},
        {"columns", required_argument, NULL, 'C'},
        {"approved-by", required_argument, NULL, 'A'},
        {NULL, 0, NULL, 0},
    };
    memset(a, 0, sizeof *a);
    a->out = "label.pdf";
    tw_date_format(tw_date_today(), a->date);
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "b:c:e:s:o:m:r:l:t:C:h", opts, NULL)) != -1) {
        switch (c) {
        case 'b': a->bus = optarg; break;
        case 'c':
            if (positive_option(a, "clearing-time", optarg, 0.0005, &a->clearing_time) != 0)
                return TW_EXIT_USAGE;
            break;
        case 'e':
            if (positive_option(a, "incident-energy", optarg, 0.05, &a->incident_energy) != 0)
                return TW_EXIT_USAGE;
            break;
        case 's': a->site = optarg; break;
        case 'C': a->columns = optarg; break;
        case 'o': a->out = optarg; break;
        case 'm': a->manifest = optarg; break;
        case 'r': a->reason = optarg; break;
        case 'A': a->approved_by = optarg; break;
        case 'l': a->layout = optarg; break;
        case 't':
            if (tw_option_date(optarg, a->date) != 0)
                return tw_usage_error("reprint", "--date: expected YYYY-MM-DD, got '%s'", optarg);
            break;
        case 'h': fputs(reprint_usage, stdout); return -1;
        default: return tw_usage_error("reprint", "unknown option; see 'tagwright reprint --help'");
        }
    }
    if (optind != argc - 1)
        return tw_usage_error("reprint", "expected one results file (CSV or JSON)");
    a->results = argv[optind];
    if (!a->bus)
        return tw_usage_error("reprint", "--bus ID is required: the equipment whose label is "
                              "revised");
    if ((a->clearing_time > 0) == (a->incident_energy > 0))
        return tw_usage_error("reprint", "give exactly one of --clearing-time S (a setting "
                              "change) or --incident-energy E (from a re-run study)");
    return tw_approval_ok("reprint", a->approved_by, a->reason);
}

/* ---- the revised scenario ---------------------------------------------------------------- */

/* The value of a numeric field when it is usable (read, finite, above 0). */
static int row_number(const tw_row *r, tw_field f, double *v)
{
    if (!tw_row_has(r, f) || ((r->invalid >> f) & 1u) || !isfinite(r->num[f]) || !(r->num[f] > 0))
        return -1;
    *v = r->num[f];
    return 0;
}

static void row_error(tw_diags *d, const tw_row *r, const char *eq, tw_field f, const char *msg)
{
    if (!d)
        return;
    char path[512] = "";
    tw_source src = tw_row_source(r, f, path, sizeof path);
    tw_diag_add(d, TW_ERROR, &src, eq, tw_field_display(f), "%s", msg);
}

/* The distance exponent: the study's, else IEEE 1584-2002 Table 4 for the equipment type. */
static int exponent_of(const tw_row *g, const char *eq, double *x, tw_diags *d)
{
    *x = tw_row_distance_exponent(g, NULL);
    if (*x > 0)   /* NAN when neither the study nor the table gives one */
        return 0;
    row_error(d, g, eq, TW_F_DISTANCE_EXPONENT,
              "missing, and IEEE 1584-2002 Table 4 has no exponent for this equipment type and "
              "voltage; give distance_exponent to recompute the arc-flash boundary");
    return -1;
}

/* Rescale one scenario as asked. 0, or -1 with findings (none when d is NULL). */
static int rescale(const reprint_args *a, const tw_row *g, const char *eq, tw_rescale *r,
                   tw_diags *d)
{
    double energy = 0, wd, x, t = 0;
    int by_time = a->clearing_time > 0;
    if (row_number(g, TW_F_INCIDENT_ENERGY_CAL, &energy) != 0 && by_time) {
        row_error(d, g, eq, TW_F_INCIDENT_ENERGY_CAL,
                  "the governing scenario has no usable incident energy (a PPE category cannot "
                  "be rescaled); give --incident-energy from a re-run study");
        return -1;
    }
    if (row_number(g, TW_F_WORKING_DISTANCE_MM, &wd) != 0) {
        row_error(d, g, eq, TW_F_WORKING_DISTANCE_MM, "missing; the boundary is recomputed at "
                  "the working distance of the incident energy");
        return -1;
    }
    if (exponent_of(g, eq, &x, d) != 0)
        return -1;
    int has_time = row_number(g, TW_F_CLEARING_TIME_S, &t) == 0;
    if (by_time && !has_time) {
        row_error(d, g, eq, TW_F_CLEARING_TIME_S,
                  "missing in the governing scenario; rescaling needs the study's clearing time "
                  "(new energy = study energy x new time / study time), or give "
                  "--incident-energy from a re-run study");
        return -1;
    }
    int rc = by_time ? tw_rescale_by_time(energy, t, a->clearing_time, wd, x, r)
                     : tw_rescale_by_energy(energy, a->incident_energy, has_time ? t : 0, wd, x, r);
    if (rc != 0)
        row_error(d, g, eq, TW_F_INCIDENT_ENERGY_CAL, "the revised values are out of range "
                  "(the boundary cannot be computed from them)");
    return rc;
}

/*
 * The bus as it stands after the change. By clearing time: every scenario the study gives the
 * same clearing time as the governing one is cleared by the same device in the same time
 * (definite time or instantaneous), so the new time applies to it too; scenarios with other
 * times are kept as the study gave them, and if one of them now governs the label shows it
 * (with a warning), since its time under the new settings is unknown. By energy from a re-run
 * study: the revised scenario stands for the bus alone.
 */
typedef struct {
    tw_row *copies;             /* every scenario, revised where the change applies */
    tw_row **rows;
    unsigned char *revised;     /* 1 for the copies the change was applied to */
    size_t rescaled;
    tw_bus bus;
} revised_bus;

static void revised_bus_free(revised_bus *rb)
{
    free(rb->copies);
    free(rb->rows);
    free(rb->revised);
    memset(rb, 0, sizeof *rb);
}

static void set_number(tw_row *r, tw_field f, double v)
{
    r->num[f] = v;
    r->present |= 1u << f;
    r->invalid &= ~(1u << f);
}

static void apply(tw_row *row, const tw_rescale *r)
{
    set_number(row, TW_F_INCIDENT_ENERGY_CAL, r->new_energy_cal);
    set_number(row, TW_F_ARC_FLASH_BOUNDARY_MM, r->new_boundary_mm);
    set_number(row, TW_F_DISTANCE_EXPONENT, r->exponent);
    if (r->new_time_s > 0)
        set_number(row, TW_F_CLEARING_TIME_S, r->new_time_s);
    /* A category chosen under the old settings no longer applies: the label shows energy. */
    row->present &= ~(1u << TW_F_PPE_CATEGORY);
    row->invalid &= ~(1u << TW_F_PPE_CATEGORY);
}

/* 1 when row is cleared in the same time as the governing scenario was. */
static int same_time(const tw_row *row, double t)
{
    double rt;
    return row_number(row, TW_F_CLEARING_TIME_S, &rt) == 0 && fabs(rt - t) <= 1e-9 * t;
}

static int revise_bus(const reprint_args *a, const tw_bus *b, const tw_rescale *r,
                      revised_bus *out)
{
    memset(out, 0, sizeof *out);
    out->copies = calloc(b->count, sizeof *out->copies);
    out->rows = calloc(b->count, sizeof *out->rows);
    out->revised = calloc(b->count, 1);
    if (!out->copies || !out->rows || !out->revised)
        return -1;
    size_t n = 0;
    for (size_t i = 0; i < b->count; i++) {
        const tw_row *row = b->rows[i];
        tw_rescale mine;
        int is_gov = row == b->governing;
        if (!is_gov && a->incident_energy > 0)
            continue;
        out->copies[n] = *row;
        if (is_gov || (same_time(row, r->old_time_s) && rescale(a, row, NULL, &mine, NULL) == 0)) {
            apply(&out->copies[n], is_gov ? r : &mine);
            out->revised[n] = 1;
            out->rescaled++;
        }
        out->rows[n] = &out->copies[n];
        n++;
    }
    out->bus.equipment_id = b->equipment_id;
    out->bus.rows = out->rows;
    out->bus.count = n;
    out->bus.governing = tw_worst_case(out->rows, n);
    return out->bus.governing ? 0 : -1;
}

/* 1 when the scenario that governs after the change is one the change was applied to. */
static int governs_revised(const revised_bus *rb)
{
    return rb->revised[rb->bus.governing - rb->copies];
}

/* ---- what the label and the manifest say -------------------------------------------------- */

static const char *text_or(const tw_label *l, tw_label_key k, const char *dflt)
{
    return l->value[k] ? l->value[k] : dflt;
}

/* Short enough for the study region beside the QR code; the manifest keeps the details. */
static char *revision_note(const reprint_args *a, const tw_rescale *r)
{
    if (a->clearing_time > 0)
        return tw_asprintf("revised from the study values: clearing time %g s -> %g s (setting "
                           "change), energy rescaled", r->old_time_s, r->new_time_s);
    return tw_strdup("revised from the study values: incident energy from a re-run study");
}

static char *manifest_reason(const reprint_args *a, const tw_rescale *r, const revised_bus *rb,
                             const tw_label *old_l, const tw_label *new_l)
{
    char what[1024];
    const char *e_old = text_or(old_l, TW_L_INCIDENT_ENERGY, "(none)");
    const char *e_new = text_or(new_l, TW_L_INCIDENT_ENERGY, "(none)");
    const char *scen = text_or(new_l, TW_L_SCENARIO, "(unnamed)");
    if (a->clearing_time > 0)
        snprintf(what, sizeof what, "protective-device setting change: clearing time %g s -> "
                 "%g s, %zu of %zu scenarios rescaled; incident energy %s -> %s (scenario %s)",
                 r->old_time_s, r->new_time_s, rb->rescaled, rb->bus.count, e_old, e_new, scen);
    else
        snprintf(what, sizeof what, "incident energy from a re-run study: %s -> %s (scenario %s)",
                 e_old, e_new, scen);
    return a->reason ? tw_asprintf("%s; %s", a->reason, what) : tw_strdup(what);
}

static void warn(const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 1, 2)))
#endif
    ;

static void warn(const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    fputs("tagwright reprint: warning: ", stderr);
    vfprintf(stderr, fmt, ap);
    fputs("\n", stderr);
    va_end(ap);
}

static void print_warnings(const tw_rescale *r, const revised_bus *rb, const tw_site *site)
{
    if (r->warnings & TW_RESCALE_WARN_LONG_TIME)
        warn("new clearing time %g s is above %g s; IEEE 1584 suggests %g s as a reasonable "
             "maximum arc duration (common practice) - the rescaled energy may overstate or "
             "misstate the hazard", r->new_time_s, TW_MAX_ARC_DURATION_S, TW_MAX_ARC_DURATION_S);
    if (r->warnings & TW_RESCALE_WARN_OLD_LONG_TIME)
        warn("the study's clearing time %g s is above %g s; its energy may have been capped "
             "there, so scaling it is unreliable", r->old_time_s, TW_MAX_ARC_DURATION_S);
    if (r->warnings & TW_RESCALE_WARN_LARGE_FACTOR)
        warn("the clearing time changes by a factor of %.2f (outside 1/%g to %g); the device "
             "may clear the reduced arcing current in another time", r->new_time_s / r->old_time_s,
             TW_RESCALE_MAX_FACTOR, TW_RESCALE_MAX_FACTOR);
    if (!governs_revised(rb)) {
        const tw_row *g = rb->bus.governing;
        warn("scenario '%s' has another clearing time and was not rescaled; it now governs, so "
             "the label shows its study values (its time under the new settings is unknown)",
             tw_row_has(g, TW_F_SCENARIO) ? g->text[TW_F_SCENARIO] : "(unnamed)");
    }
    if (site->show == TW_SHOW_PPE_CATEGORY && tw_row_has(rb->bus.governing, TW_F_INCIDENT_ENERGY_CAL))
        warn("the site prefers PPE categories; the revised label shows incident energy, as a "
             "category chosen for the old settings no longer applies");
    if (r->warnings || !governs_revised(rb))
        warn("a re-run study is the proper source; use --incident-energy with its value");
}

static void print_changes(const reprint_args *a, const tw_label *old_l, const tw_label *new_l,
                          const tw_rescale *r, const revised_bus *rb)
{
    printf("%s: ", a->bus);
    if (a->clearing_time > 0)
        printf("clearing time %g s -> %g s, %zu of %zu scenarios rescaled\n", r->old_time_s,
               r->new_time_s, rb->rescaled, rb->bus.count);
    else
        printf("incident energy from a re-run study\n");
    tw_field_change c[TW_L_COUNT];
    size_t n = tw_label_compare(old_l, new_l, TW_COMPARE_ALL, c);
    for (size_t i = 0; i < n; i++)
        if (c[i].key != TW_L_REVISION_NOTE)
            printf("  %s: %s -> %s\n", tw_label_key_name(c[i].key),
                   c[i].old_value ? c[i].old_value : "(none)",
                   c[i].new_value ? c[i].new_value : "(none)");
}

/* ---- the run ------------------------------------------------------------------------------ */

/* The revised label for bus b, with its note. 0, or a TW_EXIT_* status. */
static int make_label(tw_study *st, const reprint_args *a, const tw_bus *b, tw_label *old_l,
                      tw_label *new_l, tw_rescale *r, revised_bus *rb)
{
    if (tw_label_derive(b, &st->site, a->date, old_l, &st->diags) != 0 ||
        rescale(a, b->governing, b->equipment_id, r, &st->diags) != 0)
        return TW_EXIT_DATA;
    if (revise_bus(a, b, r, rb) != 0) {
        fprintf(stderr, "tagwright reprint: out of memory\n");
        return TW_EXIT_IO;
    }
    /* The revised label's findings repeat the study's warnings; only its errors are new. */
    tw_diags revised;
    tw_diags_init(&revised);
    const tw_bus *one = &rb->bus;
    size_t refused = tw_batch_derive(&one, 1, &st->site, a->date, 0, new_l, &revised);
    /* These values come from the option, not from the row of the results file. */
    for (size_t i = 0; refused && i < revised.count; i++) {
        const tw_diag *g = &revised.items[i];
        if (g->severity == TW_ERROR)
            fprintf(stderr, "tagwright reprint: %s: error: %s: %s%s%s (the revised label)\n",
                    a->given ? a->given : "the option", b->equipment_id,
                    g->field ? g->field : "", g->field ? ": " : "",
                    g->message ? g->message : "(out of memory)");
    }
    tw_diags_free(&revised);
    if (refused)
        return TW_EXIT_DATA;
    char *note = revision_note(a, r);
    int ok = note && tw_label_set(new_l, TW_L_REVISION_NOTE, note) == 0 &&
             tw_label_rehash(new_l) == 0;
    free(note);
    if (!ok) {
        fprintf(stderr, "tagwright reprint: out of memory\n");
        return TW_EXIT_IO;
    }
    return TW_EXIT_OK;
}

static int print_label(tw_study *st, const reprint_args *a, const tw_label *l, const char *reason)
{
    char err[1024] = "";
    tw_layout layout = {0};
    if (tw_batch_layout(a->layout, &st->site, &layout, &st->diags) != 0) {
        tw_diags_print(&st->diags, stderr);
        tw_layout_free(&layout);
        return TW_EXIT_DATA;
    }
    char *registry = tw_registry_choose("reprint", a->manifest, &st->site, a->out);
    tw_print_opts po = {a->out, registry, a->date, &layout, &st->site, reason, a->approved_by,
                        NULL, 0};
    int rc = tw_print_labels(l, 1, &po, err, sizeof err);
    free(registry);
    if (rc != TW_EXIT_OK)
        fprintf(stderr, "tagwright reprint: %s\n", err);
    tw_layout_free(&layout);
    return rc;
}

static int run(tw_study *st, const reprint_args *a)
{
    char err[1024] = "";
    const char *inputs[] = {a->results, a->site, a->manifest, a->layout, st->site.registry};
    if (tw_output_path_ok_n(a->out, inputs, 5, err, sizeof err) != 0) {
        fprintf(stderr, "tagwright reprint: %s\n", err);
        return TW_EXIT_IO;
    }
    const tw_bus *b = tw_bus_set_find(&st->buses, a->bus);
    if (!b) {
        fprintf(stderr, "%s: error: %s: equipment_id: --bus names equipment that is not in the "
                "results\n", a->results, a->bus);
        return TW_EXIT_DATA;
    }
    tw_label old_l = {0}, new_l = {0};
    tw_rescale r = {0};
    revised_bus rb = {0};
    int rc = tw_bus_errors(b) ? TW_EXIT_DATA : make_label(st, a, b, &old_l, &new_l, &r, &rb);
    tw_diags_sort(&st->diags);
    tw_batch_print_findings(&st->diags, &b, 1, stderr);
    if (rc == TW_EXIT_DATA)
        fprintf(stderr, "tagwright reprint: %s has errors; no label written\n", a->bus);
    if (rc == TW_EXIT_OK) {
        print_warnings(&r, &rb, &st->site);
        char *reason = manifest_reason(a, &r, &rb, &old_l, &new_l);
        rc = reason ? print_label(st, a, &new_l, reason) : TW_EXIT_IO;
        free(reason);
    }
    if (rc == TW_EXIT_OK) {
        print_changes(a, &old_l, &new_l, &r, &rb);
        printf("%s: 1 label, content hash %s\n", a->out, new_l.hash);
    }
    tw_label_free(&old_l);
    tw_label_free(&new_l);
    revised_bus_free(&rb);
    return rc;
}

int cmd_reprint(int argc, char **argv)
{
    reprint_args a;
    int rc = parse_args(argc, argv, &a);
    if (rc != 0)
        return rc < 0 ? TW_EXIT_OK : rc;
    tw_study st;
    if (tw_study_load_mapped(&st, a.results, a.site, a.columns) != 0) {
        tw_diags_print(&st.diags, stderr);
        rc = st.unreadable ? TW_EXIT_IO : TW_EXIT_DATA;
    } else {
        rc = run(&st, &a);
    }
    tw_study_free(&st);
    return rc;
}
