/* cmd_columns.c - `tagwright columns FILE`: a starter column map for a study export, printed
 * on standard output for the user to check and edit. Notes on what was detected rather than
 * read go to standard error. Exit 0 printed, 1 no header found, 2 usage, 3 unreadable. */
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>

#include "cli/tw_cli.h"
#include "read/tw_column_map.h"

static const char columns_usage[] =
    "usage: tagwright columns FILE\n"
    "Prints a starter column map for a study export (CSV or JSON): every header cell, with the\n"
    "field it plainly is when its words and unit say so, and null where unsure. Check it, fill\n"
    "in the nulls you need, then read the export with --columns MAP.json. Notes on what was\n"
    "detected (header line, delimiter, encoding, footer) go to standard error.\n";

int cmd_columns(int argc, char **argv)
{
    static const struct option opts[] = {
        {"help", no_argument, NULL, 'h'},
        {NULL, 0, NULL, 0},
    };
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "h", opts, NULL)) != -1) {
        if (c == 'h') {
            fputs(columns_usage, stdout);
            return TW_EXIT_OK;
        }
        return tw_usage_error("columns", "unknown option; see 'tagwright columns --help'");
    }
    if (optind != argc - 1)
        return tw_usage_error("columns", "expected one study export (CSV or JSON)");
    const char *path = argv[optind];
    char err[512] = "";
    size_t len = 0;
    char *data = tw_read_file(path, &len, err, sizeof err);
    if (!data) {
        fprintf(stderr, "tagwright columns: %s\n", err);
        return TW_EXIT_IO;
    }
    tw_diags d;
    tw_diags_init(&d);
    char *map = tw_column_map_starter(path, data, len, &d);
    free(data);
    tw_diags_print(&d, stderr);
    if (map)
        fputs(map, stdout);
    int rc = map ? TW_EXIT_OK : TW_EXIT_DATA;
    free(map);
    tw_diags_free(&d);
    return rc;
}
