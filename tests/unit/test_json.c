/* test_json.c - the one JSON entry point (read/tw_json.h), and every reader of a JSON file
 * refusing the same bad text the same way through it. */
#include "tw_test.h"

#include "read/tw_job.h"
#include "read/tw_json.h"
#include "read/tw_results.h"
#include "read/tw_site.h"
#include "write/tw_layout.h"
#include "write/tw_manifest.h"

static const tw_json_spec object = {"an object", TW_JSON_OBJECT, NULL};

/* Parses text that must be refused; checks the first finding's line (0: none) and path. */
static void expect_refused(const char *text, size_t len, long line, const char *path,
                           const char *want)
{
    tw_diags d;
    tw_diags_init(&d);
    assert_null(tw_json_parse("f.json", text, len, &object, &d));
    assert_true(d.errors >= 1);
    const tw_diag *g = &d.items[0];
    assert_string_equal(g->file, "f.json");
    assert_int_equal(g->line, line);
    if (path)
        assert_string_equal(g->path, path);
    if (!strstr(g->message, want))
        fail_msg("'%s' not in '%s'", want, g->message);
    tw_diags_free(&d);
}

static void parse_should_return_the_tree_of_a_good_object(void **state)
{
    (void)state;
    tw_diags d;
    tw_diags_init(&d);
    const char *t = "\xEF\xBB\xBF{\"a\": [1, {\"b\": 2, \"c\": 3}], \"d\": {\"b\": 4}}\n\n";
    cJSON *root = tw_json_parse("f.json", t, strlen(t), &object, &d);
    assert_non_null(root);
    assert_int_equal(d.count, 0);
    assert_int_equal(cJSON_GetObjectItem(root, "d")->child->valueint, 4);
    tw_json_free(root, &object);
}

static void parse_should_refuse_data_after_the_value_with_its_line_and_byte(void **state)
{
    (void)state;
    expect_refused("{}\n}garbage", 11, 2, NULL, "unexpected data after the JSON value near byte 3");
}

static void parse_should_refuse_text_that_is_not_json_with_its_line_and_byte(void **state)
{
    (void)state;
    expect_refused("{\n\"a\": nan}", 11, 2, NULL, "not valid JSON near byte 7; expected an object");
    expect_refused("", 0, 1, NULL, "not valid JSON near byte 0");
}

static void parse_should_refuse_a_key_given_twice_naming_its_path(void **state)
{
    (void)state;
    const char *t = "{\"a\": [0, {\"b\": 1, \"b\": 2}]}";
    expect_refused(t, strlen(t), 0, "a[1].b", "key given twice in one object");
    t = "{\"x\": 1, \"x\": 1}";
    expect_refused(t, strlen(t), 0, "x", "key given twice");
}

static void parse_should_find_a_key_given_twice_in_an_object_with_many_keys(void **state)
{
    (void)state;
    char t[8192];
    size_t n = (size_t)snprintf(t, sizeof t, "{");
    for (int i = 0; i < 200; i++)
        n += (size_t)snprintf(t + n, sizeof t - n, "\"k%d\": %d, ", i, i);
    snprintf(t + n, sizeof t - n, "\"k17\": 0}");
    expect_refused(t, strlen(t), 0, "k17", "key given twice");
}

static void parse_should_refuse_a_nul_byte_or_an_escaped_nul(void **state)
{
    (void)state;
    expect_refused("{\"a\": \"x\0y\"}", 12, 1, NULL, "a NUL character");
    expect_refused("{\n\"a\": \"x\\u0000y\"}", 18, 2, NULL, "a NUL character (a NUL byte");
}

static void parse_should_refuse_nesting_deeper_than_the_limit(void **state)
{
    (void)state;
    size_t n = TW_JSON_MAX_DEPTH + 1;
    char *t = malloc(2 * n);
    assert_non_null(t);
    memset(t, '[', n);
    memset(t + n, ']', n);
    t[0] = '{'; /* so the top is still an object once the limit is met */
    expect_refused(t, 2 * n, 1, NULL, "nested deeper than 1000 levels near byte 1000");
    free(t);
}

static void parse_should_refuse_more_values_than_the_limit(void **state)
{
    (void)state;
    size_t n = TW_MAX_JSON_VALUES + 1;
    char *t = malloc(n + 2);
    assert_non_null(t);
    t[0] = '[';
    memset(t + 1, ',', n);
    t[n + 1] = ']';
    expect_refused(t, n + 2, 0, NULL, "more than 5000000 JSON values");
    free(t);
}

static void parse_should_refuse_a_top_level_value_of_another_kind(void **state)
{
    (void)state;
    expect_refused(" [1]", 4, 1, NULL, "expected an object at the top, got an array");
    expect_refused("\"x\"", 3, 1, NULL, "got a string");
}

static void parse_should_build_the_tree_in_an_arena_when_asked(void **state)
{
    (void)state;
    tw_arena a = {0};
    tw_json_spec in_arena = {"an object", TW_JSON_OBJECT, &a};
    tw_diags d;
    tw_diags_init(&d);
    cJSON *root = tw_json_parse("f.json", "{\"a\": \"b\"}", 10, &in_arena, &d);
    assert_non_null(root);
    assert_string_equal(cJSON_GetObjectItem(root, "a")->valuestring, "b");
    tw_json_free(root, &in_arena); /* nothing: the arena owns it */
    tw_arena_free(&a);
    root = tw_json_parse("f.json", "{\"a\": 1, \"a\": 2}", 16, &in_arena, &d);
    assert_null(root);
    tw_arena_free(&a);
    tw_diags_free(&d);
}

/* ---- every reader of a JSON file, the same way ------------------------------------------- */

typedef int (*reader_fn)(const char *text, tw_diags *d);

static int read_site(const char *t, tw_diags *d)
{
    tw_site s;
    int rc = tw_site_load_mem("f.json", t, strlen(t), &s, d);
    tw_site_free(&s);
    return rc;
}

static int read_job(const char *t, tw_diags *d)
{
    tw_jobs j;
    int rc = tw_job_load_mem("f.json", t, strlen(t), &j, d);
    tw_jobs_free(&j);
    return rc == TW_JOB_OK ? 0 : -1;
}

static int read_layout(const char *t, tw_diags *d)
{
    tw_layout l;
    int rc = tw_layout_load_mem("f.json", t, strlen(t), &l, d);
    tw_layout_free(&l);
    return rc;
}

static int read_manifest(const char *t, tw_diags *d)
{
    tw_manifest m;
    int rc = tw_manifest_load_mem("f.json", t, strlen(t), &m, d);
    tw_manifest_close(&m);
    return rc;
}

static int read_results(const char *t, tw_diags *d)
{
    tw_results r;
    int rc = tw_results_read_json("f.json", t, strlen(t), &r, d);
    tw_results_free(&r);
    return rc;
}

static void every_json_reader_should_refuse_trailing_data_and_a_key_given_twice(void **state)
{
    (void)state;
    reader_fn readers[] = {read_site, read_job, read_layout, read_manifest, read_results};
    const char *bad[] = {"{}\n}garbage", "{\"units\": \"in\", \"units\": \"mm\"}",
                         "{\"a\": \"\\u0000\"}", "{\"a\": 1"};
    const long line[] = {2, 0, 1, 1};
    for (size_t i = 0; i < sizeof readers / sizeof readers[0]; i++) {
        for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
            tw_diags d;
            tw_diags_init(&d);
            assert_int_equal(readers[i](bad[k], &d), -1);
            assert_true(d.errors >= 1);
            assert_int_equal(d.items[0].line, line[k]);
            tw_diags_free(&d);
        }
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(parse_should_return_the_tree_of_a_good_object),
        cmocka_unit_test(parse_should_refuse_data_after_the_value_with_its_line_and_byte),
        cmocka_unit_test(parse_should_refuse_text_that_is_not_json_with_its_line_and_byte),
        cmocka_unit_test(parse_should_refuse_a_key_given_twice_naming_its_path),
        cmocka_unit_test(parse_should_find_a_key_given_twice_in_an_object_with_many_keys),
        cmocka_unit_test(parse_should_refuse_a_nul_byte_or_an_escaped_nul),
        cmocka_unit_test(parse_should_refuse_nesting_deeper_than_the_limit),
        cmocka_unit_test(parse_should_refuse_more_values_than_the_limit),
        cmocka_unit_test(parse_should_refuse_a_top_level_value_of_another_kind),
        cmocka_unit_test(parse_should_build_the_tree_in_an_arena_when_asked),
        cmocka_unit_test(every_json_reader_should_refuse_trailing_data_and_a_key_given_twice),
    };
    return cmocka_run_group_tests_name("json", tests, NULL, NULL);
}
