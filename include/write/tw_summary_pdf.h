/*
 * tw_summary.h - the study summary PDF for the engineer and the owner: a table of every bus
 * (ID, voltage, governing scenario, incident energy, boundary, PPE level or "none adequate",
 * signal word, review due, where energy rises), a bar chart of incident energy by bus with the
 * site's PPE ratings as lines, and for each bus with a scenario sweep a plot of incident energy
 * against source fault current with the rise marked. Vector drawing with libharu (tw_draw.h),
 * US Letter landscape, the table header repeated on every page, "page N of M" footers.
 *
 * The document's dates come from `date`, so the same input gives the same bytes. The file is
 * written atomically: on failure no file is left behind and an earlier one is intact.
 * Nothing is owned by the writer; every array has buses->count entries in bus order.
 */
#ifndef TW_SUMMARY_PDF_H
#define TW_SUMMARY_PDF_H

#include <stddef.h>

#include "rules/tw_analysis.h"
#include "rules/tw_label.h"
#include "rules/tw_scenario.h"
#include "read/tw_site.h"

typedef struct {
    const tw_bus_set *buses;
    const tw_envelope *envelopes;   /* tw_envelope_bus() of each bus */
    const tw_label *labels;         /* tw_label_derive() of each bus: what its label says */
    const tw_site *site;
    const char *results_name;       /* shown in the heading */
    const char *date;               /* YYYY-MM-DD: printed, and the PDF's dates */
} tw_summary_input;

/* Draw and write the summary to path. 0, or -1 with a message in err. */
int tw_summary_write(const tw_summary_input *in, const char *path, char *err, size_t errlen);

#endif
