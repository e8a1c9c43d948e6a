/* bench_textbook.c — the persistence engine (reduce.c) against the textbook
 * reduction on the same complex.
 *
 * n uniform random points in the unit cube of R^3 (fixed seed), uniform
 * radii (ball radius t), the scale T at which the mean vertex degree of the
 * Rips graph is the target (default 40), degrees 0–1: the simplices are the
 * cliques up to dimension 2 with their Čech and Rips values (values.h).
 * Both reductions get the same complex and one thread:
 *   - engine: ng_persistence_compute (cohomology, clearing, apparent pairs,
 *     implicit coboundaries);
 *   - textbook: the boundary matrix written out, columns in filtration
 *     order as sorted row lists, each column reduced by adding the earlier
 *     column with the same lowest row until the lowest rows are distinct
 *     (Edelsbrunner, Letscher, Zomorodian, "Topological persistence and
 *     simplification", Discrete Comput. Geom. 28, 2002) — no clearing, no
 *     cohomology, no shortcuts.
 * The two barcodes must agree (a mismatch exits with status 1). Times are
 * CPU seconds of the one thread. One line per filtration and method,
 * median of the repeats:
 *
 *   bench=textbook n=2000 mean_degree=40 T=… filtration=rips
 *   method=engine simplices=… seconds=… peak_rss_kib=… threads=1
 *
 * and a line with the speed-up per filtration. Usage:
 *   bench_textbook [n] [mean_degree] [repeats]
 */
#include "nervegap/complex.h"
#include "nervegap/kdtree.h"
#include "nervegap/persistence.h"
#include "nervegap/values.h"

#include "splitmix.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <time.h>

/* CPU time of this thread: both reductions run on one thread, and on a
 * shared machine the wall time also counts the time spent waiting for a
 * core. */
static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static uint64_t rng_state = 2000;

static double rng_uniform(void) { return ng_splitmix_uniform(&rng_state); }

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static int cech_values(const ng_index *v, int m, double *out, void *ctx)
{
    const ng_space *s = ctx;
    double rips = ng_rips_value(s, v, m);
    out[0] = ng_cech_value(s, v, m);
    if (out[0] < rips) out[0] = rips;
    return 0;
}

static int rips_values(const ng_index *v, int m, double *out, void *ctx)
{
    out[0] = ng_rips_value(ctx, v, m);
    return 0;
}

/* ---- the textbook reduction ---- */

typedef struct item {
    double value;
    int dim;
    uint32_t pos; /* table position in its dimension */
} item;

static int item_cmp(const void *a, const void *b)
{
    const item *x = a, *y = b;
    if (x->value != y->value) return x->value < y->value ? -1 : 1;
    if (x->dim != y->dim) return x->dim - y->dim;
    return (x->pos > y->pos) - (x->pos < y->pos);
}

typedef struct bar {
    double birth, death;
} bar;

static int bar_cmp(const void *a, const void *b)
{
    const bar *x = a, *y = b;
    if (x->birth != y->birth) return x->birth < y->birth ? -1 : 1;
    return (x->death > y->death) - (x->death < y->death);
}

/* Bars of degrees 0..top−1 of filtration j: writes them (sorted, zero
 * length left out) to *out and returns their number. */
static size_t textbook(const ng_complex *c, int j, bar **out)
{
    int top = ng_complex_top_dim(c);
    double T = ng_complex_scale_limit(c);
    size_t total = 0;
    for (int k = 0; k <= top; k++) total += ng_complex_count_within(c, k, j);
    item *all = malloc(total * sizeof *all);
    uint32_t *index_of[8] = {0}; /* (dim, pos) → filtration index */
    size_t m = 0;
    for (int k = 0; k <= top; k++) {
        const double *val = ng_complex_values(c, k, j);
        index_of[k] = malloc((ng_complex_count(c, k) + 1) * sizeof(uint32_t));
        for (size_t p = 0; p < ng_complex_count(c, k); p++)
            if (val[p] <= T && val[p] < INFINITY)
                all[m++] = (item){val[p], k, (uint32_t)p};
    }
    qsort(all, m, sizeof *all, item_cmp);
    for (size_t i = 0; i < m; i++) index_of[all[i].dim][all[i].pos] = (uint32_t)i;
    uint32_t **col = calloc(m, sizeof *col);
    uint32_t *len = calloc(m, sizeof *len);
    int64_t *low_owner = malloc(m * sizeof *low_owner);
    for (size_t i = 0; i < m; i++) low_owner[i] = -1;
    for (size_t i = 0; i < m; i++) {
        int k = all[i].dim;
        if (k == 0) continue;
        const ng_index *v = ng_complex_vertices(c, k) + (size_t)all[i].pos * (size_t)(k + 1);
        col[i] = malloc((size_t)(k + 1) * sizeof **col);
        for (int r = 0; r <= k; r++) {
            ng_index f[8];
            int q = 0;
            for (int s = 0; s <= k; s++)
                if (s != r) f[q++] = v[s];
            size_t fp = ng_complex_find(c, f, k);
            col[i][len[i]++] = index_of[k - 1][fp];
        }
        for (uint32_t a = 1; a < len[i]; a++) /* sort rows */
            for (uint32_t b = a; b > 0 && col[i][b - 1] > col[i][b]; b--) {
                uint32_t t = col[i][b];
                col[i][b] = col[i][b - 1];
                col[i][b - 1] = t;
            }
        while (len[i] > 0 && low_owner[col[i][len[i] - 1]] >= 0) {
            size_t o = (size_t)low_owner[col[i][len[i] - 1]];
            uint32_t *sum = malloc((size_t)(len[i] + len[o]) * sizeof *sum);
            uint32_t a = 0, b = 0, n = 0;
            while (a < len[i] || b < len[o]) {
                if (b == len[o] || (a < len[i] && col[i][a] < col[o][b]))
                    sum[n++] = col[i][a++];
                else if (a == len[i] || col[o][b] < col[i][a])
                    sum[n++] = col[o][b++];
                else {
                    a++;
                    b++;
                }
            }
            free(col[i]);
            col[i] = sum;
            len[i] = n;
        }
        if (len[i] > 0) low_owner[col[i][len[i] - 1]] = (int64_t)i;
    }
    bar *bars = malloc((m + 1) * sizeof *bars);
    size_t nb = 0;
    for (size_t i = 0; i < m; i++) {
        if (all[i].dim >= top || len[i] > 0) continue;
        double death = low_owner[i] >= 0 ? all[low_owner[i]].value : INFINITY;
        if (death != all[i].value) bars[nb++] = (bar){all[i].value, death};
    }
    for (size_t i = 0; i < m; i++) free(col[i]);
    for (int k = 0; k <= top; k++) free(index_of[k]);
    free(col);
    free(len);
    free(low_owner);
    free(all);
    qsort(bars, nb, sizeof *bars, bar_cmp);
    *out = bars;
    return nb;
}

/* The engine's bars of filtration j, all degrees, sorted. */
static size_t engine_bars(const ng_persistence *p, int j, bar **out)
{
    size_t nb = 0;
    for (int k = 0; k <= p->max_degree; k++) nb += p->diagram[j].bars[k].count;
    bar *bars = malloc((nb + 1) * sizeof *bars);
    nb = 0;
    for (int k = 0; k <= p->max_degree; k++) {
        const ng_bars *b = &p->diagram[j].bars[k];
        for (size_t i = 0; i < b->count; i++)
            bars[nb++] = (bar){b->interval[2 * i], b->interval[2 * i + 1]};
    }
    qsort(bars, nb, sizeof *bars, bar_cmp);
    *out = bars;
    return nb;
}

static int keep_all(size_t i, size_t j, double d, void *ctx)
{
    (void)i, (void)j, (void)d, (void)ctx;
    return 1;
}

static double median(double *x, int n)
{
    qsort(x, (size_t)n, sizeof *x, cmp_double);
    return n % 2 ? x[n / 2] : 0.5 * (x[n / 2 - 1] + x[n / 2]);
}

int main(int argc, char **argv)
{
    size_t n = argc > 1 ? (size_t)atol(argv[1]) : 2000;
    double degree = argc > 2 ? atof(argv[2]) : 40.0;
    int repeats = argc > 3 ? atoi(argv[3]) : 3;
    if (n < 10 || degree <= 0 || repeats < 1 || repeats > 99) {
        fprintf(stderr, "usage: bench_textbook [n ≥ 10] [mean_degree] "
                        "[repeats 1..99]\n");
        return 2;
    }
    double *x = malloc(n * 3 * sizeof *x), *rho = malloc(n * sizeof *rho);
    for (size_t i = 0; i < 3 * n; i++) x[i] = rng_uniform();
    for (size_t i = 0; i < n; i++) rho[i] = 1.0;
    /* T: the (degree·n/2)-th smallest pair distance, halved */
    size_t pairs = n * (n - 1) / 2, want = (size_t)(degree * (double)n / 2);
    double *d = malloc(pairs * sizeof *d);
    size_t q = 0;
    for (size_t i = 0; i < n; i++)
        for (size_t k = i + 1; k < n; k++)
            d[q++] = ng_metric_distance(NG_METRIC_EUCLIDEAN, x + 3 * i,
                                        x + 3 * k, 3);
    qsort(d, pairs, sizeof *d, cmp_double);
    double T = d[want - 1] / 2;
    free(d);

    ng_error err;
    ng_error_clear(&err);
    double *radius = malloc(n * sizeof *radius);
    for (size_t i = 0; i < n; i++) radius[i] = 2 * T;
    ng_csr g;
    if (ng_neighbors_within(x, n, 3, NG_METRIC_EUCLIDEAN, radius, keep_all,
                            NULL, 1, &g, &err) != NG_OK) {
        fprintf(stderr, "bench_textbook: %s\n", err.message);
        return 1;
    }
    ng_space space = {NG_METRIC_EUCLIDEAN, NG_LAW_SCALED, n, 3, x, NULL, rho};
    double *vv = calloc(n, sizeof *vv);
    const char *names[2] = {"cech", "rips"};
    ng_value_fn fns[2] = {cech_values, rips_values};
    int status = 0;
    for (int j = 0; j < 2; j++) {
        /* one filtration per complex, so that each reduction is timed
         * alone */
        ng_complex_spec spec = {&g, 2, 1, vv, T, fns[j], &space, 1, NULL,
                                NULL};
        ng_complex *c;
        if (ng_complex_build(&spec, &c, &err) != NG_OK) {
            fprintf(stderr, "bench_textbook: %s\n", err.message);
            return 1;
        }
        size_t simplices = 0;
        for (int k = 0; k <= 2; k++) simplices += ng_complex_count_within(c, k, 0);
        double engine_s[99], textbook_s[99];
        ng_persistence *p = NULL;
        bar *want_bars = NULL, *got = NULL;
        size_t nw = 0;
        for (int r = 0; r < repeats; r++) {
            ng_persistence_free(p);
            double t0 = now();
            if (ng_persistence_compute(c, 1, &p, &err) != NG_OK) {
                fprintf(stderr, "bench_textbook: %s\n", err.message);
                return 1;
            }
            engine_s[r] = now() - t0;
            free(want_bars);
            t0 = now();
            nw = textbook(c, 0, &want_bars);
            textbook_s[r] = now() - t0;
        }
        size_t ng = engine_bars(p, 0, &got);
        int same = ng == nw;
        for (size_t i = 0; same && i < nw; i++)
            same = got[i].birth == want_bars[i].birth &&
                   got[i].death == want_bars[i].death;
        if (!same) status = 1;
        double e = median(engine_s, repeats), t = median(textbook_s, repeats);
        struct rusage ru;
        getrusage(RUSAGE_SELF, &ru);
        printf("bench=textbook n=%zu mean_degree=%g T=%.6g filtration=%s "
               "method=engine simplices=%zu bars=%zu seconds=%.3f threads=1\n",
               n, degree, T, names[j], simplices, ng, e);
        printf("bench=textbook n=%zu mean_degree=%g T=%.6g filtration=%s "
               "method=textbook simplices=%zu bars=%zu seconds=%.3f "
               "threads=1\n",
               n, degree, T, names[j], simplices, nw, t);
        printf("bench=textbook n=%zu filtration=%s speedup=%.1f "
               "same_bars=%s peak_rss_kib=%ld\n",
               n, names[j], t / e, same ? "yes" : "no", ru.ru_maxrss);
        fflush(stdout);
        free(want_bars);
        free(got);
        ng_persistence_free(p);
        ng_complex_free(c);
    }
    ng_csr_free(&g);
    free(vv);
    free(x);
    free(rho);
    free(radius);
    return status;
}
