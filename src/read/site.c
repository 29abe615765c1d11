/* site.c - site settings: defaults and the JSON settings file (see tw_site.h and
 * docs/site-settings.md).
 *
 * Each top-level key is one row of settings_table below: its name and the function that reads
 * it. Every finding names the JSON path of the value (e.g. "ppe_levels[2].arc_rating_cal_cm2").
 * Wrong types and out-of-range values are errors; unknown keys are warnings.
 */
#include "read/tw_site.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "read/tw_results.h"
#include "base/tw_fonts.h"
#include "base/tw_text.h"
#include "base/tw_util.h"
#include "read/tw_json.h"

/* Default PPE levels: names of our own; arc ratings at the NFPA 70E Table 130.7(C)(15)(c)
 * category minimums (4, 8, 25, 40 cal/cm2) so that a site without settings still gets a
 * sensible ladder. */
static const struct {
    const char *name;
    double rating;
} default_levels[] = {
    {"AR-4", 4},
    {"AR-8", 8},
    {"AR-25", 25},
    {"AR-40", 40},
};

/* Highest service rating a threshold may name, amperes: a shape check only; the trade rule
 * (NEC 110.16(B), at most the code's threshold) is tw_site_check_rules() in rules. */
#define TW_MAX_SERVICE_A 1000000.0
/* Longest site text accepted (site name, caution line, link, layout), bytes; longer is an
 * error, never truncated. */
#define TW_MAX_SITE_TEXT TW_MAX_TEXT_BYTES
/* Most PPE levels and caution lines a settings file may list. */
#define TW_MAX_SITE_ITEMS 64

#define COUNT(a) (sizeof(a) / sizeof((a)[0]))

static void free_levels(tw_ppe_level *levels, size_t n)
{
    for (size_t i = 0; i < n; i++)
        free(levels[i].name);
    free(levels);
}

static void free_strings(char **v, size_t n)
{
    for (size_t i = 0; i < n; i++)
        free(v[i]);
    free(v);
}

void tw_site_free(tw_site *s)
{
    if (!s)
        return;
    free(s->site_name);
    free(s->record_link);
    free_levels(s->ppe_levels, s->ppe_level_count);
    free_strings(s->cautions, s->caution_count);
    free(s->language);
    free(s->layout);
    free(s->columns);
    free(s->registry);
    memset(s, 0, sizeof *s);
}

int tw_site_defaults(tw_site *s)
{
    memset(s, 0, sizeof *s);
    s->show = TW_SHOW_INCIDENT_ENERGY;
    s->units = TW_UNITS_IMPERIAL_METRIC;
    s->site_name = tw_strdup("");
    s->record_link = tw_strdup(TW_DEFAULT_RECORD_LINK);
    s->language = tw_strdup("en");
    s->ppe_levels = calloc(COUNT(default_levels), sizeof *s->ppe_levels);
    if (!s->site_name || !s->record_link || !s->language || !s->ppe_levels)
        goto fail;
    for (size_t i = 0; i < COUNT(default_levels); i++) {
        s->ppe_levels[i].name = tw_strdup(default_levels[i].name);
        s->ppe_levels[i].arc_rating_cal_cm2 = default_levels[i].rating;
        s->ppe_level_count = i + 1;
        if (!s->ppe_levels[i].name)
            goto fail;
    }
    return 0;
fail:
    tw_site_free(s);
    return -1;
}

double tw_site_max_rating(const tw_site *s)
{
    double max = 0;
    for (size_t i = 0; s && i < s->ppe_level_count; i++)
        if (s->ppe_levels[i].arc_rating_cal_cm2 > max)
            max = s->ppe_levels[i].arc_rating_cal_cm2;
    return max;
}

/* Scans every level rather than trusting the order, so a hand-built site works too. */
const tw_ppe_level *tw_site_level_for(const tw_site *s, double cal)
{
    const tw_ppe_level *best = NULL;
    if (!s || isnan(cal))
        return NULL;
    for (size_t i = 0; i < s->ppe_level_count; i++) {
        const tw_ppe_level *l = &s->ppe_levels[i];
        if (l->arc_rating_cal_cm2 >= cal && (!best || l->arc_rating_cal_cm2 < best->arc_rating_cal_cm2))
            best = l;
    }
    return best;
}

/* ---- loading ---------------------------------------------------------------------------- */

typedef struct {
    const char *file;
    tw_diags *d;
    size_t errors;
} loader;

/* Add a finding at a JSON path; field is the last key of the path. */
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
    tw_source src = {L->file, 0, path};
    va_list ap;
    va_start(ap, fmt);
    tw_diag_vadd(L->d, sev, &src, NULL, field, fmt, ap);
    va_end(ap);
}

static void oom(loader *L, const char *path, const char *field)
{
    finding(L, TW_ERROR, path, field, "out of memory");
}

/* A non-empty string of at most TW_MAX_SITE_TEXT bytes (empty allowed when allow_empty),
 * copied into *dst (replacing what was there). */
static void read_text(loader *L, const cJSON *v, const char *path, const char *field,
                      int allow_empty, char **dst)
{
    if (!cJSON_IsString(v) || !v->valuestring) {
        finding(L, TW_ERROR, path, field, "expected a string");
        return;
    }
    size_t n = strlen(v->valuestring);
    if (n == 0 && !allow_empty) {
        finding(L, TW_ERROR, path, field, "expected a non-empty string");
        return;
    }
    if (n > TW_MAX_SITE_TEXT) {
        finding(L, TW_ERROR, path, field, "longer than %d bytes", TW_MAX_SITE_TEXT);
        return;
    }
    if (n > 0 && strspn(v->valuestring, " \t\r\n") == n) {
        finding(L, TW_ERROR, path, field, "expected text, found only blanks");
        return;
    }
    /* Site texts are printed as they are, each on its own line of a label or permit. */
    if (!tw_text_ok(v->valuestring)) {
        finding(L, TW_ERROR, path, field, "expected printable UTF-8 text on one line, found a "
                "line break, a control character or bytes that are not UTF-8");
        return;
    }
    char *copy = tw_strdup(v->valuestring);
    if (!copy) {
        oom(L, path, field);
        return;
    }
    free(*dst);
    *dst = copy;
}

/* One of the allowed words; its index into *dst. */
static void read_choice(loader *L, const cJSON *v, const char *path, const char *field,
                        const char *const *words, size_t n, int *dst)
{
    if (cJSON_IsString(v) && v->valuestring)
        for (size_t i = 0; i < n; i++)
            if (strcmp(v->valuestring, words[i]) == 0) {
                *dst = (int)i;
                return;
            }
    char expected[256] = "";
    for (size_t i = 0; i < n; i++) {
        size_t used = strlen(expected);
        snprintf(expected + used, sizeof expected - used, "%s\"%s\"", i ? " or " : "", words[i]);
    }
    finding(L, TW_ERROR, path, field, "expected %s", expected);
}

/* A finite number above 0 (and at most max). */
static int read_positive(loader *L, const cJSON *v, const char *path, const char *field,
                         double max, double *dst)
{
    if (!cJSON_IsNumber(v)) {
        finding(L, TW_ERROR, path, field, "expected a number");
        return -1;
    }
    if (!(v->valuedouble > 0 && v->valuedouble <= max)) {
        finding(L, TW_ERROR, path, field, "expected a number above 0 and at most %g, got %g", max,
                v->valuedouble);
        return -1;
    }
    *dst = v->valuedouble;
    return 0;
}

/* Highest arc rating or threshold we accept, cal/cm2: well beyond any arc-rated garment. */
#define TW_MAX_CAL 10000.0

static void key_site_name(loader *L, const cJSON *v, tw_site *s)
{
    read_text(L, v, "site_name", "site_name", 1, &s->site_name);
}

static void key_record_link(loader *L, const cJSON *v, tw_site *s)
{
    read_text(L, v, "record_link", "record_link", 0, &s->record_link);
}

static void key_label_shows(loader *L, const cJSON *v, tw_site *s)
{
    static const char *const words[] = {"incident_energy", "ppe_category"};
    int i = (int)s->show;
    read_choice(L, v, "label_shows", "label_shows", words, COUNT(words), &i);
    s->show = i == 1 ? TW_SHOW_PPE_CATEGORY : TW_SHOW_INCIDENT_ENERGY;
}

static void key_units(loader *L, const cJSON *v, tw_site *s)
{
    static const char *const words[] = {"imperial+metric", "metric"};
    int i = (int)s->units;
    read_choice(L, v, "units", "units", words, COUNT(words), &i);
    s->units = i == 1 ? TW_UNITS_METRIC : TW_UNITS_IMPERIAL_METRIC;
}

static void key_language(loader *L, const cJSON *v, tw_site *s)
{
    static const char *const words[] = {"en", "es", "en+es"};
    int i = -1;
    read_choice(L, v, "language", "language", words, COUNT(words), &i);
    if (i < 0)
        return;
    char *copy = tw_strdup(words[i]);
    if (!copy) {
        oom(L, "language", "language");
        return;
    }
    free(s->language);
    s->language = copy;
}

static void key_layout(loader *L, const cJSON *v, tw_site *s)
{
    if (cJSON_IsNull(v)) {   /* explicit null: the default layout */
        free(s->layout);
        s->layout = NULL;
        return;
    }
    read_text(L, v, "layout", "layout", 0, &s->layout);
}

static void key_registry(loader *L, const cJSON *v, tw_site *s)
{
    read_text(L, v, "registry", "registry", 0, &s->registry);
}

static void key_danger_above(loader *L, const cJSON *v, tw_site *s)
{
    read_positive(L, v, "danger_above_cal_cm2", "danger_above_cal_cm2", TW_MAX_CAL,
                  &s->danger_above_cal_cm2);
}

/* A lower threshold than the code's (a stricter site, or the 2023 edition's 1000 A) is
 * accepted; rules refuses a higher one (tw_site_check_rules). */
static void key_service_min(loader *L, const cJSON *v, tw_site *s)
{
    read_positive(L, v, "service_label_min_a", "service_label_min_a", TW_MAX_SERVICE_A,
                  &s->service_label_min_a);
}

static void key_cautions(loader *L, const cJSON *v, tw_site *s)
{
    if (!cJSON_IsArray(v)) {
        finding(L, TW_ERROR, "cautions", "cautions", "expected an array of strings");
        return;
    }
    int n = cJSON_GetArraySize(v);
    if (n > TW_MAX_SITE_ITEMS) {
        finding(L, TW_ERROR, "cautions", "cautions", "more than %d lines", TW_MAX_SITE_ITEMS);
        return;
    }
    char **lines = calloc(n ? (size_t)n : 1, sizeof *lines);
    if (!lines) {
        oom(L, "cautions", "cautions");
        return;
    }
    size_t before = L->errors, count = 0;
    const cJSON *item;
    cJSON_ArrayForEach(item, v) {
        char path[64];
        snprintf(path, sizeof path, "cautions[%zu]", count);
        read_text(L, item, path, "cautions", 0, &lines[count]);
        count++;
    }
    if (L->errors != before) {
        free_strings(lines, count);
        return;
    }
    free_strings(s->cautions, s->caution_count);
    s->cautions = lines;
    s->caution_count = count;
}

/* One {"name": ..., "arc_rating_cal_cm2": ...} object. */
static void read_level(loader *L, const cJSON *v, size_t i, tw_ppe_level *out)
{
    char base[48];
    snprintf(base, sizeof base, "ppe_levels[%zu]", i);
    if (!cJSON_IsObject(v)) {
        finding(L, TW_ERROR, base, "ppe_levels",
                "expected an object with \"name\" and \"arc_rating_cal_cm2\"");
        return;
    }
    const cJSON *k; /* each key once: tw_json_parse() refuses a key given twice */
    cJSON_ArrayForEach(k, v) {
        char *path = tw_asprintf("%s.%s", base, k->string ? k->string : "");
        if (!path) {
            oom(L, base, "ppe_levels");
            return;
        }
        if (k->string && strcmp(k->string, "name") == 0)
            read_text(L, k, path, "name", 0, &out->name);
        else if (k->string && strcmp(k->string, "arc_rating_cal_cm2") == 0)
            read_positive(L, k, path, "arc_rating_cal_cm2", TW_MAX_CAL, &out->arc_rating_cal_cm2);
        else
            finding(L, TW_WARNING, path, k->string, "unknown key, ignored");
        free(path);
    }
    if (!cJSON_GetObjectItemCaseSensitive(v, "name"))
        finding(L, TW_ERROR, base, "name", "missing; expected a non-empty string");
    if (!cJSON_GetObjectItemCaseSensitive(v, "arc_rating_cal_cm2"))
        finding(L, TW_ERROR, base, "arc_rating_cal_cm2", "missing; expected a number above 0");
}

/* Stable insertion sort by rising arc rating (equal ratings keep the file's order). */
static void sort_levels(tw_ppe_level *v, size_t n)
{
    for (size_t i = 1; i < n; i++) {
        tw_ppe_level x = v[i];
        size_t j = i;
        for (; j > 0 && v[j - 1].arc_rating_cal_cm2 > x.arc_rating_cal_cm2; j--)
            v[j] = v[j - 1];
        v[j] = x;
    }
}

/* An empty list would make every label "no PPE adequate", which is surely a mistake in the
 * file, so it is refused. */
static void key_ppe_levels(loader *L, const cJSON *v, tw_site *s)
{
    if (!cJSON_IsArray(v)) {
        finding(L, TW_ERROR, "ppe_levels", "ppe_levels", "expected an array of PPE levels");
        return;
    }
    int n = cJSON_GetArraySize(v);
    if (n < 1 || n > TW_MAX_SITE_ITEMS) {
        finding(L, TW_ERROR, "ppe_levels", "ppe_levels", "expected 1 to %d levels, got %d",
                TW_MAX_SITE_ITEMS, n);
        return;
    }
    tw_ppe_level *levels = calloc((size_t)n, sizeof *levels);
    if (!levels) {
        oom(L, "ppe_levels", "ppe_levels");
        return;
    }
    size_t before = L->errors, count = 0;
    const cJSON *item;
    cJSON_ArrayForEach(item, v) {
        read_level(L, item, count, &levels[count]);
        count++;
    }
    if (L->errors != before) {
        free_levels(levels, count);
        return;
    }
    sort_levels(levels, count);
    free_levels(s->ppe_levels, s->ppe_level_count);
    s->ppe_levels = levels;
    s->ppe_level_count = count;
}

/* A column map path; a relative one is taken from the settings file's folder, so a site's
 * settings and its map travel together. */
static void key_columns(loader *L, const cJSON *v, tw_site *s)
{
    if (cJSON_IsNull(v)) {
        free(s->columns);
        s->columns = NULL;
        return;
    }
    char *path = NULL;
    read_text(L, v, "columns", "columns", 0, &path);
    if (!path)
        return;
    const char *slash = strrchr(L->file, '/');
    if (path[0] != '/' && slash) {
        char *joined = tw_asprintf("%.*s/%s", (int)(slash - L->file), L->file, path);
        free(path);
        if (!(path = joined)) {
            oom(L, "columns", "columns");
            return;
        }
    }
    free(s->columns);
    s->columns = path;
}

/* The settings a file may give, in the order docs/site-settings.md lists them. */
static const struct {
    const char *key;
    void (*read)(loader *, const cJSON *, tw_site *);
} settings_table[] = {
    {"site_name", key_site_name},
    {"record_link", key_record_link},
    {"ppe_levels", key_ppe_levels},
    {"label_shows", key_label_shows},
    {"danger_above_cal_cm2", key_danger_above},
    {"units", key_units},
    {"cautions", key_cautions},
    {"service_label_min_a", key_service_min},
    {"language", key_language},
    {"layout", key_layout},
    {"columns", key_columns},
    {"registry", key_registry},
};

static void apply(loader *L, const cJSON *root, tw_site *s)
{
    const cJSON *item; /* each key once: tw_json_parse() refuses a key given twice */
    cJSON_ArrayForEach(item, root) {
        const char *key = item->string ? item->string : "";
        size_t i = 0;
        while (i < COUNT(settings_table) && strcmp(settings_table[i].key, key) != 0)
            i++;
        if (i == COUNT(settings_table))
            finding(L, TW_WARNING, key, key, "unknown setting, ignored (see docs/site-settings.md)");
        else
            settings_table[i].read(L, item, s);
    }
}

/* Every site text a label or permit prints must be drawable as it reads (tw_fonts.h). */
static void check_drawable(loader *L, const char *path, const char *field, const char *text)
{
    uint32_t cp = 0;
    tw_draw_problem p = text ? tw_text_drawable(text, &cp) : TW_DRAW_OK;
    if (p != TW_DRAW_OK) {
        char why[512];
        finding(L, TW_ERROR, path, field, "%s", tw_draw_problem_text(p, cp, why, sizeof why));
    }
}

static void check_printed_texts(loader *L, const tw_site *s)
{
    char path[64];
    check_drawable(L, "site_name", "site_name", s->site_name);
    for (size_t i = 0; i < s->caution_count; i++) {
        snprintf(path, sizeof path, "cautions[%zu]", i);
        check_drawable(L, path, "cautions", s->cautions[i]);
    }
    for (size_t i = 0; i < s->ppe_level_count; i++) {
        snprintf(path, sizeof path, "ppe_levels[%zu].name", i);
        check_drawable(L, path, "name", s->ppe_levels[i].name);
    }
}

/* s is (re)initialised here, so callers pass a zeroed or uninitialised struct; it is left
 * freeable with tw_site_free() whatever happens. */
int tw_site_load_mem(const char *name, const char *data, size_t len, tw_site *s, tw_diags *d)
{
    loader L = {name ? name : "-", d, 0};
    if (tw_site_defaults(s) != 0) {
        memset(s, 0, sizeof *s);
        finding(&L, TW_ERROR, NULL, NULL, "out of memory");
        return -1;
    }
    const tw_json_spec spec = {"an object of site settings", TW_JSON_OBJECT, NULL};
    cJSON *root = tw_json_parse(L.file, data, len, &spec, d);
    if (!root)
        return -1;
    apply(&L, root, s);
    check_printed_texts(&L, s);
    tw_json_free(root, &spec);
    return L.errors ? -1 : 0;
}

int tw_site_load(const char *path, tw_site *s, tw_diags *d)
{
    char err[512] = "";
    size_t len = 0;
    char *data = tw_read_file(path, &len, err, sizeof err);
    if (!data) {
        if (tw_site_defaults(s) != 0)
            memset(s, 0, sizeof *s);
        tw_source src = {path, 0, NULL}; /* so the finding is not printed as "-" */
        tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "%s", err);
        return -1;
    }
    int rc = tw_site_load_mem(path, data, len, s, d);
    free(data);
    /* A relative registry path is relative to the settings file, so that every command finds
     * the same registry wherever it is run from. */
    const char *slash = strrchr(path, '/');
    if (s->registry && s->registry[0] != '/' && slash) {
        char *full = tw_asprintf("%.*s/%s", (int)(slash - path), path, s->registry);
        if (!full) {
            tw_source src = {path, 0, "registry"};
            tw_diag_add(d, TW_ERROR, &src, NULL, "registry", "out of memory");
            return -1;
        }
        free(s->registry);
        s->registry = full;
    }
    return rc;
}
