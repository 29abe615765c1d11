/* fonts.c - where the fonts are and what they can draw (see tw_fonts.h). */
#include "base/tw_fonts.h"

#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <ft2build.h>
#include FT_FREETYPE_H

#include "base/tw_unicode.h"
#include "base/tw_util.h"

#define TW_DEFAULT_FONT_DIR "/usr/share/fonts/truetype/dejavu"

const char *tw_font_dir(void)
{
    const char *env = getenv("TAGWRIGHT_FONTS");
    return env && *env ? env : TW_DEFAULT_FONT_DIR;
}

/* One bit per BMP code point: set when both faces have a glyph for it. */
static unsigned char covered[0x10000 / 8];
static int fonts_read; /* 1 when both faces were read */
static pthread_once_t once = PTHREAD_ONCE_INIT;

/* Bits of the code points face maps to a glyph, into bits (zeroed). */
static void face_coverage(FT_Face face, unsigned char *bits)
{
    FT_UInt glyph;
    for (FT_ULong c = FT_Get_First_Char(face, &glyph); glyph != 0;
         c = FT_Get_Next_Char(face, c, &glyph))
        if (c < 0x10000)
            bits[c >> 3] |= (unsigned char)(1u << (c & 7));
}

static int read_face(FT_Library lib, const char *file, unsigned char *bits)
{
    char *path = tw_asprintf("%s/%s", tw_font_dir(), file);
    FT_Face face;
    int rc = path && FT_New_Face(lib, path, 0, &face) == 0 ? 0 : -1;
    free(path);
    if (rc != 0)
        return -1;
    if (FT_Select_Charmap(face, FT_ENCODING_UNICODE) == 0)
        face_coverage(face, bits);
    else
        rc = -1;
    FT_Done_Face(face);
    return rc;
}

static void read_fonts(void)
{
    FT_Library lib;
    if (FT_Init_FreeType(&lib) != 0)
        return;
    static unsigned char bold[sizeof covered];
    if (read_face(lib, TW_FONT_REGULAR, covered) == 0 && read_face(lib, TW_FONT_BOLD, bold) == 0) {
        for (size_t i = 0; i < sizeof covered; i++)
            covered[i] &= bold[i];
        fonts_read = 1;
    }
    FT_Done_FreeType(lib);
}

tw_draw_problem tw_text_drawable(const char *s, uint32_t *cp)
{
    const unsigned char *u = (const unsigned char *)s;
    size_t len = strlen(s), i = 0;
    while (i < len && u[i] < 0x80)
        i++;
    if (i == len)
        return TW_DRAW_OK;
    pthread_once(&once, read_fonts);
    while (i < len) {
        uint32_t c = u[i];
        size_t k = c < 0x80 ? 1 : tw_utf8_decode(u + i, len - i, &c);
        if (k == 0)
            k = 1; /* not UTF-8: the readers refuse it before anything is drawn */
        i += k;
        if (c < 0x80)
            continue;
        *cp = c;
        if (!fonts_read)
            return TW_DRAW_NO_FONT;
        if (c > 0xFFFF)
            return TW_DRAW_BEYOND_BMP;
        int rtl = tw_char_rtl(c);
        if (rtl)
            return rtl == 1 ? TW_DRAW_RIGHT_TO_LEFT : TW_DRAW_BIDI_CONTROL;
        if (!(covered[c >> 3] & (1u << (c & 7))))
            return TW_DRAW_NO_GLYPH;
    }
    return TW_DRAW_OK;
}

const char *tw_draw_problem_text(tw_draw_problem p, uint32_t cp, char *buf, size_t n)
{
    char ch[160];
    tw_char_describe(cp, ch, sizeof ch);
    switch (p) {
    case TW_DRAW_OK:
        snprintf(buf, n, "can be drawn");
        break;
    case TW_DRAW_NO_GLYPH:
        snprintf(buf, n, "character %s has no glyph in the label font (DejaVu Sans in %s) and "
                 "would print as an empty box; expected text the font can draw", ch,
                 tw_font_dir());
        break;
    case TW_DRAW_BEYOND_BMP:
        snprintf(buf, n, "character %s lies beyond U+FFFF, which the PDF fonts cannot show; "
                 "expected characters up to U+FFFF", ch);
        break;
    case TW_DRAW_RIGHT_TO_LEFT:
        snprintf(buf, n, "character %s is right-to-left text, which labels cannot yet shape and "
                 "order correctly; expected left-to-right text", ch);
        break;
    case TW_DRAW_BIDI_CONTROL:
        snprintf(buf, n, "character %s is a bidirectional control, which would change the order "
                 "in which the text reads; expected text without it", ch);
        break;
    case TW_DRAW_NO_FONT:
        snprintf(buf, n, "character %s cannot be checked: the label fonts %s and %s in %s could "
                 "not be read (install fonts-dejavu-core or set TAGWRIGHT_FONTS)", ch,
                 TW_FONT_REGULAR, TW_FONT_BOLD, tw_font_dir());
        break;
    }
    return buf;
}
