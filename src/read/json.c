/* json.c - the one way a JSON file is opened (read/tw_json.h says what is decided here). */
#include "read/tw_json.h"

#include <stdarg.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_map.h"

long tw_json_line_of(const char *data, size_t len, size_t at)
{
    long line = 1;
    for (size_t i = 0; i < at && i < len; i++)
        if (data[i] == '\n')
            line++;
    return line;
}

size_t tw_json_value_bound(const char *data, size_t len)
{
    size_t n = 1;
    int in_string = 0;
    for (size_t i = 0; i < len; i++) {
        char c = data[i];
        if (in_string) {
            if (c == '\\')
                i++;
            else if (c == '"')
                in_string = 0;
        } else if (c == '"') {
            in_string = 1;
        } else if (c == '[' || c == '{' || c == ',') {
            n++;
        }
    }
    return n;
}

size_t tw_json_find_nul(const char *s, size_t len)
{
    for (size_t i = 0; i < len; i++) {
        if (s[i] == '\0')
            return i;
        if (s[i] != '\\')
            continue;
        size_t j = i; /* an odd run of backslashes escapes what follows */
        while (j < len && s[j] == '\\')
            j++;
        if ((j - i) % 2 == 1 && len - j >= 5 && s[j] == 'u' && memcmp(s + j + 1, "0000", 4) == 0)
            return j - 1;
        i = j - 1;
    }
    return len;
}

/* Offset of the bracket that opens level TW_JSON_MAX_DEPTH + 1, or len when none does. */
static size_t too_deep_at(const char *data, size_t len)
{
    size_t depth = 0;
    int in_string = 0;
    for (size_t i = 0; i < len; i++) {
        char c = data[i];
        if (in_string) {
            if (c == '\\')
                i++;
            else if (c == '"')
                in_string = 0;
        } else if (c == '"') {
            in_string = 1;
        } else if (c == '[' || c == '{') {
            if (++depth > TW_JSON_MAX_DEPTH)
                return i;
        } else if ((c == ']' || c == '}') && depth > 0) {
            depth--;
        }
    }
    return len;
}

/* ---- findings ----------------------------------------------------------------------------- */

typedef struct {
    const char *file;
    const char *data;
    size_t len;
    const tw_json_spec *spec;
    tw_diags *d;
    size_t errors;
} parser;

static const char *expected(const parser *p)
{
    return p->spec && p->spec->expected ? p->spec->expected : "a JSON value";
}

/* A finding at byte `at` of the text, with its line. */
#if defined(__GNUC__)
__attribute__((format(printf, 3, 4)))
#endif
static void at_byte(parser *p, size_t at, const char *fmt, ...)
{
    tw_source src = {p->file, tw_json_line_of(p->data, p->len, at), NULL};
    va_list ap;
    va_start(ap, fmt);
    tw_diag_vadd(p->d, TW_ERROR, &src, NULL, NULL, fmt, ap);
    va_end(ap);
    p->errors++;
}

static void at_path(parser *p, const char *path, const char *msg)
{
    tw_source src = {p->file, 0, path && *path ? path : "$"};
    tw_diag_add(p->d, TW_ERROR, &src, NULL, NULL, "%s", msg);
    p->errors++;
}

/* ---- checks before parsing ------------------------------------------------------------------ */

static int text_fits(parser *p, size_t start)
{
    const char *data = p->data + start;
    size_t len = p->len - start;
    size_t nul = tw_json_find_nul(data, len);
    if (nul < len) {
        at_byte(p, start + nul, "a NUL character (a NUL byte, or \\u0000) near byte %zu; "
                "expected %s without NUL, which would cut a value short", start + nul,
                expected(p));
        return 0;
    }
    if (tw_json_value_bound(data, len) > TW_MAX_JSON_VALUES) {
        tw_source src = {p->file, 0, NULL};
        tw_diag_add(p->d, TW_ERROR, &src, NULL, NULL, "more than %d JSON values; expected at "
                    "most that in one file", TW_MAX_JSON_VALUES);
        p->errors++;
        return 0;
    }
    size_t deep = too_deep_at(data, len);
    if (deep < len) {
        at_byte(p, start + deep, "arrays and objects nested deeper than %d levels near byte %zu; "
                "expected %s", TW_JSON_MAX_DEPTH, start + deep, expected(p));
        return 0;
    }
    return 1;
}

/* ---- duplicate keys ------------------------------------------------------------------------- */

static uint64_t key_hash(const char *s)
{
    uint64_t h = 14695981039346656037u; /* FNV-1a */
    for (; *s; s++)
        h = (h ^ (unsigned char)*s) * 1099511628211u;
    return h;
}

/* "buses[3].equipment_id": path of child `key` (or index i) below `base`. */
static char *child_path(const char *base, const char *key, size_t i)
{
    if (key)
        return *base ? tw_asprintf("%s.%s", base, key) : tw_strdup(key);
    return tw_asprintf("%s[%zu]", base, i);
}

/* The first child of obj whose key an earlier child already had, or NULL. Objects of up to
 * SMALL keys use a table on the stack (a row of results has about 20). */
#define SMALL 64
static const cJSON *second_key(const cJSON *obj, int *oom)
{
    const cJSON *slots[2 * SMALL];
    size_t n = 0;
    for (const cJSON *c = obj->child; c; c = c->next)
        n++;
    if (n < 2)
        return NULL;
    if (n > SMALL) {
        tw_map m;
        tw_map_init(&m);
        const cJSON *dup = NULL;
        size_t ignored;
        for (const cJSON *c = obj->child; c && !dup; c = c->next) {
            int r = tw_map_get_or_put(&m, c->string ? c->string : "", 0, &ignored);
            if (r < 0)
                *oom = 1;
            if (r != 0)
                dup = c;
        }
        tw_map_free(&m);
        return *oom ? NULL : dup;
    }
    size_t cap = 4;
    while (cap < 2 * n)
        cap *= 2;
    memset(slots, 0, cap * sizeof *slots);
    for (const cJSON *c = obj->child; c; c = c->next) {
        const char *k = c->string ? c->string : "";
        size_t i = key_hash(k) & (cap - 1);
        for (; slots[i]; i = (i + 1) & (cap - 1))
            if (strcmp(slots[i]->string ? slots[i]->string : "", k) == 0)
                return c;
        slots[i] = c;
    }
    return NULL;
}

/* Reports every key given twice below v (path names v). */
static void find_duplicates(parser *p, const cJSON *v, const char *path)
{
    if (!cJSON_IsObject(v) && !cJSON_IsArray(v))
        return;
    int oom = 0;
    const cJSON *dup = cJSON_IsObject(v) ? second_key(v, &oom) : NULL;
    if (oom || dup) {
        char *where = dup ? child_path(path, dup->string, 0) : NULL;
        at_path(p, where ? where : path, oom ? "out of memory" : "key given twice in one "
                "object; expected it once (which value is meant cannot be known)");
        free(where);
        return;
    }
    size_t i = 0;
    for (const cJSON *c = v->child; c; c = c->next, i++) {
        if (!cJSON_IsObject(c) && !cJSON_IsArray(c))
            continue;
        char *sub = child_path(path, cJSON_IsObject(v) ? c->string : NULL, i);
        if (!sub) {
            at_path(p, path, "out of memory");
            return;
        }
        find_duplicates(p, c, sub);
        free(sub);
    }
}

/* ---- parsing ------------------------------------------------------------------------------ */

static tw_arena *hook_arena;

static void *arena_malloc(size_t n)
{
    return tw_arena_alloc(hook_arena, n);
}

static void arena_free(void *ptr)
{
    (void)ptr; /* freed with the arena */
}

void tw_json_use_arena(tw_arena *a)
{
    hook_arena = a;
    cJSON_Hooks hooks = {arena_malloc, arena_free};
    cJSON_InitHooks(&hooks);
}

void tw_json_use_heap(void)
{
    cJSON_InitHooks(NULL);
    hook_arena = NULL;
}

static cJSON *parse_text(parser *p, size_t start, const char **end)
{
    tw_arena *arena = p->spec ? p->spec->arena : NULL;
    if (arena)
        tw_json_use_arena(arena);
    cJSON *root = cJSON_ParseWithLengthOpts(p->data + start, p->len - start, end, 0);
    if (arena)
        tw_json_use_heap();
    return root;
}

static const char *kind_name(const cJSON *v)
{
    if (cJSON_IsObject(v))
        return "an object";
    if (cJSON_IsArray(v))
        return "an array";
    if (cJSON_IsString(v))
        return "a string";
    if (cJSON_IsNumber(v))
        return "a number";
    return cJSON_IsNull(v) ? "null" : "true or false";
}

static int top_accepted(parser *p, const cJSON *root, size_t start)
{
    unsigned top = p->spec ? p->spec->top : 0;
    if (!top || ((top & TW_JSON_OBJECT) && cJSON_IsObject(root)) ||
        ((top & TW_JSON_ARRAY) && cJSON_IsArray(root)))
        return 1;
    at_byte(p, start, "expected %s at the top, got %s", expected(p), kind_name(root));
    return 0;
}

cJSON *tw_json_parse(const char *file, const char *data, size_t len, const tw_json_spec *spec,
                     tw_diags *d)
{
    parser p = {file ? file : "-", data ? data : "", data ? len : 0, spec, d, 0};
    size_t start = p.len >= 3 && memcmp(p.data, "\xEF\xBB\xBF", 3) == 0 ? 3 : 0;
    if (!text_fits(&p, start))
        return NULL;
    const char *end = NULL;
    cJSON *root = parse_text(&p, start, &end);
    size_t at = end && end >= p.data && end <= p.data + p.len ? (size_t)(end - p.data) : start;
    if (!root) {
        at_byte(&p, at, "not valid JSON near byte %zu; expected %s", at, expected(&p));
        return NULL;
    }
    while (at < p.len && strchr(" \t\r\n", p.data[at]))
        at++;
    if (at < p.len)
        at_byte(&p, at, "unexpected data after the JSON value near byte %zu; expected only "
                "blanks after %s", at, expected(&p));
    else if (top_accepted(&p, root, start))
        find_duplicates(&p, root, "");
    if (p.errors) {
        tw_json_free(root, spec);
        return NULL;
    }
    return root;
}

void tw_json_free(cJSON *root, const tw_json_spec *spec)
{
    if (!spec || !spec->arena)
        cJSON_Delete(root);
}
