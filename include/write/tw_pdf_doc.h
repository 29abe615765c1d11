/*
 * tw_draw.h - drawing primitives shared by every PDF tagwright writes (labels, permits,
 * summaries), on top of libharu.
 *
 * A tw_pdf_doc is one libharu document with compression on, UTF-8 text, DejaVu Sans and
 * DejaVu Sans Bold embedded once (twice for a document with text outside WinAnsiEncoding), and PDF dates taken from a given day so that the same input
 * gives the same bytes. libharu errors are recorded in the struct by an error handler (no
 * longjmp); callers check tw_pdf_doc_check() after drawing. The struct must stay at the same
 * address while the document is open (the handler points at it).
 *
 * Measuring ASCII allocates nothing; measuring other text may add the document's UTF-8 font
 * (tw_font_wide). Drawing functions take lengths in points in the current user space of the
 * page. Text is UTF-8; a span is a byte range of it.
 */
#ifndef TW_PDF_DOC_H
#define TW_PDF_DOC_H

#include <stddef.h>

#include <hpdf.h>

#include "base/tw_fonts.h" /* tw_font_dir() */
#include "write/tw_layout.h"
#include "write/tw_qr.h"
#include "rules/tw_rules.h"

/* One typeface of a document. Text is shown in a single-byte TrueType font (WinAnsiEncoding)
 * when every character has a code there, as all the fixed English and Spanish text does: one
 * byte per character in the page stream instead of four hex digits, a third of the bytes to
 * write and compress. Other text (Greek, CJK, arrows) is shown in the UTF-8 (Identity-H) font
 * of the same file, which is made only when a document first needs it, since each embeds its
 * own copy of the glyphs. */
typedef struct {
    HPDF_Doc pdf;
    const char *ttf;            /* libharu's name for the loaded TrueType file */
    HPDF_Font byte;             /* WinAnsiEncoding */
    HPDF_Font wide;             /* UTF-8; NULL until tw_font_wide() */
    unsigned short ascii[95];   /* widths of ' '..'~' in 1/1000 em */
    const unsigned short *high; /* code points of bytes 0x80..0xFF (the document's table) */
    unsigned long *doc_error;   /* the document's error, set when text runs out of memory */
} tw_font;

typedef struct {
    HPDF_Doc pdf;
    tw_font *regular, *bold; /* point into faces */
    tw_font faces[2];
    unsigned short high[128];
    unsigned long error, detail; /* first libharu error and its detail, 0 when none */
    int saved;                   /* written at least once (see tw_pdf_doc_close) */
} tw_pdf_doc;

/* Open a document. creation_date "YYYY-MM-DD" becomes the creation and modification dates
 * (00:00:00Z). 0, or -1 with a message in err (nothing left open). */
int tw_pdf_doc_open(tw_pdf_doc *d, const char *creation_date, char *err, size_t errlen);

/* 0 when libharu has reported no error, else -1 with a message in err. */
int tw_pdf_doc_check(const tw_pdf_doc *d, char *err, size_t errlen);

/* Write the document atomically to path (temporary file beside it, then rename). 0, or -1
 * with a message in err; on failure no file is left behind and an earlier path is intact. */
int tw_pdf_doc_save(tw_pdf_doc *d, const char *path, char *err, size_t errlen);

/* Write the document to path as it is, not atomically: for outputs published together later
 * with tw_atomic_publish(), such as the volumes of one print run. Messages name target.
 * 0, or -1 with a message in err. */
int tw_pdf_doc_write(tw_pdf_doc *d, const char *path, const char *target, char *err,
                     size_t errlen);

/* Free the document; accepts NULL and a zeroed or closed struct. */
void tw_pdf_doc_close(tw_pdf_doc *d);

/* A new page of the given size, or NULL (error recorded in d). */
HPDF_Page tw_pdf_doc_page(tw_pdf_doc *d, double w, double h);

typedef struct {
    double r, g, b; /* 0..1 */
} tw_rgb;

/* Safety colours as sRGB approximations (from memory; verify against ANSI Z535.1, which
 * defines them by Munsell notation and tolerances): safety red about (200,16,46), safety
 * orange about (255,130,0). */
extern const tw_rgb TW_SAFETY_RED, TW_SAFETY_ORANGE, TW_BLACK, TW_WHITE, TW_GREY;

typedef enum { TW_ALIGN_LEFT, TW_ALIGN_CENTRE, TW_ALIGN_RIGHT } tw_align;

typedef struct {
    size_t start, len;
} tw_span;

/* Line spacing as a multiple of the font size. */
#define TW_LEADING 1.2

/* The UTF-8 font of f, made on first use; NULL if libharu fails (its error is recorded). */
HPDF_Font tw_font_wide(tw_font *f);

/* Width of s[0..len) at size pt, in points. */
double tw_text_width(tw_font *f, double pt, const char *s, size_t len);

/* Break s into lines no wider than w at size pt: at spaces, at '\n', and inside a word only
 * when the word alone is wider than w (at a UTF-8 character boundary). Fills up to max spans
 * and returns the number of lines needed (which may exceed max). lines may be NULL when max
 * is 0. An empty text needs 1 (empty) line. */
int tw_wrap(tw_font *f, double pt, const char *s, double w, tw_span *lines, int max);

/* Largest size from start_pt down to min_pt, in 0.5 pt steps, at which s fits in max_lines
 * lines of width w; 0 when it does not fit even at min_pt. */
double tw_fit_size(tw_font *f, const char *s, double w, int max_lines, double start_pt,
                   double min_pt);

/* Draw one line (a span of s) with its left edge at x and its baseline at y. Consecutive texts
 * share one text object; the drawing primitives below close it, and so must a caller before
 * any libharu call of its own that PDF forbids inside one (q/Q, cm, paths, images). */
void tw_draw_text(HPDF_Page p, tw_font *f, double pt, double x, double y, const char *s,
                  size_t len, tw_rgb colour);

/* Close the text object tw_draw_text() left open on p, if any (p may be NULL). */
void tw_draw_end_text(HPDF_Page p);

/* Draw wrapped lines top-down: the first line's top at top, aligned in [x, x+w]. */
void tw_draw_lines(HPDF_Page p, tw_font *f, double pt, double x, double top, double w,
                   const char *s, const tw_span *lines, int n, tw_align a, tw_rgb colour);

/* Distance from the top of a line box to its baseline, for size pt. */
double tw_baseline_drop(tw_font *f, double pt);

/* Module size for a QR symbol of `modules` modules (quiet zone included) in a square of side
 * points: a whole number of printer dots when dpi > 0. 0 when a module would be smaller than
 * min_dots dots (or than 0.5 pt without a dpi). */
double tw_qr_module_pt(int modules, double side, double dpi, int min_dots);

/* Draw the symbol with its white quiet zone (TW_QR_QUIET_MODULES) as a square of
 * (width + 2 * quiet) * module points whose lower-left corner is (x, y): one black-and-white
 * image, one pixel per module, so edges stay sharp when module is a whole number of printer dots.
 * 0, or -1 when out of memory (or libharu failed; its error is recorded in the document). */
int tw_draw_qr(HPDF_Doc pdf, HPDF_Page p, const tw_qr *q, double x, double y, double module);

/* The safety alert symbol (ANSI Z535.4): an equilateral triangle with an exclamation mark,
 * drawn as vector paths, base at y, apex at y + h. */
void tw_draw_alert_symbol(HPDF_Page p, double x, double y, double h, tw_rgb triangle,
                          tw_rgb mark);

/* The hazard header band: background colour, safety alert symbol and signal word in the
 * ANSI Z535.4 manner (DANGER: white on safety red, symbol white with a red mark; WARNING:
 * black on safety orange, symbol black with an orange mark), and an optional boxed tag such
 * as "DRAFT". The word starts at start_pt and shrinks to fit. Measures only when p is NULL.
 * Returns the size used, or 0 when it does not fit at min_pt. */
double tw_draw_hazard_header(HPDF_Page p, const tw_pdf_doc *d, tw_box band, tw_signal s,
                             const char *word, const char *tag, double start_pt,
                             double min_pt);

/* Large outline text across the area's diagonal (draft watermark). */
void tw_draw_watermark(HPDF_Page p, tw_font *f, tw_box area, const char *text, tw_rgb colour);

/* A rectangle filled with colour. */
void tw_draw_fill(HPDF_Page p, tw_box b, tw_rgb colour);

/* A rectangle outline of line width lw. */
void tw_draw_frame(HPDF_Page p, tw_box b, double lw, tw_rgb colour);

/* A straight line of width lw. */
void tw_draw_line(HPDF_Page p, double x0, double y0, double x1, double y1, double lw,
                  tw_rgb colour);

#endif
