/* test_radius.c — radius rules (DESIGN §2.1) on small clouds whose radii
 * are worked out by hand in the comments, plus parsing and the duplicate
 * rules. The k-NN search itself is checked against scipy in ref_knn.py and
 * the kernel density against a direct scipy evaluation in ref_radius.py. */
#include "nervegap/radius.h"

#include "radius_internal.h"

#include <check.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define PI 3.14159265358979323846

/* Writes text to a fresh temporary file and reads it as a cloud. */
static ng_cloud *cloud_from_text(const char *text)
{
    char path[] = "/tmp/ng-test-radius-XXXXXX";
    int fd = mkstemp(path);
    ck_assert_int_ge(fd, 0);
    FILE *fp = fdopen(fd, "w");
    ck_assert_ptr_nonnull(fp);
    fputs(text, fp);
    fclose(fp);
    ng_cloud *cloud = NULL;
    ng_error err;
    ng_error_clear(&err);
    int status = ng_cloud_read(path, &cloud, &err);
    unlink(path);
    ck_assert_msg(status == NG_OK, "%s", err.message);
    return cloud;
}

static ng_radii radii_of(const char *text, const char *rule, ng_law law,
                         int raw)
{
    ng_cloud *cloud = cloud_from_text(text);
    ng_scheme scheme;
    ng_scheme_init(&scheme);
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_radius_parse(rule, &scheme.rule, &err), NG_OK);
    scheme.law = law;
    scheme.raw_radius = raw;
    ng_radii radii;
    int status = ng_radii_compute(cloud, &scheme, 1, &radii, &err);
    ck_assert_msg(status == NG_OK, "%s", err.message);
    ng_cloud_free(cloud);
    return radii;
}

static void assert_close(double got, double want)
{
    ck_assert_msg(fabs(got - want) <= 1e-14 * fmax(1.0, fabs(want)),
                  "got %.17g, want %.17g", got, want);
}

/* The line 0, 1, 3, 7: distances to the others, by hand,
 *   0: 1 3 7   1: 1 2 6   3: 2 3 4   7: 4 6 7 */
static const char line4[] = "x\n0\n1\n3\n7\n";

START_TEST(knn_on_a_line_by_hand)
{
    ng_radii r = radii_of(line4, "knn:1", NG_LAW_SCALED, 1);
    const double k1[] = {1, 1, 2, 4};
    for (int i = 0; i < 4; i++) assert_close(r.rho[i], k1[i]);
    for (int i = 0; i < 4; i++) assert_close(r.birth[i], 0.0);
    ng_radii_free(&r);

    r = radii_of(line4, "knn:2", NG_LAW_SCALED, 1);
    const double k2[] = {3, 2, 3, 6};
    for (int i = 0; i < 4; i++) assert_close(r.rho[i], k2[i]);
    ng_radii_free(&r);

    /* median normalisation, even n: median of 1 1 2 4 is (1 + 2)/2 = 1.5 */
    r = radii_of(line4, "knn:1", NG_LAW_SCALED, 0);
    assert_close(r.median, 1.5);
    for (int i = 0; i < 4; i++) assert_close(r.rho[i], k1[i] / 1.5);
    ng_radii_free(&r);

    /* shifted: no normalisation, birth = rho */
    r = radii_of(line4, "knn:1", NG_LAW_SHIFTED, 0);
    for (int i = 0; i < 4; i++) {
        assert_close(r.rho[i], k1[i]);
        assert_close(r.birth[i], k1[i]);
    }
    ng_radii_free(&r);
}
END_TEST

START_TEST(dtm_on_a_line_by_hand)
{
    /* dtm:K = sqrt((0 + d_1² + .. + d_{K-1}²)/K), the point itself first */
    ng_radii r = radii_of(line4, "dtm:2", NG_LAW_POWER, 0);
    const double d2[] = {sqrt(1 / 2.0), sqrt(1 / 2.0), sqrt(4 / 2.0),
                         sqrt(16 / 2.0)};
    for (int i = 0; i < 4; i++) {
        assert_close(r.rho[i], d2[i]);
        assert_close(r.birth[i], d2[i]);
    }
    ng_radii_free(&r);

    r = radii_of(line4, "dtm:3", NG_LAW_SHIFTED, 0);
    const double d3[] = {sqrt(10 / 3.0), sqrt(5 / 3.0), sqrt(13 / 3.0),
                         sqrt(52 / 3.0)};
    for (int i = 0; i < 4; i++) assert_close(r.rho[i], d3[i]);
    ng_radii_free(&r);

    r = radii_of(line4, "dtm:1", NG_LAW_SHIFTED, 0); /* mass of one point */
    for (int i = 0; i < 4; i++) assert_close(r.rho[i], 0.0);
    ng_radii_free(&r);
}
END_TEST

START_TEST(kde_by_hand)
{
    /* 1-D, H = 1, points 0 1 3: f_0 = (1/3)(2π)^(-1/2)(1 + e^-1/2 + e^-9/2),
     * rho = 1/f (d = 1) */
    ng_radii r = radii_of("0\n1\n3\n", "kde:1", NG_LAW_SCALED, 1);
    double c = 1.0 / (3.0 * sqrt(2.0 * PI));
    double f0 = c * (1 + exp(-0.5) + exp(-4.5));
    double f1 = c * (1 + exp(-0.5) + exp(-2.0));
    double f3 = c * (1 + exp(-4.5) + exp(-2.0));
    assert_close(r.rho[0], 1 / f0);
    assert_close(r.rho[1], 1 / f1);
    assert_close(r.rho[2], 1 / f3);
    assert_close(r.bandwidth, 1.0);
    ng_radii_free(&r);

    /* 2-D, H = 2, the corner triangle (0,0) (1,0) (0,1):
     * f = (1/3)(2π·4)^-1 Σ exp(-d²/8), rho = f^(-1/2) */
    r = radii_of("0 0\n1 0\n0 1\n", "kde:2", NG_LAW_SCALED, 1);
    double c2 = 1.0 / (3.0 * 2.0 * PI * 4.0);
    double fa = c2 * (1 + 2 * exp(-1.0 / 8));
    double fb = c2 * (1 + exp(-1.0 / 8) + exp(-2.0 / 8));
    assert_close(r.rho[0], 1 / sqrt(fa));
    assert_close(r.rho[1], 1 / sqrt(fb));
    assert_close(r.rho[2], 1 / sqrt(fb));
    ng_radii_free(&r);

    /* Scott's rule (Scott, Multivariate Density Estimation, 1992):
     * H = sigma n^(-1/(d+4)); points 0 1 3 have sample variance 7/3 */
    r = radii_of("0\n1\n3\n", "kde", NG_LAW_SCALED, 1);
    assert_close(r.bandwidth, sqrt(7.0 / 3.0) * pow(3.0, -1.0 / 5.0));
    ng_radii_free(&r);
}
END_TEST

START_TEST(uniform_under_each_law)
{
    ng_radii r = radii_of(line4, "uniform", NG_LAW_SCALED, 0);
    for (int i = 0; i < 4; i++) {
        assert_close(r.rho[i], 1.0);
        assert_close(r.birth[i], 0.0);
    }
    ng_radii_free(&r);
    for (int law = NG_LAW_SHIFTED; law <= NG_LAW_POWER; law++) {
        r = radii_of(line4, "uniform", (ng_law)law, 0);
        for (int i = 0; i < 4; i++) {
            assert_close(r.rho[i], 0.0);
            assert_close(r.birth[i], 0.0);
        }
        ng_radii_free(&r);
    }
}
END_TEST

START_TEST(column_rule_takes_the_column_out)
{
    ng_cloud *cloud = cloud_from_text("x,y,r\n0,0,2\n1,0,4\n0,1,6\n");
    ng_scheme scheme;
    ng_scheme_init(&scheme);
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_radius_parse("column:r", &scheme.rule, &err), NG_OK);
    ng_radii r;
    ck_assert_int_eq(ng_radii_compute(cloud, &scheme, 1, &r, &err), NG_OK);
    ck_assert_uint_eq(cloud->dim, 2);
    assert_close(cloud->coords[2 * 1 + 0], 1.0);
    /* normalised by the median 4 */
    assert_close(r.rho[0], 0.5);
    assert_close(r.rho[1], 1.0);
    assert_close(r.rho[2], 1.5);
    ng_radii_free(&r);
    ng_cloud_free(cloud);

    cloud = cloud_from_text("0,0,2\n1,0,4\n0,1,6\n");
    ck_assert_int_eq(ng_radius_parse("column:5", &scheme.rule, &err), NG_OK);
    ck_assert_int_eq(ng_radii_compute(cloud, &scheme, 1, &r, &err),
                     NG_ERR_USAGE);
    ck_assert_ptr_nonnull(strstr(err.message, "has 3 columns"));
    ng_cloud_free(cloud);
}
END_TEST

START_TEST(duplicates_refused_or_merged)
{
    static const char dup[] = "0 0\n5 5\n0 0\n1 1\n2 2\n";
    ng_cloud *cloud = cloud_from_text(dup);
    ng_scheme scheme;
    ng_scheme_init(&scheme);
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_radius_parse("knn:2", &scheme.rule, &err), NG_OK);
    ng_radii r;
    ck_assert_int_eq(ng_radii_compute(cloud, &scheme, 1, &r, &err),
                     NG_ERR_INPUT);
    ck_assert_ptr_nonnull(strstr(err.message, "points 0 and 2 coincide"));
    ck_assert_ptr_null(r.rho);
    ng_cloud_free(cloud);

    cloud = cloud_from_text(dup);
    scheme.merge_duplicates = 1;
    scheme.raw_radius = 1;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_radii_compute(cloud, &scheme, 1, &r, &err), NG_OK);
    ck_assert_uint_eq(r.n, 4);
    ck_assert_uint_eq(r.merged, 1);
    const size_t origin[] = {0, 1, 3, 4};
    for (int i = 0; i < 4; i++) ck_assert_uint_eq(r.origin[i], origin[i]);
    /* after merging: (0,0) (5,5) (1,1) (2,2); 2nd nearest of (0,0) is (2,2) */
    assert_close(r.rho[0], sqrt(8.0));
    ng_radii_free(&r);
    ng_cloud_free(cloud);
}
END_TEST

START_TEST(parse_rules)
{
    ng_radius_rule rule;
    ng_error err;
    char text[64];
    const char *good[] = {"uniform", "knn:8", "dtm:16", "kde", "kde:0.5",
                          "column:2", "file:r.txt"};
    for (size_t i = 0; i < sizeof good / sizeof good[0]; i++) {
        ng_error_clear(&err);
        ck_assert_int_eq(ng_radius_parse(good[i], &rule, &err), NG_OK);
        ng_radius_format(&rule, text, sizeof text);
        ck_assert_str_eq(text, good[i]);
    }
    const char *bad[] = {"knn", "knn:0", "knn:-3", "knn:2x", "dtm:",
                         "kde:0", "kde:-1", "kde:abc", "column:", "file",
                         "gauss", "uniform:3", ""};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        ng_error_clear(&err);
        ck_assert_int_eq(ng_radius_parse(bad[i], &rule, &err), NG_ERR_USAGE);
        ck_assert_ptr_nonnull(strstr(err.message, "--radius"));
    }
}
END_TEST

START_TEST(k_too_large_and_zero_median)
{
    ng_cloud *cloud = cloud_from_text(line4);
    ng_scheme scheme;
    ng_scheme_init(&scheme);
    ng_error err;
    ng_error_clear(&err);
    ng_radius_parse("knn:4", &scheme.rule, &err);
    ng_radii r;
    ck_assert_int_eq(ng_radii_compute(cloud, &scheme, 1, &r, &err),
                     NG_ERR_USAGE);
    ck_assert_ptr_nonnull(strstr(err.message, "at most 3"));
    ng_cloud_free(cloud);

    /* dtm:1 gives rho = 0 everywhere: the median cannot normalise */
    cloud = cloud_from_text(line4);
    ng_error_clear(&err);
    ng_radius_parse("dtm:1", &scheme.rule, &err);
    ck_assert_int_eq(ng_radii_compute(cloud, &scheme, 1, &r, &err),
                     NG_ERR_INPUT);
    ck_assert_ptr_nonnull(strstr(err.message, "median"));
    ng_cloud_free(cloud);
}
END_TEST

/* The line 0, 1, 2, 4 as a distance matrix, with ties, by hand: in the
 * order (distance, index) the others of
 *   0: (1, 1) (2, 2) (4, 3)   1: (1, 0) (1, 2) (3, 3)
 *   2: (1, 1) (2, 0) (2, 3)   4: (2, 2) (3, 1) (4, 0) */
START_TEST(knn_given_by_hand_with_ties)
{
    const double dist[16] = {0, 1, 2, 4, 1, 0, 1, 3,
                             2, 1, 0, 2, 4, 3, 2, 0};
    const double want_d[4][3] = {{1, 2, 4}, {1, 1, 3}, {1, 2, 2}, {2, 3, 4}};
    const ng_index want_j[4][3] = {{1, 2, 3}, {0, 2, 3}, {1, 0, 3},
                                   {2, 1, 0}};
    for (size_t k = 1; k <= 3; k++) {
        double d[12];
        ng_index j[12];
        ng_error err;
        ng_error_clear(&err);
        ck_assert_int_eq(ng_knn_given(dist, 4, k, 1, d, j, &err), NG_OK);
        for (size_t i = 0; i < 4; i++)
            for (size_t r = 0; r < k; r++) {
                ck_assert_msg(d[i * k + r] == want_d[i][r] &&
                                  j[i * k + r] == want_j[i][r],
                              "k %zu point %zu rank %zu: (%g, %u)", k, i, r,
                              d[i * k + r], (unsigned)j[i * k + r]);
            }
    }
}
END_TEST

/* Rows of small integer distances (many ties), more than the 256 points
 * from which the rows are split across threads: the k nearest are the
 * first k of each row sorted by (distance, index), whatever k and the
 * number of threads. */
typedef struct pair { double d; ng_index j; } pair;

static int pair_cmp(const void *a, const void *b)
{
    const pair *x = a, *y = b;
    if (x->d != y->d) return x->d < y->d ? -1 : 1;
    return (x->j > y->j) - (x->j < y->j);
}

START_TEST(knn_given_is_the_sorted_row)
{
    const size_t n = 300, ks[] = {1, 7, 299};
    double *dist = malloc(n * n * sizeof *dist);
    pair *row = malloc(n * sizeof *row);
    double *d = malloc(n * (n - 1) * sizeof *d);
    ng_index *j = malloc(n * (n - 1) * sizeof *j);
    ck_assert(dist && row && d && j);
    unsigned x = 12345;
    for (size_t a = 0; a < n; a++)
        for (size_t b = 0; b <= a; b++) {
            x = x * 1103515245u + 12345u;
            double v = a == b ? 0.0 : (double)((x >> 16) % 9);
            dist[a * n + b] = dist[b * n + a] = v;
        }
    for (size_t t = 0; t < 3; t++)
        for (int threads = 1; threads <= 2; threads++) {
            size_t k = ks[t];
            ng_error err;
            ng_error_clear(&err);
            ck_assert_int_eq(ng_knn_given(dist, n, k, threads, d, j, &err),
                             NG_OK);
            for (size_t i = 0; i < n; i++) {
                size_t m = 0;
                for (size_t o = 0; o < n; o++)
                    if (o != i) row[m++] = (pair){dist[i * n + o],
                                                  (ng_index)o};
                qsort(row, m, sizeof *row, pair_cmp);
                for (size_t r = 0; r < k; r++)
                    ck_assert_msg(d[i * k + r] == row[r].d &&
                                      j[i * k + r] == row[r].j,
                                  "k %zu threads %d point %zu rank %zu", k,
                                  threads, i, r);
            }
        }
    free(dist);
    free(row);
    free(d);
    free(j);
}
END_TEST

int main(void)
{
    Suite *s = suite_create("radius");
    TCase *tc = tcase_create("rules");
    tcase_add_test(tc, knn_on_a_line_by_hand);
    tcase_add_test(tc, dtm_on_a_line_by_hand);
    tcase_add_test(tc, kde_by_hand);
    tcase_add_test(tc, uniform_under_each_law);
    tcase_add_test(tc, column_rule_takes_the_column_out);
    tcase_add_test(tc, duplicates_refused_or_merged);
    tcase_add_test(tc, parse_rules);
    tcase_add_test(tc, k_too_large_and_zero_median);
    tcase_add_test(tc, knn_given_by_hand_with_ties);
    tcase_add_test(tc, knn_given_is_the_sorted_row);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
