/* cmd_check.c - `tagwright check RESULTS [--site SITE]`: every problem in the data, one line
 * each, before anything is printed. Exit 0 without errors, 1 with, 2 on usage, 3 unreadable. */
#include <getopt.h>
#include <stdio.h>

#include "cli/tw_cli.h"
#include "base/tw_date.h"
#include "rules/tw_label.h"
#include "rules/tw_study.h"

static const char check_usage[] =
    "usage: tagwright check RESULTS [--site SITE.json] [--columns MAP.json]\n"
    "Prints FILE:LINE: error|warning: EQUIPMENT_ID: field: message for every finding.\n";

/* A bus that passes validation is derived as `labels` would derive it, so that check reports
 * what labels would refuse (e.g. a boundary too large to print); buses with errors already have
 * findings, and deriving them would only repeat those. */
static void derive_clean_buses(tw_study *st)
{
    char today[11];
    tw_date_format(tw_date_today(), today);
    for (size_t i = 0; i < st->buses.count; i++) {
        if (tw_bus_errors(&st->buses.buses[i]) > 0)
            continue;
        tw_label label = {0};
        tw_label_derive(&st->buses.buses[i], &st->site, today, &label, &st->diags);
        tw_label_free(&label);
    }
}

int cmd_check(int argc, char **argv)
{
    static const struct option opts[] = {
        {"site", required_argument, NULL, 's'},
        {"columns", required_argument, NULL, 'C'},
        {"help", no_argument, NULL, 'h'},
        {NULL, 0, NULL, 0},
    };
    const char *site = NULL, *columns = NULL;
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "s:C:h", opts, NULL)) != -1) {
        if (c == 's')
            site = optarg;
        else if (c == 'C')
            columns = optarg;
        else if (c == 'h') {
            fputs(check_usage, stdout);
            return TW_EXIT_OK;
        } else
            return tw_usage_error("check", "unknown option; see 'tagwright check --help'");
    }
    if (optind != argc - 1)
        return tw_usage_error("check", "expected one results file (CSV or JSON)");
    tw_study st;
    int rc = tw_study_load_mapped(&st, argv[optind], site, columns);
    if (rc == 0)
        derive_clean_buses(&st);
    tw_diags_sort(&st.diags);
    tw_diags_print(&st.diags, stdout);
    printf("%zu error%s, %zu warning%s", st.diags.errors, st.diags.errors == 1 ? "" : "s",
           st.diags.warnings, st.diags.warnings == 1 ? "" : "s");
    if (rc == 0)
        printf(" in %zu bus%s (%zu rows)", st.buses.count, st.buses.count == 1 ? "" : "es",
               st.results.count);
    printf("\n");
    int exit_code = st.unreadable ? TW_EXIT_IO : (rc != 0 || st.diags.errors) ? TW_EXIT_DATA : 0;
    tw_study_free(&st);
    return exit_code;
}
