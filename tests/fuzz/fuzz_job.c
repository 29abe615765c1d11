/* fuzz_job.c - libFuzzer harness: job file reader. Every job it accepts gets a permit file name,
 * which must stay inside its directory: no '/', no leading '.', no "..", nothing outside ASCII
 * letters, digits, '-', '_' and '.' (tw_permit.h); anything else is reported as a crash. */
#include <stdint.h>

#include "fuzz_common.h"
#include "read/tw_job.h"
#include "write/tw_permit_pdf.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static int safe_file_name(const char *s)
{
    if (!s[0] || s[0] == '.' || strstr(s, ".."))
        return 0;
    for (const char *p = s; *p; p++) {
        char c = *p;
        int ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
                 c == '-' || c == '_' || c == '.';
        if (!ok)
            return 0;
    }
    return 1;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tw_diags d;
    tw_diags_init(&d);
    tw_jobs jobs;
    int rc = tw_job_load_mem("fuzz-job.json", (const char *)data, size, &jobs, &d);
    for (size_t i = 0; rc == TW_JOB_OK && i < jobs.count; i++) {
        if (!jobs.jobs[i].equipment_id)
            abort(); /* tw_job.h: never NULL in a job loaded without errors */
        char *name = tw_permit_file_name(jobs.jobs[i].work_order, i);
        if (name && !safe_file_name(name))
            abort(); /* a permit written outside its directory, or hidden */
        free(name);
    }
    fuzz_print(&d);
    tw_jobs_free(&jobs);
    tw_diags_free(&d);
    return 0;
}
