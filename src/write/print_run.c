/* print_run.c - lay out and write a batch of labels, then record them (see tw_print_run.h).
 *
 * Where the time goes (docs/performance.md): encoding the QR codes (libqrencode tries all eight
 * masks on every symbol), planning and drawing each page, and libharu compressing the page
 * streams when a volume is written. So QR codes are encoded ahead on worker threads, pages are
 * drawn on this thread in label order, and each finished volume is written on a thread of its
 * own while the next one is drawn. Every document is still built by one thread, in order, so
 * the bytes do not depend on the threads. */
#include "write/tw_print_run.h"

#include <errno.h>
#include <fcntl.h>
#include <libgen.h>
#include <pthread.h>
#include <signal.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <sys/wait.h>
#include <unistd.h>
#ifdef __linux__
#include <sys/prctl.h>
#endif

#include "base/tw_atomic.h"
#include "base/tw_exit.h"
#include "write/tw_registry.h"
#include "write/tw_label_pdf.h"
#include "write/tw_qr.h"
#include "base/tw_util.h"

/* QR codes encoded ahead of the label being drawn: enough to keep the workers busy, few
 * enough to cost no memory to speak of (a few kilobytes each). */
#define QR_AHEAD 256
/* Most encoder threads; libqrencode is thread-safe as Debian builds it (with pthread). */
#define QR_MAX_THREADS 4
/* Most worker processes drawing volumes when the caller leaves it to us. */
#define MAX_JOBS 4

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

/* Up to max_threads workers (0: the drawing thread encodes each code itself, as on a single
 * processor). */
static void qr_pipe_start(qr_pipe *q, char *const *payloads, size_t n, int max_threads)
{
    memset(q, 0, sizeof *q);
    q->payloads = payloads;
    q->n = n;
    int want = max_threads > QR_MAX_THREADS ? QR_MAX_THREADS : max_threads;
    if (n < 2 * QR_AHEAD && want > 1)
        want = 1; /* a small batch is over before more threads would pay for themselves */
    if (want <= 0)
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

/* ---- volumes: drawn, then written on a thread of their own ---------------------------------- */

typedef struct {
    char *path;          /* final name */
    char *tmp;           /* written here first; NULL once staged or removed */
    char *pending;       /* named once written in full, journaled in the registry */
} volume;

/* What the workers share, in memory shared across fork() when volumes are drawn in worker
 * processes (libharu's CCITT encoder keeps its state in a process-wide global, so one process
 * draws one document at a time). Volumes are taken in order from `next`; a worker stops as
 * soon as a lower-numbered volume has failed, so the message is always the one a single worker
 * would have given (the first failing label). */
typedef struct {
    _Atomic size_t next;       /* next volume to take */
    _Atomic size_t failed_min; /* lowest failed volume; SIZE_MAX while none */
} progress;

#define VOL_PENDING 0
#define VOL_DONE 1
#define VOL_FAILED 2

typedef struct {
    progress *prog;
    int *pages;                /* page of each label within its volume */
    signed char *state;        /* VOL_* of each volume */
    unsigned char *rc;         /* TW_EXIT_* of each failed volume */
    char (*err)[512];          /* message of each failed volume */
    size_t nvols;
    int in_child;              /* a forked worker: write through /proc/self/fd */
} shared_run;

static void *shared_alloc(size_t size)
{
    void *p = mmap(NULL, size ? size : 1, PROT_READ | PROT_WRITE, MAP_SHARED | MAP_ANONYMOUS, -1,
                   0);
    return p == MAP_FAILED ? NULL : p;
}

static void shared_free(void *p, size_t size)
{
    if (p)
        munmap(p, size ? size : 1);
}

static int shared_open(shared_run *s, size_t n, size_t nvols)
{
    memset(s, 0, sizeof *s);
    s->nvols = nvols;
    s->prog = shared_alloc(sizeof *s->prog);
    s->pages = shared_alloc(n * sizeof *s->pages);
    s->state = shared_alloc(nvols);
    s->rc = shared_alloc(nvols);
    s->err = shared_alloc(nvols * sizeof *s->err);
    if (!s->prog || !s->pages || !s->state || !s->rc || !s->err)
        return -1;
    atomic_init(&s->prog->next, 0);
    atomic_init(&s->prog->failed_min, SIZE_MAX);
    return 0;
}

static void shared_close(shared_run *s, size_t n)
{
    shared_free(s->prog, sizeof *s->prog);
    shared_free(s->pages, n * sizeof *s->pages);
    shared_free(s->state, s->nvols);
    shared_free(s->rc, s->nvols);
    shared_free(s->err, s->nvols * sizeof *s->err);
}

static int lower_failed(const shared_run *s, size_t v)
{
    return atomic_load(&s->prog->failed_min) < v;
}

static void volume_failed(shared_run *s, size_t v, int rc, const char *err)
{
    snprintf(s->err[v], sizeof s->err[v], "%s", err);
    s->rc[v] = (unsigned char)rc;
    s->state[v] = VOL_FAILED;
    size_t cur = atomic_load(&s->prog->failed_min);
    while (v < cur && !atomic_compare_exchange_weak(&s->prog->failed_min, &cur, v))
        ;
}

typedef struct {
    tw_label_doc *doc;
    volume *vol;
    size_t v;
    shared_run *s;
    pthread_t thread;
    int running;         /* a thread was started and not yet joined */
} writer;

/* A forked worker writes through a descriptor opened now, so that if the parent is stopped by
 * a signal and removes the temporary file first, the worker's output goes to the removed file
 * and nothing reappears in the directory. */
/* The volume's bytes on disk now, while other volumes are still being drawn, rather than all
 * at once when they are published (tw_atomic_publish flushes again, which then costs nothing):
 * that took 10 volumes of 2 MB about 0.15 s at the end of a run. fd is the volume's descriptor
 * in a worker process, or -1 to open tmp. */
static int flush_to_disk(int fd, const char *tmp)
{
    int own = fd < 0 ? open(tmp, O_RDONLY | O_CLOEXEC) : -1;
    int rc = fd >= 0 || own >= 0 ? fsync(fd >= 0 ? fd : own) : -1;
    if (own >= 0) {
        int e = errno;
        close(own);
        errno = e;
    }
    return rc;
}

static void *write_volume(void *arg)
{
    writer *w = arg;
    char err[512], via[64];
    const char *path = w->vol->tmp;
    int fd = -1;
    if (w->s->in_child) {
        fd = open(w->vol->tmp, O_WRONLY | O_CLOEXEC);
        if (fd < 0) {
            snprintf(err, sizeof err, "%s: cannot write: %s", w->vol->path, strerror(errno));
            volume_failed(w->s, w->v, TW_EXIT_IO, err);
            goto out;
        }
        snprintf(via, sizeof via, "/proc/self/fd/%d", fd);
        if (access(via, W_OK) == 0)
            path = via;
    }
    if (tw_label_doc_write(w->doc, path, w->vol->path, err, sizeof err) != 0)
        volume_failed(w->s, w->v, TW_EXIT_IO, err);
    else if (flush_to_disk(fd, w->vol->tmp) != 0) {
        snprintf(err, sizeof err, "%s: cannot flush to disk: %s", w->vol->path, strerror(errno));
        volume_failed(w->s, w->v, TW_EXIT_IO, err);
    } else
        w->s->state[w->v] = VOL_DONE;
out:
    if (fd >= 0)
        close(fd);
    tw_label_doc_free(w->doc); /* the memory goes back while the next volume is drawn */
    w->doc = NULL;
    return NULL;
}

static void writer_join(writer *w)
{
    if (!w->running)
        return;
    pthread_join(w->thread, NULL);
    w->running = 0;
}

/* Write doc on a new thread (or here, if none can be started). Takes doc. */
static void writer_start(writer *w, tw_label_doc *doc, volume *vol, size_t v, shared_run *s)
{
    w->doc = doc;
    w->vol = vol;
    w->v = v;
    w->s = s;
    if (pthread_create(&w->thread, NULL, write_volume, w) == 0)
        w->running = 1;
    else
        write_volume(w);
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
        free(v[i].pending);
    }
    free(v);
}

typedef struct {
    char **payloads;
    int *pages;          /* page within its volume (points into the shared run) */
    int per_page;        /* labels on one page of the layout */
    size_t per_volume;
    volume *vols;
    size_t nvols;
    int jobs;            /* worker processes; 1 draws here */
} placed;

static void placed_free(placed *p, size_t n)
{
    for (size_t i = 0; p->payloads && i < n; i++)
        free(p->payloads[i]);
    free(p->payloads);
    volumes_remove(p->vols, p->nvols);
}

/* Payloads carry the revision the registry will give each label. */
static int make_payloads(const tw_label *labels, size_t n, const int *revision,
                         const tw_print_opts *o, placed *p, char *err, size_t errlen)
{
    for (size_t i = 0; i < n; i++) {
        const tw_label *l = &labels[i];
        p->payloads[i] = tw_qr_payload(o->site->record_link, l->value[TW_L_STUDY_ID],
                                       l->value[TW_L_EQUIPMENT_ID], revision[i], l->hash);
        if (!p->payloads[i]) {
            snprintf(err, errlen, "out of memory");
            return TW_EXIT_IO;
        }
    }
    return TW_EXIT_OK;
}

/* One file when everything fits one volume, else NAME-001.pdf, NAME-002.pdf, ... Every volume's
 * temporary file is made here, before any worker starts, so this process can remove them all
 * on failure or on a signal. */
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
    for (size_t v = 0; v < p->nvols; v++)
        if (!(p->vols[v].tmp = tw_atomic_tmp_path(p->vols[v].path, err, errlen)))
            return TW_EXIT_IO;
    return TW_EXIT_OK;
oom:
    snprintf(err, errlen, "out of memory");
    return TW_EXIT_IO;
}

/* Draw the labels of volume v into doc. -1 when a lower volume failed meanwhile (this one is
 * then left unfinished). */
static int draw_volume(tw_label_doc *doc, const tw_label *labels, size_t n, size_t v,
                       qr_pipe *q, placed *p, shared_run *s, char *err, size_t errlen)
{
    size_t first = v * p->per_volume, end = first + p->per_volume < n ? first + p->per_volume : n;
    for (size_t i = first; i < end; i++) {
        if (lower_failed(s, v))
            return -1;
        tw_qr own = {0};
        const tw_qr *code = qr_pipe_get(q, i - first, &own);
        s->pages[i] = tw_label_doc_add_encoded(doc, &labels[i], p->payloads[i], code, err,
                                               errlen);
        qr_pipe_done(q, i - first, &own);
        if (s->pages[i] < 0)
            return TW_EXIT_DATA;
    }
    return TW_EXIT_OK;
}

/* Take volumes in order until none is left or a lower one failed: draw each here, write it on
 * a thread while the next one is drawn. Results go to s. */
static void work_volumes(const tw_label *labels, size_t n, const tw_print_opts *o, placed *p,
                         shared_run *s, int qr_threads)
{
    writer w = {0};
    char err[512];
    for (;;) {
        size_t v = atomic_fetch_add(&s->prog->next, 1);
        if (v >= p->nvols || lower_failed(s, v))
            break;
        int status;
        tw_label_doc *doc = tw_label_doc_new_status(o->layout, o->site, o->print_date, &status,
                                                    err, sizeof err);
        if (!doc) {
            volume_failed(s, v, status, err);
            break;
        }
        size_t first = v * p->per_volume;
        size_t count = first + p->per_volume < n ? p->per_volume : n - first;
        qr_pipe q;
        qr_pipe_start(&q, p->payloads + first, count, qr_threads);
        int rc = draw_volume(doc, labels, n, v, &q, p, s, err, sizeof err);
        qr_pipe_stop(&q);
        writer_join(&w);
        if (rc != TW_EXIT_OK) {
            if (rc > 0)
                volume_failed(s, v, rc, err);
            tw_label_doc_free(doc);
            break;
        }
        writer_start(&w, doc, &p->vols[v], v, s);
    }
    writer_join(&w);
}

/* A worker process: the parent removes the temporary files on a signal and on failure, so
 * signals end a worker without cleanup of its own, and a worker whose parent is gone ends. */
static void worker_process(const tw_label *labels, size_t n, const tw_print_opts *o, placed *p,
                           shared_run *s, int qr_threads, pid_t parent)
{
    signal(SIGINT, SIG_DFL);
    signal(SIGTERM, SIG_DFL);
    signal(SIGHUP, SIG_DFL);
#ifdef __linux__
    prctl(PR_SET_PDEATHSIG, SIGKILL);
#endif
    if (getppid() != parent)
        _exit(TW_EXIT_IO);
    s->in_child = 1;
    work_volumes(labels, n, o, p, s, qr_threads);
    _exit(0);
}

/* Worker processes: as asked, else one per processor, at most MAX_JOBS; never more than there
 * are volumes. */
static int worker_count(int jobs, size_t nvols)
{
    long cpus = sysconf(_SC_NPROCESSORS_ONLN);
    int want = jobs > 0 ? jobs : cpus > MAX_JOBS ? MAX_JOBS : cpus > 1 ? (int)cpus : 1;
    return (size_t)want > nvols ? (int)nvols : want;
}

/* Start the workers. The number started (all of them, or fewer with a message in err and the
 * others told to stop). */
static int start_workers(const tw_label *labels, size_t n, const tw_print_opts *o, placed *p,
                         shared_run *s, int workers, pid_t *pids, char *err, size_t errlen)
{
    /* QR encoder threads only on processors no worker has: with a worker per processor they
     * cost more than they gave (10,000 labels on 2 processors: about 3 % more CPU time, from
     * hand-offs and context switches), so each worker then encodes its own codes. */
    long cpus = sysconf(_SC_NPROCESSORS_ONLN);
    int qr_threads = cpus > workers ? (int)((cpus - workers) / workers) : 0;
    pid_t parent = getpid();
    int started = 0;
    fflush(NULL);
    for (; started < workers; started++) {
        pid_t pid = fork();
        if (pid == 0)
            worker_process(labels, n, o, p, s, qr_threads, parent);
        if (pid < 0) {
            snprintf(err, errlen, "cannot start a worker process: %s", strerror(errno));
            atomic_store(&s->prog->failed_min, 0); /* the others stop */
            break;
        }
        pids[started] = pid;
    }
    return started;
}

/* Wait for every started worker. 0, or -1 with a message in err when one ended abnormally. */
static int wait_workers(const pid_t *pids, int started, char *err, size_t errlen)
{
    int bad = 0;
    for (int i = 0; i < started; i++) {
        int status;
        while (waitpid(pids[i], &status, 0) < 0 && errno == EINTR)
            ;
        if (!bad && !(WIFEXITED(status) && WEXITSTATUS(status) == 0)) {
            if (WIFSIGNALED(status))
                snprintf(err, errlen, "a worker process drawing the labels was ended by signal "
                         "%d", WTERMSIG(status));
            else
                snprintf(err, errlen, "a worker process drawing the labels failed");
            bad = 1;
        }
    }
    return bad ? -1 : 0;
}

/* The page of label i within its volume: labels fill the layout's pages in order. */
static int page_of(const placed *p, size_t i)
{
    return (int)(i % p->per_volume / (size_t)p->per_page) + 1;
}

/* What the registry records for each label (drafts are left out), made while the workers
 * draw. */
typedef struct {
    tw_registry_print *items;
    char **contents, **outputs;
    size_t n;
} records;

static void records_free(records *rec, size_t n)
{
    for (size_t i = 0; i < n; i++) {
        free(rec->contents ? rec->contents[i] : NULL);
        free(rec->outputs ? rec->outputs[i] : NULL);
    }
    free(rec->items);
    free(rec->contents);
    free(rec->outputs);
}

static int make_records(records *rec, const tw_label *labels, size_t n, const tw_print_opts *o,
                        const placed *p, char *const *lowered, char *err, size_t errlen)
{
    rec->items = calloc(n ? n : 1, sizeof *rec->items);
    rec->contents = calloc(n ? n : 1, sizeof *rec->contents);
    rec->outputs = calloc(n ? n : 1, sizeof *rec->outputs);
    if (!rec->items || !rec->contents || !rec->outputs)
        goto oom;
    for (size_t i = 0; i < n; i++) {
        const tw_label *l = &labels[i];
        if (l->draft)
            continue;
        size_t v = i / p->per_volume;
        char *copy = tw_strdup(p->vols[v].path);
        rec->outputs[i] = copy ? tw_strdup(basename(copy)) : NULL;
        free(copy);
        rec->contents[i] = tw_label_canonical(l);
        if (!rec->outputs[i] || !rec->contents[i])
            goto oom;
        int lowers = lowered[i] && *lowered[i];
        tw_registry_print *r = &rec->items[rec->n++];
        *r = (tw_registry_print){
            .equipment_id = l->value[TW_L_EQUIPMENT_ID],
            .hash = l->hash,
            .content = rec->contents[i],
            .payload = p->payloads[i],
            .study_id = l->value[TW_L_STUDY_ID],
            .study_date = l->value[TW_L_STUDY_DATE],
            .output = rec->outputs[i],
            .reason = o->reason,
            .approved_by = lowers ? o->approved_by : NULL,
            .lowered = lowers ? lowered[i] : NULL,
            .volume = (int)v + 1,
            .page = page_of(p, i),
        };
        tw_hazard_of_label(l, o->site, &r->hazard);
    }
    return TW_EXIT_OK;
oom:
    snprintf(err, errlen, "out of memory while preparing the registry records");
    return TW_EXIT_IO;
}

/* The outcome of the volumes once every worker is done: TW_EXIT_OK when all are written to their
 * temporary files (none published yet) on the pages the registry will be told. */
static int volumes_outcome(const placed *p, const shared_run *s, size_t n, char *err,
                           size_t errlen)
{
    for (size_t v = 0; v < p->nvols; v++) {
        if (s->state[v] == VOL_FAILED) { /* the first failure, as one worker would report it */
            snprintf(err, errlen, "%s", s->err[v]);
            return s->rc[v];
        }
        if (s->state[v] != VOL_DONE) {
            snprintf(err, errlen, "%s: not written", p->vols[v].path);
            return TW_EXIT_IO;
        }
    }
    for (size_t i = 0; i < n; i++)
        if (s->pages[i] != page_of(p, i)) {
            snprintf(err, errlen, "label %zu was drawn on page %d of its volume, not on page %d "
                     "as recorded; nothing is published", i + 1, s->pages[i], page_of(p, i));
            return TW_EXIT_IO;
        }
    return TW_EXIT_OK;
}

/* Draw and write every volume to its temporary file, and prepare what the registry records.
 * With worker processes, this process prepares the records while they draw: the page of each
 * label follows from its place in its volume, and is checked against what the workers drew
 * before anything is published. */
static int write_volumes(records *rec, const tw_label *labels, size_t n, const tw_print_opts *o,
                         placed *p, shared_run *s, char *const *lowered, char *err,
                         size_t errlen)
{
    int workers = worker_count(p->jobs, p->nvols);
    if (workers <= 1) {
        long cpus = sysconf(_SC_NPROCESSORS_ONLN);
        work_volumes(labels, n, o, p, s, cpus > QR_MAX_THREADS ? QR_MAX_THREADS : (int)cpus);
        int rc = volumes_outcome(p, s, n, err, errlen);
        return rc == TW_EXIT_OK ? make_records(rec, labels, n, o, p, lowered, err, errlen) : rc;
    }
    pid_t pids[MAX_JOBS];
    int started = start_workers(labels, n, o, p, s, workers, pids, err, errlen);
    int rc = started < workers ? TW_EXIT_IO
                               : make_records(rec, labels, n, o, p, lowered, err, errlen);
    if (rc != TW_EXIT_OK)
        atomic_store(&s->prog->failed_min, 0); /* the workers stop at their next label */
    char werr[512] = "";
    int workers_bad = wait_workers(pids, started, werr, sizeof werr) != 0;
    if (rc != TW_EXIT_OK)
        return rc; /* this process's own failure; the workers were told to stop */
    if (workers_bad) {
        snprintf(err, errlen, "%s", werr);
        return TW_EXIT_IO;
    }
    return volumes_outcome(p, s, n, err, errlen);
}

static int fsync_dir_of(const char *path)
{
    char *copy = tw_strdup(path);
    int fd = copy ? open(dirname(copy), O_RDONLY | O_DIRECTORY | O_CLOEXEC) : -1;
    free(copy);
    int rc = fd >= 0 ? fsync(fd) : -1;
    if (fd >= 0)
        close(fd);
    return rc;
}

/* Journal the run, then give every written volume its pending name (".NAME.PID.pending"
 * beside it). A kill from here on leaves files the registry knows of: the next opener removes
 * them, or publishes them once the run is recorded. */
static int stage_volumes(tw_registry *reg, placed *p, long long *run, char *err, size_t errlen)
{
    const char **pend = calloc(p->nvols, sizeof *pend), **tgt = calloc(p->nvols, sizeof *tgt);
    int rc = pend && tgt ? TW_EXIT_OK : TW_EXIT_IO;
    for (size_t v = 0; rc == TW_EXIT_OK && v < p->nvols; v++) {
        char *c1 = tw_strdup(p->vols[v].path), *c2 = tw_strdup(p->vols[v].path);
        p->vols[v].pending = c1 && c2 ? tw_asprintf("%s/.%s.%ld.pending", dirname(c1),
                                                    basename(c2), (long)getpid())
                                      : NULL;
        free(c1);
        free(c2);
        pend[v] = p->vols[v].pending;
        tgt[v] = p->vols[v].path;
        if (!pend[v])
            rc = TW_EXIT_IO;
    }
    if (rc != TW_EXIT_OK)
        snprintf(err, errlen, "out of memory");
    else
        rc = tw_registry_stage(reg, pend, tgt, p->nvols, run, err, errlen);
    free(pend);
    free(tgt);
    for (size_t v = 0; rc == TW_EXIT_OK && v < p->nvols; v++) {
        volume *vol = &p->vols[v];
        unlink(vol->pending); /* a stale one from a run that reused this process number */
        int ok = strncmp(vol->tmp, "/proc/self/fd/", 14) == 0
                     ? linkat(AT_FDCWD, vol->tmp, AT_FDCWD, vol->pending, AT_SYMLINK_FOLLOW) == 0
                     : rename(vol->tmp, vol->pending) == 0;
        if (!ok) {
            snprintf(err, errlen, "%s: cannot write: %s", vol->path, strerror(errno));
            rc = TW_EXIT_IO;
            break;
        }
        tw_atomic_forget(vol->tmp); /* closes an unnamed one */
        free(vol->tmp);
        vol->tmp = NULL;
    }
    if (rc == TW_EXIT_OK && p->nvols && fsync_dir_of(p->vols[0].path) != 0) {
        snprintf(err, errlen, "%s: cannot flush the directory: %s", p->vols[0].path,
                 strerror(errno));
        rc = TW_EXIT_IO;
    }
    return rc;
}

/* Record the run and rename every volume into place, with SIGINT, SIGTERM and SIGHUP held
 * back so that an interrupted run is recorded and published whole or not at all. (SIGKILL
 * cannot be held: the journal finishes what it interrupts, tw_registry.h.) */
static int publish_all(tw_registry *reg, long long run, const records *rec,
                       const tw_print_opts *o, char *err, size_t errlen)
{
    tw_atomic_hold_signals();
    int rc = tw_registry_record(reg, run, rec->items, rec->n, o->removed, o->removed_count,
                                o->print_date, err, errlen);
    if (rc == TW_EXIT_OK)
        rc = tw_registry_finish(reg, run, err, errlen);
    else
        tw_registry_abandon(reg, run);
    tw_atomic_release_signals();
    return rc;
}

int tw_print_labels(const tw_label *labels, size_t n, const tw_print_opts *o, char *err,
                    size_t errlen)
{
    return tw_print_labels_in_volumes(labels, n, o, 0, err, errlen);
}

int tw_print_labels_in_volumes(const tw_label *labels, size_t n, const tw_print_opts *o,
                               size_t volume_size, char *err, size_t errlen)
{
    return tw_print_labels_jobs(labels, n, o, volume_size, 0, err, errlen);
}

/* The labels that would lower the hazard without an approver: refused, with what would go
 * down, before anything is drawn. */
static int change_control(const tw_label *labels, size_t n, char *const *lowered,
                          const tw_print_opts *o, char *err, size_t errlen)
{
    size_t count = 0, used = 0;
    err[0] = '\0';
    for (size_t i = 0; i < n; i++) {
        if (!lowered[i] || !*lowered[i] || o->approved_by)
            continue;
        if (count++ == 0)
            used = (size_t)snprintf(err, errlen, "refused: ");
        if (used < errlen)
            used += (size_t)snprintf(err + used, errlen - used, "%s%s: %s", count > 1 ? "; " : "",
                                     labels[i].value[TW_L_EQUIPMENT_ID], lowered[i]);
    }
    if (!count)
        return TW_EXIT_OK;
    if (used < errlen)
        snprintf(err + used, errlen - used, ". %zu label%s would lower the hazard against the "
                 "posted revision; this needs an approval: check the study, then print again "
                 "with --approved-by NAME --reason TEXT (nothing was written)",
                 count, count == 1 ? "" : "s");
    return TW_EXIT_IO;
}

/* A refused run writes nothing: a registry that it created, and that therefore holds no
 * revision, is removed with its SQLite side files and its lock file. */
static void forget_new_registry(const char *path)
{
    static const char *const suffix[] = {"", "-wal", "-shm", "-journal", ".lock"};
    for (size_t i = 0; i < sizeof suffix / sizeof suffix[0]; i++) {
        char *f = tw_asprintf("%s%s", path, suffix[i]);
        if (f)
            unlink(f);
        free(f);
    }
}

int tw_print_labels_jobs(const tw_label *labels, size_t n, const tw_print_opts *o,
                         size_t volume_size, int jobs, char *err, size_t errlen)
{
    placed p = {calloc(n ? n : 1, sizeof(char *)), NULL, tw_layout_per_page(o->layout), 0,
                NULL, 0, jobs};
    int *revision = calloc(n ? n : 1, sizeof *revision);
    char **lowered = calloc(n ? n : 1, sizeof *lowered);
    shared_run s = {0};
    records rec = {0};
    tw_registry reg = {0};
    reg.lock_fd = -1;
    long long run = 0;
    int rc = TW_EXIT_IO, registry_is_new = 0;
    if (!p.payloads || !revision || !lowered) {
        snprintf(err, errlen, "out of memory");
        goto done;
    }
    if (n == 0) {
        snprintf(err, errlen, "%s: not written: no labels", o->out_pdf);
        goto done;
    }
    if (!o->registry_path) {
        snprintf(err, errlen, "no registry named; expected the site's registry (site.json "
                 "\"registry\", or --manifest PATH)");
        rc = TW_EXIT_USAGE;
        goto done;
    }
    registry_is_new = access(o->registry_path, F_OK) != 0;
    rc = tw_registry_open(&reg, o->registry_path, 1, err, errlen);
    if (rc == TW_EXIT_OK)
        rc = tw_registry_plan(&reg, labels, n, o->site, revision, lowered, err, errlen);
    if (rc == TW_EXIT_OK)
        rc = change_control(labels, n, lowered, o, err, errlen);
    if (rc == TW_EXIT_OK)
        rc = plan_volumes(n, o, volume_size, &p, err, errlen);
    if (rc == TW_EXIT_OK && shared_open(&s, n, p.nvols) != 0) {
        snprintf(err, errlen, "out of memory");
        rc = TW_EXIT_IO;
    }
    p.pages = s.pages;
    if (rc == TW_EXIT_OK)
        rc = make_payloads(labels, n, revision, o, &p, err, errlen);
    if (rc == TW_EXIT_OK)
        rc = write_volumes(&rec, labels, n, o, &p, &s, lowered, err, errlen);
    if (rc == TW_EXIT_OK && (rc = stage_volumes(&reg, &p, &run, err, errlen)) != TW_EXIT_OK &&
        run)
        tw_registry_abandon(&reg, run);
    if (rc == TW_EXIT_OK)
        rc = publish_all(&reg, run, &rec, o, err, errlen);
done:
    tw_registry_close(&reg);
    if (rc != TW_EXIT_OK && registry_is_new)
        forget_new_registry(o->registry_path);
    records_free(&rec, n);
    for (size_t i = 0; lowered && i < n; i++)
        free(lowered[i]);
    free(lowered);
    free(revision);
    placed_free(&p, n);
    shared_close(&s, n);
    return rc;
}
