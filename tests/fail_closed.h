/*
 * fail_closed.h - the two halves of the fail-closed property (docs/limits.md, "Fail closed"),
 * shared by tests/unit/test_fail_closed.c and tests/fuzz/fuzz_fail_closed.c: running a command
 * in process with its output silenced, and the oracle that says from `check`'s findings
 * whether a command about one bus must refuse.
 */
#ifndef TW_FAIL_CLOSED_H
#define TW_FAIL_CLOSED_H

#include <fcntl.h>
#include <stdio.h>
#include <string.h>
#include <unistd.h>

#include "base/tw_date.h"
#include "rules/tw_label.h"
#include "rules/tw_study.h"

/* Run a command with its standard output and error sent to /dev/null; its exit status, or
 * -1 when the output could not be redirected. */
static inline int fc_run_quiet(int (*cmd)(int, char **), int argc, char **argv)
{
    fflush(stdout);
    fflush(stderr);
    int out = dup(1), err = dup(2), null = open("/dev/null", O_WRONLY);
    if (out < 0 || err < 0 || null < 0)
        return -1;
    dup2(null, 1);
    dup2(null, 2);
    int rc = cmd(argc, argv);
    fflush(stdout);
    fflush(stderr);
    dup2(out, 1);
    dup2(err, 2);
    close(out);
    close(err);
    close(null);
    return rc;
}

/* 1 when `check` on a loaded study reports an error that names the bus or names no bus (or
 * could not keep every finding): then no command may post that bus. Read from the findings
 * themselves, as check prints them, not from the code under test (tw_bus_set_attribute);
 * like check, a bus without errors has its label derived (its findings are added to st). */
static inline int fc_study_blames(tw_study *st, const char *bus)
{
    int blamed = 0;
    size_t kept = 0;
    for (size_t i = 0; i < st->diags.count; i++) {
        const tw_diag *g = &st->diags.items[i];
        if (g->severity != TW_ERROR)
            continue;
        kept++;
        if (!g->equipment_id || !strcmp(g->equipment_id, bus))
            blamed = 1;
    }
    blamed |= kept < st->diags.errors;
    const tw_bus *b = blamed ? NULL : tw_bus_set_find(&st->buses, bus);
    if (b) {
        char today[11];
        tw_date_format(tw_date_today(), today);
        tw_label l;
        memset(&l, 0, sizeof l);
        blamed |= tw_label_derive(b, &st->site, today, &l, &st->diags) != 0;
        tw_label_free(&l);
    }
    return blamed;
}

/* The same for a results file (blamed too when it cannot be loaded). */
static inline int fc_check_blames(const char *results, const char *bus)
{
    tw_study st;
    int blamed = tw_study_load(&st, results, NULL) != 0 || fc_study_blames(&st, bus);
    tw_study_free(&st);
    return blamed;
}

#endif
