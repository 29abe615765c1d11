/* atomic.c - outputs written whole or not at all (see tw_atomic.h). */
#include "tw_atomic.h"

#include <errno.h>
#include <fcntl.h>
#include <libgen.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "tw_util.h"

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

static void install_handlers(void)
{
    if (handlers_installed)
        return;
    handlers_installed = 1;
    signal(SIGINT, on_signal);
    signal(SIGTERM, on_signal);
    signal(SIGHUP, on_signal);
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

void tw_atomic_forget(const char *tmp)
{
    for (int i = 0; i < TW_MAX_PENDING; i++)
        if (pending[i] == tmp || (pending[i] && tmp && strcmp(pending[i], tmp) == 0))
            pending[i] = NULL;
}

int tw_output_path_ok(const char *path, const char *const *inputs, char *err, size_t errlen)
{
    struct stat out;
    if (!path || !*path) {
        snprintf(err, errlen, "output path is empty");
        return -1;
    }
    if (stat(path, &out) != 0)
        return 0; /* does not exist yet: fine; the directory is checked on open */
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
    return 0;
}

char *tw_atomic_tmp_path(const char *target, char *err, size_t errlen)
{
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

int tw_atomic_commit(tw_atomic *a, char *err, size_t errlen)
{
    int bad = fflush(a->fp) != 0 || ferror(a->fp);
    bad |= fclose(a->fp) != 0;
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
