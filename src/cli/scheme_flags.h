/* scheme_flags.h — the flags every subcommand that reads a cloud shares:
 * INPUT or --distances FILE, --metric, --radius, --law, --raw-radius,
 * --merge-duplicates, --threads. */
#ifndef NERVEGAP_CLI_SCHEME_FLAGS_H
#define NERVEGAP_CLI_SCHEME_FLAGS_H

#include "args.h"
#include "nervegap/cloud.h"
#include "nervegap/radius.h"

typedef struct scheme_flags {
    const char *metric, *radius, *law, *distances, *threads;
    int raw_radius, merge_duplicates;
} scheme_flags;

/* Table entries for the scheme flags of f, to put inside a cli_option
 * table. */
#define SCHEME_OPTIONS(f)                                                  \
    {"metric", NULL, 1, &(f).metric, NULL},                                \
    {"radius", NULL, 1, &(f).radius, NULL},                                \
    {"law", NULL, 1, &(f).law, NULL},                                      \
    {"distances", NULL, 1, &(f).distances, NULL},                          \
    {"threads", NULL, 1, &(f).threads, NULL},                              \
    {"raw-radius", NULL, 0, NULL, &(f).raw_radius},                        \
    {"merge-duplicates", NULL, 0, NULL, &(f).merge_duplicates}

/* The help text of the scheme flags. */
extern const char scheme_flags_help[];

/* Parses the flags into *scheme and *threads (0 = OpenMP default) and
 * checks that exactly one of input and --distances is given. */
int scheme_flags_parse(const scheme_flags *f, const char *command,
                       const char *input, ng_scheme *scheme, int *threads,
                       ng_error *err);

/* As scheme_flags_parse, then
 * reads the cloud from input (or from --distances; exactly one of the two)
 * into *cloud (caller frees with ng_cloud_free). */
int scheme_flags_load(const scheme_flags *f, const char *command,
                      const char *input, ng_scheme *scheme, int *threads,
                      ng_cloud **cloud, ng_error *err);

#endif
