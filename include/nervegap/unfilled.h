/* unfilled.h — the triangles that Rips fills and Čech does not, at one
 * scale t: the triangles σ with rips(σ) ≤ t < cech(σ) (DESIGN §2.3), whose
 * three balls meet pairwise at t but have no common point yet. They are
 * where the two complexes differ first, and what the ball picture of a
 * report colours.
 *
 * The values are those of ng_simplex_values (values.h), made monotone as
 * in a run, so a triangle counts here exactly when a run's grid counts it
 * among simplices_rips − simplices_cech at t.
 */
#ifndef NERVEGAP_UNFILLED_H
#define NERVEGAP_UNFILLED_H

#include "nervegap/common.h"
#include "nervegap/values.h"

typedef struct ng_unfilled {
    double scale;            /* t */
    size_t n;                /* points of the space */
    size_t edges;            /* edges with Rips edge value ≤ t */
    size_t candidates;       /* triangles whose three edges are such edges */
    size_t rips_triangles;   /* triangles with rips ≤ t */
    size_t count;            /* of those, the ones with cech > t */
    ng_index *triangle;      /* count × 3 vertices, each row increasing,
                                rows in lexicographic order */
    unsigned char *in_unfilled; /* n flags: 1 when the point is a vertex
                                   of an unfilled triangle */
} ng_unfilled;

/* Default cap on the candidate triangles examined (each needs a Čech
 * value): about ten seconds of work on one core. */
#define NG_UNFILLED_DEFAULT_MAX ((size_t)20000000)

/* Finds the unfilled triangles of the checked space s (ng_space_check) at
 * scale t ≥ 0: builds the graph of the edges with Rips value ≤ t (k-d tree
 * for coordinates, the matrix for a given metric), counts the candidate
 * triangles and, when there are at most max_candidates (0: no cap),
 * computes both values of each. threads ≤ 0: the OpenMP default. On
 * success out owns arrays freed by ng_unfilled_free; on failure out is
 * zeroed: NG_ERR_USAGE (t negative or not finite), NG_ERR_BUDGET (more
 * candidates than max_candidates, the message says how many), NG_ERR_NOMEM.
 * The result is the same for any thread count. */
NG_API int ng_unfilled_compute(const ng_space *s, double t,
                               size_t max_candidates, int threads,
                               ng_unfilled *out, ng_error *err);

/* Frees the arrays of u and zeroes it. Accepts NULL. */
NG_API void ng_unfilled_free(ng_unfilled *u);

#endif
