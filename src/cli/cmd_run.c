/* cmd_run.c — `nervegap run`: one job (job.h) from the flags. The output
 * file is created (under a temporary name) before the input is read, so
 * that an unwritable path fails at once; SIGINT and SIGTERM remove it and
 * exit with 130 / 143 (cleanup.h). Progress goes through progress.h. */
#include "cleanup.h"
#include "commands.h"
#include "nervegap/job.h"
#include "progress.h"
#include "scheme_flags.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const char run_help[] =
    "Usage: nervegap run INPUT [scheme flags] [run flags] -o OUT.h5\n"
    "       nervegap run --distances FILE [scheme flags] [run flags] -o OUT.h5\n"
    "\n"
    "Builds the Čech and Rips filtrations over the same balls (and the\n"
    "slices between them), computes their mod-2 barcodes and writes them to\n"
    "OUT.h5 (written under a temporary name, renamed when complete).\n"
    "\n"
    "Run flags:\n"
    "  -o, --output OUT.h5     the results file (required)\n"
    "  --max-degree D          homology degrees 0..D (default 1, at most 4)\n"
    "  --scale-limit T|auto    cut the filtrations at scale T; auto (default):\n"
    "                          the full scale if the complex fits the budget\n"
    "                          (--max-simplices and --budget), else the\n"
    "                          largest scale that fits\n"
    "  --slices factor:L,..    also the slices max(rips, cech/L) (L ≥ 1), or\n"
    "  --slices shift:D,..     max(rips, cech - D) (D ≥ 0)\n"
    "  --grid G                per-scale statistics on G scales over\n"
    "                          [0, scale limit] (default 128)\n"
    "  --max-simplices N       simplex budget: at most N simplices with\n"
    "                          rips ≤ T, all dimensions (default 2e7, about\n"
    "                          a minute on two cores; 0: memory only)\n"
    "  --budget SIZE           memory for the complex and the reduction, e.g.\n"
    "                          4G (default: half the physical memory)\n"
    "  --wasserstein-limit N   Wasserstein distances of a degree only when\n"
    "                          at most N points of either diagram have no\n"
    "                          identical point in the other, else NaN\n"
    "                          (default 50000; 0: always)\n"
    "  --quiet                 no progress lines on stderr\n";

static int fail(progress *prog, const ng_error *err)
{
    progress_break(prog);
    return cli_fail("run", err);
}

char *cli_join_command(int argc, char **argv)
{
    size_t len = 1;
    for (int i = 0; i < argc; i++) len += strlen(argv[i]) + 3;
    char *s = malloc(len);
    if (s == NULL) return NULL;
    s[0] = '\0';
    for (int i = 0; i < argc; i++) {
        int quote = strpbrk(argv[i], " \t\"'") != NULL || argv[i][0] == '\0';
        if (i > 0) strcat(s, " ");
        if (quote) strcat(s, "'");
        strcat(s, argv[i]);
        if (quote) strcat(s, "'");
    }
    return s;
}

int cmd_run(int argc, char **argv)
{
    scheme_flags f = {0};
    const char *output = NULL, *max_degree = NULL, *scale_limit = NULL,
               *slices = NULL, *budget = NULL, *grid = NULL,
               *max_simplices = NULL, *wasserstein_limit = NULL;
    int quiet = 0;
    const cli_option table[] = {
        SCHEME_OPTIONS(f),
        {"output", "-o", 1, &output, NULL},
        {"max-degree", NULL, 1, &max_degree, NULL},
        {"scale-limit", NULL, 1, &scale_limit, NULL},
        {"slices", NULL, 1, &slices, NULL},
        {"budget", NULL, 1, &budget, NULL},
        {"max-simplices", NULL, 1, &max_simplices, NULL},
        {"grid", NULL, 1, &grid, NULL},
        {"wasserstein-limit", NULL, 1, &wasserstein_limit, NULL},
        {"quiet", NULL, 0, NULL, &quiet},
        {NULL, NULL, 0, NULL, NULL},
    };
    cli_args args;
    ng_error err;
    ng_error_clear(&err);
    if (cli_parse(argc, argv, 2, "run", table, &args, &err) != NG_OK)
        return cli_fail("run", &err);
    if (args.help) {
        fputs(run_help, stdout);
        fputs(scheme_flags_help, stdout);
        return 0;
    }

    ng_job job;
    ng_job_init(&job);
    ng_run_options *opt = &job.options;
    const char *input = args.n_positional ? args.positional[0] : NULL;
    if (args.n_positional > 1)
        ng_error_set(&err, NG_ERR_USAGE, "expected one INPUT, got %d",
                     args.n_positional);
    else if (output == NULL)
        ng_error_set(&err, NG_ERR_USAGE,
                     "-o OUT.h5 is required (see nervegap run --help)");
    if (err.code == NG_OK && max_degree)
        ng_run_parse_max_degree(max_degree, opt, &err);
    if (err.code == NG_OK && scale_limit)
        ng_run_parse_scale_limit(scale_limit, opt, &err);
    if (err.code == NG_OK && grid) ng_run_parse_grid(grid, opt, &err);
    if (err.code == NG_OK && slices) ng_run_parse_slices(slices, opt, &err);
    if (err.code == NG_OK && budget)
        ng_run_parse_budget(budget, &opt->budget_bytes, &err);
    if (err.code == NG_OK && max_simplices)
        ng_run_parse_count(max_simplices, &opt->max_simplices, &err);
    if (err.code == NG_OK && wasserstein_limit)
        ng_run_parse_wasserstein_limit(wasserstein_limit, opt, &err);
    if (err.code == NG_OK)
        scheme_flags_parse(&f, "run", input, &job.scheme, &opt->threads,
                           &err);
    if (err.code != NG_OK) return cli_fail("run", &err);
    job.input = f.distances ? f.distances : input;
    job.distances = f.distances != NULL;

    progress prog;
    progress_init(&prog, "run", quiet);
    opt->progress = progress_report;
    opt->progress_ctx = &prog;
    ng_results_file *file = NULL;
    if (ng_results_open(output, &file, &err) != NG_OK) return fail(&prog, &err);
    cleanup_on_signal(ng_results_temp_path(file));
    char *command = cli_join_command(argc, argv);
    job.command = command;
    ng_job_report report;
    int status = ng_job_execute(&job, file, &report, &err);
    cleanup_on_signal(NULL);
    free(command);
    if (status != NG_OK) return fail(&prog, &err);
    progress_break(&prog);
    if (!quiet && report.limited_by_budget)
        fprintf(stderr,
                "nervegap run: scale limit %.6g chosen to fit the budget "
                "(--max-simplices, --budget; the full scale is %s%.6g); bars "
                "alive there are truncated\n",
                report.scale_limit, isnan(report.full_scale) ? "above " : "",
                isnan(report.full_scale) ? report.scale_limit
                                         : report.full_scale);
    if (!quiet && report.wasserstein_skipped)
        fprintf(stderr,
                "nervegap run: Wasserstein distances not computed (NaN) for "
                "%d degree%s whose diagrams differ in more than %zu points "
                "(--wasserstein-limit; 0 computes them always)\n",
                report.wasserstein_skipped,
                report.wasserstein_skipped > 1 ? "s" : "",
                opt->wasserstein_limit);
    if (!quiet)
        fprintf(stderr, "nervegap run: wrote %s (scale limit %.6g, %zu "
                        "simplices) in %.2f s\n",
                output, report.scale_limit, report.simplices,
                progress_elapsed(&prog));
    return 0;
}
