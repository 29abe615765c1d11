/* lifecycle.c - rescaling after a setting change, label comparison and review dates
 * (see tw_lifecycle.h and docs/lifecycle.md). */
#include "rules/tw_lifecycle.h"

#include <math.h>
#include <string.h>

#include "rules/tw_analysis.h"
#include "rules/tw_rules.h"

static int positive(double v)
{
    return isfinite(v) && v > 0;
}

/* Fill the parts common to both ways of rescaling. */
static int finish(tw_rescale *r, double new_energy)
{
    double rounded = tw_round_energy_up(new_energy);
    double afb = tw_afb_mm(rounded, r->working_distance_mm, r->exponent);
    if (!positive(new_energy) || !positive(afb))
        return -1;
    r->new_energy_cal = new_energy;
    r->new_boundary_mm = afb;
    return 0;
}

int tw_rescale_by_time(double old_energy, double old_time, double new_time,
                       double working_distance_mm, double exponent, tw_rescale *out)
{
    if (!positive(old_energy) || !positive(old_time) || !positive(new_time))
        return -1;
    tw_rescale r = {old_energy, 0, old_time, new_time, working_distance_mm, exponent, 0, 0};
    double ratio = new_time / old_time;
    if (new_time > TW_MAX_ARC_DURATION_S)
        r.warnings |= TW_RESCALE_WARN_LONG_TIME;
    if (old_time > TW_MAX_ARC_DURATION_S)
        r.warnings |= TW_RESCALE_WARN_OLD_LONG_TIME;
    if (ratio > TW_RESCALE_MAX_FACTOR || ratio < 1.0 / TW_RESCALE_MAX_FACTOR)
        r.warnings |= TW_RESCALE_WARN_LARGE_FACTOR;
    if (finish(&r, old_energy * ratio) != 0)
        return -1;
    *out = r;
    return 0;
}

int tw_rescale_by_energy(double old_energy, double new_energy, double old_time,
                         double working_distance_mm, double exponent, tw_rescale *out)
{
    if (!(old_energy >= 0) || !isfinite(old_energy) || !(old_time >= 0) || !isfinite(old_time))
        return -1;
    tw_rescale r = {old_energy, 0, old_time, 0, working_distance_mm, exponent, 0, 0};
    if (finish(&r, new_energy) != 0)
        return -1;
    *out = r;
    return 0;
}

int tw_label_key_is_record(tw_label_key k)
{
    return k == TW_L_STUDY_ID || k == TW_L_STUDY_DATE || k == TW_L_REVIEW_DUE;
}

static int same_text(const char *a, const char *b)
{
    return a == b || (a && b && !strcmp(a, b));
}

size_t tw_label_compare(const tw_label *old_label, const tw_label *new_label, int flags,
                        tw_field_change *out)
{
    size_t n = 0;
    for (int k = 0; k < TW_L_COUNT; k++) {
        if (k == TW_L_SERVICE_LABEL_DATE)
            continue;
        if ((flags & TW_COMPARE_SKIP_RECORD) && tw_label_key_is_record((tw_label_key)k))
            continue;
        const char *a = old_label->value[k], *b = new_label->value[k];
        if (same_text(a, b))
            continue;
        out[n].key = (tw_label_key)k;
        out[n].old_value = a;
        out[n].new_value = b;
        n++;
    }
    return n;
}

tw_due_status tw_review_due(tw_date study_date, tw_date on, long within_days, tw_date *due,
                            long *days_left)
{
    tw_date d = tw_review_due_date(study_date);
    long left = tw_date_days(d) - tw_date_days(on);
    if (due)
        *due = d;
    if (days_left)
        *days_left = left;
    if (left < 0)
        return TW_DUE_OVERDUE;
    return left <= within_days ? TW_DUE_SOON : TW_DUE_LATER;
}
