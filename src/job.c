/* job.c — one job from an input to its results file (job.h): read, draw
 * the subsample, hash the input, radii, main job, write.
 *
 * Invariants: the stage times recorded in the file add up to the wall time
 * of the job (a stage starts where the previous one ended); the results
 * file handed in is committed or removed on every path. The subsample
 * stream depends only on (seed, index), never on the thread count or the
 * machine.
 */
#include "nervegap/job.h"

#include "alloc.h"
#include "nervegap/provenance.h"
#include "nervegap/sha256.h"
#include "splitmix.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#define STAGES_MAX 16
#define STAGE_NAME_MAX 32

void ng_job_init(ng_job *job)
{
    memset(job, 0, sizeof *job);
    ng_scheme_init(&job->scheme);
    ng_run_options_init(&job->options);
}

/* ---- subsamples ---- */

/* Uniform in [0, bound) without modulo bias (rejection). */
static uint64_t uniform_below(uint64_t *state, uint64_t bound)
{
    uint64_t limit = UINT64_MAX - UINT64_MAX % bound;
    for (;;) {
        uint64_t x = ng_splitmix_next(state);
        if (x < limit) return x % bound;
    }
}

static int by_value(const void *pa, const void *pb)
{
    int64_t a = *(const int64_t *)pa, b = *(const int64_t *)pb;
    return (a > b) - (a < b);
}

int ng_job_subsample_rows(size_t n, size_t m, uint64_t seed, int index,
                          int64_t *rows, ng_error *err)
{
    if (m < 1 || m > n || index < 1)
        return ng_error_set(err, NG_ERR_USAGE,
                            "subsample %d of %zu points from %zu: expected "
                            "an index ≥ 1 and 1 ≤ size ≤ points", index, m,
                            n);
    int64_t *perm = ng_malloc(n, sizeof *perm);
    if (perm == NULL)
        return ng_error_set(err, NG_ERR_NOMEM, "out of memory for a "
                            "subsample of %zu points", m);
    /* the stream of (seed, index): the seed's stream, moved on by the
     * index through one more mixing step */
    uint64_t state = seed;
    uint64_t start = ng_splitmix_next(&state) ^ (uint64_t)index;
    state = ng_splitmix_next(&start);
    for (size_t i = 0; i < n; i++) perm[i] = (int64_t)i;
    /* the first m steps of a Fisher–Yates shuffle: a uniform m-subset */
    for (size_t i = 0; i < m; i++) {
        size_t j = i + (size_t)uniform_below(&state, (uint64_t)(n - i));
        int64_t t = perm[i];
        perm[i] = perm[j];
        perm[j] = t;
    }
    qsort(perm, m, sizeof *perm, by_value);
    memcpy(rows, perm, m * sizeof *rows);
    ng_free(perm);
    return NG_OK;
}

/* ---- stage times ---- */

/* Records the wall time of each stage and passes the reports on. */
typedef struct stage_clock {
    ng_progress_fn next;
    void *next_ctx;
    struct timespec stage_start;
    char current[STAGE_NAME_MAX];
    int open;
    int n;
    char names[STAGES_MAX][STAGE_NAME_MAX];
    const char *name_list[STAGES_MAX];
    double seconds[STAGES_MAX];
} stage_clock;

static void clock_end(stage_clock *c, const struct timespec *now)
{
    if (c->n < STAGES_MAX) {
        memcpy(c->names[c->n], c->current, STAGE_NAME_MAX);
        c->name_list[c->n] = c->names[c->n];
        c->seconds[c->n] =
            (double)(now->tv_sec - c->stage_start.tv_sec) +
            1e-9 * (double)(now->tv_nsec - c->stage_start.tv_nsec);
        c->n++;
    }
    c->open = 0;
    c->stage_start = *now;
}

static void clock_report(const char *stage, double fraction, void *ctx)
{
    stage_clock *c = ctx;
    struct timespec now;
    clock_gettime(CLOCK_MONOTONIC, &now);
    if (strncmp(stage, c->current, STAGE_NAME_MAX) != 0) {
        if (c->open) clock_end(c, &now);
        snprintf(c->current, sizeof c->current, "%s", stage);
        c->open = 1;
    }
    if (c->open && fraction >= 1.0) clock_end(c, &now);
    if (c->next) c->next(stage, fraction, c->next_ctx);
}

/* ---- the job ---- */

static int read_input(const ng_job *job, ng_cloud **cloud, int64_t **rows,
                      ng_error *err)
{
    *rows = NULL;
    int status = job->distances ? ng_cloud_read_distances(job->input, cloud,
                                                          err)
                                : ng_cloud_read(job->input, cloud, err);
    if (status != NG_OK || job->subsample_size == 0) return status;
    size_t m = job->subsample_size, n = (*cloud)->n;
    if (m > n)
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s: a subsample of %zu points was asked for, "
                            "but the input has %zu", job->input, m, n);
    *rows = ng_malloc(m, sizeof **rows);
    if (*rows == NULL)
        return ng_error_set(err, NG_ERR_NOMEM, "out of memory");
    ng_cloud *sub = NULL;
    status = ng_job_subsample_rows(n, m, job->subsample_seed,
                                   job->subsample_index, *rows, err);
    if (status == NG_OK) status = ng_cloud_subset(*cloud, *rows, m, &sub, err);
    if (status != NG_OK) return status;
    ng_cloud_free(*cloud);
    *cloud = sub;
    return NG_OK;
}

int ng_job_execute(const ng_job *job, ng_results_file *out,
                   ng_job_report *report, ng_error *err)
{
    stage_clock clock;
    memset(&clock, 0, sizeof clock);
    clock.next = job->options.progress;
    clock.next_ctx = job->options.progress_ctx;
    clock_gettime(CLOCK_MONOTONIC, &clock.stage_start);
    ng_run_options opt = job->options;
    opt.progress = clock_report;
    opt.progress_ctx = &clock;

    ng_cloud *cloud = NULL;
    int64_t *rows = NULL;
    ng_radii radii = {0};
    ng_run_result result = {0};
    char sha256[NG_SHA256_HEX + 1] = "";
    uint64_t input_bytes = 0;
    int status;

    clock_report("reading", 0.0, &clock);
    status = read_input(job, &cloud, &rows, err);
    if (status == NG_OK)
        status = ng_sha256_file(cloud->file, sha256, &input_bytes, err);
    if (status != NG_OK) goto cleanup;
    clock_report("reading", 1.0, &clock);
    clock_report("radii", 0.0, &clock);
    status = ng_radii_compute(cloud, &job->scheme, opt.threads, &radii, err);
    if (status != NG_OK) goto cleanup;
    clock_report("radii", 1.0, &clock);
    status = ng_run_compute(cloud, &radii, &job->scheme, &opt, &result, err);
    if (status != NG_OK) goto cleanup;

    char rule[NG_RADIUS_TEXT_MAX + 16];
    ng_radius_format(&job->scheme.rule, rule, sizeof rule);
    ng_run_record rec = {
        .command = job->command ? job->command : "",
        .source = cloud->source,
        .input_file = cloud->file,
        .input_sha256 = sha256,
        .input_bytes = input_bytes,
        .n_points = cloud->n,
        .ambient_dim = cloud->dim,
        .metric = ng_metric_name(job->scheme.metric),
        .radius_rule = rule,
        .law = ng_law_name(job->scheme.law),
        .scale_limit = result.scale_limit,
        .scale_auto = opt.scale_auto,
        .full_scale = result.full_scale,
        .limited_by_budget = result.limited_by_budget,
        .max_degree = opt.max_degree,
        .truncated = result.truncated,
        .radius = radii.rho,
        .birth = radii.birth,
        .slice_kind = opt.slice_kind == NG_SLICE_FACTOR  ? "factor"
                      : opt.slice_kind == NG_SLICE_SHIFT ? "shift"
                                                         : NULL,
        .slice_values = opt.slice_values,
        .n_slices = opt.slice_kind == NG_SLICE_NONE ? 0 : opt.n_slices,
        .grid = &result.grid,
        .bottleneck = result.bottleneck,
        .wasserstein1 = result.wasserstein1,
        .wasserstein2 = result.wasserstein2,
        .wasserstein_relative_error = result.wasserstein_relative_error,
        .wasserstein_limit = opt.wasserstein_limit,
        .threads = ng_threads_used(opt.threads),
        .peak_memory_bytes = ng_peak_memory_bytes(),
        .job_id = job->id,
        .job_parameters = job->parameters,
        .subsample_of = rows ? (job->subsample_of ? job->subsample_of : "")
                             : NULL,
        .subsample_index = job->subsample_index,
        .subsample_seed = job->subsample_seed,
        .subsample_points = rows,
        .n_stages = clock.n,
        .stage_names = clock.name_list,
        .stage_seconds = clock.seconds,
    };
    if (rows && job->id == NULL) rec.job_id = ""; /* /job holds the rows */
    ng_results_set_progress(out, job->options.progress,
                            job->options.progress_ctx);
    ng_results_file *committing = out;
    out = NULL; /* commit frees it whatever the outcome */
    status = ng_results_commit(committing, &rec, result.persistence, err);
    if (status == NG_OK && report) {
        report->scale_limit = result.scale_limit;
        report->full_scale = result.full_scale;
        report->limited_by_budget = result.limited_by_budget;
        report->simplices = result.size.total;
        report->wasserstein_skipped = result.wasserstein_skipped;
    }

cleanup:
    ng_results_abort(out);
    ng_run_result_free(&result);
    ng_radii_free(&radii);
    ng_free(rows);
    ng_cloud_free(cloud);
    return status;
}
