/* atomic.c - outputs written whole or not at all (see tw_atomic.h). */
#define _GNU_SOURCE /* O_TMPFILE */
#include "base/tw_atomic.h"

#include <errno.h>
#include <fcntl.h>
#include <libgen.h>
#include <signal.h>
#include <stdlib.h>
#include <stdint.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "base/tw_util.h"

/* Temporary files to remove if a signal ends the run: every volume of a print run (at most
 * 999) is one until the set is published. */
#define TW_MAX_PENDING 1024
static char *pending[TW_MAX_PENDING];
static int handlers_installed;

static void on_signal(int sig)
{
    for (int i = 0; i < TW_MAX_PENDING; i++)
        if (pending[i])
            unlink(pending[i]); /* async-signal-safe */
    signal(sig, SIG_DFL);
    raise(sig);
}

/* A signal the process was started with ignored (nohup, a background job) stays ignored. */
static void handle(int sig)
{
    struct sigaction old;
    if (sigaction(sig, NULL, &old) == 0 && old.sa_handler == SIG_IGN)
        return;
    signal(sig, on_signal);
}

static void install_handlers(void)
{
    if (handlers_installed)
        return;
    handlers_installed = 1;
    handle(SIGINT);
    handle(SIGTERM);
    handle(SIGHUP);
}

static void remember(char *tmp)
{
    install_handlers();
    for (int i = 0; i < TW_MAX_PENDING; i++)
        if (!pending[i]) {
            pending[i] = tmp;
            return;
        }
}

static int take_owned(const char *tmp);

void tw_atomic_forget(const char *tmp)
{
    int ufd = take_owned(tmp);
    if (ufd >= 0) {
        close(ufd); /* an unnamed file disappears with its last descriptor */
        return;
    }
    for (int i = 0; i < TW_MAX_PENDING; i++)
        if (pending[i] == tmp || (pending[i] && tmp && strcmp(pending[i], tmp) == 0))
            pending[i] = NULL;
}

/* realpath() of the directory of path, "/", and its base name: the same string for two names
 * of one file that may not exist yet. NULL when the directory does not resolve. */
static char *resolve_parent(const char *path)
{
    char *c1 = tw_strdup(path), *c2 = tw_strdup(path), *dir = NULL, *out = NULL;
    if (c1 && c2 && (dir = realpath(dirname(c1), NULL)) != NULL)
        out = tw_asprintf("%s/%s", dir, basename(c2));
    free(dir);
    free(c1);
    free(c2);
    return out;
}

/* An output that does not exist yet: its directory must exist and be writable, and it must not
 * be another output or input named differently (e.g. --manifest naming the PDF). */
static int new_output_ok(const char *path, const char *const *inputs, char *err, size_t errlen)
{
    char *copy = tw_strdup(path);
    if (!copy) {
        snprintf(err, errlen, "%s: out of memory", path);
        return -1;
    }
    const char *dir = dirname(copy);
    struct stat ds;
    int rc = 0;
    if (stat(dir, &ds) != 0 || !S_ISDIR(ds.st_mode)) {
        snprintf(err, errlen, "%s: the directory %s does not exist; expected an existing directory",
                 path, dir);
        rc = -1;
    } else if (access(dir, W_OK) != 0) {
        snprintf(err, errlen, "%s: cannot write in the directory %s: %s", path, dir,
                 strerror(errno));
        rc = -1;
    }
    free(copy);
    char *me = rc == 0 ? resolve_parent(path) : NULL;
    for (size_t i = 0; me && inputs && inputs[i]; i++) {
        char *other = resolve_parent(inputs[i]);
        if (other && strcmp(me, other) == 0) {
            snprintf(err, errlen, "%s: is also given as %s; expected different files", path,
                     inputs[i]);
            rc = -1;
        }
        free(other);
    }
    free(me);
    return rc;
}

/* An existing target that is not a regular file is never replaced: renaming over a symbolic
 * link would drop the link (and whatever it pointed at would not get the output), and renaming
 * over a FIFO or a device node - /dev/null, run as root - would replace the node itself. */
int tw_output_replaceable(const char *target, char *err, size_t errlen)
{
    struct stat st;
    if (lstat(target, &st) != 0)
        return 0; /* nothing there yet; a missing directory is reported when it is used */
    const char *what = S_ISLNK(st.st_mode)    ? "a symbolic link"
                       : S_ISFIFO(st.st_mode) ? "a FIFO (named pipe)"
                       : S_ISCHR(st.st_mode)  ? "a character device"
                       : S_ISBLK(st.st_mode)  ? "a block device"
                       : S_ISSOCK(st.st_mode) ? "a socket"
                       : S_ISDIR(st.st_mode)  ? "a directory"
                       : S_ISREG(st.st_mode)  ? NULL
                                              : "not a regular file";
    if (!what)
        return 0;
    snprintf(err, errlen, "%s: is %s; refusing to replace it (expected a regular file or a new "
             "name)", target, what);
    return -1;
}

/* 1 when the regular file at path begins as a label record does: a JSON object whose "format"
 * is TW_LABEL_RECORD_FORMAT within its first bytes, or an SQLite database whose header carries
 * the registry's application_id (big-endian at byte 68 of the SQLite file format). */
static int is_label_record(const char *path)
{
    int fd = open(path, O_RDONLY | O_CLOEXEC | O_NONBLOCK);
    if (fd < 0)
        return 0;
    char head[4096];
    ssize_t n = read(fd, head, sizeof head - 1);
    close(fd);
    if (n <= 0)
        return 0;
    head[n] = '\0';
    const unsigned char *u = (const unsigned char *)head;
    if (n >= 72 && memcmp(head, "SQLite format 3", 16) == 0 &&
        ((uint32_t)u[68] << 24 | (uint32_t)u[69] << 16 | (uint32_t)u[70] << 8 | u[71]) ==
            TW_REGISTRY_APP_ID)
        return 1;
    const char *p = head;
    while (*p == ' ' || *p == '\t' || *p == '\n' || *p == '\r')
        p++;
    return *p == '{' && strstr(p, "\"" TW_LABEL_RECORD_FORMAT "\"") != NULL;
}

int tw_output_path_ok(const char *path, const char *const *inputs, char *err, size_t errlen)
{
    struct stat out;
    if (!path || !*path) {
        snprintf(err, errlen, "output path is empty");
        return -1;
    }
    struct stat link;
    if (lstat(path, &link) == 0 && !S_ISDIR(link.st_mode) &&
        tw_output_replaceable(path, err, errlen) != 0)
        return -1;
    if (stat(path, &out) != 0) {
        if (errno != ENOENT) {
            snprintf(err, errlen, "%s: cannot use as an output: %s", path, strerror(errno));
            return -1;
        }
        return new_output_ok(path, inputs, err, errlen);
    }
    if (S_ISDIR(out.st_mode)) {
        snprintf(err, errlen, "%s: is a directory, expected an output file name", path);
        return -1;
    }
    for (size_t i = 0; inputs && inputs[i]; i++) {
        struct stat in;
        if (stat(inputs[i], &in) == 0 && in.st_dev == out.st_dev && in.st_ino == out.st_ino) {
            snprintf(err, errlen, "%s: is the input file %s; refusing to overwrite it", path,
                     inputs[i]);
            return -1;
        }
    }
    if (is_label_record(path)) {
        snprintf(err, errlen, "%s: is a record of printed labels; refusing to overwrite it "
                 "(expected another output name)", path);
        return -1;
    }
    return 0;
}

/* Descriptors of unnamed temporaries handed out by tw_atomic_tmp_path() as "/proc/self/fd/N",
 * not yet published or forgotten. */
static int owned[TW_MAX_PENDING];
static size_t owned_count;

#define PROC_FD "/proc/self/fd/"

/* The descriptor behind an unnamed temporary's path, removed from the owned list; -1 when tmp
 * is an ordinary named file (or not ours). */
static int take_owned(const char *tmp)
{
    size_t n = strlen(PROC_FD);
    if (!tmp || strncmp(tmp, PROC_FD, n) != 0)
        return -1;
    char *end;
    long fd = strtol(tmp + n, &end, 10);
    for (size_t i = 0; *end == '\0' && i < owned_count; i++)
        if (owned[i] == fd) {
            owned[i] = owned[--owned_count];
            return (int)fd;
        }
    return -1;
}

/* An unnamed file in target's directory (Linux O_TMPFILE): until it is linked in at commit it
 * has no name, so a run killed even by SIGKILL leaves nothing behind. -1 where the kernel or
 * file system lacks it, or /proc (needed to link it) is not mounted: a named temporary is used
 * then, removed on SIGINT/SIGTERM/SIGHUP only. */
static int open_unnamed(const char *target)
{
#ifdef O_TMPFILE
    if (access("/proc/self/fd", X_OK) != 0)
        return -1;
    char *copy = tw_strdup(target);
    if (!copy)
        return -1;
    int fd = open(dirname(copy), O_TMPFILE | O_WRONLY | O_CLOEXEC, 0666);
    free(copy);
    return fd;
#else
    (void)target;
    return -1;
#endif
}

/* Give the unnamed file fd a temporary name beside target, registered for removal on signals
 * until published. NULL with a message in err. */
static char *link_unnamed(int fd, const char *target, char *err, size_t errlen)
{
    char proc[64];
    snprintf(proc, sizeof proc, "/proc/self/fd/%d", fd);
    char *c1 = tw_strdup(target), *c2 = tw_strdup(target), *name = NULL;
    int e = ENOMEM;
    for (int i = 0; c1 && c2 && i < 100; i++) {
        name = tw_asprintf("%s/.%s.%ld-%d.tmp", dirname(c1), basename(c2), (long)getpid(), i);
        if (name && linkat(AT_FDCWD, proc, AT_FDCWD, name, AT_SYMLINK_FOLLOW) == 0)
            break;
        e = name ? errno : ENOMEM;
        free(name);
        name = NULL;
        if (e != EEXIST)
            break;
        free(c1); /* dirname() and basename() may have changed the copies */
        free(c2);
        c1 = tw_strdup(target);
        c2 = tw_strdup(target);
    }
    free(c1);
    free(c2);
    if (!name)
        snprintf(err, errlen, "%s: cannot write: %s", target, strerror(e));
    else
        remember(name);
    return name;
}

int tw_output_path_ok_n(const char *path, const char *const *inputs, size_t n, char *err,
                        size_t errlen)
{
    const char **given = calloc(n + 1, sizeof *given);
    if (!given) {
        snprintf(err, errlen, "%s: out of memory", path ? path : "output");
        return -1;
    }
    for (size_t i = 0, k = 0; i < n; i++)
        if (inputs[i])
            given[k++] = inputs[i];
    int rc = tw_output_path_ok(path, given, err, errlen);
    free(given);
    return rc;
}

char *tw_atomic_tmp_path(const char *target, char *err, size_t errlen)
{
    if (tw_output_replaceable(target, err, errlen) != 0)
        return NULL;
    /* Unnamed where possible: writers that open a path themselves (libharu) open this one,
     * and a run killed before the publish leaves nothing behind. */
    int ufd = owned_count < TW_MAX_PENDING ? open_unnamed(target) : -1;
    if (ufd >= 0) {
        char *path = tw_asprintf(PROC_FD "%d", ufd);
        if (path) {
            owned[owned_count++] = ufd;
            return path;
        }
        close(ufd);
    }
    char *copy1 = tw_strdup(target), *copy2 = tw_strdup(target);
    char *tmp = NULL;
    if (copy1 && copy2)
        tmp = tw_asprintf("%s/.%s.XXXXXX", dirname(copy1), basename(copy2));
    free(copy1);
    free(copy2);
    if (!tmp) {
        snprintf(err, errlen, "%s: out of memory", target);
        return NULL;
    }
    int fd = mkstemp(tmp);
    if (fd < 0) {
        snprintf(err, errlen, "%s: cannot create a file in its directory: %s", target,
                 strerror(errno));
        free(tmp);
        return NULL;
    }
    close(fd);
    remember(tmp);
    return tmp;
}

static int fsync_dir_of(const char *path)
{
    char *copy = tw_strdup(path);
    if (!copy)
        return -1;
    int fd = open(dirname(copy), O_RDONLY | O_DIRECTORY);
    free(copy);
    if (fd < 0)
        return -1;
    int rc = fsync(fd);
    close(fd);
    return rc;
}

int tw_atomic_publish(const char *tmp, const char *target, char *err, size_t errlen)
{
    int ufd = take_owned(tmp);
    if (ufd >= 0) { /* unnamed: give it a name beside the target, then as below */
        if (fsync(ufd) != 0) {
            snprintf(err, errlen, "%s: cannot flush to disk: %s", target, strerror(errno));
            close(ufd);
            return -1;
        }
        char *name = link_unnamed(ufd, target, err, errlen);
        close(ufd);
        if (!name)
            return -1;
        int rc = tw_atomic_publish(name, target, err, errlen);
        free(name);
        return rc;
    }
    if (tw_output_replaceable(target, err, errlen) != 0) {
        unlink(tmp);
        tw_atomic_forget(tmp);
        return -1;
    }
    int fd = open(tmp, O_RDONLY);
    if (fd < 0 || fsync(fd) != 0) {
        snprintf(err, errlen, "%s: cannot flush to disk: %s", target, strerror(errno));
        if (fd >= 0)
            close(fd);
        unlink(tmp);
        tw_atomic_forget(tmp);
        return -1;
    }
    close(fd);
    /* mkstemp creates 0600; outputs are ordinary files. */
    mode_t mask = umask(0);
    umask(mask);
    chmod(tmp, 0666 & ~mask);
    if (rename(tmp, target) != 0) {
        snprintf(err, errlen, "%s: cannot write: %s", target, strerror(errno));
        unlink(tmp);
        tw_atomic_forget(tmp);
        return -1;
    }
    tw_atomic_forget(tmp);
    fsync_dir_of(target);
    return 0;
}

int tw_atomic_open(tw_atomic *a, const char *target, char *err, size_t errlen)
{
    memset(a, 0, sizeof *a);
    if (tw_output_replaceable(target, err, errlen) != 0)
        return -1;
    int fd = open_unnamed(target);
    if (fd >= 0) {
        a->target = tw_strdup(target);
        a->fp = fdopen(fd, "wb");
        if (!a->target || !a->fp) {
            snprintf(err, errlen, "%s: cannot write: %s", target, strerror(errno));
            if (!a->fp)
                close(fd);
            tw_atomic_abort(a);
            return -1;
        }
        return 0;
    }
    a->tmp = tw_atomic_tmp_path(target, err, errlen);
    if (!a->tmp)
        return -1;
    a->target = tw_strdup(target);
    a->fp = fopen(a->tmp, "wb");
    if (!a->target || !a->fp) {
        snprintf(err, errlen, "%s: cannot write: %s", target, strerror(errno));
        tw_atomic_abort(a);
        return -1;
    }
    return 0;
}

int tw_atomic_prepare(tw_atomic *a, char *err, size_t errlen)
{
    if (!a->fp) {
        snprintf(err, errlen, "%s: nothing was written", a->target ? a->target : "output");
        return -1;
    }
    if (fflush(a->fp) != 0 || ferror(a->fp) || fsync(fileno(a->fp)) != 0) {
        snprintf(err, errlen, "%s: write failed: %s", a->target, strerror(errno));
        tw_atomic_abort(a);
        return -1;
    }
    return 0;
}

int tw_atomic_commit(tw_atomic *a, char *err, size_t errlen)
{
    if (tw_atomic_prepare(a, err, errlen) != 0)
        return -1;
    /* An unnamed file gets its name only now, while its descriptor is still open. */
    if (!a->tmp && !(a->tmp = link_unnamed(fileno(a->fp), a->target, err, errlen))) {
        tw_atomic_abort(a);
        return -1;
    }
    int bad = fclose(a->fp) != 0;
    a->fp = NULL;
    if (bad) {
        snprintf(err, errlen, "%s: write failed: %s", a->target, strerror(errno));
        tw_atomic_abort(a);
        return -1;
    }
    int rc = tw_atomic_publish(a->tmp, a->target, err, errlen);
    free(a->tmp);
    a->tmp = NULL;
    free(a->target);
    a->target = NULL;
    return rc;
}

static sigset_t held_old;
static int held;

void tw_atomic_hold_signals(void)
{
    sigset_t set;
    sigemptyset(&set);
    sigaddset(&set, SIGINT);
    sigaddset(&set, SIGTERM);
    sigaddset(&set, SIGHUP);
    if (!held && sigprocmask(SIG_BLOCK, &set, &held_old) == 0)
        held = 1;
}

void tw_atomic_release_signals(void)
{
    if (held) {
        held = 0;
        sigprocmask(SIG_SETMASK, &held_old, NULL); /* a signal held back is delivered here */
    }
}

void tw_atomic_abort(tw_atomic *a)
{
    if (a->fp)
        fclose(a->fp);
    if (a->tmp) {
        unlink(a->tmp);
        tw_atomic_forget(a->tmp);
    }
    free(a->tmp);
    free(a->target);
    memset(a, 0, sizeof *a);
}

int tw_atomic_write(const char *path, const void *data, size_t len, char *err, size_t errlen)
{
    tw_atomic a;
    if (tw_atomic_open(&a, path, err, errlen) != 0)
        return -1;
    if (len && fwrite(data, 1, len, a.fp) != len) {
        snprintf(err, errlen, "%s: write failed: %s", path, strerror(errno));
        tw_atomic_abort(&a);
        return -1;
    }
    return tw_atomic_commit(&a, err, errlen);
}
