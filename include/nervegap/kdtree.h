/* kdtree.h — exact nearest-neighbour search over a coordinate cloud under
 * the euclidean, chebyshev or manhattan metric.
 *
 * Two kinds of query, both for every point of the cloud at once and both
 * run in parallel with OpenMP (threads ≤ 0: the OpenMP default, otherwise
 * exactly that many threads):
 *   - the k nearest other points of each point;
 *   - the points within a per-point radius of each point, filtered by an
 *     exact predicate (the neighbour graph of the complex).
 * A k-d tree is used where it pays; brute force is chosen automatically in
 * high dimension or for tiny clouds. Results are identical either way and
 * for any thread count: every distance is computed by one function, with
 * the same operations in the same order as ng_metric_distance, so a
 * distance reported here is bit-identical to ng_metric_distance(x_i, x_j).
 * No n × n matrix is ever formed.
 */
#ifndef NERVEGAP_KDTREE_H
#define NERVEGAP_KDTREE_H

#include "nervegap/common.h"
#include "nervegap/metric.h"

typedef struct ng_kdtree ng_kdtree;

/* Builds a tree over n ≥ 1 points of dimension dim ≥ 1 (row-major pts; the
 * tree keeps its own copy in tree order, so pts may be freed afterwards).
 * metric must be a coordinate metric. Uses the OpenMP default number of
 * threads; the tree is the same for any number. On success *out owns the
 * tree (free with ng_kdtree_free). On failure *out is NULL and the status is
 * NG_ERR_USAGE (bad arguments) or NG_ERR_NOMEM. */
NG_API int ng_kdtree_build(const double *pts, size_t n, size_t dim,
                           ng_metric metric, ng_kdtree **out, ng_error *err);

/* Frees a tree. Accepts NULL. */
NG_API void ng_kdtree_free(ng_kdtree *tree);

/* ng_knn_all over the points a tree was built on (always the tree, never
 * brute force). Same arrays, order and errors as ng_knn_all. */
NG_API int ng_kdtree_knn(const ng_kdtree *tree, size_t k, int threads,
                         double *dist, ng_index *idx, ng_error *err);

/* For every point i, its k nearest other points (i itself excluded by index,
 * coincident points included at distance 0): dist[i*k + r] and idx[i*k + r]
 * for r = 0..k-1, in increasing order of (distance, index). Requires
 * 1 ≤ k ≤ n − 1; dist and idx are caller-owned arrays of n × k. Chooses the
 * tree or brute force by itself. Returns NG_OK; NG_ERR_USAGE (k out of
 * range, metric given, dim = 0, n > NG_INDEX_MAX) or NG_ERR_NOMEM, and
 * then the contents of dist and idx are unspecified. */
NG_API int ng_knn_all(const double *pts, size_t n, size_t dim,
                      ng_metric metric, size_t k, int threads, double *dist,
                      ng_index *idx, ng_error *err);

/* An exact filter applied to every candidate pair (i, j), i != j, with
 * d = d(x_i, x_j) ≤ radius[i]: 1 keeps it, 0 drops it, and a negative
 * value stops the whole search (the graph then holds what was kept before,
 * in no particular subset: only good for freeing). It is called from
 * several threads at once (ctx must be safe to use concurrently) and at
 * most once per candidate pair and direction. */
typedef int (*ng_pair_filter)(size_t i, size_t j, double d, void *ctx);

/* A graph in compressed sparse rows: the neighbours of i are
 * nbr[offset[i] .. offset[i+1]-1] in increasing index order, with their
 * distances in dist at the same positions. */
typedef struct ng_csr {
    size_t n;        /* number of vertices */
    size_t *offset;  /* n + 1 entries */
    ng_index *nbr;   /* offset[n] entries */
    double *dist;    /* offset[n] entries */
} ng_csr;

/* For every point i, the points j != i with d(x_i, x_j) ≤ radius[i] for which
 * filter (when not NULL) returns nonzero. The caller chooses radius[i] large
 * enough to contain every pair it wants (for a symmetric graph: radius[i] ≥
 * the largest distance the filter can keep at i); radius[i] may be +inf but
 * not negative or NaN. On success *out holds the graph (free with
 * ng_csr_free). On failure *out is zeroed and the status is NG_ERR_USAGE
 * (bad arguments or radius) or NG_ERR_NOMEM. */
NG_API int ng_neighbors_within(const double *pts, size_t n, size_t dim,
                               ng_metric metric, const double *radius,
                               ng_pair_filter filter, void *ctx, int threads,
                               ng_csr *out, ng_error *err);

/* ng_neighbors_within over the points a tree was built on (always the
 * tree). Same output and errors. */
NG_API int ng_kdtree_within(const ng_kdtree *tree, const double *radius,
                            ng_pair_filter filter, void *ctx, int threads,
                            ng_csr *out, ng_error *err);

/* Frees the arrays of a graph and zeroes it. Accepts NULL. */
NG_API void ng_csr_free(ng_csr *graph);

#endif
