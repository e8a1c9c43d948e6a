/* test_unfilled.c — the triangles with rips ≤ t < cech (unfilled.h):
 * classical triangles whose values are known, hyperconvex metrics, and
 * random clouds against a check of every triple, for several thread
 * counts. */
#include "nervegap/unfilled.h"
#include "alloc.h"

#include <check.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

static ng_space plane(ng_metric metric, ng_law law, size_t n,
                      const double *xy, const double *rho)
{
    ng_space s = {0};
    s.metric = metric;
    s.law = law;
    s.n = n;
    s.dim = 2;
    s.coords = xy;
    s.rho = rho;
    return s;
}

START_TEST(equilateral_triangle)
{
    /* side 2, uniform radii: rips = 1 (half the side), cech = 2/√3 (the
     * circumradius): unfilled exactly for 1 ≤ t < 2/√3 (DESIGN §6) */
    const double h = sqrt(3.0);
    const double xy[6] = {0, 0, 2, 0, 1, h}, rho[3] = {1, 1, 1};
    ng_space s = plane(NG_METRIC_EUCLIDEAN, NG_LAW_SCALED, 3, xy, rho);
    ng_error err;
    ng_error_clear(&err);
    struct { double t; size_t unfilled, rips; } cases[] = {
        {0.99, 0, 0}, {1.0, 1, 1}, {1.1, 1, 1}, {2 / h - 1e-9, 1, 1},
        {2 / h + 1e-9, 0, 1}, {3.0, 0, 1},
    };
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        ng_unfilled u;
        ck_assert_int_eq(ng_unfilled_compute(&s, cases[c].t, 0, 1, &u, &err),
                         NG_OK);
        ck_assert_uint_eq(u.count, cases[c].unfilled);
        ck_assert_uint_eq(u.rips_triangles, cases[c].rips);
        for (int i = 0; i < 3; i++)
            ck_assert_int_eq(u.in_unfilled[i], cases[c].unfilled > 0);
        if (u.count) {
            ck_assert_uint_eq(u.triangle[0], 0);
            ck_assert_uint_eq(u.triangle[1], 1);
            ck_assert_uint_eq(u.triangle[2], 2);
        }
        ng_unfilled_free(&u);
    }
}
END_TEST

START_TEST(right_triangle_is_never_unfilled)
{
    /* Thales: the hypotenuse is a diameter of the smallest enclosing
     * circle, so cech = rips for a right triangle (DESIGN §6) */
    const double xy[6] = {0, 0, 4, 0, 0, 3}, rho[3] = {1, 1, 1};
    ng_space s = plane(NG_METRIC_EUCLIDEAN, NG_LAW_SCALED, 3, xy, rho);
    for (double t = 0; t < 4; t += 0.01) {
        ng_unfilled u;
        ck_assert_int_eq(ng_unfilled_compute(&s, t, 0, 1, &u, NULL), NG_OK);
        ck_assert_uint_eq(u.count, 0);
        ng_unfilled_free(&u);
    }
}
END_TEST

static double lcg(uint64_t *state)
{
    *state = *state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(*state >> 11) / 9007199254740992.0;
}

START_TEST(hyperconvex_metrics_leave_nothing_unfilled)
{
    /* L∞ (any dimension) and L1 in the plane are hyperconvex (Aronszajn
     * and Panitchpakdi, Pacific J. Math. 6, 1956): balls that meet
     * pairwise meet jointly, so no triangle is ever unfilled */
    uint64_t seed = 7;
    enum { N = 60 };
    double xy[2 * N], rho[N];
    for (int i = 0; i < N; i++) {
        xy[2 * i] = lcg(&seed);
        xy[2 * i + 1] = lcg(&seed);
        rho[i] = 0.5 + lcg(&seed);
    }
    ng_metric metrics[2] = {NG_METRIC_CHEBYSHEV, NG_METRIC_MANHATTAN};
    for (int m = 0; m < 2; m++) {
        for (int law = 0; law < 3; law++) {
            ng_space s = plane(metrics[m], (ng_law)law, N, xy, rho);
            ng_unfilled u;
            ck_assert_int_eq(ng_unfilled_compute(&s, 0.3 + law, 0, 2, &u,
                                                 NULL),
                             NG_OK);
            ck_assert_uint_gt(u.rips_triangles, 0);
            ck_assert_uint_eq(u.count, 0);
            ng_unfilled_free(&u);
        }
    }
}
END_TEST

START_TEST(random_clouds_against_every_triple)
{
    uint64_t seed = 2024;
    enum { N = 70 };
    double xy[2 * N], rho[N];
    unsigned char seen[N];
    for (int trial = 0; trial < 12; trial++) {
        for (int i = 0; i < N; i++) {
            xy[2 * i] = lcg(&seed) * 10;
            xy[2 * i + 1] = lcg(&seed) * 10;
            rho[i] = trial % 3 == 0 ? 1.0 : 0.3 + 1.5 * lcg(&seed);
        }
        ng_space s = plane(NG_METRIC_EUCLIDEAN, (ng_law)(trial % 3), N, xy,
                           rho);
        ck_assert_int_eq(ng_space_check(&s, NULL), NG_OK);
        double t = 1.0 + 2.5 * lcg(&seed);
        ng_unfilled one, two;
        ck_assert_int_eq(ng_unfilled_compute(&s, t, 0, 1, &one, NULL), NG_OK);
        ck_assert_int_eq(ng_unfilled_compute(&s, t, 0, 2, &two, NULL), NG_OK);
        /* the same for any thread count */
        ck_assert_uint_eq(one.count, two.count);
        ck_assert_uint_eq(one.rips_triangles, two.rips_triangles);
        ck_assert_int_eq(memcmp(one.triangle, two.triangle,
                                3 * one.count * sizeof *one.triangle),
                         0);
        /* every triple, checked with the value functions directly */
        size_t count = 0, rips = 0, row = 0;
        memset(seen, 0, sizeof seen);
        for (ng_index i = 0; i < N; i++)
            for (ng_index j = i + 1; j < N; j++)
                for (ng_index k = j + 1; k < N; k++) {
                    ng_index v[3] = {i, j, k};
                    double r, c;
                    ng_simplex_values(&s, v, 3, &r, &c, NULL);
                    if (r > t) continue;
                    rips++;
                    if (c <= t) continue;
                    count++;
                    seen[i] = seen[j] = seen[k] = 1;
                    /* listed in lexicographic order */
                    ck_assert(row < one.count);
                    ck_assert_uint_eq(one.triangle[3 * row], i);
                    ck_assert_uint_eq(one.triangle[3 * row + 1], j);
                    ck_assert_uint_eq(one.triangle[3 * row + 2], k);
                    row++;
                }
        ck_assert_uint_eq(one.count, count);
        ck_assert_uint_eq(one.rips_triangles, rips);
        ck_assert_uint_ge(one.candidates, rips);
        for (int i = 0; i < N; i++) ck_assert_int_eq(one.in_unfilled[i], seen[i]);
        ng_unfilled_free(&one);
        ng_unfilled_free(&two);
    }
}
END_TEST

START_TEST(given_metric)
{
    /* the equilateral triangle as a distance matrix plus a far point:
     * the intrinsic Čech value (centres among the sample points) of the
     * triangle is the side 2 (each vertex reaches the others at t = 2),
     * rips is 1 */
    const double d[16] = {0, 2, 2, 9, 2, 0, 2, 9, 2, 2, 0, 9, 9, 9, 9, 0};
    const double rho[4] = {1, 1, 1, 1};
    ng_space s = {0};
    s.metric = NG_METRIC_GIVEN;
    s.law = NG_LAW_SCALED;
    s.n = 4;
    s.dist = d;
    s.rho = rho;
    ng_unfilled u;
    ck_assert_int_eq(ng_unfilled_compute(&s, 1.5, 0, 1, &u, NULL), NG_OK);
    ck_assert_uint_eq(u.edges, 3);
    ck_assert_uint_eq(u.count, 1);
    ck_assert_int_eq(u.in_unfilled[3], 0);
    ng_unfilled_free(&u);
}
END_TEST

START_TEST(cap_and_errors)
{
    const double h = sqrt(3.0);
    const double xy[6] = {0, 0, 2, 0, 1, h}, rho[3] = {1, 1, 1};
    ng_space s = plane(NG_METRIC_EUCLIDEAN, NG_LAW_SCALED, 3, xy, rho);
    ng_error err;
    ng_unfilled u;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_unfilled_compute(&s, -1, 0, 1, &u, &err),
                     NG_ERR_USAGE);
    ck_assert_ptr_null(u.triangle);
    ng_error_clear(&err);
    ck_assert_int_eq(ng_unfilled_compute(&s, NAN, 0, 1, &u, &err),
                     NG_ERR_USAGE);
    /* one candidate triangle, cap 0 (none) and cap 1 pass */
    ck_assert_int_eq(ng_unfilled_compute(&s, 1.05, 1, 1, &u, NULL), NG_OK);
    ng_unfilled_free(&u);
    /* four points in a tight cluster: 4 candidates, cap 3 refuses */
    const double xy4[8] = {0, 0, 0.1, 0, 0, 0.1, 0.1, 0.1};
    const double rho4[4] = {1, 1, 1, 1};
    ng_space s4 = plane(NG_METRIC_EUCLIDEAN, NG_LAW_SCALED, 4, xy4, rho4);
    ng_error_clear(&err);
    ck_assert_int_eq(ng_unfilled_compute(&s4, 1, 3, 1, &u, &err),
                     NG_ERR_BUDGET);
    ck_assert_ptr_nonnull(strstr(err.message, "4 candidate triangles"));
    ck_assert_ptr_null(u.in_unfilled);
    /* every allocation failure is reported and frees what it took */
    for (long fail = 0; fail < 40; fail++) {
        ng_alloc_fail_after(fail);
        ng_error_clear(&err);
        int st = ng_unfilled_compute(&s4, 1, 0, 1, &u, &err);
        ng_alloc_fail_after(-1);
        if (st == NG_OK) {
            ck_assert_uint_eq(u.rips_triangles, 4);
            ng_unfilled_free(&u);
            break;
        }
        ck_assert_int_eq(st, NG_ERR_NOMEM);
        ck_assert_ptr_null(u.triangle);
    }
}
END_TEST

int main(void)
{
    Suite *s = suite_create("unfilled");
    TCase *tc = tcase_create("core");
    tcase_set_timeout(tc, 300);
    tcase_add_test(tc, equilateral_triangle);
    tcase_add_test(tc, right_triangle_is_never_unfilled);
    tcase_add_test(tc, hyperconvex_metrics_leave_nothing_unfilled);
    tcase_add_test(tc, random_clouds_against_every_triple);
    tcase_add_test(tc, given_metric);
    tcase_add_test(tc, cap_and_errors);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
