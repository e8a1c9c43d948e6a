/* distance_internal.h — the pieces behind distance.h, shared by
 * distance.c, bottleneck.c, wasserstein.c and distance_tree.c, and open to
 * the tests and the benchmark.
 *
 * The solvers below work on "finite diagrams": m × 2 arrays of points with
 * finite birth < finite death (validation, dropping of birth == death and
 * the essential points are distance.c's job). Costs are always computed by
 * the inline functions here, so every solver and every candidate list sees
 * bit-identical values.
 */
#ifndef NERVEGAP_DISTANCE_INTERNAL_H
#define NERVEGAP_DISTANCE_INTERNAL_H

#include "nervegap/distance.h"

#include <math.h>
#include <stddef.h>

/* L∞ distance of (b1, d1) and (b2, d2). */
static inline double distance_linf(double b1, double d1, double b2, double d2)
{
    double x = fabs(b1 - b2), y = fabs(d1 - d2);
    return x > y ? x : y;
}

/* L∞ distance of (b, d) to the diagonal. */
static inline double distance_diag(double b, double d) { return (d - b) / 2; }

/* c^p, exact for p = 1 and p = 2. */
static inline double distance_pow(double c, double p)
{
    if (p == 1.0) return c;
    if (p == 2.0) return c * c;
    return pow(c, p);
}

/* min and max for values that are never NaN (fmin and fmax are library
 * calls without -ffinite-math-only, and these sit in the inner loops). */
static inline double distance_min(double x, double y) { return y < x ? y : x; }
static inline double distance_max(double x, double y) { return y > x ? y : x; }

/* κ such that distance_pow of a cost computed with one rounding (every
 * distance_linf and distance_diag: one subtraction) is within κ·2^-53
 * relative of the exact c^p, to first order: 1 for p = 1; 3 for p = 2
 * (the square rounds once more); p + 3 otherwise (glibc's pow is within
 * one ulp — from memory of its documentation — and the rounding of c is
 * raised to the power p). */
static inline double distance_pow_kappa(double p)
{
    return p == 1.0 ? 1.0 : p == 2.0 ? 3.0 : p + 3.0;
}

/* ---- weighted 2-D k-d tree (distance_tree.c) ----
 * A static tree over n points; every point carries a weight and a
 * "preferred" flag that can be changed at any time (O(log n)); each node
 * knows the bounding box, the least weight of its points and the least
 * weight of its preferred points, which the two queries use for pruning. */
typedef struct distance_node {
    double xlo, xhi, ylo, yhi; /* bounding box of its points */
    double minw;               /* least weight of its points */
    double minp;               /* least weight of its preferred points */
} distance_node;

typedef struct distance_tree {
    size_t n;
    double *x, *y;       /* coordinates in tree order */
    double *w;           /* weights in tree order */
    unsigned char *pref; /* preferred flags in tree order */
    size_t *id;          /* tree position -> caller's index */
    size_t *pos;         /* caller's index -> tree position */
    size_t nodes;        /* node slots (heap numbering, root 1) */
    distance_node *node; /* per node slot */
} distance_tree;

#define DISTANCE_NONE ((size_t)-1)

/* Builds the tree over pts (n × 2); all weights 0, no point preferred.
 * NG_OK or NG_ERR_NOMEM (message written). Free with ng_distance_tree_free
 * (accepts a zeroed tree). */
int ng_distance_tree_build(distance_tree *t, const double *pts, size_t n,
                           ng_error *err);
void ng_distance_tree_free(distance_tree *t);
/* Sets the weight of the caller's point i (its flag unchanged). */
void ng_distance_tree_set(distance_tree *t, size_t i, double w);
/* Sets the weight of the caller's point i and whether it is preferred. */
void ng_distance_tree_mark(distance_tree *t, size_t i, double w,
                           int preferred);
/* Weight of the caller's point i. */
double ng_distance_tree_get(const distance_tree *t, size_t i);
/* Sets every weight from w[i] (caller's order) in O(n); flags unchanged. */
void ng_distance_tree_set_all(distance_tree *t, const double *w);
/* Some caller index i with distance_linf(q, x_i) ≤ r and weight ≤ wmax, or
 * DISTANCE_NONE. Deterministic. */
size_t ng_distance_tree_find(const distance_tree *t, double qx, double qy,
                             double r, double wmax);
/* The caller index minimising distance_pow(distance_linf(q, x_i), p) + w_i
 * (ties: a preferred point before the others, else the first met,
 * deterministically), its value in *v1 and the second-least value in *v2
 * (+inf when n < 2). DISTANCE_NONE when n = 0. */
size_t ng_distance_tree_best2(const distance_tree *t, double qx, double qy,
                              double p, double *v1, double *v2);
/* As ng_distance_tree_best2, and the caller index of a point of value *v2
 * in *second (DISTANCE_NONE when n < 2). */
size_t ng_distance_tree_best_two(const distance_tree *t, double qx,
                                 double qy, double p, double *v1,
                                 size_t *second, double *v2);

/* ---- solvers on finite diagrams ---- */

/* Exact bottleneck distance of two finite diagrams (0 when both empty). */
int ng_distance_bottleneck_finite(const double *a, size_t na, const double *b,
                                  size_t nb, double *out, ng_error *err);

/* Least total cost Σ cost^p over matchings, by the Hungarian method on the
 * (na + nb) × (na + nb) augmented cost matrix. O((na + nb)^3). */
int ng_distance_wasserstein_exact(const double *a, size_t na, const double *b,
                                  size_t nb, double p, double *sum,
                                  ng_error *err);

/* Least total cost Σ cost^p over matchings by shortest augmenting paths
 * on the geometric graph (see wasserstein.c). *sum receives the computed
 * total cost of the matching found, *sum_err a bound on the rounding error
 * of *sum against that matching's exact cost, and *lower a lower bound of
 * the exact optimum (a dual solution, rounding allowed for). NG_OK or
 * NG_ERR_NOMEM (message written). */
int ng_distance_wasserstein_paths(const double *a, size_t na, const double *b,
                                  size_t nb, double p, double *sum,
                                  double *sum_err, double *lower,
                                  ng_error *err);

/* A true bound on |W − W_p| / W_p for the value W = (sum + extra)^(1/p)
 * computed in floating point, where sum is within sum_err of the exact
 * cost of some matching, extra within extra_err of the exact cost of the
 * essential points' part, and lower + extra − extra_err ≤ the exact
 * optimum Σ cost^p. 0 when everything is exactly 0; +inf when the lower
 * bound is not positive. */
double ng_distance_relative_bound(double p, double sum, double sum_err,
                                  double lower, double extra,
                                  double extra_err);

/* Augmented size na + nb up to which ng_wasserstein_distance uses the
 * Hungarian method (above it, ng_distance_wasserstein_paths). The setter (tests and measurements only; not thread-safe)
 * returns the previous limit; DISTANCE_NONE restores the default. */
size_t ng_distance_exact_limit(void);
size_t ng_distance_set_exact_limit(size_t limit);

#endif
