/* fuzz_fail_closed.c - libFuzzer harness for the fail-closed invariant (docs/limits.md, "Fail
 * closed"; docs/fuzzing.md). The input is a results file (JSON when its first non-blank byte
 * is '{', else CSV), written to a private directory on tmpfs and run through the commands in
 * process, as tests/unit/test_fail_closed.c does for thousands of generated files:
 *   - every bus, in memory: a bus whose label tw_batch_derive() accepts has no error from
 *     check naming it or naming no bus; with --draft, a bus that check blames is a draft;
 *   - on one input in RUN_EVERY, when check exits non-zero: `labels`, and `labels --bus
 *     FIRST` when check blames the first bus, exit non-zero and leave nothing but the input.
 * A broken property is a crash (abort), with the input kept by libFuzzer. */
#include <dirent.h>
#include <stdint.h>
#include <sys/stat.h>

#include "../fail_closed.h"
#include "cli/tw_batch.h"
#include "cli/tw_cli.h"
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static char dir[64], csv_path[96], json_path[96], out_path[96];

static void setup(void)
{
    if (dir[0])
        return;
    snprintf(dir, sizeof dir, "/dev/shm/tw-fuzz-fc-%ld", (long)getpid());
    if (mkdir(dir, 0700) != 0)
        snprintf(dir, sizeof dir, "/tmp/tw-fuzz-fc-%ld", (long)getpid());
    mkdir(dir, 0700);
    snprintf(csv_path, sizeof csv_path, "%s/r.csv", dir);
    snprintf(json_path, sizeof json_path, "%s/r.json", dir);
    snprintf(out_path, sizeof out_path, "%s/out.pdf", dir);
}

/* 1 when the directory holds anything besides the input. */
static int something_left(const char *input)
{
    DIR *d = opendir(dir);
    if (!d)
        return 1;
    const char *base = strrchr(input, '/') + 1;
    int left = 0;
    struct dirent *e;
    while ((e = readdir(d)) != NULL)
        if (strcmp(e->d_name, ".") && strcmp(e->d_name, "..") && strcmp(e->d_name, base))
            left = 1;
    closedir(d);
    return left;
}

static int looks_like_json(const uint8_t *data, size_t size)
{
    size_t i = 0;
    while (i < size && (data[i] == ' ' || data[i] == '\n' || data[i] == '\r' || data[i] == '\t'))
        i++;
    return i < size && data[i] == '{';
}

/* Every bus in memory: posting only what check does not blame; drafts for the rest. Findings
 * are judged before any label is derived (derivation adds findings of its own). */
static void each_bus(const char *path)
{
    tw_study st;
    if (tw_study_load(&st, path, NULL) == 0) {
        size_t n = st.buses.count;
        unsigned char *blamed = calloc(n ? n : 1, 1);
        for (size_t i = 0; blamed && i < n; i++)
            blamed[i] = (unsigned char)fc_study_blames(&st, st.buses.buses[i].equipment_id);
        for (size_t i = 0; blamed && i < n; i++) {
            const tw_bus *b = &st.buses.buses[i];
            tw_label l[2];
            memset(l, 0, sizeof l);
            size_t refused = tw_batch_derive(&b, 1, &st.site, "2026-01-31", 0, &l[0], &st.diags);
            tw_batch_derive(&b, 1, &st.site, "2026-01-31", 1, &l[1], &st.diags);
            if ((!refused && blamed[i]) || (blamed[i] && !l[1].draft))
                abort(); /* a posting label for a bus that check rejects */
            tw_label_free(&l[0]);
            tw_label_free(&l[1]);
        }
        free(blamed);
    }
    tw_study_free(&st);
}

/* The commands themselves on one input in RUN_EVERY (they cost more than the rest together). */
#define RUN_EVERY 16

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    setup();
    const char *path = looks_like_json(data, size) ? json_path : csv_path;
    FILE *f = fopen(path, "wb");
    if (!f)
        return 0;
    fwrite(data, 1, size, f);
    fclose(f);
    each_bus(path);
    uint32_t h = 2166136261u; /* FNV-1a: the same input is always run the same way */
    for (size_t i = 0; i < size; i++)
        h = (h ^ data[i]) * 16777619u;
    char *check_argv[] = {"check", (char *)path, NULL};
    if (h % RUN_EVERY == 0 && fc_run_quiet(cmd_check, 2, check_argv) != 0) {
        char *labels_argv[] = {"labels", (char *)path, "--out", out_path, "--jobs", "1", NULL};
        if (fc_run_quiet(cmd_labels, 6, labels_argv) == 0 || something_left(path))
            abort(); /* labels posted, or left a file, for a file check rejects */
        tw_study st;
        char first[80] = "";
        if (tw_study_load(&st, path, NULL) == 0 && st.buses.count > 0)
            snprintf(first, sizeof first, "%s", st.buses.buses[0].equipment_id);
        tw_study_free(&st);
        if (first[0] && fc_check_blames(path, first)) {
            char *bus_argv[] = {"labels", (char *)path, "--out", out_path, "--bus", first,
                                "--jobs", "1", NULL};
            if (fc_run_quiet(cmd_labels, 8, bus_argv) == 0 || something_left(path))
                abort();
        }
    }
    unlink(path);
    return 0;
}
