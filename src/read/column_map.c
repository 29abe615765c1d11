/* column_map.c - reading a column map and applying it to cells (see tw_column_map.h and
 * docs/column-maps.md).
 *
 * Each top-level key is one row of map_keys below. Findings name the map file and the JSON
 * path of the value ("columns.Bus kV.scale"). Everything wrong is an error: a map decides how
 * numbers on a safety label are read, so nothing in it is skipped or guessed. */
#include "read/tw_column_map.h"
#include "read/tw_json.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_date.h"
#include "base/tw_util.h"

#define COUNT(a) (sizeof(a) / sizeof((a)[0]))

/* Longest source name or missing-value word, bytes (as a header cell's limit). */
#define TW_MAX_MAP_TEXT 512

typedef struct {
    tw_column_map *m;
    tw_diags *d;
    size_t errors;
} map_loader;

static void map_error(map_loader *L, const char *path, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 3, 4)))
#endif
    ;

static void map_error(map_loader *L, const char *path, const char *fmt, ...)
{
    tw_source src = {L->m->file, 0, path};
    va_list ap;
    va_start(ap, fmt);
    tw_diag_vadd(L->d, TW_ERROR, &src, NULL, NULL, fmt, ap);
    va_end(ap);
    L->errors++;
}

/* "columns.KEY" with KEY shown printable (a key may hold any bytes). */
static char *key_path(const char *parent, const char *key, const char *child)
{
    char *ex = tw_excerpt(key, strlen(key));
    char *p = child ? tw_asprintf("%s.%s.%s", parent, ex ? ex : "?", child)
                    : tw_asprintf("%s.%s", parent, ex ? ex : "?");
    free(ex);
    return p;
}

int tw_column_map_name_ok(const char *s)
{
    size_t n = strlen(s);
    if (n == 0 || n > TW_MAX_MAP_TEXT)
        return 0;
    for (size_t i = 0; i < n;) {
        uint32_t cp;
        size_t k = tw_utf8_decode((const unsigned char *)s + i, n - i, &cp);
        if (k == 0 || cp < 0x20 || cp == 0x7F)
            return 0;
        i += k;
    }
    return 1;
}

/* ---- top-level settings ----------------------------------------------------------------- */

static void key_encoding(map_loader *L, const cJSON *v)
{
    static const struct {
        const char *name;
        tw_encoding enc;
    } names[] = {{"utf-8", TW_ENCODING_UTF8},
                 {"windows-1252", TW_ENCODING_WINDOWS_1252},
                 {"iso-8859-1", TW_ENCODING_ISO_8859_1}};
    for (size_t i = 0; cJSON_IsString(v) && i < COUNT(names); i++) {
        if (tw_strcaseeq(v->valuestring, names[i].name)) {
            L->m->encoding = names[i].enc;
            L->m->csv_only_keys = 1;
            return;
        }
    }
    map_error(L, "encoding", "expected \"utf-8\", \"windows-1252\" or \"iso-8859-1\"");
}

static void key_header_line(map_loader *L, const cJSON *v)
{
    if (!cJSON_IsNumber(v) || v->valuedouble != floor(v->valuedouble) || v->valuedouble < 1 ||
        v->valuedouble > TW_MAX_HEADER_LINE) {
        map_error(L, "header_line",
                  "expected a whole number from 1 to %d (the line of the header; 1 is the first)",
                  TW_MAX_HEADER_LINE);
        return;
    }
    L->m->header_line = (long)v->valuedouble;
    L->m->csv_only_keys = 1;
}

static void key_delimiter(map_loader *L, const cJSON *v)
{
    const char *s = cJSON_IsString(v) ? v->valuestring : "";
    if (!strcmp(s, ",") || !strcmp(s, ";") || !strcmp(s, "\t")) {
        L->m->delimiter = *s;
    } else if (!strcmp(s, "tab")) {
        L->m->delimiter = '\t';
    } else {
        map_error(L, "delimiter", "expected \",\", \";\" or \"tab\" (or \"\\t\")");
        return;
    }
    L->m->csv_only_keys = 1;
}

static void key_decimal(map_loader *L, const cJSON *v)
{
    const char *s = cJSON_IsString(v) ? v->valuestring : "";
    if (strcmp(s, ".") != 0 && strcmp(s, ",") != 0) {
        map_error(L, "decimal", "expected \".\" or \",\" (the decimal mark of the numbers)");
        return;
    }
    L->m->decimal = *s;
    L->m->csv_only_keys = 1;
}

static void key_stop_at_blank_line(map_loader *L, const cJSON *v)
{
    if (!cJSON_IsBool(v)) {
        map_error(L, "stop_at_blank_line", "expected true or false");
        return;
    }
    L->m->stop_at_blank_line = cJSON_IsTrue(v);
    L->m->csv_only_keys = 1;
}

/* ---- columns ---------------------------------------------------------------------------- */

static const struct {
    const char *name;
    tw_date_order order;
} date_formats[] = {{"YYYY-MM-DD", TW_DATES_ISO},
                    {"MM/DD/YYYY", TW_DATES_MM_DD_YYYY},
                    {"DD/MM/YYYY", TW_DATES_DD_MM_YYYY},
                    {"DD.MM.YYYY", TW_DATES_DD_MM_YYYY_DOT}};

/* The column a field name in the map stands for: any name tagwright accepts, units included
 * ("working_distance_in"), so a scale is always into a named unit. */
static const tw_column *field_column(map_loader *L, const cJSON *v, const char *path)
{
    const tw_column *c = cJSON_IsString(v) ? tw_column_find(v->valuestring) : NULL;
    if (!c)
        map_error(L, path,
                  "expected a tagwright field name such as \"nominal_voltage_v\" or "
                  "\"arc_flash_boundary_in\" (docs/input-format.md)");
    return c;
}

/* 10^k for a whole k within the range where both 10^k and its reciprocal are exact decimal
 * shifts of a cell's text, else TW_NO_POW10. */
static int pow10_of(double scale)
{
    for (int k = -15; k <= 15; k++) {
        char buf[16];
        snprintf(buf, sizeof buf, "1e%d", k);
        if (strtod(buf, NULL) == scale)
            return k;
    }
    return TW_NO_POW10;
}

static void column_object(map_loader *L, const cJSON *v, const char *key, tw_mapped_column *mc)
{
    const cJSON *field = NULL, *scale = NULL, *dates = NULL;
    for (const cJSON *k = v->child; k; k = k->next) {
        const char *name = k->string ? k->string : "";
        const cJSON **slot = !strcmp(name, "field")         ? &field
                             : !strcmp(name, "scale")       ? &scale
                             : !strcmp(name, "date_format") ? &dates
                                                            : NULL;
        char *path = key_path("columns", key, name);
        if (!slot)
            map_error(L, path ? path : "columns",
                      "unknown key; expected \"field\", \"scale\" or \"date_format\"");
        else if (*slot)
            map_error(L, path ? path : "columns", "key given twice; expected it once");
        else
            *slot = k;
        free(path);
    }
    char *path = key_path("columns", key, "field");
    if (!field)
        map_error(L, path ? path : "columns", "expected a \"field\" naming a tagwright field");
    else
        mc->column = field_column(L, field, path ? path : "columns");
    free(path);
    if (scale) {
        path = key_path("columns", key, "scale");
        if (!cJSON_IsNumber(scale) || !isfinite(scale->valuedouble) || scale->valuedouble <= 0)
            map_error(L, path ? path : "columns",
                      "expected a number greater than 0 (the factor into the field's unit)");
        else if (mc->column && mc->column->kind != TW_KIND_NUMBER &&
                 mc->column->kind != TW_KIND_INTEGER)
            map_error(L, path ? path : "columns", "expected no scale: %s is not a number",
                      mc->column->name);
        else
            mc->scale = scale->valuedouble;
        free(path);
    }
    if (dates) {
        path = key_path("columns", key, "date_format");
        size_t i = 0;
        while (cJSON_IsString(dates) && i < COUNT(date_formats) &&
               strcmp(dates->valuestring, date_formats[i].name) != 0)
            i++;
        if (!cJSON_IsString(dates) || i == COUNT(date_formats))
            map_error(L, path ? path : "columns",
                      "expected \"YYYY-MM-DD\", \"MM/DD/YYYY\", \"DD/MM/YYYY\" or \"DD.MM.YYYY\"");
        else if (mc->column && mc->column->field != TW_F_STUDY_DATE)
            map_error(L, path ? path : "columns", "expected no date_format: %s is not a date",
                      mc->column->name);
        else
            mc->dates = date_formats[i].order;
        free(path);
    }
}

/* Name shown in findings about a mapped column's cells. */
static int name_for_findings(tw_mapped_column *mc)
{
    if (!mc->column)
        return 0;
    mc->as = *mc->column;
    char *ex = tw_excerpt(mc->source, strlen(mc->source));
    char *name = strcmp(mc->source, mc->column->name) == 0
                     ? tw_strdup(mc->column->name)
                     : tw_asprintf("%s (from \"%s\")", mc->column->name, ex ? ex : "?");
    free(ex);
    mc->as.name = name;
    return name ? 0 : -1;
}

/* A text, boolean or whole-number field filled from two source columns would silently keep
 * one of them; numbers may come in two units (they must then agree, as without a map). */
static void check_twice(map_loader *L, tw_column_map *m)
{
    for (size_t i = 0; i < m->column_count; i++) {
        const tw_column *a = m->columns[i].column;
        if (!a || a->kind == TW_KIND_NUMBER)
            continue;
        for (size_t j = 0; j < i; j++) {
            if (m->columns[j].column && m->columns[j].column->field == a->field) {
                char *path = key_path("columns", m->columns[i].source, NULL);
                map_error(L, path ? path : "columns",
                          "%s is already read from \"%s\"; expected each field from one column",
                          a->name, m->columns[j].source);
                free(path);
                break;
            }
        }
    }
}

static void key_columns(map_loader *L, const cJSON *v)
{
    tw_column_map *m = L->m;
    int n = cJSON_IsObject(v) ? cJSON_GetArraySize(v) : -1;
    if (n < 0 || n > TW_MAX_MAP_COLUMNS) {
        map_error(L, "columns",
                  "expected an object of at most %d entries \"header text\": \"field\"",
                  TW_MAX_MAP_COLUMNS);
        return;
    }
    m->columns = calloc((size_t)n + 1, sizeof *m->columns);
    if (!m->columns || tw_map_reserve(&m->index, (size_t)n) != 0) {
        map_error(L, "columns", "out of memory");
        return;
    }
    for (const cJSON *e = v->child; e; e = e->next) {
        char *source = tw_strdup(e->string ? e->string : "");
        char *path = key_path("columns", source ? source : "", NULL);
        const char *at = path ? path : "columns";
        if (!source) {
            map_error(L, at, "out of memory");
            free(path);
            return;
        }
        tw_trim(source);
        tw_mapped_column *mc = &m->columns[m->column_count];
        size_t seen = 0;
        if (!tw_column_map_name_ok(source)) {
            map_error(L, at, "expected header text: not empty, at most %d bytes, UTF-8 without "
                             "control characters", TW_MAX_MAP_TEXT);
            free(source);
        } else if (tw_map_get(&m->index, source, &seen)) {
            map_error(L, at, "header given twice (after trimming blanks); expected it once");
            free(source);
        } else {
            mc->source = source;
            mc->scale = 1;
            mc->dates = TW_DATES_ISO;
            if (cJSON_IsString(e))
                mc->column = field_column(L, e, at);
            else if (cJSON_IsObject(e))
                column_object(L, e, source, mc);
            else if (!cJSON_IsNull(e))
                map_error(L, at, "expected a field name, an object {\"field\": ...} or null "
                                 "(the column is not read)");
            mc->scale_pow10 = pow10_of(mc->scale);
            if (name_for_findings(mc) != 0 || tw_map_put(&m->index, mc->source, m->column_count))
                map_error(L, at, "out of memory");
            m->column_count++;
        }
        free(path);
    }
    check_twice(L, m);
}

/* ---- constants and missing values ------------------------------------------------------- */

static void read_constant(map_loader *L, const cJSON *e, const char *at, tw_map_constant *k)
{
    const tw_column *c = k->column;
    int yes = 0;
    if (c->kind == TW_KIND_TEXT && cJSON_IsString(e) && tw_column_map_name_ok(e->valuestring)) {
        tw_date dt;
        if (c->field == TW_F_STUDY_DATE && tw_date_parse(e->valuestring, &dt) != 0)
            map_error(L, at, "expected a date YYYY-MM-DD");
        else if (!(k->text = tw_strdup(e->valuestring)))
            map_error(L, at, "out of memory");
    } else if ((c->kind == TW_KIND_NUMBER || c->kind == TW_KIND_INTEGER) && cJSON_IsNumber(e) &&
               isfinite(e->valuedouble)) {
        k->number = e->valuedouble;
    } else if (c->kind == TW_KIND_BOOL && cJSON_IsBool(e)) {
        k->number = cJSON_IsTrue(e);
    } else if (c->kind == TW_KIND_BOOL && cJSON_IsString(e) &&
               tw_parse_yes_no(e->valuestring, &yes) == 0) {
        k->number = yes;
    } else {
        map_error(L, at, "expected %s for %s",
                  c->kind == TW_KIND_TEXT   ? "a non-empty single-line string"
                  : c->kind == TW_KIND_BOOL ? "true or false"
                                            : "a number",
                  c->name);
    }
}

static void key_constants(map_loader *L, const cJSON *v)
{
    tw_column_map *m = L->m;
    int n = cJSON_IsObject(v) ? cJSON_GetArraySize(v) : -1;
    if (n < 0 || n > TW_MAX_MAP_WORDS) {
        map_error(L, "constants", "expected an object of at most %d entries \"field\": value",
                  TW_MAX_MAP_WORDS);
        return;
    }
    m->constants = calloc((size_t)n + 1, sizeof *m->constants);
    if (!m->constants) {
        map_error(L, "constants", "out of memory");
        return;
    }
    for (const cJSON *e = v->child; e; e = e->next) {
        char *path = key_path("constants", e->string ? e->string : "", NULL);
        const char *at = path ? path : "constants";
        const tw_column *c = e->string ? tw_column_find(e->string) : NULL;
        if (!c) {
            map_error(L, at, "expected a tagwright field name (docs/input-format.md)");
        } else if (tw_column_map_constant(m, c->field)) {
            map_error(L, at, "field given twice; expected it once");
        } else {
            tw_map_constant *k = &m->constants[m->constant_count++];
            k->column = c;
            read_constant(L, e, at, k);
        }
        free(path);
    }
}

static void key_missing_values(map_loader *L, const cJSON *v)
{
    tw_column_map *m = L->m;
    int n = cJSON_IsArray(v) ? cJSON_GetArraySize(v) : -1;
    if (n < 0 || n > TW_MAX_MAP_WORDS) {
        map_error(L, "missing_values", "expected an array of at most %d strings",
                  TW_MAX_MAP_WORDS);
        return;
    }
    m->missing = calloc((size_t)n + 1, sizeof *m->missing);
    if (!m->missing) {
        map_error(L, "missing_values", "out of memory");
        return;
    }
    int i = 0;
    for (const cJSON *e = v->child; e; e = e->next, i++) {
        char *copy = cJSON_IsString(e) ? tw_strdup(e->valuestring) : NULL;
        if (copy)
            tw_trim(copy);
        if (!copy || !tw_column_map_name_ok(copy)) {
            char path[64];
            snprintf(path, sizeof path, "missing_values[%d]", i);
            map_error(L, path, "expected a non-empty string (a cell read as empty), at most %d "
                               "bytes, without control characters", TW_MAX_MAP_TEXT);
            free(copy);
            continue;
        }
        m->missing[m->missing_count++] = copy;
    }
}

/* ---- the whole map ---------------------------------------------------------------------- */

static const struct {
    const char *key;
    void (*read)(map_loader *, const cJSON *);
} map_keys[] = {
    {"encoding", key_encoding},
    {"header_line", key_header_line},
    {"delimiter", key_delimiter},
    {"decimal", key_decimal},
    {"stop_at_blank_line", key_stop_at_blank_line},
    {"columns", key_columns},
    {"constants", key_constants},
    {"missing_values", key_missing_values},
};

/* A field both read from a column and given as a constant has two values on every row. */
static void check_constants(map_loader *L, tw_column_map *m)
{
    for (size_t i = 0; i < m->column_count; i++) {
        const tw_column *c = m->columns[i].column;
        if (c && tw_column_map_constant(m, c->field)) {
            char *path = key_path("columns", m->columns[i].source, NULL);
            map_error(L, path ? path : "columns",
                      "%s is also given in \"constants\"; expected one or the other", c->name);
            free(path);
        }
    }
}

static void apply_map(map_loader *L, const cJSON *root)
{
    unsigned seen = 0;
    for (const cJSON *item = root->child; item; item = item->next) {
        const char *key = item->string ? item->string : "";
        size_t i = 0;
        while (i < COUNT(map_keys) && strcmp(map_keys[i].key, key) != 0)
            i++;
        char *ex = tw_excerpt(key, strlen(key));
        if (i == COUNT(map_keys))
            map_error(L, ex ? ex : "?",
                      "unknown key; expected encoding, header_line, delimiter, decimal, "
                      "stop_at_blank_line, columns, constants or missing_values");
        else if (seen & (1u << i))
            map_error(L, ex ? ex : "?", "key given twice; expected it once");
        else {
            seen |= 1u << i;
            map_keys[i].read(L, item);
        }
        free(ex);
    }
    if (L->m->decimal == ',' && L->m->delimiter == ',')
        map_error(L, "decimal", "expected a delimiter other than \",\" with the decimal mark \",\"");
    check_constants(L, L->m);
}

int tw_column_map_read_mem(const char *name, const char *data, size_t len, tw_column_map *m,
                           tw_diags *d)
{
    memset(m, 0, sizeof *m);
    m->header_line = 1;
    m->delimiter = ',';
    m->decimal = '.';
    tw_map_init(&m->index);
    map_loader L = {m, d, 0};
    if (!(m->file = tw_strdup(name ? name : "-"))) {
        tw_source src = {name, 0, NULL};
        tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "out of memory");
        return -1;
    }
    static const tw_json_spec spec = {"a column map {\"columns\": {...}}", TW_JSON_OBJECT, NULL};
    cJSON *root = tw_json_parse(m->file, data, len, &spec, d);
    if (!root)
        return -1;
    apply_map(&L, root);
    cJSON_Delete(root);
    return L.errors ? -1 : 0;
}

int tw_column_map_read(const char *path, tw_column_map *m, tw_diags *d)
{
    char err[512] = "";
    size_t len = 0;
    char *data = tw_read_file(path, &len, err, sizeof err);
    if (!data) {
        memset(m, 0, sizeof *m);
        tw_source src = {path, 0, NULL};
        tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "%s", err);
        return -1;
    }
    int rc = tw_column_map_read_mem(path, data, len, m, d);
    free(data);
    return rc;
}

void tw_column_map_free(tw_column_map *m)
{
    for (size_t i = 0; i < m->column_count; i++) {
        free(m->columns[i].source);
        free((char *)m->columns[i].as.name);
    }
    free(m->columns);
    for (size_t i = 0; i < m->constant_count; i++)
        free(m->constants[i].text);
    free(m->constants);
    for (size_t i = 0; i < m->missing_count; i++)
        free(m->missing[i]);
    free(m->missing);
    tw_map_free(&m->index);
    free(m->file);
    memset(m, 0, sizeof *m);
}

/* ---- applying the map ------------------------------------------------------------------- */

const tw_mapped_column *tw_column_map_find(const tw_column_map *m, const char *source)
{
    size_t i;
    return m && tw_map_get(&m->index, source, &i) ? &m->columns[i] : NULL;
}

const tw_map_constant *tw_column_map_constant(const tw_column_map *m, tw_field f)
{
    for (size_t i = 0; m && i < m->constant_count; i++)
        if (m->constants[i].column->field == f)
            return &m->constants[i];
    return NULL;
}

int tw_column_map_is_missing(const tw_column_map *m, const char *s, size_t len)
{
    for (size_t i = 0; i < m->missing_count; i++)
        if (strlen(m->missing[i]) == len && memcmp(m->missing[i], s, len) == 0)
            return 1;
    return 0;
}

void tw_column_map_apply_constants(const tw_column_map *m, tw_row *r, tw_diags *d)
{
    for (size_t i = 0; m && i < m->constant_count; i++) {
        const tw_map_constant *k = &m->constants[i];
        if (((r->present | r->invalid) >> k->column->field) & 1u) {
            tw_row_diag(d, r, TW_ERROR, k->column->field, NULL,
                        "given in the row and as a constant in the column map %s; expected one "
                        "or the other", m->file);
            tw_row_mark_invalid(r, k->column->field);
        } else if (k->text)
            tw_row_set_text(r, k->column, k->text, strlen(k->text), d);
        else if (k->column->kind != TW_KIND_TEXT)
            tw_row_set_number(r, k->column, k->number, d);
    }
}

static void bad_value(const tw_mapped_column *mc, tw_row *r, const char *expected, const char *s,
                      size_t len, tw_diags *d)
{
    char *ex = tw_excerpt(s, len);
    tw_row_diag(d, r, TW_ERROR, mc->as.field, mc->as.name, "expected %s, got '%s'", expected,
                ex ? ex : "?");
    free(ex);
    tw_row_mark_invalid(r, mc->as.field);
}

/* YYYY-MM-DD from a date written day-first or month-first, or -1. One- or two-digit day and
 * month (spreadsheets drop the zero), four-digit year: a two-digit year could be either
 * century. */
static int iso_date(const char *s, tw_date_order order, char out[16])
{
    char sep = order == TW_DATES_DD_MM_YYYY_DOT ? '.' : '/';
    int part[3] = {0, 0, 0}, digits[3] = {0, 0, 0}, k = 0;
    for (const char *p = s; *p; p++) {
        if (*p == sep && k < 2) {
            k++;
        } else if (*p >= '0' && *p <= '9' && digits[k] < 4) {
            part[k] = part[k] * 10 + (*p - '0');
            digits[k]++;
        } else {
            return -1;
        }
    }
    if (k != 2 || digits[0] < 1 || digits[0] > 2 || digits[1] < 1 || digits[1] > 2 ||
        digits[2] != 4)
        return -1;
    int month = order == TW_DATES_MM_DD_YYYY ? part[0] : part[1];
    int day = order == TW_DATES_MM_DD_YYYY ? part[1] : part[0];
    snprintf(out, 16, "%04u-%02u-%02u", (unsigned)part[2] % 10000u, (unsigned)month % 100u,
             (unsigned)day % 100u);
    tw_date dt;
    return tw_date_parse(out, &dt);
}

static void set_date(const tw_mapped_column *mc, tw_row *r, const char *v, tw_diags *d)
{
    char iso[16];
    if (iso_date(v, mc->dates, iso) != 0) {
        const char *fmt = date_formats[mc->dates].name;
        char expected[64];
        snprintf(expected, sizeof expected, "a date %s (the map's date_format) that exists", fmt);
        bad_value(mc, r, expected, v, strlen(v), d);
        return;
    }
    tw_row_set_text(r, &mc->as, iso, strlen(iso), d);
}

/* The cell's number times the column's scale. A power of ten moves the decimal point of the
 * text itself ("0.48" kV x 10^3 is exactly 480 V), so no binary rounding creeps in. */
static int scaled(const tw_mapped_column *mc, const char *v, double x, double *out)
{
    if (mc->scale_pow10 == 0 || mc->scale == 1) {
        *out = x;
        return 0;
    }
    if (mc->scale_pow10 != TW_NO_POW10 && !strpbrk(v, "eE") && strlen(v) < 48) {
        char buf[64];
        snprintf(buf, sizeof buf, "%se%d", v, mc->scale_pow10);
        if (tw_parse_double(buf, out) == 0)
            return 0;
    }
    *out = x * mc->scale;
    return isfinite(*out) ? 0 : -1;
}

void tw_mapped_set_number(const tw_mapped_column *mc, tw_row *r, double v, tw_diags *d)
{
    char text[40];
    double out = v;
    snprintf(text, sizeof text, "%.15g", v);
    if (scaled(mc, text, v, &out) != 0) {
        tw_row_diag(d, r, TW_ERROR, mc->as.field, mc->as.name,
                    "expected a number that stays finite when scaled by %g", mc->scale);
        tw_row_mark_invalid(r, mc->as.field);
        return;
    }
    tw_row_set_number(r, &mc->as, out, d);
}

/* A number cell: the map's decimal mark, then the scale. */
static void set_number_cell(const tw_column_map *m, const tw_mapped_column *mc, tw_row *r,
                            char *v, tw_diags *d)
{
    const char *expected = mc->as.kind == TW_KIND_INTEGER ? "a whole number" : "a decimal number";
    if (m->decimal == ',') {
        if (strchr(v, '.')) {
            bad_value(mc, r, "a number with a decimal comma (the map's decimal mark) and no '.'",
                      v, strlen(v), d);
            return;
        }
        for (char *p = v; *p; p++)
            if (*p == ',')
                *p = '.';
    }
    double x = 0;
    if (tw_parse_cell_number(v, &x) != 0) {
        if (m->decimal == ',')
            for (char *p = v; *p; p++)
                if (*p == '.')
                    *p = ',';
        bad_value(mc, r, expected, v, strlen(v), d);
        return;
    }
    double out = 0;
    if (scaled(mc, v, x, &out) != 0) {
        tw_row_diag(d, r, TW_ERROR, mc->as.field, mc->as.name,
                    "expected a number that stays finite when scaled by %g", mc->scale);
        tw_row_mark_invalid(r, mc->as.field);
        return;
    }
    tw_row_set_number(r, &mc->as, out, d);
}

void tw_mapped_set_cell(const tw_column_map *m, const tw_mapped_column *mc, tw_row *r,
                        const char *s, size_t len, tw_diags *d)
{
    size_t a = 0, b = len;
    while (a < b && (s[a] == ' ' || s[a] == '\t' || s[a] == '\r' || s[a] == '\n'))
        a++;
    while (b > a && (s[b - 1] == ' ' || s[b - 1] == '\t' || s[b - 1] == '\r' || s[b - 1] == '\n'))
        b--;
    if (a == b || tw_column_map_is_missing(m, s + a, b - a))
        return;
    int plain = mc->as.kind == TW_KIND_BOOL ||
                (mc->as.kind == TW_KIND_TEXT && mc->dates == TW_DATES_ISO) ||
                memchr(s, '\0', len) != NULL;
    if (plain) {
        tw_row_set_cell(r, &mc->as, s + a, b - a, d);
        return;
    }
    if ((r->invalid >> mc->as.field) & 1u)
        return;
    char small[64];
    char *v = b - a < sizeof small ? small : tw_strndup(s + a, b - a);
    if (!v) {
        tw_row_diag(d, r, TW_ERROR, mc->as.field, mc->as.name, "out of memory");
        tw_row_mark_invalid(r, mc->as.field);
        return;
    }
    if (v == small) {
        memcpy(small, s + a, b - a);
        small[b - a] = '\0';
    }
    if (mc->as.kind == TW_KIND_TEXT)
        set_date(mc, r, v, d);
    else
        set_number_cell(m, mc, r, v, d);
    if (v != small)
        free(v);
}
