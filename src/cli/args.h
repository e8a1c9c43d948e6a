/* args.h — a small long-option parser shared by the subcommands.
 *
 * Options are "--name VALUE", "--name=VALUE" or "--name" (flags); "-o" is
 * the one short option (an alias that a table entry names). Everything
 * else is a positional argument; "--" ends the options.
 */
#ifndef NERVEGAP_CLI_ARGS_H
#define NERVEGAP_CLI_ARGS_H

#include "nervegap/common.h"

typedef struct cli_option {
    const char *name;   /* without the leading "--" */
    const char *alias;  /* e.g. "-o", or NULL */
    int takes_value;
    const char **value; /* set when takes_value */
    int *flag;          /* set to 1 when !takes_value */
} cli_option;

#define CLI_MAX_POSITIONAL 8

typedef struct cli_args {
    const char *positional[CLI_MAX_POSITIONAL];
    int n_positional;
    int help;           /* --help or -h was given */
} cli_args;

/* Parses argv[first..argc-1] against the NULL-terminated table.
 * NG_ERR_USAGE naming the option on an unknown option, a missing value, a
 * repeated option or too many positional arguments. */
int cli_parse(int argc, char **argv, int first, const char *command,
              const cli_option *table, cli_args *out, ng_error *err);

/* Parses a thread count for --threads (≥ 1). */
int cli_parse_threads(const char *text, int *out, ng_error *err);

#endif
