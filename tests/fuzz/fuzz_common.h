/*
 * fuzz_common.h - shared by the libFuzzer harnesses in this directory (see docs/fuzzing.md).
 *
 * After a reader has accepted an input, the rest of the one-way pipeline runs on it too -
 * group buses, validate, derive every label, build its canonical form and QR payload - so a
 * value that slips through a reader and upsets a later stage is found as well. Findings are
 * printed to /dev/null so the printing code is exercised. Everything is freed: the fuzzer's
 * leak check treats a leak as a crash.
 */
#ifndef TW_FUZZ_COMMON_H
#define TW_FUZZ_COMMON_H

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_diag.h"
#include "rules/tw_label.h"
#include "write/tw_qr.h"
#include "read/tw_results.h"
#include "rules/tw_scenario.h"
#include "read/tw_site.h"
#include "rules/tw_validate.h"

/* A sink for printed findings, opened once per process. */
static inline FILE *fuzz_sink(void)
{
    static FILE *sink;
    if (!sink)
        sink = fopen("/dev/null", "w");
    return sink;
}

static inline void fuzz_print(const tw_diags *d)
{
    FILE *f = fuzz_sink();
    if (f)
        tw_diags_print(d, f);
}

/* A label tw_label_derive() accepted for posting must carry what NFPA 70E 130.5(H) asks for
 * (voltage, arc-flash boundary, incident energy with working distance OR a PPE category -
 * never both - and the minimum arc rating), finite numbers only, no "nan"/"inf" printed, and a
 * 64-digit hash. Anything else is a wrong label, reported as a crash. */
static inline int fuzz_label_sane(const tw_label *l)
{
    static const tw_label_key required[] = {TW_L_SIGNAL_WORD, TW_L_EQUIPMENT_ID,
                                            TW_L_NOMINAL_VOLTAGE, TW_L_ARC_FLASH_BOUNDARY,
                                            TW_L_MIN_ARC_RATING};
    for (size_t i = 0; i < sizeof required / sizeof required[0]; i++)
        if (!l->value[required[i]] || !*l->value[required[i]])
            return 0;
    int energy = l->value[TW_L_INCIDENT_ENERGY] && l->value[TW_L_WORKING_DISTANCE];
    int category = l->value[TW_L_PPE_CATEGORY] != NULL;
    if (energy == category)
        return 0;
    if (!(isfinite(l->arc_rating_cal) && l->arc_rating_cal > 0 && isfinite(l->boundary_mm) &&
          l->boundary_mm > 0 && isfinite(l->incident_energy_cal)))
        return 0;
    static const tw_label_key numeric[] = {
        TW_L_NOMINAL_VOLTAGE,   TW_L_ARC_FLASH_BOUNDARY, TW_L_INCIDENT_ENERGY,
        TW_L_WORKING_DISTANCE,  TW_L_PPE_CATEGORY,       TW_L_MIN_ARC_RATING,
        TW_L_LIMITED_APPROACH,  TW_L_RESTRICTED_APPROACH, TW_L_AVAILABLE_FAULT,
        TW_L_SERVICE_CLEARING_TIME};
    for (size_t i = 0; i < sizeof numeric / sizeof numeric[0]; i++) {
        const char *v = l->value[numeric[i]];
        if (v && (strstr(v, "nan") || strstr(v, "inf") || strstr(v, "NAN") || strstr(v, "INF")))
            return 0;
    }
    return strlen(l->hash) == 64 && strspn(l->hash, "0123456789abcdef") == 64;
}

/* Group, validate and derive a label for every bus of r with site s. */
static inline void fuzz_derive(tw_results *r, const tw_site *s, tw_diags *d)
{
    tw_bus_set buses;
    memset(&buses, 0, sizeof buses);
    if (tw_bus_set_build(r, &buses) == 0) {
        tw_validate(r, &buses, s, d);
        for (size_t i = 0; i < buses.count; i++) {
            tw_label label;
            memset(&label, 0, sizeof label);
            if (tw_label_derive(&buses.buses[i], s, "2025-02-28", &label, d) == 0 &&
                tw_bus_errors(&buses.buses[i]) == 0 && !fuzz_label_sane(&label))
                abort(); /* a posting label with wrong or missing content */
            char *canonical = tw_label_canonical(&label);
            free(canonical);
            char *payload = tw_qr_payload(s->record_link, label.value[TW_L_STUDY_ID],
                                          label.value[TW_L_EQUIPMENT_ID], 1, label.hash);
            free(payload);
            tw_label_free(&label);
        }
    }
    tw_bus_set_free(&buses);
}

/* Results read by one of the readers (rc its return): derive with the default site. */
static inline void fuzz_results_pipeline(int rc, tw_results *r, tw_diags *d)
{
    if (rc == 0) {
        tw_site site;
        if (tw_site_defaults(&site) == 0) {
            fuzz_derive(r, &site, d);
            tw_site_free(&site);
        }
    }
    fuzz_print(d);
}

#endif
