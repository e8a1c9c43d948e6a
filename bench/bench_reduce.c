/* bench_reduce.c — cost of the persistence engine (complex.c, reduce.c).
 *
 * Rips filtration (edge value d/2, vertex value 0) of n uniform random
 * points in the unit cube of R^3; the neighbour graph (pairs with d ≤ 2T)
 * is built here on a grid of cells of side 2T. The scale limit T of each
 * case is found by bisection on ng_complex_estimate so that the clique set
 * up to dimension D + 1 has about the target number of simplices. Every
 * case runs in a process of its own (so that peak_rss_kib is its own) with
 * 1 and 2 threads, and with one filtration (Rips) or two (Rips and the same
 * complex with chebyshev edge values d_∞/2), which shows what a second
 * filtration costs. One line per run:
 *
 *   bench=reduce n=… D=… T=… filtrations=… simplices=… seconds_build=…
 *   seconds_reduce=… simplices_per_s=… bars=… estimate_kib=… peak_rss_kib=…
 *   threads=…
 *
 * estimate_kib: what ng_complex_estimate predicts (build + L reductions;
 * the graph and the cloud of the benchmark itself are not in it).
 * seconds_build: clique enumeration + one value callback per simplex;
 * seconds_reduce: ng_persistence_compute; simplices_per_s: simplices /
 * (build + reduce). Usage: bench_reduce [quick|standard|large].
 */
#include "nervegap/complex.h"
#include "nervegap/persistence.h"

#include "splitmix.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <time.h>

typedef struct cloud {
    size_t n;
    double *x; /* n × 3 */
    int L;
} cloud;

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static uint64_t rng_state = 42;

static double rng_uniform(void) { return ng_splitmix_uniform(&rng_state); }

static int rips_values(const ng_index *v, int m, double *out, void *ctx)
{
    const cloud *cl = ctx;
    double e2 = 0, einf = 0;
    for (int a = 0; a < m; a++)
        for (int b = a + 1; b < m; b++) {
            const double *p = cl->x + 3 * (size_t)v[a], *q = cl->x + 3 * (size_t)v[b];
            double s = 0, c = 0;
            for (int t = 0; t < 3; t++) {
                double d = fabs(p[t] - q[t]);
                s += d * d;
                if (d > c) c = d;
            }
            if (s > e2) e2 = s;
            if (c > einf) einf = c;
        }
    out[0] = sqrt(e2) / 2;
    if (cl->L > 1) out[1] = einf / 2;
    return 0;
}

static int cmp_index(const void *a, const void *b)
{
    ng_index x = *(const ng_index *)a, y = *(const ng_index *)b;
    return (x > y) - (x < y);
}

/* Pairs with euclidean distance ≤ r, by a grid of cells of side ≥ r. */
static int grid_graph(const cloud *cl, double r, ng_csr *g)
{
    size_t n = cl->n;
    long side = (long)floor(1.0 / r);
    if (side < 1) side = 1;
    if (side > 1024) side = 1024;
    size_t cells = (size_t)side * (size_t)side * (size_t)side;
    size_t *cell_of = malloc(n * sizeof *cell_of);
    size_t *cstart = calloc(cells + 1, sizeof *cstart);
    ng_index *order = malloc(n * sizeof *order);
    if (!cell_of || !cstart || !order) return -1;
    for (size_t i = 0; i < n; i++) {
        long c[3];
        for (int t = 0; t < 3; t++) {
            c[t] = (long)(cl->x[3 * i + (size_t)t] * (double)side);
            if (c[t] >= side) c[t] = side - 1;
        }
        cell_of[i] = ((size_t)c[0] * (size_t)side + (size_t)c[1]) * (size_t)side + (size_t)c[2];
        cstart[cell_of[i] + 1]++;
    }
    for (size_t c = 0; c < cells; c++) cstart[c + 1] += cstart[c];
    size_t *fill = malloc(cells * sizeof *fill);
    memcpy(fill, cstart, cells * sizeof *fill);
    for (size_t i = 0; i < n; i++) order[fill[cell_of[i]]++] = (ng_index)i;
    free(fill);
    size_t cap = 16 * n + 16, e = 0;
    g->n = n;
    g->offset = malloc((n + 1) * sizeof *g->offset);
    g->nbr = malloc(cap * sizeof *g->nbr);
    g->dist = NULL;
    double r2 = r * r;
    for (size_t i = 0; i < n; i++) {
        g->offset[i] = e;
        size_t c = cell_of[i];
        long cz = (long)(c % (size_t)side), cy = (long)(c / (size_t)side % (size_t)side),
             cx = (long)(c / ((size_t)side * (size_t)side));
        for (long dx = -1; dx <= 1; dx++)
            for (long dy = -1; dy <= 1; dy++)
                for (long dz = -1; dz <= 1; dz++) {
                    long X = cx + dx, Y = cy + dy, Z = cz + dz;
                    if (X < 0 || Y < 0 || Z < 0 || X >= side || Y >= side || Z >= side)
                        continue;
                    size_t cc = ((size_t)X * (size_t)side + (size_t)Y) * (size_t)side + (size_t)Z;
                    for (size_t s = cstart[cc]; s < cstart[cc + 1]; s++) {
                        ng_index j = order[s];
                        if (j == i) continue;
                        double d2 = 0;
                        for (int t = 0; t < 3; t++) {
                            double d = cl->x[3 * i + (size_t)t] - cl->x[3 * (size_t)j + (size_t)t];
                            d2 += d * d;
                        }
                        if (d2 > r2) continue;
                        if (e == cap) {
                            cap *= 2;
                            g->nbr = realloc(g->nbr, cap * sizeof *g->nbr);
                            if (!g->nbr) return -1;
                        }
                        g->nbr[e++] = j;
                    }
                }
        qsort(g->nbr + g->offset[i], e - g->offset[i], sizeof *g->nbr, cmp_index);
    }
    g->offset[n] = e;
    free(cell_of);
    free(cstart);
    free(order);
    return 0;
}

static void graph_release(ng_csr *g)
{
    free(g->offset);
    free(g->nbr);
}

/* Simplices up to dimension top at scale limit T. */
static size_t simplices_at(const cloud *cl, int top, double T)
{
    ng_csr g;
    if (grid_graph(cl, 2 * T, &g) != 0) return SIZE_MAX;
    ng_complex_size s;
    ng_error err;
    ng_error_clear(&err);
    int st = ng_complex_estimate(&g, top, 1, 0, 0, &s, &err);
    graph_release(&g);
    return st == NG_OK ? s.total : SIZE_MAX;
}

static double find_scale(const cloud *cl, int top, double target)
{
    /* grow the scale by 10 % until past the target (never far past it,
     * which would cost a huge graph), then bisect */
    double lo = 0, hi = 0.2 * cbrt(1.0 / (double)cl->n);
    while ((double)simplices_at(cl, top, hi) < target) {
        lo = hi;
        hi *= 1.1;
    }
    for (int it = 0; it < 12; it++) {
        double mid = (lo + hi) / 2;
        if ((double)simplices_at(cl, top, mid) < target)
            lo = mid;
        else
            hi = mid;
    }
    return (lo + hi) / 2;
}

static int run_case(cloud *cl, int D, double T, int L, int threads)
{
    cl->L = L;
    ng_csr g;
    if (grid_graph(cl, 2 * T, &g) != 0) return 1;
    double *vv = calloc(cl->n * (size_t)L, sizeof *vv);
    ng_complex_spec spec = {&g, D + 1, L, vv, T, rips_values, cl, threads, NULL, NULL};
    ng_error err;
    ng_error_clear(&err);
    ng_complex *c = NULL;
    ng_persistence *p = NULL;
    ng_complex_size est;
    if (ng_complex_estimate(&g, D + 1, L, 0, threads, &est, &err) != NG_OK) {
        fprintf(stderr, "bench_reduce: %s\n", err.message);
        return 1;
    }
    double t0 = now();
    if (ng_complex_build(&spec, &c, &err) != NG_OK) {
        fprintf(stderr, "bench_reduce: %s\n", err.message);
        return 1;
    }
    double t1 = now();
    if (ng_persistence_compute(c, threads, &p, &err) != NG_OK) {
        fprintf(stderr, "bench_reduce: %s\n", err.message);
        return 1;
    }
    double t2 = now();
    size_t total = 0, bars = 0;
    for (int k = 0; k <= D + 1; k++) total += ng_complex_count(c, k);
    for (int j = 0; j < L; j++)
        for (int k = 0; k <= D; k++) bars += p->diagram[j].bars[k].count;
    struct rusage ru;
    getrusage(RUSAGE_SELF, &ru);
    printf("bench=reduce n=%zu D=%d T=%.5g filtrations=%d simplices=%zu "
           "seconds_build=%.3f seconds_reduce=%.3f simplices_per_s=%.3e "
           "bars=%zu estimate_kib=%zu peak_rss_kib=%ld threads=%d\n",
           cl->n, D, T, L, total, t1 - t0, t2 - t1,
           (double)total / (t2 - t0), bars,
           (est.bytes_build + (size_t)L * est.bytes_reduce) / 1024, ru.ru_maxrss,
           threads);
    ng_persistence_free(p);
    ng_complex_free(c);
    graph_release(&g);
    free(vv);
    return 0;
}

static void make_cloud(cloud *cl, size_t n, uint64_t seed)
{
    cl->n = n;
    cl->L = 1;
    cl->x = malloc(n * 3 * sizeof *cl->x);
    if (cl->x == NULL) exit(1);
    rng_state = seed;
    for (size_t i = 0; i < 3 * n; i++) cl->x[i] = rng_uniform();
}

/* Every run is its own process (GNU OpenMP does not survive fork, and
 * peak_rss_kib must be the run's own): the driver re-executes itself as
 *   bench_reduce scale N D TARGET SEED   (prints T)
 *   bench_reduce run N D T L THREADS SEED (prints the line). */
int main(int argc, char **argv)
{
    if (argc == 6 && strcmp(argv[1], "scale") == 0) {
        cloud cl;
        make_cloud(&cl, strtoull(argv[2], NULL, 10), strtoull(argv[5], NULL, 10));
        printf("%.17g\n", find_scale(&cl, atoi(argv[3]) + 1, atof(argv[4])));
        free(cl.x);
        return 0;
    }
    if (argc == 8 && strcmp(argv[1], "run") == 0) {
        cloud cl;
        make_cloud(&cl, strtoull(argv[2], NULL, 10), strtoull(argv[7], NULL, 10));
        int st = run_case(&cl, atoi(argv[3]), atof(argv[4]), atoi(argv[5]), atoi(argv[6]));
        free(cl.x);
        return st;
    }
    const char *mode = argc > 1 ? argv[1] : "standard";
    double scale = strcmp(mode, "quick") == 0   ? 0.1
                   : strcmp(mode, "large") == 0 ? 5.0
                                                : 1.0;
    struct {
        size_t n;
        int D;
        double target;
    } cases[] = {
        {1000, 1, 1e6}, {1000, 2, 1e6},   {10000, 1, 2e6},
        {10000, 2, 2e6}, {100000, 1, 2e6}, {100000, 2, 2e6},
    };
    for (size_t ci = 0; ci < sizeof cases / sizeof cases[0]; ci++) {
        char cmd[4096];
        unsigned seed = 42 + (unsigned)ci;
        snprintf(cmd, sizeof cmd, "'%s' scale %zu %d %.6g %u", argv[0],
                 cases[ci].n, cases[ci].D, cases[ci].target * scale, seed);
        FILE *fp = popen(cmd, "r");
        double T = 0;
        if (fp == NULL || fscanf(fp, "%lf", &T) != 1) {
            fprintf(stderr, "bench_reduce: cannot run %s\n", cmd);
            return 1;
        }
        pclose(fp);
        for (int L = 1; L <= 2; L++)
            for (int threads = 1; threads <= 2; threads++) {
                snprintf(cmd, sizeof cmd, "'%s' run %zu %d %.17g %d %d %u",
                         argv[0], cases[ci].n, cases[ci].D, T, L, threads, seed);
                fflush(stdout);
                if (system(cmd) != 0) {
                    fprintf(stderr, "bench_reduce: failed: %s\n", cmd);
                    return 1;
                }
            }
    }
    return 0;
}
