/* manifest.c - the JSON manifest reader, for `registry import` (see tw_manifest.h,
 * docs/registry.md). */
#include "write/tw_manifest.h"

#include <cjson/cJSON.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_atomic.h"
#include "base/tw_util.h"
#include "read/tw_json.h"

#define MANIFEST_FORMAT TW_LABEL_RECORD_FORMAT
/* Version 1: the manifest earlier builds wrote beside each PDF; version 2: `registry export`
 * (adds removed revisions, approvals and study dates). */
#define MANIFEST_VERSION_MAX 2

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

/* ---- loading ---------------------------------------------------------------------------- */

typedef struct {
    const char *name;
    tw_diags *d;
    int bad;
    int version;
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
    e->study_date = get_string(c, m, o, "study_date", path, 0);
    e->approved_by = get_string(c, m, o, "approved_by", path, 0);
    e->lowered = get_string(c, m, o, "lowered", path, 0);
    e->removed_on = get_string(c, m, o, "removed_on", path, 0);
    e->removed_reason = get_string(c, m, o, "removed_reason", path, 0);
    e->revision = get_int(c, o, "revision", path, 1);
    e->volume = get_int(c, o, "volume", path, 1);
    e->page = get_int(c, o, "page", path, 1);
    const char *status = peek_string(c, o, "status", path, 1);
    if (status && strcmp(status, "current") && strcmp(status, "superseded") &&
        (c->version < 2 || strcmp(status, "removed")))
        load_error(c, path, "status", c->version < 2 ? "expected \"current\" or \"superseded\""
                   : "expected \"current\", \"superseded\" or \"removed\"");
    e->current = status && !strcmp(status, "current");
    e->removed = status && !strcmp(status, "removed");
    m->count++;
    if (!e->equipment_id || !e->content_hash)
        return;
    size_t prev;
    if (e->current && tw_map_get(&m->current, e->equipment_id, &prev)) {
        load_error(c, path, "status", "a second current revision for the same equipment");
        return;
    }
    if (!e->current && !e->removed && !e->superseded_on && c->version >= 2)
        load_error(c, path, "superseded_on", "expected the date it was superseded");
    if (e->current && tw_map_put(&m->current, e->equipment_id, m->count - 1))
        load_error(c, path, NULL, "out of memory");
}

int tw_manifest_load_mem(const char *name, const char *data, size_t len, tw_manifest *m,
                         tw_diags *d)
{
    load_ctx c = {name, d, 0, 1};
    memset(m, 0, sizeof *m);
    tw_arena tree = {0};
    const tw_json_spec spec = {"a labels manifest object", TW_JSON_OBJECT, &tree};
    cJSON *root = tw_json_parse(name, data, len, &spec, d);
    if (!root) {
        tw_arena_free(&tree);
        return -1;
    }
    const cJSON *fmt = cJSON_GetObjectItemCaseSensitive(root, "format");
    const cJSON *labels = cJSON_GetObjectItemCaseSensitive(root, "labels");
    const cJSON *version = cJSON_GetObjectItemCaseSensitive(root, "version");
    if (cJSON_IsNumber(version))
        c.version = (int)version->valuedouble;
    if (!cJSON_IsString(fmt) || strcmp(fmt->valuestring, MANIFEST_FORMAT))
        load_error(&c, "format", "format", "expected \"" MANIFEST_FORMAT "\"");
    else if (!cJSON_IsNumber(version) || version->valuedouble < 1 ||
             version->valuedouble > MANIFEST_VERSION_MAX ||
             version->valuedouble != (double)c.version)
        load_error(&c, "version", "version", "expected 1 (a manifest) or 2 (a registry export); "
                   "a file of another version is not read, so that nothing in it is lost");
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

/* ---- queries and updates ----------------------------------------------------------------- */

const tw_manifest_entry *tw_manifest_current(const tw_manifest *m, const char *equipment_id)
{
    size_t i;
    return tw_map_get(&m->current, equipment_id, &i) ? &m->entries[i] : NULL;
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

/* The lines of a canonical form as key/value spans; 0, or -1 when it has more than max. */
typedef struct {
    const char *key, *value;
    size_t keylen, valuelen;
} line_span;

static int split_lines(const char *c, line_span *out, size_t max, size_t *n)
{
    *n = 0;
    for (const char *p = c; p && *p;) {
        const char *eol = strchr(p, '\n'), *end = eol ? eol : p + strlen(p);
        const char *eq = memchr(p, '=', (size_t)(end - p));
        if (!eq)
            break; /* as the key-by-key walk does: the rest is not key=value */
        if (*n == max)
            return -1;
        out[(*n)++] = (line_span){p, eq + 1, (size_t)(eq - p), (size_t)(end - eq - 1)};
        p = eol ? eol + 1 : NULL;
    }
    return 0;
}

static const line_span *find_key(const line_span *l, size_t n, const line_span *k)
{
    for (size_t i = 0; i < n; i++)
        if (l[i].keylen == k->keylen && !memcmp(l[i].key, k->key, k->keylen))
            return &l[i];
    return NULL;
}

/* "key: old -> new" appended to a growing buffer. */
static int add_change(char **buf, size_t *len, size_t *cap, const line_span *k,
                      const line_span *o, const line_span *nw)
{
    size_t need = *len + 2 + k->keylen + 2 + (o ? o->valuelen : 6) + 4 + (nw ? nw->valuelen : 6) + 1;
    if (need > *cap) {
        size_t c = need * 2;
        char *g = realloc(*buf, c);
        if (!g)
            return -1;
        *buf = g;
        *cap = c;
    }
    int n = snprintf(*buf + *len, *cap - *len, "%s%.*s: %.*s -> %.*s", *len ? "; " : "",
                     (int)k->keylen, k->key, o ? (int)o->valuelen : 6, o ? o->value : "(none)",
                     nw ? (int)nw->valuelen : 6, nw ? nw->value : "(none)");
    *len += (size_t)n;
    return 0;
}

/* Linear in the two forms (a label has some 25 fields): every key of the new form that is
 * added or changed, in its order, then every key the new form lost. The first value of a key
 * counts, as in a lookup. Forms of more than 64 lines take the key-by-key walk. */
char *tw_manifest_changes(const char *old_content, const char *new_content)
{
    const char *o = old_content ? old_content : "", *n = new_content ? new_content : "";
    line_span ol[64], nl[64];
    size_t on, nn;
    if (split_lines(o, ol, 64, &on) || split_lines(n, nl, 64, &nn)) {
        char *out = tw_strdup("");
        if (!out || diff_keys(&out, n, o, n, NULL) || diff_keys(&out, o, o, n, n)) {
            free(out);
            return NULL;
        }
        return out;
    }
    char *buf = malloc(256);
    size_t len = 0, cap = 256;
    if (!buf)
        return NULL;
    buf[0] = '\0';
    int bad = 0;
    for (size_t i = 0; !bad && i < nn; i++) {
        const line_span *first = find_key(nl, nn, &nl[i]);
        if (first != &nl[i])
            continue; /* a key given twice: its first value was compared */
        const line_span *ov = find_key(ol, on, &nl[i]);
        if (!ov || ov->valuelen != first->valuelen || memcmp(ov->value, first->value, ov->valuelen))
            bad = add_change(&buf, &len, &cap, &nl[i], ov, first);
    }
    for (size_t i = 0; !bad && i < on; i++)
        if (find_key(ol, on, &ol[i]) == &ol[i] && !find_key(nl, nn, &ol[i]))
            bad = add_change(&buf, &len, &cap, &ol[i], &ol[i], NULL);
    if (bad) {
        free(buf);
        return NULL;
    }
    return buf;
}

void tw_manifest_close(tw_manifest *m)
{
    free(m->entries);
    tw_arena_free(&m->strings);
    tw_map_free(&m->current);
    memset(m, 0, sizeof *m);
}
