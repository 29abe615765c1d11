/*
 * tw_registry.h - the site's label registry: one SQLite database recording every label revision
 * printed for posting, its status (current, superseded, removed), why it was made and who
 * approved it. Schema and rules: docs/registry.md.
 *
 * Every command that prints, verifies or reports opens the same registry (site.json "registry",
 * or --manifest PATH). A path reached through a symbolic link is resolved to the real file, so
 * the lock and the database are the same whichever name is used.
 *
 * Writers (tw_registry_open with write=1) hold an exclusive flock on "REAL_PATH.lock" until
 * tw_registry_close(), so runs that print queue; readers take no lock (SQLite's WAL lets them
 * read while a writer records). Every change is one SQLite transaction.
 *
 * Crash safety: a print run is journaled (tw_registry_stage, tw_registry_record,
 * tw_registry_finish). Its volumes get named pending files once written in full; the revisions
 * and the move from "staging" to "publishing" commit together; then the pending files are
 * renamed over their targets. Any opener that can take the lock finishes a run left
 * "publishing" (renames what is still pending) and removes the files of one left "staging", so
 * after kill -9 at any instant the registry and the PDFs it names agree again before anything
 * else is done, and no temporary file is left behind.
 *
 * Failure: functions return 0, or a TW_EXIT_* status (TW_EXIT_DATA for a file that is not a
 * registry or whose content breaks a rule, TW_EXIT_IO for I/O and SQLite failures) with a
 * message in err. Strings handed out are fresh
 * copies owned by the caller's struct (freed with tw_revision_free).
 */
#ifndef TW_REGISTRY_H
#define TW_REGISTRY_H

#include <stddef.h>
#include <stdio.h>

#include "rules/tw_label.h"
#include "read/tw_site.h"

/* The schema version this build writes; a registry made by a newer build is refused. */
#define TW_REGISTRY_SCHEMA 1
/* Highest revision number (the QR payload carries it as a decimal integer). */
#define TW_REGISTRY_MAX_REVISION 1000000000

struct sqlite3;

typedef struct {
    struct sqlite3 *db;
    char *path;                 /* the real file (symlinks resolved) */
    int lock_fd;                /* -1 for a reader */
} tw_registry;

/* What a worker reads as the hazard, for change control. A value below 0 is unknown (an
 * imported revision whose content could not be read, or a field the label does not carry). */
typedef struct {
    int signal;                 /* 0 WARNING, 1 DANGER */
    double incident_energy_cal;
    int ppe_category;
    double arc_rating_cal;      /* minimum arc rating printed */
    double boundary_mm;
    double ppe_level_cal;       /* arc rating of the site PPE level named; 1e9 none adequate */
} tw_hazard;

typedef enum { TW_REV_CURRENT, TW_REV_SUPERSEDED, TW_REV_REMOVED } tw_rev_status;

typedef struct {
    char *equipment_id;
    int revision;
    tw_rev_status status;
    char *content_hash, *content, *payload;
    char *study_id, *study_date, *printed, *output;
    int volume, page;
    char *reason, *changes, *approved_by, *lowered, *superseded_on, *removed_on;
    tw_hazard hazard;
} tw_revision;

void tw_revision_free(tw_revision *v);
const char *tw_rev_status_name(tw_rev_status s);

/* Open (write: create if missing, lock, upgrade the schema, recover an interrupted run) the
 * registry at path. A reader gets TW_EXIT_IO when there is no file. A JSON manifest at path is
 * refused with TW_EXIT_DATA and a message naming `tagwright registry import`. */
int tw_registry_open(tw_registry *r, const char *path, int write, char *err, size_t errlen);

/* Release the lock and close. Accepts a zeroed struct. */
void tw_registry_close(tw_registry *r);

/* The current (status current) revision of equipment_id, matched without regard to case.
 * 1 found (out filled), 0 none, or a TW_EXIT_* status with err. */
int tw_registry_current(tw_registry *r, const char *equipment_id, tw_revision *out, char *err,
                        size_t errlen);

/* The revision the next print of this content would get: the current one's when the hash is
 * the same, else one above the highest recorded (1 for new equipment). 0, or a TW_EXIT_*. */
int tw_registry_next_revision(tw_registry *r, const char *equipment_id, const char *hash,
                              int *revision, char *err, size_t errlen);

/* The spelling the registry holds for equipment_id when it differs only in case (fresh
 * string), else NULL. */
char *tw_registry_other_spelling(tw_registry *r, const char *equipment_id);

/* The revision printed with this content hash and exactly this payload (the live one first).
 * 1 found, 0 none (*hash_seen tells whether the hash alone is known), or a TW_EXIT_* status. */
int tw_registry_find(tw_registry *r, const char *hash, const char *payload, tw_revision *out,
                     int *hash_seen, char *err, size_t errlen);

/* The hazard a label shows (site gives the PPE level's rating). */
void tw_hazard_of_label(const tw_label *l, const tw_site *site, tw_hazard *h);

/* What would go down from old to new, "incident energy 41.8 -> 8.4 cal/cm2; ..." (fresh
 * string, "" when nothing is lowered), NULL when out of memory. Unknown values are not
 * compared. */
char *tw_hazard_lowered(const tw_hazard *old_h, const tw_hazard *new_h);

/* Before anything is drawn, for each of n labels: the revision it will carry (revision[i]) and
 * what it would lower against the current revision (lowered[i], fresh string, "" when
 * nothing; NULL for drafts, which are never recorded). TW_EXIT_DATA when an equipment ID
 * differs only in case from one in the registry or from another in the run. */
int tw_registry_plan(tw_registry *r, const tw_label *labels, size_t n, const tw_site *site,
                     int *revision, char **lowered, char *err, size_t errlen);

/* One label of a print run, as recorded. */
typedef struct {
    const char *equipment_id, *hash, *content, *payload, *study_id, *study_date;
    const char *output, *reason, *approved_by, *lowered;
    int volume, page;
    tw_hazard hazard;
} tw_registry_print;

/* Journal a run: its pending files (pending[i] is renamed over target[i] once recorded). The
 * files do not exist yet; the caller creates them after this commits. *run gets the id. */
int tw_registry_stage(tw_registry *r, const char *const *pending, const char *const *target,
                      size_t n, long long *run, char *err, size_t errlen);

/* In one transaction: record the printed labels (same content as the current revision: the
 * revision stays and its place is updated; else the current one is superseded and the next
 * revision added), mark the `removed` equipment IDs removed, and move the run to publishing.
 * date is the print date. */
int tw_registry_record(tw_registry *r, long long run, const tw_registry_print *p, size_t n,
                       const char *const *removed, size_t nremoved, const char *date,
                       char *err, size_t errlen);

/* Rename the run's pending files over their targets and forget the run. */
int tw_registry_finish(tw_registry *r, long long run, char *err, size_t errlen);

/* Forget a run that was not recorded, removing its pending files. */
void tw_registry_abandon(tw_registry *r, long long run);

/* Mark equipment removed outside a print run (diff --out with nothing to print). */
int tw_registry_remove(tw_registry *r, const char *const *removed, size_t n, const char *date,
                       const char *reason, char *err, size_t errlen);

/* Every revision in equipment then revision order, only those of status (all when status is
 * NULL), as JSON (the docs/registry.md export shape) or CSV. */
int tw_registry_export(tw_registry *r, FILE *out, int csv, const tw_rev_status *status,
                       char *err, size_t errlen);

/* Bring the revisions of a JSON manifest (format "tagwright-manifest", version 1 or 2) into
 * an open writable registry, in one transaction. Refused (TW_EXIT_DATA, nothing written) when
 * the file breaks a manifest rule or names equipment the registry already holds. *count gets
 * the number of revisions imported. */
int tw_registry_import(tw_registry *r, const char *name, const char *data, size_t len,
                       size_t *count, char *err, size_t errlen);

/* The manifest reader's checks alone, before a registry is opened or made: 0, or
 * TW_EXIT_DATA with the first finding ("FILE:PATH: field: message") in err. */
int tw_registry_import_check(const char *name, const char *data, size_t len, char *err,
                             size_t errlen);

#endif
