/* pdf.c - arc-flash hazard label documents (see tw_pdf.h).
 *
 * Each label is planned first (every text box fitted, the QR code encoded and sized) and drawn
 * only when the whole plan fits, so a refused label leaves nothing on the page. */
#include "tw_pdf.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tw_draw.h"
#include "tw_qr.h"
#include "tw_util.h"

/* ---- the words printed on a label ---------------------------------------------------------
 * One table, indexed by tw_label_key for field captions and by the M_ ids after them for the
 * rest; another language is another table of the same shape. */
enum {
    M_TITLE_ARC_FLASH = TW_L_COUNT,
    M_TITLE_SHOCK,
    M_TITLE_SERVICE,
    M_HAZARD_LINE,
    M_WORD_WARNING,
    M_WORD_DANGER,
    M_DRAFT_TAG,
    M_WATERMARK,
    M_HASH_CAPTION,
    M_CAUTIONS,
    M_MISSING,
    M_NO_QR,
    M_COUNT
};

static const char *const messages_en[M_COUNT] = {
    [TW_L_SIGNAL_WORD] = "Signal word",
    [TW_L_EQUIPMENT_ID] = "Equipment",
    [TW_L_DESCRIPTION] = "Description",
    [TW_L_LOCATION] = "Location",
    [TW_L_NOMINAL_VOLTAGE] = "Nominal voltage",
    [TW_L_ARC_FLASH_BOUNDARY] = "Arc-flash boundary",
    [TW_L_BOUNDARY_NOTE] = "Boundary note",
    [TW_L_INCIDENT_ENERGY] = "Incident energy",
    [TW_L_WORKING_DISTANCE] = "Working distance",
    [TW_L_PPE_CATEGORY] = "PPE category",
    [TW_L_MIN_ARC_RATING] = "Minimum arc rating",
    [TW_L_PPE_LEVEL] = "Site PPE level",
    [TW_L_NO_PPE_ADEQUATE] = "ENERGIZED WORK IS NOT PERMITTED HERE. No PPE level stocked at "
                             "this site is adequate. Put the equipment in an electrically safe "
                             "work condition first.",
    [TW_L_LIMITED_APPROACH] = "Limited approach",
    [TW_L_RESTRICTED_APPROACH] = "Restricted approach",
    [TW_L_GLOVE_CLASS] = "Rubber glove class",
    [TW_L_AVAILABLE_FAULT] = "Available fault current",
    [TW_L_SERVICE_CLEARING_TIME] = "Service device clearing time",
    [TW_L_SERVICE_LABEL_DATE] = "Date of these values",
    [TW_L_STUDY_ID] = "Study",
    [TW_L_STUDY_DATE] = "Study date",
    [TW_L_SCENARIO] = "Governing case",
    [TW_L_REVIEW_DUE] = "Review due",
    [TW_L_REVISION_NOTE] = "Revision",
    [M_TITLE_ARC_FLASH] = "ARC FLASH",
    [M_TITLE_SHOCK] = "SHOCK",
    [M_TITLE_SERVICE] = "SERVICE EQUIPMENT (NEC 110.16(B))",
    [M_HAZARD_LINE] = "Arc-flash and shock hazard. Qualified persons only.",
    [M_WORD_WARNING] = "WARNING",
    [M_WORD_DANGER] = "DANGER",
    [M_DRAFT_TAG] = "DRAFT",
    [M_WATERMARK] = "DRAFT - NOT FOR POSTING",
    [M_HASH_CAPTION] = "content hash",
    [M_CAUTIONS] = "This label reflects the arc-flash risk assessment named on it and is valid "
                   "only while the equipment, its protective device settings and its supply "
                   "are unchanged. De-energize and verify the absence of voltage wherever "
                   "possible. NFPA 70E, local codes and a licensed engineer's judgement govern.",
    [M_MISSING] = "(missing)",
    [M_NO_QR] = "no QR code",
};

static const char *msg(int id)
{
    return messages_en[id] ? messages_en[id] : "";
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

static const char *label_id(const tw_label *l)
{
    return has(l, TW_L_EQUIPMENT_ID) && tw_text_ok(l->value[TW_L_EQUIPMENT_ID])
               ? l->value[TW_L_EQUIPMENT_ID]
               : "(no equipment ID)";
}

static int hash_ok(const char *h)
{
    for (int i = 0; i < 64; i++)
        if (!((h[i] >= '0' && h[i] <= '9') || (h[i] >= 'a' && h[i] <= 'f')))
            return 0;
    return h[64] == '\0';
}

/* Content rules a posting label must meet; a draft only needs printable text. */
static int check_label(const tw_label *l, const char *payload, char *err, size_t errlen)
{
    const char *id = label_id(l);
    for (int k = 0; k < TW_L_COUNT; k++)
        if (l->value[k] && !tw_text_ok(l->value[k])) {
            snprintf(err, errlen, "label %s: %s is not printable UTF-8 text", id,
                     tw_label_key_name((tw_label_key)k));
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

#define ROW_MAX_LINES 4
#define CAPTION_MAX_LINES 2
#define BLOCK_MAX_ROWS 32

typedef struct {
    row_kind kind;
    const char *what;    /* named in messages */
    const char *caption; /* ROW_PAIR; NULL when the value continues the row above */
    const char *text;
    int max_lines, bold;
    tw_align align;
    double scale;        /* starting size relative to the block's size */
    /* set by fitting */
    double pt, space, h;
    int n, cap_n;
    tw_span lines[ROW_MAX_LINES], cap_lines[CAPTION_MAX_LINES];
} row;

typedef struct {
    row rows[BLOCK_MAX_ROWS];
    int n, overflow;
    /* set by fitting */
    double pt, caption_w, h;
    const row *failed;   /* the row that did not fit its width, or NULL */
    double need, have;
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
    *r = (row){.kind = kind, .what = what, .caption = caption, .text = text,
               .max_lines = max_lines, .bold = kind != ROW_TEXT, .scale = 1};
    if (kind == ROW_BIG)
        r->scale = 1.8;
    if (kind == ROW_TITLE)
        r->scale = 0.85;
    return r;
}

/* Size a row at block size s; 0 when it fits its width, else -1 with need/have set. */
static int fit_row(const tw_pdf_doc *d, block *b, row *r, double w, double s, double min)
{
    HPDF_Font f = r->bold ? d->bold : d->regular;
    double avail = w, start = fmax(min, s * r->scale);
    r->space = r->kind == ROW_TITLE ? 0.45 * s : r->kind == ROW_BOX ? 0.35 * s
             : r->kind == ROW_BIG ? 0.25 * s : 0;
    if (r->kind == ROW_PAIR) {
        avail = w - b->caption_w;
        r->cap_n = 0;
        if (r->caption) {
            r->cap_n = tw_wrap(d->regular, s, r->caption, b->caption_w - 0.6 * s, r->cap_lines,
                               CAPTION_MAX_LINES);
            if (r->cap_n > CAPTION_MAX_LINES) {
                b->need = tw_text_width(d->regular, s, r->caption, strlen(r->caption));
                b->have = CAPTION_MAX_LINES * (b->caption_w - 0.6 * s);
                return -1;
            }
        }
    } else if (r->kind == ROW_BOX) {
        avail = w - 1.2 * s;
    }
    r->pt = tw_fit_size(f, r->text, avail, r->max_lines, start, min);
    if (r->pt == 0) {
        b->need = tw_text_width(f, min, r->text, strlen(r->text));
        b->have = avail * r->max_lines;
        return -1;
    }
    r->n = tw_wrap(f, r->pt, r->text, avail, r->lines, ROW_MAX_LINES);
    double text_h = r->n * r->pt * TW_LEADING;
    if (r->kind == ROW_PAIR)
        text_h = fmax(text_h, r->cap_n * s * TW_LEADING);
    r->h = r->space + text_h + (r->kind == ROW_BOX ? 2 * r->space + 0.6 * s : 0);
    return 0;
}

/* Size every row at block size s. 0 when all rows fit the box. */
static int fit_block_at(const tw_pdf_doc *d, block *b, tw_box box, double s, double min)
{
    b->pt = s;
    b->failed = NULL;
    double cw = 0;
    for (int i = 0; i < b->n; i++)
        if (b->rows[i].kind == ROW_PAIR && b->rows[i].caption)
            cw = fmax(cw, tw_text_width(d->regular, s, b->rows[i].caption,
                                        strlen(b->rows[i].caption)));
    b->caption_w = fmin(cw + 0.6 * s, box.w * 0.48);
    b->h = 0;
    for (int i = 0; i < b->n; i++) {
        if (fit_row(d, b, &b->rows[i], box.w, s, min) != 0) {
            b->failed = &b->rows[i];
            return -1;
        }
        b->h += b->rows[i].h;
    }
    return b->h <= box.h + 1e-6 ? 0 : -1;
}

/* Shrink in 0.5 pt steps from start to min until the block fits; else a message naming the
 * label, the field and the region. */
static int fit_block(const tw_pdf_doc *d, block *b, tw_box box, double start, double min,
                     const char *id, const char *region, char *err, size_t errlen)
{
    if (b->overflow) {
        snprintf(err, errlen, "label %s: too many lines for the %s region", id, region);
        return -1;
    }
    for (double s = start; s >= min - 1e-9; s -= 0.5)
        if (fit_block_at(d, b, box, s, min) == 0)
            return 0;
    if (b->failed)
        snprintf(err, errlen, "label %s: %s does not fit the %s region at %g pt (needs %.0f pt, "
                 "has %.0f pt)", id, b->failed->what, region, min, b->need, b->have);
    else
        snprintf(err, errlen, "label %s: the %s region overflows at %g pt (needs %.0f pt of "
                 "height, has %.0f pt)", id, region, min, b->h, box.h);
    return -1;
}

static void draw_title(HPDF_Page p, const tw_pdf_doc *d, const row *r, double x, double top,
                       double w)
{
    tw_draw_lines(p, d->bold, r->pt, x, top, w, r->text, r->lines, r->n, TW_ALIGN_LEFT,
                  TW_BLACK);
    double tw = tw_text_width(d->bold, r->pt, r->text + r->lines[0].start, r->lines[0].len);
    double y = top - tw_baseline_drop(d->bold, r->pt) + r->pt * 0.35;
    if (r->n == 1 && tw + r->pt < w)
        tw_draw_line(p, x + tw + 0.5 * r->pt, y, x + w, y, 0.6, TW_BLACK);
}

static void draw_block(HPDF_Page p, const tw_pdf_doc *d, const block *b, tw_box box)
{
    double top = box.y + box.h, s = b->pt;
    for (int i = 0; i < b->n; i++) {
        const row *r = &b->rows[i];
        double y = top - r->space;
        HPDF_Font f = r->bold ? d->bold : d->regular;
        switch (r->kind) {
        case ROW_TITLE:
            draw_title(p, d, r, box.x, y, box.w);
            break;
        case ROW_PAIR: {
            tw_draw_lines(p, d->regular, s, box.x, y, b->caption_w, r->caption ? r->caption : "",
                          r->cap_lines, r->cap_n, TW_ALIGN_LEFT, TW_BLACK);
            /* first baselines level with the caption's */
            double vtop = y - tw_baseline_drop(d->regular, s) + tw_baseline_drop(f, r->pt);
            tw_draw_lines(p, f, r->pt, box.x + b->caption_w, vtop, box.w - b->caption_w, r->text,
                          r->lines, r->n, TW_ALIGN_LEFT, TW_BLACK);
            break;
        }
        case ROW_BOX: {
            double bh = r->h - 2 * r->space;
            tw_draw_frame(p, (tw_box){box.x + 0.4 * s, y - bh, box.w - 0.8 * s, bh - 0.4 * s},
                          0.2 * s, TW_BLACK);
            tw_draw_lines(p, f, r->pt, box.x + 0.6 * s, y - 0.2 * s - r->space, box.w - 1.2 * s,
                          r->text, r->lines, r->n, TW_ALIGN_CENTRE, TW_BLACK);
            break;
        }
        default:
            tw_draw_lines(p, f, r->pt, box.x, y, box.w, r->text, r->lines, r->n, r->align,
                          TW_BLACK);
        }
        top -= r->h;
    }
}

/* ---- the document ------------------------------------------------------------------------ */

struct tw_label_doc {
    tw_pdf_doc pdf;
    tw_layout layout;         /* copy; name not owned */
    char *footer;             /* cautions text */
    tw_span *footer_lines;
    int footer_n;
    double footer_pt;
    HPDF_Page page;
    int count, pages;
};

/* The text shown for a field: its value; in a draft a required field that is missing is
 * shown as missing; otherwise NULL. */
static const char *shown(const tw_label *l, tw_label_key k)
{
    if (has(l, k))
        return l->value[k];
    return l->draft && is_required(k) ? msg(M_MISSING) : NULL;
}

static void add_pair(block *b, const tw_label *l, tw_label_key k, int max_lines)
{
    const char *v = shown(l, k);
    if (v)
        add_row(b, ROW_PAIR, tw_label_key_name(k), msg(k), v, max_lines);
}

static void plan_arc_flash(block *b, const tw_label *l)
{
    add_row(b, ROW_TITLE, "arc-flash title", NULL, msg(M_TITLE_ARC_FLASH), 1);
    /* NFPA 70E 130.5(H): incident energy at its working distance OR the PPE category. */
    if (has(l, TW_L_INCIDENT_ENERGY) || !has(l, TW_L_PPE_CATEGORY)) {
        add_row(b, ROW_PAIR, "incident_energy", msg(TW_L_INCIDENT_ENERGY),
                has(l, TW_L_INCIDENT_ENERGY) ? l->value[TW_L_INCIDENT_ENERGY] : msg(M_MISSING),
                1);
        add_row(b, ROW_PAIR, "working_distance", msg(TW_L_WORKING_DISTANCE),
                has(l, TW_L_WORKING_DISTANCE) ? l->value[TW_L_WORKING_DISTANCE] : msg(M_MISSING),
                1);
    } else {
        add_pair(b, l, TW_L_PPE_CATEGORY, 1);
    }
    add_pair(b, l, TW_L_ARC_FLASH_BOUNDARY, 1);
    if (has(l, TW_L_BOUNDARY_NOTE)) {
        row *r = add_row(b, ROW_PAIR, "boundary_note", NULL, l->value[TW_L_BOUNDARY_NOTE], 2);
        if (r)
            r->bold = 0;
    }
    add_pair(b, l, TW_L_MIN_ARC_RATING, 1);
    if (has(l, TW_L_NO_PPE_ADEQUATE))
        add_row(b, ROW_BOX, "no-PPE statement", NULL, msg(TW_L_NO_PPE_ADEQUATE), ROW_MAX_LINES);
    else
        add_pair(b, l, TW_L_PPE_LEVEL, 2);
}

static void plan_body(block *b, const tw_label *l)
{
    row *r = add_row(b, ROW_TEXT, "hazard statement", NULL, msg(M_HAZARD_LINE), 2);
    if (r) {
        r->bold = 1;
        r->align = TW_ALIGN_CENTRE;
    }
    add_row(b, ROW_BIG, "equipment_id", NULL, shown(l, TW_L_EQUIPMENT_ID), 1);
    if (has(l, TW_L_DESCRIPTION))
        add_row(b, ROW_TEXT, "description", NULL, l->value[TW_L_DESCRIPTION], 2);
    add_pair(b, l, TW_L_LOCATION, 2);
    plan_arc_flash(b, l);
    add_row(b, ROW_TITLE, "shock title", NULL, msg(M_TITLE_SHOCK), 1);
    add_pair(b, l, TW_L_NOMINAL_VOLTAGE, 1);
    add_pair(b, l, TW_L_LIMITED_APPROACH, 1);
    add_pair(b, l, TW_L_RESTRICTED_APPROACH, 1);
    add_pair(b, l, TW_L_GLOVE_CLASS, 1);
    /* NEC 110.16(B): available fault current, clearing time and date, service equipment. */
    if (has(l, TW_L_AVAILABLE_FAULT)) {
        add_row(b, ROW_TITLE, "service title", NULL, msg(M_TITLE_SERVICE), 1);
        add_pair(b, l, TW_L_AVAILABLE_FAULT, 1);
        add_pair(b, l, TW_L_SERVICE_CLEARING_TIME, 1);
        add_pair(b, l, TW_L_SERVICE_LABEL_DATE, 1);
    }
}

static void plan_study(block *b, const tw_label *l)
{
    add_pair(b, l, TW_L_STUDY_ID, 2);
    add_pair(b, l, TW_L_STUDY_DATE, 1);
    add_pair(b, l, TW_L_SCENARIO, 2);
    add_pair(b, l, TW_L_REVIEW_DUE, 1);
    if (has(l, TW_L_REVISION_NOTE))
        add_row(b, ROW_TEXT, "revision_note", NULL, l->value[TW_L_REVISION_NOTE], 3);
}

typedef struct {
    block body, study;
    tw_box study_box;
    double header_pt;
    tw_qr qr;
    int qr_borrowed;          /* qr belongs to the caller (encoded ahead, maybe on a thread) */
    double module, hash_pt;
    char hash_caption[96];
    tw_span hash_lines[2];
    int hash_n;
} plan;

/* The region beside the QR box, left of it: the study block. */
static tw_box study_box(const tw_layout *lay)
{
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
        pl->module = tw_qr_module_pt(modules, lay->qr.w, lay->printer_dpi, 2);
        if (pl->module == 0) {
            snprintf(err, errlen, "label %s: the QR code (%d modules with its quiet zone) does "
                     "not fit the QR box (%.0f pt) at 2 printer dots per module at %.0f dpi; "
                     "shorten the record link", id, modules, lay->qr.w, lay->printer_dpi);
            return -1;
        }
    }
    if (hash_ok(l->hash)) {
        snprintf(pl->hash_caption, sizeof pl->hash_caption, "%s %.12s", msg(M_HASH_CAPTION),
                 l->hash);
        pl->hash_pt = tw_fit_size(doc->pdf.regular, pl->hash_caption, lay->qr.w, 2,
                                  lay->footer_pt, lay->min_pt);
        pl->hash_n = tw_wrap(doc->pdf.regular, pl->hash_pt, pl->hash_caption, lay->qr.w,
                             pl->hash_lines, 2);
        if (pl->hash_pt == 0 || pl->hash_n > 2) {
            snprintf(err, errlen, "label %s: the content hash caption does not fit the QR box "
                     "at %g pt", id, lay->min_pt);
            return -1;
        }
    }
    return 0;
}

static int plan_label(const tw_label_doc *doc, plan *pl, const tw_label *l, const char *payload,
                      char *err, size_t errlen)
{
    const tw_layout *lay = &doc->layout;
    const char *id = label_id(l);
    const char *word = msg(l->signal == TW_SIGNAL_DANGER ? M_WORD_DANGER : M_WORD_WARNING);
    pl->header_pt = tw_draw_hazard_header(NULL, &doc->pdf, lay->header, l->signal, word,
                                          l->draft ? msg(M_DRAFT_TAG) : NULL, lay->header_pt,
                                          lay->min_pt);
    if (pl->header_pt == 0) {
        snprintf(err, errlen, "label %s: the signal word does not fit the header region at %g pt",
                 id, lay->min_pt);
        return -1;
    }
    plan_body(&pl->body, l);
    if (fit_block(&doc->pdf, &pl->body, lay->body, lay->body_pt, lay->min_pt, id, "body", err,
                  errlen) != 0)
        return -1;
    pl->study_box = study_box(lay);
    plan_study(&pl->study, l);
    /* never larger than the body text beside it */
    if (fit_block(&doc->pdf, &pl->study, pl->study_box, pl->body.pt, lay->min_pt, id, "study",
                  err, errlen) != 0)
        return -1;
    return plan_qr(doc, pl, l, payload, id, err, errlen);
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
        const char *t = msg(M_NO_QR);
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
    const char *word = msg(l->signal == TW_SIGNAL_DANGER ? M_WORD_DANGER : M_WORD_WARNING);
    tw_draw_fill(p, (tw_box){0, 0, lay->label_w, lay->label_h}, TW_WHITE);
    tw_draw_hazard_header(p, &doc->pdf, lay->header, l->signal, word,
                          l->draft ? msg(M_DRAFT_TAG) : NULL, pl->header_pt, pl->header_pt);
    draw_block(p, &doc->pdf, &pl->body, lay->body);
    draw_block(p, &doc->pdf, &pl->study, pl->study_box);
    draw_qr_box(p, doc, pl);
    draw_footer(p, doc);
    if (l->draft) {
        tw_draw_watermark(p, doc->pdf.bold, (tw_box){0, 0, lay->label_w, lay->label_h},
                          msg(M_WATERMARK), TW_SAFETY_RED);
        /* The same words once more, level, in the bottom margin: readable by anyone holding
         * the label sideways and by text extraction, which splits the diagonal copy. */
        const char *t = msg(M_WATERMARK);
        double pt = fmax(lay->min_pt, 6), w = tw_text_width(doc->pdf.bold, pt, t, strlen(t));
        tw_draw_text(p, doc->pdf.bold, pt, (lay->label_w - w) / 2, 2, t, strlen(t),
                     TW_SAFETY_RED);
    }
}

/* Fit the cautions (ours, then the site's, one per line) into the footer once per document. */
static int plan_footer(tw_label_doc *doc, const tw_site *site, char *err, size_t errlen)
{
    size_t len = strlen(msg(M_CAUTIONS)) + 1;
    for (size_t i = 0; site && i < site->caution_count; i++) {
        const char *c = site->cautions[i] ? site->cautions[i] : "";
        if (!tw_text_ok(c)) {
            snprintf(err, errlen, "site caution %zu is not printable UTF-8 text", i + 1);
            return -1;
        }
        len += strlen(c) + 1;
    }
    if (!(doc->footer = malloc(len)))
        goto oom;
    strcpy(doc->footer, msg(M_CAUTIONS));
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
        snprintf(err, errlen, "the cautions do not fit the footer region at %g pt (needs %.0f pt "
                 "of height, has %.0f pt)", lay->min_pt, n * lay->min_pt * TW_LEADING, avail);
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

tw_label_doc *tw_label_doc_new(const tw_layout *layout, const tw_site *site,
                               const char *creation_date, char *err, size_t errlen)
{
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
    }
    doc->layout.name = NULL; /* not needed; the caller owns its layout */
    if (tw_pdf_doc_open(&doc->pdf, creation_date, err, errlen) != 0 ||
        plan_footer(doc, site, err, errlen) != 0) {
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
    int per_page = lay->columns * lay->rows, cell = doc->count % per_page;
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
        draw_sheet_marks(p, doc, ox, oy, label_id(label));
        HPDF_Page_GSave(p);
        HPDF_Page_Concat(p, 1, 0, 0, 1, (HPDF_REAL)ox, (HPDF_REAL)oy);
        draw_label(p, doc, pl, label);
        HPDF_Page_GRestore(p);
        if (tw_pdf_doc_check(&doc->pdf, why, sizeof why) != 0) {
            snprintf(err, errlen, "label %s: %s", label_id(label), why);
        } else {
            doc->count++;
            page_no = doc->pages;
        }
    }
    if (!pl->qr_borrowed)
        tw_qr_free(&pl->qr);
    free(pl);
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
    free(doc->footer);
    free(doc->footer_lines);
    free(doc);
}
