/* fuzz_manifest.c - libFuzzer harness: the JSON manifest reader `registry import` uses, then
 * the queries made on a loaded manifest (current revision, changes between canonical forms). */
#include <stdint.h>

#include "fuzz_common.h"
#include "write/tw_manifest.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static void exercise(tw_manifest *m)
{
    size_t n = m->count;
    for (size_t i = 0; i < n; i++) {
        const tw_manifest_entry *e = &m->entries[i];
        if (!e->equipment_id)
            continue;
        (void)tw_manifest_current(m, e->equipment_id);
        char *changes = tw_manifest_changes(e->content, m->entries[n - 1 - i].content);
        free(changes);
    }
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tw_diags d;
    tw_diags_init(&d);
    tw_manifest m;
    if (tw_manifest_load_mem("fuzz.manifest.json", (const char *)data, size, &m, &d) == 0)
        exercise(&m);
    fuzz_print(&d);
    tw_manifest_close(&m);
    tw_diags_free(&d);
    return 0;
}
