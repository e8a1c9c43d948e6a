/* results_fixture.h — a synthetic run record and barcodes for the results
 * file tests (test_results.c, results_tool.c): random values of every
 * field from a seed, so that what is written is known without reading it
 * back. Invented data, for tests only. */
#ifndef NERVEGAP_TESTS_RESULTS_FIXTURE_H
#define NERVEGAP_TESTS_RESULTS_FIXTURE_H

#include "nervegap/results.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define FIXTURE_MAX_SLICES 4

typedef struct fixture {
    ng_run_record rec;
    ng_persistence p;
    ng_diagram diagrams[2 + FIXTURE_MAX_SLICES];
    ng_grid grid;
    double *radius, *birth;
    double slice_values[FIXTURE_MAX_SLICES];
    double bottleneck[NG_COMPLEX_MAX_DIM], wasserstein1[NG_COMPLEX_MAX_DIM],
        wasserstein2[NG_COMPLEX_MAX_DIM];
    const char *stage_names[3];
    double stage_seconds[3];
    uint64_t state;
} fixture;

static double fixture_uniform(fixture *f)
{
    /* xorshift64*: fixed sequence per seed */
    f->state ^= f->state >> 12;
    f->state ^= f->state << 25;
    f->state ^= f->state >> 27;
    return (double)((f->state * 2685821657736338717ull) >> 11) * 0x1.0p-53;
}

static double *fixture_reals(fixture *f, size_t count, double scale)
{
    double *a = malloc((count ? count : 1) * sizeof *a);
    for (size_t i = 0; i < count; i++) a[i] = scale * fixture_uniform(f);
    return a;
}

static int64_t *fixture_ints(fixture *f, size_t count, int64_t top)
{
    int64_t *a = malloc((count ? count : 1) * sizeof *a);
    for (size_t i = 0; i < count; i++)
        a[i] = (int64_t)(fixture_uniform(f) * (double)top);
    return a;
}

/* n points, degrees 0..D, L slices, G grid scales, about `bars` bars per
 * degree (some with death +inf), from seed. */
static void fixture_make(fixture *f, unsigned seed, int D, int L, size_t n,
                         size_t G, size_t bars)
{
    memset(f, 0, sizeof *f);
    f->state = 0x9E3779B97F4A7C15ull ^ (uint64_t)seed * 0x100000001B3ull;
    if (f->state == 0) f->state = 1;
    double T = 1.0 + 9.0 * fixture_uniform(f);
    f->radius = fixture_reals(f, n, 3.0);
    f->birth = fixture_reals(f, n, 0.5);
    for (int j = 0; j < 2 + L; j++) {
        ng_diagram *d = &f->diagrams[j];
        d->max_degree = D;
        for (int k = 0; k <= D; k++) {
            ng_bars *b = &d->bars[k];
            b->degree = k;
            b->count = (size_t)(fixture_uniform(f) * 2.0 * (double)bars);
            if (k == D && j == 1) b->count = 0; /* an empty diagram too */
            b->interval = fixture_reals(f, 2 * b->count, T);
            b->birth_vertices = fixture_ints(f, b->count * (size_t)(k + 1),
                                             (int64_t)n);
            b->death_vertices = fixture_ints(f, b->count * (size_t)(k + 2),
                                             (int64_t)n);
            for (size_t i = 0; i < b->count; i++) {
                double *x = b->interval + 2 * i;
                if (x[1] < x[0]) {
                    double t = x[0];
                    x[0] = x[1];
                    x[1] = t;
                }
                if (fixture_uniform(f) < 0.1) {
                    x[1] = INFINITY;
                    b->truncated++;
                    for (int v = 0; v < k + 2; v++)
                        b->death_vertices[i * (size_t)(k + 2) + (size_t)v] = -1;
                }
            }
        }
    }
    f->p.n_filtrations = 2 + L;
    f->p.max_degree = D;
    f->p.scale_limit = T;
    f->p.diagram = f->diagrams;
    ng_grid *g = &f->grid;
    g->G = G;
    g->max_degree = D;
    g->n_slices = L;
    g->scale = malloc(G * sizeof *g->scale);
    for (size_t i = 0; i < G; i++) g->scale[i] = T * (double)i / (double)(G - 1);
    size_t w0 = (size_t)D + 1;
    g->betti_cech = fixture_ints(f, G * w0, 50);
    g->betti_rips = fixture_ints(f, G * w0, 50);
    g->simplices_cech = fixture_ints(f, G * (w0 + 1), 1000000);
    g->simplices_rips = fixture_ints(f, G * (w0 + 1), 1000000);
    g->factor_max = fixture_reals(f, G, 1.4);
    g->factor_q50 = fixture_reals(f, G, 1.2);
    g->factor_q90 = fixture_reals(f, G, 1.3);
    g->shift_max = fixture_reals(f, G, 0.5);
    g->shift_q50 = fixture_reals(f, G, 0.2);
    g->shift_q90 = fixture_reals(f, G, 0.3);
    g->hilbert = L > 0 ? fixture_ints(f, (size_t)L * G * w0, 40) : NULL;
    g->factor_bound = 1.0 + fixture_uniform(f);
    g->shift_bound = fixture_uniform(f);
    g->factor_bound_at = T * fixture_uniform(f);
    g->shift_bound_at = T * fixture_uniform(f);
    for (int k = 0; k <= D; k++) {
        f->bottleneck[k] = fixture_uniform(f);
        f->wasserstein1[k] = 10.0 * fixture_uniform(f);
        f->wasserstein2[k] = 2.0 * fixture_uniform(f);
    }
    for (int j = 0; j < L; j++) f->slice_values[j] = 1.0 + 0.1 * (j + 1);
    f->stage_names[0] = "reading";
    f->stage_names[1] = "reduction";
    f->stage_names[2] = "grid";
    for (int i = 0; i < 3; i++) f->stage_seconds[i] = fixture_uniform(f);
    f->rec = (ng_run_record){
        .command = "nervegap run 'a b.csv' --radius knn:4 -o \"x\".h5",
        .source = "a b.csv",
        .input_file = "a b.csv",
        .input_sha256 = "0123456789abcdef0123456789abcdef"
                        "0123456789abcdef0123456789abcdef",
        .input_bytes = 12345,
        .n_points = n,
        .ambient_dim = 3,
        .metric = "euclidean",
        .radius_rule = "knn:4",
        .law = "scaled",
        .scale_limit = T,
        .scale_auto = (int)(seed & 1),
        .full_scale = (seed & 1) ? T * 2.0 : NAN,
        .limited_by_budget = (int)(seed & 1),
        .max_degree = D,
        .truncated = 1,
        .radius = f->radius,
        .birth = f->birth,
        .slice_kind = L > 0 ? "factor" : NULL,
        .slice_values = f->slice_values,
        .n_slices = L,
        .grid = &f->grid,
        .bottleneck = f->bottleneck,
        .wasserstein1 = f->wasserstein1,
        .wasserstein2 = f->wasserstein2,
        .wasserstein_relative_error = 1e-6,
        .threads = 3,
        .peak_memory_bytes = 123456789,
        .n_stages = 3,
        .stage_names = f->stage_names,
        .stage_seconds = f->stage_seconds,
    };
}

static void fixture_free(fixture *f)
{
    for (int j = 0; j < 2 + FIXTURE_MAX_SLICES; j++)
        for (int k = 0; k < NG_COMPLEX_MAX_DIM; k++) {
            free(f->diagrams[j].bars[k].interval);
            free(f->diagrams[j].bars[k].birth_vertices);
            free(f->diagrams[j].bars[k].death_vertices);
        }
    ng_grid *g = &f->grid;
    free(g->scale);
    free(g->betti_cech);
    free(g->betti_rips);
    free(g->simplices_cech);
    free(g->simplices_rips);
    free(g->factor_max);
    free(g->factor_q50);
    free(g->factor_q90);
    free(g->shift_max);
    free(g->shift_q50);
    free(g->shift_q90);
    free(g->hilbert);
    free(f->radius);
    free(f->birth);
}

#endif
