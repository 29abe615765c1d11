/* cmd_verify.c - `tagwright verify --manifest M.json PAYLOAD`: is the label in front of me the
 * current one? PAYLOAD is the text a QR scanner reads off the label ("-": one line on stdin).
 *
 * Exit status (its own, as the outcome is the answer; docs/lifecycle.md):
 *   0 current     the payload is exactly what was printed for the current revision
 *   1 superseded  printed for a revision that has since been replaced (the current revision
 *                 and what changed are shown)
 *   2             usage: a bad option, or a payload on stdin that is not one line of text (a NUL
 *                 byte, a second line, too long), with a message on stderr and nothing on stdout
 *   3             the manifest cannot be read or is not a valid manifest
 *   4 unknown     no content hash, a hash the manifest does not hold, or a payload that differs
 *                 from what was printed with that hash (altered)
 * An answer always prints a line starting "current", "superseded" or "unknown" on stdout.
 * The manifest is read without taking its lock: it is replaced atomically, so a reader sees
 * the old or the new file whole, and verify works from a read-only copy. */
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <openssl/evp.h>

#include "cli/tw_cli.h"
#include "write/tw_manifest.h"
#include "write/tw_qr.h"
#include "base/tw_util.h"

static const char verify_usage[] =
    "usage: tagwright verify --manifest M.json PAYLOAD\n"
    "  PAYLOAD  the text read from the label's QR code; '-' reads one line from stdin\n"
    "Prints current, superseded (with the current revision and what changed) or unknown.\n"
    "Exit 0 current, 1 superseded, 2 usage, 3 manifest unreadable, 4 unknown.\n";

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

/* The entry printed with exactly this payload and hash, the current one first. */
static const tw_manifest_entry *find_entry(const tw_manifest *m, const char *payload,
                                           const char *hash, int *hash_seen)
{
    const tw_manifest_entry *best = NULL;
    *hash_seen = 0;
    for (size_t i = 0; i < m->count; i++) {
        const tw_manifest_entry *e = &m->entries[i];
        if (!e->content_hash || strcmp(e->content_hash, hash))
            continue;
        *hash_seen = 1;
        if (e->payload && strcmp(e->payload, payload))
            continue;
        if (!best || (e->current && !best->current))
            best = e;
    }
    return best;
}

static void print_where(const tw_manifest_entry *e)
{
    printf("printed %s", e->printed ? e->printed : "(unknown date)");
    if (e->output)
        printf(", %s page %d", e->output, e->page);
    printf(")\n");
}

static int report_superseded(const tw_manifest *m, const tw_manifest_entry *e)
{
    printf("superseded: %s revision %d (study %s, ", e->equipment_id, e->revision,
           e->study_id ? e->study_id : "(none)");
    print_where(e);
    if (e->superseded_on)
        printf("  superseded on %s\n", e->superseded_on);
    const tw_manifest_entry *cur = tw_manifest_current(m, e->equipment_id);
    if (!cur) {
        printf("  the manifest holds no current revision for %s\n", e->equipment_id);
        return VERIFY_SUPERSEDED;
    }
    printf("  current revision: %d (study %s, ", cur->revision, cur->study_id ? cur->study_id
                                                                            : "(none)");
    print_where(cur);
    if (cur->reason)
        printf("  reason: %s\n", cur->reason);
    char *changes = tw_manifest_changes(e->content, cur->content);
    printf("  changed since revision %d: %s\n", e->revision,
           !changes ? "(out of memory)" : *changes ? changes : "(no recorded content to compare)");
    free(changes);
    printf("  replace this label with the current revision\n");
    return VERIFY_SUPERSEDED;
}

static int verify(const tw_manifest *m, const char *payload)
{
    char hash[65];
    if (tw_qr_payload_hash(payload, hash) != 0) {
        printf("unknown: the payload carries no content hash (64 hexadecimal digits)\n");
        return VERIFY_UNKNOWN;
    }
    int hash_seen;
    const tw_manifest_entry *e = find_entry(m, payload, hash, &hash_seen);
    if (!e) {
        printf("unknown: %s\n", hash_seen ? "the content hash is recorded, but the rest of the "
               "payload differs from what was printed with it (altered?)"
               : "no label with this content hash was recorded in the manifest");
        return VERIFY_UNKNOWN;
    }
    if (e->content && !content_matches(e->content, hash)) {
        printf("unknown: the manifest's record for %s revision %d does not match its content "
               "hash (the manifest was edited)\n", e->equipment_id, e->revision);
        return VERIFY_UNKNOWN;
    }
    if (!e->current)
        return report_superseded(m, e);
    printf("current: %s revision %d (study %s, ", e->equipment_id, e->revision,
           e->study_id ? e->study_id : "(none)");
    print_where(e);
    return VERIFY_CURRENT;
}

static int load_manifest(const char *path, tw_manifest *m)
{
    char err[1024] = "";
    size_t len = 0;
    char *data = tw_read_file(path, &len, err, sizeof err);
    if (!data) {
        fprintf(stderr, "tagwright verify: %s\n", err);
        return -1;
    }
    tw_diags d;
    tw_diags_init(&d);
    int rc = tw_manifest_load_mem(path, data, len, m, &d);
    free(data);
    tw_diags_print(&d, stderr);
    tw_diags_free(&d);
    return rc;
}

int cmd_verify(int argc, char **argv)
{
    static const struct option opts[] = {
        {"manifest", required_argument, NULL, 'm'},
        {"help", no_argument, NULL, 'h'},
        {NULL, 0, NULL, 0},
    };
    const char *manifest = NULL;
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "m:h", opts, NULL)) != -1) {
        if (c == 'm')
            manifest = optarg;
        else if (c == 'h') {
            fputs(verify_usage, stdout);
            return TW_EXIT_OK;
        } else
            return tw_usage_error("verify", "unknown option; see 'tagwright verify --help'");
    }
    if (!manifest)
        return tw_usage_error("verify", "--manifest M.json is required");
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
    tw_manifest m = {0};
    m.lock_fd = -1;
    int rc = VERIFY_NO_MANIFEST;
    if (load_manifest(manifest, &m) == 0)
        rc = verify(&m, payload);
    tw_manifest_close(&m);
    free(payload);
    return rc;
}
