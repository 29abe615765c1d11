/*
 * tw_layout.h - label layouts: size, margins and regions, loaded from layouts/NAME.json.
 *
 * Our own schema (docs/layouts.md). All lengths are held in PDF points (1/72 in); boxes are
 * relative to the lower-left corner of one label. A sheet layout tiles the label columns x rows
 * on a larger page; a single-label layout has a 1 x 1 grid and page size = label size.
 *
 * tw_layout_free() accepts a zeroed layout.
 */
#ifndef TW_LAYOUT_H
#define TW_LAYOUT_H

#include "tw_diag.h"

typedef struct {
    double x, y, w, h;
} tw_box;

typedef struct {
    char *name;
    double label_w, label_h;    /* one label */
    double page_w, page_h;      /* the sheet it is printed on */
    int columns, rows;          /* labels per page */
    double gutter_x, gutter_y;  /* space between labels on a sheet */
    double sheet_margin_x, sheet_margin_y; /* offset of the first label from the page's corner */
    int cut_marks;
    tw_box header, body, qr, footer;
    double header_pt, body_pt, footer_pt; /* starting font sizes */
    double min_pt;              /* smallest size text may shrink to */
    double printer_dpi;         /* resolution of the printer this layout is meant for */
} tw_layout;

/* The built-in 4 x 6 in single label, used when no layout is named. 0 or -1 (out of memory). */
int tw_layout_default(tw_layout *l);

/* Load a layout by file path (contains '/' or ends in .json) or by shipped name from
 * layouts_dir. Returns 0, or -1 with findings naming the file and JSON path. */
int tw_layout_load(const char *name_or_path, const char *layouts_dir, tw_layout *l, tw_diags *d);
int tw_layout_load_mem(const char *name, const char *data, size_t len, tw_layout *l,
                       tw_diags *d);

/* Where shipped layouts are: $TAGWRIGHT_LAYOUTS, else the install path, else ./layouts. */
const char *tw_layouts_dir(void);

void tw_layout_free(tw_layout *l);

#endif
