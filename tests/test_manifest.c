/* test_manifest.c — the manifest parser (sweeps, canonical parameters,
 * ids, errors with line and column, allocation failures), the subsample
 * draw, the shard of a Slurm array task and the nearest-rank quantile of
 * gather. */
#include "alloc.h"
#include "nervegap/batch.h"
#include "nervegap/job.h"
#include "nervegap/manifest.h"
#include "nervegap/sha256.h"

#include <check.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static ng_manifest *parse(const char *text, ng_error *err)
{
    ng_manifest *m = NULL;
    ng_error_clear(err);
    ng_manifest_parse_buffer(text, strlen(text), "dir/m.txt", &m, err);
    return m;
}

static long find(const ng_manifest *m, const char *id)
{
    for (size_t j = 0; j < m->n_jobs; j++)
        if (strcmp(m->jobs[j].id, id) == 0) return (long)j;
    return -1;
}

static const char sweep[] =
    "# three inputs, three radii, two laws: 18 jobs\n"
    "input a.csv b.csv\n"
    "input \"sub dir/c d.csv\"   # a path with a space\n"
    "radius knn:8 knn:16 dtm:16\n"
    "law scaled shifted\n"
    "scale-limit 2.5\n";

START_TEST(cross_product)
{
    ng_error err;
    ng_manifest *m = parse(sweep, &err);
    ck_assert_msg(m != NULL, "%s", err.message);
    ck_assert_uint_eq(m->n_jobs, 18);
    /* order: inputs, then radius, then law */
    ck_assert_str_eq(m->jobs[0].input, "a.csv");
    ck_assert_str_eq(m->jobs[0].input_path, "dir/a.csv");
    ck_assert_str_eq(m->jobs[17].input_path, "dir/sub dir/c d.csv");
    ck_assert_int_eq(m->jobs[1].job.scheme.law, NG_LAW_SHIFTED);
    ck_assert_int_eq(m->jobs[2].job.scheme.rule.kind, NG_RADIUS_KNN);
    ck_assert_uint_eq(m->jobs[2].job.scheme.rule.k, 16);
    ck_assert_int_eq(m->jobs[4].job.scheme.rule.kind, NG_RADIUS_DTM);
    ck_assert_int_eq(m->jobs[0].job.options.scale_auto, 0);
    ck_assert(m->jobs[0].job.options.scale_limit == 2.5);
    ck_assert_str_eq(m->jobs[0].parameters,
                     "input=a.csv\tmetric=euclidean\tradius=knn:8\tlaw=scaled"
                     "\traw-radius=no\tmerge-duplicates=no\tmax-degree=1"
                     "\tscale-limit=2.5\tslices=none\tgrid=128"
                     "\tmax-simplices=20000000\tbudget=default"
                     "\twasserstein-limit=50000");
    ck_assert_str_eq(m->jobs[0].job.parameters, m->jobs[0].parameters);
    ck_assert_str_eq(m->jobs[0].job.id, m->jobs[0].id);
    ck_assert(strncmp(m->jobs[0].id, "a-knn8-scaled-", 14) == 0);
    ck_assert(strncmp(m->jobs[17].id, "c_d-dtm16-shifted-", 18) == 0);
    for (size_t j = 0; j < m->n_jobs; j++) {
        ck_assert_int_eq(m->jobs[j].parent, -1);
        for (const char *c = m->jobs[j].id; *c; c++)
            ck_assert(strchr("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRST"
                             "UVWXYZ0123456789._-", *c) != NULL);
    }
    ng_manifest_free(m);
}
END_TEST

/* Ids depend on the job's parameters only: reordered lines, other values
 * in the sweeps and spellings of the same value keep them. */
START_TEST(stable_ids)
{
    ng_error err;
    ng_manifest *a = parse(sweep, &err);
    ng_manifest *b = parse("scale-limit 2.50\n"
                           "law shifted scaled power\n"
                           "radius dtm:16 knn:16 knn:8 kde\n"
                           "input \"sub dir/c d.csv\" b.csv a.csv x.csv\n",
                           &err);
    ck_assert_msg(a && b, "%s", err.message);
    ck_assert_uint_eq(b->n_jobs, 4 * 4 * 3);
    for (size_t j = 0; j < a->n_jobs; j++) {
        long k = find(b, a->jobs[j].id);
        ck_assert_msg(k >= 0, "%s lost", a->jobs[j].id);
        ck_assert_str_eq(b->jobs[k].parameters, a->jobs[j].parameters);
    }
    ng_manifest_free(a);
    ng_manifest_free(b);
}
END_TEST

START_TEST(subsample_jobs)
{
    ng_error err;
    ng_manifest *m = parse("input a.csv\nradius knn:4 uniform\n"
                           "subsamples 3\nsubsample-size 20\nseed 9\n"
                           "alpha 0.1\n", &err);
    ck_assert_msg(m != NULL, "%s", err.message);
    ck_assert_uint_eq(m->n_jobs, 2 * 4);
    ck_assert(m->alpha == 0.1);
    ck_assert_int_eq(m->subsamples, 3);
    for (size_t j = 0; j < 8; j++) {
        const ng_manifest_job *mj = &m->jobs[j];
        if (j % 4 == 0) {
            ck_assert_int_eq(mj->parent, -1);
            ck_assert_uint_eq(mj->job.subsample_size, 0);
            continue;
        }
        ck_assert_int_eq(mj->parent, (long)(j / 4 * 4));
        ck_assert_int_eq(mj->job.subsample_index, (int)(j % 4));
        ck_assert_uint_eq(mj->job.subsample_size, 20);
        ck_assert(mj->job.subsample_seed == 9);
        ck_assert_str_eq(mj->job.subsample_of, m->jobs[mj->parent].id);
        /* the parent's parameters, then the subsample's */
        size_t len = strlen(m->jobs[mj->parent].parameters);
        ck_assert(strncmp(mj->parameters, m->jobs[mj->parent].parameters,
                          len) == 0);
        char tail[64];
        snprintf(tail, sizeof tail,
                 "\tsubsample=%zu\tsubsample-size=20\tseed=9", j % 4);
        ck_assert_str_eq(mj->parameters + len, tail);
    }
    ng_manifest_free(m);
}
END_TEST

START_TEST(distance_inputs)
{
    ng_error err;
    ng_manifest *m = parse("distances d.npy\ninput p.csv\n"
                           "metric euclidean chebyshev\n", &err);
    ck_assert_msg(m != NULL, "%s", err.message);
    /* points × 2 metrics, the matrix once (its metric is given) */
    ck_assert_uint_eq(m->n_jobs, 3);
    ck_assert_int_eq(m->jobs[2].job.distances, 1);
    ck_assert_int_eq(m->jobs[2].job.scheme.metric, NG_METRIC_GIVEN);
    ck_assert(strstr(m->jobs[2].parameters, "distances=d.npy\tmetric=given"));
    ng_manifest_free(m);
}
END_TEST

/* Long names cut the readable prefix, never the hash: a 24-letter stem, a
 * dataset, a 16-letter radius and a subsample once made prefixes so long
 * that the hash digits were cut or written past the id (found by
 * tests/fuzz/fuzz_manifest.c). Every id is the 50-byte prefix, '-' and the
 * first 12 hex digits of the SHA-256 of its parameters. */
START_TEST(long_ids)
{
    ng_error err;
    ng_manifest *m = parse("input abcdefghijklmnopqrstuvwxyz.h5:/group/"
                           "ABCDEFGHIJKLMNOP\n"
                           "radius column:ABCDEFGHIJKLMNOPQRST\n"
                           "law shifted\nsubsamples 2\nsubsample-size 5\n",
                           &err);
    ck_assert_msg(m != NULL, "%s", err.message);
    ck_assert_uint_eq(m->n_jobs, 3);
    for (size_t j = 0; j < m->n_jobs; j++) {
        const char *id = m->jobs[j].id;
        ck_assert_uint_eq(strlen(id), NG_JOB_ID_MAX - 1);
        ck_assert_msg(strncmp(id, "abcdefghijklmnopqrstuvwx_ABCDEFGHIJKL-"
                                  "columnABCDEF-", 51) == 0, "%s", id);
        unsigned char digest[32];
        ng_sha256 h;
        ng_sha256_init(&h);
        ng_sha256_update(&h, m->jobs[j].parameters,
                         strlen(m->jobs[j].parameters));
        ng_sha256_final(&h, digest);
        char hex[13];
        for (int i = 0; i < 6; i++)
            snprintf(hex + 2 * i, 3, "%02x", digest[i]);
        ck_assert_str_eq(id + 51, hex);
        ck_assert_str_eq(m->jobs[j].job.id, id);
        if (j > 0)
            ck_assert_str_eq(m->jobs[j].job.subsample_of, m->jobs[0].id);
    }
    ck_assert_str_ne(m->jobs[1].id, m->jobs[2].id);
    ng_manifest_free(m);
}
END_TEST

/* Each bad manifest fails with NAME:LINE:COLUMN and a word of what. */
START_TEST(errors)
{
    static const struct {
        const char *text, *where, *what;
    } cases[] = {
        {"input a.csv\nradus knn:4\n", "dir/m.txt:2:1:", "unknown key"},
        {"input a.csv\nradius   knn:x\n", "dir/m.txt:2:10:", "radius knn:x"},
        {"input a.csv\nlaw scaled wide\n", "dir/m.txt:2:12:", "law"},
        {"input a.csv\nmax-degree 7\n", "dir/m.txt:2:12:", "max-degree 7"},
        {"input a.csv\nscale-limit -1\n", "dir/m.txt:2:13:", "scale-limit"},
        {"input a.csv\nslices factor:0.5\n", "dir/m.txt:2:8:", "slices"},
        {"input a.csv\ngrid 1\n", "dir/m.txt:2:6:", "grid"},
        {"input a.csv\nbudget lots\n", "dir/m.txt:2:8:", "budget"},
        /* less than a byte: once accepted as budget 0, a canonical text
         * that does not parse again (found by the fuzz target) */
        {"input a.csv\nbudget 0.5\n", "dir/m.txt:2:8:", "at least one byte"},
        {"input a.csv\nraw-radius maybe\n", "dir/m.txt:2:12:", "yes or no"},
        {"input \"a.csv\n", "dir/m.txt:1:7:", "closing"},
        {"input \"a\"b.csv\n", "dir/m.txt:1:10:", "space must follow"},
        {"input a\"b.csv\n", "dir/m.txt:1:8:", "inside a word"},
        {"input \"a\\n.csv\"\n", "dir/m.txt:1:9:", "escape"},
        {"input \"\"\n", "dir/m.txt:1:7:", "empty value"},
        {"input a.csv\x01\n", "dir/m.txt:1:12:", "control character"},
        {"law scaled\nlaw shifted\ninput a.csv\n", "dir/m.txt:2:1:",
         "given twice"},
        {"input a.csv\nseed 1 2\n", "dir/m.txt:2:8:", "one value"},
        {"input a.csv b.csv a.csv\n", "dir/m.txt:1:19:", "repeats"},
        {"input a.csv\ndistances a.csv\n", "dir/m.txt:2:11:", "repeats"},
        {"input a.csv\nradius knn:4 knn:04\n", "dir/m.txt:2:14:", "repeats"},
        {"input a.csv\nscale-limit 0 -0\n", "dir/m.txt:2:15:", "repeats"},
        {"input a.csv\nslices shift:0,1 shift:-0,1.0\n", "dir/m.txt:2:18:",
         "repeats"},
        {"radius knn:4\n# nothing else\n", "dir/m.txt:3:1:", "no input"},
        {"input a.csv\nsubsamples 4\n", "dir/m.txt:2:1:", "go together"},
        {"input a.csv\nsubsamples 0\n", "dir/m.txt:2:12:", "subsamples"},
        {"input a.csv\nsubsample-size 1\n", "dir/m.txt:2:16:", "size"},
        {"input a.csv\nalpha 1\n", "dir/m.txt:2:7:", "alpha"},
        {"input a.csv\nseed -3\n", "dir/m.txt:2:6:", "seed"},
        {"input a.csv\nmetric given\n", "dir/m.txt:2:8:", "unknown metric"},
        {"input a.csv\nradius file:r.txt\nsubsamples 2\nsubsample-size 5\n",
         "dir/m.txt:2:8:", "subsamples"},
        {"input a.csv\ninput\n", "dir/m.txt:2:1:", "no value"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        ng_error err;
        ng_manifest *m = parse(cases[i].text, &err);
        ck_assert_msg(m == NULL, "case %zu parsed", i);
        ck_assert_int_eq(err.code, NG_ERR_INPUT);
        ck_assert_msg(strncmp(err.message, cases[i].where,
                              strlen(cases[i].where)) == 0 &&
                          strstr(err.message, cases[i].what) != NULL,
                      "case %zu: %s (want %s ... %s)", i, err.message,
                      cases[i].where, cases[i].what);
    }
    /* a NUL byte inside the buffer */
    static const char nul[] = "input a.csv\nlaw sca\0led\n";
    ng_manifest *m = NULL;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_manifest_parse_buffer(nul, sizeof nul - 1, "n.txt",
                                              &m, &err),
                     NG_ERR_INPUT);
    ck_assert_msg(strncmp(err.message, "n.txt:2:8: a NUL byte", 21) == 0,
                  "%s", err.message);
}
END_TEST

START_TEST(missing_input)
{
    ng_error err;
    ng_manifest *m = parse("input  /nonexistent/x.csv\n", &err);
    ck_assert(m != NULL);
    ng_error_clear(&err);
    ck_assert_int_eq(ng_manifest_check_inputs(m, &err), NG_ERR_INPUT);
    ck_assert_msg(strstr(err.message, "dir/m.txt:1:8: input "
                                      "/nonexistent/x.csv: cannot open") ==
                      err.message,
                  "%s", err.message);
    ng_manifest_free(m);
}
END_TEST

/* Every allocation failure is reported as NG_ERR_NOMEM and frees what it
 * took (ASan checks the leaks). */
START_TEST(allocation_failures)
{
    static const char text[] = "input a.csv b.csv\nradius knn:4 dtm:8\n"
                               "subsamples 2\nsubsample-size 5\n";
    for (long n = 0;; n++) {
        ng_manifest *m = NULL;
        ng_error err;
        ng_error_clear(&err);
        ng_alloc_fail_after(n);
        int s = ng_manifest_parse_buffer(text, sizeof text - 1, "m", &m, &err);
        ng_alloc_fail_after(-1);
        if (s == NG_OK) {
            ck_assert_uint_eq(m->n_jobs, 12);
            ng_manifest_free(m);
            ck_assert_int_gt(n, 10);
            break;
        }
        ck_assert_int_eq(s, NG_ERR_NOMEM);
        ck_assert(m == NULL);
    }
}
END_TEST

/* A uniform m-subset of n includes each point with probability m/n
 * (classical); 20,000 draws of 3 of 10: each count within 6 standard
 * deviations of 6,000. Draws are sorted, distinct and repeatable. */
START_TEST(subsample_draw)
{
    enum { N = 10, M = 3, DRAWS = 20000 };
    long count[N] = {0};
    int64_t rows[M];
    ng_error err;
    ng_error_clear(&err);
    for (int d = 1; d <= DRAWS; d++) {
        ck_assert_int_eq(ng_job_subsample_rows(N, M, 42, d, rows, &err),
                         NG_OK);
        for (int i = 0; i < M; i++) {
            ck_assert(rows[i] >= 0 && rows[i] < N);
            if (i > 0) ck_assert(rows[i - 1] < rows[i]);
            count[rows[i]]++;
        }
    }
    double p = (double)M / N, sd = sqrt(DRAWS * p * (1 - p));
    for (int i = 0; i < N; i++)
        ck_assert_msg(fabs((double)count[i] - DRAWS * p) < 6 * sd,
                      "point %d drawn %ld times", i, count[i]);
    int64_t first[50], second[50];
    ng_job_subsample_rows(1000, 50, 7, 3, first, &err);
    ng_job_subsample_rows(1000, 50, 7, 3, second, &err);
    ck_assert(memcmp(first, second, sizeof first) == 0);
    ng_job_subsample_rows(1000, 50, 7, 4, second, &err);
    ck_assert(memcmp(first, second, sizeof first) != 0);
    ck_assert_int_eq(ng_job_subsample_rows(5, 6, 1, 1, rows, &err),
                     NG_ERR_USAGE);
}
END_TEST

START_TEST(slurm_shards)
{
    int i, n, found;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_batch_shard_from_slurm(NULL, NULL, NULL, NULL, NULL,
                                               &i, &n, &found, &err),
                     NG_OK);
    ck_assert(i == 1 && n == 1 && found == 0);
    /* --array=1-4: task 3 is shard 3 of 4 */
    ng_batch_shard_from_slurm("3", "1", "4", "4", NULL, &i, &n, &found, &err);
    ck_assert(i == 3 && n == 4 && found == 1);
    /* --array=0-7 without COUNT: MIN/MAX */
    ng_batch_shard_from_slurm("0", "0", "7", NULL, NULL, &i, &n, &found,
                              &err);
    ck_assert(i == 1 && n == 8);
    /* --array=10-40:10: task 30 is shard 3 of 4 */
    ng_batch_shard_from_slurm("30", "10", "40", "4", "10", &i, &n, &found,
                              &err);
    ck_assert(i == 3 && n == 4);
    /* --array=1,5,9 is not a range */
    ck_assert_int_eq(ng_batch_shard_from_slurm("5", "1", "9", "3", NULL, &i,
                                               &n, &found, &err),
                     NG_ERR_USAGE);
    ck_assert(strstr(err.message, "SLURM_ARRAY_TASK_ID=5") != NULL);
    ng_error_clear(&err);
    ck_assert_int_eq(ng_batch_shard_from_slurm("x", NULL, NULL, "2", NULL, &i,
                                               &n, &found, &err),
                     NG_ERR_USAGE);
    ng_error_clear(&err);
    ck_assert_int_eq(ng_batch_parse_shard("2/8", &i, &n, &err), NG_OK);
    ck_assert(i == 2 && n == 8);
    ck_assert_int_eq(ng_batch_parse_shard("0/8", &i, &n, &err), NG_ERR_USAGE);
    ng_error_clear(&err);
    ck_assert_int_eq(ng_batch_parse_shard("9/8", &i, &n, &err), NG_ERR_USAGE);
}
END_TEST

/* Nearest rank: the ⌈(1 − α)n⌉-th smallest, worked by hand. */
START_TEST(nearest_rank)
{
    double v[5] = {5, 1, 4, 2, 3};
    ck_assert(ng_gather_quantile(v, 5, 0.05) == 5); /* ⌈4.75⌉ = 5 */
    ck_assert(ng_gather_quantile(v, 5, 0.2) == 4);  /* ⌈4⌉ = 4 */
    ck_assert(ng_gather_quantile(v, 5, 0.5) == 3);  /* ⌈2.5⌉ = 3 */
    ck_assert(ng_gather_quantile(v, 5, 0.99) == 1); /* ⌈0.05⌉ = 1 */
    ck_assert(isnan(ng_gather_quantile(v, 0, 0.05)));
}
END_TEST

int main(void)
{
    Suite *s = suite_create("manifest");
    TCase *tc = tcase_create("manifest");
    tcase_add_test(tc, cross_product);
    tcase_add_test(tc, stable_ids);
    tcase_add_test(tc, subsample_jobs);
    tcase_add_test(tc, distance_inputs);
    tcase_add_test(tc, long_ids);
    tcase_add_test(tc, errors);
    tcase_add_test(tc, missing_input);
    tcase_add_test(tc, allocation_failures);
    tcase_add_test(tc, subsample_draw);
    tcase_add_test(tc, slurm_shards);
    tcase_add_test(tc, nearest_rank);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
