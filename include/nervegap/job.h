/* job.h — one job of nervegap: read an input, optionally draw a subsample
 * of its points, compute the radii, run the main job (run.h) and write the
 * results file (results.h). `nervegap run` runs one job from its flags;
 * `nervegap batch` runs the jobs of a manifest (manifest.h, batch.h).
 *
 * Subsamples: subsample_index i ≥ 1 of size m and seed s draws m distinct
 * points of the input (without replacement), uniformly, from a
 * pseudo-random stream fixed by (s, i) alone, so that a job is the same on
 * every machine and every rerun. The points keep their input order; their
 * input rows are recorded in /job/subsample_points. A distance matrix is
 * cut down to the chosen rows and columns.
 */
#ifndef NERVEGAP_JOB_H
#define NERVEGAP_JOB_H

#include "nervegap/common.h"
#include "nervegap/radius.h"
#include "nervegap/results.h"
#include "nervegap/run.h"

/* A job. All pointers are borrowed. */
typedef struct ng_job {
    const char *input;       /* path or FILE.h5:/dataset, as it is read */
    int distances;           /* nonzero: input is a distance matrix */
    ng_scheme scheme;
    ng_run_options options;  /* including threads and progress */
    size_t subsample_size;   /* m; 0: all points */
    int subsample_index;     /* 1..B when subsample_size > 0 */
    uint64_t subsample_seed;
    const char *command;     /* recorded as the command line */
    const char *id;          /* NULL: no /job group in the file */
    const char *parameters;  /* canonical parameter text (manifest.h) */
    const char *subsample_of; /* id of the job on all points */
} ng_job;

/* Sets the defaults: no input, ng_scheme_init, ng_run_options_init, all
 * points, nothing recorded. */
NG_API void ng_job_init(ng_job *job);

/* What a finished job reports besides its file. */
typedef struct ng_job_report {
    double scale_limit;      /* T used */
    double full_scale;       /* NaN when not computed */
    int limited_by_budget;   /* auto chose T below the full scale */
    size_t simplices;        /* simplices with rips ≤ T, all dimensions */
    int wasserstein_skipped; /* degrees over the Wasserstein limit */
} ng_job_report;

/* Runs job and writes its results into out, which the caller created with
 * ng_results_open (so that an unwritable path fails before any work); out
 * is consumed whatever the outcome: committed on success, removed on
 * failure. Stages "reading" and "radii" are reported to
 * job->options.progress, then those of ng_run_compute and "writing"; their
 * times are recorded in the file. report may be NULL. Errors as
 * ng_cloud_read, ng_radii_compute, ng_run_compute and ng_results_commit,
 * and NG_ERR_INPUT when the subsample is larger than the input. */
NG_API int ng_job_execute(const ng_job *job, ng_results_file *out,
                          ng_job_report *report, ng_error *err);

/* The input rows of subsample index (≥ 1) of size m from n points under
 * seed, written increasing into rows[m]. NG_ERR_USAGE unless
 * 1 ≤ m ≤ n. */
NG_API int ng_job_subsample_rows(size_t n, size_t m, uint64_t seed,
                                 int index, int64_t *rows, ng_error *err);

#endif
