/* kdtree.h — exact nearest-neighbour search over a coordinate cloud under
 * the euclidean, chebyshev or manhattan metric.
 *
 * Two kinds of query, both for every point of the cloud at once and both
 * run in parallel with OpenMP (threads ≤ 0: the OpenMP default):
 *   - the k nearest other points of each point;
 *   - the points within a per-point radius of each point, filtered by an
 *     exact predicate (the neighbour graph of the complex).
 * A k-d tree is used where it pays; brute force is chosen automatically in
 * high dimension or for tiny clouds. Results are identical either way and
 * for any thread count. No n × n matrix is ever formed.
 */
#ifndef NERVEGAP_KDTREE_H
#define NERVEGAP_KDTREE_H

#include "nervegap/common.h"
#include "nervegap/metric.h"

typedef struct ng_kdtree ng_kdtree;

/* Builds a tree over n points of dimension dim (row-major pts, borrowed: it
 * must outlive the tree). metric must be a coordinate metric. On success
 * *out owns the tree (free with ng_kdtree_free). */
NG_API int ng_kdtree_build(const double *pts, size_t n, size_t dim,
                           ng_metric metric, ng_kdtree **out, ng_error *err);

/* Frees a tree. Accepts NULL. */
NG_API void ng_kdtree_free(ng_kdtree *tree);

/* For every point i, its k nearest other points (i itself excluded by index,
 * coincident points included at distance 0): dist[i*k + r] and idx[i*k + r]
 * for r = 0..k-1, in increasing order of (distance, index). Requires
 * 1 ≤ k ≤ n − 1; dist and idx are caller-owned arrays of n × k. Chooses the
 * tree or brute force by itself. */
NG_API int ng_knn_all(const double *pts, size_t n, size_t dim,
                      ng_metric metric, size_t k, int threads, double *dist,
                      ng_index *idx, ng_error *err);

/* An exact filter applied to every candidate pair (i, j), i != j, with
 * d = d(x_i, x_j): nonzero keeps it. */
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
 * the largest distance the filter can keep at i). On success *out holds the
 * graph (free with ng_csr_free). */
NG_API int ng_neighbors_within(const double *pts, size_t n, size_t dim,
                               ng_metric metric, const double *radius,
                               ng_pair_filter filter, void *ctx, int threads,
                               ng_csr *out, ng_error *err);

/* Frees the arrays of a graph and zeroes it. Accepts NULL. */
NG_API void ng_csr_free(ng_csr *graph);

#endif
