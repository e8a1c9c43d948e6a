/* kdtree_internal.h — private hooks of kdtree.c for the tests and the
 * benchmark: force the tree or brute force, and ask which one the automatic
 * rule picks. The public entry points (kdtree.h) always use
 * NG_KDTREE_AUTO.
 */
#ifndef NERVEGAP_KDTREE_INTERNAL_H
#define NERVEGAP_KDTREE_INTERNAL_H

#include "nervegap/kdtree.h"

typedef enum ng_kdtree_method {
    NG_KDTREE_AUTO = 0, /* ng_kdtree_choose decides */
    NG_KDTREE_TREE,     /* always build a k-d tree */
    NG_KDTREE_BRUTE     /* always compare all pairs */
} ng_kdtree_method;

/* The method the automatic rule picks for n points in dimension dim
 * (NG_KDTREE_TREE or NG_KDTREE_BRUTE; see the rule in kdtree.c). */
ng_kdtree_method ng_kdtree_choose(size_t n, size_t dim);

/* ng_knn_all with the method forced (AUTO: as ng_knn_all). */
int ng_kdtree_knn_using(ng_kdtree_method method, const double *pts, size_t n,
                        size_t dim, ng_metric metric, size_t k, int threads,
                        double *dist, ng_index *idx, ng_error *err);

/* ng_neighbors_within with the method forced (AUTO: as
 * ng_neighbors_within). */
int ng_kdtree_within_using(ng_kdtree_method method, const double *pts,
                           size_t n, size_t dim, ng_metric metric,
                           const double *radius, ng_pair_filter filter,
                           void *ctx, int threads, ng_csr *out,
                           ng_error *err);

/* Leaf bucket size of the trees built from now on (≥ 1; 0 restores the
 * default). For measurements only; not thread-safe. */
void ng_kdtree_set_leaf_size(size_t leaf_size);

#endif
