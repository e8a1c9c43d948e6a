/* test_reduce.c — barcodes by the reduction engine (persistence.h).
 *
 * 1. Against a textbook reduction written here: all simplices of the
 *    complex (cliques found by a brute-force search), sorted by the same
 *    total order (value, dimension, combinatorial index), an explicit
 *    boundary matrix, the standard left-to-right column algorithm (no
 *    clearing, no cohomology, no shortcut). The persistence pairing of a
 *    total order is unique (Edelsbrunner, Letscher, Zomorodian 2002) and
 *    cohomology pairs the same simplices (de Silva, Morozov,
 *    Vejdemo-Johansson 2011), so bars AND their birth and death simplices
 *    must agree exactly. Random clouds of up to 40 points in 2-D and 3-D,
 *    some on a coarse grid (ties everywhere), neighbour graph = pairs
 *    within a random radius, three filtrations at once: flag (Rips-like),
 *    a non-flag Čech-like one and the slice max(flag, cechlike / λ).
 * 2. Classical topology: a circle has one long degree-1 bar, a 2-sphere one
 *    long degree-2 bar, a torus Betti numbers 1, 2, 1 over a range of
 *    scales (Rips filtration, edge value d/2).
 * 3. Determinism: 1 and 2 threads give identical complexes and barcodes,
 *    and so do the dense form of the long columns, forced on every column,
 *    and the reduction with no cache of sorted coboundaries or a small one
 *    (reduce_internal.h).
 */
#include "nervegap/persistence.h"

#include "alloc.h"
#include "reduce_internal.h"
#include "splitmix.h"

#include <check.h>
#include <math.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define MAXV (NG_COMPLEX_MAX_DIM + 1)
#define NG_TEST_PI 3.14159265358979323846

static uint64_t rng_state;

static uint64_t rng_next(void) { return ng_splitmix_next(&rng_state); }

static double rng_uniform(void) { return ng_splitmix_uniform(&rng_state); }

/* ---- a point cloud and its three filtrations ---- */

typedef struct cloud {
    size_t n, dim;
    double *pts;
    double *birth;     /* vertex births */
    double lambda;     /* slice enlargement */
    double inc_scale;  /* Čech-like increments in [0, inc_scale) */
    uint64_t salt;
    int L;             /* 1: flag only; 3: flag, cechlike, slice */
    atomic_long calls;
} cloud;

static double dist(const cloud *cl, ng_index a, ng_index b)
{
    double s = 0;
    for (size_t t = 0; t < cl->dim; t++) {
        double d = cl->pts[a * cl->dim + t] - cl->pts[b * cl->dim + t];
        s += d * d;
    }
    return sqrt(s);
}

static double flag_value(const cloud *cl, const ng_index *v, int m)
{
    double x = 0;
    for (int a = 0; a < m; a++) {
        if (cl->birth[v[a]] > x) x = cl->birth[v[a]];
        for (int b = a + 1; b < m; b++) {
            double e = dist(cl, v[a], v[b]) / 2;
            if (e > x) x = e;
        }
    }
    return x;
}

/* A random non-negative increment per simplex, zero about a third of the
 * time (ties). */
static double increment(const cloud *cl, const ng_index *v, int m)
{
    uint64_t h = cl->salt;
    for (int i = 0; i < m; i++) h = (h ^ v[i]) * 0x100000001B3u;
    h ^= h >> 29;
    h *= 0xBF58476D1CE4E5B9u;
    h ^= h >> 31;
    double u = (double)(h >> 11) * 0x1.0p-53;
    return u < 0.33 ? 0.0 : cl->inc_scale * u;
}

/* Non-flag: a simplex of ≥ 3 vertices gets its max over facets plus an
 * increment; vertices and edges as in the flag filtration. */
static double cechlike_value(const cloud *cl, const ng_index *v, int m)
{
    if (m <= 2) return flag_value(cl, v, m);
    double x = 0;
    ng_index f[MAXV];
    for (int skip = 0; skip < m; skip++) {
        int r = 0;
        for (int i = 0; i < m; i++)
            if (i != skip) f[r++] = v[i];
        double y = cechlike_value(cl, f, m - 1);
        if (y > x) x = y;
    }
    return x + increment(cl, v, m);
}

static void all_values(const cloud *cl, const ng_index *v, int m, double *out)
{
    out[0] = flag_value(cl, v, m);
    if (cl->L == 1) return;
    out[1] = cechlike_value(cl, v, m);
    double s = out[1] / cl->lambda;
    out[2] = s > out[0] ? s : out[0];
}

static int cloud_callback(const ng_index *v, int m, double *out, void *ctx)
{
    cloud *cl = ctx;
    atomic_fetch_add(&cl->calls, 1);
    all_values(cl, v, m, out);
    return 0;
}

/* Neighbour graph: pairs at distance ≤ radius (caller frees). */
static ng_csr radius_graph(const cloud *cl, double radius)
{
    ng_csr g;
    size_t n = cl->n;
    g.n = n;
    g.offset = malloc((n + 1) * sizeof *g.offset);
    g.nbr = malloc((n * n + 1) * sizeof *g.nbr);
    g.dist = NULL;
    ck_assert_ptr_nonnull(g.offset);
    ck_assert_ptr_nonnull(g.nbr);
    size_t e = 0;
    for (size_t i = 0; i < n; i++) {
        g.offset[i] = e;
        for (size_t j = 0; j < n; j++)
            if (j != i && dist(cl, (ng_index)i, (ng_index)j) <= radius)
                g.nbr[e++] = (ng_index)j;
    }
    g.offset[n] = e;
    return g;
}

static void graph_release(ng_csr *g)
{
    free(g->offset);
    free(g->nbr);
}

static ng_complex *build(cloud *cl, const ng_csr *g, int top, double T,
                         int threads)
{
    double *vv = malloc(cl->n * (size_t)cl->L * sizeof *vv);
    for (size_t i = 0; i < cl->n; i++)
        for (int j = 0; j < cl->L; j++) vv[i * (size_t)cl->L + (size_t)j] = cl->birth[i];
    ng_complex_spec spec = {g, top, cl->L, vv, T, cloud_callback, cl, threads, NULL, NULL};
    ng_error err;
    ng_error_clear(&err);
    ng_complex *c = NULL;
    ck_assert_int_eq(ng_complex_build(&spec, &c, &err), NG_OK);
    free(vv);
    return c;
}

/* ---- the textbook reduction ---- */

typedef struct ref_simplex {
    int dim;
    ng_index v[MAXV];
    double value;      /* in the filtration being reduced */
    double values[3];  /* monotone values of the (up to) three filtrations */
    uint64_t key;
} ref_simplex;

static uint64_t ref_key(const ng_index *v, int m)
{
    static uint64_t pascal[65][MAXV + 1];
    if (pascal[0][0] == 0)
        for (int a = 0; a <= 64; a++)
            for (int b = 0; b <= MAXV; b++)
                pascal[a][b] = b == 0 ? 1
                               : a == 0 ? 0
                                        : pascal[a - 1][b - 1] + pascal[a - 1][b];
    uint64_t k = 0;
    for (int i = 0; i < m; i++) k += pascal[v[i]][i + 1];
    return k;
}

static int ref_less(const ref_simplex *a, const ref_simplex *b)
{
    if (a->value != b->value) return a->value < b->value;
    if (a->dim != b->dim) return a->dim < b->dim;
    return a->key < b->key;
}

static int cmp_ref(const void *pa, const void *pb)
{
    const ref_simplex *a = pa, *b = pb;
    return ref_less(a, b) ? -1 : ref_less(b, a) ? 1 : 0;
}

typedef struct ref_list {
    ref_simplex *s;
    size_t n, cap;
} ref_list;

/* Brute-force cliques: extend v[0..m-1] by every larger common neighbour. */
static void cliques(const ng_csr *g, ng_index *v, int m, int top,
                    ref_list *out)
{
    if (out->n == out->cap) {
        out->cap = out->cap ? 2 * out->cap : 1024;
        out->s = realloc(out->s, out->cap * sizeof *out->s);
        ck_assert_ptr_nonnull(out->s);
    }
    ref_simplex *s = &out->s[out->n++];
    memset(s, 0, sizeof *s);
    s->dim = m - 1;
    memcpy(s->v, v, (size_t)m * sizeof *v);
    s->key = ref_key(v, m);
    if (m - 1 == top) return;
    for (ng_index w = v[m - 1] + 1; w < g->n; w++) {
        int ok = 1;
        for (int i = 0; i < m && ok; i++) {
            ok = 0;
            for (size_t e = g->offset[v[i]]; e < g->offset[v[i] + 1]; e++)
                if (g->nbr[e] == w) ok = 1;
        }
        if (!ok) continue;
        v[m] = w;
        cliques(g, v, m + 1, top, out);
    }
}

static int cmp_dim_key(const void *pa, const void *pb)
{
    const ref_simplex *a = pa, *b = pb;
    if (a->dim != b->dim) return a->dim < b->dim ? -1 : 1;
    return (a->key > b->key) - (a->key < b->key);
}

/* The simplex with vertices v[0..m-1] in the list sorted by (dim, key). */
static const ref_simplex *lookup(const ref_list *all, const ng_index *v, int m)
{
    ref_simplex want;
    want.dim = m - 1;
    want.key = ref_key(v, m);
    const ref_simplex *s = bsearch(&want, all->s, all->n, sizeof want, cmp_dim_key);
    ck_assert_ptr_nonnull(s);
    return s;
}

/* Sorts the list by (dim, key) and gives every simplex its monotone values
 * max(raw, values of the facets), facets first. */
static void assign_values(const cloud *cl, ref_list *all)
{
    qsort(all->s, all->n, sizeof *all->s, cmp_dim_key);
    for (size_t i = 0; i < all->n; i++) {
        ref_simplex *s = &all->s[i];
        int m = s->dim + 1;
        if (m == 1) {
            for (int j = 0; j < 3; j++) s->values[j] = cl->birth[s->v[0]];
            continue;
        }
        all_values(cl, s->v, m, s->values);
        ng_index f[MAXV];
        for (int skip = 0; skip < m; skip++) {
            int r = 0;
            for (int t = 0; t < m; t++)
                if (t != skip) f[r++] = s->v[t];
            const ref_simplex *fs = lookup(all, f, m - 1);
            for (int j = 0; j < cl->L; j++)
                if (fs->values[j] > s->values[j]) s->values[j] = fs->values[j];
        }
    }
}

typedef struct ref_bar {
    double birth, death;
    int64_t bv[MAXV], dv[MAXV];
} ref_bar;

static int cmp_bar(const void *pa, const void *pb)
{
    const ref_bar *a = pa, *b = pb;
    if (a->birth != b->birth) return a->birth < b->birth ? -1 : 1;
    if (a->death != b->death) return a->death < b->death ? -1 : 1;
    for (int i = 0; i < MAXV; i++)
        if (a->bv[i] != b->bv[i]) return a->bv[i] < b->bv[i] ? -1 : 1;
    for (int i = 0; i < MAXV; i++)
        if (a->dv[i] != b->dv[i]) return a->dv[i] < b->dv[i] ? -1 : 1;
    return 0;
}

/* Position of simplex key s in the sorted filtration f[0..nf). */
static size_t ref_find(const ref_simplex *f, size_t nf, const ref_simplex *s)
{
    size_t lo = 0, hi = nf;
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (ref_less(&f[mid], s))
            lo = mid + 1;
        else
            hi = mid;
    }
    ck_assert_uint_lt(lo, nf);
    ck_assert_uint_eq(f[lo].key, s->key);
    ck_assert_int_eq(f[lo].dim, s->dim);
    return lo;
}

/* Symmetric difference of sorted columns a and b into a. */
static void column_add(size_t **a, size_t *na, const size_t *b, size_t nb)
{
    size_t *out = malloc((*na + nb + 1) * sizeof *out);
    size_t i = 0, r = 0, m = 0;
    while (i < *na || r < nb) {
        if (r == nb || (i < *na && (*a)[i] < b[r]))
            out[m++] = (*a)[i++];
        else if (i == *na || b[r] < (*a)[i])
            out[m++] = b[r++];
        else {
            i++;
            r++;
        }
    }
    free(*a);
    *a = out;
    *na = m;
}

/* Bars of degrees 0..D of filtration j by the standard algorithm. bars[k]
 * and nbars[k] are allocated here (caller frees bars[k]). counts[k] gets
 * the number of k-simplices within T. */
static void textbook(const ref_list *all, int D, int j,
                     double T, ref_bar **bars, size_t *nbars, size_t *counts)
{
    ref_simplex *f = malloc((all->n + 1) * sizeof *f);
    size_t nf = 0;
    for (int k = 0; k <= D + 1; k++) counts[k] = 0;
    for (size_t i = 0; i < all->n; i++) {
        ref_simplex s = all->s[i];
        s.value = s.values[j];
        if (s.value <= T) {
            f[nf++] = s;
            counts[s.dim]++;
        }
    }
    qsort(f, nf, sizeof *f, cmp_ref);
    size_t **col = calloc(nf + 1, sizeof *col);
    size_t *len = calloc(nf + 1, sizeof *len);
    size_t *low_owner = malloc((nf + 1) * sizeof *low_owner);
    int *paired = calloc(nf + 1, sizeof *paired);
    for (size_t i = 0; i < nf; i++) low_owner[i] = SIZE_MAX;
    for (int k = 0; k <= D; k++) {
        bars[k] = malloc((nf + 1) * sizeof **bars);
        nbars[k] = 0;
    }
    for (size_t c = 0; c < nf; c++) {
        int m = f[c].dim + 1;
        if (m >= 2) { /* boundary: all facets */
            col[c] = malloc((size_t)m * sizeof **col);
            for (int skip = 0; skip < m; skip++) {
                ref_simplex fs;
                memset(&fs, 0, sizeof fs);
                fs.dim = m - 2;
                int r = 0;
                for (int i = 0; i < m; i++)
                    if (i != skip) fs.v[r++] = f[c].v[i];
                fs.key = ref_key(fs.v, m - 1);
                fs.value = lookup(all, fs.v, m - 1)->values[j];
                col[c][len[c]++] = ref_find(f, nf, &fs);
            }
            for (size_t a = 1; a < len[c]; a++) /* sort the column */
                for (size_t b = a; b > 0 && col[c][b - 1] > col[c][b]; b--) {
                    size_t t = col[c][b];
                    col[c][b] = col[c][b - 1];
                    col[c][b - 1] = t;
                }
        }
        while (len[c] > 0 && low_owner[col[c][len[c] - 1]] != SIZE_MAX) {
            size_t o = low_owner[col[c][len[c] - 1]];
            column_add(&col[c], &len[c], col[o], len[o]);
        }
        if (len[c] > 0) {
            size_t low = col[c][len[c] - 1];
            low_owner[low] = c;
            paired[low] = paired[c] = 1;
            int k = f[low].dim;
            if (k <= D && f[low].value != f[c].value) {
                ref_bar *b = &bars[k][nbars[k]++];
                memset(b, 0, sizeof *b);
                b->birth = f[low].value;
                b->death = f[c].value;
                for (int i = 0; i <= k; i++) b->bv[i] = f[low].v[i];
                for (int i = 0; i <= k + 1; i++) b->dv[i] = f[c].v[i];
            }
        }
    }
    for (size_t c = 0; c < nf; c++) {
        int k = f[c].dim;
        if (paired[c] || k > D) continue;
        ref_bar *b = &bars[k][nbars[k]++];
        memset(b, 0, sizeof *b);
        b->birth = f[c].value;
        b->death = INFINITY;
        for (int i = 0; i <= k; i++) b->bv[i] = f[c].v[i];
        for (int i = 0; i <= k + 1; i++) b->dv[i] = -1;
    }
    for (int k = 0; k <= D; k++) qsort(bars[k], nbars[k], sizeof **bars, cmp_bar);
    for (size_t c = 0; c < nf; c++) free(col[c]);
    free(col);
    free(len);
    free(low_owner);
    free(paired);
    free(f);
}

/* ---- comparisons ---- */

static void assert_same_persistence(const ng_persistence *a,
                                    const ng_persistence *b)
{
    ck_assert_int_eq(a->n_filtrations, b->n_filtrations);
    ck_assert_int_eq(a->max_degree, b->max_degree);
    for (int j = 0; j < a->n_filtrations; j++)
        for (int k = 0; k <= a->max_degree; k++) {
            const ng_bars *x = &a->diagram[j].bars[k], *y = &b->diagram[j].bars[k];
            ck_assert_uint_eq(x->count, y->count);
            ck_assert_uint_eq(x->truncated, y->truncated);
            ck_assert_mem_eq(x->interval, y->interval, x->count * 2 * sizeof(double));
            ck_assert_mem_eq(x->birth_vertices, y->birth_vertices,
                             x->count * (size_t)(k + 1) * sizeof(int64_t));
            ck_assert_mem_eq(x->death_vertices, y->death_vertices,
                             x->count * (size_t)(k + 2) * sizeof(int64_t));
        }
}

static void assert_same_complex(const ng_complex *a, const ng_complex *b)
{
    ck_assert_int_eq(ng_complex_top_dim(a), ng_complex_top_dim(b));
    for (int k = 0; k <= ng_complex_top_dim(a); k++) {
        size_t n = ng_complex_count(a, k);
        ck_assert_uint_eq(n, ng_complex_count(b, k));
        ck_assert_mem_eq(ng_complex_vertices(a, k), ng_complex_vertices(b, k),
                         n * (size_t)(k + 1) * sizeof(ng_index));
        for (int j = 0; j < ng_complex_filtration_count(a); j++)
            ck_assert_mem_eq(ng_complex_values(a, k, j), ng_complex_values(b, k, j),
                             n * sizeof(double));
    }
}

/* Value of the simplex with vertex list v (int64) in filtration j. */
static double simplex_value(const ng_complex *c, const int64_t *v, int m, int j)
{
    ng_index u[MAXV];
    for (int i = 0; i < m; i++) u[i] = (ng_index)v[i];
    size_t pos = ng_complex_find(c, u, m);
    ck_assert_uint_ne(pos, SIZE_MAX);
    return ng_complex_values(c, m - 1, j)[pos];
}

/* One random complex: engine vs textbook, 1 vs 2 threads. */
static void check_random_case(size_t dimension, int D, int max_n)
{
    cloud cl;
    memset(&cl, 0, sizeof cl);
    cl.n = 4 + rng_next() % (uint64_t)(max_n - 3);
    cl.dim = dimension;
    cl.L = 3;
    cl.pts = malloc(cl.n * cl.dim * sizeof *cl.pts);
    cl.birth = malloc(cl.n * sizeof *cl.birth);
    int on_grid = rng_next() % 4 == 0;
    for (size_t i = 0; i < cl.n * cl.dim; i++)
        cl.pts[i] = on_grid ? (double)(rng_next() % 5) / 4 : rng_uniform();
    /* radius for an expected degree of 2..9 (2..6 in the highest degree) */
    double degree = 2 + rng_uniform() * (D >= 3 ? 4 : 7);
    double radius = dimension == 2
                        ? sqrt(degree / ((double)cl.n * NG_TEST_PI))
                        : cbrt(3 * degree / (4 * NG_TEST_PI * (double)cl.n));
    if (on_grid) radius = 0.25 * (1 + (double)(rng_next() % 3)) + 1e-9;
    int births = (int)(rng_next() % 3);
    for (size_t i = 0; i < cl.n; i++)
        cl.birth[i] = births == 0 ? 0.0
                      : rng_uniform() < 0.3 ? 0.0
                                            : rng_uniform() * radius * 0.5;
    cl.lambda = 1 + rng_uniform();
    cl.inc_scale = 0.3 * radius;
    cl.salt = rng_next();
    uint64_t tkind = rng_next() % 3;
    double T = tkind == 0 ? INFINITY : radius * (0.15 + 0.5 * rng_uniform());

    ng_csr g = radius_graph(&cl, radius);
    ng_complex *c1 = build(&cl, &g, D + 1, T, 1);
    long calls = atomic_load(&cl.calls);
    long higher = 0;
    for (int k = 1; k <= D + 1; k++) higher += (long)ng_complex_count(c1, k);
    ck_assert_int_eq(calls, higher); /* one callback per simplex */
    ng_complex *c2 = build(&cl, &g, D + 1, T, 2);
    assert_same_complex(c1, c2);

    ng_error err;
    ng_error_clear(&err);
    ng_persistence *p1 = NULL, *p2 = NULL, *p4 = NULL;
    ck_assert_int_eq(ng_persistence_compute(c1, 1, &p1, &err), NG_OK);
    /* 2 threads: one per filtration; 4 threads (more than the 3
     * filtrations): all threads inside each filtration */
    ck_assert_int_eq(ng_persistence_compute(c2, 2, &p2, &err), NG_OK);
    ck_assert_int_eq(ng_persistence_compute(c1, 4, &p4, &err), NG_OK);
    assert_same_persistence(p1, p2);
    assert_same_persistence(p1, p4);
    /* every pending column in the dense form: the same bars */
    ng_persistence *pd1 = NULL, *pd4 = NULL;
    ng_reduce_force_dense(1);
    ck_assert_int_eq(ng_persistence_compute(c1, 1, &pd1, &err), NG_OK);
    ck_assert_int_eq(ng_persistence_compute(c1, 4, &pd4, &err), NG_OK);
    ng_reduce_force_dense(0);
    assert_same_persistence(p1, pd1);
    assert_same_persistence(p1, pd4);
    ng_persistence_free(pd1);
    ng_persistence_free(pd4);
    /* no cache of sorted coboundaries, and one that fills up early: every
     * added coboundary sorted again (less its entries before the pivot),
     * or some of them: the same bars */
    size_t limits[2] = {0, 64};
    for (int l = 0; l < 2; l++) {
        size_t was = ng_reduce_cache_limit(limits[l]);
        ng_persistence *pc = NULL;
        ck_assert_int_eq(ng_persistence_compute(c1, 1, &pc, &err), NG_OK);
        ng_reduce_cache_limit(was);
        assert_same_persistence(p1, pc);
        ng_persistence_free(pc);
    }

    ref_list all = {0};
    ng_index v[MAXV];
    for (ng_index i = 0; i < cl.n; i++) {
        v[0] = i;
        cliques(&g, v, 1, D + 1, &all);
    }
    assign_values(&cl, &all);
    size_t total[MAXV] = {0};
    for (size_t i = 0; i < all.n; i++) total[all.s[i].dim]++;
    for (int k = 0; k <= D + 1; k++) ck_assert_uint_eq(p1->simplices[k], total[k]);

    for (int j = 0; j < cl.L; j++) {
        ref_bar *bars[MAXV];
        size_t nbars[MAXV], counts[MAXV];
        textbook(&all, D, j, T, bars, nbars, counts);
        const ng_diagram *d = &p1->diagram[j];
        for (int k = 0; k <= D + 1; k++) ck_assert_uint_eq(d->simplices[k], counts[k]);
        for (int k = 0; k <= D; k++) {
            const ng_bars *b = &d->bars[k];
            ck_assert_int_eq(b->degree, k);
            ck_assert_uint_eq(b->count, nbars[k]);
            size_t trunc = 0;
            for (size_t i = 0; i < b->count; i++) {
                const ref_bar *r = &bars[k][i];
                ck_assert(b->interval[2 * i] == r->birth);
                ck_assert(b->interval[2 * i + 1] == r->death);
                ck_assert(r->birth < r->death); /* zero length dropped */
                const int64_t *bv = b->birth_vertices + i * (size_t)(k + 1);
                const int64_t *dv = b->death_vertices + i * (size_t)(k + 2);
                ck_assert_mem_eq(bv, r->bv, (size_t)(k + 1) * sizeof *bv);
                ck_assert_mem_eq(dv, r->dv, (size_t)(k + 2) * sizeof *dv);
                /* the birth simplex has the birth value, the death simplex
                 * the death value */
                ck_assert(simplex_value(c1, bv, k + 1, j) == b->interval[2 * i]);
                if (isinf(r->death)) {
                    trunc++;
                } else {
                    ck_assert(simplex_value(c1, dv, k + 2, j) == b->interval[2 * i + 1]);
                }
            }
            ck_assert_uint_eq(b->truncated, trunc);
            free(bars[k]);
        }
    }
    free(all.s);
    ng_persistence_free(p1);
    ng_persistence_free(p2);
    ng_persistence_free(p4);
    ng_complex_free(c1);
    ng_complex_free(c2);
    graph_release(&g);
    free(cl.pts);
    free(cl.birth);
}

/* 27 × 20 = 540 random complexes: D = 1, 2 on 520, D = 3 on 15 and
 * D = 0 on 5. */
START_TEST(test_against_textbook)
{
    rng_state = 0xC0FFEE + (uint64_t)_i * 7919;
    for (int rep = 0; rep < 20; rep++) {
        if (_i < 26) {
            size_t dimension = 2 + (size_t)(rep % 2);
            int D = 1 + (_i % 2);
            check_random_case(dimension, D, 40);
        } else {
            int D = rep % 4 == 0 ? 0 : 3;
            check_random_case(2 + (size_t)(rep % 2), D, D == 0 ? 40 : 22);
        }
    }
}
END_TEST

/* ---- classical topology ---- */

/* Rips persistence (edge value d/2, births 0) of a cloud on the complete
 * graph or within radius 2T; caller frees. */
static ng_persistence *rips_persistence(cloud *cl, int D, double T)
{
    cl->L = 1;
    for (size_t i = 0; i < cl->n; i++) cl->birth[i] = 0;
    ng_csr g = radius_graph(cl, isinf(T) ? INFINITY : 2 * T);
    ng_complex *c = build(cl, &g, D + 1, T, 2);
    ng_persistence *p = NULL;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_persistence_compute(c, 2, &p, &err), NG_OK);
    ng_complex_free(c);
    graph_release(&g);
    return p;
}

static size_t long_bars(const ng_bars *b, double min_length, double T)
{
    size_t m = 0;
    for (size_t i = 0; i < b->count; i++) {
        double d = b->interval[2 * i + 1];
        if (isinf(d)) d = T;
        if (d - b->interval[2 * i] > min_length) m++;
    }
    return m;
}

static size_t betti(const ng_bars *b, double t)
{
    size_t m = 0;
    for (size_t i = 0; i < b->count; i++)
        m += b->interval[2 * i] <= t && t < b->interval[2 * i + 1];
    return m;
}

static cloud make_cloud(size_t n, size_t dim)
{
    cloud cl;
    memset(&cl, 0, sizeof cl);
    cl.n = n;
    cl.dim = dim;
    cl.pts = malloc(n * dim * sizeof *cl.pts);
    cl.birth = calloc(n, sizeof *cl.birth);
    return cl;
}

START_TEST(test_circle)
{
    rng_state = 11;
    cloud cl = make_cloud(60, 2);
    for (size_t i = 0; i < cl.n; i++) {
        double a = 2 * NG_TEST_PI * ((double)i + 0.3 * rng_uniform()) / (double)cl.n;
        double r = 1 + 0.05 * (2 * rng_uniform() - 1);
        cl.pts[2 * i] = r * cos(a);
        cl.pts[2 * i + 1] = r * sin(a);
    }
    ng_persistence *p = rips_persistence(&cl, 1, INFINITY);
    /* classical topology: one connected component, one loop. The loop of a
     * dense circle sample lives from about the sample spacing to about
     * √3/2 (the inscribed equilateral triangle; Adamaszek and Adams, "The
     * Vietoris–Rips complexes of a circle", Pacific J. Math. 290, 2017). */
    const ng_bars *b0 = &p->diagram[0].bars[0], *b1 = &p->diagram[0].bars[1];
    ck_assert_uint_eq(b0->truncated, 1);
    ck_assert_uint_eq(long_bars(b0, 0.2, 2), 1);
    ck_assert_uint_eq(long_bars(b1, 0.3, 2), 1);
    ck_assert_uint_eq(b1->truncated, 0);
    for (size_t i = 0; i < b1->count; i++)
        if (b1->interval[2 * i + 1] - b1->interval[2 * i] > 0.3) {
            ck_assert(b1->interval[2 * i] < 0.15);
            ck_assert(fabs(b1->interval[2 * i + 1] - sqrt(3) / 2) < 0.1);
        }
    ng_persistence_free(p);
    free(cl.pts);
    free(cl.birth);
}
END_TEST

START_TEST(test_sphere)
{
    rng_state = 12;
    cloud cl = make_cloud(40, 3);
    for (size_t i = 0; i < cl.n; i++) { /* jittered Fibonacci sphere */
        double z = 1 - 2 * ((double)i + 0.5) / (double)cl.n;
        double a = (double)i * NG_TEST_PI * (3 - sqrt(5)) + 0.1 * rng_uniform();
        double r = sqrt(1 - z * z);
        cl.pts[3 * i] = r * cos(a);
        cl.pts[3 * i + 1] = r * sin(a);
        cl.pts[3 * i + 2] = z;
    }
    ng_persistence *p = rips_persistence(&cl, 2, INFINITY);
    /* classical topology: a 2-sphere has one void and no loop */
    const ng_bars *b1 = &p->diagram[0].bars[1], *b2 = &p->diagram[0].bars[2];
    ck_assert_uint_eq(p->diagram[0].bars[0].truncated, 1);
    ck_assert_uint_eq(long_bars(b2, 0.2, 2), 1);
    ck_assert_uint_eq(long_bars(b1, 0.2, 2), 0);
    ck_assert_uint_eq(b2->truncated, 0);
    ng_persistence_free(p);
    free(cl.pts);
    free(cl.birth);
}
END_TEST

/* Clifford torus (cos a, sin a, cos b, sin b) in R^4 on a jittered grid. */
static void torus_case(size_t side, double T, double min_range)
{
    rng_state = 13;
    cloud cl = make_cloud(side * side, 4);
    for (size_t i = 0; i < side; i++)
        for (size_t r = 0; r < side; r++) {
            double a = 2 * NG_TEST_PI * ((double)i + 0.2 * rng_uniform()) / (double)side;
            double b = 2 * NG_TEST_PI * ((double)r + 0.2 * rng_uniform()) / (double)side;
            double *x = cl.pts + (i * side + r) * 4;
            x[0] = cos(a);
            x[1] = sin(a);
            x[2] = cos(b);
            x[3] = sin(b);
        }
    ng_persistence *p = rips_persistence(&cl, 2, T);
    /* classical topology: the torus has Betti numbers 1, 2, 1. Scan the
     * scales for the longest run where the barcode says exactly that. */
    const ng_diagram *d = &p->diagram[0];
    double best = 0, run_start = -1;
    int steps = 400;
    for (int s = 0; s <= steps; s++) {
        double t = T * s / steps;
        int ok = betti(&d->bars[0], t) == 1 && betti(&d->bars[1], t) == 2 &&
                 betti(&d->bars[2], t) == 1;
        if (ok && run_start < 0) run_start = t;
        if ((!ok || s == steps) && run_start >= 0) {
            if (t - run_start > best) best = t - run_start;
            run_start = -1;
        }
    }
    ck_assert_msg(best > min_range, "torus Betti (1,2,1) only over %g", best);
    ng_persistence_free(p);
    free(cl.pts);
    free(cl.birth);
}

START_TEST(test_torus) { torus_case(12, 0.6, 0.1); }
END_TEST

START_TEST(test_torus_big)
{
    torus_case(20, 0.6, 0.2);
    torus_case(32, 0.45, 0.2);
}
END_TEST

START_TEST(test_errors_and_free)
{
    ng_error err;
    ng_error_clear(&err);
    ng_persistence *p = (ng_persistence *)1;
    ck_assert_int_eq(ng_persistence_compute(NULL, 1, &p, &err), NG_ERR_USAGE);
    ck_assert_ptr_null(p);
    ng_persistence_free(NULL);

    /* allocation failures anywhere in the reduction are reported and
     * leave nothing behind */
    rng_state = 21;
    cloud cl = make_cloud(25, 2);
    cl.L = 3;
    cl.lambda = 1.3;
    cl.inc_scale = 0.05;
    for (size_t i = 0; i < 50; i++) cl.pts[i] = rng_uniform();
    ng_csr g = radius_graph(&cl, 0.35);
    ng_complex *c = build(&cl, &g, 3, INFINITY, 2);
    int succeeded = 0, threads = 2 + 2 * (_i % 2); /* 4: inner threads */
    /* the dense form's allocations too, and those of the path without a
     * cache */
    ng_reduce_force_dense(_i >= 2);
    size_t cache_was = ng_reduce_cache_limit(0);
    if (_i != 1) ng_reduce_cache_limit(cache_was);
    for (long after = 0; after < 2000 && !succeeded; after++) {
        ng_error_clear(&err);
        p = NULL;
        ng_alloc_fail_after(after);
        int st = ng_persistence_compute(c, threads, &p, &err);
        ng_alloc_fail_after(-1);
        if (st == NG_OK) {
            succeeded = 1;
            ng_persistence_free(p);
        } else {
            ck_assert_int_eq(st, NG_ERR_NOMEM);
            ck_assert_ptr_null(p);
        }
    }
    ng_reduce_force_dense(0);
    ng_reduce_cache_limit(cache_was);
    ck_assert(succeeded);
    ng_complex_free(c);
    graph_release(&g);
    free(cl.pts);
    free(cl.birth);
}
END_TEST

static Suite *reduce_suite(int slow)
{
    Suite *s = suite_create("reduce");
    TCase *tc = tcase_create("core");
    tcase_set_timeout(tc, 300);
    if (slow) {
        tcase_add_test(tc, test_torus_big);
    } else {
        tcase_add_loop_test(tc, test_against_textbook, 0, 27);
        tcase_add_test(tc, test_circle);
        tcase_add_test(tc, test_sphere);
        tcase_add_test(tc, test_torus);
        tcase_add_loop_test(tc, test_errors_and_free, 0, 4);
    }
    suite_add_tcase(s, tc);
    return s;
}

int main(int argc, char **argv)
{
    int slow = argc > 1 && strcmp(argv[1], "--slow") == 0;
    SRunner *sr = srunner_create(reduce_suite(slow));
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
