/* radius_internal.h — what radius.c lends the rest of the library
 * (private): the nearest neighbours of every point of a distance matrix,
 * which the radius rules and the scale search (scale_limit.c) both need.
 */
#ifndef NERVEGAP_RADIUS_INTERNAL_H
#define NERVEGAP_RADIUS_INTERNAL_H

#include "nervegap/common.h"

/* ng_knn_all for an n × n distance matrix (row-major, finite): for every
 * point i its k nearest other points, out_d[i*k + r] and out_j[i*k + r]
 * for r = 0..k−1 in increasing order of (distance, index). Requires
 * 1 ≤ k ≤ n − 1. threads ≤ 0: the OpenMP default. NG_OK or NG_ERR_NOMEM;
 * the result is the same for any thread count. */
int ng_knn_given(const double *dist, size_t n, size_t k, int threads,
                 double *out_d, ng_index *out_j, ng_error *err);

#endif
