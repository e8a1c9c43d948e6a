/* kdtree.c — exact k-nearest-neighbour and fixed-radius search over a
 * coordinate cloud (kdtree.h), by a k-d tree or by brute force.
 *
 * Invariants:
 *   - Every point-to-point distance is finish(raw_distance(..)), which
 *     performs the operations of ng_metric_distance in the same order, on
 *     the same coordinate values (the tree copies them unchanged), so the
 *     tree, brute force and ng_metric_distance agree bit for bit.
 *   - box_raw(x, box) ≤ raw_distance(x, p) in floating point for every
 *     point p inside the box: both run the same sequence of monotone
 *     correctly-rounded operations and |fl(p - x)| ≥ fl(lo - x) whenever
 *     p ≥ lo > x (likewise above hi). Pruning by box distance therefore
 *     never loses a point. Comparisons are made on raw values (no square
 *     root) only through raw_bound, which errs on the side of keeping.
 *   - A subtree is skipped only when its box distance is STRICTLY greater
 *     than the current k-th distance (or the radius): a subtree at exactly
 *     that distance may hold a point of equal distance and smaller index,
 *     which the (distance, index) order ranks first. Candidates are ranked
 *     by their final distance, never by the raw value.
 *   - The answer for one query point depends only on the points, never on
 *     the order in which candidates are met or on the thread schedule, so
 *     the output is identical for any thread count.
 *
 * How it works. The tree is built top down: a node holds a contiguous
 * range of points (in tree order) and their tight bounding box; a node with
 * more than leaf_size points is split on the dimension of widest extent at
 * the median of the composite key (coordinate, original index), found by
 * quickselect on the rows themselves, so that the points end up copied in
 * tree order (cache locality) and the tree does not depend on how equal
 * coordinates are arranged. Nodes are numbered in preorder, the left child
 * of node v being v + 1; the right child's number follows from the size of
 * the left subtree (count_nodes), so subtrees can be built by independent
 * OpenMP tasks and the result is the same for any thread count.
 * A k-NN query descends depth first with an explicit stack, nearer child
 * first, keeping the k best (distance, index) pairs sorted by insertion; a
 * radius query collects every kept point of every box within the radius
 * and sorts them by index. Queries run in tree order (neighbouring queries
 * touch the same leaves) and write their rows at the original index.
 */
#include "nervegap/kdtree.h"

#include "alloc.h"
#include "kdtree_internal.h"

#include <math.h>
#include <omp.h>
#include <stdlib.h>
#include <string.h>

#define DEFAULT_LEAF_SIZE 16
/* Subtrees with fewer points are built inside the task of their parent. */
#define TASK_MIN_POINTS 32768
/* Queries handed to a thread at a time. */
#define QUERY_CHUNK 64
/* Bytes of candidate coordinates one brute-force tile keeps in cache. */
#define BRUTE_TILE_BYTES 32768
/* Depth-first stack: the tree depth is below 64 for any n ≤ NG_INDEX_MAX. */
#define STACK_MAX 128

static size_t leaf_size_setting = DEFAULT_LEAF_SIZE;

typedef struct kd_node {
    ng_index begin, end; /* the points [begin, end) in tree order */
    size_t right;        /* right child (left is this + 1); 0 for a leaf */
} kd_node;

struct ng_kdtree {
    size_t n, dim, leaf_size, n_nodes;
    ng_metric metric;
    double *coords;  /* n × dim, in tree order */
    ng_index *index; /* original index of each tree position */
    kd_node *nodes;  /* preorder; node 0 is the root */
    double *box;     /* per node: dim lower bounds, then dim upper bounds */
};

/* The points a query loop walks over: a tree's copy in tree order, or the
 * caller's points (index NULL: position = original index). */
typedef struct search {
    ng_metric metric;
    size_t n, dim;
    const double *coords;
    const ng_index *index;
    const ng_kdtree *tree; /* NULL: brute force */
} search;

/* ---- distances ---- */

/* The kernels below are instantiated once per metric (the metric argument
 * is a constant at every call site of the *_in functions), so the switches
 * vanish from the inner loops. */
#if defined(__GNUC__) || defined(__clang__)
#define ALWAYS_INLINE inline __attribute__((always_inline))
#else
#define ALWAYS_INLINE inline
#endif

/* The distance before its last step — the sum of squares under euclidean,
 * the distance itself otherwise: the operations of ng_metric_distance, in
 * the same order. */
static ALWAYS_INLINE double raw_distance(ng_metric metric,
                                         const double *restrict a,
                                         const double *restrict b, size_t dim)
{
    double acc = 0.0;
    switch (metric) {
    case NG_METRIC_CHEBYSHEV:
        for (size_t k = 0; k < dim; k++) {
            double diff = fabs(a[k] - b[k]);
            if (diff > acc) acc = diff;
        }
        return acc;
    case NG_METRIC_MANHATTAN:
        for (size_t k = 0; k < dim; k++) acc += fabs(a[k] - b[k]);
        return acc;
    case NG_METRIC_EUCLIDEAN:
    case NG_METRIC_GIVEN:
        break;
    }
    for (size_t k = 0; k < dim; k++) {
        double diff = a[k] - b[k];
        acc += diff * diff;
    }
    return acc;
}

/* The last step: d = finish(raw). */
static ALWAYS_INLINE double finish(ng_metric metric, double raw)
{
    return metric == NG_METRIC_EUCLIDEAN ? sqrt(raw) : raw;
}

/* d(a, b), bit-identical to ng_metric_distance(metric, a, b, dim). */
static ALWAYS_INLINE double point_distance(ng_metric metric,
                                           const double *restrict a,
                                           const double *restrict b,
                                           size_t dim)
{
    return finish(metric, raw_distance(metric, a, b, dim));
}

/* A lower bound of raw_distance(x, p) over p in the box [lo, hi], exact in
 * floating point (see the invariants above). */
static ALWAYS_INLINE double box_raw(ng_metric metric,
                                    const double *restrict x,
                                    const double *restrict lo,
                                    const double *restrict hi, size_t dim)
{
    double acc = 0.0;
    for (size_t k = 0; k < dim; k++) {
        /* at most one of below, above is positive; adding 0 is exact, so
         * gap is lo - x, x - hi or 0, without a branch */
        double below = lo[k] - x[k], above = x[k] - hi[k];
        below = below > 0.0 ? below : 0.0;
        above = above > 0.0 ? above : 0.0;
        double gap = below + above;
        switch (metric) {
        case NG_METRIC_CHEBYSHEV:
            if (gap > acc) acc = gap;
            break;
        case NG_METRIC_MANHATTAN:
            acc += gap;
            break;
        case NG_METRIC_EUCLIDEAN:
        case NG_METRIC_GIVEN:
            acc += gap * gap;
            break;
        }
    }
    return acc;
}

/* A raw value B(t) such that raw > B(t) implies finish(raw) > t: things
 * farther than B(t) in raw terms may be dropped without computing the
 * square root, and a box farther than B(t) is STRICTLY farther than t.
 * Under euclidean, sqrt(s) ≤ t (correctly rounded) means √s < t(1 + 2^-53),
 * so s < t²(1 + 2^-51) < fl(t·t)(1 + 2^-50) ≤ fl(fl(t·t)(1 + 2^-49)) as
 * long as t·t is a normal number; below t = 2^-500 the fixed bound 2^-998
 * (whose square root 2^-499 exceeds t) is used instead. */
static ALWAYS_INLINE double raw_bound(ng_metric metric, double t)
{
    if (metric != NG_METRIC_EUCLIDEAN) return t;
    if (t < 0x1p-500) return 0x1p-998;
    return (t * t) * (1.0 + 0x1p-49);
}

/* ---- argument checks ---- */

static int check_points(const char *what, const double *pts, size_t n,
                        size_t dim, ng_metric metric, ng_error *err)
{
    if (metric != NG_METRIC_EUCLIDEAN && metric != NG_METRIC_CHEBYSHEV &&
        metric != NG_METRIC_MANHATTAN)
        return ng_error_set(err, NG_ERR_USAGE,
                            "%s: metric '%s' is not a coordinate metric "
                            "(expected euclidean, chebyshev or manhattan)",
                            what, ng_metric_name(metric));
    if (dim == 0)
        return ng_error_set(err, NG_ERR_USAGE,
                            "%s: points of dimension 0", what);
    if (n > NG_INDEX_MAX)
        return ng_error_set(err, NG_ERR_USAGE,
                            "%s: %zu points exceed the limit of %lu", what,
                            n, (unsigned long)NG_INDEX_MAX);
    if (pts == NULL && n > 0)
        return ng_error_set(err, NG_ERR_USAGE, "%s: no coordinates given",
                            what);
    return NG_OK;
}

static int check_k(size_t n, size_t k, ng_error *err)
{
    if (n < 2)
        return ng_error_set(err, NG_ERR_USAGE,
                            "k nearest neighbours: %zu point%s given; at "
                            "least 2 are needed", n, n == 1 ? "" : "s");
    if (k == 0 || k >= n)
        return ng_error_set(err, NG_ERR_USAGE,
                            "k nearest neighbours: k = %zu is out of range; "
                            "with %zu points k must be in 1..%zu",
                            k, n, n - 1);
    return NG_OK;
}

static int check_radius(const double *radius, size_t n, ng_error *err)
{
    if (radius == NULL && n > 0)
        return ng_error_set(err, NG_ERR_USAGE,
                            "neighbours within a radius: no radii given");
    for (size_t i = 0; i < n; i++)
        if (!(radius[i] >= 0.0)) /* also refuses NaN */
            return ng_error_set(err, NG_ERR_USAGE,
                                "neighbours within a radius: radius of point "
                                "%zu is %g; it must be ≥ 0 (+inf allowed)",
                                i, radius[i]);
    return NG_OK;
}

static int team_size(int threads)
{
    return threads > 0 ? threads : omp_get_max_threads();
}

/* ---- the automatic choice ---- */

/* The rule, measured with `bench_knn crossover` (uniform clouds in
 * [0,1)^dim, k = 16, one thread, 2 shared cores): below n ≈ 256 both take
 * about a millisecond and brute force has no set-up; above, the two break
 * even at about dim ≈ log2(n) − 1 (n = 1024: tree ahead at dim 8, brute at
 * 10; n = 4096: tree at 10, brute at 12; n = 16384: tree at 12, brute at
 * 16; n = 10^5, dim 16: tree 69 s against about 43 s for brute force on 2
 * threads) — the textbook "a k-d tree pays when n ≫ 2^dim" (common
 * practice). So: brute force when n ≤ 256 or 2^(dim + 1) > n. Data with a
 * low intrinsic dimension would favour the tree beyond this line; uniform
 * noise is the case the rule is tuned for. */
ng_kdtree_method ng_kdtree_choose(size_t n, size_t dim)
{
    if (n <= 256 || dim == 0) return NG_KDTREE_BRUTE;
    if (dim >= 62 || ((size_t)1 << (dim + 1)) > n) return NG_KDTREE_BRUTE;
    return NG_KDTREE_TREE;
}

void ng_kdtree_set_leaf_size(size_t leaf_size)
{
    leaf_size_setting = leaf_size == 0 ? DEFAULT_LEAF_SIZE : leaf_size;
}

/* ---- building ---- */

/* Nodes of a subtree over m points: the split rule of build_node. */
static size_t count_nodes(size_t m, size_t leaf)
{
    if (m <= leaf) return 1;
    return 1 + count_nodes(m / 2, leaf) + count_nodes(m - m / 2, leaf);
}

/* Key order (coordinate on axis, original index) of rows a and b. */
static inline int row_less(const double *c, const ng_index *id, size_t dim,
                           size_t axis, size_t a, size_t b)
{
    double x = c[a * dim + axis], y = c[b * dim + axis];
    return x < y || (x == y && id[a] < id[b]);
}

static inline void row_swap(double *c, ng_index *id, size_t dim, size_t a,
                            size_t b)
{
    for (size_t k = 0; k < dim; k++) {
        double t = c[a * dim + k];
        c[a * dim + k] = c[b * dim + k];
        c[b * dim + k] = t;
    }
    ng_index t = id[a];
    id[a] = id[b];
    id[b] = t;
}

/* Rearranges rows lo..hi (inclusive) so that row kth holds the kth key and
 * no row before it has a larger key, none after it a smaller one.
 * Quickselect with Hoare partition around a median of three; the keys are
 * distinct (index tie-break), so equal coordinates cost nothing extra. */
static void select_rows(double *c, ng_index *id, size_t dim, size_t axis,
                        size_t lo, size_t hi, size_t kth)
{
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (row_less(c, id, dim, axis, mid, lo)) row_swap(c, id, dim, mid, lo);
        if (row_less(c, id, dim, axis, hi, lo)) row_swap(c, id, dim, hi, lo);
        if (row_less(c, id, dim, axis, hi, mid)) row_swap(c, id, dim, hi, mid);
        double pivot = c[mid * dim + axis];
        ng_index pivot_id = id[mid];
        size_t i = lo, j = hi;
        for (;;) {
            while (c[i * dim + axis] < pivot ||
                   (c[i * dim + axis] == pivot && id[i] < pivot_id))
                i++;
            while (c[j * dim + axis] > pivot ||
                   (c[j * dim + axis] == pivot && id[j] > pivot_id))
                j--;
            if (i >= j) break;
            row_swap(c, id, dim, i, j);
            i++;
            j--;
        }
        /* rows lo..j have keys ≤ pivot, rows j+1..hi keys ≥ pivot */
        if (kth <= j) hi = j;
        else lo = j + 1;
    }
}

typedef struct build_ctx {
    double *coords;
    ng_index *index;
    size_t dim, leaf;
    kd_node *nodes;
    double *box;
} build_ctx;

static void build_node(const build_ctx *b, size_t node, size_t begin,
                       size_t end)
{
    size_t dim = b->dim;
    const double *c = b->coords;
    double *lo = b->box + node * 2 * dim, *hi = lo + dim;
    for (size_t k = 0; k < dim; k++) lo[k] = hi[k] = c[begin * dim + k];
    for (size_t i = begin + 1; i < end; i++) {
        for (size_t k = 0; k < dim; k++) {
            double v = c[i * dim + k];
            if (v < lo[k]) lo[k] = v;
            if (v > hi[k]) hi[k] = v;
        }
    }
    kd_node *nd = &b->nodes[node];
    nd->begin = (ng_index)begin;
    nd->end = (ng_index)end;
    nd->right = 0;
    if (end - begin <= b->leaf) return;

    size_t axis = 0;
    double widest = hi[0] - lo[0];
    for (size_t k = 1; k < dim; k++) {
        if (hi[k] - lo[k] > widest) {
            widest = hi[k] - lo[k];
            axis = k;
        }
    }
    size_t mid = begin + (end - begin) / 2;
    select_rows(b->coords, b->index, dim, axis, begin, end - 1, mid);
    size_t left = node + 1;
    size_t right = left + count_nodes(mid - begin, b->leaf);
    nd->right = right;
#pragma omp task if (end - begin > TASK_MIN_POINTS) default(none) \
    firstprivate(b, left, begin, mid)
    build_node(b, left, begin, mid);
    build_node(b, right, mid, end);
}

static int tree_build(const double *pts, size_t n, size_t dim,
                      ng_metric metric, int threads, ng_kdtree **out,
                      ng_error *err)
{
    *out = NULL;
    int status = check_points("k-d tree", pts, n, dim, metric, err);
    if (status != NG_OK) return status;
    if (n == 0)
        return ng_error_set(err, NG_ERR_USAGE, "k-d tree: no points given");

    ng_kdtree *t = NULL;
    if (dim > SIZE_MAX / (2 * sizeof(double))) goto nomem;
    t = ng_calloc(1, sizeof *t);
    if (t == NULL) goto nomem;
    t->n = n;
    t->dim = dim;
    t->metric = metric;
    t->leaf_size = leaf_size_setting;
    t->n_nodes = count_nodes(n, t->leaf_size);
    t->coords = ng_malloc(n, dim * sizeof *t->coords);
    t->index = ng_malloc(n, sizeof *t->index);
    t->nodes = ng_malloc(t->n_nodes, sizeof *t->nodes);
    t->box = ng_malloc(t->n_nodes, 2 * dim * sizeof *t->box);
    if (t->coords == NULL || t->index == NULL || t->nodes == NULL ||
        t->box == NULL)
        goto nomem;
    memcpy(t->coords, pts, n * dim * sizeof *t->coords);
    for (size_t i = 0; i < n; i++) t->index[i] = (ng_index)i;

    build_ctx b = {t->coords, t->index, dim, t->leaf_size, t->nodes, t->box};
    const build_ctx *bp = &b;
#pragma omp parallel num_threads(team_size(threads)) \
    if (n > TASK_MIN_POINTS) default(none) shared(bp, n)
#pragma omp single
    build_node(bp, 0, 0, n);

    *out = t;
    return NG_OK;

nomem:
    ng_kdtree_free(t);
    return ng_error_set(err, NG_ERR_NOMEM,
                        "k-d tree: out of memory for %zu points of "
                        "dimension %zu", n, dim);
}

int ng_kdtree_build(const double *pts, size_t n, size_t dim, ng_metric metric,
                    ng_kdtree **out, ng_error *err)
{
    return tree_build(pts, n, dim, metric, 0, out, err);
}

void ng_kdtree_free(ng_kdtree *tree)
{
    if (tree == NULL) return;
    ng_free(tree->coords);
    ng_free(tree->index);
    ng_free(tree->nodes);
    ng_free(tree->box);
    ng_free(tree);
}

/* ---- k nearest neighbours ---- */

/* Offers (d, j) to the sorted best list bd/bj holding *count ≤ k entries. */
static inline void best_offer(double *restrict bd, ng_index *restrict bj,
                              size_t *count, size_t k, double d, ng_index j)
{
    size_t p = *count;
    if (p == k) {
        if (d > bd[k - 1] || (d == bd[k - 1] && j > bj[k - 1])) return;
        p = k - 1; /* the last entry drops out */
    } else {
        (*count)++;
    }
    while (p > 0 && (bd[p - 1] > d || (bd[p - 1] == d && bj[p - 1] > j))) {
        bd[p] = bd[p - 1];
        bj[p] = bj[p - 1];
        p--;
    }
    bd[p] = d;
    bj[p] = j;
}

typedef struct stack_entry {
    size_t node;
    double bound; /* box distance of the node from the query */
} stack_entry;

static ALWAYS_INLINE void knn_tree_query_in(ng_metric metric,
                                            const ng_kdtree *t, size_t pos,
                                            size_t k, double *restrict bd,
                                            ng_index *restrict bj)
{
    const size_t dim = t->dim;
    const double *x = t->coords + pos * dim;
    const ng_index self = t->index[pos];
    size_t count = 0;
    double bound = INFINITY; /* raw_bound of the k-th distance once known */
    stack_entry stack[STACK_MAX];
    size_t top = 0;
    stack[top++] = (stack_entry){0, 0.0};
    while (top > 0) {
        stack_entry e = stack[--top];
        if (e.bound > bound) continue;
        const kd_node *nd = &t->nodes[e.node];
        if (nd->right == 0) {
            for (size_t p = nd->begin; p < nd->end; p++) {
                double raw = raw_distance(metric, x, t->coords + p * dim, dim);
                if (raw > bound) continue;
                ng_index j = t->index[p];
                if (j == self) continue;
                best_offer(bd, bj, &count, k, finish(metric, raw), j);
                if (count == k) bound = raw_bound(metric, bd[k - 1]);
            }
            continue;
        }
        size_t l = e.node + 1, r = nd->right;
        const double *bl = t->box + l * 2 * dim, *br = t->box + r * 2 * dim;
        double dl = box_raw(metric, x, bl, bl + dim, dim);
        double dr = box_raw(metric, x, br, br + dim, dim);
        if (dl <= dr) {
            if (dr <= bound) stack[top++] = (stack_entry){r, dr};
            if (dl <= bound) stack[top++] = (stack_entry){l, dl};
        } else {
            if (dl <= bound) stack[top++] = (stack_entry){l, dl};
            if (dr <= bound) stack[top++] = (stack_entry){r, dr};
        }
    }
}

static void knn_tree_query(const ng_kdtree *t, size_t pos, size_t k,
                           double *restrict bd, ng_index *restrict bj)
{
    switch (t->metric) {
    case NG_METRIC_CHEBYSHEV:
        knn_tree_query_in(NG_METRIC_CHEBYSHEV, t, pos, k, bd, bj);
        break;
    case NG_METRIC_MANHATTAN:
        knn_tree_query_in(NG_METRIC_MANHATTAN, t, pos, k, bd, bj);
        break;
    case NG_METRIC_EUCLIDEAN:
    case NG_METRIC_GIVEN:
        knn_tree_query_in(NG_METRIC_EUCLIDEAN, t, pos, k, bd, bj);
        break;
    }
}

/* Brute force for the queries q0..q1-1 (at most QUERY_CHUNK), candidates
 * taken in tiles that stay in cache while every query of the block scans
 * them. */
static ALWAYS_INLINE void knn_brute_block_in(ng_metric metric,
                                             const search *s, size_t q0,
                                             size_t q1, size_t k,
                                             double *dist, ng_index *idx)
{
    const size_t n = s->n, dim = s->dim;
    size_t count[QUERY_CHUNK] = {0};
    double bound[QUERY_CHUNK];
    for (size_t q = 0; q < QUERY_CHUNK; q++) bound[q] = INFINITY;
    size_t tile = BRUTE_TILE_BYTES / (dim * sizeof(double));
    if (tile == 0) tile = 1;
    for (size_t j0 = 0; j0 < n; j0 += tile) {
        size_t j1 = j0 + tile < n ? j0 + tile : n;
        for (size_t q = q0; q < q1; q++) {
            const double *x = s->coords + q * dim;
            double *bd = dist + q * k;
            ng_index *bj = idx + q * k;
            size_t c = count[q - q0];
            double b = bound[q - q0];
            for (size_t j = j0; j < j1; j++) {
                double raw = raw_distance(metric, x, s->coords + j * dim, dim);
                if (raw > b || j == q) continue;
                best_offer(bd, bj, &c, k, finish(metric, raw), (ng_index)j);
                if (c == k) b = raw_bound(metric, bd[k - 1]);
            }
            count[q - q0] = c;
            bound[q - q0] = b;
        }
    }
}

/* Brute force for the queries q0..q1-1 (at most QUERY_CHUNK), candidates
 * taken in tiles that stay in cache while every query of the block scans
 * them. */
static void knn_brute_block(const search *s, size_t q0, size_t q1, size_t k,
                            double *dist, ng_index *idx)
{
    switch (s->metric) {
    case NG_METRIC_CHEBYSHEV:
        knn_brute_block_in(NG_METRIC_CHEBYSHEV, s, q0, q1, k, dist, idx);
        break;
    case NG_METRIC_MANHATTAN:
        knn_brute_block_in(NG_METRIC_MANHATTAN, s, q0, q1, k, dist, idx);
        break;
    case NG_METRIC_EUCLIDEAN:
    case NG_METRIC_GIVEN:
        knn_brute_block_in(NG_METRIC_EUCLIDEAN, s, q0, q1, k, dist, idx);
        break;
    }
}

static void knn_run(const search *s, size_t k, int threads, double *dist,
                    ng_index *idx)
{
    const size_t n = s->n;
    const size_t n_blocks = (n + QUERY_CHUNK - 1) / QUERY_CHUNK;
#pragma omp parallel for num_threads(team_size(threads)) \
    schedule(dynamic, 1) if (n > QUERY_CHUNK)
    for (size_t b = 0; b < n_blocks; b++) {
        size_t q0 = b * QUERY_CHUNK;
        size_t q1 = q0 + QUERY_CHUNK < n ? q0 + QUERY_CHUNK : n;
        if (s->tree == NULL) {
            knn_brute_block(s, q0, q1, k, dist, idx);
            continue;
        }
        for (size_t pos = q0; pos < q1; pos++) {
            size_t self = s->tree->index[pos];
            knn_tree_query(s->tree, pos, k, dist + self * k, idx + self * k);
        }
    }
}

static search tree_search(const ng_kdtree *t)
{
    return (search){t->metric, t->n, t->dim, t->coords, t->index, t};
}

int ng_kdtree_knn(const ng_kdtree *tree, size_t k, int threads, double *dist,
                  ng_index *idx, ng_error *err)
{
    if (tree == NULL || dist == NULL || idx == NULL)
        return ng_error_set(err, NG_ERR_USAGE,
                            "k nearest neighbours: no tree or no output "
                            "arrays given");
    int status = check_k(tree->n, k, err);
    if (status != NG_OK) return status;
    search s = tree_search(tree);
    knn_run(&s, k, threads, dist, idx);
    return NG_OK;
}

int ng_kdtree_knn_using(ng_kdtree_method method, const double *pts, size_t n,
                        size_t dim, ng_metric metric, size_t k, int threads,
                        double *dist, ng_index *idx, ng_error *err)
{
    int status = check_points("k nearest neighbours", pts, n, dim, metric,
                              err);
    if (status == NG_OK) status = check_k(n, k, err);
    if (status != NG_OK) return status;
    if (dist == NULL || idx == NULL)
        return ng_error_set(err, NG_ERR_USAGE,
                            "k nearest neighbours: no output arrays given");
    if (method == NG_KDTREE_AUTO) method = ng_kdtree_choose(n, dim);
    if (method == NG_KDTREE_BRUTE) {
        search s = {metric, n, dim, pts, NULL, NULL};
        knn_run(&s, k, threads, dist, idx);
        return NG_OK;
    }
    ng_kdtree *tree;
    status = tree_build(pts, n, dim, metric, threads, &tree, err);
    if (status != NG_OK) return status;
    search s = tree_search(tree);
    knn_run(&s, k, threads, dist, idx);
    ng_kdtree_free(tree);
    return NG_OK;
}

int ng_knn_all(const double *pts, size_t n, size_t dim, ng_metric metric,
               size_t k, int threads, double *dist, ng_index *idx,
               ng_error *err)
{
    return ng_kdtree_knn_using(NG_KDTREE_AUTO, pts, n, dim, metric, k,
                               threads, dist, idx, err);
}

/* ---- neighbours within a radius ---- */

/* Queries per block of the radius search; each block keeps its own list. */
#define WITHIN_BLOCK 256

typedef struct nbr_entry {
    ng_index j;
    double d;
} nbr_entry;

typedef struct nbr_list {
    nbr_entry *e;
    size_t len, cap;
} nbr_list;

static int list_push(nbr_list *l, ng_index j, double d)
{
    if (l->len == l->cap) {
        size_t cap = l->cap ? 2 * l->cap : 64;
        nbr_entry *e = ng_realloc(l->e, cap, sizeof *e);
        if (e == NULL) return 0;
        l->e = e;
        l->cap = cap;
    }
    l->e[l->len++] = (nbr_entry){j, d};
    return 1;
}

/* Sorts a[0..n) by index (indices are distinct): quicksort on the median
 * of three, insertion sort below 16 entries, recursing into the smaller
 * part only. Typed and inlined: several times faster than qsort here,
 * where neighbour lists of thousands are sorted per query. */
static void sort_by_index(nbr_entry *a, size_t n)
{
    while (n > 16) {
        nbr_entry *mid = a + n / 2, *last = a + n - 1, t;
        if (mid->j < a->j) { t = *mid; *mid = *a; *a = t; }
        if (last->j < a->j) { t = *last; *last = *a; *a = t; }
        if (last->j < mid->j) { t = *last; *last = *mid; *mid = t; }
        ng_index pivot = mid->j;
        size_t i = 0, k = n - 1;
        for (;;) {
            while (a[i].j < pivot) i++;
            while (a[k].j > pivot) k--;
            if (i >= k) break;
            t = a[i]; a[i] = a[k]; a[k] = t;
            i++;
            k--;
        }
        /* a[0..k] ≤ pivot ≤ a[k+1..n) */
        size_t left = k + 1;
        if (left < n - left) {
            sort_by_index(a, left);
            a += left;
            n -= left;
        } else {
            sort_by_index(a + left, n - left);
            n = left;
        }
    }
    for (size_t i = 1; i < n; i++) {
        nbr_entry x = a[i];
        size_t r = i;
        for (; r > 0 && a[r - 1].j > x.j; r--) a[r] = a[r - 1];
        a[r] = x;
    }
}

static ALWAYS_INLINE int within_query_in(ng_metric metric, const search *s,
                                         size_t pos, size_t self,
                                         double radius, ng_pair_filter filter,
                                         void *ctx, nbr_list *l)
{
    const size_t dim = s->dim;
    const double *x = s->coords + pos * dim;
    const double bound = raw_bound(metric, radius);
    const ng_kdtree *t = s->tree;
    if (t == NULL) {
        for (size_t j = 0; j < s->n; j++) {
            double raw = raw_distance(metric, x, s->coords + j * dim, dim);
            if (raw > bound || j == self) continue;
            double d = finish(metric, raw);
            if (d > radius) continue;
            int keep = filter == NULL ? 1 : filter(self, j, d, ctx);
            if (keep < 0) return -1;
            if (keep && !list_push(l, (ng_index)j, d)) return 0;
        }
        return 1;
    }
    size_t stack[STACK_MAX];
    size_t top = 0;
    stack[top++] = 0;
    while (top > 0) {
        size_t node = stack[--top];
        const double *lo = t->box + node * 2 * dim;
        if (box_raw(metric, x, lo, lo + dim, dim) > bound) continue;
        const kd_node *nd = &t->nodes[node];
        if (nd->right != 0) {
            stack[top++] = nd->right;
            stack[top++] = node + 1;
            continue;
        }
        for (size_t p = nd->begin; p < nd->end; p++) {
            double raw = raw_distance(metric, x, t->coords + p * dim, dim);
            if (raw > bound) continue;
            ng_index j = t->index[p];
            if (j == self) continue;
            double d = finish(metric, raw);
            if (d > radius) continue;
            int keep = filter == NULL ? 1 : filter(self, j, d, ctx);
            if (keep < 0) return -1;
            if (keep && !list_push(l, j, d)) return 0;
        }
    }
    return 1;
}

/* Appends to l the kept neighbours of the query at position pos (original
 * index self); 0 when out of memory. */
static int within_query(const search *s, size_t pos, size_t self,
                        double radius, ng_pair_filter filter, void *ctx,
                        nbr_list *l)
{
    switch (s->metric) {
    case NG_METRIC_CHEBYSHEV:
        return within_query_in(NG_METRIC_CHEBYSHEV, s, pos, self, radius,
                               filter, ctx, l);
    case NG_METRIC_MANHATTAN:
        return within_query_in(NG_METRIC_MANHATTAN, s, pos, self, radius,
                               filter, ctx, l);
    case NG_METRIC_EUCLIDEAN:
    case NG_METRIC_GIVEN:
        break;
    }
    return within_query_in(NG_METRIC_EUCLIDEAN, s, pos, self, radius, filter,
                           ctx, l);
}

/* How it works: queries are taken in blocks of WITHIN_BLOCK positions (in
 * tree order); a block appends the sorted neighbour lists of its queries,
 * one after the other, to its own buffer and records their lengths. A
 * prefix sum over the lengths gives the offsets, and each block copies its
 * buffer into place. The filter is called once per candidate pair. */
static int within_run(const search *s, const double *radius,
                      ng_pair_filter filter, void *ctx, int threads,
                      ng_csr *out, ng_error *err)
{
    const size_t n = s->n;
    const size_t n_blocks = (n + WITHIN_BLOCK - 1) / WITHIN_BLOCK;
    int failed = 0, stopped = 0; /* out of memory; the filter said stop */
    ng_csr g = {n, NULL, NULL, NULL};
    nbr_list *blocks = ng_calloc(n_blocks, sizeof *blocks);
    g.offset = ng_calloc(n + 1, sizeof *g.offset);
    if (blocks == NULL || g.offset == NULL) goto nomem;

#pragma omp parallel for num_threads(team_size(threads)) \
    schedule(dynamic, 1) if (n_blocks > 1)
    for (size_t b = 0; b < n_blocks; b++) {
        int stop, halt;
#pragma omp atomic read
        stop = failed;
#pragma omp atomic read
        halt = stopped;
        if (stop || halt) continue;
        size_t q1 = (b + 1) * WITHIN_BLOCK < n ? (b + 1) * WITHIN_BLOCK : n;
        for (size_t pos = b * WITHIN_BLOCK; pos < q1; pos++) {
            size_t self = s->index ? s->index[pos] : pos;
            size_t start = blocks[b].len;
            int got = within_query(s, pos, self, radius[self], filter, ctx,
                                   &blocks[b]);
            if (got < 0) { /* the filter stopped the search */
#pragma omp atomic write
                stopped = 1;
                blocks[b].len = start;
                break;
            }
            if (got == 0) {
#pragma omp atomic write
                failed = 1;
                break;
            }
            size_t len = blocks[b].len - start;
            sort_by_index(blocks[b].e + start, len);
            g.offset[self + 1] = len;
        }
    }
    if (failed) goto nomem;

    for (size_t i = 0; i < n; i++) g.offset[i + 1] += g.offset[i];
    g.nbr = ng_malloc(g.offset[n], sizeof *g.nbr);
    g.dist = ng_malloc(g.offset[n], sizeof *g.dist);
    if (g.nbr == NULL || g.dist == NULL) goto nomem;

#pragma omp parallel for num_threads(team_size(threads)) \
    schedule(dynamic, 1) if (n_blocks > 1)
    for (size_t b = 0; b < n_blocks; b++) {
        size_t q1 = (b + 1) * WITHIN_BLOCK < n ? (b + 1) * WITHIN_BLOCK : n;
        const nbr_entry *e = blocks[b].e;
        for (size_t pos = b * WITHIN_BLOCK; pos < q1; pos++) {
            size_t self = s->index ? s->index[pos] : pos;
            for (size_t o = g.offset[self]; o < g.offset[self + 1]; o++) {
                g.nbr[o] = e->j;
                g.dist[o] = e->d;
                e++;
            }
        }
        ng_free(blocks[b].e);
        blocks[b].e = NULL;
    }
    ng_free(blocks);
    *out = g;
    return NG_OK;

nomem:
    if (blocks != NULL)
        for (size_t b = 0; b < n_blocks; b++) ng_free(blocks[b].e);
    ng_free(blocks);
    ng_csr_free(&g);
    return ng_error_set(err, NG_ERR_NOMEM,
                        "neighbours within a radius: out of memory for the "
                        "graph of %zu points", n);
}

int ng_kdtree_within(const ng_kdtree *tree, const double *radius,
                     ng_pair_filter filter, void *ctx, int threads,
                     ng_csr *out, ng_error *err)
{
    if (out != NULL) memset(out, 0, sizeof *out);
    if (tree == NULL || out == NULL)
        return ng_error_set(err, NG_ERR_USAGE,
                            "neighbours within a radius: no tree or no "
                            "output graph given");
    int status = check_radius(radius, tree->n, err);
    if (status != NG_OK) return status;
    search s = tree_search(tree);
    return within_run(&s, radius, filter, ctx, threads, out, err);
}

int ng_kdtree_within_using(ng_kdtree_method method, const double *pts,
                           size_t n, size_t dim, ng_metric metric,
                           const double *radius, ng_pair_filter filter,
                           void *ctx, int threads, ng_csr *out, ng_error *err)
{
    if (out != NULL) memset(out, 0, sizeof *out);
    if (out == NULL)
        return ng_error_set(err, NG_ERR_USAGE,
                            "neighbours within a radius: no output graph "
                            "given");
    int status = check_points("neighbours within a radius", pts, n, dim,
                              metric, err);
    if (status == NG_OK) status = check_radius(radius, n, err);
    if (status != NG_OK) return status;
    if (method == NG_KDTREE_AUTO) method = ng_kdtree_choose(n, dim);
    if (method == NG_KDTREE_BRUTE || n == 0) {
        search s = {metric, n, dim, pts, NULL, NULL};
        return within_run(&s, radius, filter, ctx, threads, out, err);
    }
    ng_kdtree *tree;
    status = tree_build(pts, n, dim, metric, threads, &tree, err);
    if (status != NG_OK) return status;
    search s = tree_search(tree);
    status = within_run(&s, radius, filter, ctx, threads, out, err);
    ng_kdtree_free(tree);
    return status;
}

int ng_neighbors_within(const double *pts, size_t n, size_t dim,
                        ng_metric metric, const double *radius,
                        ng_pair_filter filter, void *ctx, int threads,
                        ng_csr *out, ng_error *err)
{
    return ng_kdtree_within_using(NG_KDTREE_AUTO, pts, n, dim, metric, radius,
                                  filter, ctx, threads, out, err);
}

void ng_csr_free(ng_csr *graph)
{
    if (graph == NULL) return;
    ng_free(graph->offset);
    ng_free(graph->nbr);
    ng_free(graph->dist);
    memset(graph, 0, sizeof *graph);
}
