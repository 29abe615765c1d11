/*
 * tw_label.h - the content of one arc-flash hazard label, derived from a bus and site settings.
 *
 * tw_label_derive() is the only place label content is decided. It applies NFPA 70E 130.5(H)
 * (voltage; arc-flash boundary; incident energy with working distance OR PPE category, never
 * both; minimum arc rating; site PPE level), the approach boundaries and glove class for the
 * voltage, the review date, and NEC 110.16(B) for large service equipment. Values are stored
 * as the text printed on the label, already rounded toward safety, so that the canonical form
 * (and its SHA-256) covers exactly what a worker reads.
 *
 * Canonical form (docs/registry.md): for each field in enum order that has a value,
 * "key=value\n", UTF-8, no trailing blanks. The hash is the lowercase hex SHA-256 of it.
 * service_label_date is left out of the canonical form, so reprinting unchanged content on
 * another day keeps the same hash.
 *
 * Ownership: the label owns its strings; tw_label_free() accepts a zeroed label.
 */
#ifndef TW_LABEL_H
#define TW_LABEL_H

#include <stddef.h>

#include "base/tw_diag.h"
#include "rules/tw_rules.h"
#include "rules/tw_scenario.h"
#include "read/tw_site.h"

typedef enum {
    TW_L_SIGNAL_WORD,
    TW_L_EQUIPMENT_ID,
    TW_L_DESCRIPTION,
    TW_L_LOCATION,
    TW_L_NOMINAL_VOLTAGE,
    TW_L_ARC_FLASH_BOUNDARY,
    TW_L_BOUNDARY_NOTE,         /* "computed from incident energy" when the study left it out */
    TW_L_INCIDENT_ENERGY,       /* these two OR ppe_category, never both (NFPA 70E 130.5(H)) */
    TW_L_WORKING_DISTANCE,
    TW_L_PPE_CATEGORY,
    TW_L_MIN_ARC_RATING,
    TW_L_PPE_LEVEL,             /* absent when no level is adequate */
    TW_L_NO_PPE_ADEQUATE,       /* present ("yes") when energy exceeds every site level */
    TW_L_LIMITED_APPROACH,
    TW_L_RESTRICTED_APPROACH,
    TW_L_GLOVE_CLASS,
    TW_L_AVAILABLE_FAULT,       /* NEC 110.16(B) block, service equipment >= threshold */
    TW_L_SERVICE_CLEARING_TIME,
    TW_L_SERVICE_LABEL_DATE,
    TW_L_STUDY_ID,
    TW_L_STUDY_DATE,
    TW_L_SCENARIO,
    TW_L_REVIEW_DUE,
    TW_L_REVISION_NOTE,         /* set by reprint: what the label was revised from and by what */
    TW_L_COUNT
} tw_label_key;

typedef struct {
    char *value[TW_L_COUNT];    /* printed text; NULL when the field is not on this label */
    tw_signal signal;
    double incident_energy_cal; /* rounded; 0 when the label shows a PPE category */
    double arc_rating_cal;      /* minimum arc rating printed */
    double boundary_mm;         /* rounded up */
    int draft;                  /* 1: printed from data with errors, watermarked */
    char hash[65];              /* lowercase hex SHA-256 of the canonical form */
} tw_label;

/* The key of a label field as used in the canonical form, e.g. "arc_flash_boundary". */
const char *tw_label_key_name(tw_label_key k);

/* Derive label content for the bus's governing scenario. print_date is "YYYY-MM-DD".
 * Returns 0 when every required item is present; otherwise adds error findings and returns -1,
 * leaving out what is missing (a caller may still print a watermarked draft). out is filled
 * from scratch: pass a zeroed label, or one already freed. */
int tw_label_derive(const tw_bus *bus, const tw_site *site, const char *print_date,
                    tw_label *out, tw_diags *d);

/* Set or replace a field's text (copied). 0, or -1 when out of memory. */
int tw_label_set(tw_label *l, tw_label_key k, const char *value);

/* The canonical form as a fresh string (caller frees), NULL when out of memory. */
char *tw_label_canonical(const tw_label *l);

/* Recompute l->hash from the canonical form. 0, or -1 on failure. */
int tw_label_rehash(tw_label *l);

void tw_label_free(tw_label *l);

#endif
