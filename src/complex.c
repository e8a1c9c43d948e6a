/* complex.c — the clique set of a neighbour graph with L filtration values
 * per simplex (complex.h, complex_internal.h).
 *
 * Invariants kept here: the tables of complex_internal.h (vertex lists in
 * combinatorial-index order, top-vertex buckets, monotone values); the
 * value callback is called exactly once per simplex of dimension ≥ 1; the
 * result does not depend on the number of threads (every thread writes
 * only its own precomputed slots).
 *
 * How the cliques are enumerated. The k-simplices with largest vertex w
 * are {w} ∪ τ for the (k−1)-simplices τ among the lower neighbours of w
 * (neighbours below w). A depth-first walk from w picks the next lower
 * vertex u_1 among them in increasing order, then u_2 among the common
 * lower neighbours of w and u_1 below u_1, and so on; the candidate set at
 * each level is the sorted intersection of the previous one with the
 * neighbour list of the vertex just added. The walk meets the k-simplices
 * of top vertex w in lexicographic order of (u_1, u_2, …, u_k), which is
 * the colexicographic order of the increasing vertex lists, i.e. the order
 * of the combinatorial index. Taking w = 0, 1, … in turn therefore lists
 * every dimension already sorted by key: a counting walk gives the bucket
 * sizes per top vertex, their prefix sums give every simplex's position,
 * and a second walk (in parallel over w) writes each simplex in its slot.
 * Lookups binary-search the bucket of the top vertex, comparing vertex
 * lists from the top down (colexicographically).
 *
 * The tables store vertex lists rather than keys: 4(k+1) bytes per
 * simplex, no decoding in the reduction's inner loop; the key of a stored
 * simplex is computed on demand (ng_complex_key), and the table order is
 * the key order.
 */
#include "nervegap/complex.h"

#include "alloc.h"
#include "complex_internal.h"

#include <math.h>
#include <omp.h>
#include <stdio.h>
#include <string.h>

/* ---- combinatorial number system ---- */

/* Inverses of 3 and 5 modulo 2^128: exact division by an odd number is a
 * multiplication by its inverse. */
#define INV3                                                                 \
    ((((ng_simplex_key)0xAAAAAAAAAAAAAAAAu) << 64) | 0xAAAAAAAAAAAAAAABu)
#define INV5                                                                 \
    ((((ng_simplex_key)0xCCCCCCCCCCCCCCCCu) << 64) | 0xCCCCCCCCCCCCCCCDu)

/* x / d for d = 1..6 when d divides x exactly. */
static ng_simplex_key exact_div(ng_simplex_key x, int d)
{
    switch (d) {
    case 2: return x >> 1;
    case 3: return x * INV3;
    case 4: return x >> 2;
    case 5: return x * INV5;
    case 6: return (x >> 1) * INV3;
    default: return x;
    }
}

/* C(v, i) for i ≤ 6, computed as C(v, j+1) = C(v, j)·(v − j)/(j + 1).
 * *ok is cleared (and the result meaningless) when an intermediate product
 * leaves 128 bits. */
static ng_simplex_key binomial(uint64_t v, int i, int *ok)
{
    if ((uint64_t)i > v) return 0;
    const ng_simplex_key max = ~(ng_simplex_key)0;
    ng_simplex_key c = 1;
    for (int j = 0; j < i; j++) {
        uint64_t f = v - (uint64_t)j;
        if (c > max / f) {
            *ok = 0;
            return 0;
        }
        c = exact_div(c * f, j + 1);
    }
    return c;
}

int ng_simplex_key_fits(uint64_t n, int m)
{
    if (m < 1 || m > NG_COMPLEX_MAX_DIM + 1) return 0;
    int ok = 1;
    (void)binomial(n, m, &ok);
    return ok;
}

ng_simplex_key ng_simplex_key_encode(const ng_index *v, int m)
{
    ng_simplex_key key = 0;
    int ok = 1;
    for (int i = 0; i < m; i++) key += binomial(v[i], i + 1, &ok);
    return key;
}

void ng_simplex_key_decode(ng_simplex_key key, int m, ng_index *v)
{
    uint64_t hi = (uint64_t)NG_INDEX_MAX + 1; /* exclusive bound */
    for (int i = m; i >= 1; i--) {
        /* largest x < hi with C(x, i) ≤ key; C(i − 1, i) = 0 ≤ key */
        uint64_t lo = (uint64_t)(i - 1), top = hi - 1;
        while (lo < top) {
            uint64_t mid = lo + (top - lo + 1) / 2;
            int ok = 1;
            ng_simplex_key b = binomial(mid, i, &ok);
            if (ok && b <= key)
                lo = mid;
            else
                top = mid - 1;
        }
        int ok = 1;
        key -= binomial(lo, i, &ok);
        v[i - 1] = (ng_index)lo;
        hi = lo;
    }
}

/* ---- graph checks ---- */

static int has_neighbor(const ng_csr *g, size_t i, ng_index j)
{
    size_t lo = g->offset[i], hi = g->offset[i + 1];
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (g->nbr[mid] < j)
            lo = mid + 1;
        else
            hi = mid;
    }
    return lo < g->offset[i + 1] && g->nbr[lo] == j;
}

static int check_graph(const ng_csr *g, int top_dim, int n_filtrations,
                       ng_error *err)
{
    if (g == NULL || g->offset == NULL)
        return ng_error_set(err, NG_ERR_USAGE, "complex: no neighbour graph");
    if (g->n < 1 || g->n > NG_INDEX_MAX)
        return ng_error_set(err, NG_ERR_USAGE,
                            "complex: %zu vertices (need 1..%u)", g->n,
                            (unsigned)NG_INDEX_MAX);
    if (top_dim < 1 || top_dim > NG_COMPLEX_MAX_DIM)
        return ng_error_set(err, NG_ERR_USAGE,
                            "complex: top dimension %d (need 1..%d)",
                            top_dim, NG_COMPLEX_MAX_DIM);
    if (n_filtrations < 1)
        return ng_error_set(err, NG_ERR_USAGE,
                            "complex: %d filtrations (need at least 1)",
                            n_filtrations);
    if (!ng_simplex_key_fits(g->n, top_dim + 1))
        return ng_error_set(err, NG_ERR_BUDGET,
                            "complex: %zu vertices is too many for "
                            "128-bit simplex keys of dimension %d",
                            g->n, top_dim);
    if (g->offset[0] != 0 || (g->offset[g->n] > 0 && g->nbr == NULL))
        return ng_error_set(err, NG_ERR_INPUT,
                            "complex: malformed neighbour graph offsets");
    for (size_t i = 0; i < g->n; i++) {
        if (g->offset[i + 1] < g->offset[i])
            return ng_error_set(err, NG_ERR_INPUT,
                                "complex: neighbour offsets decrease at "
                                "vertex %zu",
                                i);
        for (size_t e = g->offset[i]; e < g->offset[i + 1]; e++) {
            ng_index j = g->nbr[e];
            if (j >= g->n || j == i ||
                (e > g->offset[i] && g->nbr[e - 1] >= j))
                return ng_error_set(err, NG_ERR_INPUT,
                                    "complex: neighbour list of vertex %zu "
                                    "is not sorted, has a loop or an "
                                    "index out of range",
                                    i);
        }
    }
    for (size_t i = 0; i < g->n; i++)
        for (size_t e = g->offset[i]; e < g->offset[i + 1]; e++)
            if (!has_neighbor(g, g->nbr[e], (ng_index)i))
                return ng_error_set(err, NG_ERR_INPUT,
                                    "complex: neighbour graph is not "
                                    "symmetric: %u lists %zu but not the "
                                    "reverse",
                                    (unsigned)g->nbr[e], i);
    return NG_OK;
}

static int thread_count(int threads)
{
    return threads > 0 ? threads : omp_get_max_threads();
}

/* ---- clique walk ---- */

typedef struct walk {
    const size_t *offset;
    const ng_index *nbr;
    int top_dim;
    const ng_index *cand[NG_COMPLEX_MAX_DIM + 1]; /* candidates per level */
    size_t ncand[NG_COMPLEX_MAX_DIM + 1];
    ng_index *buf[NG_COMPLEX_MAX_DIM + 1]; /* storage for levels ≥ 2 */
    ng_index chain[NG_COMPLEX_MAX_DIM + 1]; /* w > u_1 > u_2 > … */
    size_t count[NG_COMPLEX_MAX_DIM + 1];   /* counting walk */
    size_t counted, limit; /* counting walk: stop after limit simplices */
    int *stop;             /* counting walk: shared "over the limit" flag,
                              or NULL for no limit */
    ng_index *const *dest;                  /* filling walk: vert tables */
    size_t cursor[NG_COMPLEX_MAX_DIM + 1];
} walk;

/* Number of entries of the sorted list a[0..len) below x. */
static size_t count_below(const ng_index *a, size_t len, ng_index x)
{
    size_t lo = 0, hi = len;
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (a[mid] < x)
            lo = mid + 1;
        else
            hi = mid;
    }
    return lo;
}

/* Counting walk with a limit: counts one simplex; 1 when this walk or
 * another one sharing the flag has gone past the limit. */
static int past_limit(walk *wk)
{
    if (++wk->counted > wk->limit) {
#pragma omp atomic write
        *wk->stop = 1;
    }
    int stop;
#pragma omp atomic read
    stop = *wk->stop;
    return stop;
}

/* chain[0..level-1] is a clique; cand[level] holds its common lower
 * neighbours below chain[level-1]. Visits every extension. */
static void descend(walk *wk, int level)
{
    if (level > NG_COMPLEX_MAX_DIM) return; /* never: level ≤ top_dim */
    const ng_index *cand = wk->cand[level];
    size_t ncand = wk->ncand[level];
    for (size_t idx = 0; idx < ncand; idx++) {
        ng_index u = cand[idx];
        wk->chain[level] = u;
        if (wk->dest) {
            ng_index *dst =
                wk->dest[level] + wk->cursor[level]++ * (size_t)(level + 1);
            for (int r = 0; r <= level; r++) dst[r] = wk->chain[level - r];
        } else {
            wk->count[level]++;
            if (wk->stop && past_limit(wk)) return;
        }
        if (level >= wk->top_dim || level >= NG_COMPLEX_MAX_DIM || idx == 0)
            continue;
        /* cand[0..idx) ∩ N(u): all of cand[0..idx) lies below u */
        const ng_index *nu = wk->nbr + wk->offset[u];
        size_t lu = wk->offset[u + 1] - wk->offset[u];
        ng_index *out = wk->buf[level + 1];
        size_t a = 0, b = 0, m = 0;
        while (a < idx && b < lu) {
            if (cand[a] < nu[b])
                a++;
            else if (cand[a] > nu[b])
                b++;
            else {
                out[m++] = cand[a];
                a++;
                b++;
            }
        }
        if (m == 0) continue;
        wk->cand[level + 1] = out;
        wk->ncand[level + 1] = m;
        descend(wk, level + 1);
    }
}

static void walk_from(walk *wk, ng_index w)
{
    const ng_index *nw = wk->nbr + wk->offset[w];
    size_t lw = wk->offset[w + 1] - wk->offset[w];
    wk->chain[0] = w;
    wk->cand[1] = nw;
    wk->ncand[1] = count_below(nw, lw, w);
    descend(wk, 1);
}

static size_t longest_list(const ng_csr *g)
{
    size_t m = 0;
    for (size_t i = 0; i < g->n; i++)
        if (g->offset[i + 1] - g->offset[i] > m)
            m = g->offset[i + 1] - g->offset[i];
    return m;
}

/* Per-thread scratch for walks: nt × top_dim lists of max_degree. */
static ng_index *walk_scratch(int nt, int top_dim, size_t max_degree)
{
    return ng_malloc((size_t)nt * (size_t)(top_dim + 1),
                     (max_degree + 1) * sizeof(ng_index));
}

static void walk_init(walk *wk, const ng_csr *g, int top_dim,
                      ng_index *scratch, size_t max_degree, int tid)
{
    memset(wk, 0, sizeof *wk);
    wk->offset = g->offset;
    wk->nbr = g->nbr;
    wk->top_dim = top_dim;
    ng_index *base =
        scratch + (size_t)tid * (size_t)(top_dim + 1) * (max_degree + 1);
    for (int l = 0; l <= top_dim; l++)
        wk->buf[l] = base + (size_t)l * (max_degree + 1);
}

static void size_bytes(ng_complex_size *s, size_t n, size_t edges_directed,
                       int top_dim, int n_filtrations)
{
    size_t b = (n + 1) * sizeof(size_t) + edges_directed * sizeof(ng_index);
    for (int k = 0; k <= top_dim; k++)
        b += s->count[k] * ((size_t)(k + 1) * sizeof(ng_index) +
                            (size_t)n_filtrations * sizeof(double)) +
             (n + 1) * sizeof(size_t);
    s->bytes_build = b;
    /* degree 0: union-find (4 B a vertex), sorted edges and their sort
     * buffer (32 B), joining marks (4 B); degree k: sorted columns and sort
     * buffer (32 B), cleared marks (4 B) and reducer records (16 B) per
     * k-simplex, pivots (4 B) per (k+1)-simplex */
    size_t r = n * sizeof(uint32_t) + s->count[1] * 36 + 65536 * 8;
    for (int k = 1; k < top_dim; k++) {
        size_t rk = s->count[k] * 52 + s->count[k + 1] * 4 + 65536 * 8;
        if (rk > r) r = rk;
    }
    s->bytes_reduce = r;
}

int ng_complex_estimate(const ng_csr *graph, int top_dim, int n_filtrations,
                        int threads, ng_complex_size *out, ng_error *err)
{
    int over;
    return ng_complex_estimate_capped(graph, top_dim, n_filtrations, threads,
                                      SIZE_MAX, out, &over, err);
}

int ng_complex_estimate_capped(const ng_csr *graph, int top_dim,
                               int n_filtrations, int threads,
                               size_t max_simplices, ng_complex_size *out,
                               int *over, ng_error *err)
{
    *over = 0;
    if (out) memset(out, 0, sizeof *out);
    if (out == NULL)
        return ng_error_set(err, NG_ERR_USAGE, "complex: no output");
    int status = check_graph(graph, top_dim, n_filtrations, err);
    if (status != NG_OK) return status;
    int nt = thread_count(threads);
    size_t maxdeg = longest_list(graph);
    ng_index *scratch = walk_scratch(nt, top_dim, maxdeg);
    if (scratch == NULL)
        return ng_error_set(err, NG_ERR_NOMEM,
                            "complex: out of memory for the clique walk");
    size_t total[NG_COMPLEX_MAX_DIM + 1] = {0};
    long long nv = (long long)graph->n;
    int stop = 0;
#pragma omp parallel num_threads(nt)
    {
        walk wk;
        walk_init(&wk, graph, top_dim, scratch, maxdeg, omp_get_thread_num());
        wk.limit = max_simplices;
        wk.stop = &stop;
        /* past the limit, the remaining iterations return at once */
#pragma omp for schedule(dynamic, 64)
        for (long long w = 0; w < nv; w++) walk_from(&wk, (ng_index)w);
#pragma omp critical(ng_complex_estimate)
        for (int k = 1; k <= top_dim; k++) total[k] += wk.count[k];
    }
    ng_free(scratch);
    total[0] = graph->n;
    for (int k = 0; k <= top_dim; k++) {
        out->count[k] = total[k];
        out->total += total[k];
    }
    if (stop) {
        *over = 1;
        out->bytes_build = out->bytes_reduce = SIZE_MAX;
        return NG_OK;
    }
    size_bytes(out, graph->n, graph->offset[graph->n], top_dim,
               n_filtrations);
    return NG_OK;
}

/* ---- lookups and cofacets ---- */

/* -1, 0 or 1 as the k-simplex s is before, equal to or after v in key
 * order, given that their top vertices are equal. */
static int compare_below_top(const ng_index *s, const ng_index *v, int k)
{
    for (int i = k - 1; i >= 0; i--)
        if (s[i] != v[i]) return s[i] < v[i] ? -1 : 1;
    return 0;
}

/* Binary search for the k-simplex v among positions [lo, hi) of its
 * bucket. */
static uint32_t search_bucket(const ng_complex *c, int k, const ng_index *v,
                              size_t lo, size_t hi)
{
    const ng_index *t = c->vert[k];
    size_t stride = (size_t)k + 1;
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        int cmp = compare_below_top(t + mid * stride, v, k);
        if (cmp == 0) return (uint32_t)mid;
        if (cmp < 0)
            lo = mid + 1;
        else
            hi = mid;
    }
    return NG_POS_NONE;
}

uint32_t ng_complex_locate(const ng_complex *c, int k, const ng_index *v)
{
    if (k == 0) return v[0] < c->n ? v[0] : NG_POS_NONE;
    if (v[k] >= c->n) return NG_POS_NONE;
    return search_bucket(c, k, v, c->start[k][v[k]], c->start[k][v[k] + 1]);
}

/* Galloping search for v in [lo, hi) of its bucket, where v is expected
 * near lo. */
static uint32_t gallop_bucket(const ng_complex *c, int k, const ng_index *v,
                              size_t lo, size_t hi)
{
    const ng_index *t = c->vert[k];
    size_t stride = (size_t)k + 1, step = 1, base = lo;
    while (base + step < hi &&
           compare_below_top(t + (base + step - 1) * stride, v, k) < 0) {
        base += step;
        step *= 2;
    }
    size_t end = base + step < hi ? base + step : hi;
    return search_bucket(c, k, v, base, end);
}

size_t ng_complex_cofacets(const ng_complex *c, int k, const ng_index *v,
                           uint32_t *restrict out)
{
    /* walk the shortest neighbour list, merge-check the others */
    int a = 0;
    for (int i = 1; i <= k; i++)
        if (c->offset[v[i] + 1] - c->offset[v[i]] <
            c->offset[v[a] + 1] - c->offset[v[a]])
            a = i;
    size_t ptr[NG_COMPLEX_MAX_DIM + 1], end[NG_COMPLEX_MAX_DIM + 1];
    for (int i = 0; i <= k; i++) {
        ptr[i] = c->offset[v[i]];
        end[i] = c->offset[v[i] + 1];
    }
    ng_index tup[NG_COMPLEX_MAX_DIM + 1];
    size_t m = 0;
    size_t below = c->start[k + 1][v[k]], below_end = c->start[k + 1][v[k] + 1];
    for (size_t e = ptr[a]; e < end[a]; e++) {
        ng_index w = c->nbr[e];
        int common = 1;
        for (int i = 0; i <= k && common; i++) {
            if (i == a) continue;
            while (ptr[i] < end[i] && c->nbr[ptr[i]] < w) ptr[i]++;
            if (ptr[i] == end[i]) return m; /* no later w is common */
            common = c->nbr[ptr[i]] == w;
        }
        if (!common) continue;
        int r = 0, s = 0;
        while (s <= k && v[s] < w) tup[r++] = v[s++];
        tup[r++] = w;
        while (s <= k) tup[r++] = v[s++];
        /* Below the top vertex v[k], the cofacets share the bucket of
         * v[k] and their keys grow with w (colex order: the larger of two
         * sets differing in one element is the one holding the larger
         * element), so each search starts where the last one ended. */
        uint32_t pos;
        if (w < v[k]) {
            pos = gallop_bucket(c, k + 1, tup, below, below_end);
            if (pos != NG_POS_NONE) below = (size_t)pos + 1;
        } else {
            pos = ng_complex_locate(c, k + 1, tup);
        }
        if (pos != NG_POS_NONE) out[m++] = pos;
    }
    return m;
}

/* ---- building ---- */

void ng_complex_free(ng_complex *c)
{
    if (c == NULL) return;
    ng_free(c->offset);
    ng_free(c->nbr);
    for (int k = 0; k <= NG_COMPLEX_MAX_DIM; k++) {
        ng_free(c->vert[k]);
        ng_free(c->start[k]);
        ng_free(c->value[k]);
    }
    ng_free(c->within);
    ng_free(c);
}

/* Values of the k-simplices (k ≥ 1) in parallel: one callback per simplex,
 * raised to the max over facets. Returns NG_OK or the first failure in
 * position order (so the message does not depend on the schedule). */
static int compute_values(ng_complex *c, int k, const ng_complex_spec *spec,
                          int nt, ng_error *err)
{
    int L = c->n_filtrations;
    size_t cnt = c->count[k], below = c->count[k - 1];
    double *scratch = ng_malloc((size_t)nt, (size_t)L * sizeof(double));
    if (scratch == NULL)
        return ng_error_set(err, NG_ERR_NOMEM,
                            "complex: out of memory for simplex values");
    size_t bad_pos = SIZE_MAX;
    int bad_status = 0, bad_nan = 0;
    long long total = (long long)cnt;
#pragma omp parallel num_threads(nt)
    {
        double *val = scratch + (size_t)omp_get_thread_num() * (size_t)L;
#pragma omp for schedule(dynamic, 256)
        for (long long p = 0; p < total; p++) {
            const ng_index *v = c->vert[k] + (size_t)p * (size_t)(k + 1);
            int st = spec->value(v, k + 1, val, spec->ctx), nan = 0;
            for (int j = 0; j < L && st == 0; j++)
                if (isnan(val[j])) nan = 1;
            if (st != 0 || nan) {
#pragma omp critical(ng_complex_values)
                if ((size_t)p < bad_pos) {
                    bad_pos = (size_t)p;
                    bad_status = st;
                    bad_nan = st == 0;
                }
                continue;
            }
            ng_index facet[NG_COMPLEX_MAX_DIM + 1];
            for (int skip = 0; skip <= k; skip++) {
                int r = 0;
                for (int i = 0; i <= k; i++)
                    if (i != skip) facet[r++] = v[i];
                uint32_t f = ng_complex_locate(c, k - 1, facet);
                for (int j = 0; j < L; j++) {
                    double fv = c->value[k - 1][(size_t)j * below + f];
                    if (fv > val[j]) val[j] = fv;
                }
            }
            for (int j = 0; j < L; j++)
                c->value[k][(size_t)j * cnt + (size_t)p] = val[j];
        }
    }
    ng_free(scratch);
    if (bad_pos == SIZE_MAX) return NG_OK;
    const ng_index *v = c->vert[k] + bad_pos * (size_t)(k + 1);
    char names[128];
    size_t used = 0;
    for (int i = 0; i <= k && used < sizeof names; i++)
        used += (size_t)snprintf(names + used, sizeof names - used, "%s%u",
                                 i ? " " : "", (unsigned)v[i]);
    if (bad_nan)
        return ng_error_set(err, NG_ERR_INPUT,
                            "complex: value callback gave NaN for simplex "
                            "{%s}",
                            names);
    int code = bad_status < 0 && bad_status >= NG_ERR_BUDGET
                   ? bad_status
                   : NG_ERR_RUNTIME;
    return ng_error_set(err, code,
                        "complex: value callback failed (status %d) on "
                        "simplex {%s}",
                        bad_status, names);
}

int ng_complex_build(const ng_complex_spec *spec, ng_complex **out,
                     ng_error *err)
{
    if (out) *out = NULL;
    if (spec == NULL || out == NULL || spec->value == NULL ||
        spec->vertex_values == NULL)
        return ng_error_set(err, NG_ERR_USAGE,
                            "complex: missing specification, output, "
                            "vertex values or value callback");
    if (isnan(spec->scale_limit))
        return ng_error_set(err, NG_ERR_USAGE, "complex: scale limit is NaN");
    const ng_csr *g = spec->graph;
    int status = check_graph(g, spec->top_dim, spec->n_filtrations, err);
    if (status != NG_OK) return status;
    size_t n = g->n;
    int L = spec->n_filtrations, top = spec->top_dim;
    for (size_t i = 0; i < n * (size_t)L; i++)
        if (isnan(spec->vertex_values[i]))
            return ng_error_set(err, NG_ERR_INPUT,
                                "complex: vertex %zu has a NaN value in "
                                "filtration %zu",
                                i / (size_t)L, i % (size_t)L);
    int nt = thread_count(spec->threads);
    ng_index *scratch = NULL;
    ng_complex *c = ng_calloc(1, sizeof *c);
    if (c == NULL) goto nomem;
    c->n = n;
    c->top_dim = top;
    c->n_filtrations = L;
    c->scale_limit = spec->scale_limit;
    c->max_degree = longest_list(g);
    size_t edges = g->offset[n];
    c->offset = ng_malloc(n + 1, sizeof *c->offset);
    c->nbr = ng_malloc(edges, sizeof *c->nbr);
    if (c->offset == NULL || c->nbr == NULL) goto nomem;
    memcpy(c->offset, g->offset, (n + 1) * sizeof *c->offset);
    if (edges) memcpy(c->nbr, g->nbr, edges * sizeof *c->nbr);
    for (int k = 0; k <= top; k++) {
        c->start[k] = ng_calloc(n + 1, sizeof *c->start[k]);
        if (c->start[k] == NULL) goto nomem;
    }
    scratch = walk_scratch(nt, top, c->max_degree);
    if (scratch == NULL) goto nomem;

    /* counting walk: bucket sizes per top vertex */
    long long nv = (long long)n;
#pragma omp parallel num_threads(nt)
    {
        walk wk;
        walk_init(&wk, g, top, scratch, c->max_degree, omp_get_thread_num());
#pragma omp for schedule(dynamic, 64)
        for (long long w = 0; w < nv; w++) {
            memset(wk.count, 0, sizeof wk.count);
            walk_from(&wk, (ng_index)w);
            for (int k = 1; k <= top; k++)
                c->start[k][w + 1] = wk.count[k];
        }
    }
    for (size_t w = 0; w < n; w++) c->start[0][w + 1] = 1;
    for (int k = 0; k <= top; k++) {
        for (size_t w = 0; w < n; w++) c->start[k][w + 1] += c->start[k][w];
        c->count[k] = c->start[k][n];
        if (c->count[k] >= UINT32_MAX) {
            ng_error_set(err, NG_ERR_BUDGET,
                         "complex: %zu simplices of dimension %d (at most "
                         "%u per dimension)",
                         c->count[k], k, (unsigned)(UINT32_MAX - 1));
            goto fail;
        }
        c->vert[k] = ng_malloc(c->count[k], (size_t)(k + 1) * sizeof(ng_index));
        c->value[k] = ng_malloc(c->count[k], (size_t)L * sizeof(double));
        if (c->vert[k] == NULL || c->value[k] == NULL) goto nomem;
    }
    c->within = ng_calloc((size_t)L * (size_t)(top + 1), sizeof *c->within);
    if (c->within == NULL) goto nomem;

    /* filling walk: every simplex into its slot */
    for (size_t i = 0; i < n; i++) c->vert[0][i] = (ng_index)i;
#pragma omp parallel num_threads(nt)
    {
        walk wk;
        walk_init(&wk, g, top, scratch, c->max_degree, omp_get_thread_num());
        wk.dest = c->vert;
#pragma omp for schedule(dynamic, 64)
        for (long long w = 0; w < nv; w++) {
            for (int k = 1; k <= top; k++) wk.cursor[k] = c->start[k][w];
            walk_from(&wk, (ng_index)w);
        }
    }
    ng_free(scratch);
    scratch = NULL;

    /* values, dimension by dimension (facets first) */
    for (int j = 0; j < L; j++)
        for (size_t i = 0; i < n; i++)
            c->value[0][(size_t)j * n + i] =
                spec->vertex_values[i * (size_t)L + (size_t)j];
    for (int k = 1; k <= top; k++) {
        status = compute_values(c, k, spec, nt, err);
        if (status != NG_OK) goto fail;
    }
    for (int j = 0; j < L; j++)
        for (int k = 0; k <= top; k++) {
            const double *val = c->value[k] + (size_t)j * c->count[k];
            size_t m = 0;
            for (size_t p = 0; p < c->count[k]; p++)
                m += in_filtration(val[p], c->scale_limit);
            c->within[(size_t)j * (size_t)(top + 1) + (size_t)k] = m;
        }
    *out = c;
    return NG_OK;

nomem:
    ng_error_set(err, NG_ERR_NOMEM, "complex: out of memory");
fail:
    ng_free(scratch);
    ng_complex_free(c);
    return err && err->code != NG_OK ? err->code : NG_ERR_NOMEM;
}

/* ---- accessors ---- */

size_t ng_complex_vertex_count(const ng_complex *c) { return c->n; }
int ng_complex_top_dim(const ng_complex *c) { return c->top_dim; }
int ng_complex_filtration_count(const ng_complex *c)
{
    return c->n_filtrations;
}
double ng_complex_scale_limit(const ng_complex *c) { return c->scale_limit; }

size_t ng_complex_count(const ng_complex *c, int k)
{
    return k >= 0 && k <= c->top_dim ? c->count[k] : 0;
}

size_t ng_complex_count_within(const ng_complex *c, int k, int j)
{
    if (k < 0 || k > c->top_dim || j < 0 || j >= c->n_filtrations) return 0;
    return c->within[(size_t)j * (size_t)(c->top_dim + 1) + (size_t)k];
}

const ng_index *ng_complex_vertices(const ng_complex *c, int k)
{
    return k >= 0 && k <= c->top_dim ? c->vert[k] : NULL;
}

const double *ng_complex_values(const ng_complex *c, int k, int j)
{
    if (k < 0 || k > c->top_dim || j < 0 || j >= c->n_filtrations)
        return NULL;
    return c->value[k] + (size_t)j * c->count[k];
}

size_t ng_complex_find(const ng_complex *c, const ng_index *v, int m)
{
    if (m < 1 || m > c->top_dim + 1) return SIZE_MAX;
    ng_index s[NG_COMPLEX_MAX_DIM + 1];
    memcpy(s, v, (size_t)m * sizeof *s);
    for (int i = 1; i < m; i++) /* insertion sort */
        for (int r = i; r > 0 && s[r - 1] > s[r]; r--) {
            ng_index t = s[r];
            s[r] = s[r - 1];
            s[r - 1] = t;
        }
    for (int i = 1; i < m; i++)
        if (s[i] == s[i - 1]) return SIZE_MAX;
    uint32_t pos = ng_complex_locate(c, m - 1, s);
    return pos == NG_POS_NONE ? SIZE_MAX : (size_t)pos;
}

ng_simplex_key ng_complex_key(const ng_complex *c, int k, size_t pos)
{
    return ng_simplex_key_encode(c->vert[k] + pos * (size_t)(k + 1), k + 1);
}
