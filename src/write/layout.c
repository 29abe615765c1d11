/* layout.c - label layouts from our JSON schema (see tw_layout.h and docs/layouts.md). */
#include "write/tw_layout.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include <dirent.h>

#include <cjson/cJSON.h>

#include "rules/tw_label.h"
#include "base/tw_util.h"
#include "read/tw_json.h"

#ifndef TW_DATADIR
#define TW_DATADIR "/usr/local/share/tagwright"
#endif

#define PT_PER_IN 72.0
#define PT_PER_MM (72.0 / 25.4)

/* Space left between neighbouring regions of a label, in points. */
#define TW_LAYOUT_GAP_PT 4.0

/* The QR box holds the symbol with its quiet zone and, under it, up to three lines of the
 * footer font size with the start of the content hash (the caption in two languages takes
 * three); this is their height in font sizes. */
#define TW_QR_CAPTION_LINES 3.6

/* Space between the study block and the QR box beside it, in points. */
#define TW_STUDY_GAP_PT 6.0

/* Body lines a label must have room for at the smallest size, and the line height in font
 * sizes (as the PDF module sets text). */
#define TW_MIN_BODY_LINES 3
#define TW_LINE 1.2

/* Space between body columns, in font sizes of the body text. */
#define TW_COLUMN_GAP_EM 1.0
#define TW_MAX_BODY_COLUMNS 2

/* Most printers cannot print closer than about 0.25 in to the paper's edge (common practice
 * for office laser and inkjet printers); sheet layouts keep their marks inside that. */
#define TW_PRINTABLE_EDGE_PT 18.0

/* Smallest text on a label, in points. 6 pt is common practice for the smallest legible print
 * on equipment labels; ANSI Z535.4 asks that safety signs be legible at a safe viewing
 * distance, which no size smaller than this meets at arm's length. */
#define TW_MIN_LEGIBLE_PT 6.0

/* Smallest QR box side (symbol plus quiet zone): 20 mm, common practice for codes read with a
 * phone camera at arm's length. */
#define TW_MIN_QR_MM 20.0

/* The study block beside the QR box needs at least this width, in points (1 in). */
#define TW_MIN_STRIP_PT 72.0

/* Largest page side libharu and common viewers accept, in points (200 in). */
#define TW_MAX_SIDE_PT 14400.0
#define TW_MAX_GRID 50

/* The built-in layout; layouts/4x6.json holds the same text (a unit test keeps them equal). */
static const char default_json[] =
    "{\"name\":\"4x6\",\"units\":\"in\",\"label\":{\"width\":4,\"height\":6},"
    "\"margin\":0.125,\"header\":{\"height\":0.7,\"font_pt\":24},\"body\":{\"font_pt\":9,\"columns\":2},"
    "\"qr\":{\"size\":1.15},\"footer\":{\"height\":0.75,\"font_pt\":6.5},"
    "\"min_font_pt\":6,\"printer_dpi\":203}";

typedef struct {
    const char *file;
    tw_diags *d;
    double unit;    /* points per layout unit */
    const char *unit_name;
} reader;

#if defined(__GNUC__)
__attribute__((format(printf, 3, 4)))
#endif
static void fail(reader *r, const char *path, const char *fmt, ...)
{
    tw_source src = {r->file, 0, path};
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(NULL, 0, fmt, ap);
    va_end(ap);
    char *msg = n >= 0 ? malloc((size_t)n + 1) : NULL;
    if (msg) {
        va_start(ap, fmt);
        vsnprintf(msg, (size_t)n + 1, fmt, ap);
        va_end(ap);
    }
    tw_diag_add(r->d, TW_ERROR, &src, NULL, NULL, "%s", msg ? msg : "out of memory");
    free(msg);
}

static void warn_unknown(reader *r, const cJSON *obj, const char *path,
                         const char *const *known)
{
    for (const cJSON *it = obj ? obj->child : NULL; it; it = it->next) {
        int ok = 0;
        for (size_t i = 0; known[i]; i++)
            ok |= it->string && strcmp(it->string, known[i]) == 0;
        if (!ok) {
            tw_source src = {r->file, 0, path};
            tw_diag_add(r->d, TW_WARNING, &src, NULL, NULL, "unknown key \"%s\" ignored",
                        it->string ? it->string : "");
        }
    }
}

/* An object member that must be an object (NULL when absent and optional). */
static const cJSON *get_object(reader *r, const cJSON *obj, const char *key, const char *path,
                               int required)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(obj, key);
    if (!v) {
        if (required)
            fail(r, path, "missing; expected an object");
        return NULL;
    }
    if (!cJSON_IsObject(v)) {
        fail(r, path, "expected an object");
        return NULL;
    }
    return v;
}

/* A number member; returns 0 and sets *out, or -1 (missing optional: *out keeps its default). */
static int get_number(reader *r, const cJSON *obj, const char *key, const char *path,
                      int required, double *out)
{
    const cJSON *v = obj ? cJSON_GetObjectItemCaseSensitive(obj, key) : NULL;
    if (!v) {
        if (required)
            fail(r, path, "missing; expected a number");
        return -1;
    }
    if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble)) {
        fail(r, path, "expected a number");
        return -1;
    }
    *out = v->valuedouble;
    return 0;
}

/* A length in layout units, converted to points. min_pt: smallest accepted value. */
static void get_length(reader *r, const cJSON *obj, const char *key, const char *path,
                       int required, double min_pt, double *out_pt)
{
    double v;
    if (get_number(r, obj, key, path, required, &v) != 0)
        return;
    double pt = v * r->unit;
    if (pt < min_pt || (min_pt == 0 && v < 0) || (min_pt > 0 && v <= 0)) {
        fail(r, path, "expected %s in %s, got %g", min_pt > 0 ? "a positive size" : "a distance of 0 or more",
             r->unit_name, v);
        return;
    }
    if (pt > TW_MAX_SIDE_PT) {
        fail(r, path, "too large (at most 200 in), got %g %s", v, r->unit_name);
        return;
    }
    *out_pt = pt;
}

/* A font size in points: at least the legible minimum. region names the text in messages. */
static void get_font(reader *r, const cJSON *obj, const char *key, const char *path,
                     const char *region, int required, double *out)
{
    double v;
    if (get_number(r, obj, key, path, required, &v) != 0)
        return;
    if (v < TW_MIN_LEGIBLE_PT) {
        fail(r, path,
             "the %s text at %g pt is %g pt below the 6 pt legible minimum (common practice; "
             "ANSI Z535.4 asks that safety signs be legible at a safe viewing distance)",
             region, v, TW_MIN_LEGIBLE_PT - v);
        return;
    }
    if (v > 400) {
        fail(r, path, "font size too large (at most 400 pt), got %g pt", v);
        return;
    }
    *out = v;
}

static void get_count(reader *r, const cJSON *obj, const char *key, const char *path, int max,
                      int *out)
{
    double v;
    if (get_number(r, obj, key, path, 0, &v) != 0)
        return;
    if (v != floor(v) || v < 1 || v > max) {
        fail(r, path, "expected a whole number from 1 to %d, got %g", max, v);
        return;
    }
    *out = (int)v;
}

static int read_units(reader *r, const cJSON *root)
{
    const cJSON *u = cJSON_GetObjectItemCaseSensitive(root, "units");
    if (cJSON_IsString(u) && strcmp(u->valuestring, "in") == 0) {
        r->unit = PT_PER_IN;
    } else if (cJSON_IsString(u) && strcmp(u->valuestring, "mm") == 0) {
        r->unit = PT_PER_MM;
    } else {
        fail(r, "$.units", "expected \"in\" or \"mm\"%s", u ? "" : " (missing)");
        return -1;
    }
    r->unit_name = u->valuestring;
    return 0;
}

static char *read_name(reader *r, const cJSON *root, const char *source)
{
    const cJSON *n = cJSON_GetObjectItemCaseSensitive(root, "name");
    if (n && (!cJSON_IsString(n) || !*n->valuestring)) {
        fail(r, "$.name", "expected a non-empty string");
        return NULL;
    }
    if (n)
        return tw_strdup(n->valuestring);
    /* No name: the file's base name without ".json". */
    const char *base = strrchr(source, '/');
    base = base ? base + 1 : source;
    size_t len = strlen(base);
    if (len > 5 && strcmp(base + len - 5, ".json") == 0)
        len -= 5;
    return tw_strndup(base, len);
}

static const char *const top_keys[] = {"name", "description", "units", "label", "page", "grid",
                                       "sheet_margin", "cut_marks", "margin", "header", "body",
                                       "qr", "footer", "min_font_pt", "printer_dpi",
                                       "omit", NULL};
static const char *const wh_keys[] = {"width", "height", NULL};
static const char *const grid_keys[] = {"columns", "rows", "gutter_x", "gutter_y", NULL};
static const char *const xy_keys[] = {"x", "y", NULL};
static const char *const header_keys[] = {"height", "font_pt", NULL};
static const char *const body_keys[] = {"font_pt", "columns", NULL};
static const char *const qr_keys[] = {"size", "position", NULL};

/* Fields a small layout may leave out: none of them is required by NFPA 70E 130.5(H) or
 * NEC 110.16(B), and the equipment ID, the values and the study stay on the label. */
static const tw_label_key omittable[] = {TW_L_DESCRIPTION, TW_L_LOCATION, TW_L_SCENARIO};

static void read_omit(reader *r, const cJSON *root, tw_layout *l)
{
    const cJSON *o = cJSON_GetObjectItemCaseSensitive(root, "omit");
    if (!o)
        return;
    if (!cJSON_IsArray(o)) {
        fail(r, "$.omit", "expected an array of field names");
        return;
    }
    int i = 0;
    for (const cJSON *it = o->child; it; it = it->next, i++) {
        char path[32];
        snprintf(path, sizeof path, "$.omit[%d]", i);
        int found = 0;
        for (size_t k = 0; cJSON_IsString(it) && k < sizeof omittable / sizeof omittable[0]; k++)
            if (strcmp(it->valuestring, tw_label_key_name(omittable[k])) == 0) {
                l->omit |= 1u << omittable[k];
                found = 1;
            }
        if (!found)
            fail(r, path, "expected \"description\", \"location\" or \"scenario\" (the "
                 "other fields are required on every label)");
    }
}

/* Sheet geometry: label size, page, grid. */
static void read_sheet(reader *r, const cJSON *root, tw_layout *l)
{
    const cJSON *label = get_object(r, root, "label", "$.label", 1);
    warn_unknown(r, label, "$.label", wh_keys);
    get_length(r, label, "width", "$.label.width", 1, 1e-9, &l->label_w);
    get_length(r, label, "height", "$.label.height", 1, 1e-9, &l->label_h);

    const cJSON *grid = get_object(r, root, "grid", "$.grid", 0);
    warn_unknown(r, grid, "$.grid", grid_keys);
    get_count(r, grid, "columns", "$.grid.columns", TW_MAX_GRID, &l->columns);
    get_count(r, grid, "rows", "$.grid.rows", TW_MAX_GRID, &l->rows);
    get_length(r, grid, "gutter_x", "$.grid.gutter_x", 0, 0, &l->gutter_x);
    get_length(r, grid, "gutter_y", "$.grid.gutter_y", 0, 0, &l->gutter_y);

    const cJSON *sm = get_object(r, root, "sheet_margin", "$.sheet_margin", 0);
    warn_unknown(r, sm, "$.sheet_margin", xy_keys);
    get_length(r, sm, "x", "$.sheet_margin.x", 0, 0, &l->sheet_margin_x);
    get_length(r, sm, "y", "$.sheet_margin.y", 0, 0, &l->sheet_margin_y);

    /* Without a page size the page is just big enough for the grid and its margins. */
    l->page_w = 2 * l->sheet_margin_x + l->columns * l->label_w + (l->columns - 1) * l->gutter_x;
    l->page_h = 2 * l->sheet_margin_y + l->rows * l->label_h + (l->rows - 1) * l->gutter_y;
    const cJSON *page = get_object(r, root, "page", "$.page", 0);
    warn_unknown(r, page, "$.page", wh_keys);
    get_length(r, page, "width", "$.page.width", page != NULL, 1e-9, &l->page_w);
    get_length(r, page, "height", "$.page.height", page != NULL, 1e-9, &l->page_h);
    /* A page without sheet margins: the grid is centred on it. */
    if (page && !sm) {
        l->sheet_margin_x = (l->page_w - l->columns * l->label_w - (l->columns - 1) * l->gutter_x) / 2;
        l->sheet_margin_y = (l->page_h - l->rows * l->label_h - (l->rows - 1) * l->gutter_y) / 2;
        if (l->sheet_margin_x < 0)
            l->sheet_margin_x = 0;   /* check_sheet says by how much the grid is too wide */
        if (l->sheet_margin_y < 0)
            l->sheet_margin_y = 0;
    }

    const cJSON *cm = cJSON_GetObjectItemCaseSensitive(root, "cut_marks");
    if (cm && !cJSON_IsBool(cm))
        fail(r, "$.cut_marks", "expected true or false");
    l->cut_marks = cJSON_IsTrue(cm);
}

/* Region sizes and fonts. Lengths are returned through the out parameters in points. */
static void read_regions(reader *r, const cJSON *root, tw_layout *l, double *margin,
                         double *header_h, double *qr_size, double *footer_h)
{
    get_length(r, root, "margin", "$.margin", 1, 0, margin);
    const cJSON *h = get_object(r, root, "header", "$.header", 1);
    warn_unknown(r, h, "$.header", header_keys);
    get_length(r, h, "height", "$.header.height", h != NULL, 1e-9, header_h);
    get_font(r, h, "font_pt", "$.header.font_pt", "header", h != NULL, &l->header_pt);

    const cJSON *b = get_object(r, root, "body", "$.body", 1);
    warn_unknown(r, b, "$.body", body_keys);
    get_font(r, b, "font_pt", "$.body.font_pt", "body", b != NULL, &l->body_pt);
    get_count(r, b, "columns", "$.body.columns", TW_MAX_BODY_COLUMNS, &l->body_columns);

    const cJSON *q = get_object(r, root, "qr", "$.qr", 1);
    warn_unknown(r, q, "$.qr", qr_keys);
    get_length(r, q, "size", "$.qr.size", q != NULL, 1e-9, qr_size);
    const cJSON *pos = q ? cJSON_GetObjectItemCaseSensitive(q, "position") : NULL;
    if (pos && cJSON_IsString(pos) && strcmp(pos->valuestring, "side") == 0)
        l->qr_side = 1;
    else if (pos && !(cJSON_IsString(pos) && strcmp(pos->valuestring, "bottom") == 0))
        fail(r, "$.qr.position", "expected \"bottom\" or \"side\"");

    const cJSON *f = get_object(r, root, "footer", "$.footer", 1);
    warn_unknown(r, f, "$.footer", header_keys);
    get_length(r, f, "height", "$.footer.height", f != NULL, 1e-9, footer_h);
    get_font(r, f, "font_pt", "$.footer.font_pt", "footer", f != NULL, &l->footer_pt);

    get_font(r, root, "min_font_pt", "$.min_font_pt", "smallest", 0, &l->min_pt);
    double dpi;
    if (get_number(r, root, "printer_dpi", "$.printer_dpi", 0, &dpi) == 0) {
        if (dpi < 72 || dpi > 4800)
            fail(r, "$.printer_dpi", "expected a resolution from 72 to 4800 dots per inch, got %g",
                 dpi);
        else
            l->printer_dpi = dpi;
    }
}

static int boxes_overlap(tw_box a, tw_box b)
{
    const double eps = 1e-6;
    return a.x + a.w > b.x + eps && b.x + b.w > a.x + eps && a.y + a.h > b.y + eps &&
           b.y + b.h > a.y + eps;
}

static int box_inside(tw_box a, double w, double h)
{
    const double eps = 1e-6;
    return a.w > 0 && a.h > 0 && a.x >= -eps && a.y >= -eps && a.x + a.w <= w + eps &&
           a.y + a.h <= h + eps;
}

#define MM(pt) ((pt) / PT_PER_MM)

/* The QR box must hold the largest symbol a label is expected to need (TW_LAYOUT_QR_VERSION
 * with its quiet zone) at a whole number of printer dots per module, at least
 * TW_LAYOUT_QR_MIN_DOTS, and be at least 20 mm. */
static void check_qr(reader *r, const tw_layout *l, double q)
{
    if (q < TW_MIN_QR_MM * PT_PER_MM - 1e-9) {
        fail(r, "$.qr.size",
             "the qr region is %.1f mm, %.1f mm below the %g mm minimum (common practice for "
             "codes read by a phone camera at arm's length)",
             MM(q), TW_MIN_QR_MM - MM(q), TW_MIN_QR_MM);
        return;
    }
    int modules = TW_LAYOUT_QR_MODULES + 2 * 4; /* ISO/IEC 18004: quiet zone of 4 modules */
    double dots = floor(q / 72.0 * l->printer_dpi + 1e-9);
    double need = (double)modules * TW_LAYOUT_QR_MIN_DOTS;
    if (dots < need) {
        double need_pt = need / l->printer_dpi * 72.0;
        fail(r, "$.qr.size",
             "the qr region is %.0f printer dots wide at %g dpi; a version %d symbol with its "
             "quiet zone (%d modules) at %d dots per module needs %.0f dots (%.1f mm): %.1f mm "
             "short",
             dots, l->printer_dpi, TW_LAYOUT_QR_VERSION, modules, TW_LAYOUT_QR_MIN_DOTS, need,
             MM(need_pt), MM(need_pt - q));
    }
}

/* Place the regions: header band at the top, footer at the bottom, the body in between. The
 * QR box is either in the lower right corner above the footer with the study block beside it
 * (qr_side 0), or in the upper right corner under the header with the body to its left
 * (qr_side 1). Each refusal says which region falls short and by how much. */
static void place_regions(reader *r, tw_layout *l, double m, double hh, double q, double fh)
{
    const double g = TW_LAYOUT_GAP_PT;
    double inner_w = l->label_w - 2 * m;
    double qh = q + TW_QR_CAPTION_LINES * l->footer_pt;
    double min_body_h = TW_MIN_BODY_LINES * l->min_pt * TW_LINE;
    int cols = l->body_columns > 1 ? l->body_columns : 1;
    l->header = (tw_box){m, l->label_h - m - hh, inner_w, hh};
    l->footer = (tw_box){m, m, inner_w, fh};
    double need_h, body_w;
    if (l->qr_side) {
        double top = l->header.y - g, bottom = m + fh + g;
        l->qr = (tw_box){l->label_w - m - q, top - qh, q, qh};
        l->body = (tw_box){m, bottom, inner_w - q - g, top - bottom};
        /* the study block goes under the QR box when there is room for it, else after the body */
        l->study = (tw_box){l->qr.x, bottom, q, l->qr.y - g - bottom};
        if (l->study.h < min_body_h)
            l->study = (tw_box){m, bottom, 0, 0};
        need_h = 2 * m + hh + fh + 2 * g + fmax(qh, min_body_h);
        body_w = l->body.w;
    } else {
        l->qr = (tw_box){l->label_w - m - q, m + fh + g, q, qh};
        double body_y = l->qr.y + qh + g;
        l->body = (tw_box){m, body_y, inner_w, l->header.y - g - body_y};
        l->study = (tw_box){m, l->qr.y, l->qr.x - TW_STUDY_GAP_PT - m, qh};
        need_h = 2 * m + hh + qh + fh + 3 * g + min_body_h;
        body_w = inner_w;
    }
    int short_h = need_h > l->label_h + 1e-6;
    if (short_h)
        fail(r, "$.label.height",
             "the regions do not fit: margins, header, QR box, footer and at least %d body "
             "lines need %.1f pt (%.1f mm) of height, the label has %.1f pt: %.1f mm short",
             TW_MIN_BODY_LINES, need_h, MM(need_h), l->label_h, MM(need_h - l->label_h));
    if (!l->qr_side && l->study.w < TW_MIN_STRIP_PT && inner_w > 0) {
        fail(r, "$.qr.size",
             "the qr region leaves %.1f pt for the study block beside it, %.1f pt (%.1f mm) "
             "less than the 1 in it needs",
             l->study.w, TW_MIN_STRIP_PT - l->study.w, MM(TW_MIN_STRIP_PT - l->study.w));
        return;
    }
    if (short_h)
        return;
    double col_w = (body_w - (cols - 1) * TW_COLUMN_GAP_EM * l->body_pt) / cols;
    if (col_w < TW_MIN_STRIP_PT) {
        fail(r, cols > 1 ? "$.body.columns" : "$.label.width",
             "the body region's %s %.1f pt wide, %.1f pt (%.1f mm) narrower than the 1 in a "
             "caption and its value need",
             cols > 1 ? "columns would be" : "column is", col_w, TW_MIN_STRIP_PT - col_w,
             MM(TW_MIN_STRIP_PT - col_w));
        return;
    }
    check_qr(r, l, q);
    const tw_box *boxes[] = {&l->header, &l->body, &l->qr, &l->footer};
    static const char *const names[] = {"header", "body", "qr", "footer"};
    for (int i = 0; i < 4; i++) {
        if (!box_inside(*boxes[i], l->label_w, l->label_h))
            fail(r, "$.label", "the %s region falls outside the label (at %.1f pt)", names[i],
                 boxes[i]->y);
        for (int j = i + 1; j < 4; j++)
            if (boxes_overlap(*boxes[i], *boxes[j]))
                fail(r, "$.label", "the %s region overlaps the %s region (at %.1f pt)",
                     names[i], names[j], boxes[i]->y);
    }
}

static void sheet_warning(reader *r, const char *path, const char *msg, double need, double have)
{
    tw_source src = {r->file, 0, path};
    tw_diag_add(r->d, TW_WARNING, &src, NULL, NULL, "%s (needs %.1f pt, has %.1f pt)", msg, need,
                have);
}

static void check_sheet(reader *r, const tw_layout *l, int page_given)
{
    const double eps = 1e-6;
    double need_w = l->sheet_margin_x + l->columns * l->label_w + (l->columns - 1) * l->gutter_x;
    double need_h = l->sheet_margin_y + l->rows * l->label_h + (l->rows - 1) * l->gutter_y;
    if (need_w > l->page_w + eps)
        fail(r, "$.page.width",
             "the grid columns of labels need %.1f pt (%.1f mm), the page is %.1f pt: %.1f mm "
             "too narrow", need_w, MM(need_w), l->page_w, MM(need_w - l->page_w));
    if (need_h > l->page_h + eps)
        fail(r, "$.page.height",
             "the grid rows of labels need %.1f pt (%.1f mm), the page is %.1f pt: %.1f mm "
             "too short", need_h, MM(need_h), l->page_h, MM(need_h - l->page_h));
    if (!page_given || (need_w > l->page_w + eps) || (need_h > l->page_h + eps))
        return;
    /* A sheet for an office printer: its marks and the IDs should be printable. */
    double right = l->page_w - need_w, bottom = l->page_h - need_h;
    double edge = fmin(fmin(l->sheet_margin_x, l->sheet_margin_y), fmin(right, bottom));
    if (edge < TW_PRINTABLE_EDGE_PT - eps)
        sheet_warning(r, "$.sheet_margin",
                      "labels come closer to the paper's edge than most printers can print "
                      "(0.25 in)", TW_PRINTABLE_EDGE_PT, edge);
    double id_room = l->min_pt * TW_LINE + 1.5;
    double room_y = l->rows > 1 ? fmin(bottom, l->gutter_y / 2) : bottom;
    if (room_y < id_room)
        sheet_warning(r, l->rows > 1 ? "$.grid.gutter_y" : "$.sheet_margin.y",
                      "no room under each label for its equipment ID outside the cut line",
                      id_room, room_y);
}

int tw_layout_load_mem(const char *name, const char *data, size_t len, tw_layout *l,
                       tw_diags *d)
{
    memset(l, 0, sizeof *l);
    const char *src_name = name ? name : "layout";
    reader r = {src_name, d, 0, NULL};
    size_t errors_before = d->errors;
    static const tw_json_spec spec = {"a layout object", TW_JSON_OBJECT, NULL};
    cJSON *root = tw_json_parse(src_name, data, len, &spec, d);
    if (!root)
        return -1;
    warn_unknown(&r, root, "$", top_keys);
    const cJSON *desc = cJSON_GetObjectItemCaseSensitive(root, "description");
    if (desc && !cJSON_IsString(desc))
        fail(&r, "$.description", "expected a string");

    l->columns = l->rows = l->body_columns = 1;
    l->min_pt = TW_MIN_LEGIBLE_PT;
    l->printer_dpi = 300;
    double m = 0, hh = 0, q = 0, fh = 0;
    if (read_units(&r, root) == 0) {
        read_sheet(&r, root, l);
        read_regions(&r, root, l, &m, &hh, &q, &fh);
        read_omit(&r, root, l);
    }
    if (d->errors == errors_before) {
        if (l->header_pt < l->min_pt || l->body_pt < l->min_pt || l->footer_pt < l->min_pt)
            fail(&r, "$.min_font_pt",
                 "the header, body and footer font sizes must be at least the minimum %g pt",
                 l->min_pt);
        else
            place_regions(&r, l, m, hh, q, fh);
        check_sheet(&r, l, cJSON_GetObjectItemCaseSensitive(root, "page") != NULL);
    }
    l->metric = r.unit == PT_PER_MM;
    if (d->errors == errors_before && cJSON_IsString(desc) &&
        !(l->description = tw_strdup(desc->valuestring)))
        fail(&r, "$.description", "out of memory");
    if (d->errors == errors_before && !(l->name = read_name(&r, root, src_name)) &&
        d->errors == errors_before)
        fail(&r, "$.name", "out of memory");
    cJSON_Delete(root);
    if (d->errors != errors_before) {
        tw_layout_free(l);
        return -1;
    }
    return 0;
}

static int ends_with(const char *s, const char *suffix)
{
    size_t n = strlen(s), k = strlen(suffix);
    return n >= k && strcmp(s + n - k, suffix) == 0;
}

int tw_layout_load(const char *name_or_path, const char *layouts_dir, tw_layout *l, tw_diags *d)
{
    memset(l, 0, sizeof *l);
    char *path;
    if (strchr(name_or_path, '/') || ends_with(name_or_path, ".json"))
        path = tw_strdup(name_or_path);
    else
        path = tw_asprintf("%s/%s.json", layouts_dir ? layouts_dir : tw_layouts_dir(),
                           name_or_path);
    if (!path) {
        tw_diag_add(d, TW_ERROR, NULL, NULL, "layout", "out of memory");
        return -1;
    }
    char err[512] = "";
    size_t len = 0;
    char *data = tw_read_file(path, &len, err, sizeof err);
    if (!data) {
        tw_source src = {path, 0, NULL};
        tw_diag_add(d, TW_ERROR, &src, NULL, "layout",
                    "%s (a layout is a file path or the name of a shipped layout in %s)", err,
                    layouts_dir ? layouts_dir : tw_layouts_dir());
        free(path);
        return -1;
    }
    int rc = tw_layout_load_mem(path, data, len, l, d);
    free(data);
    free(path);
    return rc;
}

int tw_layout_default(tw_layout *l)
{
    tw_diags d;
    tw_diags_init(&d);
    int rc = tw_layout_load_mem("4x6.json", default_json, sizeof default_json - 1, l, &d);
    tw_diags_free(&d);
    return rc;
}

int tw_layout_per_page(const tw_layout *l)
{
    int n = l->columns * l->rows;
    return n > 0 ? n : 1;
}

const char *tw_layouts_dir(void)
{
    const char *env = getenv("TAGWRIGHT_LAYOUTS");
    if (env && *env)
        return env;
    struct stat st;
    if (stat(TW_DATADIR "/layouts", &st) == 0 && S_ISDIR(st.st_mode))
        return TW_DATADIR "/layouts";
    return "layouts";
}

void tw_layout_free(tw_layout *l)
{
    if (!l)
        return;
    free(l->name);
    free(l->description);
    memset(l, 0, sizeof *l);
}

static int compare_names(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

void tw_layout_names_free(char **names, int n)
{
    for (int i = 0; names && i < n; i++)
        free(names[i]);
    free(names);
}

int tw_layout_names(const char *dir, char ***names)
{
    *names = NULL;
    DIR *dp = opendir(dir);
    if (!dp)
        return -1;
    int n = 0, cap = 0, bad = 0;
    char **list = NULL;
    for (struct dirent *e; !bad && (e = readdir(dp));) {
        if (e->d_name[0] == '.' || !ends_with(e->d_name, ".json"))
            continue;
        if (n == cap) {
            int ncap = cap ? 2 * cap : 16;
            char **grown = realloc(list, (size_t)ncap * sizeof *list);
            if (!grown) {
                bad = 1;
                break;
            }
            list = grown;
            cap = ncap;
        }
        if (!(list[n] = tw_strndup(e->d_name, strlen(e->d_name) - 5)))
            bad = 1;
        else
            n++;
    }
    closedir(dp);
    if (bad) {
        tw_layout_names_free(list, n);
        return -1;
    }
    if (n > 1)
        qsort(list, (size_t)n, sizeof *list, compare_names);
    *names = list;
    return n;
}
