/* persistence.h — barcodes of every filtration of a complex (complex.h) by
 * mod-2 reduction, degrees 0..D with D = top_dim − 1.
 *
 * A bar of degree k is [birth, death): a class created by the k-simplex
 * whose value is birth and killed by the (k+1)-simplex whose value is
 * death. death = +inf: the class is alive at the scale limit T (a truncated
 * bar). Bars of length zero (birth == death) are not reported. The pairing
 * of simplices is the persistence pairing of the total order (value,
 * dimension, key) of complex.h, so bars, birth and death simplices are
 * unique and do not depend on the number of threads.
 */
#ifndef NERVEGAP_PERSISTENCE_H
#define NERVEGAP_PERSISTENCE_H

#include "nervegap/common.h"
#include "nervegap/complex.h"

/* The bars of one degree k of one filtration, sorted by birth, then death,
 * then birth vertices, then death vertices (lexicographically). */
typedef struct ng_bars {
    int degree;               /* k */
    size_t count;             /* m */
    size_t truncated;         /* bars with death = +inf */
    double *interval;         /* m × 2: birth, death */
    int64_t *birth_vertices;  /* m × (k + 1), increasing per bar */
    int64_t *death_vertices;  /* m × (k + 2), increasing; −1s for +inf */
} ng_bars;

/* The barcode of one filtration. */
typedef struct ng_diagram {
    int max_degree;                           /* D */
    ng_bars bars[NG_COMPLEX_MAX_DIM];         /* degrees 0..D */
    size_t simplices[NG_COMPLEX_MAX_DIM + 1]; /* k-simplices with value ≤ T,
                                                 k = 0..D + 1 */
} ng_diagram;

/* The barcodes of all filtrations of a complex. */
typedef struct ng_persistence {
    int n_filtrations;                        /* L */
    int max_degree;                           /* D */
    double scale_limit;                       /* T */
    size_t simplices[NG_COMPLEX_MAX_DIM + 1]; /* all k-simplices (cliques) */
    ng_diagram *diagram;                      /* L diagrams, filtration order */
} ng_persistence;

/* Reduces every filtration of c (OpenMP across filtrations; threads ≤ 0:
 * the OpenMP default, else that many). c is only read and may be freed
 * afterwards. On success *out owns the result (free with
 * ng_persistence_free); on failure *out is NULL and the status is
 * NG_ERR_USAGE (c NULL) or NG_ERR_NOMEM. */
NG_API int ng_persistence_compute(const ng_complex *c, int threads,
                                  ng_persistence **out, ng_error *err);

/* As ng_persistence_compute, and reports stage "reduction" to progress
 * (may be NULL) after each filtration: fraction = filtrations done / L. */
NG_API int ng_persistence_compute_progress(const ng_complex *c, int threads,
                                           ng_progress_fn progress, void *ctx,
                                           ng_persistence **out,
                                           ng_error *err);

/* Frees a result and everything in it. Accepts NULL. */
NG_API void ng_persistence_free(ng_persistence *p);

#endif
