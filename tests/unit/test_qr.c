/* test_qr.c - QR payloads (placeholders, percent-encoding, content hash) and encoding. */
#include "tw_test.h"

#include "write/tw_qr.h"

#define HASH "0123456789abcdef0123456789abcdef0123456789abcdef0123456789abcdef"
#define HASH_UPPER "0123456789ABCDEF0123456789ABCDEF0123456789ABCDEF0123456789ABCDEF"

static void payload_should_expand_every_placeholder(void **state)
{
    (void)state;
    char *p = tw_qr_payload("https://x.invalid/{study}/{equipment}?r={revision}&h={hash}",
                            "ST-1", "MCC-3", 2, HASH);
    assert_non_null(p);
    assert_string_equal(p, "https://x.invalid/ST-1/MCC-3?r=2&h=" HASH);
    free(p);
}

/* RFC 3986 section 2.3: ALPHA DIGIT - . _ ~ stay as they are; everything else (space, '/',
 * '&', '#', UTF-8 bytes) is percent-encoded with upper-case hex digits (section 2.1). */
static void payload_should_percent_encode_all_but_unreserved_characters(void **state)
{
    (void)state;
    char *p = tw_qr_payload("{study}|{equipment}", "a b/c", "Pump~1_x.y-z&q#\xc3\xa9", 0, HASH);
    assert_non_null(p);
    assert_string_equal(p, "a%20b%2Fc|Pump~1_x.y-z%26q%23%C3%A9#sha256=" HASH);
    free(p);
}

static void payload_should_append_the_hash_when_the_template_has_none(void **state)
{
    (void)state;
    char *p = tw_qr_payload("https://x.invalid/{equipment}", NULL, "B-1", 1, HASH);
    assert_non_null(p);
    assert_string_equal(p, "https://x.invalid/B-1#sha256=" HASH);
    free(p);
}

static void payload_should_leave_a_missing_study_empty(void **state)
{
    (void)state;
    char *p = tw_qr_payload("s={study};e={equipment};{hash}", NULL, "B-1", 3, HASH);
    assert_non_null(p);
    assert_string_equal(p, "s=;e=B-1;" HASH);
    free(p);
}

static void payload_should_keep_unknown_braces_literally(void **state)
{
    (void)state;
    char *p = tw_qr_payload("{x}{study{hash}", "S", "E", 1, HASH);
    assert_non_null(p);
    assert_string_equal(p, "{x}{study" HASH);
    free(p);
}

static void payload_should_use_the_default_link_without_a_template(void **state)
{
    (void)state;
    char *p = tw_qr_payload(NULL, "ST-1", "MCC-3", 4, HASH);
    assert_non_null(p);
    assert_string_equal(p, "HTTPS://RECORDS.INVALID/ST-1/MCC-3/4/" HASH_UPPER);
    free(p);
}

static void payload_should_put_the_hash_in_capitals_for_HASH(void **state)
{
    (void)state;
    char *p = tw_qr_payload("https://x.invalid/{equipment}/{HASH}?lower={hash}", "S", "B 1", 2,
                            HASH);
    assert_non_null(p);
    assert_string_equal(p, "https://x.invalid/B%201/" HASH_UPPER "?lower=" HASH);
    free(p);
    char h[65];
    p = tw_qr_payload("{HASH}", "S", "E", 1, HASH);
    assert_int_equal(tw_qr_payload_hash(p, h), 0);
    assert_string_equal(h, HASH); /* read back in lower case, as the manifest has it */
    free(p);
}

/* The default link puts the whole payload in QR alphanumeric mode for IDs in capitals: the
 * symbol is version 5 (37 x 37 modules) for 16-character IDs at error correction level M
 * (ISO/IEC 18004 Table 7: version 5-M holds 122 alphanumeric characters, version 4-M 90; from
 * memory, verify against the edition in force). This payload has 120. */
static void default_link_should_fit_version_5_for_sixteen_character_ids(void **state)
{
    (void)state;
    char *p = tw_qr_payload(NULL, "BN-AF-BENCH", "BN-DIG-PNL000001", 12, HASH);
    assert_non_null(p);
    tw_qr q;
    assert_int_equal(tw_qr_encode(p, &q), 0);
    assert_int_equal(q.width, 37);
    tw_qr_free(&q);
    free(p);
}

static void payload_hash_should_be_found_in_a_payload(void **state)
{
    (void)state;
    char h[65];
    char *p = tw_qr_payload(NULL, "ST-1", "ABCDEF", 4, HASH);
    assert_int_equal(tw_qr_payload_hash(p, h), 0);
    assert_string_equal(h, HASH);
    free(p);
}

static void payload_hash_should_ignore_runs_that_are_not_64_digits(void **state)
{
    (void)state;
    char h[65];
    assert_int_equal(tw_qr_payload_hash("abc", h), -1);
    assert_int_equal(tw_qr_payload_hash(HASH "0", h), -1);       /* 65 digits */
    assert_int_equal(tw_qr_payload_hash("x" HASH "1/" HASH "/", h), 0); /* 65, then 64 */
    assert_string_equal(h, HASH);
    /* upper-case digits are accepted and reported in lower case */
    assert_int_equal(tw_qr_payload_hash("h=0123456789ABCDEF0123456789abcdef0123456789abcdef"
                                        "0123456789abcdef;", h),
                     0);
    assert_string_equal(h, HASH);
    assert_int_equal(tw_qr_payload_hash(NULL, h), -1);
}

/* ISO/IEC 18004 capacity table, level M, byte mode (from memory, verify against the standard;
 * libqrencode agrees): version 1 holds 14 bytes (21 x 21 modules), version 2 holds 26
 * (25 x 25), version 7 holds 122 (45 x 45), version 8 holds 152 (49 x 49). */
static void encode_should_pick_the_smallest_version_at_level_m(void **state)
{
    (void)state;
    tw_qr q;
    assert_int_equal(tw_qr_encode("tagwright-abcd", &q), 0); /* 14 bytes */
    assert_int_equal(q.width, 21);
    tw_qr_free(&q);
    assert_int_equal(tw_qr_encode("tagwright-abcde", &q), 0); /* 15 bytes */
    assert_int_equal(q.width, 25);
    tw_qr_free(&q);
    char text[124];
    memset(text, 'q', sizeof text - 1); /* lower-case letters: byte mode is the only choice */
    text[122] = '\0';
    assert_int_equal(tw_qr_encode(text, &q), 0); /* 122 bytes */
    assert_int_equal(q.width, 45); /* version 7 */
    tw_qr_free(&q);
    text[122] = 'q';
    text[123] = '\0';
    assert_int_equal(tw_qr_encode(text, &q), 0); /* 123 bytes */
    assert_int_equal(q.width, 49); /* version 8 */
    tw_qr_free(&q);
}

/* Runs of digits or upper-case letters go in the numeric and alphanumeric modes when that is
 * shorter (ISO/IEC 18004: 10 bits per 3 digits, 11 bits per 2 characters, against 8 bits per
 * byte; from memory, verify against the standard): 122 such characters need a smaller symbol
 * than the version 7 that 122 bytes take. */
static void encode_should_use_the_shorter_modes_for_digits_and_capitals(void **state)
{
    (void)state;
    tw_qr q;
    char text[123];
    memset(text, '7', sizeof text - 1);
    text[122] = '\0';
    assert_int_equal(tw_qr_encode(text, &q), 0);
    assert_true(q.width < 45);
    tw_qr_free(&q);
    memset(text, 'Q', sizeof text - 1);
    assert_int_equal(tw_qr_encode(text, &q), 0);
    assert_true(q.width < 45);
    tw_qr_free(&q);
    char *p = tw_qr_payload(NULL, "ST-2024-07", "MCC-3", 1, HASH); /* the default link */
    assert_int_equal(strlen(p), 107);
    assert_int_equal(tw_qr_encode(p, &q), 0);
    assert_true(q.width <= 45); /* version 7 at most; the former link made version 8 */
    free(p);
    tw_qr_free(&q);
}

static void encode_should_mark_the_finder_patterns_dark(void **state)
{
    (void)state;
    tw_qr q;
    assert_int_equal(tw_qr_encode("tagwright", &q), 0);
    /* Finder pattern corners (ISO/IEC 18004 6.3.3): top-left 7x7 ring is dark on its edge,
     * light just inside. Every byte is 0 or 1. */
    assert_int_equal(q.dark[0], 1);
    assert_int_equal(q.dark[6], 1);
    assert_int_equal(q.dark[1 * q.width + 1], 0);
    assert_int_equal(q.dark[3 * q.width + 3], 1);
    assert_int_equal(q.dark[q.width - 1], 1);
    for (int i = 0; i < q.width * q.width; i++)
        assert_true(q.dark[i] <= 1);
    tw_qr_free(&q);
}

static void encode_should_refuse_empty_and_oversized_payloads(void **state)
{
    (void)state;
    tw_qr q;
    assert_int_equal(tw_qr_encode("", &q), -1);
    assert_int_equal(tw_qr_encode(NULL, &q), -1);
    size_t n = 3000; /* version 40-M holds 2331 bytes */
    char *big = malloc(n + 1);
    assert_non_null(big);
    memset(big, 'a', n);
    big[n] = '\0';
    assert_int_equal(tw_qr_encode(big, &q), -1);
    assert_null(q.dark);
    free(big);
    tw_qr_free(&q);
    tw_qr_free(NULL);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(payload_should_expand_every_placeholder),
        cmocka_unit_test(payload_should_percent_encode_all_but_unreserved_characters),
        cmocka_unit_test(payload_should_append_the_hash_when_the_template_has_none),
        cmocka_unit_test(payload_should_leave_a_missing_study_empty),
        cmocka_unit_test(payload_should_keep_unknown_braces_literally),
        cmocka_unit_test(payload_should_use_the_default_link_without_a_template),
        cmocka_unit_test(payload_should_put_the_hash_in_capitals_for_HASH),
        cmocka_unit_test(default_link_should_fit_version_5_for_sixteen_character_ids),
        cmocka_unit_test(payload_hash_should_be_found_in_a_payload),
        cmocka_unit_test(payload_hash_should_ignore_runs_that_are_not_64_digits),
        cmocka_unit_test(encode_should_pick_the_smallest_version_at_level_m),
        cmocka_unit_test(encode_should_use_the_shorter_modes_for_digits_and_capitals),
        cmocka_unit_test(encode_should_mark_the_finder_patterns_dark),
        cmocka_unit_test(encode_should_refuse_empty_and_oversized_payloads),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
