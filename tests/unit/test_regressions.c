/* test_regressions.c - one test per bug found by fuzzing or by the bad-input corpus, through
 * the public entry points, so each stays fixed. Equipment and study names are fictional. */
#include "tw_test.h"

#include "read/tw_job.h"
#include "rules/tw_label.h"
#include "write/tw_permit_pdf.h"
#include "read/tw_results.h"
#include "rules/tw_scenario.h"
#include "read/tw_site.h"
#include "base/tw_util.h"
#include "read/tw_json.h"

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

/* A million unnamed header columns cost a stored cell and a warning each (245 MB for an 8 MB
 * line); the header is now limited to 4096 columns. */
static void header_with_more_than_4096_columns_should_stop_with_one_error(void **state)
{
    (void)state;
    size_t n = 5000;
    char *csv = malloc(16 + 2 * n);
    assert_non_null(csv);
    strcpy(csv, "equipment_id");
    size_t len = strlen(csv);
    for (size_t i = 0; i < n; i++)
        csv[len++] = ',';
    csv[len++] = '\n';
    tw_diags d;
    tw_diags_init(&d);
    tw_results r;
    assert_int_equal(tw_results_read_csv("wide.csv", csv, len, &r, &d), 0);
    assert_int_equal(d.errors, 1);
    assert_int_equal(d.warnings, 0);
    assert_non_null(strstr(d.items[0].message, "4096 columns"));
    tw_results_free(&r);
    tw_diags_free(&d);
    free(csv);
}

/* Millions of bad cells made millions of stored findings; past TW_MAX_FINDINGS they are only
 * counted, and the count stays right so the run still fails. */
static void findings_past_the_limit_should_be_counted_not_kept(void **state)
{
    (void)state;
    tw_diags d;
    tw_diags_init(&d);
    for (size_t i = 0; i < TW_MAX_FINDINGS + 5; i++)
        tw_diag_add(&d, TW_ERROR, NULL, NULL, "f", "bad %zu", i);
    assert_int_equal(d.count, TW_MAX_FINDINGS);
    assert_int_equal(d.errors, TW_MAX_FINDINGS + 5);
    assert_int_equal(tw_diags_unlisted(&d), 5);
    tw_diags_free(&d);
}

/* 50 MB of "[0,0,...]" took 2 GB to parse; JSON input is now limited by its number of values,
 * counted before parsing, with commas inside strings not counted. */
static void json_with_more_values_than_the_limit_should_not_be_parsed(void **state)
{
    (void)state;
    static const char five[] = "{\"a\": [1, 2, \"x,y\"]}"; /* object, array, 1, 2, "x,y" */
    static const char one[] = "\"\\\",[\"";                 /* the string "\",[" */
    assert_int_equal(tw_json_value_bound(five, strlen(five)), 5);
    assert_int_equal(tw_json_value_bound(one, strlen(one)), 1);
    size_t n = TW_MAX_JSON_VALUES + 1;
    char *json = malloc(2 * n + 16);
    assert_non_null(json);
    size_t len = 0;
    json[len++] = '[';
    for (size_t i = 0; i < n; i++) {
        json[len++] = '0';
        json[len++] = ',';
    }
    json[len - 1] = ']';
    tw_diags d;
    tw_diags_init(&d);
    tw_results r;
    assert_int_equal(tw_results_read_json("big.json", json, len, &r, &d), -1);
    assert_int_equal(d.errors, 1);
    assert_non_null(strstr(d.items[0].message, "JSON values"));
    tw_results_free(&r);
    tw_diags_free(&d);
    free(json);
}

/* A NUL inside a JSON string - a raw byte or \u0000 - made cJSON end the string there: the
 * equipment ID "BI-PNL-1<NUL>-X" was read as "BI-PNL-1", silently, and labelled. */
static void json_text_with_a_nul_should_be_refused_by_every_reader(void **state)
{
    (void)state;
    static const char raw[] = "{\"buses\":[{\"equipment_id\":\"BI-PNL-1\0-X\"}]}";
    static const char esc[] = "{\"site_name\":\"Plant\\u0000 B\"}";
    static const char job[] = "{\"equipment_id\":\"E-1\",\"work_order\":\"W\0/../x\"}";
    tw_diags d;
    tw_diags_init(&d);
    tw_results r;
    assert_int_equal(tw_results_read_json("nul.json", raw, sizeof raw - 1, &r, &d), -1);
    assert_int_equal(r.count, 0);
    assert_int_equal(d.errors, 1);
    tw_results_free(&r);
    tw_site s;
    assert_int_equal(tw_site_load_mem("site.json", esc, sizeof esc - 1, &s, &d), -1);
    assert_int_equal(d.errors, 2);
    tw_site_free(&s);
    tw_jobs j;
    assert_int_equal(tw_job_load_mem("job.json", job, sizeof job - 1, &j, &d), TW_JOB_BAD);
    assert_int_equal(d.errors, 3);
    tw_jobs_free(&j);
    assert_int_equal(tw_json_find_nul("\"a\\\\u0000\"", 10), 10); /* "a\\u0000": not a NUL */
    tw_diags_free(&d);
}

/* A work order ending in '.' gave "permit-WO..pdf", against tw_permit_file_name's promise of
 * no "..". Found by the job file fuzzer's oracle. */
static void permit_file_name_should_have_no_double_dot(void **state)
{
    (void)state;
    char *name = tw_permit_file_name("WO-7.", 0);
    assert_non_null(name);
    assert_string_equal(name, "permit-WO-7_.pdf");
    free(name);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(incident_energy_too_large_to_round_should_get_no_posting_label),
        cmocka_unit_test(length_that_overflows_in_millimetres_should_be_a_reader_error),
        cmocka_unit_test(header_with_more_than_4096_columns_should_stop_with_one_error),
        cmocka_unit_test(findings_past_the_limit_should_be_counted_not_kept),
        cmocka_unit_test(json_with_more_values_than_the_limit_should_not_be_parsed),
        cmocka_unit_test(json_text_with_a_nul_should_be_refused_by_every_reader),
        cmocka_unit_test(permit_file_name_should_have_no_double_dot),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
