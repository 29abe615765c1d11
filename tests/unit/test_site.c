/* test_site.c - site settings: defaults (docs/site-settings.md), loading, and findings that
 * name the JSON path. */
#include "tw_test.h"

#include "write/tw_qr.h"
#include "read/tw_site.h"
#include "rules/tw_rules.h"

typedef struct {
    tw_site site;
    tw_diags d;
} fixture;

static int setup(void **state)
{
    fixture *f = calloc(1, sizeof *f);
    if (!f)
        return -1;
    tw_diags_init(&f->d);
    *state = f;
    return 0;
}

static int teardown(void **state)
{
    fixture *f = *state;
    tw_site_free(&f->site);
    tw_diags_free(&f->d);
    free(f);
    return 0;
}

static int load(fixture *f, const char *json)
{
    tw_site_free(&f->site);
    return tw_site_load_mem("site.json", json, strlen(json), &f->site, &f->d);
}

/* The first finding whose JSON path is path, or NULL. */
static const tw_diag *finding_at(const fixture *f, const char *path)
{
    for (size_t i = 0; i < f->d.count; i++)
        if (f->d.items[i].path && strcmp(f->d.items[i].path, path) == 0)
            return &f->d.items[i];
    return NULL;
}

static void defaults_should_match_the_documented_values(void **state)
{
    fixture *f = *state;
    tw_site *s = &f->site;
    assert_int_equal(tw_site_defaults(s), 0);
    assert_string_equal(s->site_name, "");
    assert_string_equal(s->record_link, TW_DEFAULT_RECORD_LINK);
    assert_int_equal(s->ppe_level_count, 4);
    assert_string_equal(s->ppe_levels[0].name, "AR-4");
    assert_near(s->ppe_levels[0].arc_rating_cal_cm2, 4, 0);
    assert_string_equal(s->ppe_levels[3].name, "AR-40");
    assert_near(s->ppe_levels[3].arc_rating_cal_cm2, 40, 0);
    assert_int_equal(s->show, TW_SHOW_INCIDENT_ENERGY);
    assert_near(s->danger_above_cal_cm2, 0, 0);         /* not set: the trade rule's */
    assert_near(tw_danger_above_cal(s), 40, 0);         /* common practice */
    assert_int_equal(s->units, TW_UNITS_IMPERIAL_METRIC);
    assert_int_equal(s->caution_count, 0);
    assert_near(s->service_label_min_a, 0, 0);          /* not set: the code's */
    assert_near(tw_service_label_min_a(s), 1200, 0);    /* NEC 110.16(B), 2020 edition */
    assert_string_equal(s->language, "en");
    assert_null(s->layout);
    assert_near(tw_site_max_rating(s), 40, 0);
}

static void empty_object_should_give_the_defaults(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, " { } \n"), 0);
    assert_int_equal(f->d.count, 0);
    assert_int_equal(f->site.ppe_level_count, 4);
    assert_string_equal(f->site.language, "en");
}

static void every_setting_should_load_and_levels_should_be_sorted(void **state)
{
    fixture *f = *state;
    const char *json =
        "{\n"
        "  \"site_name\": \"Riverside Water Works (fictional)\",\n"
        "  \"record_link\": \"https://example.invalid/{study}/{equipment}\",\n"
        "  \"ppe_levels\": [\n"
        "    {\"name\": \"Suit\", \"arc_rating_cal_cm2\": 40},\n"
        "    {\"name\": \"Daily wear\", \"arc_rating_cal_cm2\": 8},\n"
        "    {\"name\": \"Coat\", \"arc_rating_cal_cm2\": 25},\n"
        "    {\"name\": \"Coat B\", \"arc_rating_cal_cm2\": 25}\n"
        "  ],\n"
        "  \"label_shows\": \"ppe_category\",\n"
        "  \"danger_above_cal_cm2\": 25,\n"
        "  \"units\": \"metric\",\n"
        "  \"cautions\": [\"Call the duty engineer first.\", \"Second line.\"],\n"
        "  \"service_label_min_a\": 1000,\n"
        "  \"language\": \"en+es\",\n"
        "  \"layout\": \"compact\"\n"
        "}\n";
    assert_int_equal(load(f, json), 0);
    assert_int_equal(f->d.count, 0);
    tw_site *s = &f->site;
    assert_string_equal(s->site_name, "Riverside Water Works (fictional)");
    assert_string_equal(s->record_link, "https://example.invalid/{study}/{equipment}");
    assert_int_equal(s->ppe_level_count, 4);
    assert_string_equal(s->ppe_levels[0].name, "Daily wear");
    assert_string_equal(s->ppe_levels[1].name, "Coat");     /* equal ratings keep file order */
    assert_string_equal(s->ppe_levels[2].name, "Coat B");
    assert_string_equal(s->ppe_levels[3].name, "Suit");
    assert_int_equal(s->show, TW_SHOW_PPE_CATEGORY);
    assert_near(s->danger_above_cal_cm2, 25, 0);
    assert_int_equal(s->units, TW_UNITS_METRIC);
    assert_int_equal(s->caution_count, 2);
    assert_string_equal(s->cautions[1], "Second line.");
    assert_near(s->service_label_min_a, 1000, 0);   /* NEC 2023 110.16(B) (from memory) */
    assert_string_equal(s->language, "en+es");
    assert_string_equal(s->layout, "compact");
}

static void level_for_should_be_the_lowest_adequate_level(void **state)
{
    fixture *f = *state;
    assert_int_equal(tw_site_defaults(&f->site), 0);
    assert_string_equal(tw_site_level_for(&f->site, 8)->name, "AR-8");
    assert_string_equal(tw_site_level_for(&f->site, 8.1)->name, "AR-25");
    assert_string_equal(tw_site_level_for(&f->site, 0.5)->name, "AR-4");
    assert_null(tw_site_level_for(&f->site, 40.1));
    assert_null(tw_site_level_for(&f->site, NAN));
}

static void bad_level_rating_should_be_an_error_at_its_json_path(void **state)
{
    fixture *f = *state;
    const char *json = "{\"ppe_levels\": [{\"name\": \"A\", \"arc_rating_cal_cm2\": 4},"
                       " {\"name\": \"B\", \"arc_rating_cal_cm2\": 8},"
                       " {\"name\": \"C\", \"arc_rating_cal_cm2\": -25}]}";
    assert_int_equal(load(f, json), -1);
    assert_int_equal(f->d.errors, 1);
    const tw_diag *g = finding_at(f, "ppe_levels[2].arc_rating_cal_cm2");
    assert_non_null(g);
    assert_int_equal(g->severity, TW_ERROR);
    assert_string_equal(g->file, "site.json");
    assert_int_equal(f->site.ppe_level_count, 4);   /* the defaults stay */
}

static void empty_level_name_and_wrong_types_should_be_errors(void **state)
{
    fixture *f = *state;
    const char *json = "{\"ppe_levels\": [{\"name\": \"\", \"arc_rating_cal_cm2\": 4},"
                       " {\"arc_rating_cal_cm2\": \"8\"}],"
                       " \"units\": 1, \"label_shows\": \"both\", \"cautions\": \"one\"}";
    assert_int_equal(load(f, json), -1);
    assert_non_null(finding_at(f, "ppe_levels[0].name"));
    assert_non_null(finding_at(f, "ppe_levels[1]"));                     /* name missing */
    assert_non_null(finding_at(f, "ppe_levels[1].arc_rating_cal_cm2"));  /* a string */
    assert_non_null(finding_at(f, "units"));
    assert_non_null(finding_at(f, "label_shows"));
    assert_non_null(finding_at(f, "cautions"));
    assert_int_equal(f->d.errors, 6);
    assert_int_equal(f->site.units, TW_UNITS_IMPERIAL_METRIC);
}

static void unknown_key_should_be_a_warning(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"colour\": \"red\", \"ppe_levels\": "
                             "[{\"name\": \"K\", \"arc_rating_cal_cm2\": 12, \"size\": 3}]}"),
                     0);
    assert_int_equal(f->d.errors, 0);
    assert_int_equal(f->d.warnings, 2);
    assert_int_equal(finding_at(f, "colour")->severity, TW_WARNING);
    assert_non_null(finding_at(f, "ppe_levels[0].size"));
    assert_int_equal(f->site.ppe_level_count, 1);
}

static void empty_level_list_should_be_an_error(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"ppe_levels\": []}"), -1);
    assert_non_null(finding_at(f, "ppe_levels"));
}

/* NEC 110.16(B): a threshold above the 2020 edition's 1200 A would leave labels out. */
static void service_threshold_above_1200a_should_be_an_error(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"service_label_min_a\": 1600}"), 0); /* the shape is right */
    assert_int_equal(tw_site_check_rules(&f->site, "site.json", &f->d), -1);
    assert_non_null(finding_at(f, "service_label_min_a"));
}

static void repeated_key_should_be_an_error(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"units\": \"metric\", \"units\": \"imperial+metric\"}"), -1);
    assert_non_null(finding_at(f, "units"));
}

static void invalid_json_should_be_an_error_with_its_line(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\n  \"units\": \"metric\",\n  oops\n}"), -1);
    assert_int_equal(f->d.errors, 1);
    assert_int_equal(f->d.items[0].line, 3);
    assert_int_equal(load(f, "{} trailing"), -1);
    assert_int_equal(load(f, "[1, 2]"), -1);
    assert_int_equal(load(f, ""), -1);
    /* the struct is always left freeable, with the defaults */
    assert_int_equal(f->site.ppe_level_count, 4);
}

static void explicit_null_layout_should_mean_the_default(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"layout\": null}"), 0);
    assert_null(f->site.layout);
    assert_int_equal(load(f, "{\"layout\": \"\"}"), -1);
}

static void missing_file_should_be_an_error_naming_it(void **state)
{
    fixture *f = *state;
    assert_int_equal(tw_site_load("/nonexistent/site.json", &f->site, &f->d), -1);
    assert_int_equal(f->d.errors, 1);
    assert_non_null(strstr(f->d.items[0].message, "/nonexistent/site.json"));
}

static void free_should_accept_a_zeroed_site(void **state)
{
    (void)state;
    tw_site s;
    memset(&s, 0, sizeof s);
    tw_site_free(&s);
    tw_site_free(NULL);
    assert_near(tw_site_max_rating(&s), 0, 0);
    assert_null(tw_site_level_for(&s, 1));
}

#define T(name) cmocka_unit_test_setup_teardown(name, setup, teardown)

int main(void)
{
    const struct CMUnitTest tests[] = {
        T(defaults_should_match_the_documented_values),
        T(empty_object_should_give_the_defaults),
        T(every_setting_should_load_and_levels_should_be_sorted),
        T(level_for_should_be_the_lowest_adequate_level),
        T(bad_level_rating_should_be_an_error_at_its_json_path),
        T(empty_level_name_and_wrong_types_should_be_errors),
        T(unknown_key_should_be_a_warning),
        T(empty_level_list_should_be_an_error),
        T(service_threshold_above_1200a_should_be_an_error),
        T(repeated_key_should_be_an_error),
        T(invalid_json_should_be_an_error_with_its_line),
        T(explicit_null_layout_should_mean_the_default),
        T(missing_file_should_be_an_error_naming_it),
        cmocka_unit_test(free_should_accept_a_zeroed_site),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
