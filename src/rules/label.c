/* label.c - what one arc-flash hazard label says (see tw_label.h and docs/rules.md).
 *
 * tw_label_derive() reads the bus's governing scenario, trusts none of it (a negative, NaN or
 * missing value is an error here even if validation already reported it), and fills the label
 * with the text a worker will read, rounded toward safety. Whatever cannot be filled is left
 * out and named in an error finding, so the caller can refuse the label or print a draft.
 */
#include "rules/tw_label.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <openssl/evp.h>

#include "rules/tw_analysis.h"
#include "base/tw_date.h"
#include "rules/tw_messages.h"
#include "read/tw_results.h"
#include "base/tw_util.h"

/* Canonical-form keys, in enum order. */
static const char *const key_names[TW_L_COUNT] = {
    [TW_L_SIGNAL_WORD] = "signal_word",
    [TW_L_EQUIPMENT_ID] = "equipment_id",
    [TW_L_DESCRIPTION] = "description",
    [TW_L_LOCATION] = "location",
    [TW_L_NOMINAL_VOLTAGE] = "nominal_voltage",
    [TW_L_ARC_FLASH_BOUNDARY] = "arc_flash_boundary",
    [TW_L_BOUNDARY_NOTE] = "boundary_note",
    [TW_L_INCIDENT_ENERGY] = "incident_energy",
    [TW_L_WORKING_DISTANCE] = "working_distance",
    [TW_L_PPE_CATEGORY] = "ppe_category",
    [TW_L_MIN_ARC_RATING] = "min_arc_rating",
    [TW_L_PPE_LEVEL] = "ppe_level",
    [TW_L_NO_PPE_ADEQUATE] = "no_ppe_adequate",
    [TW_L_LIMITED_APPROACH] = "limited_approach",
    [TW_L_RESTRICTED_APPROACH] = "restricted_approach",
    [TW_L_GLOVE_CLASS] = "glove_class",
    [TW_L_AVAILABLE_FAULT] = "available_fault",
    [TW_L_SERVICE_CLEARING_TIME] = "service_clearing_time",
    [TW_L_SERVICE_LABEL_DATE] = "service_label_date",
    [TW_L_STUDY_ID] = "study_id",
    [TW_L_STUDY_DATE] = "study_date",
    [TW_L_SCENARIO] = "scenario",
    [TW_L_REVIEW_DUE] = "review_due",
    [TW_L_REVISION_NOTE] = "revision_note",
};


const char *tw_label_key_name(tw_label_key k)
{
    return (unsigned)k < TW_L_COUNT ? key_names[k] : NULL;
}

void tw_label_free(tw_label *l)
{
    if (!l)
        return;
    for (int k = 0; k < TW_L_COUNT; k++)
        free(l->value[k]);
    memset(l, 0, sizeof *l);
}

int tw_label_set(tw_label *l, tw_label_key k, const char *value)
{
    if (!l || (unsigned)k >= TW_L_COUNT || !value)
        return -1;
    char *copy = tw_strdup(value);
    if (!copy)
        return -1;
    free(l->value[k]);
    l->value[k] = copy;
    return 0;
}

/* The service label date is left out so that reprinting unchanged content on another day
 * keeps the same hash (and the same QR payload). */
static int in_canonical_form(int k)
{
    return k != TW_L_SERVICE_LABEL_DATE;
}

char *tw_label_canonical(const tw_label *l)
{
    size_t len = 0;
    for (int k = 0; k < TW_L_COUNT; k++)
        if (l->value[k] && in_canonical_form(k))
            len += strlen(key_names[k]) + 1 + strlen(l->value[k]) + 1;
    char *out = malloc(len + 1), *p = out;
    if (!out)
        return NULL;
    for (int k = 0; k < TW_L_COUNT; k++) {
        if (!l->value[k] || !in_canonical_form(k))
            continue;
        size_t kn = strlen(key_names[k]), vn = strlen(l->value[k]);
        memcpy(p, key_names[k], kn);
        p += kn;
        *p++ = '=';
        memcpy(p, l->value[k], vn);
        p += vn;
        *p++ = '\n';
    }
    *p = '\0';
    return out;
}

int tw_label_rehash(tw_label *l)
{
    char *text = tw_label_canonical(l);
    if (!text)
        return -1;
    unsigned char md[EVP_MAX_MD_SIZE];
    unsigned int n = 0;
    int ok = EVP_Digest(text, strlen(text), md, &n, EVP_sha256(), NULL);
    free(text);
    if (!ok || n != 32)
        return -1;
    static const char hex[] = "0123456789abcdef";
    for (unsigned i = 0; i < n; i++) {
        l->hash[2 * i] = hex[md[i] >> 4];
        l->hash[2 * i + 1] = hex[md[i] & 15];
    }
    l->hash[64] = '\0';
    return 0;
}

/* ---- derivation ------------------------------------------------------------------------ */

typedef struct {
    const tw_row *row;
    const char *eq;          /* equipment ID for findings */
    const tw_site *site;
    tw_label *out;
    tw_diags *d;
    unsigned errors;
} deriver;

static void report(deriver *D, tw_severity sev, tw_field f, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 4, 5)))
#endif
    ;

/* A finding about field f of the governing row, naming the row's file and line or JSON path. */
static void report(deriver *D, tw_severity sev, tw_field f, const char *fmt, ...)
{
    if (sev == TW_ERROR)
        D->errors++;
    if (!D->d)
        return;
    char path[512] = "", msg[1024];
    tw_source src = {D->row->file, D->row->line, D->row->path};
    if (f < TW_F_COUNT)
        src = tw_row_source(D->row, f, path, sizeof path);
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    tw_diag_add(D->d, sev, &src, D->eq, f < TW_F_COUNT ? tw_field_display(f) : NULL, "%s", msg);
}

static void set(deriver *D, tw_label_key k, const char *value)
{
    if (tw_label_set(D->out, k, value) != 0)
        report(D, TW_ERROR, TW_F_COUNT, "out of memory while writing %s", key_names[k]);
}

static void setf(deriver *D, tw_label_key k, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 3, 4)))
#endif
    ;

static void setf(deriver *D, tw_label_key k, const char *fmt, ...)
{
    char small[128]; /* every value fits; the second pass is for one that does not */
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(small, sizeof small, fmt, ap);
    va_end(ap);
    char *text = n >= 0 ? malloc((size_t)n + 1) : NULL;
    if (!text) {
        report(D, TW_ERROR, TW_F_COUNT, "out of memory while writing %s", key_names[k]);
        return;
    }
    if ((size_t)n < sizeof small) {
        memcpy(text, small, (size_t)n + 1);
    } else {
        va_start(ap, fmt);
        vsnprintf(text, (size_t)n + 1, fmt, ap);
        va_end(ap);
    }
    free(D->out->value[k]);
    D->out->value[k] = text;
}

/*
 * A value made of fixed words (glove class, "avoid contact", the computed-boundary note), in
 * the label's language; on a two-language label both, English first, joined by " / ". The
 * value is stored as printed, so the canonical form and the content hash cover the printed
 * language: the same bus gives another hash in another language (docs/messages.md).
 */
static void set_words(deriver *D, tw_label_key k, int msg_id, const char *const *args, size_t n)
{
    tw_lang langs[TW_MAX_LANGS];
    int nl = tw_langs_parse(D->site->language ? D->site->language : "en", langs);
    if (nl == 0) {
        langs[0] = TW_LANG_EN;   /* site.c accepts only known codes; English otherwise */
        nl = 1;
    }
    char *parts[TW_MAX_LANGS] = {NULL};
    size_t len = 1;
    for (int i = 0; i < nl; i++) {
        if (!(parts[i] = tw_msg_fill(langs[i], msg_id, args, n)))
            break;
        len += strlen(parts[i]) + strlen(TW_MSG_VALUE_SEP);
    }
    char *text = parts[nl - 1] ? malloc(len) : NULL;
    if (text) {
        text[0] = '\0';
        for (int i = 0; i < nl; i++) {
            if (i)
                strcat(text, TW_MSG_VALUE_SEP);
            strcat(text, parts[i]);
        }
        free(D->out->value[k]);
        D->out->value[k] = text;
    } else {
        report(D, TW_ERROR, TW_F_COUNT, "out of memory while writing %s", key_names[k]);
    }
    for (int i = 0; i < nl; i++)
        free(parts[i]);
}

/* Room for any double printed with %.2f (309 integer digits at most). */
#define TW_NUM_BUF 330

/* A number without exponent or trailing zeros: 8, 8.5, 13800 (no thousands separators, so the
 * text reads the same in every locale). */
static void format_number(double v, char *buf, size_t n)
{
    snprintf(buf, n, "%.2f", v);
    char *dot = strchr(buf, '.');
    if (!dot)
        return;
    char *end = buf + strlen(buf);
    while (end > dot + 1 && end[-1] == '0')
        *--end = '\0';
    if (end == dot + 1)
        *dot = '\0';
}

/* Why a numeric field has no usable value, or NULL when it does (finite and above 0). */
static const char *number_problem(const tw_row *r, tw_field f)
{
    if ((r->invalid >> f) & 1u)
        return "could not be read";
    if (!tw_row_has(r, f))
        return "missing";
    double v = r->num[f];
    if (isnan(v) || isinf(v))
        return "not a finite number";
    if (!(v > 0))
        return "not above 0";
    return NULL;
}

/* Fetch a required positive number; reports and returns -1 when unusable. */
static int need_number(deriver *D, tw_field f, const char *why, double *v)
{
    const char *problem = number_problem(D->row, f);
    if (problem) {
        report(D, TW_ERROR, f, "%s; expected a number above 0 (%s)", problem, why);
        return -1;
    }
    *v = D->row->num[f];
    return 0;
}

/* 1 when s is valid UTF-8 without control characters (a line break or tab would change the
 * canonical form's lines and the printed layout). */
static int printable_utf8(const char *s)
{
    const unsigned char *p = (const unsigned char *)s;
    while (*p) {
        if (*p < 0x20 || *p == 0x7f)
            return 0;
        int extra = *p < 0x80 ? 0 : (*p & 0xe0) == 0xc0 ? 1 : (*p & 0xf0) == 0xe0 ? 2
                  : (*p & 0xf8) == 0xf0 ? 3 : -1;
        if (extra < 0 || (extra == 1 && *p < 0xc2) || (*p == 0xf4 && p[1] > 0x8f) || *p > 0xf4)
            return 0;
        if ((*p == 0xe0 && p[1] < 0xa0) || (*p == 0xf0 && p[1] < 0x90) ||
            (*p == 0xed && p[1] > 0x9f))
            return 0;
        p++;
        for (int i = 0; i < extra; i++, p++)
            if ((*p & 0xc0) != 0x80)
                return 0;
    }
    return 1;
}

/* Copy a text field onto the label; required ones report when missing. */
static const char *copy_text(deriver *D, tw_field f, tw_label_key k, size_t max, int required)
{
    const char *v = tw_row_has(D->row, f) ? D->row->text[f] : NULL;
    if (!v || !*v) {
        if (required)
            report(D, TW_ERROR, f, "%s; expected text", (D->row->invalid >> f) & 1u
                   ? "could not be read" : "missing");
        return NULL;
    }
    if (strlen(v) > max) {
        report(D, TW_ERROR, f, "longer than %zu bytes", max);
        return NULL;
    }
    if (!printable_utf8(v)) {
        report(D, TW_ERROR, f, "expected one line of UTF-8 text without control characters");
        return NULL;
    }
    set(D, k, v);
    return v;
}

static void derive_identity(deriver *D)
{
    copy_text(D, TW_F_EQUIPMENT_ID, TW_L_EQUIPMENT_ID, TW_MAX_ID_BYTES, 1);
    copy_text(D, TW_F_DESCRIPTION, TW_L_DESCRIPTION, TW_MAX_TEXT_BYTES, 0);
    copy_text(D, TW_F_LOCATION, TW_L_LOCATION, TW_MAX_TEXT_BYTES, 0);
    copy_text(D, TW_F_STUDY_ID, TW_L_STUDY_ID, TW_MAX_ID_BYTES, 1);
    copy_text(D, TW_F_SCENARIO, TW_L_SCENARIO, TW_MAX_TEXT_BYTES, 0);
}

/* Study date as YYYY-MM-DD, and the review due date NFPA 70E 130.5(G) implies. A study dated
 * after the label is printed is a slip (9999-12-31 would give a review date that cannot be
 * written), so it is refused; validation refuses a date after today the same way. */
static void derive_dates(deriver *D, const char *print_date)
{
    const char *text = tw_row_has(D->row, TW_F_STUDY_DATE) ? D->row->text[TW_F_STUDY_DATE] : NULL;
    tw_date date;
    if (!text) {
        report(D, TW_ERROR, TW_F_STUDY_DATE, "missing; expected a date YYYY-MM-DD");
        return;
    }
    if (tw_date_parse(text, &date) != 0) {
        report(D, TW_ERROR, TW_F_STUDY_DATE, "not a calendar date; expected YYYY-MM-DD");
        return;
    }
    tw_date printed;
    if (print_date && tw_date_parse(print_date, &printed) == 0 &&
        tw_date_cmp(date, printed) > 0) {
        report(D, TW_ERROR, TW_F_STUDY_DATE, "%s is after the print date %s; expected the date "
               "of a study already made", text, print_date);
        return;
    }
    char buf[11];
    tw_date_format(date, buf);
    set(D, TW_L_STUDY_DATE, buf);
    tw_date_format(tw_review_due_date(date), buf);
    set(D, TW_L_REVIEW_DUE, buf);
}

/* Approach boundaries (NFPA 70E Table 130.4(E)(a), fixed circuit part column) and glove class
 * (ASTM D120) for the nominal voltage. */
static void derive_shock(deriver *D, double volts)
{
    const tw_approach *a = tw_approach_for_voltage(volts);
    int metric = D->site->units == TW_UNITS_METRIC;
    if (!a) {
        report(D, TW_ERROR, TW_F_NOMINAL_VOLTAGE_V,
               "%g V is outside NFPA 70E Table 130.4(E)(a) (50 V to 800 kV AC); no approach "
               "boundaries can be given", volts);
    } else {
        if (metric)
            setf(D, TW_L_LIMITED_APPROACH, "%.1f m", a->limited_fixed_mm / 1000);
        else
            setf(D, TW_L_LIMITED_APPROACH, "%s (%.1f m)", a->limited_fixed_ft,
                 a->limited_fixed_mm / 1000);
        if (a->restricted_mm <= 0)   /* the table's "avoid contact" row */
            set_words(D, TW_L_RESTRICTED_APPROACH, TW_M_AVOID_CONTACT, NULL, 0);
        else if (metric)
            setf(D, TW_L_RESTRICTED_APPROACH, "%.1f m", a->restricted_mm / 1000);
        else
            setf(D, TW_L_RESTRICTED_APPROACH, "%s (%.1f m)", a->restricted_ft,
                 a->restricted_mm / 1000);
    }
    const tw_glove_class *g = tw_glove_class_for_voltage(volts);
    if (g) {
        char v[TW_NUM_BUF];
        format_number(g->max_use_v_ac, v, sizeof v);
        const char *args[] = {g->name, v};
        set_words(D, TW_L_GLOVE_CLASS, TW_M_GLOVE_VALUE, args, 2);
    } else if (a) {
        /* Above class 4 rubber gloves are not the protection; printing none is safer than
         * printing a class that does not exist. */
        report(D, TW_WARNING, TW_F_NOMINAL_VOLTAGE_V,
               "%g V is above the highest ASTM D120 glove class (class 4, 36000 V AC); no glove "
               "class is printed", volts);
    }
}

static void derive_voltage(deriver *D)
{
    double volts;
    if (need_number(D, TW_F_NOMINAL_VOLTAGE_V, "NFPA 70E 130.5(H)", &volts) != 0)
        return;
    char v[TW_NUM_BUF];
    format_number(volts, v, sizeof v);
    setf(D, TW_L_NOMINAL_VOLTAGE, "%s V", v);
    derive_shock(D, volts);
}

/* A PPE category read as a whole number 1-4, or 0 with an error reported. */
static int category_of(deriver *D)
{
    double c = D->row->num[TW_F_PPE_CATEGORY];
    if (!tw_ppe_category_valid(c)) {
        report(D, TW_ERROR, TW_F_PPE_CATEGORY, "expected a whole number 1 to 4, got %g", c);
        return 0;
    }
    return (int)c;
}

/*
 * NFPA 70E 130.5(H): the label gives EITHER the incident energy with its working distance OR
 * the arc-flash PPE category, never both. The site says which it prefers; a bus that has only
 * the other gets the other. A category is never derived from incident energy: the standard
 * keeps the incident energy analysis method and the PPE category (table) method apart, and a
 * category chosen from a computed energy would claim table conditions nobody checked.
 * Returns the arc rating the label asks for (the signal word and PPE level follow from it), or
 * NAN when neither item is usable.
 */
static double derive_energy(deriver *D)
{
    const tw_row *r = D->row;
    int has_energy = tw_row_has(r, TW_F_INCIDENT_ENERGY_CAL) || ((r->invalid >> TW_F_INCIDENT_ENERGY_CAL) & 1u);
    int has_category = tw_row_has(r, TW_F_PPE_CATEGORY) || ((r->invalid >> TW_F_PPE_CATEGORY) & 1u);
    int use_energy = has_energy && (D->site->show == TW_SHOW_INCIDENT_ENERGY || !has_category);
    if (use_energy) {
        double e, wd;
        if (need_number(D, TW_F_INCIDENT_ENERGY_CAL, "NFPA 70E 130.5(H)", &e) != 0)
            return NAN;
        e = tw_round_energy_up(e);
        if (!isfinite(e)) { /* rounding overflowed: never print "nan" on a label */
            report(D, TW_ERROR, TW_F_INCIDENT_ENERGY_CAL,
                   "%g cal/cm2 is too large to round; expected a finite incident energy",
                   r->num[TW_F_INCIDENT_ENERGY_CAL]);
            return NAN;
        }
        D->out->incident_energy_cal = e;
        D->out->arc_rating_cal = e;
        setf(D, TW_L_INCIDENT_ENERGY, "%.1f cal/cm2", e);
        setf(D, TW_L_MIN_ARC_RATING, "%.1f cal/cm2", e);
        if (need_number(D, TW_F_WORKING_DISTANCE_MM, "the working distance of the incident "
                        "energy, NFPA 70E 130.5(H)", &wd) == 0) {
            char buf[96];
            tw_format_distance(wd, D->site->units, buf, sizeof buf);
            if (buf[0])
                set(D, TW_L_WORKING_DISTANCE, buf);
            else
                report(D, TW_ERROR, TW_F_WORKING_DISTANCE_MM, "too large to be a working distance");
        }
        return e;
    }
    if (has_category) {
        if ((r->invalid >> TW_F_PPE_CATEGORY) & 1u) {
            report(D, TW_ERROR, TW_F_PPE_CATEGORY, "could not be read; expected 1 to 4");
            return NAN;
        }
        int c = category_of(D);
        if (!c)
            return NAN;
        double rating = tw_ppe_category_rating(c);
        char v[TW_NUM_BUF];
        format_number(rating, v, sizeof v);
        setf(D, TW_L_PPE_CATEGORY, "%d", c);
        setf(D, TW_L_MIN_ARC_RATING, "%s cal/cm2", v);
        D->out->arc_rating_cal = rating;
        return rating;
    }
    report(D, TW_ERROR, TW_F_INCIDENT_ENERGY_CAL,
           "missing; expected incident energy with a working distance, or a PPE category "
           "(NFPA 70E 130.5(H))");
    return NAN;
}

/* 1 when f holds a finite number above 0 (no finding). */
static int usable(const tw_row *r, tw_field f)
{
    return number_problem(r, f) == NULL;
}

/*
 * The arc-flash boundary as the study gives it; when the study left it out, computed from the
 * incident energy where it falls to 1.2 cal/cm2 (NFPA 70E definition of the arc-flash
 * boundary) with the IEEE 1584 distance relation E ~ 1/D^x:
 *     AFB = D x (E / 1.2)^(1/x)
 * This is exact when the energy falls off as D^-x (IEEE 1584-2002; one voltage range of
 * IEEE 1584-2018) and an estimate otherwise, which is why the study's own boundary always
 * wins and the label says the value was computed. The energy used is the one already rounded
 * up, so the boundary is never smaller than the printed energy implies. Without the study's
 * exponent the IEEE 1584-2002 Table 4 default for the equipment type is used and named.
 */
static void derive_boundary(deriver *D)
{
    const tw_row *r = D->row;
    double mm, x;
    const char *default_source;
    if (tw_row_has(r, TW_F_ARC_FLASH_BOUNDARY_MM) || ((r->invalid >> TW_F_ARC_FLASH_BOUNDARY_MM) & 1u)) {
        if (need_number(D, TW_F_ARC_FLASH_BOUNDARY_MM, "NFPA 70E 130.5(H)", &mm) != 0)
            return;
    } else if (usable(r, TW_F_INCIDENT_ENERGY_CAL) && usable(r, TW_F_WORKING_DISTANCE_MM) &&
               !isnan(x = tw_row_distance_exponent(r, &default_source))) {
        double e = tw_round_energy_up(r->num[TW_F_INCIDENT_ENERGY_CAL]);
        mm = tw_afb_mm(e, r->num[TW_F_WORKING_DISTANCE_MM], x);
        if (isnan(mm)) {
            report(D, TW_ERROR, TW_F_ARC_FLASH_BOUNDARY_MM,
                   "missing, and the boundary computed from incident energy is not a number");
            return;
        }
        if (default_source) {
            char xs[32];
            snprintf(xs, sizeof xs, "%g", x);
            const char *args[] = {xs, default_source, r->text[TW_F_EQUIPMENT_TYPE]};
            set_words(D, TW_L_BOUNDARY_NOTE, TW_M_BOUNDARY_COMPUTED_EXPONENT, args, 3);
        } else {
            set_words(D, TW_L_BOUNDARY_NOTE, TW_M_BOUNDARY_COMPUTED, NULL, 0);
        }
    } else {
        report(D, TW_ERROR, TW_F_ARC_FLASH_BOUNDARY_MM,
               "missing, and it cannot be computed without incident energy, working distance "
               "and a distance exponent (the distance_exponent column, or an equipment_type "
               "with an IEEE 1584-2002 Table 4 exponent) (NFPA 70E 130.5(H))");
        return;
    }
    char buf[96];
    tw_format_length(mm, D->site->units, buf, sizeof buf);
    if (!buf[0]) {
        report(D, TW_ERROR, TW_F_ARC_FLASH_BOUNDARY_MM, "%g mm is not a usable boundary", mm);
        return;
    }
    D->out->boundary_mm = (double)tw_round_mm_up(mm);
    set(D, TW_L_ARC_FLASH_BOUNDARY, buf);
}

/* The site's PPE level for the arc rating, and the signal word (ANSI Z535.4). */
static void derive_ppe_and_signal(deriver *D, double rating)
{
    if (isnan(rating)) {
        D->out->signal = TW_SIGNAL_DANGER;   /* unknown hazard: fail closed */
    } else {
        const tw_ppe_level *l = tw_site_level_for(D->site, rating);
        if (l) {
            char v[TW_NUM_BUF];
            format_number(l->arc_rating_cal_cm2, v, sizeof v);
            setf(D, TW_L_PPE_LEVEL, "%s (%s cal/cm2)", l->name, v);
        } else {
            set(D, TW_L_NO_PPE_ADEQUATE, "yes");
        }
        D->out->signal = l ? tw_signal_word(rating, D->site) : TW_SIGNAL_DANGER;
    }
    set(D, TW_L_SIGNAL_WORD, tw_signal_name(D->out->signal));
}

/* Round up to the next 1/per_unit (0.1 kA: per_unit 10), with the same slack as rules.c so an
 * exact value stays put. */
static double round_up_to(double v, double per_unit)
{
    double x = v * per_unit;
    double steps = ceil(x - 1e-9 * (fabs(x) > 1 ? fabs(x) : 1)) + 0.0;
    return (x > 0 && steps < 1 ? 1 : steps) / per_unit;
}

/* A rounded value the label can print: finite (a huge value overflows when scaled). */
static int printable_rounded(deriver *D, tw_field f, double rounded, double given)
{
    if (isfinite(rounded) && rounded > 0)
        return 1;
    report(D, TW_ERROR, f, "%g is too large to print; expected a finite value", given);
    return 0;
}

/*
 * NEC 110.16(B) (2020 edition): service equipment rated at or above the site's threshold
 * (1200 A by default) carries the nominal voltage, the available fault current at the service
 * overcurrent devices, their clearing time, and the date the label was applied.
 */
/* The scenario with the highest bolted fault current: NEC 110.16(B) asks for the available
 * fault current, which is the largest the study found, not the one of the scenario with the
 * most incident energy; the clearing time printed is the device's at that current. */
static const tw_row *max_fault_row(const tw_bus *bus, const tw_row *fallback)
{
    const tw_row *best = fallback;
    for (size_t i = 0; i < bus->count; i++) {
        const tw_row *r = bus->rows[i];
        if (tw_row_has(r, TW_F_BOLTED_FAULT_KA) &&
            (!tw_row_has(best, TW_F_BOLTED_FAULT_KA) ||
             r->num[TW_F_BOLTED_FAULT_KA] > best->num[TW_F_BOLTED_FAULT_KA]))
            best = r;
    }
    return best;
}

static void derive_service(deriver *D, const tw_bus *bus, const char *print_date)
{
    const tw_row *governing = D->row;
    const tw_row *r = D->row;
    if ((r->invalid >> TW_F_SERVICE_EQUIPMENT) & 1u) {
        report(D, TW_ERROR, TW_F_SERVICE_EQUIPMENT,
               "could not be read; NEC 110.16(B) labels depend on it");
        return;
    }
    if (!tw_row_has(r, TW_F_SERVICE_EQUIPMENT) || r->num[TW_F_SERVICE_EQUIPMENT] != 1)
        return;
    double amps, ka, s;
    if (need_number(D, TW_F_SERVICE_RATING_A, "service equipment, NEC 110.16(B)", &amps) != 0)
        return;
    if (amps < tw_service_label_min_a(D->site))
        return;
    D->row = max_fault_row(bus, governing);
    if (need_number(D, TW_F_BOLTED_FAULT_KA, "available fault current, NEC 110.16(B)", &ka) == 0 &&
        printable_rounded(D, TW_F_BOLTED_FAULT_KA, round_up_to(ka, 10), ka))
        setf(D, TW_L_AVAILABLE_FAULT, "%.1f kA", round_up_to(ka, 10));
    if (need_number(D, TW_F_CLEARING_TIME_S, "clearing time of the service overcurrent device, "
                    "NEC 110.16(B)", &s) == 0 &&
        printable_rounded(D, TW_F_CLEARING_TIME_S, round_up_to(s, 1000), s))
        setf(D, TW_L_SERVICE_CLEARING_TIME, "%.3f s", round_up_to(s, 1000));
    D->row = governing;
    tw_date date;
    if (!print_date || tw_date_parse(print_date, &date) != 0) {
        report(D, TW_ERROR, TW_F_SERVICE_EQUIPMENT,
               "the print date is not a calendar date YYYY-MM-DD; NEC 110.16(B) needs the date "
               "the label was applied");
        return;
    }
    char buf[11];
    tw_date_format(date, buf);
    set(D, TW_L_SERVICE_LABEL_DATE, buf);
}

/* out is overwritten (not freed): pass a zeroed or uninitialised label. */
int tw_label_derive(const tw_bus *bus, const tw_site *site, const char *print_date,
                    tw_label *out, tw_diags *d)
{
    memset(out, 0, sizeof *out);
    out->signal = TW_SIGNAL_DANGER;
    if (!bus || !bus->governing || !site) {
        if (d)
            tw_diag_add(d, TW_ERROR, NULL, bus ? bus->equipment_id : NULL, NULL,
                        "no scenario to label");
        out->draft = 1;
        return -1;
    }
    deriver D = {bus->governing, bus->equipment_id, site, out, d, 0};
    if (!D.eq && tw_row_has(D.row, TW_F_EQUIPMENT_ID))
        D.eq = D.row->text[TW_F_EQUIPMENT_ID];
    derive_identity(&D);
    derive_voltage(&D);
    double rating = derive_energy(&D);
    derive_boundary(&D);
    derive_ppe_and_signal(&D, rating);
    derive_service(&D, bus, print_date);
    derive_dates(&D, print_date);
    if (tw_label_rehash(out) != 0)
        report(&D, TW_ERROR, TW_F_COUNT, "could not compute the content hash");
    out->draft = D.errors ? 1 : 0;
    return D.errors ? -1 : 0;
}
