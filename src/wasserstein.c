/* wasserstein.c — the least total cost Σ cost^p of a matching of two
 * finite diagrams, exactly (Hungarian method) or within a guaranteed
 * relative error (auction with ε-scaling).
 *
 * Both work on the augmented problem of bottleneck.c: A' = A ∪ copies of
 * B, B' = B ∪ copies of A (n = |A| + |B| on each side); a point costs
 * L∞^p against a point, ((death − birth)/2)^p against a copy, and two
 * copies cost 0.
 *
 * How the auction works (Bertsekas, "A distributed algorithm for the
 * assignment problem", 1979, and "The auction algorithm: a distributed
 * relaxation method for the assignment problem", Annals of OR 14, 1988;
 * for diagrams Kerber, Morozov and Nigmetov, "Geometry helps to compare
 * persistence diagrams", ACM J. Exp. Algorithmics 22, 2017). Every object
 * v of B' has a price p_v. An unassigned bidder u of A' finds the object
 * v1 of least c(u, v) + p_v (value w1) and the second least value w2,
 * raises p_{v1} by w2 − w1 + ε and takes v1, evicting its holder. When all
 * are assigned, every bidder holds an object within ε of its best
 * (ε-complementary slackness), so the total is at most optimum + n·ε.
 * ε starts at the mean over bidders of their least cost and is divided by
 * 5 per round (ε-scaling); prices are kept, and so is every assignment
 * that still satisfies ε-complementary slackness for the new ε (only the
 * others bid again; with the first ε from the largest diagonal cost and
 * full restarts, W2 at 10^4 points took 11 s instead of 2.3 s). The searches for w1 and w2 never
 * scan B': a point a_i looks in a k-d tree over B whose nodes know their
 * least price (distance_tree.c), plus its own copy; a copy of b_j looks at
 * b_j and at a tree over the copies of A (cost 0, so the cheapest price).
 * A copy of a point is offered only to that point, which changes no
 * optimum (a point on another point's copy can move to its own copy).
 * After each round the dual value D = Σ_u min_v (c(u, v) + p_v) − Σ_v p_v
 * is a lower bound of the optimum (LP duality), as is total − n·ε; the
 * auction stops once ((total + extra)/(lower + extra))^(1/p) − 1 ≤
 * rel_error, which bounds the relative error of W_p itself.
 */
#include "distance_internal.h"

#include "alloc.h"

#include <float.h>
#include <math.h>

#define NONE DISTANCE_NONE
#define EPS_FACTOR 5 /* ε divisor per round */

/* Augmented size na + nb up to which the exact method is used. Measured
 * with `bench_distance exact` (perturbed copies, 2 shared cores): exact /
 * auction at 1e-6 took 0.5 / 0.9 ms at size 100, 4.5 / 3.4 ms at 200,
 * 68 / 10 ms at 500 and 390 / 27 ms at 1000; up to about 200 the exact
 * answer costs no more than the approximate one. */
#define EXACT_LIMIT 200
static size_t exact_limit = EXACT_LIMIT;

size_t ng_distance_exact_limit(void) { return exact_limit; }

size_t ng_distance_set_exact_limit(size_t limit)
{
    size_t old = exact_limit;
    exact_limit = limit == DISTANCE_NONE ? EXACT_LIMIT : limit;
    return old;
}

/* ---- Hungarian method (shortest augmenting paths with potentials) ---- */

int ng_distance_wasserstein_exact(const double *a, size_t na, const double *b,
                                  size_t nb, double p, double *sum,
                                  ng_error *err)
{
    size_t n = na + nb;
    if (n == 0) {
        *sum = 0.0;
        return NG_OK;
    }
    int status = NG_OK;
    double *cost = ng_malloc(n * n, sizeof *cost);
    double *pu = ng_calloc(n + 1, sizeof *pu);
    double *pv = ng_calloc(n + 1, sizeof *pv);
    double *minv = ng_malloc(n + 1, sizeof *minv);
    size_t *row_of = ng_calloc(n + 1, sizeof *row_of); /* column -> row */
    size_t *way = ng_calloc(n + 1, sizeof *way);
    unsigned char *used = ng_malloc(n + 1, 1);
    if (cost == NULL || pu == NULL || pv == NULL || minv == NULL ||
        row_of == NULL || way == NULL || used == NULL) {
        status = ng_error_set(err, NG_ERR_NOMEM,
                              "out of memory for the exact Wasserstein "
                              "distance of %zu + %zu points",
                              na, nb);
        goto cleanup;
    }
    /* rows: a_0..a_{na−1}, then copies of B; columns: b_0..b_{nb−1}, then
     * copies of A. Any copy is as good as the own copy here (the cost of
     * a point to the diagonal does not depend on which copy). */
    for (size_t i = 0; i < n; i++) {
        for (size_t j = 0; j < n; j++) {
            double c;
            if (i < na && j < nb)
                c = distance_pow(distance_linf(a[2 * i], a[2 * i + 1],
                                               b[2 * j], b[2 * j + 1]),
                                 p);
            else if (i < na)
                c = distance_pow(distance_diag(a[2 * i], a[2 * i + 1]), p);
            else if (j < nb)
                c = distance_pow(distance_diag(b[2 * j], b[2 * j + 1]), p);
            else
                c = 0.0;
            cost[i * n + j] = c;
        }
    }
    /* 1-based: row_of[0] is the row being inserted, column 0 a sentinel */
    for (size_t i = 1; i <= n; i++) {
        row_of[0] = i;
        size_t j0 = 0;
        for (size_t j = 0; j <= n; j++) {
            minv[j] = INFINITY;
            used[j] = 0;
        }
        do {
            used[j0] = 1;
            size_t i0 = row_of[j0], j1 = 0;
            double delta = INFINITY;
            const double *crow = cost + (i0 - 1) * n;
            for (size_t j = 1; j <= n; j++) {
                if (used[j]) continue;
                double cur = crow[j - 1] - pu[i0] - pv[j];
                if (cur < minv[j]) {
                    minv[j] = cur;
                    way[j] = j0;
                }
                if (minv[j] < delta) {
                    delta = minv[j];
                    j1 = j;
                }
            }
            for (size_t j = 0; j <= n; j++) {
                if (used[j]) {
                    pu[row_of[j]] += delta;
                    pv[j] -= delta;
                } else {
                    minv[j] -= delta;
                }
            }
            j0 = j1;
        } while (row_of[j0] != 0);
        do {
            size_t j1 = way[j0];
            row_of[j0] = row_of[j1];
            j0 = j1;
        } while (j0 != 0);
    }
    double total = 0.0;
    for (size_t j = 1; j <= n; j++) total += cost[(row_of[j] - 1) * n + j - 1];
    *sum = total;

cleanup:
    ng_free(cost);
    ng_free(pu);
    ng_free(pv);
    ng_free(minv);
    ng_free(row_of);
    ng_free(way);
    ng_free(used);
    return status;
}

/* ---- auction ---- */

typedef struct auction {
    const double *a, *b;
    size_t na, nb, n;
    double p;
    distance_tree tb; /* objects b_j, weight = price */
    distance_tree tp; /* objects copy(a_i), at (0, 0), weight = price */
    double *diag_a, *diag_b; /* diagonal costs ^ p */
    double *price;           /* by object */
    size_t *holder;          /* object -> bidder (NONE) */
    size_t *held;            /* bidder -> object (NONE) */
    size_t *queue;           /* circular, n slots */
} auction;

/* Object v: v < nb is b_v, else the copy of a_{v−nb}.
 * Bidder u: u < na is a_u, else the copy of b_{u−na}. */

static double auction_cost(const auction *s, size_t u, size_t v)
{
    if (u < s->na) {
        if (v < s->nb)
            return distance_pow(distance_linf(s->a[2 * u], s->a[2 * u + 1],
                                              s->b[2 * v], s->b[2 * v + 1]),
                                s->p);
        return s->diag_a[u]; /* v is the own copy */
    }
    if (v < s->nb) return s->diag_b[v]; /* the own point */
    return 0.0;
}

static void set_price(auction *s, size_t v, double price)
{
    s->price[v] = price;
    if (v < s->nb)
        ng_distance_tree_set(&s->tb, v, price);
    else
        ng_distance_tree_set(&s->tp, v - s->nb, price);
}

/* Best object of bidder u with its value c + price, and the second value. */
static size_t best_two(const auction *s, size_t u, double *w1, double *w2)
{
    size_t best, own;
    double c;
    if (u < s->na) {
        best = ng_distance_tree_best2(&s->tb, s->a[2 * u], s->a[2 * u + 1],
                                      s->p, w1, w2);
        own = s->nb + u;
        c = s->diag_a[u] + s->price[own];
    } else {
        size_t i = ng_distance_tree_best2(&s->tp, 0.0, 0.0, s->p, w1, w2);
        best = i == NONE ? NONE : s->nb + i;
        own = u - s->na;
        c = s->diag_b[own] + s->price[own];
    }
    if (best == NONE || c < *w1) {
        *w2 = *w1;
        *w1 = c;
        best = own;
    } else if (c < *w2) {
        *w2 = c;
    }
    return best;
}

static void run_round(auction *s, double eps)
{
    size_t n = s->n, head = 0, count = 0;
    /* keep the assignments that satisfy ε-complementary slackness for the
     * new ε; the rest bid again */
    for (size_t u = 0; u < n; u++) {
        size_t v = s->held[u];
        if (v != NONE) {
            double w1, w2;
            best_two(s, u, &w1, &w2);
            if (auction_cost(s, u, v) + s->price[v] <= w1 + eps) continue;
            s->holder[v] = NONE;
            s->held[u] = NONE;
        }
        s->queue[count++] = u;
    }
    while (count > 0) {
        size_t u = s->queue[head];
        head = head + 1 == n ? 0 : head + 1;
        count--;
        double w1, w2;
        size_t v = best_two(s, u, &w1, &w2);
        double raise = isinf(w2) ? eps : (w2 - w1) + eps;
        set_price(s, v, s->price[v] + raise);
        size_t old = s->holder[v];
        s->holder[v] = u;
        s->held[u] = v;
        if (old != NONE) {
            s->held[old] = NONE;
            s->queue[(head + count) % n] = old;
            count++;
        }
    }
}

static void auction_free(auction *s)
{
    ng_distance_tree_free(&s->tb);
    ng_distance_tree_free(&s->tp);
    ng_free(s->diag_a);
    ng_free(s->diag_b);
    ng_free(s->price);
    ng_free(s->holder);
    ng_free(s->held);
    ng_free(s->queue);
    *s = (auction){0};
}

int ng_distance_wasserstein_auction(const double *a, size_t na,
                                    const double *b, size_t nb, double p,
                                    double rel_error, double extra,
                                    double *sum, double *bound,
                                    ng_error *err)
{
    size_t n = na + nb;
    if (n == 0) {
        *sum = 0.0;
        *bound = 0.0;
        return NG_OK;
    }
    auction s = {.a = a, .b = b, .na = na, .nb = nb, .n = n, .p = p};
    int status = NG_OK;
    double *zeros = ng_calloc(2 * na, sizeof *zeros);
    s.diag_a = ng_malloc(na, sizeof *s.diag_a);
    s.diag_b = ng_malloc(nb, sizeof *s.diag_b);
    s.price = ng_calloc(n, sizeof *s.price);
    s.holder = ng_malloc(n, sizeof *s.holder);
    s.held = ng_malloc(n, sizeof *s.held);
    s.queue = ng_malloc(n, sizeof *s.queue);
    if (zeros == NULL || s.diag_a == NULL || s.diag_b == NULL ||
        s.price == NULL || s.holder == NULL || s.held == NULL ||
        s.queue == NULL) {
        status = ng_error_set(err, NG_ERR_NOMEM,
                              "out of memory for the Wasserstein auction of "
                              "%zu + %zu points",
                              na, nb);
        goto cleanup;
    }
    status = ng_distance_tree_build(&s.tb, b, nb, err);
    if (status == NG_OK) status = ng_distance_tree_build(&s.tp, zeros, na, err);
    if (status != NG_OK) goto cleanup;

    double top = 0.0;
    for (size_t i = 0; i < na; i++) {
        s.diag_a[i] = distance_pow(distance_diag(a[2 * i], a[2 * i + 1]), p);
        if (s.diag_a[i] > top) top = s.diag_a[i];
    }
    for (size_t j = 0; j < nb; j++) {
        s.diag_b[j] = distance_pow(distance_diag(b[2 * j], b[2 * j + 1]), p);
        if (s.diag_b[j] > top) top = s.diag_b[j];
    }
    for (size_t v = 0; v < n; v++) s.holder[v] = NONE;
    for (size_t u = 0; u < n; u++) s.held[u] = NONE;
    /* first ε: the mean over bidders of the least cost (zero prices) */
    double least = 0.0;
    for (size_t u = 0; u < n; u++) {
        double w1, w2;
        best_two(&s, u, &w1, &w2);
        least += w1;
    }
    double eps = least / (double)n, total = 0.0, reached = INFINITY;
    if (!(eps > 0.0)) eps = top / 4;
    if (!(eps > 0.0)) eps = DBL_MIN;
    /* below this ε a round cannot change the total any more */
    double eps_floor = top * DBL_EPSILON / (double)n;
    for (;;) {
        run_round(&s, eps);
        total = 0.0;
        double dual = 0.0;
        for (size_t u = 0; u < n; u++) {
            total += auction_cost(&s, u, s.held[u]);
            double w1, w2;
            best_two(&s, u, &w1, &w2);
            dual += w1;
        }
        for (size_t v = 0; v < n; v++) dual -= s.price[v];
        double lower = fmax(dual, total - (double)n * eps);
        if (total + extra <= 0.0)
            reached = 0.0;
        else if (lower + extra > 0.0)
            reached = pow((total + extra) / (lower + extra), 1.0 / p) - 1.0;
        else
            reached = INFINITY;
        if (reached < 0.0) reached = 0.0;
        if (reached <= rel_error || eps <= eps_floor) break;
        eps /= EPS_FACTOR;
    }
    *sum = total;
    *bound = reached;

cleanup:
    ng_free(zeros);
    auction_free(&s);
    return status;
}
