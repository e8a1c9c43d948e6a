/* cmd_run.c — `nervegap run`: the main job, from a cloud to the results
 * file. The output file is created (under a temporary name) before the
 * input is read, so that an unwritable path fails at once; SIGINT and
 * SIGTERM remove it and exit with 130 / 143. Progress and the time of each
 * stage go through progress.h. */
#include "commands.h"
#include "nervegap/provenance.h"
#include "nervegap/results.h"
#include "nervegap/run.h"
#include "nervegap/sha256.h"
#include "progress.h"
#include "scheme_flags.h"

#include <errno.h>
#include <limits.h>
#include <math.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

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
    "  --quiet                 no progress lines on stderr\n";

/* The temporary output file that a signal must remove: a copy of its path
 * (the library's copy is freed on commit), armed only while it exists. */
static char temp_path_for_signal[PATH_MAX];
static volatile sig_atomic_t temp_armed = 0;

static void on_signal(int sig)
{
    if (temp_armed) unlink(temp_path_for_signal);
    _exit(128 + sig);
}

static void arm_signals(const ng_results_file *file)
{
    snprintf(temp_path_for_signal, sizeof temp_path_for_signal, "%s",
             ng_results_temp_path(file));
    temp_armed = 1;
    signal(SIGINT, on_signal);
    signal(SIGTERM, on_signal);
}

static int fail(progress *prog, const ng_error *err)
{
    progress_break(prog);
    return cli_fail("run", err);
}

/* The command line as one string, arguments with spaces quoted. */
static char *join_command(int argc, char **argv)
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
               *max_simplices = NULL;
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

    ng_run_options opt;
    ng_run_options_init(&opt);
    if (args.n_positional > 1)
        ng_error_set(&err, NG_ERR_USAGE, "expected one INPUT, got %d",
                     args.n_positional);
    else if (output == NULL)
        ng_error_set(&err, NG_ERR_USAGE,
                     "-o OUT.h5 is required (see nervegap run --help)");
    if (err.code == NG_OK && max_degree) {
        char *end;
        long d = strtol(max_degree, &end, 10);
        if (*max_degree == '\0' || *end != '\0' || d < 0 || d > 4)
            ng_error_set(&err, NG_ERR_USAGE,
                         "--max-degree %s: expected 0, 1, 2, 3 or 4",
                         max_degree);
        opt.max_degree = (int)d;
    }
    if (err.code == NG_OK && scale_limit && strcmp(scale_limit, "auto")) {
        char *end;
        errno = 0;
        double t = strtod(scale_limit, &end);
        if (*scale_limit == '\0' || *end != '\0' || errno != 0 ||
            !isfinite(t) || t < 0.0)
            ng_error_set(&err, NG_ERR_USAGE,
                         "--scale-limit %s: expected a scale ≥ 0 or auto",
                         scale_limit);
        opt.scale_auto = 0;
        opt.scale_limit = t;
    }
    if (err.code == NG_OK && grid) {
        char *end;
        errno = 0;
        unsigned long long g = strtoull(grid, &end, 10);
        if (grid[0] < '0' || grid[0] > '9' || *end != '\0' || errno != 0 ||
            g < 2 || g > (1u << 24))
            ng_error_set(&err, NG_ERR_USAGE,
                         "--grid %s: expected a number of scales from 2 to "
                         "16777216", grid);
        opt.grid = (size_t)g;
    }
    if (err.code == NG_OK && slices)
        ng_run_parse_slices(slices, &opt, &err);
    if (err.code == NG_OK && budget)
        ng_run_parse_budget(budget, &opt.budget_bytes, &err);
    if (err.code == NG_OK && max_simplices)
        ng_run_parse_count(max_simplices, &opt.max_simplices, &err);
    if (err.code != NG_OK) return cli_fail("run", &err);

    progress prog;
    progress_init(&prog, "run", quiet);
    opt.progress = progress_report;
    opt.progress_ctx = &prog;

    ng_scheme scheme;
    ng_cloud *cloud = NULL;
    ng_radii radii = {0};
    ng_run_result result = {0};
    ng_results_file *file = NULL;
    char *command = NULL;
    char sha256[NG_SHA256_HEX + 1] = "";
    uint64_t input_bytes = 0;
    int code = 0;
    if (ng_results_open(output, &file, &err) != NG_OK) {
        code = fail(&prog, &err);
        goto cleanup;
    }
    arm_signals(file);
    progress_report("reading", 0.0, &prog);
    if (scheme_flags_load(&f, "run",
                          args.n_positional ? args.positional[0] : NULL,
                          &scheme, &opt.threads, &cloud, &err) != NG_OK ||
        ng_sha256_file(cloud->file, sha256, &input_bytes, &err) != NG_OK) {
        code = fail(&prog, &err);
        goto cleanup;
    }
    progress_report("reading", 1.0, &prog);
    progress_report("radii", 0.0, &prog);
    if (ng_radii_compute(cloud, &scheme, opt.threads, &radii, &err) != NG_OK) {
        code = fail(&prog, &err);
        goto cleanup;
    }
    progress_report("radii", 1.0, &prog);
    if (ng_run_compute(cloud, &radii, &scheme, &opt, &result, &err) != NG_OK) {
        code = fail(&prog, &err);
        goto cleanup;
    }
    progress_break(&prog);
    if (!quiet && result.limited_by_budget)
        fprintf(stderr,
                "nervegap run: scale limit %.6g chosen to fit the budget "
                "(--max-simplices, --budget; the full scale is %s%.6g); bars "
                "alive there are truncated\n",
                result.scale_limit, isnan(result.full_scale) ? "above " : "",
                isnan(result.full_scale) ? result.scale_limit
                                         : result.full_scale);

    command = join_command(argc, argv);
    char rule[NG_RADIUS_TEXT_MAX + 16];
    ng_radius_format(&scheme.rule, rule, sizeof rule);
    ng_run_record rec = {
        .command = command ? command : "",
        .source = cloud->source,
        .input_file = cloud->file,
        .input_sha256 = sha256,
        .input_bytes = input_bytes,
        .n_points = cloud->n,
        .ambient_dim = cloud->dim,
        .metric = ng_metric_name(scheme.metric),
        .radius_rule = rule,
        .law = ng_law_name(scheme.law),
        .scale_limit = result.scale_limit,
        .scale_auto = opt.scale_auto,
        .full_scale = result.full_scale,
        .limited_by_budget = result.limited_by_budget,
        .max_degree = opt.max_degree,
        .truncated = result.truncated,
        .radius = radii.rho,
        .birth = radii.birth,
        .slice_kind = opt.slice_kind == NG_SLICE_FACTOR  ? "factor"
                      : opt.slice_kind == NG_SLICE_SHIFT ? "shift"
                                                         : NULL,
        .slice_values = opt.slice_values,
        .n_slices = opt.slice_kind == NG_SLICE_NONE ? 0 : opt.n_slices,
        .grid = &result.grid,
        .bottleneck = result.bottleneck,
        .wasserstein1 = result.wasserstein1,
        .wasserstein2 = result.wasserstein2,
        .wasserstein_relative_error = result.wasserstein_relative_error,
        .threads = ng_threads_used(opt.threads),
        .peak_memory_bytes = ng_peak_memory_bytes(),
        .n_stages = prog.n_stages,
        .stage_names = prog.name_list,
        .stage_seconds = prog.seconds,
    };
    ng_results_file *committing = file;
    file = NULL; /* commit frees it whatever the outcome */
    ng_results_set_progress(committing, progress_report, &prog);
    if (ng_results_commit(committing, &rec, result.persistence, &err) !=
        NG_OK) {
        code = fail(&prog, &err);
        goto cleanup;
    }
    temp_armed = 0;
    if (!quiet)
        fprintf(stderr, "nervegap run: wrote %s (scale limit %.6g, %zu "
                        "simplices) in %.2f s\n",
                output, result.scale_limit, result.size.total,
                progress_elapsed(&prog));
cleanup:
    temp_armed = 0;
    ng_results_abort(file);
    free(command);
    ng_run_result_free(&result);
    ng_radii_free(&radii);
    ng_cloud_free(cloud);
    return code;
}
