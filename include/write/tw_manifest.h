/*
 * tw_manifest.h - the record of what was printed: one JSON file beside the labels.
 *
 * Each label printed is an entry: equipment ID, revision, content hash, study ID, date printed,
 * output file, volume and page, status ("current" or "superseded"). Revisions are never
 * deleted: when a label's content hash changes, the earlier current entry is marked superseded
 * (with the date, the reason and the fields that changed) and a new revision is added. Printing
 * unchanged content again keeps the revision and updates where it was printed.
 *
 * tw_manifest_open() takes an exclusive lock (flock on "PATH.lock") held until
 * tw_manifest_close(); tw_manifest_save() writes atomically. Schema: docs/manifest.md.
 */
#ifndef TW_MANIFEST_H
#define TW_MANIFEST_H

#include <stddef.h>

#include "base/tw_atomic.h"
#include "base/tw_diag.h"
#include "base/tw_map.h"
#include "base/tw_util.h"

typedef struct {
    char *equipment_id;
    int revision;               /* 1, 2, ... per equipment */
    char *content_hash;
    char *study_id;             /* may be NULL */
    char *printed;              /* YYYY-MM-DD */
    char *output;               /* PDF file name */
    int volume;                 /* 1-based; 1 unless output was split */
    int page;
    int current;                /* 1 current, 0 superseded */
    char *superseded_on;        /* date, when superseded */
    char *reason;               /* why this revision was made (NULL for a first print) */
    char *changes;              /* "field: old -> new; ..." against the revision it replaced */
    char *payload;              /* the QR payload printed */
    char *content;              /* the label's canonical form (tw_label_canonical) */
} tw_manifest_entry;

typedef struct {
    char *path;
    tw_manifest_entry *entries; /* their strings live in `strings`, freed with the manifest */
    size_t count, cap;
    tw_arena strings;
    tw_map current;             /* equipment_id -> index of its current entry */
    int lock_fd;
} tw_manifest;

/* Lock and load path (a missing file is an empty manifest). 0, or -1 with findings. */
int tw_manifest_open(const char *path, tw_manifest *m, tw_diags *d);

/* Parse manifest JSON from memory (no lock); for tests, fuzzers and verify. */
int tw_manifest_load_mem(const char *name, const char *data, size_t len, tw_manifest *m,
                         tw_diags *d);

/* The current entry for equipment_id, or NULL. */
const tw_manifest_entry *tw_manifest_current(const tw_manifest *m, const char *equipment_id);

/* The revision the next print of this content would get (same hash: same revision). */
int tw_manifest_next_revision(const tw_manifest *m, const char *equipment_id, const char *hash);

/* What one printed label contributes to the manifest. reason may be NULL. */
typedef struct {
    const char *equipment_id, *hash, *content, *study_id, *printed, *output, *payload, *reason;
    int volume, page;
} tw_manifest_print;

/* Record a printed label. When the content hash differs from the current revision's, that one
 * is marked superseded and the new entry lists the changed fields. Returns the revision, or -1
 * when out of memory (the manifest is unchanged). */
int tw_manifest_record(tw_manifest *m, const tw_manifest_print *p);

/* "field: old -> new; ..." between two canonical forms (fresh string, "" when equal). */
char *tw_manifest_changes(const char *old_content, const char *new_content);

/* Write atomically. 0, or -1 with a message in err. */
int tw_manifest_save(tw_manifest *m, char *err, size_t errlen);

/* The same, leaving a prepared for the caller to commit with the PDF it records
 * (tw_atomic_commit once every volume is published), or aborted on failure. */
int tw_manifest_write(tw_manifest *m, tw_atomic *a, char *err, size_t errlen);

/* Release the lock and free everything. Accepts a zeroed manifest. */
void tw_manifest_close(tw_manifest *m);

#endif
