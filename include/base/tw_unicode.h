/*
 * tw_unicode.h - the Unicode facts tagwright decides with, from ICU (libicu): which characters
 * cannot be seen, which are written right to left, and when two identifiers are the same.
 *
 * Every function takes well-formed UTF-8 (as the readers guarantee) and is safe to call from
 * several threads. Plain ASCII is answered without ICU.
 */
#ifndef TW_UNICODE_H
#define TW_UNICODE_H

#include <stddef.h>
#include <stdint.h>

/* The first character of s that an identifier may not hold because a reader cannot see it, or
 * it changes how the text around it is shown: format characters (Unicode category Cf: zero-width
 * space and joiners, the byte order mark, the bidirectional controls U+202A-U+202E and
 * U+2066-U+2069, soft hyphen), default-ignorable code points (variation selectors, fillers),
 * space separators other than U+0020 (no-break space, thin space, ideographic space...), line
 * and paragraph separators, control, private-use, surrogate and unassigned code points. 0 when
 * s has none. */
uint32_t tw_id_hidden_char(const char *s);

/* The key under which two identifiers name the same thing: what a reader sees of s after
 * Unicode compatibility normalization with case folding (NFKC_Casefold), characters that
 * cannot be seen left out, runs of spaces made one and none at the ends. "MCC-1", "mcc-1",
 * "ＭＣＣ－１" and "MCC-1" followed by a no-break space share one key. Plain ASCII is only
 * case-folded and its spaces tidied, without ICU. Written NUL-terminated to key (n bytes);
 * returns its length, or -1 when it does not fit or ICU fails. TW_ID_KEY_MAX bytes hold the
 * key of any identifier of up to 64 bytes. */
#define TW_ID_KEY_MAX 4096
long tw_id_key(const char *s, char *key, size_t n);

/* 1 when cp is written right to left (Unicode bidirectional class R or AL: Hebrew, Arabic,
 * Syriac, Thaana, N'Ko...), 2 when it is a bidirectional control (embedding, override,
 * isolate or their pop), else 0. */
int tw_char_rtl(uint32_t cp);

/* "U+00A0 NO-BREAK SPACE" (the Unicode name where ICU knows one) into buf of n bytes. */
void tw_char_describe(uint32_t cp, char *buf, size_t n);

#endif
