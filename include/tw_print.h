/*
 * tw_print.h - the lay-out and write stages for a batch of derived labels: QR payloads with the
 * revision each label will carry, the PDF (written atomically), then the manifest.
 *
 * Drafts (label->draft) are drawn watermarked and are never recorded in the manifest: they are
 * not for posting. The PDF is written before the manifest; if the PDF cannot be written the
 * manifest is left as it was.
 */
#ifndef TW_PRINT_H
#define TW_PRINT_H

#include <stddef.h>

#include "tw_diag.h"
#include "tw_label.h"
#include "tw_layout.h"
#include "tw_site.h"

typedef struct {
    const char *out_pdf;
    const char *manifest_path;  /* NULL: tw_manifest_path_for(out_pdf) */
    const char *print_date;     /* YYYY-MM-DD, also the PDF's dates */
    const tw_layout *layout;
    const tw_site *site;
    const char *reason;         /* why new revisions were made; NULL for a plain print */
} tw_print_opts;

/* Draw and write n labels. Returns a TW_EXIT_* status; on failure err holds the message. */
int tw_print_labels(const tw_label *labels, size_t n, const tw_print_opts *o, char *err,
                    size_t errlen);

/* "DIR/NAME.manifest.json" for "DIR/NAME.pdf" (fresh string), NULL when out of memory. */
char *tw_manifest_path_for(const char *pdf_path);

#endif
