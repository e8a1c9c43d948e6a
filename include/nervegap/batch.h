/* batch.h — running the jobs of a manifest in shards, and gathering their
 * results (README.md, "Batch runs").
 *
 * The output directory DIR holds:
 *   DIR/jobs.tsv             the job list (ids, parents, canonical
 *                            parameters, alpha), rewritten by every shard
 *   DIR/jobs/ID.h5           the results file of job ID (results.h with
 *                            /job), written under a temporary name
 *                            DIR/jobs/.ID.h5.partial-XXXXXX and renamed
 *   DIR/jobs/ID.failed       the error of job ID's last failed attempt
 *   DIR/logs/shard-I-of-N.log  one line per job event of shard I
 *
 * Shard I of N (1 ≤ I ≤ N) runs the jobs k (0-based, in manifest order)
 * with k mod N = I − 1. A job whose file is there, loads, and records the
 * job's id, its canonical parameters and the SHA-256 of the input as it is
 * now, is skipped; any other job is run (again). Gathering copies every
 * job file into one HDF5 file and computes the subsample confidence.
 */
#ifndef NERVEGAP_BATCH_H
#define NERVEGAP_BATCH_H

#include "nervegap/common.h"
#include "nervegap/manifest.h"

typedef enum ng_batch_event {
    NG_BATCH_STARTED,  /* the job starts */
    NG_BATCH_SKIPPED,  /* its finished file is there */
    NG_BATCH_DONE,     /* it finished now */
    NG_BATCH_FAILED    /* it failed: message says why */
} ng_batch_event;

/* Called for each job event: the job, its position (1-based) among the
 * count jobs of the shard, the seconds it took (DONE, FAILED) and a
 * message (FAILED: the error; SKIPPED, STARTED: why, may be ""). */
typedef void (*ng_batch_event_fn)(ng_batch_event event,
                                  const ng_manifest_job *job, size_t position,
                                  size_t count, double seconds,
                                  const char *message, void *ctx);

typedef struct ng_batch_options {
    int shard, shards;        /* I of N; 1 of 1: every job */
    int threads;              /* per job; ≤ 0: the OpenMP default */
    const char *command;      /* recorded in every file */
    ng_progress_fn progress;  /* stages of the running job; may be NULL */
    void *progress_ctx;
    ng_batch_event_fn event;  /* may be NULL */
    /* called with the temporary path of the running job's file when it is
     * created, and with NULL once it is renamed or removed (for signal
     * handlers that remove it); may be NULL */
    void (*temp_file)(const char *path, void *ctx);
    void *ctx;                /* for event and temp_file */
} ng_batch_options;

typedef struct ng_batch_summary {
    size_t jobs;      /* in the shard */
    size_t done, skipped, failed;
} ng_batch_summary;

/* Runs shard opt->shard of opt->shards of the jobs of m into out_dir
 * (created when missing, with jobs/ and logs/). A failing job is recorded
 * in DIR/jobs/ID.failed and the log, and the others go on; the return
 * value is NG_OK then too: sum->failed tells. Errors (nothing further
 * runs): NG_ERR_USAGE for a bad shard, NG_ERR_IO when out_dir or the job
 * list cannot be written, NG_ERR_NOMEM. */
NG_API int ng_batch_run(const ng_manifest *m, const char *out_dir,
                        const ng_batch_options *opt, ng_batch_summary *sum,
                        ng_error *err);

/* The shard of a Slurm array task from the values of the environment
 * variables SLURM_ARRAY_TASK_ID, _MIN, _MAX, _COUNT and _STEP (NULL: not
 * set): I = (ID − MIN) / STEP + 1 (MIN 0, STEP 1 when unset), N = COUNT,
 * else (MAX − MIN) / STEP + 1. *found = 0 (and I = N = 1) when id is
 * NULL. NG_ERR_USAGE naming the variable when a value is not a number or
 * the task does not fall on a shard (a list such as --array=1,5,9). */
NG_API int ng_batch_shard_from_slurm(const char *id, const char *min,
                                     const char *max, const char *count,
                                     const char *step, int *shard,
                                     int *shards, int *found, ng_error *err);

/* Parses "I/N" (1 ≤ I ≤ N) of --shard. NG_ERR_USAGE naming --shard. */
NG_API int ng_batch_parse_shard(const char *text, int *shard, int *shards,
                                ng_error *err);

/* ---- gathering ---- */

typedef enum ng_gather_status {
    NG_GATHER_COMPLETE = 0,
    NG_GATHER_MISSING,  /* no file, no failure record */
    NG_GATHER_FAILED,   /* the job failed (its .failed record) */
    NG_GATHER_CORRUPT,  /* a file that does not load */
    NG_GATHER_STALE     /* a file of other parameters or another input */
} ng_gather_status;

/* Called for every job that is not complete, with the reason. */
typedef void (*ng_gather_problem_fn)(const char *id, ng_gather_status status,
                                     const char *message, void *ctx);

typedef struct ng_gather_summary {
    size_t jobs, complete, missing, failed, corrupt, stale;
} ng_gather_summary;

/* Gathers the jobs listed in DIR/jobs.tsv into the HDF5 file output
 * (written under a temporary name and renamed): every complete job file
 * copied under /jobs/ID, the list of all jobs with their status under
 * /index, and for each job with subsamples the confidence under
 * /confidence/ID (README.md). With table (not NULL), also a CSV with one
 * row per job. alpha: the confidence level; NaN: the manifest's. Jobs that
 * are not complete are listed (problem, /index, the CSV), never dropped;
 * the return value is NG_OK then too: sum tells. Errors: NG_ERR_INPUT when
 * DIR has no readable job list, NG_ERR_USAGE (a bad alpha or an unwritable
 * output), NG_ERR_IO, NG_ERR_NOMEM. */
NG_API int ng_gather(const char *dir, const char *output, const char *table,
                     double alpha, ng_gather_problem_fn problem, void *ctx,
                     ng_gather_summary *sum, ng_error *err);

/* The (1 − alpha) quantile of values[0..n) by the nearest-rank rule: the
 * ⌈(1 − alpha)·n⌉-th smallest (at least the first). values is sorted in
 * place. NaN when n = 0. */
NG_API double ng_gather_quantile(double *values, size_t n, double alpha);

#endif
