/* bench_knn.c — k-nearest-neighbour throughput of ng_knn_all.
 *
 * Usage:
 *   bench_knn              the standard cases: k = 16 on 10^4, 10^5, 10^6
 *                          uniform points in [0,1)^3 and 10^5 in [0,1)^16,
 *                          each with 1 and 2 threads
 *   bench_knn crossover    tree against brute force (1 thread) over a grid
 *                          of n and dim: how the automatic rule of kdtree.c
 *                          was measured
 *   bench_knn leaf         the standard 3-d cases for several leaf sizes
 *
 * Each case runs in its own forked child, so that its peak memory
 * (getrusage ru_maxrss of the child) belongs to that case alone; the child
 * times 3 runs (tree build included) and prints the median as one
 * machine-readable line, e.g.
 *   bench=knn n=1000000 dim=3 k=16 threads=2 method=auto leaf=16
 *   seconds=3.21 queries_per_s=311526 peak_rss_kib=412000
 */
#include "nervegap/kdtree.h"

#include "kdtree_internal.h"
#include "splitmix.h"

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#define RUNS 3

static double now_seconds(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static int double_cmp(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* n uniform points in [0, 1)^dim from a fixed seed (splitmix64). */
static double *uniform_cloud(size_t n, size_t dim)
{
    double *p = malloc(n * dim * sizeof *p);
    if (p == NULL) return NULL;
    uint64_t state = 20240601u;
    for (size_t i = 0; i < n * dim; i++) p[i] = ng_splitmix_uniform(&state);
    return p;
}

static const char *method_name(ng_kdtree_method m)
{
    return m == NG_KDTREE_TREE ? "tree" : m == NG_KDTREE_BRUTE ? "brute"
                                                               : "auto";
}

/* The body of one forked child: 0 on success. */
static int run_case(size_t n, size_t dim, size_t k, int threads,
                    ng_kdtree_method method, size_t leaf)
{
    double *pts = uniform_cloud(n, dim);
    double *dist = malloc(n * k * sizeof *dist);
    ng_index *idx = malloc(n * k * sizeof *idx);
    if (pts == NULL || dist == NULL || idx == NULL) {
        fprintf(stderr, "bench_knn: out of memory for n=%zu\n", n);
        return 1;
    }
    ng_kdtree_set_leaf_size(leaf);
    double seconds[RUNS];
    for (int r = 0; r < RUNS; r++) {
        ng_error err;
        ng_error_clear(&err);
        double t0 = now_seconds();
        int status = ng_kdtree_knn_using(method, pts, n, dim,
                                         NG_METRIC_EUCLIDEAN, k, threads,
                                         dist, idx, &err);
        seconds[r] = now_seconds() - t0;
        if (status != NG_OK) {
            fprintf(stderr, "bench_knn: %s\n", err.message);
            return 1;
        }
    }
    qsort(seconds, RUNS, sizeof seconds[0], double_cmp);
    double median = seconds[RUNS / 2];
    struct rusage ru;
    getrusage(RUSAGE_SELF, &ru);
    if (method == NG_KDTREE_AUTO) method = ng_kdtree_choose(n, dim);
    printf("bench=knn n=%zu dim=%zu k=%zu threads=%d method=%s leaf=%zu "
           "seconds=%.3f queries_per_s=%.0f peak_rss_kib=%ld\n",
           n, dim, k, threads, method_name(method), leaf, median,
           (double)n / median, (long)ru.ru_maxrss);
    fflush(stdout);
    free(pts);
    free(dist);
    free(idx);
    return 0;
}

/* Runs one case in a forked child; 0 when it succeeded. */
static int fork_case(size_t n, size_t dim, size_t k, int threads,
                     ng_kdtree_method method, size_t leaf)
{
    fflush(stdout);
    pid_t pid = fork();
    if (pid < 0) {
        perror("bench_knn: fork");
        return 1;
    }
    if (pid == 0) _exit(run_case(n, dim, k, threads, method, leaf));
    int wstatus;
    if (waitpid(pid, &wstatus, 0) < 0) {
        perror("bench_knn: waitpid");
        return 1;
    }
    return !(WIFEXITED(wstatus) && WEXITSTATUS(wstatus) == 0);
}

int main(int argc, char **argv)
{
    int failed = 0;
    const char *mode = argc > 1 ? argv[1] : "standard";
    if (strcmp(mode, "standard") == 0) {
        static const size_t cases[][2] = {
            {10000, 3}, {100000, 3}, {1000000, 3}, {100000, 16}};
        for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++)
            for (int threads = 1; threads <= 2; threads++)
                failed |= fork_case(cases[c][0], cases[c][1], 16, threads,
                                    NG_KDTREE_AUTO, 16);
    } else if (strcmp(mode, "crossover") == 0) {
        static const size_t ns[] = {32, 128, 512, 2048, 8192, 32768};
        static const size_t ds[] = {2, 4, 8, 12, 16, 24, 32};
        for (size_t a = 0; a < sizeof ns / sizeof ns[0]; a++)
            for (size_t b = 0; b < sizeof ds / sizeof ds[0]; b++) {
                size_t k = ns[a] > 16 ? 16 : ns[a] - 1;
                failed |= fork_case(ns[a], ds[b], k, 1, NG_KDTREE_TREE, 16);
                failed |= fork_case(ns[a], ds[b], k, 1, NG_KDTREE_BRUTE, 16);
            }
    } else if (strcmp(mode, "leaf") == 0) {
        static const size_t leaves[] = {4, 8, 16, 32, 64};
        for (size_t l = 0; l < sizeof leaves / sizeof leaves[0]; l++) {
            failed |= fork_case(100000, 3, 16, 1, NG_KDTREE_TREE, leaves[l]);
            failed |= fork_case(1000000, 3, 16, 1, NG_KDTREE_TREE, leaves[l]);
            failed |= fork_case(100000, 16, 16, 1, NG_KDTREE_TREE, leaves[l]);
        }
    } else {
        fprintf(stderr, "usage: bench_knn [standard|crossover|leaf]\n");
        return 2;
    }
    return failed ? 1 : 0;
}
