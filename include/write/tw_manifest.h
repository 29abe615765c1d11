/*
 * tw_manifest.h - the JSON manifest: the record earlier builds wrote beside each PDF, and the
 * shape `tagwright registry export` prints. Read here so that `tagwright registry import` can
 * bring one into the site's registry (tw_registry.h); nothing writes a manifest any more.
 *
 * Each entry is one revision of one equipment's label: equipment ID, revision, content hash,
 * study, date printed, output file, volume and page, status ("current", "superseded", and in
 * version 2 "removed"). Schema: docs/registry.md.
 *
 * The reader refuses (findings with the JSON path and field) what would lose or invent
 * history: another format or version, a key given twice, a second current revision for one
 * equipment, numbers out of range.
 */
#ifndef TW_MANIFEST_H
#define TW_MANIFEST_H

#include <stddef.h>

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
    int current;                /* 1 current */
    int removed;                /* 1 removed (version 2) */
    char *superseded_on;        /* date, when superseded */
    char *reason;               /* why this revision was made (NULL for a first print) */
    char *changes;              /* "field: old -> new; ..." against the revision it replaced */
    char *payload;              /* the QR payload printed */
    char *content;              /* the label's canonical form (tw_label_canonical) */
    char *study_date, *approved_by, *lowered, *removed_on, *removed_reason; /* version 2 */
} tw_manifest_entry;

typedef struct {
    tw_manifest_entry *entries; /* their strings live in `strings`, freed with the manifest */
    size_t count, cap;
    tw_arena strings;
    tw_map current;             /* equipment_id -> index of its current entry */
} tw_manifest;

/* Parse manifest JSON from memory. 0, or -1 with findings; m is always left freeable. */
int tw_manifest_load_mem(const char *name, const char *data, size_t len, tw_manifest *m,
                         tw_diags *d);

/* The current entry for equipment_id, or NULL. */
const tw_manifest_entry *tw_manifest_current(const tw_manifest *m, const char *equipment_id);

/* "field: old -> new; ..." between two canonical forms (fresh string, "" when equal). */
char *tw_manifest_changes(const char *old_content, const char *new_content);

/* Free everything. Accepts a zeroed manifest. */
void tw_manifest_close(tw_manifest *m);

#endif
