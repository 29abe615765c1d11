/* test_util.c - numbers, dates, the hash map, the string arena, findings and atomic writes. */
#include "tw_test.h"

#include <sys/stat.h>
#include <unistd.h>

#include "base/tw_atomic.h"
#include "base/tw_date.h"
#include "base/tw_diag.h"
#include "base/tw_map.h"
#include "base/tw_util.h"

static void parse_double_should_accept_plain_decimals_only(void **state)
{
    (void)state;
    double v;
    assert_int_equal(tw_parse_double(" 12.5 ", &v), 0);
    assert_near(v, 12.5, 1e-12);
    assert_int_equal(tw_parse_double("-3e2", &v), 0);
    assert_near(v, -300, 1e-9);
    assert_int_equal(tw_parse_double(".5", &v), 0);
    const char *bad[] = {"", " ", "abc", "NaN", "nan", "inf", "-Infinity", "0x10", "1e999",
                         "12 kA", "1,5", "--1", "."};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++)
        assert_int_equal(tw_parse_double(bad[i], &v), -1);
}

static void date_parse_should_check_that_the_day_exists(void **state)
{
    (void)state;
    tw_date d;
    assert_int_equal(tw_date_parse("2024-02-29", &d), 0);
    assert_int_equal(tw_date_parse("2023-02-29", &d), -1);
    assert_int_equal(tw_date_parse("2026-13-01", &d), -1);
    assert_int_equal(tw_date_parse("2026-1-01", &d), -1);
    assert_int_equal(tw_date_parse("2026-09-15T08:00:00Z", &d), 0);
    assert_int_equal(tw_date_parse("2026-09-15x", &d), -1);
    assert_int_equal(tw_date_parse("1900-02-29", &d), -1); /* 1900 was not a leap year */
    assert_int_equal(tw_date_parse("2000-02-29", &d), 0);  /* 2000 was */
}

static void five_years_after_a_leap_day_should_be_28_february(void **state)
{
    (void)state;
    tw_date d = {2024, 2, 29};
    char buf[11];
    tw_date_format(tw_date_add_years(d, 5), buf);
    assert_string_equal(buf, "2029-02-28");
    tw_date e = {2026, 9, 15};
    tw_date_format(tw_date_add_years(e, 5), buf);
    assert_string_equal(buf, "2031-09-15");
    tw_date epoch = {1970, 1, 1}, later = {2000, 3, 1};
    assert_int_equal(tw_date_days(epoch), 0);
    assert_int_equal(tw_date_days(later), 11017); /* days from 1970-01-01 to 2000-03-01 */
}

static void map_should_find_every_key_after_growing(void **state)
{
    (void)state;
    enum { N = 5000 };
    static char keys[N][16];
    tw_map m;
    tw_map_init(&m);
    for (size_t i = 0; i < N; i++) {
        snprintf(keys[i], sizeof keys[i], "BUS-%zu", i);
        assert_int_equal(tw_map_put(&m, keys[i], i), 0);
    }
    for (size_t i = 0; i < N; i++) {
        size_t v;
        assert_int_equal(tw_map_get(&m, keys[i], &v), 1);
        assert_int_equal(v, i);
    }
    size_t v;
    assert_int_equal(tw_map_get(&m, "BUS-X", &v), 0);
    /* find-or-add: an existing key gives its value and is left alone; a new one is added */
    assert_int_equal(tw_map_get_or_put(&m, keys[42], 7, &v), 1);
    assert_int_equal(v, 42);
    assert_int_equal(tw_map_get_or_put(&m, "BUS-X", 7, &v), 0);
    assert_int_equal(tw_map_get(&m, "BUS-X", &v), 1);
    assert_int_equal(v, 7);
    assert_int_equal(tw_map_reserve(&m, 100000), 0);
    assert_int_equal(tw_map_get(&m, keys[N - 1], &v), 1); /* kept through a resize */
    assert_int_equal(v, N - 1);
    tw_map_free(&m);
}

/* Every string keeps its bytes while later ones fill, overflow and outgrow chunks: small ones
 * (most values), empty ones, and ones larger than a chunk (a 64 KiB cell). */
static void arena_should_keep_every_string_until_freed(void **state)
{
    (void)state;
    enum { N = 200000 };
    static char *kept[N];
    static char big[100000];
    memset(big, 'x', sizeof big);
    tw_arena a = {0};
    for (size_t i = 0; i < N; i++) {
        char text[32];
        int n = snprintf(text, sizeof text, "BUS-%zu", i);
        if (i % 5000 == 0)
            kept[i] = tw_arena_strndup(&a, big, sizeof big - i / 5000);
        else if (i % 7 == 0)
            kept[i] = tw_arena_strndup(&a, "", 0);
        else
            kept[i] = tw_arena_strndup(&a, text, (size_t)n);
        assert_non_null(kept[i]);
    }
    for (size_t i = 0; i < N; i++) {
        char text[32];
        snprintf(text, sizeof text, "BUS-%zu", i);
        if (i % 5000 == 0) {
            assert_int_equal(strlen(kept[i]), sizeof big - i / 5000);
            assert_int_equal(kept[i][0], 'x');
        } else if (i % 7 == 0) {
            assert_string_equal(kept[i], "");
        } else {
            assert_string_equal(kept[i], text);
        }
    }
    tw_arena_free(&a);
    assert_null(a.head);
    assert_non_null(tw_arena_strndup(&a, "again", 5)); /* ready for use after a free */
    tw_arena_free(&a);
}

static void finding_should_print_file_line_id_field_message(void **state)
{
    (void)state;
    tw_diags d;
    tw_diags_init(&d);
    tw_source csv = {"r.csv", 12, NULL}, json = {"r.json", 0, "buses[3].gap_mm"};
    tw_diag_add(&d, TW_ERROR, &csv, "MCC-1", "nominal_voltage_v", "expected a number, got '%s'",
                "x");
    tw_diag_add(&d, TW_WARNING, &json, NULL, "gap_mm", "outside the model's range");
    char buf[512] = "";
    FILE *f = fmemopen(buf, sizeof buf, "w");
    tw_diags_print(&d, f);
    fclose(f);
    assert_string_equal(buf, "r.csv:12: error: MCC-1: nominal_voltage_v: expected a number, got "
                             "'x'\nr.json:buses[3].gap_mm: warning: gap_mm: outside the model's "
                             "range\n");
    assert_int_equal(d.errors, 1);
    assert_int_equal(d.warnings, 1);
    tw_diags_free(&d);
}

static void atomic_write_should_replace_whole_and_refuse_directories(void **state)
{
    (void)state;
    char dir[] = "/tmp/tw-atomic-XXXXXX";
    assert_non_null(mkdtemp(dir));
    char *path = tw_asprintf("%s/out.txt", dir);
    char err[256];
    assert_int_equal(tw_atomic_write(path, "one", 3, err, sizeof err), 0);
    assert_int_equal(tw_atomic_write(path, "two!", 4, err, sizeof err), 0);
    size_t n;
    char *back = tw_read_file(path, &n, err, sizeof err);
    assert_string_equal(back, "two!");
    free(back);
    assert_int_equal(tw_output_path_ok(dir, NULL, err, sizeof err), -1);
    assert_non_null(strstr(err, "is a directory"));
    const char *inputs[] = {path, NULL};
    assert_int_equal(tw_output_path_ok(path, inputs, err, sizeof err), -1);
    assert_non_null(strstr(err, "input"));
    char *missing = tw_asprintf("%s/no/such/dir/x.pdf", dir);
    assert_int_equal(tw_atomic_write(missing, "x", 1, err, sizeof err), -1);
    unlink(path);
    assert_int_equal(rmdir(dir), 0); /* nothing left behind */
    free(missing);
    free(path);
}

/* A path that is not a regular file is refused by every entry point that could replace it, and
 * is left as it was; a label record is refused as an output. */
static void atomic_outputs_should_refuse_links_fifos_and_label_records(void **state)
{
    (void)state;
    char dir[] = "/tmp/tw-atomic-XXXXXX";
    assert_non_null(mkdtemp(dir));
    char *fifo = tw_asprintf("%s/pipe", dir), *link = tw_asprintf("%s/link", dir);
    char *plain = tw_asprintf("%s/plain.txt", dir), *rec = tw_asprintf("%s/rec.json", dir);
    char err[256];
    assert_int_equal(mkfifo(fifo, 0600), 0);
    assert_int_equal(tw_atomic_write(plain, "x", 1, err, sizeof err), 0);
    assert_int_equal(symlink("plain.txt", link), 0);
    const char *bad[] = {fifo, link};
    for (size_t i = 0; i < 2; i++) {
        assert_int_equal(tw_output_path_ok(bad[i], NULL, err, sizeof err), -1);
        assert_non_null(strstr(err, "refusing to replace"));
        assert_int_equal(tw_atomic_write(bad[i], "y", 1, err, sizeof err), -1);
        assert_null(tw_atomic_tmp_path(bad[i], err, sizeof err));
    }
    struct stat st;
    assert_int_equal(lstat(fifo, &st), 0);
    assert_true(S_ISFIFO(st.st_mode));
    assert_int_equal(lstat(link, &st), 0);
    assert_true(S_ISLNK(st.st_mode));
    static const char record[] = "{\n  \"format\": \"" TW_LABEL_RECORD_FORMAT "\",\n  \"labels\": []}\n";
    assert_int_equal(tw_atomic_write(rec, record, sizeof record - 1, err, sizeof err), 0);
    assert_int_equal(tw_output_path_ok(rec, NULL, err, sizeof err), -1);
    assert_non_null(strstr(err, "record of printed labels"));
    assert_int_equal(tw_output_path_ok(plain, NULL, err, sizeof err), 0);
    const char *all[] = {fifo, link, plain, rec};
    for (size_t i = 0; i < 4; i++)
        assert_int_equal(unlink(all[i]), 0);
    assert_int_equal(rmdir(dir), 0); /* nothing left behind */
    free(fifo);
    free(link);
    free(plain);
    free(rec);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(parse_double_should_accept_plain_decimals_only),
        cmocka_unit_test(date_parse_should_check_that_the_day_exists),
        cmocka_unit_test(five_years_after_a_leap_day_should_be_28_february),
        cmocka_unit_test(map_should_find_every_key_after_growing),
        cmocka_unit_test(arena_should_keep_every_string_until_freed),
        cmocka_unit_test(finding_should_print_file_line_id_field_message),
        cmocka_unit_test(atomic_write_should_replace_whole_and_refuse_directories),
        cmocka_unit_test(atomic_outputs_should_refuse_links_fifos_and_label_records),
    };
    return cmocka_run_group_tests_name("util", tests, NULL, NULL);
}
