/* cmd_plot.c — `nervegap plot OUT.h5 -o report.svg`: pictures of a run
 * (or of two runs, `plot A.h5 B.h5`) as an SVG document or a
 * self-contained HTML page. Parses the arguments, loads the files and
 * hands them to the library (report.h); notes on what was left out go to
 * stderr. */
#include "commands.h"
#include "args.h"
#include "nervegap/report.h"
#include "nervegap/results.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

static const char plot_help[] =
    "Usage: nervegap plot OUT.h5 -o report.svg [options]\n"
    "       nervegap plot A.h5 B.h5 -o compare.svg [options]\n"
    "\n"
    "Draws a results file: the Čech and Rips barcodes per degree, both\n"
    "persistence diagrams, the per-scale curves (Betti numbers, simplices\n"
    "Rips fills that Čech does not, enlargement factor), the Hilbert\n"
    "function of the slices, the base radii and, for points in the plane,\n"
    "the balls at one scale with the triangles that Rips fills and Čech\n"
    "does not. With two files: both on shared axes, with the bottleneck\n"
    "distance between them.\n"
    "\n"
    "  -o, --output FILE   the picture to write (required)\n"
    "  --format F          svg or html (one self-contained page); default:\n"
    "                      html when FILE ends in .html or .htm, else svg\n"
    "  --bars N            bars drawn per barcode, longest first (default\n"
    "                      40; the rest are counted on the figure)\n"
    "  --at T              scale of the ball picture (default: where the\n"
    "                      Čech and Rips Betti-1 numbers differ most)\n"
    "  --points FILE       the points of the ball picture (default: the\n"
    "                      input recorded in OUT.h5, if its SHA-256 still\n"
    "                      matches)\n"
    "  --max-points N      no ball picture above N points (default 20000)\n"
    "  --threads N         worker threads for the unfilled triangles\n";

static int parse_size(const char *text, const char *flag, size_t lo,
                      size_t hi, size_t *out, ng_error *err)
{
    char *end;
    errno = 0;
    long long v = strtoll(text, &end, 10);
    if (*text == '\0' || *end != '\0' || errno != 0 || v < (long long)lo ||
        (unsigned long long)v > hi)
        return ng_error_set(err, NG_ERR_USAGE,
                            "%s %s: expected a whole number from %zu to %zu",
                            flag, text, lo, hi);
    *out = (size_t)v;
    return NG_OK;
}

/* html when the name ends in .html or .htm (any case), else svg. */
static ng_report_format format_of_name(const char *path)
{
    const char *dot = strrchr(path, '.');
    if (dot && (strcasecmp(dot, ".html") == 0 || strcasecmp(dot, ".htm") == 0))
        return NG_REPORT_HTML;
    return NG_REPORT_SVG;
}

int cmd_plot(int argc, char **argv)
{
    const char *output = NULL, *format = NULL, *bars = NULL, *at = NULL,
               *points = NULL, *max_points = NULL, *threads = NULL;
    const cli_option table[] = {
        {"output", "-o", 1, &output, NULL},
        {"format", NULL, 1, &format, NULL},
        {"bars", NULL, 1, &bars, NULL},
        {"at", NULL, 1, &at, NULL},
        {"points", NULL, 1, &points, NULL},
        {"max-points", NULL, 1, &max_points, NULL},
        {"threads", NULL, 1, &threads, NULL},
        {NULL, NULL, 0, NULL, NULL},
    };
    cli_args args;
    ng_error err;
    ng_error_clear(&err);
    if (cli_parse(argc, argv, 2, "plot", table, &args, &err) != NG_OK)
        return cli_fail("plot", &err);
    if (args.help) {
        fputs(plot_help, stdout);
        return 0;
    }
    ng_report_options opt;
    ng_report_options_init(&opt);
    if (args.n_positional < 1 || args.n_positional > 2)
        ng_error_set(&err, NG_ERR_USAGE,
                     "expected one results file OUT.h5, or two to compare, "
                     "got %d (see nervegap plot --help)", args.n_positional);
    else if (output == NULL)
        ng_error_set(&err, NG_ERR_USAGE,
                     "-o FILE: give the picture to write, e.g. -o report.svg");
    if (err.code == NG_OK) opt.format = format_of_name(output);
    if (err.code == NG_OK && format) {
        if (strcmp(format, "svg") == 0) opt.format = NG_REPORT_SVG;
        else if (strcmp(format, "html") == 0) opt.format = NG_REPORT_HTML;
        else ng_error_set(&err, NG_ERR_USAGE,
                          "--format %s: expected svg or html", format);
    }
    if (err.code == NG_OK && bars)
        parse_size(bars, "--bars", 1, NG_REPORT_MAX_BARS, &opt.max_bars,
                   &err);
    if (err.code == NG_OK && max_points)
        parse_size(max_points, "--max-points", 0, NG_INDEX_MAX,
                   &opt.max_points, &err);
    if (err.code == NG_OK && threads)
        cli_parse_threads(threads, &opt.threads, &err);
    if (err.code == NG_OK && at) {
        char *end;
        opt.at = strtod(at, &end);
        if (*at == '\0' || *end != '\0' || !isfinite(opt.at))
            ng_error_set(&err, NG_ERR_USAGE,
                         "--at %s: expected a number (a scale t)", at);
    }
    opt.points = points;
    if (err.code != NG_OK) return cli_fail("plot", &err);

    ng_results *a = NULL, *b = NULL;
    ng_report *rep = NULL;
    int code = 0;
    if (ng_results_load(args.positional[0], &a, &err) != NG_OK ||
        (args.n_positional == 2 &&
         ng_results_load(args.positional[1], &b, &err) != NG_OK) ||
        ng_report_build(a, b, &opt, &rep, &err) != NG_OK) {
        code = cli_fail("plot", &err);
        goto cleanup;
    }
    for (int i = 0; i < rep->n_notes; i++)
        fprintf(stderr, "nervegap plot: note: %s\n", rep->notes[i]);
    if (ng_report_save(rep, output, &err) != NG_OK)
        code = cli_fail("plot", &err);
cleanup:
    ng_report_free(rep);
    ng_results_free(a);
    ng_results_free(b);
    return code;
}
