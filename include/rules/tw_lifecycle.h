/*
 * tw_lifecycle.h - keeping posted labels current: rescaling one label's incident energy after a
 * protective-device setting change, comparing the label content of two study revisions, and
 * review due dates. Pure functions: nothing here allocates, prints or reads files.
 *
 * Rescaling rests on the IEEE 1584 models, where incident energy at a fixed working distance
 * is proportional to arc duration for a given arcing current. A setting change alters the
 * clearing time but not the fault or arcing current, so
 *     E_new = E_old x (t_new / t_old)
 * and the arc-flash boundary follows from the new energy with the distance exponent x:
 *     AFB = D x (E / 1.2)^(1/x)
 * (tw_afb_mm() of tw_analysis.h; the caller finds x, e.g. with tw_distance_exponent_for()).
 * Both are estimates next to a re-run study, which is always the proper source; the warnings
 * below say when the estimate is on weak ground.
 */
#ifndef TW_LIFECYCLE_H
#define TW_LIFECYCLE_H

#include <stddef.h>

#include "base/tw_date.h"
#include "rules/tw_label.h"

/* ---- rescaling after a setting change ---------------------------------------------------- */

/* Above TW_MAX_ARC_DURATION_S (rules/tw_rules.h) the proportional estimate is flagged. */

/* A clearing time changed by more than this factor either way is flagged: a change that large
 * may move the device to another region of its curve, where the reduced arcing current of
 * IEEE 1584 could clear in a different time. Our own judgement, not a standard's figure. */
#define TW_RESCALE_MAX_FACTOR 2.0

enum {
    TW_RESCALE_WARN_LONG_TIME = 1u << 0,     /* new clearing time above the maximum */
    TW_RESCALE_WARN_OLD_LONG_TIME = 1u << 1, /* the study's own time above the maximum */
    TW_RESCALE_WARN_LARGE_FACTOR = 1u << 2,  /* time ratio outside [1/factor, factor] */
};

typedef struct {
    double old_energy_cal;      /* the study's value as given */
    double new_energy_cal;      /* before rounding (the label rounds up to 0.1) */
    double old_time_s;          /* 0 when not known (rescaled by energy) */
    double new_time_s;          /* 0 when rescaled by energy */
    double working_distance_mm;
    double exponent;
    double new_boundary_mm;     /* from the new energy rounded up to 0.1 cal/cm2 */
    unsigned warnings;          /* TW_RESCALE_WARN_* bits */
} tw_rescale;

/* Rescale by a new clearing time. old_energy, old_time, new_time, working_distance and
 * exponent must be finite and above 0; returns 0, or -1 (out untouched) otherwise. */
int tw_rescale_by_time(double old_energy, double old_time, double new_time,
                       double working_distance_mm, double exponent, tw_rescale *out);

/* Replace the energy with a value from a re-run study (old_energy and old_time may be 0:
 * unknown, e.g. a bus labelled by PPE category). Otherwise the same contract as above; no
 * warnings are raised for a value the study itself produced. */
int tw_rescale_by_energy(double old_energy, double new_energy, double old_time,
                         double working_distance_mm, double exponent, tw_rescale *out);

/* ---- comparing label content ------------------------------------------------------------- */

/* 1 for the fields that change with every study revision and do not describe the hazard
 * (study_id, study_date, review_due): tw_label_compare() skips them when asked to. */
int tw_label_key_is_record(tw_label_key k);

typedef struct {
    tw_label_key key;
    const char *old_value;      /* NULL: the field was not on the old label */
    const char *new_value;      /* NULL: the field is not on the new label */
} tw_field_change;

enum { TW_COMPARE_ALL = 0, TW_COMPARE_SKIP_RECORD = 1 };

/* Fill out (room for TW_L_COUNT) with the fields that differ, in canonical-form order, and
 * return how many. The values point into the labels. The service label date is never
 * compared (it is not part of the canonical form). */
size_t tw_label_compare(const tw_label *old_label, const tw_label *new_label, int flags,
                        tw_field_change *out);

/* ---- review dates ------------------------------------------------------------------------ */

/* Reviews are due tw_review_due_date() after the study (rules/tw_rules.h, NFPA 70E 130.5(G)). */

typedef enum { TW_DUE_LATER, TW_DUE_SOON, TW_DUE_OVERDUE } tw_due_status;

/* Review due date for a study date (29 February -> 28 February, never late), and the status
 * on date `on`: overdue when the due date is before `on`, soon when it falls on `on` or within
 * the next within_days days, later otherwise. days_left is due - on (negative when overdue). */
tw_due_status tw_review_due(tw_date study_date, tw_date on, long within_days, tw_date *due,
                            long *days_left);

#endif
