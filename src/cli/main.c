/* main.c — the nervegap command line: finds the subcommand and runs it.
 * The subcommands only parse arguments, call the library and print; exit
 * codes are 0 ok, 1 runtime failure, 2 bad usage or bad input. */
#include "commands.h"

#include <stdio.h>
#include <string.h>

static const struct {
    const char *name;
    int (*run)(int argc, char **argv);
    const char *summary;
} commands[] = {
    {"run", cmd_run, "Čech and Rips barcodes over adaptive balls (HDF5)"},
    {"radii", cmd_radii, "base radius and birth of every point (CSV)"},
    {"show", cmd_show, "summary of a results file"},
    {"export", cmd_export, "a results file as CSV or JSON"},
    {"distance", cmd_distance, "compare two runs' barcodes"},
    {"plot", cmd_plot, "pictures of a run or of two (SVG or HTML)"},
    {"values", cmd_values, "Rips and Čech values of given simplices (CSV)"},
    {"batch", cmd_batch, "run the jobs of a manifest (a shard of them)"},
    {"gather", cmd_gather, "join a batch's results, subsample confidence"},
};

static void usage(FILE *out)
{
    fprintf(out,
            "nervegap %s — Čech and Vietoris–Rips persistence over adaptive "
            "balls\n\nUsage: nervegap COMMAND [options]   (nervegap COMMAND "
            "--help for its options)\n\nCommands:\n",
            ng_version());
    for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
        fprintf(out, "  %-10s %s\n", commands[i].name, commands[i].summary);
}

int cli_fail(const char *command, const ng_error *err)
{
    fprintf(stderr, "nervegap %s: %s\n", command,
            err->message[0] ? err->message : "unknown error");
    return ng_error_exit_code(err->code != NG_OK ? err->code : NG_ERR_RUNTIME);
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        fprintf(stderr, "nervegap: no command given (Usage: nervegap COMMAND "
                        "[options]; see nervegap --help)\n");
        return 2;
    }
    if (strcmp(argv[1], "--version") == 0) {
        printf("nervegap %s\n", ng_version());
        return 0;
    }
    if (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0 ||
        strcmp(argv[1], "help") == 0) {
        usage(stdout);
        return 0;
    }
    for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
        if (strcmp(argv[1], commands[i].name) == 0)
            return commands[i].run(argc, argv);
    fprintf(stderr, "nervegap: unknown command '%s' (see nervegap --help)\n",
            argv[1]);
    return 2;
}
