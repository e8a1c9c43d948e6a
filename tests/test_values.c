/* test_values.c — Rips and Čech values of simplices (values.c, cech.c):
 * closed forms from elementary geometry, Jung's theorem, hyperconvexity of
 * L∞, monotonicity, scale robustness and degenerate configurations. The
 * random weighted euclidean values are checked against cvxopt in
 * tests/ref_cech.py. */
#include "nervegap/values.h"
#include "cech.h"

#include <check.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define MAXV NG_SIMPLEX_MAX_VERTICES
#define MAXD 8

static const ng_law laws[3] = {NG_LAW_SCALED, NG_LAW_SHIFTED, NG_LAW_POWER};

/* xorshift64*: a small deterministic generator for the random cases. */
static uint64_t rng_state = 88172645463325252ull;
static double uniform(void)
{
    rng_state ^= rng_state >> 12;
    rng_state ^= rng_state << 25;
    rng_state ^= rng_state >> 27;
    return (double)((rng_state * 2685821657736338717ull) >> 11) * 0x1.0p-53;
}

/* Uniform radii of DESIGN §2.1: 1 under scaled, 0 under shifted and power
 * (all three laws then give the ball radius t). */
static double uniform_rho(ng_law law)
{
    return law == NG_LAW_SCALED ? 1.0 : 0.0;
}

typedef struct simplex {
    int m;
    size_t dim;
    double x[MAXV * MAXD];
    double rho[MAXV];
} simplex;

static ng_space space_of(const simplex *s, ng_metric metric, ng_law law)
{
    ng_space sp = {0};
    sp.metric = metric;
    sp.law = law;
    sp.n = (size_t)s->m;
    sp.dim = s->dim;
    sp.coords = s->x;
    sp.rho = s->rho;
    return sp;
}

static const ng_index all[MAXV] = {0, 1, 2, 3, 4, 5};

static double cech_of(const simplex *s, ng_metric metric, ng_law law)
{
    ng_space sp = space_of(s, metric, law);
    return ng_cech_value(&sp, all, s->m);
}

static double rips_of(const simplex *s, ng_metric metric, ng_law law)
{
    ng_space sp = space_of(s, metric, law);
    return ng_rips_value(&sp, all, s->m);
}

static void random_simplex(simplex *s, int m, size_t dim, ng_law law,
                           int uniform_radii)
{
    s->m = m;
    s->dim = dim;
    for (int i = 0; i < m * (int)dim; i++) s->x[i] = 2.0 * uniform() - 1.0;
    for (int i = 0; i < m; i++) {
        if (uniform_radii) s->rho[i] = uniform_rho(law);
        else if (law == NG_LAW_SCALED) s->rho[i] = 0.2 + 3.0 * uniform();
        else s->rho[i] = uniform() < 0.2 ? 0.0 : 1.5 * uniform();
    }
}

static int close_rel(double a, double b, double tol)
{
    if (a == b) return 1;
    return fabs(a - b) <= tol * fmax(fabs(a), fabs(b));
}

/* Random orthonormal-ish embedding: rotate the first k coordinates of a
 * point set into R^dim by a product of random plane rotations and shift. */
static void embed(simplex *s, size_t k, size_t dim)
{
    double y[MAXV * MAXD] = {0};
    for (int i = 0; i < s->m; i++)
        for (size_t c = 0; c < k; c++) y[i * (int)dim + (int)c] = s->x[i * (int)k + (int)c];
    for (int r = 0; r < 12; r++) {
        size_t p = (size_t)(uniform() * (double)dim) % dim;
        size_t q = (p + 1 + (size_t)(uniform() * (double)(dim - 1))) % dim;
        double th = 6.283185307179586 * uniform(), c = cos(th), sn = sin(th);
        for (int i = 0; i < s->m; i++) {
            double a = y[i * (int)dim + (int)p], b = y[i * (int)dim + (int)q];
            y[i * (int)dim + (int)p] = c * a - sn * b;
            y[i * (int)dim + (int)q] = sn * a + c * b;
        }
    }
    double shift[MAXD];
    for (size_t c = 0; c < dim; c++) shift[c] = 4.0 * uniform() - 2.0;
    for (int i = 0; i < s->m; i++)
        for (size_t c = 0; c < dim; c++) y[i * (int)dim + (int)c] += shift[c];
    s->dim = dim;
    memcpy(s->x, y, sizeof y);
}

START_TEST(equilateral_triangle)
{
    /* Elementary geometry: side a, uniform radii: rips = a/2 (edge
     * midpoints), cech = circumradius a/√3, factor 2/√3. */
    for (int l = 0; l < 3; l++) {
        for (int rep = 0; rep < 20; rep++) {
            double a = pow(10.0, 4.0 * uniform() - 2.0);
            simplex s = {.m = 3, .dim = 2,
                         .x = {0, 0, a, 0, a / 2, a * sqrt(3.0) / 2}};
            for (int i = 0; i < 3; i++) s.rho[i] = uniform_rho(laws[l]);
            embed(&s, 2, 2 + (size_t)(rep % 5));
            double rips = rips_of(&s, NG_METRIC_EUCLIDEAN, laws[l]);
            double cech = cech_of(&s, NG_METRIC_EUCLIDEAN, laws[l]);
            ck_assert(close_rel(rips, a / 2, 1e-13));
            ck_assert(close_rel(cech, a / sqrt(3.0), 1e-12));
            ck_assert(close_rel(cech / rips, 2 / sqrt(3.0), 1e-12));
        }
    }
}
END_TEST

START_TEST(regular_simplices)
{
    /* Regular simplex on m+1 vertices: the scaled basis vectors s·e_i of
     * R^(m+1), side a = s√2. Its circumradius a·sqrt(m/(2(m+1))) is the
     * Čech value, factor √(2m/(m+1)); m = 3 gives a·√6/4 and √6/2 (Jung's
     * constant, H. Jung, J. reine angew. Math. 123, 1901). */
    for (int l = 0; l < 3; l++) {
        for (int m = 1; m <= 5; m++) {
            double sc = pow(10.0, 2.0 * uniform() - 1.0);
            simplex s = {.m = m + 1, .dim = (size_t)m + 1};
            for (int i = 0; i <= m; i++) {
                s.x[i * (m + 1) + i] = sc;
                s.rho[i] = uniform_rho(laws[l]);
            }
            if (m + 2 <= MAXD) embed(&s, (size_t)m + 1, (size_t)m + 2);
            double a = sc * sqrt(2.0);
            double rips = rips_of(&s, NG_METRIC_EUCLIDEAN, laws[l]);
            double cech = cech_of(&s, NG_METRIC_EUCLIDEAN, laws[l]);
            ck_assert(close_rel(rips, a / 2, 1e-12));
            ck_assert(close_rel(cech, a * sqrt(m / (2.0 * (m + 1))), 1e-12));
            ck_assert(close_rel(cech / rips, sqrt(2.0 * m / (m + 1)), 1e-12));
            if (m == 3) ck_assert(close_rel(cech, a * sqrt(6.0) / 4, 1e-12));
        }
    }
}
END_TEST

START_TEST(right_and_obtuse_triangles)
{
    /* Thales: a right or obtuse triangle's smallest enclosing ball has the
     * longest side as diameter, so cech = rips = longest side / 2. */
    for (int l = 0; l < 3; l++) {
        for (int rep = 0; rep < 200; rep++) {
            double a = 0.1 + uniform(), h = uniform() * 0.9 + 0.05;
            /* third vertex inside the disc over the side [0, 2a]: angle at
             * it ≥ 90° (right when on the circle) */
            double ang = 3.141592653589793 * (0.05 + 0.9 * uniform());
            double r = a * (rep % 4 == 0 ? 1.0 : h);
            simplex s = {.m = 3, .dim = 2,
                         .x = {0, 0, 2 * a, 0, a + r * cos(ang), r * sin(ang)}};
            for (int i = 0; i < 3; i++) s.rho[i] = uniform_rho(laws[l]);
            embed(&s, 2, 3);
            double cech = cech_of(&s, NG_METRIC_EUCLIDEAN, laws[l]);
            double rips = rips_of(&s, NG_METRIC_EUCLIDEAN, laws[l]);
            ck_assert(close_rel(cech, a, 1e-12));
            ck_assert(close_rel(rips, a, 1e-12));
        }
    }
}
END_TEST

START_TEST(edge_values)
{
    /* Hand computation from the definitions of DESIGN §2.3. */
    ck_assert(close_rel(ng_rips_edge_value(NG_LAW_SCALED, 1, 3, 2), 0.5, 1e-15));
    ck_assert(ng_rips_edge_value(NG_LAW_SCALED, 0, 0, 0) == 0.0);
    ck_assert(isinf(ng_rips_edge_value(NG_LAW_SCALED, 0, 0, 1)));
    ck_assert(close_rel(ng_rips_edge_value(NG_LAW_SHIFTED, 1, 2, 3), 3, 1e-15));
    ck_assert(close_rel(ng_rips_edge_value(NG_LAW_SHIFTED, 0, 5, 3), 5, 1e-15));
    /* power, a = 3, b = 5: d = 4 = sqrt(b² − a²): ball a reaches x_b at t = b */
    ck_assert(close_rel(ng_rips_edge_value(NG_LAW_POWER, 3, 5, 4), 5, 1e-15));
    /* power, a = b = 0: t = d/2 */
    ck_assert(close_rel(ng_rips_edge_value(NG_LAW_POWER, 0, 0, 6), 3, 1e-15));
    /* power, a = 0, b = 1, d = 2: sqrt(t²) + sqrt(t² − 1) = 2 ⇒ t = 5/4 */
    ck_assert(close_rel(ng_rips_edge_value(NG_LAW_POWER, 0, 1, 2), 1.25, 1e-15));
    /* On edges cech = rips in every coordinate metric (DESIGN §2.3). */
    for (int l = 0; l < 3; l++) {
        for (int rep = 0; rep < 1000; rep++) {
            simplex s;
            random_simplex(&s, 2, 1 + (size_t)(rep % 5), laws[l], 0);
            for (int metric = 0; metric < 3; metric++) {
                if (metric == NG_METRIC_MANHATTAN && s.dim > 2) continue;
                double r = rips_of(&s, (ng_metric)metric, laws[l]);
                double c = cech_of(&s, (ng_metric)metric, laws[l]);
                ck_assert(close_rel(r, c, 1e-13));
            }
        }
    }
}
END_TEST

START_TEST(jung_and_sqrt2_bounds)
{
    /* Jung's theorem (H. Jung 1901): uniform radii in R^d give factor ≤
     * √(2d/(d+1)), with d the dimension of the simplex's affine hull at
     * most. Any radii: factor ≤ √2 (Hilbert space is √2-hyperconvex;
     * common practice in metric geometry). 10^5 simplices per law each. */
    for (int l = 0; l < 3; l++) {
        for (int uni = 0; uni < 2; uni++) {
            double worst = 0.0;
            for (int rep = 0; rep < 100000; rep++) {
                int m = 3 + rep % 4;
                size_t dim = 2 + (size_t)(rep / 4) % 4;
                simplex s;
                random_simplex(&s, m, dim, laws[l], uni);
                double rips = rips_of(&s, NG_METRIC_EUCLIDEAN, laws[l]);
                double cech = cech_of(&s, NG_METRIC_EUCLIDEAN, laws[l]);
                ck_assert(rips > 0.0);
                double factor = cech / rips;
                double d = (double)((size_t)(m - 1) < dim ? (size_t)(m - 1) : dim);
                double bound = uni ? sqrt(2 * d / (d + 1)) : sqrt(2.0);
                ck_assert_msg(factor <= bound * (1 + 1e-12),
                              "law %d uniform %d m %d dim %zu factor %.17g",
                              l, uni, m, dim, factor);
                ck_assert_msg(factor >= 1 - 1e-12, "cech below rips: %.17g",
                              factor);
                if (factor > worst) worst = factor;
            }
            /* the bounds are not vacuous: some simplex comes near them */
            ck_assert(worst > 1.05);
        }
    }
}
END_TEST

START_TEST(linf_cech_equals_rips)
{
    /* L∞ is hyperconvex (Aronszajn and Panitchpakdi, Pacific J. Math. 6,
     * 1956): cech = rips for every simplex under chebyshev in any dimension
     * and manhattan in the plane, any radii and law. 10^5 per law each. */
    for (int l = 0; l < 3; l++) {
        for (int rep = 0; rep < 100000; rep++) {
            int m = 2 + rep % 5;
            int cheb = rep % 2 == 0;
            size_t dim = cheb ? 1 + (size_t)(rep / 5) % 6 : 1 + (size_t)(rep / 5) % 2;
            simplex s;
            random_simplex(&s, m, dim, laws[l], rep % 7 == 0);
            ng_metric metric = cheb ? NG_METRIC_CHEBYSHEV : NG_METRIC_MANHATTAN;
            double r = rips_of(&s, metric, laws[l]);
            double c = cech_of(&s, metric, laws[l]);
            ck_assert_msg(close_rel(r, c, 1e-13), "metric %d: %.17g vs %.17g",
                          (int)metric, r, c);
        }
    }
    /* and the L∞ value is not the euclidean one: an equilateral triangle
     * under L1 in the plane (hand computation): side 1 along x, apex
     * (1/2, √3/2): L1 sides 1, 1/2 + √3/2, so cech = rips = (1 + √3)/4. */
    simplex s = {.m = 3, .dim = 2, .x = {0, 0, 1, 0, 0.5, sqrt(3.0) / 2},
                 .rho = {1, 1, 1}};
    ck_assert(close_rel(cech_of(&s, NG_METRIC_MANHATTAN, NG_LAW_SCALED),
                        (1 + sqrt(3.0)) / 4, 1e-15));
}
END_TEST

START_TEST(monotone_values)
{
    /* ng_simplex_values: every face ≤ the simplex, rips ≤ cech. */
    for (int l = 0; l < 3; l++) {
        for (int rep = 0; rep < 3000; rep++) {
            int m = 2 + rep % 5;
            simplex s;
            random_simplex(&s, m, 2 + (size_t)rep % 3, laws[l], rep % 3 == 0);
            ng_metric metric = rep % 10 == 0 ? NG_METRIC_CHEBYSHEV
                                             : NG_METRIC_EUCLIDEAN;
            ng_space sp = space_of(&s, metric, laws[l]);
            double r, c;
            ck_assert_int_eq(ng_simplex_values(&sp, all, m, &r, &c, NULL), NG_OK);
            ck_assert(r <= c);
            ck_assert(c >= ng_cech_value(&sp, all, m));
            for (unsigned mask = 1; mask + 1 < (1u << m); mask++) {
                ng_index face[MAXV];
                int k = 0;
                for (int i = 0; i < m; i++)
                    if (mask & (1u << i)) face[k++] = (ng_index)i;
                double fr, fc;
                ck_assert_int_eq(ng_simplex_values(&sp, face, k, &fr, &fc, NULL),
                                 NG_OK);
                ck_assert(fr <= r);
                ck_assert(fc <= c);
            }
        }
    }
}
END_TEST

START_TEST(scale_and_translation)
{
    /* Homogeneity (from the definitions): scaling x by λ scales the values
     * by λ, with ρ scaled by λ under shifted and power. At λ = 1e-8 and
     * 1e8 the values must agree to rounding; a translation by 1e8 moves the
     * points themselves by up to 1e-8 (the spacing of doubles there), so
     * there the values agree to 1e-7. */
    static const double lambdas[2] = {1e-8, 1e8};
    for (int l = 0; l < 3; l++) {
        for (int rep = 0; rep < 2000; rep++) {
            int m = 2 + rep % 5;
            simplex s, t;
            random_simplex(&s, m, 3, laws[l], rep % 2);
            double c0 = cech_of(&s, NG_METRIC_EUCLIDEAN, laws[l]);
            for (int k = 0; k < 2; k++) {
                double lam = lambdas[k];
                t = s;
                for (int i = 0; i < m * 3; i++) t.x[i] *= lam;
                if (laws[l] != NG_LAW_SCALED)
                    for (int i = 0; i < m; i++) t.rho[i] *= lam;
                double c1 = cech_of(&t, NG_METRIC_EUCLIDEAN, laws[l]);
                ck_assert_msg(close_rel(c1, lam * c0, 1e-11),
                              "λ %g: %.17g vs %.17g", lam, c1, lam * c0);
            }
            t = s;
            for (int i = 0; i < m * 3; i++) t.x[i] += 1e8;
            double c2 = cech_of(&t, NG_METRIC_EUCLIDEAN, laws[l]);
            ck_assert_msg(close_rel(c2, c0, 1e-7), "%.17g vs %.17g", c2, c0);
        }
    }
}
END_TEST

START_TEST(coincident_points)
{
    for (int l = 0; l < 3; l++) {
        for (int rep = 0; rep < 500; rep++) {
            simplex s;
            random_simplex(&s, 3, 3, laws[l], 0);
            memcpy(s.x + 3, s.x, 3 * sizeof(double)); /* x_1 = x_0 */
            /* Two balls about one centre act as the smaller one: the larger
             * rho under shifted/power, the smaller under scaled (from the
             * definitions), so cech = the edge value of that ball with x_2. */
            double r0 = s.rho[0], r1 = s.rho[1];
            double keep = laws[l] == NG_LAW_SCALED ? fmin(r0, r1) : fmax(r0, r1);
            double d = ng_metric_distance(NG_METRIC_EUCLIDEAN, s.x, s.x + 6, 3);
            double expect = ng_rips_edge_value(laws[l], keep, s.rho[2], d);
            if (laws[l] != NG_LAW_SCALED) expect = fmax(expect, fmax(r0, r1));
            ck_assert(close_rel(cech_of(&s, NG_METRIC_EUCLIDEAN, laws[l]),
                                expect, 1e-12));
            /* all three at one point: the last birth */
            memcpy(s.x + 6, s.x, 3 * sizeof(double));
            double births = 0.0;
            for (int i = 0; i < 3; i++)
                births = fmax(births, ng_law_birth(laws[l], s.rho[i]));
            ck_assert(cech_of(&s, NG_METRIC_EUCLIDEAN, laws[l]) == births);
        }
    }
}
END_TEST

START_TEST(collinear_points)
{
    /* Balls with collinear centres meet jointly when they meet pairwise:
     * they cut the line in intervals that meet pairwise, and intervals do
     * (Helly in one dimension). So cech = rips, any radii, any law. */
    for (int l = 0; l < 3; l++) {
        for (int rep = 0; rep < 3000; rep++) {
            int m = 3 + rep % 4;
            simplex s = {.m = m, .dim = 1};
            random_simplex(&s, m, 1, laws[l], rep % 3 == 0);
            embed(&s, 1, 4);
            double r = rips_of(&s, NG_METRIC_EUCLIDEAN, laws[l]);
            double c = cech_of(&s, NG_METRIC_EUCLIDEAN, laws[l]);
            ck_assert_msg(close_rel(r, c, 1e-9), "%.17g vs %.17g", r, c);
        }
    }
}
END_TEST

START_TEST(cospherical_points)
{
    /* A regular k-gon (k = 3..6) on a circle of radius R contains the
     * centre, so its smallest enclosing ball is the circle's: cech = R
     * under uniform radii (elementary geometry). Squares and hexagons have
     * cospherical and affinely dependent subsets. Also the 6 vertices ±e_i
     * of the octahedron (radius 1, opposite pairs: cech = rips = 1). */
    for (int l = 0; l < 3; l++) {
        for (int k = 3; k <= 6; k++) {
            for (int rep = 0; rep < 20; rep++) {
                double R = pow(10.0, 2 * uniform() - 1), ph = uniform();
                simplex s = {.m = k, .dim = 2};
                for (int i = 0; i < k; i++) {
                    double th = 6.283185307179586 * (i + ph) / k;
                    s.x[2 * i] = R * cos(th);
                    s.x[2 * i + 1] = R * sin(th);
                    s.rho[i] = uniform_rho(laws[l]);
                }
                embed(&s, 2, 3 + (size_t)(rep % 3));
                ck_assert(close_rel(cech_of(&s, NG_METRIC_EUCLIDEAN, laws[l]), R,
                                    1e-12));
            }
        }
        simplex o = {.m = 6, .dim = 3};
        for (int i = 0; i < 6; i++) {
            o.x[3 * i + i / 2] = i % 2 ? -1.0 : 1.0;
            o.rho[i] = uniform_rho(laws[l]);
        }
        ck_assert(close_rel(cech_of(&o, NG_METRIC_EUCLIDEAN, laws[l]), 1, 1e-14));
        ck_assert(close_rel(rips_of(&o, NG_METRIC_EUCLIDEAN, laws[l]), 1, 1e-14));
    }
}
END_TEST

START_TEST(nearly_collinear_small_ball)
{
    /* x0 = (−1, 0), x2 = (1, 0), x1 = (0, h) with a tiny ball under law
     * scaled (rho 1, eps, 1). The centre must move up to y = (0, s) with
     * t² = 1 + s² and h − s = eps·t (hand computation), so
     * s = (h − eps·sqrt(1 + s²)), solved by fixed point. Checks the
     * near-flat supports for h from 1e-2 down to 1e-7. */
    for (int e = 2; e <= 7; e++) {
        double h = pow(10.0, -e), eps = 0.25 * h;
        double sv = h;
        for (int it = 0; it < 200; it++) sv = h - eps * sqrt(1 + sv * sv);
        double expect = sqrt(1 + sv * sv);
        simplex s = {.m = 3, .dim = 2, .x = {-1, 0, 0, h, 1, 0},
                     .rho = {1, eps, 1}};
        double c = cech_of(&s, NG_METRIC_EUCLIDEAN, NG_LAW_SCALED);
        ck_assert_msg(close_rel(c, expect, 1e-10), "h %g: %.17g vs %.17g", h,
                      c, expect);
    }
}
END_TEST

START_TEST(never_growing_points)
{
    /* Law scaled with rho = 0: the ball stays the point x_i (tau = +inf
     * off x_i; DESIGN §2.2). */
    simplex s = {.m = 3, .dim = 2, .x = {0, 0, 3, 4, 0, 1}, .rho = {0, 2, 1}};
    /* y = x_0 is forced: t = max(5/2, 1/1) */
    ck_assert(close_rel(cech_of(&s, NG_METRIC_EUCLIDEAN, NG_LAW_SCALED), 2.5,
                        1e-15));
    s.rho[1] = 0.0;
    ck_assert(isinf(cech_of(&s, NG_METRIC_EUCLIDEAN, NG_LAW_SCALED)));
    ck_assert(isinf(rips_of(&s, NG_METRIC_EUCLIDEAN, NG_LAW_SCALED)));
    memcpy(s.x + 2, s.x, 2 * sizeof(double)); /* x_1 = x_0, both rho 0 */
    ck_assert(close_rel(cech_of(&s, NG_METRIC_EUCLIDEAN, NG_LAW_SCALED), 1.0,
                        1e-15));
    ck_assert(close_rel(cech_of(&s, NG_METRIC_CHEBYSHEV, NG_LAW_SCALED), 1.0,
                        1e-15));
}
END_TEST

START_TEST(given_metric)
{
    /* Intrinsic Čech of a finite metric space against a brute force over
     * the sample points written here from the definition; with the
     * euclidean distances of points, it is never below the ambient value
     * (the sample points are points of R^d). */
    enum { N = 12 };
    double x[N * 3], dist[N * N], rho[N];
    for (int l = 0; l < 3; l++) {
        for (int rep = 0; rep < 50; rep++) {
            for (int i = 0; i < N * 3; i++) x[i] = uniform();
            for (int i = 0; i < N; i++)
                rho[i] = laws[l] == NG_LAW_SCALED ? 0.5 + uniform() : 0.3 * uniform();
            for (int i = 0; i < N; i++)
                for (int j = 0; j < N; j++)
                    dist[i * N + j] = ng_metric_distance(NG_METRIC_EUCLIDEAN,
                                                         x + 3 * i, x + 3 * j, 3);
            ng_space g = {.metric = NG_METRIC_GIVEN, .law = laws[l], .n = N,
                          .dist = dist, .rho = rho};
            ng_space e = {.metric = NG_METRIC_EUCLIDEAN, .law = laws[l], .n = N,
                          .dim = 3, .coords = x, .rho = rho};
            ck_assert_int_eq(ng_space_check(&g, NULL), NG_OK);
            for (int k = 0; k < 30; k++) {
                int m = 1 + k % MAXV;
                ng_index v[MAXV];
                for (int i = 0; i < m; i++) {
                    int fresh;
                    do {
                        v[i] = (ng_index)(uniform() * N) % N;
                        fresh = 1;
                        for (int j = 0; j < i; j++) fresh &= v[j] != v[i];
                    } while (!fresh);
                }
                double brute = INFINITY;
                for (int y = 0; y < N; y++) {
                    double f = 0.0;
                    for (int i = 0; i < m; i++)
                        f = fmax(f, ng_law_reach(laws[l], rho[v[i]],
                                                 dist[y * N + (int)v[i]]));
                    brute = fmin(brute, f);
                }
                ck_assert(ng_cech_value(&g, v, m) == brute);
                ck_assert(brute >= ng_cech_value(&e, v, m) * (1 - 1e-12));
                ck_assert(close_rel(ng_rips_value(&g, v, m),
                                    ng_rips_value(&e, v, m), 1e-15));
                double r, c;
                ck_assert_int_eq(ng_simplex_values(&g, v, m, &r, &c, NULL), NG_OK);
                ck_assert(r <= c && brute <= c);
            }
        }
    }
}
END_TEST

START_TEST(space_check_errors)
{
    double x[6] = {0, 0, 1, 0, 0, 1}, rho[3] = {1, 1, 1};
    ng_space s = {.metric = NG_METRIC_MANHATTAN, .law = NG_LAW_SCALED, .n = 2,
                  .dim = 3, .coords = x, .rho = rho};
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_space_check(&s, &err), NG_ERR_USAGE);
    ck_assert_str_eq(err.message,
                     "--metric manhattan: Čech values are exact only in the "
                     "plane, where L1 is isometric to L∞; this input has "
                     "dimension 3");
    s.dim = 2;
    s.n = 3;
    ck_assert_int_eq(ng_space_check(&s, NULL), NG_OK);
    rho[1] = -0.5;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_space_check(&s, &err), NG_ERR_INPUT);
    ck_assert_ptr_nonnull(strstr(err.message, "point 1"));
    rho[1] = NAN;
    ck_assert_int_eq(ng_space_check(&s, NULL), NG_ERR_INPUT);
    rho[1] = 1.0;
    x[3] = INFINITY;
    ck_assert_int_eq(ng_space_check(&s, NULL), NG_ERR_INPUT);
    x[3] = 0.0;
    double d[4] = {0, 1, 2, 0};
    ng_space g = {.metric = NG_METRIC_GIVEN, .law = NG_LAW_POWER, .n = 2,
                  .dist = d, .rho = rho};
    ck_assert_int_eq(ng_space_check(&g, NULL), NG_ERR_INPUT); /* asymmetric */
    d[2] = 1;
    ck_assert_int_eq(ng_space_check(&g, NULL), NG_OK);
    d[0] = 0.5;
    ck_assert_int_eq(ng_space_check(&g, NULL), NG_ERR_INPUT); /* diagonal */

    ng_index v[7] = {0, 1, 2, 0, 1, 2, 0};
    double r = -1, c = -1;
    ck_assert_int_eq(ng_simplex_values(&s, v, 0, &r, &c, NULL), NG_ERR_INPUT);
    ck_assert_int_eq(ng_simplex_values(&s, v, 7, &r, &c, NULL), NG_ERR_INPUT);
    ck_assert_int_eq(ng_simplex_values(&s, v, 4, &r, &c, NULL), NG_ERR_INPUT);
    ng_index big[2] = {0, 3};
    ck_assert_int_eq(ng_simplex_values(&s, big, 2, &r, &c, NULL), NG_ERR_INPUT);
    ck_assert(r == -1 && c == -1);
    ck_assert_int_eq(ng_simplex_values(&s, v, 3, &r, &c, NULL), NG_OK);
    ck_assert(r > 0 && c >= r);
}
END_TEST

int main(void)
{
    Suite *s = suite_create("values");
    TCase *tc = tcase_create("core");
    tcase_set_timeout(tc, 300);
    tcase_add_test(tc, equilateral_triangle);
    tcase_add_test(tc, regular_simplices);
    tcase_add_test(tc, right_and_obtuse_triangles);
    tcase_add_test(tc, edge_values);
    tcase_add_test(tc, jung_and_sqrt2_bounds);
    tcase_add_test(tc, linf_cech_equals_rips);
    tcase_add_test(tc, monotone_values);
    tcase_add_test(tc, scale_and_translation);
    tcase_add_test(tc, coincident_points);
    tcase_add_test(tc, collinear_points);
    tcase_add_test(tc, cospherical_points);
    tcase_add_test(tc, nearly_collinear_small_ball);
    tcase_add_test(tc, never_growing_points);
    tcase_add_test(tc, given_metric);
    tcase_add_test(tc, space_check_errors);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
