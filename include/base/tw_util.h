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
#include <stdint.h>
#include <stdio.h>

/* Copy of s (NULL gives NULL). */
char *tw_strdup(const char *s);

/* Copy of the first n bytes of s, NUL-terminated. */
char *tw_strndup(const char *s, size_t n);

/* Strings that live and die together (the values of a results file: 1.4 million for a
 * 100,000-bus study, where a malloc and a free each cost a tenth of `check`'s time). Freed all at
 * once by tw_arena_free; a zeroed tw_arena is empty and ready. */
typedef struct tw_arena_chunk tw_arena_chunk;
typedef struct {
    tw_arena_chunk *head; /* the chunk being filled; older chunks follow */
    size_t used, cap;     /* bytes used and available in head's data */
} tw_arena;

/* n bytes from the arena, aligned for any type (16 bytes); NULL when out of memory. */
void *tw_arena_alloc(tw_arena *a, size_t n);

/* Copy of the first n bytes of s, NUL-terminated, in the arena; NULL when out of memory. */
char *tw_arena_strndup(tw_arena *a, const char *s, size_t n);

/* Free every string of the arena; it is empty and ready again. */
void tw_arena_free(tw_arena *a);

/* printf into a fresh string; NULL when out of memory. */
char *tw_asprintf(const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 1, 2)))
#endif
    ;

/* The same with a va_list (the caller's va_start/va_end). */
char *tw_vasprintf(const char *fmt, va_list ap)
#if defined(__GNUC__)
    __attribute__((format(printf, 1, 0)))
#endif
    ;

/* Parse all of s (surrounding blanks allowed) as a finite decimal number. 0 on success. */
int tw_parse_double(const char *s, double *out);

/* Remove leading and trailing ASCII blanks in place; returns s. */
char *tw_trim(char *s);

/* Largest input file tagwright reads, in bytes (documented in docs/limits.md). */
#define TW_MAX_INPUT_BYTES (512L * 1024 * 1024)

/* A hint that the block p..p+n (a large array about to be filled) is best backed by huge
 * pages; does nothing for small blocks or where unsupported. */
void tw_advise_large(void *p, size_t n);

/* Read a whole file into a NUL-terminated buffer. On failure returns NULL and writes a message
 * naming the path and the reason into err. */
char *tw_read_file(const char *path, size_t *len, char *err, size_t errlen);

/* The same in steps, for a reader that looks at the start of a file before deciding how to read
 * it. tw_open_input opens path (NULL and a message when it cannot, or it is a directory);
 * tw_input_size is the size of a regular file (0 when unknown, as for a pipe); tw_read_rest
 * reads what is left of f after the n bytes already in buf (a malloc'd block, or NULL with
 * n 0), which it takes over: the whole, NUL-terminated, or NULL and a message. */
FILE *tw_open_input(const char *path, char *err, size_t errlen);
size_t tw_input_size(FILE *f);
char *tw_read_rest(FILE *f, const char *path, char *buf, size_t n, size_t *len, char *err,
                   size_t errlen);

/* Case-insensitive ASCII comparison. */
int tw_strcaseeq(const char *a, const char *b);

/* Length of the UTF-8 sequence at s (n bytes available) with its code point in *cp, or 0 when
 * the bytes are not UTF-8 (overlong forms, surrogates and values above U+10FFFF included). */
size_t tw_utf8_decode(const unsigned char *s, size_t n, uint32_t *cp);

#endif
