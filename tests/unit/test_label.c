/* test_label.c - label content from a governing scenario, against NFPA 70E 130.5(H),
 * Table 130.4(E)(a), ASTM D120, NEC 110.16(B), IEEE 1584 and a sha256sum of the canonical form.
 *
 * Rows are built by hand (text[], num[], present bits) so that these tests do not depend on
 * the readers. Equipment and study names are fictional.
 */
#include "tw_test.h"

#include "rules/tw_label.h"
#include "read/tw_results.h"
#include "read/tw_site.h"

typedef struct {
    tw_row row;
    tw_row *rows[1];
    tw_bus bus;
    tw_site site;
    tw_label label;
    tw_diags d;
} fixture;

static void text(tw_row *r, tw_field f, const char *v)
{
    r->text[f] = (char *)v;
    r->present |= 1u << f;
}

static void num(tw_row *r, tw_field f, double v)
{
    r->num[f] = v;
    r->present |= 1u << f;
}

static void drop(tw_row *r, tw_field f)
{
    r->present &= ~(1u << f);
    if (f < TW_TEXT_FIELDS)
        r->text[f] = NULL;
}

/* A 480 V switchgear bus of the fictional pump house study. */
static int setup(void **state)
{
    fixture *f = calloc(1, sizeof *f);
    if (!f || tw_site_defaults(&f->site) != 0)
        return -1;
    tw_row *r = &f->row;
    r->file = "pumphouse.csv";
    r->line = 7;
    text(r, TW_F_EQUIPMENT_ID, "PH-SWGR-2");
    text(r, TW_F_DESCRIPTION, "Pump house switchgear");
    text(r, TW_F_LOCATION, "Pump house, room 2");
    text(r, TW_F_STUDY_ID, "FS-2024-01");
    text(r, TW_F_STUDY_DATE, "2024-02-29");
    text(r, TW_F_SCENARIO, "utility maximum");
    num(r, TW_F_NOMINAL_VOLTAGE_V, 480);
    num(r, TW_F_INCIDENT_ENERGY_CAL, 6.25);
    num(r, TW_F_WORKING_DISTANCE_MM, 455);
    num(r, TW_F_ARC_FLASH_BOUNDARY_MM, 1397.1);
    num(r, TW_F_DISTANCE_EXPONENT, 1.641);
    f->rows[0] = r;
    f->bus.equipment_id = "PH-SWGR-2";
    f->bus.rows = f->rows;
    f->bus.count = 1;
    f->bus.governing = r;
    tw_diags_init(&f->d);
    *state = f;
    return 0;
}

static int teardown(void **state)
{
    fixture *f = *state;
    tw_label_free(&f->label);
    tw_site_free(&f->site);
    tw_diags_free(&f->d);
    free(f);
    return 0;
}

static int derive(fixture *f)
{
    tw_label_free(&f->label);
    return tw_label_derive(&f->bus, &f->site, "2025-03-14", &f->label, &f->d);
}

#define V(f, k) ((f)->label.value[k])

/* The whole canonical form of the fixture label; its SHA-256 was computed with
 *   printf '<this text>' | sha256sum
 * -> a95f80042f5ed278c86f73996fe55738d6154c414014b4c874cb6cfeab2dedb8
 * (the working distance prints to the nearest inch and mm: 455 mm = 17.9 in -> 18 in) */
static const char fixture_canonical[] =
    "signal_word=WARNING\n"
    "equipment_id=PH-SWGR-2\n"
    "description=Pump house switchgear\n"
    "location=Pump house, room 2\n"
    "nominal_voltage=480 V\n"
    "arc_flash_boundary=4 ft 8 in (1398 mm)\n"
    "incident_energy=6.3 cal/cm2\n"
    "working_distance=18 in (455 mm)\n"
    "min_arc_rating=6.3 cal/cm2\n"
    "ppe_level=AR-8 (8 cal/cm2)\n"
    "limited_approach=3 ft 6 in (1.0 m)\n"
    "restricted_approach=1 ft 0 in (0.3 m)\n"
    "glove_class=Class 00 (max. use 500 V AC)\n"
    "study_id=FS-2024-01\n"
    "study_date=2024-02-29\n"
    "scenario=utility maximum\n"
    "review_due=2029-02-28\n";
static const char fixture_hash[] =
    "a95f80042f5ed278c86f73996fe55738d6154c414014b4c874cb6cfeab2dedb8";

static void label_should_match_the_canonical_form_and_its_sha256sum(void **state)
{
    fixture *f = *state;
    assert_int_equal(derive(f), 0);
    assert_int_equal(f->d.errors, 0);
    assert_int_equal(f->label.draft, 0);
    char *c = tw_label_canonical(&f->label);
    assert_non_null(c);
    assert_string_equal(c, fixture_canonical);
    free(c);
    assert_string_equal(f->label.hash, fixture_hash);
}

static void hash_of_a_hand_built_label_should_match_sha256sum(void **state)
{
    (void)state;
    tw_label l;
    memset(&l, 0, sizeof l);
    assert_int_equal(tw_label_set(&l, TW_L_EQUIPMENT_ID, "X-0"), 0);
    assert_int_equal(tw_label_set(&l, TW_L_EQUIPMENT_ID, "X-1"), 0);   /* replaces */
    assert_int_equal(tw_label_set(&l, TW_L_SIGNAL_WORD, "DANGER"), 0);
    assert_int_equal(tw_label_rehash(&l), 0);
    /* printf 'signal_word=DANGER\nequipment_id=X-1\n' | sha256sum */
    assert_string_equal(l.hash, "fb21a41a896f43e7e2762a9e3c2f201b8b764e7cbab3fb2b57ca7056904445c0");
    tw_label_free(&l);
    tw_label_free(&l);   /* a freed label is a zeroed label */
}

static void service_label_date_should_not_change_the_hash(void **state)
{
    fixture *f = *state;
    assert_int_equal(derive(f), 0);
    assert_int_equal(tw_label_set(&f->label, TW_L_SERVICE_LABEL_DATE, "2031-01-01"), 0);
    assert_int_equal(tw_label_rehash(&f->label), 0);
    assert_string_equal(f->label.hash, fixture_hash);
}

static void key_names_should_be_snake_case_and_unique(void **state)
{
    (void)state;
    assert_string_equal(tw_label_key_name(TW_L_ARC_FLASH_BOUNDARY), "arc_flash_boundary");
    assert_string_equal(tw_label_key_name(TW_L_REVISION_NOTE), "revision_note");
    for (int i = 0; i < TW_L_COUNT; i++) {
        const char *a = tw_label_key_name((tw_label_key)i);
        assert_non_null(a);
        for (const char *p = a; *p; p++)
            assert_true((*p >= 'a' && *p <= 'z') || *p == '_');
        for (int j = 0; j < i; j++)
            assert_string_not_equal(a, tw_label_key_name((tw_label_key)j));
    }
    assert_null(tw_label_key_name(TW_L_COUNT));
}

/* NFPA 70E 130.5(H): incident energy with working distance OR PPE category, never both. */
static void label_should_show_energy_and_never_the_category_in_energy_mode(void **state)
{
    fixture *f = *state;
    num(&f->row, TW_F_PPE_CATEGORY, 2);
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_INCIDENT_ENERGY), "6.3 cal/cm2");   /* 6.25 rounded up */
    assert_string_equal(V(f, TW_L_WORKING_DISTANCE), "18 in (455 mm)");
    assert_string_equal(V(f, TW_L_MIN_ARC_RATING), "6.3 cal/cm2");
    assert_null(V(f, TW_L_PPE_CATEGORY));
    assert_near(f->label.incident_energy_cal, 6.3, 1e-12);
}

static void label_should_show_the_category_and_no_energy_in_category_mode(void **state)
{
    fixture *f = *state;
    num(&f->row, TW_F_PPE_CATEGORY, 2);
    f->site.show = TW_SHOW_PPE_CATEGORY;
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_PPE_CATEGORY), "2");
    assert_string_equal(V(f, TW_L_MIN_ARC_RATING), "8 cal/cm2");   /* 70E Table 130.7(C)(15)(c) */
    assert_string_equal(V(f, TW_L_PPE_LEVEL), "AR-8 (8 cal/cm2)");
    assert_null(V(f, TW_L_INCIDENT_ENERGY));
    assert_null(V(f, TW_L_WORKING_DISTANCE));
    assert_near(f->label.incident_energy_cal, 0, 0);
}

static void label_should_fall_back_to_the_category_when_energy_is_absent(void **state)
{
    fixture *f = *state;
    drop(&f->row, TW_F_INCIDENT_ENERGY_CAL);
    num(&f->row, TW_F_PPE_CATEGORY, 3);
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_PPE_CATEGORY), "3");
    assert_string_equal(V(f, TW_L_MIN_ARC_RATING), "25 cal/cm2");  /* 70E Table 130.7(C)(15)(c) */
    assert_null(V(f, TW_L_INCIDENT_ENERGY));
}

static void label_should_fall_back_to_energy_when_the_category_is_absent(void **state)
{
    fixture *f = *state;
    f->site.show = TW_SHOW_PPE_CATEGORY;
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_INCIDENT_ENERGY), "6.3 cal/cm2");
    assert_null(V(f, TW_L_PPE_CATEGORY));   /* never derived from the energy */
}

/*
 * IEEE 1584 / NFPA 70E: the arc-flash boundary is where the energy falls to 1.2 cal/cm2.
 * E = 8 cal/cm2 at D = 455 mm, distance exponent x = 1.641 (IEEE 1584-2002 Table 4, low-voltage
 * MCCs and panels; from memory), worked with a calculator:
 *   AFB = 455 x (8 / 1.2)^(1 / 1.641) = 455 x 6.6667^0.60938 = 455 x 3.17744 = 1445.73 mm
 *   -> 1446 mm; 1445.73 / 25.4 = 56.92 in -> 57 in = 4 ft 9 in.
 */
static void boundary_should_be_computed_from_energy_when_the_study_left_it_out(void **state)
{
    fixture *f = *state;
    drop(&f->row, TW_F_ARC_FLASH_BOUNDARY_MM);
    num(&f->row, TW_F_INCIDENT_ENERGY_CAL, 8);
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_ARC_FLASH_BOUNDARY), "4 ft 9 in (1446 mm)");
    assert_string_equal(V(f, TW_L_BOUNDARY_NOTE), "computed from incident energy");
    assert_near(f->label.boundary_mm, 1446, 0);
}

static void missing_boundary_should_be_an_error_naming_row_and_field(void **state)
{
    fixture *f = *state;
    drop(&f->row, TW_F_ARC_FLASH_BOUNDARY_MM);
    drop(&f->row, TW_F_DISTANCE_EXPONENT);
    assert_int_equal(derive(f), -1);
    assert_int_equal(f->d.errors, 1);
    tw_diag *g = &f->d.items[0];
    assert_string_equal(g->file, "pumphouse.csv");
    assert_int_equal(g->line, 7);
    assert_string_equal(g->equipment_id, "PH-SWGR-2");
    assert_non_null(strstr(g->field, "arc_flash_boundary"));
    assert_null(V(f, TW_L_ARC_FLASH_BOUNDARY));
    assert_int_equal(f->label.draft, 1);
    assert_non_null(V(f, TW_L_INCIDENT_ENERGY));   /* the rest is still filled for a draft */
}

static void negative_or_nan_values_should_be_errors(void **state)
{
    fixture *f = *state;
    num(&f->row, TW_F_INCIDENT_ENERGY_CAL, -1);
    assert_int_equal(derive(f), -1);
    assert_null(V(f, TW_L_INCIDENT_ENERGY));
    assert_string_equal(V(f, TW_L_SIGNAL_WORD), "DANGER");   /* unknown hazard: fail closed */
    num(&f->row, TW_F_INCIDENT_ENERGY_CAL, 6.25);
    num(&f->row, TW_F_NOMINAL_VOLTAGE_V, NAN);
    assert_int_equal(derive(f), -1);
    assert_null(V(f, TW_L_NOMINAL_VOLTAGE));
    assert_null(V(f, TW_L_LIMITED_APPROACH));
}

static void unreadable_energy_should_not_silently_fall_back_to_the_category(void **state)
{
    fixture *f = *state;
    drop(&f->row, TW_F_INCIDENT_ENERGY_CAL);
    f->row.invalid |= 1u << TW_F_INCIDENT_ENERGY_CAL;
    num(&f->row, TW_F_PPE_CATEGORY, 2);
    assert_int_equal(derive(f), -1);
    assert_null(V(f, TW_L_PPE_CATEGORY));
}

static void ppe_level_should_be_the_lowest_adequate_site_level(void **state)
{
    fixture *f = *state;
    num(&f->row, TW_F_INCIDENT_ENERGY_CAL, 8.0);
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_PPE_LEVEL), "AR-8 (8 cal/cm2)");
    num(&f->row, TW_F_INCIDENT_ENERGY_CAL, 8.01);   /* rounds up to 8.1: AR-8 is too low */
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_PPE_LEVEL), "AR-25 (25 cal/cm2)");
}

/* ANSI Z535.4 signal words; the 40 cal/cm2 line is common practice. */
static void signal_should_be_warning_at_40_and_danger_at_40_1(void **state)
{
    fixture *f = *state;
    num(&f->row, TW_F_INCIDENT_ENERGY_CAL, 40.0);
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_SIGNAL_WORD), "WARNING");
    assert_string_equal(V(f, TW_L_PPE_LEVEL), "AR-40 (40 cal/cm2)");
    num(&f->row, TW_F_INCIDENT_ENERGY_CAL, 40.1);
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_SIGNAL_WORD), "DANGER");
}

static void energy_above_every_level_should_say_no_ppe_adequate(void **state)
{
    fixture *f = *state;
    num(&f->row, TW_F_INCIDENT_ENERGY_CAL, 45);
    assert_int_equal(derive(f), 0);   /* complete content: it is the label's message */
    assert_null(V(f, TW_L_PPE_LEVEL));
    assert_string_equal(V(f, TW_L_NO_PPE_ADEQUATE), "yes");
    assert_string_equal(V(f, TW_L_SIGNAL_WORD), "DANGER");
    assert_int_equal(f->label.signal, TW_SIGNAL_DANGER);
}

static void review_due_should_be_five_years_on_and_not_late_after_a_leap_day(void **state)
{
    fixture *f = *state;
    assert_int_equal(derive(f), 0);
    /* NFPA 70E 130.5(G): review at intervals not exceeding 5 years (from memory). */
    assert_string_equal(V(f, TW_L_STUDY_DATE), "2024-02-29");
    assert_string_equal(V(f, TW_L_REVIEW_DUE), "2029-02-28");
    text(&f->row, TW_F_STUDY_DATE, "2023-06-30T10:00:00");
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_STUDY_DATE), "2023-06-30");   /* normalised */
    assert_string_equal(V(f, TW_L_REVIEW_DUE), "2028-06-30");
    text(&f->row, TW_F_STUDY_DATE, "2023-02-29");
    assert_int_equal(derive(f), -1);
    assert_null(V(f, TW_L_REVIEW_DUE));
}

/* NEC 110.16(B) (2020): service equipment rated 1200 A or more. */
static void service_block_should_be_present_at_1200a_service_equipment(void **state)
{
    fixture *f = *state;
    num(&f->row, TW_F_SERVICE_EQUIPMENT, 1);
    num(&f->row, TW_F_SERVICE_RATING_A, 1200);
    num(&f->row, TW_F_BOLTED_FAULT_KA, 41.93);
    num(&f->row, TW_F_CLEARING_TIME_S, 0.05);
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_AVAILABLE_FAULT), "42.0 kA");          /* rounded up */
    assert_string_equal(V(f, TW_L_SERVICE_CLEARING_TIME), "0.050 s");
    assert_string_equal(V(f, TW_L_SERVICE_LABEL_DATE), "2025-03-14");
    num(&f->row, TW_F_CLEARING_TIME_S, 0.0501);
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_SERVICE_CLEARING_TIME), "0.051 s");    /* up to the ms */
}

static void service_block_should_be_absent_at_800a(void **state)
{
    fixture *f = *state;
    num(&f->row, TW_F_SERVICE_EQUIPMENT, 1);
    num(&f->row, TW_F_SERVICE_RATING_A, 800);
    num(&f->row, TW_F_BOLTED_FAULT_KA, 30);
    num(&f->row, TW_F_CLEARING_TIME_S, 0.05);
    assert_int_equal(derive(f), 0);
    assert_null(V(f, TW_L_AVAILABLE_FAULT));
    assert_null(V(f, TW_L_SERVICE_CLEARING_TIME));
    assert_null(V(f, TW_L_SERVICE_LABEL_DATE));
}

static void service_block_should_follow_a_site_on_the_1000a_threshold(void **state)
{
    fixture *f = *state;
    f->site.service_label_min_a = 1000;   /* NEC 2023 110.16(B) (from memory) */
    num(&f->row, TW_F_SERVICE_EQUIPMENT, 1);
    num(&f->row, TW_F_SERVICE_RATING_A, 1000);
    assert_int_equal(derive(f), -1);      /* fault current and clearing time now required */
    assert_int_equal(f->d.errors, 2);
    assert_string_equal(V(f, TW_L_SERVICE_LABEL_DATE), "2025-03-14");
}

static void metric_site_should_print_metric_lengths_and_boundaries(void **state)
{
    fixture *f = *state;
    f->site.units = TW_UNITS_METRIC;
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_ARC_FLASH_BOUNDARY), "1398 mm");
    assert_string_equal(V(f, TW_L_WORKING_DISTANCE), "455 mm");
    assert_string_equal(V(f, TW_L_LIMITED_APPROACH), "1.0 m");     /* 70E Table 130.4(E)(a) */
    assert_string_equal(V(f, TW_L_RESTRICTED_APPROACH), "0.3 m");
}

static void low_and_medium_voltage_should_get_their_table_rows(void **state)
{
    fixture *f = *state;
    num(&f->row, TW_F_NOMINAL_VOLTAGE_V, 120);
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_NOMINAL_VOLTAGE), "120 V");
    assert_string_equal(V(f, TW_L_RESTRICTED_APPROACH), "avoid contact");   /* 50-150 V row */
    num(&f->row, TW_F_NOMINAL_VOLTAGE_V, 13800);
    assert_int_equal(derive(f), 0);
    assert_string_equal(V(f, TW_L_NOMINAL_VOLTAGE), "13800 V");
    assert_string_equal(V(f, TW_L_LIMITED_APPROACH), "5 ft 0 in (1.5 m)");  /* 751 V-15 kV */
    assert_string_equal(V(f, TW_L_RESTRICTED_APPROACH), "2 ft 2 in (0.7 m)");
    assert_string_equal(V(f, TW_L_GLOVE_CLASS), "Class 2 (max. use 17000 V AC)");  /* D120 */
}

static void voltage_below_50v_should_be_an_error(void **state)
{
    fixture *f = *state;
    num(&f->row, TW_F_NOMINAL_VOLTAGE_V, 48);
    assert_int_equal(derive(f), -1);
    assert_null(V(f, TW_L_LIMITED_APPROACH));
}

static void voltage_above_class_4_gloves_should_warn_and_print_no_class(void **state)
{
    fixture *f = *state;
    num(&f->row, TW_F_NOMINAL_VOLTAGE_V, 69000);
    assert_int_equal(derive(f), 0);
    assert_null(V(f, TW_L_GLOVE_CLASS));
    assert_int_equal(f->d.warnings, 1);
    assert_string_equal(V(f, TW_L_LIMITED_APPROACH), "8 ft 0 in (2.5 m)");  /* 46.1-72.5 kV */
}

static void text_with_a_line_break_should_be_an_error(void **state)
{
    fixture *f = *state;
    text(&f->row, TW_F_DESCRIPTION, "Pump house\nswitchgear");
    assert_int_equal(derive(f), -1);
    assert_null(V(f, TW_L_DESCRIPTION));
    text(&f->row, TW_F_DESCRIPTION, "Pump house \xc3\xa9quipement");   /* valid UTF-8 */
    assert_int_equal(derive(f), 0);
    text(&f->row, TW_F_DESCRIPTION, "bad \xc3(");
    assert_int_equal(derive(f), -1);
}

static void missing_study_items_should_be_errors(void **state)
{
    fixture *f = *state;
    drop(&f->row, TW_F_STUDY_DATE);
    drop(&f->row, TW_F_STUDY_ID);
    assert_int_equal(derive(f), -1);
    assert_int_equal(f->d.errors, 2);
}

static void a_bus_without_a_governing_row_should_be_refused(void **state)
{
    fixture *f = *state;
    f->bus.governing = NULL;
    assert_int_equal(derive(f), -1);
    assert_int_equal(f->label.draft, 1);
}

#define T(name) cmocka_unit_test_setup_teardown(name, setup, teardown)

int main(void)
{
    const struct CMUnitTest tests[] = {
        T(label_should_match_the_canonical_form_and_its_sha256sum),
        cmocka_unit_test(hash_of_a_hand_built_label_should_match_sha256sum),
        T(service_label_date_should_not_change_the_hash),
        cmocka_unit_test(key_names_should_be_snake_case_and_unique),
        T(label_should_show_energy_and_never_the_category_in_energy_mode),
        T(label_should_show_the_category_and_no_energy_in_category_mode),
        T(label_should_fall_back_to_the_category_when_energy_is_absent),
        T(label_should_fall_back_to_energy_when_the_category_is_absent),
        T(boundary_should_be_computed_from_energy_when_the_study_left_it_out),
        T(missing_boundary_should_be_an_error_naming_row_and_field),
        T(negative_or_nan_values_should_be_errors),
        T(unreadable_energy_should_not_silently_fall_back_to_the_category),
        T(ppe_level_should_be_the_lowest_adequate_site_level),
        T(signal_should_be_warning_at_40_and_danger_at_40_1),
        T(energy_above_every_level_should_say_no_ppe_adequate),
        T(review_due_should_be_five_years_on_and_not_late_after_a_leap_day),
        T(service_block_should_be_present_at_1200a_service_equipment),
        T(service_block_should_be_absent_at_800a),
        T(service_block_should_follow_a_site_on_the_1000a_threshold),
        T(metric_site_should_print_metric_lengths_and_boundaries),
        T(low_and_medium_voltage_should_get_their_table_rows),
        T(voltage_below_50v_should_be_an_error),
        T(voltage_above_class_4_gloves_should_warn_and_print_no_class),
        T(text_with_a_line_break_should_be_an_error),
        T(missing_study_items_should_be_errors),
        T(a_bus_without_a_governing_row_should_be_refused),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
