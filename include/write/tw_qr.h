/*
 * tw_qr.h - the QR code on each label and permit: its payload and its module matrix.
 *
 * Payload: the site's record-link template with {study}, {equipment}, {revision} and {hash}
 * replaced (values percent-encoded; {HASH} is the hash in capitals). A template without {hash}
 * or {HASH} gets "#sha256=<hash>" appended, so every payload carries the content hash. Encoding: libqrencode, 8-bit mode (with numeric
 * and alphanumeric segments where they are shorter), error correction level M, smallest
 * version that fits.
 */
#ifndef TW_QR_H
#define TW_QR_H

#include <stddef.h>

/* Build the payload; fresh string (caller frees), NULL when out of memory. */
char *tw_qr_payload(const char *link_template, const char *study_id, const char *equipment_id,
                    int revision, const char *hash_hex);

/* Find the 64-hex-digit content hash in a payload; 0 and hash_out (65 bytes) set, else -1. */
int tw_qr_payload_hash(const char *payload, char *hash_out);

typedef struct {
    int width;                  /* modules per side, without quiet zone */
    unsigned char *dark;        /* width*width bytes, 1 = dark module, row-major from the top */
} tw_qr;

/* Encode payload. 0 on success, -1 on failure (payload too long or out of memory). */
int tw_qr_encode(const char *payload, tw_qr *out);

/* Quiet zone drawn around the symbol, in modules (ISO/IEC 18004 asks for 4). */
#define TW_QR_QUIET_MODULES 4

void tw_qr_free(tw_qr *q);

#endif
