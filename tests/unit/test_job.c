/* test_job.c - job files for permits (docs/permit.md): one job or a batch, findings that name
 * the JSON path, blanks for what was not given, limits that never truncate. The jobs are
 * invented. */
#include "tw_test.h"

#include "read/tw_job.h"
#include "base/tw_util.h"

typedef struct {
    tw_jobs jobs;
    tw_diags d;
} fixture;

static int setup(void **state)
{
    fixture *f = calloc(1, sizeof *f);
    if (!f)
        return -1;
    tw_diags_init(&f->d);
    *state = f;
    return 0;
}

static int teardown(void **state)
{
    fixture *f = *state;
    tw_jobs_free(&f->jobs);
    tw_diags_free(&f->d);
    free(f);
    return 0;
}

static int load(fixture *f, const char *json)
{
    tw_jobs_free(&f->jobs);
    tw_diags_free(&f->d);
    return tw_job_load_mem("job.json", json, strlen(json), &f->jobs, &f->d);
}

/* The first finding at a JSON path (NULL path: one about the file as a whole), or NULL. */
static const tw_diag *finding_at(const fixture *f, const char *path)
{
    for (size_t i = 0; i < f->d.count; i++) {
        const char *p = f->d.items[i].path;
        if ((!path && !p) || (path && p && !strcmp(p, path)))
            return &f->d.items[i];
    }
    return NULL;
}

static void one_job_object_should_load_as_a_single_job_with_every_field(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"work_order\": \"WO-7\", \"equipment_id\": \"CH-MCC-3\","
                             " \"location\": \"Pump house\", \"work_description\": \"Measure\","
                             " \"justification\": \"Diagnostic testing\","
                             " \"safe_work_practices\": [\"Insulated tools\", \"Barrier\"],"
                             " \"access_restriction\": \"Attendant\", \"planned_date\": "
                             "\"2026-03-04\", \"crew\": [{\"name\": \"A. Byrd\", \"qualified\":"
                             " true}, \"C. Dunn\"], \"job_hazards\": \"Wet floor\","
                             " \"approvers\": [{\"role\": \"safety_management\", \"name\": "
                             "\"E. Frost\", \"title\": \"Safety lead\"}]}"),
                     TW_JOB_OK);
    assert_int_equal(f->jobs.count, 1);
    assert_int_equal(f->jobs.batch, 0);
    const tw_job *j = &f->jobs.jobs[0];
    assert_string_equal(j->path, "");
    assert_string_equal(j->work_order, "WO-7");
    assert_string_equal(j->equipment_id, "CH-MCC-3");
    assert_string_equal(j->planned_date, "2026-03-04");
    assert_int_equal(j->safe_work_practice_count, 2);
    assert_string_equal(j->safe_work_practices[1], "Barrier");
    assert_int_equal(j->job_hazard_count, 1);   /* a single string is a list of one */
    assert_string_equal(j->job_hazards[0], "Wet floor");
    assert_int_equal(j->crew_count, 2);
    assert_int_equal(j->crew[0].qualified, TW_QUALIFIED_YES);
    assert_string_equal(j->crew[1].name, "C. Dunn");
    assert_int_equal(j->crew[1].qualified, TW_QUALIFIED_UNKNOWN);
    assert_int_equal(j->approver_count, 1);
    assert_string_equal(j->approvers[0].role, "safety_management");
    assert_string_equal(j->approvers[0].title, "Safety lead");
    assert_int_equal(f->d.count, 0);
}

static void array_of_jobs_should_load_as_a_batch_with_indexed_paths(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "[{\"equipment_id\": \"A-1\"}, {\"equipment_id\": \"B-2\","
                             " \"crew\": [{\"name\": \"X\", \"qualified\": \"yes\"}]}]"),
                     TW_JOB_BAD);
    assert_int_equal(f->jobs.batch, 1);
    assert_int_equal(f->jobs.count, 2);
    assert_string_equal(f->jobs.jobs[1].path, "[1]");
    const tw_diag *g = finding_at(f, "[1].crew[0].qualified");
    assert_non_null(g);
    assert_int_equal(g->severity, TW_ERROR);
    assert_string_equal(g->equipment_id, "B-2");
    assert_non_null(strstr(g->message, "true or false"));
}

static void missing_fields_should_be_left_empty_for_the_permit_to_show_as_blanks(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"equipment_id\": \"A-1\", \"justification\": \"   \", "
                             "\"location\": null}"),
                     TW_JOB_OK);
    const tw_job *j = &f->jobs.jobs[0];
    assert_null(j->work_order);
    assert_null(j->justification);   /* blank text counts as not given */
    assert_null(j->location);
    assert_int_equal(j->crew_count, 0);
}

static void job_without_equipment_id_should_be_refused(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"work_order\": \"WO-1\"}"), TW_JOB_BAD);
    const tw_diag *g = finding_at(f, "equipment_id");
    assert_non_null(g);
    assert_string_equal(g->field, "equipment_id");
    assert_non_null(strstr(g->message, "missing"));
}

static void unknown_key_should_be_a_warning_only(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"equipment_id\": \"A-1\", \"colour\": \"red\"}"), TW_JOB_OK);
    const tw_diag *g = finding_at(f, "colour");
    assert_non_null(g);
    assert_int_equal(g->severity, TW_WARNING);
}

static void key_given_twice_should_be_an_error(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"equipment_id\": \"A-1\", \"equipment_id\": \"B-2\"}"),
                     TW_JOB_BAD);
    assert_non_null(strstr(finding_at(f, "equipment_id")->message, "twice"));
}

static void text_over_the_limit_should_be_an_error_never_truncated(void **state)
{
    fixture *f = *state;
    size_t n = TW_JOB_MAX_ID_BYTES + 1;
    char *long_id = malloc(n + 1);
    assert_non_null(long_id);
    memset(long_id, 'A', n);
    long_id[n] = '\0';
    char *json = tw_asprintf("{\"equipment_id\": \"A-1\", \"work_order\": \"%s\"}", long_id);
    assert_int_equal(load(f, json), TW_JOB_BAD);
    assert_non_null(strstr(finding_at(f, "work_order")->message, "longer than 64 bytes"));
    assert_null(f->jobs.jobs[0].work_order);
    free(json);
    free(long_id);
}

static void line_breaks_should_be_allowed_in_free_text_only(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"equipment_id\": \"A-1\", \"justification\": \"one\\ntwo\"}"),
                     TW_JOB_OK);
    assert_string_equal(f->jobs.jobs[0].justification, "one\ntwo");
    assert_int_equal(load(f, "{\"equipment_id\": \"A-1\", \"work_order\": \"W\\nO\"}"),
                     TW_JOB_BAD);
    assert_non_null(finding_at(f, "work_order"));
    assert_int_equal(load(f, "{\"equipment_id\": \"A-1\", \"location\": \"tab\\there\"}"),
                     TW_JOB_BAD);
}

static void planned_date_should_be_a_calendar_date(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"equipment_id\": \"A-1\", \"planned_date\": \"2026-02-30\"}"),
                     TW_JOB_BAD);
    assert_non_null(strstr(finding_at(f, "planned_date")->message, "YYYY-MM-DD"));
    assert_int_equal(load(f, "{\"equipment_id\": \"A-1\", \"planned_date\": \"2028-02-29\"}"),
                     TW_JOB_OK);
}

static void approver_without_role_should_be_an_error(void **state)
{
    fixture *f = *state;
    assert_int_equal(load(f, "{\"equipment_id\": \"A-1\", \"approvers\": [{\"name\": \"Z\"}]}"),
                     TW_JOB_BAD);
    assert_non_null(finding_at(f, "approvers[0].role"));
}

static void list_over_the_item_limit_should_be_an_error(void **state)
{
    fixture *f = *state;
    size_t cap = 64 + 6 * (TW_JOB_MAX_ITEMS + 1);
    char *json = malloc(cap);
    assert_non_null(json);
    strcpy(json, "{\"equipment_id\": \"A-1\", \"job_hazards\": [");
    for (int i = 0; i <= TW_JOB_MAX_ITEMS; i++)
        strcat(json, i ? ",\"h\"" : "\"h\"");
    strcat(json, "]}");
    assert_int_equal(load(f, json), TW_JOB_BAD);
    assert_non_null(strstr(finding_at(f, "job_hazards")->message, "more than"));
    free(json);
}

static void malformed_files_should_be_refused_with_a_finding_not_a_crash(void **state)
{
    fixture *f = *state;
    static const char *const bad[] = {
        "", "{", "[", "null", "42", "\"job\"", "[]", "[1, 2]", "{} trailing",
        "{\"equipment_id\": 5}", "{\"equipment_id\": \"A\", \"crew\": {}}",
        "{\"equipment_id\": \"A\", \"crew\": [[]]}", "{\"equipment_id\": \"\\u0001\"}",
        "{\"equipment_id\": \"A\", \"approvers\": [1]}", "[[{\"equipment_id\": \"A\"}]]",
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        assert_int_equal(load(f, bad[i]), TW_JOB_BAD);
        assert_true(f->d.errors > 0);
    }
    assert_int_equal(load(f, "\n\n{\"equipment_id\": }"), TW_JOB_BAD);
    assert_int_equal(f->d.items[0].line, 3);   /* the parse error names its line */
}

static void unreadable_file_should_say_so(void **state)
{
    fixture *f = *state;
    tw_jobs_free(&f->jobs);
    assert_int_equal(tw_job_load("/nonexistent/job.json", &f->jobs, &f->d), TW_JOB_UNREADABLE);
    assert_non_null(strstr(f->d.items[0].message, "/nonexistent/job.json"));
}

static void freeing_a_zeroed_set_should_be_harmless(void **state)
{
    (void)state;
    tw_jobs j;
    memset(&j, 0, sizeof j);
    tw_jobs_free(&j);
    tw_jobs_free(NULL);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(one_job_object_should_load_as_a_single_job_with_every_field, setup, teardown),
        cmocka_unit_test_setup_teardown(array_of_jobs_should_load_as_a_batch_with_indexed_paths, setup, teardown),
        cmocka_unit_test_setup_teardown(missing_fields_should_be_left_empty_for_the_permit_to_show_as_blanks, setup, teardown),
        cmocka_unit_test_setup_teardown(job_without_equipment_id_should_be_refused, setup, teardown),
        cmocka_unit_test_setup_teardown(unknown_key_should_be_a_warning_only, setup, teardown),
        cmocka_unit_test_setup_teardown(key_given_twice_should_be_an_error, setup, teardown),
        cmocka_unit_test_setup_teardown(text_over_the_limit_should_be_an_error_never_truncated, setup, teardown),
        cmocka_unit_test_setup_teardown(line_breaks_should_be_allowed_in_free_text_only, setup, teardown),
        cmocka_unit_test_setup_teardown(planned_date_should_be_a_calendar_date, setup, teardown),
        cmocka_unit_test_setup_teardown(approver_without_role_should_be_an_error, setup, teardown),
        cmocka_unit_test_setup_teardown(list_over_the_item_limit_should_be_an_error, setup, teardown),
        cmocka_unit_test_setup_teardown(malformed_files_should_be_refused_with_a_finding_not_a_crash, setup, teardown),
        cmocka_unit_test_setup_teardown(unreadable_file_should_say_so, setup, teardown),
        cmocka_unit_test(freeing_a_zeroed_set_should_be_harmless),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
