/*
 * tw_site.h - site settings: what a site's labels show and which PPE it stocks.
 *
 * Loaded from an optional JSON file; every setting has a documented default
 * (docs/site-settings.md). Unknown keys are a warning. tw_site_free() accepts a zeroed struct.
 */
#ifndef TW_SITE_H
#define TW_SITE_H

#include <stddef.h>

#include "base/tw_diag.h"

/* Default record link when the site names none. The payload's length and its characters decide
 * the symbol's size and its encoding time, so every character of this one can go in QR
 * alphanumeric mode when the IDs are in capitals: the scheme and host in capitals (they are
 * case-insensitive, RFC 3986 sections 3.1 and 3.2.2), '/' before the hash and the hash in
 * capitals. Version 5 (37 x 37 modules) for 16-character IDs, against version 7 (45 x 45) for
 * "https://records.invalid/{study}/{equipment}/{revision}#{hash}". */
#define TW_DEFAULT_RECORD_LINK "HTTPS://RECORDS.INVALID/{study}/{equipment}/{revision}/{HASH}"

typedef struct {
    char *name;                 /* e.g. "Kit B" */
    double arc_rating_cal_cm2;  /* minimum arc rating of the whole kit */
} tw_ppe_level;

typedef enum { TW_SHOW_INCIDENT_ENERGY, TW_SHOW_PPE_CATEGORY } tw_show;
typedef enum { TW_UNITS_IMPERIAL_METRIC, TW_UNITS_METRIC } tw_units;

typedef struct {
    char *site_name;
    char *record_link;          /* template; placeholders {study} {equipment} {revision} {hash} */
    tw_ppe_level *ppe_levels;   /* sorted by rising arc rating */
    size_t ppe_level_count;
    tw_show show;               /* preference; a bus without incident energy shows its category */
    double danger_above_cal_cm2;/* 0: not set; rules/tw_rules.h tw_danger_above_cal() */
    tw_units units;
    char **cautions;            /* extra caution lines printed in the footer */
    size_t caution_count;
    double service_label_min_a; /* 0: not set; rules/tw_rules.h tw_service_label_min_a() */
    char *language;             /* "en", "es" or "en+es" */
    char *layout;               /* layout name or path; NULL: the default */
    char *columns;              /* column map for this site's exports (a path, relative ones
                                 * taken from the settings file's folder); NULL: none */
    char *registry;             /* the site's label registry (relative to the settings file);
                                   NULL: none named */
} tw_site;

/* Fill with the documented defaults. 0 on success, -1 when out of memory. */
int tw_site_defaults(tw_site *s);

/* Load settings from a JSON file over the defaults. Findings name the JSON path.
 * s is filled from scratch (pass a zeroed or uninitialised struct, not one that still holds
 * settings) and is always left freeable with tw_site_free().
 * Returns 0 when usable (warnings allowed), -1 when there was an error. */
int tw_site_load(const char *path, tw_site *s, tw_diags *d);
int tw_site_load_mem(const char *name, const char *data, size_t len, tw_site *s, tw_diags *d);

/* Highest arc rating the site stocks (0 when none). */
double tw_site_max_rating(const tw_site *s);

/* The lowest PPE level whose arc rating is at least cal, or NULL when none is adequate. */
const tw_ppe_level *tw_site_level_for(const tw_site *s, double cal);

void tw_site_free(tw_site *s);

#endif
