/* rules.c - the trade's tables, rounding toward safety and the signal word (see tw_rules.h).
 *
 * Every table below carries its source beside it. Values marked "from memory" were entered
 * from memory of the edition named: verify them against the edition in force before relying
 * on them (docs/rules.md lists them all).
 */
#include "rules/tw_rules.h"

#include <math.h>
#include <stdio.h>

/*
 * NFPA 70E (2024 edition), Table 130.4(E)(a), "Shock Protection Approach Boundaries to
 * Exposed Energized Electrical Conductors or Circuit Parts for Alternating-Current Systems".
 * Columns: nominal system voltage range, phase to phase; limited approach boundary for an
 * exposed movable conductor; limited approach boundary for an exposed fixed circuit part;
 * restricted approach boundary (includes the inadvertent movement adder).
 * From memory, verify against the edition in force.
 *
 * The metric and imperial columns are the table's own values, not conversions of each other
 * (1.0 m beside 3 ft 6 in), so the label prints both texts as the table gives them. The mm
 * values come from the metric column.
 */
static const tw_approach approach_table[] = {
    /* v_min     v_max      movable            fixed              restricted */
    {50,       150,       3000, "10 ft 0 in", 1000, "3 ft 6 in",  0,    "avoid contact"},
    {151,      750,       3000, "10 ft 0 in", 1000, "3 ft 6 in",  300,  "1 ft 0 in"},
    {751,      15000,     3000, "10 ft 0 in", 1500, "5 ft 0 in",  700,  "2 ft 2 in"},
    {15100,    36000,     3000, "10 ft 0 in", 1800, "6 ft 0 in",  800,  "2 ft 7 in"},
    {36100,    46000,     3000, "10 ft 0 in", 2500, "8 ft 0 in",  800,  "2 ft 9 in"},
    {46100,    72500,     3000, "10 ft 0 in", 2500, "8 ft 0 in",  1000, "3 ft 3 in"},
    {72600,    121000,    3300, "10 ft 8 in", 2500, "8 ft 0 in",  1000, "3 ft 4 in"},
    {138000,   145000,    3400, "11 ft 0 in", 3000, "10 ft 0 in", 1200, "3 ft 10 in"},
    {161000,   169000,    3600, "11 ft 8 in", 3600, "11 ft 8 in", 1300, "4 ft 3 in"},
    {230000,   242000,    4000, "13 ft 0 in", 4000, "13 ft 0 in", 1700, "5 ft 8 in"},
    {345000,   362000,    4700, "15 ft 4 in", 4700, "15 ft 4 in", 2800, "9 ft 2 in"},
    {500000,   550000,    5800, "19 ft 0 in", 5800, "19 ft 0 in", 3600, "11 ft 10 in"},
    {765000,   800000,    7200, "23 ft 9 in", 7200, "23 ft 9 in", 4900, "15 ft 11 in"},
};

#define COUNT(a) (sizeof(a) / sizeof((a)[0]))

/* A voltage between two rows (150.5 V, or 121-138 kV, which the table does not list) takes the
 * NEXT HIGHER row: its boundaries are never smaller, so the label fails safe. Rows are sorted,
 * so the first row whose upper edge is not below the voltage is that row. */
const tw_approach *tw_approach_for_voltage(double volts)
{
    if (!(volts >= approach_table[0].v_min))   /* also refuses NaN */
        return NULL;
    for (size_t i = 0; i < COUNT(approach_table); i++)
        if (volts <= approach_table[i].v_max)
            return &approach_table[i];
    return NULL;
}

/*
 * ASTM D120, rubber insulating gloves, maximum use voltage AC by class (the standard's
 * table of proof-test and maximum use voltages). From memory, verify against the edition in
 * force.
 */
static const tw_glove_class glove_table[] = {
    {"00", 500},
    {"0", 1000},
    {"1", 7500},
    {"2", 17000},
    {"3", 26500},
    {"4", 36000},
};

const tw_glove_class *tw_glove_class_for_voltage(double volts)
{
    if (!(volts > 0))   /* also refuses NaN */
        return NULL;
    for (size_t i = 0; i < COUNT(glove_table); i++)
        if (volts <= glove_table[i].max_use_v_ac)
            return &glove_table[i];
    return NULL;
}

/*
 * NFPA 70E (2024 edition), Table 130.7(C)(15)(c), minimum arc rating of the PPE for each
 * arc-flash PPE category, cal/cm2. From memory, verify against the edition in force.
 */
static const double ppe_category_rating[] = {0, 4, 8, 25, 40};

double tw_ppe_category_rating(int category)
{
    if (category < 1 || category >= (int)COUNT(ppe_category_rating))
        return 0;
    return ppe_category_rating[category];
}

/* Relative slack for "already a whole step": a value such as 6.3 becomes 63.000000000000007
 * when scaled, and must not round up to 6.4. 1e-9 is far below any printed digit. */
#define TW_ROUND_SLACK 1e-9

/* Smallest whole number of steps not below x (x already scaled to steps). Rounding toward
 * safety never gives zero for a value above zero (at least one step), nor negative zero. */
static double ceil_steps(double x)
{
    double slack = TW_ROUND_SLACK * (fabs(x) > 1 ? fabs(x) : 1);
    double steps = ceil(x - slack) + 0.0; /* + 0.0 turns -0 into 0 */
    return x > 0 && steps < 1 ? 1 : steps;
}

double tw_round_energy_up(double cal)
{
    if (!isfinite(cal))
        return cal;
    return ceil_steps(cal * 10) / 10;
}

/* Longest length the rounding helpers accept, mm (a thousand km: far beyond any boundary, and
 * small enough that the result fits a long everywhere). */
#define TW_MAX_LENGTH_MM 1e9

long tw_round_mm_up(double mm)
{
    if (!(mm >= 0 && mm <= TW_MAX_LENGTH_MM))
        return -1;
    return (long)ceil_steps(mm);
}

long tw_round_in_up(double mm)
{
    if (!(mm >= 0 && mm <= TW_MAX_LENGTH_MM))
        return -1;
    return (long)ceil_steps(mm / 25.4);
}

/* "4 ft 7 in (1397 mm)"; under a foot "8 in (204 mm)"; metric "1397 mm". The inches are
 * rounded up first and then split, so 11.9 in prints as "1 ft 0 in". An invalid length
 * (negative, NaN, huge) writes an empty string: callers check values before formatting. */
void tw_format_length(double mm, tw_units units, char *buf, size_t n)
{
    if (!buf || n == 0)
        return;
    long m = tw_round_mm_up(mm), in = tw_round_in_up(mm);
    if (m < 0 || in < 0)
        buf[0] = '\0';
    else if (units == TW_UNITS_METRIC)
        snprintf(buf, n, "%ld mm", m);
    else if (in < 12)
        snprintf(buf, n, "%ld in (%ld mm)", in, m);
    else
        snprintf(buf, n, "%ld ft %ld in (%ld mm)", in / 12, in % 12, m);
}

void tw_format_distance(double mm, tw_units units, char *buf, size_t n)
{
    if (!buf || n == 0)
        return;
    if (!(mm >= 0 && mm <= TW_MAX_LENGTH_MM)) {
        buf[0] = '\0';
        return;
    }
    long m = lround(mm), in = lround(mm / 25.4);
    if (units == TW_UNITS_METRIC)
        snprintf(buf, n, "%ld mm", m);
    else
        snprintf(buf, n, "%ld in (%ld mm)", in, m);
}

/*
 * Signal words from ANSI Z535.4: DANGER for a hazard that will cause death or serious injury
 * if not avoided, WARNING for one that could; the line is drawn at tw_danger_above_cal().
 * Energy beyond every PPE level the site stocks is always DANGER, and so is a value that is
 * not a number (fail closed).
 */
tw_signal tw_signal_word(double cal, const tw_site *site)
{
    if (isnan(cal))
        return TW_SIGNAL_DANGER;
    double threshold = tw_danger_above_cal(site);
    if (!(cal <= threshold))   /* a NaN threshold gives DANGER too */
        return TW_SIGNAL_DANGER;
    if (site && cal > tw_site_max_rating(site))
        return TW_SIGNAL_DANGER;
    return TW_SIGNAL_WARNING;
}

const char *tw_signal_name(tw_signal s)
{
    return s == TW_SIGNAL_WARNING ? "WARNING" : "DANGER";
}

/* ---- trade rules ------------------------------------------------------------------------- */

tw_date tw_review_due_date(tw_date study)
{
    return tw_date_add_years(study, TW_REVIEW_YEARS);
}

double tw_service_label_min_a(const tw_site *site)
{
    return site && site->service_label_min_a > 0 ? site->service_label_min_a
                                                 : TW_NEC_SERVICE_LABEL_MIN_A;
}

double tw_danger_above_cal(const tw_site *site)
{
    return site && site->danger_above_cal_cm2 != 0 ? site->danger_above_cal_cm2
                                                   : TW_DANGER_ABOVE_CAL_CM2;
}

int tw_ppe_category_valid(double c)
{
    return c >= TW_PPE_CATEGORY_MIN && c <= TW_PPE_CATEGORY_MAX && c == floor(c);
}

int tw_site_check_rules(const tw_site *site, const char *file, tw_diags *d)
{
    double a = site->service_label_min_a;
    if (a <= TW_NEC_SERVICE_LABEL_MIN_A)
        return 0;
    tw_source src = {file, 0, "service_label_min_a"};
    tw_diag_add(d, TW_ERROR, &src, NULL, "service_label_min_a",
                "expected a number above 0 and at most %g, got %g", TW_NEC_SERVICE_LABEL_MIN_A, a);
    return -1;
}

double tw_row_rating(const tw_row *r)
{
    if (tw_row_has(r, TW_F_INCIDENT_ENERGY_CAL)) {
        double e = r->num[TW_F_INCIDENT_ENERGY_CAL];
        if (isfinite(e) && e > 0)
            return e;
    }
    if (tw_row_has(r, TW_F_PPE_CATEGORY) && tw_ppe_category_valid(r->num[TW_F_PPE_CATEGORY]))
        return tw_ppe_category_rating((int)r->num[TW_F_PPE_CATEGORY]);
    return NAN;
}
