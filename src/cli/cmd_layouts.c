/* cmd_layouts.c - `tagwright layouts`: the shipped label layouts with their label size, the page
 * they are printed on and the grid of labels per page.
 *
 * Every layout is loaded and checked as `labels --layout` would; a layout that does not load is
 * reported with its findings and makes the exit status 1. */
#include <getopt.h>
#include <stdio.h>
#include <string.h>

#include "cli/tw_cli.h"
#include "write/tw_layout.h"

static const char layouts_usage[] =
    "usage: tagwright layouts [--dir DIR]\n"
    "  --dir   list the layouts in DIR instead of the shipped ones\n"
    "Use a layout with 'tagwright labels RESULTS --layout NAME' (or --layout FILE.json).\n";

#define PT_PER_IN 72.0
#define PT_PER_MM (72.0 / 25.4)

/* "4 x 6 in" or "100 x 150 mm", in the layout's own unit (digits: significant digits). */
static void size_text(double w, double h, int metric, int digits, char *buf, size_t n)
{
    double u = metric ? PT_PER_MM : PT_PER_IN;
    snprintf(buf, n, "%.*g x %.*g %s", digits, w / u, digits, h / u, metric ? "mm" : "in");
}

static void print_heading(void)
{
    printf("  %-22s %-33s %-15s %-14s %s\n", "NAME", "LABEL", "PAGE", "LABELS/PAGE", "PRINTER");
}

static void print_layout(const tw_layout *l)
{
    char own[48], other[48], label[112], page[48], grid[32];
    size_text(l->label_w, l->label_h, l->metric, 4, own, sizeof own);
    size_text(l->label_w, l->label_h, !l->metric, l->metric ? 3 : 4, other, sizeof other);
    snprintf(label, sizeof label, "%s (%s)", own, other);
    size_text(l->page_w, l->page_h, l->metric, 4, page, sizeof page);
    snprintf(grid, sizeof grid, "%d (%d x %d)", l->columns * l->rows, l->columns, l->rows);
    printf("  %-22s %-33s %-15s %-14s %.0f dpi\n", l->name, label, page, grid, l->printer_dpi);
    if (l->description)
        printf("  %-22s %s\n", "", l->description);
}

int cmd_layouts(int argc, char **argv)
{
    static const struct option opts[] = {
        {"dir", required_argument, NULL, 'd'},
        {"help", no_argument, NULL, 'h'},
        {NULL, 0, NULL, 0},
    };
    const char *dir = NULL;
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "d:h", opts, NULL)) != -1) {
        switch (c) {
        case 'd': dir = optarg; break;
        case 'h': fputs(layouts_usage, stdout); return TW_EXIT_OK;
        default: return tw_usage_error("layouts", "unknown option; see 'tagwright layouts --help'");
        }
    }
    if (optind != argc)
        return tw_usage_error("layouts", "expected no arguments, got '%s'", argv[optind]);
    if (!dir)
        dir = tw_layouts_dir();
    char **names = NULL;
    int n = tw_layout_names(dir, &names);
    if (n < 0) {
        fprintf(stderr, "tagwright layouts: %s: cannot read the layouts directory (set "
                "TAGWRIGHT_LAYOUTS or use --dir)\n", dir);
        return TW_EXIT_IO;
    }
    printf("Layouts in %s (tagwright labels --layout NAME):\n", dir);
    print_heading();
    int rc = TW_EXIT_OK;
    for (int i = 0; i < n; i++) {
        tw_diags d;
        tw_diags_init(&d);
        tw_layout l;
        if (tw_layout_load(names[i], dir, &l, &d) == 0) {
            print_layout(&l);
        } else {
            printf("  %-22s (not usable; the messages are on stderr)\n", names[i]);
            rc = TW_EXIT_DATA;
        }
        tw_diags_print(&d, stderr);
        tw_layout_free(&l);
        tw_diags_free(&d);
    }
    if (n == 0)
        printf("  (none)\n");
    tw_layout_names_free(names, n);
    return rc;
}
