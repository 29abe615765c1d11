/* test_column_map.c - column maps: every key and every error of the map reader, the map
 * applied to CSV and JSON results (renaming, exact scaling, decimal commas, dates, encodings,
 * title lines, footers, missing values, constants), and the starter map's field guesses. */
#include "tw_test.h"

#include "read/tw_column_map.h"
#include "read/tw_results.h"

static int read_map(const char *text, tw_column_map *m, tw_diags *d)
{
    tw_diags_init(d);
    return tw_column_map_read_mem("map.json", text, strlen(text), m, d);
}

static const tw_diag *find_diag(const tw_diags *d, const char *needle)
{
    for (size_t i = 0; i < d->count; i++)
        if (d->items[i].message && strstr(d->items[i].message, needle))
            return &d->items[i];
    return NULL;
}

/* Results of csv read through the map text (which must be valid). */
static int read_mapped_csv(const char *map_text, const char *csv, tw_column_map *m,
                           tw_results *r, tw_diags *d)
{
    assert_int_equal(read_map(map_text, m, d), 0);
    return tw_results_read_csv_map("in.csv", csv, strlen(csv), m, r, d);
}

static void done(tw_column_map *m, tw_results *r, tw_diags *d)
{
    tw_results_free(r);
    tw_column_map_free(m);
    tw_diags_free(d);
}

/* ---- the map reader ------------------------------------------------------------------- */

static void every_key_of_a_map_should_be_read(void **state)
{
    (void)state;
    tw_column_map m;
    tw_diags d;
    assert_int_equal(read_map("{\"encoding\": \"Windows-1252\", \"header_line\": 4,"
                              " \"delimiter\": \";\", \"decimal\": \",\","
                              " \"stop_at_blank_line\": true,"
                              " \"columns\": {\" Bus Name \": \"equipment_id\","
                              "  \"Bus kV\": {\"field\": \"nominal_voltage_v\", \"scale\": 1000},"
                              "  \"AFB (ft)\": \"arc_flash_boundary_ft\","
                              "  \"Date\": {\"field\": \"study_date\", \"date_format\": \"DD.MM.YYYY\"},"
                              "  \"Notes\": null},"
                              " \"constants\": {\"study_id\": \"S-1\", \"service_equipment\": false},"
                              " \"missing_values\": [\"N/A\", \" - \"]}",
                              &m, &d),
                     0);
    assert_int_equal(d.count, 0);
    assert_int_equal(m.encoding, TW_ENCODING_WINDOWS_1252);
    assert_int_equal(m.header_line, 4);
    assert_int_equal(m.delimiter, ';');
    assert_int_equal(m.decimal, ',');
    assert_true(m.stop_at_blank_line);
    assert_int_equal(m.column_count, 5);
    const tw_mapped_column *kv = tw_column_map_find(&m, "Bus kV");
    assert_non_null(kv);
    assert_int_equal(kv->scale_pow10, 3);
    assert_string_equal(kv->as.name, "nominal_voltage_v (from \"Bus kV\")");
    assert_non_null(tw_column_map_find(&m, "Bus Name")); /* trimmed */
    assert_null(tw_column_map_find(&m, "Notes")->column);
    assert_int_equal(tw_column_map_find(&m, "Date")->dates, TW_DATES_DD_MM_YYYY_DOT);
    assert_int_equal(m.constant_count, 2);
    assert_string_equal(tw_column_map_constant(&m, TW_F_STUDY_ID)->text, "S-1");
    assert_int_equal(m.missing_count, 2);
    assert_true(tw_column_map_is_missing(&m, "-", 1));
    tw_column_map_free(&m);
    tw_diags_free(&d);

    /* defaults, and "tab" */
    assert_int_equal(read_map("{\"delimiter\": \"tab\"}", &m, &d), 0);
    assert_int_equal(m.delimiter, '\t');
    assert_int_equal(m.header_line, 1);
    assert_int_equal(m.decimal, '.');
    assert_int_equal(m.encoding, TW_ENCODING_UTF8);
    tw_column_map_free(&m);
    tw_diags_free(&d);
}

static void every_error_of_a_map_should_name_its_path(void **state)
{
    (void)state;
    static const struct {
        const char *map, *path, *needle;
    } cases[] = {
        {"{\"encoding\": \"utf-16\"}", "encoding", "expected \"utf-8\""},
        {"{\"encoding\": 8}", "encoding", "expected \"utf-8\""},
        {"{\"header_line\": 0}", "header_line", "whole number from 1"},
        {"{\"header_line\": 2.5}", "header_line", "whole number"},
        {"{\"header_line\": \"4\"}", "header_line", "whole number"},
        {"{\"delimiter\": \"|\"}", "delimiter", "expected \",\", \";\""},
        {"{\"decimal\": \";\"}", "decimal", "decimal mark"},
        {"{\"decimal\": \",\"}", "decimal", "delimiter other than"},
        {"{\"stop_at_blank_line\": 1}", "stop_at_blank_line", "true or false"},
        {"{\"columns\": []}", "columns", "expected an object"},
        {"{\"columns\": {\"A\": \"voltage\"}}", "columns.A", "tagwright field name"},
        {"{\"columns\": {\"A\": 3}}", "columns.A", "expected a field name"},
        {"{\"columns\": {\"  \": \"equipment_id\"}}", "columns.  ", "not empty"},
        {"{\"columns\": {\"A\": \"equipment_id\", \" A\": \"description\"}}", "columns. A",
         "header given twice"},
        {"{\"columns\": {\"A\": {\"scale\": 2}}}", "columns.A.field", "expected a \"field\""},
        {"{\"columns\": {\"A\": {\"field\": \"gap_mm\", \"scael\": 2}}}", "columns.A.scael",
         "unknown key"},
        {"{\"columns\": {\"A\": {\"field\": \"gap_mm\", \"field\": \"gap_mm\"}}}", "columns.A.field",
         "given twice"},
        {"{\"columns\": {\"A\": {\"field\": \"gap_mm\", \"scale\": 0}}}", "columns.A.scale",
         "greater than 0"},
        {"{\"columns\": {\"A\": {\"field\": \"gap_mm\", \"scale\": -1}}}", "columns.A.scale",
         "greater than 0"},
        {"{\"columns\": {\"A\": {\"field\": \"gap_mm\", \"scale\": \"1000\"}}}", "columns.A.scale",
         "greater than 0"},
        {"{\"columns\": {\"A\": {\"field\": \"location\", \"scale\": 2}}}", "columns.A.scale",
         "not a number"},
        {"{\"columns\": {\"A\": {\"field\": \"study_date\", \"date_format\": \"M/D/YY\"}}}",
         "columns.A.date_format", "MM/DD/YYYY"},
        {"{\"columns\": {\"A\": {\"field\": \"study_date\", \"date_format\": null}}}",
         "columns.A.date_format", "MM/DD/YYYY"},
        {"{\"columns\": {\"A\": {\"field\": \"gap_mm\", \"date_format\": \"MM/DD/YYYY\"}}}",
         "columns.A.date_format", "not a date"},
        {"{\"columns\": {\"A\": \"equipment_id\", \"B\": \"equipment_id\"}}", "columns.B",
         "already read from \"A\""},
        {"{\"columns\": {\"A\": \"study_id\"}, \"constants\": {\"study_id\": \"S\"}}", "columns.A",
         "also given in \"constants\""},
        {"{\"constants\": {\"voltage\": 480}}", "constants.voltage", "tagwright field name"},
        {"{\"constants\": {\"nominal_voltage_v\": \"480\"}}", "constants.nominal_voltage_v",
         "a number"},
        {"{\"constants\": {\"study_id\": \"\"}}", "constants.study_id", "non-empty"},
        {"{\"constants\": {\"study_date\": \"9/15/2026\"}}", "constants.study_date",
         "YYYY-MM-DD"},
        {"{\"constants\": {\"service_equipment\": \"maybe\"}}", "constants.service_equipment",
         "true or false"},
        {"{\"constants\": []}", "constants", "expected an object"},
        {"{\"missing_values\": \"N/A\"}", "missing_values", "array"},
        {"{\"missing_values\": [\"N/A\", 0]}", "missing_values[1]", "non-empty string"},
        {"{\"missing_values\": [\" \"]}", "missing_values[0]", "non-empty string"},
        {"{\"colums\": {}}", "colums", "unknown key"},
        {"{\"decimal\": \".\", \"decimal\": \".\"}", "decimal", "given twice"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        tw_column_map m;
        tw_diags d;
        int rc = read_map(cases[i].map, &m, &d);
        const tw_diag *g = find_diag(&d, cases[i].needle);
        if (rc != -1 || !g || !g->path || strcmp(g->path, cases[i].path) != 0) {
            fprintf(stderr, "case %zu (%s): rc %d\n", i, cases[i].map, rc);
            tw_diags_print(&d, stderr);
            fail();
        }
        assert_string_equal(g->file, "map.json");
        tw_column_map_free(&m);
        tw_diags_free(&d);
    }
}

static void a_map_that_is_not_json_should_name_its_line(void **state)
{
    (void)state;
    static const char *bad[] = {"", "{\"columns\": {}", "[1]", "{} x", "{\"a\\u0000\": 1}",
                                "\n\n{\"columns\": {\"A\": }}"};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        tw_column_map m;
        tw_diags d;
        assert_int_equal(read_map(bad[i], &m, &d), -1);
        assert_true(d.errors > 0);
        tw_column_map_free(&m);
        tw_diags_free(&d);
    }
}

/* ---- applying a map to CSV ------------------------------------------------------------ */

static const char export_map[] =
    "{\"header_line\": 3, \"delimiter\": \";\", \"decimal\": \",\", \"stop_at_blank_line\": true,"
    " \"columns\": {\"Bus\": \"equipment_id\","
    "  \"Bus kV\": {\"field\": \"nominal_voltage_v\", \"scale\": 1000},"
    "  \"Date\": {\"field\": \"study_date\", \"date_format\": \"MM/DD/YYYY\"},"
    "  \"WD (in)\": \"working_distance_in\", \"IE\": \"incident_energy_cal_cm2\","
    "  \"AFB (m)\": {\"field\": \"arc_flash_boundary_mm\", \"scale\": 1000},"
    "  \"Trip (ms)\": {\"field\": \"clearing_time_s\", \"scale\": 0.001},"
    "  \"Ibf (A)\": {\"field\": \"bolted_fault_ka\", \"scale\": 0.001},"
    "  \"Gap (in)\": {\"field\": \"gap_mm\", \"scale\": 25.4}},"
    " \"constants\": {\"study_id\": \"S-1\"}, \"missing_values\": [\"N/A\"]}";

static void a_mapped_export_should_read_renamed_and_exactly_scaled(void **state)
{
    (void)state;
    tw_column_map m;
    tw_results r;
    tw_diags d;
    const char *csv = "Study export;;\r\n"
                      "\r\n"
                      "Bus;Bus kV;Date;WD (in);IE;AFB (m);Trip (ms);Ibf (A);Gap (in);Remark\r\n"
                      "B-1;0,48;9/15/2026;18;8,72;1,573;250;17280;1;x\r\n"
                      "B-2;13,8;12/31/2025;36;N/A;3,5;16,67;N/A;;\r\n"
                      ";;;;;;;;;\r\n"
                      "Total;2;;;;;;;;\r\n";
    assert_int_equal(read_mapped_csv(export_map, csv, &m, &r, &d), 0);
    assert_int_equal(r.count, 2);
    assert_int_equal(r.rows[0].line, 4);
    assert_string_equal(r.rows[0].text[TW_F_EQUIPMENT_ID], "B-1");
    /* 0.48 kV is 480 V exactly and 250 ms 0.25 s exactly: the decimal point moves in the text */
    assert_true(r.rows[0].num[TW_F_NOMINAL_VOLTAGE_V] == 480.0);
    assert_true(r.rows[1].num[TW_F_NOMINAL_VOLTAGE_V] == 13800.0);
    assert_true(r.rows[0].num[TW_F_CLEARING_TIME_S] == 0.25);
    assert_true(r.rows[1].num[TW_F_CLEARING_TIME_S] == 0.01667);
    assert_true(r.rows[0].num[TW_F_ARC_FLASH_BOUNDARY_MM] == 1573.0);
    assert_true(r.rows[0].num[TW_F_BOLTED_FAULT_KA] == 17.28);
    assert_true(r.rows[0].num[TW_F_INCIDENT_ENERGY_CAL] == 8.72);
    assert_near(r.rows[0].num[TW_F_WORKING_DISTANCE_MM], 457.2, 1e-9);
    assert_near(r.rows[0].num[TW_F_GAP_MM], 25.4, 1e-12); /* a scale that is no power of ten */
    assert_string_equal(r.rows[0].text[TW_F_STUDY_DATE], "2026-09-15");
    assert_string_equal(r.rows[1].text[TW_F_STUDY_DATE], "2025-12-31");
    assert_string_equal(r.rows[1].text[TW_F_STUDY_ID], "S-1");
    assert_false(tw_row_has(&r.rows[1], TW_F_INCIDENT_ENERGY_CAL)); /* N/A: absent */
    assert_false(tw_row_has(&r.rows[1], TW_F_BOLTED_FAULT_KA));
    assert_int_equal(r.rows[0].errors + r.rows[1].errors, 0);
    assert_int_equal(d.errors, 0);
    /* one warning for the unread column, one for the footer */
    const tw_diag *g = find_diag(&d, "not read (not in the column map");
    assert_non_null(g);
    assert_non_null(strstr(g->message, "\"Remark\""));
    assert_int_equal(g->line, 3);
    g = find_diag(&d, "the table ended at the blank line 6");
    assert_non_null(g);
    assert_int_equal(g->line, 7);
    assert_int_equal(d.warnings, 2);
    done(&m, &r, &d);
}

static void bad_cells_should_name_the_field_and_the_source_column(void **state)
{
    (void)state;
    tw_column_map m;
    tw_results r;
    tw_diags d;
    const char *csv = "t\nt\nBus;Bus kV;Date;Trip (ms);IE;WD (in);AFB (m);Ibf (A);Gap (in)\n"
                      "B-1;0.48;2/30/2026;2,5x;1.234,5;;;;\n"
                      "B-2;0,48;15/09/2026;1e999;;;;;\n"
                      "B-3;;09/15/26;;;;;;\n";
    assert_int_equal(read_mapped_csv(export_map, csv, &m, &r, &d), 0);
    assert_int_equal(r.count, 3);
    const tw_diag *g = find_diag(&d, "decimal comma");
    assert_non_null(g);
    assert_string_equal(g->field, "nominal_voltage_v (from \"Bus kV\")");
    assert_int_equal(g->line, 4);
    assert_string_equal(g->equipment_id, "B-1");
    g = find_diag(&d, "a date MM/DD/YYYY");
    assert_non_null(g);
    assert_string_equal(g->field, "study_date (from \"Date\")");
    assert_non_null(strstr(g->message, "'2/30/2026'"));
    assert_non_null(find_diag(&d, "got '15/09/2026'"));
    assert_non_null(find_diag(&d, "got '09/15/26'")); /* a two-digit year is either century */
    g = find_diag(&d, "got '2,5x'");
    assert_non_null(g);
    assert_string_equal(g->field, "clearing_time_s (from \"Trip (ms)\")");
    assert_non_null(find_diag(&d, "got '1.234,5'")); /* '.' with decimal commas: ambiguous */
    assert_non_null(find_diag(&d, "got '1e999'"));
    assert_true(r.rows[0].errors >= 3);
    assert_true(r.rows[2].errors >= 1);
    assert_true((r.rows[0].invalid >> TW_F_NOMINAL_VOLTAGE_V) & 1u);
    done(&m, &r, &d);
}

static void a_column_the_file_lacks_should_fail_every_row(void **state)
{
    (void)state;
    tw_column_map m;
    tw_results r;
    tw_diags d;
    const char *csv = "t\nt\nBus;Bus kV;WD (in);IE;AFB (m);Ibf (A);Gap (in)\nB-1;0,48;18;1;1;1;1\n";
    assert_int_equal(read_mapped_csv(export_map, csv, &m, &r, &d), 0);
    const tw_diag *g = find_diag(&d, "column \"Date\" named in the column map map.json is not");
    assert_non_null(g);
    assert_int_equal(g->line, 3);
    assert_non_null(find_diag(&d, "column \"Trip (ms)\" named"));
    assert_int_equal(r.count, 0); /* no row of a file read with a wrong map is trusted */
    done(&m, &r, &d);

    /* a header_line past the end of the file */
    assert_int_equal(read_mapped_csv(export_map, "a\nb\n", &m, &r, &d), -1);
    assert_non_null(find_diag(&d, "expected a header row on line 3 (header_line"));
    done(&m, &r, &d);

    /* a header with nothing the map reads: not this export at all */
    assert_int_equal(read_mapped_csv(export_map, "a\nb\nc;d\n1;2\n", &m, &r, &d), -1);
    assert_non_null(find_diag(&d, "is header_line right?"));
    done(&m, &r, &d);
}

static void a_field_read_twice_should_be_an_error(void **state)
{
    (void)state;
    tw_column_map m;
    tw_results r;
    tw_diags d;
    /* a column named as tagwright names it is read as itself beside the map's columns */
    const char *map = "{\"columns\": {\"Bus\": \"equipment_id\"}, \"constants\": {\"study_id\": \"S\"}}";
    assert_int_equal(read_mapped_csv(map, "Bus,equipment_id,study_id\nA,B,C\n", &m, &r, &d), 0);
    assert_non_null(find_diag(&d, "read from columns 1 and 2; expected one"));
    assert_non_null(find_diag(&d, "also given in the column map's constants"));
    assert_int_equal(r.count, 0);
    done(&m, &r, &d);

    assert_int_equal(read_mapped_csv(map, "Bus,Bus,nominal_voltage_v\nA,B,480\n", &m, &r, &d), 0);
    assert_non_null(find_diag(&d, "column \"Bus\" given twice"));
    done(&m, &r, &d);

    /* the same number from two columns in two units must agree, as without a map */
    map = "{\"columns\": {\"kV\": {\"field\": \"nominal_voltage_v\", \"scale\": 1000}}}";
    assert_int_equal(read_mapped_csv(map, "equipment_id,kV,nominal_voltage_v\nA,0.48,480\nB,0.48,208\n",
                                     &m, &r, &d), 0);
    assert_int_equal(r.rows[0].errors, 0);
    assert_true(r.rows[1].errors > 0);
    done(&m, &r, &d);
}

static void encodings_should_be_converted_and_undefined_bytes_refused(void **state)
{
    (void)state;
    tw_column_map m;
    tw_results r;
    tw_diags d;
    const char *map = "{\"encoding\": \"windows-1252\", \"columns\": {\"Beschreibung \xC3\xA9\": \"description\"}}";
    const char *csv = "equipment_id,Beschreibung \xE9\n"
                      "A,caf\xE9 \x96 \x80 5\n";
    assert_int_equal(read_mapped_csv(map, csv, &m, &r, &d), 0);
    assert_int_equal(d.errors, 0);
    assert_string_equal(r.rows[0].text[TW_F_DESCRIPTION], "caf\xC3\xA9 \xE2\x80\x93 \xE2\x82\xAC 5");
    done(&m, &r, &d);

    assert_int_equal(read_mapped_csv(map, "equipment_id,Beschreibung \xE9\nA,x\nB,\x81\n", &m, &r, &d), 0);
    const tw_diag *g = find_diag(&d, "byte 0x81 is not a character of windows-1252");
    assert_non_null(g);
    assert_int_equal(g->line, 3);
    assert_true(r.rows[0].errors > 0); /* rows may be lost: none is posted */
    done(&m, &r, &d);

    /* ISO-8859-1 has every byte, but 0x80-0x9F are control characters: refused in text */
    map = "{\"encoding\": \"iso-8859-1\"}";
    assert_int_equal(read_mapped_csv(map, "equipment_id,description\nA,caf\xE9\nB,\x96\n", &m, &r, &d), 0);
    assert_string_equal(r.rows[0].text[TW_F_DESCRIPTION], "caf\xC3\xA9");
    assert_true(r.rows[1].errors > 0);
    done(&m, &r, &d);
}

static void tabs_and_footers_should_follow_the_map(void **state)
{
    (void)state;
    tw_column_map m;
    tw_results r;
    tw_diags d;
    const char *map = "{\"delimiter\": \"tab\"}";
    assert_int_equal(read_mapped_csv(map, "equipment_id\tdescription\nA\tone, two\n", &m, &r, &d), 0);
    assert_string_equal(r.rows[0].text[TW_F_DESCRIPTION], "one, two");
    done(&m, &r, &d);

    /* without stop_at_blank_line a footer is read as rows, and fails */
    assert_int_equal(read_mapped_csv("{}", "equipment_id,nominal_voltage_v\nA,480\n\nTotal,x\n",
                                     &m, &r, &d), 0);
    assert_int_equal(r.count, 2);
    assert_true(r.rows[1].errors > 0);
    done(&m, &r, &d);

    /* blank lines between the header and the first row do not end the table; trailing blank
     * lines are no footer */
    assert_int_equal(read_mapped_csv("{\"stop_at_blank_line\": true}",
                                     "equipment_id\n\nA\nB\n\n\n", &m, &r, &d), 0);
    assert_int_equal(r.count, 2);
    assert_int_equal(d.count, 0);
    done(&m, &r, &d);
}

/* ---- applying a map to JSON ----------------------------------------------------------- */

static void json_keys_should_be_renamed_and_scaled(void **state)
{
    (void)state;
    tw_column_map m;
    tw_results r;
    tw_diags d;
    assert_int_equal(read_map("{\"columns\": {\"Bus\": \"equipment_id\","
                              " \"kV\": {\"field\": \"nominal_voltage_v\", \"scale\": 1000},"
                              " \"Date\": {\"field\": \"study_date\", \"date_format\": \"DD/MM/YYYY\"},"
                              " \"Never\": \"location\"},"
                              " \"constants\": {\"study_id\": \"S-9\"}, \"missing_values\": [\"N/A\"],"
                              " \"decimal\": \",\", \"delimiter\": \";\"}",
                              &m, &d),
                     0);
    const char *json = "{\"buses\": [{\"Bus\": \"A\", \"kV\": 0.48, \"Date\": \"15/09/2026\","
                       " \"gap_mm\": \"N/A\"},"
                       " {\"Bus\": \"B\", \"kV\": \"N/A\", \"study_id\": \"X\"}]}";
    assert_int_equal(tw_results_read_json_map("in.json", json, strlen(json), &m, &r, &d), 0);
    assert_int_equal(r.count, 2);
    assert_true(r.rows[0].num[TW_F_NOMINAL_VOLTAGE_V] == 480.0);
    assert_string_equal(r.rows[0].text[TW_F_STUDY_DATE], "2026-09-15");
    assert_string_equal(r.rows[0].text[TW_F_STUDY_ID], "S-9");
    assert_false(tw_row_has(&r.rows[0], TW_F_GAP_MM));
    assert_false(tw_row_has(&r.rows[1], TW_F_NOMINAL_VOLTAGE_V));
    assert_non_null(find_diag(&d, "given in the row and as a constant"));
    assert_true(r.rows[1].errors > 0);
    assert_non_null(find_diag(&d, "key \"Never\" named in the column map map.json is in no bus"));
    assert_true(r.rows[0].errors > 0);
    assert_non_null(find_diag(&d, "apply to CSV only"));
    done(&m, &r, &d);
}

/* ---- hints without a map -------------------------------------------------------------- */

static void exports_without_a_map_should_get_hints(void **state)
{
    (void)state;
    tw_results r;
    tw_diags d;
    tw_diags_init(&d);
    const char *csv = "Bus Name;Bus kV\nA;0,48\n";
    assert_int_equal(tw_results_read_csv("in.csv", csv, strlen(csv), &r, &d), -1);
    assert_non_null(find_diag(&d, "--columns MAP.json ('tagwright columns FILE'"));
    assert_non_null(find_diag(&d, "\"delimiter\": \";\""));
    tw_results_free(&r);
    tw_diags_free(&d);

    tw_diags_init(&d);
    csv = "equipment_id,description\nA,caf\xE9\n";
    assert_int_equal(tw_results_read_csv("in.csv", csv, strlen(csv), &r, &d), 0);
    assert_non_null(find_diag(&d, "save the file as UTF-8"));
    tw_results_free(&r);
    tw_diags_free(&d);
}

/* ---- starter maps --------------------------------------------------------------------- */

static void headers_should_be_guessed_only_when_plain(void **state)
{
    (void)state;
    static const struct {
        const char *header, *column;
        double scale;
    } cases[] = {
        {"Equipment ID", "equipment_id", 1},
        {"Bus Name", "equipment_id", 1},
        {"equipment_id", "equipment_id", 1},
        {"Nominal Voltage (V)", "nominal_voltage_v", 1},
        {"Bus kV", "nominal_voltage_v", 1000},
        {"Voltage [kV]", "nominal_voltage_v", 1000},
        {"Incident Energy (cal/cm\xC2\xB2)", "incident_energy_cal_cm2", 1},
        {"Incident Energy (J/cm2)", "incident_energy_j_cm2", 1},
        {"Incident Energy cal/cm2", "incident_energy_cal_cm2", 1},
        {"Working Distance (in)", "working_distance_in", 1},
        {"Working Distance (ft)", "working_distance_mm", 304.8},
        {"Arc Flash Boundary (ft)", "arc_flash_boundary_ft", 1},
        {"Arc Flash Boundary (m)", "arc_flash_boundary_mm", 1000},
        {"Bolted Fault (kA)", "bolted_fault_ka", 1},
        {"Bolted Fault Current (A)", "bolted_fault_ka", 0.001},
        {"Arcing Current (kA)", "arcing_current_ka", 1},
        {"Arc Duration (ms)", "clearing_time_s", 0.001},
        {"Clearing Time (s)", "clearing_time_s", 1},
        {"Transformer kVA", "xfmr_kva", 1},
        {"Transformer Rating (MVA)", "xfmr_kva", 1000},
        {"Transformer Z (%)", "xfmr_z_percent", 1},
        {"Service Rating (A)", "service_rating_a", 1},
        {"PPE Category", "ppe_category", 1},
        {"Study Date", "study_date", 1},
        {"Gap (mm)", "gap_mm", 1},
        /* unsure: left null */
        {"Trip Time (ms)", NULL, 1},          /* a relay's time may leave out the breaker's */
        {"Incident Energy", NULL, 1},         /* no unit */
        {"Arc Duration (cycles)", NULL, 1},   /* 50 or 60 Hz? */
        {"Bolted Fault (MVA)", NULL, 1},      /* a unit the field cannot take */
        {"Notes", NULL, 1},
        {"Date", NULL, 1},
        {"", NULL, 1},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        double scale = 0;
        const tw_column *c = tw_column_guess(cases[i].header, &scale);
        if (cases[i].column == NULL ? c != NULL
                                    : !c || strcmp(c->name, cases[i].column) != 0 ||
                                          fabs(scale - cases[i].scale) > 1e-12) {
            fprintf(stderr, "'%s': got %s x %g\n", cases[i].header, c ? c->name : "null", scale);
            fail();
        }
    }
}

static void a_starter_map_should_read_back_as_a_map(void **state)
{
    (void)state;
    const char *csv = "Report\nBus Name,Nominal Voltage (V),Study Date,Trip Time (ms),Notes\n"
                      "A,480,15/09/2026,20,N/A\n\nTotal 1\n";
    tw_diags d;
    tw_diags_init(&d);
    char *text = tw_column_map_starter("in.csv", csv, strlen(csv), &d);
    assert_non_null(text);
    assert_non_null(strstr(text, "\"header_line\": 2"));
    assert_non_null(strstr(text, "\"Bus Name\": \"equipment_id\""));
    assert_non_null(strstr(text, "\"date_format\": \"DD/MM/YYYY\""));
    assert_non_null(strstr(text, "\"Trip Time (ms)\": null"));
    assert_non_null(strstr(text, "\"stop_at_blank_line\": true"));
    assert_non_null(strstr(text, "\"missing_values\": [\"N/A\"]"));
    tw_column_map m;
    tw_diags d2;
    assert_int_equal(read_map(text, &m, &d2), 0);
    tw_column_map_free(&m);
    tw_diags_free(&d2);
    free(text);
    tw_diags_free(&d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(every_key_of_a_map_should_be_read),
        cmocka_unit_test(every_error_of_a_map_should_name_its_path),
        cmocka_unit_test(a_map_that_is_not_json_should_name_its_line),
        cmocka_unit_test(a_mapped_export_should_read_renamed_and_exactly_scaled),
        cmocka_unit_test(bad_cells_should_name_the_field_and_the_source_column),
        cmocka_unit_test(a_column_the_file_lacks_should_fail_every_row),
        cmocka_unit_test(a_field_read_twice_should_be_an_error),
        cmocka_unit_test(encodings_should_be_converted_and_undefined_bytes_refused),
        cmocka_unit_test(tabs_and_footers_should_follow_the_map),
        cmocka_unit_test(json_keys_should_be_renamed_and_scaled),
        cmocka_unit_test(exports_without_a_map_should_get_hints),
        cmocka_unit_test(headers_should_be_guessed_only_when_plain),
        cmocka_unit_test(a_starter_map_should_read_back_as_a_map),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
