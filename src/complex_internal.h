/* complex_internal.h — the layout of ng_complex and the on-demand face and
 * coface enumeration that the reduction uses (private).
 *
 * Invariants: vert[k] holds count[k] vertex lists of k + 1 increasing
 * vertices, sorted by combinatorial index (colexicographic order); the
 * k-simplices whose largest vertex is w occupy positions start[k][w] ..
 * start[k][w+1] − 1; value[k][j * count[k] + pos] is the (monotone) value
 * of that simplex in filtration j; the neighbour lists are sorted, without
 * loops, and symmetric. count[k] < UINT32_MAX, so positions fit uint32_t.
 *
 * Lookups by lower extension. Dropping the lowest vertex of a
 * (k+1)-simplex τ leaves a k-simplex ρ, and in colexicographic order the
 * (k+1)-simplices sharing ρ are contiguous, ordered by their lowest vertex,
 * with the runs in the order of their ρ: so ext[k][ρ] .. ext[k][ρ + 1] − 1
 * are the positions of the (k+1)-simplices ρ ∪ {x}, x < min ρ (k = 1 ..
 * top_dim − 1). An edge {x, w}, x < w, sits at start[1][w] + (index of x in
 * w's neighbour list). Locating a simplex is then one search in a
 * neighbour list and one per further vertex in a run — small, contiguous
 * ranges — instead of one search in the whole bucket of its top vertex.
 *
 * Latest facets. The reduction's apparent-pair test asks, for many
 * (k+1)-simplices τ, whether a given facet is τ's latest one; the value
 * pass locates every facet anyway, so it keeps the answer, one byte per
 * simplex and filtration.
 *
 * Cofacet lists. The reduction asks for the cofacets of every column, often
 * many times; for k ≥ 1 they are stored (the transpose of the facet
 * positions found while raising each value to its facets'), so that
 * enumerating them is one read of a contiguous list. The cofacets of a
 * vertex (edges) are never stored: degree 0 is reduced by union–find.
 */
#ifndef NERVEGAP_COMPLEX_INTERNAL_H
#define NERVEGAP_COMPLEX_INTERNAL_H

#include "nervegap/complex.h"

#include <math.h>
#include <stdint.h>

#define NG_POS_NONE UINT32_MAX

struct ng_complex {
    size_t n;
    int top_dim;
    int n_filtrations;
    double scale_limit;
    size_t *offset; /* n + 1: neighbour list of i is nbr[offset[i] ..) */
    ng_index *nbr;
    size_t max_degree; /* longest neighbour list */
    size_t count[NG_COMPLEX_MAX_DIM + 1];
    ng_index *vert[NG_COMPLEX_MAX_DIM + 1];
    size_t *start[NG_COMPLEX_MAX_DIM + 1];
    uint32_t *ext[NG_COMPLEX_MAX_DIM]; /* k = 1..top_dim − 1: count[k] + 1 */
    /* cofacet lists, k = 1..top_dim − 1: the (k+1)-cofacets of the
     * k-simplex p are cof[k][cof_start[k][p] .. cof_start[k][p + 1]), in
     * increasing position */
    size_t *cof_start[NG_COMPLEX_MAX_DIM];
    uint32_t *cof[NG_COMPLEX_MAX_DIM];
    double *value[NG_COMPLEX_MAX_DIM + 1];
    /* k = 2..top_dim: latest[k][j * count[k] + pos] is the index s of the
     * vertex whose removal leaves the latest facet of that simplex in
     * filtration j — the facet of largest (value, position); found while
     * the values are raised to their facets', read by the apparent-pair
     * test of the reduction */
    uint8_t *latest[NG_COMPLEX_MAX_DIM + 1];
    size_t *within; /* n_filtrations × (top_dim + 1): value_j ≤ T counts */
};

/* A simplex of value x is in a filtration cut at T when x ≤ T and x is not
 * +inf (+inf means "never", even when T = +inf). */
static inline int in_filtration(double x, double T)
{
    return x <= T && x < (double)INFINITY;
}

/* Position of the k-simplex with increasing vertices v[0..k], or
 * NG_POS_NONE. */
uint32_t ng_complex_locate(const ng_complex *c, int k, const ng_index *v);

/* The (k+1)-cofacets of the k-simplex with increasing vertices v[0..k]
 * (k < top_dim), one at a time, in increasing order of the added vertex —
 * which is also increasing position (the cofacets below the top vertex lie
 * in its bucket with keys growing with the added vertex, those above it in
 * the buckets of later top vertices). v must stay valid while iterating. */
typedef struct ng_cofacet_iter {
    const ng_complex *c;
    int k, a;
    const ng_index *v;
    const uint32_t *list, *list_end; /* stored cofacets, when k ≥ 1 */
    size_t ptr[NG_COMPLEX_MAX_DIM + 1], end[NG_COMPLEX_MAX_DIM + 1];
    size_t below, below_end;
} ng_cofacet_iter;

/* The cofacets of the k-simplex at position pos, with vertices v. */
void ng_cofacet_iter_init(ng_cofacet_iter *it, const ng_complex *c, int k,
                          uint32_t pos, const ng_index *v);

/* The next cofacet's position, or NG_POS_NONE at the end. */
uint32_t ng_cofacet_iter_next(ng_cofacet_iter *it);

/* The stored cofacets of the k-simplex at position pos (1 ≤ k < top_dim),
 * in increasing position: *len of them. */
static inline const uint32_t *ng_complex_cofacet_list(const ng_complex *c,
                                                      int k, uint32_t pos,
                                                      size_t *len)
{
    size_t a = c->cof_start[k][pos], b = c->cof_start[k][pos + 1];
    *len = b - a;
    return c->cof[k] + a;
}

/* Writes the positions of all (k+1)-cofacets of the k-simplex at position
 * pos (k < top_dim) into out, in increasing order, and returns their number
 * (≤ c->max_degree). */
size_t ng_complex_cofacets(const ng_complex *c, int k, uint32_t pos,
                           uint32_t *restrict out);

#endif
