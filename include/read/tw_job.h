/*
 * tw_job.h - job files: what an energized work permit needs that the study cannot know.
 *
 * A job file is JSON: one job object, or an array of job objects (a batch). The keys are our
 * own (docs/permit.md). Only equipment_id is required; every other field may be left out, and
 * the permit then prints it as a visible blank. Findings name the file and the JSON path
 * ("jobs[1].crew[0].name" for a batch, "crew[0].name" for a single job). Wrong types, values
 * over a limit, bad dates and keys given twice are errors; unknown keys are warnings.
 *
 * Text is checked when read: valid UTF-8 without control characters; line breaks are allowed
 * only in the free-text fields (location, work_description, justification, access_restriction
 * and list items). Leading and trailing blanks are removed; a blank text counts as not given.
 *
 * Ownership: tw_jobs owns every job and string; tw_jobs_free() accepts a zeroed set.
 */
#ifndef TW_JOB_H
#define TW_JOB_H

#include <stddef.h>

#include "base/tw_diag.h"

/* Limits (docs/permit.md); a value over a limit is an error, never truncated. */
#define TW_JOB_MAX_ID_BYTES 64      /* work_order, equipment_id */
#define TW_JOB_MAX_NAME_BYTES 200   /* crew names, approver roles, names, titles */
#define TW_JOB_MAX_TEXT_BYTES 2000  /* free text and each list item */
#define TW_JOB_MAX_ITEMS 50         /* entries in one list (practices, hazards, crew, approvers) */
#define TW_JOB_MAX_JOBS 1000        /* jobs in one file */

typedef enum { TW_QUALIFIED_UNKNOWN = -1, TW_QUALIFIED_NO = 0, TW_QUALIFIED_YES = 1 } tw_qualified;

typedef struct {
    char *name;                 /* NULL: not given */
    tw_qualified qualified;
} tw_crew_member;

typedef struct {
    char *role;                 /* never NULL */
    char *name;                 /* NULL: not given */
    char *title;                /* NULL: not given */
} tw_approver;

typedef struct {
    char *path;                 /* JSON path of the job: "" for a single job, "[2]" in a batch */
    char *work_order;           /* NULL wherever a field was not given */
    char *equipment_id;         /* never NULL in a job loaded without errors */
    char *location;
    char *work_description;
    char *justification;
    char *access_restriction;
    char *planned_date;         /* YYYY-MM-DD */
    char **safe_work_practices;
    size_t safe_work_practice_count;
    char **job_hazards;
    size_t job_hazard_count;
    tw_crew_member *crew;
    size_t crew_count;
    tw_approver *approvers;
    size_t approver_count;
} tw_job;

typedef struct {
    char *file;                 /* as given to the loader */
    tw_job *jobs;
    size_t count;
    int batch;                  /* 1 when the file held an array */
} tw_jobs;

/* What a load returns. */
enum { TW_JOB_OK = 0, TW_JOB_BAD = -1, TW_JOB_UNREADABLE = -2 };

/* Read a job file. TW_JOB_OK (warnings allowed), TW_JOB_BAD with error findings, or
 * TW_JOB_UNREADABLE (the file could not be read; one finding says why). out is filled from
 * scratch and is always left freeable. */
int tw_job_load(const char *path, tw_jobs *out, tw_diags *d);

/* The same from memory (tests, fuzzers); name is used in findings. data need not end in NUL. */
int tw_job_load_mem(const char *name, const char *data, size_t len, tw_jobs *out, tw_diags *d);

void tw_jobs_free(tw_jobs *j);

#endif
