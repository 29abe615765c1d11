/* cmd_envelope.c - `tagwright envelope RESULTS [--target-rating CAL] [--format text|csv|json]
 * [--out FILE]`: the worst case of every bus across its scenarios, the source fault current
 * below which incident energy rises, and how low the source current may fall for a given arc
 * rating. Definitions: docs/envelope.md.
 *
 * Data with errors gets no report (the findings go to stderr, exit 1): an envelope of numbers
 * that failed their checks would look more certain than it is. Exit 0 fine, 1 bad data,
 * 2 bad usage, 3 unreadable input or unwritable output. */
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>
#include <csv.h>

#include "rules/tw_analysis.h"
#include "base/tw_atomic.h"
#include "cli/tw_cli.h"
#include "rules/tw_rules.h"
#include "rules/tw_study.h"
#include "base/tw_util.h"

static const char envelope_usage[] =
    "usage: tagwright envelope RESULTS [--target-rating CAL] [--format text|csv|json]\n"
    "                          [--out FILE] [--columns MAP.json]\n"
    "For every bus: the governing scenario, its incident energy and arc-flash boundary, the\n"
    "source fault current below which incident energy rises, and with --target-rating (an arc\n"
    "rating in cal/cm2) the lowest source fault current for which every scenario at or above\n"
    "it stays within the rating. Written to stdout, or atomically to FILE. See\n"
    "docs/envelope.md for the exact definitions.\n";

typedef enum { FORMAT_TEXT, FORMAT_CSV, FORMAT_JSON } report_format;

typedef struct {
    const char *results;
    const char *out;
    double target;          /* NAN: none */
    report_format format;
    const char *columns;    /* column map, or NULL */
} envelope_opts;

static const char *scenario_of(const tw_row *r)
{
    return r && tw_row_has(r, TW_F_SCENARIO) ? r->text[TW_F_SCENARIO] : "";
}

/* Numbers in reports: energies to 0.001 cal/cm2, currents to 0.001 kA (finer than any study
 * reports), boundaries rounded up to the whole millimetre as on the label. */
static double tidy(double v)
{
    return round(v * 1000) / 1000;
}

/* ---- JSON --------------------------------------------------------------------------------- */

static cJSON *number_or_null(double v)
{
    return isnan(v) ? cJSON_CreateNull() : cJSON_CreateNumber(v);
}

static int json_rise(cJSON *o, const tw_envelope *e)
{
    if (!e->rises)
        return cJSON_AddNullToObject(o, "energy_rise") ? 0 : -1;
    const tw_sweep_point *a = &e->sweep[e->rise_index - 1], *b = &e->sweep[e->rise_index];
    cJSON *r = cJSON_AddObjectToObject(o, "energy_rise");
    if (!r || !cJSON_AddStringToObject(r, "from_scenario", scenario_of(a->row)) ||
        !cJSON_AddNumberToObject(r, "from_source_ka", tidy(a->source_ka)) ||
        !cJSON_AddNumberToObject(r, "from_cal_cm2", tidy(a->energy_cal)) ||
        !cJSON_AddStringToObject(r, "to_scenario", scenario_of(b->row)) ||
        !cJSON_AddNumberToObject(r, "to_source_ka", tidy(b->source_ka)) ||
        !cJSON_AddNumberToObject(r, "to_cal_cm2", tidy(b->energy_cal)))
        return -1;
    return 0;
}

static int json_target(cJSON *o, const tw_envelope *e, const tw_bus *bus)
{
    if (!e->has_target)
        return 0;
    if (!cJSON_AddNumberToObject(o, "target_rating_cal_cm2", e->target_cal) ||
        !cJSON_AddItemToObject(o, "lowest_adequate_source_ka",
                               number_or_null(isnan(e->lowest_adequate_ka)
                                                  ? NAN : tidy(e->lowest_adequate_ka))) ||
        !cJSON_AddBoolToObject(o, "target_met", e->target_met))
        return -1;
    cJSON *over = cJSON_AddArrayToObject(o, "scenarios_over_target");
    if (!over)
        return -1;
    for (size_t i = 0; i < bus->count; i++)
        if (tw_envelope_row_over(e, bus->rows[i]) &&
            !cJSON_AddItemToArray(over, cJSON_CreateString(scenario_of(bus->rows[i]))))
            return -1;
    return 0;
}

static cJSON *json_bus(const tw_envelope *e, const tw_bus *bus)
{
    cJSON *o = cJSON_CreateObject();
    if (!o)
        return NULL;
    double afb = isnan(e->boundary_mm) ? NAN : (double)tw_round_mm_up(e->boundary_mm);
    int ok = cJSON_AddStringToObject(o, "equipment_id", e->equipment_id) &&
             cJSON_AddItemToObject(o, "governing_scenario",
                                   e->governing ? cJSON_CreateString(scenario_of(e->governing))
                                                : cJSON_CreateNull()) &&
             cJSON_AddItemToObject(o, "incident_energy_cal_cm2",
                                   number_or_null(isnan(e->energy_cal) ? NAN
                                                                       : tidy(e->energy_cal))) &&
             cJSON_AddItemToObject(o, "min_arc_rating_cal_cm2", number_or_null(e->rating_cal)) &&
             cJSON_AddItemToObject(o, "arc_flash_boundary_mm", number_or_null(afb)) &&
             cJSON_AddNumberToObject(o, "sweep_points", (double)e->sweep_count) &&
             cJSON_AddItemToObject(o, "energy_rises_below_ka",
                                   number_or_null(e->rises ? tidy(e->rises_below_ka) : NAN)) &&
             json_rise(o, e) == 0 && json_target(o, e, bus) == 0;
    if (!ok) {
        cJSON_Delete(o);
        return NULL;
    }
    return o;
}

static int write_json(FILE *f, const tw_envelope *env, const tw_bus_set *buses)
{
    cJSON *arr = cJSON_CreateArray();
    if (!arr)
        return -1;
    for (size_t i = 0; i < buses->count; i++) {
        cJSON *o = json_bus(&env[i], &buses->buses[i]);
        if (!o || !cJSON_AddItemToArray(arr, o)) {
            cJSON_Delete(o);
            cJSON_Delete(arr);
            return -1;
        }
    }
    char *text = cJSON_Print(arr);
    cJSON_Delete(arr);
    if (!text)
        return -1;
    fprintf(f, "%s\n", text);
    cJSON_free(text);
    return 0;
}

/* ---- CSV ---------------------------------------------------------------------------------- */

/* A text cell, quoted by libcsv (quotes doubled). */
static void csv_text(FILE *f, const char *s)
{
    csv_fwrite(f, s, strlen(s));
}

static void csv_number(FILE *f, double v)
{
    if (!isnan(v))
        fprintf(f, "%.10g", v);
}

static void write_csv(FILE *f, const tw_envelope *env, const tw_bus_set *buses, int target)
{
    fputs("equipment_id,governing_scenario,incident_energy_cal_cm2,min_arc_rating_cal_cm2,"
          "arc_flash_boundary_mm,sweep_points,energy_rises_below_ka,rise_from_scenario,"
          "rise_from_cal_cm2,rise_to_scenario,rise_to_source_ka,rise_to_cal_cm2", f);
    if (target)
        fputs(",target_rating_cal_cm2,lowest_adequate_source_ka,target_met", f);
    fputs("\r\n", f);
    for (size_t i = 0; i < buses->count; i++) {
        const tw_envelope *e = &env[i];
        csv_text(f, e->equipment_id);
        fputc(',', f);
        if (e->governing)
            csv_text(f, scenario_of(e->governing));
        fputc(',', f);
        csv_number(f, isnan(e->energy_cal) ? NAN : tidy(e->energy_cal));
        fputc(',', f);
        csv_number(f, e->rating_cal);
        fputc(',', f);
        csv_number(f, isnan(e->boundary_mm) ? NAN : (double)tw_round_mm_up(e->boundary_mm));
        fprintf(f, ",%zu,", e->sweep_count);
        if (e->rises) {
            const tw_sweep_point *a = &e->sweep[e->rise_index - 1], *b = &e->sweep[e->rise_index];
            csv_number(f, tidy(e->rises_below_ka));
            fputc(',', f);
            csv_text(f, scenario_of(a->row));
            fprintf(f, ",%.10g,", tidy(a->energy_cal));
            csv_text(f, scenario_of(b->row));
            fprintf(f, ",%.10g,%.10g", tidy(b->source_ka), tidy(b->energy_cal));
        } else {
            fputs(",,,,,", f);
        }
        if (target) {
            fprintf(f, ",%.10g,", e->target_cal);
            csv_number(f, isnan(e->lowest_adequate_ka) ? NAN : tidy(e->lowest_adequate_ka));
            fprintf(f, ",%s", e->target_met ? "yes" : "no");
        }
        fputs("\r\n", f);
    }
}

/* ---- text --------------------------------------------------------------------------------- */

static void text_bus(FILE *f, const tw_envelope *e, const tw_bus *bus, int idw)
{
    char energy[400] = "-", afb[400] = "-"; /* any double with %.2f fits */
    if (!isnan(e->energy_cal))
        snprintf(energy, sizeof energy, "%.2f", e->energy_cal);
    else if (!isnan(e->rating_cal))
        snprintf(energy, sizeof energy, "(cat. %g)", e->rating_cal);
    if (!isnan(e->boundary_mm))
        snprintf(afb, sizeof afb, "%ld", tw_round_mm_up(e->boundary_mm));
    fprintf(f, "%-*s  %-16s %10s %9s", idw, e->equipment_id,
            e->governing ? scenario_of(e->governing) : "-", energy, afb);
    if (e->rises)
        fprintf(f, " %11.2f", e->rises_below_ka);
    else
        fprintf(f, " %11s", "-");
    if (e->has_target) {
        if (isnan(e->lowest_adequate_ka))
            fprintf(f, " %11s", "none");
        else
            fprintf(f, " %11.2f", e->lowest_adequate_ka);
        fprintf(f, "  %s", e->target_met ? "met" : "NOT MET");
    }
    fputc('\n', f);
    if (e->rises) {
        const tw_sweep_point *a = &e->sweep[e->rise_index - 1], *b = &e->sweep[e->rise_index];
        fprintf(f, "%*s  energy rises: %.2f cal/cm2 at %.2f kA (%s) -> %.2f cal/cm2 at %.2f kA "
                "(%s)\n", idw, "", a->energy_cal, a->source_ka, scenario_of(a->row),
                b->energy_cal, b->source_ka, scenario_of(b->row));
    }
    if (e->has_target && !e->target_met) {
        fprintf(f, "%*s  above %g cal/cm2:", idw, "", e->target_cal);
        for (size_t i = 0; i < bus->count; i++)
            if (tw_envelope_row_over(e, bus->rows[i]))
                fprintf(f, " %s", *scenario_of(bus->rows[i]) ? scenario_of(bus->rows[i])
                                                             : "(no scenario)");
        fputc('\n', f);
    }
}

static void write_text(FILE *f, const tw_envelope *env, const tw_bus_set *buses,
                       const envelope_opts *o)
{
    int idw = (int)strlen("equipment_id");
    for (size_t i = 0; i < buses->count; i++)
        if ((int)strlen(env[i].equipment_id) > idw)
            idw = (int)strlen(env[i].equipment_id);
    fprintf(f, "Envelope of scenarios: %s, %zu bus%s\n", o->results, buses->count,
            buses->count == 1 ? "" : "es");
    fprintf(f, "energy: governing incident energy, cal/cm2; boundary: arc-flash boundary, mm; "
            "rises below: source kA\n(docs/envelope.md defines each column)\n\n");
    fprintf(f, "%-*s  %-16s %10s %9s %11s", idw, "equipment_id", "governing", "energy",
            "boundary", "rises below");
    if (o->format == FORMAT_TEXT && !isnan(o->target))
        fprintf(f, " %11s  target %g cal/cm2", "adequate to", o->target);
    fputc('\n', f);
    size_t unmet = 0, rises = 0;
    for (size_t i = 0; i < buses->count; i++) {
        text_bus(f, &env[i], &buses->buses[i], idw);
        unmet += env[i].has_target && !env[i].target_met;
        rises += env[i].rises;
    }
    fprintf(f, "\n%zu bus%s where energy rises as the source fault current falls.\n", rises,
            rises == 1 ? "" : "es");
    if (!isnan(o->target)) {
        fprintf(f, "%zu bus%s where %g cal/cm2 is not enough in some scenario", unmet,
                unmet == 1 ? "" : "es", o->target);
        for (size_t i = 0, n = 0; i < buses->count; i++)
            if (env[i].has_target && !env[i].target_met)
                fprintf(f, "%s%s", n++ ? ", " : ": ", env[i].equipment_id);
        fputs(".\n", f);
    }
    fputs("This is a reading of the study's numbers, not a new study: a licensed engineer's\n"
          "judgement, NFPA 70E and local codes govern.\n", f);
}

/* ---- command ------------------------------------------------------------------------------ */

static int parse_opts(int argc, char **argv, envelope_opts *o, int *done)
{
    static const struct option opts[] = {
        {"target-rating", required_argument, NULL, 't'},
        {"format", required_argument, NULL, 'f'},
        {"out", required_argument, NULL, 'o'},
        {"columns", required_argument, NULL, 'C'},
        {"help", no_argument, NULL, 'h'},
        {NULL, 0, NULL, 0},
    };
    *o = (envelope_opts){NULL, NULL, NAN, FORMAT_TEXT, NULL};
    *done = 0;
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "t:f:o:C:h", opts, NULL)) != -1) {
        if (c == 't') {
            if (tw_parse_double(optarg, &o->target) != 0 || !(o->target > 0) ||
                !isfinite(o->target))
                return tw_usage_error("envelope", "--target-rating: expected an arc rating in "
                                      "cal/cm2 above 0, got '%s'", optarg);
        } else if (c == 'f') {
            if (!strcmp(optarg, "text"))
                o->format = FORMAT_TEXT;
            else if (!strcmp(optarg, "csv"))
                o->format = FORMAT_CSV;
            else if (!strcmp(optarg, "json"))
                o->format = FORMAT_JSON;
            else
                return tw_usage_error("envelope", "--format: expected text, csv or json, got "
                                      "'%s'", optarg);
        } else if (c == 'o') {
            o->out = optarg;
        } else if (c == 'C') {
            o->columns = optarg;
        } else if (c == 'h') {
            fputs(envelope_usage, stdout);
            *done = 1;
            return TW_EXIT_OK;
        } else {
            return tw_usage_error("envelope", "unknown option; see 'tagwright envelope --help'");
        }
    }
    if (optind != argc - 1)
        return tw_usage_error("envelope", "expected one results file (CSV or JSON)");
    o->results = argv[optind];
    return TW_EXIT_OK;
}

/* Findings to stderr: every error, and warnings as a count (`tagwright check` lists them). */
static int report_findings(const tw_study *st)
{
    if (st->diags.errors) {
        tw_diags_print(&st->diags, stderr);
        fprintf(stderr, "tagwright envelope: %zu error%s; no envelope is reported for data "
                "with errors\n", st->diags.errors, st->diags.errors == 1 ? "" : "s");
        return st->unreadable ? TW_EXIT_IO : TW_EXIT_DATA;
    }
    if (st->diags.warnings)
        fprintf(stderr, "tagwright envelope: %zu warning%s; 'tagwright check' lists them\n",
                st->diags.warnings, st->diags.warnings == 1 ? "" : "s");
    return TW_EXIT_OK;
}

/* The report in memory (so it can be written atomically). NULL when out of memory. */
static char *render(const envelope_opts *o, const tw_envelope *env, const tw_bus_set *buses,
                    size_t *len)
{
    char *buf = NULL;
    FILE *f = open_memstream(&buf, len);
    if (!f)
        return NULL;
    int rc = 0;
    if (o->format == FORMAT_JSON)
        rc = write_json(f, env, buses);
    else if (o->format == FORMAT_CSV)
        write_csv(f, env, buses, !isnan(o->target));
    else
        write_text(f, env, buses, o);
    if (fclose(f) != 0 || rc != 0) {
        free(buf);
        return NULL;
    }
    return buf;
}

static int emit(const envelope_opts *o, const char *buf, size_t len)
{
    char err[512];
    if (!o->out) {
        if (fwrite(buf, 1, len, stdout) != len || fflush(stdout) != 0) {
            fprintf(stderr, "tagwright envelope: could not write to standard output\n");
            return TW_EXIT_IO;
        }
        return TW_EXIT_OK;
    }
    const char *inputs[] = {o->results, NULL};
    if (tw_output_path_ok(o->out, inputs, err, sizeof err) != 0 ||
        tw_atomic_write(o->out, buf, len, err, sizeof err) != 0) {
        fprintf(stderr, "tagwright envelope: %s\n", err);
        return TW_EXIT_IO;
    }
    return TW_EXIT_OK;
}

int cmd_envelope(int argc, char **argv)
{
    envelope_opts o;
    int done, rc = parse_opts(argc, argv, &o, &done);
    if (rc != TW_EXIT_OK || done)
        return rc;
    tw_study st;
    int loaded = tw_study_load_mapped(&st, o.results, NULL, o.columns);
    if (loaded != 0 && !st.diags.errors) {
        tw_diags_print(&st.diags, stderr);
        fprintf(stderr, "tagwright envelope: could not read %s\n", o.results);
        rc = st.unreadable ? TW_EXIT_IO : TW_EXIT_DATA;
    } else {
        rc = report_findings(&st);
    }
    tw_envelope *env = NULL;
    if (rc == TW_EXIT_OK) {
        env = calloc(st.buses.count ? st.buses.count : 1, sizeof *env);
        for (size_t i = 0; env && i < st.buses.count; i++)
            if (tw_envelope_bus(&st.buses.buses[i], o.target, &env[i]) != 0)
                rc = TW_EXIT_IO;
        if (!env)
            rc = TW_EXIT_IO;
    }
    if (rc == TW_EXIT_OK) {
        size_t len = 0;
        char *buf = render(&o, env, &st.buses, &len);
        if (buf)
            rc = emit(&o, buf, len);
        else {
            fprintf(stderr, "tagwright envelope: out of memory while writing the report\n");
            rc = TW_EXIT_IO;
        }
        free(buf);
    }
    for (size_t i = 0; env && i < st.buses.count; i++)
        tw_envelope_free(&env[i]);
    free(env);
    tw_study_free(&st);
    return rc;
}
