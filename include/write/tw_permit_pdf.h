/*
 * tw_permit.h - energized electrical work permit drafts (PDF), one job per document.
 *
 * The permit follows the nine elements of NFPA 70E-2024 130.2(B)(2) (numbering from memory;
 * verify against the edition in force). Study values are taken from the derived label
 * (tw_label_derive), never re-derived, so the permit and the posted label say the same thing;
 * only the limited approach boundary for an exposed movable conductor, which the label does not
 * carry, is looked up in the same NFPA 70E Table 130.4(E)(a) row for the same nominal voltage.
 * Job fields that were not given are printed as visible blanks, never left out.
 *
 * Every page carries "DRAFT - NOT VALID UNTIL SIGNED", the work order, the equipment ID,
 * "Page x of y" and the QR code of the equipment's study record (the posted label's payload).
 * When no PPE level the site stocks is adequate, the first section says so in bold and that
 * energized work should not be performed; the permit is still drawn.
 *
 * The whole permit is laid out before anything is drawn (so the page count is known) and text
 * is wrapped to its column; pages break between lines. Written atomically: on failure no file
 * is left behind. Nothing here prints or exits.
 */
#ifndef TW_PERMIT_PDF_H
#define TW_PERMIT_PDF_H

#include <stddef.h>

#include "read/tw_job.h"
#include "rules/tw_label.h"
#include "rules/tw_scenario.h"
#include "read/tw_site.h"

typedef enum { TW_PAPER_LETTER, TW_PAPER_A4 } tw_paper;

typedef struct {
    const tw_job *job;
    const tw_label *label;      /* derived for job->equipment_id, without errors */
    const tw_bus *bus;          /* the same equipment: nominal voltage and scenario count */
    const tw_site *site;
    const char *qr_payload;     /* the posted label's payload (tw_qr_payload) */
    int revision;               /* the label revision the payload names */
    const char *date;           /* drafting date YYYY-MM-DD; also the PDF's dates */
    tw_paper paper;
} tw_permit;

/* 1 when the label says that no PPE level the site stocks is adequate. */
int tw_permit_no_ppe_adequate(const tw_label *l);

/* Lay out and write the permit to path atomically. Returns the number of pages, or -1 with a
 * message in err (nothing written). */
int tw_permit_write(const tw_permit *p, const char *path, char *err, size_t errlen);

/* The same into tmp, a temporary file for path from tw_atomic_tmp_path(), which the caller
 * publishes (tw_atomic_publish) or removes: a batch publishes its permits only when every one
 * of them is written. path names the output in messages. */
int tw_permit_write_tmp(const tw_permit *p, const char *tmp, const char *path, char *err,
                        size_t errlen);

/* The file name for a job's permit: "permit-WORKORDER.pdf" with every character other than
 * ASCII letters, digits, '-', '_' and '.' replaced by '_' (no leading dot, no "..", so the
 * name stays inside its directory), or "permit-job-N.pdf" (N = index + 1) when the work order
 * is not given or nothing of it is left. Fresh string, NULL when out of memory. */
char *tw_permit_file_name(const char *work_order, size_t index);

#endif
