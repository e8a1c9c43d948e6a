/* run.h — the main job (DESIGN §3): from a prepared cloud and its radii to
 * the barcodes of the Čech, Rips and slice filtrations over one simplex set.
 *
 *   neighbour graph (pairs with Rips edge value ≤ T, found with the k-d
 *   tree; for a distance matrix, from the matrix) → cliques up to dimension
 *   D + 1 with their values (Čech, Rips, slices) → mod-2 reduction.
 *
 * Filtration order in the result: 0 = Čech, 1 = Rips, 2.. = the slices in
 * the order given. Slice j of kind factor λ: max(rips, cech/λ); of kind
 * shift δ: max(rips, cech − δ) (DESIGN §2.5).
 *
 * Scale limit: a given T, or auto: the full scale (the first t at which one
 * sample point lies in every ball, so both complexes are cones) when the
 * complex up to it fits the budget, else the largest scale that fits
 * (found by bisection on the size estimate, to a relative 1e-4). The
 * budget is both a simplex count (max_simplices: the time a run takes) and
 * memory (budget_bytes: what the complex and the reductions hold).
 */
#ifndef NERVEGAP_RUN_H
#define NERVEGAP_RUN_H

#include "nervegap/cloud.h"
#include "nervegap/common.h"
#include "nervegap/complex.h"
#include "nervegap/grid.h"
#include "nervegap/persistence.h"
#include "nervegap/radius.h"

#define NG_RUN_MAX_SLICES 64

/* The default simplex budget: what this engine turns into barcodes in
 * about a minute on two cores (bench/README.md, "the main job"). */
#define NG_RUN_DEFAULT_MAX_SIMPLICES ((size_t)20000000)

/* The default Wasserstein limit: the 1- and 2-Wasserstein distances of a
 * degree are computed when at most this many points of either diagram lack
 * an identical point in the other (bench/README.md, "Diagram distances":
 * real Čech/Rips pairs of 3·10^4 and 6·10^3 points take seconds, ten times
 * larger ones far more than the rest of the run; equal diagrams, as in
 * degree 0, take 0.1 s at 10^5 points). */
#define NG_RUN_DEFAULT_WASSERSTEIN_LIMIT ((size_t)50000)

typedef enum ng_slice_kind {
    NG_SLICE_NONE = 0,
    NG_SLICE_FACTOR,
    NG_SLICE_SHIFT
} ng_slice_kind;

typedef struct ng_run_options {
    int max_degree;        /* D, 0..4 (default 1) */
    int scale_auto;        /* nonzero: scale limit auto */
    double scale_limit;    /* T when !scale_auto */
    size_t budget_bytes;   /* memory the complex and reduction may use */
    size_t max_simplices;  /* simplex budget: at most this many simplices
                              (all dimensions, all of them with rips ≤ T);
                              0: only the memory budget */
    ng_slice_kind slice_kind;
    int n_slices;
    double slice_values[NG_RUN_MAX_SLICES]; /* λ ≥ 1 or δ ≥ 0 */
    size_t grid;           /* G ≥ 2 scales of the per-scale grid (128) */
    size_t wasserstein_limit; /* W1, W2 of a degree only when at most
                                 this many points of either diagram lack
                                 an identical point in the other (else
                                 NaN); 0: always */
    int threads;           /* ≤ 0: the OpenMP default */
    ng_progress_fn progress; /* may be NULL */
    void *progress_ctx;
} ng_run_options;

/* Defaults: D = 1, auto scale limit, a simplex budget of
 * NG_RUN_DEFAULT_MAX_SIMPLICES and half the physical memory, no slices, a
 * grid of 128 scales. */
NG_API void ng_run_options_init(ng_run_options *opt);

/* Parse the text of --max-degree (0..4), --scale-limit (T ≥ 0 or auto)
 * and --grid (2..2^24 scales) into opt. NG_ERR_USAGE naming the flag on
 * error. */
NG_API int ng_run_parse_max_degree(const char *text, ng_run_options *opt,
                                   ng_error *err);
NG_API int ng_run_parse_scale_limit(const char *text, ng_run_options *opt,
                                    ng_error *err);
NG_API int ng_run_parse_grid(const char *text, ng_run_options *opt,
                             ng_error *err);

/* Parses "factor:1.02,1.05" or "shift:0.1,0.2" into opt (the text of
 * --slices). NG_ERR_USAGE naming --slices on error. */
NG_API int ng_run_parse_slices(const char *text, ng_run_options *opt,
                               ng_error *err);

/* Parses a memory size of at least one byte: "4G", "512M", "1.5GiB",
 * "1000000" (bytes; a fraction of a byte is dropped). NG_ERR_USAGE naming
 * --budget on error. */
NG_API int ng_run_parse_budget(const char *text, size_t *out, ng_error *err);

/* Parses a simplex count: "20000000", "2e7" or "0" (no simplex budget).
 * NG_ERR_USAGE naming --max-simplices on error. */
NG_API int ng_run_parse_count(const char *text, size_t *out, ng_error *err);

/* Parses the text of --wasserstein-limit ("50000", "5e4"; 0: always) into
 * opt. NG_ERR_USAGE naming the flag on error. */
NG_API int ng_run_parse_wasserstein_limit(const char *text,
                                          ng_run_options *opt, ng_error *err);

typedef struct ng_run_result {
    double scale_limit;      /* T used */
    double full_scale;       /* the full scale, or NaN when not computed */
    int limited_by_budget;   /* auto chose T < full scale for the budget */
    int truncated;           /* some bar is alive at T (beyond the one
                                essential degree-0 class per filtration) */
    ng_complex_size size;    /* the simplex set */
    ng_persistence *persistence; /* owned; ng_run_result_free */
    ng_grid grid;            /* owned; the per-scale statistics */
    /* Čech vs Rips per degree 0..D, deaths of +inf counted as T */
    double bottleneck[NG_COMPLEX_MAX_DIM];
    double wasserstein1[NG_COMPLEX_MAX_DIM];
    double wasserstein2[NG_COMPLEX_MAX_DIM];
    double wasserstein_relative_error; /* guaranteed bound of both */
    /* degrees whose W1, W2 were not computed (NaN) for the Wasserstein
     * limit */
    int wasserstein_skipped;
} ng_run_result;

/* Relative error allowed to the Wasserstein distances of a run. */
#define NG_RUN_WASSERSTEIN_ERROR 1e-6

/* Runs the job. cloud and radii come from ng_radii_compute under scheme.
 * On success out owns the persistence (free with ng_run_result_free). On
 * failure out is zeroed: NG_ERR_BUDGET when a given T does not fit (the
 * message says how large it would be and which T would fit), NG_ERR_USAGE,
 * NG_ERR_INPUT, NG_ERR_NOMEM. */
NG_API int ng_run_compute(const ng_cloud *cloud, const ng_radii *radii,
                          const ng_scheme *scheme, const ng_run_options *opt,
                          ng_run_result *out, ng_error *err);

/* Frees what out owns and zeroes it. Accepts NULL. */
NG_API void ng_run_result_free(ng_run_result *out);

#endif
