/* grid.c — the per-scale statistics of grid.h.
 *
 * How it works: every quantity is a count or an order statistic over the
 * items (bars or simplices) that are present at t_i. Each item gets the
 * first grid index at which it is present (ng_grid_first_index, computed
 * with the very formula of the scales, so membership is exact), and counts
 * are prefix sums over those indices (bars also leave at the first index
 * with t_i ≥ death). For the quantiles, the factors (and shifts) are ranked
 * once by sorting; simplices are inserted grid index by grid index into a
 * Fenwick tree over the ranks, and the ⌈q·m⌉-th smallest is found by the
 * tree's binary descent: O(N log N) in all, exact.
 */
#include "nervegap/grid.h"

#include "alloc.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static double scale_at(double T, size_t G, size_t i)
{
    return i + 1 == G ? T : T * (double)i / (double)(G - 1);
}

size_t ng_grid_first_index(double v, double T, size_t G)
{
    if (!(v <= T)) return G;
    if (v <= 0.0) return 0;
    double guess = ceil(v / T * (double)(G - 1));
    size_t i = guess < 0.0 ? 0 : guess > (double)(G - 1) ? G - 1 : (size_t)guess;
    while (i > 0 && v <= scale_at(T, G, i - 1)) i--;
    while (i < G && v > scale_at(T, G, i)) i++;
    return i;
}

void ng_grid_free(ng_grid *g)
{
    if (g == NULL) return;
    ng_free(g->scale);
    ng_free(g->betti_cech);
    ng_free(g->betti_rips);
    ng_free(g->simplices_cech);
    ng_free(g->simplices_rips);
    ng_free(g->factor_max);
    ng_free(g->factor_q50);
    ng_free(g->factor_q90);
    ng_free(g->shift_max);
    ng_free(g->shift_q50);
    ng_free(g->shift_q90);
    ng_free(g->hilbert);
    memset(g, 0, sizeof *g);
}

/* Betti numbers of a diagram on the grid: out[i * (D+1) + k]. */
static void betti_curve(const ng_diagram *d, double T, size_t G, int D,
                        int64_t *out)
{
    size_t w = (size_t)D + 1;
    memset(out, 0, G * w * sizeof *out);
    for (int k = 0; k <= D && k <= d->max_degree; k++) {
        const ng_bars *b = &d->bars[k];
        for (size_t j = 0; j < b->count; j++) {
            size_t in = ng_grid_first_index(b->interval[2 * j], T, G);
            size_t leave = ng_grid_first_index(b->interval[2 * j + 1], T, G);
            if (in < leave) { /* present on grid indices [in, leave) */
                out[in * w + (size_t)k]++;
                if (leave < G) out[leave * w + (size_t)k]--;
            }
        }
        for (size_t i = 1; i < G; i++)
            out[i * w + (size_t)k] += out[(i - 1) * w + (size_t)k];
    }
}

/* Simplex counts of filtration j on the grid: out[i * (D+2) + k]. */
static void simplex_counts(const ng_complex *c, int j, double T, size_t G,
                           int D, int64_t *out)
{
    size_t w = (size_t)D + 2;
    memset(out, 0, G * w * sizeof *out);
    for (int k = 0; k <= D + 1 && k <= ng_complex_top_dim(c); k++) {
        const double *v = ng_complex_values(c, k, j);
        size_t n = ng_complex_count(c, k);
        for (size_t s = 0; s < n; s++) {
            size_t i = ng_grid_first_index(v[s], T, G);
            if (i < G) out[i * w + (size_t)k]++;
        }
        for (size_t i = 1; i < G; i++) out[i * w + (size_t)k] += out[(i - 1) * w + (size_t)k];
    }
}

typedef struct ranked { double value; uint32_t item; } ranked;

static int ranked_cmp(const void *a, const void *b)
{
    const ranked *x = a, *y = b;
    if (x->value != y->value) return x->value < y->value ? -1 : 1;
    return (x->item > y->item) - (x->item < y->item);
}

/* Nearest-rank quantiles and max of values (one per item, present from grid
 * index first[item]) on the grid. empty: the value where none is present. */
static int order_statistics(const double *values, const size_t *first,
                            size_t n, size_t G, double empty, double *q_max,
                            double *q50, double *q90)
{
    ranked *r = ng_malloc(n, sizeof *r);
    uint32_t *fen = ng_calloc(n + 1, sizeof *fen);
    size_t *start = ng_calloc(G + 1, sizeof *start);
    uint32_t *by_index = ng_malloc(n, sizeof *by_index);
    int status = NG_OK;
    if (r == NULL || fen == NULL || start == NULL || by_index == NULL) {
        status = NG_ERR_NOMEM;
        goto cleanup;
    }
    for (size_t s = 0; s < n; s++) r[s] = (ranked){values[s], (uint32_t)s};
    qsort(r, n, sizeof *r, ranked_cmp);
    /* counting sort of ranks by first grid index */
    for (size_t s = 0; s < n; s++) start[first[s] + 1]++;
    for (size_t i = 0; i < G; i++) start[i + 1] += start[i];
    for (size_t rank = 0; rank < n; rank++)
        by_index[start[first[r[rank].item]]++] = (uint32_t)rank;
    /* start[i] is now the end of bucket i */
    size_t top = 1;
    while (top * 2 <= n) top *= 2;
    size_t present = 0, pos = 0;
    double running_max = -INFINITY;
    for (size_t i = 0; i < G; i++) {
        for (; pos < start[i]; pos++) {
            size_t rank = by_index[pos];
            for (size_t x = rank + 1; x <= n; x += x & (~x + 1)) fen[x]++;
            if (r[rank].value > running_max) running_max = r[rank].value;
            present++;
        }
        if (present == 0) {
            q_max[i] = q50[i] = q90[i] = empty;
            continue;
        }
        q_max[i] = running_max;
        const double qs[2] = {0.5, 0.9};
        double *outs[2] = {q50, q90};
        for (int q = 0; q < 2; q++) {
            /* k = ⌈q·m⌉ in exact integer arithmetic: q is 5/10 or 9/10 */
            size_t num = qs[q] == 0.5 ? 5 : 9;
            size_t k = (num * present + 9) / 10;
            if (k == 0) k = 1;
            /* Fenwick descent: the smallest rank with prefix count ≥ k */
            size_t idx = 0, need = k;
            for (size_t step = top; step > 0; step /= 2) {
                if (idx + step <= n && fen[idx + step] < need) {
                    idx += step;
                    need -= fen[idx];
                }
            }
            outs[q][i] = r[idx].value; /* rank idx (0-based) */
        }
    }
cleanup:
    ng_free(r);
    ng_free(fen);
    ng_free(start);
    ng_free(by_index);
    return status;
}

int ng_grid_compute(const ng_complex *c, const ng_persistence *p, size_t G,
                    ng_grid *out, ng_error *err)
{
    return ng_grid_compute_progress(c, p, G, NULL, NULL, out, err);
}

int ng_grid_compute_progress(const ng_complex *c, const ng_persistence *p,
                             size_t G, ng_progress_fn progress, void *ctx,
                             ng_grid *out, ng_error *err)
{
    memset(out, 0, sizeof *out);
    if (G < 2 || G > ((size_t)1 << 24))
        return ng_error_set(err, NG_ERR_USAGE,
                            "--grid %zu: expected 2 to 16777216 scales", G);
    int D = p->max_degree, L = p->n_filtrations - 2;
    double T = p->scale_limit;
    size_t w0 = (size_t)D + 1, w1 = (size_t)D + 2;
    out->G = G;
    out->max_degree = D;
    out->n_slices = L;
    out->scale = ng_malloc(G, sizeof *out->scale);
    out->betti_cech = ng_malloc(G, w0 * sizeof(int64_t));
    out->betti_rips = ng_malloc(G, w0 * sizeof(int64_t));
    out->simplices_cech = ng_malloc(G, w1 * sizeof(int64_t));
    out->simplices_rips = ng_malloc(G, w1 * sizeof(int64_t));
    out->factor_max = ng_malloc(G, sizeof(double));
    out->factor_q50 = ng_malloc(G, sizeof(double));
    out->factor_q90 = ng_malloc(G, sizeof(double));
    out->shift_max = ng_malloc(G, sizeof(double));
    out->shift_q50 = ng_malloc(G, sizeof(double));
    out->shift_q90 = ng_malloc(G, sizeof(double));
    if (L > 0) out->hilbert = ng_malloc((size_t)L * G, w0 * sizeof(int64_t));
    double *factor = NULL, *shift = NULL;
    size_t *first_f = NULL, *first_s = NULL;
    int status = NG_OK;
    if (!out->scale || !out->betti_cech || !out->betti_rips ||
        !out->simplices_cech || !out->simplices_rips || !out->factor_max ||
        !out->factor_q50 || !out->factor_q90 || !out->shift_max ||
        !out->shift_q50 || !out->shift_q90 || (L > 0 && !out->hilbert))
        goto nomem;
    for (size_t i = 0; i < G; i++) out->scale[i] = scale_at(T, G, i);
    betti_curve(&p->diagram[0], T, G, D, out->betti_cech);
    betti_curve(&p->diagram[1], T, G, D, out->betti_rips);
    for (int j = 0; j < L; j++)
        betti_curve(&p->diagram[2 + j], T, G, D,
                    out->hilbert + (size_t)j * G * w0);
    simplex_counts(c, 0, T, G, D, out->simplices_cech);
    simplex_counts(c, 1, T, G, D, out->simplices_rips);

    /* global bounds over dimension ≥ 1 with 0 < rips ≤ T */
    for (int k = 1; k <= ng_complex_top_dim(c); k++) {
        const double *cv = ng_complex_values(c, k, 0);
        const double *rv = ng_complex_values(c, k, 1);
        size_t n = ng_complex_count(c, k);
        for (size_t s = 0; s < n; s++) {
            if (!(rv[s] > 0.0 && rv[s] <= T)) continue;
            double f = cv[s] / rv[s], d = cv[s] - rv[s];
            if (f > out->factor_bound) {
                out->factor_bound = f;
                out->factor_bound_at = rv[s];
            }
            if (d > out->shift_bound) {
                out->shift_bound = d;
                out->shift_bound_at = rv[s];
            }
        }
    }
    if (out->factor_bound < 1.0) out->factor_bound = 1.0;
    /* the two sorts below are most of the time */
    if (progress) progress("grid", 0.2, ctx);

    /* factor and shift statistics over dimension ≥ 2 */
    size_t total = 0;
    for (int k = 2; k <= ng_complex_top_dim(c); k++) total += ng_complex_count(c, k);
    if (total > UINT32_MAX) {
        status = ng_error_set(err, NG_ERR_BUDGET,
                              "grid: more than %u simplices of dimension ≥ 2",
                              UINT32_MAX);
        goto fail;
    }
    factor = ng_malloc(total, sizeof *factor);
    shift = ng_malloc(total, sizeof *shift);
    first_f = ng_malloc(total, sizeof *first_f);
    first_s = ng_malloc(total, sizeof *first_s);
    if (!factor || !shift || !first_f || !first_s) goto nomem;
    size_t nf = 0, ns = 0;
    for (int k = 2; k <= ng_complex_top_dim(c); k++) {
        const double *cv = ng_complex_values(c, k, 0);
        const double *rv = ng_complex_values(c, k, 1);
        size_t n = ng_complex_count(c, k);
        for (size_t s = 0; s < n; s++) {
            size_t i = ng_grid_first_index(rv[s], T, G);
            if (i >= G) continue;
            shift[ns] = cv[s] - rv[s];
            first_s[ns++] = i;
            if (rv[s] > 0.0) {
                factor[nf] = cv[s] / rv[s];
                first_f[nf++] = i;
            }
        }
    }
    if (order_statistics(factor, first_f, nf, G, 1.0, out->factor_max,
                         out->factor_q50, out->factor_q90) != NG_OK)
        goto nomem;
    if (progress) progress("grid", 0.6, ctx);
    if (order_statistics(shift, first_s, ns, G, 0.0, out->shift_max,
                         out->shift_q50, out->shift_q90) != NG_OK)
        goto nomem;
    goto done;
nomem:
    status = ng_error_set(err, NG_ERR_NOMEM, "grid: out of memory");
fail:
    ng_grid_free(out);
done:
    ng_free(factor);
    ng_free(shift);
    ng_free(first_f);
    ng_free(first_s);
    return status;
}
