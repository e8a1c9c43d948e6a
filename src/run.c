/* run.c — the main job of run.h: neighbour graph, scale limit, simplex set
 * with the Čech, Rips and slice values, and the reduction.
 *
 * Invariants: the graph holds exactly the pairs with Rips edge value ≤ T
 * (the k-d tree query radius only pre-selects; the edge value decides); the
 * size of the complex is estimated before it is built, and nothing larger
 * than the budget is allocated (a probe whose graph grows past the budget
 * stops keeping pairs, so probing costs time but not memory).
 */
#include "nervegap/run.h"

#include "alloc.h"
#include "nervegap/distance.h"
#include "nervegap/kdtree.h"
#include "nervegap/values.h"

#include <errno.h>
#include <math.h>
#include <omp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define DEFAULT_BUDGET ((size_t)8 << 30)

void ng_run_options_init(ng_run_options *opt)
{
    memset(opt, 0, sizeof *opt);
    opt->max_degree = 1;
    opt->scale_auto = 1;
    opt->budget_bytes = DEFAULT_BUDGET;
    opt->grid = 128;
#if defined(_SC_PHYS_PAGES) && defined(_SC_PAGESIZE)
    long pages = sysconf(_SC_PHYS_PAGES), page = sysconf(_SC_PAGESIZE);
    if (pages > 0 && page > 0)
        opt->budget_bytes = (size_t)pages / 2 * (size_t)page;
#endif
}

int ng_run_parse_slices(const char *text, ng_run_options *opt, ng_error *err)
{
    const char *p;
    if (strncmp(text, "factor:", 7) == 0) {
        opt->slice_kind = NG_SLICE_FACTOR;
        p = text + 7;
    } else if (strncmp(text, "shift:", 6) == 0) {
        opt->slice_kind = NG_SLICE_SHIFT;
        p = text + 6;
    } else {
        return ng_error_set(err, NG_ERR_USAGE,
                            "--slices %s: expected factor:L1,L2,.. (each "
                            "λ ≥ 1) or shift:D1,D2,.. (each δ ≥ 0)", text);
    }
    opt->n_slices = 0;
    for (;;) {
        char *end;
        errno = 0;
        double v = strtod(p, &end);
        int bad = end == p || errno != 0 || !isfinite(v) ||
                  (*end != ',' && *end != '\0') ||
                  (opt->slice_kind == NG_SLICE_FACTOR ? v < 1.0 : v < 0.0);
        if (bad)
            return ng_error_set(err, NG_ERR_USAGE,
                                "--slices %s: '%.*s' is not a %s", text,
                                (int)strcspn(p, ","), p,
                                opt->slice_kind == NG_SLICE_FACTOR
                                    ? "factor λ ≥ 1"
                                    : "shift δ ≥ 0");
        if (opt->n_slices == NG_RUN_MAX_SLICES)
            return ng_error_set(err, NG_ERR_USAGE,
                                "--slices: at most %d values",
                                NG_RUN_MAX_SLICES);
        opt->slice_values[opt->n_slices++] = v;
        if (*end == '\0') break;
        p = end + 1;
    }
    return NG_OK;
}

int ng_run_parse_budget(const char *text, size_t *out, ng_error *err)
{
    char *end;
    errno = 0;
    double v = strtod(text, &end);
    double scale = 1.0;
    switch (*end) {
    case 'k': case 'K': scale = 1024.0; end++; break;
    case 'm': case 'M': scale = 1024.0 * 1024.0; end++; break;
    case 'g': case 'G': scale = 1024.0 * 1024.0 * 1024.0; end++; break;
    case 't': case 'T': scale = 1024.0 * 1024.0 * 1024.0 * 1024.0; end++;
        break;
    default: break;
    }
    if (scale > 1.0 && (strcmp(end, "iB") == 0 || strcmp(end, "B") == 0))
        end += strlen(end);
    if (end == text || *end != '\0' || errno != 0 || !(v > 0.0) ||
        v * scale >= 1.8e19)
        return ng_error_set(err, NG_ERR_USAGE,
                            "--budget %s: expected a memory size such as "
                            "4G, 512M or 1.5GiB", text);
    *out = (size_t)(v * scale);
    return NG_OK;
}

void ng_run_result_free(ng_run_result *out)
{
    if (out == NULL) return;
    ng_persistence_free(out->persistence);
    ng_grid_free(&out->grid);
    memset(out, 0, sizeof *out);
}

/* ---- the neighbour graph at a scale ---- */

typedef struct graph_ctx {
    const ng_space *space;
    double scale;      /* T */
    size_t cap;        /* keep at most this many directed pairs */
    size_t kept;       /* directed pairs kept so far (atomic) */
    int over;          /* set when the cap was reached */
} graph_ctx;

static int keep_edge(size_t i, size_t j, double d, void *opaque)
{
    graph_ctx *g = opaque;
    const double *rho = g->space->rho;
    if (!(ng_rips_edge_value(g->space->law, rho[i], rho[j], d) <= g->scale))
        return 0;
    size_t kept;
#pragma omp atomic capture
    kept = g->kept++;
    if (kept >= g->cap) {
#pragma omp atomic write
        g->over = 1;
        return 0;
    }
    return 1;
}

/* Builds the graph of pairs with edge value ≤ T, keeping at most cap
 * directed pairs; *over tells whether the cap was hit (the graph is then
 * incomplete and only good for freeing), *pairs how many directed pairs
 * there are (counted past the cap, so that a message can say how much the
 * graph would need). */
static int graph_at(const ng_space *s, double T, size_t cap, int threads,
                    ng_csr *out, int *over, size_t *pairs, ng_error *err)
{
    graph_ctx g = {s, T, cap, 0, 0};
    int status;
    memset(out, 0, sizeof *out);
    if (s->metric == NG_METRIC_GIVEN) {
        size_t n = s->n, count = 0;
        out->n = n;
        out->offset = ng_calloc(n + 1, sizeof *out->offset);
        if (out->offset == NULL)
            return ng_error_set(err, NG_ERR_NOMEM, "out of memory for the "
                                "neighbour graph");
        for (size_t i = 0; i < n; i++) {
            for (size_t j = 0; j < n; j++)
                if (j != i && keep_edge(i, j, s->dist[i * n + j], &g)) count++;
            out->offset[i + 1] = count;
        }
        *pairs = g.kept;
        if (g.over) {
            ng_csr_free(out);
            *over = 1;
            return NG_OK;
        }
        out->nbr = ng_malloc(count, sizeof *out->nbr);
        out->dist = ng_malloc(count, sizeof *out->dist);
        if (out->nbr == NULL || out->dist == NULL) {
            ng_csr_free(out);
            return ng_error_set(err, NG_ERR_NOMEM, "out of memory for the "
                                "neighbour graph");
        }
        g.kept = 0;
        size_t pos = 0;
        for (size_t i = 0; i < n; i++)
            for (size_t j = 0; j < n; j++)
                if (j != i && keep_edge(i, j, s->dist[i * n + j], &g)) {
                    out->nbr[pos] = (ng_index)j;
                    out->dist[pos++] = s->dist[i * n + j];
                }
        *over = g.over;
        return NG_OK;
    }
    double *radius = ng_malloc(s->n, sizeof *radius);
    if (radius == NULL)
        return ng_error_set(err, NG_ERR_NOMEM, "out of memory for the "
                            "neighbour graph");
    double r_max = 0.0;
    for (size_t i = 0; i < s->n; i++) {
        radius[i] = ng_law_radius(s->law, s->rho[i], T);
        if (radius[i] > r_max) r_max = radius[i];
    }
    /* a kept pair has d ≤ r_i(T) + r_j(T) ≤ r_i(T) + r_max(T); the slack
     * covers rounding, the edge value decides exactly */
    for (size_t i = 0; i < s->n; i++)
        radius[i] = (radius[i] + r_max) * (1.0 + 1e-12) + 1e-300;
    status = ng_neighbors_within(s->coords, s->n, s->dim, s->metric, radius,
                                 keep_edge, &g, threads, out, err);
    ng_free(radius);
    *over = g.over;
    *pairs = g.kept;
    return status;
}

/* ---- sizes and the budget ---- */

typedef struct probe {
    int status;            /* NG_OK */
    int fits;
    ng_complex_size size;
    size_t bytes;          /* graph + complex + reductions */
    size_t graph_bytes;    /* building the graph alone (also when over the
                              cap) */
    int graph_over;        /* the graph stopped: more pairs than fit */
    int complex_over;      /* the count stopped: more simplices than fit */
} probe;

static size_t graph_bytes(size_t directed_pairs, size_t n)
{
    return directed_pairs * (sizeof(ng_index) + sizeof(double)) +
           (n + 1) * sizeof(size_t);
}

/* Peak bytes per directed pair while the graph is built: the k-d tree
 * query collects the pairs as 16-byte entries in lists grown by doubling
 * (up to 32 bytes a pair), then copies them into the graph (12 bytes). */
#define GRAPH_BUILD_PEAK 44

/* Size of the complex at T; keeps the graph in *keep when it fits and
 * keep is not NULL. */
static probe probe_at(const ng_space *s, double T, const ng_run_options *opt,
                      int n_filtrations, ng_csr *keep, ng_error *err)
{
    probe p = {NG_OK, 0, {{0}, 0, 0, 0}, 0, 0, 0, 0};
    int team = opt->threads > 0 ? opt->threads : 1;
    size_t reductions = (size_t)(n_filtrations < team ? n_filtrations : team);
    /* pairs alone must leave room: each costs GRAPH_BUILD_PEAK bytes while
     * the graph is built */
    size_t cap = opt->budget_bytes / GRAPH_BUILD_PEAK;
    ng_csr g;
    size_t pairs = 0;
    p.status = graph_at(s, T, cap, opt->threads, &g, &p.graph_over, &pairs,
                        err);
    if (p.status != NG_OK) return p;
    p.graph_bytes = pairs > SIZE_MAX / GRAPH_BUILD_PEAK
                        ? SIZE_MAX
                        : pairs * GRAPH_BUILD_PEAK;
    if (p.graph_over) {
        ng_csr_free(&g);
        p.bytes = SIZE_MAX;
        return p;
    }
    /* every simplex of dimension ≥ 1 costs ≥ 16 bytes in the complex:
     * more of them than budget / 16 cannot fit, and are not counted */
    p.status = ng_complex_estimate_capped(&g, opt->max_degree + 1,
                                          n_filtrations, opt->threads,
                                          opt->budget_bytes / 16, &p.size,
                                          &p.complex_over, err);
    if (p.status != NG_OK || p.complex_over) {
        ng_csr_free(&g);
        p.bytes = SIZE_MAX;
        return p;
    }
    size_t gb = graph_bytes(g.offset[g.n], g.n);
    p.bytes = gb + p.size.bytes_build;
    if (p.size.bytes_reduce > 0 &&
        reductions > (SIZE_MAX - p.bytes) / p.size.bytes_reduce)
        p.bytes = SIZE_MAX;
    else
        p.bytes += reductions * p.size.bytes_reduce;
    /* the graph's construction peak must fit as well as what follows */
    size_t build_peak = g.offset[g.n] * GRAPH_BUILD_PEAK;
    if (build_peak > p.bytes) p.bytes = build_peak;
    p.fits = p.bytes <= opt->budget_bytes;
    if (p.fits && keep) *keep = g;
    else ng_csr_free(&g);
    return p;
}

/* The full scale: min over sample points c of max_i tau_i(d(x_c, x_i)).
 * Candidates are tried in parallel; a candidate is abandoned as soon as its
 * running max reaches the best value found so far, which cannot change the
 * minimum. */
static double full_scale(const ng_space *s, int threads)
{
    size_t n = s->n;
    double best = INFINITY;
    int team = threads > 0 ? threads : omp_get_max_threads();
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

static int double_cmp(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
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
    if (s->metric == NG_METRIC_GIVEN) {
        for (size_t i = 0; i < n; i++) {
            double best = INFINITY;
            size_t arg = i == 0 ? 1 : 0;
            for (size_t j = 0; j < n; j++)
                if (j != i && s->dist[i * n + j] < best) {
                    best = s->dist[i * n + j];
                    arg = j;
                }
            near[i] = best;
            idx[i] = (ng_index)arg;
        }
    } else {
        status = ng_knn_all(s->coords, n, s->dim, s->metric, 1, threads,
                            near, idx, err);
        if (status != NG_OK) goto cleanup;
    }
    for (size_t i = 0; i < n; i++)
        near[i] = ng_rips_edge_value(s->law, s->rho[i], s->rho[idx[i]],
                                     near[i]);
    qsort(near, n, sizeof *near, double_cmp);
    *out = near[n / 2];
cleanup:
    ng_free(near);
    ng_free(idx);
    return status;
}

static void report(const ng_run_options *opt, const char *stage, double f)
{
    if (opt->progress) opt->progress(stage, f, opt->progress_ctx);
}

#define BISECTION_STEPS 14 /* bracket [T, 2T] → relative width 6e-5 */

/* The largest scale in [lo, hi] (lo fits, hi does not) that fits, by
 * bisection on the size estimate. */
static int bisect_fit(const ng_space *s, const ng_run_options *opt, int L,
                      double lo, double hi, double *out, ng_error *err)
{
    for (int step = 0; step < BISECTION_STEPS && hi - lo > 1e-12 * hi;
         step++) {
        double mid = 0.5 * (lo + hi);
        probe p = probe_at(s, mid, opt, L, NULL, err);
        if (p.status != NG_OK) return p.status;
        if (p.fits) lo = mid;
        else hi = mid;
        report(opt, "scale limit", 0.5 + 0.5 * (step + 1) / BISECTION_STEPS);
    }
    *out = lo;
    return NG_OK;
}

/* Finds a bracket [lo fits, hi does not] by doubling from a start scale,
 * never above cap (which is known not to fit, or +inf). */
static int bracket_fit(const ng_space *s, const ng_run_options *opt, int L,
                       double cap, double *lo, double *hi, ng_error *err)
{
    double t = 0.0;
    int status = start_scale(s, opt->threads, &t, err);
    if (status != NG_OK) return status;
    if (!(t > 0.0) || !isfinite(t)) t = isfinite(cap) ? cap / 1024.0 : 1.0;
    if (t >= cap) t = 0.5 * cap;
    probe p = probe_at(s, t, opt, L, NULL, err);
    if (p.status != NG_OK) return p.status;
    int rounds = 0;
    if (p.fits) {
        *lo = t;
        for (;;) {
            double next = 2.0 * t;
            if (next >= cap || rounds++ > 200) {
                *hi = cap;
                return NG_OK;
            }
            p = probe_at(s, next, opt, L, NULL, err);
            if (p.status != NG_OK) return p.status;
            if (!p.fits) {
                *hi = next;
                return NG_OK;
            }
            *lo = t = next;
        }
    }
    *hi = t;
    for (;;) {
        double next = 0.5 * t;
        if (rounds++ > 200 || next == 0.0) {
            *lo = 0.0;
            return NG_OK;
        }
        p = probe_at(s, next, opt, L, NULL, err);
        if (p.status != NG_OK) return p.status;
        if (p.fits) {
            *lo = next;
            return NG_OK;
        }
        *hi = t = next;
    }
}

static void size_text(size_t bytes, char *buf, size_t size)
{
    if (bytes == SIZE_MAX) snprintf(buf, size, "more than the budget");
    else if (bytes >= ((size_t)1 << 30))
        snprintf(buf, size, "%.1f GiB", (double)bytes / (1 << 30));
    else snprintf(buf, size, "%.1f MiB", (double)bytes / (1 << 20));
}

/* Chooses T and builds the graph at T into *graph. */
static int choose_scale(const ng_space *s, const ng_run_options *opt, int L,
                        ng_run_result *res, ng_csr *graph, ng_error *err)
{
    res->full_scale = NAN;
    int status;
    report(opt, "scale limit", 0.0);
    if (!opt->scale_auto) {
        double T = opt->scale_limit;
        probe p = probe_at(s, T, opt, L, graph, err);
        if (p.status != NG_OK) return p.status;
        if (p.fits) {
            res->scale_limit = T;
            res->size = p.size;
            return NG_OK;
        }
        double lo, hi, fit;
        status = bracket_fit(s, opt, L, T, &lo, &hi, err);
        if (status == NG_OK) status = bisect_fit(s, opt, L, lo, hi, &fit, err);
        if (status != NG_OK) return status;
        char need[64], have[64];
        size_text(p.bytes, need, sizeof need);
        size_text(opt->budget_bytes, have, sizeof have);
        if (p.complex_over)
            return ng_error_set(err, NG_ERR_BUDGET,
                                "--scale-limit %.17g: the complex would have "
                                "more than %zu simplices and need more than "
                                "%s, the budget; --scale-limit %.6g would fit "
                                "(or raise --budget or lower --max-degree)",
                                T, p.size.total, have, fit);
        if (p.graph_over) {
            size_text(p.graph_bytes, need, sizeof need);
            return ng_error_set(err, NG_ERR_BUDGET,
                                "--scale-limit %.17g: building the "
                                "neighbour graph alone would need %s, more "
                                "than the budget of %s; --scale-limit %.6g "
                                "would fit (or raise --budget)", T, need,
                                have, fit);
        }
        return ng_error_set(err, NG_ERR_BUDGET,
                            "--scale-limit %.17g: the complex would have "
                            "%zu simplices and need %s, more than the budget "
                            "of %s; --scale-limit %.6g would fit (or raise "
                            "--budget or lower --max-degree)",
                            T, p.size.total, need, have, fit);
    }
    double cap = INFINITY;
    /* the complete complex needs ≥ 16 bytes a simplex: skip the O(n²) full
     * scale when even that cannot fit */
    if (complete_count(s->n, opt->max_degree + 1) * 16.0 <=
        (double)opt->budget_bytes) {
        res->full_scale = full_scale(s, opt->threads);
        report(opt, "scale limit", 0.25);
        probe p = probe_at(s, res->full_scale, opt, L, graph, err);
        if (p.status != NG_OK) return p.status;
        if (p.fits) {
            res->scale_limit = res->full_scale;
            res->size = p.size;
            return NG_OK;
        }
        cap = res->full_scale;
    }
    double lo, hi, fit;
    status = bracket_fit(s, opt, L, cap, &lo, &hi, err);
    if (status == NG_OK) status = bisect_fit(s, opt, L, lo, hi, &fit, err);
    if (status != NG_OK) return status;
    probe p = probe_at(s, fit, opt, L, graph, err);
    if (p.status != NG_OK) return p.status;
    if (!p.fits)
        return ng_error_set(err, NG_ERR_BUDGET,
                            "no positive scale fits the budget of %zu bytes "
                            "(raise --budget)", opt->budget_bytes);
    res->scale_limit = fit;
    res->size = p.size;
    res->limited_by_budget = 1;
    return NG_OK;
}

/* The bars of degree k of diagram d with deaths of +inf set to T (the
 * comparison of two filtrations cut at the same T): a new m × 2 array. */
static double *bars_cut_at(const ng_diagram *d, int k, double T)
{
    const ng_bars *b = &d->bars[k];
    double *a = ng_malloc(b->count, 2 * sizeof *a);
    if (a == NULL) return NULL;
    for (size_t i = 0; i < b->count; i++) {
        a[2 * i] = b->interval[2 * i];
        a[2 * i + 1] = isinf(b->interval[2 * i + 1]) ? T
                                                     : b->interval[2 * i + 1];
    }
    return a;
}

/* Bottleneck and Wasserstein distances between the Čech and Rips
 * diagrams, per degree (DESIGN §2.6). */
static int divergence(const ng_persistence *p, ng_run_result *out,
                      ng_error *err)
{
    double T = p->scale_limit;
    for (int k = 0; k <= p->max_degree; k++) {
        double *a = bars_cut_at(&p->diagram[0], k, T);
        double *b = bars_cut_at(&p->diagram[1], k, T);
        size_t na = p->diagram[0].bars[k].count;
        size_t nb = p->diagram[1].bars[k].count;
        int status = NG_OK;
        double rel1 = 0.0, rel2 = 0.0;
        if (a == NULL || b == NULL)
            status = ng_error_set(err, NG_ERR_NOMEM, "out of memory");
        if (status == NG_OK)
            status = ng_bottleneck_distance(a, na, b, nb, &out->bottleneck[k],
                                            err);
        if (status == NG_OK)
            status = ng_wasserstein_distance(a, na, b, nb, 1.0,
                                             NG_RUN_WASSERSTEIN_ERROR,
                                             &out->wasserstein1[k], &rel1,
                                             err);
        if (status == NG_OK)
            status = ng_wasserstein_distance(a, na, b, nb, 2.0,
                                             NG_RUN_WASSERSTEIN_ERROR,
                                             &out->wasserstein2[k], &rel2,
                                             err);
        ng_free(a);
        ng_free(b);
        if (status != NG_OK) return status;
        if (rel1 > out->wasserstein_relative_error)
            out->wasserstein_relative_error = rel1;
        if (rel2 > out->wasserstein_relative_error)
            out->wasserstein_relative_error = rel2;
    }
    return NG_OK;
}

typedef struct value_ctx {
    const ng_space *space;
    const ng_run_options *opt;
} value_ctx;

/* The values of one simplex in the filtration order of run.h. */
static int simplex_values(const ng_index *v, int m, double *out, void *opaque)
{
    const value_ctx *ctx = opaque;
    double rips = ng_rips_value(ctx->space, v, m);
    double cech = ng_cech_value(ctx->space, v, m);
    if (cech < rips) cech = rips; /* rounding: Čech is never below Rips */
    out[0] = cech;
    out[1] = rips;
    const ng_run_options *opt = ctx->opt;
    for (int j = 0; j < opt->n_slices; j++) {
        double lam = opt->slice_values[j];
        double f = opt->slice_kind == NG_SLICE_FACTOR ? cech / lam
                                                      : cech - lam;
        out[2 + j] = f > rips ? f : rips;
    }
    return 0;
}

int ng_run_compute(const ng_cloud *cloud, const ng_radii *radii,
                   const ng_scheme *scheme, const ng_run_options *opt,
                   ng_run_result *out, ng_error *err)
{
    memset(out, 0, sizeof *out);
    if (opt->max_degree < 0 || opt->max_degree + 1 > NG_COMPLEX_MAX_DIM ||
        opt->max_degree + 2 > NG_SIMPLEX_MAX_VERTICES)
        return ng_error_set(err, NG_ERR_USAGE,
                            "--max-degree %d: expected 0 to %d",
                            opt->max_degree, NG_COMPLEX_MAX_DIM - 1);
    if (opt->grid < 2)
        return ng_error_set(err, NG_ERR_USAGE,
                            "--grid %zu: expected at least 2 scales",
                            opt->grid);
    if (!opt->scale_auto && !(opt->scale_limit >= 0.0 &&
                              isfinite(opt->scale_limit)))
        return ng_error_set(err, NG_ERR_USAGE,
                            "--scale-limit: expected a finite scale ≥ 0 or "
                            "auto");
    ng_space space = {
        .metric = scheme->metric,
        .law = scheme->law,
        .n = cloud->n,
        .dim = cloud->dim,
        .coords = cloud->coords,
        .dist = cloud->dist,
        .rho = radii->rho,
    };
    int status = ng_space_check(&space, err);
    if (status != NG_OK) return status;
    int L = 2 + (opt->slice_kind != NG_SLICE_NONE ? opt->n_slices : 0);
    ng_run_options o = *opt;
    if (opt->slice_kind == NG_SLICE_NONE) o.n_slices = 0;

    ng_csr graph = {0};
    double *vertex_values = NULL;
    ng_complex *complex = NULL;
    status = choose_scale(&space, &o, L, out, &graph, err);
    if (status != NG_OK) goto cleanup;
    report(&o, "scale limit", 1.0);

    vertex_values = ng_malloc(cloud->n, (size_t)L * sizeof *vertex_values);
    if (vertex_values == NULL) {
        status = ng_error_set(err, NG_ERR_NOMEM, "out of memory");
        goto cleanup;
    }
    for (size_t i = 0; i < cloud->n; i++)
        for (int j = 0; j < L; j++)
            vertex_values[i * (size_t)L + (size_t)j] = radii->birth[i];
    value_ctx vctx = {&space, &o};
    ng_complex_spec spec = {
        .graph = &graph,
        .top_dim = o.max_degree + 1,
        .n_filtrations = L,
        .vertex_values = vertex_values,
        .scale_limit = out->scale_limit,
        .value = simplex_values,
        .ctx = &vctx,
        .threads = o.threads,
    };
    report(&o, "simplices", 0.0);
    status = ng_complex_build(&spec, &complex, err);
    if (status != NG_OK) goto cleanup;
    ng_csr_free(&graph);
    report(&o, "simplices", 1.0);
    report(&o, "reduction", 0.0);
    status = ng_persistence_compute(complex, o.threads, &out->persistence,
                                    err);
    if (status != NG_OK) goto cleanup;
    report(&o, "reduction", 1.0);
    status = ng_grid_compute(complex, out->persistence, o.grid, &out->grid,
                             err);
    if (status != NG_OK) goto cleanup;
    report(&o, "grid", 1.0);
    status = divergence(out->persistence, out, err);
    if (status != NG_OK) goto cleanup;
    report(&o, "divergence", 1.0);
    for (int j = 0; j < L; j++) {
        const ng_diagram *d = &out->persistence->diagram[j];
        for (int k = 0; k <= d->max_degree; k++) {
            size_t essential = d->bars[k].truncated;
            if (k == 0 && essential > 0) essential--; /* the one component */
            if (essential > 0) out->truncated = 1;
        }
    }

cleanup:
    ng_csr_free(&graph);
    ng_free(vertex_values);
    ng_complex_free(complex);
    if (status != NG_OK) ng_run_result_free(out);
    return status;
}
