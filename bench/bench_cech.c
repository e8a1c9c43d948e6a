/* bench_cech.c — euclidean Čech evaluations per second, one core.
 *
 * Cases: triangles (m = 3) and tetrahedra (m = 4), in R^3 and R^50, under
 * each growth law, through the public ng_cech_value (distances gathered
 * from coordinates) and through the kernel ng_cech_euclid on cached
 * squared distances. Random weighted points (uniform in the unit cube,
 * radii as a radius rule would give them), random vertex sets. Each case
 * runs 3 times for at least MIN_SECONDS and reports the median, as
 *   bench=cech api=value m=3 dim=3 law=scaled evals=... seconds=...
 *   evals_per_s=... peak_rss_kib=... threads=1
 * Usage: bench_cech [min_seconds]   (default 0.3)
 */
#include "nervegap/values.h"
#include "cech.h"
#include "alloc.h"

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <sys/resource.h>
#include <time.h>

#define NPOINTS 2048
#define NSIMPLICES 4096

static uint64_t state = 0x9E3779B97F4A7C15ull;
static double uniform(void)
{
    state ^= state >> 12;
    state ^= state << 25;
    state ^= state >> 27;
    return (double)((state * 2685821657736338717ull) >> 11) * 0x1.0p-53;
}

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static long peak_rss_kib(void)
{
    struct rusage ru;
    return getrusage(RUSAGE_SELF, &ru) == 0 ? ru.ru_maxrss : -1;
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

int main(int argc, char **argv)
{
    double min_seconds = argc > 1 ? atof(argv[1]) : 0.3;
    static const size_t dims[2] = {3, 50};
    static const ng_law laws[3] = {NG_LAW_SCALED, NG_LAW_SHIFTED, NG_LAW_POWER};
    double *coords = ng_malloc(NPOINTS * 50, sizeof(double));
    double *rho = ng_malloc(NPOINTS, sizeof(double));
    ng_index *verts = ng_malloc(NSIMPLICES * 4, sizeof(ng_index));
    double *sq = ng_malloc(NSIMPLICES * 16, sizeof(double));
    double *srho = ng_malloc(NSIMPLICES * 4, sizeof(double));
    if (!coords || !rho || !verts || !sq || !srho) {
        fprintf(stderr, "bench_cech: out of memory\n");
        return 1;
    }
    volatile double sink = 0.0;
    for (int di = 0; di < 2; di++) {
        size_t dim = dims[di];
        for (size_t i = 0; i < NPOINTS * dim; i++) coords[i] = uniform();
        for (int l = 0; l < 3; l++) {
            for (int i = 0; i < NPOINTS; i++)
                rho[i] = laws[l] == NG_LAW_SCALED ? 0.5 + uniform()
                                                  : 0.2 * uniform();
            ng_space s = {.metric = NG_METRIC_EUCLIDEAN, .law = laws[l],
                          .n = NPOINTS, .dim = dim, .coords = coords,
                          .rho = rho};
            for (int m = 3; m <= 4; m++) {
                for (int k = 0; k < NSIMPLICES; k++) {
                    ng_index *v = verts + 4 * k;
                    for (int i = 0; i < m; i++) {
                        int fresh;
                        do {
                            v[i] = (ng_index)(uniform() * NPOINTS) % NPOINTS;
                            fresh = 1;
                            for (int j = 0; j < i; j++) fresh &= v[j] != v[i];
                        } while (!fresh);
                        srho[4 * k + i] = rho[v[i]];
                    }
                    for (int i = 0; i < m; i++)
                        for (int j = 0; j < m; j++) {
                            double d = ng_metric_distance(
                                NG_METRIC_EUCLIDEAN, coords + v[i] * dim,
                                coords + v[j] * dim, dim);
                            sq[16 * k + i * m + j] = d * d;
                        }
                }
                for (int api = 0; api < 2; api++) {
                    double rate[3], secs[3];
                    long evals[3];
                    for (int run = 0; run < 3; run++) {
                        long count = 0;
                        double t0 = now(), t1;
                        do {
                            for (int k = 0; k < NSIMPLICES; k++)
                                sink += api == 0
                                    ? ng_cech_value(&s, verts + 4 * k, m)
                                    : ng_cech_euclid(laws[l], m, sq + 16 * k,
                                                     srho + 4 * k);
                            count += NSIMPLICES;
                            t1 = now();
                        } while (t1 - t0 < min_seconds);
                        evals[run] = count;
                        secs[run] = t1 - t0;
                        rate[run] = (double)count / (t1 - t0);
                    }
                    double sorted[3] = {rate[0], rate[1], rate[2]};
                    qsort(sorted, 3, sizeof(double), cmp_double);
                    int med = rate[0] == sorted[1] ? 0 : rate[1] == sorted[1] ? 1 : 2;
                    printf("bench=cech api=%s m=%d dim=%zu law=%s evals=%ld "
                           "seconds=%.3f evals_per_s=%.4g peak_rss_kib=%ld "
                           "threads=1\n",
                           api == 0 ? "value" : "kernel", m, dim,
                           ng_law_name(laws[l]), evals[med], secs[med],
                           sorted[1], peak_rss_kib());
                    fflush(stdout);
                }
            }
        }
    }
    ng_free(coords);
    ng_free(rho);
    ng_free(verts);
    ng_free(sq);
    ng_free(srho);
    return sink == 12345.0 ? 2 : 0;
}
