/*
 * tw_diag.h - findings about input data: one error convention for every module.
 *
 * A finding names where it came from (file, and a line for CSV or a JSON path for JSON), the
 * equipment it concerns, the field, and a message that says what was expected. Modules add
 * findings to a tw_diags list and return a status; only the command layer prints them.
 *
 * Ownership: the list owns copies of every string given to tw_diag_add(). tw_diags_free()
 * accepts a zeroed or already-freed list. If memory runs out, the finding is counted but its
 * text is dropped (the counts stay right, so a run still fails closed). The same happens past
 * TW_MAX_FINDINGS findings, so that a file with millions of bad cells cannot exhaust memory.
 */
#ifndef TW_DIAG_H
#define TW_DIAG_H

#include <stdarg.h>
#include <stddef.h>
#include <stdio.h>

typedef enum { TW_WARNING = 0, TW_ERROR = 1 } tw_severity;

/* Most findings kept with their text (documented in docs/limits.md); later ones are counted. */
#define TW_MAX_FINDINGS 100000

/* Where a value came from. line is 1-based, 0 when unknown; path is a JSON path or NULL. */
typedef struct {
    const char *file;
    long line;
    const char *path;
} tw_source;

typedef struct {
    tw_severity severity;
    char *file;
    long line;
    char *path;
    char *equipment_id;
    char *field;
    char *message;
} tw_diag;

typedef struct {
    tw_diag *items;
    size_t count, cap;
    size_t errors, warnings;
} tw_diags;

/* Start an empty list. */
void tw_diags_init(tw_diags *d);

/* Free every finding; the list is left empty and reusable. */
void tw_diags_free(tw_diags *d);

/* Add a finding. src, equipment_id and field may be NULL. */
void tw_diag_add(tw_diags *d, tw_severity sev, const tw_source *src, const char *equipment_id,
                 const char *field, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 6, 7)))
#endif
    ;

/* The same with a va_list (the caller's va_start/va_end). */
void tw_diag_vadd(tw_diags *d, tw_severity sev, const tw_source *src, const char *equipment_id,
                  const char *field, const char *fmt, va_list ap)
#if defined(__GNUC__)
    __attribute__((format(printf, 6, 0)))
#endif
    ;

/* Print one finding as "FILE:LINE: error|warning: EQUIPMENT_ID: field: message". */
void tw_diag_print(const tw_diag *g, FILE *out);

/* Order findings by file and line (stable; findings without a line keep their order and come
 * first), so a reader meets them in the order of the input. */
void tw_diags_sort(tw_diags *d);

/* Print every finding in the order added, then a line saying how many more were counted but
 * not kept (past TW_MAX_FINDINGS, or out of memory), if any. */
void tw_diags_print(const tw_diags *d, FILE *out);

/* Findings counted but not kept, and the line tw_diags_print() ends with for them. */
size_t tw_diags_unlisted(const tw_diags *d);
void tw_diags_print_unlisted(const tw_diags *d, FILE *out);

#endif
