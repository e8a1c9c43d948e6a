/* distance_tree.c — the weighted 2-D k-d tree of the diagram distances
 * (declared in distance_internal.h).
 *
 * The tree is implicit: the points are permuted so that node k (heap
 * numbering, root 1, children 2k and 2k+1) owns the positions [lo, hi) and
 * splits them at mid = lo + (hi − lo)/2 by the median of x (even depth) or
 * y (odd depth); a node with at most LEAF positions is a leaf. Each node
 * stores the bounding box of its points, the least weight among them and
 * the least weight among its preferred points (+inf when it has none).
 * Invariant: minw[k] = min of w and minp[k] = min of w over the preferred
 * positions of node k, after every ng_distance_tree_set / _mark / _set_all.
 * Pruning is conservative under rounding: the distance from q to a box is
 * computed with the same subtractions as the point distances, and
 * floating-point subtraction is monotone, so a box is never pruned when one
 * of its points passes the exact test.
 */
#include "distance_internal.h"

#include "alloc.h"

#include <math.h>

#define LEAF 8

static double coord(const double *pts, size_t i, int axis)
{
    return pts[2 * i + (size_t)axis];
}

/* Rearranges idx[lo..hi) so that idx[k] holds the point of rank k by the
 * coordinate axis (ties by index), smaller ranks before, larger after. */
static void select_rank(size_t *idx, size_t lo, size_t hi, size_t k,
                        const double *pts, int axis)
{
    while (hi - lo > 1) {
        size_t m = lo + (hi - lo) / 2;
        size_t piv = idx[m];
        double pv = coord(pts, piv, axis);
        /* three-way partition around (pv, piv) */
        size_t i = lo, lt = lo, gt = hi;
        while (i < gt) {
            size_t c = idx[i];
            double cv = coord(pts, c, axis);
            int less = cv < pv || (cv == pv && c < piv);
            int more = cv > pv || (cv == pv && c > piv);
            if (less) {
                idx[i] = idx[lt];
                idx[lt] = c;
                lt++;
                i++;
            } else if (more) {
                gt--;
                idx[i] = idx[gt];
                idx[gt] = c;
            } else {
                i++;
            }
        }
        if (k < lt)
            hi = lt;
        else if (k >= gt)
            lo = gt;
        else
            return;
    }
}

static size_t max_node(size_t k, size_t lo, size_t hi)
{
    if (hi - lo <= LEAF) return k;
    size_t mid = lo + (hi - lo) / 2;
    size_t l = max_node(2 * k, lo, mid), r = max_node(2 * k + 1, mid, hi);
    return l > r ? l : r;
}

static void build(distance_tree *t, size_t *idx, const double *pts, size_t k,
                  size_t lo, size_t hi, int depth)
{
    if (hi - lo > LEAF) {
        size_t mid = lo + (hi - lo) / 2;
        select_rank(idx, lo, hi, mid, pts, depth & 1);
        build(t, idx, pts, 2 * k, lo, mid, depth + 1);
        build(t, idx, pts, 2 * k + 1, mid, hi, depth + 1);
        double *b = t->box + 4 * k, *l = t->box + 8 * k, *r = l + 4;
        b[0] = fmin(l[0], r[0]);
        b[1] = fmax(l[1], r[1]);
        b[2] = fmin(l[2], r[2]);
        b[3] = fmax(l[3], r[3]);
        return;
    }
    double *b = t->box + 4 * k;
    b[0] = b[2] = INFINITY;
    b[1] = b[3] = -INFINITY;
    for (size_t i = lo; i < hi; i++) {
        double x = pts[2 * idx[i]], y = pts[2 * idx[i] + 1];
        b[0] = fmin(b[0], x);
        b[1] = fmax(b[1], x);
        b[2] = fmin(b[2], y);
        b[3] = fmax(b[3], y);
    }
}

/* minw and minp of the leaf k over the positions [lo, hi). */
static void leaf_minima(distance_tree *t, size_t k, size_t lo, size_t hi)
{
    double m = INFINITY, mp = INFINITY;
    for (size_t i = lo; i < hi; i++) {
        m = fmin(m, t->w[i]);
        if (t->pref[i]) mp = fmin(mp, t->w[i]);
    }
    t->minw[k] = m;
    t->minp[k] = mp;
}

static void join_minima(distance_tree *t, size_t k)
{
    t->minw[k] = fmin(t->minw[2 * k], t->minw[2 * k + 1]);
    t->minp[k] = fmin(t->minp[2 * k], t->minp[2 * k + 1]);
}

static void refresh(distance_tree *t, size_t k, size_t lo, size_t hi)
{
    if (hi - lo > LEAF) {
        size_t mid = lo + (hi - lo) / 2;
        refresh(t, 2 * k, lo, mid);
        refresh(t, 2 * k + 1, mid, hi);
        join_minima(t, k);
        return;
    }
    leaf_minima(t, k, lo, hi);
}

int ng_distance_tree_build(distance_tree *t, const double *pts, size_t n,
                           ng_error *err)
{
    *t = (distance_tree){0};
    t->n = n;
    t->nodes = n == 0 ? 2 : max_node(1, 0, n) + 1;
    t->x = ng_malloc(n, sizeof *t->x);
    t->y = ng_malloc(n, sizeof *t->y);
    t->w = ng_calloc(n, sizeof *t->w);
    t->pref = ng_calloc(n, 1);
    t->id = ng_malloc(n, sizeof *t->id);
    t->pos = ng_malloc(n, sizeof *t->pos);
    t->box = ng_malloc(t->nodes, 4 * sizeof *t->box);
    t->minw = ng_calloc(t->nodes, sizeof *t->minw);
    t->minp = ng_calloc(t->nodes, sizeof *t->minp);
    if (t->x == NULL || t->y == NULL || t->w == NULL || t->pref == NULL ||
        t->id == NULL || t->pos == NULL || t->box == NULL ||
        t->minw == NULL || t->minp == NULL) {
        ng_distance_tree_free(t);
        return ng_error_set(err, NG_ERR_NOMEM,
                            "out of memory for a k-d tree of %zu diagram "
                            "points",
                            n);
    }
    for (size_t i = 0; i < n; i++) t->id[i] = i;
    if (n > 0) build(t, t->id, pts, 1, 0, n, 0);
    for (size_t i = 0; i < n; i++) {
        t->x[i] = pts[2 * t->id[i]];
        t->y[i] = pts[2 * t->id[i] + 1];
        t->pos[t->id[i]] = i;
    }
    if (n > 0) refresh(t, 1, 0, n);
    return NG_OK;
}

void ng_distance_tree_free(distance_tree *t)
{
    if (t == NULL) return;
    ng_free(t->x);
    ng_free(t->y);
    ng_free(t->w);
    ng_free(t->pref);
    ng_free(t->id);
    ng_free(t->pos);
    ng_free(t->box);
    ng_free(t->minw);
    ng_free(t->minp);
    *t = (distance_tree){0};
}

void ng_distance_tree_set(distance_tree *t, size_t i, double w)
{
    ng_distance_tree_mark(t, i, w, t->pref[t->pos[i]]);
}

void ng_distance_tree_mark(distance_tree *t, size_t i, double w, int preferred)
{
    size_t p = t->pos[i];
    t->w[p] = w;
    t->pref[p] = preferred != 0;
    size_t path[128];
    size_t depth = 0, k = 1, lo = 0, hi = t->n;
    while (hi - lo > LEAF) {
        path[depth++] = k;
        size_t mid = lo + (hi - lo) / 2;
        if (p < mid) {
            k = 2 * k;
            hi = mid;
        } else {
            k = 2 * k + 1;
            lo = mid;
        }
    }
    leaf_minima(t, k, lo, hi);
    while (depth > 0) join_minima(t, path[--depth]);
}

double ng_distance_tree_get(const distance_tree *t, size_t i)
{
    return t->w[t->pos[i]];
}

void ng_distance_tree_set_all(distance_tree *t, const double *w)
{
    for (size_t p = 0; p < t->n; p++) t->w[p] = w[t->id[p]];
    if (t->n > 0) refresh(t, 1, 0, t->n);
}

/* L∞ distance from q to the box of node k (0 inside). */
static double box_dist(const double *b, double qx, double qy)
{
    double dx = 0, dy = 0;
    if (qx < b[0]) dx = b[0] - qx;
    if (qx > b[1]) dx = qx - b[1];
    if (qy < b[2]) dy = b[2] - qy;
    if (qy > b[3]) dy = qy - b[3];
    return dx > dy ? dx : dy;
}

static size_t find(const distance_tree *t, size_t k, size_t lo, size_t hi,
                   double qx, double qy, double r, double wmax)
{
    if (t->minw[k] > wmax || box_dist(t->box + 4 * k, qx, qy) > r)
        return DISTANCE_NONE;
    if (hi - lo <= LEAF) {
        for (size_t i = lo; i < hi; i++)
            if (t->w[i] <= wmax &&
                distance_linf(qx, qy, t->x[i], t->y[i]) <= r)
                return t->id[i];
        return DISTANCE_NONE;
    }
    size_t mid = lo + (hi - lo) / 2;
    size_t f = find(t, 2 * k, lo, mid, qx, qy, r, wmax);
    if (f != DISTANCE_NONE) return f;
    return find(t, 2 * k + 1, mid, hi, qx, qy, r, wmax);
}

size_t ng_distance_tree_find(const distance_tree *t, double qx, double qy,
                             double r, double wmax)
{
    if (t->n == 0) return DISTANCE_NONE;
    return find(t, 1, 0, t->n, qx, qy, r, wmax);
}

typedef struct best2 {
    size_t best;
    int preferred; /* best is a preferred point */
    double v1, v2;
} best2;

static void best2_walk(const distance_tree *t, size_t k, size_t lo,
                       size_t hi, double qx, double qy, double p, best2 *s)
{
    double reach = distance_pow(box_dist(t->box + 4 * k, qx, qy), p);
    double tie = reach + t->minp[k];
    /* nothing below can lower v2, nor tie v1 with a preferred point */
    if (reach + t->minw[k] >= s->v2 &&
        (s->preferred || !(tie <= s->v1 && tie < INFINITY)))
        return;
    if (hi - lo <= LEAF) {
        for (size_t i = lo; i < hi; i++) {
            double v = distance_pow(distance_linf(qx, qy, t->x[i], t->y[i]),
                                    p) +
                       t->w[i];
            if (v < s->v1 || (v == s->v1 && t->pref[i] && !s->preferred)) {
                s->v2 = s->v1;
                s->v1 = v;
                s->best = t->id[i];
                s->preferred = t->pref[i];
            } else if (v < s->v2) {
                s->v2 = v;
            }
        }
        return;
    }
    size_t mid = lo + (hi - lo) / 2;
    /* the nearer child first: tighter bounds sooner */
    size_t c1 = 2 * k, c2 = 2 * k + 1;
    size_t l1 = lo, h1 = mid, l2 = mid, h2 = hi;
    double d1 = box_dist(t->box + 4 * c1, qx, qy) + t->minw[c1];
    double d2 = box_dist(t->box + 4 * c2, qx, qy) + t->minw[c2];
    if (d2 < d1) {
        c1 = 2 * k + 1;
        c2 = 2 * k;
        l1 = mid;
        h1 = hi;
        l2 = lo;
        h2 = mid;
    }
    best2_walk(t, c1, l1, h1, qx, qy, p, s);
    best2_walk(t, c2, l2, h2, qx, qy, p, s);
}

size_t ng_distance_tree_best2(const distance_tree *t, double qx, double qy,
                              double p, double *v1, double *v2)
{
    best2 s = {DISTANCE_NONE, 0, INFINITY, INFINITY};
    if (t->n > 0) best2_walk(t, 1, 0, t->n, qx, qy, p, &s);
    *v1 = s.v1;
    *v2 = s.v2;
    return s.best;
}
