/* rips_graph.c — the neighbour graph at a scale (rips_graph.h).
 *
 * Invariants: the graph holds exactly the pairs with Rips edge value ≤ T;
 * the search radius only pre-selects, the edge value decides, once per
 * pair.
 *
 * How the search works. A pair (i, j) meets at T only if
 * d ≤ r_i(T) + r_j(T) ≤ 2·max(r_i(T), r_j(T)): the point with the larger
 * ball finds the other within twice its own radius. So every point asks
 * the k-d tree for the points within 2·r_i(T) (plus a rounding slack) and
 * keeps a pair only when it owns it — its ball is the larger, or equal and
 * its index the smaller. Each edge is found once, from one side, and the
 * two sides are put together at the end. With adaptive radii this matters:
 * a dense point's small ball searches a small region, where a search radius
 * of r_i + max_j r_j would make every point search as far as the largest
 * ball reaches. A distance matrix is read row by row above the diagonal,
 * and a graph at a larger scale is filtered directly (it is symmetric).
 */
#include "rips_graph.h"

#include "alloc.h"

#include <math.h>
#include <omp.h>
#include <string.h>

typedef struct graph_ctx {
    const ng_space *space;
    const double *r;   /* ball radius r_i(T), or NULL */
    double scale;      /* T */
    size_t cap;        /* keep at most this many edges (0: no cap) */
    size_t kept;       /* edges kept so far (atomic) */
    int over;          /* set when the cap was passed */
} graph_ctx;

/* The pair filter: 1 keeps (i, j), 0 drops it, −1 stops the search once
 * the cap is passed. With radii, only the owner of a pair keeps it. */
static int keep_edge(size_t i, size_t j, double d, void *opaque)
{
    graph_ctx *g = opaque;
    if (g->r != NULL &&
        !(g->r[i] > g->r[j] || (g->r[i] == g->r[j] && i < j)))
        return 0;
    const double *rho = g->space->rho;
    if (!(ng_rips_edge_value(g->space->law, rho[i], rho[j], d) <= g->scale))
        return 0;
    if (g->cap == 0) return 1;
    size_t kept;
#pragma omp atomic capture
    kept = ++g->kept;
    if (kept > g->cap) {
#pragma omp atomic write
        g->over = 1;
        return -1;
    }
    return 1;
}

static int nomem(ng_csr *out, ng_error *err)
{
    ng_csr_free(out);
    return ng_error_set(err, NG_ERR_NOMEM,
                        "out of memory for the neighbour graph");
}

/* The pairs of the symmetric graph `from` that g keeps, both directions:
 * two passes, count then fill. */
static int filter_graph(const ng_csr *from, graph_ctx *g, ng_csr *out,
                        ng_error *err)
{
    size_t n = from->n;
    out->n = n;
    out->offset = ng_calloc(n + 1, sizeof *out->offset);
    if (out->offset == NULL) return nomem(out, err);
    for (int pass = 0; pass < 2; pass++) {
        size_t pos = 0;
        for (size_t i = 0; i < n; i++) {
            for (size_t e = from->offset[i]; e < from->offset[i + 1]; e++) {
                size_t j = from->nbr[e];
                const double *rho = g->space->rho;
                if (!(ng_rips_edge_value(g->space->law, rho[i], rho[j],
                                         from->dist[e]) <= g->scale))
                    continue;
                if (pass == 1) {
                    out->nbr[pos] = (ng_index)j;
                    out->dist[pos] = from->dist[e];
                }
                pos++;
            }
            if (pass == 0) out->offset[i + 1] = pos;
        }
        if (pass == 0) {
            if (g->cap > 0 && pos / 2 > g->cap) {
                g->over = 1;
                g->kept = pos / 2;
                return NG_OK;
            }
            out->nbr = ng_malloc(pos, sizeof *out->nbr);
            out->dist = ng_malloc(pos, sizeof *out->dist);
            if (out->nbr == NULL || out->dist == NULL) return nomem(out, err);
        }
    }
    g->kept = out->offset[n] / 2;
    return NG_OK;
}

/* The pairs i < j of a distance matrix that g keeps, one direction. */
static int matrix_pairs(const ng_space *s, graph_ctx *g, ng_csr *out,
                        ng_error *err)
{
    size_t n = s->n;
    out->n = n;
    out->offset = ng_calloc(n + 1, sizeof *out->offset);
    if (out->offset == NULL) return nomem(out, err);
    for (int pass = 0; pass < 2; pass++) {
        size_t pos = 0;
        g->kept = 0;
        for (size_t i = 0; i < n && !g->over; i++) {
            for (size_t j = i + 1; j < n; j++) {
                double d = s->dist[i * n + j];
                int keep = keep_edge(i, j, d, g);
                if (keep < 0) break;
                if (keep == 0) continue;
                if (pass == 1) {
                    out->nbr[pos] = (ng_index)j;
                    out->dist[pos] = d;
                }
                pos++;
            }
            if (pass == 0) out->offset[i + 1] = pos;
        }
        if (g->over) return NG_OK;
        if (pass == 0) {
            out->nbr = ng_malloc(pos, sizeof *out->nbr);
            out->dist = ng_malloc(pos, sizeof *out->dist);
            if (out->nbr == NULL || out->dist == NULL) return nomem(out, err);
        }
    }
    return NG_OK;
}

/* The symmetric graph of the edges of `half` (each edge listed once, from
 * one of its ends; sorted lists): every list is its own part merged with
 * the edges listed at the other ends, which come in increasing order when
 * taken vertex by vertex. */
static int symmetrize(const ng_csr *half, int threads, ng_csr *out,
                      ng_error *err)
{
    size_t n = half->n, m = half->offset[n];
    size_t *in_off = ng_calloc(n + 1, sizeof *in_off);
    ng_index *in_nbr = ng_malloc(m, sizeof *in_nbr);
    double *in_dist = ng_malloc(m, sizeof *in_dist);
    out->n = n;
    out->offset = ng_malloc(n + 1, sizeof *out->offset);
    out->nbr = ng_malloc(m, 2 * sizeof *out->nbr);
    out->dist = ng_malloc(m, 2 * sizeof *out->dist);
    int status = NG_OK;
    if (!in_off || !in_nbr || !in_dist || !out->offset || !out->nbr ||
        !out->dist) {
        status = nomem(out, err);
        goto cleanup;
    }
    for (size_t e = 0; e < m; e++) in_off[half->nbr[e] + 1]++;
    for (size_t i = 0; i < n; i++) in_off[i + 1] += in_off[i];
    for (size_t i = 0; i < n; i++)
        for (size_t e = half->offset[i]; e < half->offset[i + 1]; e++) {
            size_t at = in_off[half->nbr[e]]++;
            in_nbr[at] = (ng_index)i;
            in_dist[at] = half->dist[e];
        }
    for (size_t i = n; i > 0; i--) in_off[i] = in_off[i - 1];
    in_off[0] = 0;
    out->offset[0] = 0;
    for (size_t i = 0; i < n; i++)
        out->offset[i + 1] = out->offset[i] +
                             (half->offset[i + 1] - half->offset[i]) +
                             (in_off[i + 1] - in_off[i]);
    long long nv = (long long)n;
#pragma omp parallel for schedule(dynamic, 256) \
    num_threads(threads > 0 ? threads : omp_get_max_threads())
    for (long long v = 0; v < nv; v++) {
        size_t i = (size_t)v, a = half->offset[i], ae = half->offset[i + 1];
        size_t b = in_off[i], be = in_off[i + 1], o = out->offset[i];
        while (a < ae || b < be) {
            if (b == be || (a < ae && half->nbr[a] < in_nbr[b])) {
                out->nbr[o] = half->nbr[a];
                out->dist[o++] = half->dist[a++];
            } else {
                out->nbr[o] = in_nbr[b];
                out->dist[o++] = in_dist[b++];
            }
        }
    }
cleanup:
    ng_free(in_off);
    ng_free(in_nbr);
    ng_free(in_dist);
    return status;
}

int ng_rips_graph(const ng_space *s, double T, const ng_csr *from,
                  size_t max_edges, int threads, ng_csr *out, int *over,
                  size_t *edges, ng_error *err)
{
    graph_ctx g = {s, NULL, T, max_edges, 0, 0};
    ng_csr half = {0};
    double *radius = NULL;
    int status;
    memset(out, 0, sizeof *out);
    *over = 0;
    if (from != NULL) {
        status = filter_graph(from, &g, out, err);
    } else {
        if (s->metric == NG_METRIC_GIVEN) {
            status = matrix_pairs(s, &g, &half, err);
        } else {
            radius = ng_malloc(s->n, 2 * sizeof *radius);
            if (radius == NULL) return nomem(out, err);
            double *r = radius + s->n;
            for (size_t i = 0; i < s->n; i++) {
                r[i] = ng_law_radius(s->law, s->rho[i], T);
                /* the slack covers rounding: the edge value decides */
                radius[i] = 2.0 * r[i] * (1.0 + 1e-12) + 1e-300;
            }
            g.r = r;
            status = ng_neighbors_within(s->coords, s->n, s->dim, s->metric,
                                         radius, keep_edge, &g, threads,
                                         &half, err);
        }
        if (status == NG_OK && !g.over)
            status = symmetrize(&half, threads, out, err);
    }
    if (edges) *edges = g.over || out->offset == NULL ? g.kept
                                                       : out->offset[s->n] / 2;
    if (status == NG_OK && g.over) {
        ng_csr_free(out);
        *over = 1;
    }
    ng_csr_free(&half);
    ng_free(radius);
    return status;
}
