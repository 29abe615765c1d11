/*
 * tw_json.h - the one way a JSON file is opened. Every JSON input (results, site settings,
 * jobs, layouts, the manifest) goes through tw_json_parse(), so that each of these is decided
 * once, the same way for every file:
 *
 *   - a UTF-8 byte order mark at the start is skipped;
 *   - a NUL (a raw byte, or \u0000) refuses the file: cJSON would end a string there and
 *     shorten a value without saying so;
 *   - more than TW_MAX_JSON_VALUES values, or nesting deeper than TW_JSON_MAX_DEPTH, refuses
 *     the file before cJSON builds a tree (memory and stack stay bounded);
 *   - text that is not JSON, and anything but blanks after the value, refuse the file with
 *     the line and byte where it went wrong;
 *   - a key given twice in one object refuses the file, with the JSON path of the second
 *     (which of two values is meant cannot be known, and a safety label must not guess);
 *   - the top-level value must be of a kind the caller accepts.
 *
 * Ownership: the tree returned belongs to the caller, who frees it with tw_json_free() and the
 * same spec. With spec->arena set, every node lives in that arena instead and is freed with
 * it (tw_json_free() then does nothing). Not thread-safe while an arena is used (cJSON's
 * allocation hooks are global).
 */
#ifndef TW_JSON_H
#define TW_JSON_H

#include <stddef.h>

#include <cjson/cJSON.h>

#include "base/tw_diag.h"
#include "base/tw_util.h"

/* Most values in one JSON input (documented in docs/limits.md). cJSON holds each value in a
 * node of about 64 bytes, so without a limit a file of "[0,0,0,...]" would need 30 times its
 * size in memory; 5 million values is about 190,000 buses of 25 fields. */
#define TW_MAX_JSON_VALUES 5000000

/* Deepest nesting of arrays and objects accepted; cJSON's own limit, said once here so the
 * message can name it (no tagwright file needs more than 5 levels). */
#define TW_JSON_MAX_DEPTH 1000

/* Kinds of top-level value a file may hold (bits; 0 accepts any). */
enum { TW_JSON_OBJECT = 1, TW_JSON_ARRAY = 2 };

typedef struct {
    const char *expected; /* what the file holds, for messages: "an object of site settings" */
    unsigned top;         /* TW_JSON_OBJECT | TW_JSON_ARRAY: accepted top-level kinds */
    tw_arena *arena;      /* NULL: the heap; else the tree lives in this arena */
} tw_json_spec;

/* The tree of data[0..len) (data may be NULL when len is 0), or NULL after adding to d one
 * error per problem found (file, line or JSON path, what was expected). Never crashes on any
 * input; out of memory is reported as such. */
cJSON *tw_json_parse(const char *file, const char *data, size_t len, const tw_json_spec *spec,
                     tw_diags *d);

/* Free a tree from tw_json_parse() with the same spec. Accepts NULL. */
void tw_json_free(cJSON *root, const tw_json_spec *spec);

/* From here until tw_json_use_heap(), cJSON allocates every node and string (parsing and
 * printing) from arena a, and its free does nothing. cJSON's hooks are process-wide: call
 * both on one thread, around the cJSON calls only. */
void tw_json_use_arena(tw_arena *a);
void tw_json_use_heap(void);

/* 1-based line of byte offset `at` in data (for a finding about a place in the text). */
long tw_json_line_of(const char *data, size_t len, size_t at);

/* An upper bound on the number of values in JSON text: 1 + the '[', '{' and ',' outside
 * strings. Cheap enough to run before parsing. */
size_t tw_json_value_bound(const char *data, size_t len);

/* Offset of the first NUL in JSON text - a raw NUL byte, or the backslash of an escaped
 * \u0000 - or len when there is none. */
size_t tw_json_find_nul(const char *data, size_t len);

#endif
