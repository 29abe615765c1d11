/*
 * tw_analysis.h - physics behind the numbers of a study, as pure functions: the infinite-bus
 * fault current of a transformer, its impedance in ohms, the arc-flash boundary implied by an
 * incident energy, the IEEE 1584 distance exponents and model ranges, and the envelope of a
 * bus's scenarios (worst case, where energy rises as the source current falls, how low the
 * source current may go for a given arc rating).
 *
 * Every function here is pure: nothing prints, nothing exits. Invalid input (zero, negative,
 * NaN or infinite values) gives -1 or NAN, never a crash. Definitions and sources:
 * docs/checks.md (the checks) and docs/envelope.md (the envelope).
 *
 * Ownership: tw_envelope owns its sweep array; tw_envelope_free() accepts a zeroed struct.
 * The rows an envelope points at belong to the tw_results they came from.
 */
#ifndef TW_ANALYSIS_H
#define TW_ANALYSIS_H

#include <stddef.h>

#include "rules/tw_scenario.h"

/* ---- transformer ------------------------------------------------------------------------ */

/* Three-phase transformer: secondary full-load current and the infinite-bus fault current
 * (every impedance upstream of the transformer taken as zero):
 *     I_fla = kVA x 1000 / (sqrt(3) x V)        I_ib = I_fla x 100 / %Z              */
typedef struct {
    double full_load_a;
    double fault_a;
} tw_infinite_bus;

/* 0 and out filled, or -1 when any input is not a finite number above 0. */
int tw_infinite_bus_calc(double kva, double volts, double z_percent, tw_infinite_bus *out);

/* The transformer impedance in ohms referred to the secondary, split by its X/R ratio:
 *     Z_base = V^2 / (kVA x 1000)    Z = Z_base x %Z / 100
 *     angle = atan(X/R)              R = Z cos(angle)    X = Z sin(angle)                 */
typedef struct {
    double z_base_ohm, z_ohm, angle_deg, r_ohm, x_ohm;
} tw_xfmr_impedance;

/* 0 and out filled, or -1 when any input is not a finite number above 0. */
int tw_xfmr_impedance_calc(double kva, double volts, double z_percent, double x_over_r,
                           tw_xfmr_impedance *out);

/* A bolted fault current may exceed the transformer's infinite-bus value (plus motor
 * contribution) by this fraction before the infinite-bus check calls it an error: IEEE
 * C57.12.00 lets a transformer's tested impedance differ from its specified value by 7.5 %
 * (from memory, verify against the edition in force), and a study that uses the low end of
 * that tolerance for maximum fault current gets 1 / 0.925 = 8.1 % more current than the
 * nameplate %Z gives. 10 % covers that and the rounding of the study's report; a data-entry
 * slip (a wrong kVA, a decimal point) is far larger. */
#define TW_INFINITE_BUS_TOLERANCE 0.10

/* ---- arc-flash boundary ----------------------------------------------------------------- */

/* Where incident energy e_cal (cal/cm2) at working distance d_mm falls to 1.2 cal/cm2 (NFPA 70E
 * definition of the arc-flash boundary), with the IEEE 1584 distance relation E ~ 1/D^x:
 *     AFB = D x (E / 1.2)^(1/x)
 * In mm; NAN when any input is not a finite number above 0 or the result is not finite. */
double tw_afb_mm(double e_cal, double d_mm, double x);

/* A stated boundary may differ from tw_afb_mm() by this fraction of the computed value before
 * the consistency check warns: studies report energy to 0.01 or 0.1 cal/cm2 and boundaries to
 * the inch, and at small energies that rounding alone moves the boundary by a few percent. */
#define TW_AFB_TOLERANCE 0.05

/* The IEEE 1584-2002 Table 4 distance exponent for an equipment type (case-insensitive:
 * "switchgear", "switchboard" (treated as switchgear), "mcc", "panelboard", "cable",
 * "open-air") at a nominal voltage, or NAN when the type is unknown or the voltage is outside
 * 208 V - 15 kV. IEEE 1584-2018 replaced the single exponent with configuration-dependent
 * terms, so a study's own distance_exponent always wins over this default. If source is not
 * NULL it receives a short citation for messages. */
double tw_distance_exponent_for(const char *equipment_type, double volts, const char **source);

/* The distance exponent of a row, the one rule every user follows: the study's own
 * distance_exponent when the row gives one (NAN when that value is unreadable, not finite or
 * not above 0: a value the study stated is never replaced by a table's), else
 * tw_distance_exponent_for() its equipment type and nominal voltage, else NAN. *source (if not
 * NULL) receives the table's citation when the default was used, else NULL. */
double tw_row_distance_exponent(const tw_row *r, const char **source);

/* ---- IEEE 1584-2018 model ranges -------------------------------------------------------- */

/* One voltage band of the IEEE 1584-2018 model's range of validity. */
typedef struct {
    double v_min, v_max;            /* nominal phase-to-phase voltage, inclusive */
    double ibf_min_ka, ibf_max_ka;  /* bolted fault current */
    double gap_min_mm, gap_max_mm;  /* gap between conductors */
} tw_ieee1584_range;

/* The band for a voltage, or NULL outside 208 V - 15 kV. */
const tw_ieee1584_range *tw_ieee1584_range_for(double volts);

/* Lowest and highest voltage of the model, and the shortest working distance it covers. */
#define TW_IEEE1584_V_MIN 208.0
#define TW_IEEE1584_V_MAX 15000.0
#define TW_IEEE1584_MIN_WD_MM 305.0


/* ---- envelope of a bus's scenarios ------------------------------------------------------ */

/* A step of energy is a rise when it is more than this fraction above the step before AND
 * more than TW_RISE_MIN_CAL above it (docs/envelope.md). With a constant clearing time,
 * incident energy falls with the current, so any real rise means the protective device became
 * slower; the thresholds only keep the rounding of the study's report from counting. */
#define TW_RISE_FRACTION 0.05
#define TW_RISE_MIN_CAL 0.1

/* One distinct source fault current of a bus; when several scenarios share it, the one with
 * the most incident energy stands for it. */
typedef struct {
    const tw_row *row;
    double source_ka;
    double energy_cal;
} tw_sweep_point;

typedef struct {
    const char *equipment_id;
    const tw_row *governing;    /* tw_worst_case(); NULL when no row qualifies */
    double energy_cal;          /* governing incident energy; NAN when it has only a category */
    double rating_cal;          /* arc rating the label asks for: energy rounded up, or the
                                   category's minimum arc rating; NAN when unknown */
    double boundary_mm;         /* governing arc-flash boundary; NAN when absent */
    tw_sweep_point *sweep;      /* falling source current; rows with a source_fault_ka and an
                                   incident energy */
    size_t sweep_count;
    int rises;                  /* 1 when energy rises as the source current falls */
    size_t rise_index;          /* sweep[rise_index] is the first point with the higher energy */
    double rises_below_ka;      /* sweep[rise_index - 1].source_ka; NAN when no rise */
    int has_target;
    double target_cal;
    double lowest_adequate_ka;  /* NAN when even the highest current exceeds the target or
                                   there is no sweep */
    int target_met;             /* every scenario within the target */
} tw_envelope;

/* Envelope of one bus. target_cal is an arc rating in cal/cm2, or NAN for none. Energies are
 * compared with the target after rounding up to 0.1 cal/cm2, as the label prints them.
 * 0, or -1 when out of memory (out is then zeroed). */
int tw_envelope_bus(const tw_bus *bus, double target_cal, tw_envelope *out);

/* 1 when the row's rating (as in tw_envelope.rating_cal) exceeds the envelope's target. */
int tw_envelope_row_over(const tw_envelope *e, const tw_row *r);

void tw_envelope_free(tw_envelope *e);

/* A bus has a scenario sweep worth plotting when it has at least this many distinct source
 * fault currents (beyond the usual maximum, minimum and infinite-bus cases), or a rise. */
#define TW_SWEEP_MIN_POINTS 4

/* 1 when the envelope has a sweep worth plotting (see TW_SWEEP_MIN_POINTS). */
int tw_envelope_has_sweep(const tw_envelope *e);

#endif
