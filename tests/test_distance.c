/* test_distance.c — bottleneck and Wasserstein distances (distance.h).
 *
 * Hand-worked small cases; the metric axioms (identity, symmetry, triangle
 * inequality) on random diagrams; the exact bottleneck against a plain
 * search written here (every cost listed, a simple augmenting-path
 * matching on the explicit augmented graph) on diagrams large enough for
 * the candidate sampling of bottleneck.c to run; the method of large
 * diagrams (shortest augmenting paths) against the Hungarian method, with
 * ties and duplicate points, within the bound it certifies; that bound on
 * hand values; the k-d tree's queries against a scan; input errors;
 * allocation failures. `test_distance --slow` adds the 2,000-point case.
 */
#include "nervegap/distance.h"

#include "alloc.h"
#include "distance_internal.h"
#include "splitmix.h"

#include <check.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* ---- random diagrams (splitmix64) ---- */

static uint64_t rng_state;

static double rng_uniform(void) { return ng_splitmix_uniform(&rng_state); }

/* n points: births uniform in [0, 1), lengths uniform in (0, 0.5]; when
 * grid, both on multiples of 0.25 (ties and duplicates). */
static double *random_diagram(size_t n, int grid)
{
    double *d = malloc((2 * n + 1) * sizeof *d);
    ck_assert_ptr_nonnull(d);
    for (size_t i = 0; i < n; i++) {
        double b = rng_uniform(), l = 0.5 * (1.0 - rng_uniform());
        if (grid) {
            b = floor(b * 4) / 4;
            l = 0.25 * (1 + floor(l * 8));
        }
        d[2 * i] = b;
        d[2 * i + 1] = b + l;
    }
    return d;
}

/* A copy of d moved by at most s per coordinate (birth < death kept). */
static double *perturbed(const double *d, size_t n, double s)
{
    double *e = malloc((2 * n + 1) * sizeof *e);
    ck_assert_ptr_nonnull(e);
    for (size_t i = 0; i < n; i++) {
        e[2 * i] = d[2 * i] + s * (2 * rng_uniform() - 1);
        e[2 * i + 1] = d[2 * i + 1] + s * (2 * rng_uniform() - 1);
        if (e[2 * i + 1] <= e[2 * i]) e[2 * i + 1] = e[2 * i] + 1e-3;
    }
    return e;
}

static double bottleneck(const double *a, size_t na, const double *b,
                         size_t nb)
{
    ng_error err;
    ng_error_clear(&err);
    double v = -1;
    ck_assert_int_eq(ng_bottleneck_distance(a, na, b, nb, &v, &err), NG_OK);
    return v;
}

static double wasserstein(const double *a, size_t na, const double *b,
                          size_t nb, double p)
{
    ng_error err;
    ng_error_clear(&err);
    double v = -1, bound = -1;
    ck_assert_int_eq(
        ng_wasserstein_distance(a, na, b, nb, p, 1e-9, &v, &bound, &err),
        NG_OK);
    ck_assert(bound >= 0 && bound <= 1e-9);
    return v;
}

/* ---- hand-worked cases ---- */

START_TEST(one_point_against_empty)
{
    /* hand computation: the only matching sends (1, 4) to the diagonal at
     * (4 − 1)/2 = 1.5, for every p */
    const double a[] = {1.0, 4.0};
    ck_assert(bottleneck(a, 1, NULL, 0) == 1.5);
    ck_assert(bottleneck(NULL, 0, a, 1) == 1.5);
    ck_assert_double_eq_tol(wasserstein(a, 1, NULL, 0, 1), 1.5, 1e-15);
    ck_assert_double_eq_tol(wasserstein(NULL, 0, a, 1, 2), 1.5, 1e-15);
    ck_assert_double_eq_tol(wasserstein(a, 1, NULL, 0, 3), 1.5, 1e-15);
    ck_assert(bottleneck(NULL, 0, NULL, 0) == 0.0);
    ck_assert(wasserstein(NULL, 0, NULL, 0, 1) == 0.0);
}
END_TEST

START_TEST(two_single_points)
{
    /* hand computation. (0,2) vs (0.5,2.5): L∞ cost 0.5 < diagonal costs
     * 1 and 1, so W∞ = W1 = W2 = 0.5. */
    const double a[] = {0.0, 2.0}, b[] = {0.5, 2.5};
    ck_assert(bottleneck(a, 1, b, 1) == 0.5);
    ck_assert_double_eq_tol(wasserstein(a, 1, b, 1, 1), 0.5, 1e-15);
    ck_assert_double_eq_tol(wasserstein(a, 1, b, 1, 2), 0.5, 1e-15);
    /* (0,2) vs (0,10): matched 8; both to the diagonal: 1 and 5. So
     * W∞ = max(1, 5) = 5, W1 = 1 + 5 = 6, W2 = √(1 + 25) = √26. */
    const double c[] = {0.0, 10.0};
    ck_assert(bottleneck(a, 1, c, 1) == 5.0);
    ck_assert_double_eq_tol(wasserstein(a, 1, c, 1, 1), 6.0, 1e-14);
    ck_assert_double_eq_tol(wasserstein(a, 1, c, 1, 2), sqrt(26.0), 1e-14);
}
END_TEST

START_TEST(essential_points)
{
    /* hand computation: births 0, 5 against 4.5, 1 — sorted order pairs
     * 0–1 and 5–4.5: W∞ = 1, W1 = 1.5, W2 = √1.25; the finite points
     * (0, 1) and (0, 1) coincide and cost 0 */
    const double a[] = {0.0, INFINITY, 5.0, INFINITY, 0.0, 1.0};
    const double b[] = {4.5, INFINITY, 0.0, 1.0, 1.0, INFINITY};
    ck_assert(bottleneck(a, 3, b, 3) == 1.0);
    ck_assert_double_eq_tol(wasserstein(a, 3, b, 3, 1), 1.5, 1e-14);
    ck_assert_double_eq_tol(wasserstein(a, 3, b, 3, 2), sqrt(1.25), 1e-14);
    /* different numbers of essential points: +inf, a result not an error */
    ck_assert(isinf(bottleneck(a, 3, b, 2)));
    ck_assert(isinf(wasserstein(a, 3, b, 2, 1)));
    ck_assert(isinf(wasserstein(a, 1, NULL, 0, 2)));
}
END_TEST

START_TEST(zero_length_points_are_ignored)
{
    /* DESIGN §2.6 / distance.h: birth == death points are dropped */
    const double a[] = {0.0, 2.0, 3.0, 3.0, 7.0, 7.0};
    const double b[] = {0.0, 2.0};
    ck_assert(bottleneck(a, 3, b, 1) == 0.0);
    ck_assert(wasserstein(a, 3, b, 1, 1) == 0.0);
}
END_TEST

/* ---- metric axioms ---- */

START_TEST(identity_and_symmetry)
{
    rng_state = 11;
    for (int t = 0; t < 40; t++) {
        size_t na = 1 + (size_t)(rng_uniform() * 80);
        size_t nb = (size_t)(rng_uniform() * 80);
        double *a = random_diagram(na, t % 2);
        double *b = random_diagram(nb, t % 3 == 0);
        /* identity: a diagram is at distance 0 from itself */
        ck_assert(bottleneck(a, na, a, na) == 0.0);
        ck_assert(wasserstein(a, na, a, na, 1) == 0.0);
        /* symmetry of the matching problem */
        ck_assert(bottleneck(a, na, b, nb) == bottleneck(b, nb, a, na));
        for (double p = 1; p <= 2; p++) {
            double x = wasserstein(a, na, b, nb, p);
            double y = wasserstein(b, nb, a, na, p);
            ck_assert_double_eq_tol(x, y, 1e-12 * (1 + x));
        }
        free(a);
        free(b);
    }
}
END_TEST

START_TEST(triangle_inequality)
{
    /* W∞ and W_p are metrics on diagrams (the p-Wasserstein distance is a
     * metric for p ≥ 1; from memory, a standard fact) */
    rng_state = 12;
    for (int t = 0; t < 40; t++) {
        size_t n[3];
        double *d[3];
        for (int k = 0; k < 3; k++) {
            n[k] = (size_t)(rng_uniform() * 60);
            d[k] = random_diagram(n[k], t % 2);
        }
        double ab = bottleneck(d[0], n[0], d[1], n[1]);
        double bc = bottleneck(d[1], n[1], d[2], n[2]);
        double ac = bottleneck(d[0], n[0], d[2], n[2]);
        ck_assert(ac <= ab + bc);
        for (double p = 1; p <= 2; p++) {
            double wab = wasserstein(d[0], n[0], d[1], n[1], p);
            double wbc = wasserstein(d[1], n[1], d[2], n[2], p);
            double wac = wasserstein(d[0], n[0], d[2], n[2], p);
            ck_assert(wac <= (wab + wbc) * (1 + 1e-12));
        }
        for (int k = 0; k < 3; k++) free(d[k]);
    }
}
END_TEST

/* ---- the bottleneck against a plain search ---- */

typedef struct plain {
    size_t na, nb, n;
    double *cost; /* n × n, +inf where no edge */
    size_t *mate_col, *seen;
    size_t stamp;
    double r;
} plain;

static int plain_augment(plain *g, size_t row)
{
    for (size_t col = 0; col < g->n; col++) {
        if (g->cost[row * g->n + col] > g->r || g->seen[col] == g->stamp)
            continue;
        g->seen[col] = g->stamp;
        if (g->mate_col[col] == SIZE_MAX || plain_augment(g, g->mate_col[col])) {
            g->mate_col[col] = row;
            return 1;
        }
    }
    return 0;
}

static int plain_perfect(plain *g, double r)
{
    g->r = r;
    for (size_t c = 0; c < g->n; c++) g->mate_col[c] = SIZE_MAX;
    for (size_t row = 0; row < g->n; row++) {
        g->stamp++;
        if (!plain_augment(g, row)) return 0;
    }
    return 1;
}

static int cmp_double(const void *x, const void *y)
{
    double u = *(const double *)x, v = *(const double *)y;
    return (u > v) - (u < v);
}

/* W∞ by listing every cost of the augmented matrix (rows: A, then copies
 * of B; columns: B, then copies of A; a point to its own copy only) and
 * bisecting with Kuhn's augmenting-path matching. */
static double plain_bottleneck(const double *a, size_t na, const double *b,
                               size_t nb)
{
    plain g = {.na = na, .nb = nb, .n = na + nb};
    size_t n = g.n;
    g.cost = malloc(n * n * sizeof *g.cost);
    g.mate_col = malloc(n * sizeof *g.mate_col);
    g.seen = calloc(n, sizeof *g.seen);
    double *values = malloc(n * n * sizeof *values);
    ck_assert(g.cost && g.mate_col && g.seen && values);
    for (size_t i = 0; i < n; i++)
        for (size_t j = 0; j < n; j++) {
            double c = INFINITY;
            if (i < na && j < nb)
                c = fmax(fabs(a[2 * i] - b[2 * j]),
                         fabs(a[2 * i + 1] - b[2 * j + 1]));
            else if (i < na && j - nb == i)
                c = (a[2 * i + 1] - a[2 * i]) / 2;
            else if (i >= na && j < nb && j == i - na)
                c = (b[2 * j + 1] - b[2 * j]) / 2;
            else if (i >= na && j >= nb)
                c = 0.0;
            g.cost[i * n + j] = c;
        }
    size_t m = 0;
    for (size_t k = 0; k < n * n; k++)
        if (isfinite(g.cost[k])) values[m++] = g.cost[k];
    qsort(values, m, sizeof *values, cmp_double);
    size_t lo = 0, hi = m - 1;
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (plain_perfect(&g, values[mid]))
            hi = mid;
        else
            lo = mid + 1;
    }
    double r = values[lo];
    free(g.cost);
    free(g.mate_col);
    free(g.seen);
    free(values);
    return r;
}

START_TEST(bottleneck_against_plain_search)
{
    rng_state = 13;
    for (int t = 0; t < 12; t++) {
        /* 120–200 points a side: more candidates than bottleneck.c lists
         * at once, so the sampled search runs */
        size_t na = 120 + (size_t)(rng_uniform() * 80);
        double *a = random_diagram(na, t % 3 == 2);
        size_t nb;
        double *b;
        if (t % 2 == 0) { /* a perturbed copy with a few points fewer */
            nb = na - (size_t)(rng_uniform() * 10);
            b = perturbed(a, nb, 0.02);
        } else {
            nb = 120 + (size_t)(rng_uniform() * 80);
            b = random_diagram(nb, t % 3 == 2);
        }
        double want = plain_bottleneck(a, na, b, nb);
        ck_assert_msg(bottleneck(a, na, b, nb) == want,
                      "case %d: %.17g != %.17g", t, bottleneck(a, na, b, nb),
                      want);
        free(a);
        free(b);
    }
}
END_TEST

/* ---- the method of large diagrams against the Hungarian method ---- */

/* The large method on (a, b): W_p, the certified bound and, through
 * *sum_out / *lower_out, the primal total and the dual lower bound. */
static double paths(const double *a, size_t na, const double *b, size_t nb,
                    double p, double *bound, double *sum_out,
                    double *lower_out)
{
    ng_error err;
    ng_error_clear(&err);
    double sum = -1, sum_err = -1, lower = INFINITY;
    ck_assert_int_eq(ng_distance_wasserstein_paths(a, na, b, nb, p, &sum,
                                                   &sum_err, &lower, &err),
                     NG_OK);
    ck_assert(sum >= 0 && sum_err >= 0 && lower <= sum + sum_err);
    *bound = ng_distance_relative_bound(p, sum, sum_err, lower, 0.0, 0.0);
    *sum_out = sum;
    *lower_out = lower;
    return pow(sum, 1 / p);
}

static double hungarian(const double *a, size_t na, const double *b,
                        size_t nb, double p)
{
    ng_error err;
    ng_error_clear(&err);
    double sum = -1;
    ck_assert_int_eq(
        ng_distance_wasserstein_exact(a, na, b, nb, p, &sum, &err), NG_OK);
    return sum;
}

/* Both methods on (a, b), p = 1, 2, 1.5, 3: the same optimum within the
 * certified bound. The Hungarian sum is a plain one, hence the 1e-13
 * beside it. */
static void compare_methods(const double *a, size_t na, const double *b,
                            size_t nb, const char *what)
{
    static const double ps[] = {1, 2, 1.5, 3}; /* general p through pow */
    for (size_t k = 0; k < sizeof ps / sizeof ps[0]; k++) {
        double p = ps[k];
        double exact_sum = hungarian(a, na, b, nb, p);
        double bound, sum, lower;
        double w = paths(a, na, b, nb, p, &bound, &sum, &lower);
        double exact = pow(exact_sum, 1 / p);
        /* LP duality (weak duality for the dual shares, the Hungarian
         * optimum for the primal): lower ≤ optimum ≤ any matching */
        ck_assert_msg(lower <= exact_sum * (1 + 1e-13) + 1e-300,
                      "%s p=%g: lower %.17g above the optimum %.17g", what,
                      p, lower, exact_sum);
        ck_assert_msg(sum >= exact_sum * (1 - 1e-13), "%s p=%g", what, p);
        /* the certified bound covers the actual relative error */
        ck_assert_msg(fabs(w - exact) <= (bound + 1e-13) * exact,
                      "%s p=%g: %.17g vs %.17g (bound %g)", what, p, w,
                      exact, bound);
        /* the method is exact: what is left is rounding */
        ck_assert_msg(bound <= 1e-10, "%s p=%g: bound %g", what, p, bound);
    }
}

static void paths_against_exact(size_t n, uint64_t seed)
{
    rng_state = seed;
    double *a = random_diagram(n, 0);
    double *b = perturbed(a, n - n / 10, 0.05);
    double *c = random_diagram(n / 2, 1);
    compare_methods(a, n, b, n - n / 10, "perturbed copy");
    compare_methods(a, n, c, n / 2, "grid diagram");
    compare_methods(c, n / 2, a, n, "grid diagram, swapped");
    free(a);
    free(b);
    free(c);
}

START_TEST(paths_match_hungarian)
{
    paths_against_exact(150, 21); /* augmented 285 and 225 */
    paths_against_exact(320, 24); /* augmented 608 and 480 */
}
END_TEST

START_TEST(paths_match_hungarian_2000)
{
    paths_against_exact(1000, 22); /* augmented 1,900 and 1,500 */
}
END_TEST

START_TEST(paths_with_duplicates)
{
    /* 300 points drawn from 6 distinct ones against 250 from 4 of them
     * plus one other: the ties that make every search meet many points of
     * equal reduced cost */
    const double pool[] = {0.0, 1.0, 0.0, 1.0 + 1e-9, 0.5, 2.0,
                           0.25, 0.5, 1.0, 1.25, 0.0, 1.0};
    rng_state = 25;
    double a[600], b[500];
    for (size_t i = 0; i < 300; i++) {
        size_t k = (size_t)(rng_uniform() * 6);
        a[2 * i] = pool[2 * k];
        a[2 * i + 1] = pool[2 * k + 1];
    }
    for (size_t i = 0; i < 250; i++) {
        size_t k = (size_t)(rng_uniform() * 5);
        b[2 * i] = k < 4 ? pool[2 * k] : 0.3;
        b[2 * i + 1] = k < 4 ? pool[2 * k + 1] : 0.9;
    }
    compare_methods(a, 300, b, 250, "duplicates");
    compare_methods(a, 300, a, 300, "duplicates against themselves");
    compare_methods(a, 300, NULL, 0, "duplicates against empty");
    compare_methods(NULL, 0, b, 250, "empty against duplicates");
    /* a diagram against itself costs exactly 0 and is certified so */
    double bound, sum, lower;
    ck_assert(paths(a, 300, a, 300, 2, &bound, &sum, &lower) == 0.0);
    ck_assert(bound == 0.0);
}
END_TEST

START_TEST(relative_bound_by_hand)
{
    /* hand computation: a matching of cost 1.1 against an optimum ≥ 1 is
     * up to 10 % too high; for p = 2, √1.21 = 1.1 likewise */
    double u = 0x1.0p-53;
    ck_assert_double_eq_tol(ng_distance_relative_bound(1, 1.1, 0, 1.0, 0, 0),
                            0.1, 1e-14);
    ck_assert_double_eq_tol(ng_distance_relative_bound(2, 1.21, 0, 1.0, 0, 0),
                            0.1, 1e-14);
    /* the essential part counts on both sides: (1 + 3)/(0.5 + 3) − 1 */
    ck_assert_double_eq_tol(ng_distance_relative_bound(1, 1.0, 0, 0.5, 3.0, 0),
                            1.0 / 7, 1e-14);
    /* a rounding allowance on the primal: the value may be 2/(2 + 1e-9)
     * of the optimum; equality leaves only the bound's own rounding */
    ck_assert_double_eq_tol(
        ng_distance_relative_bound(1, 2.0, 1e-9, 2.0, 0, 0), 0.5e-9, 1e-14);
    ck_assert(ng_distance_relative_bound(1, 2.0, 0, 2.0, 0, 0) <= 8 * u);
    /* nothing to certify from: +inf; exactly nothing to match: 0 */
    ck_assert(isinf(ng_distance_relative_bound(1, 1.0, 0, 0.0, 0, 0)));
    ck_assert(ng_distance_relative_bound(2, 0.0, 0, 0.0, 0, 0) == 0.0);
}
END_TEST

START_TEST(public_entry_uses_both_methods)
{
    /* the same problem through the exact path and the forced large one */
    rng_state = 23;
    double *a = random_diagram(100, 0), *b = perturbed(a, 90, 0.03);
    ng_error err;
    ng_error_clear(&err);
    double w_exact, w_paths, bound = -1;
    size_t old = ng_distance_set_exact_limit(SIZE_MAX - 1);
    ck_assert_int_eq(ng_wasserstein_distance(a, 100, b, 90, 1, 1e-6,
                                             &w_exact, &bound, &err),
                     NG_OK);
    ck_assert(bound == 0.0); /* the Hungarian method reports 0 */
    ng_distance_set_exact_limit(0);
    ck_assert_int_eq(ng_wasserstein_distance(a, 100, b, 90, 1, 1e-6,
                                             &w_paths, &bound, &err),
                     NG_OK);
    ng_distance_set_exact_limit(old);
    ck_assert(bound > 0.0 && bound <= 1e-10);
    ck_assert(fabs(w_paths - w_exact) <= (bound + 1e-13) * w_exact);
    free(a);
    free(b);
}
END_TEST

/* ---- the weighted k-d tree ---- */

START_TEST(tree_best2_against_scan)
{
    /* the two least values and the preference among ties, against a scan
     * of every point; weights on a coarse grid and repeated points make
     * ties common */
    rng_state = 26;
    size_t n = 500;
    double *pts = random_diagram(n, 1);
    for (size_t i = 0; i < n / 5; i++) { /* duplicates */
        size_t k = (size_t)(rng_uniform() * n);
        pts[2 * i] = pts[2 * k];
        pts[2 * i + 1] = pts[2 * k + 1];
    }
    double *w = malloc(n * sizeof *w);
    int *pref = malloc(n * sizeof *pref);
    ck_assert(w && pref);
    distance_tree t;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_distance_tree_build(&t, pts, n, &err), NG_OK);
    for (int round = 0; round < 40; round++) {
        for (size_t i = 0; i < n; i++) {
            double r = rng_uniform();
            w[i] = r < 0.1 ? INFINITY : floor(r * 4) / 8 - 0.25;
            pref[i] = rng_uniform() < (round % 2 ? 0.05 : 0.5);
            ng_distance_tree_mark(&t, i, w[i], pref[i]);
        }
        for (int q = 0; q < 50; q++) {
            double qx = floor(rng_uniform() * 8) / 8;
            double qy = qx + floor(rng_uniform() * 4) / 8;
            double p = q % 2 ? 1.0 : 2.0;
            double v1, v2, s1 = INFINITY, s2 = INFINITY;
            int tie_pref = 0;
            for (size_t i = 0; i < n; i++) {
                double v = distance_pow(
                               distance_linf(qx, qy, pts[2 * i],
                                             pts[2 * i + 1]),
                               p) +
                           w[i];
                if (v < s1) {
                    s2 = s1;
                    s1 = v;
                } else if (v < s2) {
                    s2 = v;
                }
            }
            for (size_t i = 0; i < n; i++)
                if (pref[i] && distance_pow(distance_linf(qx, qy, pts[2 * i],
                                                          pts[2 * i + 1]),
                                            p) + w[i] == s1)
                    tie_pref = 1;
            size_t best = ng_distance_tree_best2(&t, qx, qy, p, &v1, &v2);
            ck_assert(v1 == s1 && v2 == s2);
            ck_assert(best != DISTANCE_NONE);
            ck_assert(distance_pow(distance_linf(qx, qy, pts[2 * best],
                                                 pts[2 * best + 1]),
                                   p) + w[best] == s1);
            if (tie_pref && isfinite(s1)) ck_assert(pref[best]);
        }
    }
    ng_distance_tree_free(&t);
    free(pts);
    free(w);
    free(pref);
}
END_TEST

/* ---- errors ---- */

START_TEST(input_errors)
{
    const double good[] = {0.0, 1.0, 0.5, 2.0, 1.0, 3.0};
    double bad[6];
    double v = 42, bound = 42;
    ng_error err;
    struct {
        double birth, death;
        const char *what;
    } cases[] = {
        {NAN, 1.0, "NaN"},
        {0.0, NAN, "NaN"},
        {2.0, 1.0, "birth"},
        {INFINITY, INFINITY, "infinite birth"},
        {-INFINITY, 1.0, "infinite birth"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        memcpy(bad, good, sizeof bad);
        bad[4] = cases[k].birth;
        bad[5] = cases[k].death;
        ng_error_clear(&err);
        ck_assert_int_eq(ng_bottleneck_distance(good, 3, bad, 3, &v, &err),
                         NG_ERR_INPUT);
        ck_assert(strstr(err.message, "diagram B, point 2") != NULL);
        ck_assert(strstr(err.message, cases[k].what) != NULL);
        ng_error_clear(&err);
        ck_assert_int_eq(ng_wasserstein_distance(bad, 3, good, 3, 1, 1e-6,
                                                 &v, &bound, &err),
                         NG_ERR_INPUT);
        ck_assert(strstr(err.message, "diagram A, point 2") != NULL);
    }
    ck_assert(v == 42 && bound == 42); /* untouched on failure */
    const double ps[] = {0.5, NAN, INFINITY};
    for (size_t k = 0; k < 3; k++) {
        ng_error_clear(&err);
        ck_assert_int_eq(ng_wasserstein_distance(good, 3, good, 3, ps[k],
                                                 1e-6, &v, &bound, &err),
                         NG_ERR_USAGE);
        ck_assert(strstr(err.message, "p =") != NULL);
    }
    ng_error_clear(&err);
    ck_assert_int_eq(ng_wasserstein_distance(good, 3, good, 3, 1, -1e-3, &v,
                                             &bound, &err),
                     NG_ERR_USAGE);
    ck_assert(strstr(err.message, "relative error") != NULL);
    ng_error_clear(&err);
    ck_assert_int_eq(ng_bottleneck_distance(NULL, 2, good, 3, &v, &err),
                     NG_ERR_USAGE);
    ck_assert(strstr(err.message, "diagram A") != NULL);
    ck_assert(v == 42 && bound == 42);
}
END_TEST

START_TEST(allocation_failures_are_clean)
{
    rng_state = 31;
    double *a = random_diagram(300, 0), *b = perturbed(a, 290, 0.05);
    for (int kind = 0; kind < 3; kind++) {
        /* 0: bottleneck; 1: the Hungarian method; 2: the large method */
        size_t na = kind == 1 ? 60 : 300, nb = kind == 1 ? 50 : 290;
        ng_distance_set_exact_limit(kind == 1 ? SIZE_MAX - 1 : 0);
        int ok = 0;
        for (long after = 0; after < 200 && !ok; after++) {
            ng_error err;
            ng_error_clear(&err);
            double v = -1, bound;
            ng_alloc_fail_after(after);
            int status =
                kind == 0 ? ng_bottleneck_distance(a, na, b, nb, &v, &err)
                          : ng_wasserstein_distance(a, na, b, nb, 2, 1e-3,
                                                    &v, &bound, &err);
            ng_alloc_fail_after(-1);
            if (status == NG_OK) {
                ok = 1;
                ck_assert(v > 0);
            } else {
                ck_assert_int_eq(status, NG_ERR_NOMEM);
                ck_assert(strstr(err.message, "out of memory") != NULL);
                ck_assert(v == -1);
            }
        }
        ck_assert(ok);
    }
    ng_distance_set_exact_limit(DISTANCE_NONE);
    free(a);
    free(b);
}
END_TEST

START_TEST(repeatable)
{
    /* single-threaded and seeded: the same bits on every call */
    rng_state = 41;
    double *a = random_diagram(2000, 0), *b = perturbed(a, 1990, 0.01);
    ck_assert(bottleneck(a, 2000, b, 1990) == bottleneck(a, 2000, b, 1990));
    ng_error err;
    ng_error_clear(&err);
    double w[2], bound[2];
    for (int k = 0; k < 2; k++)
        ck_assert_int_eq(ng_wasserstein_distance(a, 2000, b, 1990, 1, 1e-6,
                                                 &w[k], &bound[k], &err),
                         NG_OK);
    ck_assert(w[0] == w[1] && bound[0] == bound[1]);
    ck_assert(bound[0] <= 1e-6);
    free(a);
    free(b);
}
END_TEST

static Suite *distance_suite(int slow)
{
    Suite *s = suite_create("distance");
    TCase *tc = tcase_create("core");
    tcase_set_timeout(tc, 120);
    tcase_add_test(tc, one_point_against_empty);
    tcase_add_test(tc, two_single_points);
    tcase_add_test(tc, essential_points);
    tcase_add_test(tc, zero_length_points_are_ignored);
    tcase_add_test(tc, identity_and_symmetry);
    tcase_add_test(tc, triangle_inequality);
    tcase_add_test(tc, bottleneck_against_plain_search);
    tcase_add_test(tc, paths_match_hungarian);
    tcase_add_test(tc, paths_with_duplicates);
    tcase_add_test(tc, relative_bound_by_hand);
    tcase_add_test(tc, tree_best2_against_scan);
    tcase_add_test(tc, public_entry_uses_both_methods);
    tcase_add_test(tc, input_errors);
    tcase_add_test(tc, allocation_failures_are_clean);
    tcase_add_test(tc, repeatable);
    suite_add_tcase(s, tc);
    if (slow) {
        TCase *big = tcase_create("slow");
        tcase_set_timeout(big, 1800);
        tcase_add_test(big, paths_match_hungarian_2000);
        suite_add_tcase(s, big);
    }
    return s;
}

int main(int argc, char **argv)
{
    int slow = argc > 1 && strcmp(argv[1], "--slow") == 0;
    SRunner *sr = srunner_create(distance_suite(slow));
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
