/*
 * tw_fonts.h - the fonts every PDF embeds, and whether a text can be drawn with them exactly as
 * it reads.
 *
 * Documents draw all text with DejaVu Sans and DejaVu Sans Bold from tw_font_dir(). A text is
 * drawable when every character has a glyph in both faces, lies in the Basic Multilingual Plane
 * (libharu's UTF-8 fonts address glyphs with 16-bit codes and drop characters beyond it), and is
 * not written right to left: text is drawn in stored order without shaping, so Hebrew would read
 * reversed and Arabic unjoined. A label prints exactly what the study says or nothing, so such a
 * text is refused, never drawn as boxes.
 *
 * The faces are read once per process (FreeType), on the first question about a character
 * outside ASCII; their coverage is then a read-only table, safe to consult from any thread.
 */
#ifndef TW_FONTS_H
#define TW_FONTS_H

#include <stddef.h>
#include <stdint.h>

#define TW_FONT_REGULAR "DejaVuSans.ttf"
#define TW_FONT_BOLD "DejaVuSans-Bold.ttf"

/* Directory of the TrueType fonts: $TAGWRIGHT_FONTS, else the Debian fonts-dejavu-core one. */
const char *tw_font_dir(void);

typedef enum {
    TW_DRAW_OK,
    TW_DRAW_NO_GLYPH,      /* a face has no glyph for the character */
    TW_DRAW_BEYOND_BMP,    /* above U+FFFF */
    TW_DRAW_RIGHT_TO_LEFT, /* Hebrew, Arabic, ... */
    TW_DRAW_BIDI_CONTROL,  /* U+202A-U+202E, U+2066-U+2069 */
    TW_DRAW_NO_FONT,       /* the fonts could not be read, so nothing beyond ASCII is known */
} tw_draw_problem;

/* Whether every character of s (UTF-8) can be drawn as it reads; otherwise the first problem,
 * with the character in *cp. ASCII text is answered without reading the fonts. */
tw_draw_problem tw_text_drawable(const char *s, uint32_t *cp);

/* A finding's message for a problem of tw_text_drawable(): what is wrong with cp and what was
 * expected, e.g. "character U+4E2D CJK UNIFIED IDEOGRAPH-4E2D has no glyph in DejaVu Sans ...".
 * Written to buf (n bytes); returns buf. */
const char *tw_draw_problem_text(tw_draw_problem p, uint32_t cp, char *buf, size_t n);

#endif
