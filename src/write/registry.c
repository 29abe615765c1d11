/* registry.c - the site's label registry in SQLite (see tw_registry.h, docs/registry.md). */
#include "write/tw_registry.h"

#include <cjson/cJSON.h>
#include <errno.h>
#include <fcntl.h>
#include <libgen.h>
#include <limits.h>
#include <math.h>
#include <openssl/evp.h>
#include <sqlite3.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include "base/tw_atomic.h"
#include "base/tw_exit.h"
#include "base/tw_map.h"
#include "base/tw_util.h"
#include "write/tw_manifest.h"

/* PRAGMA application_id of a tagwright registry ("TWRG"): another program's SQLite database
 * is refused instead of having tables added to it. */
#define REGISTRY_APP_ID TW_REGISTRY_APP_ID
/* How long a reader or writer waits for SQLite's own locks, ms (a writer's flock queues whole
 * runs; this covers the moments a reader and a writer touch the same pages). */
#define BUSY_TIMEOUT_MS 30000
/* "none adequate" as a PPE level rating: above every kit. */
#define NO_LEVEL_CAL 1e9

/* Migration i brings a registry from schema version i to i + 1, in one transaction. Append,
 * never edit: a registry made by an earlier build is upgraded by the ones it lacks. */
static const char *const migrations[] = {
    /* 0 -> 1: equipment, revisions, the run journal. */
    "CREATE TABLE equipment("
    "  id INTEGER PRIMARY KEY,"
    "  equipment_id TEXT NOT NULL UNIQUE COLLATE NOCASE);"
    "CREATE TABLE revisions("
    "  id INTEGER PRIMARY KEY,"
    "  equipment INTEGER NOT NULL REFERENCES equipment(id),"
    "  revision INTEGER NOT NULL CHECK (revision BETWEEN 1 AND 1000000000),"
    "  status TEXT NOT NULL CHECK (status IN ('current', 'superseded', 'removed')),"
    "  content_hash TEXT NOT NULL,"
    "  content TEXT NOT NULL,"
    "  payload TEXT,"
    "  study_id TEXT, study_date TEXT,"
    "  printed TEXT NOT NULL, output TEXT, volume INTEGER, page INTEGER,"
    "  reason TEXT, changes TEXT, approved_by TEXT, lowered TEXT,"
    "  superseded_on TEXT, removed_on TEXT, removed_reason TEXT,"
    "  signal INTEGER, incident_energy_cal REAL, ppe_category INTEGER, arc_rating_cal REAL,"
    "  boundary_mm REAL, ppe_level_cal REAL,"
    "  UNIQUE (equipment, revision));"
    "CREATE UNIQUE INDEX revisions_one_live ON revisions(equipment)"
    "  WHERE status <> 'superseded';"
    "CREATE INDEX revisions_hash ON revisions(content_hash);"
    "CREATE TABLE pending_runs("
    "  id INTEGER PRIMARY KEY,"
    "  state TEXT NOT NULL CHECK (state IN ('staging', 'publishing')));"
    "CREATE TABLE pending_files("
    "  run INTEGER NOT NULL REFERENCES pending_runs(id) ON DELETE CASCADE,"
    "  pending TEXT NOT NULL, target TEXT NOT NULL);",
};
#define MIGRATIONS ((int)(sizeof migrations / sizeof migrations[0]))
_Static_assert(MIGRATIONS == TW_REGISTRY_SCHEMA, "one migration per schema version");

/* The revision columns, in the order row_revision() reads them. */
#define REVISION_COLUMNS                                                                      \
    "e.equipment_id, r.revision, r.status, r.content_hash, r.content, r.payload, r.study_id, " \
    "r.study_date, r.printed, r.output, r.volume, r.page, r.reason, r.changes, "               \
    "r.approved_by, r.lowered, r.superseded_on, r.removed_on, r.signal, "                      \
    "r.incident_energy_cal, r.ppe_category, r.arc_rating_cal, r.boundary_mm, r.ppe_level_cal, " \
    "r.removed_reason "

static const char *const status_names[] = {"current", "superseded", "removed"};

const char *tw_rev_status_name(tw_rev_status s)
{
    return (unsigned)s < 3 ? status_names[s] : "?";
}

static int fail(char *err, size_t errlen, int rc, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 4, 5)))
#endif
    ;

static int fail(char *err, size_t errlen, int rc, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(err, errlen, fmt, ap);
    va_end(ap);
    return rc;
}

static int db_fail(tw_registry *r, char *err, size_t errlen, const char *what)
{
    return fail(err, errlen, TW_EXIT_IO, "%s: %s: %s", r->path, what, sqlite3_errmsg(r->db));
}

static int exec(tw_registry *r, const char *sql, char *err, size_t errlen)
{
    return sqlite3_exec(r->db, sql, NULL, NULL, NULL) == SQLITE_OK
               ? 0
               : db_fail(r, err, errlen, "cannot update the registry");
}

static void rollback(tw_registry *r)
{
    if (!sqlite3_get_autocommit(r->db))
        sqlite3_exec(r->db, "ROLLBACK", NULL, NULL, NULL);
}

static sqlite3_stmt *prepare(tw_registry *r, const char *sql)
{
    sqlite3_stmt *st = NULL;
    if (sqlite3_prepare_v3(r->db, sql, -1, SQLITE_PREPARE_PERSISTENT, &st, NULL) != SQLITE_OK)
        return NULL;
    return st;
}

static void bind_text(sqlite3_stmt *st, int i, const char *s)
{
    if (s)
        sqlite3_bind_text(st, i, s, -1, SQLITE_STATIC);
    else
        sqlite3_bind_null(st, i);
}

/* A value below 0 (unknown) is stored as NULL. */
static void bind_num(sqlite3_stmt *st, int i, double v)
{
    if (v >= 0)
        sqlite3_bind_double(st, i, v);
    else
        sqlite3_bind_null(st, i);
}

static char *col_text(sqlite3_stmt *st, int i)
{
    const unsigned char *s = sqlite3_column_text(st, i);
    return s ? tw_strdup((const char *)s) : NULL;
}

static double col_num(sqlite3_stmt *st, int i)
{
    return sqlite3_column_type(st, i) == SQLITE_NULL ? -1 : sqlite3_column_double(st, i);
}

/* ---- opening -------------------------------------------------------------------------------- */

/* The real file behind path: symlinks resolved; for a file not yet made, its directory
 * resolved. NULL with a message. */
static char *real_path(const char *path, int write, char *err, size_t errlen, int *rc)
{
    struct stat sb;
    *rc = TW_EXIT_IO;
    if (stat(path, &sb) == 0) {
        if (!S_ISREG(sb.st_mode)) { /* as for any output: refused, not an I/O attempt */
            snprintf(err, errlen, "%s: %s; expected a tagwright registry file (an SQLite "
                     "database)", path, S_ISDIR(sb.st_mode) ? "is a directory"
                                                            : "not a regular file");
            return NULL;
        }
        char *p = realpath(path, NULL);
        if (!p)
            snprintf(err, errlen, "%s: %s", path, strerror(errno));
        return p;
    }
    if (errno != ENOENT || !write || lstat(path, &sb) == 0) {
        /* a reader needs the file; a dangling symlink would create a file somewhere else */
        snprintf(err, errlen, "%s: no registry here (%s)%s", path,
                 errno == ENOENT && lstat(path, &sb) == 0 ? "a symbolic link to nothing"
                                                          : strerror(errno),
                 write ? "" : "; labels printed for posting are recorded in the site's registry "
                 "(site.json \"registry\", or --manifest PATH)");
        return NULL;
    }
    char *c1 = tw_strdup(path), *c2 = tw_strdup(path);
    char *dir = c1 ? realpath(dirname(c1), NULL) : NULL;
    char *p = dir && c2 ? tw_asprintf("%s/%s", dir, basename(c2)) : NULL;
    if (!p)
        snprintf(err, errlen, "%s: the directory does not exist or cannot be read: %s", path,
                 strerror(errno));
    free(dir);
    free(c1);
    free(c2);
    return p;
}

/* A JSON manifest, or something that is not SQLite, is not opened as a registry. */
static int check_file_kind(const char *real, const char *path, char *err, size_t errlen)
{
    FILE *f = fopen(real, "rb");
    if (!f)
        return 0; /* not there yet */
    char head[16] = {0};
    size_t n = fread(head, 1, sizeof head, f);
    fclose(f);
    if (n == 0)
        return 0;
    size_t i = 0;
    while (i < n && strchr(" \t\r\n", head[i]))
        i++;
    if (i < n && head[i] == '{')
        return fail(err, errlen, TW_EXIT_DATA, "%s: a JSON manifest, not a registry; bring it "
                    "into the site's registry with 'tagwright registry import %s'", path, path);
    if (n < 16 || memcmp(head, "SQLite format 3", 16) != 0)
        return fail(err, errlen, TW_EXIT_DATA, "%s: not a tagwright registry (expected an "
                    "SQLite database)", path);
    return 0;
}

static int lock_file(const char *real, int write, char *err, size_t errlen)
{
    char *lock_path = tw_asprintf("%s.lock", real);
    int fd = lock_path ? open(lock_path, (write ? O_RDWR | O_CREAT : O_RDONLY) | O_CLOEXEC,
                              0644)
                       : -1;
    if (fd < 0 || flock(fd, write ? LOCK_EX : LOCK_EX | LOCK_NB) != 0) {
        if (write)
            snprintf(err, errlen, "cannot lock %s: %s", lock_path ? lock_path : real,
                     strerror(errno));
        if (fd >= 0)
            close(fd);
        fd = -1;
    }
    free(lock_path);
    return fd;
}

static int user_version(tw_registry *r, int *v)
{
    sqlite3_stmt *st = NULL;
    int ok = sqlite3_prepare_v2(r->db, "PRAGMA user_version", -1, &st, NULL) == SQLITE_OK &&
             sqlite3_step(st) == SQLITE_ROW;
    if (ok)
        *v = sqlite3_column_int(st, 0);
    sqlite3_finalize(st);
    return ok ? 0 : -1;
}

/* Bring the schema up to date in one transaction (a new file gets every migration). */
static int migrate(tw_registry *r, char *err, size_t errlen)
{
    int v = 0;
    if (user_version(r, &v) != 0)
        return db_fail(r, err, errlen, "not a readable SQLite database");
    if (v > TW_REGISTRY_SCHEMA)
        return fail(err, errlen, TW_EXIT_DATA, "%s: registry schema version %d; this tagwright "
                    "knows versions up to %d (a newer tagwright made it)", r->path, v,
                    TW_REGISTRY_SCHEMA);
    if (v == TW_REGISTRY_SCHEMA)
        return 0;
    if (exec(r, "BEGIN IMMEDIATE", err, errlen) != 0)
        return TW_EXIT_IO;
    if (user_version(r, &v) != 0) { /* another process may have migrated meanwhile */
        rollback(r);
        return db_fail(r, err, errlen, "cannot read the schema version");
    }
    int rc = 0;
    if (v == 0) {
        sqlite3_stmt *st = NULL;
        int tables = -1;
        if (sqlite3_prepare_v2(r->db, "SELECT count(*) FROM sqlite_master", -1, &st, NULL) ==
                SQLITE_OK && sqlite3_step(st) == SQLITE_ROW)
            tables = sqlite3_column_int(st, 0);
        sqlite3_finalize(st);
        if (tables != 0)
            rc = fail(err, errlen, TW_EXIT_DATA, "%s: an SQLite database that is not a "
                      "tagwright registry; expected a registry or a new file", r->path);
    }
    for (; rc == 0 && v < TW_REGISTRY_SCHEMA; v++)
        rc = exec(r, migrations[v], err, errlen);
    char sql[96];
    snprintf(sql, sizeof sql, "PRAGMA user_version = %d; PRAGMA application_id = %d",
             TW_REGISTRY_SCHEMA, REGISTRY_APP_ID);
    if (rc == 0)
        rc = exec(r, sql, err, errlen);
    if (rc == 0)
        rc = exec(r, "COMMIT", err, errlen);
    if (rc != 0)
        rollback(r);
    return rc;
}

static int check_app_id(tw_registry *r, char *err, size_t errlen)
{
    sqlite3_stmt *st = NULL;
    int id = -1;
    if (sqlite3_prepare_v2(r->db, "PRAGMA application_id", -1, &st, NULL) == SQLITE_OK &&
        sqlite3_step(st) == SQLITE_ROW)
        id = sqlite3_column_int(st, 0);
    sqlite3_finalize(st);
    if (id != REGISTRY_APP_ID)
        return fail(err, errlen, TW_EXIT_DATA, "%s: an SQLite database that is not a tagwright "
                    "registry", r->path);
    return 0;
}

static int recover(tw_registry *r, char *err, size_t errlen);

int tw_registry_open(tw_registry *r, const char *path, int write, char *err, size_t errlen)
{
    memset(r, 0, sizeof *r);
    r->lock_fd = -1;
    int rc;
    r->path = real_path(path, write, err, errlen, &rc);
    if (!r->path)
        return rc;
    if ((rc = check_file_kind(r->path, path, err, errlen)) != 0)
        goto fail;
    /* A writer queues for the lock; a reader takes it only if it is free, to finish a run that
     * a killed writer left half published. */
    r->lock_fd = lock_file(r->path, write, err, errlen);
    if (write && r->lock_fd < 0) {
        rc = TW_EXIT_IO;
        goto fail;
    }
    int flags = write || r->lock_fd >= 0 ? SQLITE_OPEN_READWRITE : SQLITE_OPEN_READONLY;
    if (write)
        flags |= SQLITE_OPEN_CREATE;
    if (sqlite3_open_v2(r->path, &r->db, flags, NULL) != SQLITE_OK &&
        !(!write && flags == SQLITE_OPEN_READWRITE &&
          (sqlite3_close(r->db), sqlite3_open_v2(r->path, &r->db, SQLITE_OPEN_READONLY, NULL)) ==
              SQLITE_OK)) {
        rc = db_fail(r, err, errlen, "cannot open");
        goto fail;
    }
    sqlite3_busy_timeout(r->db, BUSY_TIMEOUT_MS);
    sqlite3_extended_result_codes(r->db, 1);
    /* WAL: readers never wait for a run being recorded; FULL: a commit is on disk before the
     * PDFs it names are renamed into place. */
    if (write && exec(r, "PRAGMA journal_mode = WAL", err, errlen) != 0) {
        rc = TW_EXIT_IO;
        goto fail;
    }
    if (exec(r, "PRAGMA synchronous = FULL; PRAGMA foreign_keys = ON", err, errlen) != 0) {
        rc = TW_EXIT_IO;
        goto fail;
    }
    int v = 0;
    if (user_version(r, &v) != 0) {
        rc = fail(err, errlen, TW_EXIT_DATA, "%s: not a readable SQLite database: %s", r->path,
                  sqlite3_errmsg(r->db));
        goto fail;
    }
    if ((v < TW_REGISTRY_SCHEMA && (write || !sqlite3_db_readonly(r->db, "main"))) ||
        v > TW_REGISTRY_SCHEMA) {
        if ((rc = migrate(r, err, errlen)) != 0)
            goto fail;
    } else if (v < TW_REGISTRY_SCHEMA) {
        rc = fail(err, errlen, TW_EXIT_IO, "%s: registry schema version %d needs upgrading, and "
                  "the file cannot be written", r->path, v);
        goto fail;
    }
    if ((rc = check_app_id(r, err, errlen)) != 0)
        goto fail;
    if (r->lock_fd >= 0 && (rc = recover(r, err, errlen)) != 0)
        goto fail;
    if (!write && r->lock_fd >= 0) { /* the reader is done with it */
        close(r->lock_fd);
        r->lock_fd = -1;
    }
    return 0;
fail:
    tw_registry_close(r);
    return rc;
}

void tw_registry_close(tw_registry *r)
{
    if (r->db) {
        sqlite3_stmt *st;
        while ((st = sqlite3_next_stmt(r->db, NULL)) != NULL)
            sqlite3_finalize(st);
        sqlite3_close(r->db);
    }
    if (r->lock_fd >= 0)
        close(r->lock_fd); /* releases the flock */
    free(r->path);
    memset(r, 0, sizeof *r);
    r->lock_fd = -1;
}

/* ---- revisions -------------------------------------------------------------------------------- */

void tw_revision_free(tw_revision *v)
{
    char **s[] = {&v->equipment_id, &v->content_hash, &v->content, &v->payload, &v->study_id,
                  &v->study_date, &v->printed, &v->output, &v->reason, &v->changes,
                  &v->approved_by, &v->lowered, &v->superseded_on, &v->removed_on};
    for (size_t i = 0; i < sizeof s / sizeof s[0]; i++)
        free(*s[i]);
    memset(v, 0, sizeof *v);
}

static tw_rev_status status_of(const char *s)
{
    return s && !strcmp(s, "current") ? TW_REV_CURRENT
         : s && !strcmp(s, "removed") ? TW_REV_REMOVED
                                      : TW_REV_SUPERSEDED;
}

static void row_revision(sqlite3_stmt *st, tw_revision *v)
{
    memset(v, 0, sizeof *v);
    v->equipment_id = col_text(st, 0);
    v->revision = sqlite3_column_int(st, 1);
    v->status = status_of((const char *)sqlite3_column_text(st, 2));
    v->content_hash = col_text(st, 3);
    v->content = col_text(st, 4);
    v->payload = col_text(st, 5);
    v->study_id = col_text(st, 6);
    v->study_date = col_text(st, 7);
    v->printed = col_text(st, 8);
    v->output = col_text(st, 9);
    v->volume = sqlite3_column_int(st, 10);
    v->page = sqlite3_column_int(st, 11);
    v->reason = col_text(st, 12);
    v->changes = col_text(st, 13);
    v->approved_by = col_text(st, 14);
    v->lowered = col_text(st, 15);
    v->superseded_on = col_text(st, 16);
    v->removed_on = col_text(st, 17);
    v->hazard.signal = sqlite3_column_type(st, 18) == SQLITE_NULL ? -1 : sqlite3_column_int(st, 18);
    v->hazard.incident_energy_cal = col_num(st, 19);
    v->hazard.ppe_category = sqlite3_column_type(st, 20) == SQLITE_NULL ? -1
                                                                        : sqlite3_column_int(st, 20);
    v->hazard.arc_rating_cal = col_num(st, 21);
    v->hazard.boundary_mm = col_num(st, 22);
    v->hazard.ppe_level_cal = col_num(st, 23);
}

int tw_registry_current(tw_registry *r, const char *equipment_id, tw_revision *out, char *err,
                        size_t errlen)
{
    sqlite3_stmt *st = prepare(r, "SELECT " REVISION_COLUMNS "FROM revisions r JOIN equipment e "
                               "ON e.id = r.equipment WHERE e.equipment_id = ?1 AND "
                               "r.status = 'current'");
    if (!st)
        return db_fail(r, err, errlen, "cannot read");
    bind_text(st, 1, equipment_id);
    int s = sqlite3_step(st), rc = 0;
    if (s == SQLITE_ROW) {
        row_revision(st, out);
        rc = 1;
    } else if (s != SQLITE_DONE)
        rc = db_fail(r, err, errlen, "cannot read");
    sqlite3_finalize(st);
    return rc;
}

char *tw_registry_other_spelling(tw_registry *r, const char *equipment_id)
{
    sqlite3_stmt *st = prepare(r, "SELECT equipment_id FROM equipment WHERE equipment_id = ?1");
    char *other = NULL;
    if (!st)
        return NULL;
    bind_text(st, 1, equipment_id);
    if (sqlite3_step(st) == SQLITE_ROW) {
        const char *s = (const char *)sqlite3_column_text(st, 0);
        if (s && strcmp(s, equipment_id) != 0)
            other = tw_strdup(s);
    }
    sqlite3_finalize(st);
    return other;
}

int tw_registry_find(tw_registry *r, const char *hash, const char *payload, tw_revision *out,
                     int *hash_seen, char *err, size_t errlen)
{
    /* The live (current or removed) revision first, then the latest. */
    sqlite3_stmt *st = prepare(r, "SELECT " REVISION_COLUMNS ", r.payload IS ?2 "
                               "FROM revisions r JOIN equipment e ON e.id = r.equipment "
                               "WHERE r.content_hash = ?1 "
                               "ORDER BY r.payload IS ?2 DESC, r.status = 'superseded', "
                               "r.revision DESC LIMIT 1");
    if (!st)
        return db_fail(r, err, errlen, "cannot read");
    bind_text(st, 1, hash);
    bind_text(st, 2, payload);
    *hash_seen = 0;
    int s = sqlite3_step(st), rc = 0;
    if (s == SQLITE_ROW) {
        *hash_seen = 1;
        if (sqlite3_column_int(st, 25)) {
            row_revision(st, out);
            rc = 1;
        }
    } else if (s != SQLITE_DONE)
        rc = db_fail(r, err, errlen, "cannot read");
    sqlite3_finalize(st);
    return rc;
}

int tw_registry_next_revision(tw_registry *r, const char *equipment_id, const char *hash,
                              int *revision, char *err, size_t errlen)
{
    sqlite3_stmt *st = prepare(r, "SELECT max(r.revision), "
                               "max(r.status = 'current' AND r.content_hash = ?2) "
                               "FROM revisions r JOIN equipment e ON e.id = r.equipment "
                               "WHERE e.equipment_id = ?1");
    if (!st)
        return db_fail(r, err, errlen, "cannot read");
    bind_text(st, 1, equipment_id);
    bind_text(st, 2, hash);
    int rc = 0;
    if (sqlite3_step(st) == SQLITE_ROW) {
        long long last = sqlite3_column_int64(st, 0); /* 0 when NULL: none yet */
        int same = sqlite3_column_int(st, 1);
        *revision = (int)(same ? last : last + 1);
        if (!same && last + 1 > TW_REGISTRY_MAX_REVISION)
            rc = fail(err, errlen, TW_EXIT_DATA, "%s: %s would reach revision %lld; at most %d "
                      "are recorded", r->path, equipment_id, last + 1, TW_REGISTRY_MAX_REVISION);
    } else
        rc = db_fail(r, err, errlen, "cannot read");
    sqlite3_finalize(st);
    return rc;
}

/* ---- hazard and change control ---------------------------------------------------------------- */

void tw_hazard_of_label(const tw_label *l, const tw_site *site, tw_hazard *h)
{
    h->signal = (int)l->signal;
    h->incident_energy_cal = l->value[TW_L_INCIDENT_ENERGY] ? l->incident_energy_cal : -1;
    h->ppe_category = l->value[TW_L_PPE_CATEGORY] ? atoi(l->value[TW_L_PPE_CATEGORY]) : -1;
    h->arc_rating_cal = l->value[TW_L_MIN_ARC_RATING] ? l->arc_rating_cal : -1;
    h->boundary_mm = l->value[TW_L_ARC_FLASH_BOUNDARY] ? l->boundary_mm : -1;
    h->ppe_level_cal = -1;
    if (l->value[TW_L_NO_PPE_ADEQUATE])
        h->ppe_level_cal = NO_LEVEL_CAL;
    else if (l->value[TW_L_PPE_LEVEL] && site) {
        const tw_ppe_level *lv = tw_site_level_for(site, l->arc_rating_cal);
        for (size_t i = 0; i < site->ppe_level_count; i++)
            if (!strcmp(site->ppe_levels[i].name, l->value[TW_L_PPE_LEVEL]))
                lv = &site->ppe_levels[i];
        if (lv)
            h->ppe_level_cal = lv->arc_rating_cal_cm2;
    }
}

/* The leading number of "key=" in a canonical form; -1 when absent or not a number. */
static double content_number(const char *content, const char *key)
{
    size_t k = strlen(key);
    for (const char *p = content; p && *p;) {
        if (!strncmp(p, key, k) && p[k] == '=') {
            char *end;
            double v = strtod(p + k + 1, &end);
            return end > p + k + 1 && isfinite(v) && v >= 0 ? v : -1;
        }
        p = strchr(p, '\n');
        p = p ? p + 1 : NULL;
    }
    return -1;
}

static const char *content_value(const char *content, const char *key, size_t *n)
{
    size_t k = strlen(key);
    for (const char *p = content; p && *p;) {
        const char *eol = strchr(p, '\n');
        if (!strncmp(p, key, k) && p[k] == '=') {
            *n = eol ? (size_t)(eol - p - k - 1) : strlen(p + k + 1);
            return p + k + 1;
        }
        p = eol ? eol + 1 : NULL;
    }
    return NULL;
}

/* The boundary in millimetres from its printed text: "... (536 mm)", "536 mm", "1.2 m" or
 * "1 ft 10 in". -1 when it cannot be read. */
static double boundary_from_text(const char *v, size_t n)
{
    char buf[128];
    if (!v || n >= sizeof buf)
        return -1;
    memcpy(buf, v, n);
    buf[n] = '\0';
    char *open = strchr(buf, '('), *end;
    const char *s = open ? open + 1 : buf;
    double a = strtod(s, &end);
    if (end == s || !isfinite(a))
        return -1;
    if (!strncmp(end, " mm", 3))
        return a;
    if (!strncmp(end, " m", 2))
        return a * 1000;
    if (!strncmp(end, " ft", 3)) {
        double in = strtod(end + 3, &end);
        return (a * 12 + (strncmp(end, " in", 3) ? 0 : in)) * 25.4;
    }
    return -1;
}

/* The hazard read back from a canonical form (imported revisions; no site to name levels). */
static void hazard_of_content(const char *c, tw_hazard *h)
{
    size_t n = 0;
    const char *sw = content_value(c, "signal_word", &n);
    h->signal = !sw ? -1 : (n >= 6 && !strncmp(sw, "DANGER", 6)) || (n >= 7 &&
                !strncmp(sw, "PELIGRO", 7)) ? 1 : 0;
    h->incident_energy_cal = content_number(c, "incident_energy");
    const char *cat = content_value(c, "ppe_category", &n);
    h->ppe_category = -1;
    for (size_t i = 0; cat && i < n; i++)
        if (cat[i] >= '0' && cat[i] <= '9') {
            h->ppe_category = cat[i] - '0';
            break;
        }
    h->arc_rating_cal = content_number(c, "min_arc_rating");
    const char *afb = content_value(c, "arc_flash_boundary", &n);
    h->boundary_mm = boundary_from_text(afb, n);
    h->ppe_level_cal = content_value(c, "no_ppe_adequate", &n) ? NO_LEVEL_CAL : -1;
}

static int lower(double o, double n)
{
    return o >= 0 && n >= 0 && n < o - 1e-9;
}

static int append(char **out, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static int append(char **out, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    char *part = tw_vasprintf(fmt, ap);
    va_end(ap);
    char *s = part ? tw_asprintf("%s%s%s", *out, **out ? "; " : "", part) : NULL;
    free(part);
    if (!s)
        return -1;
    free(*out);
    *out = s;
    return 0;
}

static void level_text(double cal, char *buf, size_t n)
{
    if (cal >= NO_LEVEL_CAL)
        snprintf(buf, n, "none adequate");
    else
        snprintf(buf, n, "a %g cal/cm2 kit", cal);
}

char *tw_hazard_lowered(const tw_hazard *o, const tw_hazard *n)
{
    char *out = tw_strdup("");
    int bad = !out;
    if (!bad && o->signal == 1 && n->signal == 0)
        bad = append(&out, "signal word DANGER -> WARNING");
    if (!bad && lower(o->incident_energy_cal, n->incident_energy_cal))
        bad = append(&out, "incident energy %.1f -> %.1f cal/cm2", o->incident_energy_cal,
                     n->incident_energy_cal);
    if (!bad && lower(o->ppe_category, n->ppe_category))
        bad = append(&out, "PPE category %d -> %d", o->ppe_category, n->ppe_category);
    if (!bad && lower(o->arc_rating_cal, n->arc_rating_cal))
        bad = append(&out, "minimum arc rating %.1f -> %.1f cal/cm2", o->arc_rating_cal,
                     n->arc_rating_cal);
    if (!bad && lower(o->boundary_mm, n->boundary_mm))
        bad = append(&out, "arc-flash boundary %.0f -> %.0f mm", o->boundary_mm, n->boundary_mm);
    if (!bad && lower(o->ppe_level_cal, n->ppe_level_cal)) {
        char a[48], b[48];
        level_text(o->ppe_level_cal, a, sizeof a);
        level_text(n->ppe_level_cal, b, sizeof b);
        bad = append(&out, "site PPE level %s -> %s", a, b);
    }
    if (bad) {
        free(out);
        return NULL;
    }
    return out;
}

/* A lower-case copy of an ID, for comparing without regard to case (ASCII, as SQLite's
 * NOCASE does). */
static char *fold(tw_arena *a, const char *s)
{
    size_t n = strlen(s);
    char *f = tw_arena_strndup(a, s, n);
    for (size_t i = 0; f && i < n; i++)
        if (f[i] >= 'A' && f[i] <= 'Z')
            f[i] = (char)(f[i] + 32);
    return f;
}

int tw_registry_plan(tw_registry *r, const tw_label *labels, size_t n, const tw_site *site,
                     int *revision, char **lowered, char *err, size_t errlen)
{
    sqlite3_stmt *st = prepare(r,
        "SELECT e.equipment_id, (SELECT max(revision) FROM revisions WHERE equipment = e.id), "
        "c.content_hash, c.signal, c.incident_energy_cal, c.ppe_category, c.arc_rating_cal, "
        "c.boundary_mm, c.ppe_level_cal, c.id IS NOT NULL "
        "FROM equipment e LEFT JOIN revisions c ON c.equipment = e.id AND c.status = 'current' "
        "WHERE e.equipment_id = ?1");
    if (!st)
        return db_fail(r, err, errlen, "cannot read");
    tw_map seen;
    tw_map_init(&seen);
    tw_arena keys = {0};
    int rc = 0;
    for (size_t i = 0; !rc && i < n; i++) {
        const tw_label *l = &labels[i];
        const char *id = l->value[TW_L_EQUIPMENT_ID];
        lowered[i] = NULL;
        char *key = fold(&keys, id);
        size_t j;
        int got = key ? tw_map_get_or_put(&seen, key, i, &j) : -1;
        if (got < 0) {
            rc = fail(err, errlen, TW_EXIT_IO, "out of memory");
            break;
        }
        if (got == 1 && strcmp(labels[j].value[TW_L_EQUIPMENT_ID], id) != 0) {
            rc = fail(err, errlen, TW_EXIT_DATA, "equipment IDs '%s' and '%s' differ only in "
                      "case; expected one spelling per equipment (the registry compares IDs "
                      "without regard to case)", labels[j].value[TW_L_EQUIPMENT_ID], id);
            break;
        }
        bind_text(st, 1, id);
        int s = sqlite3_step(st);
        revision[i] = 1;
        tw_hazard old_h = {-1, -1, -1, -1, -1, -1};
        int has_current = 0;
        if (s == SQLITE_ROW) {
            const char *have = (const char *)sqlite3_column_text(st, 0);
            if (have && strcmp(have, id) != 0) {
                rc = fail(err, errlen, TW_EXIT_DATA, "%s: equipment ID '%s' differs only in "
                          "case from '%s' in the registry; expected the same spelling (IDs are "
                          "unique without regard to case)", r->path, id, have);
                sqlite3_reset(st);
                break;
            }
            long long last = sqlite3_column_int64(st, 1);
            const char *hash = (const char *)sqlite3_column_text(st, 2);
            has_current = sqlite3_column_int(st, 9);
            int same = has_current && hash && !strcmp(hash, l->hash);
            revision[i] = (int)(same ? last : last + 1);
            if (!same && last + 1 > TW_REGISTRY_MAX_REVISION)
                rc = fail(err, errlen, TW_EXIT_DATA, "%s: %s would reach revision %lld; at most "
                          "%d are recorded", r->path, id, last + 1, TW_REGISTRY_MAX_REVISION);
            old_h.signal = sqlite3_column_type(st, 3) == SQLITE_NULL ? -1
                                                                     : sqlite3_column_int(st, 3);
            old_h.incident_energy_cal = col_num(st, 4);
            old_h.ppe_category = sqlite3_column_type(st, 5) == SQLITE_NULL
                                     ? -1 : sqlite3_column_int(st, 5);
            old_h.arc_rating_cal = col_num(st, 6);
            old_h.boundary_mm = col_num(st, 7);
            old_h.ppe_level_cal = col_num(st, 8);
        } else if (s != SQLITE_DONE)
            rc = db_fail(r, err, errlen, "cannot read");
        sqlite3_reset(st);
        if (rc || l->draft)
            continue;
        tw_hazard new_h;
        tw_hazard_of_label(l, site, &new_h);
        lowered[i] = has_current ? tw_hazard_lowered(&old_h, &new_h) : tw_strdup("");
        if (!lowered[i])
            rc = fail(err, errlen, TW_EXIT_IO, "out of memory");
    }
    sqlite3_finalize(st);
    tw_map_free(&seen);
    tw_arena_free(&keys);
    return rc;
}

/* ---- recording a run ------------------------------------------------------------------------ */

int tw_registry_stage(tw_registry *r, const char *const *pending, const char *const *target,
                      size_t n, long long *run, char *err, size_t errlen)
{
    if (exec(r, "BEGIN IMMEDIATE", err, errlen) != 0)
        return TW_EXIT_IO;
    int rc = exec(r, "INSERT INTO pending_runs(state) VALUES ('staging')", err, errlen);
    *run = sqlite3_last_insert_rowid(r->db);
    sqlite3_stmt *st = rc ? NULL : prepare(r, "INSERT INTO pending_files(run, pending, target) "
                                              "VALUES (?1, ?2, ?3)");
    if (!rc && !st)
        rc = db_fail(r, err, errlen, "cannot journal the run");
    for (size_t i = 0; !rc && i < n; i++) {
        sqlite3_reset(st);
        sqlite3_bind_int64(st, 1, *run);
        bind_text(st, 2, pending[i]);
        bind_text(st, 3, target[i]);
        if (sqlite3_step(st) != SQLITE_DONE)
            rc = db_fail(r, err, errlen, "cannot journal the run");
    }
    sqlite3_finalize(st);
    if (!rc)
        rc = exec(r, "COMMIT", err, errlen);
    if (rc)
        rollback(r);
    return rc;
}

/* The statements one recorded label needs, prepared once per run. */
typedef struct {
    sqlite3_stmt *find_eq, *add_eq, *live, *max_rev, *same, *retire, *add_rev;
} recorder;

static void recorder_free(recorder *k)
{
    sqlite3_finalize(k->find_eq);
    sqlite3_finalize(k->add_eq);
    sqlite3_finalize(k->live);
    sqlite3_finalize(k->max_rev);
    sqlite3_finalize(k->same);
    sqlite3_finalize(k->retire);
    sqlite3_finalize(k->add_rev);
}

static int recorder_init(tw_registry *r, recorder *k)
{
    memset(k, 0, sizeof *k);
    k->find_eq = prepare(r, "SELECT id, equipment_id FROM equipment WHERE equipment_id = ?1");
    k->add_eq = prepare(r, "INSERT INTO equipment(equipment_id) VALUES (?1)");
    k->live = prepare(r, "SELECT id, status, content_hash, content FROM revisions "
                         "WHERE equipment = ?1 ORDER BY revision DESC LIMIT 1");
    k->max_rev = prepare(r, "SELECT coalesce(max(revision), 0) FROM revisions WHERE equipment = ?1");
    k->same = prepare(r, "UPDATE revisions SET printed = ?2, output = ?3, volume = ?4, page = ?5, "
                         "payload = ?6 WHERE id = ?1");
    k->retire = prepare(r, "UPDATE revisions SET status = 'superseded', superseded_on = ?2 "
                           "WHERE equipment = ?1 AND status <> 'superseded'");
    k->add_rev = prepare(r, "INSERT INTO revisions(equipment, revision, status, content_hash, "
                            "content, payload, study_id, study_date, printed, output, volume, page, "
                            "reason, changes, approved_by, lowered, signal, incident_energy_cal, "
                            "ppe_category, arc_rating_cal, boundary_mm, ppe_level_cal) VALUES "
                            "(?1, ?2, 'current', ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, "
                            "?14, ?15, ?16, ?17, ?18, ?19, ?20, ?21)");
    if (!k->find_eq || !k->add_eq || !k->live || !k->max_rev || !k->same || !k->retire ||
        !k->add_rev) {
        recorder_free(k);
        return -1;
    }
    return 0;
}

static int step_done(sqlite3_stmt *st)
{
    int s = sqlite3_step(st);
    sqlite3_reset(st);
    return s == SQLITE_DONE ? 0 : -1;
}

/* The equipment's row id, added when new; a spelling that differs only in case is refused. */
static int equipment_row(tw_registry *r, recorder *k, const char *id, sqlite3_int64 *row,
                         char *err, size_t errlen)
{
    sqlite3_reset(k->find_eq);
    bind_text(k->find_eq, 1, id);
    int s = sqlite3_step(k->find_eq);
    if (s == SQLITE_ROW) {
        *row = sqlite3_column_int64(k->find_eq, 0);
        const char *have = (const char *)sqlite3_column_text(k->find_eq, 1);
        int same = have && !strcmp(have, id);
        int rc = same ? 0 : fail(err, errlen, TW_EXIT_DATA, "%s: equipment ID '%s' differs only "
                                 "in case from '%s' in the registry; expected the same spelling "
                                 "(IDs are unique without regard to case)", r->path, id,
                                 have ? have : "");
        sqlite3_reset(k->find_eq);
        return rc;
    }
    sqlite3_reset(k->find_eq);
    if (s != SQLITE_DONE)
        return db_fail(r, err, errlen, "cannot read");
    bind_text(k->add_eq, 1, id);
    if (step_done(k->add_eq) != 0)
        return db_fail(r, err, errlen, "cannot record");
    *row = sqlite3_last_insert_rowid(r->db);
    return 0;
}

static int record_one(tw_registry *r, recorder *k, const tw_registry_print *p, const char *date,
                      char *err, size_t errlen)
{
    sqlite3_int64 eq = 0;
    int rc = equipment_row(r, k, p->equipment_id, &eq, err, errlen);
    if (rc)
        return rc;
    sqlite3_bind_int64(k->live, 1, eq);
    int s = sqlite3_step(k->live);
    sqlite3_int64 live = 0;
    int has_live = s == SQLITE_ROW, current = 0;
    char *old_content = NULL;
    if (has_live) {
        live = sqlite3_column_int64(k->live, 0);
        const char *status = (const char *)sqlite3_column_text(k->live, 1);
        const char *hash = (const char *)sqlite3_column_text(k->live, 2);
        current = status && !strcmp(status, "current") && hash && !strcmp(hash, p->hash);
        old_content = col_text(k->live, 3);
    }
    sqlite3_reset(k->live);
    if (s != SQLITE_ROW && s != SQLITE_DONE) {
        free(old_content);
        return db_fail(r, err, errlen, "cannot read");
    }
    if (current) { /* same content printed again: same revision, new place */
        free(old_content);
        sqlite3_bind_int64(k->same, 1, live);
        bind_text(k->same, 2, date);
        bind_text(k->same, 3, p->output);
        sqlite3_bind_int(k->same, 4, p->volume);
        sqlite3_bind_int(k->same, 5, p->page);
        bind_text(k->same, 6, p->payload);
        return step_done(k->same) ? db_fail(r, err, errlen, "cannot record") : 0;
    }
    sqlite3_bind_int64(k->max_rev, 1, eq);
    long long rev = sqlite3_step(k->max_rev) == SQLITE_ROW ? sqlite3_column_int64(k->max_rev, 0) + 1
                                                           : -1;
    sqlite3_reset(k->max_rev);
    char *changes = has_live ? tw_manifest_changes(old_content, p->content) : NULL;
    free(old_content);
    if (rev < 1 || rev > TW_REGISTRY_MAX_REVISION || (has_live && !changes)) {
        free(changes);
        return rev > TW_REGISTRY_MAX_REVISION
                   ? fail(err, errlen, TW_EXIT_DATA, "%s: %s would reach revision %lld; at most "
                          "%d are recorded", r->path, p->equipment_id, rev,
                          TW_REGISTRY_MAX_REVISION)
                   : db_fail(r, err, errlen, "cannot read");
    }
    sqlite3_bind_int64(k->retire, 1, eq);
    bind_text(k->retire, 2, date);
    sqlite3_stmt *a = k->add_rev;
    sqlite3_bind_int64(a, 1, eq);
    sqlite3_bind_int64(a, 2, rev);
    bind_text(a, 3, p->hash);
    bind_text(a, 4, p->content);
    bind_text(a, 5, p->payload);
    bind_text(a, 6, p->study_id);
    bind_text(a, 7, p->study_date);
    bind_text(a, 8, date);
    bind_text(a, 9, p->output);
    sqlite3_bind_int(a, 10, p->volume);
    sqlite3_bind_int(a, 11, p->page);
    bind_text(a, 12, p->reason);
    bind_text(a, 13, changes);
    bind_text(a, 14, p->approved_by);
    bind_text(a, 15, p->lowered && *p->lowered ? p->lowered : NULL);
    if (p->hazard.signal >= 0)
        sqlite3_bind_int(a, 16, p->hazard.signal);
    else
        sqlite3_bind_null(a, 16);
    bind_num(a, 17, p->hazard.incident_energy_cal);
    if (p->hazard.ppe_category >= 0)
        sqlite3_bind_int(a, 18, p->hazard.ppe_category);
    else
        sqlite3_bind_null(a, 18);
    bind_num(a, 19, p->hazard.arc_rating_cal);
    bind_num(a, 20, p->hazard.boundary_mm);
    bind_num(a, 21, p->hazard.ppe_level_cal);
    rc = step_done(k->retire) || step_done(a) ? db_fail(r, err, errlen, "cannot record") : 0;
    sqlite3_clear_bindings(a);
    free(changes);
    return rc;
}

static int mark_removed(tw_registry *r, const char *const *removed, size_t n, const char *date,
                        const char *reason, char *err, size_t errlen)
{
    sqlite3_stmt *st = prepare(r, "UPDATE revisions SET status = 'removed', removed_on = ?2, "
                               "removed_reason = ?3 WHERE status = 'current' AND equipment = "
                               "(SELECT id FROM equipment WHERE equipment_id = ?1)");
    if (!st)
        return db_fail(r, err, errlen, "cannot record");
    int rc = 0;
    for (size_t i = 0; !rc && i < n; i++) {
        bind_text(st, 1, removed[i]);
        bind_text(st, 2, date);
        bind_text(st, 3, reason);
        if (step_done(st) != 0)
            rc = db_fail(r, err, errlen, "cannot record");
    }
    sqlite3_finalize(st);
    return rc;
}

int tw_registry_record(tw_registry *r, long long run, const tw_registry_print *p, size_t n,
                       const char *const *removed, size_t nremoved, const char *date,
                       char *err, size_t errlen)
{
    recorder k;
    if (exec(r, "BEGIN IMMEDIATE", err, errlen) != 0)
        return TW_EXIT_IO;
    if (recorder_init(r, &k) != 0) {
        int rc = db_fail(r, err, errlen, "cannot record");
        rollback(r);
        return rc;
    }
    int rc = 0;
    for (size_t i = 0; !rc && i < n; i++)
        rc = record_one(r, &k, &p[i], date, err, errlen);
    recorder_free(&k);
    if (!rc && nremoved)
        rc = mark_removed(r, removed, nremoved, date, n ? p[0].reason : NULL, err, errlen);
    char sql[96];
    snprintf(sql, sizeof sql, "UPDATE pending_runs SET state = 'publishing' WHERE id = %lld", run);
    if (!rc)
        rc = exec(r, sql, err, errlen);
    if (!rc)
        rc = exec(r, "COMMIT", err, errlen);
    if (rc)
        rollback(r);
    return rc;
}

int tw_registry_remove(tw_registry *r, const char *const *removed, size_t n, const char *date,
                       const char *reason, char *err, size_t errlen)
{
    if (exec(r, "BEGIN IMMEDIATE", err, errlen) != 0)
        return TW_EXIT_IO;
    int rc = mark_removed(r, removed, n, date, reason, err, errlen);
    if (!rc)
        rc = exec(r, "COMMIT", err, errlen);
    if (rc)
        rollback(r);
    return rc;
}

/* Each pending file of run: renamed over its target (publish) or removed. */
static int settle_files(tw_registry *r, long long run, int publish, char *err, size_t errlen)
{
    sqlite3_stmt *st = prepare(r, "SELECT pending, target FROM pending_files WHERE run = ?1 "
                               "ORDER BY rowid");
    if (!st)
        return db_fail(r, err, errlen, "cannot read the run journal");
    sqlite3_bind_int64(st, 1, run);
    int rc = 0, s;
    while ((s = sqlite3_step(st)) == SQLITE_ROW) {
        const char *pending = (const char *)sqlite3_column_text(st, 0);
        const char *target = (const char *)sqlite3_column_text(st, 1);
        struct stat sb;
        if (!pending || !target || lstat(pending, &sb) != 0)
            continue; /* already renamed (or never made) */
        if (!publish)
            unlink(pending);
        else if (!rc && tw_atomic_publish(pending, target, err, errlen) != 0)
            rc = TW_EXIT_IO;
    }
    if (s != SQLITE_DONE && !rc)
        rc = db_fail(r, err, errlen, "cannot read the run journal");
    sqlite3_finalize(st);
    if (rc)
        return rc;
    char sql[80];
    snprintf(sql, sizeof sql, "DELETE FROM pending_runs WHERE id = %lld", run);
    return exec(r, sql, err, errlen);
}

int tw_registry_finish(tw_registry *r, long long run, char *err, size_t errlen)
{
    return settle_files(r, run, 1, err, errlen);
}

void tw_registry_abandon(tw_registry *r, long long run)
{
    char err[256];
    settle_files(r, run, 0, err, sizeof err);
}

/* Finish every run a killed writer left publishing; clear every one left staging. */
static int recover(tw_registry *r, char *err, size_t errlen)
{
    sqlite3_stmt *st = prepare(r, "SELECT id, state = 'publishing' FROM pending_runs");
    if (!st)
        return db_fail(r, err, errlen, "cannot read the run journal");
    long long ids[64];
    int publish[64];
    size_t n = 0;
    while (n < 64 && sqlite3_step(st) == SQLITE_ROW) {
        ids[n] = sqlite3_column_int64(st, 0);
        publish[n++] = sqlite3_column_int(st, 1);
    }
    sqlite3_finalize(st);
    if (n && sqlite3_db_readonly(r->db, "main"))
        return 0; /* a read-only copy: nothing to finish here */
    for (size_t i = 0; i < n; i++) {
        int rc = settle_files(r, ids[i], publish[i], err, errlen);
        if (rc)
            return rc;
    }
    return n == 64 ? recover(r, err, errlen) : 0;
}

/* ---- export ------------------------------------------------------------------------------------ */

static const char *const export_keys[] = {
    "equipment_id", "revision", "status", "content_hash", "study_id", "study_date", "printed",
    "output", "volume", "page", "payload", "reason", "changes", "approved_by", "lowered",
    "superseded_on", "removed_on", "removed_reason", "content",
};
#define EXPORT_KEYS (sizeof export_keys / sizeof export_keys[0])

static void csv_field(FILE *out, const char *s)
{
    if (!s)
        return;
    if (!strpbrk(s, ",\"\r\n")) {
        fputs(s, out);
        return;
    }
    fputc('"', out);
    for (; *s; s++) {
        if (*s == '"')
            fputc('"', out);
        fputc(*s, out);
    }
    fputc('"', out);
}

/* One revision as an object, keys in export_keys order. */
static cJSON *revision_json(const tw_revision *v, const char *removed_reason)
{
    cJSON *o = cJSON_CreateObject();
    const char *text[EXPORT_KEYS] = {
        v->equipment_id, NULL, tw_rev_status_name(v->status), v->content_hash, v->study_id,
        v->study_date, v->printed, v->output, NULL, NULL, v->payload, v->reason, v->changes,
        v->approved_by, v->lowered, v->superseded_on, v->removed_on, removed_reason, v->content,
    };
    int num[EXPORT_KEYS] = {0};
    num[1] = v->revision;
    num[8] = v->volume;
    num[9] = v->page;
    for (size_t i = 0; o && i < EXPORT_KEYS; i++) {
        cJSON *item = i == 1 || i == 8 || i == 9 ? cJSON_CreateNumber(num[i])
                      : text[i]                  ? cJSON_CreateString(text[i])
                                                 : cJSON_CreateNull();
        if (!item || !cJSON_AddItemToObject(o, export_keys[i], item)) {
            cJSON_Delete(item);
            cJSON_Delete(o);
            return NULL;
        }
    }
    return o;
}

static void csv_row(FILE *out, const tw_revision *v, const char *removed_reason)
{
    const char *text[EXPORT_KEYS] = {
        v->equipment_id, NULL, tw_rev_status_name(v->status), v->content_hash, v->study_id,
        v->study_date, v->printed, v->output, NULL, NULL, v->payload, v->reason, v->changes,
        v->approved_by, v->lowered, v->superseded_on, v->removed_on, removed_reason, v->content,
    };
    for (size_t i = 0; i < EXPORT_KEYS; i++) {
        if (i)
            fputc(',', out);
        if (i == 1 || i == 8 || i == 9)
            fprintf(out, "%d", i == 1 ? v->revision : i == 8 ? v->volume : v->page);
        else
            csv_field(out, text[i]);
    }
    fputs("\r\n", out);
}

int tw_registry_export(tw_registry *r, FILE *out, int csv, const tw_rev_status *status,
                       char *err, size_t errlen)
{
    sqlite3_stmt *st = prepare(r, "SELECT " REVISION_COLUMNS "FROM revisions r JOIN equipment e "
                               "ON e.id = r.equipment WHERE ?1 IS NULL OR r.status = ?1 "
                               "ORDER BY e.equipment_id, r.revision");
    if (!st)
        return db_fail(r, err, errlen, "cannot read");
    bind_text(st, 1, status ? tw_rev_status_name(*status) : NULL);
    if (csv) {
        for (size_t i = 0; i < EXPORT_KEYS; i++)
            fprintf(out, "%s%s", i ? "," : "", export_keys[i]);
        fputs("\r\n", out);
    } else {
        fputs("{\n  \"format\": \"tagwright-manifest\",\n  \"version\": 2,\n  \"labels\": [", out);
    }
    int s, first = 1, rc = 0;
    while (!rc && (s = sqlite3_step(st)) == SQLITE_ROW) {
        tw_revision v;
        row_revision(st, &v);
        const char *removed_reason = (const char *)sqlite3_column_text(st, 24);
        if (csv) {
            csv_row(out, &v, removed_reason);
        } else {
            cJSON *o = revision_json(&v, removed_reason);
            char *text = o ? cJSON_PrintUnformatted(o) : NULL;
            if (text)
                fprintf(out, "%s\n    %s", first ? "" : ",", text);
            else
                rc = fail(err, errlen, TW_EXIT_IO, "out of memory");
            free(text);
            cJSON_Delete(o);
        }
        first = 0;
        tw_revision_free(&v);
    }
    if (!rc && s != SQLITE_DONE)
        rc = db_fail(r, err, errlen, "cannot read");
    sqlite3_finalize(st);
    if (!csv && !rc)
        fputs(first ? "]\n}\n" : "\n  ]\n}\n", out);
    if (!rc && (fflush(out) != 0 || ferror(out)))
        rc = fail(err, errlen, TW_EXIT_IO, "cannot write the export: %s", strerror(errno));
    return rc;
}

/* ---- import ------------------------------------------------------------------------------------ */

/* 1 when content's SHA-256 is hash. */
static int hash_matches(const char *content, const char *hash)
{
    unsigned char md[EVP_MAX_MD_SIZE];
    unsigned int n = 0;
    if (!content || !EVP_Digest(content, strlen(content), md, &n, EVP_sha256(), NULL) || n != 32)
        return 0;
    char hex[65];
    for (unsigned i = 0; i < n; i++)
        snprintf(hex + 2 * i, 3, "%02x", md[i]);
    return !strcmp(hex, hash);
}

/* The manifest's own rules, beyond what its reader checks: content matches its hash, every
 * equipment ID has one spelling, each revision number appears once per equipment, and no
 * equipment is already in the registry. */
static int import_rules(const char *name, const tw_manifest *m, char *err, size_t errlen)
{
    tw_map seen;
    tw_map_init(&seen);
    tw_arena keys = {0};
    int rc = 0;
    char key[600];
    for (size_t i = 0; !rc && i < m->count; i++) {
        const tw_manifest_entry *e = &m->entries[i];
        if (!e->content)
            rc = fail(err, errlen, TW_EXIT_DATA, "%s:labels[%zu]: content: missing; expected the "
                      "label's canonical form (its hash is checked against it)", name, i);
        else if (!hash_matches(e->content, e->content_hash))
            rc = fail(err, errlen, TW_EXIT_DATA, "%s:labels[%zu]: content_hash: does not match "
                      "the SHA-256 of content; expected an unedited manifest", name, i);
        if (rc)
            break;
        size_t k = 0;
        for (const char *p = e->equipment_id; *p && k < 500; p++)
            key[k++] = (char)(*p >= 'A' && *p <= 'Z' ? *p + 32 : *p);
        snprintf(key + k, sizeof key - k, "\x1f%d", e->revision);
        size_t j;
        if (tw_map_get(&seen, key, &j))
            rc = fail(err, errlen, TW_EXIT_DATA, "%s:labels[%zu]: revision: %s revision %d is "
                      "given twice (first at labels[%zu]); expected each revision once "
                      "(equipment IDs are compared without regard to case)", name, i,
                      e->equipment_id, e->revision, j);
        else {
            char *kept = tw_arena_strndup(&keys, key, strlen(key));
            if (!kept || tw_map_put(&seen, kept, i) != 0)
                rc = fail(err, errlen, TW_EXIT_IO, "out of memory");
        }
    }
    tw_map_free(&seen);
    tw_arena_free(&keys);
    return rc;
}

static int import_check(tw_registry *r, const char *name, const tw_manifest *m, char *err,
                        size_t errlen)
{
    int rc = import_rules(name, m, err, errlen);
    sqlite3_stmt *st = rc ? NULL : prepare(r, "SELECT equipment_id FROM equipment "
                                              "WHERE equipment_id = ?1");
    for (size_t i = 0; !rc && st && i < m->count; i++) {
        bind_text(st, 1, m->entries[i].equipment_id);
        if (sqlite3_step(st) == SQLITE_ROW)
            rc = fail(err, errlen, TW_EXIT_DATA, "%s:labels[%zu]: equipment_id: %s is already "
                      "in the registry %s; expected a manifest of equipment not yet recorded",
                      name, i, m->entries[i].equipment_id, r->path);
        sqlite3_reset(st);
    }
    sqlite3_finalize(st);
    return rc;
}

static int import_entry(tw_registry *r, sqlite3_stmt *eq, sqlite3_stmt *find, sqlite3_stmt *add,
                        const tw_manifest_entry *e)
{
    sqlite3_int64 row = 0;
    bind_text(find, 1, e->equipment_id);
    if (sqlite3_step(find) == SQLITE_ROW) {
        row = sqlite3_column_int64(find, 0);
        sqlite3_reset(find);
    } else {
        sqlite3_reset(find);
        bind_text(eq, 1, e->equipment_id);
        if (step_done(eq) != 0)
            return -1;
        row = sqlite3_last_insert_rowid(r->db);
    }
    tw_hazard h;
    hazard_of_content(e->content, &h);
    const char *status = e->removed ? "removed" : e->current ? "current" : "superseded";
    const char *text[] = {status, e->content_hash, e->content, e->payload, e->study_id,
                          e->study_date, e->printed, e->output, e->reason, e->changes,
                          e->approved_by, e->lowered, e->superseded_on, e->removed_on,
                          e->removed_reason};
    sqlite3_bind_int64(add, 1, row);
    sqlite3_bind_int(add, 2, e->revision);
    for (int i = 0; i < 15; i++)
        bind_text(add, 3 + i, text[i]);
    sqlite3_bind_int(add, 18, e->volume);
    sqlite3_bind_int(add, 19, e->page);
    if (h.signal >= 0)
        sqlite3_bind_int(add, 20, h.signal);
    else
        sqlite3_bind_null(add, 20);
    bind_num(add, 21, h.incident_energy_cal);
    if (h.ppe_category >= 0)
        sqlite3_bind_int(add, 22, h.ppe_category);
    else
        sqlite3_bind_null(add, 22);
    bind_num(add, 23, h.arc_rating_cal);
    bind_num(add, 24, h.boundary_mm);
    bind_num(add, 25, h.ppe_level_cal);
    return step_done(add);
}

/* Load a manifest; TW_EXIT_DATA with the first finding ("FILE:PATH: field: message", or
 * FILE:LINE where the JSON itself is broken). */
static int import_load(const char *name, const char *data, size_t len, tw_manifest *m,
                       char *err, size_t errlen)
{
    tw_diags d;
    tw_diags_init(&d);
    if (tw_manifest_load_mem(name, data, len, m, &d) != 0) {
        const tw_diag *g = d.count ? &d.items[0] : NULL;
        char at[32] = "$";
        if (g && !g->path && g->line > 0)
            snprintf(at, sizeof at, "%ld", g->line); /* a JSON syntax error has a line */
        fail(err, errlen, TW_EXIT_DATA, "%s:%s: %s%s%s", name, g && g->path ? g->path : at,
             g && g->field ? g->field : "", g && g->field ? ": " : "",
             g && g->message ? g->message : "not a manifest");
        tw_diags_free(&d);
        tw_manifest_close(m);
        return TW_EXIT_DATA;
    }
    tw_diags_free(&d);
    return 0;
}

int tw_registry_import_check(const char *name, const char *data, size_t len, char *err,
                             size_t errlen)
{
    tw_manifest m;
    int rc = import_load(name, data, len, &m, err, errlen);
    if (rc == 0) {
        rc = import_rules(name, &m, err, errlen);
        tw_manifest_close(&m);
    }
    return rc;
}

int tw_registry_import(tw_registry *r, const char *name, const char *data, size_t len,
                       size_t *count, char *err, size_t errlen)
{
    tw_manifest m;
    *count = 0;
    int rc = import_load(name, data, len, &m, err, errlen);
    if (rc)
        return rc;
    rc = exec(r, "BEGIN IMMEDIATE", err, errlen);
    if (!rc)
        rc = import_check(r, name, &m, err, errlen);
    sqlite3_stmt *eq = rc ? NULL : prepare(r, "INSERT INTO equipment(equipment_id) VALUES (?1)");
    sqlite3_stmt *find = rc ? NULL : prepare(r, "SELECT id FROM equipment WHERE equipment_id = ?1");
    sqlite3_stmt *add = rc ? NULL : prepare(r,
        "INSERT INTO revisions(equipment, revision, status, content_hash, content, payload, "
        "study_id, study_date, printed, output, reason, changes, approved_by, lowered, "
        "superseded_on, removed_on, removed_reason, volume, page, signal, incident_energy_cal, "
        "ppe_category, arc_rating_cal, boundary_mm, ppe_level_cal) VALUES (?1, ?2, ?3, ?4, ?5, "
        "?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17, ?18, ?19, ?20, ?21, ?22, ?23, "
        "?24, ?25)");
    if (!rc && (!eq || !find || !add))
        rc = db_fail(r, err, errlen, "cannot import");
    for (size_t i = 0; !rc && i < m.count; i++)
        if (import_entry(r, eq, find, add, &m.entries[i]) != 0)
            rc = fail(err, errlen, TW_EXIT_DATA, "%s:labels[%zu]: %s revision %d: refused by the "
                      "registry: %s", name, i, m.entries[i].equipment_id, m.entries[i].revision,
                      sqlite3_errmsg(r->db));
    sqlite3_finalize(eq);
    sqlite3_finalize(find);
    sqlite3_finalize(add);
    if (!rc)
        rc = exec(r, "COMMIT", err, errlen);
    if (rc)
        rollback(r);
    else
        *count = m.count;
    tw_manifest_close(&m);
    return rc;
}
