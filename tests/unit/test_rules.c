/* test_rules.c - the trade's tables and rounding against their published sources.
 *
 * Sources: NFPA 70E (2024 edition) Table 130.4(E)(a) and Table 130.7(C)(15)(c); ASTM D120
 * maximum use voltages; ANSI Z535.4 signal words. Table values here were entered from memory:
 * verify against the edition in force.
 */
#include "tw_test.h"

#include "rules/tw_rules.h"
#include "read/tw_site.h"

/* ---- NFPA 70E (2024) Table 130.4(E)(a), AC approach boundaries (from memory) ---- */

static void check_approach(double volts, double fixed_mm, const char *fixed_ft,
                           double restricted_mm, const char *restricted_ft)
{
    const tw_approach *a = tw_approach_for_voltage(volts);
    assert_non_null(a);
    assert_true(volts <= a->v_max);
    assert_near(a->limited_movable_mm, 3000, 0);   /* 10 ft 0 in / 3.0 m up to 72.5 kV */
    assert_string_equal(a->limited_movable_ft, "10 ft 0 in");
    assert_near(a->limited_fixed_mm, fixed_mm, 0);
    assert_string_equal(a->limited_fixed_ft, fixed_ft);
    assert_near(a->restricted_mm, restricted_mm, 0);
    assert_string_equal(a->restricted_ft, restricted_ft);
}

static void approach_should_be_3ft6in_and_avoid_contact_at_120v(void **state)
{
    (void)state;
    /* 70E Table 130.4(E)(a), row 50-150 V: 1.0 m (3 ft 6 in) / avoid contact */
    check_approach(120, 1000, "3 ft 6 in", 0, "avoid contact");
}

static void approach_should_be_1ft_restricted_at_208v_480v_and_600v(void **state)
{
    (void)state;
    /* 70E Table 130.4(E)(a), row 151-750 V: 1.0 m (3 ft 6 in) / 0.3 m (1 ft 0 in) */
    check_approach(208, 1000, "3 ft 6 in", 300, "1 ft 0 in");
    check_approach(480, 1000, "3 ft 6 in", 300, "1 ft 0 in");
    check_approach(600, 1000, "3 ft 6 in", 300, "1 ft 0 in");
}

static void approach_should_be_5ft_and_2ft2in_at_4160v_and_13800v(void **state)
{
    (void)state;
    /* 70E Table 130.4(E)(a), row 751 V-15 kV: 1.5 m (5 ft 0 in) / 0.7 m (2 ft 2 in) */
    check_approach(4160, 1500, "5 ft 0 in", 700, "2 ft 2 in");
    check_approach(13800, 1500, "5 ft 0 in", 700, "2 ft 2 in");
}

static void approach_should_be_6ft_and_2ft7in_at_34500v(void **state)
{
    (void)state;
    /* 70E Table 130.4(E)(a), row 15.1-36 kV: 1.8 m (6 ft 0 in) / 0.8 m (2 ft 7 in) */
    check_approach(34500, 1800, "6 ft 0 in", 800, "2 ft 7 in");
}

static void approach_should_take_the_next_higher_row_in_a_gap_of_the_table(void **state)
{
    (void)state;
    /* Fail safe: 150.5 V lies between the 50-150 V and 151-750 V rows -> 151-750 V row. */
    check_approach(150.5, 1000, "3 ft 6 in", 300, "1 ft 0 in");
    /* 130 kV lies in the 121-138 kV gap -> the 138-145 kV row: 3.0 m (10 ft 0 in) fixed,
     * 1.2 m (3 ft 10 in) restricted, 3.4 m (11 ft 0 in) movable. */
    const tw_approach *a = tw_approach_for_voltage(130000);
    assert_non_null(a);
    assert_near(a->v_min, 138000, 0);
    assert_string_equal(a->limited_movable_ft, "11 ft 0 in");
    assert_string_equal(a->restricted_ft, "3 ft 10 in");
}

static void approach_should_be_absent_below_50v_and_above_800kv(void **state)
{
    (void)state;
    /* The table starts at 50 V and ends at 765-800 kV. */
    assert_null(tw_approach_for_voltage(49));
    assert_null(tw_approach_for_voltage(800001));
    assert_null(tw_approach_for_voltage(NAN));
    const tw_approach *top = tw_approach_for_voltage(800000);
    assert_non_null(top);
    assert_string_equal(top->restricted_ft, "15 ft 11 in");   /* 4.9 m (15 ft 11 in) */
    assert_near(top->restricted_mm, 4900, 0);
}

/* ---- ASTM D120 glove classes, maximum use voltage AC (from memory) ---- */

static void check_glove(double volts, const char *cls, double max_use)
{
    const tw_glove_class *g = tw_glove_class_for_voltage(volts);
    assert_non_null(g);
    assert_string_equal(g->name, cls);
    assert_near(g->max_use_v_ac, max_use, 0);
}

static void glove_class_should_be_the_lowest_class_rated_for_the_voltage(void **state)
{
    (void)state;
    check_glove(208, "00", 500);      /* ASTM D120 class 00: 500 V AC */
    check_glove(480, "00", 500);
    check_glove(500, "00", 500);      /* at the class limit, inclusive */
    check_glove(600, "0", 1000);      /* class 0: 1,000 V AC */
    check_glove(1000, "0", 1000);
    check_glove(4160, "1", 7500);     /* class 1: 7,500 V AC */
    check_glove(13800, "2", 17000);   /* class 2: 17,000 V AC */
    check_glove(25000, "3", 26500);   /* class 3: 26,500 V AC */
    check_glove(34500, "4", 36000);   /* class 4: 36,000 V AC */
}

static void glove_class_should_be_absent_above_class_4(void **state)
{
    (void)state;
    assert_null(tw_glove_class_for_voltage(40000));   /* above ASTM D120 class 4, 36 kV */
    assert_null(tw_glove_class_for_voltage(0));
    assert_null(tw_glove_class_for_voltage(NAN));
}

/* ---- NFPA 70E (2024) Table 130.7(C)(15)(c), PPE category arc ratings (from memory) ---- */

static void ppe_category_ratings_should_be_4_8_25_and_40(void **state)
{
    (void)state;
    assert_near(tw_ppe_category_rating(1), 4, 0);
    assert_near(tw_ppe_category_rating(2), 8, 0);
    assert_near(tw_ppe_category_rating(3), 25, 0);
    assert_near(tw_ppe_category_rating(4), 40, 0);
    assert_near(tw_ppe_category_rating(0), 0, 0);   /* no category 0 in the 2024 table */
    assert_near(tw_ppe_category_rating(5), 0, 0);
    assert_near(tw_ppe_category_rating(-1), 0, 0);
}

/* ---- rounding toward safety ---- */

static void energy_should_round_up_to_the_next_tenth(void **state)
{
    (void)state;
    assert_true(tw_round_energy_up(4.0) == 4.0);    /* exact stays */
    assert_true(tw_round_energy_up(4.01) == 4.1);
    assert_true(tw_round_energy_up(0.04) == 0.1);
    assert_true(tw_round_energy_up(6.3) == 6.3);    /* 6.3 * 10 is not exactly 63 in binary */
    assert_true(tw_round_energy_up(8.15) == 8.2);
    assert_true(tw_round_energy_up(39.99) == 40.0);
    assert_true(tw_round_energy_up(0) == 0);
}

static void lengths_should_round_up_to_whole_mm_and_inches(void **state)
{
    (void)state;
    assert_int_equal(tw_round_mm_up(1397.1), 1398);
    assert_int_equal(tw_round_mm_up(1397.0), 1397);
    assert_int_equal(tw_round_in_up(1397.0), 55);   /* 55 in = 1397 mm exactly */
    assert_int_equal(tw_round_in_up(1397.1), 56);
    assert_int_equal(tw_round_in_up(304.8), 12);    /* 304.8 / 25.4 = 12.000000000000002 */
    assert_int_equal(tw_round_mm_up(-1), -1);
    assert_int_equal(tw_round_mm_up(NAN), -1);
    assert_int_equal(tw_round_in_up(1e300), -1);
}

static void length_should_print_feet_inches_and_millimetres(void **state)
{
    (void)state;
    char buf[64];
    tw_format_length(1397.0, TW_UNITS_IMPERIAL_METRIC, buf, sizeof buf);
    assert_string_equal(buf, "4 ft 7 in (1397 mm)");   /* 55 in */
    tw_format_length(1397.1, TW_UNITS_IMPERIAL_METRIC, buf, sizeof buf);
    assert_string_equal(buf, "4 ft 8 in (1398 mm)");   /* 55.004 in -> 56 in */
    tw_format_length(304.8, TW_UNITS_IMPERIAL_METRIC, buf, sizeof buf);
    assert_string_equal(buf, "1 ft 0 in (305 mm)");
    tw_format_length(203.2, TW_UNITS_IMPERIAL_METRIC, buf, sizeof buf);
    assert_string_equal(buf, "8 in (204 mm)");         /* under a foot: inches only */
    tw_format_length(1397.1, TW_UNITS_METRIC, buf, sizeof buf);
    assert_string_equal(buf, "1398 mm");
    tw_format_length(-5, TW_UNITS_METRIC, buf, sizeof buf);
    assert_string_equal(buf, "");
}

static void length_should_not_overrun_a_small_buffer(void **state)
{
    (void)state;
    char buf[8];
    memset(buf, 'x', sizeof buf);
    tw_format_length(1397.1, TW_UNITS_IMPERIAL_METRIC, buf, 6);
    assert_int_equal(strlen(buf), 5);
    assert_int_equal(buf[7], 'x');
}

/* ---- ANSI Z535.4 signal words; 40 cal/cm2 is common practice ---- */

static void signal_word_should_be_warning_at_40_and_danger_at_40_1(void **state)
{
    (void)state;
    tw_site site;
    assert_int_equal(tw_site_defaults(&site), 0);
    assert_int_equal(tw_signal_word(40.0, &site), TW_SIGNAL_WARNING);
    assert_int_equal(tw_signal_word(40.1, &site), TW_SIGNAL_DANGER);
    assert_int_equal(tw_signal_word(NAN, &site), TW_SIGNAL_DANGER);   /* fail closed */
    assert_string_equal(tw_signal_name(TW_SIGNAL_WARNING), "WARNING");
    assert_string_equal(tw_signal_name(TW_SIGNAL_DANGER), "DANGER");
    tw_site_free(&site);
}

static void signal_word_should_be_danger_above_the_sites_highest_level(void **state)
{
    (void)state;
    tw_ppe_level levels[] = {{"Kit 1", 8}, {"Kit 2", 25}};
    tw_site site;
    assert_int_equal(tw_site_defaults(&site), 0);
    tw_ppe_level *own = site.ppe_levels;
    size_t own_n = site.ppe_level_count;
    site.ppe_levels = levels;
    site.ppe_level_count = 2;
    assert_int_equal(tw_signal_word(25.0, &site), TW_SIGNAL_WARNING);
    assert_int_equal(tw_signal_word(25.1, &site), TW_SIGNAL_DANGER);  /* below 40, above kit */
    site.ppe_levels = own;
    site.ppe_level_count = own_n;
    tw_site_free(&site);
}

/* ---- one definition per trade rule -------------------------------------------------------- */

/* NFPA 70E 130.5(G) (from memory): reviewed at intervals not exceeding 5 years. */
static void review_should_be_due_5_years_after_the_study_and_never_late(void **state)
{
    (void)state;
    tw_date d, due;
    assert_int_equal(tw_date_parse("2026-03-15", &d), 0);
    due = tw_review_due_date(d);
    assert_int_equal(due.year, 2031);
    assert_int_equal(due.month, 3);
    assert_int_equal(due.day, 15);
    assert_int_equal(tw_date_parse("2024-02-29", &d), 0);
    due = tw_review_due_date(d); /* 2029 has no 29 February: the day before, never after */
    assert_int_equal(due.month, 2);
    assert_int_equal(due.day, 28);
}

/* NEC 110.16(B) (2020 edition, from memory): 1200 A; a site may only lower it. */
static void service_label_threshold_should_be_1200a_unless_the_site_lowers_it(void **state)
{
    (void)state;
    tw_site site;
    assert_int_equal(tw_site_defaults(&site), 0);
    assert_near(tw_service_label_min_a(NULL), 1200, 0);
    assert_near(tw_service_label_min_a(&site), 1200, 0);
    tw_diags d;
    tw_diags_init(&d);
    site.service_label_min_a = 1000; /* NEC 2023 (from memory) */
    assert_near(tw_service_label_min_a(&site), 1000, 0);
    assert_int_equal(tw_site_check_rules(&site, "site.json", &d), 0);
    site.service_label_min_a = 1200.5;
    assert_int_equal(tw_site_check_rules(&site, "site.json", &d), -1);
    assert_string_equal(d.items[0].path, "service_label_min_a");
    tw_diags_free(&d);
    tw_site_free(&site);
}

/* Common practice: DANGER above 40 cal/cm2 unless the site sets its own threshold. */
static void danger_threshold_should_be_40_unless_the_site_sets_one(void **state)
{
    (void)state;
    tw_site site;
    assert_int_equal(tw_site_defaults(&site), 0);
    assert_near(tw_danger_above_cal(NULL), 40, 0);
    assert_near(tw_danger_above_cal(&site), 40, 0);
    site.danger_above_cal_cm2 = 25;
    assert_near(tw_danger_above_cal(&site), 25, 0);
    tw_site_free(&site);
}

/* NFPA 70E Table 130.7(C)(15)(c): categories 1 to 4, whole numbers. */
static void ppe_category_should_be_a_whole_number_from_1_to_4(void **state)
{
    (void)state;
    assert_true(tw_ppe_category_valid(1) && tw_ppe_category_valid(4));
    assert_false(tw_ppe_category_valid(0) || tw_ppe_category_valid(5));
    assert_false(tw_ppe_category_valid(2.5) || tw_ppe_category_valid(NAN));
}

static void row_rating_should_be_the_energy_else_the_categorys_minimum(void **state)
{
    (void)state;
    tw_row r = {0};
    assert_true(isnan(tw_row_rating(&r)));
    r.present = 1u << TW_F_PPE_CATEGORY;
    r.num[TW_F_PPE_CATEGORY] = 3;
    assert_near(tw_row_rating(&r), 25, 0); /* NFPA 70E Table 130.7(C)(15)(c): category 3 */
    r.present |= 1u << TW_F_INCIDENT_ENERGY_CAL;
    r.num[TW_F_INCIDENT_ENERGY_CAL] = 7.04;
    assert_near(tw_row_rating(&r), 7.04, 0); /* not rounded: the worst case compares these */
    r.num[TW_F_INCIDENT_ENERGY_CAL] = -1;
    assert_near(tw_row_rating(&r), 25, 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(approach_should_be_3ft6in_and_avoid_contact_at_120v),
        cmocka_unit_test(approach_should_be_1ft_restricted_at_208v_480v_and_600v),
        cmocka_unit_test(approach_should_be_5ft_and_2ft2in_at_4160v_and_13800v),
        cmocka_unit_test(approach_should_be_6ft_and_2ft7in_at_34500v),
        cmocka_unit_test(approach_should_take_the_next_higher_row_in_a_gap_of_the_table),
        cmocka_unit_test(approach_should_be_absent_below_50v_and_above_800kv),
        cmocka_unit_test(glove_class_should_be_the_lowest_class_rated_for_the_voltage),
        cmocka_unit_test(glove_class_should_be_absent_above_class_4),
        cmocka_unit_test(ppe_category_ratings_should_be_4_8_25_and_40),
        cmocka_unit_test(energy_should_round_up_to_the_next_tenth),
        cmocka_unit_test(lengths_should_round_up_to_whole_mm_and_inches),
        cmocka_unit_test(length_should_print_feet_inches_and_millimetres),
        cmocka_unit_test(length_should_not_overrun_a_small_buffer),
        cmocka_unit_test(signal_word_should_be_warning_at_40_and_danger_at_40_1),
        cmocka_unit_test(signal_word_should_be_danger_above_the_sites_highest_level),
        cmocka_unit_test(review_should_be_due_5_years_after_the_study_and_never_late),
        cmocka_unit_test(service_label_threshold_should_be_1200a_unless_the_site_lowers_it),
        cmocka_unit_test(danger_threshold_should_be_40_unless_the_site_sets_one),
        cmocka_unit_test(ppe_category_should_be_a_whole_number_from_1_to_4),
        cmocka_unit_test(row_rating_should_be_the_energy_else_the_categorys_minimum),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
