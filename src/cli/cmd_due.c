/* cmd_due.c - `tagwright due RESULTS [--on DATE] [--within DAYS]`: buses whose study review is
 * overdue (study date + 5 years before DATE, NFPA 70E 130.5(G)) or due within DAYS, sorted by
 * due date. Exit 1 when anything is overdue or a study date is unusable, so it can run from
 * cron; 0 otherwise; 2 usage; 3 the file cannot be read. */
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli/tw_cli.h"
#include "base/tw_date.h"
#include "rules/tw_lifecycle.h"
#include "rules/tw_study.h"
#include "base/tw_util.h"

static const char due_usage[] =
    "usage: tagwright due RESULTS [--on YYYY-MM-DD] [--within DAYS] [--all] [--columns MAP.json]\n"
    "  --on      the date to check against (default today, UTC)\n"
    "  --within  also list reviews due within this many days (default 0)\n"
    "  --all     list every bus, not only overdue and due ones\n"
    "Review due = study date + 5 years (29 February -> 28 February). Exit 1 when any is\n"
    "overdue or a study date is unusable.\n";

/* Longest window accepted, days (a century: anything longer is a typing error). */
#define DUE_MAX_WITHIN_DAYS 36525

typedef struct {
    const char *results, *columns;
    tw_date on;
    long within;
    int all;
} due_args;

static int parse_args(int argc, char **argv, due_args *a)
{
    static const struct option opts[] = {
        {"on", required_argument, NULL, 'o'}, {"within", required_argument, NULL, 'w'},
        {"all", no_argument, NULL, 'a'},      {"help", no_argument, NULL, 'h'},
        {"columns", required_argument, NULL, 'C'},
        {NULL, 0, NULL, 0},
    };
    memset(a, 0, sizeof *a);
    a->on = tw_date_today();
    char buf[11];
    double days;
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "o:w:aC:h", opts, NULL)) != -1) {
        switch (c) {
        case 'C': a->columns = optarg; break;
        case 'o':
            if (tw_option_date(optarg, buf) != 0 || tw_date_parse(buf, &a->on) != 0)
                return tw_usage_error("due", "--on: expected YYYY-MM-DD, got '%s'", optarg);
            break;
        case 'w':
            if (tw_parse_double(optarg, &days) != 0 || days < 0 || days > DUE_MAX_WITHIN_DAYS ||
                days != floor(days))
                return tw_usage_error("due", "--within: expected whole days 0 to %d, got '%s'",
                                      DUE_MAX_WITHIN_DAYS, optarg);
            a->within = (long)days;
            break;
        case 'a': a->all = 1; break;
        case 'h': fputs(due_usage, stdout); return -1;
        default: return tw_usage_error("due", "unknown option; see 'tagwright due --help'");
        }
    }
    if (optind != argc - 1)
        return tw_usage_error("due", "expected one results file (CSV or JSON)");
    a->results = argv[optind];
    return 0;
}

typedef struct {
    const tw_bus *bus;
    const tw_row *row;          /* the scenario with the earliest study date */
    tw_date study, due;
    long days_left;
    tw_due_status status;
    size_t order;               /* input order, for a stable sort */
} due_item;

/* The earliest study date among the bus's scenarios (the earliest review, toward safety).
 * Rows without a usable date get an error finding; -1 when any has none. */
static int earliest_date(const tw_bus *b, due_item *it, tw_diags *d)
{
    int bad = 0, found = 0;
    for (size_t i = 0; i < b->count; i++) {
        const tw_row *r = b->rows[i];
        tw_date date;
        const char *text = tw_row_has(r, TW_F_STUDY_DATE) ? r->text[TW_F_STUDY_DATE] : NULL;
        if (!text || tw_date_parse(text, &date) != 0) {
            char path[512] = "";
            tw_source src = tw_row_source(r, TW_F_STUDY_DATE, path, sizeof path);
            tw_diag_add(d, TW_ERROR, &src, b->equipment_id, tw_field_display(TW_F_STUDY_DATE),
                        "%s; expected a date YYYY-MM-DD (the review due date follows from it)",
                        text ? "not a calendar date" : "missing");
            bad = 1;
            continue;
        }
        if (!found || tw_date_cmp(date, it->study) < 0) {
            it->study = date;
            it->row = r;
            found = 1;
        }
    }
    return bad || !found ? -1 : 0;
}

static int by_due_date(const void *pa, const void *pb)
{
    const due_item *a = pa, *b = pb;
    int c = tw_date_cmp(a->due, b->due);
    return c ? c : (a->order > b->order) - (a->order < b->order);
}

static void print_item(const due_item *it)
{
    static const char *const word[] = {"later", "due", "OVERDUE"};
    char due[11], study[11];
    tw_date_format(it->due, due);
    tw_date_format(it->study, study);
    const char *sid = tw_row_has(it->row, TW_F_STUDY_ID) ? it->row->text[TW_F_STUDY_ID] : "(none)";
    printf("%-8s %s  %-20s study %s of %s, ", word[it->status], due, it->bus->equipment_id, sid,
           study);
    if (it->days_left < 0)
        printf("%ld day%s overdue\n", -it->days_left, it->days_left == -1 ? "" : "s");
    else if (it->days_left == 0)
        printf("due today\n");
    else
        printf("in %ld day%s\n", it->days_left, it->days_left == 1 ? "" : "s");
}

static int run(tw_study *st, const due_args *a)
{
    size_t n = st->buses.count, m = 0, unusable = 0, count[3] = {0};
    due_item *items = calloc(n ? n : 1, sizeof *items);
    tw_diags d;
    tw_diags_init(&d);
    if (!items) {
        fprintf(stderr, "tagwright due: out of memory\n");
        return TW_EXIT_IO;
    }
    for (size_t i = 0; i < n; i++) {
        due_item *it = &items[m];
        it->bus = &st->buses.buses[i];
        it->order = i;
        if (earliest_date(it->bus, it, &d) != 0) {
            unusable++;
            continue;
        }
        it->status = tw_review_due(it->study, a->on, a->within, &it->due, &it->days_left);
        count[it->status]++;
        m++;
    }
    qsort(items, m, sizeof *items, by_due_date);
    tw_diags_sort(&d);
    tw_diags_print(&d, stderr);
    char on[11];
    tw_date_format(a->on, on);
    printf("review due dates on %s: study date + %d years (NFPA 70E 130.5(G)); within %ld "
           "day%s\n", on, TW_REVIEW_YEARS, a->within, a->within == 1 ? "" : "s");
    for (size_t i = 0; i < m; i++)
        if (a->all || items[i].status != TW_DUE_LATER)
            print_item(&items[i]);
    printf("%zu overdue, %zu due within %ld day%s, %zu later", count[TW_DUE_OVERDUE],
           count[TW_DUE_SOON], a->within, a->within == 1 ? "" : "s", count[TW_DUE_LATER]);
    if (unusable)
        printf(", %zu without a usable study date", unusable);
    printf("\n");
    free(items);
    tw_diags_free(&d);
    return count[TW_DUE_OVERDUE] || unusable ? TW_EXIT_DATA : TW_EXIT_OK;
}

int cmd_due(int argc, char **argv)
{
    due_args a;
    int rc = parse_args(argc, argv, &a);
    if (rc != 0)
        return rc < 0 ? TW_EXIT_OK : rc;
    tw_study st;
    /* Only the study dates matter here; other findings are `check`'s business. */
    if (tw_study_load_mapped(&st, a.results, NULL, a.columns) != 0) {
        tw_diags_print(&st.diags, stderr);
        rc = st.unreadable ? TW_EXIT_IO : TW_EXIT_DATA;
    } else {
        rc = run(&st, &a);
    }
    tw_study_free(&st);
    return rc;
}
