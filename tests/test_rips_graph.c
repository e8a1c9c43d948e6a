/* test_rips_graph.c — the neighbour graph at a scale (rips_graph.h).
 *
 * The graph must hold exactly the pairs whose Rips edge value is at most T
 * (DESIGN §2.3), with their distances, in sorted symmetric lists. The
 * reference is computed here from scratch: every pair measured with
 * ng_metric_distance and tested with ng_rips_edge_value. Checked on clouds
 * whose radii spread over four orders of magnitude (where a point's own
 * search radius matters most), under every law and coordinate metric, for
 * a distance matrix, for a graph filtered from one at a larger scale, for
 * 1 and 2 threads; and the cap on edges (stop, report over) together with
 * the k-d tree's stop signal.
 */
#include "nervegap/kdtree.h"
#include "nervegap/values.h"
#include "rips_graph.h"
#include "splitmix.h"

#include <check.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

static uint64_t rng_state;

static double rng_uniform(void) { return ng_splitmix_uniform(&rng_state); }

typedef struct cloud {
    size_t n, dim;
    double *x, *rho, *dist;
} cloud;

/* n points in [0,1)^dim with radii 10^u, u uniform in [-3, 1), and the
 * matrix of their distances under metric. */
static cloud make_cloud(size_t n, size_t dim, ng_metric metric,
                        uint64_t seed)
{
    rng_state = seed;
    cloud c = {n, dim, malloc(n * dim * sizeof(double)),
               malloc(n * sizeof(double)), malloc(n * n * sizeof(double))};
    for (size_t i = 0; i < n * dim; i++) c.x[i] = rng_uniform();
    for (size_t i = 0; i < n; i++) c.rho[i] = pow(10.0, -3.0 + 4.0 * rng_uniform());
    for (size_t i = 0; i < n; i++)
        for (size_t j = 0; j < n; j++)
            c.dist[i * n + j] = ng_metric_distance(metric, c.x + i * dim,
                                                   c.x + j * dim, dim);
    return c;
}

static void free_cloud(cloud *c)
{
    free(c->x);
    free(c->rho);
    free(c->dist);
}

/* The graph equals the pairs with edge value ≤ T, with their distances. */
static void check_graph(const ng_space *s, const cloud *c, double T,
                        const ng_csr *g)
{
    size_t n = c->n;
    ck_assert_uint_eq(g->n, n);
    for (size_t i = 0; i < n; i++) {
        size_t e = g->offset[i];
        for (size_t j = 0; j < n; j++) {
            if (j == i) continue;
            double d = c->dist[i * n + j];
            int want = ng_rips_edge_value(s->law, c->rho[i], c->rho[j], d) <= T;
            int have = e < g->offset[i + 1] && g->nbr[e] == j;
            ck_assert_msg(want == have, "pair %zu %zu: want %d have %d", i, j,
                          want, have);
            if (have) {
                ck_assert(g->dist[e] == d);
                e++;
            }
        }
        ck_assert_uint_eq(e, g->offset[i + 1]);
    }
}

START_TEST(graph_against_all_pairs)
{
    static const ng_metric metrics[] = {NG_METRIC_EUCLIDEAN,
                                        NG_METRIC_CHEBYSHEV,
                                        NG_METRIC_MANHATTAN, NG_METRIC_GIVEN};
    ng_metric metric = metrics[_i % 4];
    ng_law law = (ng_law)((_i / 4) % 3);
    size_t dim = metric == NG_METRIC_MANHATTAN ? 2 : 1 + (size_t)(_i % 3);
    cloud c = make_cloud(150, dim, metric == NG_METRIC_GIVEN
                                       ? NG_METRIC_EUCLIDEAN
                                       : metric,
                         1000 + (uint64_t)_i);
    ng_space s = {metric, law, c.n, metric == NG_METRIC_GIVEN ? 0 : dim,
                  metric == NG_METRIC_GIVEN ? NULL : c.x,
                  metric == NG_METRIC_GIVEN ? c.dist : NULL, c.rho};
    ng_error err;
    ng_error_clear(&err);
    /* scales from almost no edges to most pairs */
    const double scales[] = {0.02, 0.2, 1.0, 3.0};
    ng_csr upper = {0};
    for (int q = 3; q >= 0; q--) {
        double T = scales[q];
        for (int threads = 1; threads <= 2; threads++) {
            ng_csr g;
            int over = -1;
            size_t edges = 0;
            ck_assert_int_eq(ng_rips_graph(&s, T, NULL, 0, threads, &g, &over,
                                           &edges, &err), NG_OK);
            ck_assert_int_eq(over, 0);
            check_graph(&s, &c, T, &g);
            ck_assert_uint_eq(edges, g.offset[c.n] / 2);
            ng_csr_free(&g);
            if (upper.offset != NULL) { /* filtered from a larger scale */
                ck_assert_int_eq(ng_rips_graph(&s, T, &upper, 0, threads, &g,
                                               &over, NULL, &err), NG_OK);
                check_graph(&s, &c, T, &g);
                ng_csr_free(&g);
            }
        }
        ng_csr_free(&upper);
        ck_assert_int_eq(ng_rips_graph(&s, T, NULL, 0, 1, &upper, &(int){0},
                                       NULL, &err), NG_OK);
    }
    ng_csr_free(&upper);
    free_cloud(&c);
}
END_TEST

/* The cap: at the exact number of edges or more nothing changes; below it
 * the graph is refused (over, empty) with a count above the cap. */
START_TEST(graph_cap)
{
    ng_metric metric = _i % 2 ? NG_METRIC_GIVEN : NG_METRIC_EUCLIDEAN;
    cloud c = make_cloud(200, 3, NG_METRIC_EUCLIDEAN, 77 + (uint64_t)_i);
    ng_space s = {metric, NG_LAW_SCALED, c.n, metric == NG_METRIC_GIVEN ? 0 : 3,
                  metric == NG_METRIC_GIVEN ? NULL : c.x,
                  metric == NG_METRIC_GIVEN ? c.dist : NULL, c.rho};
    ng_error err;
    ng_error_clear(&err);
    ng_csr g;
    int over;
    size_t edges, all;
    ck_assert_int_eq(ng_rips_graph(&s, 0.5, NULL, 0, 2, &g, &over, &all, &err),
                     NG_OK);
    ck_assert_uint_gt(all, 100);
    ng_csr_free(&g);
    size_t caps[] = {all, all + 5, all - 1, all / 4, 1};
    for (size_t q = 0; q < sizeof caps / sizeof caps[0]; q++)
        for (int threads = 1; threads <= 2; threads++) {
            ck_assert_int_eq(ng_rips_graph(&s, 0.5, NULL, caps[q], threads, &g,
                                           &over, &edges, &err), NG_OK);
            if (caps[q] >= all) {
                ck_assert_int_eq(over, 0);
                ck_assert_uint_eq(edges, all);
                check_graph(&s, &c, 0.5, &g);
            } else {
                ck_assert_int_eq(over, 1);
                ck_assert_ptr_null(g.offset);
                ck_assert_uint_gt(edges, caps[q]);
                ck_assert_uint_le(edges, all);
            }
            ng_csr_free(&g);
        }
    free_cloud(&c);
}
END_TEST

static int stop_after_ten(size_t i, size_t j, double d, void *ctx)
{
    (void)i, (void)j, (void)d;
    size_t *seen = ctx, now;
#pragma omp atomic capture
    now = ++*seen;
    return now > 10 ? -1 : 1;
}

/* The k-d tree's stop signal: a filter that says stop ends the search
 * early (far fewer candidates than the cloud has pairs), without error. */
START_TEST(kdtree_filter_stops)
{
    cloud c = make_cloud(2000, 2, NG_METRIC_EUCLIDEAN, 5);
    double *radius = malloc(c.n * sizeof *radius);
    for (size_t i = 0; i < c.n; i++) radius[i] = 10.0; /* every pair */
    size_t seen = 0;
    ng_csr g;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_neighbors_within(c.x, c.n, 2, NG_METRIC_EUCLIDEAN,
                                         radius, stop_after_ten, &seen, 2, &g,
                                         &err), NG_OK);
    ck_assert_uint_lt(seen, 100000); /* of 4 million candidate pairs */
    ng_csr_free(&g);
    free(radius);
    free_cloud(&c);
}
END_TEST

int main(void)
{
    Suite *s = suite_create("rips_graph");
    TCase *tc = tcase_create("core");
    tcase_set_timeout(tc, 300);
    tcase_add_loop_test(tc, graph_against_all_pairs, 0, 12);
    tcase_add_loop_test(tc, graph_cap, 0, 2);
    tcase_add_test(tc, kdtree_filter_stops);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
