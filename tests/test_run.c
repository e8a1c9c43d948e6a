/* test_run.c — the main job (ng_run_compute) against a textbook reduction
 * written here: every simplex listed explicitly, its values from the
 * independent per-simplex entry point ng_simplex_values, the boundary
 * matrix sorted by the filtration, and the standard left-to-right column
 * algorithm without clearing, without cohomology, without shortcuts
 * (Edelsbrunner, Letscher, Zomorodian, "Topological persistence and
 * simplification", Discrete Comput. Geom. 28, 2002). Diagrams are compared
 * as multisets, zero-length bars excluded, for the Čech, Rips and a slice
 * filtration, on random small clouds under every law. */
#include "nervegap/radius.h"
#include "nervegap/run.h"
#include "nervegap/values.h"

#include <check.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define MAX_SIMPLICES 20000
#define MAX_BARS 20000

typedef struct simplex {
    int m;
    ng_index v[5];
    double value; /* in the filtration under test */
} simplex;

typedef struct bar { double birth, death; } bar;

static int bar_cmp(const void *a, const void *b)
{
    const bar *x = a, *y = b;
    if (x->birth != y->birth) return x->birth < y->birth ? -1 : 1;
    if (x->death != y->death) return x->death < y->death ? -1 : 1;
    return 0;
}

static int simplex_cmp(const void *a, const void *b)
{
    const simplex *x = a, *y = b;
    if (x->value != y->value) return x->value < y->value ? -1 : 1;
    if (x->m != y->m) return x->m - y->m;
    return memcmp(x->v, y->v, sizeof x->v);
}

/* Vertex-list order, to find facets by binary search. */
static const simplex *by_vertices_base;

static int vertices_cmp(const void *a, const void *b)
{
    const simplex *x = by_vertices_base + *(const int *)a;
    const simplex *y = by_vertices_base + *(const int *)b;
    if (x->m != y->m) return x->m - y->m;
    return memcmp(x->v, y->v, sizeof x->v);
}

/* Position (in all) of the simplex v[0..m-1], or -1. */
static int find(const simplex *all, const int *order, int count,
                const ng_index *v, int m)
{
    simplex key = {m, {0}, 0.0};
    memcpy(key.v, v, (size_t)m * sizeof *v);
    int lo = 0, hi = count - 1;
    while (lo <= hi) {
        int mid = (lo + hi) / 2;
        const simplex *s = all + order[mid];
        int c = s->m != key.m ? s->m - key.m
                              : memcmp(s->v, key.v, sizeof key.v);
        if (c == 0) return order[mid];
        if (c < 0) lo = mid + 1;
        else hi = mid - 1;
    }
    return -1;
}

/* Textbook persistence of the listed simplices (all with value ≤ T):
 * bars of degree k written to out (count returned). */
static int textbook(simplex *all, int count, int degree, bar *out)
{
    qsort(all, (size_t)count, sizeof *all, simplex_cmp);
    int *order = malloc((size_t)count * sizeof *order);
    for (int i = 0; i < count; i++) order[i] = i;
    by_vertices_base = all;
    qsort(order, (size_t)count, sizeof *order, vertices_cmp);
    /* columns as sorted lists of row positions */
    int **col = calloc((size_t)count, sizeof *col);
    int *len = calloc((size_t)count, sizeof *len);
    int *low_owner = malloc((size_t)count * sizeof *low_owner);
    for (int i = 0; i < count; i++) low_owner[i] = -1;
    for (int j = 0; j < count; j++) {
        int m = all[j].m;
        if (m < 2) continue;
        col[j] = malloc((size_t)m * sizeof **col);
        for (int r = 0; r < m; r++) {
            ng_index f[5];
            int q = 0;
            for (int s = 0; s < m; s++)
                if (s != r) f[q++] = all[j].v[s];
            int pos = find(all, order, count, f, m - 1);
            ck_assert_int_ge(pos, 0); /* faces are in the complex */
            col[j][len[j]++] = pos;
        }
        for (int a = 1; a < len[j]; a++) /* sort rows */
            for (int b = a; b > 0 && col[j][b - 1] > col[j][b]; b--) {
                int t = col[j][b];
                col[j][b] = col[j][b - 1];
                col[j][b - 1] = t;
            }
        /* reduce: add earlier columns with the same lowest row (mod 2) */
        while (len[j] > 0 && low_owner[col[j][len[j] - 1]] >= 0) {
            int o = low_owner[col[j][len[j] - 1]];
            int *sum = malloc((size_t)(len[j] + len[o]) * sizeof *sum);
            int a = 0, b = 0, n = 0;
            while (a < len[j] || b < len[o]) {
                if (b == len[o] || (a < len[j] && col[j][a] < col[o][b]))
                    sum[n++] = col[j][a++];
                else if (a == len[j] || col[o][b] < col[j][a])
                    sum[n++] = col[o][b++];
                else {
                    a++;
                    b++;
                }
            }
            free(col[j]);
            col[j] = sum;
            len[j] = n;
        }
        if (len[j] > 0) low_owner[col[j][len[j] - 1]] = j;
    }
    int bars = 0;
    for (int i = 0; i < count; i++) {
        if (all[i].m != degree + 1) continue;
        if (len[i] > 0) continue; /* i kills a class: not a creator */
        double death = INFINITY;
        if (low_owner[i] >= 0) death = all[low_owner[i]].value;
        if (death == all[i].value) continue; /* zero length */
        ck_assert_int_lt(bars, MAX_BARS);
        out[bars++] = (bar){all[i].value, death};
    }
    for (int j = 0; j < count; j++) free(col[j]);
    free(col);
    free(len);
    free(low_owner);
    free(order);
    qsort(out, (size_t)bars, sizeof *out, bar_cmp);
    return bars;
}

static ng_cloud *cloud_from_points(const double *x, int n, int dim)
{
    char path[] = "/tmp/ng-test-run-XXXXXX";
    int fd = mkstemp(path);
    ck_assert_int_ge(fd, 0);
    FILE *fp = fdopen(fd, "w");
    for (int i = 0; i < n; i++)
        for (int c = 0; c < dim; c++)
            fprintf(fp, "%.17g%c", x[i * dim + c], c + 1 < dim ? ',' : '\n');
    fclose(fp);
    ng_cloud *cloud = NULL;
    ng_error err;
    ng_error_clear(&err);
    int status = ng_cloud_read(path, &cloud, &err);
    unlink(path);
    ck_assert_msg(status == NG_OK, "%s", err.message);
    return cloud;
}

static double uniform01(unsigned long long *state)
{
    *state = *state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(*state >> 11) / 9007199254740992.0;
}

/* Every clique of ≤ top + 1 vertices with Rips value ≤ T, with its value in
 * filtration j (0 Čech, 1 Rips, 2 slice factor lam). */
static int list_simplices(const ng_space *space, int n, int top, double T,
                          int j, double lam, simplex *out)
{
    int count = 0;
    ng_index v[5];
    /* odometer over increasing vertex lists */
    for (int m = 1; m <= top + 1; m++) {
        for (int r = 0; r < m; r++) v[r] = (ng_index)r;
        if (m > n) break;
        for (;;) {
            double rips, cech;
            ng_error err;
            ng_error_clear(&err);
            ck_assert_int_eq(ng_simplex_values(space, v, m, &rips, &cech,
                                               &err), NG_OK);
            if (rips <= T) {
                double value = j == 0 ? cech : j == 1 ? rips
                               : fmax(rips, cech / lam);
                if (value <= T) {
                    ck_assert_int_lt(count, MAX_SIMPLICES);
                    out[count].m = m;
                    memset(out[count].v, 0, sizeof out[count].v);
                    memcpy(out[count].v, v, (size_t)m * sizeof *v);
                    out[count].value = value;
                    count++;
                }
            }
            int r = m - 1;
            while (r >= 0 && v[r] == (ng_index)(n - m + r)) r--;
            if (r < 0) break;
            v[r]++;
            for (int s = r + 1; s < m; s++) v[s] = v[s - 1] + 1;
        }
    }
    return count;
}

static simplex listed[MAX_SIMPLICES];
static bar want[MAX_BARS];

static void compare_one(unsigned long long seed, int dim, ng_law law,
                        const char *rule, int degree_max)
{
    unsigned long long state = seed;
    int n = 6 + (int)(uniform01(&state) * (degree_max >= 2 ? 9 : 16));
    double x[40 * 3];
    for (int i = 0; i < n * dim; i++) x[i] = uniform01(&state);
    ng_cloud *cloud = cloud_from_points(x, n, dim);
    ng_scheme scheme;
    ng_scheme_init(&scheme);
    scheme.law = law;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_radius_parse(rule, &scheme.rule, &err), NG_OK);
    ng_radii radii;
    ck_assert_msg(ng_radii_compute(cloud, &scheme, 1, &radii, &err) == NG_OK,
                  "%s", err.message);

    ng_run_options opt;
    ng_run_options_init(&opt);
    opt.max_degree = degree_max;
    opt.threads = 1 + (int)(seed % 2);
    opt.slice_kind = NG_SLICE_FACTOR;
    opt.n_slices = 1;
    opt.slice_values[0] = 1.0 + 0.3 * uniform01(&state);
    /* half the cases at the full scale (auto), half cut at a random T */
    int cut = uniform01(&state) < 0.5;
    ng_run_result res;
    if (cut) {
        ck_assert_int_eq(ng_run_compute(cloud, &radii, &scheme, &opt, &res,
                                        &err), NG_OK);
        opt.scale_auto = 0;
        opt.scale_limit = res.scale_limit * (0.2 + 0.6 * uniform01(&state));
        ng_run_result_free(&res);
    }
    ck_assert_msg(ng_run_compute(cloud, &radii, &scheme, &opt, &res, &err) ==
                      NG_OK, "%s", err.message);
    double T = res.scale_limit;
    ng_space space = {scheme.metric, law, cloud->n, cloud->dim,
                      cloud->coords, NULL, radii.rho};
    for (int j = 0; j < 3; j++) {
        int count = list_simplices(&space, n, degree_max + 1, T, j,
                                   opt.slice_values[0], listed);
        for (int k = 0; k <= degree_max; k++) {
            int nb = textbook(listed, count, k, want);
            const ng_bars *got = &res.persistence->diagram[j].bars[k];
            ck_assert_msg(got->count == (size_t)nb,
                          "seed %llu filtration %d degree %d: %zu bars, "
                          "textbook %d", seed, j, k, got->count, nb);
            bar *mine = malloc((got->count + 1) * sizeof *mine);
            for (size_t b = 0; b < got->count; b++)
                mine[b] = (bar){got->interval[2 * b], got->interval[2 * b + 1]};
            qsort(mine, got->count, sizeof *mine, bar_cmp);
            for (int b = 0; b < nb; b++)
                ck_assert_msg(mine[b].birth == want[b].birth &&
                                  mine[b].death == want[b].death,
                              "seed %llu filtration %d degree %d bar %d: "
                              "[%.17g, %.17g) vs textbook [%.17g, %.17g)",
                              seed, j, k, b, mine[b].birth, mine[b].death,
                              want[b].birth, want[b].death);
            free(mine);
        }
    }
    ng_run_result_free(&res);
    ng_radii_free(&radii);
    ng_cloud_free(cloud);
}

static const char *const rules[] = {"uniform", "knn:2", "dtm:3", "kde"};

/* 3 laws × 4 rules × 2 dimensions × 11 seeds = 264 clouds of degree ≤ 1,
 * and as many of degree ≤ 2: over 500 clouds, three filtrations each. */
START_TEST(run_equals_textbook)
{
    int law = _i % 3, rule = (_i / 3) % 4, dim = 2 + (_i / 12) % 2;
    for (int seed = 0; seed < 11; seed++) {
        unsigned long long s = 1000003ULL * (unsigned long long)_i + (unsigned long long)seed;
        compare_one(s, dim, (ng_law)law, rules[rule], 1);
        compare_one(s ^ 0x5bd1e995ULL, dim, (ng_law)law, rules[rule], 2);
    }
}
END_TEST

/* The vertices and the cliques of 2..top + 1 vertices with Rips value ≤ T
 * (the simplex tables hold every vertex), counted by brute force over all
 * vertex lists. */
static size_t count_within(const ng_space *space, int n, int top, double T)
{
    size_t count = 0;
    ng_index v[5];
    for (int m = 1; m <= top + 1 && m <= n; m++) {
        for (int r = 0; r < m; r++) v[r] = (ng_index)r;
        for (;;) {
            if (m == 1 || ng_rips_value(space, v, m) <= T) count++;
            int r = m - 1;
            while (r >= 0 && v[r] == (ng_index)(n - m + r)) r--;
            if (r < 0) break;
            v[r]++;
            for (int q = r + 1; q < m; q++) v[q] = v[q - 1] + 1;
        }
    }
    return count;
}

/* The simplex budget: auto takes the largest scale whose complex has at
 * most max_simplices simplices, to the search's relative 1e-4 — the
 * complex at T fits, the one at T·(1 + 1e-4) does not (counted by brute
 * force); a given T above it is refused naming a T that fits. */
START_TEST(simplex_budget_is_the_largest_fit)
{
    unsigned long long state = 77 + (unsigned long long)_i;
    int n = 40, dim = 2 + _i % 2;
    double x[40 * 3];
    for (int i = 0; i < n * dim; i++) x[i] = uniform01(&state);
    ng_cloud *cloud = cloud_from_points(x, n, dim);
    ng_scheme scheme;
    ng_scheme_init(&scheme);
    scheme.law = (ng_law)(_i % 3);
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_radius_parse(_i % 2 ? "knn:3" : "uniform",
                                     &scheme.rule, &err), NG_OK);
    ng_radii radii;
    ck_assert_int_eq(ng_radii_compute(cloud, &scheme, 1, &radii, &err), NG_OK);
    ng_space space = {scheme.metric, scheme.law, cloud->n, cloud->dim,
                      cloud->coords, NULL, radii.rho};
    ng_run_options opt;
    ng_run_options_init(&opt);
    opt.max_degree = 1 + _i % 2;
    opt.max_simplices = 300 + 97 * (size_t)_i;
    opt.threads = 1 + _i % 2;
    ng_run_result res;
    ck_assert_msg(ng_run_compute(cloud, &radii, &scheme, &opt, &res, &err) ==
                      NG_OK, "%s", err.message);
    double T = res.scale_limit;
    ck_assert(res.limited_by_budget);
    size_t at = count_within(&space, n, opt.max_degree + 1, T);
    size_t above = count_within(&space, n, opt.max_degree + 1, T * (1 + 1e-4));
    ck_assert_uint_eq(res.size.total, at);
    ck_assert_uint_le(at, opt.max_simplices);
    ck_assert_uint_gt(above, opt.max_simplices);
    ng_run_result_free(&res);

    opt.scale_auto = 0;
    opt.scale_limit = 2 * T;
    ck_assert_int_eq(ng_run_compute(cloud, &radii, &scheme, &opt, &res, &err),
                     NG_ERR_BUDGET);
    ck_assert_msg(strstr(err.message, "simplex budget") != NULL, "%s",
                  err.message);
    ng_radii_free(&radii);
    ng_cloud_free(cloud);
}
END_TEST

int main(void)
{
    Suite *s = suite_create("run");
    TCase *tc = tcase_create("textbook");
    tcase_set_timeout(tc, 600);
    tcase_add_loop_test(tc, run_equals_textbook, 0, 24);
    suite_add_tcase(s, tc);
    TCase *tb = tcase_create("budget");
    tcase_add_loop_test(tb, simplex_budget_is_the_largest_fit, 0, 12);
    suite_add_tcase(s, tb);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
