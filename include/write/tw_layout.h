/*
 * tw_layout.h - label layouts: size, margins and regions, loaded from layouts/NAME.json.
 *
 * Our own schema (docs/layouts.md). All lengths are held in PDF points (1/72 in); boxes are
 * relative to the lower-left corner of one label. A sheet layout tiles the label columns x rows
 * on a larger page; a single-label layout has a 1 x 1 grid and page size = label size.
 *
 * A layout is refused when it cannot hold a label's required content: text below the legible
 * minimum, a QR box under 20 mm or with too few printer dots per module for the largest symbol
 * a label needs (TW_LAYOUT_QR_VERSION), regions that do not fit. Each refusal names the region
 * (JSON path) and by how much it falls short.
 *
 * tw_layout_free() accepts a zeroed layout.
 */
#ifndef TW_LAYOUT_H
#define TW_LAYOUT_H

#include "base/tw_diag.h"

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
    /* Added with sheets and small labels; zero in a layout built by hand means the defaults. */
    int body_columns;           /* the body text flows over this many columns (0 or 1: one) */
    int qr_side;                /* 1: QR box at the right under the header, the body to its
                                 * left; 0: QR row above the footer */
    tw_box study;               /* where the study block starts: beside the QR box, or under it
                                 * (qr_side); w = 0: it follows the body */
    unsigned omit;              /* bit (1u << tw_label_key) set: an optional field this layout
                                 * leaves out (description, location, scenario only) */
    char *description;          /* free text from the file, or NULL */
    int metric;                 /* 1 when the file gives its lengths in mm */
} tw_layout;

/* QR symbols are checked at load time for the largest version a label is expected to need:
 * version 10 (57 x 57 modules) holds 213 bytes at error correction level M in byte mode
 * (ISO/IEC 18004 capacity table; the unit test checks it against libqrencode), enough for the
 * default record link with a 64-digit hash and IDs of 40 bytes each. A longer payload is still
 * checked per label at print time and refused with its own message. */
#define TW_LAYOUT_QR_VERSION 10
#define TW_LAYOUT_QR_MODULES (17 + 4 * TW_LAYOUT_QR_VERSION)
/* Smallest module: 2 printer dots (common practice for thermal and laser printers; one dot
 * per module leaves no room for dot gain). */
#define TW_LAYOUT_QR_MIN_DOTS 2

/* The built-in 4 x 6 in single label, used when no layout is named. 0 or -1 (out of memory). */
int tw_layout_default(tw_layout *l);

/* Labels on one page: columns x rows (at least 1). Labels fill pages in order, so label k of a
 * document is on page k / tw_layout_per_page() + 1. */
int tw_layout_per_page(const tw_layout *l);

/* Load a layout by file path (contains '/' or ends in .json) or by shipped name from
 * layouts_dir. Returns 0, or -1 with findings naming the file and JSON path. */
int tw_layout_load(const char *name_or_path, const char *layouts_dir, tw_layout *l, tw_diags *d);
int tw_layout_load_mem(const char *name, const char *data, size_t len, tw_layout *l,
                       tw_diags *d);

/* The shipped layout names in dir (file names without ".json"), sorted. Returns the count and
 * sets *names (free with tw_layout_names_free), or -1 when dir cannot be read or memory runs
 * out. */
int tw_layout_names(const char *dir, char ***names);
void tw_layout_names_free(char **names, int n);

/* Where shipped layouts are: $TAGWRIGHT_LAYOUTS, else the install path, else ./layouts. */
const char *tw_layouts_dir(void);

void tw_layout_free(tw_layout *l);

#endif
