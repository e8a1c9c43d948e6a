/* values.h — filtration values of one simplex (DESIGN §2.2–2.4): the Rips
 * value (balls meet pairwise) and the Čech value (balls meet jointly) of a
 * set of vertices of a weighted point set, under the three growth laws and
 * the four metrics.
 *
 * Invariants of what ng_simplex_values returns: rips ≤ cech; both values
 * are at least the values of every face (monotone despite rounding); both
 * are ≥ 0 and may be +inf (a point that never grows under law scaled with
 * rho = 0, or a pair with rho_i + rho_j = 0 < d).
 *
 * Everything here is pure and thread-safe: no allocation, no global state.
 */
#ifndef NERVEGAP_VALUES_H
#define NERVEGAP_VALUES_H

#include "nervegap/common.h"
#include "nervegap/law.h"
#include "nervegap/metric.h"

/* A weighted point set as the value functions see it. Borrowed views;
 * nothing is owned, nothing is copied. */
typedef struct ng_space {
    ng_metric metric;
    ng_law law;
    size_t n, dim;         /* dim = 0 for a distance matrix */
    const double *coords;  /* n × dim row-major, or NULL when metric ==
                              NG_METRIC_GIVEN */
    const double *dist;    /* n × n row-major when metric == NG_METRIC_GIVEN,
                              else NULL */
    const double *rho;     /* n base radii ≥ 0 (after any normalisation) */
} ng_space;

/* Largest simplex handled: 6 vertices, enough for homology up to degree 4. */
#define NG_SIMPLEX_MAX_VERTICES 6

/* Checks that s can be evaluated: known metric and law, the arrays its
 * metric needs are present, coordinates finite, radii finite and ≥ 0, a
 * given distance matrix finite, ≥ 0, symmetric with a zero diagonal, and
 * manhattan only in dimension ≤ 2 (Čech values are exact only in the
 * plane). Returns NG_OK, NG_ERR_USAGE (metric/dimension) or NG_ERR_INPUT
 * (bad data, naming the 0-based point or matrix entry). Call it once before
 * the value functions, which assume a checked space. */
NG_API int ng_space_check(const ng_space *s, ng_error *err);

/* Vertex birth b_i = the first scale at which point i is present. */
NG_API double ng_vertex_birth(const ng_space *s, ng_index i);

/* Rips value of an edge of length d between points with base radii rho_i
 * and rho_j: min{t ≥ max(b_i, b_j) : r_i(t) + r_j(t) ≥ d} (DESIGN §2.3). */
NG_API double ng_rips_edge_value(ng_law law, double rho_i, double rho_j,
                                 double d);

/* Raw Rips value of the simplex v[0..m-1]: max(max b_i, max_{i<j} e_ij).
 * No validation (indices < n, 1 ≤ m ≤ NG_SIMPLEX_MAX_VERTICES assumed). */
NG_API double ng_rips_value(const ng_space *s, const ng_index *v, int m);

/* Raw Čech value of v[0..m-1]: min over y of max_i tau_i(d(y, x_i)), with y
 * in the ambient space (euclidean, chebyshev, manhattan in the plane) or
 * among the n sample points (given). Not made monotone; no validation. */
NG_API double ng_cech_value(const ng_space *s, const ng_index *v, int m);

/* Both values of v[0..m-1], made monotone: each is raised to the max of
 * the raw values over all faces of the simplex, and cech ≥ rips is
 * enforced. Writes *rips and *cech (either may be NULL) and returns NG_OK;
 * NG_ERR_INPUT when m < 1 or m > NG_SIMPLEX_MAX_VERTICES, an index is
 * ≥ n, or a vertex is repeated (outputs untouched then). */
NG_API int ng_simplex_values(const ng_space *s, const ng_index *v, int m,
                             double *rips, double *cech, ng_error *err);

#endif
