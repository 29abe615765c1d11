/* test_permit.c - permit drafts: file names, and PDFs built from a study read from memory and
 * checked with pdftotext (poppler-utils; a missing tool skips that assertion with a message).
 * The study and job are invented (Cedar Hollow water works). */
#include "tw_test.h"

#include <sys/stat.h>
#include <unistd.h>

#include "read/tw_job.h"
#include "rules/tw_label.h"
#include "write/tw_permit_pdf.h"
#include "write/tw_qr.h"
#include "read/tw_results.h"
#include "rules/tw_scenario.h"
#include "read/tw_site.h"
#include "base/tw_util.h"

/* ---- file names --------------------------------------------------------------------------- */

static void file_name_should_keep_a_plain_work_order(void **state)
{
    (void)state;
    char *n = tw_permit_file_name("WO-26.0412_b", 0);
    assert_string_equal(n, "permit-WO-26.0412_b.pdf");
    free(n);
}

static void file_name_should_replace_separators_and_each_non_ascii_character(void **state)
{
    (void)state;
    char *n = tw_permit_file_name("WO/\xc3\x86 ../17", 0);   /* "WO/Æ ../17" */
    assert_string_equal(n, "permit-WO___.__17.pdf");
    assert_null(strchr(n + 1, '/'));
    free(n);
}

static void file_name_without_a_usable_work_order_should_number_the_job(void **state)
{
    (void)state;
    char *a = tw_permit_file_name(NULL, 2), *b = tw_permit_file_name("..//", 0);
    assert_string_equal(a, "permit-job-3.pdf");
    assert_string_equal(b, "permit-job-1.pdf");
    free(a);
    free(b);
}

/* ---- documents ---------------------------------------------------------------------------- */

/* CH-MCC-3: 480 V, two scenarios, the worse 7.81 cal/cm2 at 18 in. CH-SWBD-1: 48.2 cal/cm2,
 * above the default 40 cal/cm2 top PPE level. */
static const char study_csv[] =
    "equipment_id,description,location,study_id,study_date,scenario,nominal_voltage_v,"
    "working_distance_in,incident_energy_cal_cm2,arc_flash_boundary_in\n"
    "CH-MCC-3,Raw water MCC,Pump house,CH-AF-2026,2026-01-10,utility-max,480,18,6.25,49.3\n"
    "CH-MCC-3,Raw water MCC,Pump house,CH-AF-2026,2026-01-10,utility-min,480,18,7.81,56.4\n"
    "CH-SWBD-1,Main switchboard,Room 103,CH-AF-2026,2026-01-10,utility-max,480,24,48.2,294.5\n";

typedef struct {
    tw_results results;
    tw_bus_set buses;
    tw_site site;
    tw_jobs jobs;
    tw_label label;
    tw_diags d;
    char dir[64];
    char path[128];
} fixture;

static int setup(void **state)
{
    fixture *f = calloc(1, sizeof *f);
    if (!f)
        return -1;
    tw_diags_init(&f->d);
    snprintf(f->dir, sizeof f->dir, "/tmp/tw-permit-XXXXXX");
    if (!mkdtemp(f->dir))
        return -1;
    snprintf(f->path, sizeof f->path, "%s/permit.pdf", f->dir);
    if (tw_results_read_csv("study.csv", study_csv, strlen(study_csv), &f->results, &f->d) != 0 ||
        tw_bus_set_build(&f->results, &f->buses) != 0 || tw_site_defaults(&f->site) != 0)
        return -1;
    *state = f;
    return 0;
}

static int teardown(void **state)
{
    fixture *f = *state;
    unlink(f->path);
    rmdir(f->dir);
    tw_label_free(&f->label);
    tw_jobs_free(&f->jobs);
    tw_site_free(&f->site);
    tw_bus_set_free(&f->buses);
    tw_results_free(&f->results);
    tw_diags_free(&f->d);
    free(f);
    return 0;
}

/* Write the permit for a job on equipment eq; returns the page count. */
static int write_permit(fixture *f, const char *eq, const char *job_json)
{
    assert_int_equal(tw_job_load_mem("job.json", job_json, strlen(job_json), &f->jobs, &f->d),
                     TW_JOB_OK);
    const tw_bus *bus = tw_bus_set_find(&f->buses, eq);
    assert_non_null(bus);
    assert_int_equal(tw_label_derive(bus, &f->site, "2026-02-01", &f->label, &f->d), 0);
    char *payload = tw_qr_payload(f->site.record_link, "CH-AF-2026", eq, 1, f->label.hash);
    tw_permit p = {&f->jobs.jobs[0], &f->label, bus, &f->site, payload, 1, "2026-02-01",
                   TW_PAPER_LETTER};
    char err[512] = "";
    int pages = tw_permit_write(&p, f->path, err, sizeof err);
    if (pages < 0)
        fail_msg("tw_permit_write: %s", err);
    free(payload);
    return pages;
}

/* The text of the PDF (pdftotext, reading order), or NULL when pdftotext is missing. */
static char *pdf_text(const char *path)
{
    if (system("command -v pdftotext >/dev/null 2>&1") != 0) {
        print_message("pdftotext not installed: text assertions skipped\n");
        return NULL;
    }
    char *cmd = tw_asprintf("pdftotext '%s' - 2>/dev/null", path);
    FILE *p = cmd ? popen(cmd, "r") : NULL;
    free(cmd);
    if (!p)
        return NULL;
    size_t cap = 1 << 16, n = 0, got;
    char *buf = malloc(cap + 1);
    while (buf && (got = fread(buf + n, 1, cap - n, p)) > 0) {
        n += got;
        if (n == cap) {
            char *grown = realloc(buf, 2 * cap + 1);
            if (!grown)
                break;
            buf = grown;
            cap *= 2;
        }
    }
    pclose(p);
    if (buf)
        buf[n] = '\0';
    return buf;
}

static void permit_should_carry_the_study_values_and_both_limited_approach_boundaries(void **state)
{
    fixture *f = *state;
    assert_true(write_permit(f, "CH-MCC-3", "{\"work_order\": \"WO-9\", \"equipment_id\": "
                             "\"CH-MCC-3\"}") >= 1);
    char *t = pdf_text(f->path);
    if (!t)
        return;
    assert_non_null(strstr(t, "DRAFT - NOT VALID UNTIL SIGNED"));
    /* NFPA 70E Table 130.4(E)(a), 151-750 V: limited approach 10 ft 0 in (movable conductor),
     * 3 ft 6 in (fixed circuit part), restricted 1 ft 0 in. */
    assert_non_null(strstr(t, "10 ft 0 in"));
    assert_non_null(strstr(t, "3 ft 6 in"));
    assert_non_null(strstr(t, "1 ft 0 in"));
    /* ASTM D120: class 00, maximum use 500 V AC, covers 480 V. */
    assert_non_null(strstr(t, "Class 00"));
    /* the worse scenario, rounded up to 0.1 cal/cm2 as on the label */
    assert_non_null(strstr(t, "7.9 cal/cm2"));
    assert_non_null(strstr(t, "utility-min"));
    assert_non_null(strstr(t, "(not given)"));   /* job fields left out are visible blanks */
    assert_null(strstr(t, "NO PPE IS ADEQUATE"));
    free(t);
}

static void permit_above_every_ppe_level_should_open_with_the_no_ppe_statement(void **state)
{
    fixture *f = *state;
    assert_true(write_permit(f, "CH-SWBD-1", "{\"equipment_id\": \"CH-SWBD-1\"}") >= 1);
    assert_true(tw_permit_no_ppe_adequate(&f->label));
    char *t = pdf_text(f->path);
    if (!t)
        return;
    char *alert = strstr(t, "NO PPE IS ADEQUATE");
    char *first = strstr(t, "About this draft");
    assert_non_null(alert);
    assert_non_null(first);
    assert_true(alert < first);   /* the first section of the permit */
    assert_non_null(strstr(t, "NOT BE PERFORMED"));
    free(t);
}

static void permit_to_a_missing_directory_should_fail_and_write_nothing(void **state)
{
    fixture *f = *state;
    const char *job = "{\"equipment_id\": \"CH-MCC-3\"}";
    assert_int_equal(tw_job_load_mem("job.json", job, strlen(job), &f->jobs, &f->d), TW_JOB_OK);
    const tw_bus *bus = tw_bus_set_find(&f->buses, "CH-MCC-3");
    assert_int_equal(tw_label_derive(bus, &f->site, "2026-02-01", &f->label, &f->d), 0);
    tw_permit p = {&f->jobs.jobs[0], &f->label, bus, &f->site, "https://records.invalid/x", 1,
                   "2026-02-01", TW_PAPER_A4};
    char err[512] = "", path[160];
    snprintf(path, sizeof path, "%s/no-such-dir/permit.pdf", f->dir);
    assert_int_equal(tw_permit_write(&p, path, err, sizeof err), -1);
    assert_true(err[0] != '\0');
    struct stat st;
    assert_int_not_equal(stat(path, &st), 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(file_name_should_keep_a_plain_work_order),
        cmocka_unit_test(file_name_should_replace_separators_and_each_non_ascii_character),
        cmocka_unit_test(file_name_without_a_usable_work_order_should_number_the_job),
        cmocka_unit_test_setup_teardown(permit_should_carry_the_study_values_and_both_limited_approach_boundaries, setup, teardown),
        cmocka_unit_test_setup_teardown(permit_above_every_ppe_level_should_open_with_the_no_ppe_statement, setup, teardown),
        cmocka_unit_test_setup_teardown(permit_to_a_missing_directory_should_fail_and_write_nothing, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
