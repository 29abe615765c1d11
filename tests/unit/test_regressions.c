/* test_regressions.c - one test per bug found by fuzzing or by the bad-input corpus, through
 * the public entry points, so each stays fixed. Equipment and study names are fictional. */
#include "tw_test.h"

#include "tw_label.h"
#include "tw_results.h"
#include "tw_scenario.h"
#include "tw_site.h"

/* Read CSV text, group it and derive the first bus's label. Returns tw_label_derive's result
 * (or -2 when reading failed); *errors receives every error finding counted. */
static int derive_first(const char *csv, tw_label *label, size_t *errors)
{
    tw_diags d;
    tw_diags_init(&d);
    tw_results r;
    tw_bus_set buses = {0};
    tw_site site;
    int rc = -2;
    assert_int_equal(tw_site_defaults(&site), 0);
    memset(label, 0, sizeof *label);
    if (tw_results_read_csv("reg.csv", csv, strlen(csv), &r, &d) == 0 &&
        tw_bus_set_build(&r, &buses) == 0 && buses.count > 0)
        rc = tw_label_derive(&buses.buses[0], &site, "2025-02-28", label, &d);
    *errors = d.errors;
    tw_bus_set_free(&buses);
    tw_results_free(&r);
    tw_site_free(&site);
    tw_diags_free(&d);
    return rc;
}

#define HEADER "equipment_id,study_id,study_date,nominal_voltage_v,working_distance_in,"

/* 1e308 cal/cm2 is a finite number, but rounding it up to 0.1 overflowed to NaN and the
 * posting label read "-nan cal/cm2". */
static void incident_energy_too_large_to_round_should_get_no_posting_label(void **state)
{
    (void)state;
    tw_label l;
    size_t errors = 0;
    int rc = derive_first(HEADER "incident_energy_cal_cm2,arc_flash_boundary_in\n"
                                 "RG-PNL-1,RG-1,2024-01-31,480,18,1e308,20\n",
                          &l, &errors);
    assert_int_equal(rc, -1);
    assert_true(errors > 0);
    assert_null(l.value[TW_L_INCIDENT_ENERGY]);
    tw_label_free(&l);
}

/* 1e307 ft is finite, but 3.048e309 mm is not: the reader stored infinity and `check` passed
 * the row. The reader must refuse it where it reads it. */
static void length_that_overflows_in_millimetres_should_be_a_reader_error(void **state)
{
    (void)state;
    static const char csv[] = HEADER "incident_energy_cal_cm2,arc_flash_boundary_ft\n"
                                     "RG-PNL-2,RG-1,2024-01-31,480,18,5,1e307\n";
    tw_diags d;
    tw_diags_init(&d);
    tw_results r;
    assert_int_equal(tw_results_read_csv("reg.csv", csv, strlen(csv), &r, &d), 0);
    assert_int_equal(r.count, 1);
    assert_int_equal(d.errors, 1);
    assert_false(tw_row_has(&r.rows[0], TW_F_ARC_FLASH_BOUNDARY_MM));
    assert_true((r.rows[0].invalid >> TW_F_ARC_FLASH_BOUNDARY_MM) & 1u);
    assert_non_null(strstr(d.items[0].message, "finite"));
    assert_string_equal(d.items[0].field, "arc_flash_boundary_ft");
    tw_results_free(&r);
    tw_diags_free(&d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(incident_energy_too_large_to_round_should_get_no_posting_label),
        cmocka_unit_test(length_that_overflows_in_millimetres_should_be_a_reader_error),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
