/* fuzz_site.c - libFuzzer harness: site settings reader; an accepted settings file is then used
 * to validate a small fixed study and derive its labels and QR payloads (PPE levels, the
 * DANGER threshold, the record-link template and the display choices all reach label.c). */
#include <stdint.h>

#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* Buses on both sides of the usual thresholds: low energy, DANGER above 40 cal/cm2, service
 * equipment rated 2000 A, a medium-voltage bus, and one shown by PPE category only. */
static const char study_csv[] =
    "equipment_id,description,study_id,study_date,scenario,nominal_voltage_v,"
    "working_distance_in,incident_energy_cal_cm2,arc_flash_boundary_in,ppe_category,"
    "bolted_fault_ka,clearing_time_s,service_equipment,service_rating_a\n"
    "FZ-PNL-1,Panel,FZ-S1,2024-01-31,max,208,18,1.23,18.3,,10,0.02,no,\n"
    "FZ-MCC-1,MCC,FZ-S1,2024-01-31,max,480,18,7.81,56.4,,22,0.15,no,\n"
    "FZ-SWBD-1,Switchboard,FZ-S1,2024-01-31,max,480,24,48.2,294.5,,42.5,0.5,yes,2000\n"
    "FZ-SWGR-1,Switchgear,FZ-S1,2024-01-31,max,13800,36,4.4,136.9,,12.5,0.2,no,\n"
    "FZ-PNL-2,Panel by category,FZ-S1,2024-01-31,max,480,,,,2,,,no,\n";

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tw_diags d;
    tw_diags_init(&d);
    tw_site site;
    if (tw_site_load_mem("fuzz-site.json", (const char *)data, size, &site, &d) == 0) {
        tw_results r;
        if (tw_results_read_csv("fuzz-study.csv", study_csv, sizeof study_csv - 1, &r, &d) == 0)
            fuzz_derive(&r, &site, &d);
        tw_results_free(&r);
        (void)tw_site_level_for(&site, 12.0);
        (void)tw_site_max_rating(&site);
    }
    fuzz_print(&d);
    tw_site_free(&site);
    tw_diags_free(&d);
    return 0;
}
