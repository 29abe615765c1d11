/* cmd_permit.c - `tagwright permit RESULTS --job JOB.json --out permit.pdf`: energized work
 * permit drafts for the jobs in a job file, with the study values of the label each equipment
 * carries.
 *
 * Every job is checked before anything is written: an unknown equipment ID, a bus with data
 * errors or a bad job file refuses the whole run (exit 1, no file). A permit for equipment where
 * no PPE level is adequate is still drafted and says so, and the run exits 3.
 *
 * With the site's registry (site.json "registry", or --manifest), a permit shows the label
 * posted on the equipment: the current revision's values and QR payload. When the results now
 * derive different content for that bus, or no label is recorded for it, the run is refused
 * (exit 3, nothing written): a permit never shows values other than the posted label's. */
#include <errno.h>
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "base/tw_atomic.h"
#include "cli/tw_cli.h"
#include "base/tw_date.h"
#include "read/tw_job.h"
#include "rules/tw_label.h"
#include "write/tw_manifest.h"
#include "write/tw_registry.h"
#include "write/tw_permit_pdf.h"
#include "write/tw_qr.h"
#include "rules/tw_study.h"
#include "base/tw_util.h"

static const char permit_usage[] =
    "usage: tagwright permit RESULTS --job JOB.json [--site SITE.json] [--out PATH]\n"
    "                        [--manifest REG] [--date YYYY-MM-DD] [--paper letter|a4]\n"
    "                        [--columns MAP.json]\n"
    "  --job       job file: one job object, or an array of jobs (a batch)\n"
    "  --out       one job: the PDF to write (default permit-WORKORDER.pdf);\n"
    "              a batch: the directory for permit-WORKORDER.pdf files (default .)\n"
    "  --manifest  the label registry (default: site.json \"registry\"): the permit shows the\n"
    "              posted label's values and QR code, and is refused when the results now\n"
    "              say something else (without a registry, revision 1 is assumed)\n"
    "  --date      drafting date on the permit and in the PDF (default today, UTC)\n"
    "  --paper     page size (default letter)\n"
    "exit status: 0 written; 1 bad data (nothing written); 2 usage; 3 I/O error, refused (the\n"
    "posted label differs from the results), or a permit drafted for equipment where no PPE\n"
    "the site stocks is adequate\n";

typedef struct {
    const char *results, *job, *site, *out, *manifest, *columns;
    tw_paper paper;
    char date[11];
} permit_args;

static int parse_args(int argc, char **argv, permit_args *a)
{
    static const struct option opts[] = {
        {"job", required_argument, NULL, 'j'},      {"site", required_argument, NULL, 's'},
        {"out", required_argument, NULL, 'o'},      {"manifest", required_argument, NULL, 'm'},
        {"date", required_argument, NULL, 't'},     {"paper", required_argument, NULL, 'p'},
        {"help", no_argument, NULL, 'h'},           {"columns", required_argument, NULL, 'C'},
        {NULL, 0, NULL, 0},
    };
    memset(a, 0, sizeof *a);
    tw_date_format(tw_date_today(), a->date);
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "j:s:o:m:t:p:C:h", opts, NULL)) != -1) {
        switch (c) {
        case 'j': a->job = optarg; break;
        case 's': a->site = optarg; break;
        case 'C': a->columns = optarg; break;
        case 'o': a->out = optarg; break;
        case 'm': a->manifest = optarg; break;
        case 't':
            if (tw_option_date(optarg, a->date) != 0)
                return tw_usage_error("permit", "--date: expected YYYY-MM-DD, got '%s'", optarg);
            break;
        case 'p':
            if (!strcmp(optarg, "letter"))
                a->paper = TW_PAPER_LETTER;
            else if (!strcmp(optarg, "a4"))
                a->paper = TW_PAPER_A4;
            else
                return tw_usage_error("permit", "--paper: expected letter or a4, got '%s'",
                                      optarg);
            break;
        case 'h': fputs(permit_usage, stdout); return -1;
        default: return tw_usage_error("permit", "unknown option; see 'tagwright permit --help'");
        }
    }
    if (optind != argc - 1)
        return tw_usage_error("permit", "expected one results file (CSV or JSON); see "
                              "'tagwright permit --help'");
    a->results = argv[optind];
    if (!a->job)
        return tw_usage_error("permit", "--job JOB.json is required (docs/permit.md)");
    return 0;
}

/* One job on its way to a PDF. */
typedef struct {
    const tw_job *job;
    const tw_bus *bus;
    tw_label label;
    char *path;
    char *payload;
    int revision;
    int refused;
} draft;

typedef struct {
    const permit_args *a;
    tw_study *st;
    tw_jobs jobs;
    tw_registry registry;
    char *registry_path;        /* NULL: no registry named */
    draft *drafts;
} run_state;

static void print_finding_for(const tw_diags *d, const char *eq, unsigned char *printed)
{
    for (size_t i = 0; i < d->count; i++) {
        const tw_diag *g = &d->items[i];
        if (printed[i] || (g->equipment_id && strcmp(g->equipment_id, eq) != 0))
            continue;
        tw_diag_print(g, stderr);
        printed[i] = 1;
    }
}

/* Look up each job's bus and derive its label; refuses what cannot be drafted. */
static size_t derive_all(run_state *R)
{
    size_t refused = 0;
    unsigned char *printed = calloc(R->st->diags.count + 1, 1);
    for (size_t i = 0; i < R->jobs.count; i++) {
        draft *dr = &R->drafts[i];
        const tw_job *j = dr->job = &R->jobs.jobs[i];
        dr->bus = tw_bus_set_find(&R->st->buses, j->equipment_id);
        if (!dr->bus) {
            fprintf(stderr, "%s:%s%sequipment_id: error: %s: equipment_id: not in the results %s; "
                    "expected "
                    "the equipment ID of a bus in the study\n", R->jobs.file, j->path,
                    *j->path ? "." : "", j->equipment_id, R->a->results);
            dr->refused = 1;
            refused++;
            continue;
        }
        size_t before = R->st->diags.count;
        int bad = tw_label_derive(dr->bus, &R->st->site, R->a->date, &dr->label,
                                  &R->st->diags) != 0;
        bad |= tw_bus_errors(dr->bus) > 0;
        if (R->st->diags.count > before) {   /* new findings: make room to mark them */
            unsigned char *grown = realloc(printed, R->st->diags.count + 1);
            if (grown)
                memset(grown + before, 0, R->st->diags.count - before + 1);
            printed = grown;
        }
        if (printed)
            print_finding_for(&R->st->diags, j->equipment_id, printed);
        if (bad) {
            fprintf(stderr, "tagwright permit: %s: %s has errors in the study (above); no "
                    "permit is drafted from data that fails 'tagwright check'\n",
                    j->work_order ? j->work_order : j->equipment_id, j->equipment_id);
            dr->refused = 1;
            refused++;
        }
    }
    free(printed);
    return refused;
}

/* Where each permit goes; 0, or an exit status after printing why. */
static int choose_paths_in(run_state *R, const char *dir);

static int choose_paths(run_state *R)
{
    const permit_args *a = R->a;
    const char *dir = a->out ? a->out : ".";
    int made = 0;
    if (R->jobs.batch) {
        made = mkdir(dir, 0777) == 0;
        if (!made && errno != EEXIST) {
            fprintf(stderr, "tagwright permit: %s: cannot create the directory for the batch: "
                    "%s\n", dir, strerror(errno));
            return TW_EXIT_IO;
        }
    }
    int rc = choose_paths_in(R, dir);
    if (rc != TW_EXIT_OK && made)
        rmdir(dir); /* a refused run leaves nothing behind, not even an empty directory */
    return rc;
}

static int choose_paths_in(run_state *R, const char *dir)
{
    const permit_args *a = R->a;
    const char *inputs[] = {a->results, a->job, a->site, R->registry_path};
    for (size_t i = 0; i < R->jobs.count; i++) {
        draft *dr = &R->drafts[i];
        char *name = tw_permit_file_name(dr->job->work_order, i);
        if (!name)
            goto oom;
        if (R->jobs.batch) {
            dr->path = tw_asprintf("%s/%s", dir, name);
            free(name);
        } else {
            dr->path = a->out ? (free(name), tw_strdup(a->out)) : name;
        }
        if (!dr->path)
            goto oom;
        for (size_t k = 0; k < i; k++)
            if (tw_strcaseeq(R->drafts[k].path, dr->path)) {
                fprintf(stderr, "%s:%s: error: work_order: jobs %zu and %zu would both be "
                        "written to %s; expected a different work order for each job\n",
                        R->jobs.file, dr->job->path, k + 1, i + 1, dr->path);
                return TW_EXIT_DATA;
            }
        char err[1024];
        if (tw_output_path_ok_n(dr->path, inputs, 4, err, sizeof err) != 0) {
            fprintf(stderr, "tagwright permit: %s\n", err);
            return TW_EXIT_IO;
        }
    }
    return TW_EXIT_OK;
oom:
    fprintf(stderr, "tagwright permit: out of memory\n");
    return TW_EXIT_IO;
}

static int open_registry(run_state *R)
{
    R->registry_path = tw_registry_choose("permit", R->a->manifest, &R->st->site, NULL);
    if (!R->registry_path) {
        fprintf(stderr, "tagwright permit: warning: no registry named (site.json \"registry\" or "
                "--manifest): the permits are not checked against the posted labels and name "
                "revision 1\n");
        return TW_EXIT_OK;
    }
    char err[1024];
    int rc = tw_registry_open(&R->registry, R->registry_path, 0, err, sizeof err);
    if (rc != TW_EXIT_OK)
        fprintf(stderr, "tagwright permit: %s\n", err);
    return rc;
}

/* The posted label: its revision and payload from the registry, refused (exit 3) when the
 * results now derive other content or none is recorded. Without a registry, revision 1. */
static int match_posted(run_state *R, draft *dr)
{
    const char *eq = dr->label.value[TW_L_EQUIPMENT_ID];
    if (!R->registry_path) {
        dr->revision = 1;
        dr->payload = tw_qr_payload(R->st->site.record_link, dr->label.value[TW_L_STUDY_ID], eq,
                                    1, dr->label.hash);
        return dr->payload ? TW_EXIT_OK : TW_EXIT_IO;
    }
    tw_revision cur = {0};
    char err[1024];
    int found = tw_registry_current(&R->registry, eq, &cur, err, sizeof err);
    if (found < 0 || found > 1) {
        fprintf(stderr, "tagwright permit: %s\n", err);
        return TW_EXIT_IO;
    }
    int rc = TW_EXIT_OK;
    if (!found) {
        fprintf(stderr, "tagwright permit: %s: refused: no posted label for %s is recorded in %s; "
                "print and post its label first (tagwright labels --bus %s)\n",
                dr->job->work_order ? dr->job->work_order : eq, eq, R->registry_path, eq);
        rc = TW_EXIT_IO;
    } else if (!cur.content_hash || strcmp(cur.content_hash, dr->label.hash) != 0) {
        char *content = tw_label_canonical(&dr->label);
        char *changes = content ? tw_manifest_changes(cur.content, content) : NULL;
        fprintf(stderr, "tagwright permit: %s: refused: %s now derives content other than the "
                "posted label of %s (revision %d, printed %s): %s. Post a label of the current "
                "study first (tagwright labels --bus %s, with --approved-by if it lowers the "
                "hazard), or draft the permit from the results the posted label came from\n",
                dr->job->work_order ? dr->job->work_order : eq, R->a->results, eq, cur.revision,
                cur.printed ? cur.printed : "?", changes && *changes ? changes : "(see diff)", eq);
        free(content);
        free(changes);
        rc = TW_EXIT_IO;
    } else {
        dr->revision = cur.revision;
        dr->payload = cur.payload ? tw_strdup(cur.payload)
                                  : tw_qr_payload(R->st->site.record_link,
                                                  dr->label.value[TW_L_STUDY_ID], eq,
                                                  cur.revision, dr->label.hash);
        if (!dr->payload)
            rc = TW_EXIT_IO;
    }
    tw_revision_free(&cur);
    return rc;
}

static int match_all(run_state *R)
{
    int rc = TW_EXIT_OK;
    for (size_t i = 0; i < R->jobs.count; i++) {
        int r = match_posted(R, &R->drafts[i]);
        if (r != TW_EXIT_OK)
            rc = r;
    }
    if (rc != TW_EXIT_OK)
        fprintf(stderr, "tagwright permit: no permit written\n");
    return rc;
}

/* The line for a written permit, and the note when no PPE level is adequate. */
static int report_written(const draft *dr, int pages)
{
    const char *eq = dr->label.value[TW_L_EQUIPMENT_ID];
    printf("%s: %d page%s, %s, label revision %d\n", dr->path, pages, pages == 1 ? "" : "s",
           eq, dr->revision);
    if (tw_permit_no_ppe_adequate(&dr->label))
        fprintf(stderr, "tagwright permit: %s: no PPE level at this site is adequate for %s "
                "(minimum arc rating %s); the draft says energized work should not be "
                "performed\n", dr->path, eq, dr->label.value[TW_L_MIN_ARC_RATING]
                ? dr->label.value[TW_L_MIN_ARC_RATING] : "unknown");
    return TW_EXIT_OK;
}

/* Remove the temporary files of a batch that will not be published. */
static void drop_tmps(char **tmps, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (tmps[i]) {
            unlink(tmps[i]);
            tw_atomic_forget(tmps[i]);
            free(tmps[i]);
        }
    free(tmps);
}

/* Every permit is written to its temporary file first and published only when all are
 * written: a batch is all or nothing (a full disk after the first permit leaves none). */
static int write_all(run_state *R)
{
    size_t n = R->jobs.count;
    char **tmps = calloc(n ? n : 1, sizeof *tmps);
    int *pages = calloc(n ? n : 1, sizeof *pages);
    char err[1024] = "";
    int rc = TW_EXIT_OK;
    if (!tmps || !pages) {
        fprintf(stderr, "tagwright permit: out of memory\n");
        free(pages);
        free(tmps);
        return TW_EXIT_IO;
    }
    for (size_t i = 0; i < n && rc == TW_EXIT_OK; i++) {
        draft *dr = &R->drafts[i];
        tw_permit p = {dr->job, &dr->label, dr->bus, &R->st->site, dr->payload, dr->revision,
                       R->a->date, R->a->paper};
        if (!(tmps[i] = tw_atomic_tmp_path(dr->path, err, sizeof err)) ||
            (pages[i] = tw_permit_write_tmp(&p, tmps[i], dr->path, err, sizeof err)) < 0) {
            fprintf(stderr, "tagwright permit: %s%s\n", err,
                    n > 1 ? "; no permit of the batch written" : "");
            rc = TW_EXIT_IO;
        }
    }
    if (rc != TW_EXIT_OK) {
        drop_tmps(tmps, n);
        free(pages);
        return rc;
    }
    tw_atomic_hold_signals();
    for (size_t i = 0; i < n; i++) {
        if (rc == TW_EXIT_OK && tw_atomic_publish(tmps[i], R->drafts[i].path, err,
                                                  sizeof err) != 0) {
            fprintf(stderr, "tagwright permit: %s\n", err);
            rc = TW_EXIT_IO;
        } else if (rc != TW_EXIT_OK) {
            unlink(tmps[i]);
            tw_atomic_forget(tmps[i]);
        }
        free(tmps[i]);
        tmps[i] = NULL;
    }
    tw_atomic_release_signals();
    free(tmps);
    for (size_t i = 0; rc == TW_EXIT_OK && i < n; i++)
        rc = report_written(&R->drafts[i], pages[i]);
    if (rc == TW_EXIT_OK)
        for (size_t i = 0; i < n; i++)
            if (tw_permit_no_ppe_adequate(&R->drafts[i].label))
                rc = TW_EXIT_IO;
    free(pages);
    return rc;
}

static int run(run_state *R)
{
    R->drafts = calloc(R->jobs.count ? R->jobs.count : 1, sizeof *R->drafts);
    if (!R->drafts) {
        fprintf(stderr, "tagwright permit: out of memory\n");
        return TW_EXIT_IO;
    }
    int rc = open_registry(R);
    if (rc != TW_EXIT_OK)
        return rc;
    size_t refused = derive_all(R);
    if (refused) {
        fprintf(stderr, "tagwright permit: %zu of %zu job%s refused; no permit written\n",
                refused, R->jobs.count, R->jobs.count == 1 ? "" : "s");
        return TW_EXIT_DATA;
    }
    rc = match_all(R);
    if (rc != TW_EXIT_OK)
        return rc;
    rc = choose_paths(R);
    return rc != TW_EXIT_OK ? rc : write_all(R);
}

static void run_free(run_state *R)
{
    for (size_t i = 0; R->drafts && i < R->jobs.count; i++) {
        tw_label_free(&R->drafts[i].label);
        free(R->drafts[i].path);
        free(R->drafts[i].payload);
    }
    free(R->drafts);
    tw_registry_close(&R->registry);
    free(R->registry_path);
    tw_jobs_free(&R->jobs);
}

int cmd_permit(int argc, char **argv)
{
    permit_args a;
    int rc = parse_args(argc, argv, &a);
    if (rc != 0)
        return rc < 0 ? TW_EXIT_OK : rc;
    run_state R;
    memset(&R, 0, sizeof R);
    R.registry.lock_fd = -1;
    R.a = &a;
    tw_diags jd;
    tw_diags_init(&jd);
    int jrc = tw_job_load(a.job, &R.jobs, &jd);
    tw_diags_print(&jd, stderr);
    tw_diags_free(&jd);
    if (jrc != TW_JOB_OK) {
        tw_jobs_free(&R.jobs);
        return jrc == TW_JOB_UNREADABLE ? TW_EXIT_IO : TW_EXIT_DATA;
    }
    tw_study st;
    R.st = &st;
    if (tw_study_load_mapped(&st, a.results, a.site, a.columns) != 0) {
        tw_diags_print(&st.diags, stderr);
        rc = st.unreadable ? TW_EXIT_IO : TW_EXIT_DATA;
    } else {
        rc = run(&R);
    }
    run_free(&R);
    tw_study_free(&st);
    return rc;
}
