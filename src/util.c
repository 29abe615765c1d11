/* util.c - allocation, strings, strict numbers and whole-file reads (see tw_util.h). */
#include "tw_util.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
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

size_t tw_json_value_bound(const char *data, size_t len)
{
    size_t n = 1;
    int in_string = 0;
    for (size_t i = 0; i < len; i++) {
        char c = data[i];
        if (in_string) {
            if (c == '\\')
                i++;
            else if (c == '"')
                in_string = 0;
        } else if (c == '"') {
            in_string = 1;
        } else if (c == '[' || c == '{' || c == ',') {
            n++;
        }
    }
    return n;
}

size_t tw_json_find_nul(const char *s, size_t len)
{
    for (size_t i = 0; i < len; i++) {
        if (s[i] == '\0')
            return i;
        if (s[i] != '\\')
            continue;
        size_t j = i; /* an odd run of backslashes escapes what follows */
        while (j < len && s[j] == '\\')
            j++;
        if ((j - i) % 2 == 1 && len - j >= 5 && s[j] == 'u' && memcmp(s + j + 1, "0000", 4) == 0)
            return j - 1;
        i = j - 1;
    }
    return len;
}

int tw_strcaseeq(const char *a, const char *b)
{
    for (; *a && *b; a++, b++)
        if (tolower((unsigned char)*a) != tolower((unsigned char)*b))
            return 0;
    return *a == *b;
}

char *tw_read_file(const char *path, size_t *len, char *err, size_t errlen)
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
    size_t cap = 65536, n = 0;
    char *buf = malloc(cap + 1);
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
        char *nb = realloc(buf, cap + 1);
        if (!nb) {
            free(buf);
            buf = NULL;
        } else {
            buf = nb;
        }
    }
    fclose(f);
    if (!buf) {
        if (!*err)
            snprintf(err, errlen, "%s: out of memory", path);
        return NULL;
    }
    buf[n] = '\0';
    *len = n;
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
