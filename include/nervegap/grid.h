/* grid.h — the per-scale view of a run (DESIGN §2.6): on G scales
 * t_i = T·i/(G−1) (t_{G−1} = T exactly), the Betti numbers of the Čech and
 * Rips barcodes, simplex counts per dimension, the max / median / 90th
 * percentile of the factor cech/rips and the shift cech − rips over the
 * simplices of dimension ≥ 2 with rips ≤ t_i, and the Hilbert function of
 * the slices; plus the global bounds Λ and Δ.
 *
 * Conventions: a bar [b, d) counts at t when b ≤ t < d; quantiles use the
 * nearest-rank rule (the ⌈q·m⌉-th smallest of m values), exactly, with
 * factor 1 and shift 0 where m = 0; simplices with rips = 0 have no factor
 * (they are left out of the factor statistics, not of the shift ones).
 * Filtration order of the inputs as in run.h: 0 Čech, 1 Rips, 2.. slices.
 */
#ifndef NERVEGAP_GRID_H
#define NERVEGAP_GRID_H

#include "nervegap/common.h"
#include "nervegap/complex.h"
#include "nervegap/persistence.h"

typedef struct ng_grid {
    size_t G;                /* number of scales */
    int max_degree;          /* D */
    int n_slices;            /* L */
    double *scale;           /* G */
    int64_t *betti_cech;     /* G × (D + 1) */
    int64_t *betti_rips;     /* G × (D + 1) */
    int64_t *simplices_cech; /* G × (D + 2) */
    int64_t *simplices_rips; /* G × (D + 2) */
    double *factor_max, *factor_q50, *factor_q90; /* G each */
    double *shift_max, *shift_q50, *shift_q90;    /* G each */
    int64_t *hilbert;        /* L × G × (D + 1), NULL when L = 0 */
    double factor_bound;     /* Λ: max factor, dimension ≥ 1, 0 < rips ≤ T */
    double shift_bound;      /* Δ: max shift over the same simplices */
    double factor_bound_at;  /* rips value of a simplex attaining Λ (0 if none) */
    double shift_bound_at;   /* likewise for Δ */
} ng_grid;

/* Computes the grid of a built complex c and its persistence p (same run).
 * G ≥ 2. On success out owns arrays freed by ng_grid_free; on failure out is
 * zeroed (NG_ERR_USAGE, NG_ERR_NOMEM). Memory: about 24 bytes per simplex of
 * dimension ≥ 2 while it runs. */
NG_API int ng_grid_compute(const ng_complex *c, const ng_persistence *p,
                           size_t G, ng_grid *out, ng_error *err);

/* As ng_grid_compute, and reports stage "grid" to progress (may be NULL)
 * between its phases. */
NG_API int ng_grid_compute_progress(const ng_complex *c,
                                    const ng_persistence *p, size_t G,
                                    ng_progress_fn progress, void *ctx,
                                    ng_grid *out, ng_error *err);

/* Frees the arrays of g and zeroes it. Accepts NULL. */
NG_API void ng_grid_free(ng_grid *g);

/* The grid index of the first scale t_i ≥ v (G when v > T), with the same
 * t_i formula as ng_grid_compute. */
NG_API size_t ng_grid_first_index(double v, double T, size_t G);

#endif
