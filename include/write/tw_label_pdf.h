/*
 * tw_pdf.h - label PDFs drawn with libharu, one label per page (or N-up on a sheet layout).
 *
 * The layout is our own: a hazard-sign header in the ANSI Z535.4 manner (safety alert symbol
 * drawn as vector paths, then the signal word: DANGER white on safety red, WARNING black on
 * safety orange), the content, the QR code with a 4-module quiet zone, and a footer with the
 * cautions. Text shrinks to fit its box down to the layout's minimum size; below that the label
 * is refused with a message naming the field and region, never clipped.
 *
 * The document lives in memory until tw_label_doc_save() writes it atomically.
 * tw_label_doc_free() accepts NULL.
 */
#ifndef TW_LABEL_PDF_H
#define TW_LABEL_PDF_H

#include <stddef.h>

#include "rules/tw_label.h"
#include "write/tw_layout.h"
#include "base/tw_exit.h"
#include "write/tw_qr.h"
#include "read/tw_site.h"

typedef struct tw_label_doc tw_label_doc;

/* Start a document. creation_date "YYYY-MM-DD" is written as the PDF dates, so the same input
 * gives the same bytes. NULL with a message in err on failure. */
tw_label_doc *tw_label_doc_new(const tw_layout *layout, const tw_site *site,
                               const char *creation_date, char *err, size_t errlen);

/* The same, and on failure *status says whose it is: TW_EXIT_DATA when the site's texts do
 * not fit the layout (the cautions, the fixed texts: bad data), TW_EXIT_IO otherwise (fonts,
 * memory). */
tw_label_doc *tw_label_doc_new_status(const tw_layout *layout, const tw_site *site,
                                      const char *creation_date, int *status, char *err,
                                      size_t errlen);

/* Draw one label. Returns its 1-based page number, or -1 with a message in err (nothing of
 * the label is kept on failure only when it was alone on its page). */
int tw_label_doc_add(tw_label_doc *doc, const tw_label *label, const char *qr_payload,
                     char *err, size_t errlen);

/* The same with the QR code already encoded from qr_payload by tw_qr_encode() (for instance on
 * another thread while earlier labels are drawn). qr stays the caller's; NULL, or one that
 * failed to encode, means encode here. */
int tw_label_doc_add_encoded(tw_label_doc *doc, const tw_label *label, const char *qr_payload,
                             const tw_qr *qr, char *err, size_t errlen);

/* Number of labels added so far. */
int tw_label_doc_count(const tw_label_doc *doc);

/* Write the PDF atomically to path. 0, or -1 with a message in err. */
int tw_label_doc_save(tw_label_doc *doc, const char *path, char *err, size_t errlen);

/* Write the PDF to path as it is, not atomically: one volume of a set that the caller
 * publishes together (tw_atomic_publish) once every volume is written. Messages name target.
 * 0, or -1 with a message in err. */
int tw_label_doc_write(tw_label_doc *doc, const char *path, const char *target, char *err,
                       size_t errlen);

void tw_label_doc_free(tw_label_doc *doc);

#endif
