/* record.c - how long the registry takes to record one print run of N labels: the one
 * transaction that tw_registry_record() commits (docs/performance.md, bench/registry.py).
 *
 *   build/bench/record DIR N    prints "first wall S cpu S" (N new equipment) and "again ..."
 *                                (the same N with new content: each supersedes a revision);
 *                                CPU time as well as wall, as the machine may be shared
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "base/tw_util.h"
#include "write/tw_registry.h"

static double now(clockid_t c)
{
    struct timespec t;
    clock_gettime(c, &t);
    return (double)t.tv_sec + (double)t.tv_nsec / 1e9;
}

/* One run: n labels whose content depends on step; prints its recording time. */
static int run(tw_registry *r, size_t n, int step, const char *what)
{
    tw_registry_print *p = calloc(n, sizeof *p);
    char **text = calloc(3 * n, sizeof *text);
    if (!p || !text)
        return -1;
    for (size_t i = 0; i < n; i++) {
        text[3 * i] = tw_asprintf("BENCH-%06zu", i);
        text[3 * i + 1] = tw_asprintf(
            "signal_word=WARNING\nequipment_id=BENCH-%06zu\ndescription=Panel %zu\n"
            "location=Building %zu\nnominal_voltage=480 V\narc_flash_boundary=4 ft 7 in (1395 mm)\n"
            "incident_energy=%.1f cal/cm2\nworking_distance=18 in (457 mm)\n"
            "min_arc_rating=%.1f cal/cm2\nppe_level=Kit 2\nlimited_approach=3 ft 6 in (1.1 m)\n"
            "restricted_approach=1 ft 0 in (0.3 m)\nglove_class=Class 00 (max. use 500 V AC)\n"
            "study_id=BENCH-1\nstudy_date=2026-09-15\nscenario=max\nreview_due=2031-09-15\n",
            i, i, i % 40, 1.0 + step + (double)(i % 300) / 10, 1.0 + step + (double)(i % 300) / 10);
        text[3 * i + 2] = tw_asprintf("%064zx", i * 7919 + (size_t)step);
        p[i] = (tw_registry_print){.equipment_id = text[3 * i], .hash = text[3 * i + 2],
                                   .content = text[3 * i + 1], .payload = text[3 * i + 2],
                                   .study_id = "BENCH-1", .study_date = "2026-09-15",
                                   .output = "labels-001.pdf", .volume = 1, .page = (int)i + 1,
                                   .hazard = {0, 1.0 + step, -1, 1.0 + step, 1395, 8}};
    }
    char err[512];
    long long id = 0;
    int rc = tw_registry_stage(r, NULL, NULL, 0, &id, err, sizeof err);
    double t0 = now(CLOCK_MONOTONIC), c0 = now(CLOCK_PROCESS_CPUTIME_ID);
    if (!rc)
        rc = tw_registry_record(r, id, p, n, NULL, 0, "2026-12-01", err, sizeof err);
    double t1 = now(CLOCK_MONOTONIC), c1 = now(CLOCK_PROCESS_CPUTIME_ID);
    if (!rc)
        rc = tw_registry_finish(r, id, err, sizeof err);
    if (rc)
        fprintf(stderr, "record: %s\n", err);
    else
        printf("%s wall %.4f cpu %.4f\n", what, t1 - t0, c1 - c0);
    for (size_t i = 0; i < 3 * n; i++)
        free(text[i]);
    free(text);
    free(p);
    return rc;
}

int main(int argc, char **argv)
{
    if (argc != 3)
        return 2;
    size_t n = (size_t)strtoul(argv[2], NULL, 10);
    char *path = tw_asprintf("%s/record.registry", argv[1]);
    tw_registry r;
    char err[512];
    if (!path || tw_registry_open(&r, path, 1, err, sizeof err) != 0) {
        fprintf(stderr, "record: %s\n", err);
        return 1;
    }
    int rc = run(&r, n, 0, "first") || run(&r, n, 1, "again");
    tw_registry_close(&r);
    free(path);
    return rc ? 1 : 0;
}
