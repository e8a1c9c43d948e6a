/* cmd_distance.c — `nervegap distance A.h5 B.h5`: compares two runs'
 * barcodes (e.g. two radius schemes on one cloud), degree by degree.
 * Between two runs, bars alive at the scale limit (death = +inf) match only
 * bars alive at the other's limit, by birth; different counts give +inf,
 * which the table says in words. */
#include "commands.h"
#include "args.h"
#include "nervegap/distance.h"
#include "nervegap/results.h"
#include "output.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const char distance_help[] =
    "Usage: nervegap distance A.h5 B.h5 [--complex cech|rips] [--degree k]\n"
    "                         [--p 1|2|inf] [--json]\n"
    "\n"
    "Bottleneck (p = inf) and Wasserstein (p = 1, 2) distances between the\n"
    "barcodes of two results files, per homology degree (L-inf ground\n"
    "metric; points may match the diagonal). Bars alive at a file's scale\n"
    "limit match only such bars of the other file, by birth; when their\n"
    "numbers differ the distance is +inf.\n"
    "\n"
    "  --complex C     cech (default) or rips\n"
    "  --degree k      one degree (default: every degree both files have)\n"
    "  --p P           only this distance: 1, 2 or inf (default: all three)\n"
    "  --json          one JSON object on stdout instead of a table\n";

static void print_value(double v, int json)
{
    if (json && !isfinite(v)) printf("null");
    else if (!isfinite(v)) printf("%12s", "inf");
    else printf(json ? "%.17g" : "%12.6g", v);
}

int cmd_distance(int argc, char **argv)
{
    const char *complex_name = NULL, *degree = NULL, *p_text = NULL;
    int json = 0;
    const cli_option table[] = {
        {"complex", NULL, 1, &complex_name, NULL},
        {"degree", NULL, 1, &degree, NULL},
        {"p", NULL, 1, &p_text, NULL},
        {"json", NULL, 0, NULL, &json},
        {NULL, NULL, 0, NULL, NULL},
    };
    cli_args args;
    ng_error err;
    ng_error_clear(&err);
    if (cli_parse(argc, argv, 2, "distance", table, &args, &err) != NG_OK)
        return cli_fail("distance", &err);
    if (args.help) {
        fputs(distance_help, stdout);
        return 0;
    }
    if (args.n_positional != 2)
        ng_error_set(&err, NG_ERR_USAGE,
                     "expected two results files A.h5 B.h5, got %d",
                     args.n_positional);
    const char *group = complex_name ? complex_name : "cech";
    if (err.code == NG_OK && strcmp(group, "cech") && strcmp(group, "rips"))
        ng_error_set(&err, NG_ERR_USAGE,
                     "--complex %s: expected cech or rips", group);
    int want_p[3] = {1, 1, 1}; /* inf, 1, 2 */
    if (err.code == NG_OK && p_text) {
        if (strcmp(p_text, "inf") == 0) want_p[1] = want_p[2] = 0;
        else if (strcmp(p_text, "1") == 0) want_p[0] = want_p[2] = 0;
        else if (strcmp(p_text, "2") == 0) want_p[0] = want_p[1] = 0;
        else
            ng_error_set(&err, NG_ERR_USAGE,
                         "--p %s: expected 1, 2 or inf", p_text);
    }
    int only = -1;
    if (err.code == NG_OK && degree) {
        char *end;
        long d = strtol(degree, &end, 10);
        if (*degree == '\0' || *end != '\0' || d < 0 || d > 4)
            ng_error_set(&err, NG_ERR_USAGE,
                         "--degree %s: expected 0 to 4", degree);
        only = (int)d;
    }
    if (err.code != NG_OK) return cli_fail("distance", &err);

    const char *pa = args.positional[0], *pb = args.positional[1];
    ng_results *ra = NULL, *rb = NULL;
    if (ng_results_load(pa, &ra, &err) || ng_results_load(pb, &rb, &err)) {
        ng_results_free(ra);
        return cli_fail("distance", &err);
    }
    int j = strcmp(group, "cech") == 0 ? 0 : 1;
    const ng_diagram *ga = ng_results_diagram(ra, j);
    const ng_diagram *gb = ng_results_diagram(rb, j);
    /* the degrees both files have, from degree 0 */
    int da = ra->max_degree, db = rb->max_degree;
    int top = da < db ? da : db;
    int k0 = only >= 0 ? only : 0, k1 = only >= 0 ? only : top;
    int code = 0;
    if (only > top) {
        ng_error_set(&err, NG_ERR_USAGE,
                     "--degree %d: %s has degrees 0..%d and %s 0..%d", only,
                     pa, da, pb, db);
        code = cli_fail("distance", &err);
        goto cleanup;
    }
    if (json) {
        printf("{\"a\": ");
        out_json_string(stdout, pa);
        printf(", \"b\": ");
        out_json_string(stdout, pb);
        printf(", \"complex\": \"%s\", \"degrees\": [", group);
    } else {
        printf("%-6s %8s %8s %12s %12s %12s\n", "degree", "bars A", "bars B",
               want_p[0] ? "bottleneck" : "", want_p[1] ? "wasserstein1" : "",
               want_p[2] ? "wasserstein2" : "");
    }
    const char *note = NULL;
    for (int k = k0; k <= k1; k++) {
        const double *a = ga->bars[k].interval, *b = gb->bars[k].interval;
        size_t na = ga->bars[k].count, nb = gb->bars[k].count;
        double v[3] = {NAN, NAN, NAN}, rel;
        int st = NG_OK;
        if (want_p[0]) st = ng_bottleneck_distance(a, na, b, nb, &v[0], &err);
        if (st == NG_OK && want_p[1])
            st = ng_wasserstein_distance(a, na, b, nb, 1.0, 1e-6, &v[1], &rel,
                                         &err);
        if (st == NG_OK && want_p[2])
            st = ng_wasserstein_distance(a, na, b, nb, 2.0, 1e-6, &v[2], &rel,
                                         &err);
        size_t ia = ga->bars[k].truncated, ib = gb->bars[k].truncated;
        if (st != NG_OK) {
            code = cli_fail("distance", &err);
            break;
        }
        if (ia != ib) note = "inf: the files have different numbers of bars "
                             "alive at their scale limits";
        if (json) {
            printf("%s{\"degree\": %d, \"bars_a\": %zu, \"bars_b\": %zu, "
                   "\"infinite_a\": %zu, \"infinite_b\": %zu",
                   k > k0 ? ", " : "", k, na, nb, ia, ib);
            static const char *keys[3] = {"bottleneck", "wasserstein1",
                                          "wasserstein2"};
            for (int q = 0; q < 3; q++) {
                if (!want_p[q]) continue;
                printf(", \"%s\": ", keys[q]);
                print_value(v[q], 1);
            }
            printf("}");
        } else {
            printf("%-6d %8zu %8zu ", k, na, nb);
            for (int q = 0; q < 3; q++) {
                if (want_p[q]) print_value(v[q], 0);
                else printf("%12s", "");
                printf(q < 2 ? " " : "\n");
            }
            if (ia != ib)
                printf("       (degree %d: A has %zu bars alive at its scale "
                       "limit, B has %zu)\n", k, ia, ib);
        }
    }
    if (json) printf("]%s%s%s}\n", note ? ", \"note\": \"" : "",
                     note ? note : "", note ? "\"" : "");
cleanup:
    ng_results_free(ra);
    ng_results_free(rb);
    return code;
}
