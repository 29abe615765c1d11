/*
 * tw_column_map.h - column maps: how to read a study export that does not use tagwright's
 * column names, units, separators or encoding (docs/column-maps.md).
 *
 *   {"encoding": "windows-1252", "header_line": 4, "delimiter": ";", "decimal": ",",
 *    "stop_at_blank_line": true,
 *    "columns": {"Bus Name": "equipment_id",
 *                "Bus kV": {"field": "nominal_voltage_v", "scale": 1000},
 *                "Study Date": {"field": "study_date", "date_format": "MM/DD/YYYY"}},
 *    "constants": {"study_id": "S-2025-R1"}, "missing_values": ["N/A", "-"]}
 *
 * The map is checked whole when it is read: an unknown key anywhere is an error (a misspelt
 * "scale" would otherwise put kilovolts in the volts field). The results readers then bind it
 * to a file's header once, so applying it costs a small transform per column, not a lookup
 * per cell.
 *
 * Ownership: tw_column_map owns everything it points to; tw_column_map_free() accepts a zeroed
 * map. Readers return 0 when the map can be used, -1 (with error findings naming the map file
 * and the JSON path) when it cannot.
 */
#ifndef TW_COLUMN_MAP_H
#define TW_COLUMN_MAP_H

#include <stddef.h>

#include "base/tw_diag.h"
#include "base/tw_map.h"
#include "read/tw_results.h"

typedef enum { TW_ENCODING_UTF8, TW_ENCODING_WINDOWS_1252, TW_ENCODING_ISO_8859_1 } tw_encoding;

/* How a date column writes its dates. */
typedef enum {
    TW_DATES_ISO,          /* YYYY-MM-DD (checked by validation, as without a map) */
    TW_DATES_MM_DD_YYYY,   /* 9/15/2026 or 09/15/2026 */
    TW_DATES_DD_MM_YYYY,   /* 15/09/2026 */
    TW_DATES_DD_MM_YYYY_DOT /* 15.09.2026 */
} tw_date_order;

/* scale_pow10 when the scale is not a power of ten. */
#define TW_NO_POW10 1000

/* Most source columns, constants and missing-value words one map may list. */
#define TW_MAX_MAP_COLUMNS 4096
#define TW_MAX_MAP_WORDS 64
/* Highest header_line accepted. */
#define TW_MAX_HEADER_LINE 10000

/* How one source column (a CSV header cell or a JSON key) is read. */
typedef struct {
    char *source;            /* header text, trimmed */
    const tw_column *column; /* the tagwright column it fills; NULL: not read (null in the map) */
    tw_column as;            /* column->field/kind/to_canonical, named for findings
                              * "field (from \"source\")" (name owned here) */
    double scale;            /* multiplier into column's unit; 1 when not given */
    int scale_pow10;         /* k when scale is 10^k (the scaling is then exact in decimal),
                              * else TW_NO_POW10 */
    tw_date_order dates;
} tw_mapped_column;

/* A value for one field on every row. */
typedef struct {
    const tw_column *column;
    char *text;              /* text fields (dates as YYYY-MM-DD) */
    double number;           /* numbers and booleans (1/0) */
} tw_map_constant;

typedef struct tw_column_map {
    char *file;              /* the map's path, for findings */
    tw_encoding encoding;
    long header_line;        /* 1-based; 1 when not given */
    char delimiter;          /* ',' ';' or '\t' */
    char decimal;            /* '.' or ',' */
    int stop_at_blank_line;
    int csv_only_keys;       /* 1 when a key that only CSV uses was given */
    tw_mapped_column *columns;
    size_t column_count;
    tw_map index;            /* source -> position in columns (keys are columns[i].source) */
    tw_map_constant *constants;
    size_t constant_count;
    char **missing;          /* cells (trimmed) read as empty */
    size_t missing_count;
} tw_column_map;

/* Read a map from a file or from memory (name is used in findings). */
int tw_column_map_read(const char *path, tw_column_map *m, tw_diags *d);
int tw_column_map_read_mem(const char *name, const char *data, size_t len, tw_column_map *m,
                           tw_diags *d);

void tw_column_map_free(tw_column_map *m);

/* 1 when s can be named in a map (a source column, a missing-value word, a text constant): not
 * empty, at most 512 bytes, UTF-8 without control characters. */
int tw_column_map_name_ok(const char *s);

/* The map's entry for a header cell or key (exact match after trimming), or NULL. */
const tw_mapped_column *tw_column_map_find(const tw_column_map *m, const char *source);

/* 1 when the trimmed cell s (len bytes) is one of the map's missing values. */
int tw_column_map_is_missing(const tw_column_map *m, const char *s, size_t len);

/* Store a cell of mapped column mc in row r: missing values are empty; numbers are read with
 * the map's decimal mark and scaled; dates are read in the column's date_format. Bad cells are
 * error findings naming mc->as.name, as tw_row_set_cell's are. */
void tw_mapped_set_cell(const tw_column_map *m, const tw_mapped_column *mc, tw_row *r,
                        const char *s, size_t len, tw_diags *d);

/* A number given in JSON for mapped column mc, scaled (exactly for powers of ten when the
 * number has at most 15 significant digits). */
void tw_mapped_set_number(const tw_mapped_column *mc, tw_row *r, double v, tw_diags *d);

/* Give row r the map's constants. */
void tw_column_map_apply_constants(const tw_column_map *m, tw_row *r, tw_diags *d);

/* The constant for field f, or NULL. */
const tw_map_constant *tw_column_map_constant(const tw_column_map *m, tw_field f);

/* --- Starter maps (`tagwright columns FILE`; src/read/column_guess.c) --- */

/* The field a header cell plainly names, from its words and its unit: the column to map it
 * to and the scale into that column's unit (1 when none). NULL when unsure: a header without
 * a unit for a quantity that has one, a unit the field cannot take, or words that could mean
 * more than one thing ("Trip Time" may be a relay's time without the breaker's opening). */
const tw_column *tw_column_guess(const char *header, double *scale);

/* A starter map for a CSV or JSON results file, as JSON text (malloc'd; NULL when out of
 * memory or when no header could be found, with a finding saying why). What was detected
 * rather than read (encoding, header line, delimiter, decimal mark, footer) is also given as
 * warnings, so the user knows what to check. */
char *tw_column_map_starter(const char *name, const char *data, size_t len, tw_diags *d);

#endif
