/*
 * tw_atomic.h - outputs that appear whole or not at all.
 *
 * A file is written to a temporary name in the target directory, flushed, fsync'd and renamed
 * over the target; the directory is then fsync'd. A failed or interrupted run leaves any earlier
 * output intact. Temporary files still open when SIGINT/SIGTERM/SIGHUP arrives are removed.
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
