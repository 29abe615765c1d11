/* results_fields.c - every column tagwright reads, and the unit that takes it to canonical
 * (see tw_results.h). Canonical units: lengths mm, energy cal/cm2, currents kA, time s,
 * voltage V. */
#include "read/tw_results.h"

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
