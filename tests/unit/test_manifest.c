/* test_manifest.c - revisions, supersession, change lists, loading and atomic saving. */
#include "tw_test.h"

#include <unistd.h>

#include "write/tw_manifest.h"
#include "base/tw_util.h"

static tw_manifest_print print_of(const char *id, const char *hash, const char *content,
                                  const char *date, int page)
{
    tw_manifest_print p = {.equipment_id = id, .hash = hash, .content = content,
                           .study_id = "S-1", .printed = date, .output = "labels.pdf",
                           .payload = "https://records.invalid/x", .volume = 1, .page = page};
    return p;
}

static void first_print_should_be_revision_1(void **state)
{
    (void)state;
    tw_manifest m = {0};
    m.lock_fd = -1;
    tw_manifest_print p = print_of("MCC-1", "aa", "nominal_voltage=480 V\n", "2026-01-02", 1);
    assert_int_equal(tw_manifest_record(&m, &p), 1);
    assert_int_equal(tw_manifest_next_revision(&m, "MCC-1", "aa"), 1);
    assert_int_equal(tw_manifest_next_revision(&m, "MCC-1", "bb"), 2);
    assert_int_equal(tw_manifest_next_revision(&m, "MCC-2", "aa"), 1);
    tw_manifest_close(&m);
}

static void same_content_again_should_keep_the_revision(void **state)
{
    (void)state;
    tw_manifest m = {0};
    m.lock_fd = -1;
    tw_manifest_print p = print_of("MCC-1", "aa", "x=1\n", "2026-01-02", 1);
    tw_manifest_record(&m, &p);
    p.page = 7;
    p.printed = "2026-02-03";
    assert_int_equal(tw_manifest_record(&m, &p), 1);
    assert_int_equal(m.count, 1);
    assert_int_equal(m.entries[0].page, 7);
    assert_string_equal(m.entries[0].printed, "2026-02-03");
    tw_manifest_close(&m);
}

static void changed_content_should_supersede_with_a_change_list(void **state)
{
    (void)state;
    tw_manifest m = {0};
    m.lock_fd = -1;
    tw_manifest_print p = print_of("MCC-1", "aa", "incident_energy=6.3 cal/cm2\nppe_level=K1\n",
                                   "2026-01-02", 1);
    tw_manifest_record(&m, &p);
    p = print_of("MCC-1", "bb", "incident_energy=9.1 cal/cm2\nscenario=max\n", "2026-03-04", 1);
    p.reason = "clearing time changed";
    assert_int_equal(tw_manifest_record(&m, &p), 2);
    assert_int_equal(m.count, 2);
    assert_false(m.entries[0].current);
    assert_string_equal(m.entries[0].superseded_on, "2026-03-04");
    assert_true(m.entries[1].current);
    assert_string_equal(m.entries[1].changes, "incident_energy: 6.3 cal/cm2 -> 9.1 cal/cm2; "
                                              "scenario: (none) -> max; ppe_level: K1 -> (none)");
    assert_string_equal(tw_manifest_current(&m, "MCC-1")->content_hash, "bb");
    tw_manifest_close(&m);
}

static void saved_manifest_should_load_back_the_same(void **state)
{
    (void)state;
    char dir[] = "/tmp/tw-manifest-XXXXXX";
    assert_non_null(mkdtemp(dir));
    char *path = tw_asprintf("%s/m.json", dir);
    tw_manifest m;
    tw_diags d;
    tw_diags_init(&d);
    assert_int_equal(tw_manifest_open(path, &m, &d), 0);
    tw_manifest_print p = print_of("SWGR-1", "aa", "a=1\n", "2026-01-02", 3);
    tw_manifest_record(&m, &p);
    p = print_of("SWGR-1", "bb", "a=2\n", "2026-01-05", 3);
    tw_manifest_record(&m, &p);
    char err[256];
    assert_int_equal(tw_manifest_save(&m, err, sizeof err), 0);
    tw_manifest_close(&m);

    assert_int_equal(tw_manifest_open(path, &m, &d), 0);
    assert_int_equal(d.errors, 0);
    assert_int_equal(m.count, 2);
    const tw_manifest_entry *cur = tw_manifest_current(&m, "SWGR-1");
    assert_non_null(cur);
    assert_int_equal(cur->revision, 2);
    assert_string_equal(cur->changes, "a: 1 -> 2");
    assert_int_equal(cur->page, 3);
    tw_manifest_close(&m);
    tw_diags_free(&d);
    char *lock = tw_asprintf("%s.lock", path);
    unlink(path);
    unlink(lock);
    rmdir(dir);
    free(lock);
    free(path);
}

static void malformed_manifest_should_be_an_error_with_a_path_or_line(void **state)
{
    (void)state;
    const char *bad[] = {
        "",
        "[]",
        "{\"format\":\"other\",\"labels\":[]}",
        "{\"format\":\"tagwright-manifest\",\"labels\":{}}",
        "{\"format\":\"tagwright-manifest\",\"labels\":[1]}",
        "{\"format\":\"tagwright-manifest\",\"labels\":[{\"equipment_id\":\"A\"}]}",
        "{\"format\":\"tagwright-manifest\",\"labels\":[{\"equipment_id\":\"A\",\"content_hash\":"
        "\"x\",\"printed\":\"d\",\"revision\":1,\"volume\":1,\"page\":1,\"status\":\"current\"},"
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
        cmocka_unit_test(first_print_should_be_revision_1),
        cmocka_unit_test(same_content_again_should_keep_the_revision),
        cmocka_unit_test(changed_content_should_supersede_with_a_change_list),
        cmocka_unit_test(saved_manifest_should_load_back_the_same),
        cmocka_unit_test(malformed_manifest_should_be_an_error_with_a_path_or_line),
    };
    return cmocka_run_group_tests_name("manifest", tests, NULL, NULL);
}
