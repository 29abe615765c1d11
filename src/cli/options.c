/* options.c - option handling shared by the commands (see tw_cli.h). */
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_date.h"
#include "base/tw_util.h"
#include "cli/tw_cli.h"

char *tw_registry_choose(const char *cmd, const char *option, const tw_site *site,
                         const char *out_pdf)
{
    if (option)
        return tw_strdup(option);
    if (site && site->registry)
        return tw_strdup(site->registry);
    if (!out_pdf)
        return NULL;
    const char *slash = strrchr(out_pdf, '/');
    char *path = slash ? tw_asprintf("%.*s/%s", (int)(slash - out_pdf), out_pdf,
                                     TW_DEFAULT_REGISTRY)
                       : tw_strdup(TW_DEFAULT_REGISTRY);
    if (path)
        fprintf(stderr, "tagwright %s: note: the site settings name no registry; the labels are "
                "recorded in %s (set \"registry\" in site.json to keep one record for the "
                "whole site)\n", cmd, path);
    return path;
}

int tw_approval_ok(const char *cmd, const char *approved_by, const char *reason)
{
    if (approved_by && (!*approved_by || !reason || !*reason))
        return tw_usage_error(cmd, "--approved-by needs a name and --reason TEXT: the approval "
                              "of a lowered hazard is recorded with why");
    return 0;
}

int tw_usage_error(const char *cmd, const char *fmt, ...)
{
    va_list ap;
    fprintf(stderr, "tagwright %s: ", cmd);
    va_start(ap, fmt);
    vfprintf(stderr, fmt, ap);
    va_end(ap);
    fprintf(stderr, "\n");
    return TW_EXIT_USAGE;
}

int tw_option_date(const char *value, char *buf)
{
    tw_date d;
    if (tw_date_parse(value, &d) != 0 || strlen(value) != 10)
        return -1;
    tw_date_format(d, buf);
    return 0;
}
