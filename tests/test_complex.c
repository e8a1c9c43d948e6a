/* test_complex.c — the clique set and its values (complex.h).
 *
 * References computed here from scratch: the combinatorial number system
 * against its definition (keys of all m-subsets of {0..n−1} in
 * colexicographic order are exactly 0, 1, …, C(n, m) − 1: the classical
 * bijection, Knuth, TAOCP 4A §7.2.1.3); cliques against an exhaustive
 * search over vertex subsets of random graphs; cofacets against the list
 * of every vertex adjacent to all of a simplex; the size estimate against
 * the stored counts; monotone values against max(callback, facets).
 */
#include "nervegap/complex.h"

#include "alloc.h"
#include "complex_internal.h"
#include "splitmix.h"

#include <check.h>
#include <math.h>
#include <pthread.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* ---- random numbers and graphs ---- */

static uint64_t rng_state;

static uint64_t rng_next(void) { return ng_splitmix_next(&rng_state); }

static double rng_uniform(void) { return ng_splitmix_uniform(&rng_state); }

/* Random graph on n vertices, each pair an edge with probability p; adj
 * is n × n (caller frees), g its CSR form (caller frees with csr_release). */
static void random_graph(size_t n, double p, unsigned char **adj_out,
                         ng_csr *g)
{
    unsigned char *adj = calloc(n * n, 1);
    ck_assert_ptr_nonnull(adj);
    for (size_t i = 0; i < n; i++)
        for (size_t j = i + 1; j < n; j++)
            if (rng_uniform() < p) adj[i * n + j] = adj[j * n + i] = 1;
    g->n = n;
    g->offset = malloc((n + 1) * sizeof *g->offset);
    g->nbr = malloc((n * n + 1) * sizeof *g->nbr);
    g->dist = NULL;
    ck_assert_ptr_nonnull(g->offset);
    ck_assert_ptr_nonnull(g->nbr);
    size_t e = 0;
    for (size_t i = 0; i < n; i++) {
        g->offset[i] = e;
        for (size_t j = 0; j < n; j++)
            if (adj[i * n + j]) g->nbr[e++] = (ng_index)j;
    }
    g->offset[n] = e;
    *adj_out = adj;
}

static void csr_release(ng_csr *g)
{
    free(g->offset);
    free(g->nbr);
}

/* ---- a value callback: a pseudo-random value per simplex and filtration,
 * deliberately NOT monotone, counting its calls ---- */

typedef struct counting_ctx {
    int L;
    atomic_long calls;
    int fail_at_size; /* return an error for simplices of this size */
    int nan_at_size;  /* write NaN for simplices of this size */
    int inf_at_size;  /* write +inf for simplices of this size */
} counting_ctx;

static double hash_value(const ng_index *v, int m, int j)
{
    uint64_t h = 0x12345u + (uint64_t)j * 0x9E37u;
    for (int i = 0; i < m; i++) h = (h ^ v[i]) * 0x100000001B3u;
    h ^= h >> 29;
    h *= 0xBF58476D1CE4E5B9u;
    h ^= h >> 31;
    return (double)(h >> 11) * 0x1.0p-53;
}

static int counting_value(const ng_index *v, int m, double *out, void *ctx)
{
    counting_ctx *cc = ctx;
    atomic_fetch_add(&cc->calls, 1);
    for (int i = 1; i < m; i++) ck_assert_uint_lt(v[i - 1], v[i]);
    if (m == cc->fail_at_size) return NG_ERR_IO;
    for (int j = 0; j < cc->L; j++)
        out[j] = m == cc->nan_at_size   ? NAN
                 : m == cc->inf_at_size ? INFINITY
                                        : hash_value(v, m, j);
    return 0;
}

/* ---- brute force ---- */

/* Reference key: Σ C(v_i, i+1) by Pascal's triangle (v < 64, m ≤ 6). */
static uint64_t ref_key(const ng_index *v, int m)
{
    static uint64_t pascal[65][7];
    if (pascal[0][0] == 0)
        for (int a = 0; a <= 64; a++)
            for (int b = 0; b <= 6; b++)
                pascal[a][b] = b == 0 ? 1
                               : a == 0 ? 0
                                        : pascal[a - 1][b - 1] + pascal[a - 1][b];
    uint64_t k = 0;
    for (int i = 0; i < m; i++) k += pascal[v[i]][i + 1];
    return k;
}

static int is_clique(const unsigned char *adj, size_t n, const ng_index *v,
                     int m)
{
    for (int a = 0; a < m; a++)
        for (int b = a + 1; b < m; b++)
            if (!adj[v[a] * n + v[b]]) return 0;
    return 1;
}

/* All cliques of m vertices in colexicographic order (the m-subsets are
 * generated in colex order, which is key order). Returns their number and
 * writes them to out (room for cap × m). */
static size_t brute_cliques(const unsigned char *adj, size_t n, int m,
                            ng_index *out, size_t cap)
{
    ng_index v[8];
    size_t cnt = 0;
    for (int i = 0; i < m; i++) v[i] = (ng_index)i;
    if ((size_t)m > n) return 0;
    for (;;) {
        if (is_clique(adj, n, v, m)) {
            ck_assert_uint_lt(cnt, cap);
            memcpy(out + cnt * (size_t)m, v, (size_t)m * sizeof *v);
            cnt++;
        }
        /* next subset in colex order: raise the lowest v_i that can move */
        int i = 0;
        while (i < m - 1 && v[i] + 1 == v[i + 1]) i++;
        if (i == m - 1 && v[i] + 1 == n) break;
        v[i]++;
        for (int r = 0; r < i; r++) v[r] = (ng_index)r;
    }
    return cnt;
}

/* ---- combinatorial number system ---- */

START_TEST(test_key_bijection)
{
    /* all m-subsets of {0..n-1} in colex order get keys 0, 1, 2, ... */
    size_t n = 13;
    unsigned char *adj = malloc(n * n);
    memset(adj, 1, n * n);
    ng_index *all = malloc(2000 * 6 * sizeof *all);
    for (int m = 1; m <= 6; m++) {
        size_t cnt = brute_cliques(adj, n, m, all, 2000);
        for (size_t s = 0; s < cnt; s++) {
            ng_simplex_key key = ng_simplex_key_encode(all + s * (size_t)m, m);
            ck_assert(key == (ng_simplex_key)s);
            ng_index back[6];
            ng_simplex_key_decode(key, m, back);
            ck_assert_mem_eq(back, all + s * (size_t)m, (size_t)m * sizeof *back);
        }
    }
    free(all);
    free(adj);
}
END_TEST

START_TEST(test_key_round_trip_large)
{
    rng_state = 7;
    for (int m = 1; m <= 6; m++) {
        /* the largest vertex count whose keys fit, by doubling */
        uint64_t n = 8;
        while (n < ((uint64_t)1 << 32) && ng_simplex_key_fits(2 * n, m)) n *= 2;
        ck_assert(ng_simplex_key_fits(n, m));
        if (n > NG_INDEX_MAX) n = (uint64_t)NG_INDEX_MAX + 1;
        for (int t = 0; t < 2000; t++) {
            ng_index v[6];
            for (;;) { /* m distinct sorted vertices below n */
                for (int i = 0; i < m; i++) v[i] = (ng_index)(rng_next() % n);
                if (t % 3 == 0) v[m - 1] = (ng_index)(n - 1 - (uint64_t)(t % 2));
                for (int i = 1; i < m; i++)
                    for (int r = i; r > 0 && v[r - 1] > v[r]; r--) {
                        ng_index x = v[r];
                        v[r] = v[r - 1];
                        v[r - 1] = x;
                    }
                int ok = 1;
                for (int i = 1; i < m; i++) ok &= v[i] != v[i - 1];
                if (ok) break;
            }
            ng_simplex_key key = ng_simplex_key_encode(v, m);
            ng_index back[6];
            ng_simplex_key_decode(key, m, back);
            ck_assert_mem_eq(back, v, (size_t)m * sizeof *v);
            if (v[m - 1] < 64) ck_assert(key == (ng_simplex_key)ref_key(v, m));
        }
    }
    /* C(2^32, 6) needs about 182 bits: refused; C(2^32, 2) fits */
    ck_assert_int_eq(ng_simplex_key_fits((uint64_t)1 << 32, 6), 0);
    ck_assert_int_eq(ng_simplex_key_fits((uint64_t)1 << 32, 2), 1);
}
END_TEST

/* ---- cliques, cofacets, estimate, values ---- */

static void check_one_graph(size_t n, double p, int top, int L, int threads)
{
    unsigned char *adj;
    ng_csr g;
    random_graph(n, p, &adj, &g);
    double *vv = malloc(n * (size_t)L * sizeof *vv);
    for (size_t i = 0; i < n * (size_t)L; i++) vv[i] = rng_uniform();
    counting_ctx cc = {.L = L};
    ng_complex_spec spec = {&g, top, L, vv, 0.5, counting_value, &cc, threads, NULL, NULL};
    ng_error err;
    ng_error_clear(&err);
    ng_complex_size size;
    ck_assert_int_eq(ng_complex_estimate(&g, top, L, 0, threads, &size, &err), NG_OK);
    ng_complex *c;
    ck_assert_int_eq(ng_complex_build(&spec, &c, &err), NG_OK);

    size_t cap = 200000;
    ng_index *ref = malloc(cap * 6 * sizeof *ref);
    long higher = 0;
    for (int k = 0; k <= top; k++) {
        size_t cnt = brute_cliques(adj, n, k + 1, ref, cap);
        ck_assert_uint_eq(ng_complex_count(c, k), cnt);
        ck_assert_uint_eq(size.count[k], cnt);
        if (k >= 1) higher += (long)cnt;
        const ng_index *vert = ng_complex_vertices(c, k);
        ck_assert_mem_eq(vert, ref, cnt * (size_t)(k + 1) * sizeof *ref);
        for (size_t s = 0; s < cnt; s++) {
            const ng_index *v = vert + s * (size_t)(k + 1);
            ck_assert(ng_complex_key(c, k, s) == (ng_simplex_key)ref_key(v, k + 1));
            if (s > 0) ck_assert(ng_complex_key(c, k, s - 1) < ng_complex_key(c, k, s));
            /* find, with the vertices reversed */
            ng_index rev[6];
            for (int i = 0; i <= k; i++) rev[i] = v[k - i];
            ck_assert_uint_eq(ng_complex_find(c, rev, k + 1), s);
            /* values: max(callback, facets), per filtration; for k ≥ 2
             * the latest facet, the one of largest (value, position), by
             * the vertex it leaves out */
            for (int j = 0; j < L; j++) {
                double want = k == 0 ? vv[v[0] * (size_t)L + (size_t)j]
                                     : hash_value(v, k + 1, j);
                int latest = -1;
                double latest_value = 0;
                size_t latest_pos = 0;
                for (int skip = 0; skip <= k && k >= 1; skip++) {
                    ng_index f[6];
                    int r = 0;
                    for (int i = 0; i <= k; i++)
                        if (i != skip) f[r++] = v[i];
                    size_t fp = ng_complex_find(c, f, k);
                    ck_assert_uint_ne(fp, SIZE_MAX);
                    double fv = ng_complex_values(c, k - 1, j)[fp];
                    if (fv > want) want = fv;
                    if (latest < 0 || fv > latest_value ||
                        (fv == latest_value && fp > latest_pos)) {
                        latest = skip;
                        latest_value = fv;
                        latest_pos = fp;
                    }
                }
                ck_assert(ng_complex_values(c, k, j)[s] == want);
                if (k >= 2)
                    ck_assert_int_eq(c->latest[k][(size_t)j * cnt + s], latest);
            }
            /* cofacets against every common neighbour */
            if (k < top) {
                uint32_t cof[64];
                size_t m = ng_complex_cofacets(c, k, (uint32_t)s, cof);
                size_t want_m = 0;
                for (ng_index w = 0; w < n; w++) {
                    int common = 1;
                    for (int i = 0; i <= k; i++)
                        common &= v[i] != w && adj[v[i] * n + w];
                    if (!common) continue;
                    ng_index t[7];
                    int r = 0, q = 0;
                    while (q <= k && v[q] < w) t[r++] = v[q++];
                    t[r++] = w;
                    while (q <= k) t[r++] = v[q++];
                    ck_assert_uint_lt(want_m, m);
                    const ng_index *got = ng_complex_vertices(c, k + 1) +
                                          (size_t)cof[want_m] * (size_t)(k + 2);
                    ck_assert_mem_eq(got, t, (size_t)(k + 2) * sizeof *t);
                    want_m++;
                }
                ck_assert_uint_eq(m, want_m);
            }
        }
        for (int j = 0; j < L; j++) {
            size_t within = 0;
            for (size_t s = 0; s < cnt; s++)
                within += ng_complex_values(c, k, j)[s] <= 0.5;
            ck_assert_uint_eq(ng_complex_count_within(c, k, j), within);
        }
    }
    /* the byte estimate covers at least the stored tables */
    size_t tables = 0;
    for (int k = 0; k <= top; k++)
        tables += size.count[k] * ((size_t)(k + 1) * sizeof(ng_index) +
                                   (size_t)L * sizeof(double));
    ck_assert_uint_ge(size.bytes_build, tables);
    ck_assert_uint_gt(size.bytes_reduce, 0);
    /* exactly one callback per simplex of dimension >= 1 */
    ck_assert_int_eq(atomic_load(&cc.calls), higher);
    /* a non-simplex is not found */
    if (n >= 3 && !adj[0 * n + 1]) {
        ng_index e[2] = {0, 1};
        ck_assert_uint_eq(ng_complex_find(c, e, 2), SIZE_MAX);
    }
    ng_complex_free(c);
    free(ref);
    free(vv);
    free(adj);
    csr_release(&g);
}

START_TEST(test_cliques_random)
{
    rng_state = 1000 + (uint64_t)_i;
    for (int rep = 0; rep < 20; rep++) {
        size_t n = 1 + rng_next() % 22;
        double p = 0.15 + 0.7 * rng_uniform();
        int top = 1 + (int)(rng_next() % 5);
        int L = 1 + (int)(rng_next() % 3);
        check_one_graph(n, p, top, L, 1 + (rep % 2));
    }
}
END_TEST

START_TEST(test_complete_graph)
{
    rng_state = 5;
    check_one_graph(14, 1.0, 5, 2, 2); /* every subset up to 6 vertices */
    check_one_graph(9, 0.0, 3, 1, 2);  /* no edges: vertices only */
}
END_TEST

/* Progress of the build: stage "simplices", fractions in (0, 1),
 * non-decreasing, from the calling thread only. */
typedef struct progress_log {
    int calls, bad_stage, decreasing, out_of_range;
    double last;
    pthread_t caller;
    int other_thread;
} progress_log;

static void log_progress(const char *stage, double f, void *ctx)
{
    progress_log *log = ctx;
    log->calls++;
    log->bad_stage += strcmp(stage, "simplices") != 0;
    log->decreasing += f < log->last;
    log->out_of_range += !(f > 0.0 && f < 1.0);
    log->other_thread += !pthread_equal(pthread_self(), log->caller);
    log->last = f;
}

START_TEST(test_progress)
{
    rng_state = 11;
    unsigned char *adj;
    ng_csr g;
    random_graph(60, 0.6, &adj, &g);
    double vv[60] = {0};
    counting_ctx cc = {.L = 1};
    progress_log log = {0};
    log.caller = pthread_self();
    ng_complex_spec spec = {&g, 3, 1, vv, 1.0, counting_value, &cc, 2,
                            log_progress, &log};
    ng_error err;
    ng_error_clear(&err);
    ng_complex *c;
    ck_assert_int_eq(ng_complex_build(&spec, &c, &err), NG_OK);
    size_t valued = 0;
    for (int k = 1; k <= 3; k++) valued += ng_complex_count(c, k);
    ck_assert_uint_gt(valued, 20000); /* several progress steps */
    ck_assert_int_ge(log.calls, 3);
    ck_assert_int_eq(log.bad_stage, 0);
    ck_assert_int_eq(log.decreasing, 0);
    ck_assert_int_eq(log.out_of_range, 0);
    ck_assert_int_eq(log.other_thread, 0);
    ng_complex_free(c);
    csr_release(&g);
    free(adj);
}
END_TEST

START_TEST(test_errors)
{
    rng_state = 99;
    unsigned char *adj;
    ng_csr g;
    random_graph(10, 0.5, &adj, &g);
    double vv[10] = {0};
    counting_ctx cc = {.L = 1};
    ng_complex_spec spec = {&g, 2, 1, vv, 1.0, counting_value, &cc, 1, NULL, NULL};
    ng_error err;
    ng_complex *c = (ng_complex *)1;

    /* a failing callback: its code is passed on */
    cc.fail_at_size = 3;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_complex_build(&spec, &c, &err), NG_ERR_IO);
    ck_assert_ptr_null(c);
    ck_assert(strstr(err.message, "simplex {") != NULL);
    cc.fail_at_size = 0;

    /* NaN from the callback */
    cc.nan_at_size = 2;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_complex_build(&spec, &c, &err), NG_ERR_INPUT);
    cc.nan_at_size = 0;

    /* +inf means never, even under an infinite scale limit */
    cc.inf_at_size = 3;
    spec.scale_limit = INFINITY;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_complex_build(&spec, &c, &err), NG_OK);
    ck_assert_uint_gt(ng_complex_count(c, 2), 0);
    ck_assert_uint_eq(ng_complex_count_within(c, 2, 0), 0);
    ck_assert_uint_eq(ng_complex_count_within(c, 1, 0), ng_complex_count(c, 1));
    ng_complex_free(c);
    cc.inf_at_size = 0;
    spec.scale_limit = 1.0;

    /* bad arguments */
    spec.top_dim = 6;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_complex_build(&spec, &c, &err), NG_ERR_USAGE);
    spec.top_dim = 2;

    /* an asymmetric graph: drop the last neighbour of the last vertex
     * that has one */
    size_t i = g.n;
    while (i-- > 0 && g.offset[i + 1] == g.offset[i]) {}
    for (size_t r = i + 1; r <= g.n; r++) g.offset[r]--;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_complex_build(&spec, &c, &err), NG_ERR_INPUT);
    ck_assert(strstr(err.message, "symmetric") != NULL);
    ng_complex_size sz;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_complex_estimate(&g, 2, 1, 0, 1, &sz, &err), NG_ERR_INPUT);
    ck_assert_uint_eq(sz.total, 0);
    free(adj);
    csr_release(&g);
    ng_complex_free(NULL);
}
END_TEST

/* Symmetry: removing either direction of any one edge of a symmetric graph
 * is found, whichever list loses it (the first, a middle or the last). */
START_TEST(test_asymmetric_anywhere)
{
    rng_state = 1234 + (unsigned long long)_i;
    unsigned char *adj;
    ng_csr g;
    random_graph(14, 0.4, &adj, &g);
    size_t edges = g.offset[g.n];
    ck_assert_uint_gt(edges, 0);
    size_t drop = (size_t)(rng_uniform() * (double)edges);
    if (_i == 0) drop = 0;
    if (_i == 1) drop = edges - 1;
    ng_csr h = {g.n, malloc((g.n + 1) * sizeof(size_t)),
                malloc(edges * sizeof(ng_index)), NULL};
    size_t e = 0;
    for (size_t i = 0; i < g.n; i++) {
        h.offset[i] = e;
        for (size_t q = g.offset[i]; q < g.offset[i + 1]; q++)
            if (q != drop) h.nbr[e++] = g.nbr[q];
    }
    h.offset[g.n] = e;
    ng_complex_size sz;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_complex_estimate(&g, 2, 1, 0, 1, &sz, &err), NG_OK);
    ng_error_clear(&err);
    ck_assert_int_eq(ng_complex_estimate(&h, 2, 1, 0, 1, &sz, &err),
                     NG_ERR_INPUT);
    ck_assert(strstr(err.message, "symmetric") != NULL);
    free(adj);
    csr_release(&g);
    csr_release(&h);
}
END_TEST

/* The capped count on a complete graph on 60 vertices, which has
 * C(60, k+1) k-simplices (binomial coefficients: elementary); up to
 * dimension 4 that is 1770 + 34220 + 487635 + 5461512 simplices of
 * dimension ≥ 1. A cap at or above the total changes nothing; a cap below
 * it stops the count early, past the cap. */
START_TEST(test_estimate_cap_complete)
{
    rng_state = 8;
    unsigned char *adj;
    ng_csr g;
    random_graph(60, 1.0, &adj, &g);
    ng_complex_size full, capped;
    ng_error err;
    ng_error_clear(&err);
    size_t total = 60 + 1770 + 34220 + 487635 + 5461512;
    ck_assert_int_eq(ng_complex_estimate(&g, 4, 1, total, 2, &full, &err),
                     NG_OK);
    ck_assert(!full.over);
    ck_assert_uint_eq(full.count[1], 1770);
    ck_assert_uint_eq(full.count[2], 34220);
    ck_assert_uint_eq(full.count[3], 487635);
    ck_assert_uint_eq(full.count[4], 5461512);
    ck_assert_uint_eq(full.total, total);
    for (int threads = 1; threads <= 2; threads++) {
        ck_assert_int_eq(ng_complex_estimate(&g, 4, 1, 10000, threads,
                                             &capped, &err), NG_OK);
        ck_assert(capped.over);
        ck_assert_uint_gt(capped.total, 10000);
        ck_assert_uint_lt(capped.total, full.total / 100);
    }
    free(adj);
    csr_release(&g);
}
END_TEST

/* The capped count: at a cap of the exact total or more it is exact and not
 * over; below it, it reports over with a partial total above the cap. */
START_TEST(test_estimate_cap)
{
    rng_state = 555 + (unsigned long long)_i;
    unsigned char *adj;
    ng_csr g;
    random_graph(60, 0.35, &adj, &g);
    int top = 2 + _i % 3, threads = 1 + _i % 2;
    ng_complex_size exact, capped;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_complex_estimate(&g, top, 1, 0, threads, &exact,
                                         &err), NG_OK);
    ck_assert(!exact.over);
    size_t caps[] = {exact.total, exact.total + 1, exact.total - 1,
                     exact.total / 3, g.n, 1};
    for (size_t c = 0; c < sizeof caps / sizeof caps[0]; c++) {
        ck_assert_int_eq(ng_complex_estimate(&g, top, 1, caps[c], threads,
                                             &capped, &err), NG_OK);
        if (caps[c] >= exact.total) {
            ck_assert(!capped.over);
            for (int k = 0; k <= top; k++)
                ck_assert_uint_eq(capped.count[k], exact.count[k]);
        } else {
            ck_assert(capped.over);
            ck_assert_uint_gt(capped.total, caps[c]);
            ck_assert_uint_le(capped.total, exact.total);
        }
    }
    free(adj);
    csr_release(&g);
}
END_TEST

START_TEST(test_allocation_failures)
{
    rng_state = 3;
    unsigned char *adj;
    ng_csr g;
    random_graph(12, 0.6, &adj, &g);
    double vv[24] = {0};
    counting_ctx cc = {.L = 2};
    ng_complex_spec spec = {&g, 3, 2, vv, 1.0, counting_value, &cc, 2, NULL, NULL};
    int succeeded = 0;
    for (long after = 0; after < 200 && !succeeded; after++) {
        ng_error err;
        ng_error_clear(&err);
        ng_complex *c = NULL;
        ng_alloc_fail_after(after);
        int st = ng_complex_build(&spec, &c, &err);
        ng_alloc_fail_after(-1);
        if (st == NG_OK) {
            succeeded = 1;
            ng_complex_free(c);
        } else {
            ck_assert_int_eq(st, NG_ERR_NOMEM);
            ck_assert_ptr_null(c);
        }
    }
    ck_assert(succeeded);
    free(adj);
    csr_release(&g);
}
END_TEST

static Suite *complex_suite(void)
{
    Suite *s = suite_create("complex");
    TCase *tc = tcase_create("core");
    tcase_add_test(tc, test_key_bijection);
    tcase_add_test(tc, test_key_round_trip_large);
    tcase_add_loop_test(tc, test_cliques_random, 0, 10);
    tcase_add_test(tc, test_complete_graph);
    tcase_add_test(tc, test_progress);
    tcase_add_test(tc, test_errors);
    tcase_add_loop_test(tc, test_asymmetric_anywhere, 0, 20);
    tcase_add_loop_test(tc, test_estimate_cap, 0, 6);
    tcase_add_test(tc, test_estimate_cap_complete);
    tcase_add_test(tc, test_allocation_failures);
    suite_add_tcase(s, tc);
    return s;
}

int main(void)
{
    SRunner *sr = srunner_create(complex_suite());
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
