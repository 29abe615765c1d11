/* text.c - printable UTF-8 (see tw_text.h). */
#include "base/tw_text.h"

#include <stddef.h>

int tw_text_ok(const char *s)
{
    const unsigned char *p = (const unsigned char *)s;
    while (*p) {
        unsigned char c = *p;
        size_t n = c < 0x80 ? 1 : (c & 0xE0) == 0xC0 ? 2 : (c & 0xF0) == 0xE0 ? 3
                                 : (c & 0xF8) == 0xF0 ? 4 : 0;
        if (n == 0 || (n == 1 && (c < 0x20 || c == 0x7F)))
            return 0;
        if (n == 2 && c < 0xC2)
            return 0; /* overlong */
        for (size_t i = 1; i < n; i++)
            if ((p[i] & 0xC0) != 0x80)
                return 0;
        if ((n == 3 && c == 0xE0 && p[1] < 0xA0) || (n == 4 && c == 0xF0 && p[1] < 0x90) ||
            (n == 4 && c > 0xF4) || (n == 3 && c == 0xED && p[1] >= 0xA0))
            return 0; /* overlong, beyond U+10FFFF, or a surrogate */
        p += n;
    }
    return 1;
}
