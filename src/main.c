/* main.c - tagwright's entry point: a table of subcommands over the public headers. */
#include <stdio.h>
#include <string.h>

#include "cli/tw_cli.h"

#ifndef TW_VERSION
#define TW_VERSION "0.1.0"
#endif

typedef struct {
    const char *name;
    int (*run)(int argc, char **argv);
    const char *summary;
} command;

static int cmd_help(int argc, char **argv);
static int cmd_version(int argc, char **argv);

static const command commands[] = {
    {"check", cmd_check, "check study results for errors before anything is printed"},
    {"labels", cmd_labels, "print arc-flash hazard labels (PDF), recorded in the registry"},
    {"infinite-bus", cmd_infinite_bus, "a transformer's full-load and infinite-bus fault current"},
    {"envelope", cmd_envelope, "worst case per bus across scenarios; where energy rises"},
    {"summary", cmd_summary, "a study summary PDF: table, energy chart, scenario sweeps"},
    {"reprint", cmd_reprint, "revise one label after a protective-device setting change"},
    {"diff", cmd_diff, "compare the label content of two study revisions, bus by bus"},
    {"due", cmd_due, "list buses whose 5-year study review is overdue or due soon"},
    {"verify", cmd_verify, "check a scanned label's QR payload against the registry"},
    {"permit", cmd_permit, "draft energized electrical work permits (PDF) from a job file"},
    {"columns", cmd_columns, "print a starter column map for a study export with its own names"},
    {"registry", cmd_registry, "export the label registry, or import an earlier manifest"},
    {"layouts", cmd_layouts, "list the shipped label layouts: label size, page, labels per page"},
    {"help", cmd_help, "list the commands"},
    {"version", cmd_version, "print the version"},
};

static const size_t command_count = sizeof commands / sizeof commands[0];

static int cmd_help(int argc, char **argv)
{
    (void)argc;
    (void)argv;
    printf("usage: tagwright COMMAND [ARGS]\n\ncommands:\n");
    for (size_t i = 0; i < command_count; i++)
        printf("  %-14s %s\n", commands[i].name, commands[i].summary);
    printf("\n'tagwright COMMAND --help' describes one command; man tagwright has the rest.\n"
           "Labels and permits are drafts of what the arc-flash risk assessment says: qualified\n"
           "persons, NFPA 70E, local codes and a licensed engineer's judgement govern.\n");
    return TW_EXIT_OK;
}

static int cmd_version(int argc, char **argv)
{
    (void)argc;
    (void)argv;
    printf("tagwright %s\n", TW_VERSION);
    return TW_EXIT_OK;
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        cmd_help(0, NULL);
        return TW_EXIT_USAGE;
    }
    if (!strcmp(argv[1], "--help") || !strcmp(argv[1], "-h"))
        return cmd_help(0, NULL);
    if (!strcmp(argv[1], "--version"))
        return cmd_version(0, NULL);
    for (size_t i = 0; i < command_count; i++)
        if (!strcmp(argv[1], commands[i].name))
            return commands[i].run(argc - 1, argv + 1);
    fprintf(stderr, "tagwright: unknown command '%s'; 'tagwright help' lists them\n", argv[1]);
    return TW_EXIT_USAGE;
}
