/* bottleneck.c — the exact bottleneck distance of two finite diagrams.
 *
 * How it works. Let A and B be the diagrams. The augmented diagrams are
 * A' = A ∪ {diagonal copies of the points of B} and B' = B ∪ {diagonal
 * copies of the points of A}. For a radius r the graph G_r on A' × B'
 * joins a_i – b_j when max(|b−b'|, |d−d'|) ≤ r, a point to its own copy
 * when its (death − birth)/2 ≤ r, and any two copies (cost 0); W∞(A, B) is
 * the least r for which G_r has a perfect matching (a point on another
 * point's copy can move to its own copy at no larger cost).
 *
 * Decision procedure. Call a point big when (death − birth)/2 > r: it
 * cannot go to the diagonal. G_r has a perfect matching iff the graph H_r
 * of the point–point edges alone has a matching covering every big point
 * of A and of B (unmatched small points go to their copies, the copies
 * left over pair up at cost 0). By the theorem of Mendelsohn and Dulmage
 * (Canad. J. Math. 10, 1958) such a matching exists iff H_r has one
 * matching covering the big points of A and another covering the big
 * points of B. So the perfect-matching test on the augmented graph is done
 * as two Hopcroft–Karp maximum matchings — big points of A into B, big
 * points of B into A — which leave out the complete bipartite graph
 * between the copies (in a search on G_r itself it makes every layer reach
 * nearly every vertex: measured 8 s instead of 0.4 s per test at 10^5
 * points). Neither graph is ever formed: neighbours are found by queries
 * to a weighted k-d tree (distance_tree.c) over the other diagram under
 * L∞. Following Efrat, Itai and Katz ("Geometry helps in bottleneck
 * matching and related problems", Algorithmica 31, 2001), a vertex is
 * removed from the search (weight +inf) as soon as a phase has used it:
 * the breadth-first search gives each vertex its layer once, and the
 * depth-first search looks only for vertices of the next layer (weight
 * −layer, queried with a threshold) and removes what it visits, so a phase
 * costs O(n log n)-ish tree work instead of O(edges). Kerber, Morozov and
 * Nigmetov ("Geometry helps to compare persistence diagrams", ACM J. Exp.
 * Algorithmics 22, 2017) showed that this pays on persistence diagrams;
 * the matchings are kept from one radius to the next (edges longer than
 * the new radius dropped) and a greedy nearest-neighbour pass starts them.
 *
 * Exactness: the answer is one of the values |b_i − b'_j|, |d_i − d'_j|,
 * (d − b)/2 or 0. The search keeps lo < W∞ ≤ hi. It starts from a lower
 * bound (every point is at least as far from its match as from its nearest
 * point of the other diagram or the diagonal), which on close diagrams is
 * often the answer, and gallops upward from it. It then counts the
 * candidates strictly between lo and hi without listing all pairs: for one
 * point, the values |x − t_j| over the sorted coordinates t_j form two
 * monotone runs (rounding is monotone), so each run's part inside (lo, hi)
 * is found by binary search. While there are many, the median of 15
 * candidates drawn at random (fixed seed: the result and the work are
 * deterministic) is tested and replaces lo or hi; once few remain, they
 * are listed, sorted and searched by bisection. Every test compares the
 * same computed costs (distance_internal.h), so the value returned is
 * bit-identical to a cost.
 */
#include "distance_internal.h"

#include "alloc.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>

#define NONE DISTANCE_NONE
#define SAMPLES 15

/* One direction of the test: a matching of the big points of P into Q. */
typedef struct cover {
    const double *p, *q;
    size_t np, nq;
    double r;
    distance_tree tq; /* Q, indexed by j */
    size_t *mate_p;   /* i -> j (NONE: free) */
    size_t *mate_q;   /* j -> i */
    long *layer_p, *layer_q;
    size_t *queue, *su, *sv;
    double *wq; /* scratch weights */
} cover;

static double diag_p(const cover *c, size_t i)
{
    return distance_diag(c->p[2 * i], c->p[2 * i + 1]);
}

static double edge_cost(const cover *c, size_t i, size_t j)
{
    return distance_linf(c->p[2 * i], c->p[2 * i + 1], c->q[2 * j],
                         c->q[2 * j + 1]);
}

/* A neighbour j of p_i in H_r with weight ≤ wmax, or NONE. */
static size_t next_neighbor(const cover *c, size_t i, double wmax)
{
    return ng_distance_tree_find(&c->tq, c->p[2 * i], c->p[2 * i + 1], c->r,
                                 wmax);
}

/* Weights of Q from one rule: 0 for free vertices (mode 0), 0 for all
 * (mode 1), −layer for layered vertices and +inf otherwise (mode 2). */
static void set_weights(cover *c, int mode)
{
    for (size_t j = 0; j < c->nq; j++) {
        if (mode == 0)
            c->wq[j] = c->mate_q[j] == NONE ? 0.0 : INFINITY;
        else if (mode == 1)
            c->wq[j] = 0.0;
        else
            c->wq[j] = c->layer_q[j] >= 0 ? -(double)c->layer_q[j] : INFINITY;
    }
    ng_distance_tree_set_all(&c->tq, c->wq);
}

/* Depth-first search of one Hopcroft–Karp phase from the free vertex i0
 * (iterative; su/sv hold the path). 1 when an augmenting path was found
 * and applied. */
static int augment_from(cover *c, size_t i0, long final)
{
    size_t d = 1;
    c->su[0] = i0;
    while (d > 0) {
        size_t i = c->su[d - 1];
        long k = c->layer_p[i];
        size_t j = next_neighbor(c, i, -(double)k);
        if (j == NONE) {
            d--;
            continue;
        }
        ng_distance_tree_set(&c->tq, j, INFINITY);
        if (c->mate_q[j] == NONE) {
            c->sv[d - 1] = j;
            for (size_t t = 0; t < d; t++) {
                c->mate_p[c->su[t]] = c->sv[t];
                c->mate_q[c->sv[t]] = c->su[t];
            }
            return 1;
        }
        if (k < final) {
            c->sv[d - 1] = j;
            c->su[d++] = c->mate_q[j];
        }
    }
    return 0;
}

/* 1 when H_r has a matching covering the big points of P. The matching
 * left in c is a maximum one of them and the start of the next call. */
static int cover_decide(cover *c, double r)
{
    c->r = r;
    size_t big = 0, matched = 0;
    for (size_t i = 0; i < c->np; i++) {
        int is_big = diag_p(c, i) > r;
        big += (size_t)is_big;
        size_t j = c->mate_p[i];
        if (j == NONE) continue;
        if (!is_big || edge_cost(c, i, j) > r) {
            c->mate_p[i] = NONE;
            c->mate_q[j] = NONE;
        } else {
            matched++;
        }
    }
    if (big > c->nq) return 0;
    /* greedy start: each free big point takes its nearest free point */
    set_weights(c, 0);
    for (size_t i = 0; i < c->np && matched < big; i++) {
        if (c->mate_p[i] != NONE || !(diag_p(c, i) > r)) continue;
        double v1, v2;
        size_t j = ng_distance_tree_best2(&c->tq, c->p[2 * i],
                                          c->p[2 * i + 1], 1.0, &v1, &v2);
        if (j == NONE || !(v1 <= r)) continue;
        c->mate_p[i] = j;
        c->mate_q[j] = i;
        ng_distance_tree_set(&c->tq, j, INFINITY);
        matched++;
    }
    while (matched < big) {
        /* breadth-first layering from the free big points */
        set_weights(c, 1);
        size_t head = 0, tail = 0;
        for (size_t i = 0; i < c->np; i++) {
            c->layer_p[i] = -1;
            if (c->mate_p[i] == NONE && diag_p(c, i) > r) {
                c->layer_p[i] = 0;
                c->queue[tail++] = i;
            }
        }
        for (size_t j = 0; j < c->nq; j++) c->layer_q[j] = -1;
        size_t nfree = tail;
        long final = -1;
        while (head < tail) {
            size_t i = c->queue[head++];
            if (final >= 0 && c->layer_p[i] > final) break;
            size_t j;
            while ((j = next_neighbor(c, i, 0.0)) != NONE) {
                ng_distance_tree_set(&c->tq, j, INFINITY);
                c->layer_q[j] = c->layer_p[i];
                if (c->mate_q[j] == NONE) {
                    if (final < 0) final = c->layer_p[i];
                } else if (final < 0) {
                    size_t w = c->mate_q[j];
                    c->layer_p[w] = c->layer_p[i] + 1;
                    c->queue[tail++] = w;
                }
            }
        }
        if (final < 0) break; /* no augmenting path: maximum */
        /* depth-first augmentation along the layers */
        set_weights(c, 2);
        size_t found = 0;
        for (size_t q = 0; q < nfree; q++)
            found += (size_t)augment_from(c, c->queue[q], final);
        if (found == 0) break; /* cannot happen; guards the loop */
        matched += found;
    }
    return matched == big;
}

static void cover_free(cover *c)
{
    ng_distance_tree_free(&c->tq);
    ng_free(c->mate_p);
    ng_free(c->mate_q);
    ng_free(c->layer_p);
    ng_free(c->layer_q);
    ng_free(c->queue);
    ng_free(c->su);
    ng_free(c->sv);
    ng_free(c->wq);
    *c = (cover){0};
}

static int cover_init(cover *c, const double *p, size_t np, const double *q,
                      size_t nq, ng_error *err)
{
    *c = (cover){.p = p, .q = q, .np = np, .nq = nq};
    c->mate_p = ng_malloc(np, sizeof *c->mate_p);
    c->mate_q = ng_malloc(nq, sizeof *c->mate_q);
    c->layer_p = ng_malloc(np, sizeof *c->layer_p);
    c->layer_q = ng_malloc(nq, sizeof *c->layer_q);
    c->queue = ng_malloc(np, sizeof *c->queue);
    c->su = ng_malloc(np + 1, sizeof *c->su);
    c->sv = ng_malloc(np + 1, sizeof *c->sv);
    c->wq = ng_malloc(nq, sizeof *c->wq);
    if (c->mate_p == NULL || c->mate_q == NULL || c->layer_p == NULL ||
        c->layer_q == NULL || c->queue == NULL || c->su == NULL ||
        c->sv == NULL || c->wq == NULL) {
        cover_free(c);
        return ng_error_set(err, NG_ERR_NOMEM,
                            "out of memory for a bottleneck matching of %zu "
                            "+ %zu diagram points",
                            np, nq);
    }
    int status = ng_distance_tree_build(&c->tq, q, nq, err);
    if (status != NG_OK) {
        cover_free(c);
        return status;
    }
    for (size_t i = 0; i < np; i++) c->mate_p[i] = NONE;
    for (size_t j = 0; j < nq; j++) c->mate_q[j] = NONE;
    return NG_OK;
}

/* Both directions of the test of one radius. */
typedef struct matcher {
    cover ab, ba;
} matcher;

static int decide(matcher *m, double r)
{
    return cover_decide(&m->ab, r) && cover_decide(&m->ba, r);
}

static void matcher_free(matcher *m)
{
    cover_free(&m->ab);
    cover_free(&m->ba);
}

static int matcher_init(matcher *m, const double *a, size_t na,
                        const double *b, size_t nb, ng_error *err)
{
    *m = (matcher){0};
    int status = cover_init(&m->ab, a, na, b, nb, err);
    if (status == NG_OK) status = cover_init(&m->ba, b, nb, a, na, err);
    if (status != NG_OK) matcher_free(m);
    return status;
}

/* ---- candidate values ---- */

static int cmp_double(const void *x, const void *y)
{
    double u = *(const double *)x, v = *(const double *)y;
    return (u > v) - (u < v);
}

/* First j in [lo, hi) with pred true, for pred monotone false…true. The
 * predicates: kind 0: t[j] >= c; 1: t[j] − c > v; 2: t[j] − c >= v;
 * 3: c − t[j] < v; 4: c − t[j] <= v. */
static size_t first_true(const double *t, size_t lo, size_t hi, int kind,
                         double c, double v)
{
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        double x = t[mid];
        int ok;
        switch (kind) {
        case 0: ok = x >= c; break;
        case 1: ok = x - c > v; break;
        case 2: ok = x - c >= v; break;
        case 3: ok = c - x < v; break;
        default: ok = c - x <= v; break;
        }
        if (ok)
            hi = mid;
        else
            lo = mid + 1;
    }
    return lo;
}

/* For every s[i], the two runs of j with lo < |s[i] − t[j]| < hi:
 * run[4i..4i+1] and run[4i+2..4i+3] as half-open ranges; cum[i] counts
 * the values before point i. Returns the total. */
static size_t pair_runs(const double *s, size_t ns, const double *t,
                        size_t nt, double lo, double hi, size_t *run,
                        size_t *cum)
{
    size_t total = 0;
    for (size_t i = 0; i < ns; i++) {
        double c = s[i];
        size_t split = first_true(t, 0, nt, 0, c, 0);
        size_t r0 = first_true(t, split, nt, 1, c, lo);
        size_t r1 = first_true(t, split, nt, 2, c, hi);
        if (r1 < r0) r1 = r0;
        size_t l0 = first_true(t, 0, split, 3, c, hi);
        size_t l1 = first_true(t, 0, split, 4, c, lo);
        if (l1 < l0) l1 = l0;
        run[4 * i] = l0;
        run[4 * i + 1] = l1;
        run[4 * i + 2] = r0;
        run[4 * i + 3] = r1;
        cum[i] = total;
        total += (l1 - l0) + (r1 - r0);
    }
    cum[ns] = total;
    return total;
}

/* The value of rank k (0 ≤ k < cum[ns]) of the runs, in run order. */
static double pair_value(const double *s, size_t ns, const double *t,
                         const size_t *run, const size_t *cum, size_t k)
{
    size_t lo = 0, hi = ns; /* last i with cum[i] <= k */
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (cum[mid] <= k)
            lo = mid;
        else
            hi = mid;
    }
    size_t i = lo, off = k - cum[i];
    size_t left = run[4 * i + 1] - run[4 * i];
    size_t j = off < left ? run[4 * i] + off : run[4 * i + 2] + (off - left);
    return fabs(s[i] - t[j]);
}

static uint64_t splitmix(uint64_t *state)
{
    uint64_t z = (*state += 0x9E3779B97F4A7C15u);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9u;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBu;
    return z ^ (z >> 31);
}

typedef struct candidates {
    const double *xa, *xb, *ya, *yb; /* sorted coordinates */
    const double *diag;              /* all diagonal costs, na + nb */
    size_t na, nb;
    size_t *run_x, *cum_x, *run_y, *cum_y;
    size_t kx, ky, kd, kz; /* counts in (lo, hi) of each kind */
    double *diag_in;       /* the diagonal costs in (lo, hi) */
} candidates;

static size_t count_between(candidates *c, double lo, double hi)
{
    c->kx = pair_runs(c->xa, c->na, c->xb, c->nb, lo, hi, c->run_x, c->cum_x);
    c->ky = pair_runs(c->ya, c->na, c->yb, c->nb, lo, hi, c->run_y, c->cum_y);
    c->kd = 0;
    for (size_t i = 0; i < c->na + c->nb; i++)
        if (c->diag[i] > lo && c->diag[i] < hi) c->diag_in[c->kd++] = c->diag[i];
    c->kz = lo < 0.0 && 0.0 < hi;
    return c->kx + c->ky + c->kd + c->kz;
}

static double value_of_rank(const candidates *c, size_t k)
{
    if (k < c->kx)
        return pair_value(c->xa, c->na, c->xb, c->run_x, c->cum_x, k);
    k -= c->kx;
    if (k < c->ky)
        return pair_value(c->ya, c->na, c->yb, c->run_y, c->cum_y, k);
    k -= c->ky;
    if (k < c->kd) return c->diag_in[k];
    return 0.0;
}

/* A lower bound of W∞ that is one of the costs: every point must be
 * matched, at least at the cost of its nearest point of the other diagram
 * or of the diagonal, whichever is less; the largest of these. */
static double half_bound(const cover *c)
{
    double lb = 0.0, v1, v2;
    for (size_t i = 0; i < c->np; i++) {
        double d = diag_p(c, i);
        if (c->nq > 0) {
            ng_distance_tree_best2(&c->tq, c->p[2 * i], c->p[2 * i + 1], 1.0,
                                   &v1, &v2);
            if (v1 < d) d = v1;
        }
        if (d > lb) lb = d;
    }
    return lb;
}

static double lower_bound(const matcher *m)
{
    return fmax(half_bound(&m->ab), half_bound(&m->ba));
}

int ng_distance_bottleneck_finite(const double *a, size_t na, const double *b,
                                  size_t nb, double *out, ng_error *err)
{
    size_t n = na + nb;
    if (n == 0) {
        *out = 0.0;
        return NG_OK;
    }
    int status = NG_OK;
    matcher m = {0};
    candidates c = {0};
    double *sorted = ng_malloc(2 * n, sizeof *sorted);
    double *diag = ng_malloc(n, sizeof *diag);
    double *diag_in = ng_malloc(n, sizeof *diag_in);
    size_t *runs = ng_malloc(8 * na + 2 * (na + 1), sizeof *runs);
    size_t limit = 4 * n + 1024;
    double *list = ng_malloc(limit, sizeof *list);
    if (sorted == NULL || diag == NULL || diag_in == NULL || runs == NULL ||
        list == NULL) {
        status = ng_error_set(err, NG_ERR_NOMEM,
                              "out of memory for the bottleneck distance of "
                              "%zu + %zu points",
                              na, nb);
        goto cleanup;
    }
    status = matcher_init(&m, a, na, b, nb, err);
    if (status != NG_OK) goto cleanup;

    double *xa = sorted, *xb = sorted + na, *ya = sorted + n,
           *yb = sorted + n + na;
    for (size_t i = 0; i < na; i++) {
        xa[i] = a[2 * i];
        ya[i] = a[2 * i + 1];
        diag[i] = distance_diag(a[2 * i], a[2 * i + 1]);
    }
    for (size_t j = 0; j < nb; j++) {
        xb[j] = b[2 * j];
        yb[j] = b[2 * j + 1];
        diag[na + j] = distance_diag(b[2 * j], b[2 * j + 1]);
    }
    qsort(xa, na, sizeof *xa, cmp_double);
    qsort(xb, nb, sizeof *xb, cmp_double);
    qsort(ya, na, sizeof *ya, cmp_double);
    qsort(yb, nb, sizeof *yb, cmp_double);
    c = (candidates){.xa = xa, .xb = xb, .ya = ya, .yb = yb, .diag = diag,
                     .na = na, .nb = nb, .run_x = runs,
                     .cum_x = runs + 4 * na, .run_y = runs + 4 * na + na + 1,
                     .cum_y = runs + 8 * na + na + 1, .diag_in = diag_in};

    /* lo < W∞ ≤ hi; every candidate is ≥ 0, and matching every point to
     * the diagonal costs the largest diagonal cost. */
    double lo = -1.0, hi = 0.0;
    for (size_t i = 0; i < n; i++)
        if (diag[i] > hi) hi = diag[i];
    double lb = lower_bound(&m);
    if (lb >= hi || decide(&m, lb)) {
        *out = lb >= hi ? hi : lb;
        goto cleanup;
    }
    /* gallop up from the lower bound: on close diagrams W∞ is near it,
     * and the matching grows by augmentation only */
    lo = lb;
    double step = lb > 0.0 ? lb / 64 : hi / 1048576;
    for (;;) {
        double r = lb + step;
        if (!(r < hi)) break;
        if (decide(&m, r)) {
            hi = r; /* not always a candidate: then W∞ < hi strictly */
            break;
        }
        lo = r;
        step *= 2;
    }
    uint64_t seed = 0x6E65727665676170u;
    size_t k;
    while ((k = count_between(&c, lo, hi)) > limit) {
        double sample[SAMPLES];
        for (int s = 0; s < SAMPLES; s++)
            sample[s] = value_of_rank(&c, (size_t)(splitmix(&seed) % k));
        qsort(sample, SAMPLES, sizeof *sample, cmp_double);
        double pivot = sample[SAMPLES / 2];
        if (decide(&m, pivot))
            hi = pivot;
        else
            lo = pivot;
    }
    for (size_t i = 0; i < k; i++) list[i] = value_of_rank(&c, i);
    qsort(list, k, sizeof *list, cmp_double);
    size_t u = 0;
    for (size_t i = 0; i < k; i++)
        if (u == 0 || list[i] != list[u - 1]) list[u++] = list[i];
    /* least feasible of list[0..u) ∪ {hi} by bisection */
    size_t l = 0, h = u; /* list[h] (or hi when h = u) is feasible */
    while (l < h) {
        size_t mid = l + (h - l) / 2;
        if (decide(&m, list[mid]))
            h = mid;
        else
            l = mid + 1;
    }
    *out = h < u ? list[h] : hi;

cleanup:
    matcher_free(&m);
    ng_free(sorted);
    ng_free(diag);
    ng_free(diag_in);
    ng_free(runs);
    ng_free(list);
    return status;
}
