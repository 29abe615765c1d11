/* pdf_doc.c - PDF documents and drawing primitives shared by every PDF (see tw_pdf_doc.h). */
#include "write/tw_pdf_doc.h"

#include <math.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "base/tw_atomic.h"
#include "base/tw_date.h"
#include "base/tw_fonts.h"
#include "base/tw_util.h"


/* From memory; verify against ANSI Z535.1 (see tw_pdf_doc.h). */
const tw_rgb TW_SAFETY_RED = {200 / 255.0, 16 / 255.0, 46 / 255.0};
const tw_rgb TW_SAFETY_ORANGE = {255 / 255.0, 130 / 255.0, 0};
const tw_rgb TW_BLACK = {0, 0, 0};
const tw_rgb TW_WHITE = {1, 1, 1};
const tw_rgb TW_GREY = {0.45, 0.45, 0.45};

/* ---- documents ---------------------------------------------------------------------------- */

static void on_hpdf_error(HPDF_STATUS error, HPDF_STATUS detail, void *user)
{
    tw_pdf_doc *d = user;
    if (d && !d->error) {
        d->error = (unsigned long)error;
        d->detail = (unsigned long)detail;
    }
}

static const char *hpdf_error_text(unsigned long e)
{
    switch (e) {
    case HPDF_FAILD_TO_ALLOC_MEM:
        return "out of memory";
    case HPDF_FILE_IO_ERROR:
        return "file write error";
    case HPDF_FILE_OPEN_ERROR:
        return "cannot open file";
    case HPDF_TTF_INVALID_CMAP:
    case HPDF_TTF_INVALID_FOMAT:
        return "not a usable TrueType font";
    default:
        return "PDF library error";
    }
}

int tw_pdf_doc_check(const tw_pdf_doc *d, char *err, size_t errlen)
{
    if (!d->error)
        return 0;
    snprintf(err, errlen, "%s (libharu error 0x%04lX, detail %lu)", hpdf_error_text(d->error),
             d->error, d->detail);
    return -1;
}

/* Load one TrueType file and its single-byte (WinAnsiEncoding) font; the UTF-8 font of the same
 * file is made only when a text needs it (tw_font_wide). Measuring every printable ASCII glyph
 * here fills f->ascii and also marks those glyphs as used: libharu embeds the glyphs a document
 * has measured or shown, and marking them all makes the embedded font, and so the bytes, the
 * same whatever the document holds. */
static int load_face(tw_pdf_doc *d, tw_font *f, const char *file, char *err, size_t errlen)
{
    char *path = tw_asprintf("%s/%s", tw_font_dir(), file);
    if (!path) {
        snprintf(err, errlen, "out of memory");
        return -1;
    }
    memset(f, 0, sizeof *f);
    f->pdf = d->pdf;
    f->high = d->high;
    f->doc_error = &d->error;
    if (access(path, R_OK) != 0) {
        snprintf(err, errlen,
                 "%s: font not found (install fonts-dejavu-core or set TAGWRIGHT_FONTS to the "
                 "directory holding %s)",
                 path, file);
        free(path);
        return -1;
    }
    f->ttf = HPDF_LoadTTFontFromFile(d->pdf, path, HPDF_TRUE);
    f->byte = f->ttf ? HPDF_GetFont(d->pdf, f->ttf, "WinAnsiEncoding") : NULL;
    for (int ch = ' '; f->byte && ch <= '~'; ch++) {
        HPDF_BYTE b = (HPDF_BYTE)ch;
        HPDF_TextWidth tw = HPDF_Font_TextWidth(f->byte, &b, 1);
        f->ascii[ch - ' '] = tw.width <= 0xFFFF ? (unsigned short)tw.width : 0xFFFF;
    }
    if (!f->byte || d->error) {
        char why[160];
        tw_pdf_doc_check(d, why, sizeof why);
        snprintf(err, errlen, "%s: cannot load font: %s", path, d->error ? why : "unknown");
        free(path);
        return -1;
    }
    free(path);
    return 0;
}

/* The code points of bytes 0x80..0xFF in libharu's WinAnsiEncoding, from libharu itself, so
 * that what tw_draw_text converts to is what the viewer decodes. */
static int load_high_codes(tw_pdf_doc *d)
{
    HPDF_Encoder e = HPDF_GetEncoder(d->pdf, "WinAnsiEncoding");
    if (!e)
        return -1;
    for (int c = 0x80; c <= 0xFF; c++)
        d->high[c - 0x80] = HPDF_Encoder_GetUnicode(e, (HPDF_UINT16)c);
    return 0;
}

static int set_dates(tw_pdf_doc *d, const char *creation_date, char *err, size_t errlen)
{
    tw_date day;
    if (tw_date_parse(creation_date, &day) != 0) {
        snprintf(err, errlen, "document date \"%s\": expected YYYY-MM-DD",
                 creation_date ? creation_date : "");
        return -1;
    }
    HPDF_Date t = {day.year, day.month, day.day, 0, 0, 0, 'Z', 0, 0};
    HPDF_SetInfoDateAttr(d->pdf, HPDF_INFO_CREATION_DATE, t);
    HPDF_SetInfoDateAttr(d->pdf, HPDF_INFO_MOD_DATE, t);
    HPDF_SetInfoAttr(d->pdf, HPDF_INFO_CREATOR, "tagwright");
    return 0;
}

int tw_pdf_doc_open(tw_pdf_doc *d, const char *creation_date, char *err, size_t errlen)
{
    memset(d, 0, sizeof *d);
    /* libharu's own memory pool (1 MiB blocks, freed with the document): a label makes some
     * hundred small objects, which otherwise cost a malloc and a free each. */
    d->pdf = HPDF_NewEx(on_hpdf_error, NULL, NULL, 1024 * 1024, d);
    if (!d->pdf) {
        snprintf(err, errlen, "cannot start a PDF document: out of memory");
        return -1;
    }
    /* Page content and fonts are deflated; images (the QR codes, a few hundred bytes each) are
     * not: deflating each on its own cost 6 % of the work of a label for 120 bytes saved. */
    HPDF_SetCompressionMode(d->pdf, HPDF_COMP_TEXT | HPDF_COMP_METADATA);
    HPDF_UseUTFEncodings(d->pdf);
    HPDF_SetCurrentEncoder(d->pdf, "UTF-8");
    d->regular = &d->faces[0];
    d->bold = &d->faces[1];
    if (set_dates(d, creation_date, err, errlen) != 0)
        goto fail;
    if (load_high_codes(d) != 0) {
        snprintf(err, errlen, "libharu has no WinAnsiEncoding");
        goto fail;
    }
    if (load_face(d, d->regular, TW_FONT_REGULAR, err, errlen) != 0 ||
        load_face(d, d->bold, TW_FONT_BOLD, err, errlen) != 0)
        goto fail;
    if (tw_pdf_doc_check(d, err, errlen) != 0)
        goto fail;
    return 0;
fail:
    tw_pdf_doc_close(d);
    return -1;
}

HPDF_Page tw_pdf_doc_page(tw_pdf_doc *d, double w, double h)
{
    tw_draw_end_text(HPDF_GetCurrentPage(d->pdf));
    HPDF_Page p = HPDF_AddPage(d->pdf);
    if (p) {
        HPDF_Page_SetWidth(p, (HPDF_REAL)w);
        HPDF_Page_SetHeight(p, (HPDF_REAL)h);
    }
    return d->error ? NULL : p;
}

int tw_pdf_doc_write(tw_pdf_doc *d, const char *path, const char *target, char *err,
                     size_t errlen)
{
    char why[200];
    tw_draw_end_text(HPDF_GetCurrentPage(d->pdf));
    if (tw_pdf_doc_check(d, why, sizeof why) != 0) {
        snprintf(err, errlen, "%s: not written: %s", target, why);
        return -1;
    }
    errno = 0;
    if (HPDF_SaveToFile(d->pdf, path) != HPDF_OK || d->error) {
        int e = errno;
        tw_pdf_doc_check(d, why, sizeof why);
        if (e == ENOSPC || e == EDQUOT || e == EFBIG) /* libharu says only "file I/O" */
            snprintf(err, errlen, "%s while writing %s", e == ENOSPC ? "disk full"
                     : e == EDQUOT ? "disk quota exceeded" : "file size limit reached", target);
        else
            snprintf(err, errlen, "%s: cannot write: %s", target,
                     d->error ? why : "PDF library error");
        return -1;
    }
    d->saved = 1;
    return 0;
}

int tw_pdf_doc_save(tw_pdf_doc *d, const char *path, char *err, size_t errlen)
{
    char *tmp = tw_atomic_tmp_path(path, err, errlen);
    if (!tmp)
        return -1;
    if (tw_pdf_doc_write(d, tmp, path, err, errlen) != 0) {
        unlink(tmp);
        tw_atomic_forget(tmp);
        free(tmp);
        return -1;
    }
    int rc = tw_atomic_publish(tmp, path, err, errlen);
    free(tmp);
    return rc;
}

void tw_pdf_doc_close(tw_pdf_doc *d)
{
    if (!d)
        return;
    /* libharu 2.3.0 frees the DecodeParms dictionary of a 1-bit (CCITT) image only when the
     * document is written (checked with valgrind): a document freed unsaved, as on a refused
     * run, is first written to libharu's own memory stream and thrown away. */
    if (d->pdf && !d->saved && HPDF_GetCurrentPage(d->pdf))
        HPDF_SaveToStream(d->pdf);
    if (d->pdf)
        HPDF_Free(d->pdf);
    memset(d, 0, sizeof *d);
}

/* ---- text --------------------------------------------------------------------------------- */

/* s[0..len) in WinAnsiEncoding into out (at least len bytes): the number of bytes written, or
 * -1 when a character has no code there (or is a control character). */
static long to_winansi(const tw_font *f, const char *s, size_t len, char *out)
{
    const unsigned char *u = (const unsigned char *)s;
    size_t i = 0, n = 0;
    while (i < len) {
        if (u[i] >= ' ' && u[i] <= '~') {
            out[n++] = (char)u[i++];
            continue;
        }
        uint32_t cp;
        size_t k = tw_utf8_decode(u + i, len - i, &cp);
        if (k == 0)
            return -1; /* not UTF-8: shown as it is, in the UTF-8 font */
        i += k;
        int code = -1; /* control characters (C0, DEL, C1) have none */
        for (int c = 0; cp >= 0xA0 && c < 128 && code < 0; c++)
            if (f->high[c] == cp)
                code = 0x80 + c;
        if (code < 0)
            return -1;
        out[n++] = (char)code;
    }
    return (long)n;
}

/* Out of memory while measuring or drawing text: recorded as the document's error, so that a
 * page missing a text is never taken for a finished one (tw_pdf_doc_check refuses it). */
static void text_oom(tw_font *f)
{
    if (f->doc_error && !*f->doc_error)
        *f->doc_error = HPDF_FAILD_TO_ALLOC_MEM;
}

HPDF_Font tw_font_wide(tw_font *f)
{
    if (!f->wide && f->ttf)
        f->wide = HPDF_GetFont(f->pdf, f->ttf, "UTF-8");
    return f->wide;
}

/* A text ready to show: its bytes and the font for them. The single-byte font when every
 * character has a WinAnsiEncoding code (all of the fixed English and Spanish text), else the
 * UTF-8 font with the text as it is. font is NULL when memory ran out (recorded as the
 * document's error) or the UTF-8 font cannot be made (libharu's error is recorded). */
typedef struct {
    char small[256];
    char *bytes;
    HPDF_Font font;
} shown;

static void shown_make(tw_font *f, const char *s, size_t len, shown *t)
{
    t->font = NULL;
    t->bytes = len < sizeof t->small ? t->small : malloc(len + 1);
    if (!t->bytes) {
        text_oom(f);
        return;
    }
    long n = to_winansi(f, s, len, t->bytes);
    if (n >= 0) {
        t->bytes[n] = '\0';
        t->font = f->byte;
        return;
    }
    memcpy(t->bytes, s, len);
    t->bytes[len] = '\0';
    t->font = tw_font_wide(f);
}

static void shown_free(shown *t)
{
    if (t->bytes != t->small)
        free(t->bytes);
}

double tw_text_width(tw_font *f, double pt, const char *s, size_t len)
{
    unsigned long sum = 0;
    size_t i = 0;
    for (; i < len; i++) {
        unsigned char ch = (unsigned char)s[i];
        if (ch < ' ' || ch > '~')
            break;
        sum += f->ascii[ch - ' '];
    }
    if (i == len)
        return (double)sum * pt / 1000.0;
    /* Other text: libharu's own measure, in the font that will show it (the glyph widths are
     * the same in both; the sum of glyph widths is all HPDF_Font_TextWidth adds). */
    shown t;
    shown_make(f, s, len, &t);
    double w = 0;
    if (t.font) {
        HPDF_TextWidth tw = HPDF_Font_TextWidth(t.font, (const HPDF_BYTE *)t.bytes,
                                                (HPDF_UINT)strlen(t.bytes));
        w = tw.width * pt / 1000.0;
    }
    shown_free(&t);
    return w;
}

double tw_baseline_drop(tw_font *f, double pt)
{
    double asc = HPDF_Font_GetAscent(f->byte) / 1000.0;
    double desc = HPDF_Font_GetDescent(f->byte) / 1000.0;
    double extra = TW_LEADING - (asc - desc);
    return (extra > 0 ? extra / 2 : 0) * pt + asc * pt;
}

/* Length in bytes of the UTF-8 character starting at s (1 for a stray byte). */
static size_t utf8_len(const char *s, size_t avail)
{
    unsigned char c = (unsigned char)*s;
    size_t n = c < 0x80 ? 1 : (c >> 5) == 6 ? 2 : (c >> 4) == 14 ? 3 : (c >> 3) == 30 ? 4 : 1;
    return n <= avail ? n : avail;
}

typedef struct {
    tw_font *f;
    double pt, w;
    tw_span *lines;
    int max, n;
    size_t start, end; /* the line being built */
    double width;
    int open;
} wrapper;

static void emit(wrapper *wr, size_t start, size_t end)
{
    if (wr->n < wr->max)
        wr->lines[wr->n] = (tw_span){start, end - start};
    wr->n++;
}

/* A word wider than a whole line: emit full-width pieces, keep the rest as the open line. */
static void split_word(wrapper *wr, const char *s, size_t a, size_t b)
{
    size_t start = a;
    double width = 0;
    for (size_t i = a; i < b;) {
        size_t k = utf8_len(s + i, b - i);
        double cw = tw_text_width(wr->f, wr->pt, s + i, k);
        if (i > start && width + cw > wr->w + 1e-6) {
            emit(wr, start, i);
            start = i;
            width = 0;
        }
        width += cw;
        i += k;
    }
    wr->start = start;
    wr->end = b;
    wr->width = width;
    wr->open = 1;
}

static void add_word(wrapper *wr, const char *s, size_t space_at, size_t a, size_t b)
{
    double ww = tw_text_width(wr->f, wr->pt, s + a, b - a);
    if (wr->open) {
        double sw = tw_text_width(wr->f, wr->pt, s + space_at, a - space_at);
        if (wr->width + sw + ww <= wr->w + 1e-6) {
            wr->width += sw + ww;
            wr->end = b;
            return;
        }
        emit(wr, wr->start, wr->end);
        wr->open = 0;
    }
    if (ww <= wr->w + 1e-6) {
        wr->start = a;
        wr->end = b;
        wr->width = ww;
        wr->open = 1;
    } else {
        split_word(wr, s, a, b);
    }
}

int tw_wrap(tw_font *f, double pt, const char *s, double w, tw_span *lines, int max)
{
    wrapper wr = {f, pt, w, lines, max, 0, 0, 0, 0, 0};
    size_t len = strlen(s), i = 0;
    for (;;) {
        size_t para_end = i;
        while (para_end < len && s[para_end] != '\n')
            para_end++;
        wr.open = 0;
        int words = 0;
        for (size_t j = i; j < para_end;) {
            size_t space_at = j;
            while (j < para_end && s[j] == ' ')
                j++;
            size_t a = j;
            while (j < para_end && s[j] != ' ')
                j++;
            if (j > a) {
                add_word(&wr, s, space_at, a, j);
                words++;
            }
        }
        if (wr.open)
            emit(&wr, wr.start, wr.end);
        else if (!words)
            emit(&wr, i, i);
        if (para_end >= len)
            break;
        i = para_end + 1;
    }
    return wr.n;
}

double tw_fit_size(tw_font *f, const char *s, double w, int max_lines, double start_pt,
                   double min_pt)
{
    for (double pt = start_pt; pt >= min_pt - 1e-9; pt -= 0.5)
        if (tw_wrap(f, pt, s, w, NULL, 0) <= max_lines)
            return pt;
    return 0;
}

/* Colour and font operators are written only when they change what is in effect. libharu
 * keeps the graphics state (and its stack across q/Q) and answers what is current, so skipping
 * a repeat is exact; it spares the operator (each one also costs libharu a 512-byte buffer
 * clear) and the bytes to compress - a tenth of a label's page stream. */
static int same_rgb(HPDF_RGBColor cur, tw_rgb c)
{
    return cur.r == (HPDF_REAL)c.r && cur.g == (HPDF_REAL)c.g && cur.b == (HPDF_REAL)c.b;
}

static void set_fill(HPDF_Page p, tw_rgb c)
{
    if (HPDF_Page_GetFillingColorSpace(p) == HPDF_CS_DEVICE_RGB &&
        same_rgb(HPDF_Page_GetRGBFill(p), c))
        return;
    HPDF_Page_SetRGBFill(p, (HPDF_REAL)c.r, (HPDF_REAL)c.g, (HPDF_REAL)c.b);
}

static void set_stroke(HPDF_Page p, tw_rgb c)
{
    if (HPDF_Page_GetStrokingColorSpace(p) == HPDF_CS_DEVICE_RGB &&
        same_rgb(HPDF_Page_GetRGBStroke(p), c))
        return;
    HPDF_Page_SetRGBStroke(p, (HPDF_REAL)c.r, (HPDF_REAL)c.g, (HPDF_REAL)c.b);
}

static void set_font(HPDF_Page p, HPDF_Font f, double pt)
{
    if (HPDF_Page_GetCurrentFont(p) == f && HPDF_Page_GetCurrentFontSize(p) == (HPDF_REAL)pt)
        return;
    HPDF_Page_SetFontAndSize(p, f, (HPDF_REAL)pt);
}

/* Consecutive texts share one text object (BT ... ET): every primitive that draws a path or an
 * image, and tw_draw_end_text(), closes it first, as PDF asks (no paths, images or q/Q inside
 * BT/ET); libharu tracks the mode and reports any operator used in the wrong one. */
void tw_draw_end_text(HPDF_Page p)
{
    if (p && HPDF_Page_GetGMode(p) == HPDF_GMODE_TEXT_OBJECT)
        HPDF_Page_EndText(p);
}

/* Two positions closer than this (in points; a millionth of an inch) are the same. */
#define SAME_POSITION_PT 0.001

/* Show text with its baseline starting at (x, y) inside a text object. A text one line
 * (pt * TW_LEADING) below the start of the previous one, at the same x, is shown with the
 * next-line operator (') rather than a move (Td): libharu clears a 512-byte buffer and formats
 * two numbers for each move, and most lines of a label follow the one above. */
static void show_at(HPDF_Page p, double pt, double x, double y, const char *bytes)
{
    HPDF_TransMatrix line = HPDF_Page_GetTextMatrix(p); /* start of the previous line */
    double leading = pt * TW_LEADING;
    if (fabs(x - line.x) < SAME_POSITION_PT && fabs(line.y - leading - y) < SAME_POSITION_PT) {
        if (fabs(HPDF_Page_GetTextLeading(p) - leading) >= SAME_POSITION_PT)
            HPDF_Page_SetTextLeading(p, (HPDF_REAL)leading);
        HPDF_Page_ShowTextNextLine(p, bytes);
    } else {
        HPDF_Page_TextOut(p, (HPDF_REAL)x, (HPDF_REAL)y, bytes);
    }
}

void tw_draw_text(HPDF_Page p, tw_font *f, double pt, double x, double y, const char *s,
                  size_t len, tw_rgb colour)
{
    if (len == 0)
        return;
    shown t;
    shown_make(f, s, len, &t);
    if (t.font) {
        set_fill(p, colour);
        if (HPDF_Page_GetGMode(p) != HPDF_GMODE_TEXT_OBJECT)
            HPDF_Page_BeginText(p);
        set_font(p, t.font, pt);
        show_at(p, pt, x, y, t.bytes);
    }
    shown_free(&t);
}

void tw_draw_lines(HPDF_Page p, tw_font *f, double pt, double x, double top, double w,
                   const char *s, const tw_span *lines, int n, tw_align a, tw_rgb colour)
{
    double y = top - tw_baseline_drop(f, pt);
    for (int i = 0; i < n; i++, y -= pt * TW_LEADING) {
        const char *t = s + lines[i].start;
        double lx = x;
        if (a != TW_ALIGN_LEFT) {
            double lw = tw_text_width(f, pt, t, lines[i].len);
            lx = a == TW_ALIGN_CENTRE ? x + (w - lw) / 2 : x + w - lw;
        }
        tw_draw_text(p, f, pt, lx, y, t, lines[i].len, colour);
    }
}

/* ---- shapes ------------------------------------------------------------------------------- */

void tw_draw_fill(HPDF_Page p, tw_box b, tw_rgb colour)
{
    tw_draw_end_text(p);
    set_fill(p, colour);
    HPDF_Page_Rectangle(p, (HPDF_REAL)b.x, (HPDF_REAL)b.y, (HPDF_REAL)b.w, (HPDF_REAL)b.h);
    HPDF_Page_Fill(p);
}

void tw_draw_frame(HPDF_Page p, tw_box b, double lw, tw_rgb colour)
{
    tw_draw_end_text(p);
    set_stroke(p, colour);
    HPDF_Page_SetLineWidth(p, (HPDF_REAL)lw);
    HPDF_Page_Rectangle(p, (HPDF_REAL)b.x, (HPDF_REAL)b.y, (HPDF_REAL)b.w, (HPDF_REAL)b.h);
    HPDF_Page_Stroke(p);
}

void tw_draw_line(HPDF_Page p, double x0, double y0, double x1, double y1, double lw,
                  tw_rgb colour)
{
    tw_draw_end_text(p);
    set_stroke(p, colour);
    HPDF_Page_SetLineWidth(p, (HPDF_REAL)lw);
    HPDF_Page_MoveTo(p, (HPDF_REAL)x0, (HPDF_REAL)y0);
    HPDF_Page_LineTo(p, (HPDF_REAL)x1, (HPDF_REAL)y1);
    HPDF_Page_Stroke(p);
}

/* ---- QR ----------------------------------------------------------------------------------- */

double tw_qr_module_pt(int modules, double side, double dpi, int min_dots)
{
    if (modules <= 0 || side <= 0)
        return 0;
    double m = side / modules;
    if (dpi > 0) {
        double dot = 72.0 / dpi;
        double k = floor(m / dot + 1e-9);
        return k >= min_dots && k >= 1 ? k * dot : 0;
    }
    return m >= 0.5 ? m : 0;
}

/* The symbol as one image on a white quiet zone, one pixel per module, two bits a pixel in
 * DeviceGray (0 black, 3 white; default /Decode, ISO 32000-1 8.9.5.2), stored as it is (an
 * image of a few hundred bytes) rather than as rectangles in the content stream. Scaled by a
 * whole number of printer dots it prints with sharp edges; /Interpolate is false by default
 * (ISO 32000-1 8.9.5.3), so viewers do not smooth it.
 *
 * Two bits rather than one because libharu stores a 1-bit image only through its CCITT
 * loader (HPDF_Image_LoadRaw1BitImageFromMem), which leaks its DecodeParms dictionary when a
 * document is freed unsaved and keeps its encoder state in a process-wide global, so two
 * documents cannot use it at once. libharu sizes a raw image as width * height * bits / 8
 * bytes without padding each row as PDF does, so a row is made a whole number of bytes wide
 * with white pixels split between both sides, inside the 4-module quiet zone. The measured
 * costs of the choices made here are in docs/performance.md. */
#define QR_BITS 2
#define QR_PIXELS_PER_BYTE (8 / QR_BITS)

int tw_draw_qr(HPDF_Doc pdf, HPDF_Page p, const tw_qr *q, double x, double y, double module)
{
    tw_draw_end_text(p);
    int n = q->width + 2 * TW_QR_QUIET_MODULES;
    size_t w = (size_t)q->width;
    size_t cols = (w + QR_PIXELS_PER_BYTE - 1) / QR_PIXELS_PER_BYTE * QR_PIXELS_PER_BYTE;
    size_t stride = cols / QR_PIXELS_PER_BYTE, left = (cols - w) / 2;
    unsigned char *bits = malloc(stride * w);
    if (!bits)
        return -1;
    /* Built a byte at a time without a branch on the module: the modules of a code are as good
     * as random, so a branch would be mispredicted half the time. */
    for (size_t r = 0; r < w; r++) {
        const unsigned char *row = q->dark + r * w;
        unsigned char *out = bits + r * stride;
        for (size_t b = 0; b < stride; b++) {
            unsigned byte = 0;
            for (size_t k = 0; k < QR_PIXELS_PER_BYTE; k++) {
                size_t at = b * QR_PIXELS_PER_BYTE + k; /* column in the padded row */
                unsigned dark = at >= left && at - left < w ? row[at - left] & 1u : 0u;
                byte = byte << QR_BITS | (3u - 3u * dark);
            }
            out[b] = (unsigned char)byte;
        }
    }
    HPDF_Image img = HPDF_LoadRawImageFromMem(pdf, bits, (HPDF_UINT)cols, (HPDF_UINT)w,
                                              HPDF_CS_DEVICE_GRAY, QR_BITS);
    free(bits);
    if (!img)
        return -1;
    tw_draw_fill(p, (tw_box){x, y, n * module, n * module}, TW_WHITE); /* quiet zone */
    double quiet = TW_QR_QUIET_MODULES * module;
    HPDF_Page_DrawImage(p, img, (HPDF_REAL)(x + quiet - (double)left * module),
                        (HPDF_REAL)(y + quiet), (HPDF_REAL)((double)cols * module),
                        (HPDF_REAL)(q->width * module));
    return 0;
}

/* ---- hazard header ------------------------------------------------------------------------ */

/* A polygon from n points, filled and stroked with round joins (rounded corners). */
static void rounded_polygon(HPDF_Page p, const double *xy, int n, double lw, tw_rgb c)
{
    tw_draw_end_text(p);
    set_fill(p, c);
    set_stroke(p, c);
    HPDF_Page_SetLineWidth(p, (HPDF_REAL)lw);
    HPDF_Page_SetLineJoin(p, HPDF_ROUND_JOIN);
    HPDF_Page_MoveTo(p, (HPDF_REAL)xy[0], (HPDF_REAL)xy[1]);
    for (int i = 1; i < n; i++)
        HPDF_Page_LineTo(p, (HPDF_REAL)xy[2 * i], (HPDF_REAL)xy[2 * i + 1]);
    HPDF_Page_ClosePath(p);
    HPDF_Page_FillStroke(p);
    HPDF_Page_SetLineJoin(p, HPDF_MITER_JOIN);
}

void tw_draw_alert_symbol(HPDF_Page p, double x, double y, double h, tw_rgb triangle,
                          tw_rgb mark)
{
    tw_draw_end_text(p);
    const double side = h * 2 / sqrt(3.0);
    const double cx = x + side / 2, cy = y + h / 3; /* incentre */
    const double round = h * 0.06;                  /* corner rounding = half the stroke */
    const double k = (h / 3 - round) / (h / 3);     /* shrink so the stroke stays inside */
    double tri[6] = {x, y, x + side, y, x + side / 2, y + h};
    for (int i = 0; i < 3; i++) {
        tri[2 * i] = cx + (tri[2 * i] - cx) * k;
        tri[2 * i + 1] = cy + (tri[2 * i + 1] - cy) * k;
    }
    rounded_polygon(p, tri, 3, 2 * round, triangle);
    /* The exclamation mark: a bar narrowing downwards and a round dot. */
    const double bar_lw = h * 0.02;
    double bar[8] = {cx - h * 0.065, y + h * 0.74, cx + h * 0.065, y + h * 0.74,
                     cx + h * 0.04,  y + h * 0.36, cx - h * 0.04,  y + h * 0.36};
    rounded_polygon(p, bar, 4, bar_lw, mark);
    set_fill(p, mark);
    HPDF_Page_Circle(p, (HPDF_REAL)cx, (HPDF_REAL)(y + h * 0.235), (HPDF_REAL)(h * 0.065));
    HPDF_Page_Fill(p);
}

typedef struct {
    double pt, cap, sym_h, sym_w, gap, word_w, tag_pt, tag_w, tag_pad, total;
} header_fit;

static int fit_header(const tw_pdf_doc *d, tw_box band, const char *word, const char *tag,
                      double pt, header_fit *h)
{
    const double cap_ratio = HPDF_Font_GetCapHeight(d->bold->byte) / 1000.0;
    h->pt = pt;
    h->cap = cap_ratio * pt;
    /* ANSI Z535.4: the symbol is at least as tall as the signal word's letters (from memory,
     * verify against the edition in force); ours is 1.3 times the capital height. */
    h->sym_h = h->cap * 1.3;
    if (h->sym_h > band.h * 0.72)
        return 0;
    h->sym_w = h->sym_h * 2 / sqrt(3.0);
    h->gap = pt * 0.3;
    h->word_w = tw_text_width(d->bold, pt, word, strlen(word));
    h->tag_pt = pt * 0.5;
    h->tag_pad = h->tag_pt * 0.35;
    h->tag_w = tag ? tw_text_width(d->bold, h->tag_pt, tag, strlen(tag)) + 2 * h->tag_pad : 0;
    h->total = h->sym_w + h->gap + h->word_w + (tag ? h->gap * 2 + h->tag_w : 0);
    return h->total <= band.w - 2 * (band.h * 0.12) + 1e-6;
}

double tw_draw_hazard_header(HPDF_Page p, const tw_pdf_doc *d, tw_box band, tw_signal s,
                             const char *word, const char *tag, double start_pt,
                             double min_pt)
{
    header_fit h;
    memset(&h, 0, sizeof h);
    double pt = start_pt;
    while (pt >= min_pt - 1e-9 && !fit_header(d, band, word, tag, pt, &h))
        pt -= 0.5;
    if (pt < min_pt - 1e-9)
        return 0;
    if (!p)
        return pt;
    int danger = s == TW_SIGNAL_DANGER;
    tw_rgb bg = danger ? TW_SAFETY_RED : TW_SAFETY_ORANGE;
    tw_rgb fg = danger ? TW_WHITE : TW_BLACK;
    tw_draw_fill(p, band, bg);
    double x = band.x + (band.w - h.total) / 2;
    double base = band.y + (band.h - h.cap) / 2;
    tw_draw_alert_symbol(p, x, base - (h.sym_h - h.cap) / 2, h.sym_h, fg, bg);
    x += h.sym_w + h.gap;
    tw_draw_text(p, d->bold, pt, x, base, word, strlen(word), fg);
    if (tag) {
        x += h.word_w + 2 * h.gap;
        double tcap = h.tag_pt * h.cap / pt;
        tw_draw_frame(p, (tw_box){x, base - h.tag_pad, h.tag_w, tcap + 2 * h.tag_pad},
                      h.tag_pt * 0.12, fg);
        tw_draw_text(p, d->bold, h.tag_pt, x + h.tag_pad, base, tag, strlen(tag), fg);
    }
    return pt;
}

/* ---- watermark ---------------------------------------------------------------------------- */

void tw_draw_watermark(HPDF_Page p, tw_font *f, tw_box area, const char *words, tw_rgb colour)
{
    tw_draw_end_text(p);
    size_t len = strlen(words);
    double unit = tw_text_width(f, 1, words, len);
    if (unit <= 0)
        return;
    shown t;
    shown_make(f, words, len, &t);
    HPDF_Font use = t.font;
    if (!use) {
        shown_free(&t);
        return;
    }
    double diag = hypot(area.w, area.h), angle = atan2(area.h, area.w);
    double pt = fmin(diag * 0.75 / unit, fmin(area.w, area.h) * 0.2);
    double tw = unit * pt, cap = HPDF_Font_GetCapHeight(use) / 1000.0 * pt;
    double c = cos(angle), s = sin(angle);
    double cx = area.x + area.w / 2, cy = area.y + area.h / 2;
    double x0 = cx - tw / 2 * c + cap / 2 * s, y0 = cy - tw / 2 * s - cap / 2 * c;
    HPDF_Page_GSave(p);
    set_stroke(p, colour);
    HPDF_Page_SetLineWidth(p, (HPDF_REAL)fmax(0.5, pt * 0.025));
    HPDF_Page_BeginText(p);
    HPDF_Page_SetFontAndSize(p, use, (HPDF_REAL)pt);
    HPDF_Page_SetTextRenderingMode(p, HPDF_STROKE);
    HPDF_Page_SetTextMatrix(p, (HPDF_REAL)c, (HPDF_REAL)s, (HPDF_REAL)-s, (HPDF_REAL)c,
                            (HPDF_REAL)x0, (HPDF_REAL)y0);
    HPDF_Page_ShowText(p, t.bytes);
    HPDF_Page_SetTextRenderingMode(p, HPDF_FILL);
    HPDF_Page_EndText(p);
    HPDF_Page_GRestore(p);
    shown_free(&t);
}
