/* util.c - allocation, strings, strict numbers and whole-file reads (see tw_util.h). */
#include "base/tw_util.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <stdint.h>
#include <sys/mman.h>
#include <sys/stat.h>

char *tw_strdup(const char *s)
{
    return s ? tw_strndup(s, strlen(s)) : NULL;
}

char *tw_strndup(const char *s, size_t n)
{
    char *p = malloc(n + 1);
    if (!p)
        return NULL;
    memcpy(p, s, n);
    p[n] = '\0';
    return p;
}

/* Chunks start small (most inputs are a few hundred buses) and double up to a size where the
 * huge-page hint applies; a string longer than a quarter of a chunk gets a chunk of its own. */
#define ARENA_FIRST_CHUNK ((size_t)16 * 1024)
#define ARENA_LARGEST_CHUNK ((size_t)8 * 1024 * 1024)

struct tw_arena_chunk {
    tw_arena_chunk *next;
    _Alignas(16) char data[];
};

static tw_arena_chunk *arena_chunk(size_t cap)
{
    tw_arena_chunk *c = malloc(sizeof *c + cap);
    if (c)
        tw_advise_large(c, sizeof *c + cap);
    return c;
}

/* n bytes from the arena, at a multiple of align (a power of two) from the chunk's start. */
static void *arena_take(tw_arena *a, size_t n, size_t align)
{
    if (n >= SIZE_MAX / 4)
        return NULL;
    size_t at = (a->used + align - 1) & ~(align - 1);
    if (a->head && at <= a->cap && a->cap - at >= n) {
        a->used = at + n;
        return a->head->data + at;
    }
    if (a->head && n > a->cap / 4) {
        /* A block of its own, behind the head so the head's free space stays usable. */
        tw_arena_chunk *c = arena_chunk(n);
        if (!c)
            return NULL;
        c->next = a->head->next;
        a->head->next = c;
        return c->data;
    }
    size_t cap = a->cap ? a->cap * 2 : ARENA_FIRST_CHUNK;
    if (cap > ARENA_LARGEST_CHUNK)
        cap = ARENA_LARGEST_CHUNK;
    while (cap < n)
        cap *= 2;
    tw_arena_chunk *c = arena_chunk(cap);
    if (!c)
        return NULL;
    c->next = a->head;
    a->head = c;
    a->cap = cap;
    a->used = n;
    return c->data;
}

void *tw_arena_alloc(tw_arena *a, size_t n)
{
    return arena_take(a, n ? n : 1, 16);
}

char *tw_arena_strndup(tw_arena *a, const char *s, size_t n)
{
    char *p = n < SIZE_MAX / 4 ? arena_take(a, n + 1, 1) : NULL;
    if (p) {
        memcpy(p, s, n);
        p[n] = '\0';
    }
    return p;
}

void tw_arena_free(tw_arena *a)
{
    for (tw_arena_chunk *c = a->head, *next; c; c = next) {
        next = c->next;
        free(c);
    }
    memset(a, 0, sizeof *a);
}

char *tw_vasprintf(const char *fmt, va_list ap)
{
    va_list again;
    va_copy(again, ap);
    int n = vsnprintf(NULL, 0, fmt, ap);
    char *p = n >= 0 ? malloc((size_t)n + 1) : NULL;
    if (p)
        vsnprintf(p, (size_t)n + 1, fmt, again);
    va_end(again);
    return p;
}

char *tw_asprintf(const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    char *p = tw_vasprintf(fmt, ap);
    va_end(ap);
    return p;
}

char *tw_trim(char *s)
{
    size_t n = strlen(s);
    while (n > 0 && isspace((unsigned char)s[n - 1]))
        s[--n] = '\0';
    size_t start = 0;
    while (s[start] && isspace((unsigned char)s[start]))
        start++;
    if (start)
        memmove(s, s + start, n - start + 1);
    return s;
}

/* strtod accepts "inf", "nan" and hex floats; study results are plain decimals, so anything
 * else is refused rather than guessed at. */
int tw_parse_double(const char *s, double *out)
{
    while (isspace((unsigned char)*s))
        s++;
    const char *p = s;
    if (*p == '+' || *p == '-')
        p++;
    if (!isdigit((unsigned char)*p) && !(*p == '.' && isdigit((unsigned char)p[1])))
        return -1;
    for (const char *q = p; *q; q++)
        if (*q == 'x' || *q == 'X')
            return -1;
    errno = 0;
    char *end;
    double v = strtod(s, &end);
    if (end == s || errno == ERANGE || !isfinite(v))
        return -1;
    while (isspace((unsigned char)*end))
        end++;
    if (*end)
        return -1;
    *out = v;
    return 0;
}

int tw_strcaseeq(const char *a, const char *b)
{
    for (; *a && *b; a++, b++)
        if (tolower((unsigned char)*a) != tolower((unsigned char)*b))
            return 0;
    return *a == *b;
}

/* Transparent huge pages take a 2 MiB page per fault instead of a 4 KiB one. A 100,000-bus
 * study touches about 150 MB while it is read, and one 4 KiB fault at a time cost a fifth of
 * `check`'s time on the machines measured (docs/performance.md). Only a hint: where the kernel
 * ignores it (THP off, other systems) nothing changes. */
#define HUGE_PAGE ((uintptr_t)2 * 1024 * 1024)

void tw_advise_large(void *p, size_t n)
{
#ifdef MADV_HUGEPAGE
    if (!p || n < 2 * HUGE_PAGE)
        return;
    uintptr_t a = ((uintptr_t)p + HUGE_PAGE - 1) & ~(HUGE_PAGE - 1);
    uintptr_t b = ((uintptr_t)p + n) & ~(HUGE_PAGE - 1);
    if (b > a)
        (void)madvise((void *)a, b - a, MADV_HUGEPAGE);
#else
    (void)p;
    (void)n;
#endif
}

FILE *tw_open_input(const char *path, char *err, size_t errlen)
{
    FILE *f = fopen(path, "rb");
    if (!f) {
        snprintf(err, errlen, "%s: cannot open for reading: %s", path, strerror(errno));
        return NULL;
    }
    struct stat st;
    if (fstat(fileno(f), &st) == 0 && S_ISDIR(st.st_mode)) {
        snprintf(err, errlen, "%s: is a directory, expected a file", path);
        fclose(f);
        return NULL;
    }
    return f;
}

size_t tw_input_size(FILE *f)
{
    struct stat st;
    if (fstat(fileno(f), &st) == 0 && S_ISREG(st.st_mode) && st.st_size > 0)
        return (size_t)st.st_size;
    return 0;
}

char *tw_read_rest(FILE *f, const char *path, char *buf, size_t n, size_t *len, char *err,
                   size_t errlen)
{
    /* A regular file is read into a buffer of its size (one more read sees the end); a pipe
     * grows the buffer as it goes. */
    size_t size = tw_input_size(f), cap = 65536;
    if (size > 0 && size < (size_t)TW_MAX_INPUT_BYTES)
        cap = size + 1;
    if (cap <= n)
        cap = n + 65536;
    char *nb = realloc(buf, cap + 1);
    if (!nb)
        free(buf);
    buf = nb;
    if (buf && n == 0)
        tw_advise_large(buf, cap + 1);
    while (buf) {
        size_t got = fread(buf + n, 1, cap - n, f);
        n += got;
        if (n < cap) {
            if (ferror(f)) {
                snprintf(err, errlen, "%s: read error: %s", path, strerror(errno));
                free(buf);
                buf = NULL;
            }
            break;
        }
        if (cap >= (size_t)TW_MAX_INPUT_BYTES) {
            snprintf(err, errlen, "%s: larger than the %ld MiB limit", path,
                     TW_MAX_INPUT_BYTES / (1024 * 1024));
            free(buf);
            buf = NULL;
            break;
        }
        cap *= 2;
        nb = realloc(buf, cap + 1);
        if (!nb)
            free(buf);
        buf = nb;
    }
    if (!buf) {
        if (!*err)
            snprintf(err, errlen, "%s: out of memory", path);
        return NULL;
    }
    buf[n] = '\0';
    *len = n;
    return buf;
}

char *tw_read_file(const char *path, size_t *len, char *err, size_t errlen)
{
    FILE *f = tw_open_input(path, err, errlen);
    if (!f)
        return NULL;
    char *buf = tw_read_rest(f, path, NULL, 0, len, err, errlen);
    fclose(f);
    return buf;
}

/* Length of the UTF-8 sequence at s (n bytes available) with its code point in *cp, or 0 when
 * the bytes are not UTF-8 (overlong forms, surrogates and values above U+10FFFF included). */
size_t tw_utf8_decode(const unsigned char *s, size_t n, uint32_t *cp)
{
    size_t len;
    uint32_t c, min;
    if (s[0] < 0x80) {
        *cp = s[0];
        return 1;
    }
    if ((s[0] & 0xE0) == 0xC0) {
        len = 2, c = s[0] & 0x1Fu, min = 0x80;
    } else if ((s[0] & 0xF0) == 0xE0) {
        len = 3, c = s[0] & 0x0Fu, min = 0x800;
    } else if ((s[0] & 0xF8) == 0xF0) {
        len = 4, c = s[0] & 0x07u, min = 0x10000;
    } else {
        return 0;
    }
    if (len > n)
        return 0;
    for (size_t i = 1; i < len; i++) {
        if ((s[i] & 0xC0) != 0x80)
            return 0;
        c = (c << 6) | (s[i] & 0x3Fu);
    }
    if (c < min || c > 0x10FFFF || (c >= 0xD800 && c <= 0xDFFF))
        return 0;
    *cp = c;
    return len;
}
