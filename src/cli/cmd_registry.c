/* cmd_registry.c - `tagwright registry export|import`: the site's label registry for review,
 * diffs and maintenance systems, and bringing an earlier JSON manifest into it.
 *
 *   registry export [--site SITE.json | --manifest REG] [--format json|csv] [--status S]
 *   registry import [--site SITE.json | --manifest REG] OLD.manifest.json
 *
 * Exit 0 done, 1 the manifest breaks a rule (nothing imported), 2 usage, 3 the registry cannot
 * be read or written. */
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_util.h"
#include "cli/tw_cli.h"
#include "read/tw_site.h"
#include "write/tw_registry.h"

static const char registry_usage[] =
    "usage: tagwright registry export [--site SITE.json | --manifest REG] [--format json|csv]\n"
    "                                 [--status current|superseded|removed]\n"
    "       tagwright registry import [--site SITE.json | --manifest REG] OLD.manifest.json\n"
    "  export      every revision on standard output, by equipment and revision;\n"
    "              --status removed is the list of labels to take down\n"
    "  import      bring a JSON manifest (an earlier build's, or an export) into the registry,\n"
    "              all or nothing; equipment already in the registry is refused\n"
    "  --site      site settings naming the registry (\"registry\")\n"
    "  --manifest  the registry itself (overrides the site's)\n";

typedef struct {
    const char *site, *manifest, *file;
    int csv, import;
    int has_status;
    tw_rev_status status;
} registry_args;

static int parse_status(const char *s, tw_rev_status *out)
{
    for (int i = TW_REV_CURRENT; i <= TW_REV_REMOVED; i++)
        if (!strcmp(s, tw_rev_status_name((tw_rev_status)i))) {
            *out = (tw_rev_status)i;
            return 0;
        }
    return tw_usage_error("registry", "--status: expected current, superseded or removed, got "
                          "'%s'", s);
}

static int parse_args(int argc, char **argv, registry_args *a)
{
    static const struct option opts[] = {
        {"site", required_argument, NULL, 's'},   {"manifest", required_argument, NULL, 'm'},
        {"format", required_argument, NULL, 'f'}, {"status", required_argument, NULL, 'S'},
        {"help", no_argument, NULL, 'h'},         {NULL, 0, NULL, 0},
    };
    memset(a, 0, sizeof *a);
    if (argc < 2 || !strcmp(argv[1], "--help") || !strcmp(argv[1], "-h")) {
        fputs(registry_usage, argc < 2 ? stderr : stdout);
        return argc < 2 ? TW_EXIT_USAGE : -1;
    }
    if (strcmp(argv[1], "export") && strcmp(argv[1], "import"))
        return tw_usage_error("registry", "expected export or import, got '%s'", argv[1]);
    a->import = !strcmp(argv[1], "import");
    int c;
    optind = 2;
    while ((c = getopt_long(argc, argv, "s:m:f:S:h", opts, NULL)) != -1) {
        switch (c) {
        case 's': a->site = optarg; break;
        case 'm': a->manifest = optarg; break;
        case 'f':
            if (strcmp(optarg, "json") && strcmp(optarg, "csv"))
                return tw_usage_error("registry", "--format: expected json or csv, got '%s'",
                                      optarg);
            a->csv = !strcmp(optarg, "csv");
            break;
        case 'S':
            if (parse_status(optarg, &a->status) != 0)
                return TW_EXIT_USAGE;
            a->has_status = 1;
            break;
        case 'h': fputs(registry_usage, stdout); return -1;
        default: return tw_usage_error("registry", "unknown option; see 'tagwright registry "
                                       "--help'");
        }
    }
    if (!a->site && !a->manifest)
        return tw_usage_error("registry", "--site SITE.json (naming the registry) or --manifest "
                              "REG is required");
    if (a->import) {
        if (optind != argc - 1)
            return tw_usage_error("registry", "import: expected one manifest file");
        if (a->csv || a->has_status)
            return tw_usage_error("registry", "--format and --status belong to export");
        a->file = argv[optind];
    } else if (optind != argc) {
        return tw_usage_error("registry", "export: expected no file (the export goes to "
                              "standard output)");
    }
    return 0;
}

static char *registry_path(const registry_args *a, int *rc)
{
    *rc = TW_EXIT_OK;
    if (a->manifest)
        return tw_strdup(a->manifest);
    tw_site site;
    tw_diags d;
    tw_diags_init(&d);
    char *path = NULL;
    if (tw_site_load(a->site, &site, &d) != 0)
        *rc = TW_EXIT_DATA;
    else if (!(path = tw_registry_choose("registry", NULL, &site, NULL))) {
        fprintf(stderr, "tagwright registry: %s names no registry; expected \"registry\" in the "
                "site settings, or --manifest REG\n", a->site);
        *rc = TW_EXIT_USAGE;
    }
    tw_diags_print(&d, stderr);
    tw_diags_free(&d);
    tw_site_free(&site);
    return path;
}

/* The manifest to import, read and checked before the registry is opened (or made). */
static char *read_manifest(const char *file, size_t *len, int *rc)
{
    char err[1024] = "";
    char *data = tw_read_file(file, len, err, sizeof err);
    *rc = data ? tw_registry_import_check(file, data, *len, err, sizeof err) : TW_EXIT_IO;
    if (*rc != TW_EXIT_OK) {
        fprintf(stderr, "tagwright registry: %s\ntagwright registry: nothing imported\n", err);
        free(data);
        return NULL;
    }
    return data;
}

static int import_file(tw_registry *r, const char *file, const char *data, size_t len)
{
    char err[1024] = "";
    size_t count = 0;
    int rc = tw_registry_import(r, file, data, len, &count, err, sizeof err);
    if (rc != TW_EXIT_OK)
        fprintf(stderr, "tagwright registry: %s\ntagwright registry: nothing imported\n", err);
    else
        printf("%s: %zu revision%s imported into %s\n", file, count, count == 1 ? "" : "s",
               r->path);
    return rc;
}

int cmd_registry(int argc, char **argv)
{
    registry_args a;
    int rc = parse_args(argc, argv, &a);
    if (rc != 0)
        return rc < 0 ? TW_EXIT_OK : rc;
    size_t len = 0;
    char *data = a.import ? read_manifest(a.file, &len, &rc) : NULL;
    if (rc != TW_EXIT_OK)
        return rc;
    char *path = registry_path(&a, &rc);
    if (!path) {
        free(data);
        return rc ? rc : TW_EXIT_IO;
    }
    tw_registry r;
    char err[1024] = "";
    rc = tw_registry_open(&r, path, a.import, err, sizeof err);
    if (rc != TW_EXIT_OK)
        fprintf(stderr, "tagwright registry: %s\n", err);
    else if (a.import)
        rc = import_file(&r, a.file, data, len);
    else if ((rc = tw_registry_export(&r, stdout, a.csv, a.has_status ? &a.status : NULL, err,
                                      sizeof err)) != TW_EXIT_OK)
        fprintf(stderr, "tagwright registry: %s\n", err);
    tw_registry_close(&r);
    free(path);
    free(data);
    return rc;
}
