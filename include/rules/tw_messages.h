/*
 * tw_messages.h - every fixed text printed on a label, one table per language.
 *
 * Captions of label fields are indexed by tw_label_key; the other fixed texts (section titles,
 * the hazard line, signal words, the no-PPE statement, the cautions, the draft watermark, the
 * fixed words inside values) by the TW_M_ ids after them. docs/messages.md lists every
 * message in every language; a unit test keeps the two in step.
 *
 * A label in two languages prints English first, then Spanish ("en+es"). Messages are
 * static UTF-8 strings: nothing here allocates except tw_msg_fill() and tw_msg_join().
 * Placeholders in a message are {1}, {2}, ... filled by tw_msg_fill().
 */
#ifndef TW_MESSAGES_H
#define TW_MESSAGES_H

#include <stddef.h>

#include "rules/tw_label.h"

typedef enum { TW_LANG_EN, TW_LANG_ES, TW_LANG_COUNT } tw_lang;

/* Between the languages of a value made of fixed words ("Class 00 (max. use 500 V AC) / Clase
 * 00 (uso máx. 500 V CA)") and of short words on one line (the signal word, titles). */
#define TW_MSG_VALUE_SEP " / "

/* At most this many languages on one label. */
#define TW_MAX_LANGS 2

typedef enum {
    /* 0 .. TW_L_COUNT-1: the caption of each label field (tw_label_key); the caption of
     * TW_L_NO_PPE_ADEQUATE is the statement printed when no PPE level is adequate. */
    TW_M_TITLE_ARC_FLASH = TW_L_COUNT,
    TW_M_TITLE_SHOCK,
    TW_M_TITLE_SERVICE,
    TW_M_HAZARD_LINE,
    TW_M_WORD_WARNING,
    TW_M_WORD_DANGER,
    TW_M_DRAFT_TAG,
    TW_M_WATERMARK,
    TW_M_HASH_CAPTION,
    TW_M_CAUTIONS,
    TW_M_MISSING,
    TW_M_NO_QR,
    TW_M_NO_EQUIPMENT_ID,
    TW_M_GLOVE_VALUE,       /* {1} class name, {2} maximum use voltage AC */
    TW_M_AVOID_CONTACT,     /* restricted approach below 151 V */
    TW_M_BOUNDARY_COMPUTED, /* boundary note when the study gave no boundary */
    TW_M_BOUNDARY_COMPUTED_EXPONENT, /* the same with a default exponent: {1} exponent,
                                      * {2} its source, {3} equipment type */
    TW_M_COUNT
} tw_msg_id;

/* The languages of a site's "language" setting: "en", "es", or two joined by '+' ("en+es",
 * first printed first). Returns how many (1 or 2) and fills out; 0 when the code is unknown
 * or names a language twice. */
int tw_langs_parse(const char *code, tw_lang out[TW_MAX_LANGS]);

/* The two-letter code of a language ("en", "es"), NULL for an unknown one. */
const char *tw_lang_code(tw_lang lang);

/* The text of message id in lang; "" for an id out of range (never NULL). */
const char *tw_msg(tw_lang lang, int id);

/* A short name for a message id, as docs/messages.md lists it ("incident_energy",
 * "hazard_line"); NULL out of range. */
const char *tw_msg_name(int id);

/* The message with {1}..{n} replaced by args[0..n-1] (a placeholder beyond n stays as it is).
 * Fresh string (caller frees), NULL when out of memory. */
char *tw_msg_fill(tw_lang lang, int id, const char *const *args, size_t n);

/* The message in each of n languages, joined by sep ("English" sep "Spanish"); one language
 * gives the message alone. Fresh string (caller frees), NULL when out of memory. */
char *tw_msg_join(const tw_lang *langs, int n, int id, const char *sep);

#endif
