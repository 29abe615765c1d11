/* fuzz_results_csv.c - libFuzzer harness: results CSV reader, then validate and derive. The same
 * input is also read in pieces, as files are, and must read exactly as it does whole. */
#include <stdint.h>

#include "../same_results.h"
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* Read in pieces of 1 to 61 bytes (chosen by the input's length), compared with the whole. */
static void read_in_pieces(const uint8_t *data, size_t size, int rc, const tw_results *r,
                           const tw_diags *d)
{
    FILE *f = size ? fmemopen((void *)data, size, "r") : NULL;
    size_t cap = 1 + size % 61;
    char *buf = malloc(cap);
    if (f && buf) {
        tw_diags dp;
        tw_diags_init(&dp);
        tw_results pieces;
        size_t have = fread(buf, 1, cap, f);
        int rp = tw_results_read_csv_stream("fuzz.csv", f, buf, have, cap, size, &pieces, &dp);
        if (rp != rc || tw_same_results(r, d, &pieces, &dp))
            __builtin_trap();
        tw_results_free(&pieces);
        tw_diags_free(&dp);
    }
    free(buf);
    if (f)
        fclose(f);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tw_diags d;
    tw_diags_init(&d);
    tw_results r;
    int rc = tw_results_read_csv("fuzz.csv", (const char *)data, size, &r, &d);
    read_in_pieces(data, size, rc, &r, &d);
    fuzz_results_pipeline(rc, &r, &d);
    tw_results_free(&r);
    tw_diags_free(&d);
    return 0;
}
