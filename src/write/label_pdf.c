/* label_pdf.c - arc-flash hazard label documents (see tw_label_pdf.h).
 *
 * Each label is planned first (every text box fitted, the QR code encoded and sized) and drawn
 * only when the whole plan fits, so a refused label leaves nothing on the page. */
#include "write/tw_label_pdf.h"
#include "base/tw_fonts.h"
#include "base/tw_text.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "write/tw_pdf_doc.h"
#include "rules/tw_messages.h"
#include "write/tw_qr.h"
#include "base/tw_util.h"

/* ---- the words printed on a label ---------------------------------------------------------
 * Every fixed text comes from the message tables (tw_messages.h); a document joins the
 * languages of its site once, English first. Sentences and captions put each language on its
 * own line; short words (signal word, titles, tags) share a line, separated by " / ". */

static const char *lang_sep(int id)
{
    if (id == TW_L_NO_PPE_ADEQUATE || id == TW_M_HAZARD_LINE || id == TW_M_CAUTIONS)
        return "\n";
    return TW_MSG_VALUE_SEP;
}

/* ---- what a posting label must carry ------------------------------------------------------ */

typedef struct {
    tw_label_key key;
    const char *why;
} required_field;

/* NFPA 70E 130.5(H): nominal system voltage and arc-flash boundary on every label (the energy
 * or category rule is checked separately). The approach boundaries come from Table
 * 130.4(E)(a); the equipment and study identify what the label belongs to. */
static const required_field required_fields[] = {
    {TW_L_EQUIPMENT_ID, "names the equipment"},
    {TW_L_NOMINAL_VOLTAGE, "NFPA 70E 130.5(H)"},
    {TW_L_ARC_FLASH_BOUNDARY, "NFPA 70E 130.5(H)"},
    {TW_L_LIMITED_APPROACH, "NFPA 70E Table 130.4(E)(a)"},
    {TW_L_RESTRICTED_APPROACH, "NFPA 70E Table 130.4(E)(a)"},
    {TW_L_STUDY_ID, "names the risk assessment the label reflects"},
    {TW_L_STUDY_DATE, "dates the risk assessment the label reflects"},
};

static int is_required(tw_label_key k)
{
    for (size_t i = 0; i < sizeof required_fields / sizeof required_fields[0]; i++)
        if (required_fields[i].key == k)
            return 1;
    return 0;
}

static int has(const tw_label *l, tw_label_key k)
{
    return l->value[k] && l->value[k][0];
}

/* The equipment ID as named in error messages (which are in English, like every message of
 * the command line). */
static const char *label_id(const tw_label *l)
{
    return has(l, TW_L_EQUIPMENT_ID) && tw_text_ok(l->value[TW_L_EQUIPMENT_ID])
               ? l->value[TW_L_EQUIPMENT_ID]
               : tw_msg(TW_LANG_EN, TW_M_NO_EQUIPMENT_ID);
}

static int hash_ok(const char *h)
{
    for (int i = 0; i < 64; i++)
        if (!((h[i] >= '0' && h[i] <= '9') || (h[i] >= 'a' && h[i] <= 'f')))
            return 0;
    return h[64] == '\0';
}

/* 1 with "PREFIX: what is wrong" in err when text (may be NULL) cannot be drawn as it reads
 * (tw_fonts.h); a draft is refused for it too, since it would print something else. */
static int undrawable(const char *text, char *err, size_t errlen, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 4, 5)))
#endif
    ;

static int undrawable(const char *text, char *err, size_t errlen, const char *fmt, ...)
{
    uint32_t cp = 0;
    tw_draw_problem p = text ? tw_text_drawable(text, &cp) : TW_DRAW_OK;
    if (p == TW_DRAW_OK)
        return 0;
    char prefix[256], why[512];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(prefix, sizeof prefix, fmt, ap);
    va_end(ap);
    snprintf(err, errlen, "%s: %s", prefix, tw_draw_problem_text(p, cp, why, sizeof why));
    return 1;
}

/* Content rules a posting label must meet; a draft only needs printable, drawable text. */
static int check_label(const tw_label *l, const char *payload, char *err, size_t errlen)
{
    const char *id = label_id(l);
    for (int k = 0; k < TW_L_COUNT; k++) {
        if (l->value[k] && !tw_text_ok(l->value[k])) {
            snprintf(err, errlen, "label %s: %s is not printable UTF-8 text", id,
                     tw_label_key_name((tw_label_key)k));
            return -1;
        }
        if (undrawable(l->value[k], err, errlen, "label %s: %s", id,
                       tw_label_key_name((tw_label_key)k)))
            return -1;
    }
    if (l->signal != TW_SIGNAL_WARNING && l->signal != TW_SIGNAL_DANGER) {
        snprintf(err, errlen, "label %s: unknown signal word", id);
        return -1;
    }
    if (l->draft)
        return 0;
    for (size_t i = 0; i < sizeof required_fields / sizeof required_fields[0]; i++)
        if (!has(l, required_fields[i].key)) {
            snprintf(err, errlen, "label %s: %s is missing (%s); no posting label without it",
                     id, tw_label_key_name(required_fields[i].key), required_fields[i].why);
            return -1;
        }
    int energy = has(l, TW_L_INCIDENT_ENERGY), distance = has(l, TW_L_WORKING_DISTANCE);
    int category = has(l, TW_L_PPE_CATEGORY);
    const char *problem = NULL;
    if (energy && category)
        problem = "shows both incident energy and a PPE category; NFPA 70E 130.5(H) allows "
                  "one or the other, never both";
    else if (energy != distance)
        problem = "incident energy and working distance must be given together (NFPA 70E "
                  "130.5(H))";
    else if (!energy && !category)
        problem = "has neither incident energy nor a PPE category (NFPA 70E 130.5(H))";
    else if (has(l, TW_L_PPE_LEVEL) && has(l, TW_L_NO_PPE_ADEQUATE))
        problem = "names a site PPE level and also says no level is adequate";
    else if (!hash_ok(l->hash))
        problem = "has no content hash";
    if (problem) {
        snprintf(err, errlen, "label %s: %s", id, problem);
        return -1;
    }
    char found[65];
    if (!payload || tw_qr_payload_hash(payload, found) != 0 || strcmp(found, l->hash) != 0) {
        snprintf(err, errlen, "label %s: the QR payload does not carry the label's content hash",
                 id);
        return -1;
    }
    return 0;
}

/* ---- rows of text fitted into a region ----------------------------------------------------- */

typedef enum { ROW_TEXT, ROW_PAIR, ROW_BIG, ROW_TITLE, ROW_BOX } row_kind;

#define ROW_MAX_LINES 12
#define CAPTION_MAX_LINES 6
#define BLOCK_MAX_ROWS 40
/* The body's columns (at most 2) and the study box beside the QR code. */
#define BLOCK_MAX_REGIONS 3
/* Space between columns of the body, in font sizes of the body text (as layout.c assumes). */
#define COLUMN_GAP_EM 1.0
/* Share of a column the captions may take. */
#define CAPTION_SHARE 0.48

typedef struct {
    row_kind kind;
    const char *what;    /* named in messages */
    const char *caption; /* ROW_PAIR; NULL when the value continues the row above */
    const char *text;
    int max_lines, bold;
    tw_align align;
    double scale;        /* starting size relative to the block's size */
    double pre;          /* extra space above the row, in block font sizes */
    /* set by fitting */
    double pt, space, h, cap_w;
    int n, cap_n, region, stacked;
    double y;            /* distance of the row's top below the top of its region */
    tw_span lines[ROW_MAX_LINES], cap_lines[CAPTION_MAX_LINES];
} row;

/* Rows of text that flow, in order, through a list of regions: the body's columns, then (when
 * the QR box sits above the footer) the study box beside it, where the study rows start. */
typedef struct {
    row rows[BLOCK_MAX_ROWS];
    int n, overflow;
    int cap_max;         /* lines a caption may take */
    int study_from;      /* first row of the study block, or -1 */
    int study_region;    /* 1: the last region is the study box, where study rows start */
    int study_gap;       /* 1: space between body rows and study rows in the same region */
    tw_box regions[BLOCK_MAX_REGIONS];
    int nregions;
    /* set by fitting */
    double pt;
    const row *failed;   /* the row that did not fit its width, or NULL */
    int caption_failed;  /* 1: it was the caption (need and have count lines) */
    double need, have;   /* width (or caption lines) of the failed row */
    double over;         /* height by which the last region overflows */
} block;

static row *add_row(block *b, row_kind kind, const char *what, const char *caption,
                    const char *text, int max_lines)
{
    if (b->n == BLOCK_MAX_ROWS) {
        b->overflow = 1;
        return NULL;
    }
    row *r = &b->rows[b->n++];
    memset(r, 0, sizeof *r);
    if (max_lines > ROW_MAX_LINES)
        max_lines = ROW_MAX_LINES;
    *r = (row){.kind = kind, .what = what, .caption = caption, .text = text,
               .max_lines = max_lines, .bold = kind != ROW_TEXT, .scale = 1};
    if (kind == ROW_BIG)
        r->scale = 1.8;
    if (kind == ROW_TITLE)
        r->scale = 0.85;
    return r;
}

/* Largest size at most start at which the widest word of s fits in w (a word is broken across
 * lines only when it cannot fit even at min). */
static double whole_words_pt(tw_font *f, const char *s, double w, double start, double min)
{
    double widest = 0;
    for (const char *p = s; *p;) {
        size_t n = strcspn(p, " \n");
        widest = fmax(widest, tw_text_width(f, 1, p, n));
        p += n;
        p += *p != '\0';
    }
    if (widest <= 0 || widest * start <= w)
        return start;
    return fmax(min, floor(w / widest * 2) / 2);
}

/* A caption and its value side by side (stacked 0) or the value under its caption, both the
 * full width (stacked 1): sets the row's lines and height; -1 when it does not fit. */
static int fit_pair(const tw_pdf_doc *d, block *b, row *r, double w, double cap_w, double s,
                    double min, int stacked)
{
    tw_font *f = r->bold ? d->bold : d->regular;
    int cap_max = b->cap_max > 0 ? b->cap_max : 2;
    double cap_avail = stacked ? w : cap_w - 0.6 * s, avail = stacked ? w : w - cap_w;
    r->stacked = stacked;
    r->cap_n = 0;
    if (r->caption) {
        r->cap_n = tw_wrap(d->regular, s, r->caption, cap_avail, r->cap_lines, cap_max);
        if (r->cap_n > cap_max) {
            b->need = r->cap_n;
            b->have = cap_max;
            b->caption_failed = 1;
            return -1;
        }
    }
    double start = whole_words_pt(f, r->text, avail, fmax(min, s * r->scale), min);
    r->pt = tw_fit_size(f, r->text, avail, r->max_lines, start, min);
    if (r->pt == 0) {
        b->need = tw_text_width(f, min, r->text, strlen(r->text));
        b->have = avail * r->max_lines;
        b->caption_failed = 0; /* the value, this time: the message must say so */
        return -1;
    }
    r->n = tw_wrap(f, r->pt, r->text, avail, r->lines, ROW_MAX_LINES);
    double value_h = r->n * r->pt * TW_LEADING, cap_h = r->cap_n * s * TW_LEADING;
    if (!stacked) /* the value's first baseline is level with the caption's (draw_row), so a
                   * value set smaller than its caption starts lower by the difference */
        value_h += fmax(0, tw_baseline_drop(d->regular, s) - tw_baseline_drop(f, r->pt));
    r->h = r->space + (stacked ? cap_h + value_h : fmax(value_h, cap_h));
    return 0;
}

/* 1 when the row's text was broken inside a word (a line starts after neither a space nor a
 * line break). */
static int breaks_word(const row *r)
{
    for (int i = 1; i < r->n && i < ROW_MAX_LINES; i++) {
        size_t at = r->lines[i].start;
        if (at > 0 && r->text[at - 1] != ' ' && r->text[at - 1] != '\n')
            return 1;
    }
    return 0;
}

/* Size a row at block size s in a region w wide with captions cap_w wide; 0 when it fits its
 * width, else -1 with need/have set. A caption and value that take less height stacked than
 * side by side (a long value in a narrow column) are stacked. */
static int fit_row(const tw_pdf_doc *d, block *b, row *r, double w, double cap_w, double s,
                   double min)
{
    tw_font *f = r->bold ? d->bold : d->regular;
    double avail = w, start = fmax(min, s * r->scale);
    r->space = r->kind == ROW_TITLE ? 0.45 * s : r->kind == ROW_BOX ? 0.35 * s
             : r->kind == ROW_BIG ? 0.25 * s : 0;
    r->space += r->pre * s;
    r->cap_w = cap_w;
    if (r->kind == ROW_PAIR) {
        int side = fit_pair(d, b, r, w, cap_w, s, min, 0);
        if (!r->caption)
            return side;
        row beside = *r; /* kept rather than fitted again when side by side wins */
        int side_broken = side == 0 && breaks_word(r);
        /* stacked when lower, or as low with the value on fewer lines, or when only stacking
         * keeps every word of the value whole (a date or an ID beside a narrow caption) */
        int under = fit_pair(d, b, r, w, cap_w, s, min, 1);
        if (under == 0 && (side != 0 || r->h < beside.h - 1e-6 ||
                           (r->h < beside.h + 1e-6 && r->n < beside.n) ||
                           (side_broken && !breaks_word(r))))
            return 0;
        if (side != 0)
            return -1;
        *r = beside;
        return 0;
    }
    if (r->kind == ROW_BOX)
        avail = w - 1.2 * s;
    start = whole_words_pt(f, r->text, avail, start, min);
    r->pt = tw_fit_size(f, r->text, avail, r->max_lines, start, min);
    if (r->pt == 0) {
        b->need = tw_text_width(f, min, r->text, strlen(r->text));
        b->have = avail * r->max_lines;
        return -1;
    }
    r->n = tw_wrap(f, r->pt, r->text, avail, r->lines, ROW_MAX_LINES);
    double text_h = r->n * r->pt * TW_LEADING;
    r->h = r->space + text_h + (r->kind == ROW_BOX ? 2 * r->space + 0.6 * s : 0);
    return 0;
}

/* Width of the widest caption line at size s (a caption has one line per language). */
static double widest_caption(const tw_pdf_doc *d, const block *b, double s)
{
    double cw = 0;
    for (int i = 0; i < b->n; i++) {
        const char *c = b->rows[i].kind == ROW_PAIR ? b->rows[i].caption : NULL;
        for (const char *nl; c; c = nl ? nl + 1 : NULL) {
            nl = strchr(c, '\n');
            size_t len = nl ? (size_t)(nl - c) : strlen(c);
            cw = fmax(cw, tw_text_width(d->regular, s, c, len));
        }
    }
    return cw;
}

/* Size and place every row at block size s: each row goes in the current region, or the next
 * one when it would overflow this one (a title goes with the row after it; the study rows start
 * in the study box). 0 when everything fits, else -1 with failed or over set. */
static int fit_block_at(const tw_pdf_doc *d, block *b, double s, double min)
{
    b->pt = s;
    b->failed = NULL;
    b->caption_failed = 0;
    b->over = 0;
    double cw = widest_caption(d, b, s) + 0.6 * s, used = 0;
    int reg = 0;
    for (int i = 0; i < b->n; i++) {
        row *r = &b->rows[i];
        if (i == b->study_from && b->study_region && reg < b->nregions - 1) {
            reg = b->nregions - 1;
            used = 0;
        }
        if (i == b->study_from)
            r->pre = used > 0 && b->study_gap ? 0.6 : 0; /* set off from the body rows above */
        for (;;) {
            tw_box box = b->regions[reg];
            double cap_w = fmin(cw, box.w * CAPTION_SHARE);
            if (fit_row(d, b, r, box.w, cap_w, s, min) != 0) {
                b->failed = r;
                return -1;
            }
            double need = r->h;
            if (r->kind == ROW_TITLE && i + 1 < b->n &&
                fit_row(d, b, &b->rows[i + 1], box.w, cap_w, s, min) == 0)
                need += b->rows[i + 1].h;
            if (used > 0 && used + need > box.h + 1e-6 && reg + 1 < b->nregions) {
                reg++;
                used = 0;
                continue;
            }
            break;
        }
        r->region = reg;
        r->y = used;
        used += r->h;
    }
    b->over = used - b->regions[reg].h;
    return b->over <= 1e-6 ? 0 : -1;
}

/* The regions for a body in `columns` columns at size s, then the study box (beside or under
 * the QR box) when the layout has one. */
static void set_regions(block *b, const tw_layout *lay, tw_box study, int columns, double s)
{
    double gap = columns > 1 ? COLUMN_GAP_EM * s : 0;
    double w = (lay->body.w - (columns - 1) * gap) / columns;
    b->nregions = 0;
    for (int c = 0; c < columns; c++)
        b->regions[b->nregions++] = (tw_box){lay->body.x + c * (w + gap), lay->body.y, w,
                                             lay->body.h};
    b->study_region = study.w > 0;
    if (b->study_region)
        b->regions[b->nregions++] = study;
}

/* The first row that reaches below the bottom of its region after fit_block_at(), named for
 * messages. */
static const char *overflowing(const block *b)
{
    for (int i = 0; i < b->n; i++) {
        const row *r = &b->rows[i];
        if (r->y + r->h > b->regions[r->region].h + 1e-6)
            return r->what;
    }
    return b->n ? b->rows[b->n - 1].what : "the last row";
}

/* Shrink in 0.5 pt steps from the layout's body size to its minimum until the block fits, in
 * one column; only when one column does not hold it even at the minimum, in two (body.columns
 * is the most it may use). Else a message naming the label, the field and the region. */
static int fit_block(const tw_pdf_doc *d, block *b, const tw_layout *lay, tw_box study,
                     const char *id, char *err, size_t errlen)
{
    const char *region = "body";
    if (b->overflow) {
        snprintf(err, errlen, "label %s: too many lines for the %s region", id, region);
        return -1;
    }
    int max_cols = lay->body_columns > 1 ? lay->body_columns : 1;
    if (max_cols > BLOCK_MAX_REGIONS - 1)
        max_cols = BLOCK_MAX_REGIONS - 1;
    double min = lay->min_pt;
    for (int c = 1; c <= max_cols; c++) {
        /* The layout's own size with the gap first: most labels fit there at once. */
        b->study_gap = 1;
        set_regions(b, lay, study, c, lay->body_pt);
        if (fit_block_at(d, b, lay->body_pt, min) == 0)
            return 0;
        /* Then the tightest setting: when even that fails, no larger size will fit. */
        b->study_gap = 0;
        set_regions(b, lay, study, c, min);
        if (fit_block_at(d, b, min, min) != 0)
            continue;
        for (b->study_gap = 1; b->study_gap >= 0; b->study_gap--) { /* the gap goes first */
            double s = lay->body_pt;
            if (b->study_gap == 1) { /* its first size was tried above */
                if (s <= min)
                    continue;
                s = fmax(min, s - 0.5);
            }
            for (;; s = fmax(min, s - 0.5)) {
                set_regions(b, lay, study, c, s);
                if (fit_block_at(d, b, s, min) == 0)
                    return 0;
                if (s <= min)
                    break;
            }
        }
    }
    if (b->failed && b->failed - b->rows >= b->study_from && b->study_from >= 0)
        region = lay->qr_side ? "body" : "study";
    if (b->failed && b->caption_failed)
        snprintf(err, errlen, "label %s: the caption of %s does not fit the %s region at %g pt "
                 "(needs %.0f lines, has %.0f)", id, b->failed->what, region, min, b->need,
                 b->have);
    else if (b->failed && b->need > b->have)
        snprintf(err, errlen, "label %s: %s does not fit the %s region at %g pt (needs %.0f pt, "
                 "has %.0f pt)", id, b->failed->what, region, min, b->need, b->have);
    else if (b->failed) /* long enough in all, but the lines break between words */
        snprintf(err, errlen, "label %s: %s does not fit the %s region at %g pt (%.0f pt of "
                 "text for %.0f pt of lines, which break only between words)", id,
                 b->failed->what, region, min, b->need, b->have);
    else
        snprintf(err, errlen, "label %s: the body and study regions overflow at %g pt from %s "
                 "on (need %.0f pt more height: %.1f mm short)", id, min, overflowing(b),
                 b->over, b->over * 25.4 / 72);
    return -1;
}

/*
 * Rows are drawn in two passes: shapes and every text in the regular font first, then every
 * text in bold. Captions are regular and most values bold, so drawing row by row would switch
 * the font for every string; two passes write a font operator a handful of times per label
 * instead of thirty (libharu clears a 512-byte buffer for each operator, and every byte of
 * the page stream is compressed). Nothing on a label overlaps, so the order is not visible.
 */
typedef struct {
    HPDF_Page p;
    const tw_pdf_doc *d;
    int bold_pass;
} pass;

static void lines_in(const pass *ps, tw_font *f, double pt, double x, double top, double w,
                     const char *s, const tw_span *lines, int n, tw_align a)
{
    if ((f == ps->d->bold) == (ps->bold_pass != 0))
        tw_draw_lines(ps->p, f, pt, x, top, w, s, lines, n, a, TW_BLACK);
}

static void draw_title(const pass *ps, const row *r, double x, double top, double w)
{
    tw_font *b = ps->d->bold;
    lines_in(ps, b, r->pt, x, top, w, r->text, r->lines, r->n, TW_ALIGN_LEFT);
    if (ps->bold_pass)
        return;
    double tw = tw_text_width(b, r->pt, r->text + r->lines[0].start, r->lines[0].len);
    double y = top - tw_baseline_drop(b, r->pt) + r->pt * 0.35;
    if (r->n == 1 && tw + r->pt < w)
        tw_draw_line(ps->p, x + tw + 0.5 * r->pt, y, x + w, y, 0.6, TW_BLACK);
}

static void draw_row(const pass *ps, const block *b, const row *r, double x, double y, double w)
{
    const tw_pdf_doc *d = ps->d;
    double s = b->pt;
    tw_font *f = r->bold ? d->bold : d->regular;
    switch (r->kind) {
    case ROW_TITLE:
        draw_title(ps, r, x, y, w);
        break;
    case ROW_PAIR: {
        if (r->stacked) {
            lines_in(ps, d->regular, s, x, y, w, r->caption, r->cap_lines, r->cap_n,
                     TW_ALIGN_LEFT);
            lines_in(ps, f, r->pt, x, y - r->cap_n * s * TW_LEADING, w, r->text, r->lines, r->n,
                     TW_ALIGN_LEFT);
            break;
        }
        lines_in(ps, d->regular, s, x, y, r->cap_w, r->caption ? r->caption : "", r->cap_lines,
                 r->cap_n, TW_ALIGN_LEFT);
        /* first baselines level with the caption's */
        double vtop = y - tw_baseline_drop(d->regular, s) + tw_baseline_drop(f, r->pt);
        lines_in(ps, f, r->pt, x + r->cap_w, vtop, w - r->cap_w, r->text, r->lines, r->n,
                 TW_ALIGN_LEFT);
        break;
    }
    case ROW_BOX: {
        double bh = r->h - 2 * r->space;
        if (!ps->bold_pass)
            tw_draw_frame(ps->p, (tw_box){x + 0.4 * s, y - bh, w - 0.8 * s, bh - 0.4 * s},
                          0.2 * s, TW_BLACK);
        lines_in(ps, f, r->pt, x + 0.6 * s, y - 0.2 * s - r->space, w - 1.2 * s, r->text,
                 r->lines, r->n, TW_ALIGN_CENTRE);
        break;
    }
    default:
        lines_in(ps, f, r->pt, x, y, w, r->text, r->lines, r->n, r->align);
    }
}

static void draw_block(HPDF_Page p, const tw_pdf_doc *d, const block *b)
{
    for (int bold = 0; bold <= 1; bold++) {
        pass ps = {p, d, bold};
        for (int i = 0; i < b->n; i++) {
            const row *r = &b->rows[i];
            tw_box box = b->regions[r->region];
            draw_row(&ps, b, r, box.x, box.y + box.h - r->y - r->space, box.w);
        }
    }
}

/* ---- the document ------------------------------------------------------------------------ */

struct tw_label_doc {
    tw_pdf_doc pdf;
    tw_layout layout;         /* copy; name and description not owned; footer may have grown */
    tw_lang langs[TW_MAX_LANGS];
    int nlang;
    char *text[TW_M_COUNT];   /* every message in the document's languages, joined */
    char *footer;             /* cautions text */
    tw_span *footer_lines;
    int footer_n;
    double footer_pt;
    HPDF_Page page;
    int count, pages;
};

/* A fixed text in the document's languages (never NULL). */
static const char *T(const tw_label_doc *doc, int id)
{
    return id >= 0 && id < TW_M_COUNT && doc->text[id] ? doc->text[id] : "";
}

#define PLAN_MAX_OWNED 4

typedef struct {
    block body;                  /* body and study rows */
    double header_pt;
    tw_qr qr;
    int qr_borrowed;             /* qr belongs to the caller (encoded ahead, maybe on a thread) */
    double module, hash_pt;
    char hash_caption[160];
    tw_span hash_lines[3];
    int hash_n;
    char *owned[PLAN_MAX_OWNED]; /* display copies of values, freed with the plan */
    int n_owned;
} plan;

static void plan_free(plan *pl)
{
    if (!pl->qr_borrowed)
        tw_qr_free(&pl->qr);
    for (int i = 0; i < pl->n_owned; i++)
        free(pl->owned[i]);
    free(pl);
}

/* The text shown for a field: its value; in a draft a required field that is missing is
 * shown as missing; otherwise NULL. A value made of fixed words in two languages shows each
 * language on its own line. */
static const char *shown(const tw_label_doc *doc, plan *pl, const tw_label *l, tw_label_key k)
{
    if (doc->layout.omit & (1u << k))
        return NULL;   /* an optional field this layout leaves out */
    if (!has(l, k))
        return l->draft && is_required(k) ? T(doc, TW_M_MISSING) : NULL;
    int words = k == TW_L_GLOVE_CLASS || k == TW_L_RESTRICTED_APPROACH || k == TW_L_BOUNDARY_NOTE;
    const char *sep = words && doc->nlang > 1 ? strstr(l->value[k], TW_MSG_VALUE_SEP) : NULL;
    if (!sep || pl->n_owned == PLAN_MAX_OWNED)
        return l->value[k];
    size_t head = (size_t)(sep - l->value[k]);
    char *copy = tw_asprintf("%.*s\n%s", (int)head, l->value[k], sep + strlen(TW_MSG_VALUE_SEP));
    if (!copy)
        return l->value[k];
    pl->owned[pl->n_owned++] = copy;
    return copy;
}

/* Lines a value may take: as given per language, and one more when the body may be set in
 * narrow columns. */
static int value_lines(const tw_label_doc *doc, int max_lines)
{
    if (doc->layout.body_columns > 1)
        max_lines++;
    return max_lines * doc->nlang;
}

static row *add_pair(const tw_label_doc *doc, plan *pl, block *b, const tw_label *l,
                     tw_label_key k, int max_lines)
{
    const char *v = shown(doc, pl, l, k);
    if (!v)
        return NULL;
    return add_row(b, ROW_PAIR, tw_label_key_name(k), T(doc, (int)k), v,
                   value_lines(doc, max_lines));
}

static void plan_arc_flash(const tw_label_doc *doc, plan *pl, block *b, const tw_label *l)
{
    add_row(b, ROW_TITLE, "arc-flash title", NULL, T(doc, TW_M_TITLE_ARC_FLASH), doc->nlang);
    /* NFPA 70E 130.5(H): incident energy at its working distance OR the PPE category. */
    if (has(l, TW_L_INCIDENT_ENERGY) || !has(l, TW_L_PPE_CATEGORY)) {
        tw_label_key keys[] = {TW_L_INCIDENT_ENERGY, TW_L_WORKING_DISTANCE};
        for (int i = 0; i < 2; i++)
            add_row(b, ROW_PAIR, tw_label_key_name(keys[i]), T(doc, (int)keys[i]),
                    has(l, keys[i]) ? l->value[keys[i]] : T(doc, TW_M_MISSING),
                    value_lines(doc, 1));
    } else {
        add_pair(doc, pl, b, l, TW_L_PPE_CATEGORY, 1);
    }
    add_pair(doc, pl, b, l, TW_L_ARC_FLASH_BOUNDARY, 1);
    if (has(l, TW_L_BOUNDARY_NOTE)) {
        row *r = add_row(b, ROW_PAIR, "boundary_note", NULL, shown(doc, pl, l, TW_L_BOUNDARY_NOTE),
                         value_lines(doc, 2));
        if (r)
            r->bold = 0;
    }
    add_pair(doc, pl, b, l, TW_L_MIN_ARC_RATING, 1);
    if (has(l, TW_L_NO_PPE_ADEQUATE))
        add_row(b, ROW_BOX, "no-PPE statement", NULL, T(doc, TW_L_NO_PPE_ADEQUATE), ROW_MAX_LINES);
    else
        add_pair(doc, pl, b, l, TW_L_PPE_LEVEL, 2);
}

static void plan_body(const tw_label_doc *doc, plan *pl, block *b, const tw_label *l)
{
    row *r = add_row(b, ROW_TEXT, "hazard statement", NULL, T(doc, TW_M_HAZARD_LINE),
                     value_lines(doc, 2));
    if (r) {
        r->bold = 1;
        r->align = TW_ALIGN_CENTRE;
    }
    add_row(b, ROW_BIG, "equipment_id", NULL, shown(doc, pl, l, TW_L_EQUIPMENT_ID), 1);
    const char *description = shown(doc, pl, l, TW_L_DESCRIPTION);
    if (description)
        add_row(b, ROW_TEXT, "description", NULL, description, 2);
    add_pair(doc, pl, b, l, TW_L_LOCATION, 2);
    plan_arc_flash(doc, pl, b, l);
    add_row(b, ROW_TITLE, "shock title", NULL, T(doc, TW_M_TITLE_SHOCK), doc->nlang);
    add_pair(doc, pl, b, l, TW_L_NOMINAL_VOLTAGE, 1);
    add_pair(doc, pl, b, l, TW_L_LIMITED_APPROACH, 1);
    add_pair(doc, pl, b, l, TW_L_RESTRICTED_APPROACH, 1);
    add_pair(doc, pl, b, l, TW_L_GLOVE_CLASS, 1);
    /* NEC 110.16(B): available fault current, clearing time and date, service equipment. */
    if (has(l, TW_L_AVAILABLE_FAULT)) {
        add_row(b, ROW_TITLE, "service title", NULL, T(doc, TW_M_TITLE_SERVICE), 2 * doc->nlang);
        add_pair(doc, pl, b, l, TW_L_AVAILABLE_FAULT, 1);
        add_pair(doc, pl, b, l, TW_L_SERVICE_CLEARING_TIME, 1);
        add_pair(doc, pl, b, l, TW_L_SERVICE_LABEL_DATE, 1);
    }
}

/* The study block: it starts in the study box (beside or under the QR box), or follows the
 * body set off by a gap (the flow decides, see fit_block_at). */
static void plan_study(const tw_label_doc *doc, plan *pl, block *b, const tw_label *l)
{
    add_pair(doc, pl, b, l, TW_L_STUDY_ID, 2);
    add_pair(doc, pl, b, l, TW_L_STUDY_DATE, 1);
    add_pair(doc, pl, b, l, TW_L_SCENARIO, 2);
    add_pair(doc, pl, b, l, TW_L_REVIEW_DUE, 1);
    const char *note = shown(doc, pl, l, TW_L_REVISION_NOTE);
    if (note)
        add_row(b, ROW_TEXT, "revision_note", NULL, note, 3);
}

/* Where the study block starts: the layout's study box; for a layout built by hand without
 * one, beside the QR box when that sits above the footer, else nowhere (w = 0: it follows the
 * body). */
static tw_box study_box(const tw_layout *lay)
{
    if (lay->study.w > 0 || lay->qr_side)
        return lay->study;
    double x = lay->body.x, right = lay->qr.x - 6;
    return (tw_box){x, lay->qr.y, right - x, lay->qr.h};
}

static int plan_qr(const tw_label_doc *doc, plan *pl, const tw_label *l, const char *payload,
                   const char *id, char *err, size_t errlen)
{
    const tw_layout *lay = &doc->layout;
    if (payload && *payload) {
        if (pl->qr_borrowed) {
            /* encoded ahead by the caller from this payload */
        } else if (tw_qr_encode(payload, &pl->qr) != 0) {
            snprintf(err, errlen, "label %s: the QR payload (%zu bytes) cannot be encoded; "
                     "shorten the record link", id, strlen(payload));
            return -1;
        }
        int modules = pl->qr.width + 2 * TW_QR_QUIET_MODULES;
        pl->module = tw_qr_module_pt(modules, lay->qr.w, lay->printer_dpi, TW_LAYOUT_QR_MIN_DOTS);
        if (pl->module == 0) {
            snprintf(err, errlen, "label %s: the QR code (%d modules with its quiet zone) does "
                     "not fit the QR box (%.0f pt) at %d printer dots per module at %.0f dpi; "
                     "shorten the record link", id, modules, lay->qr.w, TW_LAYOUT_QR_MIN_DOTS,
                     lay->printer_dpi);
            return -1;
        }
    }
    if (hash_ok(l->hash)) {
        snprintf(pl->hash_caption, sizeof pl->hash_caption, "%s %.12s",
                 T(doc, TW_M_HASH_CAPTION), l->hash);
        pl->hash_pt = tw_fit_size(doc->pdf.regular, pl->hash_caption, lay->qr.w, 3,
                                  lay->footer_pt, lay->min_pt);
        pl->hash_n = tw_wrap(doc->pdf.regular, pl->hash_pt, pl->hash_caption, lay->qr.w,
                             pl->hash_lines, 3);
        if (pl->hash_pt == 0 || pl->hash_n > 3) {
            snprintf(err, errlen, "label %s: the content hash caption does not fit the QR box "
                     "at %g pt", id, lay->min_pt);
            return -1;
        }
    }
    return 0;
}

/* Height of the QR symbol (or the empty frame) and the hash caption under it, from the top of
 * the QR box. */
static double qr_drawn_height(const tw_layout *lay, const plan *pl)
{
    double h = pl->qr.dark ? (pl->qr.width + 2 * TW_QR_QUIET_MODULES) * pl->module : lay->qr.w;
    return h + pl->hash_n * pl->hash_pt * TW_LEADING;
}

/* ---- geometry: nothing drawn over anything else ---------------------------------------- */

/* Every text a label draws, as the box its lines take, with the region it must stay in. */
#define GEOM_MAX (2 * BLOCK_MAX_ROWS + 3)
/* Boxes that only touch (adjacent lines, a row below the one above) do not overlap. */
#define GEOM_EPS 0.01

typedef struct {
    tw_box box, within;
    const char *what;
} placed_text;

typedef struct {
    placed_text t[GEOM_MAX];
    int n;
} geometry;

static void geom_add(geometry *g, tw_box box, tw_box within, const char *what)
{
    if (g->n < GEOM_MAX && box.h > 0 && box.w > 0)
        g->t[g->n++] = (placed_text){box, within, what};
}

static int box_inside(tw_box a, tw_box outer)
{
    return a.x >= outer.x - GEOM_EPS && a.y >= outer.y - GEOM_EPS &&
           a.x + a.w <= outer.x + outer.w + GEOM_EPS && a.y + a.h <= outer.y + outer.h + GEOM_EPS;
}

static int boxes_overlap(tw_box a, tw_box b)
{
    return fmin(a.x + a.w, b.x + b.w) - fmax(a.x, b.x) > GEOM_EPS &&
           fmin(a.y + a.h, b.y + b.h) - fmax(a.y, b.y) > GEOM_EPS;
}

/* The boxes of one row as draw_row() places them (top: the top of its text). */
static void geom_row(geometry *g, const tw_pdf_doc *d, const block *b, const row *r)
{
    tw_box reg = b->regions[r->region];
    double s = b->pt, x = reg.x, w = reg.w, top = reg.y + reg.h - r->y - r->space;
    double value_h = r->n * r->pt * TW_LEADING, cap_h = r->cap_n * s * TW_LEADING;
    if (r->kind == ROW_PAIR && r->stacked) {
        geom_add(g, (tw_box){x, top - cap_h, w, cap_h}, reg, r->what);
        geom_add(g, (tw_box){x, top - cap_h - value_h, w, value_h}, reg, r->what);
    } else if (r->kind == ROW_PAIR) {
        tw_font *f = r->bold ? d->bold : d->regular;
        double vtop = top - tw_baseline_drop(d->regular, s) + tw_baseline_drop(f, r->pt);
        geom_add(g, (tw_box){x, top - cap_h, r->cap_w, cap_h}, reg, r->what);
        geom_add(g, (tw_box){x + r->cap_w, vtop - value_h, w - r->cap_w, value_h}, reg, r->what);
    } else if (r->kind == ROW_BOX) {
        double bh = r->h - 2 * r->space;
        geom_add(g, (tw_box){x + 0.4 * s, top - bh, w - 0.8 * s, bh - 0.4 * s}, reg, r->what);
    } else {
        geom_add(g, (tw_box){x, top - value_h, w, value_h}, reg, r->what);
    }
}

/* Check the planned label before it is drawn: every text inside the label and its own region,
 * and no two texts overlapping (the draft watermark, drawn across on purpose, is not planned
 * here). 0, or -1 with a message naming both texts. */
static int check_geometry(const tw_label_doc *doc, const plan *pl, const char *id, char *err,
                          size_t errlen)
{
    const tw_layout *lay = &doc->layout;
    tw_box label = {0, 0, lay->label_w, lay->label_h};
    geometry *g = malloc(sizeof *g);
    if (!g) {
        snprintf(err, errlen, "label %s: out of memory", id);
        return -1;
    }
    g->n = 0;
    geom_add(g, lay->header, label, "signal word (header)");
    for (int i = 0; i < pl->body.n; i++)
        geom_row(g, &doc->pdf, &pl->body, &pl->body.rows[i]);
    double qr_h = qr_drawn_height(lay, pl);
    geom_add(g, (tw_box){lay->qr.x, lay->qr.y + lay->qr.h - qr_h, lay->qr.w, qr_h}, label,
             "QR code and content hash");
    double foot_h = doc->footer_n * doc->footer_pt * TW_LEADING, foot_top = lay->footer.y +
                    lay->footer.h - 2;
    geom_add(g, (tw_box){lay->footer.x, foot_top - foot_h, lay->footer.w, foot_h}, lay->footer,
             "cautions (footer)");
    int rc = 0;
    for (int i = 0; i < g->n && rc == 0; i++) {
        const placed_text *a = &g->t[i];
        if (!box_inside(a->box, a->within) || !box_inside(a->box, label)) {
            snprintf(err, errlen, "label %s: %s would be drawn outside its region of the label; "
                     "shorten the text or choose a larger layout", id, a->what);
            rc = -1;
        }
        for (int k = i + 1; k < g->n && rc == 0; k++)
            if (boxes_overlap(a->box, g->t[k].box)) {
                snprintf(err, errlen, "label %s: %s would be drawn over %s; shorten the text or "
                         "choose a larger layout", id, g->t[k].what, a->what);
                rc = -1;
            }
    }
    free(g);
    return rc;
}

static int plan_label(const tw_label_doc *doc, plan *pl, const tw_label *l, const char *payload,
                      char *err, size_t errlen)
{
    const tw_layout *lay = &doc->layout;
    const char *id = label_id(l);
    const char *word = T(doc, l->signal == TW_SIGNAL_DANGER ? TW_M_WORD_DANGER : TW_M_WORD_WARNING);
    pl->header_pt = tw_draw_hazard_header(NULL, &doc->pdf, lay->header, l->signal, word,
                                          l->draft ? T(doc, TW_M_DRAFT_TAG) : NULL,
                                          lay->header_pt, lay->min_pt);
    if (pl->header_pt == 0) {
        snprintf(err, errlen, "label %s: the signal word does not fit the header region at %g pt",
                 id, lay->min_pt);
        return -1;
    }
    if (plan_qr(doc, pl, l, payload, id, err, errlen) != 0)
        return -1;
    tw_box study = study_box(lay);
    if (lay->qr_side && study.w > 0) {
        /* under the QR box: from just below the symbol and its caption as drawn (the symbol
         * is a whole number of dots per module, often smaller than the box) */
        double top = lay->qr.y + lay->qr.h - qr_drawn_height(lay, pl) - 4;
        study.h = fmax(study.h, top - study.y);
    }
    pl->body.cap_max = 3 * doc->nlang;
    pl->body.study_from = -1;
    plan_body(doc, pl, &pl->body, l);
    pl->body.study_from = pl->body.n;
    plan_study(doc, pl, &pl->body, l);
    if (fit_block(&doc->pdf, &pl->body, lay, study, id, err, errlen) != 0)
        return -1;
    return check_geometry(doc, pl, id, err, errlen);
}

static void draw_qr_box(HPDF_Page p, const tw_label_doc *doc, const plan *pl)
{
    const tw_layout *lay = &doc->layout;
    tw_box q = lay->qr;
    double side = q.w, top = q.y + q.h;
    if (pl->qr.dark) {
        double s = (pl->qr.width + 2 * TW_QR_QUIET_MODULES) * pl->module;
        tw_draw_qr(doc->pdf.pdf, p, &pl->qr, q.x + (side - s) / 2, top - s, pl->module);
        top -= s;
    } else {
        double inset = side * 0.15;
        tw_box frame = {q.x + inset, top - side + inset, side - 2 * inset, side - 2 * inset};
        tw_draw_frame(p, frame, 0.8, TW_GREY);
        const char *t = T(doc, TW_M_NO_QR);
        double w = tw_text_width(doc->pdf.regular, lay->min_pt, t, strlen(t));
        tw_draw_text(p, doc->pdf.regular, lay->min_pt, frame.x + (frame.w - w) / 2,
                     frame.y + frame.h / 2, t, strlen(t), TW_GREY);
        top -= side;
    }
    if (pl->hash_pt > 0)
        tw_draw_lines(p, doc->pdf.regular, pl->hash_pt, q.x, top, side, pl->hash_caption,
                      pl->hash_lines, pl->hash_n, TW_ALIGN_CENTRE, TW_BLACK);
}

static void draw_footer(HPDF_Page p, const tw_label_doc *doc)
{
    tw_box f = doc->layout.footer;
    double top = f.y + f.h;
    tw_draw_line(p, f.x, top, f.x + f.w, top, 0.5, TW_BLACK);
    tw_draw_lines(p, doc->pdf.regular, doc->footer_pt, f.x, top - 2, f.w, doc->footer,
                  doc->footer_lines, doc->footer_n, TW_ALIGN_LEFT, TW_BLACK);
}

static void draw_label(HPDF_Page p, const tw_label_doc *doc, const plan *pl, const tw_label *l)
{
    const tw_layout *lay = &doc->layout;
    const char *word = T(doc, l->signal == TW_SIGNAL_DANGER ? TW_M_WORD_DANGER : TW_M_WORD_WARNING);
    tw_draw_fill(p, (tw_box){0, 0, lay->label_w, lay->label_h}, TW_WHITE);
    tw_draw_hazard_header(p, &doc->pdf, lay->header, l->signal, word,
                          l->draft ? T(doc, TW_M_DRAFT_TAG) : NULL, pl->header_pt, pl->header_pt);
    draw_block(p, &doc->pdf, &pl->body);
    draw_qr_box(p, doc, pl);
    draw_footer(p, doc);
    if (l->draft) {
        tw_draw_watermark(p, doc->pdf.bold, (tw_box){0, 0, lay->label_w, lay->label_h},
                          T(doc, TW_M_WATERMARK), TW_SAFETY_RED);
        /* The same words once more, level, in the bottom margin: readable by anyone holding
         * the label sideways and by text extraction, which splits the diagonal copy. */
        const char *t = T(doc, TW_M_WATERMARK);
        double pt = fmax(lay->min_pt, 6), w = tw_text_width(doc->pdf.bold, pt, t, strlen(t));
        tw_draw_text(p, doc->pdf.bold, pt, (lay->label_w - w) / 2, 2, t, strlen(t),
                     TW_SAFETY_RED);
    }
}

/* The footer needs more height than the layout gives it (cautions in two languages, long
 * site cautions): it grows upward at the smallest size and the body gives up the room, as
 * long as the body keeps three lines and the regions stay apart. */
static int grow_footer(tw_label_doc *doc, int n, char *err, size_t errlen)
{
    tw_layout *lay = &doc->layout;
    double pt = lay->min_pt, need = n * pt * TW_LEADING + 2;
    double grow = need - lay->footer.h;
    double spare = lay->body.h - 3 * pt * TW_LEADING;
    if (lay->qr_side)
        spare = fmin(spare, lay->qr.y - lay->body.y);
    if (grow > spare) {
        snprintf(err, errlen, "the cautions do not fit the footer region at %g pt: they need "
                 "%.0f pt of height, the footer has %.0f pt and the body can give up %.0f pt "
                 "(%.1f mm short)", pt, need, lay->footer.h, fmax(spare, 0),
                 (grow - fmax(spare, 0)) * 25.4 / 72);
        return -1;
    }
    lay->footer.h += grow;
    lay->body.y += grow;
    lay->body.h -= grow;
    if (!lay->qr_side) {
        lay->qr.y += grow;
        lay->study.y += grow;
    } else if (lay->study.w > 0) { /* the study box under the QR box gives up the room too */
        lay->study.y += grow;
        lay->study.h = fmax(0, lay->study.h - grow);
    }
    doc->footer_pt = pt;
    return 0;
}

/* Fit the cautions (ours in each language, then the site's, one per line) into the footer
 * once per document. */
static int plan_footer(tw_label_doc *doc, const tw_site *site, char *err, size_t errlen)
{
    const char *ours = T(doc, TW_M_CAUTIONS);
    size_t len = strlen(ours) + 1;
    for (size_t i = 0; site && i < site->caution_count; i++) {
        const char *c = site->cautions[i] ? site->cautions[i] : "";
        if (!tw_text_ok(c)) {
            snprintf(err, errlen, "site caution %zu is not printable UTF-8 text", i + 1);
            return -1;
        }
        if (undrawable(c, err, errlen, "site caution %zu", i + 1))
            return -1;
        len += strlen(c) + 1;
    }
    if (!(doc->footer = malloc(len)))
        goto oom;
    strcpy(doc->footer, ours);
    for (size_t i = 0; site && i < site->caution_count; i++) {
        strcat(doc->footer, "\n");
        strcat(doc->footer, site->cautions[i] ? site->cautions[i] : "");
    }
    const tw_layout *lay = &doc->layout;
    double avail = lay->footer.h - 2;
    int n = 0;
    for (double pt = lay->footer_pt; pt >= lay->min_pt - 1e-9; pt -= 0.5) {
        n = tw_wrap(doc->pdf.regular, pt, doc->footer, lay->footer.w, NULL, 0);
        if (n * pt * TW_LEADING <= avail + 1e-6) {
            doc->footer_pt = pt;
            break;
        }
    }
    if (doc->footer_pt == 0) {
        n = tw_wrap(doc->pdf.regular, lay->min_pt, doc->footer, lay->footer.w, NULL, 0);
        if (grow_footer(doc, n, err, errlen) != 0)
            return -1;
    }
    if (!(doc->footer_lines = malloc((size_t)n * sizeof *doc->footer_lines)))
        goto oom;
    doc->footer_n = tw_wrap(doc->pdf.regular, doc->footer_pt, doc->footer, lay->footer.w,
                            doc->footer_lines, n);
    return 0;
oom:
    snprintf(err, errlen, "out of memory");
    return -1;
}

/* The site's languages and every message joined in them, English first. */
static int plan_texts(tw_label_doc *doc, const tw_site *site, char *err, size_t errlen)
{
    const char *code = site && site->language ? site->language : "en";
    doc->nlang = tw_langs_parse(code, doc->langs);
    if (doc->nlang == 0) {
        snprintf(err, errlen, "language \"%s\" has no message table (expected en, es or en+es)",
                 code);
        return -1;
    }
    for (int id = 0; id < TW_M_COUNT; id++)
        if (!(doc->text[id] = tw_msg_join(doc->langs, doc->nlang, id, lang_sep(id)))) {
            snprintf(err, errlen, "out of memory");
            return -1;
        }
    return 0;
}

tw_label_doc *tw_label_doc_new(const tw_layout *layout, const tw_site *site,
                               const char *creation_date, char *err, size_t errlen)
{
    int status;
    return tw_label_doc_new_status(layout, site, creation_date, &status, err, errlen);
}

tw_label_doc *tw_label_doc_new_status(const tw_layout *layout, const tw_site *site,
                                      const char *creation_date, int *status, char *err,
                                      size_t errlen)
{
    *status = TW_EXIT_IO;
    tw_label_doc *doc = calloc(1, sizeof *doc);
    if (!doc) {
        snprintf(err, errlen, "out of memory");
        return NULL;
    }
    if (layout) {
        doc->layout = *layout;
    } else if (tw_layout_default(&doc->layout) != 0) {
        snprintf(err, errlen, "out of memory");
        free(doc);
        return NULL;
    } else {
        free(doc->layout.name);
        free(doc->layout.description);
    }
    doc->layout.name = NULL; /* not needed; the caller owns its layout */
    doc->layout.description = NULL;
    if (tw_pdf_doc_open(&doc->pdf, creation_date, err, errlen) != 0) {
        tw_label_doc_free(doc);
        return NULL;
    }
    if (plan_texts(doc, site, err, errlen) != 0 || plan_footer(doc, site, err, errlen) != 0) {
        *status = strstr(err, "out of memory") ? TW_EXIT_IO : TW_EXIT_DATA;
        tw_label_doc_free(doc);
        return NULL;
    }
    HPDF_SetInfoAttr(doc->pdf.pdf, HPDF_INFO_TITLE, "Arc-flash hazard labels");
    return doc;
}

/* Where label number i goes: a new page when the grid is full, then its cell. */
static HPDF_Page label_page(tw_label_doc *doc, double *ox, double *oy)
{
    const tw_layout *lay = &doc->layout;
    int per_page = tw_layout_per_page(lay), cell = doc->count % per_page;
    if (cell == 0 || !doc->page) {
        doc->page = tw_pdf_doc_page(&doc->pdf, lay->page_w, lay->page_h);
        if (!doc->page)
            return NULL;
        doc->pages++;
    }
    int col = cell % lay->columns, rw = cell / lay->columns;
    *ox = lay->sheet_margin_x + col * (lay->label_w + lay->gutter_x);
    *oy = lay->page_h - lay->sheet_margin_y - (rw + 1) * lay->label_h - rw * lay->gutter_y;
    return doc->page;
}

/* Cut marks at the corners, outside the label, and the equipment ID under it, on sheets. */
static void draw_sheet_marks(HPDF_Page p, const tw_label_doc *doc, double ox, double oy,
                             const char *id)
{
    const tw_layout *lay = &doc->layout;
    if (lay->columns * lay->rows == 1 && lay->page_w <= lay->label_w && lay->page_h <= lay->label_h)
        return;
    double room_x = fmin(lay->sheet_margin_x, lay->gutter_x / 2);
    double room_y = fmin(lay->sheet_margin_y, lay->gutter_y / 2);
    if (lay->columns == 1)
        room_x = lay->sheet_margin_x;
    if (lay->rows == 1)
        room_y = lay->sheet_margin_y;
    if (lay->cut_marks) {
        double lx = fmin(9, room_x - 1.5), ly = fmin(9, room_y - 1.5);
        for (int cx = 0; cx < 2; cx++)
            for (int cy = 0; cy < 2; cy++) {
                double x = ox + cx * lay->label_w, y = oy + cy * lay->label_h;
                double sx = cx ? 1 : -1, sy = cy ? 1 : -1;
                if (lx >= 2)
                    tw_draw_line(p, x + sx * 1.5, y, x + sx * (1.5 + lx), y, 0.25, TW_BLACK);
                if (ly >= 2)
                    tw_draw_line(p, x, y + sy * 1.5, x, y + sy * (1.5 + ly), 0.25, TW_BLACK);
            }
    }
    double pt = lay->min_pt;
    if (room_y >= pt * TW_LEADING + 1.5) {
        double w = tw_text_width(doc->pdf.regular, pt, id, strlen(id));
        if (w <= lay->label_w - 24)
            tw_draw_text(p, doc->pdf.regular, pt, ox + 12, oy - 1.5 - pt, id, strlen(id),
                         TW_GREY);
    }
}

int tw_label_doc_add(tw_label_doc *doc, const tw_label *label, const char *qr_payload,
                     char *err, size_t errlen)
{
    return tw_label_doc_add_encoded(doc, label, qr_payload, NULL, err, errlen);
}

int tw_label_doc_add_encoded(tw_label_doc *doc, const tw_label *label, const char *qr_payload,
                             const tw_qr *qr, char *err, size_t errlen)
{
    if (tw_pdf_doc_check(&doc->pdf, err, errlen) != 0)
        return -1;
    if (check_label(label, qr_payload, err, errlen) != 0)
        return -1;
    plan *pl = calloc(1, sizeof *pl);
    if (!pl) {
        snprintf(err, errlen, "label %s: out of memory", label_id(label));
        return -1;
    }
    if (qr && qr->dark && qr_payload && *qr_payload) {
        pl->qr = *qr;
        pl->qr_borrowed = 1;
    }
    int page_no = -1;
    double ox = 0, oy = 0;
    char why[200];
    HPDF_Page p = NULL;
    if (plan_label(doc, pl, label, qr_payload, err, errlen) != 0) {
        /* err says why; nothing was drawn */
    } else if (!(p = label_page(doc, &ox, &oy))) {
        tw_pdf_doc_check(&doc->pdf, why, sizeof why);
        snprintf(err, errlen, "label %s: cannot add a page: %s", label_id(label), why);
    } else {
        draw_sheet_marks(p, doc, ox, oy,
                         has(label, TW_L_EQUIPMENT_ID) ? label->value[TW_L_EQUIPMENT_ID]
                                                       : T(doc, TW_M_NO_EQUIPMENT_ID));
        tw_draw_end_text(p);
        HPDF_Page_GSave(p);
        HPDF_Page_Concat(p, 1, 0, 0, 1, (HPDF_REAL)ox, (HPDF_REAL)oy);
        draw_label(p, doc, pl, label);
        tw_draw_end_text(p);
        HPDF_Page_GRestore(p);
        if (tw_pdf_doc_check(&doc->pdf, why, sizeof why) != 0) {
            snprintf(err, errlen, "label %s: %s", label_id(label), why);
        } else {
            doc->count++;
            page_no = doc->pages;
        }
    }
    plan_free(pl);
    return page_no;
}

int tw_label_doc_count(const tw_label_doc *doc)
{
    return doc ? doc->count : 0;
}

int tw_label_doc_save(tw_label_doc *doc, const char *path, char *err, size_t errlen)
{
    if (doc->count == 0) {
        snprintf(err, errlen, "%s: not written: no labels", path);
        return -1;
    }
    return tw_pdf_doc_save(&doc->pdf, path, err, errlen);
}

int tw_label_doc_write(tw_label_doc *doc, const char *path, const char *target, char *err,
                       size_t errlen)
{
    if (doc->count == 0) {
        snprintf(err, errlen, "%s: not written: no labels", target);
        return -1;
    }
    return tw_pdf_doc_write(&doc->pdf, path, target, err, errlen);
}

void tw_label_doc_free(tw_label_doc *doc)
{
    if (!doc)
        return;
    tw_pdf_doc_close(&doc->pdf);
    for (int i = 0; i < TW_M_COUNT; i++)
        free(doc->text[i]);
    free(doc->footer);
    free(doc->footer_lines);
    free(doc);
}
