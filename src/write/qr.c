/* qr.c - QR payloads and their module matrix (see tw_qr.h). */
#include "write/tw_qr.h"
#include "read/tw_site.h"

#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <qrencode.h>

/* A growing string; on allocation failure it is poisoned (data NULL) and stays so. */
typedef struct {
    char *data;
    size_t len, cap;
} strbuf;

static int sb_reserve(strbuf *b, size_t extra)
{
    if (!b->data)
        return -1;
    if (b->len + extra + 1 <= b->cap)
        return 0;
    size_t cap = b->cap;
    while (cap < b->len + extra + 1)
        cap *= 2;
    char *p = realloc(b->data, cap);
    if (!p) {
        free(b->data);
        b->data = NULL;
        return -1;
    }
    b->data = p;
    b->cap = cap;
    return 0;
}

static void sb_put(strbuf *b, const char *s, size_t n)
{
    if (sb_reserve(b, n) != 0)
        return;
    memcpy(b->data + b->len, s, n);
    b->len += n;
    b->data[b->len] = '\0';
}

/* RFC 3986 section 2.3: unreserved characters are never percent-encoded. */
static int is_unreserved(unsigned char c)
{
    return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') ||
           c == '-' || c == '.' || c == '_' || c == '~';
}

/* s percent-encoded (RFC 3986 section 2.1), in capitals when upper: QR alphanumeric mode holds
 * 0-9, A-Z and " $%*+-./:" at 5.5 bits a character against 8 in byte mode (ISO/IEC 18004), so
 * the hash in capitals after a '/' ({HASH}) costs 352 bits instead of 512. */
static void sb_put_encoded(strbuf *b, const char *s, int upper)
{
    static const char hex[] = "0123456789ABCDEF";
    /* "." and ".." as a whole path segment are dot-segments that a client removes (RFC 3986
     * section 5.2.4): the link would name another record. Encoded, they stay data. */
    int dot_segment = s && (!strcmp(s, ".") || !strcmp(s, ".."));
    for (const unsigned char *p = (const unsigned char *)(s ? s : ""); *p; p++) {
        unsigned char c = upper && *p >= 'a' && *p <= 'z' ? (unsigned char)(*p - 'a' + 'A') : *p;
        if (is_unreserved(c) && !(dot_segment && c == '.')) {
            sb_put(b, (const char *)&c, 1);
        } else {
            char esc[3] = {'%', hex[c >> 4], hex[c & 15]};
            sb_put(b, esc, 3);
        }
    }
}

/* Expand one placeholder at s (which starts with '{'); returns the bytes consumed, 0 when s
 * is not a known placeholder. */
static size_t expand_one(strbuf *b, const char *s, const char *study, const char *equipment,
                         int revision, const char *hash, int *saw_hash)
{
    static const char *const names[] = {"{study}", "{equipment}", "{revision}", "{hash}",
                                        "{HASH}"};
    for (size_t i = 0; i < sizeof names / sizeof names[0]; i++) {
        size_t n = strlen(names[i]);
        if (strncmp(s, names[i], n) != 0)
            continue;
        if (i == 0) {
            sb_put_encoded(b, study, 0);
        } else if (i == 1) {
            sb_put_encoded(b, equipment, 0);
        } else if (i == 2) {
            char num[16];
            snprintf(num, sizeof num, "%d", revision);
            sb_put(b, num, strlen(num));
        } else {
            sb_put_encoded(b, hash, i == 4); /* {hash}, {HASH} */
            *saw_hash = 1;
        }
        return n;
    }
    return 0;
}

char *tw_qr_payload(const char *link_template, const char *study_id, const char *equipment_id,
                    int revision, const char *hash_hex)
{
    const char *t = link_template ? link_template : TW_DEFAULT_RECORD_LINK;
    strbuf b = {malloc(128), 0, 128};
    if (!b.data)
        return NULL;
    b.data[0] = '\0';
    int saw_hash = 0;
    for (const char *p = t; *p;) {
        size_t used = 0;
        if (*p == '{')
            used = expand_one(&b, p, study_id, equipment_id, revision, hash_hex, &saw_hash);
        if (used) {
            p += used;
        } else {
            sb_put(&b, p, 1);
            p++;
        }
    }
    if (!saw_hash) {
        sb_put(&b, "#sha256=", 8);
        sb_put_encoded(&b, hash_hex, 0);
    }
    return b.data;
}

static int is_hex(char c)
{
    return (c >= '0' && c <= '9') || (c >= 'a' && c <= 'f') || (c >= 'A' && c <= 'F');
}

int tw_qr_payload_hash(const char *payload, char *hash_out)
{
    if (!payload)
        return -1;
    for (const char *p = payload; *p;) {
        if (!is_hex(*p)) {
            p++;
            continue;
        }
        const char *start = p;
        while (is_hex(*p))
            p++;
        if (p - start == 64) {
            for (int i = 0; i < 64; i++) {
                char c = start[i];
                hash_out[i] = (c >= 'A' && c <= 'F') ? (char)(c - 'A' + 'a') : c;
            }
            hash_out[64] = '\0';
            return 0;
        }
    }
    return -1;
}

int tw_qr_encode(const char *payload, tw_qr *out)
{
    memset(out, 0, sizeof *out);
    if (!payload || !*payload)
        return -1;
    size_t len = strlen(payload);
    if (len > INT_MAX)
        return -1;
    /* The payload as a string in 8-bit mode, with runs of digits or of upper-case letters and
     * digits in the numeric and alphanumeric modes wherever libqrencode finds that shorter: the
     * same bytes decode, often in a smaller symbol, and the cost of choosing the mask (most of
     * the encoding time) grows with the symbol's area. */
    QRcode *code = QRcode_encodeString(payload, 0, QR_ECLEVEL_M, QR_MODE_8, 1);
    if (!code)
        return -1;
    size_t n = (size_t)code->width * (size_t)code->width;
    out->dark = malloc(n);
    if (!out->dark) {
        QRcode_free(code);
        return -1;
    }
    for (size_t i = 0; i < n; i++)
        out->dark[i] = code->data[i] & 1; /* libqrencode: bit 0 set = dark module */
    out->width = code->width;
    QRcode_free(code);
    return 0;
}

void tw_qr_free(tw_qr *q)
{
    if (!q)
        return;
    free(q->dark);
    q->dark = NULL;
    q->width = 0;
}
