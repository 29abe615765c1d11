/*
 * tw_results.h - arc-flash study results as read from CSV or JSON, one row per bus and scenario.
 *
 * Every column tagwright knows is listed once in the column table (src/read/results_fields.c): its
 * name as the user writes it, the field it fills, its kind, and the factor that takes its unit to
 * the canonical one (lengths in millimetres, energy in cal/cm2, currents in kA, time in s).
 * Adding a field: add an enum value below (a text field among the text fields, a number before
 * TW_F_COUNT) and a row in that table.
 *
 * Readers never stop at the first bad value: a cell that cannot be parsed gets an error finding
 * (file and line, or JSON path, and the column name), the field is marked invalid, and reading
 * goes on. A finding about the file as a whole (broken quoting, a duplicated column, a bus that
 * is not an object, a limit reached) means rows may be lost or ambiguous - a lost row could be a
 * bus's worst case - so it is counted in the errors of every row read and no bus is posted.
 * Only an unreadable file, one that is not CSV/JSON at all (no known column in the header,
 * invalid JSON syntax), or running out of memory makes them return -1.
 *
 * Ownership: tw_results owns its rows and their strings; tw_results_free() accepts a zeroed set.
 */
#ifndef TW_RESULTS_H
#define TW_RESULTS_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "base/tw_diag.h"
#include "base/tw_util.h"

typedef enum {
    /* text fields */
    TW_F_EQUIPMENT_ID,
    TW_F_DESCRIPTION,
    TW_F_LOCATION,
    TW_F_STUDY_ID,
    TW_F_STUDY_DATE, /* ISO 8601 date, checked by validation */
    TW_F_SCENARIO,
    TW_F_PROTECTIVE_DEVICE,
    TW_F_EQUIPMENT_TYPE,
    TW_F_ELECTRODE_CONFIG,
    /* numeric fields, canonical units */
    TW_F_NOMINAL_VOLTAGE_V,
    TW_F_INCIDENT_ENERGY_CAL,   /* cal/cm2 */
    TW_F_WORKING_DISTANCE_MM,
    TW_F_ARC_FLASH_BOUNDARY_MM,
    TW_F_PPE_CATEGORY,          /* integer 1-4 (table method) */
    TW_F_SOURCE_FAULT_KA,
    TW_F_BOLTED_FAULT_KA,
    TW_F_ARCING_CURRENT_KA,
    TW_F_CLEARING_TIME_S,
    TW_F_GAP_MM,
    TW_F_DISTANCE_EXPONENT,
    TW_F_SERVICE_EQUIPMENT,     /* boolean: 1 yes, 0 no */
    TW_F_SERVICE_RATING_A,
    TW_F_XFMR_KVA,
    TW_F_XFMR_Z_PERCENT,
    TW_F_XFMR_SECONDARY_V,
    TW_F_MOTOR_CONTRIBUTION_KA,
    TW_F_COUNT
} tw_field;

/* Text fields come first: a row keeps a string for each of them only. */
#define TW_TEXT_FIELDS TW_F_NOMINAL_VOLTAGE_V

typedef enum { TW_KIND_TEXT, TW_KIND_NUMBER, TW_KIND_INTEGER, TW_KIND_BOOL } tw_kind;

/* One accepted column name. */
typedef struct {
    const char *name;     /* as written in the input, e.g. "arc_flash_boundary_in" */
    tw_field field;
    tw_kind kind;
    double to_canonical;  /* multiply the input value by this */
} tw_column;

/* The column table, and its length. */
extern const tw_column tw_columns[];
extern const size_t tw_column_count;

/* The column for a name (exact match), or NULL. */
const tw_column *tw_column_find(const char *name);

/* The known column an unknown name resembles, or NULL: the same name once case, blanks and
 * punctuation are set aside ("incident_energy_cal/cm2"), a small edit distance (at most 2 for
 * names of 8 characters or more, 1 for shorter ones: "incident_enrgy_cal_cm2"), or the same
 * words with another unit ("nominal_voltage_kv"). Readers make such a column an error: its
 * value would be dropped while the label shows another (docs/input-format.md). */
const tw_column *tw_column_resembling(const char *name);

/* The canonical name of a field, e.g. "arc_flash_boundary_mm". */
const char *tw_field_name(tw_field f);

/* How a required field with unit variants is named in messages, e.g.
 * "arc_flash_boundary_mm|_in|_ft". */
const char *tw_field_display(tw_field f);

/* The kind of a field. */
tw_kind tw_field_kind(tw_field f);

/* Longest text value accepted, in bytes; longer values are an error, never truncated. */
#define TW_MAX_ID_BYTES 64
#define TW_MAX_TEXT_BYTES 512
/* Most rows in one results file (documented in docs/limits.md). */
#define TW_MAX_ROWS 2000000

/* Where the text values of a results file live: one arena, freed with the results, and the
 * last value stored for each text field, which a later row giving the same value shares (a
 * bus's scenario rows repeat its ID, description, location, study and date). */
typedef struct {
    tw_arena arena;
    const char *last[TW_TEXT_FIELDS];
    size_t last_len[TW_TEXT_FIELDS];
} tw_text_store;

typedef struct {
    char *text[TW_TEXT_FIELDS]; /* text fields; NULL when absent; in the results' text store,
                                 * possibly shared with other rows: never changed in place */
    double num[TW_F_COUNT];   /* numeric and boolean fields, canonical units */
    uint32_t present;         /* bit f: field f has a value */
    uint32_t invalid;         /* bit f: field f was given but could not be read */
    const char *file;         /* owned by tw_results */
    long line;                /* CSV: 1-based line of the row; JSON: 0 */
    char *path;               /* JSON: path of the bus object, e.g. "buses[3]"; CSV: NULL */
    unsigned errors;          /* error findings recorded against this row */
    unsigned warnings;
    tw_text_store *strings;   /* where its text values live (the results') */
} tw_row;

typedef struct {
    char *file;
    tw_row *rows;
    size_t count, cap;
    tw_text_store *strings;   /* every text value of every row; made by the first row */
} tw_results;

/* 1 when the row has a value for f. */
static inline int tw_row_has(const tw_row *r, tw_field f) { return (r->present >> f) & 1u; }

/* Where a row came from, for findings. path_buf receives "buses[3].field" for JSON. */
tw_source tw_row_source(const tw_row *r, tw_field f, char *path_buf, size_t n);

/* Add a finding about one field of a row and count it on the row. field may be TW_F_COUNT
 * (meaning: the row as a whole); field_name overrides the name shown when not NULL. */
void tw_row_diag(tw_diags *d, tw_row *r, tw_severity sev, tw_field field, const char *field_name,
                 const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 6, 7)))
#endif
    ;

/* Read a results file; CSV unless the name ends in .json or the first non-blank byte is '{'.
 * Returns 0 when the file was read (findings may still hold errors), -1 when it could not be. */
int tw_results_read(const char *path, tw_results *out, tw_diags *d);

/* The same from memory (used by tests and fuzzers). name is used in findings. */
int tw_results_read_csv(const char *name, const char *data, size_t len, tw_results *out,
                        tw_diags *d);
int tw_results_read_json(const char *name, const char *data, size_t len, tw_results *out,
                         tw_diags *d);

struct tw_column_map;

/* CSV read from f in pieces, so the file is never held whole: buf (cap bytes) holds the first
 * `have` bytes, already read, and is reused for the rest. size is the file's size when known
 * (else 0), to size the row array. Returns as tw_results_read_csv; a read error, or a file
 * larger than TW_MAX_INPUT_BYTES, is a finding and -1. */
int tw_results_read_csv_stream(const char *name, FILE *f, char *buf, size_t have, size_t cap,
                               size_t size, tw_results *out, tw_diags *d);

/* The readers above through a column map (read/tw_column_map.h; NULL: none): source columns
 * renamed and scaled, the file's encoding, delimiter, decimal mark, title lines and footer. */
int tw_results_read_map(const char *path, const struct tw_column_map *map, tw_results *out,
                        tw_diags *d);
int tw_results_read_csv_stream_map(const char *name, FILE *f, char *buf, size_t have,
                                   size_t cap, size_t size, const struct tw_column_map *map,
                                   tw_results *out, tw_diags *d);
int tw_results_read_csv_map(const char *name, const char *data, size_t len,
                            const struct tw_column_map *map, tw_results *out, tw_diags *d);
int tw_results_read_json_map(const char *name, const char *data, size_t len,
                             const struct tw_column_map *map, tw_results *out, tw_diags *d);

/* Free every row. */
void tw_results_free(tw_results *r);

/* --- Building rows: shared by the CSV and JSON readers (src/read/results.c). --- */

/* Append a zeroed row (file set, line 0, no path). NULL when out of memory; the caller
 * enforces TW_MAX_ROWS. */
tw_row *tw_results_add_row(tw_results *r);

/* Make room for n rows in all, so that reading them does not move the array. -1 when out of
 * memory (the array is unchanged). */
int tw_results_reserve(tw_results *r, size_t n);

/* Zero a row kept outside the array (a JSON file's study-wide values) whose text values live
 * in r's arena, as the rows' do. -1 when out of memory. */
int tw_row_init(tw_results *r, tw_row *row);

/* Store a text value for column c: trimmed (empty means absent), then checked for length,
 * valid UTF-8 and control characters (a line break is one: every value is one line). A bad
 * value gets an error finding naming c->name and marks the field invalid. */
void tw_row_set_text(tw_row *r, const tw_column *c, const char *s, size_t len, tw_diags *d);

/* Store a number given in c's unit: finite, a whole number for integers, converted to the
 * canonical unit. The same field already given in another unit must agree within 1 %. */
void tw_row_set_number(tw_row *r, const tw_column *c, double v, tw_diags *d);

/* Forget a value of field f that was given but could not be read: validation then knows it was
 * given, not missing. */
void tw_row_mark_invalid(tw_row *r, tw_field f);

/* Parse a text cell by c's kind (text, decimal number, whole number, yes/no) and store it. */
void tw_row_set_cell(tw_row *r, const tw_column *c, const char *s, size_t len, tw_diags *d);

/* Parse a trimmed number cell ("21.4", "-0.035", "1e-3") as tw_row_set_cell does. 0 and *out
 * set, or -1. */
int tw_parse_cell_number(const char *s, double *out);

/* Parse yes/no, true/false, y/n, 1/0 (any case). 0 and *out set, or -1. */
int tw_parse_yes_no(const char *s, int *out);

/* A short, printable excerpt of s for messages ("abc", or the first bytes and "..."). */
char *tw_excerpt(const char *s, size_t len);

#endif
