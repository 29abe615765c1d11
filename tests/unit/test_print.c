/* test_print.c - volume names and the measuring shortcuts the print path relies on. */
#include "tw_test.h"

#include "tw_draw.h"
#include "tw_print.h"

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

/* tw_text_width sums cached ASCII glyph widths; it must agree with libharu's own measure for
 * ASCII text and fall back to it for anything else. */
static void text_width_should_match_libharu_for_ascii_and_other_text(void **state)
{
    (void)state;
    tw_pdf_doc d;
    char err[256];
    if (tw_pdf_doc_open(&d, "2026-12-01", err, sizeof err) != 0)
        fail_msg("%s", err);
    const char *texts[] = {"Arc-flash boundary", "4 ft 9 in (1433 mm)", "~!@#$%^&*()_+{}|:<>?",
                           "Schaltanlage \303\234berwachung", "", "x"};
    HPDF_Font fonts[] = {d.regular, d.bold};
    for (int f = 0; f < 2; f++)
        for (size_t i = 0; i < sizeof texts / sizeof texts[0]; i++) {
            size_t len = strlen(texts[i]);
            double want = 0;
            if (len) {
                HPDF_TextWidth tw = HPDF_Font_TextWidth(fonts[f], (const HPDF_BYTE *)texts[i],
                                                        (HPDF_UINT)len);
                want = tw.width * 9.5 / 1000.0;
            }
            assert_true(tw_text_width(fonts[f], 9.5, texts[i], len) == want);
            /* twice: the second comes from the cache */
            assert_true(tw_text_width(fonts[f], 9.5, texts[i], len) == want);
        }
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
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
