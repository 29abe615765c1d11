/* job.c - job files for energized work permits (see tw_job.h and docs/permit.md).
 *
 * Each key of a job object is one row of job_keys below: its name and the function that reads
 * it. Readers never stop at the first bad value: every problem becomes a finding with its JSON
 * path, and the load fails when any of them is an error.
 */
#include "read/tw_job.h"
#include "base/tw_fonts.h"
#include "base/tw_text.h"

#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "base/tw_date.h"
#include "base/tw_util.h"
#include "read/tw_json.h"

#define COUNT(a) (sizeof(a) / sizeof((a)[0]))

/* ---- freeing ------------------------------------------------------------------------------ */

static void free_strings(char **v, size_t n)
{
    for (size_t i = 0; v && i < n; i++)
        free(v[i]);
    free(v);
}

static void job_free(tw_job *j)
{
    free(j->path);
    free(j->work_order);
    free(j->equipment_id);
    free(j->location);
    free(j->work_description);
    free(j->justification);
    free(j->access_restriction);
    free(j->planned_date);
    free_strings(j->safe_work_practices, j->safe_work_practice_count);
    free_strings(j->job_hazards, j->job_hazard_count);
    for (size_t i = 0; j->crew && i < j->crew_count; i++)
        free(j->crew[i].name);
    free(j->crew);
    for (size_t i = 0; j->approvers && i < j->approver_count; i++) {
        free(j->approvers[i].role);
        free(j->approvers[i].name);
        free(j->approvers[i].title);
    }
    free(j->approvers);
    memset(j, 0, sizeof *j);
}

void tw_jobs_free(tw_jobs *j)
{
    if (!j)
        return;
    for (size_t i = 0; j->jobs && i < j->count; i++)
        job_free(&j->jobs[i]);
    free(j->jobs);
    free(j->file);
    memset(j, 0, sizeof *j);
}

/* ---- findings ----------------------------------------------------------------------------- */

typedef struct {
    const char *file;
    tw_diags *d;
    size_t errors;
    const char *equipment_id;   /* of the job being read, once known (for findings) */
} loader;

static void finding(loader *L, tw_severity sev, const char *path, const char *field,
                    const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 5, 6)))
#endif
    ;

static void finding(loader *L, tw_severity sev, const char *path, const char *field,
                    const char *fmt, ...)
{
    if (sev == TW_ERROR)
        L->errors++;
    tw_source src = {L->file, 0, path && *path ? path : NULL};
    va_list ap;
    va_start(ap, fmt);
    tw_diag_vadd(L->d, sev, &src, L->equipment_id, field, fmt, ap);
    va_end(ap);
}

/* "base.key" or "key" (base empty); "base[i]". Fresh strings; NULL when out of memory. */
static char *path_key(const char *base, const char *key)
{
    return *base ? tw_asprintf("%s.%s", base, key) : tw_strdup(key);
}

static char *path_index(const char *base, size_t i)
{
    return tw_asprintf("%s[%zu]", base, i);
}

/* ---- values ------------------------------------------------------------------------------- */

/* Text kinds: an ID or name is one line; free text may hold line breaks. */
typedef enum { ONE_LINE, FREE_TEXT } text_kind;

/* 1 when s is printable UTF-8 (tw_text_ok), with '\n' allowed in free text. */
static int text_ok(const char *s, text_kind kind)
{
    if (kind == ONE_LINE)
        return tw_text_ok(s);
    char *copy = tw_strdup(s);
    if (!copy)
        return -1;
    for (char *p = copy; *p; p++)
        if (*p == '\n')
            *p = ' ';
    int ok = tw_text_ok(copy);
    free(copy);
    return ok;
}

/*
 * Read a text value into *dst: a string (trimmed; blank means not given) or null (not given).
 * Returns 0 when the value was usable or absent, -1 after an error finding.
 */
static int read_text(loader *L, const cJSON *v, const char *path, const char *field,
                     size_t max, text_kind kind, char **dst)
{
    *dst = NULL;
    if (cJSON_IsNull(v))
        return 0;
    if (!cJSON_IsString(v) || !v->valuestring) {
        finding(L, TW_ERROR, path, field, "expected a string (or null when not known)");
        return -1;
    }
    char *copy = tw_strdup(v->valuestring);
    if (!copy) {
        finding(L, TW_ERROR, path, field, "out of memory");
        return -1;
    }
    /* Blanks around the text are dropped; line breaks inside free text are kept. */
    char *t = tw_trim(copy);
    size_t n = strlen(t);
    if (n > max) {
        finding(L, TW_ERROR, path, field, "longer than %zu bytes (%zu); shorten it", max, n);
        free(copy);
        return -1;
    }
    int ok = text_ok(t, kind);
    if (ok != 1) {
        if (ok < 0)
            finding(L, TW_ERROR, path, field, "out of memory");
        else
            finding(L, TW_ERROR, path, field, "expected UTF-8 text without control characters%s",
                    kind == ONE_LINE ? " or line breaks" : " (line breaks are allowed)");
        free(copy);
        return -1;
    }
    uint32_t cp = 0;
    tw_draw_problem p = tw_text_drawable(t, &cp);
    if (p != TW_DRAW_OK) {
        char why[512];
        finding(L, TW_ERROR, path, field, "%s", tw_draw_problem_text(p, cp, why, sizeof why));
        free(copy);
        return -1;
    }
    if (n > 0) {
        memmove(copy, t, n + 1);
        *dst = copy;
    } else {
        free(copy);
    }
    return 0;
}

/* Read an array (or, for lists of text, a single string) of at most TW_JOB_MAX_ITEMS items:
 * the number of items, or -1 after an error finding. */
static int array_size(loader *L, const cJSON *v, const char *path, const char *field,
                      const char *what)
{
    if (!cJSON_IsArray(v)) {
        finding(L, TW_ERROR, path, field, "expected an array of %s", what);
        return -1;
    }
    int n = cJSON_GetArraySize(v);
    if (n > TW_JOB_MAX_ITEMS) {
        finding(L, TW_ERROR, path, field, "more than %d entries (%d)", TW_JOB_MAX_ITEMS, n);
        return -1;
    }
    return n;
}

/* A list of text items; a single string is a list of one. Blank items are left out. */
static void read_list(loader *L, const cJSON *v, const char *path, const char *field,
                      char ***items, size_t *count)
{
    if (cJSON_IsNull(v))
        return;
    if (cJSON_IsString(v)) {
        char *one = NULL;
        if (read_text(L, v, path, field, TW_JOB_MAX_TEXT_BYTES, FREE_TEXT, &one) == 0 && one) {
            *items = malloc(sizeof **items);
            if (!*items) {
                free(one);
                finding(L, TW_ERROR, path, field, "out of memory");
                return;
            }
            (*items)[0] = one;
            *count = 1;
        }
        return;
    }
    int n = array_size(L, v, path, field, "strings");
    if (n <= 0)
        return;
    *items = calloc((size_t)n, sizeof **items);
    if (!*items) {
        finding(L, TW_ERROR, path, field, "out of memory");
        return;
    }
    size_t i = 0;
    const cJSON *item;
    cJSON_ArrayForEach(item, v) {
        char *p = path_index(path, i++);
        char *text = NULL;
        if (!p)
            finding(L, TW_ERROR, path, field, "out of memory");
        else if (read_text(L, item, p, field, TW_JOB_MAX_TEXT_BYTES, FREE_TEXT, &text) == 0 &&
                 text)
            (*items)[(*count)++] = text;
        free(p);
    }
}

/* ---- objects inside a job ----------------------------------------------------------------- */

/* Call read(L, member, member path, ctx) for each member of an object whose key is in keys
 * (a NULL-terminated list); unknown keys are warnings. */
typedef void (*member_reader)(loader *L, const char *key, const cJSON *v, const char *path,
                              void *ctx);

static void read_members(loader *L, const cJSON *obj, const char *path, const char *const *keys,
                         member_reader read, void *ctx, const char *doc)
{
    const cJSON *m; /* each key once: tw_json_parse() refuses a key given twice */
    cJSON_ArrayForEach(m, obj) {
        const char *key = m->string ? m->string : "";
        char *p = path_key(path, key);
        if (!p) {
            finding(L, TW_ERROR, path, key, "out of memory");
            continue;
        }
        size_t i = 0;
        while (keys[i] && strcmp(keys[i], key) != 0)
            i++;
        if (!keys[i])
            finding(L, TW_WARNING, p, key, "unknown key, ignored (see %s)", doc);
        else
            read(L, key, m, p, ctx);
        free(p);
    }
}

static const char *const crew_keys[] = {"name", "qualified", NULL};

static void crew_member(loader *L, const char *key, const cJSON *v, const char *path, void *ctx)
{
    tw_crew_member *c = ctx;
    if (!strcmp(key, "name")) {
        read_text(L, v, path, key, TW_JOB_MAX_NAME_BYTES, ONE_LINE, &c->name);
    } else if (cJSON_IsBool(v)) {
        c->qualified = cJSON_IsTrue(v) ? TW_QUALIFIED_YES : TW_QUALIFIED_NO;
    } else if (!cJSON_IsNull(v)) {
        finding(L, TW_ERROR, path, key, "expected true or false (or null when not known)");
    }
}

static void read_crew(loader *L, const cJSON *v, const char *path, tw_job *j)
{
    if (cJSON_IsNull(v))
        return;
    int n = array_size(L, v, path, "crew", "crew members ({\"name\": ..., \"qualified\": ...})");
    if (n <= 0)
        return;
    if (!(j->crew = calloc((size_t)n, sizeof *j->crew))) {
        finding(L, TW_ERROR, path, "crew", "out of memory");
        return;
    }
    const cJSON *item;
    cJSON_ArrayForEach(item, v) {
        char *p = path_index(path, j->crew_count);
        tw_crew_member *c = &j->crew[j->crew_count++];
        c->qualified = TW_QUALIFIED_UNKNOWN;
        if (!p)
            finding(L, TW_ERROR, path, "crew", "out of memory");
        else if (cJSON_IsString(item))   /* a bare name: qualification not stated */
            read_text(L, item, p, "name", TW_JOB_MAX_NAME_BYTES, ONE_LINE, &c->name);
        else if (cJSON_IsObject(item))
            read_members(L, item, p, crew_keys, crew_member, c, "docs/permit.md");
        else
            finding(L, TW_ERROR, p, "crew", "expected an object {\"name\": ..., \"qualified\": "
                    "true|false} or a name");
        free(p);
    }
}

static const char *const approver_keys[] = {"role", "name", "title", NULL};

static void approver_member(loader *L, const char *key, const cJSON *v, const char *path,
                            void *ctx)
{
    tw_approver *a = ctx;
    char **dst = !strcmp(key, "role") ? &a->role : !strcmp(key, "name") ? &a->name : &a->title;
    read_text(L, v, path, key, TW_JOB_MAX_NAME_BYTES, ONE_LINE, dst);
}

static void read_approvers(loader *L, const cJSON *v, const char *path, tw_job *j)
{
    if (cJSON_IsNull(v))
        return;
    int n = array_size(L, v, path, "approvers", "approvers ({\"role\": ..., \"name\": ...})");
    if (n <= 0)
        return;
    if (!(j->approvers = calloc((size_t)n, sizeof *j->approvers))) {
        finding(L, TW_ERROR, path, "approvers", "out of memory");
        return;
    }
    const cJSON *item;
    cJSON_ArrayForEach(item, v) {
        char *p = path_index(path, j->approver_count);
        tw_approver *a = &j->approvers[j->approver_count++];
        if (!p) {
            finding(L, TW_ERROR, path, "approvers", "out of memory");
        } else if (!cJSON_IsObject(item)) {
            finding(L, TW_ERROR, p, "approvers", "expected an object {\"role\": ..., \"name\": "
                    "..., \"title\": ...}");
        } else {
            read_members(L, item, p, approver_keys, approver_member, a, "docs/permit.md");
            if (!a->role) {
                char *rp = path_key(p, "role");
                finding(L, TW_ERROR, rp ? rp : p, "role", "missing; expected the role that "
                        "signs, e.g. \"safety_management\" or a role of your own");
                free(rp);
            }
        }
        free(p);
    }
}

/* ---- one job ------------------------------------------------------------------------------ */

static void key_text(loader *L, const char *key, const cJSON *v, const char *path, tw_job *j)
{
    static const struct {
        const char *key;
        size_t off, max;
        text_kind kind;
    } texts[] = {
        {"work_order", offsetof(tw_job, work_order), TW_JOB_MAX_ID_BYTES, ONE_LINE},
        {"equipment_id", offsetof(tw_job, equipment_id), TW_JOB_MAX_ID_BYTES, ONE_LINE},
        {"location", offsetof(tw_job, location), TW_JOB_MAX_TEXT_BYTES, FREE_TEXT},
        {"work_description", offsetof(tw_job, work_description), TW_JOB_MAX_TEXT_BYTES, FREE_TEXT},
        {"justification", offsetof(tw_job, justification), TW_JOB_MAX_TEXT_BYTES, FREE_TEXT},
        {"access_restriction", offsetof(tw_job, access_restriction), TW_JOB_MAX_TEXT_BYTES,
         FREE_TEXT},
    };
    for (size_t i = 0; i < COUNT(texts); i++)
        if (!strcmp(texts[i].key, key)) {
            char **dst = (char **)((char *)j + texts[i].off);
            read_text(L, v, path, key, texts[i].max, texts[i].kind, dst);
            return;
        }
}

static void key_planned_date(loader *L, const char *key, const cJSON *v, const char *path,
                             tw_job *j)
{
    char *text = NULL;
    if (read_text(L, v, path, key, TW_JOB_MAX_ID_BYTES, ONE_LINE, &text) != 0 || !text)
        return;
    tw_date day;
    if (strlen(text) != 10 || tw_date_parse(text, &day) != 0) {
        finding(L, TW_ERROR, path, key, "expected a calendar date YYYY-MM-DD");
        free(text);
        return;
    }
    j->planned_date = text;
}

static void key_list(loader *L, const char *key, const cJSON *v, const char *path, tw_job *j)
{
    if (!strcmp(key, "safe_work_practices"))
        read_list(L, v, path, key, &j->safe_work_practices, &j->safe_work_practice_count);
    else
        read_list(L, v, path, key, &j->job_hazards, &j->job_hazard_count);
}

static void key_crew(loader *L, const char *key, const cJSON *v, const char *path, tw_job *j)
{
    (void)key;
    read_crew(L, v, path, j);
}

static void key_approvers(loader *L, const char *key, const cJSON *v, const char *path,
                          tw_job *j)
{
    (void)key;
    read_approvers(L, v, path, j);
}

/* The keys of a job object, in the order docs/permit.md lists them. */
static const struct {
    const char *key;
    void (*read)(loader *L, const char *key, const cJSON *v, const char *path, tw_job *j);
} job_keys[] = {
    {"work_order", key_text},
    {"equipment_id", key_text},
    {"location", key_text},
    {"work_description", key_text},
    {"justification", key_text},
    {"safe_work_practices", key_list},
    {"access_restriction", key_text},
    {"planned_date", key_planned_date},
    {"crew", key_crew},
    {"job_hazards", key_list},
    {"approvers", key_approvers},
};

static void job_member(loader *L, const char *key, const cJSON *v, const char *path, void *ctx)
{
    for (size_t i = 0; i < COUNT(job_keys); i++)
        if (!strcmp(job_keys[i].key, key)) {
            job_keys[i].read(L, key, v, path, ctx);
            return;
        }
}

static void read_job(loader *L, const cJSON *obj, const char *path, tw_job *j)
{
    static const char *keys[COUNT(job_keys) + 1];
    for (size_t i = 0; i < COUNT(job_keys); i++)
        keys[i] = job_keys[i].key;
    keys[COUNT(job_keys)] = NULL;
    j->path = tw_strdup(path);
    if (!j->path) {
        finding(L, TW_ERROR, path, NULL, "out of memory");
        return;
    }
    /* Findings about this job name its equipment once it is known. */
    const cJSON *eq = cJSON_GetObjectItemCaseSensitive(obj, "equipment_id");
    L->equipment_id = cJSON_IsString(eq) && eq->valuestring && *eq->valuestring &&
                      strlen(eq->valuestring) <= TW_JOB_MAX_ID_BYTES &&
                      tw_text_ok(eq->valuestring) ? eq->valuestring : NULL;
    read_members(L, obj, path, keys, job_member, j, "docs/permit.md");
    if (!j->equipment_id) {
        char *p = path_key(path, "equipment_id");
        finding(L, TW_ERROR, p ? p : path, "equipment_id",
                "missing; expected the equipment ID of a bus in the study results");
        free(p);
    }
    L->equipment_id = NULL;
}

/* ---- files -------------------------------------------------------------------------------- */

static const tw_json_spec job_spec = {"a job object or an array of job objects",
                                      TW_JSON_OBJECT | TW_JSON_ARRAY, NULL};

static void read_batch(loader *L, const cJSON *root, tw_jobs *out)
{
    int n = cJSON_GetArraySize(root);
    if (n == 0) {
        finding(L, TW_ERROR, NULL, NULL, "an empty array; expected at least one job object");
        return;
    }
    if (n > TW_JOB_MAX_JOBS) {
        finding(L, TW_ERROR, NULL, NULL, "%d jobs; at most %d fit one file", n, TW_JOB_MAX_JOBS);
        return;
    }
    if (!(out->jobs = calloc((size_t)n, sizeof *out->jobs))) {
        finding(L, TW_ERROR, NULL, NULL, "out of memory");
        return;
    }
    const cJSON *item;
    cJSON_ArrayForEach(item, root) {
        char path[32];
        snprintf(path, sizeof path, "[%zu]", out->count);
        tw_job *j = &out->jobs[out->count++];
        if (cJSON_IsObject(item))
            read_job(L, item, path, j);
        else
            finding(L, TW_ERROR, path, NULL, "expected a job object");
    }
}

int tw_job_load_mem(const char *name, const char *data, size_t len, tw_jobs *out, tw_diags *d)
{
    memset(out, 0, sizeof *out);
    loader L = {name ? name : "-", d, 0, NULL};
    out->file = tw_strdup(L.file);
    if (!out->file) {
        finding(&L, TW_ERROR, NULL, NULL, "out of memory");
        return TW_JOB_BAD;
    }
    cJSON *root = tw_json_parse(L.file, data, len, &job_spec, d);
    if (!root)
        return TW_JOB_BAD;
    if (cJSON_IsArray(root)) {
        out->batch = 1;
        read_batch(&L, root, out);
    } else if ((out->jobs = calloc(1, sizeof *out->jobs))) {
        out->count = 1;
        read_job(&L, root, "", &out->jobs[0]);
    } else {
        finding(&L, TW_ERROR, NULL, NULL, "out of memory");
    }
    tw_json_free(root, &job_spec);
    return L.errors ? TW_JOB_BAD : TW_JOB_OK;
}

int tw_job_load(const char *path, tw_jobs *out, tw_diags *d)
{
    char err[512] = "";
    size_t len = 0;
    memset(out, 0, sizeof *out);
    char *data = tw_read_file(path, &len, err, sizeof err);
    if (!data) {
        tw_diag_add(d, TW_ERROR, NULL, NULL, NULL, "%s", err);
        return TW_JOB_UNREADABLE;
    }
    int rc = tw_job_load_mem(path, data, len, out, d);
    free(data);
    return rc;
}
