/* unicode.c - hidden characters, direction and identifier keys, through ICU (see tw_unicode.h). */
#include "base/tw_unicode.h"

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <unicode/uchar.h>
#include <unicode/utf16.h>
#include <unicode/unorm2.h>
#include <unicode/ustring.h>

#include "base/tw_util.h"

static int plain_ascii(const char *s)
{
    for (const unsigned char *p = (const unsigned char *)s; *p; p++)
        if (*p >= 0x80)
            return 0;
    return 1;
}

static int hidden(uint32_t cp)
{
    if (cp == ' ')
        return 0;
    switch (u_charType((UChar32)cp)) {
    case U_FORMAT_CHAR:
    case U_CONTROL_CHAR:
    case U_SPACE_SEPARATOR:
    case U_LINE_SEPARATOR:
    case U_PARAGRAPH_SEPARATOR:
    case U_PRIVATE_USE_CHAR:
    case U_SURROGATE:
    case U_UNASSIGNED:
        return 1;
    default:
        return u_hasBinaryProperty((UChar32)cp, UCHAR_DEFAULT_IGNORABLE_CODE_POINT) ? 1 : 0;
    }
}

uint32_t tw_id_hidden_char(const char *s)
{
    const unsigned char *u = (const unsigned char *)s;
    size_t len = strlen(s);
    for (size_t i = 0; i < len;) {
        uint32_t cp = u[i];
        size_t k = cp < 0x80 ? 1 : tw_utf8_decode(u + i, len - i, &cp);
        if (k == 0)
            return 0xFFFD; /* not UTF-8: the readers refuse it before this is asked */
        if (cp < 0x20 || cp == 0x7F || (cp >= 0x80 && hidden(cp)))
            return cp;
        i += k;
    }
    return 0;
}

/* Keep what a reader sees of u[0..n): characters that cannot be seen dropped (NFKC_Casefold
 * has already made the odd spaces U+0020 and removed the default-ignorable ones), runs of
 * spaces made one, none at either end. The new length. */
static int32_t visible_words(UChar *u, int32_t n)
{
    int32_t r = 0, w = 0, space = 0;
    while (r < n) {
        UChar32 c;
        U16_NEXT(u, r, n, c);
        if (c == ' ') {
            space = w > 0;
            continue;
        }
        if (hidden((uint32_t)c))
            continue;
        if (space)
            u[w++] = ' ';
        space = 0;
        U16_APPEND_UNSAFE(u, w, c);
    }
    return w;
}

/* NFKC_Casefold of a non-ASCII s, tidied by visible_words(), into key (n bytes). */
static long icu_key(const char *s, char *key, size_t n)
{
    UErrorCode e = U_ZERO_ERROR;
    const UNormalizer2 *nfkc_cf = unorm2_getNFKCCasefoldInstance(&e);
    if (U_FAILURE(e))
        return -1;
    int32_t n16 = 0;
    u_strFromUTF8(NULL, 0, &n16, s, -1, &e); /* the length it needs */
    e = U_ZERO_ERROR;
    if (n16 > (1 << 20))
        return -1; /* identifiers are at most a few dozen characters */
    /* NFKC expands a UTF-16 unit into at most 18 (U+FDFA); casefolding triples at most. */
    int32_t cap = n16 * 54 + 1;
    UChar *in = malloc((size_t)(n16 + 1) * sizeof *in), *out = malloc((size_t)cap * sizeof *out);
    long len = -1;
    if (in && out) {
        u_strFromUTF8(in, n16 + 1, NULL, s, -1, &e);
        int32_t m = U_SUCCESS(e) ? unorm2_normalize(nfkc_cf, in, n16, out, cap, &e) : 0;
        if (U_SUCCESS(e))
            m = visible_words(out, m);
        int32_t n8 = 0;
        if (U_SUCCESS(e) && n <= INT32_MAX)
            u_strToUTF8(key, (int32_t)n, &n8, out, m, &e);
        /* a key that fills n exactly is not terminated: U_STRING_NOT_TERMINATED_WARNING */
        if (e == U_ZERO_ERROR && (size_t)n8 < n)
            len = n8;
    }
    free(in);
    free(out);
    return len;
}

long tw_id_key(const char *s, char *key, size_t n)
{
    if (!plain_ascii(s))
        return icu_key(s, key, n);
    size_t w = 0;
    int space = 0;
    for (const char *p = s; *p; p++) {
        if (*p == ' ') {
            space = w > 0;
            continue;
        }
        if (w + space + 1 >= n)
            return -1;
        if (space)
            key[w++] = ' ';
        space = 0;
        key[w++] = *p >= 'A' && *p <= 'Z' ? (char)(*p - 'A' + 'a') : *p;
    }
    if (n == 0)
        return -1;
    key[w] = '\0';
    return (long)w;
}

int tw_char_rtl(uint32_t cp)
{
    if (cp < 0x0590)
        return 0;
    switch (u_charDirection((UChar32)cp)) {
    case U_RIGHT_TO_LEFT:
    case U_RIGHT_TO_LEFT_ARABIC:
        return 1;
    case U_RIGHT_TO_LEFT_EMBEDDING:
    case U_RIGHT_TO_LEFT_OVERRIDE:
    case U_RIGHT_TO_LEFT_ISOLATE:
    case U_LEFT_TO_RIGHT_EMBEDDING:
    case U_LEFT_TO_RIGHT_OVERRIDE:
    case U_LEFT_TO_RIGHT_ISOLATE:
    case U_FIRST_STRONG_ISOLATE:
    case U_POP_DIRECTIONAL_FORMAT:
    case U_POP_DIRECTIONAL_ISOLATE:
        return 2;
    default:
        return 0;
    }
}

void tw_char_describe(uint32_t cp, char *buf, size_t n)
{
    char name[128] = "";
    UErrorCode e = U_ZERO_ERROR;
    int32_t len = u_charName((UChar32)cp, U_UNICODE_CHAR_NAME, name, sizeof name, &e);
    if (U_FAILURE(e) || len <= 0)
        snprintf(buf, n, "U+%04X", (unsigned)cp);
    else
        snprintf(buf, n, "U+%04X %s", (unsigned)cp, name);
}
