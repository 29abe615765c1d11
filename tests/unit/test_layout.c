/* test_layout.c - layouts: the built-in 4 x 6 in label, the shipped file, and refusals. */
#include "tw_test.h"

#include "write/tw_layout.h"
#include "rules/tw_label.h"
#include "write/tw_qr.h"
#include "base/tw_util.h"

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

/* The first error message about bad.json at line `line`, after a load that must fail. */
static void expect_line_error(const char *json, long line, const char *want)
{
    tw_diags d;
    tw_diags_init(&d);
    tw_layout l;
    assert_int_equal(tw_layout_load_mem("bad.json", json, strlen(json), &l, &d), -1);
    assert_true(d.count >= 1);
    assert_int_equal(d.items[0].line, line);
    assert_non_null(strstr(d.items[0].message, want));
    tw_diags_free(&d);
}

static void layout_should_refuse_text_that_is_not_json(void **state)
{
    (void)state;
    expect_line_error("{\"units\":\"in\",", 1, "not valid JSON near byte 13");
    expect_line_error("[1,2]", 1, "expected a layout object at the top, got an array");
    expect_line_error("{}\n}garbage", 2, "unexpected data after the JSON value near byte 3");
    expect_error("{\"units\":\"in\",\"units\":\"mm\"}", "units", "key given twice");
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

/* Page sizes: 1 in = 72 pt, 1 mm = 72/25.4 pt (ISO 32000-1 8.3.2.3); US Letter 8.5 x 11 in;
 * A4 210 x 297 mm (ISO 216). Each shipped layout loads without a single finding. */
static void shipped_layouts_should_load_cleanly_at_their_sizes(void **state)
{
    (void)state;
    const double in = 72, mm = 72 / 25.4;
    const struct {
        const char *name;
        double label_w, label_h, page_w, page_h;
        int columns, rows;
    } want[] = {
        {"4x6", 4 * in, 6 * in, 4 * in, 6 * in, 1, 1},
        {"4x4", 4 * in, 4 * in, 4 * in, 4 * in, 1, 1},
        {"3.5x5", 3.5 * in, 5 * in, 3.5 * in, 5 * in, 1, 1},
        {"100x150mm", 100 * mm, 150 * mm, 100 * mm, 150 * mm, 1, 1},
        {"105x74mm", 105 * mm, 74 * mm, 105 * mm, 74 * mm, 1, 1},
        {"letter-4x6-2up", 4 * in, 6 * in, 11 * in, 8.5 * in, 2, 1},
        {"a4-100x150mm-2up", 100 * mm, 150 * mm, 297 * mm, 210 * mm, 2, 1},
        {"letter-3.5x5-2x2", 3.5 * in, 5 * in, 8.5 * in, 11 * in, 2, 2},
        {"a4-105x74mm-2x2", 105 * mm, 74 * mm, 297 * mm, 210 * mm, 2, 2},
        {"letter-3.75x3.25-2x3", 3.75 * in, 3.25 * in, 8.5 * in, 11 * in, 2, 3},
    };
    const char *src = getenv("TW_SOURCE_DIR");
    char dir[4096];
    snprintf(dir, sizeof dir, "%s/layouts", src ? src : ".");
    char **names;
    int n = tw_layout_names(dir, &names);
    assert_int_equal(n, (int)(sizeof want / sizeof want[0]));
    for (size_t i = 0; i < sizeof want / sizeof want[0]; i++) {
        tw_diags d;
        tw_diags_init(&d);
        tw_layout l;
        if (tw_layout_load(want[i].name, dir, &l, &d) != 0 || d.count) {
            tw_diags_print(&d, stderr);
            fail_msg("%s does not load cleanly", want[i].name);
        }
        assert_near(l.label_w, want[i].label_w, 1e-9);
        assert_near(l.label_h, want[i].label_h, 1e-9);
        assert_near(l.page_w, want[i].page_w, 1e-9);
        assert_near(l.page_h, want[i].page_h, 1e-9);
        assert_int_equal(l.columns, want[i].columns);
        assert_int_equal(l.rows, want[i].rows);
        /* a sheet is centred and keeps its marks 0.25 in from the paper's edge */
        if (l.columns * l.rows > 1) {
            double right = l.page_w - l.sheet_margin_x - l.columns * l.label_w -
                           (l.columns - 1) * l.gutter_x;
            assert_near(right, l.sheet_margin_x, 1e-6);
            assert_true(l.sheet_margin_x >= 18 && l.sheet_margin_y >= 18);
            assert_true(l.cut_marks);
        }
        assert_true(l.qr.w >= 20 * mm - 1e-9);
        assert_non_null(l.description);
        int found = 0;
        for (int k = 0; k < n; k++)
            found |= strcmp(names[k], want[i].name) == 0;
        assert_true(found);
        tw_layout_free(&l);
        tw_diags_free(&d);
    }
    for (int k = 1; k < n; k++)
        assert_true(strcmp(names[k - 1], names[k]) < 0); /* sorted */
    tw_layout_names_free(names, n);
    assert_int_equal(tw_layout_names("/nonexistent-dir", &names), -1);
}

/* The load-time QR check assumes a version 10 symbol: 57 x 57 modules holding 213 bytes at
 * level M in byte mode (ISO/IEC 18004 capacity table, from memory; checked here against
 * libqrencode, which implements the standard). */
static void qr_design_version_should_hold_213_bytes_at_level_m(void **state)
{
    (void)state;
    char payload[215];
    memset(payload, 'a', sizeof payload - 1);
    payload[213] = '\0';
    tw_qr q;
    assert_int_equal(tw_qr_encode(payload, &q), 0);
    assert_int_equal(q.width, TW_LAYOUT_QR_MODULES);
    assert_int_equal(TW_LAYOUT_QR_MODULES, 57);
    tw_qr_free(&q);
    payload[213] = 'a';
    payload[214] = '\0';
    assert_int_equal(tw_qr_encode(payload, &q), 0);
    assert_true(q.width > TW_LAYOUT_QR_MODULES);
    tw_qr_free(&q);
}

#define MM_REST(qr, extra)                                                                   \
    "{\"units\":\"mm\",\"label\":{\"width\":100,\"height\":150},\"margin\":3,"              \
    "\"header\":{\"height\":18,\"font_pt\":20},\"body\":{\"font_pt\":9},"                   \
    "\"qr\":{\"size\":" qr "},\"footer\":{\"height\":20,\"font_pt\":6.5}" extra "}"

/* 65 modules (57 + 2 x 4 quiet) x 2 dots = 130 dots; at 150 dpi 20 mm is 118 dots and 130 dots
 * are 22.0 mm. At 203 dpi 20 mm is 159 dots: enough. */
static void qr_box_with_too_few_printer_dots_should_be_refused_by_how_much(void **state)
{
    (void)state;
    expect_error(MM_REST("20", ",\"printer_dpi\":150"), "$.qr.size",
                 "118 printer dots wide at 150 dpi");
    expect_error(MM_REST("20", ",\"printer_dpi\":150"), "$.qr.size",
                 "needs 130 dots (22.0 mm): 2.0 mm short");
    tw_diags d;
    tw_diags_init(&d);
    tw_layout l;
    const char *ok = MM_REST("20", ",\"printer_dpi\":203");
    assert_int_equal(tw_layout_load_mem("ok.json", ok, strlen(ok), &l, &d), 0);
    tw_layout_free(&l);
    tw_diags_free(&d);
}

static void refusals_should_say_by_how_much(void **state)
{
    (void)state;
    expect_error(MM_REST("19.5", ""), "$.qr.size", "19.5 mm, 0.5 mm below the 20 mm minimum");
    expect_error("{\"units\":\"in\",\"label\":{\"width\":4,\"height\":6},\"margin\":0.125,"
                 "\"header\":{\"height\":0.75,\"font_pt\":24},\"body\":{\"font_pt\":5},"
                 "\"qr\":{\"size\":1.25},\"footer\":{\"height\":0.85,\"font_pt\":6.5}}",
                 "$.body.font_pt", "the body text at 5 pt is 1 pt below the 6 pt legible minimum");
    /* margins 2 x 9 pt + header 54 + footer 61.2 + QR 90 with its caption 3.6 x 6.5 pt
     * + 3 gaps of 4 pt + 3 body lines of 6 x 1.2 pt = 280.2 pt (98.8 mm); a 3.5 in label
     * has 252 pt: 28.2 pt = 9.9 mm short */
    expect_error("{\"units\":\"in\",\"label\":{\"width\":4,\"height\":3.5}," GOOD_REST "}",
                 "$.label.height", "need 280.2 pt (98.8 mm) of height, the label has 252.0 pt: "
                 "9.9 mm short");
    expect_error("{\"units\":\"in\",\"label\":{\"width\":8.5,\"height\":6},"
                 "\"page\":{\"width\":8.5,\"height\":11},\"grid\":{\"columns\":2}," GOOD_REST "}",
                 "$.page.width", "612.0 pt: 215.9 mm too narrow");
}

static void side_qr_should_sit_under_the_header_with_the_study_block_below(void **state)
{
    (void)state;
    const char *json = "{\"units\":\"mm\",\"label\":{\"width\":105,\"height\":74},\"margin\":2,"
                       "\"header\":{\"height\":6.5,\"font_pt\":12},\"body\":{\"font_pt\":7,"
                       "\"columns\":2},\"qr\":{\"size\":20.5,\"position\":\"side\"},"
                       "\"footer\":{\"height\":12,\"font_pt\":6}}";
    tw_diags d;
    tw_diags_init(&d);
    tw_layout l;
    assert_int_equal(tw_layout_load_mem("side.json", json, strlen(json), &l, &d), 0);
    assert_true(l.qr_side);
    assert_int_equal(l.body_columns, 2);
    assert_near(l.qr.y + l.qr.h, l.header.y - 4, 1e-9);          /* right under the header */
    assert_near(l.qr.x + l.qr.w, l.label_w - 2 * 72 / 25.4, 1e-9); /* at the right margin */
    assert_true(l.body.x + l.body.w <= l.qr.x);                    /* the body to its left */
    assert_true(l.study.w > 0 && l.study.y + l.study.h <= l.qr.y); /* study block below it */
    assert_false(overlap(l.body, l.qr));
    assert_false(overlap(l.study, l.footer));
    tw_layout_free(&l);
    tw_diags_free(&d);
}

static void body_columns_qr_position_and_omit_should_be_checked(void **state)
{
    (void)state;
    expect_error("{\"units\":\"in\",\"label\":{\"width\":4,\"height\":6},\"margin\":0.125,"
                 "\"header\":{\"height\":0.75,\"font_pt\":24},\"body\":{\"font_pt\":9,"
                 "\"columns\":3},\"qr\":{\"size\":1.25},\"footer\":{\"height\":0.85,"
                 "\"font_pt\":6.5}}",
                 "$.body.columns", "from 1 to 2");
    expect_error(MM_REST("25, \"position\":\"left\"", ""), "$.qr.position", "\"side\"");
    expect_error(MM_REST("25", ",\"omit\":[\"glove_class\"]"), "$.omit[0]", "required");
    expect_error(MM_REST("25", ",\"omit\":\"scenario\""), "$.omit", "array");
    /* two body columns of a 2.5 in wide label: each narrower than 1 in */
    expect_error("{\"units\":\"in\",\"label\":{\"width\":2.5,\"height\":6},\"margin\":0.125,"
                 "\"header\":{\"height\":0.75,\"font_pt\":24},\"body\":{\"font_pt\":9,"
                 "\"columns\":2},\"qr\":{\"size\":0.8,\"position\":\"side\"},"
                 "\"footer\":{\"height\":0.85,\"font_pt\":6.5}}",
                 "$.body.columns", "narrower than the 1 in");
    tw_diags d;
    tw_diags_init(&d);
    tw_layout l;
    const char *ok = MM_REST("25", ",\"omit\":[\"description\",\"location\",\"scenario\"]");
    assert_int_equal(tw_layout_load_mem("omit.json", ok, strlen(ok), &l, &d), 0);
    assert_int_equal(l.omit, (1u << TW_L_DESCRIPTION) | (1u << TW_L_LOCATION) |
                             (1u << TW_L_SCENARIO));
    tw_layout_free(&l);
    tw_diags_free(&d);
}

/* A page without sheet margins centres the grid; labels closer than 0.25 in to the paper's
 * edge (common practice: what office printers can print) are a warning, not an error. */
static void sheet_without_margins_should_be_centred_and_warn_near_the_edge(void **state)
{
    (void)state;
    const char *json = "{\"units\":\"in\",\"label\":{\"width\":4,\"height\":6},"
                       "\"page\":{\"width\":8.5,\"height\":11},\"grid\":{\"columns\":2,"
                       "\"gutter_x\":0.25}," GOOD_REST "}";
    tw_diags d;
    tw_diags_init(&d);
    tw_layout l;
    assert_int_equal(tw_layout_load_mem("edge.json", json, strlen(json), &l, &d), 0);
    assert_near(l.sheet_margin_x, 0.125 * 72, 1e-9);
    assert_near(l.sheet_margin_y, 2.5 * 72, 1e-9);
    assert_int_equal(d.errors, 0);
    assert_int_equal(d.warnings, 1);
    assert_string_equal(d.items[0].path, "$.sheet_margin");
    assert_non_null(strstr(d.items[0].message, "0.25 in"));
    tw_layout_free(&l);
    tw_diags_free(&d);
}

/* Every truncation and many single-byte changes of a shipped layout load or are refused with
 * findings; none crashes (run under ASan/UBSan by make check). */
static void truncated_or_garbled_layouts_should_be_refused_not_crash(void **state)
{
    (void)state;
    const char *src = getenv("TW_SOURCE_DIR");
    const char *names[] = {"105x74mm", "letter-3.75x3.25-2x3"};
    static const char junk[] = {'}', '{', '"', '-', '0', '9', 'e', ',', ':', '[', '\0', 'x'};
    for (size_t f = 0; f < sizeof names / sizeof names[0]; f++) {
        char path[4096], err[256];
        snprintf(path, sizeof path, "%s/layouts/%s.json", src ? src : ".", names[f]);
        size_t len = 0;
        char *text = tw_read_file(path, &len, err, sizeof err);
        if (!text)
            fail_msg("%s", err);
        char *copy = malloc(len + 1);
        assert_non_null(copy);
        for (size_t cut = 0; cut <= len; cut++) {
            for (size_t j = 0; j < (cut < len ? sizeof junk : 1); j++) {
                memcpy(copy, text, len);
                size_t n = len;
                if (cut < len)
                    copy[cut] = junk[j]; /* one byte changed */
                else
                    n = cut;
                tw_diags d;
                tw_diags_init(&d);
                tw_layout l;
                int rc = tw_layout_load_mem("fuzz.json", copy, n, &l, &d);
                assert_true(rc == 0 || d.errors > 0);
                tw_layout_free(&l);
                tw_diags_free(&d);
            }
            tw_diags d;
            tw_diags_init(&d);
            tw_layout l;
            int rc = tw_layout_load_mem("fuzz.json", text, cut, &l, &d); /* truncated */
            assert_true(rc == 0 || d.errors > 0);
            tw_layout_free(&l);
            tw_diags_free(&d);
        }
        free(copy);
        free(text);
    }
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
        cmocka_unit_test(shipped_layouts_should_load_cleanly_at_their_sizes),
        cmocka_unit_test(qr_design_version_should_hold_213_bytes_at_level_m),
        cmocka_unit_test(qr_box_with_too_few_printer_dots_should_be_refused_by_how_much),
        cmocka_unit_test(refusals_should_say_by_how_much),
        cmocka_unit_test(side_qr_should_sit_under_the_header_with_the_study_block_below),
        cmocka_unit_test(body_columns_qr_position_and_omit_should_be_checked),
        cmocka_unit_test(sheet_without_margins_should_be_centred_and_warn_near_the_edge),
        cmocka_unit_test(truncated_or_garbled_layouts_should_be_refused_not_crash),
        cmocka_unit_test(load_should_name_the_file_when_a_layout_is_missing),
        cmocka_unit_test(layouts_dir_should_follow_the_environment),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
