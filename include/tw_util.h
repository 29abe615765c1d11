/*
 * tw_util.h - small helpers every module uses: allocation that reports failure, string copies,
 * strict number parsing, whole-file reading.
 *
 * Every function returns NULL/-1 on failure and never aborts; the caller frees what it gets.
 */
#ifndef TW_UTIL_H
#define TW_UTIL_H

#include <stdarg.h>
#include <stddef.h>

/* Copy of s (NULL gives NULL). */
char *tw_strdup(const char *s);

/* Copy of the first n bytes of s, NUL-terminated. */
char *tw_strndup(const char *s, size_t n);

/* printf into a fresh string; NULL when out of memory. */
char *tw_asprintf(const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 1, 2)))
#endif
    ;

/* The same with a va_list (the caller's va_start/va_end). */
char *tw_vasprintf(const char *fmt, va_list ap);

/* Parse all of s (surrounding blanks allowed) as a finite decimal number. 0 on success. */
int tw_parse_double(const char *s, double *out);

/* Remove leading and trailing ASCII blanks in place; returns s. */
char *tw_trim(char *s);

/* Largest input file tagwright reads, in bytes (documented in docs/limits.md). */
#define TW_MAX_INPUT_BYTES (512L * 1024 * 1024)

/* Read a whole file into a NUL-terminated buffer. On failure returns NULL and writes a message
 * naming the path and the reason into err. */
char *tw_read_file(const char *path, size_t *len, char *err, size_t errlen);

/* Case-insensitive ASCII comparison. */
int tw_strcaseeq(const char *a, const char *b);

#endif
