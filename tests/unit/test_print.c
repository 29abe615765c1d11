/* test_print.c - volume names and the measuring shortcuts the print path relies on. */
#include "tw_test.h"

#include "write/tw_pdf_doc.h"
#include "write/tw_print_run.h"

static void check_volume(const char *out, size_t v, const char *want)
{
    char *got = tw_volume_path(out, v);
    assert_non_null(got);
    assert_string_equal(got, want);
    free(got);
}

static void volume_path_should_number_before_the_pdf_extension(void **state)
{
    (void)state;
    check_volume("labels.pdf", 1, "labels-001.pdf");
    check_volume("out/site labels.pdf", 12, "out/site labels-012.pdf");
    check_volume("LABELS.PDF", 2, "LABELS-002.PDF");
}

static void volume_path_should_append_the_number_without_an_extension(void **state)
{
    (void)state;
    check_volume("labels", 7, "labels-007");
    check_volume("dir.v2/labels", 999, "dir.v2/labels-999");
}

static void volume_path_should_widen_past_three_digits(void **state)
{
    (void)state;
    check_volume("a.pdf", 1000, "a-1000.pdf");
}

static void default_volume_size_should_stay_within_the_limits(void **state)
{
    (void)state;
    assert_true(TW_DEFAULT_VOLUME_SIZE >= 1 && TW_DEFAULT_VOLUME_SIZE <= TW_MAX_VOLUME_SIZE);
    /* libharu 2.3.0 refuses more than 32767 pages under one page-tree node */
    assert_true(TW_MAX_VOLUME_SIZE <= 32767);
}

static void open_doc(tw_pdf_doc *d)
{
    char err[256];
    if (tw_pdf_doc_open(d, "2026-12-01", err, sizeof err) != 0)
        fail_msg("%s", err);
}

static double libharu_width(HPDF_Font f, const char *s, double pt)
{
    size_t len = strlen(s);
    if (!len)
        return 0;
    HPDF_TextWidth tw = HPDF_Font_TextWidth(f, (const HPDF_BYTE *)s, (HPDF_UINT)len);
    return tw.width * pt / 1000.0;
}

/* tw_text_width sums the document's ASCII glyph widths; it must agree with libharu's own
 * measure for ASCII text, and for other text give what libharu gives in either font: the
 * single-byte (WinAnsiEncoding) font for text it can encode, the UTF-8 font otherwise. */
static void text_width_should_match_libharu_for_ascii_and_other_text(void **state)
{
    (void)state;
    tw_pdf_doc d;
    open_doc(&d);
    const char *ascii[] = {"Arc-flash boundary", "4 ft 9 in (1433 mm)", "~!@#$%^&*()_+{}|:<>?",
                           "", "x"};
    /* UTF-8 text and the same text in WinAnsiEncoding (NULL: it has no code there) */
    const char *other[][2] = {
        {"Schaltanlage \303\234berwachung", "Schaltanlage \334berwachung"},
        {"Energ\303\255a incidente \342\200\224 caf\303\251 \342\202\254", "Energ\355a incidente \227 caf\351 \200"},
        {"\342\200\242 Clase 00", "\225 Clase 00"},
        {"R = 10 \316\251", NULL},
        {"\344\270\255\346\226\207", NULL},
    };
    tw_font *fonts[] = {d.regular, d.bold};
    for (int f = 0; f < 2; f++) {
        for (size_t i = 0; i < sizeof ascii / sizeof ascii[0]; i++) {
            double want = libharu_width(fonts[f]->byte, ascii[i], 9.5);
            assert_true(tw_text_width(fonts[f], 9.5, ascii[i], strlen(ascii[i])) == want);
        }
        for (size_t i = 0; i < sizeof other / sizeof other[0]; i++) {
            double got = tw_text_width(fonts[f], 9.5, other[i][0], strlen(other[i][0]));
            HPDF_Font wide = tw_font_wide(fonts[f]);
            assert_non_null(wide);
            assert_true(got == libharu_width(wide, other[i][0], 9.5));
            if (other[i][1])
                assert_true(got == libharu_width(fonts[f]->byte, other[i][1], 9.5));
        }
    }
    tw_pdf_doc_close(&d);
}

/* Text WinAnsiEncoding can hold is shown in the single-byte font; other text in the UTF-8 font,
 * which a document makes only when it first needs it. */
static void draw_text_should_pick_the_single_byte_font_when_it_can(void **state)
{
    (void)state;
    tw_pdf_doc d;
    char err[256];
    open_doc(&d);
    HPDF_Page p = tw_pdf_doc_page(&d, 288, 432);
    assert_non_null(p);
    const char *spanish = "PELIGRO \342\200\242 Energ\303\255a incidente";
    tw_draw_text(p, d.regular, 9, 10, 10, spanish, strlen(spanish), TW_BLACK);
    assert_ptr_equal(HPDF_Page_GetCurrentFont(p), d.regular->byte);
    assert_null(d.regular->wide);
    const char *greek = "10 \316\251";
    tw_draw_text(p, d.regular, 9, 10, 30, greek, strlen(greek), TW_BLACK);
    assert_non_null(d.regular->wide);
    assert_ptr_equal(HPDF_Page_GetCurrentFont(p), d.regular->wide);
    assert_int_equal(tw_pdf_doc_check(&d, err, sizeof err), 0);
    tw_pdf_doc_close(&d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(volume_path_should_number_before_the_pdf_extension),
        cmocka_unit_test(volume_path_should_append_the_number_without_an_extension),
        cmocka_unit_test(volume_path_should_widen_past_three_digits),
        cmocka_unit_test(default_volume_size_should_stay_within_the_limits),
        cmocka_unit_test(text_width_should_match_libharu_for_ascii_and_other_text),
        cmocka_unit_test(draw_text_should_pick_the_single_byte_font_when_it_can),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
