/* wasserstein.c — the least total cost Σ cost^p of a matching of two
 * finite diagrams: exactly by the Hungarian method on the augmented cost
 * matrix for small diagrams, and by shortest augmenting paths on the
 * geometric graph, with a certificate of optimality, for large ones.
 *
 * The small method works on the augmented problem of bottleneck.c:
 * A' = A ∪ copies of B, B' = B ∪ copies of A (n = |A| + |B| on each side);
 * a point costs L∞^p against a point, ((death − birth)/2)^p against a
 * copy, and two copies cost 0.
 *
 * How the large method works. The same optimum is that of a matching of A
 * and B that may leave points unmatched, an unmatched point paying its
 * diagonal cost diag(x) = ((death − birth)/2)^p (a point on another
 * point's copy can move to its own copy, and the copies left over pair up
 * at cost 0). Its linear-programming dual has a share U_i ≤ diag(a_i) per
 * point of A and V_j ≤ diag(b_j) per point of B with U_i + V_j ≤ c(i, j);
 * for any such V, U_i = min(diag(a_i), min_j c(i, j) − V_j) is feasible and
 * Σ U + Σ V is a lower bound of the optimum (weak duality).
 *   Call the points of A bidders and those of B objects; bidder i values
 * object j at c(i, j) − V_j and the diagonal at diag(a_i). The method keeps
 * every assigned bidder on a choice of least value (U_i = that value, so
 * complementary slackness holds), and adds bidders one at a time along
 * shortest augmenting paths: the Hungarian method of Kuhn (Naval Res.
 * Logist. Quart. 2, 1955) with the potentials of Tomizawa (Networks 1,
 * 1971) and Edmonds and Karp (J. ACM 19, 1972), as in the sparse solver of
 * Jonker and Volgenant (Computing 38, 1987).
 *   Forward phase: for each bidder in turn, a Dijkstra search over reduced
 * costs c(i, j) − V_j − U_i ≥ 0 from it; a labelled object leads on to its
 * holder; the search ends at an object nobody holds or at the diagonal of a
 * labelled bidder; V of each labelled object falls by (δ − its label),
 * which keeps all reduced costs ≥ 0 and those of held pairs at 0, and the
 * path is flipped. V starts from the column reduction of Jonker and
 * Volgenant, V_j = min(diag(b_j), least cost of b_j): each object looks as
 * cheap to its nearest bidder as the duals allow. (From V = 0 the searches
 * labelled 20 % more nodes at 10^5 points; from V_j = diag(b_j), the
 * optimum at once for unheld objects, the forward searches grew tenfold.)
 *   Reverse phase: an object nobody holds must have V_j = diag(b_j) (it
 * pays its own diagonal cost). Each one with V_j < diag(b_j) searches the
 * other way: labelled bidders lead on to the objects they hold; the search
 * ends at a labelled bidder on the diagonal (who takes an object), or when
 * a labelled object j can raise V_j to diag(b_j) and be given up (key: its
 * label + diag(b_j) − V_j); V of each labelled object rises by (δ − its
 * label). No bidder becomes unassigned and no new such object appears, so
 * the phase ends after one search per object, with primal = dual.
 *   No graph is built: the unlabelled neighbours of least reduced cost come
 * from a weighted k-d tree (distance_tree.c, the structure Kerber,
 * Morozov and Nigmetov use for diagrams, ACM J. Exp. Algorithmics 22,
 * 2017) — over B with weight −V_j (labelled objects +inf) in forward
 * searches, over A with weight −U_i in reverse ones. One query gives a
 * labelled node's two best unlabelled neighbours; both enter the heap, and
 * when the second is popped (used, or labelled meanwhile by another path)
 * it stands for the rest and the next query is made (lazy Dijkstra, as in
 * Vaidya, "Geometry helps in matching", SIAM J. Comput. 18, 1989). At
 * equal reduced cost the tree and the heap prefer a node that ends the
 * search (an unheld object, a bidder on the diagonal), so that duplicate
 * points do not make every search walk through all of them.
 *   In floating point, reduced costs are clamped at 0 and the optimum is
 * found up to the rounding of the values compared; the certificate below
 * measures what that leaves.
 *   Certificate: the bound reported is computed from the final V with the
 * lower bound above, summed with Neumaier's compensated summation, minus an
 * explicit allowance for the rounding of every cost, value and sum (see
 * certify()); so it is a true bound on the relative error of the computed
 * value, not an estimate. Searches run one after the other and break ties
 * by index: the result is the same bits on every run.
 */
#include "distance_internal.h"

#include "alloc.h"

#include <float.h>
#include <math.h>

#define NONE DISTANCE_NONE
#define OUT (DISTANCE_NONE - 1) /* a bidder on the diagonal */

/* Augmented size na + nb up to which the Hungarian method is used.
 * Measured with `bench_distance exact` (perturbed copies, one shared
 * core): Hungarian / paths took 1 / 3 µs at size 10, 5 / 6 µs at 20,
 * 42 / 16 µs at 50, 2.3 / 0.1 ms at 200 and 410 / 1.0 ms at 1000. */
#define EXACT_LIMIT 30
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
                              "out of memory for the Hungarian method on "
                              "%zu + %zu points",
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

/* ---- shortest augmenting paths on the geometric graph ---- */

typedef struct entry {
    double key;
    size_t who;        /* forward: bidder; reverse: object */
    size_t cand;       /* forward: object or OUT; reverse: bidder or NONE
                          (the object gives itself up) */
    unsigned char end;  /* taking cand ends the search */
    unsigned char last; /* the later of the two candidates one query gave:
                           popping it calls for the next query */
} entry;

typedef struct heap {
    entry *e;
    size_t n, cap;
} heap;

/* Least key first; at equal keys an entry that ends the search, then the
 * lower indices (deterministic). */
static int entry_less(const entry *x, const entry *y)
{
    if (x->key != y->key) return x->key < y->key;
    if (x->end != y->end) return x->end > y->end;
    if (x->who != y->who) return x->who < y->who;
    return x->cand < y->cand;
}

static int heap_push(heap *h, double key, size_t who, size_t cand, int end,
                     int last)
{
    if (h->n == h->cap) {
        size_t cap = h->cap ? 2 * h->cap : 64;
        entry *e = ng_realloc(h->e, cap, sizeof *e);
        if (e == NULL) return 0;
        h->e = e;
        h->cap = cap;
    }
    entry x = {key, who, cand, (unsigned char)(end != 0),
               (unsigned char)(last != 0)};
    size_t k = h->n++;
    while (k > 0) {
        size_t up = (k - 1) / 2;
        if (!entry_less(&x, &h->e[up])) break;
        h->e[k] = h->e[up];
        k = up;
    }
    h->e[k] = x;
    return 1;
}

static entry heap_pop(heap *h)
{
    entry top = h->e[0], x = h->e[--h->n];
    size_t k = 0;
    for (;;) {
        size_t c = 2 * k + 1;
        if (c >= h->n) break;
        if (c + 1 < h->n && entry_less(&h->e[c + 1], &h->e[c])) c++;
        if (!entry_less(&h->e[c], &x)) break;
        h->e[k] = h->e[c];
        k = c;
    }
    if (h->n > 0) h->e[k] = x;
    return top;
}

typedef struct matcher {
    const double *a, *b;
    size_t na, nb;
    double p;
    distance_tree tb;        /* objects: weight −V_j (+inf: labelled),
                                preferred when unheld */
    distance_tree ta;        /* bidders: weight −U_i (+inf: labelled),
                                preferred when on the diagonal */
    double *diag_a, *diag_b; /* diagonal costs ^ p */
    double *v;               /* V_j ≤ diag_b[j] */
    size_t *holder;          /* object -> bidder (NONE) */
    size_t *held;            /* bidder -> object, OUT or NONE */
    double *label_a, *label_b;
    double *u_a;             /* U of the bidders the search labelled */
    size_t *seen_a, *seen_b; /* stamp of the search that labelled them */
    size_t *pred;            /* forward: object -> bidder it was reached
                                from; reverse: bidder -> object */
    size_t *list;            /* what the current search labelled */
    size_t stamp;
    heap h;
} matcher;

static double pair_cost(const matcher *s, size_t i, size_t j)
{
    return distance_pow(distance_linf(s->a[2 * i], s->a[2 * i + 1],
                                      s->b[2 * j], s->b[2 * j + 1]),
                        s->p);
}

/* U_i of an assigned bidder: the value of what it holds. */
static double held_value(const matcher *s, size_t i)
{
    size_t j = s->held[i];
    return j == OUT ? s->diag_a[i] : pair_cost(s, i, j) - s->v[j];
}

static void weigh_object(matcher *s, size_t j)
{
    ng_distance_tree_mark(&s->tb, j, -s->v[j], s->holder[j] == NONE);
}

static void weigh_bidder(matcher *s, size_t i)
{
    ng_distance_tree_mark(&s->ta, i, -held_value(s, i), s->held[i] == OUT);
}

/* Least value of bidder i over its unlabelled objects and the diagonal. */
static double least_value(const matcher *s, size_t i)
{
    double v1, v2;
    size_t j = ng_distance_tree_best2(&s->tb, s->a[2 * i], s->a[2 * i + 1],
                                      s->p, &v1, &v2);
    return j == NONE ? s->diag_a[i] : distance_min(v1, s->diag_a[i]);
}

/* Heap entries for objects j1 and j2 (values v1 ≤ v2, as from
 * ng_distance_tree_best_two) of bidder i (label d, least value u): the
 * second stands for all the others. */
static int push_two_objects(matcher *s, size_t i, double d, double u,
                            size_t j1, double v1, size_t j2, double v2)
{
    if (j1 == NONE || !(v1 < INFINITY)) return 1;
    int one = j2 == NONE || !(v2 < INFINITY);
    return heap_push(&s->h, d + distance_max(0.0, v1 - u), i, j1,
                     s->holder[j1] == NONE, one) &&
           (one || heap_push(&s->h, d + distance_max(0.0, v2 - u), i, j2,
                             s->holder[j2] == NONE, 1));
}

/* The same for the two best unlabelled objects of bidder i. */
static int push_objects(matcher *s, size_t i, double d, double u)
{
    double v1, v2;
    size_t j2, j1 = ng_distance_tree_best_two(&s->tb, s->a[2 * i],
                                              s->a[2 * i + 1], s->p, &v1,
                                              &j2, &v2);
    return push_two_objects(s, i, d, u, j1, v1, j2, v2);
}

/* Bidder i, labelled d, joins the search: its diagonal enters the heap
 * (its objects are the caller's). */
static int label_bidder(matcher *s, size_t i, double d, double u)
{
    s->seen_a[i] = s->stamp;
    s->label_a[i] = d;
    s->u_a[i] = u;
    return heap_push(&s->h, d + distance_max(0.0, s->diag_a[i] - u), i, OUT,
                     1, 0);
}

/* Assigns the unassigned bidder i0 along a shortest augmenting path. */
static int forward_search(matcher *s, size_t i0)
{
    s->stamp++;
    s->h.n = 0;
    size_t nlist = 0, end_obj = NONE, end_out = NONE;
    double v1, v2, delta = 0.0;
    size_t j2, j1 = ng_distance_tree_best_two(&s->tb, s->a[2 * i0],
                                              s->a[2 * i0 + 1], s->p, &v1,
                                              &j2, &v2);
    double u0 = j1 == NONE ? s->diag_a[i0] : distance_min(v1, s->diag_a[i0]);
    if (!label_bidder(s, i0, 0.0, u0) ||
        !push_two_objects(s, i0, 0.0, u0, j1, v1, j2, v2))
        return 0;
    while (s->h.n > 0) {
        entry e = heap_pop(&s->h);
        size_t i = e.who, j = e.cand;
        if (j == OUT) {
            delta = e.key;
            end_out = i;
            break;
        }
        double u = s->u_a[i];
        if (s->seen_b[j] == s->stamp) { /* taken by another path */
            if (e.last && !push_objects(s, i, s->label_a[i], u)) return 0;
            continue;
        }
        s->seen_b[j] = s->stamp;
        s->label_b[j] = e.key;
        s->pred[j] = i;
        s->list[nlist++] = j;
        ng_distance_tree_set(&s->tb, j, INFINITY);
        if (s->holder[j] == NONE) {
            delta = e.key;
            end_obj = j;
            break;
        }
        size_t i2 = s->holder[j];
        double u2 = held_value(s, i2);
        if ((e.last && !push_objects(s, i, s->label_a[i], u)) ||
            !label_bidder(s, i2, e.key, u2) ||
            !push_objects(s, i2, e.key, u2))
            return 0;
    }
    for (size_t t = 0; t < nlist; t++) {
        size_t j = s->list[t];
        if (s->label_b[j] < delta) s->v[j] -= delta - s->label_b[j];
    }
    size_t j = end_obj;
    if (end_out != NONE) {
        j = s->held[end_out];
        s->held[end_out] = OUT;
        if (end_out != i0) s->holder[j] = NONE;
    }
    while (j != NONE && j != OUT) { /* flip the path back to i0 */
        size_t i = s->pred[j], prev = s->held[i];
        s->held[i] = j;
        s->holder[j] = i;
        j = i == i0 ? NONE : prev;
    }
    for (size_t t = 0; t < nlist; t++) weigh_object(s, s->list[t]);
    return 1;
}

/* Heap entries for the two unlabelled bidders of least reduced cost
 * towards object j (label d): the second stands for all the others. */
static int push_bidders(matcher *s, size_t j, double d)
{
    double v1, v2;
    size_t i2, i1 = ng_distance_tree_best_two(&s->ta, s->b[2 * j],
                                              s->b[2 * j + 1], s->p, &v1,
                                              &i2, &v2);
    if (i1 == NONE || !(v1 < INFINITY)) return 1;
    int one = i2 == NONE || !(v2 < INFINITY);
    return heap_push(&s->h, d + distance_max(0.0, v1 - s->v[j]), j, i1,
                     s->held[i1] == OUT, one) &&
           (one || heap_push(&s->h, d + distance_max(0.0, v2 - s->v[j]), j,
                             i2, s->held[i2] == OUT, 1));
}

/* Object j, labelled d, joins the search: giving itself up (V_j raised to
 * diag_b[j]) enters the heap (its bidders are the caller's). */
static int label_object(matcher *s, size_t j, double d)
{
    s->seen_b[j] = s->stamp;
    s->label_b[j] = d;
    return heap_push(&s->h, d + (s->diag_b[j] - s->v[j]), j, NONE, 1, 0);
}

/* Object j0, unheld with V < diag_b, gets a holder along a shortest path
 * or raises V to its diagonal cost. */
static int reverse_search(matcher *s, size_t j0)
{
    s->stamp++;
    s->h.n = 0;
    size_t nlist = 0, end_drop = NONE, end_out = NONE;
    double delta = 0.0;
    if (!label_object(s, j0, 0.0) || !push_bidders(s, j0, 0.0)) return 0;
    while (s->h.n > 0) {
        entry e = heap_pop(&s->h);
        size_t j = e.who, i = e.cand;
        if (i == NONE) {
            delta = e.key;
            end_drop = j;
            break;
        }
        if (s->seen_a[i] == s->stamp) { /* taken by another path */
            if (e.last && !push_bidders(s, j, s->label_b[j])) return 0;
            continue;
        }
        s->seen_a[i] = s->stamp;
        s->label_a[i] = e.key;
        s->pred[i] = j;
        s->list[nlist++] = i;
        ng_distance_tree_set(&s->ta, i, INFINITY);
        if (s->held[i] == OUT) {
            delta = e.key;
            end_out = i;
            break;
        }
        size_t j2 = s->held[i];
        if ((e.last && !push_bidders(s, j, s->label_b[j])) ||
            !label_object(s, j2, e.key) || !push_bidders(s, j2, e.key))
            return 0;
    }
    /* V of the labelled objects: j0 and those the labelled bidders hold */
    s->v[j0] = distance_min(s->diag_b[j0], s->v[j0] + delta);
    for (size_t t = 0; t < nlist; t++) {
        size_t j = s->held[s->list[t]];
        if (j != OUT && s->label_b[j] < delta)
            s->v[j] = distance_min(s->diag_b[j],
                                   s->v[j] + (delta - s->label_b[j]));
    }
    size_t i = end_out;
    if (end_drop != NONE) {
        s->v[end_drop] = s->diag_b[end_drop];
        i = end_drop == j0 ? NONE : s->holder[end_drop];
        if (i != NONE) s->holder[end_drop] = NONE;
    }
    while (i != NONE) { /* flip the path back to j0 */
        size_t j = s->pred[i], prev = s->holder[j];
        s->holder[j] = i;
        s->held[i] = j;
        i = j == j0 ? NONE : prev;
    }
    for (size_t t = 0; t < nlist; t++) weigh_bidder(s, s->list[t]);
    return 1;
}

/* ---- the certificate ---- */

double ng_distance_relative_bound(double p, double sum, double sum_err,
                                  double lower, double extra,
                                  double extra_err)
{
    double u = DBL_EPSILON / 2;
    double total = sum + extra;
    double err = sum_err + extra_err + 2 * u * total;
    if (total == 0.0 && err == 0.0) return 0.0;
    double lo = lower + extra - extra_err; /* ≤ the optimum */
    double hi = total + err; /* ≥ the cost of the matching found */
    if (!(lo > 0.0)) return INFINITY;
    double w = p == 1.0 ? total : pow(total, 1.0 / p); /* what is reported */
    double up = w * (1 + 2 * u) / (p == 1.0 ? lo : pow(lo, 1.0 / p)) - 1;
    double down = 1 - w * (1 - 2 * u) / (p == 1.0 ? hi : pow(hi, 1.0 / p));
    return fmax(0.0, fmax(up, down)) + 4 * u;
}

/* Neumaier's compensated sum, with the sum of magnitudes for its error
 * bound (Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed.,
 * SIAM 2002, §4.3: |error| ≤ 2u|sum| + O(n u²) Σ|x|). */
typedef struct csum {
    double s, c, mag;
    size_t n;
} csum;

static void csum_add(csum *a, double x)
{
    double t = a->s + x;
    if (fabs(a->s) >= fabs(x))
        a->c += (a->s - t) + x;
    else
        a->c += (x - t) + a->s;
    a->s = t;
    a->mag += fabs(x);
    a->n++;
}

static double csum_value(const csum *a) { return a->s + a->c; }

static double csum_error(const csum *a)
{
    double u = DBL_EPSILON / 2;
    return 3 * u * fabs(csum_value(a)) +
           4 * (double)(a->n + 1) * u * u * a->mag;
}

/* Total cost of the matching found (*sum) with a bound on its rounding
 * error (*sum_err), and a lower bound of the optimum (*lower) from the
 * dual shares V (all weights of tb set to −V, none labelled).
 *   Rounding allowance, u = 2^-53: every cost c^p is computed with a
 * relative error ≤ κu (distance_pow_kappa); a value
 * c − V_j then with an absolute error ≤ (κ + 2)u(c + |V_j|). If j* is the
 * exact least choice of bidder i, c(i, j*) = U_i + V_j*, so the computed
 * least value is at most (κ + 2)u(|U_i| + 2 max|V|) above the exact one.
 * V_j ≤ diag(b_j) holds against the computed diagonal cost, which may
 * exceed the exact one by κu diag(b_j): lowering such V_j to it costs the
 * dual at most κu Σ|V|. To first order; the factor 2 on the sums below
 * covers the rest. */
static void certify(const matcher *s, double *sum, double *sum_err,
                    double *lower)
{
    double u = DBL_EPSILON / 2, kappa = distance_pow_kappa(s->p);
    csum primal = {0}, dual = {0};
    double vmax = 0.0, vsum = 0.0, slack = 0.0;
    for (size_t j = 0; j < s->nb; j++) {
        if (s->holder[j] == NONE) csum_add(&primal, s->diag_b[j]);
        csum_add(&dual, s->v[j]);
        vmax = distance_max(vmax, fabs(s->v[j]));
        vsum += fabs(s->v[j]);
    }
    for (size_t i = 0; i < s->na; i++) {
        size_t j = s->held[i];
        csum_add(&primal, j == OUT ? s->diag_a[i] : pair_cost(s, i, j));
        double least = least_value(s, i);
        csum_add(&dual, least);
        slack += fabs(least) + 2 * vmax;
    }
    double total = csum_value(&primal);
    *sum = total;
    *sum_err = 2 * (kappa * u * total + csum_error(&primal));
    *lower = csum_value(&dual) - 2 * ((kappa + 2) * u * slack +
                                      kappa * u * vsum + csum_error(&dual));
}

static void matcher_free(matcher *s)
{
    ng_distance_tree_free(&s->tb);
    ng_distance_tree_free(&s->ta);
    ng_free(s->diag_a);
    ng_free(s->diag_b);
    ng_free(s->v);
    ng_free(s->holder);
    ng_free(s->held);
    ng_free(s->label_a);
    ng_free(s->label_b);
    ng_free(s->u_a);
    ng_free(s->seen_a);
    ng_free(s->seen_b);
    ng_free(s->pred);
    ng_free(s->list);
    ng_free(s->h.e);
    *s = (matcher){0};
}

int ng_distance_wasserstein_paths(const double *a, size_t na, const double *b,
                                  size_t nb, double p, double *sum,
                                  double *sum_err, double *lower,
                                  ng_error *err)
{
    matcher s = {.a = a, .b = b, .na = na, .nb = nb, .p = p};
    size_t nmax = na > nb ? na : nb;
    int status = NG_OK;
    s.diag_a = ng_malloc(na, sizeof *s.diag_a);
    s.diag_b = ng_malloc(nb, sizeof *s.diag_b);
    s.v = ng_malloc(nb, sizeof *s.v);
    s.holder = ng_malloc(nb, sizeof *s.holder);
    s.held = ng_malloc(na, sizeof *s.held);
    s.label_a = ng_malloc(na, sizeof *s.label_a);
    s.label_b = ng_malloc(nb, sizeof *s.label_b);
    s.u_a = ng_malloc(na, sizeof *s.u_a);
    s.seen_a = ng_calloc(na, sizeof *s.seen_a);
    s.seen_b = ng_calloc(nb, sizeof *s.seen_b);
    s.pred = ng_malloc(nmax, sizeof *s.pred);
    s.list = ng_malloc(nmax, sizeof *s.list);
    if (s.diag_a == NULL || s.diag_b == NULL || s.v == NULL ||
        s.holder == NULL || s.held == NULL || s.label_a == NULL ||
        s.label_b == NULL || s.u_a == NULL || s.seen_a == NULL ||
        s.seen_b == NULL || s.pred == NULL || s.list == NULL)
        goto nomem;
    status = ng_distance_tree_build(&s.tb, b, nb, err);
    if (status == NG_OK) status = ng_distance_tree_build(&s.ta, a, na, err);
    if (status != NG_OK) goto cleanup;
    for (size_t i = 0; i < na; i++) {
        s.diag_a[i] = distance_pow(distance_diag(a[2 * i], a[2 * i + 1]), p);
        s.held[i] = NONE;
    }
    for (size_t j = 0; j < nb; j++) {
        s.diag_b[j] = distance_pow(distance_diag(b[2 * j], b[2 * j + 1]), p);
        s.holder[j] = NONE;
        /* column reduction: V_j = the least cost of b_j (all weights of ta
         * are still 0) */
        double v1, v2;
        ng_distance_tree_best2(&s.ta, b[2 * j], b[2 * j + 1], p, &v1, &v2);
        s.v[j] = distance_min(s.diag_b[j], v1);
        weigh_object(&s, j);
    }
    for (size_t i = 0; i < na; i++)
        if (!forward_search(&s, i)) goto nomem;
    for (size_t i = 0; i < na; i++) weigh_bidder(&s, i);
    for (size_t j = 0; j < nb; j++)
        if (s.holder[j] == NONE && s.v[j] < s.diag_b[j] &&
            !reverse_search(&s, j))
            goto nomem;
    for (size_t j = 0; j < nb; j++) weigh_object(&s, j);
    certify(&s, sum, sum_err, lower);
    goto cleanup;
nomem:
    status = ng_error_set(err, NG_ERR_NOMEM,
                          "out of memory for the Wasserstein distance of "
                          "%zu + %zu points",
                          na, nb);
cleanup:
    matcher_free(&s);
    return status;
}
