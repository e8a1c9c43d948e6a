/* cech.h — the Čech value kernels (private): the first scale at which the
 * growing balls of one simplex have a common point, one kernel per metric.
 *
 * The kernels are plain functions over small arrays: no allocation, no
 * validation, no global state (safe under OpenMP). values.c checks and
 * gathers the input and dispatches here; the complex builder may call
 * ng_cech_euclid directly with cached squared distances.
 */
#ifndef NERVEGAP_CECH_H
#define NERVEGAP_CECH_H

#include "nervegap/common.h"
#include "nervegap/law.h"
#include "nervegap/values.h"

/* Euclidean Čech value of m points (1 ≤ m ≤ NG_SIMPLEX_MAX_VERTICES) given
 * only by their squared pairwise distances sqdist (m × m row-major,
 * symmetric, zero diagonal) and base radii rho (m values ≥ 0):
 * min over y of max_i tau_i(|y − x_i|). Exact up to rounding (see the
 * tolerances in cech.c); +inf when no finite scale works (law scaled with
 * rho = 0 at two distinct points, or at one point that another ball of
 * rho = 0 must reach). The ambient dimension never enters. */
double ng_cech_euclid(ng_law law, int m, const double *restrict sqdist,
                      const double *restrict rho);

/* One-dimensional Čech value of m intervals [c_i − r_i(t), c_i + r_i(t)]:
 * the first t ≥ max_i b_i at which max_i (c_i − r_i(t)) ≤ min_i (c_i +
 * r_i(t)). Used coordinate by coordinate for chebyshev (and manhattan in
 * the plane after the rotation (x + y, x − y)). */
double ng_cech_interval(ng_law law, int m, const double *restrict center,
                        const double *restrict rho);

/* Intrinsic Čech value in a finite metric space (n × n matrix dist, radii
 * rho_all of all n points) of the vertices v[0..m-1]: min over the sample
 * points y of max_i tau_i(dist(y, v_i)). */
double ng_cech_given(ng_law law, int m, const ng_index *restrict v, size_t n,
                     const double *restrict dist,
                     const double *restrict rho_all);

#endif
