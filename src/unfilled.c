/* unfilled.c — the triangles with rips ≤ t < cech at one scale
 * (unfilled.h).
 *
 * How it works: the edges with Rips edge value ≤ t are the pairs whose
 * balls meet at t (the neighbour graph of rips_graph.h). Every triangle of
 * that graph (i < j < k, k a common neighbour of i and j found by merging
 * their sorted lists) is a candidate; ng_simplex_values decides. Threads split
 * the work by first vertex i; each collects its own triangles and the
 * union is sorted, so the result does not depend on the thread count.
 */
#include "nervegap/unfilled.h"

#include "alloc.h"
#include "nervegap/kdtree.h"
#include "nervegap/law.h"
#include "rips_graph.h"

#include <math.h>
#include <omp.h>
#include <stdlib.h>
#include <string.h>

static int triangle_cmp(const void *pa, const void *pb)
{
    const ng_index *a = pa, *b = pb;
    for (int r = 0; r < 3; r++)
        if (a[r] != b[r]) return a[r] < b[r] ? -1 : 1;
    return 0;
}

/* What one thread found. */
typedef struct found {
    ng_index *tri;
    size_t count, capacity;
    size_t rips_triangles;
    int failed;
} found;

static void keep(found *f, size_t i, size_t j, size_t k)
{
    if (f->failed) return;
    if (f->count == f->capacity) {
        size_t cap = f->capacity ? 2 * f->capacity : 256;
        ng_index *p = ng_realloc(f->tri, cap, 3 * sizeof *p);
        if (p == NULL) {
            f->failed = 1;
            return;
        }
        f->tri = p;
        f->capacity = cap;
    }
    ng_index *row = f->tri + 3 * f->count++;
    row[0] = (ng_index)i;
    row[1] = (ng_index)j;
    row[2] = (ng_index)k;
}

/* The triangles i < j < k of g with first vertex i (k a common neighbour
 * of i and j, found by merging their sorted lists). Without f they are only
 * counted (returned); with f each is evaluated and kept when unfilled. */
static size_t triangles_of(const ng_csr *g, size_t i, const ng_space *s,
                           double t, found *f)
{
    const ng_index *ni = g->nbr + g->offset[i];
    size_t di = g->offset[i + 1] - g->offset[i], count = 0;
    for (size_t a = 0; a < di; a++) {
        size_t j = ni[a];
        if (j <= i) continue;
        const ng_index *nj = g->nbr + g->offset[j];
        size_t dj = g->offset[j + 1] - g->offset[j], p = a + 1, q = 0;
        while (p < di && q < dj) {
            if (ni[p] < nj[q]) {
                p++;
            } else if (ni[p] > nj[q]) {
                q++;
            } else {
                count++;
                if (f) {
                    ng_index v[3] = {(ng_index)i, (ng_index)j, ni[p]};
                    double rips, cech;
                    ng_simplex_values(s, v, 3, &rips, &cech, NULL);
                    if (rips <= t) {
                        f->rips_triangles++;
                        if (cech > t) keep(f, i, j, ni[p]);
                    }
                }
                p++;
                q++;
            }
        }
    }
    return count;
}

int ng_unfilled_compute(const ng_space *s, double t, size_t max_candidates,
                        int threads, ng_unfilled *out, ng_error *err)
{
    memset(out, 0, sizeof *out);
    if (!(t >= 0.0) || isinf(t))
        return ng_error_set(err, NG_ERR_USAGE,
                            "unfilled triangles: the scale must be a finite "
                            "number ≥ 0, not %g", t);
    ng_csr g = {0};
    found *per = NULL;
    int team = threads > 0 ? threads : omp_get_max_threads();
    int over = 0;
    int status = ng_rips_graph(s, t, NULL, 0, threads, &g, &over, NULL, err);
    if (status != NG_OK) return status;
    size_t n = s->n;
    out->scale = t;
    out->n = n;
    out->edges = g.offset[n] / 2;

    size_t candidates = 0;
#pragma omp parallel for num_threads(team) schedule(dynamic, 16) \
    reduction(+ : candidates)
    for (size_t i = 0; i < n; i++)
        candidates += triangles_of(&g, i, NULL, t, NULL);
    out->candidates = candidates;
    if (max_candidates > 0 && candidates > max_candidates) {
        status = ng_error_set(err, NG_ERR_BUDGET,
                              "unfilled triangles at t = %g: %zu candidate "
                              "triangles, more than the cap of %zu; choose "
                              "a smaller scale", t, candidates,
                              max_candidates);
        goto cleanup;
    }

    per = ng_calloc((size_t)team, sizeof *per);
    if (per == NULL) goto nomem;
#pragma omp parallel num_threads(team)
    {
        found *f = &per[omp_get_thread_num()];
#pragma omp for schedule(dynamic, 16)
        for (size_t i = 0; i < n; i++) triangles_of(&g, i, s, t, f);
    }
    size_t total = 0;
    for (int w = 0; w < team; w++) {
        if (per[w].failed) goto nomem;
        total += per[w].count;
        out->rips_triangles += per[w].rips_triangles;
    }
    out->triangle = ng_malloc(total, 3 * sizeof *out->triangle);
    out->in_unfilled = ng_calloc(n, 1);
    if (out->triangle == NULL || out->in_unfilled == NULL) goto nomem;
    for (int w = 0; w < team; w++) {
        if (per[w].count == 0) continue; /* tri may be NULL */
        memcpy(out->triangle + 3 * out->count, per[w].tri,
               per[w].count * 3 * sizeof *out->triangle);
        out->count += per[w].count;
    }
    qsort(out->triangle, out->count, 3 * sizeof *out->triangle,
          triangle_cmp);
    for (size_t r = 0; r < 3 * out->count; r++)
        out->in_unfilled[out->triangle[r]] = 1;
    goto cleanup;

nomem:
    status = ng_error_set(err, NG_ERR_NOMEM,
                          "unfilled triangles at t = %g: out of memory", t);
cleanup:
    if (per)
        for (int w = 0; w < team; w++) ng_free(per[w].tri);
    ng_free(per);
    ng_csr_free(&g);
    if (status != NG_OK) ng_unfilled_free(out);
    return status;
}

void ng_unfilled_free(ng_unfilled *u)
{
    if (u == NULL) return;
    ng_free(u->triangle);
    ng_free(u->in_unfilled);
    memset(u, 0, sizeof *u);
}
