/* analysis.c - transformer, boundary and envelope arithmetic (see tw_analysis.h).
 *
 * Tables here are trade values with their sources beside them; the checks that use them live
 * in validate.c, the commands that print them in cmd_infinite_bus.c, cmd_envelope.c and
 * cmd_summary.c.
 */
#include "rules/tw_analysis.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "rules/tw_rules.h"
#include "base/tw_util.h"

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

static int positive(double v)
{
    return isfinite(v) && v > 0;
}

/* ---- transformer ------------------------------------------------------------------------ */

int tw_infinite_bus_calc(double kva, double volts, double z_percent, tw_infinite_bus *out)
{
    if (!out || !positive(kva) || !positive(volts) || !positive(z_percent))
        return -1;
    double fla = kva * 1000.0 / (sqrt(3.0) * volts);
    double fault = fla * 100.0 / z_percent;
    if (!isfinite(fla) || !isfinite(fault))
        return -1;
    out->full_load_a = fla;
    out->fault_a = fault;
    return 0;
}

int tw_xfmr_impedance_calc(double kva, double volts, double z_percent, double x_over_r,
                           tw_xfmr_impedance *out)
{
    if (!out || !positive(kva) || !positive(volts) || !positive(z_percent) ||
        !positive(x_over_r))
        return -1;
    double z_base = volts * volts / (kva * 1000.0);
    double z = z_base * z_percent / 100.0;
    double angle = atan(x_over_r);
    if (!isfinite(z_base) || !isfinite(z))
        return -1;
    out->z_base_ohm = z_base;
    out->z_ohm = z;
    out->angle_deg = angle * 180.0 / M_PI;
    out->r_ohm = z * cos(angle);
    out->x_ohm = z * sin(angle);
    return 0;
}

/* ---- arc-flash boundary ----------------------------------------------------------------- */

double tw_afb_mm(double e_cal, double d_mm, double x)
{
    if (!positive(e_cal) || !positive(d_mm) || !positive(x))
        return NAN;
    double afb = d_mm * pow(e_cal / TW_AFB_ENERGY_CAL_CM2, 1.0 / x);
    return isfinite(afb) ? afb : NAN;
}

/*
 * IEEE 1584-2002 Table 4, distance exponent x by equipment and voltage class (from memory,
 * verify against the edition in force). A switchboard is not in the table; it is taken as
 * switchgear, as most studies do (it has switchgear's enclosure and gap). The table has no
 * MCC or panelboard row above 1 kV.
 */
static const struct {
    const char *type;
    double v_min, v_max;
    double x;
} exponents[] = {
    {"open-air", 208, 1000, 2.000},   {"switchgear", 208, 1000, 1.473},
    {"switchboard", 208, 1000, 1.473}, {"mcc", 208, 1000, 1.641},
    {"panelboard", 208, 1000, 1.641}, {"cable", 208, 1000, 2.000},
    {"open-air", 1000, 15000, 2.000}, {"switchgear", 1000, 15000, 0.973},
    {"switchboard", 1000, 15000, 0.973}, {"cable", 1000, 15000, 2.000},
};

static const char exponent_source[] = "IEEE 1584-2002 Table 4";

double tw_distance_exponent_for(const char *equipment_type, double volts, const char **source)
{
    if (source)
        *source = exponent_source;
    if (!equipment_type || !positive(volts))
        return NAN;
    for (size_t i = 0; i < sizeof exponents / sizeof exponents[0]; i++)
        if (tw_strcaseeq(equipment_type, exponents[i].type) && volts >= exponents[i].v_min &&
            volts <= exponents[i].v_max)
            return exponents[i].x;
    return NAN;
}

/* ---- IEEE 1584-2018 ranges -------------------------------------------------------------- */

/*
 * IEEE 1584-2018 clause 4.2, range of the model (from memory, verify against the edition in
 * force): three-phase 208 V to 15 kV; bolted fault current 500 A to 106 kA at 208-600 V and
 * 200 A to 65 kA at 601 V-15 kV; gap 6.35-76.2 mm at 208-600 V and 19.05-254 mm at
 * 601 V-15 kV; working distance 305 mm (12 in) or more.
 */
static const tw_ieee1584_range ranges[] = {
    {208, 600, 0.5, 106, 6.35, 76.2},
    {600, 15000, 0.2, 65, 19.05, 254},
};

const tw_ieee1584_range *tw_ieee1584_range_for(double volts)
{
    if (!isfinite(volts))
        return NULL;
    /* 600 V itself belongs to the first band: the order of the table decides. */
    for (size_t i = 0; i < sizeof ranges / sizeof ranges[0]; i++)
        if (volts >= ranges[i].v_min && volts <= ranges[i].v_max)
            return &ranges[i];
    return NULL;
}

/* ---- envelope ----------------------------------------------------------------------------- */

double tw_row_distance_exponent(const tw_row *r, const char **source)
{
    if (source)
        *source = NULL;
    if (tw_row_has(r, TW_F_DISTANCE_EXPONENT) || ((r->invalid >> TW_F_DISTANCE_EXPONENT) & 1u)) {
        double x = r->num[TW_F_DISTANCE_EXPONENT];
        return tw_row_has(r, TW_F_DISTANCE_EXPONENT) && positive(x) ? x : NAN;
    }
    double volts = r->num[TW_F_NOMINAL_VOLTAGE_V];
    if (!tw_row_has(r, TW_F_EQUIPMENT_TYPE) || !tw_row_has(r, TW_F_NOMINAL_VOLTAGE_V) ||
        !positive(volts))
        return NAN;
    const char *cited = NULL;
    double x = tw_distance_exponent_for(r->text[TW_F_EQUIPMENT_TYPE], volts, &cited);
    if (source && !isnan(x))
        *source = cited;
    return x;
}

static double field_or_nan(const tw_row *r, tw_field f)
{
    return r && tw_row_has(r, f) && isfinite(r->num[f]) ? r->num[f] : NAN;
}

/* The arc rating a row asks for, as its label would print it: incident energy rounded up to
 * 0.1 cal/cm2, or the PPE category's minimum arc rating. NAN when it has neither. */
static double row_rating(const tw_row *r)
{
    double rating = tw_row_rating(r);
    return isnan(rating) ? NAN : tw_round_energy_up(rating); /* a category's rating is whole */
}

static int by_falling_current(const void *a, const void *b)
{
    const tw_sweep_point *p = a, *q = b;
    if (p->source_ka != q->source_ka)
        return p->source_ka > q->source_ka ? -1 : 1;
    if (p->energy_cal != q->energy_cal)
        return p->energy_cal > q->energy_cal ? -1 : 1;  /* worst first among equals */
    return p->row < q->row ? -1 : p->row > q->row;      /* stable: input order */
}

/* Rows with a usable source current and incident energy, one point per distinct current
 * (the worst of equals), sorted by falling current. */
static int build_sweep(const tw_bus *bus, tw_envelope *e)
{
    e->sweep = malloc((bus->count ? bus->count : 1) * sizeof *e->sweep);
    if (!e->sweep)
        return -1;
    size_t n = 0;
    for (size_t i = 0; i < bus->count; i++) {
        const tw_row *r = bus->rows[i];
        double ka = field_or_nan(r, TW_F_SOURCE_FAULT_KA);
        double cal = field_or_nan(r, TW_F_INCIDENT_ENERGY_CAL);
        if (!positive(ka) || !positive(cal))
            continue;
        e->sweep[n++] = (tw_sweep_point){r, ka, cal};
    }
    qsort(e->sweep, n, sizeof *e->sweep, by_falling_current);
    size_t kept = 0;
    for (size_t i = 0; i < n; i++)
        if (kept == 0 || e->sweep[i].source_ka != e->sweep[kept - 1].source_ka)
            e->sweep[kept++] = e->sweep[i];
    e->sweep_count = kept;
    return 0;
}

/* The first step down in current where the energy rises (docs/envelope.md). */
static void find_rise(tw_envelope *e)
{
    e->rises = 0;
    e->rises_below_ka = NAN;
    for (size_t i = 1; i < e->sweep_count; i++) {
        double before = e->sweep[i - 1].energy_cal, after = e->sweep[i].energy_cal;
        if (after > before * (1.0 + TW_RISE_FRACTION) && after - before > TW_RISE_MIN_CAL) {
            e->rises = 1;
            e->rise_index = i;
            e->rises_below_ka = e->sweep[i - 1].source_ka;
            return;
        }
    }
}

/* The lowest source current such that every point at or above it is within the target. */
static void find_lowest_adequate(tw_envelope *e)
{
    e->lowest_adequate_ka = NAN;
    for (size_t i = 0; i < e->sweep_count; i++) {
        if (tw_round_energy_up(e->sweep[i].energy_cal) > e->target_cal)
            return;
        e->lowest_adequate_ka = e->sweep[i].source_ka;
    }
}

int tw_envelope_row_over(const tw_envelope *e, const tw_row *r)
{
    double rating = row_rating(r);
    return e->has_target && !isnan(rating) && rating > e->target_cal;
}

int tw_envelope_bus(const tw_bus *bus, double target_cal, tw_envelope *out)
{
    memset(out, 0, sizeof *out);
    out->energy_cal = out->rating_cal = out->boundary_mm = NAN;
    out->rises_below_ka = out->lowest_adequate_ka = out->target_cal = NAN;
    if (!bus)
        return 0;
    out->equipment_id = bus->equipment_id;
    /* The one worst-case rule (scenario.c); bus->governing may be a fallback row. */
    out->governing = tw_worst_case(bus->rows, bus->count);
    out->energy_cal = field_or_nan(out->governing, TW_F_INCIDENT_ENERGY_CAL);
    out->rating_cal = out->governing ? row_rating(out->governing) : NAN;
    out->boundary_mm = field_or_nan(out->governing, TW_F_ARC_FLASH_BOUNDARY_MM);
    if (build_sweep(bus, out) != 0) {
        memset(out, 0, sizeof *out);
        return -1;
    }
    find_rise(out);
    if (!isnan(target_cal)) {
        out->has_target = 1;
        out->target_cal = target_cal;
        find_lowest_adequate(out);
        out->target_met = out->governing != NULL; /* no hazard known: not met */
        for (size_t i = 0; i < bus->count; i++)
            if (tw_envelope_row_over(out, bus->rows[i]) || isnan(row_rating(bus->rows[i])))
                out->target_met = 0;
    }
    return 0;
}

int tw_envelope_has_sweep(const tw_envelope *e)
{
    return e->sweep_count >= TW_SWEEP_MIN_POINTS || (e->rises && e->sweep_count >= 2);
}

void tw_envelope_free(tw_envelope *e)
{
    if (!e)
        return;
    free(e->sweep);
    memset(e, 0, sizeof *e);
}
