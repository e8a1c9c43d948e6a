/* cmd_values.c — `nervegap values`: the Rips and Čech values of the
 * simplices listed in a file, as CSV (header rips,cech; one row per simplex,
 * 17 significant digits). */
#include "commands.h"
#include "nervegap/simplices.h"
#include "nervegap/values.h"
#include "scheme_flags.h"

#include <stdio.h>

static const char values_help[] =
    "Usage: nervegap values INPUT [scheme flags] --simplices FILE\n"
    "       nervegap values --distances FILE [scheme flags] --simplices FILE\n"
    "\n"
    "Prints the Rips and Čech filtration values of every simplex of FILE\n"
    "(one simplex per line: 0-based vertex indices separated by spaces or\n"
    "commas, at most 6 vertices; blank lines and # comments are skipped) as\n"
    "CSV with the header rips,cech, one row per simplex in input order.\n"
    "Each value is made monotone: never below the value of any face.\n"
    "\n"
    "  --simplices FILE        the simplices to evaluate (required)\n";

int cmd_values(int argc, char **argv)
{
    scheme_flags f = {0};
    const char *simplices = NULL;
    const cli_option table[] = {
        SCHEME_OPTIONS(f),
        {"simplices", NULL, 1, &simplices, NULL},
        {NULL, NULL, 0, NULL, NULL},
    };
    cli_args args;
    ng_error err;
    ng_error_clear(&err);
    if (cli_parse(argc, argv, 2, "values", table, &args, &err) != NG_OK)
        return cli_fail("values", &err);
    if (args.help) {
        fputs(values_help, stdout);
        fputs(scheme_flags_help, stdout);
        return 0;
    }
    if (args.n_positional > 1)
        ng_error_set(&err, NG_ERR_USAGE, "expected one INPUT, got %d",
                     args.n_positional);
    else if (f.merge_duplicates)
        ng_error_set(&err, NG_ERR_USAGE,
                     "--merge-duplicates would renumber the points that the "
                     "simplices refer to; remove the duplicates from the "
                     "input instead");
    else if (simplices == NULL)
        ng_error_set(&err, NG_ERR_USAGE,
                     "--simplices FILE is required (see nervegap values "
                     "--help)");
    if (err.code != NG_OK) return cli_fail("values", &err);

    ng_scheme scheme;
    ng_cloud *cloud = NULL;
    ng_radii radii = {0};
    ng_simplex_list list = {0};
    int threads, code = 0;
    if (scheme_flags_load(&f, "values",
                          args.n_positional ? args.positional[0] : NULL,
                          &scheme, &threads, &cloud, &err) != NG_OK ||
        ng_radii_compute(cloud, &scheme, threads, &radii, &err) != NG_OK ||
        ng_simplex_list_read(simplices, cloud->n, &list, &err) != NG_OK) {
        code = cli_fail("values", &err);
        goto cleanup;
    }
    ng_space space = {
        .metric = scheme.metric,
        .law = scheme.law,
        .n = cloud->n,
        .dim = cloud->dim,
        .coords = cloud->coords,
        .dist = cloud->dist,
        .rho = radii.rho,
    };
    if (ng_space_check(&space, &err) != NG_OK) {
        code = cli_fail("values", &err);
        goto cleanup;
    }
    printf("rips,cech\n");
    for (size_t s = 0; s < list.count; s++) {
        double rips, cech;
        if (ng_simplex_values(&space,
                              list.vertex + s * NG_SIMPLICES_MAX_VERTICES,
                              list.size[s], &rips, &cech, &err) != NG_OK) {
            fprintf(stderr, "nervegap values: %s:%zu: %s\n", simplices,
                    list.line[s], err.message);
            code = ng_error_exit_code(err.code);
            goto cleanup;
        }
        printf("%.17g,%.17g\n", rips, cech);
    }
    if (fflush(stdout) != 0 || ferror(stdout)) {
        fprintf(stderr, "nervegap values: cannot write stdout\n");
        code = 1;
    }
cleanup:
    ng_simplex_list_free(&list);
    ng_radii_free(&radii);
    ng_cloud_free(cloud);
    return code;
}
