/* test_layout.c - layouts: the built-in 4 x 6 in label, the shipped file, and refusals. */
#include "tw_test.h"

#include "tw_layout.h"

static int box_inside(tw_box b, const tw_layout *l)
{
    return b.x >= 0 && b.y >= 0 && b.w > 0 && b.h > 0 && b.x + b.w <= l->label_w + 1e-9 &&
           b.y + b.h <= l->label_h + 1e-9;
}

static int overlap(tw_box a, tw_box b)
{
    return a.x + a.w > b.x && b.x + b.w > a.x && a.y + a.h > b.y && b.y + b.h > a.y;
}

/* 1 in = 72 pt (the PDF user unit, ISO 32000-1 8.3.2.3): 4 x 6 in = 288 x 432 pt. */
static void default_layout_should_be_4_by_6_inches_in_points(void **state)
{
    (void)state;
    tw_layout l;
    assert_int_equal(tw_layout_default(&l), 0);
    assert_string_equal(l.name, "4x6");
    assert_near(l.label_w, 288, 1e-9);
    assert_near(l.label_h, 432, 1e-9);
    assert_near(l.page_w, 288, 1e-9);
    assert_near(l.page_h, 432, 1e-9);
    assert_int_equal(l.columns, 1);
    assert_int_equal(l.rows, 1);
    assert_true(l.min_pt >= 6);
    assert_true(l.qr.w >= 20 * 72 / 25.4);
    const tw_box *b[] = {&l.header, &l.body, &l.qr, &l.footer};
    for (int i = 0; i < 4; i++) {
        assert_true(box_inside(*b[i], &l));
        for (int j = i + 1; j < 4; j++)
            assert_false(overlap(*b[i], *b[j]));
    }
    /* header at the top, footer at the bottom */
    assert_near(l.header.y + l.header.h, 432 - 9, 1e-9);
    assert_near(l.footer.y, 9, 1e-9);
    tw_layout_free(&l);
    tw_layout_free(&l); /* a freed layout is zeroed and may be freed again */
}

static void shipped_4x6_file_should_equal_the_default(void **state)
{
    (void)state;
    const char *src = getenv("TW_SOURCE_DIR");
    char dir[4096];
    snprintf(dir, sizeof dir, "%s/layouts", src ? src : ".");
    tw_diags d;
    tw_diags_init(&d);
    tw_layout a, b;
    assert_int_equal(tw_layout_load("4x6", dir, &a, &d), 0);
    assert_int_equal(d.count, 0);
    assert_int_equal(tw_layout_default(&b), 0);
    assert_string_equal(a.name, b.name);
    assert_non_null(a.description); /* the file describes itself; the built-in copy does not */
    char *na = a.name, *nb = b.name, *da = a.description, *db = b.description;
    a.name = b.name = a.description = b.description = NULL;
    assert_memory_equal(&a, &b, sizeof a);
    a.name = na;
    b.name = nb;
    a.description = da;
    b.description = db;
    tw_layout_free(&a);
    tw_layout_free(&b);
    tw_diags_free(&d);
}

/* Load text; expect failure with a finding at json_path whose message contains want. */
static void expect_error(const char *json, const char *json_path, const char *want)
{
    tw_diags d;
    tw_diags_init(&d);
    tw_layout l;
    assert_int_equal(tw_layout_load_mem("bad.json", json, strlen(json), &l, &d), -1);
    assert_null(l.name);
    int found = 0;
    for (size_t i = 0; i < d.count; i++) {
        const tw_diag *g = &d.items[i];
        if (g->severity == TW_ERROR && g->path && strcmp(g->path, json_path) == 0 &&
            g->message && strstr(g->message, want) && g->file && !strcmp(g->file, "bad.json"))
            found = 1;
    }
    if (!found)
        tw_diags_print(&d, stderr);
    assert_true(found);
    tw_diags_free(&d);
}

#define GOOD_REST                                                                            \
    "\"margin\":0.125,\"header\":{\"height\":0.75,\"font_pt\":24},\"body\":{\"font_pt\":9},"  \
    "\"qr\":{\"size\":1.25},\"footer\":{\"height\":0.85,\"font_pt\":6.5}"

static void layout_should_name_the_json_path_of_a_missing_size(void **state)
{
    (void)state;
    expect_error("{\"units\":\"in\",\"label\":{\"width\":4}," GOOD_REST "}", "$.label.height",
                 "missing");
}

static void layout_should_refuse_unknown_units(void **state)
{
    (void)state;
    expect_error("{\"units\":\"cm\",\"label\":{\"width\":4,\"height\":6}," GOOD_REST "}",
                 "$.units", "\"in\" or \"mm\"");
}

static void layout_should_refuse_non_positive_sizes(void **state)
{
    (void)state;
    expect_error("{\"units\":\"in\",\"label\":{\"width\":0,\"height\":6}," GOOD_REST "}",
                 "$.label.width", "positive");
    expect_error("{\"units\":\"in\",\"label\":{\"width\":4,\"height\":\"6\"}," GOOD_REST "}",
                 "$.label.height", "expected a number");
}

/* 6 pt: common practice minimum; ANSI Z535.4 asks for legibility at a safe viewing distance. */
static void layout_should_refuse_fonts_below_6_pt(void **state)
{
    (void)state;
    expect_error("{\"units\":\"in\",\"label\":{\"width\":4,\"height\":6},\"margin\":0.125,"
                 "\"header\":{\"height\":0.75,\"font_pt\":24},\"body\":{\"font_pt\":5.5},"
                 "\"qr\":{\"size\":1.25},\"footer\":{\"height\":0.85,\"font_pt\":6.5}}",
                 "$.body.font_pt", "ANSI Z535.4");
    expect_error("{\"units\":\"in\",\"label\":{\"width\":4,\"height\":6}," GOOD_REST
                 ",\"min_font_pt\":4}",
                 "$.min_font_pt", "6 pt");
}

static void layout_should_refuse_a_qr_box_under_20_mm(void **state)
{
    (void)state;
    expect_error("{\"units\":\"mm\",\"label\":{\"width\":100,\"height\":150},\"margin\":3,"
                 "\"header\":{\"height\":18,\"font_pt\":20},\"body\":{\"font_pt\":9},"
                 "\"qr\":{\"size\":19.5},\"footer\":{\"height\":20,\"font_pt\":6.5}}",
                 "$.qr.size", "20 mm");
}

static void layout_should_refuse_regions_taller_than_the_label(void **state)
{
    (void)state;
    expect_error("{\"units\":\"in\",\"label\":{\"width\":4,\"height\":2.5}," GOOD_REST "}",
                 "$.label.height", "do not fit");
}

static void layout_should_refuse_a_grid_larger_than_the_page(void **state)
{
    (void)state;
    expect_error("{\"units\":\"in\",\"label\":{\"width\":4,\"height\":6},"
                 "\"page\":{\"width\":8.5,\"height\":11},\"grid\":{\"columns\":2,\"rows\":2,"
                 "\"gutter_x\":0.25}," GOOD_REST "}",
                 "$.page.height", "grid rows");
    expect_error("{\"units\":\"in\",\"label\":{\"width\":4,\"height\":6},"
                 "\"grid\":{\"columns\":1.5}," GOOD_REST "}",
                 "$.grid.columns", "whole number");
}

static void layout_should_refuse_text_that_is_not_json(void **state)
{
    (void)state;
    expect_error("{\"units\":\"in\",", "$", "not a JSON object");
    expect_error("[1,2]", "$", "not a JSON object");
}

static void layout_should_warn_about_unknown_keys_and_still_load(void **state)
{
    (void)state;
    const char *json = "{\"units\":\"in\",\"label\":{\"width\":4,\"height\":6,\"hieght\":1},"
                       "\"colour\":1," GOOD_REST "}";
    tw_diags d;
    tw_diags_init(&d);
    tw_layout l;
    assert_int_equal(tw_layout_load_mem("x/sheet.json", json, strlen(json), &l, &d), 0);
    assert_int_equal(d.errors, 0);
    assert_int_equal(d.warnings, 2);
    assert_string_equal(d.items[0].path, "$");
    assert_non_null(strstr(d.items[0].message, "colour"));
    assert_string_equal(d.items[1].path, "$.label");
    assert_string_equal(l.name, "sheet"); /* no "name": the file's base name */
    tw_layout_free(&l);
    tw_diags_free(&d);
}

static void sheet_layout_should_default_its_page_to_the_grid(void **state)
{
    (void)state;
    const char *json = "{\"name\":\"2up\",\"units\":\"mm\",\"label\":{\"width\":100,"
                       "\"height\":150},\"grid\":{\"columns\":2,\"rows\":1,\"gutter_x\":5},"
                       "\"sheet_margin\":{\"x\":10,\"y\":10},\"cut_marks\":true,\"margin\":3,"
                       "\"header\":{\"height\":18,\"font_pt\":20},\"body\":{\"font_pt\":9},"
                       "\"qr\":{\"size\":30},\"footer\":{\"height\":20,\"font_pt\":6.5}}";
    tw_diags d;
    tw_diags_init(&d);
    tw_layout l;
    assert_int_equal(tw_layout_load_mem("2up.json", json, strlen(json), &l, &d), 0);
    const double mm = 72 / 25.4;
    assert_near(l.page_w, (20 + 200 + 5) * mm, 1e-9);
    assert_near(l.page_h, (20 + 150) * mm, 1e-9);
    assert_int_equal(l.columns, 2);
    assert_true(l.cut_marks);
    assert_near(l.qr.w, 30 * mm, 1e-9);
    assert_near(l.printer_dpi, 300, 1e-9);
    tw_layout_free(&l);
    tw_diags_free(&d);
}

static void load_should_name_the_file_when_a_layout_is_missing(void **state)
{
    (void)state;
    tw_diags d;
    tw_diags_init(&d);
    tw_layout l;
    assert_int_equal(tw_layout_load("no-such-layout", "/nonexistent-dir", &l, &d), -1);
    assert_int_equal(d.errors, 1);
    assert_string_equal(d.items[0].file, "/nonexistent-dir/no-such-layout.json");
    tw_diags_free(&d);
}

static void layouts_dir_should_follow_the_environment(void **state)
{
    (void)state;
    setenv("TAGWRIGHT_LAYOUTS", "/tmp/my-layouts", 1);
    assert_string_equal(tw_layouts_dir(), "/tmp/my-layouts");
    unsetenv("TAGWRIGHT_LAYOUTS");
    assert_non_null(tw_layouts_dir());
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(default_layout_should_be_4_by_6_inches_in_points),
        cmocka_unit_test(shipped_4x6_file_should_equal_the_default),
        cmocka_unit_test(layout_should_name_the_json_path_of_a_missing_size),
        cmocka_unit_test(layout_should_refuse_unknown_units),
        cmocka_unit_test(layout_should_refuse_non_positive_sizes),
        cmocka_unit_test(layout_should_refuse_fonts_below_6_pt),
        cmocka_unit_test(layout_should_refuse_a_qr_box_under_20_mm),
        cmocka_unit_test(layout_should_refuse_regions_taller_than_the_label),
        cmocka_unit_test(layout_should_refuse_a_grid_larger_than_the_page),
        cmocka_unit_test(layout_should_refuse_text_that_is_not_json),
        cmocka_unit_test(layout_should_warn_about_unknown_keys_and_still_load),
        cmocka_unit_test(sheet_layout_should_default_its_page_to_the_grid),
        cmocka_unit_test(load_should_name_the_file_when_a_layout_is_missing),
        cmocka_unit_test(layouts_dir_should_follow_the_environment),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
