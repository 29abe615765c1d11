/* summary_pdf.c - the study summary PDF (see tw_summary_pdf.h): a table of every bus, a bar chart
 * of incident energy by bus with the site's PPE ratings, and a plot of incident energy against
 * source fault current for each bus with a scenario sweep.
 *
 * Pages are US Letter landscape. Content flows top-down; whatever does not fit the rest of a
 * page starts a new one (a table row or a chart is never split). Footers ("page N of M") are
 * drawn last, when the page count is known.
 */
#include "write/tw_summary_pdf.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "write/tw_pdf_doc.h"
#include "base/tw_util.h"

#define PAGE_W 792.0
#define PAGE_H 612.0
#define MARGIN 36.0
#define FOOTER_H 30.0
#define CONTENT_BOTTOM (MARGIN + FOOTER_H)

#define TABLE_PT 7.5
#define CELL_PAD 3.0
#define MAX_PAGES 100000
/* Room for any double printed with %.6f (309 integer digits at most). */
#define NUM_CHARS 400

static const tw_rgb STRIPE = {0.94, 0.94, 0.94};
static const tw_rgb RULE = {0.70, 0.70, 0.70};
static const tw_rgb INK = {0.10, 0.10, 0.10};
static const tw_rgb PLOT_LINE = {0.10, 0.25, 0.55};
static const tw_rgb RISE_BAND = {0.99, 0.88, 0.88};

typedef struct {
    const tw_summary_input *in;
    tw_pdf_doc doc;
    HPDF_Page *pages;
    size_t page_count, page_cap;
    HPDF_Page page;     /* current page */
    double y;           /* top of the free space on the current page */
    int failed;         /* out of memory or too many pages */
    char why[200];
} writer;

/* ---- pages and text ------------------------------------------------------------------------ */

static void fail(writer *w, const char *why)
{
    if (!w->failed)
        snprintf(w->why, sizeof w->why, "%s", why);
    w->failed = 1;
}

static void text(writer *w, int bold, double pt, double x, double y, const char *s, tw_rgb c)
{
    tw_draw_text(w->page, bold ? w->doc.bold : w->doc.regular, pt, x, y, s, strlen(s), c);
}

static double width_of(writer *w, int bold, double pt, const char *s)
{
    return tw_text_width(bold ? w->doc.bold : w->doc.regular, pt, s, strlen(s));
}

static void text_right(writer *w, int bold, double pt, double x, double y, const char *s,
                       tw_rgb c)
{
    text(w, bold, pt, x - width_of(w, bold, pt, s), y, s, c);
}

static void text_centre(writer *w, int bold, double pt, double x, double y, const char *s,
                        tw_rgb c)
{
    text(w, bold, pt, x - width_of(w, bold, pt, s) / 2, y, s, c);
}

static const char *label_value(const tw_label *l, tw_label_key k, const char *fallback)
{
    return l->value[k] ? l->value[k] : fallback;
}

/* The site name right of the title: one line if it fits, else up to three smaller ones. */
static void heading_site_name(writer *w, const char *name, double top)
{
    double avail = PAGE_W - 2 * MARGIN - width_of(w, 1, 14, "Arc-flash study summary") - 16;
    double pt = tw_fit_size(w->doc.regular, name, avail, 1, 9, 6);
    int max = 1;
    if (pt == 0) {
        max = 3;
        pt = tw_fit_size(w->doc.regular, name, avail, max, 6, 3);
    }
    if (pt == 0)
        pt = 3; /* 512 bytes at most (site settings): this fits three lines */
    tw_span spans[3];
    int n = tw_wrap(w->doc.regular, pt, name, avail, spans, max);
    if (n > max)
        n = max;
    double h = n * pt * TW_LEADING;
    tw_draw_lines(w->page, w->doc.regular, pt, PAGE_W - MARGIN - avail, top - 19 + h, avail, name,
                  spans, n, TW_ALIGN_RIGHT, INK);
}

/* A new page with the document heading and a section title; sets w->y below them. */
static int new_page(writer *w, const char *section)
{
    if (w->failed)
        return -1;
    if (w->page_count == w->page_cap) {
        size_t cap = w->page_cap ? w->page_cap * 2 : 8;
        HPDF_Page *p = cap <= MAX_PAGES ? realloc(w->pages, cap * sizeof *p) : NULL;
        if (!p) {
            fail(w, "out of memory (or more pages than a summary may have)");
            return -1;
        }
        w->pages = p;
        w->page_cap = cap;
    }
    w->page = tw_pdf_doc_page(&w->doc, PAGE_W, PAGE_H);
    if (!w->page) {
        fail(w, "could not add a page");
        return -1;
    }
    w->pages[w->page_count++] = w->page;
    const tw_site *site = w->in->site;
    double top = PAGE_H - MARGIN;
    text(w, 1, 14, MARGIN, top - 14, "Arc-flash study summary", INK);
    if (site && site->site_name && *site->site_name)
        heading_site_name(w, site->site_name, top);
    tw_draw_line(w->page, MARGIN, top - 21, PAGE_W - MARGIN, top - 21, 0.8, INK);
    text(w, 1, 11, MARGIN, top - 38, section, INK);
    w->y = top - 46;
    return 0;
}

static void draw_footers(writer *w)
{
    static const char caution[] =
        "A summary of the study's results for planning: not a label and not a permit. The "
        "posted labels, qualified persons, NFPA 70E, local codes and a licensed engineer's "
        "judgement govern.";
    for (size_t i = 0; i < w->page_count; i++) {
        w->page = w->pages[i];
        char n[64];
        snprintf(n, sizeof n, "page %zu of %zu", i + 1, w->page_count);
        tw_draw_line(w->page, MARGIN, MARGIN + 16, PAGE_W - MARGIN, MARGIN + 16, 0.5, RULE);
        text(w, 0, 6.5, MARGIN, MARGIN + 6, caution, TW_GREY);
        text_right(w, 0, 7, PAGE_W - MARGIN, MARGIN - 4, n, TW_GREY);
        char made[96];
        snprintf(made, sizeof made, "tagwright, %s", w->in->date);
        text(w, 0, 7, MARGIN, MARGIN - 4, made, TW_GREY);
    }
}

/* ---- numbers and scales -------------------------------------------------------------------- */

/* A tick step of 1, 2, 2.5 or 5 x 10^k giving about `want` steps over span. */
static double nice_step(double span, int want)
{
    double raw = span / want;
    double mag = pow(10, floor(log10(raw)));
    double f = raw / mag;
    double step = f <= 1 ? 1 : f <= 2 ? 2 : f <= 2.5 ? 2.5 : f <= 5 ? 5 : 10;
    return step * mag;
}

typedef struct {
    double lo, hi, step;
    int decimals;
} scale;

/* A scale from lo to hi with round ends and about `want` ticks. */
static scale make_scale(double lo, double hi, int want)
{
    scale s;
    if (!(hi > lo)) {
        double pad = hi > 0 ? hi * 0.1 : 1;
        lo -= pad;
        hi += pad;
    }
    s.step = nice_step(hi - lo, want);
    s.lo = floor(lo / s.step + 1e-9) * s.step;
    s.hi = ceil(hi / s.step - 1e-9) * s.step;
    double frac = s.step / pow(10, floor(log10(s.step)));
    s.decimals = s.step >= 1 && frac != 2.5 ? 0 : (int)ceil(-log10(s.step) + (frac == 2.5));
    if (s.decimals < 0)
        s.decimals = 0;
    if (s.decimals > 6)
        s.decimals = 6;
    return s;
}

static double map(double v, scale s, double a, double b)
{
    double t = (v - s.lo) / (s.hi - s.lo);
    return isfinite(t) ? a + t * (b - a) : a;
}

static void dashed(HPDF_Page p, double x0, double y0, double x1, double y1, double lw,
                   tw_rgb c)
{
    static const HPDF_UINT16 dash[] = {3, 2};
    HPDF_Page_SetDash(p, dash, 2, 0);
    tw_draw_line(p, x0, y0, x1, y1, lw, c);
    HPDF_Page_SetDash(p, NULL, 0, 0);
}

/* Ticks, tick labels and grid along an axis. horizontal: x axis at y = base from a to b. */
static void axis(writer *w, scale s, int horizontal, double base, double a, double b,
                 double grid_len)
{
    int n = (int)floor((s.hi - s.lo) / s.step + 0.5);
    if (n < 1 || n > 50)
        return;
    for (int i = 0; i <= n; i++) {
        double v = s.lo + i * s.step, at = map(v, s, a, b);
        char t[NUM_CHARS];
        snprintf(t, sizeof t, "%.*f", s.decimals, v);
        if (horizontal) {
            if (grid_len > 0 && i > 0)
                tw_draw_line(w->page, at, base, at, base + grid_len, 0.3, STRIPE);
            tw_draw_line(w->page, at, base, at, base - 3, 0.6, INK);
            text_centre(w, 0, 7, at, base - 11, t, INK);
        } else {
            if (grid_len > 0 && i > 0)
                tw_draw_line(w->page, base, at, base + grid_len, at, 0.3, STRIPE);
            tw_draw_line(w->page, base, at, base - 3, at, 0.6, INK);
            text_right(w, 0, 7, base - 5, at - 2.5, t, INK);
        }
    }
}

/* ---- the table ------------------------------------------------------------------------------ */

enum { COL_ID, COL_VOLTS, COL_SCENARIO, COL_ENERGY, COL_BOUNDARY, COL_PPE, COL_SIGNAL,
       COL_REVIEW, COL_RISE, COL_COUNT };

static const struct {
    const char *title;
    double width;
} columns[COL_COUNT] = {
    [COL_ID] = {"Equipment ID", 86},
    [COL_VOLTS] = {"Voltage", 42},
    [COL_SCENARIO] = {"Governing scenario", 66},
    [COL_ENERGY] = {"Incident energy", 132},
    [COL_BOUNDARY] = {"Arc-flash boundary", 96},
    [COL_PPE] = {"Site PPE level", 144},
    [COL_SIGNAL] = {"Signal word", 48},
    [COL_REVIEW] = {"Review due", 50},
    [COL_RISE] = {"Energy rises below", 56},
};

typedef struct {
    char *text[COL_COUNT];
    tw_span *spans[COL_COUNT];
    int lines[COL_COUNT];
    double height;
} table_row;

static void row_free(table_row *r)
{
    for (int c = 0; c < COL_COUNT; c++) {
        free(r->text[c]);
        free(r->spans[c]);
    }
    memset(r, 0, sizeof *r);
}

/* The cells of one bus, as its label says them. */
static int row_texts(const tw_label *l, const tw_envelope *e, table_row *r)
{
    r->text[COL_ID] = tw_strdup(label_value(l, TW_L_EQUIPMENT_ID, e->equipment_id));
    r->text[COL_VOLTS] = tw_strdup(label_value(l, TW_L_NOMINAL_VOLTAGE, "-"));
    r->text[COL_SCENARIO] = tw_strdup(label_value(l, TW_L_SCENARIO, "-"));
    if (l->value[TW_L_INCIDENT_ENERGY])
        r->text[COL_ENERGY] = tw_asprintf("%s at %s", l->value[TW_L_INCIDENT_ENERGY],
                                          label_value(l, TW_L_WORKING_DISTANCE, "?"));
    else if (l->value[TW_L_PPE_CATEGORY])
        r->text[COL_ENERGY] = tw_asprintf("PPE category %s (%s)", l->value[TW_L_PPE_CATEGORY],
                                          label_value(l, TW_L_MIN_ARC_RATING, "?"));
    else
        r->text[COL_ENERGY] = tw_strdup("-");
    r->text[COL_BOUNDARY] = l->value[TW_L_BOUNDARY_NOTE]
        ? tw_asprintf("%s, %s", label_value(l, TW_L_ARC_FLASH_BOUNDARY, "-"),
                      l->value[TW_L_BOUNDARY_NOTE])
        : tw_strdup(label_value(l, TW_L_ARC_FLASH_BOUNDARY, "-"));
    r->text[COL_PPE] = tw_strdup(l->value[TW_L_NO_PPE_ADEQUATE]
                                     ? "none adequate: de-energize"
                                     : label_value(l, TW_L_PPE_LEVEL, "-"));
    r->text[COL_SIGNAL] = tw_strdup(tw_signal_name(l->signal));
    r->text[COL_REVIEW] = tw_strdup(label_value(l, TW_L_REVIEW_DUE, "-"));
    r->text[COL_RISE] = e->rises ? tw_asprintf("%.2f kA", e->rises_below_ka) : tw_strdup("-");
    for (int c = 0; c < COL_COUNT; c++)
        if (!r->text[c])
            return -1;
    return 0;
}

/* Wrap every cell; the row is as tall as its tallest cell. */
static int row_layout(writer *w, table_row *r, int bold)
{
    tw_font *f = bold ? w->doc.bold : w->doc.regular;
    int most = 1;
    for (int c = 0; c < COL_COUNT; c++) {
        double cw = columns[c].width - 2 * CELL_PAD;
        int n = tw_wrap(f, TABLE_PT, r->text[c], cw, NULL, 0);
        if (n < 1)
            n = 1;
        r->spans[c] = malloc((size_t)n * sizeof *r->spans[c]);
        if (!r->spans[c])
            return -1;
        r->lines[c] = tw_wrap(f, TABLE_PT, r->text[c], cw, r->spans[c], n);
        if (r->lines[c] > n)
            r->lines[c] = n;
        if (r->lines[c] > most)
            most = r->lines[c];
    }
    r->height = most * TABLE_PT * TW_LEADING + 2 * CELL_PAD;
    return 0;
}

static double table_width(void)
{
    double t = 0;
    for (int c = 0; c < COL_COUNT; c++)
        t += columns[c].width;
    return t;
}

static void draw_row(writer *w, const table_row *r, int bold, int stripe, const tw_label *l)
{
    double x = MARGIN, top = w->y, tw = table_width();
    if (stripe)
        tw_draw_fill(w->page, (tw_box){x, top - r->height, tw, r->height}, STRIPE);
    for (int c = 0; c < COL_COUNT; c++) {
        tw_rgb ink = INK;
        if (l && c == COL_SIGNAL) {
            /* ANSI Z535.4 colours: DANGER white on safety red, WARNING black on orange. */
            int danger = l->signal == TW_SIGNAL_DANGER;
            tw_draw_fill(w->page, (tw_box){x + 1, top - r->height + 1, columns[c].width - 2,
                                           r->height - 2},
                         danger ? TW_SAFETY_RED : TW_SAFETY_ORANGE);
            ink = danger ? TW_WHITE : TW_BLACK;
        }
        tw_draw_lines(w->page, bold || (l && c == COL_SIGNAL) ? w->doc.bold : w->doc.regular,
                      TABLE_PT, x + CELL_PAD, top - CELL_PAD, columns[c].width - 2 * CELL_PAD,
                      r->text[c], r->spans[c], r->lines[c], TW_ALIGN_LEFT, ink);
        x += columns[c].width;
    }
    w->y -= r->height;
    tw_draw_line(w->page, MARGIN, w->y, MARGIN + tw, w->y, bold ? 0.8 : 0.3,
                 bold ? INK : RULE);
}

static void table_header(writer *w, const table_row *head)
{
    draw_row(w, head, 1, 0, NULL);
}

static void table_intro(writer *w)
{
    const tw_summary_input *in = w->in;
    const tw_label *first = in->buses->count ? &in->labels[0] : NULL;
    char *study = tw_asprintf("Study %s of %s; results from %s; %zu bus%s; printed %s.",
                              first ? label_value(first, TW_L_STUDY_ID, "-") : "-",
                              first ? label_value(first, TW_L_STUDY_DATE, "-") : "-",
                              in->results_name, in->buses->count,
                              in->buses->count == 1 ? "" : "es", in->date);
    if (!study) {
        fail(w, "out of memory");
        return;
    }
    /* A very long results path shrinks the line; past the smallest size it wraps. */
    double pt = tw_fit_size(w->doc.regular, study, PAGE_W - 2 * MARGIN, 1, 8.5, 5);
    if (pt > 0) {
        tw_draw_text(w->page, w->doc.regular, pt, MARGIN, w->y - 10, study, strlen(study), INK);
    } else {
        int n = tw_wrap(w->doc.regular, 5, study, PAGE_W - 2 * MARGIN, NULL, 0);
        tw_span *spans = n > 0 ? malloc((size_t)n * sizeof *spans) : NULL;
        if (!spans) {
            free(study);
            fail(w, "out of memory");
            return;
        }
        n = tw_wrap(w->doc.regular, 5, study, PAGE_W - 2 * MARGIN, spans, n);
        tw_draw_lines(w->page, w->doc.regular, 5, MARGIN, w->y - 4, PAGE_W - 2 * MARGIN, study,
                      spans, n, TW_ALIGN_LEFT, INK);
        w->y -= (n - 1) * 5 * TW_LEADING;
        free(spans);
    }
    free(study);
    w->y -= 16;
    static const char *const lines[] = {
        "One row per bus, as its label reads: the governing scenario is the one with the most "
        "incident energy (ties: the larger boundary); values are rounded toward safety.",
        "Energy rises below: the source fault current below which the study shows incident "
        "energy rising as the current falls (docs/envelope.md).",
    };
    for (size_t i = 0; i < sizeof lines / sizeof lines[0]; i++) {
        text(w, 0, 7.5, MARGIN, w->y - 9, lines[i], INK);
        w->y -= 11;
    }
    w->y -= 6;
}

static int draw_table(writer *w)
{
    const tw_summary_input *in = w->in;
    table_row head = {0};
    for (int c = 0; c < COL_COUNT; c++)
        if (!(head.text[c] = tw_strdup(columns[c].title)))
            goto oom;
    if (row_layout(w, &head, 1) != 0 || new_page(w, "Buses") != 0)
        goto oom;
    table_intro(w);
    table_header(w, &head);
    for (size_t i = 0; i < in->buses->count; i++) {
        table_row r = {0};
        if (row_texts(&in->labels[i], &in->envelopes[i], &r) != 0 ||
            row_layout(w, &r, 0) != 0) {
            row_free(&r);
            goto oom;
        }
        double room = PAGE_H - 2 * MARGIN - FOOTER_H - 60 - head.height;
        if (r.height > room) {
            row_free(&r);
            row_free(&head);
            fail(w, "a table row is taller than a page (a text field is too long to show)");
            return -1;
        }
        if (w->y - r.height < CONTENT_BOTTOM) {
            if (new_page(w, "Buses (continued)") != 0) {
                row_free(&r);
                goto oom;
            }
            table_header(w, &head);
        }
        draw_row(w, &r, 0, (int)(i % 2), &in->labels[i]);
        row_free(&r);
    }
    row_free(&head);
    return w->failed ? -1 : 0;
oom:
    row_free(&head);
    fail(w, "out of memory while laying out the table");
    return -1;
}

/* ---- bar chart ------------------------------------------------------------------------------- */

#define BAR_ROW 13.0
#define BAR_LABEL_W 110.0

/* The arc rating a bus's label asks for (energy rounded up, or the category's rating). */
static double bus_rating(const tw_label *l)
{
    return l->arc_rating_cal;
}

#define LEGEND_X (MARGIN + 218)
#define LEGEND_PT 7.0

/* The PPE levels named in the legend, as one paragraph; NULL when out of memory. */
static char *legend_text(const tw_site *site)
{
    if (!site || !site->ppe_level_count)
        return tw_strdup("the site's PPE levels: none configured");
    char *t = tw_strdup("the site's PPE levels (arc rating, cal/cm2):");
    for (size_t i = 0; t && i < site->ppe_level_count; i++) {
        char *next = tw_asprintf("%s %g = %s%s", t, site->ppe_levels[i].arc_rating_cal_cm2,
                                 site->ppe_levels[i].name ? site->ppe_levels[i].name : "",
                                 i + 1 < site->ppe_level_count ? ";" : ".");
        free(t);
        t = next;
    }
    return t;
}

typedef struct {
    char *text;
    tw_span *spans;
    int lines;
} paragraph;

static int legend_layout(writer *w, paragraph *p)
{
    double width = PAGE_W - MARGIN - LEGEND_X;
    p->text = legend_text(w->in->site);
    int n = p->text ? tw_wrap(w->doc.regular, LEGEND_PT, p->text, width, NULL, 0) : 0;
    p->spans = n > 0 ? malloc((size_t)n * sizeof *p->spans) : NULL;
    if (!p->spans)
        return -1;
    p->lines = tw_wrap(w->doc.regular, LEGEND_PT, p->text, width, p->spans, n);
    if (p->lines > n)
        p->lines = n;
    return 0;
}

static double legend_height(const paragraph *p)
{
    return p->lines * LEGEND_PT * TW_LEADING;
}

static void bar_legend(writer *w, const paragraph *p, double top)
{
    double y = top - tw_baseline_drop(w->doc.regular, LEGEND_PT);
    tw_draw_fill(w->page, (tw_box){MARGIN, y - 1, 8, 7}, TW_SAFETY_ORANGE);
    text(w, 0, 7, MARGIN + 11, y, "WARNING", INK);
    tw_draw_fill(w->page, (tw_box){MARGIN + 55, y - 1, 8, 7}, TW_SAFETY_RED);
    text(w, 0, 7, MARGIN + 66, y, "DANGER (signal word on the label)", INK);
    dashed(w->page, LEGEND_X - 18, y + 2.5, LEGEND_X - 4, y + 2.5, 0.8, INK);
    tw_draw_lines(w->page, w->doc.regular, LEGEND_PT, LEGEND_X, top, PAGE_W - MARGIN - LEGEND_X,
                  p->text, p->spans, p->lines, TW_ALIGN_LEFT, INK);
}

/* The site's PPE ratings as dashed vertical lines, each with its rating on top. */
static void bar_ppe_lines(writer *w, scale s, double x0, double x1, double bottom, double top)
{
    const tw_site *site = w->in->site;
    for (size_t k = 0; site && k < site->ppe_level_count; k++) {
        double r = site->ppe_levels[k].arc_rating_cal_cm2;
        if (!(r >= s.lo && r <= s.hi))
            continue;
        double x = map(r, s, x0, x1);
        dashed(w->page, x, bottom, x, top + 4, 0.8, INK);
        char t[NUM_CHARS];
        snprintf(t, sizeof t, "%g", r);
        text_centre(w, 1, 7, x, top + 6, t, INK);
    }
}

/* An equipment ID right-aligned before its bar: shrunk to fit one line, else two lines (64
 * bytes at most, TW_MAX_ID_BYTES, fit two lines at 3 pt). */
static void bar_id(writer *w, const char *id, double x0, double yc)
{
    double width = BAR_LABEL_W - 8;
    double pt = tw_fit_size(w->doc.regular, id, width, 1, 7, 4);
    int max = 1;
    if (pt == 0) {
        max = 2;
        pt = tw_fit_size(w->doc.regular, id, width, max, 4, 2.5);
    }
    if (pt == 0)
        pt = 2.5;
    tw_span spans[2];
    int n = tw_wrap(w->doc.regular, pt, id, width, spans, max);
    if (n > max)
        n = max;
    double h = n * pt * TW_LEADING;
    tw_draw_lines(w->page, w->doc.regular, pt, x0 - 5 - width, yc + h / 2, width, id, spans, n,
                  TW_ALIGN_RIGHT, INK);
}

/* One page of bars, buses [from, to). */
static void bar_page(writer *w, size_t from, size_t to, scale s, const paragraph *legend)
{
    const tw_summary_input *in = w->in;
    double x0 = MARGIN + BAR_LABEL_W, x1 = PAGE_W - MARGIN - 30;
    text(w, 0, 7.5, MARGIN, w->y - 8, "Governing incident energy of each bus as its label "
         "prints it (rounded up); a bus assessed by PPE category shows the category's arc "
         "rating.", INK);
    double top = w->y - 30, bottom = top - (double)(to - from) * BAR_ROW;
    axis(w, s, 1, bottom, x0, x1, top - bottom);
    bar_ppe_lines(w, s, x0, x1, bottom, top);
    for (size_t i = from; i < to; i++) {
        const tw_label *l = &in->labels[i];
        double yc = top - (double)(i - from + 0.5) * BAR_ROW, v = bus_rating(l);
        const char *id = label_value(l, TW_L_EQUIPMENT_ID, in->envelopes[i].equipment_id);
        bar_id(w, id, x0, yc);
        if (!(v > 0) || !isfinite(v))
            continue;
        double xe = map(fmin(v, s.hi), s, x0, x1);
        tw_draw_fill(w->page, (tw_box){x0, yc - BAR_ROW * 0.35, xe - x0, BAR_ROW * 0.7},
                     l->signal == TW_SIGNAL_DANGER ? TW_SAFETY_RED : TW_SAFETY_ORANGE);
        char t[NUM_CHARS];
        snprintf(t, sizeof t, "%.1f", v);
        double tw = width_of(w, 0, 6.5, t);
        tw_draw_fill(w->page, (tw_box){xe + 2, yc - 4, tw + 2, 8}, TW_WHITE);
        text(w, 0, 6.5, xe + 3, yc - 2.3, t, INK);
    }
    tw_draw_line(w->page, x0, bottom, x1, bottom, 0.8, INK);
    tw_draw_line(w->page, x0, bottom, x0, top, 0.8, INK);
    text_centre(w, 0, 7.5, (x0 + x1) / 2, bottom - 22,
                "incident energy at the working distance (cal/cm2)", INK);
    bar_legend(w, legend, bottom - 30);
    w->y = bottom - 30 - legend_height(legend);
}

static int draw_bar_chart(writer *w)
{
    const tw_summary_input *in = w->in;
    size_t n = in->buses->count;
    double hi = 0;
    for (size_t i = 0; i < n; i++)
        if (isfinite(bus_rating(&in->labels[i])) && bus_rating(&in->labels[i]) > hi)
            hi = bus_rating(&in->labels[i]);
    for (size_t k = 0; in->site && k < in->site->ppe_level_count; k++)
        if (in->site->ppe_levels[k].arc_rating_cal_cm2 > hi)
            hi = in->site->ppe_levels[k].arc_rating_cal_cm2;
    scale s = make_scale(0, hi > 0 ? hi * 1.05 : 1, 8);
    s.lo = 0;
    /* From the chart's top (below the heading and the note) to the room the axis title and
     * legend need above the footer; the buses are then spread evenly over the pages. */
    paragraph legend = {0};
    if (legend_layout(w, &legend) != 0) {
        free(legend.text);
        fail(w, "out of memory while laying out the chart legend");
        return -1;
    }
    double room = (PAGE_H - MARGIN - 46 - 30) - (CONTENT_BOTTOM + 34 + legend_height(&legend));
    size_t fit = room >= BAR_ROW ? (size_t)(room / BAR_ROW) : 0;
    if (fit == 0) {
        free(legend.text);
        free(legend.spans);
        fail(w, "the PPE level names are too long for the chart's legend");
        return -1;
    }
    size_t pages = n ? (n + fit - 1) / fit : 1;
    size_t per_page = n ? (n + pages - 1) / pages : 1;
    for (size_t p = 0, from = 0; p < pages; p++, from += per_page) {
        if (new_page(w, p ? "Incident energy by bus (continued)" : "Incident energy by bus")
            != 0)
            break;
        bar_page(w, from, from + per_page < n ? from + per_page : n, s, &legend);
    }
    free(legend.text);
    free(legend.spans);
    return w->failed ? -1 : 0;
}

/* ---- sweep plots ------------------------------------------------------------------------------ */

#define PLOT_W ((PAGE_W - 2 * MARGIN - 30) / 2)
#define PLOT_H ((PAGE_H - 2 * MARGIN - FOOTER_H - 46 - 20) / 2)

/* The smallest PPE rating at or above v, or NAN. */
static double next_rating(const tw_site *site, double v)
{
    for (size_t k = 0; site && k < site->ppe_level_count; k++)
        if (site->ppe_levels[k].arc_rating_cal_cm2 >= v)
            return site->ppe_levels[k].arc_rating_cal_cm2;
    return NAN;
}

static void plot_marker(writer *w, double x, double y, tw_rgb c)
{
    tw_draw_fill(w->page, (tw_box){x - 2, y - 2, 4, 4}, c);
}

/* One plot in the box with lower-left (bx, by). */
static void sweep_plot(writer *w, const tw_envelope *e, double bx, double by)
{
    const tw_site *site = w->in->site;
    double x0 = bx + 40, x1 = bx + PLOT_W - 12, y0 = by + 34, y1 = by + PLOT_H - 34;
    double klo = INFINITY, khi = 0, ehi = 0;
    for (size_t i = 0; i < e->sweep_count; i++) {
        klo = fmin(klo, e->sweep[i].source_ka);
        khi = fmax(khi, e->sweep[i].source_ka);
        ehi = fmax(ehi, e->sweep[i].energy_cal);
    }
    double next = next_rating(site, ehi);
    scale sx = make_scale(klo, khi, 6);
    scale sy = make_scale(0, fmax(ehi, isnan(next) ? 0 : next) * 1.08, 5);
    sy.lo = 0;
    text(w, 1, 9, bx, by + PLOT_H - 12, e->equipment_id, INK);
    if (e->rises) {
        /* The device's threshold lies somewhere between the two scenarios: shade the gap. */
        double xa = map(e->sweep[e->rise_index].source_ka, sx, x0, x1);
        double xb = map(e->rises_below_ka, sx, x0, x1);
        tw_draw_fill(w->page, (tw_box){xa, y0, xb - xa, y1 - y0}, RISE_BAND);
    }
    axis(w, sx, 1, y0, x0, x1, y1 - y0);
    axis(w, sy, 0, x0, y0, y1, x1 - x0);
    tw_draw_line(w->page, x0, y0, x1, y0, 0.8, INK);
    tw_draw_line(w->page, x0, y0, x0, y1, 0.8, INK);
    text_centre(w, 0, 7, (x0 + x1) / 2, by + 8, "source fault current (kA)", INK);
    text(w, 0, 7, bx, y1 + 6, "incident energy (cal/cm2)", INK);
    for (size_t k = 0; site && k < site->ppe_level_count; k++) {
        double r = site->ppe_levels[k].arc_rating_cal_cm2;
        if (!(r > sy.lo && r <= sy.hi))
            continue;
        double y = map(r, sy, y0, y1);
        dashed(w->page, x0, y, x1, y, 0.6, TW_GREY);
        char t[NUM_CHARS];
        snprintf(t, sizeof t, "PPE %g", r);
        text(w, 0, 6.5, x0 + 3, y + 2, t, TW_GREY);
    }
    if (e->rises) {
        double x = map(e->rises_below_ka, sx, x0, x1);
        dashed(w->page, x, y0, x, y1, 0.9, TW_SAFETY_RED);
        char t[NUM_CHARS];
        snprintf(t, sizeof t, "energy rises below %.2f kA", e->rises_below_ka);
        double tw = width_of(w, 1, 7, t);
        double tx = x + 3 + tw > x1 ? x - 3 - tw : x + 3;
        text(w, 1, 7, tx, y1 - 9, t, TW_SAFETY_RED);
    }
    /* Points in falling current; the line joins them in that order. */
    HPDF_Page_SetLineJoin(w->page, HPDF_ROUND_JOIN);
    for (size_t i = 1; i < e->sweep_count; i++)
        tw_draw_line(w->page, map(e->sweep[i - 1].source_ka, sx, x0, x1),
                     map(e->sweep[i - 1].energy_cal, sy, y0, y1),
                     map(e->sweep[i].source_ka, sx, x0, x1),
                     map(e->sweep[i].energy_cal, sy, y0, y1), 1.2, PLOT_LINE);
    for (size_t i = 0; i < e->sweep_count; i++) {
        int after_rise = e->rises && i >= e->rise_index;
        plot_marker(w, map(e->sweep[i].source_ka, sx, x0, x1),
                    map(e->sweep[i].energy_cal, sy, y0, y1),
                    after_rise ? TW_SAFETY_RED : PLOT_LINE);
    }
}

static int draw_sweeps(writer *w)
{
    const tw_summary_input *in = w->in;
    size_t slot = 0, plotted = 0;
    for (size_t i = 0; i < in->buses->count; i++) {
        const tw_envelope *e = &in->envelopes[i];
        if (!tw_envelope_has_sweep(e))
            continue;
        if (slot % 4 == 0) {
            if (new_page(w, plotted ? "Scenario sweeps (continued)" : "Scenario sweeps") != 0)
                return -1;
            if (!plotted)
                text(w, 0, 7.5, MARGIN, w->y - 8,
                     "Buses with a sweep of the source fault current. Red: the points after "
                     "the energy rises, and the gap in which it rises (docs/envelope.md); "
                     "dashed grey: the site's PPE levels.",
                     INK);
        }
        double col = (double)(slot % 2), row = (double)((slot % 4) / 2);
        double bx = MARGIN + col * (PLOT_W + 30);
        double by = PAGE_H - MARGIN - 46 - 14 - (row + 1) * PLOT_H;
        sweep_plot(w, e, bx, by);
        slot++;
        plotted++;
    }
    return w->failed ? -1 : 0;
}

/* ---- document -------------------------------------------------------------------------------- */

int tw_summary_write(const tw_summary_input *in, const char *path, char *err, size_t errlen)
{
    writer w;
    memset(&w, 0, sizeof w);
    w.in = in;
    if (tw_pdf_doc_open(&w.doc, in->date, err, errlen) != 0)
        return -1;
    HPDF_SetInfoAttr(w.doc.pdf, HPDF_INFO_TITLE, "Arc-flash study summary");
    int rc = draw_table(&w) == 0 && draw_bar_chart(&w) == 0 && draw_sweeps(&w) == 0 ? 0 : -1;
    if (rc == 0) {
        draw_footers(&w);
        rc = tw_pdf_doc_save(&w.doc, path, err, errlen);
    } else {
        snprintf(err, errlen, "%s: not written: %s", path, w.why);
    }
    tw_pdf_doc_close(&w.doc);
    free(w.pages);
    return rc;
}
