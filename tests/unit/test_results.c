/* test_results.c - reading study results from CSV and JSON: units, line numbers, JSON paths,
 * and every kind of bad input the readers must refuse without crashing. */
#include "tw_test.h"

#include <unistd.h>

#include "read/tw_results.h"
#include "../same_results.h"

/* ---- helpers ----------------------------------------------------------------------------- */

static int read_csv(const char *text, tw_results *r, tw_diags *d)
{
    tw_diags_init(d);
    return tw_results_read_csv("in.csv", text, strlen(text), r, d);
}

static int read_json(const char *text, tw_results *r, tw_diags *d)
{
    tw_diags_init(d);
    return tw_results_read_json("in.json", text, strlen(text), r, d);
}

/* The first finding whose message contains needle, or NULL. */
static const tw_diag *find_diag(const tw_diags *d, const char *needle)
{
    for (size_t i = 0; i < d->count; i++)
        if (d->items[i].message && strstr(d->items[i].message, needle))
            return &d->items[i];
    return NULL;
}

static void done(tw_results *r, tw_diags *d)
{
    tw_results_free(r);
    tw_diags_free(d);
}

/* ---- CSV --------------------------------------------------------------------------------- */

static void csv_with_bom_and_crlf_should_read_every_row(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "\xEF\xBB\xBF"
                      "equipment_id,nominal_voltage_v,arc_flash_boundary_mm\r\n"
                      "SWGR-A1,480,1200\r\n"
                      "PNL-B2 , 208 ,300\r\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_int_equal(d.errors, 0);
    assert_int_equal(d.warnings, 0);
    assert_int_equal(r.count, 2);
    assert_string_equal(r.rows[0].text[TW_F_EQUIPMENT_ID], "SWGR-A1");
    assert_string_equal(r.rows[1].text[TW_F_EQUIPMENT_ID], "PNL-B2"); /* trimmed */
    assert_near(r.rows[1].num[TW_F_NOMINAL_VOLTAGE_V], 208, 0);
    assert_int_equal(r.rows[0].line, 2);
    assert_int_equal(r.rows[1].line, 3);
    done(&r, &d);
}

static void a_line_break_in_a_quoted_description_should_be_an_error(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,description,location\n"
                      "MCC-3,\"Motor control, north \"\"wing\"\"\r\nSection 2\","
                      "\"Room 4, level 1\"\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_int_equal(d.errors, 1); /* every value is one line (docs/input-format.md) */
    assert_non_null(find_diag(&d, "expected a single line, found a line break"));
    assert_int_equal(r.count, 1);
    assert_null(r.rows[0].text[TW_F_DESCRIPTION]);
    assert_string_equal(r.rows[0].text[TW_F_LOCATION], "Room 4, level 1");
    done(&r, &d);
}

static void line_numbers_should_count_lines_after_a_multiline_cell_and_blank_lines(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,description,nominal_voltage_v\n" /* 1 */
                      "\n"                                           /* 2 */
                      "A-1,\"three\n"                                /* 3 */
                      "line\n"                                       /* 4 */
                      "cell\",480\n"                                 /* 5 */
                      "   \n"                                        /* 6 */
                      ",,\n"                                         /* 7: empty cells */
                      "A-2,plain,abc\n"                              /* 8 */
                      "\n"                                           /* 9 */
                      "A-3,last,600";                                /* 10, no final LF */
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_int_equal(r.count, 3);
    assert_int_equal(r.rows[0].line, 3);
    assert_null(r.rows[0].text[TW_F_DESCRIPTION]); /* a line break: an error on line 3 */
    assert_int_equal(r.rows[1].line, 8);
    assert_int_equal(r.rows[2].line, 10);
    const tw_diag *g = find_diag(&d, "expected a decimal number, got 'abc'");
    assert_non_null(g);
    assert_int_equal(g->line, 8);
    assert_string_equal(g->file, "in.csv");
    assert_string_equal(g->equipment_id, "A-2");
    assert_string_equal(g->field, "nominal_voltage_v");
    assert_true(r.rows[1].invalid & (1u << TW_F_NOMINAL_VOLTAGE_V));
    assert_false(tw_row_has(&r.rows[1], TW_F_NOMINAL_VOLTAGE_V));
    assert_int_equal(r.rows[1].errors, 1);
    done(&r, &d);
}

static void unknown_column_should_be_warned_once_at_line_1(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,colour,nominal_voltage_v\nA,red,480\nB,blue,480\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_int_equal(d.errors, 0);
    assert_int_equal(d.warnings, 1);
    assert_int_equal(d.items[0].severity, TW_WARNING);
    assert_int_equal(d.items[0].line, 1);
    assert_string_equal(d.items[0].field, "colour");
    assert_int_equal(r.count, 2);
    done(&r, &d);
}

static void inches_feet_and_joules_should_convert_by_hand_arithmetic(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,arc_flash_boundary_in,working_distance_in,"
                      "incident_energy_j_cm2\n"
                      "A,48,18,33.472\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_int_equal(d.errors, 0);
    /* 48 in x 25.4 mm/in = 1219.2 mm; 18 in x 25.4 = 457.2 mm; 33.472 J/cm2 / 4.184 J/cal
     * = 8.0 cal/cm2 (1 cal = 4.184 J, thermochemical calorie) */
    assert_near(r.rows[0].num[TW_F_ARC_FLASH_BOUNDARY_MM], 1219.2, 1e-9);
    assert_near(r.rows[0].num[TW_F_WORKING_DISTANCE_MM], 457.2, 1e-9);
    assert_near(r.rows[0].num[TW_F_INCIDENT_ENERGY_CAL], 8.0, 1e-9);
    done(&r, &d);

    /* 4 ft x 304.8 mm/ft = 1219.2 mm */
    assert_int_equal(read_csv("equipment_id,arc_flash_boundary_ft\nA,4\n", &r, &d), 0);
    assert_near(r.rows[0].num[TW_F_ARC_FLASH_BOUNDARY_MM], 1219.2, 1e-9);
    done(&r, &d);
}

static void two_units_that_agree_should_keep_the_larger_and_disagree_should_be_an_error(
    void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,arc_flash_boundary_mm,arc_flash_boundary_in\n"
                      "A,1219,48\n"  /* 1219.2 mm: rounding only */
                      "B,1500,48\n"; /* 1500 mm is not 48 in */
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_near(r.rows[0].num[TW_F_ARC_FLASH_BOUNDARY_MM], 1219.2, 1e-9);
    assert_int_equal(r.rows[0].errors, 0);
    assert_int_equal(d.errors, 1);
    assert_int_equal(r.rows[1].errors, 1);
    assert_int_equal(d.items[0].line, 3);
    assert_string_equal(d.items[0].field, "arc_flash_boundary_in");
    assert_non_null(strstr(d.items[0].message, "1219.2 mm"));
    assert_non_null(strstr(d.items[0].message, "1500 mm"));
    assert_false(tw_row_has(&r.rows[1], TW_F_ARC_FLASH_BOUNDARY_MM));
    done(&r, &d);
}

static void nan_inf_overflow_and_hex_numbers_should_be_refused(void **state)
{
    (void)state;
    const char *bad[] = {"nan", "NaN", "inf", "-Infinity", "1e999", "0x1A", "12 kA", "4,5"};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        tw_results r;
        tw_diags d;
        char csv[128];
        snprintf(csv, sizeof csv, "equipment_id,bolted_fault_ka\nA,\"%s\"\n", bad[i]);
        assert_int_equal(read_csv(csv, &r, &d), 0);
        assert_int_equal(d.errors, 1);
        assert_non_null(strstr(d.items[0].message, "expected a decimal number, got '"));
        assert_non_null(strstr(d.items[0].message, bad[i]));
        assert_false(tw_row_has(&r.rows[0], TW_F_BOLTED_FAULT_KA));
        assert_true(r.rows[0].invalid & (1u << TW_F_BOLTED_FAULT_KA));
        done(&r, &d);
    }
}

static void empty_cell_should_be_absent_not_zero(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    assert_int_equal(read_csv("equipment_id,bolted_fault_ka,location\nA,  ,\"  \"\n", &r, &d), 0);
    assert_int_equal(d.errors, 0);
    assert_false(tw_row_has(&r.rows[0], TW_F_BOLTED_FAULT_KA));
    assert_false(tw_row_has(&r.rows[0], TW_F_LOCATION));
    assert_int_equal(r.rows[0].invalid, 0);
    done(&r, &d);
}

static void ppe_category_should_be_a_whole_number(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    assert_int_equal(read_csv("equipment_id,ppe_category\nA,2\nB,2.5\n", &r, &d), 0);
    assert_near(r.rows[0].num[TW_F_PPE_CATEGORY], 2, 0);
    assert_int_equal(d.errors, 1);
    assert_non_null(find_diag(&d, "expected a whole number, got '2.5'"));
    assert_int_equal(d.items[0].line, 3);
    done(&r, &d);
}

static void service_equipment_should_accept_yes_no_words_in_any_case(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,service_equipment\n"
                      "A,Yes\nB,no\nC,TRUE\nD,false\nE,y\nF,N\nG,1\nH,0\nI,maybe\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    const double want[] = {1, 0, 1, 0, 1, 0, 1, 0};
    for (size_t i = 0; i < 8; i++) {
        assert_true(tw_row_has(&r.rows[i], TW_F_SERVICE_EQUIPMENT));
        assert_near(r.rows[i].num[TW_F_SERVICE_EQUIPMENT], want[i], 0);
    }
    assert_int_equal(d.errors, 1);
    assert_non_null(find_diag(&d, "expected yes or no, got 'maybe'"));
    assert_int_equal(d.items[0].line, 10);
    done(&r, &d);
}

static void unterminated_quote_should_be_reported_with_its_line_and_taint_every_row(
    void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,description\n"
                      "A,fine\n"
                      "B,\"never closed\n"
                      "C,swallowed\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    const tw_diag *g = find_diag(&d, "unterminated quoted cell");
    assert_non_null(g);
    assert_int_equal(g->line, 3);
    assert_int_equal(g->severity, TW_ERROR);
    /* rows after the quote are lost, so no row of the file may be posted */
    assert_int_equal(r.count, 1);
    assert_int_equal(r.rows[0].errors, 1);
    done(&r, &d);
}

static void a_stray_quote_should_be_reported_with_its_line(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,description\nA,fine\nB,\"closed\"then more\nC,x\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    const tw_diag *g = find_diag(&d, "malformed quoting");
    assert_non_null(g);
    assert_int_equal(g->line, 3);
    assert_int_equal(d.errors, 1);
    assert_int_equal(r.count, 1); /* reading stops at the broken row */
    assert_int_equal(r.rows[0].errors, 1);
    done(&r, &d);
}

static void a_duplicated_column_should_be_an_error_and_read_no_rows(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    assert_int_equal(read_csv("equipment_id,nominal_voltage_v,nominal_voltage_v\nA,480,600\n",
                              &r, &d),
                     0);
    assert_int_equal(d.errors, 1);
    assert_int_equal(d.items[0].line, 1);
    assert_string_equal(d.items[0].field, "nominal_voltage_v");
    assert_non_null(strstr(d.items[0].message, "column given twice"));
    assert_int_equal(r.count, 0);
    done(&r, &d);
}

static void a_row_with_more_cells_than_the_header_should_be_an_error(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    assert_int_equal(read_csv("equipment_id,nominal_voltage_v\nA,480,extra,more\nB,208\n", &r, &d),
                     0);
    assert_int_equal(r.count, 2);
    assert_int_equal(r.rows[0].errors, 1);
    assert_int_equal(r.rows[1].errors, 0);
    assert_non_null(find_diag(&d, "row has 4 cells, expected at most 2"));
    assert_string_equal(d.items[0].equipment_id, "A");
    done(&r, &d);
}

static void text_over_the_limit_should_be_an_error_never_truncated(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    char csv[256];
    char id[TW_MAX_ID_BYTES + 2];
    memset(id, 'X', sizeof id - 1);
    id[sizeof id - 1] = '\0'; /* 65 bytes */
    snprintf(csv, sizeof csv, "equipment_id,nominal_voltage_v\n%s,480\n", id);
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_int_equal(d.errors, 1);
    assert_non_null(find_diag(&d, "expected at most 64 bytes, got 65"));
    assert_null(r.rows[0].text[TW_F_EQUIPMENT_ID]);
    assert_true(r.rows[0].invalid & (1u << TW_F_EQUIPMENT_ID));
    done(&r, &d);

    id[TW_MAX_ID_BYTES] = '\0'; /* exactly 64 bytes is fine */
    snprintf(csv, sizeof csv, "equipment_id\n%s\n", id);
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_int_equal(d.errors, 0);
    assert_int_equal(strlen(r.rows[0].text[TW_F_EQUIPMENT_ID]), TW_MAX_ID_BYTES);
    done(&r, &d);
}

static void bad_utf8_control_characters_and_line_breaks_in_ids_should_be_errors(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,description\n"
                      "A\xC3\x28,ok\n"           /* invalid UTF-8 */
                      "B,tab\there\n"            /* control character */
                      "\"C\nD\",two lines\n"     /* line break in an ID */
                      "\xC3\xA9t\xC3\xA9,fine\n"; /* "été" is valid UTF-8 */
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_int_equal(d.errors, 3);
    assert_non_null(find_diag(&d, "expected UTF-8 text"));
    assert_non_null(find_diag(&d, "control character U+0009"));
    const tw_diag *g = find_diag(&d, "expected a single line");
    assert_non_null(g);
    assert_int_equal(g->line, 4);
    assert_string_equal(r.rows[3].text[TW_F_EQUIPMENT_ID], "\xC3\xA9t\xC3\xA9");
    done(&r, &d);
}

static void a_nul_byte_in_a_number_cell_should_be_refused(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char csv[] = "equipment_id,nominal_voltage_v\nA,480\0junk\n";
    tw_diags_init(&d);
    assert_int_equal(tw_results_read_csv("in.csv", csv, sizeof csv - 1, &r, &d), 0);
    assert_int_equal(d.errors, 1);
    assert_false(tw_row_has(&r.rows[0], TW_F_NOMINAL_VOLTAGE_V));
    done(&r, &d);
}

static void a_cell_over_64_kib_should_stop_reading_with_an_error(void **state)
{
    (void)state;
    size_t big = 70 * 1024;
    const char *head = "equipment_id,description\nA,\"";
    char *csv = malloc(strlen(head) + big + 16);
    assert_non_null(csv);
    strcpy(csv, head);
    memset(csv + strlen(head), 'x', big);
    strcpy(csv + strlen(head) + big, "\"\nB,z\n");
    tw_results r;
    tw_diags d;
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_non_null(find_diag(&d, "longer than 64 KiB"));
    assert_int_equal(r.count, 0);
    free(csv);
    done(&r, &d);
}

static void an_empty_file_or_a_header_of_unknown_names_should_fail_the_read(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    assert_int_equal(read_csv("", &r, &d), -1);
    assert_non_null(find_diag(&d, "expected a header row"));
    done(&r, &d);
    assert_int_equal(read_csv("\x89PNG\r\n\x1a\n,,", &r, &d), -1);
    assert_int_equal(d.errors, 1);
    assert_int_equal(d.warnings, 0);
    done(&r, &d);
    assert_int_equal(read_csv("equipment_id\n", &r, &d), 0); /* header only: no rows */
    assert_int_equal(r.count, 0);
    done(&r, &d);
}

/* ---- JSON -------------------------------------------------------------------------------- */

static void json_findings_should_name_the_path(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *json = "{\"buses\": [\n"
                       "  {\"equipment_id\": \"A\", \"nominal_voltage_v\": 480},\n"
                       "  {\"equipment_id\": \"B\", \"nominal_voltage_v\": \"480\"},\n"
                       "  {\"equipment_id\": 7}\n"
                       "]}";
    assert_int_equal(read_json(json, &r, &d), 0);
    assert_int_equal(r.count, 3);
    assert_string_equal(r.rows[1].path, "buses[1]");
    assert_int_equal(r.rows[1].line, 0);
    const tw_diag *g = find_diag(&d, "expected a number, got a string '480'");
    assert_non_null(g);
    assert_string_equal(g->path, "buses[1].nominal_voltage_v");
    assert_string_equal(g->equipment_id, "B");
    g = find_diag(&d, "expected a string, got a number");
    assert_non_null(g);
    assert_string_equal(g->path, "buses[2].equipment_id");
    char buf[64];
    tw_source src = tw_row_source(&r.rows[1], TW_F_ARC_FLASH_BOUNDARY_MM, buf, sizeof buf);
    assert_string_equal(src.path, "buses[1].arc_flash_boundary_mm");
    assert_string_equal(src.file, "in.json");
    done(&r, &d);
}

static void study_values_should_be_defaults_for_every_bus(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *json = "{\"study\": {\"study_id\": \"ST-9\", \"study_date\": \"2025-03-01\","
                       "            \"working_distance_in\": 18},"
                       " \"buses\": [{\"equipment_id\": \"A\"},"
                       "             {\"equipment_id\": \"B\", \"study_date\": \"2025-04-02\","
                       "              \"working_distance_mm\": 610, \"service_equipment\": \"yes\","
                       "              \"location\": null}]}";
    assert_int_equal(read_json(json, &r, &d), 0);
    assert_int_equal(d.errors, 0);
    assert_string_equal(r.rows[0].text[TW_F_STUDY_ID], "ST-9");
    assert_string_equal(r.rows[0].text[TW_F_STUDY_DATE], "2025-03-01");
    assert_near(r.rows[0].num[TW_F_WORKING_DISTANCE_MM], 457.2, 1e-9);
    assert_string_equal(r.rows[1].text[TW_F_STUDY_ID], "ST-9");
    assert_string_equal(r.rows[1].text[TW_F_STUDY_DATE], "2025-04-02");
    assert_near(r.rows[1].num[TW_F_WORKING_DISTANCE_MM], 610, 0);
    assert_near(r.rows[1].num[TW_F_SERVICE_EQUIPMENT], 1, 0);
    assert_false(tw_row_has(&r.rows[1], TW_F_LOCATION));
    done(&r, &d);
}

static void a_bad_study_default_should_count_against_every_bus_that_inherits_it(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *json = "{\"study\": {\"xfmr_kva\": \"big\"},"
                       " \"buses\": [{\"equipment_id\": \"A\"},"
                       "             {\"equipment_id\": \"B\", \"xfmr_kva\": 1500}]}";
    assert_int_equal(read_json(json, &r, &d), 0);
    assert_int_equal(d.errors, 1); /* reported once, at study.xfmr_kva */
    assert_string_equal(d.items[0].path, "study.xfmr_kva");
    assert_int_equal(r.rows[0].errors, 1);
    assert_int_equal(r.rows[1].errors, 0);
    done(&r, &d);
}

static void json_booleans_and_yes_no_strings_should_both_work(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *json = "{\"buses\": [{\"equipment_id\": \"A\", \"service_equipment\": true},"
                       "{\"equipment_id\": \"B\", \"service_equipment\": \"No\"},"
                       "{\"equipment_id\": \"C\", \"service_equipment\": 1}]}";
    assert_int_equal(read_json(json, &r, &d), 0);
    assert_near(r.rows[0].num[TW_F_SERVICE_EQUIPMENT], 1, 0);
    assert_near(r.rows[1].num[TW_F_SERVICE_EQUIPMENT], 0, 0);
    assert_int_equal(d.errors, 1);
    assert_string_equal(d.items[0].path, "buses[2].service_equipment");
    done(&r, &d);
}

static void wrong_json_shapes_should_be_errors_naming_the_path(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    assert_int_equal(read_json("[1, 2]", &r, &d), -1); /* the file is refused as a whole */
    assert_non_null(find_diag(&d, "at the top, got an array"));
    assert_int_equal(r.count, 0);
    done(&r, &d);

    assert_int_equal(read_json("{\"buses\": {\"equipment_id\": \"A\"}}", &r, &d), 0);
    assert_string_equal(d.items[0].path, "buses");
    assert_int_equal(r.count, 0);
    done(&r, &d);

    assert_int_equal(read_json("{\"study\": {}}", &r, &d), 0);
    assert_non_null(find_diag(&d, "no \"buses\" key"));
    done(&r, &d);

    assert_int_equal(read_json("{\"study\": [], \"buses\": [{\"equipment_id\": \"A\"}]}", &r, &d),
                     0);
    assert_string_equal(d.items[0].path, "study");
    assert_int_equal(r.rows[0].errors, 1); /* its defaults are lost */
    done(&r, &d);

    /* a bus that is not an object is lost: the others are read, and none may be posted */
    assert_int_equal(read_json("{\"buses\": [{\"equipment_id\": \"A\"}, 5, \"x\", "
                               "{\"equipment_id\": \"D\"}]}",
                               &r, &d),
                     0);
    assert_int_equal(d.errors, 2);
    assert_string_equal(d.items[0].path, "buses[1]");
    assert_non_null(strstr(d.items[0].message, "got a number"));
    assert_string_equal(d.items[1].path, "buses[2]");
    assert_int_equal(r.count, 2);
    assert_int_equal(r.rows[0].errors, 2);
    assert_int_equal(r.rows[1].errors, 2);
    done(&r, &d);
}

static void broken_json_should_be_reported_with_a_line(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    assert_int_equal(read_json("{\"buses\": [\n{\"equipment_id\": \"A\",}\n]}", &r, &d), -1);
    assert_int_equal(d.errors, 1);
    assert_int_equal(d.items[0].line, 2);
    done(&r, &d);
    assert_int_equal(read_json("{\"buses\": []} trailing", &r, &d), -1);
    assert_non_null(find_diag(&d, "unexpected data after the JSON value near byte 14"));
    done(&r, &d);
}

static void json_unknown_keys_should_be_warned_once(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *json = "{\"version\": 2, "
                       "\"buses\": [{\"equipment_id\": \"A\", \"colour\": \"red\"},"
                       "{\"equipment_id\": \"B\", \"colour\": \"blue\"}]}";
    assert_int_equal(read_json(json, &r, &d), 0);
    assert_int_equal(d.errors, 0);
    assert_int_equal(d.warnings, 2);
    assert_string_equal(d.items[1].path, "buses[0].colour");
    done(&r, &d);
}

static void json_numbers_out_of_range_and_escaped_nul_should_be_refused(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    assert_int_equal(
        read_json("{\"buses\": [{\"equipment_id\": \"A\", \"bolted_fault_ka\": 1e999}]}", &r, &d),
        0);
    assert_int_equal(d.errors, 1);
    assert_string_equal(d.items[0].path, "buses[0].bolted_fault_ka");
    assert_false(tw_row_has(&r.rows[0], TW_F_BOLTED_FAULT_KA));
    done(&r, &d);

    assert_int_equal(read_json("{\"buses\": [{\"equipment_id\": \"A\\u0000B\"}]}", &r, &d), -1);
    assert_non_null(find_diag(&d, "a NUL character"));
    assert_int_equal(r.count, 0);
    done(&r, &d);

    /* an escaped backslash followed by "u0000" is plain text */
    assert_int_equal(read_json("{\"buses\": [{\"equipment_id\": \"A\\\\u0000\"}]}", &r, &d), 0);
    assert_string_equal(r.rows[0].text[TW_F_EQUIPMENT_ID], "A\\u0000");
    done(&r, &d);
}

/* A key given twice refuses the whole file (read/tw_json.h), naming the second key's path. */
static void json_key_given_twice_should_refuse_the_file(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    assert_int_equal(read_json("{\"buses\": [{\"equipment_id\": \"A\", \"nominal_voltage_v\": 480,"
                               " \"nominal_voltage_v\": 600}]}",
                               &r, &d),
                     -1);
    assert_int_equal(d.errors, 1);
    assert_string_equal(d.items[0].path, "buses[0].nominal_voltage_v");
    assert_int_equal(r.count, 0);
    done(&r, &d);

    assert_int_equal(read_json("{\"buses\": [{\"equipment_id\": \"A\", \"equipment_id\": \"B\"}]}",
                               &r, &d),
                     -1);
    assert_int_equal(d.errors, 1);
    assert_string_equal(d.items[0].path, "buses[0].equipment_id");
    assert_int_equal(r.count, 0);
    done(&r, &d);
}

/* ---- files ------------------------------------------------------------------------------- */

static char *temp_file(const char *suffix, const char *content)
{
    char *path = malloc(64);
    assert_non_null(path);
    snprintf(path, 64, "/tmp/tw_results_XXXXXX%s", suffix);
    int fd = mkstemps(path, (int)strlen(suffix));
    assert_true(fd >= 0);
    assert_int_equal(write(fd, content, strlen(content)), (ssize_t)strlen(content));
    close(fd);
    return path;
}

static void results_read_should_choose_json_by_name_or_first_byte(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *json = "  \n{\"buses\": [{\"equipment_id\": \"J-1\"}]}";
    char *a = temp_file(".json", json), *b = temp_file(".txt", json),
         *c = temp_file(".csv", "equipment_id\nC-1\n");
    char *paths[] = {a, b, c};
    const char *ids[] = {"J-1", "J-1", "C-1"};
    for (size_t i = 0; i < 3; i++) {
        tw_diags_init(&d);
        assert_int_equal(tw_results_read(paths[i], &r, &d), 0);
        assert_int_equal(d.errors, 0);
        assert_string_equal(r.rows[0].text[TW_F_EQUIPMENT_ID], ids[i]);
        assert_string_equal(r.rows[0].file, paths[i]);
        done(&r, &d);
        unlink(paths[i]);
        free(paths[i]);
    }
}

static void an_unreadable_file_should_be_an_error_naming_the_path(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    tw_diags_init(&d);
    assert_int_equal(tw_results_read("/nonexistent/study.csv", &r, &d), -1);
    assert_int_equal(d.errors, 1);
    assert_string_equal(d.items[0].file, "/nonexistent/study.csv");
    assert_non_null(strstr(d.items[0].message, "cannot open"));
    done(&r, &d);
}

/* A value repeated from the row before (a bus's scenario rows) is stored once and shared; a
 * different value, or the same one in another field, is not mixed up with it. */
static void repeated_values_should_be_stored_once(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    const char *csv = "equipment_id,description,location,scenario\n"
                      "MCC-1,Motor control,Hall,max\n"
                      "MCC-1,Motor control,Hall,min\n"
                      "MCC-2,Hall,Motor control,min\n";
    assert_int_equal(read_csv(csv, &r, &d), 0);
    assert_int_equal(r.count, 3);
    assert_ptr_equal(r.rows[0].text[TW_F_DESCRIPTION], r.rows[1].text[TW_F_DESCRIPTION]);
    assert_ptr_equal(r.rows[0].text[TW_F_EQUIPMENT_ID], r.rows[1].text[TW_F_EQUIPMENT_ID]);
    assert_string_equal(r.rows[1].text[TW_F_SCENARIO], "min");
    assert_string_equal(r.rows[2].text[TW_F_EQUIPMENT_ID], "MCC-2");
    assert_string_equal(r.rows[2].text[TW_F_DESCRIPTION], "Hall");
    assert_string_equal(r.rows[2].text[TW_F_LOCATION], "Motor control");
    assert_string_equal(r.rows[0].text[TW_F_LOCATION], "Hall");
    done(&r, &d);
}

/* Files are read in pieces (tw_results_read_csv_stream), tests and fuzzers give whole buffers:
 * both must give the same rows, lines and findings, wherever a piece ends - inside a byte order
 * mark, a quoted cell over several lines, a CRLF, a bad value or a broken quote. */
static void csv_read_in_pieces_should_read_as_it_does_whole(void **state)
{
    (void)state;
    const char *inputs[] = {
        "\xEF\xBB\xBF" "equipment_id,nominal_voltage_v,arc_flash_boundary_mm\r\n"
        "SWGR-A1,480,1200\r\n\r\nPNL-B2 , 208 ,300\r\n",
        "equipment_id,description,incident_energy_cal_cm2\n"
        "MCC-1,\"Motor control, line 1\nsecond line\n\nfourth\",7.81\n"
        ",,\n"
        "MCC-2,plain,abc\n"
        "MCC-3,\"x\"\"y\",1e999\n",
        "equipment_id,nominal_voltage_v\nA,1,2,3\nB,\"unterminated\n",
        "equipment_id,nominal_voltage_v\nA,1\nB,x\"y\n C,2\n",
        "nothing_known,at_all\n1,2\n",
        "equipment_id,equipment_id\nA\n",
        "\n\n   \n",
        "equipment_id",
    };
    const size_t caps[] = {1, 2, 3, 5, 8, 64, 4096};
    for (size_t k = 0; k < sizeof inputs / sizeof inputs[0]; k++) {
        for (size_t c = 0; c < sizeof caps / sizeof caps[0]; c++) {
            size_t len = strlen(inputs[k]);
            tw_results whole, pieces;
            tw_diags dw, dp;
            tw_diags_init(&dw);
            tw_diags_init(&dp);
            int rw = tw_results_read_csv("in.csv", inputs[k], len, &whole, &dw);
            FILE *f = fmemopen((void *)inputs[k], len, "r");
            assert_non_null(f);
            char *buf = malloc(caps[c]);
            assert_non_null(buf);
            size_t have = fread(buf, 1, caps[c], f);
            int rp = tw_results_read_csv_stream("in.csv", f, buf, have, caps[c], len, &pieces, &dp);
            fclose(f);
            free(buf);
            const char *differs = tw_same_results(&whole, &dw, &pieces, &dp);
            if (rw != rp || differs)
                fail_msg("input %zu in pieces of %zu bytes: %s differs", k, caps[c],
                         differs ? differs : "the return value");
            done(&whole, &dw);
            done(&pieces, &dp);
        }
    }
}

static void column_table_should_name_fields_and_units(void **state)
{
    (void)state;
    assert_string_equal(tw_field_name(TW_F_ARC_FLASH_BOUNDARY_MM), "arc_flash_boundary_mm");
    assert_string_equal(tw_field_display(TW_F_ARC_FLASH_BOUNDARY_MM),
                        "arc_flash_boundary_mm|_in|_ft");
    assert_string_equal(tw_field_display(TW_F_INCIDENT_ENERGY_CAL),
                        "incident_energy_cal_cm2|_j_cm2");
    assert_string_equal(tw_field_display(TW_F_WORKING_DISTANCE_MM), "working_distance_mm|_in");
    assert_int_equal(tw_field_kind(TW_F_PPE_CATEGORY), TW_KIND_INTEGER);
    assert_int_equal(tw_field_kind(TW_F_SERVICE_EQUIPMENT), TW_KIND_BOOL);
    assert_null(tw_column_find("Equipment_ID"));
    /* every field has at least one column, and its canonical one has factor 1 */
    for (int f = 0; f < TW_F_COUNT; f++) {
        const tw_column *c = tw_column_find(tw_field_name((tw_field)f));
        assert_non_null(c);
        assert_int_equal(c->field, f);
        assert_near(c->to_canonical, 1.0, 0);
    }
    assert_true(TW_F_COUNT <= 32); /* present/invalid are 32-bit masks */
    /* a row keeps strings for the first TW_TEXT_FIELDS fields only: the text ones */
    for (size_t i = 0; i < tw_column_count; i++)
        assert_int_equal(tw_columns[i].kind == TW_KIND_TEXT, tw_columns[i].field < TW_TEXT_FIELDS);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(csv_with_bom_and_crlf_should_read_every_row),
        cmocka_unit_test(csv_read_in_pieces_should_read_as_it_does_whole),
        cmocka_unit_test(repeated_values_should_be_stored_once),
        cmocka_unit_test(a_line_break_in_a_quoted_description_should_be_an_error),
        cmocka_unit_test(line_numbers_should_count_lines_after_a_multiline_cell_and_blank_lines),
        cmocka_unit_test(unknown_column_should_be_warned_once_at_line_1),
        cmocka_unit_test(inches_feet_and_joules_should_convert_by_hand_arithmetic),
        cmocka_unit_test(
            two_units_that_agree_should_keep_the_larger_and_disagree_should_be_an_error),
        cmocka_unit_test(nan_inf_overflow_and_hex_numbers_should_be_refused),
        cmocka_unit_test(empty_cell_should_be_absent_not_zero),
        cmocka_unit_test(ppe_category_should_be_a_whole_number),
        cmocka_unit_test(service_equipment_should_accept_yes_no_words_in_any_case),
        cmocka_unit_test(
            unterminated_quote_should_be_reported_with_its_line_and_taint_every_row),
        cmocka_unit_test(a_stray_quote_should_be_reported_with_its_line),
        cmocka_unit_test(a_duplicated_column_should_be_an_error_and_read_no_rows),
        cmocka_unit_test(a_row_with_more_cells_than_the_header_should_be_an_error),
        cmocka_unit_test(text_over_the_limit_should_be_an_error_never_truncated),
        cmocka_unit_test(bad_utf8_control_characters_and_line_breaks_in_ids_should_be_errors),
        cmocka_unit_test(a_nul_byte_in_a_number_cell_should_be_refused),
        cmocka_unit_test(a_cell_over_64_kib_should_stop_reading_with_an_error),
        cmocka_unit_test(an_empty_file_or_a_header_of_unknown_names_should_fail_the_read),
        cmocka_unit_test(json_findings_should_name_the_path),
        cmocka_unit_test(study_values_should_be_defaults_for_every_bus),
        cmocka_unit_test(a_bad_study_default_should_count_against_every_bus_that_inherits_it),
        cmocka_unit_test(json_booleans_and_yes_no_strings_should_both_work),
        cmocka_unit_test(wrong_json_shapes_should_be_errors_naming_the_path),
        cmocka_unit_test(broken_json_should_be_reported_with_a_line),
        cmocka_unit_test(json_unknown_keys_should_be_warned_once),
        cmocka_unit_test(json_numbers_out_of_range_and_escaped_nul_should_be_refused),
        cmocka_unit_test(json_key_given_twice_should_refuse_the_file),
        cmocka_unit_test(results_read_should_choose_json_by_name_or_first_byte),
        cmocka_unit_test(an_unreadable_file_should_be_an_error_naming_the_path),
        cmocka_unit_test(column_table_should_name_fields_and_units),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
