/* fuzz_manifest.c - libFuzzer harness: manifest reader, then the queries and updates a labels
 * run makes on a loaded manifest (current revision, next revision, changes between canonical
 * forms, recording a new print). Saving is left out: it writes a file. */
#include <stdint.h>

#include "fuzz_common.h"
#include "write/tw_manifest.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static const char new_hash[] = "0000000000000000000000000000000000000000000000000000000000000000";

static void exercise(tw_manifest *m)
{
    size_t n = m->count;
    for (size_t i = 0; i < n; i++) {
        const tw_manifest_entry *e = &m->entries[i];
        if (!e->equipment_id)
            continue;
        (void)tw_manifest_current(m, e->equipment_id);
        (void)tw_manifest_next_revision(m, e->equipment_id, new_hash);
        char *changes = tw_manifest_changes(e->content, m->entries[n - 1 - i].content);
        free(changes);
    }
    if (n > 0 && m->entries[0].equipment_id) {
        tw_manifest_print p = {
            .equipment_id = m->entries[0].equipment_id,
            .hash = new_hash,
            .content = "signal_word=WARNING\nequipment_id=X\n",
            .printed = "2025-02-28",
            .output = "fuzz.pdf",
            .volume = 1,
            .page = 1,
        };
        (void)tw_manifest_record(m, &p);
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
