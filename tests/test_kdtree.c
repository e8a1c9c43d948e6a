/* test_kdtree.c — exact nearest-neighbour search (kdtree.h).
 *
 * Every answer is compared with a reference computed here from scratch:
 * all pairs measured with ng_metric_distance and sorted by (distance,
 * index). The tree, the brute-force path and the automatic choice must
 * reproduce it exactly — same indices, bit-identical distances — on random
 * clouds and on integer grids (where ties are everywhere), in 1, 2, 3 and
 * 8 dimensions, under all three coordinate metrics, and for 1 and 2
 * threads.
 */
#include "nervegap/kdtree.h"

#include "alloc.h"
#include "kdtree_internal.h"
#include "splitmix.h"

#include <check.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

static const ng_metric metrics[] = {NG_METRIC_EUCLIDEAN, NG_METRIC_CHEBYSHEV,
                                    NG_METRIC_MANHATTAN};
static const size_t dims[] = {1, 2, 3, 8};

/* ---- clouds ---- */

static uint64_t rng_state;

static uint64_t rng_next(void) { return ng_splitmix_next(&rng_state); }

static double rng_uniform(void) { return ng_splitmix_uniform(&rng_state); }

/* n uniform points in [0, 1)^dim. */
static double *random_cloud(size_t n, size_t dim, uint64_t seed)
{
    rng_state = seed;
    double *p = malloc(n * dim * sizeof *p);
    ck_assert_ptr_nonnull(p);
    for (size_t i = 0; i < n * dim; i++) p[i] = rng_uniform();
    return p;
}

/* n points with integer coordinates in 0..side-1, drawn at random (so
 * repeated points occur when n is large against side^dim); every distance
 * is one of few values and ties are massive. */
static double *grid_cloud(size_t n, size_t dim, unsigned side, uint64_t seed)
{
    rng_state = seed;
    double *p = malloc(n * dim * sizeof *p);
    ck_assert_ptr_nonnull(p);
    for (size_t i = 0; i < n * dim; i++) p[i] = (double)(rng_next() % side);
    return p;
}

/* ---- the reference: all pairs, sorted ---- */

typedef struct pair {
    double d;
    ng_index j;
} pair;

static int pair_cmp(const void *a, const void *b)
{
    const pair *x = a, *y = b;
    if (x->d != y->d) return x->d < y->d ? -1 : 1;
    return (x->j > y->j) - (x->j < y->j);
}

static void reference_knn(const double *pts, size_t n, size_t dim,
                          ng_metric metric, size_t k, double *dist,
                          ng_index *idx)
{
    pair *row = malloc(n * sizeof *row);
    ck_assert_ptr_nonnull(row);
    for (size_t i = 0; i < n; i++) {
        size_t m = 0;
        for (size_t j = 0; j < n; j++)
            if (j != i)
                row[m++] = (pair){ng_metric_distance(metric, pts + i * dim,
                                                     pts + j * dim, dim),
                                  (ng_index)j};
        qsort(row, m, sizeof *row, pair_cmp);
        for (size_t r = 0; r < k; r++) {
            dist[i * k + r] = row[r].d;
            idx[i * k + r] = row[r].j;
        }
    }
    free(row);
}

/* Runs one method and compares with the reference bit for bit. */
static void expect_knn(ng_kdtree_method method, const double *pts, size_t n,
                       size_t dim, ng_metric metric, size_t k, int threads,
                       const double *ref_d, const ng_index *ref_j)
{
    double *d = malloc(n * k * sizeof *d);
    ng_index *j = malloc(n * k * sizeof *j);
    ck_assert_ptr_nonnull(d);
    ck_assert_ptr_nonnull(j);
    ng_error err;
    ng_error_clear(&err);
    int status = method == NG_KDTREE_AUTO
                     ? ng_knn_all(pts, n, dim, metric, k, threads, d, j, &err)
                     : ng_kdtree_knn_using(method, pts, n, dim, metric, k,
                                           threads, d, j, &err);
    ck_assert_msg(status == NG_OK, "%s", err.message);
    /* one assertion per run: Check records every assertion it passes */
    size_t bad = n * k;
    for (size_t i = 0; i < n * k && bad == n * k; i++)
        if (j[i] != ref_j[i] || memcmp(&d[i], &ref_d[i], sizeof d[i]) != 0)
            bad = i;
    ck_assert_msg(bad == n * k,
                  "method %d metric %s dim %zu n %zu k %zu threads %d: "
                  "point %zu rank %zu: got (%.17g, %u) expected (%.17g, %u)",
                  (int)method, ng_metric_name(metric), dim, n, k, threads,
                  bad / k, bad % k, d[bad % (n * k)], j[bad % (n * k)],
                  ref_d[bad % (n * k)], ref_j[bad % (n * k)]);
    free(d);
    free(j);
}

/* Tree (default and tiny leaves), brute force and automatic choice, each
 * with 1 and 2 threads, against the reference. */
static void check_all_methods(const double *pts, size_t n, size_t dim,
                              ng_metric metric, size_t k)
{
    double *ref_d = malloc(n * k * sizeof *ref_d);
    ng_index *ref_j = malloc(n * k * sizeof *ref_j);
    ck_assert_ptr_nonnull(ref_d);
    ck_assert_ptr_nonnull(ref_j);
    reference_knn(pts, n, dim, metric, k, ref_d, ref_j);
    for (int threads = 1; threads <= 2; threads++) {
        expect_knn(NG_KDTREE_TREE, pts, n, dim, metric, k, threads, ref_d,
                   ref_j);
        expect_knn(NG_KDTREE_BRUTE, pts, n, dim, metric, k, threads, ref_d,
                   ref_j);
        expect_knn(NG_KDTREE_AUTO, pts, n, dim, metric, k, threads, ref_d,
                   ref_j);
    }
    ng_kdtree_set_leaf_size(1);
    expect_knn(NG_KDTREE_TREE, pts, n, dim, metric, k, 2, ref_d, ref_j);
    ng_kdtree_set_leaf_size(3);
    expect_knn(NG_KDTREE_TREE, pts, n, dim, metric, k, 1, ref_d, ref_j);
    ng_kdtree_set_leaf_size(0);
    free(ref_d);
    free(ref_j);
}

/* ---- k nearest neighbours ---- */

START_TEST(knn_random_clouds)
{
    for (size_t a = 0; a < sizeof dims / sizeof dims[0]; a++) {
        for (size_t m = 0; m < 3; m++) {
            size_t n = 400, dim = dims[a];
            double *pts = random_cloud(n, dim, 1000 + 10 * a + m);
            check_all_methods(pts, n, dim, metrics[m], 1);
            check_all_methods(pts, n, dim, metrics[m], 7);
            free(pts);
        }
    }
}
END_TEST

START_TEST(knn_integer_grids_with_ties)
{
    static const unsigned sides[] = {50, 9, 5, 2}; /* for dims 1, 2, 3, 8 */
    for (size_t a = 0; a < sizeof dims / sizeof dims[0]; a++) {
        for (size_t m = 0; m < 3; m++) {
            size_t n = 300, dim = dims[a];
            double *pts = grid_cloud(n, dim, sides[a], 2000 + 10 * a + m);
            check_all_methods(pts, n, dim, metrics[m], 1);
            check_all_methods(pts, n, dim, metrics[m], 12);
            free(pts);
        }
    }
}
END_TEST

START_TEST(knn_k_is_n_minus_one)
{
    for (size_t m = 0; m < 3; m++) {
        double *pts = random_cloud(90, 3, 3000 + m);
        check_all_methods(pts, 90, 3, metrics[m], 89);
        free(pts);
        pts = grid_cloud(70, 2, 4, 3100 + m);
        check_all_methods(pts, 70, 2, metrics[m], 69);
        free(pts);
    }
    double two[] = {0.0, 1.0, 3.0, 5.0}; /* n = 2 in R^2 */
    check_all_methods(two, 2, 2, NG_METRIC_EUCLIDEAN, 1);
}
END_TEST

START_TEST(knn_duplicates)
{
    /* Three copies of every point: each point's first two neighbours are its
     * copies at distance 0, in index order (hand computation). */
    size_t base = 100, n = 3 * base, dim = 2, k = 4;
    double *one = random_cloud(base, dim, 4000);
    double *pts = malloc(n * dim * sizeof *pts);
    ck_assert_ptr_nonnull(pts);
    for (size_t c = 0; c < 3; c++)
        memcpy(pts + c * base * dim, one, base * dim * sizeof *pts);
    for (size_t m = 0; m < 3; m++) check_all_methods(pts, n, dim, metrics[m], k);

    double d[3 * 100 * 4];
    ng_index j[3 * 100 * 4];
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_knn_all(pts, n, dim, NG_METRIC_EUCLIDEAN, k, 2, d, j,
                                &err), NG_OK);
    for (size_t i = 0; i < n; i++) {
        size_t r = i % base, c = i / base;
        size_t first = c == 0 ? r + base : r, second = c == 2 ? r + base
                                                              : r + 2 * base;
        ck_assert(d[i * k] == 0.0 && d[i * k + 1] == 0.0 && d[i * k + 2] > 0.0);
        ck_assert_uint_eq(j[i * k], first);
        ck_assert_uint_eq(j[i * k + 1], second);
    }
    free(one);
    free(pts);

    /* All points equal: neighbours are the others in index order. */
    double same[6 * 3];
    for (size_t i = 0; i < 18; i++) same[i] = 0.25;
    for (size_t m = 0; m < 3; m++) check_all_methods(same, 6, 3, metrics[m], 5);
}
END_TEST

START_TEST(knn_larger_cloud_sampled)
{
    /* Large enough for several build tasks (TASK_MIN_POINTS): 1 and 2
     * threads agree in full, and 100 sampled rows match the reference. */
    size_t n = 40000, dim = 3, k = 5;
    double *pts = grid_cloud(n, dim, 60, 5000);
    double *d1 = malloc(n * k * sizeof *d1), *d2 = malloc(n * k * sizeof *d2);
    ng_index *j1 = malloc(n * k * sizeof *j1), *j2 = malloc(n * k * sizeof *j2);
    pair *row = malloc(n * sizeof *row);
    ck_assert(d1 && d2 && j1 && j2 && row);
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_kdtree_knn_using(NG_KDTREE_TREE, pts, n, dim,
                                         NG_METRIC_MANHATTAN, k, 1, d1, j1,
                                         &err), NG_OK);
    ck_assert_int_eq(ng_kdtree_knn_using(NG_KDTREE_TREE, pts, n, dim,
                                         NG_METRIC_MANHATTAN, k, 2, d2, j2,
                                         &err), NG_OK);
    ck_assert(memcmp(d1, d2, n * k * sizeof *d1) == 0);
    ck_assert(memcmp(j1, j2, n * k * sizeof *j1) == 0);
    for (size_t s = 0; s < 100; s++) {
        size_t i = (s * 7919u) % n, m = 0;
        for (size_t j = 0; j < n; j++)
            if (j != i)
                row[m++] = (pair){ng_metric_distance(NG_METRIC_MANHATTAN,
                                                     pts + i * dim,
                                                     pts + j * dim, dim),
                                  (ng_index)j};
        qsort(row, m, sizeof *row, pair_cmp);
        for (size_t r = 0; r < k; r++) {
            ck_assert(d1[i * k + r] == row[r].d);
            ck_assert_uint_eq(j1[i * k + r], row[r].j);
        }
    }
    free(row);
    free(pts);
    free(d1);
    free(d2);
    free(j1);
    free(j2);
}
END_TEST

START_TEST(public_tree_object)
{
    size_t n = 500, dim = 3, k = 6;
    double *pts = random_cloud(n, dim, 6000);
    double *ref_d = malloc(n * k * sizeof *ref_d), *d = malloc(n * k * sizeof *d);
    ng_index *ref_j = malloc(n * k * sizeof *ref_j), *j = malloc(n * k * sizeof *j);
    ck_assert(ref_d && d && ref_j && j);
    reference_knn(pts, n, dim, NG_METRIC_CHEBYSHEV, k, ref_d, ref_j);
    ng_error err;
    ng_error_clear(&err);
    ng_kdtree *tree = NULL;
    ck_assert_int_eq(ng_kdtree_build(pts, n, dim, NG_METRIC_CHEBYSHEV, &tree,
                                     &err), NG_OK);
    memset(pts, 0, n * dim * sizeof *pts); /* the tree holds its own copy */
    ck_assert_int_eq(ng_kdtree_knn(tree, k, 2, d, j, &err), NG_OK);
    ck_assert(memcmp(d, ref_d, n * k * sizeof *d) == 0);
    ck_assert(memcmp(j, ref_j, n * k * sizeof *j) == 0);
    ck_assert_int_eq(ng_kdtree_knn(tree, n, 1, d, j, &err), NG_ERR_USAGE);
    ng_kdtree_free(tree);
    ng_kdtree_free(NULL);
    free(pts);
    free(ref_d);
    free(d);
    free(ref_j);
    free(j);
}
END_TEST

/* ---- neighbours within a radius ---- */

/* Keeps a pair unless i + j is a multiple of 3, and only when d is at most
 * 0.9 of the radius of i: an arbitrary exact predicate. */
typedef struct filter_ctx {
    const double *radius;
} filter_ctx;

static int test_filter(size_t i, size_t j, double d, void *ctx)
{
    const filter_ctx *f = ctx;
    return (i + j) % 3 != 0 && d <= 0.9 * f->radius[i];
}

static void expect_within(ng_kdtree_method method, const double *pts,
                          size_t n, size_t dim, ng_metric metric,
                          const double *radius, ng_pair_filter filter,
                          void *ctx, int threads)
{
    ng_csr g;
    ng_error err;
    ng_error_clear(&err);
    int status = method == NG_KDTREE_AUTO
                     ? ng_neighbors_within(pts, n, dim, metric, radius,
                                           filter, ctx, threads, &g, &err)
                     : ng_kdtree_within_using(method, pts, n, dim, metric,
                                              radius, filter, ctx, threads,
                                              &g, &err);
    ck_assert_msg(status == NG_OK, "%s", err.message);
    ck_assert_uint_eq(g.n, n);
    ck_assert_uint_eq(g.offset[0], 0);
    /* one assertion per run: Check records every assertion it passes */
    size_t o = 0, bad_i = n, bad_j = n;
    for (size_t i = 0; i < n && bad_i == n; i++) {
        for (size_t j = 0; j < n && bad_i == n; j++) {
            if (j == i) continue;
            double d = ng_metric_distance(metric, pts + i * dim, pts + j * dim,
                                          dim);
            if (!(d <= radius[i]) || (filter && !filter(i, j, d, ctx)))
                continue;
            if (o >= g.offset[i + 1] || g.nbr[o] != j ||
                memcmp(&g.dist[o], &d, sizeof d) != 0) {
                bad_i = i;
                bad_j = j;
            }
            o++;
        }
        if (bad_i == n && g.offset[i + 1] != o) bad_i = i;
    }
    ck_assert_msg(bad_i == n,
                  "method %d metric %s dim %zu threads %d: row %zu wrong "
                  "(first missing or misplaced neighbour %zu)", (int)method,
                  ng_metric_name(metric), dim, threads, bad_i, bad_j);
    ng_csr_free(&g);
    ck_assert_ptr_null(g.offset);
    ng_csr_free(NULL);
}

START_TEST(within_against_all_pairs)
{
    for (size_t a = 0; a < sizeof dims / sizeof dims[0]; a++) {
        for (size_t m = 0; m < 3; m++) {
            size_t n = 600, dim = dims[a];
            int grid = m == 1;
            double *pts = grid ? grid_cloud(n, dim, 7, 7000 + a)
                               : random_cloud(n, dim, 7100 + a);
            double *radius = malloc(n * sizeof *radius);
            ck_assert_ptr_nonnull(radius);
            /* per-point radii; integer radii on the grid hit ties exactly */
            for (size_t i = 0; i < n; i++)
                radius[i] = grid ? (double)(i % 3)
                                 : 0.6 * rng_uniform() *
                                       ng_metric_distance(
                                           metrics[m], pts + i * dim,
                                           pts + (i * 7 + 3) % n * dim, dim);
            radius[5] = INFINITY;
            filter_ctx ctx = {radius};
            for (int threads = 1; threads <= 2; threads++) {
                for (int f = 0; f < 2; f++) {
                    ng_pair_filter filter = f ? test_filter : NULL;
                    expect_within(NG_KDTREE_TREE, pts, n, dim, metrics[m],
                                  radius, filter, &ctx, threads);
                    expect_within(NG_KDTREE_BRUTE, pts, n, dim, metrics[m],
                                  radius, filter, &ctx, threads);
                    expect_within(NG_KDTREE_AUTO, pts, n, dim, metrics[m],
                                  radius, filter, &ctx, threads);
                }
            }
            free(radius);
            free(pts);
        }
    }
}
END_TEST

START_TEST(within_zero_radius_and_public_tree)
{
    /* radius 0 keeps exactly the coincident points */
    size_t n = 200, dim = 2;
    double *pts = grid_cloud(n, dim, 8, 8000);
    double *radius = calloc(n, sizeof *radius);
    ck_assert_ptr_nonnull(radius);
    expect_within(NG_KDTREE_TREE, pts, n, dim, NG_METRIC_EUCLIDEAN, radius,
                  NULL, NULL, 2);
    for (size_t i = 0; i < n; i++) radius[i] = 1.0;
    ng_kdtree *tree = NULL;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_kdtree_build(pts, n, dim, NG_METRIC_MANHATTAN, &tree,
                                     &err), NG_OK);
    ng_csr a, b;
    ck_assert_int_eq(ng_kdtree_within(tree, radius, NULL, NULL, 1, &a, &err),
                     NG_OK);
    expect_within(NG_KDTREE_BRUTE, pts, n, dim, NG_METRIC_MANHATTAN, radius,
                  NULL, NULL, 1);
    /* the tree object gives the graph of the one-shot call */
    ck_assert_int_eq(ng_neighbors_within(pts, n, dim, NG_METRIC_MANHATTAN,
                                         radius, NULL, NULL, 2, &b, &err),
                     NG_OK);
    ck_assert(memcmp(a.offset, b.offset, (n + 1) * sizeof *a.offset) == 0);
    ck_assert(memcmp(a.nbr, b.nbr, a.offset[n] * sizeof *a.nbr) == 0);
    ck_assert(memcmp(a.dist, b.dist, a.offset[n] * sizeof *a.dist) == 0);
    /* with radius = the distance to the nearest other point, every point has
     * at least that neighbour */
    double *near_d = malloc(n * sizeof *near_d);
    ng_index *near_j = malloc(n * sizeof *near_j);
    ck_assert(near_d && near_j);
    ck_assert_int_eq(ng_kdtree_knn(tree, 1, 2, near_d, near_j, &err), NG_OK);
    ng_csr c;
    ck_assert_int_eq(ng_kdtree_within(tree, near_d, NULL, NULL, 2, &c, &err),
                     NG_OK);
    for (size_t i = 0; i < n; i++) {
        ck_assert(c.offset[i + 1] > c.offset[i]);
        int found = 0;
        for (size_t o = c.offset[i]; o < c.offset[i + 1]; o++)
            found |= c.nbr[o] == near_j[i];
        ck_assert(found);
    }
    ng_csr_free(&c);
    free(near_d);
    free(near_j);
    ng_csr_free(&a);
    ng_csr_free(&b);
    ng_kdtree_free(tree);
    free(radius);
    free(pts);

    /* no points, one point */
    ng_csr g;
    double r1 = 1.0, p1[2] = {0.5, 0.5};
    ck_assert_int_eq(ng_neighbors_within(NULL, 0, 2, NG_METRIC_EUCLIDEAN,
                                         NULL, NULL, NULL, 1, &g, &err),
                     NG_OK);
    ck_assert_uint_eq(g.n, 0);
    ck_assert_uint_eq(g.offset[0], 0);
    ng_csr_free(&g);
    ck_assert_int_eq(ng_neighbors_within(p1, 1, 2, NG_METRIC_EUCLIDEAN, &r1,
                                         NULL, NULL, 1, &g, &err), NG_OK);
    ck_assert_uint_eq(g.offset[1], 0);
    ng_csr_free(&g);
}
END_TEST

/* ---- errors ---- */

static void expect_usage(int status, ng_error *err)
{
    ck_assert_int_eq(status, NG_ERR_USAGE);
    ck_assert_int_eq(err->code, NG_ERR_USAGE);
    ck_assert(strlen(err->message) > 10);
    ng_error_clear(err);
}

START_TEST(usage_errors)
{
    double pts[4 * 2] = {0, 0, 1, 0, 0, 1, 1, 1};
    double d[16];
    ng_index j[16];
    ng_error err;
    ng_error_clear(&err);
    expect_usage(ng_knn_all(pts, 4, 2, NG_METRIC_EUCLIDEAN, 0, 1, d, j, &err),
                 &err);
    expect_usage(ng_knn_all(pts, 4, 2, NG_METRIC_EUCLIDEAN, 4, 1, d, j, &err),
                 &err);
    ck_assert_int_eq(ng_knn_all(pts, 4, 2, NG_METRIC_EUCLIDEAN, 4, 1, d, j,
                                &err), NG_ERR_USAGE);
    ck_assert(strstr(err.message, "k = 4") != NULL);
    ng_error_clear(&err);
    expect_usage(ng_knn_all(pts, 4, 2, NG_METRIC_EUCLIDEAN, 9, 1, d, j, &err),
                 &err);
    expect_usage(ng_knn_all(pts, 1, 2, NG_METRIC_EUCLIDEAN, 1, 1, d, j, &err),
                 &err);
    expect_usage(ng_knn_all(pts, 4, 2, NG_METRIC_GIVEN, 1, 1, d, j, &err),
                 &err);
    expect_usage(ng_knn_all(pts, 4, 0, NG_METRIC_EUCLIDEAN, 1, 1, d, j, &err),
                 &err);
    expect_usage(ng_knn_all(pts, 4, 2, NG_METRIC_EUCLIDEAN, 1, 1, NULL, j,
                            &err), &err);

    ng_kdtree *tree = (ng_kdtree *)pts;
    expect_usage(ng_kdtree_build(pts, 4, 2, NG_METRIC_GIVEN, &tree, &err),
                 &err);
    ck_assert_ptr_null(tree);
    expect_usage(ng_kdtree_build(pts, 0, 2, NG_METRIC_EUCLIDEAN, &tree, &err),
                 &err);

    ng_csr g;
    double radius[4] = {1, 1, -1, 1};
    expect_usage(ng_neighbors_within(pts, 4, 2, NG_METRIC_EUCLIDEAN, radius,
                                     NULL, NULL, 1, &g, &err), &err);
    ck_assert_ptr_null(g.offset);
    radius[2] = NAN;
    expect_usage(ng_neighbors_within(pts, 4, 2, NG_METRIC_EUCLIDEAN, radius,
                                     NULL, NULL, 1, &g, &err), &err);
    radius[2] = 1;
    expect_usage(ng_neighbors_within(pts, 4, 2, NG_METRIC_GIVEN, radius,
                                     NULL, NULL, 1, &g, &err), &err);
    expect_usage(ng_neighbors_within(pts, 4, 2, NG_METRIC_EUCLIDEAN, NULL,
                                     NULL, NULL, 1, &g, &err), &err);
}
END_TEST

START_TEST(allocation_failures_are_clean)
{
    /* Every allocation in turn fails; each call must report NG_ERR_NOMEM
     * (with a message) until enough allocations succeed, and must then give
     * the right answer. Leaks show under the sanitizer build. */
    size_t n = 3000, dim = 3, k = 4;
    double *pts = random_cloud(n, dim, 9000);
    double *radius = malloc(n * sizeof *radius);
    double *d = malloc(n * k * sizeof *d);
    ng_index *j = malloc(n * k * sizeof *j);
    ck_assert(radius && d && j);
    for (size_t i = 0; i < n; i++) radius[i] = 0.08;
    for (int which = 0; which < 2; which++) {
        int ok = 0;
        for (long fail = 0; fail < 10000 && !ok; fail++) {
            ng_error err;
            ng_error_clear(&err);
            ng_csr g;
            ng_alloc_fail_after(fail);
            int status = which == 0
                             ? ng_kdtree_knn_using(NG_KDTREE_TREE, pts, n, dim,
                                                   NG_METRIC_EUCLIDEAN, k, 2, d,
                                                   j, &err)
                             : ng_kdtree_within_using(NG_KDTREE_TREE, pts, n,
                                                      dim, NG_METRIC_EUCLIDEAN,
                                                      radius, NULL, NULL, 2,
                                                      &g, &err);
            ng_alloc_fail_after(-1);
            if (status == NG_OK) {
                ok = 1;
                if (which == 1) {
                    ck_assert(g.offset[n] > 0);
                    ng_csr_free(&g);
                }
            } else {
                ck_assert_int_eq(status, NG_ERR_NOMEM);
                ck_assert(strstr(err.message, "out of memory") != NULL);
                if (which == 1) ck_assert_ptr_null(g.offset);
            }
        }
        ck_assert(ok);
    }
    free(pts);
    free(radius);
    free(d);
    free(j);
}
END_TEST

int main(void)
{
    Suite *s = suite_create("kdtree");
    TCase *tc = tcase_create("core");
    tcase_set_timeout(tc, 120);
    tcase_add_test(tc, knn_random_clouds);
    tcase_add_test(tc, knn_integer_grids_with_ties);
    tcase_add_test(tc, knn_k_is_n_minus_one);
    tcase_add_test(tc, knn_duplicates);
    tcase_add_test(tc, knn_larger_cloud_sampled);
    tcase_add_test(tc, public_tree_object);
    tcase_add_test(tc, within_against_all_pairs);
    tcase_add_test(tc, within_zero_radius_and_public_tree);
    tcase_add_test(tc, usage_errors);
    tcase_add_test(tc, allocation_failures_are_clean);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
