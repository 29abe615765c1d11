/* cmd_verify.c - `tagwright verify [--site SITE.json | --manifest REG] PAYLOAD`: is the label in
 * front of me the current one? PAYLOAD is the text a QR scanner reads off the label ("-": one
 * line on stdin). The registry is the site's (site.json "registry") or --manifest's.
 *
 * Exit status (its own, as the outcome is the answer; docs/lifecycle.md):
 *   0 current     the payload is exactly what was printed for the current revision
 *   1 superseded  printed for a revision that has since been replaced (the current revision
 *                 and what changed are shown), or removed: the equipment left the study and
 *                 the label is to be taken down
 *   2             usage: a bad option, or a payload on stdin that is not one line of text (a NUL
 *                 byte, a second line, too long), with a message on stderr and nothing on stdout
 *   3             the registry cannot be read or is not a registry
 *   4 unknown     no content hash, a hash the registry does not hold, or a payload that differs
 *                 from what was printed with that hash (altered)
 * An answer always prints a line starting "current", "superseded", "removed" or "unknown" on
 * stdout. Each answer shows who approved a revision that lowered the hazard, and why. The
 * registry is read without its lock (SQLite WAL: a reader sees the last committed state), one
 * indexed lookup, so the cost does not grow with the number of labels. */
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <openssl/evp.h>

#include "cli/tw_cli.h"
#include "read/tw_site.h"
#include "write/tw_manifest.h"
#include "write/tw_registry.h"
#include "write/tw_qr.h"
#include "base/tw_util.h"

static const char verify_usage[] =
    "usage: tagwright verify (--site SITE.json | --manifest REG) PAYLOAD\n"
    "  PAYLOAD     the text read from the label's QR code; '-' reads one line from stdin\n"
    "  --site      site settings naming the registry (\"registry\")\n"
    "  --manifest  the registry itself (overrides the site's)\n"
    "Prints current, superseded (with the current revision and what changed), removed or\n"
    "unknown. Exit 0 current, 1 superseded or removed, 2 usage, 3 registry unreadable,\n"
    "4 unknown.\n";

enum { VERIFY_CURRENT = 0, VERIFY_SUPERSEDED = 1, VERIFY_NO_MANIFEST = 3, VERIFY_UNKNOWN = 4 };

/* Longest payload read from stdin, bytes (a QR code holds at most 2953). */
#define VERIFY_MAX_PAYLOAD 8192

/* Remove the line end and blanks a scanner may add. */
static void chomp(char *s)
{
    size_t n = strlen(s);
    while (n && (s[n - 1] == '\n' || s[n - 1] == '\r' || s[n - 1] == ' ' || s[n - 1] == '\t'))
        s[--n] = '\0';
}

/* The payload; NULL when out of memory or when the text on stdin is not one line of a QR
 * code (*problem says why: too long, a NUL byte, more than one line), which is refused rather
 * than cut short or read in part. */
static char *read_payload(const char *arg, const char **problem)
{
    *problem = NULL;
    if (strcmp(arg, "-"))
        return tw_strdup(arg);
    char *buf = malloc(VERIFY_MAX_PAYLOAD + 2);
    if (!buf)
        return NULL;
    size_t n = fread(buf, 1, VERIFY_MAX_PAYLOAD + 2, stdin);
    buf[n < VERIFY_MAX_PAYLOAD + 2 ? n : VERIFY_MAX_PAYLOAD + 1] = '\0';
    size_t end = n;
    if (end && buf[end - 1] == '\n')
        end--;
    if (end && buf[end - 1] == '\r')
        end--;
    if (end > VERIFY_MAX_PAYLOAD)
        *problem = "is longer than 8192 bytes; expected the text of one QR code (at most 2953 "
                   "bytes)";
    else if (memchr(buf, '\0', end))
        *problem = "holds a NUL byte; expected the text of one QR code";
    else if (memchr(buf, '\n', end) || memchr(buf, '\r', end))
        *problem = "holds more than one line; expected the text of one QR code on one line";
    if (*problem) {
        free(buf);
        return NULL;
    }
    buf[end] = '\0';
    return buf;
}

/* 1 when content's SHA-256 is hash: the entry was not edited after it was recorded. */
static int content_matches(const char *content, const char *hash)
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

static void print_where(const tw_revision *e)
{
    printf("printed %s", e->printed ? e->printed : "(unknown date)");
    if (e->output)
        printf(", %s page %d", e->output, e->page);
    printf(")\n");
}

/* Who approved a lowered hazard, and why: shown with every answer about that revision. */
static void print_approval(const tw_revision *e, const char *indent)
{
    if (e->approved_by)
        printf("%sapproved by %s: %s (lowered: %s)\n", indent, e->approved_by,
               e->reason ? e->reason : "(no reason recorded)", e->lowered ? e->lowered : "?");
}

static int report_superseded(tw_registry *r, const tw_revision *e)
{
    printf("superseded: %s revision %d (study %s, ", e->equipment_id, e->revision,
           e->study_id ? e->study_id : "(none)");
    print_where(e);
    if (e->superseded_on)
        printf("  superseded on %s\n", e->superseded_on);
    tw_revision cur = {0};
    char err[512];
    int found = tw_registry_current(r, e->equipment_id, &cur, err, sizeof err);
    if (found != 1) {
        printf("  the registry holds no current revision for %s%s\n", e->equipment_id,
               found == 0 ? " (it was removed from the study: take this label down)" : "");
        return VERIFY_SUPERSEDED;
    }
    printf("  current revision: %d (study %s, ", cur.revision, cur.study_id ? cur.study_id
                                                                          : "(none)");
    print_where(&cur);
    if (cur.reason)
        printf("  reason: %s\n", cur.reason);
    print_approval(&cur, "  ");
    char *changes = tw_manifest_changes(e->content, cur.content);
    printf("  changed since revision %d: %s\n", e->revision,
           !changes ? "(out of memory)" : *changes ? changes : "(no recorded content to compare)");
    free(changes);
    printf("  replace this label with the current revision\n");
    tw_revision_free(&cur);
    return VERIFY_SUPERSEDED;
}

static int verify(tw_registry *r, const char *payload)
{
    char hash[65];
    if (tw_qr_payload_hash(payload, hash) != 0) {
        printf("unknown: the payload carries no content hash (64 hexadecimal digits)\n");
        return VERIFY_UNKNOWN;
    }
    int hash_seen;
    tw_revision e = {0};
    char err[512];
    int found = tw_registry_find(r, hash, payload, &e, &hash_seen, err, sizeof err);
    if (found != 0 && found != 1) {
        fprintf(stderr, "tagwright verify: %s\n", err);
        return VERIFY_NO_MANIFEST;
    }
    int rc;
    if (!found) {
        printf("unknown: %s\n", hash_seen ? "the content hash is recorded, but the rest of the "
               "payload differs from what was printed with it (altered?)"
               : "no label with this content hash was recorded in the registry");
        rc = VERIFY_UNKNOWN;
    } else if (!content_matches(e.content, hash)) {
        printf("unknown: the registry's record for %s revision %d does not match its content "
               "hash (the registry was edited)\n", e.equipment_id, e.revision);
        rc = VERIFY_UNKNOWN;
    } else if (e.status == TW_REV_REMOVED) {
        printf("removed: %s revision %d (study %s, ", e.equipment_id, e.revision,
               e.study_id ? e.study_id : "(none)");
        print_where(&e);
        printf("  removed from the study on %s; take this label down\n",
               e.removed_on ? e.removed_on : "(unknown date)");
        print_approval(&e, "  ");
        rc = VERIFY_SUPERSEDED;
    } else if (e.status == TW_REV_SUPERSEDED) {
        rc = report_superseded(r, &e);
    } else {
        printf("current: %s revision %d (study %s, ", e.equipment_id, e.revision,
               e.study_id ? e.study_id : "(none)");
        print_where(&e);
        print_approval(&e, "  ");
        rc = VERIFY_CURRENT;
    }
    tw_revision_free(&e);
    return rc;
}

/* The registry named by --manifest, else by the site settings' "registry". */
static char *registry_of(const char *manifest, const char *site_path)
{
    if (manifest || !site_path)
        return manifest ? tw_strdup(manifest) : NULL;
    tw_site site;
    tw_diags d;
    tw_diags_init(&d);
    char *path = NULL;
    if (tw_site_load(site_path, &site, &d) == 0)
        path = tw_registry_choose("verify", NULL, &site, NULL);
    tw_diags_print(&d, stderr);
    tw_diags_free(&d);
    tw_site_free(&site);
    return path;
}

int cmd_verify(int argc, char **argv)
{
    static const struct option opts[] = {
        {"manifest", required_argument, NULL, 'm'},
        {"site", required_argument, NULL, 's'},
        {"help", no_argument, NULL, 'h'},
        {NULL, 0, NULL, 0},
    };
    const char *manifest = NULL, *site = NULL;
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "m:s:h", opts, NULL)) != -1) {
        if (c == 'm')
            manifest = optarg;
        else if (c == 's')
            site = optarg;
        else if (c == 'h') {
            fputs(verify_usage, stdout);
            return TW_EXIT_OK;
        } else
            return tw_usage_error("verify", "unknown option; see 'tagwright verify --help'");
    }
    if (!manifest && !site)
        return tw_usage_error("verify", "--site SITE.json (naming the registry) or --manifest "
                              "REG is required");
    if (optind != argc - 1)
        return tw_usage_error("verify", "expected one payload (the text read from the QR code, "
                              "or - for stdin)");
    const char *problem;
    char *payload = read_payload(argv[optind], &problem);
    if (problem)
        return tw_usage_error("verify", "the payload on stdin %s", problem);
    if (!payload) {
        fprintf(stderr, "tagwright verify: out of memory\n");
        return VERIFY_NO_MANIFEST;
    }
    chomp(payload);
    char *path = registry_of(manifest, site);
    tw_registry r;
    char err[1024];
    int rc = VERIFY_NO_MANIFEST;
    if (!path)
        fprintf(stderr, "tagwright verify: %s names no registry; expected \"registry\" in the "
                "site settings, or --manifest REG\n", site);
    else if (tw_registry_open(&r, path, 0, err, sizeof err) != 0)
        fprintf(stderr, "tagwright verify: %s\n", err);
    else {
        rc = verify(&r, payload);
        tw_registry_close(&r);
    }
    free(path);
    free(payload);
    return rc;
}
