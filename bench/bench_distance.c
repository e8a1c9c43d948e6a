/* bench_distance.c — bottleneck and Wasserstein distances (distance.h) on
 * random diagrams against a perturbed copy of themselves.
 *
 * Usage:
 *   bench_distance             the standard cases: bottleneck, W1 and W2
 *                              (relative error 1e-6) for n = 10^3, 10^4,
 *                              10^5 points per diagram, the bottleneck of
 *                              two independent diagrams of 10^4, 10^5
 *                              points and W1, W2 of two of 10^4 points
 *   bench_distance quick       n = 10^3 and 10^4 only
 *   bench_distance real FILE.h5 [K]
 *                              bottleneck, W1 and W2 between the Čech and
 *                              the Rips diagram of degree K (default 1) of
 *                              a results file (deaths of +inf cut at the
 *                              scale limit, as nervegap run does); W1 and
 *                              W2 also by shortest paths with the larger
 *                              diagram bidding (method=paths-larger), the
 *                              other order than the library's
 *   bench_distance exact       the Hungarian method against shortest
 *                              augmenting paths for n = 25..500 points per
 *                              diagram (augmented sizes 50..1000: how
 *                              EXACT_LIMIT in wasserstein.c was chosen)
 *
 * The diagram (fixed seed): births uniform in [0, 1), lengths exponential
 * with mean 0.1; the copy moves each coordinate by a uniform amount in
 * [−0.01, 0.01] (birth < death kept) — the realistic case of two close
 * filtrations. Each case runs in its own forked child, so that its peak
 * memory (getrusage ru_maxrss) is its own; the child times 3 runs and
 * prints the medians of the wall and the CPU time (the machine is shared:
 * the CPU time moves less) as one machine-readable line, e.g.
 *   bench=distance kind=W1 pair=copy n=100000 m=100000 method=paths
 *   rel_error=1e-06
 *   value=1.234 bound=3.7e-14 seconds=9.8 cpu_seconds=8.6
 *   peak_rss_kib=40000
 */
#include "nervegap/distance.h"
#include "nervegap/results.h"

#include "distance_internal.h"
#include "splitmix.h"

#include <math.h>
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

static double clock_seconds(clockid_t id)
{
    struct timespec ts;
    clock_gettime(id, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static int double_cmp(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static uint64_t state;

static double uniform(void) { return ng_splitmix_uniform(&state); }

/* A random diagram of n points and its perturbed copy, or (independent)
 * a second diagram drawn the same way. */
static void make_pair(size_t n, int independent, double *a, double *b)
{
    state = 20240611u + n;
    for (size_t i = 0; i < n; i++) {
        double birth = uniform();
        double len = -0.1 * log(1.0 - uniform()) + 1e-9;
        a[2 * i] = birth;
        a[2 * i + 1] = birth + len;
        double nb = birth + 0.02 * (uniform() - 0.5);
        double nd = birth + len + 0.02 * (uniform() - 0.5);
        if (independent) {
            nb = uniform();
            nd = nb - 0.1 * log(1.0 - uniform()) + 1e-9;
        }
        if (nd <= nb) nd = nb + 1e-9;
        b[2 * i] = nb;
        b[2 * i + 1] = nd;
    }
}

/* The real pair: the Čech and Rips diagrams of degree real_degree of
 * real_path (set by main), deaths of +inf cut at the scale limit. */
static const char *real_path;
static int real_degree = 1;

static int load_real(double **a, size_t *na, double **b, size_t *nb)
{
    ng_results *r = NULL;
    ng_error err;
    ng_error_clear(&err);
    if (ng_results_load(real_path, &r, &err) != NG_OK) {
        fprintf(stderr, "bench_distance: %s\n", err.message);
        return 1;
    }
    if (real_degree < 0 || real_degree > r->max_degree) {
        fprintf(stderr, "bench_distance: %s has degrees 0..%d\n", real_path,
                r->max_degree);
        ng_results_free(r);
        return 1;
    }
    const ng_bars *bars[2] = {&r->cech.bars[real_degree],
                              &r->rips.bars[real_degree]};
    double **out[2] = {a, b};
    size_t *count[2] = {na, nb};
    for (int s = 0; s < 2; s++) {
        size_t m = bars[s]->count;
        double *x = malloc((2 * m + 1) * sizeof *x);
        if (x == NULL) {
            fprintf(stderr, "bench_distance: out of memory\n");
            ng_results_free(r);
            return 1;
        }
        for (size_t i = 0; i < 2 * m; i++) {
            double v = bars[s]->interval[i];
            x[i] = isinf(v) ? r->scale_limit : v;
        }
        *out[s] = x;
        *count[s] = m;
    }
    ng_results_free(r);
    return 0;
}

/* kind 0: bottleneck; 1, 2: W1, W2. n = 0: the real pair. */
static int run_case(int kind, size_t n, int independent, const char *method,
                    double rel)
{
    double *a = NULL, *b = NULL;
    size_t na = n, nb = n;
    if (n == 0) {
        if (load_real(&a, &na, &b, &nb) != 0) return 1;
    } else {
        a = malloc(2 * n * sizeof *a);
        b = malloc(2 * n * sizeof *b);
        if (a == NULL || b == NULL) {
            fprintf(stderr, "bench_distance: out of memory for n=%zu\n", n);
            return 1;
        }
        make_pair(n, independent, a, b);
    }
    int larger_bids = strcmp(method, "paths-larger") == 0;
    if (strcmp(method, "exact") == 0)
        ng_distance_set_exact_limit(SIZE_MAX - 1);
    else if (strcmp(method, "paths") == 0)
        ng_distance_set_exact_limit(0);
    double seconds[RUNS], cpu[RUNS], value = 0, bound = 0;
    for (int r = 0; r < RUNS; r++) {
        ng_error err;
        ng_error_clear(&err);
        double t0 = clock_seconds(CLOCK_MONOTONIC);
        double c0 = clock_seconds(CLOCK_PROCESS_CPUTIME_ID);
        int status;
        if (kind == 0) {
            status = ng_bottleneck_distance(a, na, b, nb, &value, &err);
        } else if (larger_bids) { /* finite diagrams: births < deaths */
            double sum, sum_err, lower, p = (double)kind;
            int big_a = na >= nb;
            status = ng_distance_wasserstein_paths(
                big_a ? a : b, big_a ? na : nb, big_a ? b : a,
                big_a ? nb : na, p, &sum, &sum_err, &lower, &err);
            value = pow(sum, 1.0 / p);
            bound = ng_distance_relative_bound(p, sum, sum_err, lower, 0.0,
                                               0.0);
        } else {
            status = ng_wasserstein_distance(a, na, b, nb, (double)kind, rel,
                                             &value, &bound, &err);
        }
        seconds[r] = clock_seconds(CLOCK_MONOTONIC) - t0;
        cpu[r] = clock_seconds(CLOCK_PROCESS_CPUTIME_ID) - c0;
        if (status != NG_OK) {
            fprintf(stderr, "bench_distance: %s\n", err.message);
            return 1;
        }
    }
    qsort(seconds, RUNS, sizeof seconds[0], double_cmp);
    qsort(cpu, RUNS, sizeof cpu[0], double_cmp);
    struct rusage ru;
    getrusage(RUSAGE_SELF, &ru);
    const char *used = kind == 0 ? "exact"
                       : strcmp(method, "auto") != 0
                           ? method
                           : (na + nb <= ng_distance_exact_limit() ? "exact"
                                                                 : "paths");
    printf("bench=distance kind=%s pair=%s n=%zu m=%zu method=%s "
           "rel_error=%g value=%.17g bound=%.3g seconds=%.6f "
           "cpu_seconds=%.6f peak_rss_kib=%ld\n",
           kind == 0 ? "bottleneck" : kind == 1 ? "W1" : "W2",
           n == 0 ? "real" : independent ? "independent" : "copy", na, nb,
           used, rel,
           value, bound, seconds[RUNS / 2], cpu[RUNS / 2],
           (long)ru.ru_maxrss);
    fflush(stdout);
    free(a);
    free(b);
    return 0;
}

static int fork_case(int kind, size_t n, int independent, const char *method,
                     double rel)
{
    fflush(stdout);
    pid_t pid = fork();
    if (pid < 0) {
        perror("bench_distance: fork");
        return 1;
    }
    if (pid == 0) _exit(run_case(kind, n, independent, method, rel));
    int wstatus;
    if (waitpid(pid, &wstatus, 0) < 0) {
        perror("bench_distance: waitpid");
        return 1;
    }
    return !(WIFEXITED(wstatus) && WEXITSTATUS(wstatus) == 0);
}

int main(int argc, char **argv)
{
    int failed = 0;
    const char *mode = argc > 1 ? argv[1] : "standard";
    if (strcmp(mode, "standard") == 0 || strcmp(mode, "quick") == 0) {
        size_t top = strcmp(mode, "quick") == 0 ? 10000 : 100000;
        for (size_t n = 1000; n <= top; n *= 10)
            for (int kind = 0; kind <= 2; kind++)
                failed |= fork_case(kind, n, 0, "auto", 1e-6);
        /* the bottleneck where the lower bound is not the answer */
        for (size_t n = 10000; n <= top; n *= 10)
            failed |= fork_case(0, n, 1, "auto", 1e-6);
        /* Wasserstein distances of unrelated diagrams: longer paths */
        for (int kind = 1; kind <= 2; kind++)
            failed |= fork_case(kind, 10000, 1, "auto", 1e-6);
    } else if (strcmp(mode, "real") == 0 && argc > 2) {
        real_path = argv[2];
        if (argc > 3) real_degree = atoi(argv[3]);
        failed |= fork_case(0, 0, 0, "auto", 1e-6);
        for (int kind = 1; kind <= 2; kind++) {
            failed |= fork_case(kind, 0, 0, "auto", 1e-6);
            failed |= fork_case(kind, 0, 0, "paths-larger", 1e-6);
        }
    } else if (strcmp(mode, "exact") == 0) {
        static const size_t sizes[] = {5, 10, 25, 50, 100, 250, 500};
        for (size_t s = 0; s < sizeof sizes / sizeof sizes[0]; s++)
            for (int kind = 1; kind <= 2; kind++) {
                failed |= fork_case(kind, sizes[s], 0, "exact", 1e-6);
                failed |= fork_case(kind, sizes[s], 0, "paths", 1e-6);
            }
    } else {
        fprintf(stderr, "usage: bench_distance [standard|quick|exact|"
                        "real FILE.h5 [K]]\n");
        return 2;
    }
    return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
