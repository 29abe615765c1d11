/* validate.c - checks on study results before anything is posted (see tw_validate.h).
 *
 * Each check is one small function in the table at the end of this file, run over every row
 * or every bus. Adding a check: write the function, add a row to the table, and describe it
 * with its source in docs/checks.md. A value the reader could not read is already an error
 * (marked invalid), so the checks below look only at values that are present, and "missing"
 * means neither present nor invalid. */
#include "tw_validate.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tw_date.h"
#include "tw_map.h"
#include "tw_rules.h"
#include "tw_util.h"

/* NEC 110.16(B) (2020 and later): service equipment rated 1200 A or more carries a label with
 * the available fault current and the clearing time of the service overcurrent device. Used
 * when no site settings are given; a site may set its own threshold. */
#define NEC_110_16B_MIN_A 1200.0

typedef struct {
    tw_results *results;
    const tw_bus_set *buses;
    const tw_site *site;
    tw_diags *d;
} check_ctx;

typedef struct {
    const char *name; /* as listed in docs/checks.md */
    void (*row)(const check_ctx *ctx, tw_row *r);
    void (*bus)(const check_ctx *ctx, const tw_bus *b);
} tw_check;

static int given(const tw_row *r, tw_field f)
{
    return ((r->present | r->invalid) >> f) & 1u;
}

/* ---- rows ------------------------------------------------------------------------------ */

static void require(const check_ctx *ctx, tw_row *r, tw_field f, const char *why)
{
    if (!given(r, f))
        tw_row_diag(ctx->d, r, TW_ERROR, TW_F_COUNT, tw_field_display(f), "missing; expected %s",
                    why);
}

/* What a posting label cannot be made without. */
static void check_required(const check_ctx *ctx, tw_row *r)
{
    require(ctx, r, TW_F_EQUIPMENT_ID, "an equipment ID on every row");
    require(ctx, r, TW_F_NOMINAL_VOLTAGE_V, "the nominal voltage in V");
    require(ctx, r, TW_F_ARC_FLASH_BOUNDARY_MM, "the arc-flash boundary in one of these units");
    int energy = given(r, TW_F_INCIDENT_ENERGY_CAL);
    if (!energy && !given(r, TW_F_PPE_CATEGORY))
        tw_row_diag(ctx->d, r, TW_ERROR, TW_F_COUNT, NULL,
                    "missing hazard level; expected %s with %s, or ppe_category",
                    tw_field_display(TW_F_INCIDENT_ENERGY_CAL),
                    tw_field_display(TW_F_WORKING_DISTANCE_MM));
    if (energy)
        require(ctx, r, TW_F_WORKING_DISTANCE_MM,
                "the working distance at which the incident energy was calculated");
}

/* Values that cannot be zero or negative (and, for motor contribution, negative). */
static const struct {
    tw_field field;
    const char *unit;
    int zero_ok;
} positive_fields[] = {
    {TW_F_NOMINAL_VOLTAGE_V, "V", 0},
    {TW_F_INCIDENT_ENERGY_CAL, "cal/cm2", 0}, /* a label must never say 0 cal/cm2 */
    {TW_F_WORKING_DISTANCE_MM, "mm", 0},
    {TW_F_ARC_FLASH_BOUNDARY_MM, "mm", 0},
    {TW_F_SOURCE_FAULT_KA, "kA", 0},
    {TW_F_BOLTED_FAULT_KA, "kA", 0},
    {TW_F_ARCING_CURRENT_KA, "kA", 0},
    {TW_F_CLEARING_TIME_S, "s", 0},
    {TW_F_GAP_MM, "mm", 0},
    {TW_F_DISTANCE_EXPONENT, "", 0},
    {TW_F_SERVICE_RATING_A, "A", 0},
    {TW_F_XFMR_KVA, "kVA", 0},
    {TW_F_XFMR_Z_PERCENT, "%", 0},
    {TW_F_XFMR_SECONDARY_V, "V", 0},
    {TW_F_MOTOR_CONTRIBUTION_KA, "kA", 1}, /* 0: no motors */
};

static void check_positive(const check_ctx *ctx, tw_row *r)
{
    for (size_t i = 0; i < sizeof positive_fields / sizeof positive_fields[0]; i++) {
        tw_field f = positive_fields[i].field;
        if (!tw_row_has(r, f))
            continue;
        double v = r->num[f];
        int ok = positive_fields[i].zero_ok ? v >= 0 : v > 0; /* false for NaN */
        if (!ok)
            tw_row_diag(ctx->d, r, TW_ERROR, f, NULL, "expected a value %s 0, got %g%s%s",
                        positive_fields[i].zero_ok ? "of at least" : "greater than", v,
                        *positive_fields[i].unit ? " " : "", positive_fields[i].unit);
    }
}

/* NFPA 70E Table 130.7(C)(15)(c) defines PPE categories 1 to 4. */
static void check_ppe_category(const check_ctx *ctx, tw_row *r)
{
    if (!tw_row_has(r, TW_F_PPE_CATEGORY))
        return;
    double c = r->num[TW_F_PPE_CATEGORY];
    if (!(c >= 1 && c <= 4))
        tw_row_diag(ctx->d, r, TW_ERROR, TW_F_PPE_CATEGORY, NULL,
                    "expected a PPE category from 1 to 4 (NFPA 70E Table 130.7(C)(15)(c)), got %g",
                    c);
}

/* The label prints the study date and the review date derived from it (NFPA 70E 130.5(G):
 * reviewed at intervals of no more than 5 years), so the date is required. */
static void check_study_date(const check_ctx *ctx, tw_row *r)
{
    if (!given(r, TW_F_STUDY_DATE)) {
        tw_row_diag(ctx->d, r, TW_ERROR, TW_F_COUNT, tw_field_name(TW_F_STUDY_DATE),
                    "missing; expected the study date (YYYY-MM-DD), which the label prints "
                    "with the review date derived from it");
        return;
    }
    tw_date date;
    const char *s = r->text[TW_F_STUDY_DATE];
    if (s && tw_date_parse(s, &date) != 0)
        tw_row_diag(ctx->d, r, TW_ERROR, TW_F_STUDY_DATE, NULL,
                    "expected an ISO 8601 date YYYY-MM-DD, got '%s'", s);
}

/* The label prints the shock approach boundaries (NFPA 70E Table 130.4(E)(a)) and the glove
 * class (ASTM D120) for the nominal voltage; a voltage outside those tables cannot be
 * labelled. */
static void check_voltage_tables(const check_ctx *ctx, tw_row *r)
{
    if (!tw_row_has(r, TW_F_NOMINAL_VOLTAGE_V))
        return;
    double v = r->num[TW_F_NOMINAL_VOLTAGE_V];
    if (!(v > 0))
        return; /* reported by check_positive */
    if (!tw_approach_for_voltage(v))
        tw_row_diag(ctx->d, r, TW_ERROR, TW_F_NOMINAL_VOLTAGE_V, NULL,
                    "no approach-boundary row in NFPA 70E Table 130.4(E)(a) for %g V", v);
    if (!tw_glove_class_for_voltage(v))
        tw_row_diag(ctx->d, r, TW_ERROR, TW_F_NOMINAL_VOLTAGE_V, NULL,
                    "no rubber insulating glove class in ASTM D120 for %g V (class 4 is the "
                    "highest)",
                    v);
}

/* NEC 110.16(B): service equipment at or above the threshold needs the available fault current
 * and the clearing time of the service overcurrent device on its label. */
static void check_service_equipment(const check_ctx *ctx, tw_row *r)
{
    if (!tw_row_has(r, TW_F_SERVICE_EQUIPMENT) || r->num[TW_F_SERVICE_EQUIPMENT] == 0)
        return;
    double min_a = ctx->site && ctx->site->service_label_min_a > 0 ? ctx->site->service_label_min_a
                                                                   : NEC_110_16B_MIN_A;
    if (!given(r, TW_F_SERVICE_RATING_A)) {
        tw_row_diag(ctx->d, r, TW_ERROR, TW_F_COUNT, tw_field_name(TW_F_SERVICE_RATING_A),
                    "missing; expected the rating of service equipment, to tell whether NEC "
                    "110.16(B) applies (%g A or more)",
                    min_a);
        return;
    }
    if (!tw_row_has(r, TW_F_SERVICE_RATING_A) || r->num[TW_F_SERVICE_RATING_A] < min_a)
        return;
    static const tw_field needed[] = {TW_F_BOLTED_FAULT_KA, TW_F_CLEARING_TIME_S};
    for (size_t i = 0; i < sizeof needed / sizeof needed[0]; i++)
        if (!given(r, needed[i]))
            tw_row_diag(ctx->d, r, TW_ERROR, TW_F_COUNT, tw_field_name(needed[i]),
                        "missing; NEC 110.16(B) requires it on the label of service equipment "
                        "rated %g A or more (this is %g A)",
                        min_a, r->num[TW_F_SERVICE_RATING_A]);
}

/* IEEE 1584-2018 electrode configurations. Not printed on the label, so a warning. */
static void check_electrode_config(const check_ctx *ctx, tw_row *r)
{
    static const char *const configs[] = {"VCB", "VCBB", "HCB", "VOA", "HOA"};
    const char *s = r->text[TW_F_ELECTRODE_CONFIG];
    if (!s)
        return;
    for (size_t i = 0; i < sizeof configs / sizeof configs[0]; i++)
        if (tw_strcaseeq(s, configs[i]))
            return;
    tw_row_diag(ctx->d, r, TW_WARNING, TW_F_ELECTRODE_CONFIG, NULL,
                "expected one of VCB, VCBB, HCB, VOA, HOA (IEEE 1584-2018), got '%s'", s);
}

/* ---- buses ----------------------------------------------------------------------------- */

/* "line 12" or "buses[3]", for naming another row in a message. */
static void where(const tw_row *r, char *buf, size_t n)
{
    if (r->path)
        snprintf(buf, n, "%s", r->path);
    else
        snprintf(buf, n, "line %ld", r->line);
}

/* One row per bus and scenario: a second row would make the worst case ambiguous. */
static void check_duplicate_ids(const check_ctx *ctx, const tw_bus *b)
{
    if (b->count < 2)
        return;
    tw_map seen;
    tw_map_init(&seen);
    for (size_t i = 0; i < b->count; i++) {
        tw_row *r = b->rows[i];
        const char *scenario = r->text[TW_F_SCENARIO] ? r->text[TW_F_SCENARIO] : "";
        size_t first;
        if (!tw_map_get(&seen, scenario, &first)) {
            if (tw_map_put(&seen, scenario, i) != 0)
                tw_row_diag(ctx->d, r, TW_ERROR, TW_F_COUNT, NULL,
                            "out of memory while checking for duplicate rows");
            continue;
        }
        char at[64];
        where(b->rows[first], at, sizeof at);
        if (*scenario)
            tw_row_diag(ctx->d, r, TW_ERROR, TW_F_EQUIPMENT_ID, NULL,
                        "given twice for scenario '%s' (first at %s); expected one row per bus "
                        "and scenario",
                        scenario, at);
        else
            tw_row_diag(ctx->d, r, TW_ERROR, TW_F_EQUIPMENT_ID, NULL,
                        "given twice without a scenario (first at %s); expected one row per bus, "
                        "or a scenario column to tell the rows apart",
                        at);
    }
    tw_map_free(&seen);
}

/* A bus has one nominal voltage whatever the source scenario. */
static void check_voltage_agreement(const check_ctx *ctx, const tw_bus *b)
{
    const tw_row *ref = NULL;
    for (size_t i = 0; i < b->count; i++) {
        tw_row *r = b->rows[i];
        if (!tw_row_has(r, TW_F_NOMINAL_VOLTAGE_V))
            continue;
        if (!ref) {
            ref = r;
            continue;
        }
        double v = r->num[TW_F_NOMINAL_VOLTAGE_V], v0 = ref->num[TW_F_NOMINAL_VOLTAGE_V];
        if (v != v0) {
            char at[64];
            where(ref, at, sizeof at);
            tw_row_diag(ctx->d, r, TW_ERROR, TW_F_NOMINAL_VOLTAGE_V, NULL,
                        "expected the same nominal voltage in every scenario of a bus; %g V "
                        "here, %g V at %s",
                        v, v0, at);
        }
    }
}

/* ---- the table --------------------------------------------------------------------------- */

static const tw_check checks[] = {
    {"required-fields", check_required, NULL},
    {"positive-values", check_positive, NULL},
    {"ppe-category-range", check_ppe_category, NULL},
    {"study-date", check_study_date, NULL},
    {"voltage-in-tables", check_voltage_tables, NULL},
    {"service-equipment-label", check_service_equipment, NULL},
    {"electrode-config", check_electrode_config, NULL},
    {"one-row-per-scenario", NULL, check_duplicate_ids},
    {"voltage-across-scenarios", NULL, check_voltage_agreement},
};

size_t tw_validate(tw_results *r, const tw_bus_set *buses, const tw_site *site, tw_diags *d)
{
    check_ctx ctx = {r, buses, site, d};
    size_t before = d->errors, n = sizeof checks / sizeof checks[0];
    /* Row by row, so the findings about one row come out together and in input order. */
    for (size_t i = 0; i < r->count; i++)
        for (size_t c = 0; c < n; c++)
            if (checks[c].row)
                checks[c].row(&ctx, &r->rows[i]);
    for (size_t i = 0; buses && i < buses->count; i++)
        for (size_t c = 0; c < n; c++)
            if (checks[c].bus)
                checks[c].bus(&ctx, &buses->buses[i]);
    return d->errors - before;
}
