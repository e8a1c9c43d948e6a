/* grid.c — the per-scale statistics of grid.h.
 *
 * How it works: every quantity is a count or an order statistic over the
 * items (bars or simplices) that are present at t_i. Each item gets the
 * first grid index at which it is present (ng_grid_first_index, computed
 * with the very formula of the scales, so membership is exact), and counts
 * are prefix sums over those indices (bars also leave at the first index
 * with t_i ≥ death). For the quantiles, the factors (and shifts) are ranked
 * once by a radix sort; simplices are inserted grid index by grid index
 * into a bitset over the ranks and a Fenwick tree over blocks of 1024
 * ranks, and the ⌈q·m⌉-th smallest is found by the tree's binary descent
 * to its block, then popcounts within the block: exact, O(N log(N/1024))
 * for the inserts with the tree small enough to stay in cache.
 */
#include "nervegap/grid.h"

#include "alloc.h"
#include "order.h"

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


/* Ranks in one block of the order-statistics tree: the Fenwick tree counts
 * present ranks per block (small enough to stay in cache), a bitset says
 * which ranks of a block are present. */
#define BLOCK_BITS 10
#define BLOCK ((size_t)1 << BLOCK_BITS)

/* The rank of the k-th smallest present item (k ≥ 1, at most the number
 * present): Fenwick descent to its block, then popcounts over the block's
 * bitset words. */
static size_t kth_present(const uint32_t *fen, size_t nb, size_t top,
                          const uint64_t *bits, size_t k)
{
    size_t idx = 0, need = k;
    for (size_t step = top; step > 0; step /= 2) {
        if (idx + step <= nb && fen[idx + step] < need) {
            idx += step;
            need -= fen[idx];
        }
    }
    /* block idx (0-based) holds it; need ≥ 1 within the block */
    const uint64_t *w = bits + idx * (BLOCK / 64);
    size_t word = 0;
    for (;; word++) {
        size_t c = (size_t)__builtin_popcountll(w[word]);
        if (c >= need) break;
        need -= c;
    }
    uint64_t x = w[word];
    for (size_t r = 1; r < need; r++) x &= x - 1; /* drop lower set bits */
    return idx * BLOCK + word * 64 + (size_t)__builtin_ctzll(x);
}

/* Nearest-rank quantiles and max of the items a[0..n) (value, and in pos
 * the first grid index at which the item is present) on the grid; a is
 * sorted in place. empty: the value where none is present. */
static int order_statistics(ng_keyed *a, size_t n, size_t G, double empty,
                            double *q_max, double *q50, double *q90)
{
    if (ng_sort_keyed(a, n) != 0) return NG_ERR_NOMEM;
    size_t nb = (n + BLOCK - 1) / BLOCK;
    uint32_t *fen = ng_calloc(nb + 1, sizeof *fen);
    uint64_t *bits = ng_calloc(nb * (BLOCK / 64) + 1, sizeof *bits);
    size_t *start = ng_calloc(G + 1, sizeof *start);
    uint32_t *by_index = ng_malloc(n, sizeof *by_index);
    int status = NG_OK;
    if (fen == NULL || bits == NULL || start == NULL || by_index == NULL) {
        status = NG_ERR_NOMEM;
        goto cleanup;
    }
    /* counting sort of ranks by first grid index */
    for (size_t s = 0; s < n; s++) start[a[s].pos + 1]++;
    for (size_t i = 0; i < G; i++) start[i + 1] += start[i];
    for (size_t rank = 0; rank < n; rank++)
        by_index[start[a[rank].pos]++] = (uint32_t)rank;
    /* start[i] is now the end of bucket i */
    size_t top = 1;
    while (top * 2 <= nb) top *= 2;
    size_t present = 0, pos = 0, max_rank = 0;
    for (size_t i = 0; i < G; i++) {
        for (; pos < start[i]; pos++) {
            size_t rank = by_index[pos];
            bits[rank / 64] |= (uint64_t)1 << (rank % 64);
            for (size_t x = rank / BLOCK + 1; x <= nb; x += x & (~x + 1))
                fen[x]++;
            if (rank > max_rank) max_rank = rank; /* ranks sort the values */
            present++;
        }
        if (present == 0) {
            q_max[i] = q50[i] = q90[i] = empty;
            continue;
        }
        q_max[i] = a[max_rank].value;
        /* k = ⌈q·m⌉ in exact integer arithmetic: q is 5/10 or 9/10 */
        size_t k50 = (5 * present + 9) / 10, k90 = (9 * present + 9) / 10;
        q50[i] = a[kth_present(fen, nb, top, bits, k50 ? k50 : 1)].value;
        q90[i] = a[kth_present(fen, nb, top, bits, k90 ? k90 : 1)].value;
    }
cleanup:
    ng_free(fen);
    ng_free(bits);
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
    ng_keyed *factor = NULL, *shift = NULL;
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
    if (!factor || !shift) goto nomem;
    size_t nf = 0, ns = 0;
    for (int k = 2; k <= ng_complex_top_dim(c); k++) {
        const double *cv = ng_complex_values(c, k, 0);
        const double *rv = ng_complex_values(c, k, 1);
        size_t n = ng_complex_count(c, k);
        for (size_t s = 0; s < n; s++) {
            size_t i = ng_grid_first_index(rv[s], T, G);
            if (i >= G) continue;
            shift[ns++] = (ng_keyed){cv[s] - rv[s], (uint32_t)i};
            if (rv[s] > 0.0)
                factor[nf++] = (ng_keyed){cv[s] / rv[s], (uint32_t)i};
        }
    }
    if (order_statistics(factor, nf, G, 1.0, out->factor_max,
                         out->factor_q50, out->factor_q90) != NG_OK)
        goto nomem;
    if (progress) progress("grid", 0.6, ctx);
    if (order_statistics(shift, ns, G, 0.0, out->shift_max,
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
    return status;
}
