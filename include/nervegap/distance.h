/* distance.h — bottleneck and p-Wasserstein distances between two
 * persistence diagrams (DESIGN.md §2.6).
 *
 * A diagram is given as an m × 2 row-major array of points (birth, death)
 * with birth < death ≤ +inf; the arrays are borrowed and never modified.
 * Points with birth == death are accepted and ignored. The ground metric is
 * L∞: d((b,d),(b',d')) = max(|b−b'|, |d−d'|), and a point may instead be
 * matched to the diagonal at cost (death − birth)/2.
 * Points with death = +inf ("essential") match only essential points of
 * the other diagram, at cost |birth − birth'|; when the two diagrams have
 * different numbers of essential points the distance is +inf (a plain
 * result, not an error).
 * Both functions are single-threaded and deterministic: the same inputs
 * give the same bits on every run.
 */
#ifndef NERVEGAP_DISTANCE_H
#define NERVEGAP_DISTANCE_H

#include "nervegap/common.h"

/* Bottleneck distance W∞ (min over matchings of the largest cost), exact:
 * the value returned is one of the costs, bit for bit. a, b: na × 2 and
 * nb × 2 arrays (may be NULL when the count is 0). On success *out is the
 * distance (possibly +inf) and NG_OK is returned. On failure *out is left
 * untouched and the status is NG_ERR_INPUT (a NaN, birth > death, or an
 * infinite birth; the message names diagram A or B and the point index),
 * NG_ERR_USAGE (NULL arguments) or NG_ERR_NOMEM. */
NG_API int ng_bottleneck_distance(const double *a, size_t na, const double *b,
                                  size_t nb, double *out, ng_error *err);

/* p-Wasserstein distance W_p = (min over matchings of Σ cost^p)^(1/p) for
 * any p ≥ 1, computed exactly up to floating-point rounding: the Hungarian
 * method for very small problems (reporting *achieved_rel_error = 0) and
 * shortest augmenting paths on the geometric graph otherwise, which
 * certifies its result by a dual (lower) bound of the optimum: then
 * *achieved_rel_error is a true bound on |W − W_p| / W_p for the value
 * returned, rounding included (typically 1e-14; it is larger only when the
 * distance is tiny beside the coordinates, so that rounding dominates).
 * rel_error is the relative error the caller can accept (a caller with no
 * opinion passes 1e-6); nothing is gained by asking for less, and the
 * bound reached is reported either way, so the caller can compare.
 * achieved_rel_error may be NULL. On failure *out and *achieved_rel_error
 * are left untouched and the status is NG_ERR_USAGE (p < 1 or NaN,
 * rel_error < 0 or NaN, NULL arguments), NG_ERR_INPUT (a bad point, as for
 * ng_bottleneck_distance) or NG_ERR_NOMEM. */
NG_API int ng_wasserstein_distance(const double *a, size_t na,
                                   const double *b, size_t nb, double p,
                                   double rel_error, double *out,
                                   double *achieved_rel_error,
                                   ng_error *err);

#endif
