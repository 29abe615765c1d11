/*
 * tw_atomic.h - outputs that appear whole or not at all.
 *
 * A file is written to a temporary file in the target directory, flushed, fsync'd and renamed
 * over the target; the directory is then fsync'd. A failed or interrupted run leaves any earlier
 * output intact. Where the system allows (Linux O_TMPFILE), temporary files have no name until
 * they are published - tw_atomic_open() keeps the descriptor, tw_atomic_tmp_path() hands out
 * "/proc/self/fd/N" for writers that open a path themselves - so even SIGKILL leaves nothing
 * behind; otherwise named temporaries still open when SIGINT/SIGTERM/SIGHUP arrives are
 * removed. Outputs that belong together are written in full first, then published together
 * with those signals held back.
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

/* The "format" of a label record (write/manifest.c); an output never replaces such a file. */
#define TW_LABEL_RECORD_FORMAT "tagwright-manifest"
/* The SQLite application_id of a label registry (write/registry.c), "TWRG"; an output never
 * replaces such a file either. */
#define TW_REGISTRY_APP_ID 0x54575247

/* Check that path can be an output: not a directory, not one of the inputs (same inode), not a
 * label record, and, when it exists, a regular file (a symbolic link, FIFO or device node is
 * refused, never replaced). inputs is a NULL-terminated list (may be NULL). 0, or -1 with a
 * message in err. tw_atomic_open(), tw_atomic_tmp_path() and tw_atomic_publish() refuse a
 * target that exists and is not a regular file as well, so no output replaces one. */
int tw_output_path_ok(const char *path, const char *const *inputs, char *err, size_t errlen);

/* The same for the n files a command was given, any of which may be NULL (an option left out;
 * a NULL in a NULL-terminated list would hide the files after it). */
int tw_output_path_ok_n(const char *path, const char *const *inputs, size_t n, char *err,
                        size_t errlen);

/* 0 when target does not exist or is a regular file; -1 with a message in err when it is a
 * symbolic link, FIFO, device node, socket or directory, which no output may replace. */
int tw_output_replaceable(const char *target, char *err, size_t errlen);

/* Create the temporary file for target. 0, or -1 with a message in err. */
int tw_atomic_open(tw_atomic *a, const char *target, char *err, size_t errlen);

/* Flush, fsync, rename over the target. 0, or -1 with a message (the temporary is removed). */
int tw_atomic_commit(tw_atomic *a, char *err, size_t errlen);

/* Flush and fsync the file, which stays open (and unnamed, where it has no name) until it is
 * committed. 0, or -1 with a message (a is aborted). */
int tw_atomic_prepare(tw_atomic *a, char *err, size_t errlen);

/* Hold SIGINT, SIGTERM and SIGHUP back while a set of outputs that belong together (the volumes
 * of a print run and its manifest) is renamed into place, so that a signal cannot leave some
 * renamed and others not; release delivers any signal that came meanwhile. Not nested. */
void tw_atomic_hold_signals(void);
void tw_atomic_release_signals(void);

/* Close and remove the temporary file. Accepts an unopened or committed struct. */
void tw_atomic_abort(tw_atomic *a);

/* Write a whole buffer to path atomically. */
int tw_atomic_write(const char *path, const void *data, size_t len, char *err, size_t errlen);

/* Rename an already-written temporary file (tmp, in the target's directory) over target with
 * the same fsync discipline; for writers such as libharu that write to a path themselves. */
int tw_atomic_publish(const char *tmp, const char *target, char *err, size_t errlen);

/* A fresh temporary path for target, file created empty: "/proc/self/fd/N" for an unnamed file
 * in target's directory where possible, else "DIR/.NAME.XXXXXX" registered for removal on
 * signals. Either way it ends with tw_atomic_publish(), or unlink() and tw_atomic_forget()
 * (which closes an unnamed one; unlink() of it fails harmlessly). */
char *tw_atomic_tmp_path(const char *target, char *err, size_t errlen);
void tw_atomic_forget(const char *tmp);

#endif
