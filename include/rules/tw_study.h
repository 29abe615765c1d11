/*
 * tw_study.h - the read and validate stages in one call, shared by every command that starts
 * from a results file: site settings, results, buses grouped by equipment ID, findings.
 *
 * tw_study_free() accepts a zeroed study.
 */
#ifndef TW_STUDY_H
#define TW_STUDY_H

#include "base/tw_diag.h"
#include "read/tw_results.h"
#include "rules/tw_scenario.h"
#include "read/tw_site.h"

typedef struct {
    tw_site site;
    tw_results results;
    tw_bus_set buses;
    tw_diags diags;
    int site_bad;       /* the site file had errors */
    int unreadable;     /* a file could not be read at all (I/O) */
    size_t study_errors; /* errors that concern no one bus: they block every bus */
} tw_study;

/* Load site settings (site_path may be NULL: defaults) and results, group and validate, then
 * attribute every error to the buses it blocks (tw_bus_set_attribute): from then on
 * tw_bus_errors() is the one test of whether a bus may be posted, for every command. Returns 0 when everything could be read (findings may still hold errors), -1 when a file was
 * unreadable, malformed beyond use, or memory ran out. */
int tw_study_load(tw_study *s, const char *results_path, const char *site_path);

/* The same with a column map (read/tw_column_map.h): columns_path when not NULL, else the
 * one the site settings name, else none. A map with errors is -1 (bad data). */
int tw_study_load_mapped(tw_study *s, const char *results_path, const char *site_path,
                         const char *columns_path);

void tw_study_free(tw_study *s);

#endif
