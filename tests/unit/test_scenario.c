/* test_scenario.c - grouping rows into buses and choosing the worst case of each. */
#include "tw_test.h"

#include "read/tw_results.h"
#include "rules/tw_rules.h"
#include "rules/tw_scenario.h"

static int read_csv(const char *text, tw_results *r, tw_diags *d)
{
    tw_diags_init(d);
    return tw_results_read_csv("in.csv", text, strlen(text), r, d);
}

static void worst_case_should_be_the_highest_incident_energy(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,scenario,incident_energy_cal_cm2,arc_flash_boundary_mm\n"
                      "SWGR-1,utility max,6.2,900\n"
                      "SWGR-1,utility min,11.8,1400\n" /* lower current, slower clearing */
                      "SWGR-1,generator,9.0,2000\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    tw_row *rows[] = {&r.rows[0], &r.rows[1], &r.rows[2]};
    assert_ptr_equal(tw_worst_case(rows, 3), &r.rows[1]);
    tw_results_free(&r);
    tw_diags_free(&d);
}

static void equal_energy_should_be_broken_by_the_larger_boundary_then_input_order(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,scenario,incident_energy_cal_cm2,arc_flash_boundary_mm\n"
                      "P-1,a,8.5,1000\n"
                      "P-1,b,8.5,1300\n"
                      "P-1,c,8.5,1300\n"
                      "P-1,d,8.4,5000\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    tw_row *rows[] = {&r.rows[0], &r.rows[1], &r.rows[2], &r.rows[3]};
    assert_ptr_equal(tw_worst_case(rows, 4), &r.rows[1]);
    tw_results_free(&r);
    tw_diags_free(&d);
}

static void a_category_only_row_should_count_as_its_minimum_arc_rating(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    /* Category 2 stands for 8 cal/cm2 (NFPA 70E Table 130.7(C)(15)(c)). */
    const char *csv = "equipment_id,scenario,incident_energy_cal_cm2,ppe_category,"
                      "arc_flash_boundary_mm\n"
                      "M-1,calc,7.9,,900\n"
                      "M-1,table,,2,1500\n"
                      "M-1,calc2,8,,1600\n"  /* ties category 2 at 8; larger boundary */
                      "M-1,calc3,8,,1500\n"; /* ties again, smaller boundary */
    assert_int_equal(read_csv(csv, &r, &d), 0);
    tw_row *first_two[] = {&r.rows[0], &r.rows[1]};
    assert_ptr_equal(tw_worst_case(first_two, 2), &r.rows[1]);
    tw_row *all[] = {&r.rows[0], &r.rows[1], &r.rows[2], &r.rows[3]};
    assert_ptr_equal(tw_worst_case(all, 4), &r.rows[2]);
    tw_row *cat_then_equal[] = {&r.rows[1], &r.rows[3]}; /* 8 vs 8, 1500 vs 1500: first */
    assert_ptr_equal(tw_worst_case(cat_then_equal, 2), &r.rows[1]);
    tw_results_free(&r);
    tw_diags_free(&d);
}

static void rows_without_an_id_or_a_hazard_level_should_not_qualify(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,incident_energy_cal_cm2,ppe_category\n"
                      ",40,\n"   /* no ID */
                      "X-1,,\n"  /* no energy, no category */
                      "X-1,,7\n" /* category out of range */
                      "X-2,1.5,\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    tw_row *rows[] = {&r.rows[0], &r.rows[1], &r.rows[2]};
    assert_null(tw_worst_case(rows, 3));
    assert_null(tw_worst_case(rows, 0));
    tw_row *with_x2[] = {&r.rows[0], &r.rows[1], &r.rows[3]};
    assert_ptr_equal(tw_worst_case(with_x2, 3), &r.rows[3]);
    tw_results_free(&r);
    tw_diags_free(&d);
}

static void buses_should_keep_the_order_of_first_appearance(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,scenario,incident_energy_cal_cm2,nominal_voltage_v\n"
                      "B,max,3,480\n"
                      "A,max,5,480\n"
                      ",max,9,480\n"
                      "B,min,4,48x\n"
                      "C,max,1,480\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_int_equal(d.errors, 1);
    tw_bus_set s;
    assert_int_equal(tw_bus_set_build(&r, &s), 0);
    assert_int_equal(s.count, 3);
    assert_string_equal(s.buses[0].equipment_id, "B");
    assert_string_equal(s.buses[1].equipment_id, "A");
    assert_string_equal(s.buses[2].equipment_id, "C");
    assert_int_equal(s.buses[0].count, 2);
    assert_ptr_equal(s.buses[0].rows[0], &r.rows[0]);
    assert_ptr_equal(s.buses[0].rows[1], &r.rows[3]);
    assert_ptr_equal(s.buses[0].governing, &r.rows[3]);
    assert_int_equal(tw_bus_errors(&s.buses[0]), 1);
    assert_int_equal(tw_bus_errors(&s.buses[1]), 0);
    assert_ptr_equal(tw_bus_set_find(&s, "A"), &s.buses[1]);
    assert_null(tw_bus_set_find(&s, "Z"));
    tw_bus_set_free(&s);
    tw_bus_set_free(&s); /* a freed set is a zeroed set */
    tw_results_free(&r);
    tw_diags_free(&d);
}

static void a_bus_with_no_qualifying_row_should_still_have_a_governing_row(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    assert_int_equal(read_csv("equipment_id,nominal_voltage_v\nQ-1,480\n", &r, &d), 0);
    tw_bus_set s;
    assert_int_equal(tw_bus_set_build(&r, &s), 0);
    assert_int_equal(s.count, 1);
    assert_ptr_equal(s.buses[0].governing, &r.rows[0]);
    tw_bus_set_free(&s);
    tw_results_free(&r);
    tw_diags_free(&d);
}

static void an_empty_result_set_should_give_no_buses(void **state)
{
    (void)state;
    tw_results r;
    memset(&r, 0, sizeof r);
    tw_bus_set s;
    assert_int_equal(tw_bus_set_build(&r, &s), 0);
    assert_int_equal(s.count, 0);
    assert_null(tw_bus_set_find(&s, "A"));
    tw_bus_set_free(&s);
    tw_results_free(&r);
}

static void grouping_100000_rows_should_complete(void **state)
{
    (void)state;
    enum { BUSES = 50000, ROWS = 2 * BUSES };
    /* Two scenarios per bus, interleaved so the rows of one bus are far apart. */
    size_t cap = (size_t)ROWS * 40 + 128;
    char *csv = malloc(cap);
    assert_non_null(csv);
    size_t n = (size_t)snprintf(csv, cap, "equipment_id,scenario,incident_energy_cal_cm2\n");
    for (int pass = 0; pass < 2; pass++)
        for (int b = 0; b < BUSES; b++)
            n += (size_t)snprintf(csv + n, cap - n, "BUS-%05d,%s,%d.%d\n", b,
                                  pass ? "min" : "max", 1 + b % 30, pass);
    tw_results r;
    tw_diags d;
    tw_diags_init(&d);
    assert_int_equal(tw_results_read_csv("big.csv", csv, n, &r, &d), 0);
    assert_int_equal(r.count, ROWS);
    tw_bus_set s;
    assert_int_equal(tw_bus_set_build(&r, &s), 0);
    assert_int_equal(s.count, BUSES);
    const tw_bus *b = tw_bus_set_find(&s, "BUS-12345");
    assert_non_null(b);
    assert_int_equal(b->count, 2);
    assert_ptr_equal(b->governing, b->rows[1]); /* x.1 beats x.0 */
    assert_int_equal(b->rows[1]->line, 2 + BUSES + 12345);
    tw_bus_set_free(&s);
    tw_results_free(&r);
    tw_diags_free(&d);
    free(csv);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(worst_case_should_be_the_highest_incident_energy),
        cmocka_unit_test(equal_energy_should_be_broken_by_the_larger_boundary_then_input_order),
        cmocka_unit_test(a_category_only_row_should_count_as_its_minimum_arc_rating),
        cmocka_unit_test(rows_without_an_id_or_a_hazard_level_should_not_qualify),
        cmocka_unit_test(buses_should_keep_the_order_of_first_appearance),
        cmocka_unit_test(a_bus_with_no_qualifying_row_should_still_have_a_governing_row),
        cmocka_unit_test(an_empty_result_set_should_give_no_buses),
        cmocka_unit_test(grouping_100000_rows_should_complete),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
