/* options.c - option handling shared by the commands (see tw_cli.h). */
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "base/tw_date.h"
#include "cli/tw_cli.h"

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
