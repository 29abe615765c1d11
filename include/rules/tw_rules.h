/*
 * tw_rules.h - the trade's tables and the rounding and signal-word rules, as pure functions.
 *
 * Every table lives in src/rules/rules.c beside the source it comes from (standard, table, edition).
 * Nothing here allocates or prints.
 */
#ifndef TW_RULES_H
#define TW_RULES_H

#include <stddef.h>

#include "read/tw_site.h"

/* One row of NFPA 70E Table 130.4(E)(a), shock protection approach boundaries, AC. */
typedef struct {
    double v_min, v_max;            /* nominal phase-to-phase voltage range, inclusive */
    double limited_movable_mm;      /* limited approach, exposed movable conductor */
    const char *limited_movable_ft; /* as printed in the table, e.g. "10 ft 0 in" */
    double limited_fixed_mm;        /* limited approach, exposed fixed circuit part */
    const char *limited_fixed_ft;
    double restricted_mm;           /* 0 with restricted_ft "avoid contact" */
    const char *restricted_ft;
} tw_approach;

/* The row for a nominal voltage, or NULL when the voltage is below 50 V or above the table. */
const tw_approach *tw_approach_for_voltage(double volts);

/* One rubber insulating glove class (ASTM D120, maximum use voltage AC). */
typedef struct {
    const char *name;       /* "00", "0", "1", "2", "3", "4" */
    double max_use_v_ac;
} tw_glove_class;

/* The lowest class whose maximum use voltage is at least volts, or NULL above class 4. */
const tw_glove_class *tw_glove_class_for_voltage(double volts);

/* Minimum arc rating for an NFPA 70E PPE category 1-4 (Table 130.7(C)(15)(c)); 0 otherwise. */
double tw_ppe_category_rating(int category);

/* Incident energy at which the arc-flash boundary is drawn, cal/cm2 (NFPA 70E definition). */
#define TW_AFB_ENERGY_CAL_CM2 1.2

/* Round incident energy up to the next 0.1 cal/cm2 (toward safety). */
double tw_round_energy_up(double cal);

/* Round a length up to the next whole millimetre / whole inch (toward safety). */
long tw_round_mm_up(double mm);
long tw_round_in_up(double mm);

/* Format a length for a label: imperial with metric, "4 ft 8 in (1398 mm)", or metric only,
 * "1398 mm". Both parts are rounded up. Writes at most n bytes. */
void tw_format_length(double mm, tw_units units, char *buf, size_t n);

/* Format a stated distance (the working distance of an incident energy) to the NEAREST inch
 * and millimetre: it is a condition of the study, not a boundary, so rounding it up would
 * misstate where the energy applies. "18 in (457 mm)" or "457 mm". */
void tw_format_distance(double mm, tw_units units, char *buf, size_t n);

typedef enum { TW_SIGNAL_WARNING, TW_SIGNAL_DANGER } tw_signal;

/* DANGER when cal exceeds the site's threshold or the highest PPE level it stocks. */
tw_signal tw_signal_word(double cal, const tw_site *site);

/* "WARNING" or "DANGER". */
const char *tw_signal_name(tw_signal s);

#endif
