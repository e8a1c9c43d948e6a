/* cmd_gather.c — `nervegap gather DIR -o ALL.h5 [--table summary.csv]`:
 * joins the job files of a batch directory (batch.h) and lists every job
 * that is not complete. */
#include "commands.h"
#include "args.h"
#include "nervegap/batch.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

static const char gather_help[] =
    "Usage: nervegap gather DIR -o ALL.h5 [--table summary.csv]\n"
    "                       [--alpha A] [--quiet]\n"
    "\n"
    "Copies every finished job file of DIR (written by nervegap batch) into\n"
    "ALL.h5 under /jobs/ID, lists all jobs with their status under /index,\n"
    "and for jobs with subsamples writes the confidence under\n"
    "/confidence/ID: per complex and degree the (1 - A) quantile c of the\n"
    "bottleneck distances between each subsample's diagram and the full\n"
    "one, and which bars are longer than 2c (significant).\n"
    "\n"
    "  -o, --output ALL.h5   the gathered file (required)\n"
    "  --table FILE.csv      also one CSV row per job: parameters, counts,\n"
    "                        Λ, Δ, distances and significant bars per degree\n"
    "  --alpha A             confidence level (default: the manifest's,\n"
    "                        0.05 unless it says otherwise)\n"
    "  --quiet               no line per incomplete job\n"
    "\n"
    "Jobs that are missing, failed or whose file is corrupt are listed on\n"
    "stderr, in /index and in the table; the exit code is then 1.\n";

static void on_problem(const char *id, ng_gather_status status,
                       const char *message, void *ctx)
{
    static const char *what[] = {"complete", "missing", "failed", "corrupt",
                                 "stale"};
    if (*(const int *)ctx) return;
    fprintf(stderr, "nervegap gather: job %s %s: %s\n", id, what[status],
            message);
}

int cmd_gather(int argc, char **argv)
{
    const char *output = NULL, *table_path = NULL, *alpha_text = NULL;
    int quiet = 0;
    const cli_option table[] = {
        {"output", "-o", 1, &output, NULL},
        {"table", NULL, 1, &table_path, NULL},
        {"alpha", NULL, 1, &alpha_text, NULL},
        {"quiet", NULL, 0, NULL, &quiet},
        {NULL, NULL, 0, NULL, NULL},
    };
    cli_args args;
    ng_error err;
    ng_error_clear(&err);
    if (cli_parse(argc, argv, 2, "gather", table, &args, &err) != NG_OK)
        return cli_fail("gather", &err);
    if (args.help) {
        fputs(gather_help, stdout);
        return 0;
    }
    double alpha = NAN;
    if (args.n_positional != 1)
        ng_error_set(&err, NG_ERR_USAGE, "expected one DIR, got %d (see "
                     "nervegap gather --help)", args.n_positional);
    else if (output == NULL)
        ng_error_set(&err, NG_ERR_USAGE, "-o ALL.h5 is required (see "
                     "nervegap gather --help)");
    if (err.code == NG_OK && alpha_text) {
        char *end;
        errno = 0;
        alpha = strtod(alpha_text, &end);
        if (end == alpha_text || *end != '\0' || errno != 0 ||
            !(alpha > 0.0 && alpha < 1.0))
            ng_error_set(&err, NG_ERR_USAGE, "--alpha %s: expected a level "
                         "between 0 and 1, such as 0.05", alpha_text);
    }
    if (err.code != NG_OK) return cli_fail("gather", &err);
    ng_gather_summary sum;
    if (ng_gather(args.positional[0], output, table_path, alpha, on_problem,
                  &quiet, &sum, &err) != NG_OK)
        return cli_fail("gather", &err);
    size_t bad = sum.jobs - sum.complete;
    if (!quiet || bad > 0)
        fprintf(stderr, "nervegap gather: %zu of %zu jobs complete into %s"
                "%s%s", sum.complete, sum.jobs, output,
                table_path ? " and " : "", table_path ? table_path : "");
    if (bad > 0)
        fprintf(stderr, "; not complete: %zu missing, %zu failed, %zu "
                "corrupt, %zu stale (listed above, in /index and in the "
                "table)\n", sum.missing, sum.failed, sum.corrupt, sum.stale);
    else if (!quiet)
        fputc('\n', stderr);
    return bad > 0 ? 1 : 0;
}
