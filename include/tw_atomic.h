/*
 * tw_atomic.h - outputs that appear whole or not at all.
 *
 * A file is written to a temporary file in the target directory, flushed, fsync'd and renamed
 * over the target; the directory is then fsync'd. A failed or interrupted run leaves any earlier
 * output intact. Where the system allows (Linux O_TMPFILE), tw_atomic_open() creates the file
 * without a name, so even SIGKILL leaves nothing behind; otherwise temporary files still open
 * when SIGINT/SIGTERM/SIGHUP arrives are removed. Outputs that belong together (a PDF and its
 * manifest) are prepared first and then committed together with those signals held back.
 */
#ifndef TW_ATOMIC_H
#define TW_ATOMIC_H

#include <stddef.h>
#include <stdio.h>

typedef struct {
    char *target;
    char *tmp;
    FILE *fp;
} tw_atomic;

/* Check that path can be an output: not a directory, not one of the inputs (same inode).
 * inputs is a NULL-terminated list (may be NULL). 0, or -1 with a message in err. */
int tw_output_path_ok(const char *path, const char *const *inputs, char *err, size_t errlen);

/* Create the temporary file for target. 0, or -1 with a message in err. */
int tw_atomic_open(tw_atomic *a, const char *target, char *err, size_t errlen);

/* Flush, fsync, rename over the target. 0, or -1 with a message (the temporary is removed). */
int tw_atomic_commit(tw_atomic *a, char *err, size_t errlen);

/* Flush and fsync the file, which stays open (and unnamed, where it has no name) until it is
 * committed. 0, or -1 with a message (a is aborted). */
int tw_atomic_prepare(tw_atomic *a, char *err, size_t errlen);

/* Replace the targets of n prepared (or still open) files in order, with SIGINT, SIGTERM and
 * SIGHUP held back until all are done, so that a signal cannot replace some and not others.
 * 0, or -1 with a message (the files not yet renamed are removed). */
int tw_atomic_commit_all(tw_atomic *const *a, size_t n, char *err, size_t errlen);

/* Close and remove the temporary file. Accepts an unopened or committed struct. */
void tw_atomic_abort(tw_atomic *a);

/* Write a whole buffer to path atomically. */
int tw_atomic_write(const char *path, const void *data, size_t len, char *err, size_t errlen);

/* Rename an already-written temporary file (tmp, in the target's directory) over target with
 * the same fsync discipline; for writers such as libharu that write to a path themselves. */
int tw_atomic_publish(const char *tmp, const char *target, char *err, size_t errlen);

/* A fresh temporary path beside target ("DIR/.NAME.XXXXXX.tmp", file created empty), registered
 * for removal on signals until published or removed with tw_atomic_forget(). */
char *tw_atomic_tmp_path(const char *target, char *err, size_t errlen);
void tw_atomic_forget(const char *tmp);

#endif
