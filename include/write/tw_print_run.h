/*
 * tw_print.h - the lay-out and write stages for a batch of derived labels: QR payloads with the
 * revision each label will carry, the PDF (written atomically), then the registry.
 *
 * Change control comes first: a label whose hazard is lower than its current revision's
 * (tw_hazard_lowered) is refused with TW_EXIT_IO (refused on safety grounds) and nothing is
 * drawn or written, unless approved_by names who approved it (recorded with reason).
 *
 * Drafts (label->draft) are drawn watermarked and are never recorded in the registry: they are
 * not for posting. The volumes are written in full, staged under pending names journaled in
 * the registry, then recorded and renamed into place (tw_registry.h): a run killed at any
 * instant leaves the registry and the PDFs it names in agreement once the registry is next
 * opened.
 *
 * Volumes: libharu holds a whole document in memory until it is written, so a large batch is
 * split into volumes of TW_DEFAULT_VOLUME_SIZE labels (or as many as the caller asks): "NAME.pdf" becomes
 * "NAME-001.pdf", "NAME-002.pdf", ... (a batch that fits one volume keeps "NAME.pdf"). The
 * registry records each label's file, volume and page. Every volume is written to a temporary
 * file first; only when all are written are they renamed into place, in order, so a failed run
 * leaves no volume behind (a rename failing part-way, which only a failing disk does, leaves the
 * volumes before it in place). Volumes left by an earlier, larger run are not removed.
 */
#ifndef TW_PRINT_RUN_H
#define TW_PRINT_RUN_H

#include <stddef.h>

#include "base/tw_diag.h"
#include "rules/tw_label.h"
#include "write/tw_layout.h"
#include "read/tw_site.h"

typedef struct {
    const char *out_pdf;
    const char *registry_path;  /* the site's registry (tw_registry.h); required */
    const char *print_date;     /* YYYY-MM-DD, also the PDF's dates */
    const tw_layout *layout;
    const tw_site *site;
    const char *reason;         /* why new revisions were made; NULL for a plain print */
    const char *approved_by;    /* who approved a lowered hazard; NULL: such a label is refused */
    const char *const *removed; /* equipment IDs to mark removed with this run (diff --out) */
    size_t removed_count;
} tw_print_opts;

/* Labels per volume unless told otherwise: peak memory stays bounded however many labels a run
 * prints, and volumes are small enough to spread evenly over the worker processes (measured in
 * docs/performance.md). */
#define TW_DEFAULT_VOLUME_SIZE 1000
/* Largest volume: libharu 2.3.0 refuses a page tree of more than 32767 pages. */
#define TW_MAX_VOLUME_SIZE 30000
/* Most volumes in one run (three-digit numbers). */
#define TW_MAX_VOLUMES 999

/* Draw and write n labels. Returns a TW_EXIT_* status; on failure err holds the message. */
int tw_print_labels(const tw_label *labels, size_t n, const tw_print_opts *o, char *err,
                    size_t errlen);

/* The same with volume_size labels per volume (1 to TW_MAX_VOLUME_SIZE; 0 means the
 * default). TW_EXIT_USAGE when the run would need more than TW_MAX_VOLUMES volumes. */
int tw_print_labels_in_volumes(const tw_label *labels, size_t n, const tw_print_opts *o,
                               size_t volume_size, char *err, size_t errlen);

/* The same with the volumes drawn by jobs worker processes at once (0: one per processor, at
 * most 4). The output is the same bytes whatever the number; a failing worker fails the run
 * and nothing is published. */
int tw_print_labels_jobs(const tw_label *labels, size_t n, const tw_print_opts *o,
                         size_t volume_size, int jobs, char *err, size_t errlen);

/* "DIR/NAME-007.pdf" for "DIR/NAME.pdf" and volume 7 (fresh string), NULL when out of
 * memory. */
char *tw_volume_path(const char *pdf_path, size_t volume);

#endif
