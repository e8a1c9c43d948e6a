/* args.c — the long-option parser of args.h. */
#include "args.h"

#include <errno.h>
#include <stdlib.h>
#include <string.h>

static const cli_option *find(const cli_option *table, const char *arg,
                              size_t len)
{
    for (const cli_option *o = table; o->name; o++) {
        if (strlen(o->name) == len && strncmp(o->name, arg, len) == 0)
            return o;
    }
    return NULL;
}

static const cli_option *find_alias(const cli_option *table, const char *arg)
{
    for (const cli_option *o = table; o->name; o++)
        if (o->alias && strcmp(o->alias, arg) == 0) return o;
    return NULL;
}

int cli_parse(int argc, char **argv, int first, const char *command,
              const cli_option *table, cli_args *out, ng_error *err)
{
    memset(out, 0, sizeof *out);
    int only_positional = 0;
    for (int i = first; i < argc; i++) {
        const char *arg = argv[i];
        const cli_option *opt = NULL;
        const char *inline_value = NULL;
        if (!only_positional && strcmp(arg, "--") == 0) {
            only_positional = 1;
            continue;
        }
        if (!only_positional &&
            (strcmp(arg, "--help") == 0 || strcmp(arg, "-h") == 0)) {
            out->help = 1;
            continue;
        }
        if (!only_positional && arg[0] == '-' && arg[1] == '-') {
            const char *name = arg + 2, *eq = strchr(name, '=');
            size_t len = eq ? (size_t)(eq - name) : strlen(name);
            opt = find(table, name, len);
            if (opt == NULL)
                return ng_error_set(err, NG_ERR_USAGE,
                                    "unknown option '%.*s' for 'nervegap %s' "
                                    "(see nervegap %s --help)",
                                    (int)(len + 2), arg, command, command);
            if (eq) inline_value = eq + 1;
        } else if (!only_positional && arg[0] == '-' && arg[1] != '\0') {
            opt = find_alias(table, arg);
            if (opt == NULL)
                return ng_error_set(err, NG_ERR_USAGE,
                                    "unknown option '%s' for 'nervegap %s' "
                                    "(see nervegap %s --help)",
                                    arg, command, command);
        }
        if (opt == NULL) {
            if (out->n_positional == CLI_MAX_POSITIONAL)
                return ng_error_set(err, NG_ERR_USAGE,
                                    "too many arguments for 'nervegap %s'",
                                    command);
            out->positional[out->n_positional++] = arg;
            continue;
        }
        if (!opt->takes_value) {
            if (inline_value)
                return ng_error_set(err, NG_ERR_USAGE,
                                    "--%s takes no value", opt->name);
            *opt->flag = 1;
            continue;
        }
        if (*opt->value != NULL)
            return ng_error_set(err, NG_ERR_USAGE, "--%s given twice",
                                opt->name);
        if (inline_value == NULL) {
            if (i + 1 >= argc)
                return ng_error_set(err, NG_ERR_USAGE,
                                    "--%s needs a value", opt->name);
            inline_value = argv[++i];
        }
        *opt->value = inline_value;
    }
    return NG_OK;
}

int cli_parse_threads(const char *text, int *out, ng_error *err)
{
    char *end;
    errno = 0;
    long v = strtol(text, &end, 10);
    if (*text == '\0' || *end != '\0' || errno != 0 || v < 1 || v > 4096)
        return ng_error_set(err, NG_ERR_USAGE,
                            "--threads: expected a whole number from 1 to "
                            "4096, got '%s'", text);
    *out = (int)v;
    return NG_OK;
}
