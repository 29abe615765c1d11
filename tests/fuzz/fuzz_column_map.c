/* fuzz_column_map.c - libFuzzer harness: the column map reader, then the map applied to a
 * study export, and the starter map (`tagwright columns`) made from the same bytes.
 *
 * The input is a map, optionally followed by "\n===\n" and an export to read through it
 * (without one, a fixed Windows-1252 export with semicolons and decimal commas is used). An
 * accepted map reads the export as CSV - whole and in pieces, which must agree - and as JSON
 * keys; what the readers accept goes on through validation and label derivation. */
#include <stdint.h>

#include "../same_results.h"
#include "fuzz_common.h"
#include "read/tw_column_map.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static const char fixed_export[] =
    "Study export;;;;;\r\nSite: demo;;;;;\r\n"
    "Bus Name;Bus kV;Study Date;Trip Time (ms);Incident Energy (cal/cm\xB2);"
    "Working Distance (in);Arc Flash Boundary (in);Notes\r\n"
    "FZ-1;0,48;9/15/2026;250;8,72;18;60,3;caf\xE9\r\n"
    "FZ-1;0,48;9/15/2026;N/A;9,04;18;61,9;-\r\n"
    "FZ-2;13,8;12/31/2025;16,67;4,4;36;136,9;\r\n"
    ";;;;;\r\nTotal;2;;;;\r\n";

static const char fixed_json[] =
    "{\"study\": {\"Study Date\": \"9/15/2026\"}, \"buses\": [{\"Bus Name\": \"FZ-J\", \"Bus kV\": "
    "0.48, \"Trip Time (ms)\": 250, \"Incident Energy (cal/cm\xC2\xB2)\": \"N/A\", "
    "\"Working Distance (in)\": 18, \"Arc Flash Boundary (in)\": 60.3}]}";

static void through_map(const tw_column_map *m, const char *csv, size_t len)
{
    tw_diags d, dp;
    tw_diags_init(&d);
    tw_diags_init(&dp);
    tw_results r, pieces;
    int rc = tw_results_read_csv_map("fuzz.csv", csv, len, m, &r, &d);
    FILE *f = len ? fmemopen((void *)csv, len, "r") : NULL;
    size_t cap = 1 + len % 61;
    char *buf = malloc(cap);
    if (f && buf) {
        size_t have = fread(buf, 1, cap, f);
        int rp = tw_results_read_csv_stream_map("fuzz.csv", f, buf, have, cap, len, m, &pieces,
                                                &dp);
        if (rp != rc || tw_same_results(&r, &d, &pieces, &dp))
            __builtin_trap(); /* read in pieces, a file must read as it does whole */
        tw_results_free(&pieces);
    }
    free(buf);
    if (f)
        fclose(f);
    fuzz_results_pipeline(rc, &r, &d);
    tw_results_free(&r);
    tw_diags_free(&d);
    tw_diags_free(&dp);

    tw_diags_init(&d);
    rc = tw_results_read_json_map("fuzz.json", fixed_json, sizeof fixed_json - 1, m, &r, &d);
    fuzz_results_pipeline(rc, &r, &d);
    tw_results_free(&r);
    tw_diags_free(&d);
}

/* The first "\n===\n" in text, or NULL. */
static const char *separator(const char *text, size_t size)
{
    for (size_t i = 0; i + 5 <= size; i++)
        if (memcmp(text + i, "\n===\n", 5) == 0)
            return text + i;
    return NULL;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *text = (const char *)data;
    const char *sep = separator(text, size);
    size_t map_len = sep ? (size_t)(sep - text) : size;
    const char *csv = sep ? sep + 5 : fixed_export;
    size_t csv_len = sep ? size - map_len - 5 : sizeof fixed_export - 1;

    tw_diags d;
    tw_diags_init(&d);
    tw_column_map m;
    if (tw_column_map_read_mem("fuzz-map.json", text, map_len, &m, &d) == 0)
        through_map(&m, csv, csv_len);
    fuzz_print(&d);
    tw_column_map_free(&m);
    tw_diags_free(&d);

    tw_diags_init(&d);
    char *starter = tw_column_map_starter("fuzz.csv", csv, csv_len, &d);
    if (starter) {
        tw_column_map back;
        if (tw_column_map_read_mem("starter.json", starter, strlen(starter), &back, &d) != 0 &&
            strstr(starter, "\"date_format\": null") == NULL)
            __builtin_trap(); /* a starter map must read back (its only hole: an unknown date order) */
        tw_column_map_free(&back);
    }
    free(starter);
    tw_diags_free(&d);
    return 0;
}
