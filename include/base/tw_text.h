/*
 * tw_text.h - what text may be printed: the one test every label, permit and page applies to a
 * value before it is laid out.
 */
#ifndef TW_TEXT_H
#define TW_TEXT_H

/* 1 when s is printable UTF-8: well-formed, no overlong forms or surrogates, no control
 * characters. Every text drawn must pass this; callers check before planning a page. */
int tw_text_ok(const char *s);

#endif
