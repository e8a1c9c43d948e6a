/* results.h — the HDF5 results file of a run (DESIGN §5): writing it
 * safely, and reading all of it back.
 *
 * Layout (format_version 2; README.md has the same table for users):
 *   /                 attrs format = "nervegap-results", format_version,
 *                     tool_version, command
 *   /input            attrs source, file, sha256, bytes, n_points,
 *                     ambient_dim, metric
 *   /vertices/radius  float64[n]   base radius after normalisation
 *   /vertices/birth   float64[n]
 *   /scheme           attrs radius_rule, law, scale_limit, scale_auto,
 *                     full_scale, limited_by_budget, max_degree, truncated
 *   /cech/dim{k}/bars float64[m][2] birth, death (+inf: alive at the limit)
 *   /cech/dim{k}/birth_vertices int64[m][k+1], death_vertices int64[m][k+2]
 *                     (−1 where death = +inf); attr truncated
 *   /rips/dim{k}/…    the same
 *   /slices/values    float64[L], attr kind; /slices/{j}/dim{k}/… likewise
 *   /grid/scale       float64[G]; betti_cech, betti_rips int64[G][D+1];
 *                     simplices_cech, simplices_rips int64[G][D+2];
 *                     factor_max, factor_q50, factor_q90, shift_max,
 *                     shift_q50, shift_q90 float64[G];
 *                     hilbert int64[L][G][D+1] (only with slices)
 *   /divergence/bottleneck, wasserstein1, wasserstein2  float64[D+1];
 *                     attrs factor_bound, shift_bound, factor_bound_at,
 *                     shift_bound_at, wasserstein_relative_error,
 *                     wasserstein_limit (W1, W2 are NaN for degrees whose
 *                     diagrams differ in more points)
 *   /job              (jobs of nervegap batch only) attrs id, parameters;
 *                     subsample jobs also subsample_of, subsample_index,
 *                     subsample_seed and subsample_points int64[n]
 *   /provenance       attrs hdf5_version, threads, peak_memory_bytes,
 *                     wall_seconds, created, host
 *   /provenance/stage_seconds  one float64 attr per stage, in stage order
 *
 * Format 1 (nervegap 0.1.0 before provenance) lacks /provenance and the
 * input attrs file, sha256, bytes and the scheme attrs scale_auto,
 * full_scale, limited_by_budget; ng_results_load reads both formats.
 * Datasets of at least NG_RESULTS_CHUNK_MIN elements are stored chunked,
 * with the shuffle and deflate filters (level 4).
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
#define NG_RESULTS_FORMAT_VERSION 2
#define NG_RESULTS_CHUNK_MIN 4096

/* Everything about a run that the file records besides the barcodes.
 * All pointers are borrowed. */
typedef struct ng_run_record {
    const char *command;       /* the full command line */
    const char *source;        /* input path (or path:/dataset) */
    const char *input_file;    /* the file read; NULL: not recorded */
    const char *input_sha256;  /* its SHA-256 in hex; NULL: not recorded */
    uint64_t input_bytes;      /* its length */
    size_t n_points;           /* points after merging */
    size_t ambient_dim;        /* 0 for a distance matrix */
    const char *metric;
    const char *radius_rule;   /* canonical text, e.g. "knn:8" */
    const char *law;
    double scale_limit;        /* T */
    int scale_auto;            /* T was chosen automatically */
    double full_scale;         /* the full scale, NaN when not computed */
    int limited_by_budget;     /* auto chose T below the full scale */
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
    uint64_t wasserstein_limit; /* W1, W2 NaN for degrees whose diagrams
                                   differ in more points (run.h); 0: no
                                   limit */
    /* provenance: the writer adds the HDF5 version, the time, the host and
     * a last stage "writing" (its own time up to closing the file) */
    int threads;               /* threads used; 0: not recorded */
    int64_t peak_memory_bytes; /* peak resident memory; < 0: unknown */
    /* the job of a batch (job.h); job_id NULL: no /job group */
    const char *job_id;
    const char *job_parameters;   /* canonical parameter text */
    const char *subsample_of;     /* id of the job on all points; NULL:
                                     not a subsample */
    int subsample_index;          /* 1..B */
    uint64_t subsample_seed;
    const int64_t *subsample_points; /* n_points input rows, increasing */
    int n_stages;              /* stages before writing */
    const char *const *stage_names;
    const double *stage_seconds; /* wall time of each stage */
} ng_run_record;

/* An output file being prepared: created under a temporary name so that an
 * unwritable path fails before any computation. */
typedef struct ng_results_file ng_results_file;

/* Creates the temporary file beside path. On success *out owns it: finish
 * with ng_results_commit, or ng_results_abort to remove it. NG_ERR_USAGE
 * (exit code 2: a bad -o) naming the path when it cannot be created. */
NG_API int ng_results_open(const char *path, ng_results_file **out,
                           ng_error *err);

/* Reports the progress of ng_results_commit as stage "writing" (fraction =
 * share of the data elements written). fn may be NULL. */
NG_API void ng_results_set_progress(ng_results_file *f, ng_progress_fn fn,
                                    void *ctx);

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

/* A whole results file in memory. Strings and arrays are owned by the
 * struct; what a file of format 1 lacks is NULL (strings, arrays), −1
 * (counts and flags) or NaN (numbers). */
typedef struct ng_results {
    char *path;                /* the file it was loaded from */
    int format_version;
    char *tool_version;
    char *command;
    /* /input */
    char *source;
    char *input_file;
    char *input_sha256;
    int64_t input_bytes;
    size_t n_points;
    size_t ambient_dim;        /* 0 for a distance matrix */
    char *metric;
    /* /vertices */
    double *radius;            /* n_points */
    double *birth;             /* n_points */
    /* /scheme */
    char *radius_rule;
    char *law;
    double scale_limit;        /* T */
    int scale_auto;
    double full_scale;         /* NaN when not computed or absent */
    int limited_by_budget;
    int max_degree;            /* D */
    int truncated;
    /* the diagrams: bars[k] for k = 0..D, each with its vertex arrays and
     * its count of bars alive at T; simplices[] are 0 (the counts per
     * scale are in the grid) */
    ng_diagram cech;
    ng_diagram rips;
    int n_slices;              /* L, 0 without slices */
    char *slice_kind;          /* "factor" or "shift"; NULL without slices */
    double *slice_values;      /* L */
    ng_diagram *slices;        /* L */
    /* /grid (has_grid = 0: absent; grid then zeroed). The bounds in grid
     * are copied from /divergence. */
    int has_grid;
    ng_grid grid;
    /* /divergence (has_divergence = 0: absent, values NaN) */
    int has_divergence;
    double bottleneck[NG_COMPLEX_MAX_DIM];   /* degrees 0..D */
    double wasserstein1[NG_COMPLEX_MAX_DIM];
    double wasserstein2[NG_COMPLEX_MAX_DIM];
    double factor_bound, shift_bound;        /* Λ, Δ */
    double factor_bound_at, shift_bound_at;  /* Rips values attaining them */
    double wasserstein_relative_error;
    int64_t wasserstein_limit; /* 0: no limit, or absent (format 1) */
    /* /job (files of nervegap batch; absent: job_id NULL, subsample_of
     * NULL, subsample_index 0, subsample_points NULL) */
    char *job_id;
    char *job_parameters;
    char *subsample_of;
    int subsample_index;
    int64_t subsample_seed;
    int64_t *subsample_points; /* n_points input rows */
    /* /provenance */
    char *hdf5_version;
    char *created;             /* UTC, ISO 8601 */
    char *host;
    int threads;
    int64_t peak_memory_bytes;
    double wall_seconds;
    int n_stages;              /* 0 when absent */
    char **stage_names;        /* n_stages */
    double *stage_seconds;     /* n_stages */
} ng_results;

/* Reads every attribute and dataset of a results file (format 1 or 2) and
 * checks the shapes against each other. On success *out owns the result
 * (free with ng_results_free). On failure *out is NULL and err says what
 * is wrong, naming the file and the HDF5 path: NG_ERR_INPUT for a file that
 * cannot be opened, is not HDF5, is not a nervegap results file, has a
 * newer format_version, or misses or has a malformed attribute or dataset;
 * NG_ERR_IO when HDF5 fails to read existing data; NG_ERR_NOMEM. */
NG_API int ng_results_load(const char *path, ng_results **out,
                           ng_error *err);

/* Frees a loaded file. Accepts NULL. */
NG_API void ng_results_free(ng_results *r);

/* Diagram of filtration j in the order of run.h: 0 = Čech, 1 = Rips, 2.. =
 * slice j − 2; NULL when j is out of range. */
NG_API const ng_diagram *ng_results_diagram(const ng_results *r, int j);

/* Name of filtration j ≥ 0 written into buf: "cech", "rips", "slices/0",
 * …; returns buf (NULL when j < 0). */
NG_API const char *ng_results_diagram_name(int j, char *buf, size_t size);

#endif
