/* commands.h — the subcommands of the nervegap command line. Each takes
 * the whole argv (argv[1] is its name) and returns an exit code; errors are
 * printed by the subcommand through cli_fail. */
#ifndef NERVEGAP_CLI_COMMANDS_H
#define NERVEGAP_CLI_COMMANDS_H

#include "nervegap/common.h"

int cmd_batch(int argc, char **argv);
int cmd_distance(int argc, char **argv);
int cmd_export(int argc, char **argv);
int cmd_gather(int argc, char **argv);
int cmd_plot(int argc, char **argv);
int cmd_radii(int argc, char **argv);
int cmd_run(int argc, char **argv);
int cmd_show(int argc, char **argv);
int cmd_values(int argc, char **argv);

/* The command line as one string, arguments with spaces quoted (for the
 * results file); caller frees with free(). NULL when out of memory. */
char *cli_join_command(int argc, char **argv);

/* Prints "nervegap COMMAND: message" to stderr and returns the exit code of
 * err (1 or 2). */
int cli_fail(const char *command, const ng_error *err);

#endif
