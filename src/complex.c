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

static int not_symmetric(ng_index a, size_t b, ng_error *err)
{
    return ng_error_set(err, NG_ERR_INPUT,
                        "complex: neighbour graph is not symmetric: %u lists "
                        "%zu but not the reverse",
                        (unsigned)a, b);
}

/* Symmetry of sorted lists in one pass: taking i in increasing order, the
 * lower neighbours of every j are met in increasing order too, so each
 * edge (i, j) with i < j must be the next unmatched entry of j's list. */
static int check_symmetric(const ng_csr *g, ng_error *err)
{
    size_t *cursor = ng_malloc(g->n, sizeof *cursor);
    if (cursor == NULL)
        return ng_error_set(err, NG_ERR_NOMEM,
                            "complex: out of memory checking the graph");
    memcpy(cursor, g->offset, g->n * sizeof *cursor);
    int status = NG_OK;
    for (size_t i = 0; i < g->n && status == NG_OK; i++) {
        for (size_t e = g->offset[i]; e < g->offset[i + 1]; e++) {
            ng_index j = g->nbr[e];
            if (j < i) continue;
            size_t c = cursor[j];
            if (c < g->offset[j + 1] && g->nbr[c] == i) {
                cursor[j]++;
                continue;
            }
            if (c < g->offset[j + 1] && g->nbr[c] < i)
                status = not_symmetric(j, g->nbr[c], err);
            else
                status = not_symmetric((ng_index)i, j, err);
            break;
        }
    }
    /* every lower neighbour must have been matched */
    for (size_t j = 0; j < g->n && status == NG_OK; j++)
        if (cursor[j] < g->offset[j + 1] && g->nbr[cursor[j]] < j)
            status = not_symmetric((ng_index)j, g->nbr[cursor[j]], err);
    ng_free(cursor);
    return status;
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
    return check_symmetric(g, err);
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
    ng_index *const *dest;                  /* filling walk: vert tables */
    size_t cursor[NG_COMPLEX_MAX_DIM + 1];
    /* capped counting walk: stop once this thread's count plus what the
     * other threads have published passes limit (0: no cap) */
    size_t limit;
    const size_t *published; /* shared running total (atomic reads) */
    size_t mine;             /* this thread's part already published */
    int stop;
} walk;

static size_t walk_total(const walk *wk)
{
    size_t t = 0;
    for (int k = 1; k <= wk->top_dim; k++) t += wk->count[k];
    return t;
}

/* Capped counting: nonzero when the walk must stop (checked once per
 * candidate below the top level, where the work per step is an
 * intersection of neighbour lists, so the check costs little). */
static int walk_over(walk *wk)
{
    if (wk->limit == 0) return 0;
    if (!wk->stop) {
        size_t others;
#pragma omp atomic read
        others = *wk->published;
        others -= wk->mine < others ? wk->mine : others;
        if (walk_total(wk) + others > wk->limit) wk->stop = 1;
    }
    return wk->stop;
}

/* Number of entries of the sorted list a[0..len) below x. Branch-free:
 * the range [base, base + len] holds the answer and halves each step by a
 * conditional move, so a search costs no mispredicted branches (the clique
 * walk and every facet lookup make one or more). */
static size_t count_below(const ng_index *a, size_t len, ng_index x)
{
    if (len == 0) return 0;
    const ng_index *base = a;
    while (len > 1) {
        size_t half = len / 2;
        base = base[half] < x ? base + half : base;
        len -= half;
    }
    return (size_t)(base - a) + (*base < x);
}

/* chain[0..level-1] is a clique; cand[level] holds its common lower
 * neighbours below chain[level-1]. Visits every extension. */
static void descend(walk *wk, int level)
{
    if (level > NG_COMPLEX_MAX_DIM) return; /* never: level ≤ top_dim */
    const ng_index *cand = wk->cand[level];
    size_t ncand = wk->ncand[level];
    if (wk->dest == NULL && level >= wk->top_dim) {
        wk->count[level] += ncand; /* counting: the top level is a leaf */
        return;
    }
    for (size_t idx = 0; idx < ncand; idx++) {
        if (walk_over(wk)) return;
        ng_index u = cand[idx];
        wk->chain[level] = u;
        if (wk->dest) {
            ng_index *dst =
                wk->dest[level] + wk->cursor[level]++ * (size_t)(level + 1);
            for (int r = 0; r <= level; r++) dst[r] = wk->chain[level - r];
        } else {
            wk->count[level]++;
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
    /* extension runs (4 B) and cofacet list starts (8 B) per simplex of
     * dimension 1..top − 1; the cofacet lists (k + 1 entries of 4 B per
     * k-simplex, k ≥ 2), and the facet positions they are made from while
     * they are being built (as much again, for the largest dimension) */
    size_t lists = 0, largest = 0;
    for (int k = 1; k < top_dim; k++) b += s->count[k] * 12;
    /* the latest facets: a byte per simplex of dimension ≥ 2 and
     * filtration */
    for (int k = 2; k <= top_dim; k++)
        b += s->count[k] * (size_t)n_filtrations;
    for (int k = 2; k <= top_dim; k++) {
        size_t bytes = s->count[k] * (size_t)(k + 1) * sizeof(uint32_t);
        lists += bytes;
        if (bytes > largest) largest = bytes;
    }
    s->bytes_build = b + lists + largest;
    /* degree 0: union-find (4 B a vertex), sorted edges and their sort
     * buffer (32 B), joining marks (4 B); degree k: sorted columns and sort
     * buffer (32 B), cleared marks (4 B), reducer records (16 B), the
     * apparent-pair pass's column index (4 B) and the pivots' values (8 B)
     * per k-simplex; per
     * (k+1)-simplex, pivots (4 B) and, when long columns go dense, ranks
     * (4 B), the sorted entries and their sort buffer (32 B) and the bit
     * set; the sort's counters (order.c: 2^16 + 1 of 8 B); the cache of
     * sorted coboundaries (reduce.c: 4 B per k-simplex and at most 64 MiB,
     * or, when that is less, twice — it grows by doubling — 16 B per entry
     * of all k-simplices' coboundaries, k + 2 per (k+1)-simplex, and a
     * header per k-simplex) */
    size_t sort_counters = ((size_t)1 << 16) * 8 + 8;
    size_t r = n * sizeof(uint32_t) + s->count[1] * 36 + sort_counters;
    for (int k = 1; k < top_dim; k++) {
        size_t cache =
            2 * 16 * (s->count[k + 1] * (size_t)(k + 2) + s->count[k]);
        if (cache > ((size_t)64 << 20)) cache = (size_t)64 << 20;
        size_t rk = s->count[k] * 68 + s->count[k + 1] * 41 + sort_counters +
                    cache;
        if (rk > r) r = rk;
    }
    s->bytes_reduce = r;
}

int ng_complex_estimate(const ng_csr *graph, int top_dim, int n_filtrations,
                        size_t max_total, int threads, ng_complex_size *out,
                        ng_error *err)
{
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
    /* vertices and edges are known from the graph: the walks may add the
     * rest (limit 0 is no cap, needed only when there are no edges) */
    size_t limit = 0, published = 0, edges = graph->offset[graph->n] / 2;
    int over = 0;
    if (max_total > 0) {
        if (graph->n > max_total || edges > max_total - graph->n) {
            over = 1;
            total[1] = edges;
        } else {
            limit = max_total - graph->n;
        }
    }
    long long nv = over ? 0 : (long long)graph->n;
#pragma omp parallel num_threads(nt)
    {
        walk wk;
        walk_init(&wk, graph, top_dim, scratch, maxdeg, omp_get_thread_num());
        wk.limit = limit;
        wk.published = &published;
#pragma omp for schedule(dynamic, 64)
        for (long long w = 0; w < nv; w++) {
            if (wk.stop) continue;
            walk_from(&wk, (ng_index)w);
            if (limit > 0) {
                size_t now = walk_total(&wk);
#pragma omp atomic update
                published += now - wk.mine;
                wk.mine = now;
                (void)walk_over(&wk);
            }
        }
#pragma omp critical(ng_complex_estimate)
        {
            for (int k = 1; k <= top_dim; k++) total[k] += wk.count[k];
            if (wk.stop) over = 1;
        }
    }
    ng_free(scratch);
    total[0] = graph->n;
    for (int k = 0; k <= top_dim; k++) {
        out->count[k] = total[k];
        out->total += total[k];
    }
    out->over = over || (max_total > 0 && out->total > max_total);
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

/* Position of the edge {x, w}, x < w < n, or NG_POS_NONE: the index of x
 * among the lower neighbours of w (the first ones of its sorted list), from
 * the start of w's edges. */
static uint32_t locate_edge(const ng_complex *c, ng_index x, ng_index w)
{
    const ng_index *a = c->nbr + c->offset[w];
    size_t lower = c->start[1][w + 1] - c->start[1][w];
    size_t at = count_below(a, lower, x);
    return at < lower && a[at] == x ? (uint32_t)(c->start[1][w] + at)
                                    : NG_POS_NONE;
}

uint32_t ng_complex_locate(const ng_complex *c, int k, const ng_index *v)
{
    if (k == 0) return v[0] < c->n ? v[0] : NG_POS_NONE;
    ng_index w = v[k];
    if (w >= c->n) return NG_POS_NONE;
    /* the edge {v[k-1], w}: w's lower neighbours are its edges of top w */
    uint32_t edge = locate_edge(c, v[k - 1], w);
    if (edge == NG_POS_NONE) return NG_POS_NONE;
    size_t pos = edge;
    /* then one lower vertex at a time, within the run of extensions */
    for (int d = 1; d < k; d++) {
        size_t lo = c->ext[d][pos], hi = c->ext[d][pos + 1];
        const ng_index *t = c->vert[d + 1];
        size_t stride = (size_t)d + 2;
        ng_index x = v[k - 1 - d];
        while (lo < hi) {
            size_t mid = lo + (hi - lo) / 2;
            if (t[mid * stride] < x)
                lo = mid + 1;
            else
                hi = mid;
        }
        if (lo == c->ext[d][pos + 1] || t[lo * stride] != x)
            return NG_POS_NONE;
        pos = lo;
    }
    return (uint32_t)pos;
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

void ng_cofacet_iter_init(ng_cofacet_iter *it, const ng_complex *c, int k,
                          uint32_t pos, const ng_index *v)
{
    it->c = c;
    it->k = k;
    it->v = v;
    it->list = it->list_end = NULL;
    if (k >= 1 && c->cof[k] != NULL) {
        it->list = c->cof[k] + c->cof_start[k][pos];
        it->list_end = c->cof[k] + c->cof_start[k][pos + 1];
        return;
    }
    /* walk the shortest neighbour list, merge-check the others */
    int a = 0;
    for (int i = 1; i <= k; i++)
        if (c->offset[v[i] + 1] - c->offset[v[i]] <
            c->offset[v[a] + 1] - c->offset[v[a]])
            a = i;
    it->a = a;
    for (int i = 0; i <= k; i++) {
        it->ptr[i] = c->offset[v[i]];
        it->end[i] = c->offset[v[i] + 1];
    }
    it->below = c->start[k + 1][v[k]];
    it->below_end = c->start[k + 1][v[k] + 1];
}

uint32_t ng_cofacet_iter_next(ng_cofacet_iter *it)
{
    if (it->list != NULL)
        return it->list < it->list_end ? *it->list++ : NG_POS_NONE;
    const ng_complex *c = it->c;
    const ng_index *v = it->v;
    int k = it->k, a = it->a;
    ng_index tup[NG_COMPLEX_MAX_DIM + 2];
    while (it->ptr[a] < it->end[a]) {
        ng_index w = c->nbr[it->ptr[a]++];
        int common = 1;
        for (int i = 0; i <= k && common; i++) {
            if (i == a) continue;
            while (it->ptr[i] < it->end[i] && c->nbr[it->ptr[i]] < w)
                it->ptr[i]++;
            if (it->ptr[i] == it->end[i]) { /* no later w is common */
                it->ptr[a] = it->end[a];
                return NG_POS_NONE;
            }
            common = c->nbr[it->ptr[i]] == w;
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
            pos = gallop_bucket(c, k + 1, tup, it->below, it->below_end);
            if (pos != NG_POS_NONE) it->below = (size_t)pos + 1;
        } else {
            pos = ng_complex_locate(c, k + 1, tup);
        }
        if (pos != NG_POS_NONE) return pos;
    }
    return NG_POS_NONE;
}

size_t ng_complex_cofacets(const ng_complex *c, int k, uint32_t pos,
                           uint32_t *restrict out)
{
    ng_cofacet_iter it;
    ng_cofacet_iter_init(&it, c, k, pos,
                         c->vert[k] + (size_t)pos * (size_t)(k + 1));
    size_t m = 0;
    for (uint32_t q; (q = ng_cofacet_iter_next(&it)) != NG_POS_NONE;)
        out[m++] = q;
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
        ng_free(c->latest[k]);
    }
    for (int k = 0; k < NG_COMPLEX_MAX_DIM; k++) {
        ng_free(c->ext[k]);
        ng_free(c->cof_start[k]);
        ng_free(c->cof[k]);
    }
    ng_free(c->within);
    ng_free(c);
}

/* The lower-extension runs of complex_internal.h, by one merge of each
 * (k+1)-table (its simplices minus their lowest vertex, in order) with the
 * k-table. Returns 1, or 0 when out of memory. */
static int build_extensions(ng_complex *c)
{
    for (int k = 1; k < c->top_dim; k++) {
        uint32_t *ext = ng_calloc(c->count[k] + 1, sizeof *ext);
        if (ext == NULL) return 0;
        c->ext[k] = ext;
        const ng_index *up = c->vert[k + 1], *here = c->vert[k];
        size_t q = 0, m = (size_t)k + 1;
        for (size_t p = 0; p < c->count[k + 1]; p++) {
            const ng_index *rho = up + p * (m + 1) + 1;
            while (memcmp(here + q * m, rho, m * sizeof *rho) != 0) q++;
            ext[q + 1]++;
        }
        for (size_t i = 0; i < c->count[k]; i++) ext[i + 1] += ext[i];
    }
    return 1;
}

/* The cofacet lists of the (k−1)-simplices from the facet positions of the
 * k-simplices (facets: count[k] × (k + 1)): a counting sort, filled in
 * increasing cofacet position so that every list comes out sorted. Returns
 * 1, or 0 when out of memory. */
static int build_cofacets(ng_complex *c, int k, const uint32_t *facets)
{
    size_t below = c->count[k - 1], cnt = c->count[k], m = (size_t)k + 1;
    size_t *start = ng_calloc(below + 1, sizeof *start);
    uint32_t *list = ng_malloc(cnt, m * sizeof *list);
    if (start == NULL || list == NULL) {
        ng_free(start);
        ng_free(list);
        return 0;
    }
    for (size_t i = 0; i < cnt * m; i++) start[facets[i] + 1]++;
    for (size_t f = 0; f < below; f++) start[f + 1] += start[f];
    for (size_t p = 0; p < cnt; p++)
        for (size_t r = 0; r < m; r++)
            list[start[facets[p * m + r]]++] = (uint32_t)p;
    for (size_t f = below; f > 0; f--) start[f] = start[f - 1];
    start[0] = 0;
    c->cof_start[k - 1] = start;
    c->cof[k - 1] = list;
    return 1;
}

/* Notes in latest[j * count[k] + p], for each filtration j, which facet of
 * the k-simplex p is its latest: the index of the vertex that it leaves
 * out (complex_internal.h), from the facets' positions f[0..k]. */
static void note_latest(const ng_complex *c, int k, size_t p,
                        const uint32_t *f, uint8_t *latest)
{
    size_t below = c->count[k - 1];
    for (int j = 0; j < c->n_filtrations; j++) {
        const double *fv = c->value[k - 1] + (size_t)j * below;
        int best = 0;
        for (int s = 1; s <= k; s++) {
            double a = fv[f[s]], b = fv[f[best]];
            if (a > b || (a == b && f[s] > f[best])) best = s;
        }
        latest[(size_t)j * c->count[k] + p] = (uint8_t)best;
    }
}

/* Values of the k-simplices (k ≥ 1) in parallel: one callback per simplex,
 * raised to the max over facets. Returns NG_OK or the first failure in
 * position order (so the message does not depend on the schedule). */
/* Progress of the value pass: base + span · (simplices done / total). */
typedef struct value_progress {
    double base, span, total;
    long long done; /* shared, updated atomically */
} value_progress;

#define VALUE_PROGRESS_STEP 4096

static int compute_values(ng_complex *c, int k, const ng_complex_spec *spec,
                          int nt, value_progress *vp, uint32_t *facets,
                          ng_error *err)
{
    int L = c->n_filtrations;
    size_t cnt = c->count[k], below = c->count[k - 1];
    double *scratch = ng_malloc((size_t)nt, (size_t)L * sizeof(double));
    uint8_t *latest = k >= 2 ? ng_malloc(cnt ? cnt : 1, (size_t)L) : NULL;
    if (scratch == NULL || (k >= 2 && latest == NULL)) {
        ng_free(scratch);
        ng_free(latest);
        return ng_error_set(err, NG_ERR_NOMEM,
                            "complex: out of memory for simplex values");
    }
    c->latest[k] = latest;
    size_t bad_pos = SIZE_MAX;
    int bad_status = 0, bad_nan = 0;
    long long total = (long long)cnt;
#pragma omp parallel num_threads(nt)
    {
        double *val = scratch + (size_t)omp_get_thread_num() * (size_t)L;
        long long mine = 0;
#pragma omp for schedule(dynamic, 256)
        for (long long p = 0; p < total; p++) {
            if (spec->progress && ++mine == VALUE_PROGRESS_STEP) {
                long long done;
#pragma omp atomic capture
                done = vp->done += mine;
                mine = 0;
                /* the calling thread is thread 0 of the team */
                if (omp_get_thread_num() == 0 && vp->total > 0.0)
                    spec->progress("simplices",
                                   vp->base + vp->span * (double)done /
                                                  vp->total,
                                   spec->progress_ctx);
            }
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
                if (facets) facets[(size_t)p * (size_t)(k + 1) + (size_t)skip] = f;
                for (int j = 0; j < L; j++) {
                    double fv = c->value[k - 1][(size_t)j * below + f];
                    if (fv > val[j]) val[j] = fv;
                }
            }
            for (int j = 0; j < L; j++)
                c->value[k][(size_t)j * cnt + (size_t)p] = val[j];
            if (latest) /* k ≥ 2, so facets holds the facet positions */
                note_latest(c, k, (size_t)p,
                            facets + (size_t)p * (size_t)(k + 1), latest);
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
    if (!build_extensions(c)) goto nomem;
    if (spec->progress) spec->progress("simplices", 0.05, spec->progress_ctx);

    /* values, dimension by dimension (facets first) */
    for (int j = 0; j < L; j++)
        for (size_t i = 0; i < n; i++)
            c->value[0][(size_t)j * n + i] =
                spec->vertex_values[i * (size_t)L + (size_t)j];
    /* progress: the walks are about a tenth of the time, the values the
     * rest (common practice for an estimate, not measured per case) */
    value_progress vp = {0.1, 0.9, 0.0, 0};
    for (int k = 1; k <= top; k++) vp.total += (double)c->count[k];
    if (spec->progress) spec->progress("simplices", 0.1, spec->progress_ctx);
    for (int k = 1; k <= top; k++) {
        uint32_t *facets = NULL;
        if (k >= 2) {
            facets = ng_malloc(c->count[k], (size_t)(k + 1) * sizeof *facets);
            if (facets == NULL) goto nomem;
        }
        status = compute_values(c, k, spec, nt, &vp, facets, err);
        if (status == NG_OK && facets && !build_cofacets(c, k, facets)) {
            ng_free(facets);
            goto nomem;
        }
        ng_free(facets);
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
