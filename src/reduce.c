/* reduce.c — persistence barcodes of the filtrations of a complex by mod-2
 * reduction (persistence.h).
 *
 * Invariants: filtrations only read the shared complex; within one
 * filtration the only parallel step is the apparent-pair pass, whose
 * outcome per column does not depend on any other column, and every step
 * that does (the heap reductions, union–find) runs in one thread in a fixed
 * order. So the output is the same for any number of threads. The total
 * order of a filtration is (value, dimension, key); two simplices of one
 * dimension compare by (value, table position), since the tables are in
 * key order.
 *
 * How it works.
 *   The standard algorithm (Edelsbrunner, Letscher, Zomorodian, "Topological
 *   persistence and simplification", Discrete Comput. Geom. 28, 2002; see also
 *   Edelsbrunner and Harer, "Computational Topology", 2010) reduces the
 *   boundary matrix, columns in filtration order, by adding to a column
 *   the earlier column with the same lowest non-zero entry (its pivot)
 *   until pivots are distinct; a column with pivot i pairs simplex i
 *   (birth) with the column's simplex (death), and unpaired simplices
 *   whose columns vanish give the classes that never die.
 *
 *   Cohomology. The coboundary matrix is the boundary matrix transposed
 *   with rows and columns in reverse order. Reducing it gives the same
 *   pairs of simplices (de Silva, Morozov, Vejdemo-Johansson, "Dualities
 *   in persistent (co)homology", Inverse Problems 27, 2011): here the
 *   column of a k-simplex σ holds its cofacets, columns are taken from the
 *   latest k-simplex to the earliest, and the pivot of a column is its
 *   EARLIEST cofacet τ; a pair (σ, τ) is the bar [value σ, value τ) in
 *   degree k. For Rips-like complexes the coboundary columns of low
 *   degrees are short and most of them need no additions at all.
 *
 *   Clearing (Chen and Kerber, "Persistent homology computation with a
 *   twist", EuroCG 2011). A k-simplex that is the pivot of some column in
 *   degree k − 1 is a death simplex, so its own column in degree k must
 *   reduce to zero: it is skipped without any work. Degrees are therefore
 *   reduced in increasing order, each passing its pivot table on as the
 *   list of columns to skip. Degree 0 is done by union–find over the edges
 *   in filtration order (the elder rule: when an edge joins two
 *   components, the one whose oldest vertex is younger dies, paired with
 *   that vertex); the joining edges are the pivots of degree 0.
 *
 *   Apparent pairs and implicit coboundaries (U. Bauer, J. Appl. Comput.
 *   Topol. 5, 391–423, 2021, on computing Vietoris–Rips barcodes). The
 *   coboundary matrix is never stored as such: a column is read from the
 *   complex's cofacet lists (complex_internal.h; shared by every
 *   filtration, only the values differ) and a reduced column is kept only
 *   as the list V of simplices whose coboundaries it sums (keeping the
 *   reduced columns themselves was measured slower: they are about as long
 *   as the coboundaries they sum, and must be sorted out of the heap). The
 *   working column is a k-way merge: each coboundary added to it is one
 *   run, its cofacets sorted in filtration order, and a binary heap of the
 *   runs keyed by their first untaken entry yields the column's entries in
 *   order; equal entries cancel in pairs when they reach the top (mod-2
 *   addition), so the first entry that survives is the pivot. Most entries
 *   are never taken — a column stops at its first free pivot — so a heap of
 *   runs does one heap operation per added coboundary where a heap of
 *   single cofacets does one per cofacet. The same simplices come back in
 *   the V of many columns, so a sorted coboundary is kept for reuse within
 *   its degree (up to CACHE_MAX entries). A column whose earliest cofacet
 *   is a free pivot is recorded at once, unsorted (an emergent pair).
 *
 *   Before all that, a column checks for an apparent pair: if its earliest
 *   cofacet τ has σ as its LATEST facet, no later column can contain τ, so
 *   τ is free and (σ, τ) is a pair with no additions; the column is then
 *   recorded with an empty V. The earliest cofacet is found without
 *   reading the whole list when one has the column's own value: the list
 *   is in position order, no cofacet has a smaller value, so the first of
 *   equal value is the earliest. The latest facet of every simplex was
 *   noted when the complex was built (complex_internal.h), so the test
 *   reads one byte. Whether a column is apparent depends on the filtration
 *   only, so all columns of a degree are first tested in parallel, in
 *   table (position) order, so that cofacet lists and vertex lists are
 *   read in storage order; the remaining columns are then reduced one by
 *   one, latest first — no column of a later simplex ever meets the pivot
 *   τ of an apparent pair, which makes the result the same as one
 *   sequential sweep.
 *
 *   Long columns. A few columns — classes that live long — sum the
 *   coboundaries of thousands of columns, and hold tens of thousands of
 *   entries that are never taken. Such a column moves to a dense form: the
 *   (k+1)-simplices are ranked in filtration order once per degree (a
 *   sort), and the column becomes a bit set over the ranks with one
 *   summary bit per 64-bit word. Adding a cofacet flips one bit (mod 2 for
 *   free), and since every column added has its pivot at the current pivot
 *   and the rest later, the pivot only moves forward: the next one is the
 *   next set bit, found through the summary words. The sort is paid for
 *   only once long columns have cost about as much (DENSE_AT below). The
 *   bars do not depend on the form a column takes.
 *
 *   Threads: with at least as many filtrations as threads, each thread
 *   reduces whole filtrations; with fewer, the filtrations are reduced one
 *   after the other with all threads in their apparent-pair passes.
 *
 *   The scale limit T cuts every filtration: simplices with value > T are
 *   not in it, so a class alive at T gets death +inf (a truncated bar).
 *   Bars with birth == death are paired as usual (they matter for clearing)
 *   but are not reported.
 */
#include "nervegap/persistence.h"

#include "alloc.h"
#include "complex_internal.h"
#include "order.h"
#include "reduce_internal.h"

#include <math.h>
#include <omp.h>
#include <stdlib.h>
#include <string.h>

typedef ng_keyed entry;

/* Filtration order. Bitwise, not short-circuit: the heaps compare
 * entries whose order is a coin toss, and a branch there is mispredicted
 * half the time. */
static int entry_less(entry a, entry b)
{
    return (a.value < b.value) | ((a.value == b.value) & (a.pos < b.pos));
}

/* A recorded column of degree k: the simplex col plus the simplices
 * vstore[v_off .. v_off + v_len) whose coboundaries were added to it. */
typedef struct reducer {
    uint32_t col;
    uint32_t v_len;
    size_t v_off;
} reducer;

/* A pair of positions: birth k-simplex, death (k+1)-simplex or
 * NG_POS_NONE. */
typedef struct pair {
    uint32_t birth, death;
} pair;

/* A run: the cofacets within T of one simplex added to the working column,
 * sorted in filtration order; head is the first one not yet taken, the
 * rest are store[next .. end), or cache[next .. end) when cached. */
typedef struct run {
    entry head;
    size_t next, end;
    int cached; /* entries in the cache, not the store */
} run;

typedef struct vec32 {
    uint32_t *a;
    size_t n, cap;
} vec32;

typedef struct work {
    const ng_complex *c;
    int j;
    double T;
    run *runs;     /* the working column: a heap of runs */
    size_t nruns, runs_cap;
    entry *store;  /* the runs' entries */
    size_t store_n, store_cap;
    size_t live;   /* entries left in the runs */
    /* sorted coboundaries kept for reuse within a degree: the one of the
     * k-simplex q starts at cache[cached_at[q]] (a header entry whose pos
     * is its length), NG_POS_NONE when not kept */
    uint32_t *cached_at;
    entry *cache;
    size_t cache_n, cache_cap;
    vec32 vcur;    /* V of the column being reduced */
    vec32 vstore;  /* V of the recorded columns */
    /* the dense form (reduce_dense), built for a degree when first
     * needed: ranks of the (k+1)-simplices and a bit set over them */
    int ranked;
    size_t heavy_added, rank_price; /* when to rank (DENSE_AT) */
    uint32_t *rank, *by_rank;
    uint64_t *bits, *summary;
    size_t nwords;
    reducer *red;
    pair *pairs[NG_COMPLEX_MAX_DIM];
    size_t npairs[NG_COMPLEX_MAX_DIM], pairs_cap[NG_COMPLEX_MAX_DIM];
} work;

static int grow(void **a, size_t *cap, size_t need, size_t size)
{
    if (need <= *cap) return 1;
    size_t nc = *cap ? *cap : 64;
    while (nc < need) nc *= 2;
    void *p = ng_realloc(*a, nc, size);
    if (p == NULL) return 0;
    *a = p;
    *cap = nc;
    return 1;
}

static int vec_push(vec32 *v, uint32_t x)
{
    if (!grow((void **)&v->a, &v->cap, v->n + 1, sizeof *v->a)) return 0;
    v->a[v->n++] = x;
    return 1;
}

static const double *values_of(const work *w, int k)
{
    return w->c->value[k] + (size_t)w->j * w->c->count[k];
}

static const ng_index *vertices_of(const work *w, int k, uint32_t pos)
{
    return w->c->vert[k] + (size_t)pos * (size_t)(k + 1);
}

/* Records the pair unless its bar has length zero; the caller says which
 * (it knows the two values, or where to find them). */
static int add_pair(work *w, int k, uint32_t birth, uint32_t death,
                    int zero_length)
{
    if (zero_length) return 1;
    if (!grow((void **)&w->pairs[k], &w->pairs_cap[k], w->npairs[k] + 1,
              sizeof(pair)))
        return 0;
    w->pairs[k][w->npairs[k]++] = (pair){birth, death};
    return 1;
}

/* ---- the working column: a heap of sorted runs, min by head ---- */

static int run_less(const run *a, const run *b)
{
    return entry_less(a->head, b->head);
}

static void runs_sift_down(work *w, size_t i)
{
    run x = w->runs[i];
    size_t n = w->nruns;
    for (;;) {
        size_t l = 2 * i + 1;
        if (l >= n) break;
        size_t m = l;
        if (l + 1 < n) m += (size_t)run_less(&w->runs[l + 1], &w->runs[l]);
        if (!run_less(&w->runs[m], &x)) break;
        w->runs[i] = w->runs[m];
        i = m;
    }
    w->runs[i] = x;
}

static int runs_push(work *w, run r)
{
    if (!grow((void **)&w->runs, &w->runs_cap, w->nruns + 1, sizeof r))
        return 0;
    size_t i = w->nruns++;
    while (i > 0) {
        size_t parent = (i - 1) / 2;
        if (!run_less(&r, &w->runs[parent])) break;
        w->runs[i] = w->runs[parent];
        i = parent;
    }
    w->runs[i] = r;
    return 1;
}

/* Takes the head of the top run. */
static void runs_advance(work *w)
{
    run *t = &w->runs[0];
    w->live--;
    if (t->next < t->end) {
        t->head = (t->cached ? w->cache : w->store)[t->next++];
    } else if (--w->nruns > 0) {
        w->runs[0] = w->runs[w->nruns];
    } else {
        return;
    }
    runs_sift_down(w, 0);
}

/* Cancels equal heads at the top in pairs; returns 1 with the pivot (the
 * earliest entry of the column) in *pivot, or 0 when the column is zero.
 * A run holds distinct entries, and a copy of the top head, if any, is the
 * head of a child of the root: every head on the path down to it lies
 * between the two, so equals them. */
static int runs_pivot(work *w, entry *pivot)
{
    while (w->nruns > 0) {
        uint32_t top = w->runs[0].head.pos;
        if ((w->nruns > 1 && w->runs[1].head.pos == top) ||
            (w->nruns > 2 && w->runs[2].head.pos == top)) {
            runs_advance(w);
            runs_advance(w);
            continue;
        }
        *pivot = w->runs[0].head;
        return 1;
    }
    return 0;
}

static int cmp_entry(const void *pa, const void *pb)
{
    const entry *a = pa, *b = pb;
    return entry_less(*a, *b) ? -1 : entry_less(*b, *a);
}

/* Sorts a[0..n), given in increasing position, by filtration order. */
static void sort_run(entry *a, size_t n)
{
    if (n > 48)
        qsort(a, n, sizeof *a, cmp_entry);
    else
        ng_sort_keyed_short(a, n);
}

/* How far ahead the value of a cofacet is fetched: the values of a
 * column's cofacets lie all over the table, so each read would otherwise
 * wait for memory. */
#define PREFETCH_AHEAD 8

/* Cofacets of the k-simplex q within T, as entries in position order;
 * returns their number and writes the earliest to *first (when any). */
static size_t cofacets_within(const work *w, int k, uint32_t q,
                              entry *first, entry *restrict out)
{
    const double *cv = values_of(w, k + 1);
    size_t m;
    const uint32_t *cof = ng_complex_cofacet_list(w->c, k, q, &m);
    size_t r = 0;
    for (size_t i = 0; i < m; i++) {
        if (i + PREFETCH_AHEAD < m)
            __builtin_prefetch(cv + cof[i + PREFETCH_AHEAD]);
        double v = cv[cof[i]];
        if (!in_filtration(v, w->T)) continue;
        entry e = {v, cof[i]};
        if (r == 0 || entry_less(e, *first)) *first = e;
        out[r++] = e;
    }
    return r;
}

/* The earliest cofacet of the k-simplex q within T, into *first; returns
 * 0 when there is none. Cofacets come in increasing position, and none is
 * earlier in value than q itself, so the first one with q's value is the
 * earliest and the walk stops there. */
static size_t earliest_cofacet(const work *w, int k, uint32_t q,
                               entry *first)
{
    const double *cv = values_of(w, k + 1);
    double own = values_of(w, k)[q];
    size_t len, m = 0;
    const uint32_t *cof = ng_complex_cofacet_list(w->c, k, q, &len);
    for (size_t i = 0; i < len; i++) {
        if (i + PREFETCH_AHEAD < len)
            __builtin_prefetch(cv + cof[i + PREFETCH_AHEAD]);
        double v = cv[cof[i]];
        if (!in_filtration(v, w->T)) continue;
        entry e = {v, cof[i]};
        if (m++ == 0 || entry_less(e, *first)) *first = e;
        if (v <= own) break;
    }
    return m;
}

/* Room in the store for the cofacets of one more simplex. */
static int store_reserve(work *w)
{
    return grow((void **)&w->store, &w->store_cap,
                w->store_n + w->c->max_degree + 1, sizeof *w->store);
}

/* Makes the m entries at the end of the store (not yet counted in
 * store_n) a run of the working column. */
static int push_run(work *w, size_t m)
{
    if (m == 0) return 1;
    entry *a = w->store + w->store_n;
    sort_run(a, m);
    size_t at = w->store_n;
    w->store_n += m;
    w->live += m;
    return runs_push(w, (run){a[0], at + 1, at + m, 0});
}

/* Number of entries of the sorted a[0..n) before x: branch-free, as the
 * sorted-list search of complex.c (the outcome of each step is a coin
 * toss). */
static size_t count_before(const entry *a, size_t n, entry x)
{
    if (n == 0) return 0;
    const entry *base = a;
    while (n > 1) {
        size_t half = n / 2;
        base = entry_less(base[half], x) ? base + half : base;
        n -= half;
    }
    return (size_t)(base - a) + (size_t)entry_less(*base, x);
}

/* At most this many entries are kept in the cache of sorted coboundaries
 * (64 MiB); coboundaries met once the cache is full are sorted each time
 * they are added. */
#define CACHE_MAX ((size_t)1 << 22)

static size_t cache_max = CACHE_MAX; /* reduce_internal.h */

size_t ng_reduce_cache_limit(size_t entries)
{
    size_t was = cache_max;
    cache_max = entries < CACHE_MAX ? entries : CACHE_MAX;
    return was;
}

/* Adds the coboundary of the k-simplex q to the working column, less its
 * entries earlier than *from (when from is not NULL): the column being
 * reduced has no entry before its pivot, nor has the reduced column it
 * adds, so the entries the added coboundaries have there cancel among
 * themselves and need not be merged at all. */
static int add_coboundary(work *w, int k, uint32_t q, const entry *from)
{
    entry first;
    uint32_t at = w->cached_at[q];
    size_t room = w->c->max_degree + 2;
    if (at == NG_POS_NONE && w->cache_n + room <= cache_max) {
        if (!grow((void **)&w->cache, &w->cache_cap, w->cache_n + room,
                  sizeof *w->cache))
            return 0;
        entry *a = w->cache + w->cache_n + 1;
        size_t m = cofacets_within(w, k, q, &first, a);
        sort_run(a, m);
        at = (uint32_t)w->cache_n;
        w->cache[at] = (entry){0, (uint32_t)m};
        w->cached_at[q] = at;
        w->cache_n += m + 1;
    }
    if (at != NG_POS_NONE) {
        size_t lo = at + 1, end = lo + w->cache[at].pos;
        if (from) lo += count_before(w->cache + lo, end - lo, *from);
        if (lo == end) return 1;
        w->live += end - lo;
        return runs_push(w, (run){w->cache[lo], lo + 1, end, 1});
    }
    if (!store_reserve(w)) return 0;
    entry *a = w->store + w->store_n;
    size_t m = cofacets_within(w, k, q, &first, a);
    if (from) {
        size_t kept = 0;
        for (size_t i = 0; i < m; i++)
            if (!entry_less(a[i], *from)) a[kept++] = a[i];
        m = kept;
    }
    return push_run(w, m);
}

/* 1 when the k-simplex p is the latest facet of the (k+1)-simplex tau:
 * the complex keeps the index s of the vertex whose removal leaves the
 * latest facet (complex_internal.h), and p leaves out the one vertex x of
 * tau not in p. Where x goes is read off tau's position without reading
 * tau's vertices when it can: first (s = 0) when tau lies in the run of
 * lower extensions of p, last (s = k + 1) when tau lies beyond the bucket
 * of p's top vertex; otherwise, between two vertices of p, which for an
 * edge p means s = 1. */
static int latest_facet(const work *w, int k, uint32_t tau, uint32_t p)
{
    const ng_complex *c = w->c;
    const ng_index *pv = vertices_of(w, k, p);
    int own;
    if (tau >= c->ext[k][p] && tau < c->ext[k][p + 1]) {
        own = 0;
    } else if (tau >= c->start[k + 1][pv[k] + 1]) {
        own = k + 1;
    } else if (k == 1) {
        own = 1;
    } else {
        const ng_index *tv = vertices_of(w, k + 1, tau);
        own = 1;
        while (tv[own] == pv[own]) own++;
    }
    return c->latest[k + 1][(size_t)w->j * c->count[k + 1] + tau] == own;
}

static int cmp_u32(const void *a, const void *b)
{
    uint32_t x = *(const uint32_t *)a, y = *(const uint32_t *)b;
    return (x > y) - (x < y);
}

/* Stores the current V (sorted, duplicates cancelled mod 2) as reducer
 * slot, of column p. Returns 1, or 0 when out of memory. */
static int store_reducer(work *w, size_t slot, uint32_t p)
{
    vec32 *v = &w->vcur;
    if (v->n > 1) qsort(v->a, v->n, sizeof *v->a, cmp_u32);
    size_t m = 0;
    for (size_t i = 0; i < v->n;) {
        size_t r = i;
        while (r < v->n && v->a[r] == v->a[i]) r++;
        if ((r - i) % 2) v->a[m++] = v->a[i];
        i = r;
    }
    if (!grow((void **)&w->vstore.a, &w->vstore.cap, w->vstore.n + m,
              sizeof(uint32_t)))
        return 0;
    if (m > 0) memcpy(w->vstore.a + w->vstore.n, v->a, m * sizeof *v->a);
    w->red[slot] = (reducer){p, (uint32_t)m, w->vstore.n};
    w->vstore.n += m;
    return 1;
}

/* The k-simplices within T, not cleared, sorted by filtration order;
 * *out is allocated (caller frees), its length returned in *len. */
static int sorted_columns(const work *w, int k, const uint32_t *cleared,
                          entry **out, size_t *len)
{
    const double *val = values_of(w, k);
    size_t cnt = w->c->count[k], m = 0;
    entry *a = ng_malloc(cnt, sizeof *a);
    if (a == NULL) return 0;
    for (size_t p = 0; p < cnt; p++)
        if (in_filtration(val[p], w->T) &&
            (cleared == NULL || cleared[p] == NG_POS_NONE))
            a[m++] = (entry){val[p], (uint32_t)p};
    if (ng_sort_keyed(a, m) != 0) {
        ng_free(a);
        return 0;
    }
    *out = a;
    *len = m;
    return 1;
}

/* ---- dense working column, for columns that grow long ---- */

static void dense_release(work *w)
{
    ng_free(w->rank);
    ng_free(w->by_rank);
    ng_free(w->bits);
    ng_free(w->summary);
    w->rank = w->by_rank = NULL;
    w->bits = w->summary = NULL;
    w->ranked = 0;
    w->heavy_added = 0;
}

/* A working column holding more than this many entries may move to the
 * dense form. Ranking costs a sort of the (k+1)-simplices: about 80–90 ns
 * per simplex at 2·10^7 simplices, against about 40 ns per entry added to
 * a long column (both measured with bench_run.py on the 2-core development
 * machine, the latter with the heap of single cofacets that the heap of
 * runs replaced; runs cost less per entry, and the price was not tuned
 * again). So the sort is bought only once the entries added to long
 * columns of this degree reach twice the number of (k+1)-simplices — rent
 * until the rent paid equals the price, then buy, which never costs more
 * than twice the better of the two choices made in hindsight. Runs with
 * few long columns never sort; runs with many sort early. */
#define DENSE_AT 512

static int force_dense; /* reduce_internal.h */

int ng_reduce_force_dense(int on)
{
    int was = force_dense;
    force_dense = on != 0;
    return was;
}

/* The ranks of the (k+1)-simplices within T in filtration order: rank[τ]
 * (NG_POS_NONE outside T) and its inverse by_rank, plus a zero bit set
 * over the ranks with one summary bit per word. Returns 1, or 0 when out
 * of memory. */
static int rank_cofacets(work *w, int k)
{
    size_t cnt = w->c->count[k + 1], m = 0;
    entry *a = NULL;
    w->rank = ng_malloc(cnt ? cnt : 1, sizeof *w->rank);
    if (w->rank == NULL || !sorted_columns(w, k + 1, NULL, &a, &m)) return 0;
    for (size_t q = 0; q < cnt; q++) w->rank[q] = NG_POS_NONE;
    /* by_rank overwrites the sorted entries from the front: entry r is
     * read before the bytes 4r.. are written, and 4r ≤ 16r */
    uint32_t *by_rank = (uint32_t *)(void *)a;
    for (size_t r = 0; r < m; r++) {
        uint32_t q = a[r].pos;
        w->rank[q] = (uint32_t)r;
        by_rank[r] = q;
    }
    uint32_t *shrunk = ng_realloc(a, m ? m : 1, sizeof *by_rank);
    w->by_rank = shrunk ? shrunk : by_rank;
    w->nwords = m / 64 + 1;
    w->bits = ng_calloc(w->nwords, sizeof *w->bits);
    w->summary = ng_calloc(w->nwords / 64 + 1, sizeof *w->summary);
    w->ranked = w->bits && w->summary;
    return w->ranked;
}

static void dense_flip(work *w, uint32_t r)
{
    size_t word = r / 64;
    uint64_t x = w->bits[word] ^= (uint64_t)1 << (r % 64);
    uint64_t bit = (uint64_t)1 << (word % 64);
    if (x)
        w->summary[word / 64] |= bit;
    else
        w->summary[word / 64] &= ~bit;
}

/* The first set rank ≥ from, or NG_POS_NONE. */
static uint32_t dense_next(const work *w, uint32_t from)
{
    size_t word = from / 64;
    if (word >= w->nwords) return NG_POS_NONE;
    uint64_t x = w->bits[word] & (~(uint64_t)0 << (from % 64));
    if (x) return (uint32_t)(word * 64 + (size_t)__builtin_ctzll(x));
    size_t s = word / 64, ns = w->nwords / 64 + 1;
    uint64_t y = w->summary[s] & (word % 64 == 63
                                      ? 0
                                      : ~(uint64_t)0 << (word % 64 + 1));
    while (y == 0) {
        if (++s >= ns) return NG_POS_NONE;
        y = w->summary[s];
    }
    word = s * 64 + (size_t)__builtin_ctzll(y);
    return (uint32_t)(word * 64 + (size_t)__builtin_ctzll(w->bits[word]));
}

/* Clears the bit set (its words are found through the summary). */
static void dense_clear(work *w)
{
    size_t ns = w->nwords / 64 + 1;
    for (size_t s = 0; s < ns; s++)
        for (uint64_t y = w->summary[s]; y; y &= y - 1)
            w->bits[s * 64 + (size_t)__builtin_ctzll(y)] = 0;
    memset(w->summary, 0, ns * sizeof *w->summary);
}

/* Adds the coboundary of the k-simplex q, less its entries ranked before
 * from (they cancel, as in add_coboundary). */
static void dense_add_coboundary(work *w, int k, uint32_t q, uint32_t from)
{
    size_t m;
    const uint32_t *cof = ng_complex_cofacet_list(w->c, k, q, &m);
    for (size_t i = 0; i < m; i++) {
        if (i + PREFETCH_AHEAD < m)
            __builtin_prefetch(w->rank + cof[i + PREFETCH_AHEAD]);
        uint32_t r = w->rank[cof[i]];
        if (r != NG_POS_NONE && r >= from) dense_flip(w, r);
    }
}

/* Finishes the reduction of column i (the k-simplex p) in the dense form,
 * from the runs' entries; as reduce_column. */
static int reduce_dense(work *w, int k, size_t i, uint32_t p,
                        uint32_t *owner, uint32_t *death, double *dval)
{
    if (!w->ranked && !rank_cofacets(w, k)) return 0;
    for (size_t h = 0; h < w->nruns; h++) {
        const run *r = &w->runs[h];
        const entry *src = r->cached ? w->cache : w->store;
        dense_flip(w, w->rank[r->head.pos]);
        for (size_t e = r->next; e < r->end; e++)
            dense_flip(w, w->rank[src[e].pos]);
    }
    w->nruns = w->store_n = w->live = 0;
    uint32_t r = 0;
    for (;;) {
        r = dense_next(w, r);
        if (r == NG_POS_NONE) {
            *death = NG_POS_NONE;
            break;
        }
        uint32_t tau = w->by_rank[r], o = owner[tau];
        if (o == NG_POS_NONE) {
            if (!store_reducer(w, i, p)) return 0;
            owner[tau] = (uint32_t)i;
            *death = tau;
            *dval = values_of(w, k + 1)[tau];
            break;
        }
        reducer R = w->red[o];
        dense_add_coboundary(w, k, R.col, r);
        if (!vec_push(&w->vcur, R.col)) return 0;
        for (uint32_t v = 0; v < R.v_len; v++) {
            uint32_t q = w->vstore.a[R.v_off + v];
            dense_add_coboundary(w, k, q, r);
            if (!vec_push(&w->vcur, q)) return 0;
        }
    }
    dense_clear(w);
    return 1;
}

/* Column i (the k-simplex p) after the apparent-pair pass: reduces it
 * with the heap, or in the dense form once it grows long; owner[τ] is the
 * index of the reducer whose pivot is the (k+1)-simplex τ. Writes its
 * pivot (or NG_POS_NONE) to *death, and the pivot's value to *dval.
 * Returns 1, or 0 when out of memory. */
static int reduce_column(work *w, int k, size_t i, uint32_t p,
                         uint32_t *owner, uint32_t *death, double *dval)
{
    entry first;
    w->nruns = w->store_n = w->live = 0;
    w->vcur.n = 0;
    if (earliest_cofacet(w, k, p, &first) > 0 &&
        owner[first.pos] == NG_POS_NONE) {
        /* the pivot is free: no additions, nothing to sort */
        if (!store_reducer(w, i, p)) return 0;
        owner[first.pos] = (uint32_t)i;
        *death = first.pos;
        *dval = first.value;
        return 1;
    }
    /* sorted into the cache: p comes back in the V of later columns */
    if (!add_coboundary(w, k, p, NULL)) return 0;
    for (;;) {
        int heavy = w->live > DENSE_AT;
        if (force_dense ||
            (heavy && (w->ranked || w->heavy_added >= w->rank_price)))
            return reduce_dense(w, k, i, p, owner, death, dval);
        entry piv;
        if (!runs_pivot(w, &piv)) {
            *death = NG_POS_NONE;
            return 1;
        }
        uint32_t o = owner[piv.pos];
        if (o == NG_POS_NONE) {
            if (!store_reducer(w, i, p)) return 0;
            owner[piv.pos] = (uint32_t)i;
            *death = piv.pos;
            *dval = piv.value;
            return 1;
        }
        reducer R = w->red[o];
        size_t before = w->live;
        if (!add_coboundary(w, k, R.col, &piv) || !vec_push(&w->vcur, R.col))
            return 0;
        for (uint32_t r = 0; r < R.v_len; r++) {
            uint32_t q = w->vstore.a[R.v_off + r];
            if (!add_coboundary(w, k, q, &piv) || !vec_push(&w->vcur, q))
                return 0;
        }
        if (heavy) w->heavy_added += w->live - before;
    }
}

/* Marks a column that the apparent-pair pass left to the heap. Positions
 * are below UINT32_MAX − 1 (complex_internal.h), so this is no position. */
#define PENDING (UINT32_MAX - 1u)

/* The apparent-pair pass over the columns cols[0..ncols) of degree k, in
 * parallel (inner threads): a column without cofacets is a class that
 * never dies; a column whose earliest cofacet τ has it as latest facet is
 * the pair (σ, τ); every other column is PENDING. The outcome of a column
 * depends on the filtration alone, and τ has one latest facet, so the
 * threads never write the same owner entry: the result does not depend on
 * the schedule. */
static int apparent_pass(work *w, int k, const entry *cols, size_t ncols,
                         uint32_t *owner, uint32_t *death, double *dval,
                         int inner)
{
    /* in position order: the cofacet lists, the vertex lists and the
     * values are then read nearly in storage order */
    size_t cnt = w->c->count[k];
    uint32_t *col_of = ng_malloc(cnt, sizeof *col_of);
    if (col_of == NULL) return 0;
    for (size_t p = 0; p < cnt; p++) col_of[p] = NG_POS_NONE;
    for (size_t i = 0; i < ncols; i++) col_of[cols[i].pos] = (uint32_t)i;
    long long total = (long long)cnt;
#pragma omp parallel for schedule(dynamic, 1024) num_threads(inner)
    for (long long pp = 0; pp < total; pp++) {
        uint32_t p = (uint32_t)pp, i = col_of[p];
        if (i == NG_POS_NONE) continue;
        entry first;
        if (earliest_cofacet(w, k, p, &first) == 0) {
            death[i] = NG_POS_NONE;
        } else if (latest_facet(w, k, first.pos, p)) {
            death[i] = first.pos;
            dval[i] = first.value;
            w->red[i] = (reducer){p, 0, 0};
            owner[first.pos] = i;
        } else {
            death[i] = PENDING;
        }
    }
    ng_free(col_of);
    return 1;
}

/* Union–find root with path halving. */
static uint32_t find_root(uint32_t *parent, uint32_t x)
{
    while (parent[x] != x) {
        parent[x] = parent[parent[x]];
        x = parent[x];
    }
    return x;
}

/* Degree 0 by union–find; marks the joining edges in killed (count[1]
 * entries, NG_POS_NONE = not a pivot). The edges within T in filtration
 * order are left in *edges_out (caller frees), *ne_out of them: degree 1
 * takes its columns from them. */
static int reduce_degree0(work *w, uint32_t *killed, entry **edges_out,
                          size_t *ne_out)
{
    const ng_complex *c = w->c;
    const double *v0 = values_of(w, 0);
    uint32_t *parent = ng_malloc(c->n, sizeof *parent);
    entry *edges = NULL;
    size_t ne = 0;
    int ok = 0;
    if (parent == NULL || !sorted_columns(w, 1, NULL, &edges, &ne))
        goto cleanup;
    for (size_t i = 0; i < c->n; i++) parent[i] = (uint32_t)i;
    for (size_t e = 0; e < ne; e++) {
        const ng_index *ev = vertices_of(w, 1, edges[e].pos);
        uint32_t ra = find_root(parent, ev[0]), rb = find_root(parent, ev[1]);
        if (ra == rb) continue;
        entry ea = {v0[ra], ra}, eb = {v0[rb], rb};
        uint32_t younger = entry_less(ea, eb) ? rb : ra;
        uint32_t elder = younger == ra ? rb : ra;
        parent[younger] = elder;
        killed[edges[e].pos] = 0;
        if (!add_pair(w, 0, younger, edges[e].pos,
                      v0[younger] == edges[e].value))
            goto cleanup;
    }
    for (size_t i = 0; i < c->n; i++)
        if (in_filtration(v0[i], w->T) && parent[i] == i &&
            !add_pair(w, 0, (uint32_t)i, NG_POS_NONE, 0))
            goto cleanup;
    ok = 1;
    *edges_out = edges;
    *ne_out = ne;
    edges = NULL;
cleanup:
    ng_free(parent);
    ng_free(edges);
    return ok;
}

/* ---- bars ---- */

typedef struct bar_record {
    double birth, death;
    int64_t bv[NG_COMPLEX_MAX_DIM + 1], dv[NG_COMPLEX_MAX_DIM + 1];
} bar_record;

static int cmp_bar(const void *pa, const void *pb)
{
    const bar_record *a = pa, *b = pb;
    if (a->birth != b->birth) return a->birth < b->birth ? -1 : 1;
    if (a->death != b->death) return a->death < b->death ? -1 : 1;
    for (int i = 0; i <= NG_COMPLEX_MAX_DIM; i++)
        if (a->bv[i] != b->bv[i]) return a->bv[i] < b->bv[i] ? -1 : 1;
    for (int i = 0; i <= NG_COMPLEX_MAX_DIM; i++)
        if (a->dv[i] != b->dv[i]) return a->dv[i] < b->dv[i] ? -1 : 1;
    return 0;
}

static void bars_release(ng_bars *b)
{
    ng_free(b->interval);
    ng_free(b->birth_vertices);
    ng_free(b->death_vertices);
    memset(b, 0, sizeof *b);
}

static int make_bars(const work *w, int k, ng_bars *out)
{
    size_t m = w->npairs[k];
    bar_record *rec = ng_malloc(m, sizeof *rec);
    out->degree = k;
    out->count = m;
    out->truncated = 0;
    out->interval = ng_malloc(m, 2 * sizeof(double));
    out->birth_vertices = ng_malloc(m, (size_t)(k + 1) * sizeof(int64_t));
    out->death_vertices = ng_malloc(m, (size_t)(k + 2) * sizeof(int64_t));
    if (rec == NULL || out->interval == NULL ||
        out->birth_vertices == NULL || out->death_vertices == NULL) {
        ng_free(rec);
        bars_release(out);
        return 0;
    }
    const double *bvals = values_of(w, k), *dvals = values_of(w, k + 1);
    for (size_t i = 0; i < m; i++) {
        pair pr = w->pairs[k][i];
        bar_record *r = &rec[i];
        memset(r, 0, sizeof *r);
        r->birth = bvals[pr.birth];
        const ng_index *bv = vertices_of(w, k, pr.birth);
        for (int t = 0; t <= k; t++) r->bv[t] = bv[t];
        if (pr.death == NG_POS_NONE) {
            r->death = INFINITY;
            for (int t = 0; t <= k + 1; t++) r->dv[t] = -1;
        } else {
            r->death = dvals[pr.death];
            const ng_index *dv = vertices_of(w, k + 1, pr.death);
            for (int t = 0; t <= k + 1; t++) r->dv[t] = dv[t];
        }
    }
    qsort(rec, m, sizeof *rec, cmp_bar);
    for (size_t i = 0; i < m; i++) {
        out->interval[2 * i] = rec[i].birth;
        out->interval[2 * i + 1] = rec[i].death;
        if (isinf(rec[i].death) && rec[i].death > 0) out->truncated++;
        for (int t = 0; t <= k; t++)
            out->birth_vertices[i * (size_t)(k + 1) + (size_t)t] = rec[i].bv[t];
        for (int t = 0; t <= k + 1; t++)
            out->death_vertices[i * (size_t)(k + 2) + (size_t)t] = rec[i].dv[t];
    }
    ng_free(rec);
    return 1;
}

static void work_release(work *w)
{
    ng_free(w->runs);
    ng_free(w->store);
    ng_free(w->cache);
    ng_free(w->cached_at);
    ng_free(w->vcur.a);
    ng_free(w->vstore.a);
    dense_release(w);
    ng_free(w->red);
    for (int k = 0; k < NG_COMPLEX_MAX_DIM; k++) ng_free(w->pairs[k]);
}

/* Reduces filtration j into *d. Returns 1, or 0 when out of memory. */
static int reduce_filtration(const ng_complex *c, int j, int inner,
                             ng_diagram *d)
{
    int D = c->top_dim - 1, ok = 0;
    work w;
    memset(&w, 0, sizeof w);
    w.c = c;
    w.j = j;
    w.T = c->scale_limit;
    uint32_t *cleared = NULL, *owner = NULL, *death = NULL;
    double *dval = NULL; /* per column: the value of its pivot */
    entry *cols = NULL;
    cleared = ng_malloc(c->count[1], sizeof *cleared);
    if (cleared == NULL) goto cleanup;
    for (size_t e = 0; e < c->count[1]; e++) cleared[e] = NG_POS_NONE;
    size_t ncols = 0;
    if (!reduce_degree0(&w, cleared, &cols, &ncols)) goto cleanup;
    for (int k = 1; k <= D; k++) {
        owner = ng_malloc(c->count[k + 1], sizeof *owner);
        if (owner == NULL) goto cleanup;
        if (k == 1) { /* the edges of degree 0, less the cleared ones */
            size_t m = 0;
            for (size_t i = 0; i < ncols; i++)
                if (cleared[cols[i].pos] == NG_POS_NONE) cols[m++] = cols[i];
            ncols = m;
        } else if (!sorted_columns(&w, k, cleared, &cols, &ncols)) {
            goto cleanup;
        }
        for (size_t e = 0; e < c->count[k + 1]; e++) owner[e] = NG_POS_NONE;
        ng_free(w.red);
        w.red = ng_malloc(ncols, sizeof *w.red);
        death = ng_malloc(ncols, sizeof *death);
        dval = ng_malloc(ncols, sizeof *dval);
        if (w.red == NULL || death == NULL || dval == NULL) goto cleanup;
        if (!apparent_pass(&w, k, cols, ncols, owner, death, dval, inner))
            goto cleanup;
        /* the other columns, latest simplex first: they never meet the
         * pivot of an apparent pair of an earlier column (that cofacet's
         * latest facet is the earlier simplex), so doing the apparent pairs
         * first changes nothing */
        w.vstore.n = 0;
        w.cache_n = 0;
        w.cached_at = ng_malloc(c->count[k], sizeof *w.cached_at);
        if (w.cached_at == NULL) goto cleanup;
        for (size_t q = 0; q < c->count[k]; q++) w.cached_at[q] = NG_POS_NONE;
        w.rank_price = 2 * ng_complex_count_within(c, k + 1, j);
        for (size_t i = ncols; i-- > 0;)
            if (death[i] == PENDING &&
                !reduce_column(&w, k, i, cols[i].pos, owner, &death[i],
                               &dval[i]))
                goto cleanup;
        for (size_t i = 0; i < ncols; i++)
            if (!add_pair(&w, k, cols[i].pos, death[i],
                          death[i] != NG_POS_NONE &&
                              dval[i] == cols[i].value))
                goto cleanup;
        ng_free(death);
        death = NULL;
        ng_free(dval);
        dval = NULL;
        ng_free(cols);
        cols = NULL;
        dense_release(&w);
        ng_free(w.cached_at);
        w.cached_at = NULL;
        ng_free(cleared);
        cleared = owner;
        owner = NULL;
    }
    d->max_degree = D;
    for (int k = 0; k <= D; k++)
        if (!make_bars(&w, k, &d->bars[k])) goto cleanup;
    for (int k = 0; k <= D + 1; k++)
        d->simplices[k] = ng_complex_count_within(c, k, j);
    ok = 1;
cleanup:
    work_release(&w);
    ng_free(cleared);
    ng_free(owner);
    ng_free(death);
    ng_free(dval);
    ng_free(cols);
    return ok;
}

void ng_persistence_free(ng_persistence *p)
{
    if (p == NULL) return;
    if (p->diagram)
        for (int j = 0; j < p->n_filtrations; j++)
            for (int k = 0; k < NG_COMPLEX_MAX_DIM; k++)
                bars_release(&p->diagram[j].bars[k]);
    ng_free(p->diagram);
    ng_free(p);
}

int ng_persistence_compute(const ng_complex *c, int threads,
                           ng_persistence **out, ng_error *err)
{
    return ng_persistence_compute_progress(c, threads, NULL, NULL, out, err);
}

int ng_persistence_compute_progress(const ng_complex *c, int threads,
                                    ng_progress_fn progress, void *ctx,
                                    ng_persistence **out, ng_error *err)
{
    if (out) *out = NULL;
    if (c == NULL || out == NULL)
        return ng_error_set(err, NG_ERR_USAGE,
                            "persistence: no complex or no output");
    int L = c->n_filtrations;
    ng_persistence *p = ng_calloc(1, sizeof *p);
    if (p == NULL) goto nomem;
    p->n_filtrations = L;
    p->max_degree = c->top_dim - 1;
    p->scale_limit = c->scale_limit;
    for (int k = 0; k <= c->top_dim; k++) p->simplices[k] = c->count[k];
    p->diagram = ng_calloc((size_t)L, sizeof *p->diagram);
    if (p->diagram == NULL) goto nomem;
    /* Fewer filtrations than threads: one filtration after the other, all
     * threads inside each (the apparent-pair pass); otherwise one thread
     * per filtration. */
    int nt = threads > 0 ? threads : omp_get_max_threads();
    int failed = 0, done = 0;
    if (L < nt) {
        for (int j = 0; j < L && !failed; j++) {
            if (!reduce_filtration(c, j, nt, &p->diagram[j])) failed = 1;
            if (progress) progress("reduction", (j + 1.0) / L, ctx);
        }
    } else {
#pragma omp parallel for num_threads(nt) schedule(dynamic, 1) \
    reduction(| : failed)
        for (int j = 0; j < L; j++) {
            if (!reduce_filtration(c, j, 1, &p->diagram[j])) failed = 1;
            int now;
#pragma omp atomic capture
            now = ++done;
            /* only the calling thread (thread 0) reports */
            if (progress && omp_get_thread_num() == 0)
                progress("reduction", (double)now / L, ctx);
        }
    }
    if (failed) goto nomem;
    *out = p;
    return NG_OK;
nomem:
    ng_persistence_free(p);
    return ng_error_set(err, NG_ERR_NOMEM,
                        "persistence: out of memory during the reduction");
}
