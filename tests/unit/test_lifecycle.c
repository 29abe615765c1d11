/* test_lifecycle.c - rescaling after a setting change (hand-computed cases), label comparison and
 * review due dates across leap days. The boundary formula and the IEEE 1584-2002 exponents are
 * tested with the analysis module (test_analysis.c). */
#include "tw_test.h"

#include "rules/tw_lifecycle.h"

/* ---- rescaling by clearing time: E_new = E_old x t_new / t_old ---- */

static void rescale_should_scale_13_8kv_switchgear_from_0_38_to_0_30_s(void **state)
{
    (void)state;
    tw_rescale r;
    /* 8.36 cal/cm2 at 0.380 s -> 0.300 s: 8.36 x 0.300 / 0.380 = 22.0 x 0.300 = 6.60 cal/cm2.
     * Boundary at D = 36 in = 914.4 mm, x = 0.973 (switchgear > 1 kV):
     * (6.6 / 1.2) = 5.5; 5.5^(1/0.973) = e^(1.704748 / 0.973) = e^1.752053 = 5.766432;
     * 914.4 x 5.766432 = 5272.8 mm. */
    assert_int_equal(tw_rescale_by_time(8.36, 0.380, 0.300, 914.4, 0.973, &r), 0);
    assert_near(r.new_energy_cal, 6.60, 1e-9);
    assert_near(tw_round_energy_up(r.new_energy_cal), 6.6, 1e-9); /* not 6.7 from 6.5999... */
    assert_near(r.new_boundary_mm, 5272.8, 0.05);
    assert_int_equal(r.warnings, 0);
    assert_near(r.old_time_s, 0.380, 1e-12);
    assert_near(r.new_time_s, 0.300, 1e-12);
}

static void rescale_should_round_energy_up_before_the_boundary(void **state)
{
    (void)state;
    tw_rescale r;
    /* 480 V MCC, 7.81 cal/cm2 at 0.15 s -> 0.10 s: 7.81 x 0.10 / 0.15 = 5.2067 cal/cm2, printed
     * 5.3 (rounded up). Boundary from 5.3 at D = 18 in = 457.2 mm, x = 1.641:
     * 5.3 / 1.2 = 4.41667; ln = 1.485385; / 1.641 = 0.905171; e^ = 2.472354;
     * 457.2 x 2.472354 = 1130.36 mm (from 5.2067 it would be 1118.9: smaller, not safe). */
    assert_int_equal(tw_rescale_by_time(7.81, 0.15, 0.10, 457.2, 1.641, &r), 0);
    assert_near(r.new_energy_cal, 5.20667, 1e-5);
    assert_near(r.new_boundary_mm, 1130.36, 0.01);
    /* 0.10 / 0.15 = 0.667: within a factor of 2, no warning */
    assert_int_equal(r.warnings, 0);
}

static void rescale_should_raise_energy_when_the_time_grows(void **state)
{
    (void)state;
    tw_rescale r;
    /* 480 V switchboard, 48.2 cal/cm2 at 0.5 s -> 0.25 s: 48.2 x 0.5 = 24.1 cal/cm2; x = 1.473,
     * D = 24 in = 609.6 mm: (24.1 / 1.2)^(1/1.473) = 20.0833^0.678887 = 7.664394;
     * 609.6 x 7.664394 = 4672.2 mm. Ratio 0.5 exactly: on the edge, no warning. */
    assert_int_equal(tw_rescale_by_time(48.2, 0.5, 0.25, 609.6, 1.473, &r), 0);
    assert_near(r.new_energy_cal, 24.1, 1e-9);
    assert_near(r.new_boundary_mm, 4672.2, 0.05);
    assert_int_equal(r.warnings, 0);
    /* the other way: 0.25 s -> 0.5 s doubles the energy, 24.1 -> 48.2 */
    assert_int_equal(tw_rescale_by_time(24.1, 0.25, 0.5, 609.6, 1.473, &r), 0);
    assert_near(r.new_energy_cal, 48.2, 1e-9);
}

static void rescale_should_warn_above_2_s_and_for_large_factors(void **state)
{
    (void)state;
    tw_rescale r;
    /* 0.5 s -> 2.5 s: above the 2 s common-practice maximum, and a factor of 5 */
    assert_int_equal(tw_rescale_by_time(4.0, 0.5, 2.5, 457.2, 1.641, &r), 0);
    assert_near(r.new_energy_cal, 20.0, 1e-9);
    assert_true(r.warnings & TW_RESCALE_WARN_LONG_TIME);
    assert_true(r.warnings & TW_RESCALE_WARN_LARGE_FACTOR);
    assert_false(r.warnings & TW_RESCALE_WARN_OLD_LONG_TIME);
    /* exactly 2 s is not above the maximum */
    assert_int_equal(tw_rescale_by_time(4.0, 1.5, 2.0, 457.2, 1.641, &r), 0);
    assert_int_equal(r.warnings, 0);
    /* 0.4 s -> 0.1 s: a factor of 4 down */
    assert_int_equal(tw_rescale_by_time(4.0, 0.4, 0.1, 457.2, 1.641, &r), 0);
    assert_near(r.new_energy_cal, 1.0, 1e-9);
    assert_int_equal(r.warnings, TW_RESCALE_WARN_LARGE_FACTOR);
    /* a study that capped its energy at 2 s or more cannot be scaled with confidence */
    assert_int_equal(tw_rescale_by_time(40.0, 2.0001, 1.5, 457.2, 1.641, &r), 0);
    assert_true(r.warnings & TW_RESCALE_WARN_OLD_LONG_TIME);
}

static void rescale_should_refuse_unusable_inputs(void **state)
{
    (void)state;
    tw_rescale r = {0};
    r.exponent = 42;
    assert_int_equal(tw_rescale_by_time(8.0, 0, 0.1, 457.2, 1.641, &r), -1);
    assert_int_equal(tw_rescale_by_time(8.0, 0.1, -0.1, 457.2, 1.641, &r), -1);
    assert_int_equal(tw_rescale_by_time(NAN, 0.1, 0.1, 457.2, 1.641, &r), -1);
    assert_int_equal(tw_rescale_by_time(8.0, 0.1, 0.1, 0, 1.641, &r), -1);
    assert_int_equal(tw_rescale_by_time(8.0, 0.1, 0.1, 457.2, 0, &r), -1);
    assert_int_equal(tw_rescale_by_time(8.0, 0.1, INFINITY, 457.2, 1.641, &r), -1);
    assert_int_equal(tw_rescale_by_energy(8.0, 0, 0.1, 457.2, 1.641, &r), -1);
    assert_near(r.exponent, 42, 0); /* untouched on failure */
}

static void rescale_by_energy_should_take_the_value_and_recompute_the_boundary(void **state)
{
    (void)state;
    tw_rescale r;
    /* a re-run study gives 4.8 cal/cm2 at 18 in, x = 2: AFB = 457.2 x (4.8 / 1.2)^(1/2) = 914.4 */
    assert_int_equal(tw_rescale_by_energy(7.81, 4.8, 0.15, 457.2, 2.0, &r), 0);
    assert_near(r.new_energy_cal, 4.8, 0);
    assert_near(r.new_boundary_mm, 914.4, 1e-9);
    assert_true(r.new_time_s == 0);
    assert_int_equal(r.warnings, 0);
    /* a bus labelled by PPE category has no study energy: 0 is accepted as unknown */
    assert_int_equal(tw_rescale_by_energy(0, 4.8, 0, 457.2, 2.0, &r), 0);
    assert_near(r.new_boundary_mm, 914.4, 1e-9);
    assert_int_equal(tw_rescale_by_energy(-1, 4.8, 0, 457.2, 2.0, &r), -1);
}

/* ---- comparing label content ---- */

static void compare_should_list_changed_added_and_removed_fields_in_canonical_order(void **state)
{
    (void)state;
    char v480[] = "480 V", v600[] = "600 V", e1[] = "7.9 cal/cm2", e2[] = "9.1 cal/cm2";
    char k1[] = "Kit 1 (8 cal/cm2)", k2[] = "Kit 2 (25 cal/cm2)", id[] = "MCC-1", id2[] = "MCC-1";
    char s1[] = "S-2021", s2[] = "S-2026", note[] = "computed from incident energy";
    tw_label a = {0}, b = {0};
    a.value[TW_L_EQUIPMENT_ID] = id;
    b.value[TW_L_EQUIPMENT_ID] = id2;         /* same text, other pointer: unchanged */
    a.value[TW_L_NOMINAL_VOLTAGE] = v480;
    b.value[TW_L_NOMINAL_VOLTAGE] = v600;
    a.value[TW_L_INCIDENT_ENERGY] = e1;       /* 7.9 -> 9.1 crosses the 8 cal/cm2 kit */
    b.value[TW_L_INCIDENT_ENERGY] = e2;
    a.value[TW_L_PPE_LEVEL] = k1;
    b.value[TW_L_PPE_LEVEL] = k2;
    b.value[TW_L_BOUNDARY_NOTE] = note;       /* only on the new label */
    a.value[TW_L_STUDY_ID] = s1;
    b.value[TW_L_STUDY_ID] = s2;
    tw_field_change c[TW_L_COUNT];
    size_t n = tw_label_compare(&a, &b, TW_COMPARE_SKIP_RECORD, c);
    assert_int_equal(n, 4);
    assert_int_equal(c[0].key, TW_L_NOMINAL_VOLTAGE);
    assert_string_equal(c[0].old_value, "480 V");
    assert_string_equal(c[0].new_value, "600 V");
    assert_int_equal(c[1].key, TW_L_BOUNDARY_NOTE);
    assert_null(c[1].old_value);
    assert_int_equal(c[2].key, TW_L_INCIDENT_ENERGY);
    assert_int_equal(c[3].key, TW_L_PPE_LEVEL);
    assert_string_equal(c[3].new_value, "Kit 2 (25 cal/cm2)");
    /* with the record fields, the study ID shows too */
    assert_int_equal(tw_label_compare(&a, &b, TW_COMPARE_ALL, c), 5);
    assert_int_equal(c[4].key, TW_L_STUDY_ID);
    assert_int_equal(tw_label_compare(&a, &a, TW_COMPARE_ALL, c), 0);
}

static void compare_should_ignore_the_service_label_date(void **state)
{
    (void)state;
    char d1[] = "2026-01-01", d2[] = "2026-02-02";
    tw_label a = {0}, b = {0};
    a.value[TW_L_SERVICE_LABEL_DATE] = d1;
    b.value[TW_L_SERVICE_LABEL_DATE] = d2;
    tw_field_change c[TW_L_COUNT];
    assert_int_equal(tw_label_compare(&a, &b, TW_COMPARE_ALL, c), 0);
}

/* ---- review due dates: NFPA 70E 130.5(G), at most 5 years (from memory, verify) ---- */

static tw_date ymd(int y, int m, int d)
{
    tw_date t = {y, m, d};
    return t;
}

static void review_of_a_leap_day_study_should_fall_due_on_28_february(void **state)
{
    (void)state;
    tw_date due;
    long left;
    /* 2020-02-29 + 5 years: 2025 has no 29 February, the earlier day 2025-02-28 is due */
    assert_int_equal(tw_review_due(ymd(2020, 2, 29), ymd(2025, 2, 28), 0, &due, &left),
                     TW_DUE_SOON);
    assert_int_equal(due.year, 2025);
    assert_int_equal(due.month, 2);
    assert_int_equal(due.day, 28);
    assert_int_equal(left, 0);
    /* the next day it is overdue by one day */
    assert_int_equal(tw_review_due(ymd(2020, 2, 29), ymd(2025, 3, 1), 0, &due, &left),
                     TW_DUE_OVERDUE);
    assert_int_equal(left, -1);
    /* the day before, it is due within 1 day but not within 0 */
    assert_int_equal(tw_review_due(ymd(2020, 2, 29), ymd(2025, 2, 27), 1, NULL, NULL), TW_DUE_SOON);
    assert_int_equal(tw_review_due(ymd(2020, 2, 29), ymd(2025, 2, 27), 0, NULL, NULL), TW_DUE_LATER);
}

static void review_window_should_count_across_a_leap_day(void **state)
{
    (void)state;
    long left;
    /* study 2023-03-01, due 2028-03-01; 2028 is a leap year, so from 2028-02-28 there are
     * 2 days (29 Feb, 1 Mar) to go */
    assert_int_equal(tw_review_due(ymd(2023, 3, 1), ymd(2028, 2, 28), 2, NULL, &left), TW_DUE_SOON);
    assert_int_equal(left, 2);
    assert_int_equal(tw_review_due(ymd(2023, 3, 1), ymd(2028, 2, 28), 1, NULL, NULL), TW_DUE_LATER);
    /* a 2024-02-29 study is due 2029-02-28: 365 days after 2028-02-29 */
    assert_int_equal(tw_review_due(ymd(2024, 2, 29), ymd(2028, 2, 29), 365, NULL, &left), TW_DUE_SOON);
    assert_int_equal(left, 365);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(rescale_should_scale_13_8kv_switchgear_from_0_38_to_0_30_s),
        cmocka_unit_test(rescale_should_round_energy_up_before_the_boundary),
        cmocka_unit_test(rescale_should_raise_energy_when_the_time_grows),
        cmocka_unit_test(rescale_should_warn_above_2_s_and_for_large_factors),
        cmocka_unit_test(rescale_should_refuse_unusable_inputs),
        cmocka_unit_test(rescale_by_energy_should_take_the_value_and_recompute_the_boundary),
        cmocka_unit_test(compare_should_list_changed_added_and_removed_fields_in_canonical_order),
        cmocka_unit_test(compare_should_ignore_the_service_label_date),
        cmocka_unit_test(review_of_a_leap_day_study_should_fall_due_on_28_february),
        cmocka_unit_test(review_window_should_count_across_a_leap_day),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
