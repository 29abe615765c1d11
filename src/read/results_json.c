/* results_json.c - study results from JSON through cJSON (see tw_results.h).
 *
 *   {"study": {"study_id": "...", "study_date": "2024-05-01", ...},
 *    "buses": [{"equipment_id": "...", "nominal_voltage_v": 480, ...}, ...]}
 *
 * Keys of "study" are defaults for every bus that does not set them. Findings name the JSON
 * path ("buses[3].nominal_voltage_v"), since cJSON keeps no line numbers. */
#include "read/tw_results.h"

#include <cjson/cJSON.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_map.h"
#include "base/tw_util.h"
#include "read/tw_column_map.h"
#include "read/tw_json.h"

typedef struct {
    tw_results *out;
    tw_diags *d;
    tw_map warned;      /* unknown keys already reported (keys point into the cJSON tree) */
    unsigned file_errors; /* findings about the file's shape (counted on every row) */
    int fatal;          /* out of memory: the read returns -1 */
    const tw_column_map *map; /* NULL: keys are tagwright field names */
    unsigned char *map_seen;  /* per map column: some object had its key */
} json_reader;

/* An error about the shape of the file rather than one value: buses may be lost, so it counts
 * against every row read and no bus from the file is posted. */
static void path_error(json_reader *jr, const char *path, const char *msg)
{
    tw_source src = {jr->out->file, 0, path};
    tw_diag_add(jr->d, TW_ERROR, &src, NULL, NULL, "%s", msg);
    jr->file_errors++;
}

static void out_of_memory(json_reader *jr, const char *path)
{
    tw_source src = {jr->out->file, 0, path};
    tw_diag_add(jr->d, TW_ERROR, &src, NULL, NULL, "out of memory");
    jr->fatal = 1;
}

static const char *type_name(const cJSON *v)
{
    if (cJSON_IsString(v))
        return "a string";
    if (cJSON_IsNumber(v))
        return "a number";
    if (cJSON_IsBool(v))
        return cJSON_IsTrue(v) ? "true" : "false";
    if (cJSON_IsArray(v))
        return "an array";
    if (cJSON_IsObject(v))
        return "an object";
    return "null";
}

static void wrong_type(json_reader *jr, tw_row *r, const tw_column *c, const char *expected,
                       const cJSON *v)
{
    if (cJSON_IsString(v)) {
        char *ex = tw_excerpt(v->valuestring, strlen(v->valuestring));
        tw_row_diag(jr->d, r, TW_ERROR, c->field, c->name, "expected %s, got a string '%s'",
                    expected, ex ? ex : "?");
        free(ex);
    } else {
        tw_row_diag(jr->d, r, TW_ERROR, c->field, c->name, "expected %s, got %s", expected,
                    type_name(v));
    }
    tw_row_mark_invalid(r, c->field);
}

/* One value of a bus (or of the study defaults); null is an absent value. */
static void read_value(json_reader *jr, tw_row *r, const tw_column *c, const cJSON *v)
{
    if (cJSON_IsNull(v))
        return;
    int yes = 0;
    switch (c->kind) {
    case TW_KIND_TEXT:
        if (cJSON_IsString(v))
            tw_row_set_text(r, c, v->valuestring, strlen(v->valuestring), jr->d);
        else
            wrong_type(jr, r, c, "a string", v);
        break;
    case TW_KIND_NUMBER:
    case TW_KIND_INTEGER:
        if (cJSON_IsNumber(v))
            tw_row_set_number(r, c, v->valuedouble, jr->d);
        else
            wrong_type(jr, r, c, c->kind == TW_KIND_INTEGER ? "a whole number" : "a number", v);
        break;
    case TW_KIND_BOOL:
        if (cJSON_IsBool(v))
            tw_row_set_number(r, c, cJSON_IsTrue(v) ? 1 : 0, jr->d);
        else if (cJSON_IsString(v) && tw_parse_yes_no(v->valuestring, &yes) == 0)
            tw_row_set_number(r, c, yes, jr->d);
        else
            wrong_type(jr, r, c, "true, false, \"yes\" or \"no\"", v);
        break;
    }
}

static void warn_unknown_key(json_reader *jr, const char *obj_path, const char *key)
{
    size_t seen;
    if (tw_map_get(&jr->warned, key, &seen))
        return;
    tw_map_put(&jr->warned, key, 1); /* out of memory only means repeated warnings */
    char *ex = tw_excerpt(key, strlen(key));
    char *path = tw_asprintf("%s.%s", obj_path, ex ? ex : "?");
    tw_source src = {jr->out->file, 0, path ? path : obj_path};
    const tw_column *like = tw_column_resembling(key);
    if (like)
        tw_diag_add(jr->d, TW_ERROR, &src, NULL, ex ? ex : "?",
                    "unknown key resembles %s (%s); expected the exact name, or another name "
                    "if it is not that value", like->name, tw_field_display(like->field));
    else
        tw_diag_add(jr->d, TW_WARNING, &src, NULL, ex ? ex : "?",
                    "unknown key is ignored (reported once); expected a tagwright field name");
    free(path);
    free(ex);
}

/* A value under a key the column map renames: missing-value words are absent, numbers are
 * scaled, dates read in the column's format; the rest as without a map. */
static void read_mapped_value(json_reader *jr, tw_row *r, const tw_mapped_column *mc,
                              const cJSON *v)
{
    if (cJSON_IsString(v) &&
        tw_column_map_is_missing(jr->map, v->valuestring, strlen(v->valuestring)))
        return;
    if (cJSON_IsNumber(v) && mc->as.kind != TW_KIND_BOOL && mc->as.kind != TW_KIND_TEXT)
        tw_mapped_set_number(mc, r, v->valuedouble, jr->d);
    else if (cJSON_IsString(v) && mc->as.kind == TW_KIND_TEXT)
        tw_mapped_set_cell(jr->map, mc, r, v->valuestring, strlen(v->valuestring), jr->d);
    else
        read_value(jr, r, &mc->as, v);
}

/* The column a key fills: the map's entry for it (which may say: not read), else the field
 * it names. *mapped is set when the map had it; *slot is its place among seen keys. */
static const tw_column *key_column(json_reader *jr, const char *key,
                                   const tw_mapped_column **mapped, size_t *slot)
{
    const tw_mapped_column *mc = jr->map ? tw_column_map_find(jr->map, key) : NULL;
    *mapped = mc;
    if (mc) {
        size_t k = (size_t)(mc - jr->map->columns);
        jr->map_seen[k] = 1;
        *slot = tw_column_count + k;
        return mc->column ? &mc->as : NULL;
    }
    const tw_column *c = tw_column_find(key);
    *slot = c ? (size_t)(c - tw_columns) : 0;
    return c;
}

/* The keys of one object into row r; the equipment ID first, so findings can name it. */
static void read_object(json_reader *jr, tw_row *r, const cJSON *obj)
{
    unsigned char *seen = calloc(tw_column_count + (jr->map ? jr->map->column_count : 0), 1);
    if (!seen) {
        out_of_memory(jr, r->path);
        return;
    }
    for (int pass = 0; pass < 2; pass++) {
        for (const cJSON *v = obj->child; v; v = v->next) {
            const tw_mapped_column *mc = NULL;
            size_t k = 0;
            const tw_column *c = v->string ? key_column(jr, v->string, &mc, &k) : NULL;
            if (!c) {
                if (pass == 1)
                    warn_unknown_key(jr, r->path, v->string ? v->string : "");
                continue;
            }
            if ((c->field == TW_F_EQUIPMENT_ID) != (pass == 0))
                continue;
            if (seen[k]) {
                tw_row_diag(jr->d, r, TW_ERROR, c->field, c->name,
                            "key given twice in one object; expected it once");
                tw_row_mark_invalid(r, c->field);
                continue;
            }
            seen[k] = 1;
            if (mc)
                read_mapped_value(jr, r, mc, v);
            else if (jr->map && cJSON_IsString(v) &&
                     tw_column_map_is_missing(jr->map, v->valuestring, strlen(v->valuestring)))
                continue;
            else
                read_value(jr, r, c, v);
        }
    }
    free(seen);
}

/* Study-level values fill what a bus leaves unset. A default that could not be read was
 * reported once at study.KEY; every bus inheriting it counts that error, so none is posted. */
static void apply_defaults(tw_row *r, const tw_row *def)
{
    for (int f = 0; f < TW_F_COUNT; f++) {
        uint32_t b = 1u << f;
        if ((r->present | r->invalid) & b)
            continue;
        if (def->invalid & b) {
            r->invalid |= b;
            r->errors++;
        } else if (def->present & b) {
            if (f < TW_TEXT_FIELDS)
                r->text[f] = def->text[f]; /* both in the results' arena */
            r->num[f] = def->num[f];
            r->present |= b;
        }
    }
}

static void read_buses(json_reader *jr, const cJSON *buses, const tw_row *def)
{
    size_t n = (size_t)cJSON_GetArraySize(buses);
    /* Room for every bus at once; without it the array grows as it goes. */
    (void)tw_results_reserve(jr->out, n < TW_MAX_ROWS ? n : TW_MAX_ROWS);
    size_t i = 0;
    for (const cJSON *b = buses->child; b; b = b->next, i++) {
        char *path = tw_asprintf("buses[%zu]", i);
        if (!path) {
            out_of_memory(jr, "buses");
            return;
        }
        if (!cJSON_IsObject(b)) {
            char *msg = tw_asprintf("expected a bus object, got %s", type_name(b));
            path_error(jr, path, msg ? msg : "expected a bus object");
            free(msg);
            free(path);
            continue;
        }
        if (jr->out->count >= TW_MAX_ROWS) {
            path_error(jr, path, "too many buses; expected at most 2000000 in one file");
            free(path);
            return;
        }
        tw_row *r = tw_results_add_row(jr->out);
        if (!r) {
            free(path);
            out_of_memory(jr, "buses");
            return;
        }
        r->path = path;
        read_object(jr, r, b);
        apply_defaults(r, def);
        if (jr->map)
            tw_column_map_apply_constants(jr->map, r, jr->d);
    }
}

static void read_top_level(json_reader *jr, const cJSON *root)
{
    const cJSON *study = NULL, *buses = NULL;
    for (const cJSON *v = root->child; v; v = v->next) {
        const char *key = v->string ? v->string : "";
        if (strcmp(key, "study") == 0)
            study = v;
        else if (strcmp(key, "buses") == 0)
            buses = v;
        else
            warn_unknown_key(jr, "$", key);
    }
    tw_row def;
    if (tw_row_init(jr->out, &def) != 0) {
        out_of_memory(jr, "study");
        return;
    }
    if (study && !cJSON_IsNull(study)) {
        if (!cJSON_IsObject(study)) {
            path_error(jr, "study", "expected an object of study-wide values");
        } else if (!(def.path = tw_strdup("study"))) {
            out_of_memory(jr, "study");
        } else {
            read_object(jr, &def, study);
        }
    }
    if (!buses)
        path_error(jr, "buses", "expected an array of bus objects, found no \"buses\" key");
    else if (!cJSON_IsArray(buses))
        path_error(jr, "buses", "expected an array of bus objects");
    else
        read_buses(jr, buses, &def);
    free(def.path);
}

/* After the whole file: a key the map names that no object had is an error, as a missing
 * column is in CSV; keys that only CSV uses are pointed out. */
static void check_map_use(json_reader *jr)
{
    const tw_column_map *m = jr->map;
    for (size_t k = 0; k < m->column_count; k++) {
        if (jr->map_seen[k] || !m->columns[k].column)
            continue;
        char *msg = tw_asprintf("key \"%s\" named in the column map %s is in no bus; expected "
                                "it (check the spelling)", m->columns[k].source, m->file);
        path_error(jr, "buses", msg ? msg : "a key named in the column map is in no bus");
        free(msg);
    }
    if (m->csv_only_keys) {
        tw_source src = {jr->out->file, 0, NULL};
        tw_diag_add(jr->d, TW_WARNING, &src, NULL, NULL,
                    "the column map's encoding, header_line, delimiter, decimal and "
                    "stop_at_blank_line apply to CSV only; a JSON file is read as JSON (UTF-8)");
    }
}

int tw_results_read_json(const char *name, const char *data, size_t len, tw_results *out,
                         tw_diags *d)
{
    return tw_results_read_json_map(name, data, len, NULL, out, d);
}

int tw_results_read_json_map(const char *name, const char *data, size_t len,
                             const tw_column_map *map, tw_results *out, tw_diags *d)
{
    memset(out, 0, sizeof *out);
    out->file = tw_strdup(name ? name : "-");
    if (!out->file) {
        tw_source src = {name, 0, NULL};
        tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "out of memory");
        return -1;
    }
    static const tw_json_spec spec = {"{\"study\": {...}, \"buses\": [...]}", TW_JSON_OBJECT,
                                      NULL};
    cJSON *root = tw_json_parse(out->file, data, len, &spec, d);
    if (!root)
        return -1; /* refused as a whole: the one case, with I/O and memory, where the read fails */
    json_reader jr = {out, d, {0}, 0, 0, map, NULL};
    tw_map_init(&jr.warned);
    if (map && !(jr.map_seen = calloc(map->column_count + 1, 1))) {
        out_of_memory(&jr, "buses");
        cJSON_Delete(root);
        return -1;
    }
    read_top_level(&jr, root);
    if (map && !jr.fatal)
        check_map_use(&jr);
    free(jr.map_seen);
    for (size_t i = 0; i < out->count; i++)
        out->rows[i].errors += jr.file_errors;
    tw_map_free(&jr.warned);
    cJSON_Delete(root);
    return jr.fatal ? -1 : 0;
}
