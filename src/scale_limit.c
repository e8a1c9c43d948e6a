/* scale_limit.c — the scale limit of a run and the neighbour graph at it
 * (scale_limit.h).
 *
 * Invariants: a graph holds exactly the pairs with Rips edge value ≤ its
 * scale (the k-d tree query radius only pre-selects, the edge value
 * decides); no probe keeps more pairs than a fitting complex could have, and
 * no count goes far past the simplex budget, so probing a scale far above
 * the budget costs about as much as one at it.
 *
 * How the search works. Whether the complex at t fits is monotone in t (the
 * graph, hence every clique set, only grows). From a start scale (the
 * median Rips value of the edge to each point's nearest neighbour) the
 * search doubles or halves until it brackets the budget, then narrows the
 * bracket [fits, does not fit] to a relative width of 1e-4 by regula falsi
 * on the logarithms (the count of a complex grows about like a power of
 * the scale) with the Illinois rule: a few probes where bisection needs
 * 14. A probe builds the graph at t and counts its cliques, stopping at the
 * budget while bracketing and at twice the budget otherwise
 * (ng_complex_estimate's max_total). The smallest complete graph that did
 * not fit is kept: every later probe lies below its scale, so its graph is
 * that one filtered by edge value — no k-d tree search, no sort. The graph
 * of the largest scale that fits is kept too: the search ends there, and
 * the run needs that graph.
 */
#include "scale_limit.h"

#include "alloc.h"
#include "order.h"
#include "radius_internal.h"
#include "rips_graph.h"
#include "nervegap/distance.h"

#include <math.h>
#include <omp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define REFINE_TOLERANCE 1e-4 /* relative width of the final bracket */
#define REFINE_STEPS 40        /* bisection alone needs 14 from [t, 2t] */
#define REFINE_SECANT_STEPS 16 /* then bisection, should the secant stall */

typedef struct search {
    const ng_space *space;
    const ng_run_options *opt;
    int L;                /* filtrations */
    size_t count_cap;     /* more simplices than this never fit */
    int count_by_budget;  /* count_cap is the simplex budget (not memory) */
    size_t pair_cap;      /* more directed pairs than this never fit */
    int pairs_by_budget;  /* pair_cap comes from the simplex budget */
    ng_csr upper;         /* complete graph at upper_scale, or offset NULL */
    double upper_scale;
    int bracketing;       /* counts stop at the budget (bracket_fit) */
    ng_csr best;          /* graph of the largest scale that fits so far */
    double best_scale;
    ng_complex_size best_size;
} search;

typedef struct probe {
    int status;            /* NG_OK */
    int fits;
    int over_count;        /* more simplices than the simplex budget */
    int graph_over;        /* the graph stopped at the cap of pairs */
    ng_complex_size size;  /* partial when size.over */
    size_t bytes;          /* graph + complex + reductions, or the graph's
                              construction peak if larger (a lower bound
                              when size.over) */
    size_t graph_bytes;    /* construction peak of the graph, from all its
                              pairs (counted past the cap too) */
} probe;

/* Peak bytes per directed pair while a graph is built (rips_graph.c): the
 * k-d tree query finds each edge once, as a 16-byte entry in lists grown by
 * doubling (up to 32 bytes an edge, 16 a directed pair), copied into a
 * one-sided graph (6 bytes a directed pair); putting the two sides
 * together holds that graph, the transposed side and the result (6 + 6 +
 * 12 bytes a directed pair). */
#define GRAPH_BUILD_PEAK 24

/* Working bytes of the per-scale grid per simplex of dimension ≥ 2. */
#define GRID_BYTES 52

static void report(const ng_run_options *opt, double f)
{
    if (opt->progress) opt->progress("scale limit", f, opt->progress_ctx);
}

/* ---- the neighbour graph at a scale ---- */

/* The graph of pairs with edge value ≤ T, keeping at most se->pair_cap
 * directed pairs: filtered from the upper graph when T is below its scale.
 * *over tells whether the cap was passed (the graph is then empty), *pairs
 * how many directed pairs were found (a lower bound when over). */
static int graph_at(search *se, double T, ng_csr *out, int *over,
                    size_t *pairs, ng_error *err)
{
    const ng_csr *from = se->upper.offset != NULL && T <= se->upper_scale
                             ? &se->upper
                             : NULL;
    size_t edges = 0, cap = se->pair_cap / 2 > 0 ? se->pair_cap / 2 : 1;
    int status = ng_rips_graph(se->space, T, from, cap, se->opt->threads,
                               out, over, &edges, err);
    *pairs = 2 * edges;
    return status;
}

/* ---- probes ---- */

static size_t graph_bytes(size_t directed_pairs, size_t n)
{
    return directed_pairs * (sizeof(ng_index) + sizeof(double)) +
           (n + 1) * sizeof(size_t);
}

/* Size of the complex at T. Keeps the graph in *keep when it fits and keep
 * is not NULL; keeps a complete graph that does not fit as the search's
 * upper graph when it is the lowest such so far. */
static probe probe_at(search *se, double T, ng_csr *keep, ng_error *err)
{
    const ng_run_options *opt = se->opt;
    probe p;
    memset(&p, 0, sizeof p);
    int team = opt->threads > 0 ? opt->threads : 1;
    size_t reductions = (size_t)(se->L < team ? se->L : team);
    ng_csr g;
    size_t pairs = 0;
    p.status = graph_at(se, T, &g, &p.graph_over, &pairs, err);
    if (p.status != NG_OK) return p;
    p.graph_bytes = pairs > SIZE_MAX / GRAPH_BUILD_PEAK
                        ? SIZE_MAX
                        : pairs * GRAPH_BUILD_PEAK;
    if (p.graph_over) {
        /* more edges than the simplex budget, or than the memory holds */
        p.over_count = se->pairs_by_budget;
        p.size.over = 1;
        p.bytes = p.graph_bytes;
        return p;
    }
    /* counting on to twice the budget gives the refinement an exact count
     * just above it, and a refused scale its size, at most twice the cost;
     * while bracketing, a scale that does not fit is usually far above
     * (doubling the scale multiplies the count many times over), so the
     * count stops at the budget */
    size_t count_to = !se->bracketing && se->count_cap <= SIZE_MAX / 2
                          ? 2 * se->count_cap
                          : se->count_cap;
    p.status = ng_complex_estimate(&g, opt->max_degree + 1, se->L, count_to,
                                   opt->threads, &p.size, err);
    if (p.status != NG_OK) {
        ng_csr_free(&g);
        return p;
    }
    p.bytes = graph_bytes(g.offset[g.n], g.n) + p.size.bytes_build;
    /* after the reductions, the per-scale grid sorts the factors and the
     * shifts of the simplices of dimension ≥ 2: two 16-byte items each,
     * a 16-byte sort buffer and a 4-byte bucket index (grid.c) */
    size_t upper = 0;
    for (int k = 2; k <= opt->max_degree + 1; k++) upper += p.size.count[k];
    size_t work = upper > SIZE_MAX / GRID_BYTES ? SIZE_MAX
                                                : upper * GRID_BYTES;
    if (p.size.bytes_reduce > 0 &&
        reductions > SIZE_MAX / p.size.bytes_reduce)
        work = SIZE_MAX;
    else if (reductions * p.size.bytes_reduce > work)
        work = reductions * p.size.bytes_reduce;
    p.bytes = work > SIZE_MAX - p.bytes ? SIZE_MAX : p.bytes + work;
    if (p.graph_bytes > p.bytes) p.bytes = p.graph_bytes;
    int over_cap = p.size.over || p.size.total > se->count_cap;
    p.over_count = over_cap && se->count_by_budget;
    p.fits = !over_cap && p.bytes <= opt->budget_bytes;
    if (p.fits && keep) {
        *keep = g;
    } else if (p.fits && (se->best.offset == NULL || T > se->best_scale)) {
        ng_csr_free(&se->best);
        se->best = g;
        se->best_scale = T;
        se->best_size = p.size;
    } else if (!p.fits &&
               (se->upper.offset == NULL || T < se->upper_scale)) {
        ng_csr_free(&se->upper);
        se->upper = g;
        se->upper_scale = T;
    } else {
        ng_csr_free(&g);
    }
    return p;
}

/* ---- the search ---- */

double ng_scale_limit_full(const ng_space *s, int threads)
{
    size_t n = s->n;
    double best = INFINITY;
    int team = threads > 0 ? threads : omp_get_max_threads();
    /* a candidate is abandoned as soon as its running max reaches the best
     * value found so far, which cannot change the minimum */
#pragma omp parallel for schedule(dynamic, 64) num_threads(team)
    for (size_t c = 0; c < n; c++) {
        double bound;
#pragma omp atomic read
        bound = best;
        double worst = 0.0;
        for (size_t i = 0; i < n && worst < bound; i++) {
            double d = s->metric == NG_METRIC_GIVEN
                           ? s->dist[c * n + i]
                           : ng_metric_distance(s->metric,
                                                s->coords + c * s->dim,
                                                s->coords + i * s->dim,
                                                s->dim);
            double t = ng_law_reach(s->law, s->rho[i], d);
            if (t > worst) worst = t;
        }
        if (worst < bound) {
#pragma omp critical(ng_full_scale)
            if (worst < best) best = worst;
        }
    }
    return best;
}

/* Number of simplices of the complete complex on n vertices up to
 * dimension top (saturating). */
static double complete_count(size_t n, int top)
{
    double total = 0.0, c = 1.0;
    for (int k = 0; k <= top; k++) {
        c = c * (double)(n - (size_t)k) / (double)(k + 1); /* C(n, k+1) */
        total += c;
        if ((size_t)k + 1 >= n) break;
    }
    return total;
}

/* A positive starting scale for the search: the median over points of the
 * Rips edge value to the nearest other point (its own birth if larger). */
static int start_scale(const ng_space *s, int threads, double *out,
                       ng_error *err)
{
    size_t n = s->n;
    double *near = ng_malloc(n, sizeof *near);
    ng_index *idx = ng_malloc(n, sizeof *idx);
    int status = NG_OK;
    if (near == NULL || idx == NULL) {
        status = ng_error_set(err, NG_ERR_NOMEM, "out of memory");
        goto cleanup;
    }
    if (s->metric == NG_METRIC_GIVEN)
        status = ng_knn_given(s->dist, n, 1, threads, near, idx, err);
    else
        status = ng_knn_all(s->coords, n, s->dim, s->metric, 1, threads,
                            near, idx, err);
    if (status != NG_OK) goto cleanup;
    for (size_t i = 0; i < n; i++)
        near[i] = ng_rips_edge_value(s->law, s->rho[i], s->rho[idx[i]],
                                     near[i]);
    qsort(near, n, sizeof *near, ng_order_doubles);
    *out = near[n / 2];
cleanup:
    ng_free(near);
    ng_free(idx);
    return status;
}

/* One end of the bracket: its scale and, when known exactly, the number of
 * simplices there (0: not known). */
typedef struct end {
    double t;
    size_t count;
} end;

static end end_of(double t, const probe *p)
{
    end e = {t, p->size.over ? 0 : p->size.total};
    return e;
}

/* Finds a bracket [lo fits, hi does not] by doubling or halving from the
 * start scale, never above cap (known not to fit, or +inf). */
static int bracket_fit(search *se, double cap, end *lo, end *hi,
                       ng_error *err)
{
    double t = 0.0;
    int status = start_scale(se->space, se->opt->threads, &t, err);
    if (status != NG_OK) return status;
    if (!(t > 0.0) || !isfinite(t)) t = isfinite(cap) ? cap / 1024.0 : 1.0;
    if (t >= cap) t = 0.5 * cap;
    probe p = probe_at(se, t, NULL, err);
    if (p.status != NG_OK) return p.status;
    int rounds = 0;
    if (p.fits) {
        *lo = end_of(t, &p);
        for (;;) {
            double next = 2.0 * t;
            if (next >= cap || rounds++ > 200) {
                *hi = (end){cap, 0};
                return NG_OK;
            }
            p = probe_at(se, next, NULL, err);
            if (p.status != NG_OK) return p.status;
            if (!p.fits) {
                *hi = end_of(next, &p);
                return NG_OK;
            }
            *lo = end_of(next, &p);
            t = next;
        }
    }
    *hi = end_of(t, &p);
    for (;;) {
        double next = 0.5 * t;
        if (rounds++ > 200 || next == 0.0) {
            *lo = (end){0.0, 0};
            return NG_OK;
        }
        p = probe_at(se, next, NULL, err);
        if (p.status != NG_OK) return p.status;
        if (p.fits) {
            *lo = end_of(next, &p);
            return NG_OK;
        }
        *hi = end_of(next, &p);
        t = next;
    }
}

/* The refinement works on x = log t and f(x) = log(count / budget), about
 * a straight line for a count that grows like a power of the scale: it
 * probes where the line through the two ends crosses zero (regula falsi),
 * halving the f of an end that stays put twice in a row (the Illinois
 * rule, so that both ends keep moving), and never closer to an end than
 * half the tolerance, and bisecting after REFINE_SECANT_STEPS probes. An
 * upper end whose count is unknown takes f = log 2: a bound it is known to
 * pass when its count stopped at twice the budget, only a guess when it
 * stopped at the budget (bracketing) — it moves the probe, not the
 * bracket, so the scale found still meets the tolerance. A lower end at
 * scale 0 has no count, and the midpoint is used. */
typedef struct side {
    double x, f;
} side;

static side side_of(const search *se, end e, int above)
{
    side s = {log(e.t), 0.0};
    /* the count is whole: aim half a simplex above the budget, so that an
     * end at the budget exactly is still below the target */
    if (e.count > 0)
        s.f = log((double)e.count / ((double)se->count_cap + 0.5));
    else
        s.f = above ? log(2.0) : NAN;
    return s;
}

/* The largest scale in [lo, hi] (lo fits, hi does not) that fits, to a
 * relative REFINE_TOLERANCE: on return, lo·(1 + REFINE_TOLERANCE) does not
 * fit. */
static int refine_fit(search *se, end lo, end hi, double *out, ng_error *err)
{
    side a = side_of(se, lo, 0), b = side_of(se, hi, 1);
    int last = 0; /* −1: the last probe moved lo, 1: hi */
    for (int step = 0;
         step < REFINE_STEPS && hi.t - lo.t > REFINE_TOLERANCE * lo.t;
         step++) {
        double t;
        if (!(lo.t > 0.0) || !isfinite(hi.t) || isnan(a.f) ||
            !(a.f < 0.0 && 0.0 < b.f) || step >= REFINE_SECANT_STEPS)
            t = 0.5 * (lo.t + hi.t);
        else
            t = exp(a.x - a.f * (b.x - a.x) / (b.f - a.f));
        double margin = 0.5 * REFINE_TOLERANCE * lo.t;
        if (!(t > lo.t + margin)) t = lo.t + margin;
        if (!(t < hi.t - margin)) t = hi.t - margin;
        probe p = probe_at(se, t, NULL, err);
        if (p.status != NG_OK) return p.status;
        if (p.fits) {
            lo = end_of(t, &p);
            a = side_of(se, lo, 0);
            if (last == -1) b.f *= 0.5; /* hi stayed twice: Illinois */
            last = -1;
        } else {
            hi = end_of(t, &p);
            b = side_of(se, hi, 1);
            if (last == 1) a.f *= 0.5;
            last = 1;
        }
        report(se->opt, 0.5 + 0.49 * (step + 1) / REFINE_STEPS);
    }
    *out = lo.t;
    return NG_OK;
}

/* The largest scale below cap that fits. */
static int largest_fit(search *se, double cap, double *fit, ng_error *err)
{
    end lo, hi;
    se->bracketing = 1;
    int status = bracket_fit(se, cap, &lo, &hi, err);
    se->bracketing = 0;
    if (status == NG_OK) status = refine_fit(se, lo, hi, fit, err);
    return status;
}

static void size_text(size_t bytes, char *buf, size_t size)
{
    if (bytes == SIZE_MAX) snprintf(buf, size, "more than the budget");
    else if (bytes >= ((size_t)1 << 30))
        snprintf(buf, size, "%.1f GiB", (double)bytes / (1 << 30));
    else snprintf(buf, size, "%.1f MiB", (double)bytes / (1 << 20));
}

/* The error for a given T that does not fit (probe p), naming the budget
 * it exceeds (the simplex budget, or memory) with the size it would need,
 * and a T that fits. */
static int refuse_scale(double T, const probe *p, const ng_run_options *opt,
                        double fit, ng_error *err)
{
    char need[64], have[64];
    size_text(p->bytes, need, sizeof need);
    size_text(opt->budget_bytes, have, sizeof have);
    if (p->over_count)
        return ng_error_set(err, NG_ERR_BUDGET,
                            "--scale-limit %.17g: the complex would have "
                            "more than %zu simplices, the simplex budget; "
                            "--scale-limit %.6g would fit (or raise "
                            "--max-simplices or lower --max-degree)",
                            T, opt->max_simplices, fit);
    if (p->graph_over)
        return ng_error_set(err, NG_ERR_BUDGET,
                            "--scale-limit %.17g: building the neighbour "
                            "graph alone needs more than the budget of %s "
                            "(it has more than %zu edges); --scale-limit "
                            "%.6g would fit (or raise --budget)",
                            T, have, p->graph_bytes / GRAPH_BUILD_PEAK / 2,
                            fit);
    if (p->size.over)
        return ng_error_set(err, NG_ERR_BUDGET,
                            "--scale-limit %.17g: the complex would have "
                            "more than %zu simplices and need more than %s, "
                            "the budget; --scale-limit %.6g would fit (or "
                            "raise --budget or lower --max-degree)",
                            T, p->size.total, have, fit);
    return ng_error_set(err, NG_ERR_BUDGET,
                        "--scale-limit %.17g: the complex would have %zu "
                        "simplices and need %s, more than the budget of %s; "
                        "--scale-limit %.6g would fit (or raise --budget or "
                        "lower --max-degree)",
                        T, p->size.total, need, have, fit);
}

/* Chooses T and builds the graph at T into *graph. */
static int choose(search *se, ng_scale_choice *out, ng_csr *graph,
                  ng_error *err)
{
    const ng_run_options *opt = se->opt;
    const ng_space *s = se->space;
    double fit;
    int status;
    if (!opt->scale_auto) {
        double T = opt->scale_limit;
        probe p = probe_at(se, T, graph, err);
        if (p.status != NG_OK) return p.status;
        if (p.fits) {
            out->scale_limit = T;
            out->size = p.size;
            return NG_OK;
        }
        status = largest_fit(se, T, &fit, err);
        if (status != NG_OK) return status;
        return refuse_scale(T, &p, opt, fit, err);
    }
    double cap = INFINITY;
    /* at the full scale every ball holds one sample point, so the complex
     * is complete: skip the O(n²) full scale when that cannot fit */
    if (complete_count(s->n, opt->max_degree + 1) <= (double)se->count_cap) {
        out->full_scale = ng_scale_limit_full(s, opt->threads);
        report(opt, 0.25);
        probe p = probe_at(se, out->full_scale, graph, err);
        if (p.status != NG_OK) return p.status;
        if (p.fits) {
            out->scale_limit = out->full_scale;
            out->size = p.size;
            return NG_OK;
        }
        cap = out->full_scale;
    }
    status = largest_fit(se, cap, &fit, err);
    if (status != NG_OK) return status;
    probe p;
    memset(&p, 0, sizeof p);
    if (se->best.offset != NULL && se->best_scale == fit) {
        /* the search's last fitting probe: its graph is at hand */
        *graph = se->best;
        memset(&se->best, 0, sizeof se->best);
        p.fits = 1;
        p.size = se->best_size;
    } else {
        p = probe_at(se, fit, graph, err);
        if (p.status != NG_OK) return p.status;
    }
    if (!p.fits)
        return ng_error_set(err, NG_ERR_BUDGET,
                            "no positive scale fits the budget of %zu "
                            "simplices and %zu bytes (raise --max-simplices "
                            "or --budget)",
                            opt->max_simplices, opt->budget_bytes);
    out->scale_limit = fit;
    out->size = p.size;
    out->limited_by_budget = 1;
    return NG_OK;
}

int ng_scale_limit_choose(const ng_space *s, const ng_run_options *opt, int L,
                          ng_scale_choice *out, ng_csr *graph, ng_error *err)
{
    memset(out, 0, sizeof *out);
    memset(graph, 0, sizeof *graph);
    out->full_scale = NAN;
    /* a simplex costs at least its top vertex and one value per filtration;
     * a directed pair GRAPH_BUILD_PEAK bytes while the graph is built, and
     * two directed pairs are one edge, a simplex */
    size_t per = sizeof(ng_index) + (size_t)L * sizeof(double);
    search se;
    memset(&se, 0, sizeof se);
    se.space = s;
    se.opt = opt;
    se.L = L;
    se.count_cap = opt->budget_bytes / per;
    se.pair_cap = opt->budget_bytes / GRAPH_BUILD_PEAK;
    if (opt->max_simplices > 0 && opt->max_simplices <= se.count_cap) {
        se.count_cap = opt->max_simplices;
        se.count_by_budget = 1;
    }
    if (se.count_cap == 0) se.count_cap = 1;
    if (se.count_cap <= SIZE_MAX / 2 && 2 * se.count_cap < se.pair_cap) {
        se.pair_cap = 2 * se.count_cap;
        se.pairs_by_budget = se.count_by_budget;
    }
    report(opt, 0.0);
    int status = choose(&se, out, graph, err);
    ng_csr_free(&se.upper);
    ng_csr_free(&se.best);
    if (status != NG_OK) ng_csr_free(graph);
    report(opt, 1.0);
    return status;
}
