/* cmd_export.c — `nervegap export OUT.h5`: the bars, the per-scale grid or
 * the divergence figures of a results file as CSV (a header line, then one
 * row per bar / scale / degree) or JSON, for tools that do not read HDF5.
 * Numbers have 17 significant digits, so they read back as the stored
 * doubles. Infinite deaths are "inf" in CSV and null in JSON. */
#include "commands.h"
#include "args.h"
#include "nervegap/results.h"
#include "output.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

static const char export_help[] =
    "Usage: nervegap export OUT.h5 [--format csv|json]\n"
    "                       [--what bars|grid|divergence]\n"
    "\n"
    "Writes part of a results file to stdout:\n"
    "  --format csv    (default) a header line, then one row per item\n"
    "  --format json   one JSON object\n"
    "  --what bars     (default) every bar of the Čech, Rips and slice\n"
    "                  diagrams: complex, slice, slice_value, degree, birth,\n"
    "                  death, birth_vertices, death_vertices (vertex indices\n"
    "                  counted from 0, space-separated in CSV). A death of\n"
    "                  inf (CSV) or null (JSON) means the bar is alive at\n"
    "                  the scale limit; its death vertices are empty / null.\n"
    "  --what grid     one row per scale t_i: Betti numbers and simplex\n"
    "                  counts of both complexes per degree, the factor and\n"
    "                  shift statistics, the Hilbert function of the slices\n"
    "  --what divergence  per degree: bottleneck, wasserstein1, wasserstein2,\n"
    "                  with the global factor_bound (Λ) and shift_bound (Δ);\n"
    "                  wasserstein1, 2 are nan (CSV) or null (JSON) for the\n"
    "                  degrees over the run's wasserstein_limit\n";

/* ---- bars ---- */

static void csv_vertices(const int64_t *v, int count)
{
    for (int i = 0; i < count; i++)
        printf(i ? " %lld" : "%lld", (long long)v[i]);
}

static void bars_csv(const ng_results *r)
{
    printf("complex,slice,slice_value,degree,birth,death,birth_vertices,"
           "death_vertices\n");
    for (int j = 0; j < 2 + r->n_slices; j++) {
        const ng_diagram *d = ng_results_diagram(r, j);
        for (int k = 0; k <= r->max_degree; k++) {
            const ng_bars *b = &d->bars[k];
            for (size_t i = 0; i < b->count; i++) {
                if (j < 2) {
                    printf("%s,,,", j == 0 ? "cech" : "rips");
                } else {
                    printf("slice,%d,", j - 2);
                    out_csv_number(stdout, r->slice_values[j - 2]);
                    putchar(',');
                }
                printf("%d,", k);
                out_csv_number(stdout, b->interval[2 * i]);
                putchar(',');
                out_csv_number(stdout, b->interval[2 * i + 1]);
                putchar(',');
                csv_vertices(b->birth_vertices + i * (size_t)(k + 1), k + 1);
                putchar(',');
                if (isfinite(b->interval[2 * i + 1]))
                    csv_vertices(b->death_vertices + i * (size_t)(k + 2),
                                 k + 2);
                putchar('\n');
            }
        }
    }
}

static void json_vertices(const int64_t *v, int count)
{
    putchar('[');
    for (int i = 0; i < count; i++)
        printf(i ? ", %lld" : "%lld", (long long)v[i]);
    putchar(']');
}

static void json_header(const ng_results *r, const char *what)
{
    printf("{\"file\": ");
    out_json_string(stdout, r->path);
    printf(", \"what\": \"%s\", \"max_degree\": %d, \"scale_limit\": ", what,
           r->max_degree);
    out_json_number(stdout, r->scale_limit);
}

static void bars_json(const ng_results *r)
{
    json_header(r, "bars");
    printf(",\n \"note\": \"death null: the bar is alive at the scale limit "
           "(infinite death); its death_vertices are null\",\n"
           " \"diagrams\": [");
    int first = 1;
    for (int j = 0; j < 2 + r->n_slices; j++) {
        const ng_diagram *d = ng_results_diagram(r, j);
        for (int k = 0; k <= r->max_degree; k++) {
            const ng_bars *b = &d->bars[k];
            printf("%s\n  {\"complex\": \"%s\"", first ? "" : ",",
                   j == 0 ? "cech" : j == 1 ? "rips" : "slice");
            first = 0;
            if (j >= 2) {
                printf(", \"slice\": %d, \"slice_kind\": ", j - 2);
                out_json_string(stdout, r->slice_kind);
                printf(", \"slice_value\": ");
                out_json_number(stdout, r->slice_values[j - 2]);
            }
            printf(", \"degree\": %d,\n   \"bars\": [", k);
            for (size_t i = 0; i < b->count; i++) {
                printf(i ? ", [" : "[");
                out_json_number(stdout, b->interval[2 * i]);
                printf(", ");
                out_json_number(stdout, b->interval[2 * i + 1]);
                putchar(']');
            }
            printf("],\n   \"birth_vertices\": [");
            for (size_t i = 0; i < b->count; i++) {
                if (i) printf(", ");
                json_vertices(b->birth_vertices + i * (size_t)(k + 1), k + 1);
            }
            printf("],\n   \"death_vertices\": [");
            for (size_t i = 0; i < b->count; i++) {
                if (i) printf(", ");
                if (isfinite(b->interval[2 * i + 1]))
                    json_vertices(b->death_vertices + i * (size_t)(k + 2),
                                  k + 2);
                else
                    printf("null");
            }
            printf("]}");
        }
    }
    printf("\n ]}\n");
}

/* ---- grid ---- */

static const char *real_names[6] = {"factor_max", "factor_q50",
                                    "factor_q90", "shift_max",
                                    "shift_q50",  "shift_q90"};

static const double *real_column(const ng_grid *g, int c)
{
    const double *cols[6] = {g->factor_max, g->factor_q50, g->factor_q90,
                             g->shift_max,  g->shift_q50,  g->shift_q90};
    return cols[c];
}

static void grid_csv(const ng_results *r)
{
    const ng_grid *g = &r->grid;
    int w0 = r->max_degree + 1, w1 = w0 + 1;
    printf("scale");
    for (int k = 0; k < w0; k++) printf(",betti_cech_%d", k);
    for (int k = 0; k < w0; k++) printf(",betti_rips_%d", k);
    for (int k = 0; k < w1; k++) printf(",simplices_cech_%d", k);
    for (int k = 0; k < w1; k++) printf(",simplices_rips_%d", k);
    for (int c = 0; c < 6; c++) printf(",%s", real_names[c]);
    for (int j = 0; j < r->n_slices; j++)
        for (int k = 0; k < w0; k++) printf(",hilbert_%d_%d", j, k);
    putchar('\n');
    for (size_t i = 0; i < g->G; i++) {
        out_csv_number(stdout, g->scale[i]);
        for (int k = 0; k < w0; k++)
            printf(",%lld",
                   (long long)g->betti_cech[i * (size_t)w0 + (size_t)k]);
        for (int k = 0; k < w0; k++)
            printf(",%lld",
                   (long long)g->betti_rips[i * (size_t)w0 + (size_t)k]);
        for (int k = 0; k < w1; k++)
            printf(",%lld",
                   (long long)g->simplices_cech[i * (size_t)w1 + (size_t)k]);
        for (int k = 0; k < w1; k++)
            printf(",%lld",
                   (long long)g->simplices_rips[i * (size_t)w1 + (size_t)k]);
        for (int c = 0; c < 6; c++) {
            putchar(',');
            out_csv_number(stdout, real_column(g, c)[i]);
        }
        for (int j = 0; j < r->n_slices; j++)
            for (int k = 0; k < w0; k++)
                printf(",%lld",
                       (long long)g->hilbert[((size_t)j * g->G + i) *
                                                 (size_t)w0 + (size_t)k]);
        putchar('\n');
    }
}

/* rows × width integers as a JSON array of arrays */
static void json_int_matrix(const int64_t *a, size_t rows, int width)
{
    putchar('[');
    for (size_t i = 0; i < rows; i++) {
        printf(i ? ", [" : "[");
        for (int k = 0; k < width; k++)
            printf(k ? ", %lld" : "%lld",
                   (long long)a[i * (size_t)width + (size_t)k]);
        putchar(']');
    }
    putchar(']');
}

static void json_real_array(const double *a, size_t n)
{
    putchar('[');
    for (size_t i = 0; i < n; i++) {
        if (i) printf(", ");
        out_json_number(stdout, a[i]);
    }
    putchar(']');
}

static void grid_json(const ng_results *r)
{
    const ng_grid *g = &r->grid;
    int w0 = r->max_degree + 1;
    json_header(r, "grid");
    printf(",\n \"scale\": ");
    json_real_array(g->scale, g->G);
    printf(",\n \"betti_cech\": ");
    json_int_matrix(g->betti_cech, g->G, w0);
    printf(",\n \"betti_rips\": ");
    json_int_matrix(g->betti_rips, g->G, w0);
    printf(",\n \"simplices_cech\": ");
    json_int_matrix(g->simplices_cech, g->G, w0 + 1);
    printf(",\n \"simplices_rips\": ");
    json_int_matrix(g->simplices_rips, g->G, w0 + 1);
    for (int c = 0; c < 6; c++) {
        printf(",\n \"%s\": ", real_names[c]);
        json_real_array(real_column(g, c), g->G);
    }
    if (r->n_slices > 0) {
        printf(",\n \"slice_kind\": ");
        out_json_string(stdout, r->slice_kind);
        printf(",\n \"slice_values\": ");
        json_real_array(r->slice_values, (size_t)r->n_slices);
        printf(",\n \"hilbert\": [");
        for (int j = 0; j < r->n_slices; j++) {
            printf(j ? ",\n  " : "\n  ");
            json_int_matrix(g->hilbert + (size_t)j * g->G * (size_t)w0, g->G,
                            w0);
        }
        printf("]");
    }
    printf("}\n");
}

/* ---- divergence ---- */

static const char *bound_names[4] = {"factor_bound", "shift_bound",
                                     "factor_bound_at", "shift_bound_at"};

static void bounds(const ng_results *r, double out[4])
{
    out[0] = r->factor_bound;
    out[1] = r->shift_bound;
    out[2] = r->factor_bound_at;
    out[3] = r->shift_bound_at;
}

static void divergence_csv(const ng_results *r)
{
    double b[4];
    bounds(r, b);
    printf("degree,bottleneck,wasserstein1,wasserstein2");
    for (int c = 0; c < 4; c++) printf(",%s", bound_names[c]);
    printf(",wasserstein_relative_error,wasserstein_limit\n");
    for (int k = 0; k <= r->max_degree; k++) {
        printf("%d", k);
        const double v[3] = {r->bottleneck[k], r->wasserstein1[k],
                             r->wasserstein2[k]};
        for (int c = 0; c < 3; c++) {
            putchar(',');
            out_csv_number(stdout, v[c]);
        }
        for (int c = 0; c < 4; c++) {
            putchar(',');
            out_csv_number(stdout, b[c]);
        }
        putchar(',');
        out_csv_number(stdout, r->wasserstein_relative_error);
        printf(",%lld\n", (long long)r->wasserstein_limit);
    }
}

static void divergence_json(const ng_results *r)
{
    double b[4];
    bounds(r, b);
    size_t n = (size_t)r->max_degree + 1;
    json_header(r, "divergence");
    printf(",\n \"bottleneck\": ");
    json_real_array(r->bottleneck, n);
    printf(",\n \"wasserstein1\": ");
    json_real_array(r->wasserstein1, n);
    printf(",\n \"wasserstein2\": ");
    json_real_array(r->wasserstein2, n);
    for (int c = 0; c < 4; c++) {
        printf(",\n \"%s\": ", bound_names[c]);
        out_json_number(stdout, b[c]);
    }
    printf(",\n \"wasserstein_relative_error\": ");
    out_json_number(stdout, r->wasserstein_relative_error);
    printf(",\n \"wasserstein_limit\": %lld",
           (long long)r->wasserstein_limit);
    printf(",\n \"note\": \"wasserstein null: not computed, the diagrams "
           "differ in more points than wasserstein_limit (0: no limit)\"}\n");
}

int cmd_export(int argc, char **argv)
{
    const char *format = NULL, *what = NULL;
    const cli_option table[] = {
        {"format", NULL, 1, &format, NULL},
        {"what", NULL, 1, &what, NULL},
        {NULL, NULL, 0, NULL, NULL},
    };
    cli_args args;
    ng_error err;
    ng_error_clear(&err);
    if (cli_parse(argc, argv, 2, "export", table, &args, &err) != NG_OK)
        return cli_fail("export", &err);
    if (args.help) {
        fputs(export_help, stdout);
        return 0;
    }
    if (format == NULL) format = "csv";
    if (what == NULL) what = "bars";
    int json = strcmp(format, "json") == 0;
    if (args.n_positional != 1)
        ng_error_set(&err, NG_ERR_USAGE, "expected one results file OUT.h5, "
                     "got %d", args.n_positional);
    else if (!json && strcmp(format, "csv") != 0)
        ng_error_set(&err, NG_ERR_USAGE, "--format %s: expected csv or json",
                     format);
    else if (strcmp(what, "bars") && strcmp(what, "grid") &&
             strcmp(what, "divergence"))
        ng_error_set(&err, NG_ERR_USAGE,
                     "--what %s: expected bars, grid or divergence", what);
    if (err.code != NG_OK) return cli_fail("export", &err);

    ng_results *r = NULL;
    if (ng_results_load(args.positional[0], &r, &err) != NG_OK)
        return cli_fail("export", &err);
    int code = 0;
    if (strcmp(what, "bars") == 0) {
        if (json) bars_json(r);
        else bars_csv(r);
    } else if (strcmp(what, "grid") == 0) {
        if (!r->has_grid) {
            ng_error_set(&err, NG_ERR_INPUT, "%s: /grid: no such group (the "
                         "file has no per-scale grid)", r->path);
            code = cli_fail("export", &err);
        } else if (json) {
            grid_json(r);
        } else {
            grid_csv(r);
        }
    } else {
        if (!r->has_divergence) {
            ng_error_set(&err, NG_ERR_INPUT, "%s: /divergence: no such group",
                         r->path);
            code = cli_fail("export", &err);
        } else if (json) {
            divergence_json(r);
        } else {
            divergence_csv(r);
        }
    }
    if (code == 0 && (fflush(stdout) != 0 || ferror(stdout))) {
        ng_error_set(&err, NG_ERR_IO, "cannot write to stdout");
        code = cli_fail("export", &err);
    }
    ng_results_free(r);
    return code;
}
