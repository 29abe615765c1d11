/* test_validate.c - checks on study results before anything is posted. */
#include "tw_test.h"

#include "read/tw_results.h"
#include "rules/tw_rules.h"
#include "rules/tw_scenario.h"
#include "read/tw_site.h"
#include "rules/tw_validate.h"

/* A study, its buses and findings, read and validated in one go. */
typedef struct {
    tw_results r;
    tw_bus_set s;
    tw_diags d;
    size_t read_errors, errors;
} fixture;

/* Columns of a complete row; tests change one thing at a time. */
#define HEAD                                                                                    \
    "equipment_id,scenario,study_date,nominal_voltage_v,incident_energy_cal_cm2,"              \
    "working_distance_mm,arc_flash_boundary_mm,ppe_category\n"

static void check_csv(fixture *f, const char *csv)
{
    memset(f, 0, sizeof *f);
    tw_diags_init(&f->d);
    tw_results_read_csv("study.csv", csv, strlen(csv), &f->r, &f->d);
    f->read_errors = f->d.errors;
    assert_int_equal(tw_bus_set_build(&f->r, &f->s), 0);
    tw_site site;
    memset(&site, 0, sizeof site);
    site.service_label_min_a = 1200; /* NEC 110.16(B) */
    f->errors = tw_validate(&f->r, &f->s, &site, &f->d);
}

static void check_json(fixture *f, const char *json)
{
    memset(f, 0, sizeof *f);
    tw_diags_init(&f->d);
    tw_results_read_json("study.json", json, strlen(json), &f->r, &f->d);
    f->read_errors = f->d.errors;
    assert_int_equal(tw_bus_set_build(&f->r, &f->s), 0);
    f->errors = tw_validate(&f->r, &f->s, NULL, &f->d);
}

static void fixture_free(fixture *f)
{
    tw_bus_set_free(&f->s);
    tw_results_free(&f->r);
    tw_diags_free(&f->d);
}

static const tw_diag *find_diag(const fixture *f, const char *needle)
{
    for (size_t i = 0; i < f->d.count; i++)
        if (f->d.items[i].message && strstr(f->d.items[i].message, needle))
            return &f->d.items[i];
    return NULL;
}

static void a_complete_row_should_pass(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD "SWGR-1,max,2025-06-30,480,8.2,457.2,1219.2,\n"
                       "PNL-2,max,2025-06-30,208,,,300,1\n");
    assert_int_equal(f.errors, 0);
    assert_int_equal(f.d.count, 0);
    fixture_free(&f);
}

static void a_missing_boundary_should_be_an_error_naming_the_line(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD "SWGR-1,max,2025-06-30,480,8.2,457.2,1219.2,\n"
                       "SWGR-2,max,2025-06-30,480,8.2,457.2,,\n");
    assert_int_equal(f.errors, 1);
    const tw_diag *g = &f.d.items[0];
    assert_string_equal(g->file, "study.csv");
    assert_int_equal(g->line, 3);
    assert_string_equal(g->equipment_id, "SWGR-2");
    assert_string_equal(g->field, "arc_flash_boundary_mm|_in|_ft");
    assert_non_null(strstr(g->message, "missing"));
    assert_int_equal(f.r.rows[1].errors, 1);
    assert_int_equal(tw_bus_errors(tw_bus_set_find(&f.s, "SWGR-2")), 1);
    assert_int_equal(tw_bus_errors(tw_bus_set_find(&f.s, "SWGR-1")), 0);
    fixture_free(&f);
}

static void no_energy_and_no_category_should_name_both_ways(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD "MCC-4,max,2025-06-30,480,,,900,\n");
    assert_int_equal(f.errors, 1);
    assert_non_null(find_diag(&f, "expected incident_energy_cal_cm2|_j_cm2 with "
                                  "working_distance_mm|_in, or ppe_category"));
    fixture_free(&f);
}

static void incident_energy_without_working_distance_should_be_an_error(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD "MCC-4,max,2025-06-30,480,4.1,,900,\n");
    assert_int_equal(f.errors, 1);
    assert_string_equal(f.d.items[0].field, "working_distance_mm|_in");
    fixture_free(&f);
}

static void zero_and_negative_values_should_be_errors(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD "A,max,2025-06-30,480,0,457.2,1219.2,\n"    /* 0 cal/cm2 */
                       "B,max,2025-06-30,480,2,-457.2,1219.2,\n"   /* negative distance */
                       "C,max,2025-06-30,480,,,300,5\n"            /* no category 5 */
                       "D,max,2025-06-30,480,,,300,0\n");          /* nor 0 */
    assert_int_equal(f.errors, 4);
    const tw_diag *g = find_diag(&f, "expected a value greater than 0, got 0 cal/cm2");
    assert_non_null(g);
    assert_string_equal(g->field, "incident_energy_cal_cm2");
    assert_non_null(find_diag(&f, "got -457.2 mm"));
    g = find_diag(&f, "expected a PPE category from 1 to 4");
    assert_non_null(g);
    assert_int_equal(g->line, 4);
    fixture_free(&f);
}

static void an_unreadable_value_should_not_also_be_reported_missing(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD "A,max,2025-06-30,480,8,457.2,wide,\n");
    assert_int_equal(f.read_errors, 1);
    assert_int_equal(f.errors, 0);
    assert_int_equal(f.r.rows[0].errors, 1);
    fixture_free(&f);
}

static void duplicate_ids_within_a_scenario_should_be_an_error_on_the_later_row(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD "A,max,2025-06-30,480,8,457.2,1219.2,\n"  /* 2 */
                       "A,min,2025-06-30,480,9,457.2,1300,\n"    /* 3: another scenario */
                       "B,,2025-06-30,480,8,457.2,1219.2,\n"     /* 4 */
                       "A,max,2025-06-30,480,7,457.2,1100,\n"    /* 5: same as line 2 */
                       "B,,2025-06-30,480,8,457.2,1219.2,\n");   /* 6: same as line 4 */
    assert_int_equal(f.errors, 2);
    const tw_diag *g = find_diag(&f, "given twice for scenario 'max' (first at line 2)");
    assert_non_null(g);
    assert_int_equal(g->line, 5);
    assert_string_equal(g->equipment_id, "A");
    g = find_diag(&f, "given twice without a scenario (first at line 4)");
    assert_non_null(g);
    assert_int_equal(g->line, 6);
    assert_int_equal(f.r.rows[0].errors, 0);
    assert_int_equal(f.r.rows[3].errors, 1);
    fixture_free(&f);
}

static void duplicate_ids_in_json_should_name_the_earlier_path(void **state)
{
    (void)state;
    fixture f;
    check_json(&f, "{\"study\": {\"study_date\": \"2025-06-30\", \"nominal_voltage_v\": 480,"
                   " \"working_distance_in\": 18, \"arc_flash_boundary_in\": 48},"
                   " \"buses\": [{\"equipment_id\": \"A\", \"incident_energy_cal_cm2\": 8},"
                   "             {\"equipment_id\": \"A\", \"incident_energy_cal_cm2\": 9}]}");
    assert_int_equal(f.errors, 1);
    const tw_diag *g = find_diag(&f, "first at buses[0]");
    assert_non_null(g);
    assert_string_equal(g->path, "buses[1].equipment_id");
    fixture_free(&f);
}

static void a_missing_or_malformed_study_date_should_be_an_error(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD "A,max,,480,8,457.2,1219.2,\n"
                       "B,max,30/06/2025,480,8,457.2,1219.2,\n"
                       "C,max,2025-02-29,480,8,457.2,1219.2,\n"); /* 2025 is not a leap year */
    assert_int_equal(f.errors, 3);
    const tw_diag *g = find_diag(&f, "missing; expected the study date");
    assert_non_null(g);
    assert_string_equal(g->field, "study_date");
    assert_int_equal(g->line, 2);
    assert_non_null(find_diag(&f, "expected an ISO 8601 date YYYY-MM-DD, got '30/06/2025'"));
    assert_non_null(find_diag(&f, "got '2025-02-29'"));
    fixture_free(&f);
}

static void a_voltage_outside_the_tables_should_be_an_error(void **state)
{
    (void)state;
    fixture f;
    /* NFPA 70E Table 130.4(E)(a) starts at 50 V and ends at 800 kV; ASTM D120 class 4
     * gloves end at 36 kV maximum use voltage. */
    check_csv(&f, HEAD "LV-1,max,2025-06-30,24,,,300,1\n"          /* below 50 V */
                       "HV-1,max,2025-06-30,900000,8,910,3000,\n"  /* above both */
                       "MV-1,max,2025-06-30,13800,8,910,3000,\n"); /* in the tables */
    const tw_diag *g =
        find_diag(&f, "no approach-boundary row in NFPA 70E Table 130.4(E)(a) for 24 V");
    assert_non_null(g);
    assert_int_equal(g->line, 2);
    assert_non_null(find_diag(&f, "Table 130.4(E)(a) for 900000 V"));
    assert_non_null(find_diag(&f, "no rubber insulating glove class in ASTM D120 for 900000 V"));
    assert_int_equal(f.errors, 3);
    assert_int_equal(f.r.rows[2].errors, 0);
    fixture_free(&f);
}

static void a_voltage_that_differs_between_scenarios_should_be_an_error(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD "A,max,2025-06-30,480,8,457.2,1219.2,\n"
                       "A,min,2025-06-30,600,9,457.2,1300,\n");
    assert_int_equal(f.errors, 1);
    const tw_diag *g = find_diag(&f, "600 V here, 480 V at line 2");
    assert_non_null(g);
    assert_int_equal(g->line, 3);
    fixture_free(&f);
}

static void scenarios_of_different_study_revisions_should_be_an_error(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD "A,max,2025-06-30,480,8,457.2,1219.2,\n"
                       "A,min,2021-03-10,480,9,457.2,1300,\n"
                       "B,max,2025-06-30,480,8,457.2,1219.2,\n"
                       "B,min,2025-06-30,480,9,457.2,1300,\n");
    assert_int_equal(f.errors, 1); /* bus B's rows agree */
    const tw_diag *g = find_diag(&f, "'2021-03-10' here, '2025-06-30' at line 2");
    assert_non_null(g);
    assert_int_equal(g->line, 3);
    fixture_free(&f);
}

static void large_service_equipment_should_need_fault_current_and_clearing_time(void **state)
{
    (void)state;
    fixture f;
    /* NEC 110.16(B): service equipment rated 1200 A or more. */
    check_csv(&f, "equipment_id,study_date,nominal_voltage_v,incident_energy_cal_cm2,"
                  "working_distance_mm,arc_flash_boundary_mm,service_equipment,service_rating_a,"
                  "bolted_fault_ka,clearing_time_s\n"
                  "MSB-1,2025-06-30,480,8,457.2,1219.2,yes,2000,,\n"   /* 2: both missing */
                  "MSB-2,2025-06-30,480,8,457.2,1219.2,yes,1200,42,\n" /* 3: clearing missing */
                  "MSB-3,2025-06-30,480,8,457.2,1219.2,yes,800,,\n"    /* 4: below 1200 A */
                  "MSB-4,2025-06-30,480,8,457.2,1219.2,yes,,,\n"       /* 5: rating unknown */
                  "MSB-5,2025-06-30,480,8,457.2,1219.2,no,4000,,\n"    /* 6: not service */
                  "MSB-6,2025-06-30,480,8,457.2,1219.2,yes,3000,50,0.05\n");
    assert_int_equal(f.errors, 4);
    assert_int_equal(f.r.rows[0].errors, 2);
    assert_int_equal(f.r.rows[1].errors, 1);
    assert_string_equal(f.d.items[2].field, "clearing_time_s");
    assert_int_equal(f.r.rows[2].errors, 0);
    assert_int_equal(f.r.rows[3].errors, 1);
    assert_string_equal(f.d.items[3].field, "service_rating_a");
    assert_int_equal(f.r.rows[4].errors, 0);
    assert_int_equal(f.r.rows[5].errors, 0);
    assert_non_null(find_diag(&f, "NEC 110.16(B)"));
    fixture_free(&f);
}

static void an_unknown_electrode_configuration_should_be_a_warning(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, "equipment_id,study_date,nominal_voltage_v,ppe_category,"
                  "arc_flash_boundary_mm,electrode_config\n"
                  "A,2025-06-30,480,2,900,VCB\n"
                  "B,2025-06-30,480,2,900,hoa\n"
                  "C,2025-06-30,480,2,900,XYZ\n");
    assert_int_equal(f.errors, 0);
    assert_int_equal(f.d.warnings, 1);
    assert_non_null(find_diag(&f, "expected one of VCB, VCBB, HCB, VOA, HOA"));
    fixture_free(&f);
}

static void a_row_without_an_id_should_be_reported_and_left_out_of_the_buses(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD ",max,2025-06-30,480,8,457.2,1219.2,\n");
    assert_int_equal(f.errors, 2); /* the missing ID, and a file without buses */
    assert_string_equal(f.d.items[0].field, "equipment_id");
    assert_non_null(strstr(f.d.items[1].message, "no buses"));
    assert_int_equal(f.s.count, 0);
    fixture_free(&f);
}

static void validate_should_return_only_the_errors_it_found(void **state)
{
    (void)state;
    fixture f;
    check_csv(&f, HEAD "A,max,2025-06-30,abc,8,457.2,1219.2,\n"
                       "B,max,2025-06-30,480,8,457.2,,\n");
    assert_int_equal(f.read_errors, 1);
    assert_int_equal(f.errors, 1);
    assert_int_equal(f.d.errors, 2);
    fixture_free(&f);
}

/* Issue 13: an invisible character makes two IDs that read the same name two buses. */
static void an_id_with_an_invisible_character_should_be_an_error(void **state)
{
    (void)state;
    static const char *const hidden[][2] = {
        {"MCC-1\xc2\xa0", "U+00A0"},        /* no-break space */
        {"MCC\xe2\x80\x8b-1", "U+200B"},    /* zero-width space */
        {"\xef\xbb\xbfMCC-1", "U+FEFF"},    /* byte order mark */
        {"MCC-\xe2\x80\xae" "1", "U+202E"}, /* right-to-left override */
        {"MCC-\xe2\x81\xa9" "1", "U+2069"}, /* pop directional isolate */
        {"MCC\xc2\xad-1", "U+00AD"},        /* soft hyphen (format) */
        {"MCC\xe3\x80\x80" "1", "U+3000"},  /* ideographic space */
    };
    for (size_t i = 0; i < sizeof hidden / sizeof hidden[0]; i++) {
        char csv[512];
        snprintf(csv, sizeof csv, HEAD "%s,max,2025-06-30,480,8.2,457.2,1219.2,\n", hidden[i][0]);
        fixture f;
        check_csv(&f, csv);
        const tw_diag *g = find_diag(&f, hidden[i][1]);
        assert_non_null(g);
        assert_string_equal(g->field, "equipment_id");
        assert_int_equal(g->line, 2);
        fixture_free(&f);
    }
    fixture f; /* the other side: accented letters and a plain inner space are fine */
    check_csv(&f, HEAD "Schaltanlage Süd 1,max,2025-06-30,480,8.2,457.2,1219.2,\n");
    assert_int_equal(f.errors, 0);
    fixture_free(&f);
}

/* Issue 13: IDs equal after NFKC case folding are the same bus: both lines get an error naming
 * the other. */
static void ids_equal_after_case_folding_should_name_both_lines(void **state)
{
    (void)state;
    static const char *const twins[][2] = {
        {"MCC-1", "mcc-1"},
        {"MCC-1", "\xef\xbc\xad" "CC-1"},   /* full-width M */
        {"MCC-1", "MCC-\xc2\xb9"},          /* superscript one */
        {"STRASSE-1", "stra\xc3\x9f" "e-1"}, /* sharp s folds to ss */
        {"MCC 1", "mcc  1"},                 /* two spaces read as one */
    };
    for (size_t i = 0; i < sizeof twins / sizeof twins[0]; i++) {
        char csv[512];
        snprintf(csv, sizeof csv, HEAD "%s,max,2025-06-30,480,8.2,457.2,1219.2,\n"
                 "%s,max,2025-06-30,480,8.2,457.2,1219.2,\n", twins[i][0], twins[i][1]);
        fixture f;
        check_csv(&f, csv);
        int at2 = 0, at3 = 0;
        for (size_t k = 0; k < f.d.count; k++) {
            const tw_diag *g = &f.d.items[k];
            if (!g->message || !strstr(g->message, "read as the same ID"))
                continue;
            at2 += g->line == 2 && strstr(g->message, "(line 3)") != NULL;
            at3 += g->line == 3 && strstr(g->message, "(line 2)") != NULL;
        }
        assert_int_equal(at2, 1);
        assert_int_equal(at3, 1);
        fixture_free(&f);
    }
    fixture f; /* the other side: IDs that differ in a letter or digit */
    check_csv(&f, HEAD "MCC-1,max,2025-06-30,480,8.2,457.2,1219.2,\n"
                       "MCC-2,max,2025-06-30,480,8.2,457.2,1219.2,\n"
                       "MCC-l,max,2025-06-30,480,8.2,457.2,1219.2,\n");
    assert_int_equal(f.errors, 0);
    fixture_free(&f);
}

/* Issue 13: printed text the label font cannot draw as it reads is an error naming the field
 * and the character. */
static void text_the_font_cannot_draw_should_be_an_error(void **state)
{
    (void)state;
    static const char *const bad[][2] = {
        {"Panel \xe4\xb8\xad", "U+4E2D"},          /* CJK: no glyph in DejaVu Sans */
        {"Panel \xee\x80\x80", "U+E000"},          /* private use */
        {"Panel \xf0\x9f\x94\xa5", "U+1F525"},     /* beyond the BMP */
        {"\xd7\xa9\xd7\x9c\xd7\x95\xd7\x9d", "U+05E9"}, /* Hebrew */
        {"\xd9\x84\xd9\x88\xd8\xad\xd8\xa9", "U+0644"}, /* Arabic */
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        char json[512];
        snprintf(json, sizeof json,
                 "{\"buses\": [{\"equipment_id\": \"P-1\", \"description\": \"%s\", "
                 "\"study_date\": \"2025-06-30\", \"nominal_voltage_v\": 480, "
                 "\"incident_energy_cal_cm2\": 8.2, \"working_distance_mm\": 457.2, "
                 "\"arc_flash_boundary_mm\": 1219.2}]}", bad[i][0]);
        fixture f;
        check_json(&f, json);
        const tw_diag *g = find_diag(&f, bad[i][1]);
        assert_non_null(g);
        assert_string_equal(g->field, "description");
        assert_string_equal(g->path, "buses[0].description");
        fixture_free(&f);
    }
    fixture f; /* the other side: Greek, accents and the euro sign are in DejaVu Sans */
    check_json(&f, "{\"buses\": [{\"equipment_id\": \"P-1\", \"description\": "
                   "\"\xce\x95\xce\xbb\xce\xbb\xce\xac\xce\xb4\xce\xb1 \xc3\xa9 \xe2\x82\xac\", "
                   "\"study_date\": \"2025-06-30\", \"nominal_voltage_v\": 480, "
                   "\"incident_energy_cal_cm2\": 8.2, \"working_distance_mm\": 457.2, "
                   "\"arc_flash_boundary_mm\": 1219.2}]}");
    assert_int_equal(f.errors, 0);
    fixture_free(&f);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(a_complete_row_should_pass),
        cmocka_unit_test(a_missing_boundary_should_be_an_error_naming_the_line),
        cmocka_unit_test(no_energy_and_no_category_should_name_both_ways),
        cmocka_unit_test(incident_energy_without_working_distance_should_be_an_error),
        cmocka_unit_test(zero_and_negative_values_should_be_errors),
        cmocka_unit_test(an_unreadable_value_should_not_also_be_reported_missing),
        cmocka_unit_test(duplicate_ids_within_a_scenario_should_be_an_error_on_the_later_row),
        cmocka_unit_test(duplicate_ids_in_json_should_name_the_earlier_path),
        cmocka_unit_test(a_missing_or_malformed_study_date_should_be_an_error),
        cmocka_unit_test(a_voltage_outside_the_tables_should_be_an_error),
        cmocka_unit_test(a_voltage_that_differs_between_scenarios_should_be_an_error),
        cmocka_unit_test(scenarios_of_different_study_revisions_should_be_an_error),
        cmocka_unit_test(large_service_equipment_should_need_fault_current_and_clearing_time),
        cmocka_unit_test(an_unknown_electrode_configuration_should_be_a_warning),
        cmocka_unit_test(a_row_without_an_id_should_be_reported_and_left_out_of_the_buses),
        cmocka_unit_test(validate_should_return_only_the_errors_it_found),
        cmocka_unit_test(an_id_with_an_invisible_character_should_be_an_error),
        cmocka_unit_test(ids_equal_after_case_folding_should_name_both_lines),
        cmocka_unit_test(text_the_font_cannot_draw_should_be_an_error),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
