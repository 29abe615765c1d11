/* results_fields.c - every column tagwright reads, and the unit that takes it to canonical
 * (see tw_results.h). Canonical units: lengths mm, energy cal/cm2, currents kA, time s,
 * voltage V. */
#include "read/tw_results.h"

#include <ctype.h>
#include <stdio.h>
#include <string.h>

/* 1 inch = 25.4 mm and 1 ft = 304.8 mm exactly (international yard and pound, 1959).
 * 1 cal = 4.184 J (thermochemical calorie, the one incident-energy work uses), so a value in
 * J/cm2 is divided by 4.184 to give cal/cm2. */
#define MM_PER_IN 25.4
#define MM_PER_FT 304.8
#define CAL_PER_J (1.0 / 4.184)

const tw_column tw_columns[] = {
    /* text */
    {"equipment_id", TW_F_EQUIPMENT_ID, TW_KIND_TEXT, 1.0},
    {"description", TW_F_DESCRIPTION, TW_KIND_TEXT, 1.0},
    {"location", TW_F_LOCATION, TW_KIND_TEXT, 1.0},
    {"study_id", TW_F_STUDY_ID, TW_KIND_TEXT, 1.0},
    {"study_date", TW_F_STUDY_DATE, TW_KIND_TEXT, 1.0},
    {"scenario", TW_F_SCENARIO, TW_KIND_TEXT, 1.0},
    {"protective_device", TW_F_PROTECTIVE_DEVICE, TW_KIND_TEXT, 1.0},
    {"equipment_type", TW_F_EQUIPMENT_TYPE, TW_KIND_TEXT, 1.0},
    {"electrode_config", TW_F_ELECTRODE_CONFIG, TW_KIND_TEXT, 1.0},
    /* numbers; the canonical unit of each field comes first */
    {"nominal_voltage_v", TW_F_NOMINAL_VOLTAGE_V, TW_KIND_NUMBER, 1.0},
    {"incident_energy_cal_cm2", TW_F_INCIDENT_ENERGY_CAL, TW_KIND_NUMBER, 1.0},
    {"incident_energy_j_cm2", TW_F_INCIDENT_ENERGY_CAL, TW_KIND_NUMBER, CAL_PER_J},
    {"working_distance_mm", TW_F_WORKING_DISTANCE_MM, TW_KIND_NUMBER, 1.0},
    {"working_distance_in", TW_F_WORKING_DISTANCE_MM, TW_KIND_NUMBER, MM_PER_IN},
    {"arc_flash_boundary_mm", TW_F_ARC_FLASH_BOUNDARY_MM, TW_KIND_NUMBER, 1.0},
    {"arc_flash_boundary_in", TW_F_ARC_FLASH_BOUNDARY_MM, TW_KIND_NUMBER, MM_PER_IN},
    {"arc_flash_boundary_ft", TW_F_ARC_FLASH_BOUNDARY_MM, TW_KIND_NUMBER, MM_PER_FT},
    {"ppe_category", TW_F_PPE_CATEGORY, TW_KIND_INTEGER, 1.0},
    {"source_fault_ka", TW_F_SOURCE_FAULT_KA, TW_KIND_NUMBER, 1.0},
    {"bolted_fault_ka", TW_F_BOLTED_FAULT_KA, TW_KIND_NUMBER, 1.0},
    {"arcing_current_ka", TW_F_ARCING_CURRENT_KA, TW_KIND_NUMBER, 1.0},
    {"clearing_time_s", TW_F_CLEARING_TIME_S, TW_KIND_NUMBER, 1.0},
    {"gap_mm", TW_F_GAP_MM, TW_KIND_NUMBER, 1.0},
    {"distance_exponent", TW_F_DISTANCE_EXPONENT, TW_KIND_NUMBER, 1.0},
    {"service_equipment", TW_F_SERVICE_EQUIPMENT, TW_KIND_BOOL, 1.0},
    {"service_rating_a", TW_F_SERVICE_RATING_A, TW_KIND_NUMBER, 1.0},
    {"xfmr_kva", TW_F_XFMR_KVA, TW_KIND_NUMBER, 1.0},
    {"xfmr_z_percent", TW_F_XFMR_Z_PERCENT, TW_KIND_NUMBER, 1.0},
    {"xfmr_secondary_v", TW_F_XFMR_SECONDARY_V, TW_KIND_NUMBER, 1.0},
    {"motor_contribution_ka", TW_F_MOTOR_CONTRIBUTION_KA, TW_KIND_NUMBER, 1.0},
};

const size_t tw_column_count = sizeof tw_columns / sizeof tw_columns[0];

const tw_column *tw_column_find(const char *name)
{
    for (size_t i = 0; i < tw_column_count; i++)
        if (strcmp(tw_columns[i].name, name) == 0)
            return &tw_columns[i];
    return NULL;
}

/* A name in lower case with every run of other characters than letters and digits made one
 * '_', trimmed of '_' at both ends: "Incident Energy (cal/cm2)" -> "incident_energy_cal_cm2".
 * Cut at n - 1 bytes. */
static void normalize_name(const char *s, char *out, size_t n)
{
    size_t o = 0;
    int gap = 0;
    for (; *s && o + 2 < n; s++) {
        unsigned char c = (unsigned char)*s;
        if (isalnum(c)) {
            if (gap && o > 0)
                out[o++] = '_';
            out[o++] = (char)tolower(c);
            gap = 0;
        } else {
            gap = 1;
        }
    }
    out[o] = '\0';
}

/* Levenshtein distance of a and b, or limit + 1 once it is certain to exceed limit. */
static size_t edit_distance(const char *a, const char *b, size_t limit)
{
    size_t la = strlen(a), lb = strlen(b);
    if ((la > lb ? la - lb : lb - la) > limit || lb >= 128)
        return limit + 1;
    size_t row[128];
    for (size_t j = 0; j <= lb; j++)
        row[j] = j;
    for (size_t i = 1; i <= la; i++) {
        size_t diag = row[0], best;
        row[0] = best = i;
        for (size_t j = 1; j <= lb; j++) {
            size_t up = row[j];
            size_t v = diag + (a[i - 1] != b[j - 1]);
            v = v < up + 1 ? v : up + 1;
            v = v < row[j - 1] + 1 ? v : row[j - 1] + 1;
            row[j] = v;
            diag = up;
            best = v < best ? v : best;
        }
        if (best > limit)
            return limit + 1;
    }
    return row[lb];
}

/* The words of a field's name without its unit: the part all its columns share when it has
 * several ("incident_energy_"), else the name without its last word when it has three words
 * or more ("bolted_fault_ka" -> "bolted_fault_"); "" when neither (a name of two words). */
static void field_stem(const tw_column *c, char *out, size_t n)
{
    snprintf(out, n, "%s", c->name);
    int several = 0;
    for (size_t i = 0; i < tw_column_count; i++) {
        const tw_column *o = &tw_columns[i];
        if (o == c || o->field != c->field)
            continue;
        several = 1;
        size_t k = 0;
        while (out[k] && out[k] == o->name[k])
            k++;
        out[k] = '\0';
    }
    char *last = strrchr(out, '_');
    if (several) {
        if (last)
            last[1] = '\0';
        else
            out[0] = '\0';
        return;
    }
    size_t words = 1;
    for (const char *p = out; *p; p++)
        words += *p == '_';
    if (words >= 3 && last)
        last[1] = '\0';
    else
        out[0] = '\0';
}

const tw_column *tw_column_resembling(const char *name)
{
    char n[128], k[128], stem[128];
    normalize_name(name, n, sizeof n);
    if (!n[0] || tw_column_find(name))
        return NULL; /* a known name given twice is reported as such */
    for (size_t i = 0; i < tw_column_count; i++) {
        const tw_column *c = &tw_columns[i];
        normalize_name(c->name, k, sizeof k);
        size_t limit = strlen(k) >= 8 ? 2 : strlen(k) >= 4 ? 1 : 0;
        if (strcmp(n, k) == 0 || edit_distance(n, k, limit) <= limit)
            return c;
        field_stem(c, stem, sizeof stem);
        if (stem[0] && strncmp(n, stem, strlen(stem)) == 0)
            return c; /* the same words with another unit: incident_energy_kj_m2 */
    }
    return NULL;
}

/* The first column of a field is its canonical name (the table lists it first). */
static const tw_column *first_column(tw_field f)
{
    for (size_t i = 0; i < tw_column_count; i++)
        if (tw_columns[i].field == f)
            return &tw_columns[i];
    return NULL;
}

const char *tw_field_name(tw_field f)
{
    const tw_column *c = first_column(f);
    return c ? c->name : "(row)";
}

const char *tw_field_display(tw_field f)
{
    switch (f) {
    case TW_F_ARC_FLASH_BOUNDARY_MM:
        return "arc_flash_boundary_mm|_in|_ft";
    case TW_F_INCIDENT_ENERGY_CAL:
        return "incident_energy_cal_cm2|_j_cm2";
    case TW_F_WORKING_DISTANCE_MM:
        return "working_distance_mm|_in";
    default:
        return tw_field_name(f);
    }
}

tw_kind tw_field_kind(tw_field f)
{
    const tw_column *c = first_column(f);
    return c ? c->kind : TW_KIND_TEXT;
}
