/* test_manifest.c - the JSON manifest reader (registry import) and change lists. */
#include "tw_test.h"

#include "write/tw_manifest.h"
#include "base/tw_util.h"

static void changes_should_list_every_field_that_differs(void **state)
{
    (void)state;
    char *c = tw_manifest_changes("incident_energy=6.3 cal/cm2\nppe_level=K1\n",
                                  "incident_energy=9.1 cal/cm2\nscenario=max\n");
    assert_string_equal(c, "incident_energy: 6.3 cal/cm2 -> 9.1 cal/cm2; scenario: (none) -> max; "
                           "ppe_level: K1 -> (none)");
    free(c);
    c = tw_manifest_changes("a=1\n", "a=1\n");
    assert_string_equal(c, "");
    free(c);
}

static void a_manifest_should_load_with_its_current_index(void **state)
{
    (void)state;
    const char *ok = "{\"format\":\"tagwright-manifest\",\"version\":1,\"labels\":["
        "{\"equipment_id\":\"A\",\"content_hash\":\"x\",\"printed\":\"d\",\"revision\":1,"
        "\"volume\":1,\"page\":1,\"status\":\"superseded\"},"
        "{\"equipment_id\":\"A\",\"content_hash\":\"y\",\"printed\":\"d\",\"revision\":2,"
        "\"volume\":1,\"page\":3,\"status\":\"current\"}]}";
    tw_manifest m;
    tw_diags d;
    tw_diags_init(&d);
    assert_int_equal(tw_manifest_load_mem("m.json", ok, strlen(ok), &m, &d), 0);
    assert_int_equal(m.count, 2);
    assert_int_equal(tw_manifest_current(&m, "A")->revision, 2);
    assert_int_equal(tw_manifest_current(&m, "A")->page, 3);
    tw_manifest_close(&m);
    tw_diags_free(&d);
}

static void malformed_manifest_should_be_an_error_with_a_path_or_line(void **state)
{
    (void)state;
    const char *bad[] = {
        "",
        "[]",
        "{\"format\":\"other\",\"labels\":[]}",
        /* another version, a key given twice, "removed" in a version 1 manifest */
        "{\"format\":\"tagwright-manifest\",\"version\":3,\"labels\":[]}",
        "{\"format\":\"tagwright-manifest\",\"version\":1,\"labels\":[],\"labels\":[]}",
        "{\"format\":\"tagwright-manifest\",\"version\":1,\"labels\":[{\"equipment_id\":\"A\","
        "\"content_hash\":\"x\",\"printed\":\"d\",\"revision\":1,\"volume\":1,\"page\":1,"
        "\"status\":\"removed\"}]}",
        "{\"format\":\"tagwright-manifest\",\"version\":1,\"labels\":{}}",
        "{\"format\":\"tagwright-manifest\",\"version\":1,\"labels\":[1]}",
        "{\"format\":\"tagwright-manifest\",\"version\":1,\"labels\":[{\"equipment_id\":\"A\"}]}",
        "{\"format\":\"tagwright-manifest\",\"version\":1,\"labels\":[{\"equipment_id\":\"A\","
        "\"content_hash\":\"x\",\"printed\":\"d\",\"revision\":1,\"volume\":1,\"page\":1,\"status\":\"current\"},"
        "{\"equipment_id\":\"A\",\"content_hash\":\"y\",\"printed\":\"d\",\"revision\":2,"
        "\"volume\":1,\"page\":1,\"status\":\"current\"}]}",
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        tw_manifest m;
        tw_diags d;
        tw_diags_init(&d);
        assert_int_equal(tw_manifest_load_mem("m.json", bad[i], strlen(bad[i]), &m, &d), -1);
        assert_true(d.errors > 0);
        /* where: a JSON path, or for text that is not a manifest at all a line */
        assert_true(d.items[0].path != NULL || d.items[0].line > 0);
        tw_manifest_close(&m);
        tw_diags_free(&d);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(changes_should_list_every_field_that_differs),
        cmocka_unit_test(a_manifest_should_load_with_its_current_index),
        cmocka_unit_test(malformed_manifest_should_be_an_error_with_a_path_or_line),
    };
    return cmocka_run_group_tests_name("manifest", tests, NULL, NULL);
}
