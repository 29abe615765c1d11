/* manifest.c - the record of printed labels (see tw_manifest.h, schema in docs/manifest.md). */
#include "write/tw_manifest.h"

#include <cjson/cJSON.h>
#include <errno.h>
#include <fcntl.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <unistd.h>

#include "base/tw_atomic.h"
#include "base/tw_util.h"
#include "read/tw_json.h"

#define MANIFEST_FORMAT "tagwright-manifest"
#define MANIFEST_VERSION 1

/* A copy of s (NULL gives NULL) among the manifest's strings. An entry's strings are never
 * freed one by one: a replaced one stays until the manifest is closed (a few per label printed
 * again), and loading 10,000 entries costs no 110,000 mallocs. */
static char *keep(tw_manifest *m, const char *s)
{
    return s ? tw_arena_strndup(&m->strings, s, strlen(s)) : NULL;
}

static tw_manifest_entry *entry_new(tw_manifest *m)
{
    if (m->count == m->cap) {
        size_t cap = m->cap ? m->cap * 2 : 64;
        tw_manifest_entry *e = realloc(m->entries, cap * sizeof *e);
        if (!e)
            return NULL;
        m->entries = e;
        m->cap = cap;
    }
    tw_manifest_entry *e = &m->entries[m->count];
    memset(e, 0, sizeof *e);
    return e;
}

/* Build the current index from the loaded entries. */
static int reindex(tw_manifest *m)
{
    tw_map_free(&m->current);
    for (size_t i = 0; i < m->count; i++)
        if (m->entries[i].current && tw_map_put(&m->current, m->entries[i].equipment_id, i))
            return -1;
    return 0;
}

/* cJSON's tree of a manifest (hundreds of thousands of small blocks for 10,000 labels) is
 * parsed and printed in an arena freed at once (tw_json_use_arena; docs/performance.md). Only
 * the one thread that uses cJSON does so; worker threads and processes never do. */

/* ---- loading ---------------------------------------------------------------------------- */

typedef struct {
    const char *name;
    tw_diags *d;
    int bad;
} load_ctx;

static void load_error(load_ctx *c, const char *path, const char *field, const char *msg)
{
    tw_source src = {c->name, 0, path};
    tw_diag_add(c->d, TW_ERROR, &src, NULL, field, "%s", msg);
    c->bad = 1;
}

/* The string at key (cJSON's own, valid while the tree is), or NULL. */
static const char *peek_string(load_ctx *c, const cJSON *o, const char *key, const char *path,
                               int required)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, key);
    if (!v || cJSON_IsNull(v)) {
        if (required)
            load_error(c, path, key, "expected a string, found nothing");
        return NULL;
    }
    if (!cJSON_IsString(v)) {
        load_error(c, path, key, "expected a string");
        return NULL;
    }
    return v->valuestring;
}

/* The same, kept among the manifest's strings. */
static char *get_string(load_ctx *c, tw_manifest *m, const cJSON *o, const char *key,
                        const char *path, int required)
{
    const char *v = peek_string(c, o, key, path, required);
    char *s = keep(m, v);
    if (v && !s)
        load_error(c, path, key, "out of memory");
    return s;
}

static int get_int(load_ctx *c, const cJSON *o, const char *key, const char *path, int min)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, key);
    if (!cJSON_IsNumber(v) || v->valuedouble < min || v->valuedouble > 1e9 ||
        v->valuedouble != (double)(int)v->valuedouble) {
        char msg[96];
        snprintf(msg, sizeof msg, "expected a whole number of at least %d", min);
        load_error(c, path, key, msg);
        return min;
    }
    return v->valueint;
}

static void load_entry(load_ctx *c, tw_manifest *m, const cJSON *o, size_t i)
{
    char path[48];
    snprintf(path, sizeof path, "labels[%zu]", i);
    if (!cJSON_IsObject(o)) {
        load_error(c, path, NULL, "expected an object");
        return;
    }
    tw_manifest_entry *e = entry_new(m);
    if (!e) {
        load_error(c, path, NULL, "out of memory");
        return;
    }
    e->equipment_id = get_string(c, m, o, "equipment_id", path, 1);
    e->content_hash = get_string(c, m, o, "content_hash", path, 1);
    e->study_id = get_string(c, m, o, "study_id", path, 0);
    e->printed = get_string(c, m, o, "printed", path, 1);
    e->output = get_string(c, m, o, "output", path, 0);
    e->superseded_on = get_string(c, m, o, "superseded_on", path, 0);
    e->reason = get_string(c, m, o, "reason", path, 0);
    e->changes = get_string(c, m, o, "changes", path, 0);
    e->payload = get_string(c, m, o, "payload", path, 0);
    e->content = get_string(c, m, o, "content", path, 0);
    e->revision = get_int(c, o, "revision", path, 1);
    e->volume = get_int(c, o, "volume", path, 1);
    e->page = get_int(c, o, "page", path, 1);
    const char *status = peek_string(c, o, "status", path, 1);
    if (status && strcmp(status, "current") && strcmp(status, "superseded"))
        load_error(c, path, "status", "expected \"current\" or \"superseded\"");
    e->current = status && !strcmp(status, "current");
    m->count++;
    if (!e->equipment_id || !e->content_hash)
        return;
    size_t prev;
    if (e->current && tw_map_get(&m->current, e->equipment_id, &prev)) {
        load_error(c, path, "status", "a second current revision for the same equipment");
        return;
    }
    if (e->current && tw_map_put(&m->current, e->equipment_id, m->count - 1))
        load_error(c, path, NULL, "out of memory");
}

int tw_manifest_load_mem(const char *name, const char *data, size_t len, tw_manifest *m,
                         tw_diags *d)
{
    load_ctx c = {name, d, 0};
    memset(m, 0, sizeof *m);
    m->lock_fd = -1;
    tw_arena tree = {0};
    const tw_json_spec spec = {"a labels manifest object", TW_JSON_OBJECT, &tree};
    cJSON *root = tw_json_parse(name, data, len, &spec, d);
    if (!root) {
        tw_arena_free(&tree);
        return -1;
    }
    const cJSON *fmt = cJSON_GetObjectItemCaseSensitive(root, "format");
    const cJSON *labels = cJSON_GetObjectItemCaseSensitive(root, "labels");
    if (!cJSON_IsString(fmt) || strcmp(fmt->valuestring, MANIFEST_FORMAT))
        load_error(&c, "format", "format", "expected \"" MANIFEST_FORMAT "\"");
    else if (!cJSON_IsArray(labels))
        load_error(&c, "labels", "labels", "expected an array");
    else {
        size_t i = 0;
        const cJSON *o;
        cJSON_ArrayForEach(o, labels) load_entry(&c, m, o, i++);
    }
    tw_arena_free(&tree); /* the whole tree */
    if (!c.bad && reindex(m) != 0)
        load_error(&c, "$", NULL, "out of memory");
    return c.bad ? -1 : 0;
}

int tw_manifest_open(const char *path, tw_manifest *m, tw_diags *d)
{
    memset(m, 0, sizeof *m);
    m->lock_fd = -1;
    tw_source src = {path, 0, NULL};
    char *lock_path = tw_asprintf("%s.lock", path);
    int fd = lock_path ? open(lock_path, O_RDWR | O_CREAT | O_CLOEXEC, 0644) : -1;
    if (fd < 0 || flock(fd, LOCK_EX) != 0) {
        tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "cannot lock %s: %s",
                    lock_path ? lock_path : path, strerror(errno));
        if (fd >= 0)
            close(fd);
        free(lock_path);
        return -1;
    }
    free(lock_path);
    char err[512] = "";
    size_t len = 0;
    char *data = NULL;
    if (access(path, F_OK) == 0 && !(data = tw_read_file(path, &len, err, sizeof err))) {
        tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "%s", err);
        close(fd);
        return -1;
    }
    int rc = 0;
    if (data)
        rc = tw_manifest_load_mem(path, data, len, m, d);
    free(data);
    m->lock_fd = fd;
    m->path = tw_strdup(path);
    if (rc != 0 || !m->path) {
        if (!m->path)
            close(fd);
        tw_manifest_close(m);
        return -1;
    }
    return 0;
}

/* ---- queries and updates ----------------------------------------------------------------- */

const tw_manifest_entry *tw_manifest_current(const tw_manifest *m, const char *equipment_id)
{
    size_t i;
    return tw_map_get(&m->current, equipment_id, &i) ? &m->entries[i] : NULL;
}

int tw_manifest_next_revision(const tw_manifest *m, const char *equipment_id, const char *hash)
{
    const tw_manifest_entry *cur = tw_manifest_current(m, equipment_id);
    if (!cur)
        return 1;
    return strcmp(cur->content_hash, hash) == 0 ? cur->revision : cur->revision + 1;
}

/* Value of "key=" in a canonical form, as a fresh string, or NULL. */
static char *canonical_value(const char *content, const char *key, size_t keylen)
{
    for (const char *p = content; p && *p;) {
        const char *eol = strchr(p, '\n');
        size_t n = eol ? (size_t)(eol - p) : strlen(p);
        if (n > keylen && !strncmp(p, key, keylen) && p[keylen] == '=')
            return tw_strndup(p + keylen + 1, n - keylen - 1);
        p = eol ? eol + 1 : NULL;
    }
    return NULL;
}

/* Append "key: old -> new; " for one key when it differs. */
static int append_change(char **out, const char *key, size_t keylen, const char *oldc,
                         const char *newc)
{
    char *a = canonical_value(oldc, key, keylen), *b = canonical_value(newc, key, keylen);
    int rc = 0;
    if ((a || b) && (!a || !b || strcmp(a, b))) {
        char *s = tw_asprintf("%s%s%.*s: %s -> %s", *out, **out ? "; " : "", (int)keylen, key,
                              a ? a : "(none)", b ? b : "(none)");
        if (s) {
            free(*out);
            *out = s;
        } else {
            rc = -1;
        }
    }
    free(a);
    free(b);
    return rc;
}

/* Visit each key of a canonical form; for keys only in old, visit old too (removed fields). */
static int diff_keys(char **out, const char *walk, const char *oldc, const char *newc,
                     const char *skip_if_in)
{
    for (const char *p = walk; p && *p;) {
        const char *eq = strchr(p, '=');
        const char *eol = strchr(p, '\n');
        if (!eq || (eol && eq > eol))
            break;
        size_t keylen = (size_t)(eq - p);
        char *in_other = skip_if_in ? canonical_value(skip_if_in, p, keylen) : NULL;
        int skip = in_other != NULL;
        free(in_other);
        if (!skip && append_change(out, p, keylen, oldc, newc))
            return -1;
        p = eol ? eol + 1 : NULL;
    }
    return 0;
}

char *tw_manifest_changes(const char *old_content, const char *new_content)
{
    char *out = tw_strdup("");
    const char *o = old_content ? old_content : "", *n = new_content ? new_content : "";
    if (!out || diff_keys(&out, n, o, n, NULL) || diff_keys(&out, o, o, n, n)) {
        free(out);
        return NULL;
    }
    return out;
}

static int fill_entry(tw_manifest *m, tw_manifest_entry *e, const tw_manifest_print *p,
                      int revision)
{
    e->equipment_id = keep(m, p->equipment_id);
    e->content_hash = keep(m, p->hash);
    e->content = keep(m, p->content);
    e->study_id = keep(m, p->study_id);
    e->printed = keep(m, p->printed);
    e->output = keep(m, p->output);
    e->payload = keep(m, p->payload);
    e->reason = keep(m, p->reason);
    e->revision = revision;
    e->volume = p->volume;
    e->page = p->page;
    e->current = 1;
    return e->equipment_id && e->content_hash && e->printed ? 0 : -1;
}

/* Same content printed again: keep the revision, note where it now is. */
static int reprint_same(tw_manifest *m, tw_manifest_entry *cur, const tw_manifest_print *p)
{
    char *printed = keep(m, p->printed), *output = keep(m, p->output);
    char *payload = keep(m, p->payload);
    if (!printed || (p->output && !output) || (p->payload && !payload))
        return -1;
    cur->printed = printed;
    cur->output = output;
    cur->payload = payload;
    cur->volume = p->volume;
    cur->page = p->page;
    return cur->revision;
}

int tw_manifest_record(tw_manifest *m, const tw_manifest_print *p)
{
    size_t ci;
    int has_cur = tw_map_get(&m->current, p->equipment_id, &ci);
    if (has_cur && !strcmp(m->entries[ci].content_hash, p->hash))
        return reprint_same(m, &m->entries[ci], p);
    tw_manifest_entry *e = entry_new(m);
    if (!e)
        return -1;
    int revision = has_cur ? m->entries[ci].revision + 1 : 1;
    char *diff = has_cur ? tw_manifest_changes(m->entries[ci].content, p->content) : NULL;
    char *changes = keep(m, diff);
    free(diff);
    char *superseded_on = has_cur ? keep(m, p->printed) : NULL;
    /* The index holds pointers to the equipment ID strings, which never move, and array
     * positions, so one put keeps it right (rebuilding it per record made printing quadratic).
     * Put before committing: on failure the manifest is unchanged. */
    if (fill_entry(m, e, p, revision) != 0 || (has_cur && (!changes || !superseded_on)) ||
        tw_map_put(&m->current, e->equipment_id, m->count) != 0) {
        memset(e, 0, sizeof *e); /* its strings stay in the arena, unused */
        return -1;
    }
    e->changes = changes;
    m->count++;
    if (has_cur) {
        m->entries[ci].current = 0;
        m->entries[ci].superseded_on = superseded_on;
    }
    return revision;
}

/* ---- saving --------------------------------------------------------------------------------- */

static int add_str(cJSON *o, const char *key, const char *v)
{
    return (v ? cJSON_AddStringToObject(o, key, v) : cJSON_AddNullToObject(o, key)) ? 0 : -1;
}

static cJSON *entry_json(const tw_manifest_entry *e)
{
    cJSON *o = cJSON_CreateObject();
    if (!o)
        return NULL;
    int bad = add_str(o, "equipment_id", e->equipment_id);
    bad |= !cJSON_AddNumberToObject(o, "revision", e->revision);
    bad |= add_str(o, "status", e->current ? "current" : "superseded");
    bad |= add_str(o, "content_hash", e->content_hash);
    bad |= add_str(o, "study_id", e->study_id);
    bad |= add_str(o, "printed", e->printed);
    bad |= add_str(o, "output", e->output);
    bad |= !cJSON_AddNumberToObject(o, "volume", e->volume);
    bad |= !cJSON_AddNumberToObject(o, "page", e->page);
    bad |= add_str(o, "payload", e->payload);
    bad |= add_str(o, "reason", e->reason);
    bad |= add_str(o, "changes", e->changes);
    bad |= add_str(o, "superseded_on", e->superseded_on);
    bad |= add_str(o, "content", e->content);
    return bad ? NULL : o; /* in the arena: nothing to delete */
}

/* One entry as cJSON_Print() prints it two levels deep: every line after the first indented
 * by two more tabs. (cJSON escapes line breaks inside strings, so each '\n' is layout.) The
 * entry's tree and text are made in arena a, emptied afterwards. */
static int write_entry(FILE *fp, const tw_manifest_entry *e, int first, tw_arena *a)
{
    tw_json_use_arena(a);
    cJSON *o = entry_json(e);
    char *text = o ? cJSON_Print(o) : NULL;
    tw_json_use_heap();
    if (!text) {
        tw_arena_free(a);
        return -1;
    }
    int bad = !first && fputs(", ", fp) < 0;
    for (const char *p = text; !bad && *p;) {
        const char *nl = strchr(p, '\n');
        size_t n = nl ? (size_t)(nl - p) + 1 : strlen(p);
        bad = fwrite(p, 1, n, fp) != n || (nl && fputs("\t\t", fp) < 0);
        p += n;
    }
    tw_arena_free(a);
    return bad ? -1 : 0;
}

/* Written entry by entry, byte for byte what cJSON_Print() gives for the whole document, so
 * that a large manifest never needs its whole JSON tree in memory (100,000 labels would take
 * some 300 MiB). */
int tw_manifest_save(tw_manifest *m, char *err, size_t errlen)
{
    tw_atomic a;
    if (tw_manifest_write(m, &a, err, errlen) != 0)
        return -1;
    return tw_atomic_commit(&a, err, errlen);
}

int tw_manifest_write(tw_manifest *m, tw_atomic *a, char *err, size_t errlen)
{
    if (tw_atomic_open(a, m->path, err, errlen) != 0)
        return -1;
    int bad = fputs("{\n\t\"labels\":\t[", a->fp) < 0;
    tw_arena entry = {0};
    for (size_t i = 0; !bad && i < m->count; i++)
        bad = write_entry(a->fp, &m->entries[i], i == 0, &entry) != 0;
    if (!bad)
        bad = fprintf(a->fp, "],\n\t\"format\":\t\"%s\",\n\t\"version\":\t%d\n}\n",
                      MANIFEST_FORMAT, MANIFEST_VERSION) < 0;
    if (bad) {
        snprintf(err, errlen, "%s: out of memory or write error while writing the manifest",
                 m->path);
        tw_atomic_abort(a);
        return -1;
    }
    return tw_atomic_prepare(a, err, errlen);
}

void tw_manifest_close(tw_manifest *m)
{
    free(m->entries);
    tw_arena_free(&m->strings);
    tw_map_free(&m->current);
    /* Only tw_manifest_open() takes a lock; a zeroed struct (lock_fd 0) must not close stdin. */
    if (m->path && m->lock_fd >= 0)
        close(m->lock_fd); /* closing releases the flock */
    free(m->path);
    memset(m, 0, sizeof *m);
    m->lock_fd = -1;
}
