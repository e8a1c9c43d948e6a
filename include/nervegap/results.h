/* results.h — the HDF5 results file of a run (DESIGN §5).
 *
 * Layout written here:
 *   /                 attrs format = "nervegap-results", format_version,
 *                     tool_version, command
 *   /input            attrs source, n_points, ambient_dim, metric
 *   /vertices/radius  float64[n]   base radius after normalisation
 *   /vertices/birth   float64[n]
 *   /scheme           attrs radius_rule, law, scale_limit, max_degree,
 *                     truncated
 *   /cech/dim{k}/bars float64[m][2] birth, death (+inf: alive at the limit)
 *   /cech/dim{k}/birth_vertices int64[m][k+1], death_vertices int64[m][k+2]
 *   /rips/dim{k}/…    the same
 *   /slices/values    float64[L], attr kind; /slices/{j}/dim{k}/… likewise
 *   /grid/scale       float64[G]; betti_cech, betti_rips int64[G][D+1];
 *                     simplices_cech, simplices_rips int64[G][D+2];
 *                     factor_max, factor_q50, factor_q90, shift_max,
 *                     shift_q50, shift_q90 float64[G];
 *                     hilbert int64[L][G][D+1] (only with slices)
 *   /divergence/bottleneck, wasserstein1, wasserstein2  float64[D+1];
 *                     attrs factor_bound, shift_bound, factor_bound_at,
 *                     shift_bound_at, wasserstein_relative_error
 *
 * Safety: the file is written under a temporary name in the directory of
 * the final path and renamed onto it only when complete, so a killed or
 * failed run never leaves a file at the final path that looks finished.
 */
#ifndef NERVEGAP_RESULTS_H
#define NERVEGAP_RESULTS_H

#include "nervegap/common.h"
#include "nervegap/grid.h"
#include "nervegap/persistence.h"

#define NG_RESULTS_FORMAT "nervegap-results"
#define NG_RESULTS_FORMAT_VERSION 1

/* Everything about a run that the file records besides the barcodes.
 * All pointers are borrowed. */
typedef struct ng_run_record {
    const char *command;       /* the full command line */
    const char *source;        /* input path (or path:/dataset) */
    size_t n_points;           /* points after merging */
    size_t ambient_dim;        /* 0 for a distance matrix */
    const char *metric;
    const char *radius_rule;   /* canonical text, e.g. "knn:8" */
    const char *law;
    double scale_limit;        /* T */
    int max_degree;            /* D */
    int truncated;             /* nonzero: some bar was alive at T */
    const double *radius;      /* n_points base radii */
    const double *birth;       /* n_points vertex births */
    const char *slice_kind;    /* "factor" or "shift"; NULL: no slices */
    const double *slice_values;
    int n_slices;
    const ng_grid *grid;       /* NULL: no /grid */
    const double *bottleneck;  /* D+1 values each; NULL: no /divergence */
    const double *wasserstein1;
    const double *wasserstein2;
    double wasserstein_relative_error; /* guaranteed bound of the two */
} ng_run_record;

/* An output file being prepared: created under a temporary name so that an
 * unwritable path fails before any computation. */
typedef struct ng_results_file ng_results_file;

/* Creates the temporary file beside path. On success *out owns it: finish
 * with ng_results_commit, or ng_results_abort to remove it. NG_ERR_USAGE
 * (exit code 2: a bad -o) naming the path when it cannot be created. */
NG_API int ng_results_open(const char *path, ng_results_file **out,
                           ng_error *err);

/* Writes the record and the barcodes (filtration 0 = Čech, 1 = Rips, 2.. =
 * the slices in order), closes the file and renames it onto the final path.
 * f is freed whatever the outcome; on failure the temporary file is removed
 * and nothing is left at the final path (NG_ERR_IO or NG_ERR_NOMEM). */
NG_API int ng_results_commit(ng_results_file *f, const ng_run_record *rec,
                             const ng_persistence *p, ng_error *err);

/* Removes the temporary file and frees f. Accepts NULL. */
NG_API void ng_results_abort(ng_results_file *f);

/* The temporary path of f (for signal handlers that must unlink it). */
NG_API const char *ng_results_temp_path(const ng_results_file *f);

/* Reads the bars of one diagram from a results file: group "cech",
 * "rips" or "slices/J", degree k. On success *bars is an m × 2 array
 * (caller frees with ng_results_bars_free) and *count = m; *max_degree (when
 * not NULL) receives the file's max_degree and *scale_limit (when not NULL)
 * its scale limit. NG_ERR_INPUT naming the file and path when the file is
 * not a nervegap results file, or the degree or group is absent. */
NG_API int ng_results_read_bars(const char *path, const char *group, int k,
                                double **bars, size_t *count, int *max_degree,
                                double *scale_limit, ng_error *err);

/* Frees an array returned by ng_results_read_bars. Accepts NULL. */
NG_API void ng_results_bars_free(double *bars);

#endif
