/* results_tool.c — drives the results file code for tests/ref_results.py.
 *
 *   results_tool write PATH SEED D L N G BARS
 *       writes a synthetic record (results_fixture.h) with the library and
 *       prints, as JSON, what it handed to the writer
 *   results_tool load PATH
 *       loads PATH with ng_results_load and prints everything as JSON; on
 *       failure prints the message on stderr and exits with its exit code
 *   results_tool sha256 FILE...
 *       prints the SHA-256 of each file: whole (ng_sha256_file) and fed
 *       in pieces of 1, 63, 64 and 65 bytes (ng_sha256_update), which must
 *       agree
 *
 * JSON: {"attrs": {HDF5 path: {name: value}}, "stages": [[name, seconds]],
 * "datasets": {HDF5 path: nested lists}}; non-finite numbers are printed
 * as Infinity / -Infinity / NaN, which Python's json module reads.
 */
#include "nervegap/results.h"
#include "nervegap/sha256.h"
#include "results_fixture.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static void number(double v)
{
    if (isnan(v)) printf("NaN");
    else if (isinf(v)) printf(v > 0 ? "Infinity" : "-Infinity");
    else printf("%.17g", v);
}

static void string(const char *s)
{
    if (s == NULL) {
        printf("null");
        return;
    }
    putchar('"');
    for (; *s; s++) {
        if (*s == '"' || *s == '\\') printf("\\%c", *s);
        else if ((unsigned char)*s < 0x20) printf("\\u%04x", *s);
        else putchar(*s);
    }
    putchar('"');
}

static int first;

static void key(const char *k)
{
    printf(first ? "\n  " : ",\n  ");
    first = 0;
    string(k);
    printf(": ");
}

static void reals(const double *a, size_t rows, size_t width)
{
    putchar('[');
    for (size_t i = 0; i < rows; i++) {
        if (i) printf(", ");
        if (width) putchar('[');
        for (size_t c = 0; c < (width ? width : 1); c++) {
            if (c) printf(", ");
            number(a[i * (width ? width : 1) + c]);
        }
        if (width) putchar(']');
    }
    putchar(']');
}

static void ints(const int64_t *a, size_t rows, size_t width)
{
    putchar('[');
    for (size_t i = 0; i < rows; i++) {
        if (i) printf(", ");
        if (width) putchar('[');
        for (size_t c = 0; c < (width ? width : 1); c++)
            printf(c ? ", %lld" : "%lld",
                   (long long)a[i * (width ? width : 1) + c]);
        if (width) putchar(']');
    }
    putchar(']');
}

static void diagram_sets(const char *group, const ng_diagram *d)
{
    char name[96];
    for (int k = 0; k <= d->max_degree; k++) {
        const ng_bars *b = &d->bars[k];
        snprintf(name, sizeof name, "%s/dim%d/bars", group, k);
        key(name);
        reals(b->interval, b->count, 2);
        snprintf(name, sizeof name, "%s/dim%d/birth_vertices", group, k);
        key(name);
        ints(b->birth_vertices, b->count, (size_t)k + 1);
        snprintf(name, sizeof name, "%s/dim%d/death_vertices", group, k);
        key(name);
        ints(b->death_vertices, b->count, (size_t)k + 2);
    }
}

static void grid_sets(const ng_grid *g, int L)
{
    size_t w0 = (size_t)g->max_degree + 1;
    key("/grid/scale");
    reals(g->scale, g->G, 0);
    key("/grid/betti_cech");
    ints(g->betti_cech, g->G, w0);
    key("/grid/betti_rips");
    ints(g->betti_rips, g->G, w0);
    key("/grid/simplices_cech");
    ints(g->simplices_cech, g->G, w0 + 1);
    key("/grid/simplices_rips");
    ints(g->simplices_rips, g->G, w0 + 1);
    const char *names[6] = {"factor_max", "factor_q50", "factor_q90",
                            "shift_max", "shift_q50", "shift_q90"};
    const double *cols[6] = {g->factor_max, g->factor_q50, g->factor_q90,
                             g->shift_max, g->shift_q50, g->shift_q90};
    for (int c = 0; c < 6; c++) {
        char name[64];
        snprintf(name, sizeof name, "/grid/%s", names[c]);
        key(name);
        reals(cols[c], g->G, 0);
    }
    if (L > 0) {
        key("/grid/hilbert");
        putchar('[');
        for (int j = 0; j < L; j++) {
            if (j) printf(", ");
            ints(g->hilbert + (size_t)j * g->G * w0, g->G, w0);
        }
        putchar(']');
    }
}

/* The attribute groups, as one JSON object per HDF5 path. */
typedef struct attrs {
    const char *command, *source, *file, *sha256, *metric, *rule, *law,
        *slice_kind, *hdf5_version, *created, *host, *tool_version;
    long long format_version, bytes, n_points, ambient_dim, max_degree,
        truncated, scale_auto, limited_by_budget, threads, peak_memory;
    double scale_limit, full_scale, wall_seconds;
    double bounds[6]; /* the numbers of /divergence */
    int has_divergence, has_provenance;
} attrs;

static void print_attrs(const attrs *a)
{
    printf("\"attrs\": {\n \"/\": {\"format\": \"%s\", \"format_version\": "
           "%lld, \"tool_version\": ", NG_RESULTS_FORMAT, a->format_version);
    string(a->tool_version);
    printf(", \"command\": ");
    string(a->command);
    printf("},\n \"/input\": {\"source\": ");
    string(a->source);
    printf(", \"file\": ");
    string(a->file);
    printf(", \"sha256\": ");
    string(a->sha256);
    printf(", \"bytes\": %lld, \"n_points\": %lld, \"ambient_dim\": %lld, "
           "\"metric\": ", a->bytes, a->n_points, a->ambient_dim);
    string(a->metric);
    printf("},\n \"/scheme\": {\"radius_rule\": ");
    string(a->rule);
    printf(", \"law\": ");
    string(a->law);
    printf(", \"scale_limit\": ");
    number(a->scale_limit);
    printf(", \"scale_auto\": %lld, \"full_scale\": ", a->scale_auto);
    number(a->full_scale);
    printf(", \"limited_by_budget\": %lld, \"max_degree\": %lld, "
           "\"truncated\": %lld}", a->limited_by_budget, a->max_degree,
           a->truncated);
    if (a->slice_kind) {
        printf(",\n \"/slices/values\": {\"kind\": ");
        string(a->slice_kind);
        putchar('}');
    }
    if (a->has_divergence) {
        const char *names[6] = {"factor_bound", "shift_bound",
                                "factor_bound_at", "shift_bound_at",
                                "wasserstein_relative_error",
                                "wasserstein_limit"};
        printf(",\n \"/divergence\": {");
        for (int i = 0; i < 6; i++) {
            printf("%s\"%s\": ", i ? ", " : "", names[i]);
            number(a->bounds[i]);
        }
        putchar('}');
    }
    if (a->has_provenance) {
        printf(",\n \"/provenance\": {\"threads\": %lld, "
               "\"peak_memory_bytes\": %lld",
               a->threads, a->peak_memory);
        if (a->hdf5_version) {
            printf(", \"hdf5_version\": ");
            string(a->hdf5_version);
            printf(", \"created\": ");
            string(a->created);
            printf(", \"host\": ");
            string(a->host);
            printf(", \"wall_seconds\": ");
            number(a->wall_seconds);
        }
        putchar('}');
    }
    printf("},\n");
}

static void stages(const char *const *names, const double *seconds, int n)
{
    printf("\"stages\": [");
    for (int i = 0; i < n; i++) {
        printf(i ? ", [" : "[");
        string(names[i]);
        printf(", ");
        number(seconds[i]);
        putchar(']');
    }
    printf("],\n");
}

static int cmd_write(char **argv)
{
    fixture f;
    fixture_make(&f, (unsigned)strtoul(argv[3], NULL, 10), atoi(argv[4]),
                 atoi(argv[5]), strtoul(argv[6], NULL, 10),
                 strtoul(argv[7], NULL, 10), strtoul(argv[8], NULL, 10));
    ng_error err;
    ng_error_clear(&err);
    ng_results_file *file;
    if (ng_results_open(argv[2], &file, &err) != NG_OK ||
        ng_results_commit(file, &f.rec, &f.p, &err) != NG_OK) {
        fprintf(stderr, "%s\n", err.message);
        fixture_free(&f);
        return 1;
    }
    const ng_run_record *r = &f.rec;
    attrs a = {r->command, r->source, r->input_file, r->input_sha256,
               r->metric, r->radius_rule, r->law, r->slice_kind, NULL, NULL,
               NULL, NG_VERSION, NG_RESULTS_FORMAT_VERSION,
               (long long)r->input_bytes, (long long)r->n_points,
               (long long)r->ambient_dim, r->max_degree, r->truncated,
               r->scale_auto, r->limited_by_budget, r->threads,
               (long long)r->peak_memory_bytes, r->scale_limit,
               r->full_scale, NAN,
               {f.grid.factor_bound, f.grid.shift_bound,
                f.grid.factor_bound_at, f.grid.shift_bound_at,
                r->wasserstein_relative_error, (double)r->wasserstein_limit},
               1, 1};
    printf("{");
    print_attrs(&a);
    stages(r->stage_names, r->stage_seconds, r->n_stages);
    printf("\"datasets\": {");
    first = 1;
    key("/vertices/radius");
    reals(r->radius, r->n_points, 0);
    key("/vertices/birth");
    reals(r->birth, r->n_points, 0);
    diagram_sets("/cech", &f.diagrams[0]);
    diagram_sets("/rips", &f.diagrams[1]);
    if (r->n_slices > 0) {
        key("/slices/values");
        reals(r->slice_values, (size_t)r->n_slices, 0);
        for (int j = 0; j < r->n_slices; j++) {
            char g[32];
            snprintf(g, sizeof g, "/slices/%d", j);
            diagram_sets(g, &f.diagrams[2 + j]);
        }
    }
    grid_sets(&f.grid, r->n_slices);
    size_t n = (size_t)r->max_degree + 1;
    key("/divergence/bottleneck");
    reals(r->bottleneck, n, 0);
    key("/divergence/wasserstein1");
    reals(r->wasserstein1, n, 0);
    key("/divergence/wasserstein2");
    reals(r->wasserstein2, n, 0);
    printf("}}\n");
    fixture_free(&f);
    return 0;
}

static int cmd_load(const char *path)
{
    ng_error err;
    ng_error_clear(&err);
    ng_results *r;
    if (ng_results_load(path, &r, &err) != NG_OK) {
        fprintf(stderr, "%s\n", err.message);
        return ng_error_exit_code(err.code);
    }
    attrs a = {r->command, r->source, r->input_file, r->input_sha256,
               r->metric, r->radius_rule, r->law, r->slice_kind,
               r->hdf5_version, r->created, r->host, r->tool_version,
               r->format_version, (long long)r->input_bytes,
               (long long)r->n_points, (long long)r->ambient_dim,
               r->max_degree, r->truncated, r->scale_auto,
               r->limited_by_budget, r->threads,
               (long long)r->peak_memory_bytes, r->scale_limit,
               r->full_scale, r->wall_seconds,
               {r->factor_bound, r->shift_bound, r->factor_bound_at,
                r->shift_bound_at, r->wasserstein_relative_error,
                (double)r->wasserstein_limit},
               r->has_divergence, r->format_version >= 2};
    printf("{");
    print_attrs(&a);
    stages((const char *const *)r->stage_names, r->stage_seconds,
           r->n_stages);
    printf("\"truncated\": {");
    first = 1;
    for (int j = 0; j < 2 + r->n_slices; j++) {
        char g[32], name[48];
        ng_results_diagram_name(j, g, sizeof g);
        for (int k = 0; k <= r->max_degree; k++) {
            snprintf(name, sizeof name, "/%s/dim%d", g, k);
            key(name);
            printf("%zu", ng_results_diagram(r, j)->bars[k].truncated);
        }
    }
    printf("},\n\"datasets\": {");
    first = 1;
    key("/vertices/radius");
    reals(r->radius, r->n_points, 0);
    key("/vertices/birth");
    reals(r->birth, r->n_points, 0);
    diagram_sets("/cech", &r->cech);
    diagram_sets("/rips", &r->rips);
    if (r->n_slices > 0) {
        key("/slices/values");
        reals(r->slice_values, (size_t)r->n_slices, 0);
        for (int j = 0; j < r->n_slices; j++) {
            char g[32];
            snprintf(g, sizeof g, "/slices/%d", j);
            diagram_sets(g, &r->slices[j]);
        }
    }
    if (r->has_grid) grid_sets(&r->grid, r->n_slices);
    if (r->has_divergence) {
        size_t n = (size_t)r->max_degree + 1;
        key("/divergence/bottleneck");
        reals(r->bottleneck, n, 0);
        key("/divergence/wasserstein1");
        reals(r->wasserstein1, n, 0);
        key("/divergence/wasserstein2");
        reals(r->wasserstein2, n, 0);
    }
    printf("}}\n");
    ng_results_free(r);
    return 0;
}

static int cmd_sha256(int argc, char **argv)
{
    static const size_t pieces[4] = {1, 63, 64, 65};
    for (int i = 2; i < argc; i++) {
        char hex[NG_SHA256_HEX + 1];
        ng_error err;
        ng_error_clear(&err);
        if (ng_sha256_file(argv[i], hex, NULL, &err) != NG_OK) {
            fprintf(stderr, "%s\n", err.message);
            return 1;
        }
        FILE *fp = fopen(argv[i], "rb");
        fseek(fp, 0, SEEK_END);
        long len = ftell(fp);
        rewind(fp);
        unsigned char *data = malloc(len > 0 ? (size_t)len : 1);
        size_t got = fread(data, 1, (size_t)len, fp);
        fclose(fp);
        for (int p = 0; p < 4; p++) {
            ng_sha256 h;
            ng_sha256_init(&h);
            for (size_t at = 0; at < got; at += pieces[p])
                ng_sha256_update(&h, data + at,
                                 got - at < pieces[p] ? got - at : pieces[p]);
            unsigned char d[32];
            ng_sha256_final(&h, d);
            char piecewise[NG_SHA256_HEX + 1];
            for (int b = 0; b < 32; b++)
                snprintf(piecewise + 2 * b, 3, "%02x", d[b]);
            if (strcmp(piecewise, hex) != 0) {
                fprintf(stderr, "%s: pieces of %zu give %s, whole file %s\n",
                        argv[i], pieces[p], piecewise, hex);
                free(data);
                return 1;
            }
        }
        free(data);
        printf("%s  %s\n", hex, argv[i]);
    }
    return 0;
}

int main(int argc, char **argv)
{
    if (argc == 9 && strcmp(argv[1], "write") == 0) return cmd_write(argv);
    if (argc == 3 && strcmp(argv[1], "load") == 0) return cmd_load(argv[2]);
    if (argc >= 3 && strcmp(argv[1], "sha256") == 0)
        return cmd_sha256(argc, argv);
    fprintf(stderr, "usage: results_tool write PATH SEED D L N G BARS | "
                    "load PATH | sha256 FILE...\n");
    return 2;
}
