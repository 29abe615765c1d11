/* fuzz_results_json.c - libFuzzer harness: results JSON reader, then validate and derive. */
#include <stdint.h>

#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tw_diags d;
    tw_diags_init(&d);
    tw_results r;
    int rc = tw_results_read_json("fuzz.json", (const char *)data, size, &r, &d);
    fuzz_results_pipeline(rc, &r, &d);
    tw_results_free(&r);
    tw_diags_free(&d);
    return 0;
}
