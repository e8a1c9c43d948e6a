/* batch.c — running one shard of the jobs of a manifest (batch.h).
 *
 * Invariants: a job's final file DIR/jobs/ID.h5 appears only by the rename
 * of a complete file (results.c), so a killed job leaves at most a
 * temporary .ID.h5.partial-XXXXXX, which the next run of that job removes;
 * a file is trusted only when it loads and records the job's id, its
 * canonical parameters and the current SHA-256 of its input. The job list
 * and the failure records are written under temporary names and renamed
 * too, so that concurrent shards never see half a file.
 */
#include "nervegap/batch.h"

#include "alloc.h"
#include "batch_internal.h"
#include "nervegap/results.h"
#include "nervegap/sha256.h"

#include <dirent.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

/* ---- small file helpers (shared with gather.c) ---- */

char *batch_path(const char *dir, const char *a, const char *b)
{
    size_t len = strlen(dir) + strlen(a) + (b ? strlen(b) : 0) + 3;
    char *s = ng_malloc(len, 1);
    if (s) snprintf(s, len, "%s/%s%s", dir, a, b ? b : "");
    return s;
}

int batch_mkdir(const char *path, ng_error *err)
{
    if (mkdir(path, 0777) == 0 || errno == EEXIST) {
        struct stat st;
        if (stat(path, &st) == 0 && S_ISDIR(st.st_mode)) return NG_OK;
        return ng_error_set(err, NG_ERR_IO, "%s: exists and is not a "
                            "directory", path);
    }
    return ng_error_set(err, NG_ERR_IO, "%s: cannot create the directory: "
                        "%s", path, strerror(errno));
}

int batch_write_atomic(const char *path, const char *text, ng_error *err)
{
    size_t len = strlen(path);
    char *temp = ng_malloc(len + 16, 1);
    if (temp == NULL) return ng_error_set(err, NG_ERR_NOMEM, "out of memory");
    const char *slash = strrchr(path, '/');
    size_t dir_len = slash ? (size_t)(slash - path) + 1 : 0;
    snprintf(temp, len + 16, "%.*s.%s.tmp-XXXXXX", (int)dir_len, path,
             path + dir_len);
    int fd = mkstemp(temp);
    FILE *f = fd < 0 ? NULL : fdopen(fd, "w");
    int status = NG_OK;
    if (f == NULL) {
        status = ng_error_set(err, NG_ERR_IO, "%s: cannot write: %s", path,
                              strerror(errno));
        if (fd >= 0) close(fd);
    } else {
        (void)fchmod(fd, 0644);
        int bad = fputs(text, f) < 0;
        bad |= fclose(f) != 0;
        if (bad || rename(temp, path) != 0)
            status = ng_error_set(err, NG_ERR_IO, "%s: cannot write: %s",
                                  path, strerror(errno));
    }
    if (status != NG_OK) unlink(temp);
    ng_free(temp);
    return status;
}

/* ---- shards ---- */

static int whole(const char *text, long long *out)
{
    char *end;
    errno = 0;
    long long v = strtoll(text, &end, 10);
    if (*text == '\0' || *end != '\0' || errno != 0) return -1;
    *out = v;
    return 0;
}

int ng_batch_parse_shard(const char *text, int *shard, int *shards,
                         ng_error *err)
{
    const char *slash = strchr(text, '/');
    long long i = 0, n = 0;
    char first[32];
    size_t len = slash ? (size_t)(slash - text) : 0;
    if (slash && len < sizeof first) {
        memcpy(first, text, len);
        first[len] = '\0';
    }
    if (!slash || len >= sizeof first || whole(first, &i) != 0 ||
        whole(slash + 1, &n) != 0 || n < 1 || n > 1000000 || i < 1 || i > n)
        return ng_error_set(err, NG_ERR_USAGE,
                            "--shard %s: expected I/N with 1 ≤ I ≤ N, such "
                            "as 2/8", text);
    *shard = (int)i;
    *shards = (int)n;
    return NG_OK;
}

int ng_batch_shard_from_slurm(const char *id, const char *min,
                              const char *max, const char *count,
                              const char *step, int *shard, int *shards,
                              int *found, ng_error *err)
{
    *shard = *shards = 1;
    *found = 0;
    if (id == NULL) return NG_OK;
    const char *names[5] = {"SLURM_ARRAY_TASK_ID", "SLURM_ARRAY_TASK_MIN",
                            "SLURM_ARRAY_TASK_MAX", "SLURM_ARRAY_TASK_COUNT",
                            "SLURM_ARRAY_TASK_STEP"};
    const char *text[5] = {id, min, max, count, step};
    long long v[5] = {0, 0, -1, -1, 1};
    for (int i = 0; i < 5; i++)
        if (text[i] && whole(text[i], &v[i]) != 0)
            return ng_error_set(err, NG_ERR_USAGE, "%s=%s: not a whole "
                                "number", names[i], text[i]);
    if (v[4] < 1)
        return ng_error_set(err, NG_ERR_USAGE, "SLURM_ARRAY_TASK_STEP=%s: "
                            "expected ≥ 1", step);
    long long n = count ? v[3] : max ? (v[2] - v[1]) / v[4] + 1 : -1;
    long long off = v[0] - v[1];
    if (n < 1 || n > 1000000)
        return ng_error_set(err, NG_ERR_USAGE, "SLURM_ARRAY_TASK_ID=%s: the "
                            "array size is not known (neither "
                            "SLURM_ARRAY_TASK_COUNT nor _MAX is set); give "
                            "--shard I/N", id);
    if (off < 0 || off % v[4] != 0 || off / v[4] >= n)
        return ng_error_set(err, NG_ERR_USAGE, "SLURM_ARRAY_TASK_ID=%s does "
                            "not fall on one of %lld shards (submit a range "
                            "such as --array=1-%lld, or give --shard I/N)",
                            id, n, n);
    *shard = (int)(off / v[4] + 1);
    *shards = (int)n;
    *found = 1;
    return NG_OK;
}

/* ---- the job list ---- */

static int write_job_list(const ng_manifest *m, const char *dir,
                          ng_error *err)
{
    size_t cap = 256;
    for (size_t j = 0; j < m->n_jobs; j++)
        cap += strlen(m->jobs[j].parameters) + 2 * NG_JOB_ID_MAX + 16;
    char *text = ng_malloc(cap, 1);
    char *path = batch_path(dir, BATCH_JOB_LIST, NULL);
    int status;
    if (text == NULL || path == NULL) {
        status = ng_error_set(err, NG_ERR_NOMEM, "out of memory");
    } else {
        size_t used = (size_t)snprintf(text, cap,
                                       "%s\t%d\nalpha\t%.17g\n"
                                       "subsamples\t%d\n",
                                       BATCH_JOB_LIST_FORMAT, 1, m->alpha,
                                       m->subsamples);
        for (size_t j = 0; j < m->n_jobs; j++) {
            const ng_manifest_job *mj = &m->jobs[j];
            used += (size_t)snprintf(text + used, cap - used,
                                     "job\t%s\t%s\t%s\n", mj->id,
                                     mj->parent >= 0 ? m->jobs[mj->parent].id
                                                     : "-",
                                     mj->parameters);
        }
        status = batch_write_atomic(path, text, err);
    }
    ng_free(text);
    ng_free(path);
    return status;
}

/* ---- running ---- */

typedef struct runner {
    const ng_manifest *m;
    const ng_batch_options *opt;
    char *jobs_dir;
    char *log_path;
    /* SHA-256 of the input files seen, for the skip checks */
    char **sha_file;
    char (*sha_hex)[NG_SHA256_HEX + 1];
    size_t n_sha;
} runner;

static void utc_now(char *buf, size_t size)
{
    time_t t = time(NULL);
    struct tm tm;
    if (gmtime_r(&t, &tm) == NULL ||
        strftime(buf, size, "%Y-%m-%dT%H:%M:%SZ", &tm) == 0)
        snprintf(buf, size, "unknown-time");
}

/* One line per event in the shard's log; a log that cannot be written is
 * not a reason to stop the jobs. */
static void log_event(runner *r, const ng_manifest_job *mj, const char *what,
                      double seconds, const char *message)
{
    FILE *f = fopen(r->log_path, "a");
    if (f == NULL) return;
    char when[32], host[256] = "";
    utc_now(when, sizeof when);
    if (gethostname(host, sizeof host - 1) != 0) host[0] = '\0';
    fprintf(f, "%s\t%s\tpid %ld\t%s\t%s", when, host, (long)getpid(), mj->id,
            what);
    if (seconds >= 0.0) fprintf(f, "\t%.3f s", seconds);
    if (message && message[0]) fprintf(f, "\t%s", message);
    fputc('\n', f);
    fclose(f);
}

static void emit(runner *r, ng_batch_event e, const ng_manifest_job *mj,
                 size_t pos, size_t count, double seconds, const char *msg)
{
    static const char *names[] = {"started", "skipped", "done", "failed"};
    log_event(r, mj, names[e], e == NG_BATCH_DONE || e == NG_BATCH_FAILED
                                   ? seconds
                                   : -1.0,
              msg);
    if (r->opt->event)
        r->opt->event(e, mj, pos, count, seconds, msg, r->opt->ctx);
}

/* The SHA-256 of the input file of job (cached). NULL when it cannot be
 * read (the job then runs and reports the error). */
static const char *input_sha(runner *r, const ng_manifest_job *mj)
{
    size_t flen = ng_cloud_spec_file_length(mj->input_path);
    for (size_t i = 0; i < r->n_sha; i++)
        if (strlen(r->sha_file[i]) == flen &&
            strncmp(r->sha_file[i], mj->input_path, flen) == 0)
            return r->sha_hex[i];
    char *file = ng_malloc(flen + 1, 1);
    char **files = ng_realloc(r->sha_file, r->n_sha + 1, sizeof *files);
    if (files) r->sha_file = files;
    char(*hex)[NG_SHA256_HEX + 1] =
        ng_realloc(r->sha_hex, r->n_sha + 1, sizeof *hex);
    if (hex) r->sha_hex = hex;
    ng_error e;
    ng_error_clear(&e);
    if (file == NULL || files == NULL || hex == NULL) {
        ng_free(file);
        return NULL;
    }
    memcpy(file, mj->input_path, flen);
    file[flen] = '\0';
    if (ng_sha256_file(file, r->sha_hex[r->n_sha], NULL, &e) != NG_OK) {
        ng_free(file);
        return NULL;
    }
    r->sha_file[r->n_sha] = file;
    return r->sha_hex[r->n_sha++];
}

/* 1 when the finished file of the job is there and answers it; otherwise
 * 0 with the reason in why ("" when there is no file). */
static int finished(runner *r, const ng_manifest_job *mj, const char *path,
                    char *why, size_t size)
{
    why[0] = '\0';
    struct stat st;
    if (stat(path, &st) != 0) return 0;
    ng_results *res = NULL;
    ng_error e;
    ng_error_clear(&e);
    if (ng_results_load(path, &res, &e) != NG_OK) {
        snprintf(why, size, "redone: the file there does not load (%s)",
                 e.message);
        return 0;
    }
    const char *sha = input_sha(r, mj);
    int ok = 0;
    if (res->job_id == NULL || strcmp(res->job_id, mj->id) != 0)
        snprintf(why, size, "redone: the file there is of another job");
    else if (res->job_parameters == NULL ||
             strcmp(res->job_parameters, mj->parameters) != 0)
        snprintf(why, size, "redone: the file there has other parameters");
    else if (sha == NULL || res->input_sha256 == NULL ||
             strcmp(res->input_sha256, sha) != 0)
        snprintf(why, size, "redone: the input changed since (SHA-256)");
    else
        ok = 1;
    ng_results_free(res);
    return ok;
}

/* Removes the temporary files that a killed run of this job left. */
static void remove_partials(runner *r, const ng_manifest_job *mj)
{
    char prefix[NG_JOB_ID_MAX + 32];
    snprintf(prefix, sizeof prefix, ".%s.h5.partial-", mj->id);
    size_t plen = strlen(prefix);
    DIR *d = opendir(r->jobs_dir);
    if (d == NULL) return;
    struct dirent *e;
    while ((e = readdir(d)) != NULL) {
        if (strncmp(e->d_name, prefix, plen) != 0) continue;
        char *p = batch_path(r->jobs_dir, e->d_name, NULL);
        if (p) unlink(p);
        ng_free(p);
    }
    closedir(d);
}

static double seconds_since(const struct timespec *t0)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)(t.tv_sec - t0->tv_sec) +
           1e-9 * (double)(t.tv_nsec - t0->tv_nsec);
}

/* Runs one job; NG_OK whether it was skipped, done or failed (*outcome
 * tells), an error only when the batch cannot go on. */
static int run_one(runner *r, const ng_manifest_job *mj, size_t pos,
                   size_t count, ng_batch_event *outcome, ng_error *err)
{
    *outcome = NG_BATCH_DONE;
    char *out = batch_path(r->jobs_dir, mj->id, ".h5");
    char *fail_path = batch_path(r->jobs_dir, mj->id, ".failed");
    char why[NG_ERROR_MESSAGE_MAX + 64];
    int status = NG_OK;
    if (out == NULL || fail_path == NULL) {
        status = ng_error_set(err, NG_ERR_NOMEM, "out of memory");
        goto cleanup;
    }
    if (finished(r, mj, out, why, sizeof why)) {
        *outcome = NG_BATCH_SKIPPED;
        emit(r, NG_BATCH_SKIPPED, mj, pos, count, 0.0, "finished before");
        goto cleanup;
    }
    emit(r, NG_BATCH_STARTED, mj, pos, count, 0.0, why);
    remove_partials(r, mj);
    struct timespec t0;
    clock_gettime(CLOCK_MONOTONIC, &t0);
    ng_results_file *file = NULL;
    ng_error e;
    ng_error_clear(&e);
    if (ng_results_open(out, &file, &e) != NG_OK) {
        status = ng_error_set(err, NG_ERR_IO, "%s", e.message);
        goto cleanup;
    }
    if (r->opt->temp_file)
        r->opt->temp_file(ng_results_temp_path(file), r->opt->ctx);
    ng_job job = mj->job;
    job.command = r->opt->command;
    job.options.threads = r->opt->threads;
    job.options.progress = r->opt->progress;
    job.options.progress_ctx = r->opt->progress_ctx;
    int s = ng_job_execute(&job, file, NULL, &e);
    if (r->opt->temp_file) r->opt->temp_file(NULL, r->opt->ctx);
    double seconds = seconds_since(&t0);
    if (s == NG_OK) {
        unlink(fail_path);
        emit(r, NG_BATCH_DONE, mj, pos, count, seconds, "");
        goto cleanup;
    }
    *outcome = NG_BATCH_FAILED;
    size_t len = strlen(mj->id) + strlen(e.message) + 8;
    char *record = ng_malloc(len, 1);
    if (record) {
        snprintf(record, len, "%s\n%s\n", mj->id, e.message);
        ng_error ignored;
        ng_error_clear(&ignored);
        batch_write_atomic(fail_path, record, &ignored);
        ng_free(record);
    }
    emit(r, NG_BATCH_FAILED, mj, pos, count, seconds, e.message);
cleanup:
    ng_free(out);
    ng_free(fail_path);
    return status;
}

int ng_batch_run(const ng_manifest *m, const char *out_dir,
                 const ng_batch_options *opt, ng_batch_summary *sum,
                 ng_error *err)
{
    memset(sum, 0, sizeof *sum);
    if (opt->shards < 1 || opt->shard < 1 || opt->shard > opt->shards)
        return ng_error_set(err, NG_ERR_USAGE, "shard %d of %d: expected "
                            "1 ≤ I ≤ N", opt->shard, opt->shards);
    runner r = {m, opt, NULL, NULL, NULL, NULL, 0};
    char *logs = NULL, name[64];
    int status = batch_mkdir(out_dir, err);
    if (status != NG_OK) return status;
    r.jobs_dir = batch_path(out_dir, "jobs", NULL);
    logs = batch_path(out_dir, "logs", NULL);
    snprintf(name, sizeof name, "/shard-%d-of-%d.log", opt->shard,
             opt->shards);
    r.log_path = logs ? batch_path(logs, name + 1, NULL) : NULL;
    if (r.jobs_dir == NULL || logs == NULL || r.log_path == NULL) {
        status = ng_error_set(err, NG_ERR_NOMEM, "out of memory");
        goto cleanup;
    }
    status = batch_mkdir(r.jobs_dir, err);
    if (status == NG_OK) status = batch_mkdir(logs, err);
    if (status == NG_OK) status = write_job_list(m, out_dir, err);
    if (status != NG_OK) goto cleanup;
    size_t first = (size_t)(opt->shard - 1), step = (size_t)opt->shards;
    for (size_t k = first; k < m->n_jobs; k += step) sum->jobs++;
    size_t pos = 0;
    for (size_t k = first; k < m->n_jobs && status == NG_OK; k += step) {
        ng_batch_event outcome;
        status = run_one(&r, &m->jobs[k], ++pos, sum->jobs, &outcome, err);
        if (status != NG_OK) break;
        if (outcome == NG_BATCH_SKIPPED) sum->skipped++;
        else if (outcome == NG_BATCH_FAILED) sum->failed++;
        else sum->done++;
    }
cleanup:
    for (size_t i = 0; i < r.n_sha; i++) ng_free(r.sha_file[i]);
    ng_free(r.sha_file);
    ng_free(r.sha_hex);
    ng_free(r.jobs_dir);
    ng_free(r.log_path);
    ng_free(logs);
    return status;
}
