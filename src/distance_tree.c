/* distance_tree.c — the weighted 2-D k-d tree of the diagram distances
 * (declared in distance_internal.h).
 *
 * The tree is implicit: the points are permuted so that node k (heap
 * numbering, root 1, children 2k and 2k+1) owns the positions [lo, hi) and
 * splits them at mid = lo + (hi − lo)/2 by the median of x (even depth) or
 * y (odd depth); a node with at most LEAF positions is a leaf. Each node
 * stores the bounding box of its points, the least weight among them and
 * the least weight among its preferred points (+inf when it has none).
 * Invariant: node[k].minw = min of w and node[k].minp = min of w over the
 * preferred positions of node k, after every ng_distance_tree_set / _mark /
 * _set_all.
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
        distance_node *b = &t->node[k];
        const distance_node *l = &t->node[2 * k], *r = l + 1;
        b->xlo = fmin(l->xlo, r->xlo);
        b->xhi = fmax(l->xhi, r->xhi);
        b->ylo = fmin(l->ylo, r->ylo);
        b->yhi = fmax(l->yhi, r->yhi);
        return;
    }
    distance_node *b = &t->node[k];
    b->xlo = b->ylo = INFINITY;
    b->xhi = b->yhi = -INFINITY;
    for (size_t i = lo; i < hi; i++) {
        double x = pts[2 * idx[i]], y = pts[2 * idx[i] + 1];
        b->xlo = fmin(b->xlo, x);
        b->xhi = fmax(b->xhi, x);
        b->ylo = fmin(b->ylo, y);
        b->yhi = fmax(b->yhi, y);
    }
}

/* minw and minp of the leaf k over the positions [lo, hi). */
static void leaf_minima(distance_tree *t, size_t k, size_t lo, size_t hi)
{
    double m = INFINITY, mp = INFINITY;
    for (size_t i = lo; i < hi; i++) {
        m = distance_min(m, t->w[i]);
        if (t->pref[i]) mp = distance_min(mp, t->w[i]);
    }
    t->node[k].minw = m;
    t->node[k].minp = mp;
}

static void join_minima(distance_tree *t, size_t k)
{
    const distance_node *l = &t->node[2 * k], *r = l + 1;
    t->node[k].minw = distance_min(l->minw, r->minw);
    t->node[k].minp = distance_min(l->minp, r->minp);
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
    t->node = ng_calloc(t->nodes, sizeof *t->node);
    if (t->x == NULL || t->y == NULL || t->w == NULL || t->pref == NULL ||
        t->id == NULL || t->pos == NULL || t->node == NULL) {
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
    ng_free(t->node);
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

/* L∞ distance from q to the box of node b (0 inside). */
static double box_dist(const distance_node *b, double qx, double qy)
{
    double dx = 0, dy = 0;
    if (qx < b->xlo) dx = b->xlo - qx;
    if (qx > b->xhi) dx = qx - b->xhi;
    if (qy < b->ylo) dy = b->ylo - qy;
    if (qy > b->yhi) dy = qy - b->yhi;
    return dx > dy ? dx : dy;
}

static size_t find(const distance_tree *t, size_t k, size_t lo, size_t hi,
                   double qx, double qy, double r, double wmax)
{
    if (t->node[k].minw > wmax || box_dist(&t->node[k], qx, qy) > r)
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
    size_t best, second;
    int preferred; /* best is a preferred point */
    double v1, v2;
} best2;

/* Nothing in node k, at distance^p reach from q, can lower v2 nor tie v1
 * with a preferred point. */
static int best2_prunes(const distance_tree *t, size_t k, double reach,
                        const best2 *s)
{
    double tie = reach + t->node[k].minp;
    return reach + t->node[k].minw >= s->v2 &&
           (s->preferred || !(tie <= s->v1 && tie < INFINITY));
}

static void best2_leaf(const distance_tree *t, size_t lo, size_t hi,
                       double qx, double qy, double p, best2 *s)
{
    for (size_t i = lo; i < hi; i++) {
        double v =
            distance_pow(distance_linf(qx, qy, t->x[i], t->y[i]), p) + t->w[i];
        if (v < s->v1 || (v == s->v1 && t->pref[i] && !s->preferred)) {
            s->v2 = s->v1;
            s->second = s->best;
            s->v1 = v;
            s->best = t->id[i];
            s->preferred = t->pref[i];
        } else if (v < s->v2) {
            s->v2 = v;
            s->second = t->id[i];
        }
    }
}

/* Depth first, the child of lower bound first (tighter bounds sooner),
 * with an explicit stack (at most one frame per level and one more; a tree
 * has fewer than 64 levels); a node's bound is computed once, when its
 * parent is expanded, and checked again when it is popped. */
static void best2_walk(const distance_tree *t, double qx, double qy,
                       double p, best2 *s)
{
    struct frame {
        size_t k, lo, hi;
        double reach;
    } stack[2 * 64];
    size_t top = 0;
    stack[top++] = (struct frame){1, 0, t->n,
                                  distance_pow(box_dist(&t->node[1], qx, qy),
                                               p)};
    while (top > 0) {
        struct frame f = stack[--top];
        if (best2_prunes(t, f.k, f.reach, s)) continue;
        if (f.hi - f.lo <= LEAF) {
            best2_leaf(t, f.lo, f.hi, qx, qy, p, s);
            continue;
        }
        size_t mid = f.lo + (f.hi - f.lo) / 2, c1 = 2 * f.k, c2 = c1 + 1;
        double r1 = distance_pow(box_dist(&t->node[c1], qx, qy), p);
        double r2 = distance_pow(box_dist(&t->node[c2], qx, qy), p);
        struct frame near = {c1, f.lo, mid, r1}, far = {c2, mid, f.hi, r2};
        if (r2 + t->node[c2].minw < r1 + t->node[c1].minw) {
            near = (struct frame){c2, mid, f.hi, r2};
            far = (struct frame){c1, f.lo, mid, r1};
        }
        if (!best2_prunes(t, far.k, far.reach, s)) stack[top++] = far;
        if (!best2_prunes(t, near.k, near.reach, s)) stack[top++] = near;
    }
}

size_t ng_distance_tree_best_two(const distance_tree *t, double qx,
                                 double qy, double p, double *v1,
                                 size_t *second, double *v2)
{
    best2 s = {DISTANCE_NONE, DISTANCE_NONE, 0, INFINITY, INFINITY};
    if (t->n > 0) best2_walk(t, qx, qy, p, &s);
    *v1 = s.v1;
    *v2 = s.v2;
    *second = s.second;
    return s.best;
}

size_t ng_distance_tree_best2(const distance_tree *t, double qx, double qy,
                              double p, double *v1, double *v2)
{
    size_t second;
    return ng_distance_tree_best_two(t, qx, qy, p, v1, &second, v2);
}
