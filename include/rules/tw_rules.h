/*
 * tw_rules.h - the trade's tables and the rounding and signal-word rules, as pure functions.
 *
 * Every table lives in src/rules/rules.c beside the source it comes from (standard, table, edition).
 * Nothing here allocates or prints.
 */
#ifndef TW_RULES_H
#define TW_RULES_H

#include <stddef.h>

#include "base/tw_date.h"
#include "base/tw_diag.h"
#include "read/tw_results.h"
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

/* ---- trade rules: one definition each, with its source ----------------------------------- */

/* NFPA 70E 130.5(G): the arc-flash risk assessment is reviewed at intervals not exceeding
 * 5 years (from memory, subsection number included: verify against the edition in force). */
#define TW_REVIEW_YEARS 5

/* The review due date of a study dated `study`: TW_REVIEW_YEARS later, 29 February -> 28
 * February (never late). The label, `due` and every other user ask here. */
tw_date tw_review_due_date(tw_date study);

/* NEC 110.16(B) (2020 edition): service equipment rated 1200 A or more carries a label with
 * the available fault current and the clearing time of the service overcurrent device. From
 * memory, verify against the edition in force: the 2023 edition lowered this to 1000 A and
 * extended it to feeder-supplied equipment; a site on that edition sets 1000. */
#define TW_NEC_SERVICE_LABEL_MIN_A 1200.0

/* The service-label threshold in force: the site's (lower) setting, or the code's. */
double tw_service_label_min_a(const tw_site *site);

/* DANGER above this incident energy, cal/cm2: common practice (the NFPA 70E informational
 * notes on very high incident energy speak of greater emphasis above 40 cal/cm2; from memory,
 * verify against the edition in force). A site may set its own threshold. */
#define TW_DANGER_ABOVE_CAL_CM2 40.0

/* The DANGER threshold in force: the site's setting, or the common-practice one (site NULL
 * or not set). */
double tw_danger_above_cal(const tw_site *site);

/* Longest arc duration worth trusting, seconds: IEEE 1584 (2002 B.1.2 and 2018 6.9.1, from
 * memory, verify against the edition in force) suggests 2 s as a reasonable maximum, since a
 * person exposed to an arc would most likely move away within it; a study may have capped its
 * energy there (common practice). Longer clearing times are flagged, never trusted silently. */
#define TW_MAX_ARC_DURATION_S 2.0

/* NFPA 70E Table 130.7(C)(15)(c): PPE categories 1 to 4. */
#define TW_PPE_CATEGORY_MIN 1
#define TW_PPE_CATEGORY_MAX 4

/* 1 when c is a whole PPE category TW_PPE_CATEGORY_MIN..MAX, else 0 (NaN included). */
int tw_ppe_category_valid(double c);

/* The arc rating a row asks for, cal/cm2: its incident energy when that is a positive finite
 * number, else the minimum arc rating of its PPE category (NFPA 70E Table 130.7(C)(15)(c)),
 * else NAN. Not rounded: the worst case compares these; a label rounds the energy up. */
double tw_row_rating(const tw_row *r);

/* The trade rules on the site's own settings, after it was read from `file`: a service-label
 * threshold above the code's would leave required labels out and is refused (a finding at
 * service_label_min_a). 0, or -1 after adding the finding. */
int tw_site_check_rules(const tw_site *site, const char *file, tw_diags *d);

#endif
