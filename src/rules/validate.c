/* validate.c - checks on study results before anything is posted (see tw_validate.h).
 *
 * Each check is one small function in the table at the end of this file, run over every row
 * or every bus. Adding a check: write the function, add a row to the table, and describe it
 * with its source in docs/checks.md. A value the reader could not read is already an error
 * (marked invalid), so the checks below look only at values that are present, and "missing"
 * means neither present nor invalid. */
#include "rules/tw_validate.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "rules/tw_analysis.h"
#include "base/tw_date.h"
#include "base/tw_fonts.h"
#include "base/tw_map.h"
#include "base/tw_unicode.h"
#include "rules/tw_rules.h"
#include "base/tw_util.h"


typedef struct {
    tw_results *results;
    const tw_bus_set *buses;
    const tw_site *site;
    tw_diags *d;
    tw_date today;
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

/* A missing arc-flash boundary can be computed, D x (E / 1.2)^(1/x), only when the study gives
 * its own distance exponent: a default exponent from a table may not match the method the
 * study used, so without one the boundary stays an error (fail closed). */
static void check_boundary_given(const check_ctx *ctx, tw_row *r)
{
    if (given(r, TW_F_ARC_FLASH_BOUNDARY_MM))
        return;
    if (tw_row_has(r, TW_F_INCIDENT_ENERGY_CAL) && tw_row_has(r, TW_F_WORKING_DISTANCE_MM) &&
        tw_row_has(r, TW_F_DISTANCE_EXPONENT)) {
        double afb = tw_afb_mm(r->num[TW_F_INCIDENT_ENERGY_CAL], r->num[TW_F_WORKING_DISTANCE_MM],
                               r->num[TW_F_DISTANCE_EXPONENT]);
        if (isfinite(afb) && afb > 0) {
            tw_row_diag(ctx->d, r, TW_WARNING, TW_F_COUNT,
                        tw_field_display(TW_F_ARC_FLASH_BOUNDARY_MM),
                        "missing; computed from incident energy with the study's distance "
                        "exponent, D x (E / 1.2)^(1/x) = %.0f mm; the label says it was computed",
                        afb);
            return;
        }
    }
    require(ctx, r, TW_F_ARC_FLASH_BOUNDARY_MM,
            "the arc-flash boundary in one of these units (it can be computed only when "
            "incident_energy, working_distance and the study's distance_exponent are given)");
}

/* What a posting label cannot be made without. */
static void check_required(const check_ctx *ctx, tw_row *r)
{
    require(ctx, r, TW_F_EQUIPMENT_ID, "an equipment ID on every row");
    require(ctx, r, TW_F_NOMINAL_VOLTAGE_V, "the nominal voltage in V");
    check_boundary_given(ctx, r);
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

/* Values that cannot be zero or negative (and, for motor contribution, negative). A value
 * printed on a label must also not print as zero: `prints_as_zero` is half the step the label
 * prints it in (0.1 cal/cm2, whole mm, 0.1 kA, 0.001 s), below which ordinary rounding would
 * show 0 - such a value is a slip in the data (1e-12 cal/cm2), not a hazard level. */
static const struct {
    tw_field field;
    const char *unit;
    int zero_ok;
    double prints_as_zero;
} positive_fields[] = {
    {TW_F_NOMINAL_VOLTAGE_V, "V", 0, 0.5},
    {TW_F_INCIDENT_ENERGY_CAL, "cal/cm2", 0, 0.05}, /* a label must never say 0 cal/cm2 */
    {TW_F_WORKING_DISTANCE_MM, "mm", 0, 0.5},
    {TW_F_ARC_FLASH_BOUNDARY_MM, "mm", 0, 0.5},
    {TW_F_SOURCE_FAULT_KA, "kA", 0, 0},
    {TW_F_BOLTED_FAULT_KA, "kA", 0, 0.05},
    {TW_F_ARCING_CURRENT_KA, "kA", 0, 0},
    {TW_F_CLEARING_TIME_S, "s", 0, 0.0005},
    {TW_F_GAP_MM, "mm", 0, 0},
    {TW_F_DISTANCE_EXPONENT, "", 0, 0},
    {TW_F_SERVICE_RATING_A, "A", 0, 0},
    {TW_F_XFMR_KVA, "kVA", 0, 0},
    {TW_F_XFMR_Z_PERCENT, "%", 0, 0},
    {TW_F_XFMR_SECONDARY_V, "V", 0, 0},
    {TW_F_MOTOR_CONTRIBUTION_KA, "kA", 1, 0}, /* 0: no motors */
};

static void check_positive(const check_ctx *ctx, tw_row *r)
{
    for (size_t i = 0; i < sizeof positive_fields / sizeof positive_fields[0]; i++) {
        tw_field f = positive_fields[i].field;
        if (!tw_row_has(r, f))
            continue;
        double v = r->num[f], tiny = positive_fields[i].prints_as_zero;
        const char *sp = *positive_fields[i].unit ? " " : "", *unit = positive_fields[i].unit;
        int ok = positive_fields[i].zero_ok ? v >= 0 : v > 0; /* false for NaN */
        if (!ok)
            tw_row_diag(ctx->d, r, TW_ERROR, f, NULL, "expected a value %s 0, got %g%s%s",
                        positive_fields[i].zero_ok ? "of at least" : "greater than", v, sp, unit);
        else if (v < tiny)
            tw_row_diag(ctx->d, r, TW_ERROR, f, NULL, "%g%s%s would print as 0 on the label; "
                        "expected at least %g%s%s", v, sp, unit, tiny, sp, unit);
    }
}

/* NFPA 70E Table 130.7(C)(15)(c) defines PPE categories 1 to 4. */
static void check_ppe_category(const check_ctx *ctx, tw_row *r)
{
    if (!tw_row_has(r, TW_F_PPE_CATEGORY))
        return;
    double c = r->num[TW_F_PPE_CATEGORY];
    if (!tw_ppe_category_valid(c))
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
    else if (s && tw_date_cmp(date, ctx->today) > 0) {
        char today[11];
        tw_date_format(ctx->today, today);
        tw_row_diag(ctx->d, r, TW_ERROR, TW_F_STUDY_DATE, NULL,
                    "%s is after today (%s); expected the date of a study already made", s,
                    today);
    }
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
    double min_a = tw_service_label_min_a(ctx->site);
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

/* ---- physics cross-checks (arithmetic in analysis.c, documented in docs/checks.md) ------- */

/* A value the physics checks can use: present, finite, above 0 (anything else is reported by
 * the checks above, and these checks stay quiet rather than report it twice). */
static int usable(const tw_row *r, tw_field f)
{
    return tw_row_has(r, f) && isfinite(r->num[f]) && r->num[f] > 0;
}

static const tw_field xfmr_fields[] = {TW_F_XFMR_KVA, TW_F_XFMR_Z_PERCENT, TW_F_XFMR_SECONDARY_V};

/* The three transformer fields come together or not at all. */
static int xfmr_complete(const check_ctx *ctx, tw_row *r)
{
    size_t n = sizeof xfmr_fields / sizeof xfmr_fields[0], have = 0;
    for (size_t i = 0; i < n; i++)
        have += given(r, xfmr_fields[i]);
    if (have == 0)
        return 0;
    for (size_t i = 0; have < n && i < n; i++)
        if (!given(r, xfmr_fields[i]))
            tw_row_diag(ctx->d, r, TW_WARNING, TW_F_COUNT, tw_field_name(xfmr_fields[i]),
                        "missing; the infinite-bus check needs xfmr_kva, xfmr_z_percent and "
                        "xfmr_secondary_v together, so it was not made");
    if (have < n)
        return 0;
    for (size_t i = 0; i < n; i++)
        if (!usable(r, xfmr_fields[i]))
            return 0;
    return 1;
}

/* The bolted fault current of a bus fed by a transformer cannot exceed the transformer's
 * infinite-bus current plus the motor contribution; more than TW_INFINITE_BUS_TOLERANCE above
 * it is a data-entry slip. */
static void check_infinite_bus(const check_ctx *ctx, tw_row *r)
{
    if (!xfmr_complete(ctx, r) || !usable(r, TW_F_BOLTED_FAULT_KA))
        return;
    double kva = r->num[TW_F_XFMR_KVA], z = r->num[TW_F_XFMR_Z_PERCENT];
    double v = r->num[TW_F_XFMR_SECONDARY_V];
    tw_infinite_bus ib;
    if (tw_infinite_bus_calc(kva, v, z, &ib) != 0)
        return;
    double motor = tw_row_has(r, TW_F_MOTOR_CONTRIBUTION_KA) &&
                   isfinite(r->num[TW_F_MOTOR_CONTRIBUTION_KA]) &&
                   r->num[TW_F_MOTOR_CONTRIBUTION_KA] > 0 ? r->num[TW_F_MOTOR_CONTRIBUTION_KA] : 0;
    double bound = ib.fault_a / 1000 + motor, bolted = r->num[TW_F_BOLTED_FAULT_KA];
    if (bolted > bound * (1 + TW_INFINITE_BUS_TOLERANCE))
        tw_row_diag(ctx->d, r, TW_ERROR, TW_F_BOLTED_FAULT_KA, NULL,
                    "%.2f kA exceeds the most this transformer can deliver, %.2f kA (%g kVA, "
                    "%g V, %g %%Z: %.1f A full load x 100 / %g = %.2f kA infinite bus, plus "
                    "%.2f kA motor contribution), by %.0f %%; expected at most %.0f %% above "
                    "it: check the transformer data and the fault current",
                    bolted, bound, kva, v, z, ib.full_load_a, z, ib.fault_a / 1000, motor,
                    (bolted / bound - 1) * 100, TW_INFINITE_BUS_TOLERANCE * 100);
}

/* The distance exponent for a row (tw_row_distance_exponent), and where it came from. */
static double exponent_of(const tw_row *r, char *why, size_t n)
{
    const char *source = NULL;
    double x = tw_row_distance_exponent(r, &source);
    if (!source)
        snprintf(why, n, "distance_exponent column");
    else
        snprintf(why, n, "%s default for %s; give the study's own distance_exponent if it used "
                 "IEEE 1584-2018", source, r->text[TW_F_EQUIPMENT_TYPE]);
    return x;
}

/* The stated arc-flash boundary against D x (E / 1.2)^(1/x). */
static void check_boundary_consistency(const check_ctx *ctx, tw_row *r)
{
    if (!usable(r, TW_F_INCIDENT_ENERGY_CAL) || !usable(r, TW_F_WORKING_DISTANCE_MM) ||
        !usable(r, TW_F_ARC_FLASH_BOUNDARY_MM))
        return;
    char why[256];
    double x = exponent_of(r, why, sizeof why);
    double e = r->num[TW_F_INCIDENT_ENERGY_CAL], d = r->num[TW_F_WORKING_DISTANCE_MM];
    double afb = tw_afb_mm(e, d, x), stated = r->num[TW_F_ARC_FLASH_BOUNDARY_MM];
    if (isnan(afb) || fabs(stated - afb) <= TW_AFB_TOLERANCE * afb)
        return;
    tw_row_diag(ctx->d, r, TW_WARNING, TW_F_ARC_FLASH_BOUNDARY_MM, NULL,
                "stated %.0f mm, but %g cal/cm2 at %.0f mm with distance exponent %g (%s) puts "
                "the boundary at %.0f mm (D x (E / 1.2)^(1/x)); %.0f %% %s, expected within "
                "%.0f %%",
                stated, e, d, x, why, afb, fabs(stated / afb - 1) * 100,
                stated < afb ? "closer (the unsafe side)" : "farther",
                TW_AFB_TOLERANCE * 100);
}

/* The IEEE 1584-2018 model's range (voltage, bolted fault current, gap, working distance), for
 * rows that give an incident energy. Outside it is a warning: the study may have used another
 * method. */
static void check_ieee1584_range(const check_ctx *ctx, tw_row *r)
{
    static const char another[] = "the study may have used another method: confirm it";
    if (!usable(r, TW_F_INCIDENT_ENERGY_CAL) || !usable(r, TW_F_NOMINAL_VOLTAGE_V))
        return;
    double v = r->num[TW_F_NOMINAL_VOLTAGE_V];
    if (!tw_approach_for_voltage(v))
        return; /* already an error of voltage-in-tables */
    const tw_ieee1584_range *rg = tw_ieee1584_range_for(v);
    if (!rg) {
        tw_row_diag(ctx->d, r, TW_WARNING, TW_F_NOMINAL_VOLTAGE_V, NULL,
                    "%g V is outside the IEEE 1584-2018 model (%g V to %g V); %s", v,
                    TW_IEEE1584_V_MIN, TW_IEEE1584_V_MAX, another);
        return;
    }
    if (usable(r, TW_F_BOLTED_FAULT_KA)) {
        double ka = r->num[TW_F_BOLTED_FAULT_KA];
        if (ka < rg->ibf_min_ka || ka > rg->ibf_max_ka)
            tw_row_diag(ctx->d, r, TW_WARNING, TW_F_BOLTED_FAULT_KA, NULL,
                        "%g kA is outside the IEEE 1584-2018 model at %g V (%g kA to %g kA); %s",
                        ka, v, rg->ibf_min_ka, rg->ibf_max_ka, another);
    }
    if (usable(r, TW_F_GAP_MM)) {
        double g = r->num[TW_F_GAP_MM];
        if (g < rg->gap_min_mm || g > rg->gap_max_mm)
            tw_row_diag(ctx->d, r, TW_WARNING, TW_F_GAP_MM, NULL,
                        "%g mm is outside the IEEE 1584-2018 model at %g V (%g mm to %g mm); %s",
                        g, v, rg->gap_min_mm, rg->gap_max_mm, another);
    }
    if (usable(r, TW_F_WORKING_DISTANCE_MM) &&
        r->num[TW_F_WORKING_DISTANCE_MM] < TW_IEEE1584_MIN_WD_MM)
        tw_row_diag(ctx->d, r, TW_WARNING, TW_F_WORKING_DISTANCE_MM, NULL,
                    "%.0f mm is shorter than the IEEE 1584-2018 model covers (%g mm, 12 in); %s",
                    r->num[TW_F_WORKING_DISTANCE_MM], TW_IEEE1584_MIN_WD_MM, another);
}

/* An arc adds impedance, so the arcing current is below the bolted fault current. A warning,
 * not an error: the IEEE 1584-2002 equation above 1 kV gives an arcing current slightly above
 * the bolted current for bolted currents below about 1.7 kA (docs/checks.md). */
static void check_arcing_below_bolted(const check_ctx *ctx, tw_row *r)
{
    if (!usable(r, TW_F_ARCING_CURRENT_KA) || !usable(r, TW_F_BOLTED_FAULT_KA))
        return;
    double ia = r->num[TW_F_ARCING_CURRENT_KA], ibf = r->num[TW_F_BOLTED_FAULT_KA];
    if (ia >= ibf)
        tw_row_diag(ctx->d, r, TW_WARNING, TW_F_ARCING_CURRENT_KA, NULL,
                    "%g kA is not below the bolted fault current %g kA; expected lower, since "
                    "the arc adds impedance (check for swapped columns, or confirm the study's "
                    "method)", ia, ibf);
}

/* Common practice caps the arc duration at 2 s (an IEEE 1584 note). */
static void check_clearing_time(const check_ctx *ctx, tw_row *r)
{
    if (usable(r, TW_F_CLEARING_TIME_S) && r->num[TW_F_CLEARING_TIME_S] > TW_MAX_ARC_DURATION_S)
        tw_row_diag(ctx->d, r, TW_WARNING, TW_F_CLEARING_TIME_S, NULL,
                    "%g s is above %g s; common practice (an IEEE 1584 note) caps the arc "
                    "duration at %g s, since a person would most likely move away from the "
                    "arc: confirm the study's assumption", r->num[TW_F_CLEARING_TIME_S],
                    TW_MAX_ARC_DURATION_S, TW_MAX_ARC_DURATION_S);
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

/* A bus's rows come from one study revision: a label shows one study ID and date, and its review
 * date (NFPA 70E 130.5(G), five years) follows from that date, so rows of different studies
 * would give a label and a `due` listing that disagree about which study governs. */
static void check_one_study(const check_ctx *ctx, const tw_bus *b)
{
    const tw_row *ref = NULL;
    for (size_t i = 0; i < b->count; i++) {
        tw_row *r = b->rows[i];
        if (!ref) {
            ref = r;
            continue;
        }
        static const tw_field fields[] = {TW_F_STUDY_ID, TW_F_STUDY_DATE};
        for (size_t k = 0; k < 2; k++) {
            tw_field f = fields[k];
            const char *a = tw_row_has(r, f) ? r->text[f] : "", *o = tw_row_has(ref, f) ? ref->text[f] : "";
            if (strcmp(a ? a : "", o ? o : "") == 0)
                continue;
            char at[64];
            where(ref, at, sizeof at);
            tw_row_diag(ctx->d, r, TW_ERROR, f, NULL,
                        "'%s' here, '%s' at %s; expected every scenario of a bus from one study "
                        "revision (its label and its review date name one study)",
                        a ? a : "", o ? o : "", at);
        }
    }
}

/* ---- what a label can show ----------------------------------------------------------------- */

/* An ID is read, compared and typed by people: a character they cannot see (a no-break or
 * zero-width space, a byte order mark, a bidirectional control) makes two IDs that look the same
 * name two buses, and `--bus` pick the wrong one. */
static void check_id_characters(const check_ctx *ctx, tw_row *r)
{
    static const tw_field ids[] = {TW_F_EQUIPMENT_ID, TW_F_STUDY_ID};
    for (size_t i = 0; i < sizeof ids / sizeof ids[0]; i++) {
        if (!tw_row_has(r, ids[i]))
            continue;
        uint32_t cp = tw_id_hidden_char(r->text[ids[i]]);
        if (!cp)
            continue;
        char ch[160];
        tw_char_describe(cp, ch, sizeof ch);
        tw_row_diag(ctx->d, r, TW_ERROR, ids[i], NULL,
                    "contains %s, an invisible or formatting character; expected an ID of "
                    "visible characters and plain spaces only", ch);
    }
}

/* The row's texts that a label prints: each must be drawable exactly as it reads (tw_fonts.h),
 * or the label would show boxes, drop characters or reverse them. */
static void check_drawable(const check_ctx *ctx, tw_row *r)
{
    static const tw_field printed[] = {TW_F_EQUIPMENT_ID, TW_F_DESCRIPTION, TW_F_LOCATION,
                                       TW_F_STUDY_ID, TW_F_SCENARIO};
    for (size_t i = 0; i < sizeof printed / sizeof printed[0]; i++) {
        uint32_t cp = 0;
        tw_draw_problem p;
        if (!tw_row_has(r, printed[i]) ||
            (p = tw_text_drawable(r->text[printed[i]], &cp)) == TW_DRAW_OK)
            continue;
        if ((printed[i] == TW_F_EQUIPMENT_ID || printed[i] == TW_F_STUDY_ID) &&
            tw_id_hidden_char(r->text[printed[i]]))
            continue; /* reported by check_id_characters */
        char why[512];
        tw_row_diag(ctx->d, r, TW_ERROR, printed[i], NULL, "%s",
                    tw_draw_problem_text(p, cp, why, sizeof why));
    }
}

/* Report that b (at row r) and the bus first seen at row first share a key. */
static void report_lookalike(const check_ctx *ctx, tw_row *r, const tw_row *other)
{
    char at[64];
    where(other, at, sizeof at);
    tw_row_diag(ctx->d, r, TW_ERROR, TW_F_EQUIPMENT_ID, NULL,
                "'%s' and '%s' (%s) read as the same ID (compared after Unicode NFKC case "
                "folding, without invisible characters or extra spaces); expected one spelling "
                "per bus",
                r->text[TW_F_EQUIPMENT_ID], other->text[TW_F_EQUIPMENT_ID], at);
}

/* The key of bus i's ID into key (TW_ID_KEY_MAX bytes), hashed (FNV-1a); -1 when it cannot
 * be made. */
static int id_key_hash(const tw_bus_set *s, size_t i, char *key, uint32_t *hash)
{
    long n = tw_id_key(s->buses[i].equipment_id, key, TW_ID_KEY_MAX);
    uint32_t h = 2166136261u;
    for (long k = 0; k < n; k++)
        h = (h ^ (unsigned char)key[k]) * 16777619u;
    *hash = h;
    return n < 0 ? -1 : 0;
}

/* Two buses whose IDs differ only in case, compatibility forms (full-width letters,
 * superscripts, ligatures), invisible characters or spacing would print as two labels for
 * what a worker reads as one piece of equipment. Both are reported, each naming the other's
 * line. A table of key hashes (8 bytes a bus) rather than of keys: the keys are made again
 * only when two hashes meet. */
static void check_lookalike_ids(const check_ctx *ctx)
{
    const tw_bus_set *s = ctx->buses;
    if (!s || s->count < 2 || s->count > UINT32_MAX / 4)
        return;
    size_t cap = 16;
    while (cap < 2 * s->count)
        cap *= 2;
    struct slot {
        uint32_t hash, bus; /* bus + 1; 0: empty */
    } *table = calloc(cap, sizeof *table);
    char *key = malloc(2 * TW_ID_KEY_MAX), *other = key + TW_ID_KEY_MAX;
    if (!table || !key) {
        tw_row_diag(ctx->d, s->buses[0].rows[0], TW_ERROR, TW_F_EQUIPMENT_ID, NULL,
                    "out of memory while comparing equipment IDs");
        goto done;
    }
    for (size_t i = 0; i < s->count; i++) {
        uint32_t h, h2;
        if (s->buses[i].count == 0)
            continue;
        if (id_key_hash(s, i, key, &h) != 0) {
            tw_row_diag(ctx->d, s->buses[i].rows[0], TW_ERROR, TW_F_EQUIPMENT_ID, NULL,
                        "could not be compared with the other IDs (Unicode normalization "
                        "failed); expected an ID of up to %d bytes", TW_MAX_ID_BYTES);
            continue;
        }
        size_t at = h & (cap - 1);
        for (; table[at].bus; at = (at + 1) & (cap - 1)) {
            size_t j = table[at].bus - 1;
            if (table[at].hash != h || id_key_hash(s, j, other, &h2) != 0 || strcmp(key, other))
                continue;
            report_lookalike(ctx, s->buses[i].rows[0], s->buses[j].rows[0]);
            report_lookalike(ctx, s->buses[j].rows[0], s->buses[i].rows[0]);
            break;
        }
        if (!table[at].bus)
            table[at] = (struct slot){h, (uint32_t)(i + 1)};
    }
done:
    free(table);
    free(key);
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
    {"infinite-bus-bound", check_infinite_bus, NULL},
    {"boundary-consistency", check_boundary_consistency, NULL},
    {"ieee1584-range", check_ieee1584_range, NULL},
    {"arcing-below-bolted", check_arcing_below_bolted, NULL},
    {"clearing-time-2s", check_clearing_time, NULL},
    {"id-characters", check_id_characters, NULL},
    {"drawable-text", check_drawable, NULL},
    {"one-row-per-scenario", NULL, check_duplicate_ids},
    {"voltage-across-scenarios", NULL, check_voltage_agreement},
    {"one-study-per-bus", NULL, check_one_study},
};

size_t tw_validate(tw_results *r, const tw_bus_set *buses, const tw_site *site, tw_diags *d)
{
    check_ctx ctx = {r, buses, site, d, tw_date_today()};
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
    check_lookalike_ids(&ctx); /* "one-spelling-per-id": across all buses at once */
    if (buses && buses->count == 0) { /* a header alone, {"buses": []}, CR-only line ends */
        tw_source src = {r->file, 0, NULL};
        tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "no buses; expected at least one row with an "
                    "equipment ID (a file whose lines end in CR alone reads as a header only)");
    }
    return d->errors - before;
}
