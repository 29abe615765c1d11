/*
 * tw_cli.h - the subcommands. Each takes the arguments after its name (argv[0] is the command
 * name), prints what it has to say, and returns the exit status; only main() exits.
 *
 * Exit status: 0 fine, 1 bad data (findings printed), 2 bad usage, 3 I/O error or a result
 * refused on safety grounds (each command documents which).
 * Adding a command: write src/cli/cmd_NAME.c with int cmd_NAME(int, char **), declare it
 * here, and add one row to the table in src/main.c.
 */
#ifndef TW_CLI_H
#define TW_CLI_H

#include "base/tw_exit.h"
#include "read/tw_site.h"

int cmd_check(int argc, char **argv);
int cmd_labels(int argc, char **argv);
int cmd_infinite_bus(int argc, char **argv);
int cmd_envelope(int argc, char **argv);
int cmd_summary(int argc, char **argv);
int cmd_reprint(int argc, char **argv);
int cmd_diff(int argc, char **argv);
int cmd_due(int argc, char **argv);
int cmd_verify(int argc, char **argv);
int cmd_permit(int argc, char **argv);
int cmd_layouts(int argc, char **argv);
int cmd_columns(int argc, char **argv);
int cmd_registry(int argc, char **argv);

/* Shared option handling (src/cli/options.c). */

/* Print "tagwright CMD: message" to stderr and return TW_EXIT_USAGE. */
int tw_usage_error(const char *cmd, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

/* Name of the registry made beside the PDF when the site names none. */
#define TW_DEFAULT_REGISTRY "tagwright-registry.db"

/* The registry a command uses (fresh string): the --manifest option when given, else the
 * site's "registry", else, for a command that prints (out_pdf not NULL), TW_DEFAULT_REGISTRY
 * in the PDF's directory, with a note on stderr saying where the history went. NULL when
 * there is none (or out of memory). */
char *tw_registry_choose(const char *cmd, const char *option, const tw_site *site,
                         const char *out_pdf);

/* --approved-by needs --reason: a usage error (printed) or 0. */
int tw_approval_ok(const char *cmd, const char *approved_by, const char *reason);

/* Parse a "YYYY-MM-DD" option value into buf (11 bytes); -1 when it is not a date. */
int tw_option_date(const char *value, char *buf);

#endif
