/* print.c - lay out and write a batch of labels, then record them (see tw_print.h). */
#include "tw_print.h"

#include <libgen.h>
#include <stdlib.h>
#include <string.h>

#include "tw_cli.h"
#include "tw_manifest.h"
#include "tw_pdf.h"
#include "tw_qr.h"
#include "tw_util.h"

char *tw_manifest_path_for(const char *pdf_path)
{
    size_t n = strlen(pdf_path);
    if (n > 4 && tw_strcaseeq(pdf_path + n - 4, ".pdf"))
        n -= 4;
    return tw_asprintf("%.*s.manifest.json", (int)n, pdf_path);
}

typedef struct {
    char **payloads;
    int *pages;
} placed;

static void placed_free(placed *p, size_t n)
{
    for (size_t i = 0; p->payloads && i < n; i++)
        free(p->payloads[i]);
    free(p->payloads);
    free(p->pages);
}

/* Draw every label; payloads carry the revision the manifest will give each one. */
static int draw_all(tw_label_doc *doc, const tw_label *labels, size_t n, const tw_manifest *m,
                    const tw_print_opts *o, placed *p, char *err, size_t errlen)
{
    for (size_t i = 0; i < n; i++) {
        const tw_label *l = &labels[i];
        const char *id = l->value[TW_L_EQUIPMENT_ID];
        int rev = tw_manifest_next_revision(m, id, l->hash);
        p->payloads[i] = tw_qr_payload(o->site->record_link, l->value[TW_L_STUDY_ID], id, rev,
                                       l->hash);
        if (!p->payloads[i]) {
            snprintf(err, errlen, "out of memory");
            return TW_EXIT_IO;
        }
        p->pages[i] = tw_label_doc_add(doc, l, p->payloads[i], err, errlen);
        if (p->pages[i] < 0)
            return TW_EXIT_DATA;
    }
    return TW_EXIT_OK;
}

static int record_all(tw_manifest *m, const tw_label *labels, size_t n, const tw_print_opts *o,
                      const placed *p, tw_atomic *out, char *err, size_t errlen)
{
    char *copy = tw_strdup(o->out_pdf);
    if (!copy) {
        snprintf(err, errlen, "out of memory");
        return TW_EXIT_IO;
    }
    const char *output = basename(copy);
    for (size_t i = 0; i < n; i++) {
        if (labels[i].draft)
            continue;
        char *content = tw_label_canonical(&labels[i]);
        tw_manifest_print rec = {
            .equipment_id = labels[i].value[TW_L_EQUIPMENT_ID],
            .hash = labels[i].hash,
            .content = content,
            .study_id = labels[i].value[TW_L_STUDY_ID],
            .printed = o->print_date,
            .output = output,
            .payload = p->payloads[i],
            .reason = o->reason,
            .volume = 1,
            .page = p->pages[i],
        };
        int rev = content ? tw_manifest_record(m, &rec) : -1;
        free(content);
        if (rev < 0) {
            free(copy);
            snprintf(err, errlen, "out of memory while recording the manifest");
            return TW_EXIT_IO;
        }
    }
    free(copy);
    return tw_manifest_write(m, out, err, errlen) == 0 ? TW_EXIT_OK : TW_EXIT_IO;
}

int tw_print_labels(const tw_label *labels, size_t n, const tw_print_opts *o, char *err,
                    size_t errlen)
{
    char *mpath = o->manifest_path ? tw_strdup(o->manifest_path) : tw_manifest_path_for(o->out_pdf);
    placed p = {calloc(n ? n : 1, sizeof(char *)), calloc(n ? n : 1, sizeof(int))};
    tw_manifest m;
    tw_diags md;
    tw_diags_init(&md);
    int rc = TW_EXIT_IO;
    tw_label_doc *doc = NULL;
    tw_atomic pdf_out, manifest_out;
    memset(&pdf_out, 0, sizeof pdf_out);
    memset(&manifest_out, 0, sizeof manifest_out);
    if (!mpath || !p.payloads || !p.pages) {
        snprintf(err, errlen, "out of memory");
        goto done_nomanifest;
    }
    if (tw_manifest_open(mpath, &m, &md) != 0) {
        const tw_diag *g = md.count ? &md.items[0] : NULL;
        const char *msg = g && g->message ? g->message : "cannot open the manifest";
        if (g && g->path) /* name the field too: "labels[0]: equipment_id: ..." */
            snprintf(err, errlen, "%s:%s: %s%s%s", mpath, g->path, g->field ? g->field : "",
                     g->field ? ": " : "", msg);
        else
            snprintf(err, errlen, "%s", msg);
        /* a finding at a JSON path is about the content; without one the file could not be
         * locked or read */
        rc = g && g->path ? TW_EXIT_DATA : TW_EXIT_IO;
        goto done_nomanifest;
    }
    doc = tw_label_doc_new(o->layout, o->site, o->print_date, err, errlen);
    if (!doc)
        goto done;
    /* Both outputs are written in full first, then both renamed at once: a run that fails or
     * is killed leaves the earlier PDF and manifest as they were, never one without the other
     * (the PDF is renamed first, so a SIGKILL between the two renames, microseconds apart,
     * leaves at worst a manifest that lags behind and is brought up to date by printing
     * again). */
    rc = draw_all(doc, labels, n, &m, o, &p, err, errlen);
    if (rc == TW_EXIT_OK)
        rc = tw_label_doc_write(doc, o->out_pdf, &pdf_out, err, errlen) == 0 ? TW_EXIT_OK
                                                                            : TW_EXIT_IO;
    if (rc == TW_EXIT_OK)
        rc = record_all(&m, labels, n, o, &p, &manifest_out, err, errlen);
    if (rc == TW_EXIT_OK) {
        tw_atomic *const both[] = {&pdf_out, &manifest_out};
        rc = tw_atomic_commit_all(both, 2, err, errlen) == 0 ? TW_EXIT_OK : TW_EXIT_IO;
    }
done:
    tw_atomic_abort(&pdf_out);
    tw_atomic_abort(&manifest_out);
    tw_label_doc_free(doc);
    tw_manifest_close(&m);
done_nomanifest:
    placed_free(&p, n);
    free(mpath);
    tw_diags_free(&md);
    return rc;
}
