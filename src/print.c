/* print.c - lay out and write a batch of labels, then record them (see tw_print.h).
 *
 * Where the time goes (docs/performance.md): encoding the QR codes (libqrencode tries all eight
 * masks on every symbol), planning and drawing each page, and libharu compressing the page
 * streams when a volume is written. So QR codes are encoded ahead on worker threads, pages are
 * drawn on this thread in label order, and each finished volume is written on a thread of its
 * own while the next one is drawn. Every document is still built by one thread, in order, so
 * the bytes do not depend on the threads. */
#include "tw_print.h"

#include <libgen.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "tw_atomic.h"
#include "tw_cli.h"
#include "tw_manifest.h"
#include "tw_pdf.h"
#include "tw_qr.h"
#include "tw_util.h"

/* QR codes encoded ahead of the label being drawn: enough to keep the workers busy, few
 * enough to cost no memory to speak of (a few kilobytes each). */
#define QR_AHEAD 256
/* Most encoder threads; libqrencode is thread-safe as Debian builds it (with pthread). */
#define QR_MAX_THREADS 4

char *tw_manifest_path_for(const char *pdf_path)
{
    size_t n = strlen(pdf_path);
    if (n > 4 && tw_strcaseeq(pdf_path + n - 4, ".pdf"))
        n -= 4;
    return tw_asprintf("%.*s.manifest.json", (int)n, pdf_path);
}

char *tw_volume_path(const char *pdf_path, size_t volume)
{
    size_t n = strlen(pdf_path);
    int has_ext = n > 4 && tw_strcaseeq(pdf_path + n - 4, ".pdf");
    size_t stem = has_ext ? n - 4 : n;
    return tw_asprintf("%.*s-%03zu%s", (int)stem, pdf_path, volume, has_ext ? pdf_path + stem : "");
}

/* ---- QR codes encoded ahead on worker threads ---------------------------------------------- */

typedef struct {
    char *const *payloads;
    size_t n;
    tw_qr slot[QR_AHEAD];
    signed char state[QR_AHEAD]; /* 0 not yet, 1 encoded, -1 could not be encoded */
    size_t next;                 /* next label a worker takes */
    size_t drawn;                /* labels the drawing thread is done with */
    int stop;
    pthread_mutex_t mu;
    pthread_cond_t ready, room;
    pthread_t threads[QR_MAX_THREADS];
    int nthreads;
} qr_pipe;

static void *qr_worker(void *arg)
{
    qr_pipe *q = arg;
    pthread_mutex_lock(&q->mu);
    for (;;) {
        while (!q->stop && q->next < q->n && q->next >= q->drawn + QR_AHEAD)
            pthread_cond_wait(&q->room, &q->mu);
        if (q->stop || q->next >= q->n)
            break;
        size_t i = q->next++;
        pthread_mutex_unlock(&q->mu);
        tw_qr code;
        int ok = tw_qr_encode(q->payloads[i], &code) == 0;
        pthread_mutex_lock(&q->mu);
        q->slot[i % QR_AHEAD] = code;
        q->state[i % QR_AHEAD] = ok ? 1 : -1;
        pthread_cond_broadcast(&q->ready);
    }
    pthread_mutex_unlock(&q->mu);
    return NULL;
}

/* Workers for every processor but at most QR_MAX_THREADS; none on a single processor, where
 * the drawing thread encodes each code itself. */
static void qr_pipe_start(qr_pipe *q, char *const *payloads, size_t n)
{
    memset(q, 0, sizeof *q);
    q->payloads = payloads;
    q->n = n;
    long cpus = sysconf(_SC_NPROCESSORS_ONLN);
    int want = cpus > QR_MAX_THREADS ? QR_MAX_THREADS : cpus > 1 ? (int)cpus : 0;
    if (n < 2 * QR_AHEAD && want > 1)
        want = 1; /* a small batch is over before more threads would pay for themselves */
    if (want == 0)
        return;
    if (pthread_mutex_init(&q->mu, NULL) != 0)
        return;
    if (pthread_cond_init(&q->ready, NULL) != 0) {
        pthread_mutex_destroy(&q->mu);
        return;
    }
    if (pthread_cond_init(&q->room, NULL) != 0) {
        pthread_cond_destroy(&q->ready);
        pthread_mutex_destroy(&q->mu);
        return;
    }
    for (int t = 0; t < want; t++)
        if (pthread_create(&q->threads[q->nthreads], NULL, qr_worker, q) == 0)
            q->nthreads++;
    if (q->nthreads == 0) { /* no threads to be had: encode on the drawing thread */
        pthread_cond_destroy(&q->room);
        pthread_cond_destroy(&q->ready);
        pthread_mutex_destroy(&q->mu);
    }
}

/* The code for label i (labels are taken in order). NULL when it could not be encoded: the
 * caller then encodes it itself, which gives the message. */
static const tw_qr *qr_pipe_get(qr_pipe *q, size_t i, tw_qr *own)
{
    if (q->nthreads == 0)
        return tw_qr_encode(q->payloads[i], own) == 0 ? own : NULL;
    pthread_mutex_lock(&q->mu);
    while (q->state[i % QR_AHEAD] == 0)
        pthread_cond_wait(&q->ready, &q->mu);
    int ok = q->state[i % QR_AHEAD] == 1;
    pthread_mutex_unlock(&q->mu);
    return ok ? &q->slot[i % QR_AHEAD] : NULL;
}

/* Label i is drawn: free its code and let the workers move on. */
static void qr_pipe_done(qr_pipe *q, size_t i, tw_qr *own)
{
    if (q->nthreads == 0) {
        tw_qr_free(own);
        return;
    }
    pthread_mutex_lock(&q->mu);
    tw_qr_free(&q->slot[i % QR_AHEAD]);
    q->state[i % QR_AHEAD] = 0;
    q->drawn = i + 1;
    pthread_cond_broadcast(&q->room);
    pthread_mutex_unlock(&q->mu);
}

static void qr_pipe_stop(qr_pipe *q)
{
    if (q->nthreads == 0)
        return;
    pthread_mutex_lock(&q->mu);
    q->stop = 1;
    pthread_cond_broadcast(&q->room);
    pthread_mutex_unlock(&q->mu);
    for (int t = 0; t < q->nthreads; t++)
        pthread_join(q->threads[t], NULL);
    for (size_t i = 0; i < QR_AHEAD; i++)
        tw_qr_free(&q->slot[i]);
    pthread_cond_destroy(&q->room);
    pthread_cond_destroy(&q->ready);
    pthread_mutex_destroy(&q->mu);
    q->nthreads = 0;
}

/* ---- volumes: drawn here, written on a thread of their own --------------------------------- */

typedef struct {
    char *path;          /* final name */
    char *tmp;           /* written here first; NULL once published or removed */
} volume;

typedef struct {
    tw_label_doc *doc;
    volume *vol;
    pthread_t thread;
    int running;         /* a thread was started and not yet joined */
    int rc;
    char err[512];
} writer;

static void *write_volume(void *arg)
{
    writer *w = arg;
    w->rc = tw_label_doc_write(w->doc, w->vol->tmp, w->vol->path, w->err, sizeof w->err);
    tw_label_doc_free(w->doc); /* the memory goes back while the next volume is drawn */
    w->doc = NULL;
    return NULL;
}

/* Wait for the volume being written, if any. 0, or -1 with its message in err. */
static int writer_join(writer *w, char *err, size_t errlen)
{
    if (!w->running)
        return 0;
    pthread_join(w->thread, NULL);
    w->running = 0;
    if (w->rc != 0) {
        snprintf(err, errlen, "%s", w->err);
        return -1;
    }
    return 0;
}

/* Write doc on a new thread (or here, if none can be started). Takes doc. */
static int writer_start(writer *w, tw_label_doc *doc, volume *vol, char *err, size_t errlen)
{
    w->doc = doc;
    w->vol = vol;
    w->rc = 0;
    if (pthread_create(&w->thread, NULL, write_volume, w) == 0) {
        w->running = 1;
        return 0;
    }
    write_volume(w);
    if (w->rc != 0)
        snprintf(err, errlen, "%s", w->err);
    return w->rc;
}

static void volumes_remove(volume *v, size_t n)
{
    for (size_t i = 0; v && i < n; i++) {
        if (v[i].tmp) {
            unlink(v[i].tmp);
            tw_atomic_forget(v[i].tmp);
        }
        free(v[i].tmp);
        free(v[i].path);
    }
    free(v);
}

typedef struct {
    char **payloads;
    int *pages;          /* page within its volume */
    size_t per_volume;
    volume *vols;
    size_t nvols;
} placed;

static void placed_free(placed *p, size_t n)
{
    for (size_t i = 0; p->payloads && i < n; i++)
        free(p->payloads[i]);
    free(p->payloads);
    free(p->pages);
    volumes_remove(p->vols, p->nvols);
}

/* Payloads carry the revision the manifest will give each label. */
static int make_payloads(const tw_label *labels, size_t n, const tw_manifest *m,
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
    }
    return TW_EXIT_OK;
}

/* One file when everything fits one volume, else NAME-001.pdf, NAME-002.pdf, ... */
static int plan_volumes(size_t n, const tw_print_opts *o, size_t size, placed *p, char *err,
                        size_t errlen)
{
    if (size > TW_MAX_VOLUME_SIZE) {
        snprintf(err, errlen, "volume size %zu: expected at most %d labels per volume", size,
                 TW_MAX_VOLUME_SIZE);
        return TW_EXIT_USAGE;
    }
    p->per_volume = size ? size : TW_DEFAULT_VOLUME_SIZE;
    p->nvols = (n + p->per_volume - 1) / p->per_volume;
    if (p->nvols > TW_MAX_VOLUMES) {
        snprintf(err, errlen, "%zu labels at %zu per volume would make %zu volumes; at most %d "
                 "are written in one run (raise --volume-size)", n, p->per_volume, p->nvols,
                 TW_MAX_VOLUMES);
        return TW_EXIT_USAGE;
    }
    p->vols = calloc(p->nvols ? p->nvols : 1, sizeof *p->vols);
    if (!p->vols)
        goto oom;
    for (size_t v = 0; v < p->nvols; v++) {
        p->vols[v].path = p->nvols == 1 ? tw_strdup(o->out_pdf) : tw_volume_path(o->out_pdf, v + 1);
        if (!p->vols[v].path)
            goto oom;
    }
    return TW_EXIT_OK;
oom:
    snprintf(err, errlen, "out of memory");
    return TW_EXIT_IO;
}

/* Draw the labels of volume v into doc. */
static int draw_volume(tw_label_doc *doc, const tw_label *labels, size_t n, size_t v,
                       qr_pipe *q, placed *p, char *err, size_t errlen)
{
    size_t first = v * p->per_volume, end = first + p->per_volume < n ? first + p->per_volume : n;
    for (size_t i = first; i < end; i++) {
        tw_qr own = {0};
        const tw_qr *code = qr_pipe_get(q, i, &own);
        p->pages[i] = tw_label_doc_add_encoded(doc, &labels[i], p->payloads[i], code, err,
                                               errlen);
        qr_pipe_done(q, i, &own);
        if (p->pages[i] < 0)
            return TW_EXIT_DATA;
    }
    return TW_EXIT_OK;
}

/* Every volume written to its temporary file; none published yet. */
static int write_volumes(const tw_label *labels, size_t n, const tw_print_opts *o, placed *p,
                         char *err, size_t errlen)
{
    qr_pipe q;
    writer w = {0};
    int rc = TW_EXIT_OK;
    qr_pipe_start(&q, p->payloads, n);
    for (size_t v = 0; v < p->nvols && rc == TW_EXIT_OK; v++) {
        tw_label_doc *doc = tw_label_doc_new(o->layout, o->site, o->print_date, err, errlen);
        if (!doc) {
            rc = TW_EXIT_IO;
            break;
        }
        rc = draw_volume(doc, labels, n, v, &q, p, err, errlen);
        if (rc == TW_EXIT_OK && !(p->vols[v].tmp = tw_atomic_tmp_path(p->vols[v].path, err,
                                                                        errlen)))
            rc = TW_EXIT_IO;
        if (rc == TW_EXIT_OK && writer_join(&w, err, errlen) != 0)
            rc = TW_EXIT_IO;
        if (rc != TW_EXIT_OK) {
            tw_label_doc_free(doc);
            break;
        }
        if (writer_start(&w, doc, &p->vols[v], err, errlen) != 0)
            rc = TW_EXIT_IO;
    }
    qr_pipe_stop(&q);
    char later[512];
    if (writer_join(&w, later, sizeof later) != 0 && rc == TW_EXIT_OK) {
        snprintf(err, errlen, "%s", later);
        rc = TW_EXIT_IO;
    }
    return rc;
}

/* Rename every volume into place, in order, once all are written. */
static int publish_volumes(placed *p, char *err, size_t errlen)
{
    for (size_t v = 0; v < p->nvols; v++) {
        int rc = tw_atomic_publish(p->vols[v].tmp, p->vols[v].path, err, errlen);
        free(p->vols[v].tmp); /* published, or removed by tw_atomic_publish */
        p->vols[v].tmp = NULL;
        if (rc != 0)
            return TW_EXIT_IO;
    }
    return TW_EXIT_OK;
}

static int record_all(tw_manifest *m, const tw_label *labels, size_t n, const tw_print_opts *o,
                      const placed *p, char *err, size_t errlen)
{
    for (size_t i = 0; i < n; i++) {
        if (labels[i].draft)
            continue;
        size_t v = i / p->per_volume;
        char *copy = tw_strdup(p->vols[v].path);
        char *content = tw_label_canonical(&labels[i]);
        tw_manifest_print rec = {
            .equipment_id = labels[i].value[TW_L_EQUIPMENT_ID],
            .hash = labels[i].hash,
            .content = content,
            .study_id = labels[i].value[TW_L_STUDY_ID],
            .printed = o->print_date,
            .output = copy ? basename(copy) : NULL,
            .payload = p->payloads[i],
            .reason = o->reason,
            .volume = (int)v + 1,
            .page = p->pages[i],
        };
        int rev = content && copy ? tw_manifest_record(m, &rec) : -1;
        free(content);
        free(copy);
        if (rev < 0) {
            snprintf(err, errlen, "out of memory while recording the manifest");
            return TW_EXIT_IO;
        }
    }
    return tw_manifest_save(m, err, errlen) == 0 ? TW_EXIT_OK : TW_EXIT_IO;
}

int tw_print_labels(const tw_label *labels, size_t n, const tw_print_opts *o, char *err,
                    size_t errlen)
{
    return tw_print_labels_in_volumes(labels, n, o, 0, err, errlen);
}

int tw_print_labels_in_volumes(const tw_label *labels, size_t n, const tw_print_opts *o,
                               size_t volume_size, char *err, size_t errlen)
{
    char *mpath = o->manifest_path ? tw_strdup(o->manifest_path) : tw_manifest_path_for(o->out_pdf);
    placed p = {calloc(n ? n : 1, sizeof(char *)), calloc(n ? n : 1, sizeof(int)), 0, NULL, 0};
    tw_manifest m;
    tw_diags md;
    tw_diags_init(&md);
    int rc = TW_EXIT_IO;
    if (!mpath || !p.payloads || !p.pages) {
        snprintf(err, errlen, "out of memory");
        goto done_nomanifest;
    }
    if (n == 0) {
        snprintf(err, errlen, "%s: not written: no labels", o->out_pdf);
        goto done_nomanifest;
    }
    if (tw_manifest_open(mpath, &m, &md) != 0) {
        snprintf(err, errlen, "%s", md.count && md.items[0].message ? md.items[0].message
                                                                   : "cannot open the manifest");
        if (md.count && md.items[0].path)
            snprintf(err, errlen, "%s:%s: %s", mpath, md.items[0].path, md.items[0].message);
        rc = TW_EXIT_DATA;
        goto done_nomanifest;
    }
    rc = plan_volumes(n, o, volume_size, &p, err, errlen);
    if (rc == TW_EXIT_OK)
        rc = make_payloads(labels, n, &m, o, &p, err, errlen);
    if (rc == TW_EXIT_OK)
        rc = write_volumes(labels, n, o, &p, err, errlen);
    if (rc == TW_EXIT_OK)
        rc = publish_volumes(&p, err, errlen);
    if (rc == TW_EXIT_OK)
        rc = record_all(&m, labels, n, o, &p, err, errlen);
    tw_manifest_close(&m);
done_nomanifest:
    placed_free(&p, n);
    free(mpath);
    tw_diags_free(&md);
    return rc;
}
