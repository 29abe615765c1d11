/* test_registry.c - the SQLite label registry: schema versions, what it refuses to open,
 * revisions and their status, change control, removed equipment, export and import. */
#include "tw_test.h"

#include <sqlite3.h>
#include <unistd.h>

#include "base/tw_exit.h"
#include "base/tw_util.h"
#include "write/tw_registry.h"

static char dir[64];

static int make_dir(void **state)
{
    (void)state;
    snprintf(dir, sizeof dir, "/tmp/tw-registry-XXXXXX");
    return mkdtemp(dir) ? 0 : -1;
}

static int remove_dir(void **state)
{
    (void)state;
    char *cmd = tw_asprintf("rm -rf '%s'", dir);
    int rc = cmd ? system(cmd) : -1;
    free(cmd);
    return rc == 0 ? 0 : -1;
}

/* A fresh path in the test directory (caller frees). */
static char *path_of(const char *name)
{
    return tw_asprintf("%s/%s", dir, name);
}

static tw_registry_print print_of(const char *id, const char *hash, const char *content, int page)
{
    tw_registry_print p = {.equipment_id = id, .hash = hash, .content = content,
                           .payload = "HTTPS://RECORDS.INVALID/X", .study_id = "S-1",
                           .study_date = "2026-01-01", .output = "labels.pdf", .volume = 1,
                           .page = page, .hazard = {0, 4.0, -1, 4.0, 900, 8}};
    return p;
}

/* Record prints in one run (no files staged). */
static int record(tw_registry *r, const tw_registry_print *p, size_t n, const char *date)
{
    char err[512];
    long long run = 0;
    if (tw_registry_stage(r, NULL, NULL, 0, &run, err, sizeof err) != 0)
        return -1;
    if (tw_registry_record(r, run, p, n, NULL, 0, date, err, sizeof err) != 0)
        return -1;
    return tw_registry_finish(r, run, err, sizeof err);
}

static int sql_int(const char *path, const char *sql)
{
    sqlite3 *db;
    sqlite3_stmt *st;
    int v = -1;
    if (sqlite3_open(path, &db) == SQLITE_OK &&
        sqlite3_prepare_v2(db, sql, -1, &st, NULL) == SQLITE_OK) {
        if (sqlite3_step(st) == SQLITE_ROW)
            v = sqlite3_column_int(st, 0);
        sqlite3_finalize(st);
    }
    sqlite3_close(db);
    return v;
}

static void sql_exec(const char *path, const char *sql)
{
    sqlite3 *db;
    assert_int_equal(sqlite3_open(path, &db), SQLITE_OK);
    assert_int_equal(sqlite3_exec(db, sql, NULL, NULL, NULL), SQLITE_OK);
    sqlite3_close(db);
}

static void a_new_registry_should_get_the_schema_in_wal_mode(void **state)
{
    (void)state;
    char *p = path_of("new.registry"), err[512];
    tw_registry r;
    assert_int_equal(tw_registry_open(&r, p, 1, err, sizeof err), 0);
    tw_registry_close(&r);
    assert_int_equal(sql_int(p, "PRAGMA user_version"), TW_REGISTRY_SCHEMA);
    assert_int_equal(sql_int(p, "SELECT journal_mode = 'wal' FROM pragma_journal_mode"), 1);
    assert_int_equal(sql_int(p, "SELECT count(*) FROM sqlite_master WHERE name = 'revisions'"), 1);
    free(p);
}

static void a_reader_should_not_create_a_registry(void **state)
{
    (void)state;
    char *p = path_of("absent.registry"), err[512];
    tw_registry r;
    assert_int_equal(tw_registry_open(&r, p, 0, err, sizeof err), TW_EXIT_IO);
    assert_int_equal(access(p, F_OK), -1);
    assert_non_null(strstr(err, "no registry here"));
    free(p);
}

static void a_registry_from_a_newer_build_should_be_refused(void **state)
{
    (void)state;
    char *p = path_of("newer.registry"), err[512];
    tw_registry r;
    assert_int_equal(tw_registry_open(&r, p, 1, err, sizeof err), 0);
    tw_registry_close(&r);
    sql_exec(p, "PRAGMA user_version = 99");
    assert_int_equal(tw_registry_open(&r, p, 1, err, sizeof err), TW_EXIT_DATA);
    assert_non_null(strstr(err, "schema version 99"));
    free(p);
}

static void another_database_or_a_json_manifest_should_be_refused(void **state)
{
    (void)state;
    char *db = path_of("other.sqlite"), *json = path_of("old.manifest.json"), err[512];
    sql_exec(db, "CREATE TABLE t(x)");
    tw_registry r;
    assert_int_equal(tw_registry_open(&r, db, 1, err, sizeof err), TW_EXIT_DATA);
    assert_non_null(strstr(err, "not a tagwright registry"));
    FILE *f = fopen(json, "w");
    assert_non_null(f);
    fputs("{\"format\": \"tagwright-manifest\"}\n", f);
    fclose(f);
    assert_int_equal(tw_registry_open(&r, json, 1, err, sizeof err), TW_EXIT_DATA);
    assert_non_null(strstr(err, "tagwright registry import"));
    free(db);
    free(json);
}

static void a_symlink_should_open_the_real_file(void **state)
{
    (void)state;
    char *real = path_of("real.registry"), *link = path_of("link.registry"), err[512];
    tw_registry r;
    assert_int_equal(tw_registry_open(&r, real, 1, err, sizeof err), 0);
    tw_registry_close(&r);
    assert_int_equal(symlink(real, link), 0);
    assert_int_equal(tw_registry_open(&r, link, 1, err, sizeof err), 0);
    char *resolved = realpath(real, NULL);
    assert_string_equal(r.path, resolved); /* one lock, one database, whichever name */
    tw_registry_close(&r);
    free(resolved);
    free(real);
    free(link);
}

static void printing_should_keep_or_supersede_revisions(void **state)
{
    (void)state;
    char *p = path_of("revisions.registry"), err[512];
    tw_registry r;
    assert_int_equal(tw_registry_open(&r, p, 1, err, sizeof err), 0);
    tw_registry_print a = print_of("MCC-1", "aa", "incident_energy=4.0 cal/cm2\n", 1);
    assert_int_equal(record(&r, &a, 1, "2026-01-02"), 0);
    a.page = 7; /* same content again: same revision, new place */
    assert_int_equal(record(&r, &a, 1, "2026-02-03"), 0);
    tw_revision v = {0};
    assert_int_equal(tw_registry_current(&r, "MCC-1", &v, err, sizeof err), 1);
    assert_int_equal(v.revision, 1);
    assert_int_equal(v.page, 7);
    tw_revision_free(&v);
    tw_registry_print b = print_of("MCC-1", "bb", "incident_energy=9.1 cal/cm2\n", 1);
    assert_int_equal(record(&r, &b, 1, "2026-03-04"), 0);
    assert_int_equal(tw_registry_current(&r, "mcc-1", &v, err, sizeof err), 1); /* any case */
    assert_int_equal(v.revision, 2);
    assert_string_equal(v.changes, "incident_energy: 4.0 cal/cm2 -> 9.1 cal/cm2");
    tw_revision_free(&v);
    int hash_seen = 0;
    assert_int_equal(tw_registry_find(&r, "aa", "HTTPS://RECORDS.INVALID/X", &v, &hash_seen, err,
                                      sizeof err), 1);
    assert_int_equal(v.status, TW_REV_SUPERSEDED);
    assert_string_equal(v.superseded_on, "2026-03-04");
    tw_revision_free(&v);
    int rev = 0;
    assert_int_equal(tw_registry_next_revision(&r, "MCC-1", "bb", &rev, err, sizeof err), 0);
    assert_int_equal(rev, 2);
    assert_int_equal(tw_registry_next_revision(&r, "MCC-1", "cc", &rev, err, sizeof err), 0);
    assert_int_equal(rev, 3);
    tw_registry_close(&r);
    free(p);
}

static void an_id_differing_only_in_case_should_be_refused(void **state)
{
    (void)state;
    char *p = path_of("case.registry"), err[512];
    tw_registry r;
    assert_int_equal(tw_registry_open(&r, p, 1, err, sizeof err), 0);
    tw_registry_print a = print_of("MCC-1", "aa", "x=1\n", 1);
    assert_int_equal(record(&r, &a, 1, "2026-01-02"), 0);
    tw_registry_print b = print_of("mcc-1", "bb", "x=2\n", 1);
    assert_int_not_equal(record(&r, &b, 1, "2026-01-03"), 0);
    char *other = tw_registry_other_spelling(&r, "mcc-1");
    assert_string_equal(other, "MCC-1");
    free(other);
    assert_int_equal(sql_int(p, "SELECT count(*) FROM revisions"), 1); /* nothing recorded */
    tw_registry_close(&r);
    free(p);
}

static void removed_equipment_should_be_found_as_removed(void **state)
{
    (void)state;
    char *p = path_of("removed.registry"), err[512];
    tw_registry r;
    assert_int_equal(tw_registry_open(&r, p, 1, err, sizeof err), 0);
    tw_registry_print a = print_of("OLD-1", "aa", "x=1\n", 1);
    assert_int_equal(record(&r, &a, 1, "2026-01-02"), 0);
    const char *gone[] = {"OLD-1"};
    assert_int_equal(tw_registry_remove(&r, gone, 1, "2026-05-01", "study R2", err, sizeof err), 0);
    tw_revision v = {0};
    assert_int_equal(tw_registry_current(&r, "OLD-1", &v, err, sizeof err), 0);
    int seen;
    assert_int_equal(tw_registry_find(&r, "aa", a.payload, &v, &seen, err, sizeof err), 1);
    assert_int_equal(v.status, TW_REV_REMOVED);
    assert_string_equal(v.removed_on, "2026-05-01");
    tw_revision_free(&v);
    tw_registry_close(&r);
    free(p);
}

/* Property: over many generated pairs, tw_hazard_lowered() names something exactly when some
 * known value went down (signal word, energy, category, arc rating, boundary, PPE level), and
 * nothing when every value stayed or rose. */
static void lowered_should_be_empty_exactly_when_nothing_went_down(void **state)
{
    (void)state;
    srand(15);
    for (int i = 0; i < 20000; i++) {
        tw_hazard o = {rand() % 3 - 1, rand() % 50 - 1, rand() % 6 - 1, rand() % 50 - 1,
                       rand() % 9000 - 1, rand() % 4 ? rand() % 41 - 1 : 1e9};
        tw_hazard n = o;
        double *f[] = {&n.incident_energy_cal, &n.arc_rating_cal, &n.boundary_mm,
                       &n.ppe_level_cal};
        int k = rand() % 6;
        if (k < 4)
            *f[k] += rand() % 7 - 3;
        else if (k == 4)
            n.ppe_category += rand() % 3 - 1;
        else
            n.signal = rand() % 2;
        int down = (o.signal == 1 && n.signal == 0) ||
                   (o.incident_energy_cal >= 0 && n.incident_energy_cal >= 0 &&
                    n.incident_energy_cal < o.incident_energy_cal) ||
                   (o.ppe_category >= 0 && n.ppe_category >= 0 && n.ppe_category < o.ppe_category) ||
                   (o.arc_rating_cal >= 0 && n.arc_rating_cal >= 0 &&
                    n.arc_rating_cal < o.arc_rating_cal) ||
                   (o.boundary_mm >= 0 && n.boundary_mm >= 0 && n.boundary_mm < o.boundary_mm) ||
                   (o.ppe_level_cal >= 0 && n.ppe_level_cal >= 0 &&
                    n.ppe_level_cal < o.ppe_level_cal);
        char *t = tw_hazard_lowered(&o, &n);
        assert_non_null(t);
        assert_int_equal(*t != '\0', down);
        free(t);
    }
}

/* A label with the numbers change control reads (the rest of its content is not needed). */
static void label_of(tw_label *l, const char *id, double cal, int danger)
{
    memset(l, 0, sizeof *l);
    char buf[32];
    tw_label_set(l, TW_L_EQUIPMENT_ID, id);
    tw_label_set(l, TW_L_SIGNAL_WORD, danger ? "DANGER" : "WARNING");
    snprintf(buf, sizeof buf, "%.1f cal/cm2", cal);
    tw_label_set(l, TW_L_INCIDENT_ENERGY, buf);
    tw_label_set(l, TW_L_MIN_ARC_RATING, buf);
    l->signal = danger ? TW_SIGNAL_DANGER : TW_SIGNAL_WARNING;
    l->incident_energy_cal = l->arc_rating_cal = cal;
    tw_label_rehash(l);
}

static void a_plan_should_name_what_a_revision_lowers(void **state)
{
    (void)state;
    char *p = path_of("plan.registry"), err[512];
    tw_registry r;
    assert_int_equal(tw_registry_open(&r, p, 1, err, sizeof err), 0);
    tw_registry_print a = print_of("SWGR-1", "aa", "x=1\n", 1);
    a.hazard = (tw_hazard){1, 41.8, -1, 41.8, -1, -1};
    assert_int_equal(record(&r, &a, 1, "2026-01-02"), 0);
    tw_label l[3];
    label_of(&l[0], "SWGR-1", 8.4, 0);   /* DANGER 41.8 -> WARNING 8.4: lowered */
    label_of(&l[1], "NEW-1", 2.0, 0);    /* new equipment: nothing to lower */
    label_of(&l[2], "swgr-1", 50.0, 1);  /* the same equipment spelt otherwise */
    int rev[3];
    char *low[3] = {0};
    assert_int_equal(tw_registry_plan(&r, l, 2, NULL, rev, low, err, sizeof err), 0);
    assert_int_equal(rev[0], 2);
    assert_int_equal(rev[1], 1);
    assert_non_null(strstr(low[0], "signal word DANGER -> WARNING"));
    assert_non_null(strstr(low[0], "incident energy 41.8 -> 8.4 cal/cm2"));
    assert_string_equal(low[1], "");
    free(low[0]);
    free(low[1]);
    low[0] = low[1] = NULL;
    assert_int_equal(tw_registry_plan(&r, &l[2], 1, NULL, rev, low, err, sizeof err),
                     TW_EXIT_DATA);
    assert_non_null(strstr(err, "differs only in case"));
    free(low[0]);
    for (int i = 0; i < 3; i++)
        tw_label_free(&l[i]);
    tw_registry_close(&r);
    free(p);
}

static char *read_all(FILE *f)
{
    fflush(f);
    long n = ftell(f);
    rewind(f);
    char *s = calloc((size_t)n + 1, 1);
    if (s && fread(s, 1, (size_t)n, f) != (size_t)n) {
        free(s);
        return NULL;
    }
    return s;
}

static void an_export_should_import_into_the_same_registry_content(void **state)
{
    (void)state;
    char *p = path_of("export.registry"), *q = path_of("import.registry"), err[512];
    tw_registry r, r2;
    assert_int_equal(tw_registry_open(&r, p, 1, err, sizeof err), 0);
    /* real canonical forms, so that the import's hash check passes */
    tw_label l;
    label_of(&l, "MCC-1", 15.3, 0);
    char *c1 = tw_label_canonical(&l);
    tw_registry_print a = print_of("MCC-1", l.hash, c1, 1);
    assert_int_equal(record(&r, &a, 1, "2026-01-02"), 0);
    tw_label_free(&l);
    label_of(&l, "MCC-1", 3.2, 0);
    char *c2 = tw_label_canonical(&l);
    tw_registry_print b = print_of("MCC-1", l.hash, c2, 2);
    b.approved_by = "P. Engineer";
    b.reason = "re-run study";
    b.lowered = "incident energy 15.3 -> 3.2 cal/cm2";
    assert_int_equal(record(&r, &b, 1, "2026-02-02"), 0);
    FILE *f1 = tmpfile(), *f2 = tmpfile();
    assert_int_equal(tw_registry_export(&r, f1, 0, NULL, err, sizeof err), 0);
    char *json = read_all(f1);
    assert_non_null(strstr(json, "\"approved_by\":\"P. Engineer\""));
    assert_int_equal(tw_registry_open(&r2, q, 1, err, sizeof err), 0);
    size_t count = 0;
    assert_int_equal(tw_registry_import(&r2, "export.json", json, strlen(json), &count, err,
                                        sizeof err), 0);
    assert_int_equal(count, 2);
    assert_int_equal(tw_registry_export(&r2, f2, 0, NULL, err, sizeof err), 0);
    char *json2 = read_all(f2);
    assert_string_equal(json, json2);
    /* importing again is refused: the equipment is already there, and nothing is added */
    assert_int_equal(tw_registry_import(&r2, "export.json", json, strlen(json), &count, err,
                                        sizeof err), TW_EXIT_DATA);
    assert_non_null(strstr(err, "already in the registry"));
    /* the imported hazard is read back from the content: lowering it again is caught */
    tw_label_free(&l);
    label_of(&l, "MCC-1", 1.0, 0);
    int rev;
    char *low = NULL;
    assert_int_equal(tw_registry_plan(&r2, &l, 1, NULL, &rev, &low, err, sizeof err), 0);
    assert_non_null(strstr(low, "incident energy 3.2 -> 1.0 cal/cm2"));
    free(low);
    tw_label_free(&l);
    fclose(f1);
    fclose(f2);
    free(json);
    free(json2);
    free(c1);
    free(c2);
    tw_registry_close(&r);
    tw_registry_close(&r2);
    free(p);
    free(q);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(a_new_registry_should_get_the_schema_in_wal_mode),
        cmocka_unit_test(a_reader_should_not_create_a_registry),
        cmocka_unit_test(a_registry_from_a_newer_build_should_be_refused),
        cmocka_unit_test(another_database_or_a_json_manifest_should_be_refused),
        cmocka_unit_test(a_symlink_should_open_the_real_file),
        cmocka_unit_test(printing_should_keep_or_supersede_revisions),
        cmocka_unit_test(an_id_differing_only_in_case_should_be_refused),
        cmocka_unit_test(removed_equipment_should_be_found_as_removed),
        cmocka_unit_test(lowered_should_be_empty_exactly_when_nothing_went_down),
        cmocka_unit_test(a_plan_should_name_what_a_revision_lowers),
        cmocka_unit_test(an_export_should_import_into_the_same_registry_content),
    };
    return cmocka_run_group_tests_name("registry", tests, make_dir, remove_dir);
}
