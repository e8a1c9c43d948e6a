/* complex.h — the simplex set that every filtration shares: all cliques of a
 * neighbour graph up to a top dimension, with the values of L filtrations
 * per simplex (DESIGN §2.5, §3).
 *
 * Concepts:
 *   - A k-simplex is a set of k + 1 vertices, written in increasing order
 *     v_0 < … < v_k. Its combinatorial index (the combinatorial number
 *     system) is key = Σ_i C(v_i, i + 1). Keys of k-simplices are distinct
 *     and their order is the colexicographic order of the vertex lists.
 *   - The complex stores, per dimension k, the k-simplices sorted by key; a
 *     simplex's position in that table (0-based) is its name inside the
 *     library. Faces and cofaces are never stored: they are enumerated on
 *     demand from the sorted neighbour lists and found by binary search.
 *   - Every simplex carries one value per filtration j = 0..L−1: vertices
 *     take theirs from an array, larger simplices from one call of the
 *     value callback, raised to the max over their facets so that a face is
 *     never later than its coface whatever the callback's rounding.
 *   - Filtration j at scale limit T holds the simplices with value_j ≤ T
 *     (and value_j < +inf: +inf means "never", also when T = +inf),
 *     totally ordered by (value_j, dimension, key): faces before cofaces,
 *     deterministic.
 */
#ifndef NERVEGAP_COMPLEX_H
#define NERVEGAP_COMPLEX_H

#include "nervegap/common.h"
#include "nervegap/kdtree.h"

/* Top dimension D + 1 ≤ 5: homology up to degree D = 4. */
#define NG_COMPLEX_MAX_DIM 5

/* A combinatorial index. 128 bits: C(n, 6) overflows 64 bits already for
 * n ≈ 2^13.3, and the library allows up to 6 vertices per simplex. */
__extension__ typedef unsigned __int128 ng_simplex_key;

/* The filtration values of the simplex v[0..m-1] (m ≥ 2, vertices in
 * increasing order): writes out[0..L−1] and returns 0, or returns nonzero on
 * failure (a negative NG_ERR_* code is passed on as the build's status, any
 * other nonzero value becomes NG_ERR_RUNTIME). Called exactly once per
 * simplex of dimension ≥ 1, concurrently from several threads: ctx must be
 * safe to use from all of them. NaN is refused; +inf means "never". */
typedef int (*ng_value_fn)(const ng_index *v, int m, double *out, void *ctx);

/* What ng_complex_build needs. Everything is borrowed for the duration of
 * the call only (the complex keeps its own copy of the graph). */
typedef struct ng_complex_spec {
    const ng_csr *graph;  /* symmetric, no loops, sorted neighbour lists;
                             graph->dist is ignored (may be NULL) */
    int top_dim;          /* D + 1, 1..NG_COMPLEX_MAX_DIM */
    int n_filtrations;    /* L ≥ 1 */
    const double *vertex_values; /* n × L row-major: vertex i, filtration j
                                    at [i * L + j]; not NaN */
    double scale_limit;   /* T, not NaN (+inf: no cut) */
    ng_value_fn value;    /* values of simplices with ≥ 2 vertices */
    void *ctx;            /* passed to value */
    int threads;          /* ≤ 0: the OpenMP default, else that many */
} ng_complex_spec;

/* The size of a clique set, known before anything is stored. */
typedef struct ng_complex_size {
    size_t count[NG_COMPLEX_MAX_DIM + 1]; /* k-simplices, k = 0..top_dim */
    size_t total;                         /* Σ count */
    size_t bytes_build;  /* bytes ng_complex_build keeps allocated */
    size_t bytes_reduce; /* working bytes of ng_persistence_compute for ONE
                            filtration (an upper bound up to the growth of
                            the reduction's own columns); multiply by the
                            number of filtrations reduced at once */
} ng_complex_size;

typedef struct ng_complex ng_complex;

/* Counts the cliques of graph per dimension 0..top_dim without storing them
 * and fills *out (count[k] = 0 above top_dim) with the bytes that
 * ng_complex_build and one filtration's reduction would need for
 * n_filtrations filtrations. The same graph checks as ng_complex_build.
 * Returns NG_OK, NG_ERR_USAGE (bad arguments) or NG_ERR_INPUT (graph not
 * symmetric or not sorted, naming the vertex); *out is zeroed on error. */
NG_API int ng_complex_estimate(const ng_csr *graph, int top_dim,
                               int n_filtrations, int threads,
                               ng_complex_size *out, ng_error *err);

/* As ng_complex_estimate, but gives up once more than max_simplices
 * simplices of dimension ≥ 1 have been counted: *over is then 1, out holds
 * the counts found so far (lower bounds) and bytes_build = bytes_reduce =
 * SIZE_MAX. Counting a dense graph's cliques takes as long as there are
 * cliques (C(n, 5) for a complete graph and top_dim 4); the cap keeps a
 * complex that cannot fit a budget from costing hours to refuse. */
NG_API int ng_complex_estimate_capped(const ng_csr *graph, int top_dim,
                                      int n_filtrations, int threads,
                                      size_t max_simplices,
                                      ng_complex_size *out, int *over,
                                      ng_error *err);

/* Enumerates the cliques, calls the value callback once per simplex of
 * dimension ≥ 1 and stores the monotone values. On success *out owns the
 * complex (free with ng_complex_free). On failure *out is NULL and the
 * status is NG_ERR_USAGE (bad arguments), NG_ERR_INPUT (bad graph, NaN
 * value), NG_ERR_BUDGET (more than UINT32_MAX − 1 simplices of one
 * dimension, or so many vertices that keys of top_dim + 1 vertices leave
 * 128 bits: above 5 868 182 vertices at top_dim 5), NG_ERR_NOMEM, or the
 * callback's failure (see ng_value_fn), the message naming the simplex. */
NG_API int ng_complex_build(const ng_complex_spec *spec, ng_complex **out,
                            ng_error *err);

/* Frees a complex. Accepts NULL. */
NG_API void ng_complex_free(ng_complex *c);

/* Shape of a built complex. */
NG_API size_t ng_complex_vertex_count(const ng_complex *c);
NG_API int ng_complex_top_dim(const ng_complex *c);
NG_API int ng_complex_filtration_count(const ng_complex *c);
NG_API double ng_complex_scale_limit(const ng_complex *c);

/* Number of k-simplices (0 when k is out of range), and of those with
 * value_j ≤ T. */
NG_API size_t ng_complex_count(const ng_complex *c, int k);
NG_API size_t ng_complex_count_within(const ng_complex *c, int k, int j);

/* The k-simplices' vertex lists, (k + 1) per simplex in increasing order,
 * simplices in key order; and their values in filtration j, one per
 * simplex in the same order. Borrowed from c (valid until ng_complex_free);
 * NULL when k or j is out of range. */
NG_API const ng_index *ng_complex_vertices(const ng_complex *c, int k);
NG_API const double *ng_complex_values(const ng_complex *c, int k, int j);

/* Position of the simplex v[0..m-1] (any order of distinct vertices) in
 * the table of dimension m − 1, or SIZE_MAX when it is not a simplex of c. */
NG_API size_t ng_complex_find(const ng_complex *c, const ng_index *v, int m);

/* The combinatorial index of the k-simplex at position pos. */
NG_API ng_simplex_key ng_complex_key(const ng_complex *c, int k, size_t pos);

/* Combinatorial number system for m = 1..NG_COMPLEX_MAX_DIM + 1 vertices.
 * ng_simplex_key_fits: 1 when every key of m vertices below n (and the
 * arithmetic that produces it) fits in ng_simplex_key, else 0.
 * ng_simplex_key_encode: key of v[0..m-1] (strictly increasing, within a
 * range that fits). ng_simplex_key_decode: the inverse; writes v[0..m-1]
 * in increasing order. No allocation, thread-safe. */
NG_API int ng_simplex_key_fits(uint64_t n, int m);
NG_API ng_simplex_key ng_simplex_key_encode(const ng_index *v, int m);
NG_API void ng_simplex_key_decode(ng_simplex_key key, int m, ng_index *v);

#endif
