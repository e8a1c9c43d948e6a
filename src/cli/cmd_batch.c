/* cmd_batch.c — `nervegap batch MANIFEST --out-dir DIR [--shard I/N]`: runs
 * one shard of the jobs of a manifest (batch.h). The shard comes from
 * --shard, else from a Slurm array task's environment, else it is all
 * jobs; the threads from --threads, else SLURM_CPUS_PER_TASK, else
 * OpenMP's default (which follows OMP_NUM_THREADS). */
#include "cleanup.h"
#include "commands.h"
#include "args.h"
#include "nervegap/batch.h"
#include "progress.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const char batch_help[] =
    "Usage: nervegap batch MANIFEST --out-dir DIR [--shard I/N]\n"
    "                      [--threads N] [--list] [--quiet]\n"
    "\n"
    "Runs the jobs of MANIFEST (see README.md, \"Batch runs\") into\n"
    "DIR/jobs/ID.h5. Jobs whose finished file is there (same parameters,\n"
    "same input SHA-256) are skipped, so a killed or failed shard is\n"
    "simply run again. A failing job is recorded in DIR/jobs/ID.failed and\n"
    "the others go on; the exit code is 1 when any job failed.\n"
    "\n"
    "  --out-dir DIR   where the job files, job list and logs go\n"
    "  --shard I/N     run jobs I, I+N, I+2N, ... (counted from 1); default:\n"
    "                  from SLURM_ARRAY_TASK_ID and SLURM_ARRAY_TASK_COUNT\n"
    "                  (or _MIN/_MAX) when set, else every job\n"
    "  --threads N     threads per job; default: SLURM_CPUS_PER_TASK when\n"
    "                  set, else OpenMP's default (OMP_NUM_THREADS)\n"
    "  --list          print the jobs of the shard (id, then parameters)\n"
    "                  and run nothing\n"
    "  --quiet         no line per job on stderr\n";

static void on_event(ng_batch_event e, const ng_manifest_job *job,
                     size_t position, size_t count, double seconds,
                     const char *message, void *ctx)
{
    if (*(const int *)ctx) return; /* --quiet */
    switch (e) {
    case NG_BATCH_STARTED:
        fprintf(stderr, "nervegap batch: [%zu/%zu] %s started%s%s\n",
                position, count, job->id, message[0] ? ": " : "", message);
        break;
    case NG_BATCH_SKIPPED:
        fprintf(stderr, "nervegap batch: [%zu/%zu] %s skipped: %s\n",
                position, count, job->id, message);
        break;
    case NG_BATCH_DONE:
        fprintf(stderr, "nervegap batch: [%zu/%zu] %s done in %.2f s\n",
                position, count, job->id, seconds);
        break;
    case NG_BATCH_FAILED:
        fprintf(stderr, "nervegap batch: [%zu/%zu] %s failed after %.2f s: "
                "%s\n", position, count, job->id, seconds, message);
        break;
    }
}

static void on_temp_file(const char *path, void *ctx)
{
    (void)ctx;
    cleanup_on_signal(path);
}

int cmd_batch(int argc, char **argv)
{
    const char *out_dir = NULL, *shard = NULL, *threads = NULL;
    int list = 0, quiet = 0;
    const cli_option table[] = {
        {"out-dir", NULL, 1, &out_dir, NULL},
        {"shard", NULL, 1, &shard, NULL},
        {"threads", NULL, 1, &threads, NULL},
        {"list", NULL, 0, NULL, &list},
        {"quiet", NULL, 0, NULL, &quiet},
        {NULL, NULL, 0, NULL, NULL},
    };
    cli_args args;
    ng_error err;
    ng_error_clear(&err);
    if (cli_parse(argc, argv, 2, "batch", table, &args, &err) != NG_OK)
        return cli_fail("batch", &err);
    if (args.help) {
        fputs(batch_help, stdout);
        return 0;
    }
    ng_batch_options opt = {0};
    opt.shard = opt.shards = 1;
    if (args.n_positional != 1)
        ng_error_set(&err, NG_ERR_USAGE, "expected one MANIFEST, got %d "
                     "(see nervegap batch --help)", args.n_positional);
    else if (out_dir == NULL && !list)
        ng_error_set(&err, NG_ERR_USAGE, "--out-dir DIR is required (see "
                     "nervegap batch --help)");
    if (err.code == NG_OK && shard)
        ng_batch_parse_shard(shard, &opt.shard, &opt.shards, &err);
    int found = 0;
    if (err.code == NG_OK && !shard)
        ng_batch_shard_from_slurm(getenv("SLURM_ARRAY_TASK_ID"),
                                  getenv("SLURM_ARRAY_TASK_MIN"),
                                  getenv("SLURM_ARRAY_TASK_MAX"),
                                  getenv("SLURM_ARRAY_TASK_COUNT"),
                                  getenv("SLURM_ARRAY_TASK_STEP"), &opt.shard,
                                  &opt.shards, &found, &err);
    const char *cpus = getenv("SLURM_CPUS_PER_TASK");
    if (err.code == NG_OK && threads)
        cli_parse_threads(threads, &opt.threads, &err);
    else if (err.code == NG_OK && cpus && cpus[0] &&
             cli_parse_threads(cpus, &opt.threads, &err) != NG_OK) {
        ng_error_clear(&err);
        ng_error_set(&err, NG_ERR_USAGE, "SLURM_CPUS_PER_TASK=%s: expected a "
                     "number of threads from 1 to 4096", cpus);
    }
    if (err.code != NG_OK) return cli_fail("batch", &err);

    ng_manifest *m = NULL;
    if (ng_manifest_load(args.positional[0], &m, &err) != NG_OK)
        return cli_fail("batch", &err);
    if (list) {
        for (size_t k = (size_t)opt.shard - 1; k < m->n_jobs;
             k += (size_t)opt.shards)
            printf("%s\t%s\n", m->jobs[k].id, m->jobs[k].parameters);
        ng_manifest_free(m);
        return 0;
    }
    /* no stage lines per job (one line per job instead); the progress
     * still runs for its test hook (progress_init) */
    progress prog;
    progress_init(&prog, "batch", 1);
    opt.progress = progress_report;
    opt.progress_ctx = &prog;
    char *command = cli_join_command(argc, argv);
    opt.command = command;
    opt.event = on_event;
    opt.temp_file = on_temp_file;
    opt.ctx = &quiet;
    ng_batch_summary sum;
    int status = ng_batch_run(m, out_dir, &opt, &sum, &err);
    free(command);
    ng_manifest_free(m);
    if (status != NG_OK) return cli_fail("batch", &err);
    if (!quiet)
        fprintf(stderr, "nervegap batch: shard %d/%d%s: %zu jobs: %zu done, "
                "%zu skipped (finished before), %zu failed\n", opt.shard,
                opt.shards, found ? " (from the Slurm array task)" : "",
                sum.jobs, sum.done, sum.skipped, sum.failed);
    if (sum.failed > 0) {
        fprintf(stderr, "nervegap batch: %zu of %zu jobs failed; their errors "
                "are in %s/jobs/ID.failed and %s/logs/\n", sum.failed,
                sum.jobs, out_dir, out_dir);
        return 1;
    }
    return 0;
}
