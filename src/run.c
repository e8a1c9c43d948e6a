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
#include "nervegap/values.h"
#include "scale_limit.h"

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
    opt->max_simplices = NG_RUN_DEFAULT_MAX_SIMPLICES;
    opt->grid = 128;
    opt->wasserstein_limit = NG_RUN_DEFAULT_WASSERSTEIN_LIMIT;
#if defined(_SC_PHYS_PAGES) && defined(_SC_PAGESIZE)
    long pages = sysconf(_SC_PHYS_PAGES), page = sysconf(_SC_PAGESIZE);
    if (pages > 0 && page > 0)
        opt->budget_bytes = (size_t)pages / 2 * (size_t)page;
#endif
}

int ng_run_parse_max_degree(const char *text, ng_run_options *opt,
                            ng_error *err)
{
    char *end;
    long d = strtol(text, &end, 10);
    if (*text == '\0' || *end != '\0' || d < 0 || d > 4)
        return ng_error_set(err, NG_ERR_USAGE,
                            "--max-degree %s: expected 0, 1, 2, 3 or 4",
                            text);
    opt->max_degree = (int)d;
    return NG_OK;
}

int ng_run_parse_scale_limit(const char *text, ng_run_options *opt,
                             ng_error *err)
{
    if (strcmp(text, "auto") == 0) {
        opt->scale_auto = 1;
        return NG_OK;
    }
    char *end;
    errno = 0;
    double t = strtod(text, &end);
    if (*text == '\0' || *end != '\0' || errno != 0 || !isfinite(t) ||
        t < 0.0)
        return ng_error_set(err, NG_ERR_USAGE,
                            "--scale-limit %s: expected a scale ≥ 0 or auto",
                            text);
    opt->scale_auto = 0;
    opt->scale_limit = t;
    return NG_OK;
}

int ng_run_parse_grid(const char *text, ng_run_options *opt, ng_error *err)
{
    char *end;
    errno = 0;
    unsigned long long g = strtoull(text, &end, 10);
    if (text[0] < '0' || text[0] > '9' || *end != '\0' || errno != 0 ||
        g < 2 || g > (1u << 24))
        return ng_error_set(err, NG_ERR_USAGE,
                            "--grid %s: expected a number of scales from 2 "
                            "to 16777216", text);
    opt->grid = (size_t)g;
    return NG_OK;
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
    if (end == text || *end != '\0' || errno != 0 || !(v * scale >= 1.0) ||
        v * scale >= 1.8e19)
        return ng_error_set(err, NG_ERR_USAGE,
                            "--budget %s: expected a memory size of at "
                            "least one byte such as 4G, 512M or 1.5GiB",
                            text);
    *out = (size_t)(v * scale);
    return NG_OK;
}

/* A whole number written as an integer or in e-notation into *out, or
 * NG_ERR_USAGE "FLAG TEXT: expected EXPECTED". */
static int parse_whole(const char *text, const char *flag,
                       const char *expected, size_t *out, ng_error *err)
{
    char *end;
    errno = 0;
    double v = strtod(text, &end);
    if (end == text || *end != '\0' || errno != 0 || !(v >= 0.0) ||
        v >= 1.8e19 || v != floor(v))
        return ng_error_set(err, NG_ERR_USAGE, "%s %s: expected %s", flag,
                            text, expected);
    *out = (size_t)v;
    return NG_OK;
}

int ng_run_parse_count(const char *text, size_t *out, ng_error *err)
{
    return parse_whole(text, "--max-simplices",
                       "a whole number of simplices such as 20000000 or 2e7 "
                       "(0: no limit but memory)",
                       out, err);
}

int ng_run_parse_wasserstein_limit(const char *text, ng_run_options *opt,
                                   ng_error *err)
{
    return parse_whole(text, "--wasserstein-limit",
                       "a whole number of diagram points such as 50000 or "
                       "5e4 (0: no limit)",
                       &opt->wasserstein_limit, err);
}

void ng_run_result_free(ng_run_result *out)
{
    if (out == NULL) return;
    ng_persistence_free(out->persistence);
    ng_grid_free(&out->grid);
    memset(out, 0, sizeof *out);
}

static void report(const ng_run_options *opt, const char *stage, double f)
{
    if (opt->progress) opt->progress(stage, f, opt->progress_ctx);
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

static int cmp_point(const void *x, const void *y)
{
    const double *p = x, *q = y;
    if (p[0] != q[0]) return p[0] < q[0] ? -1 : 1;
    return (p[1] > q[1]) - (p[1] < q[1]);
}

/* The number of points of the larger side of the multiset difference of
 * the diagrams a (na × 2) and b (nb × 2): what the Wasserstein limit
 * counts (points with an identical partner cost the solver little; the
 * degree-0 diagrams of Čech and Rips are equal). *out; NG_ERR_NOMEM. */
static int unpaired_points(const double *a, size_t na, const double *b,
                           size_t nb, size_t *out, ng_error *err)
{
    double *sa = ng_malloc(na + 1, 2 * sizeof *sa);
    double *sb = ng_malloc(nb + 1, 2 * sizeof *sb);
    if (sa == NULL || sb == NULL) {
        ng_free(sa);
        ng_free(sb);
        return ng_error_set(err, NG_ERR_NOMEM, "out of memory");
    }
    memcpy(sa, a, na * 2 * sizeof *sa);
    memcpy(sb, b, nb * 2 * sizeof *sb);
    qsort(sa, na, 2 * sizeof *sa, cmp_point);
    qsort(sb, nb, 2 * sizeof *sb, cmp_point);
    size_t i = 0, j = 0, common = 0;
    while (i < na && j < nb) {
        int c = cmp_point(sa + 2 * i, sb + 2 * j);
        if (c == 0) common++;
        i += c <= 0;
        j += c >= 0;
    }
    ng_free(sa);
    ng_free(sb);
    *out = (na > nb ? na : nb) - common;
    return NG_OK;
}

/* Bottleneck and Wasserstein distances between the Čech and Rips
 * diagrams, per degree (DESIGN §2.6); W1 and W2 are NaN for the degrees
 * with more than opt->wasserstein_limit unpaired points (above). The
 * distances are independent tasks, the costliest first (W2, then W1, of
 * the largest degrees), shared among the threads; each solver is
 * deterministic, so the results do not depend on the thread count, and the
 * first error in task order is the one reported. */
static int divergence(const ng_persistence *p, ng_run_result *out,
                      const ng_run_options *opt, ng_error *err)
{
    enum { KINDS = 3 };
    double T = p->scale_limit;
    int degrees = p->max_degree + 1, ntask = KINDS * degrees;
    double *cut[2][NG_COMPLEX_MAX_DIM] = {{NULL}};
    size_t count[2][NG_COMPLEX_MAX_DIM] = {{0}};
    int skip[NG_COMPLEX_MAX_DIM] = {0};
    int order[KINDS * NG_COMPLEX_MAX_DIM];
    int status_of[KINDS * NG_COMPLEX_MAX_DIM];
    double rel[KINDS * NG_COMPLEX_MAX_DIM] = {0};
    ng_error task_err[KINDS * NG_COMPLEX_MAX_DIM];
    int status = NG_OK;
    for (int k = 0; k < degrees; k++)
        for (int s = 0; s < 2; s++) {
            count[s][k] = p->diagram[s].bars[k].count;
            cut[s][k] = bars_cut_at(&p->diagram[s], k, T);
            if (cut[s][k] == NULL) {
                status = ng_error_set(err, NG_ERR_NOMEM, "out of memory");
                goto cleanup;
            }
        }
    for (int k = 0; k < degrees; k++) {
        size_t unpaired = 0;
        if (opt->wasserstein_limit > 0) {
            status = unpaired_points(cut[0][k], count[0][k], cut[1][k],
                                     count[1][k], &unpaired, err);
            if (status != NG_OK) goto cleanup;
        }
        skip[k] = unpaired > opt->wasserstein_limit;
        if (skip[k]) {
            out->wasserstein1[k] = out->wasserstein2[k] = NAN;
            out->wasserstein_skipped++;
        }
    }
    /* task t: degree t / KINDS, kind t % KINDS (0 bottleneck, 1 W1, 2 W2);
     * run in order of decreasing size, W2 before W1 before bottleneck */
    for (int t = 0; t < ntask; t++) order[t] = t;
    for (int x = 1; x < ntask; x++)
        for (int y = x; y > 0; y--) {
            int t = order[y], u = order[y - 1];
            size_t st = count[0][t / KINDS] + count[1][t / KINDS];
            size_t su = count[0][u / KINDS] + count[1][u / KINDS];
            if (st < su || (st == su && t % KINDS <= u % KINDS)) break;
            order[y] = u;
            order[y - 1] = t;
        }
    int done = 0;
#pragma omp parallel for schedule(dynamic, 1) \
    num_threads(opt->threads > 0 ? opt->threads : omp_get_max_threads())
    for (int q = 0; q < ntask; q++) {
        int t = order[q], k = t / KINDS, kind = t % KINDS;
        const double *a = cut[0][k], *b = cut[1][k];
        size_t na = count[0][k], nb = count[1][k];
        ng_error_clear(&task_err[t]);
        status_of[t] = NG_OK;
        if (kind > 0 && skip[k])
            ; /* over the Wasserstein limit */
        else if (kind == 0)
            status_of[t] = ng_bottleneck_distance(a, na, b, nb,
                                                  &out->bottleneck[k],
                                                  &task_err[t]);
        else
            status_of[t] = ng_wasserstein_distance(
                a, na, b, nb, (double)kind, NG_RUN_WASSERSTEIN_ERROR,
                kind == 1 ? &out->wasserstein1[k] : &out->wasserstein2[k],
                &rel[t], &task_err[t]);
#pragma omp critical(ng_run_divergence_progress)
        {
            done++;
            report(opt, "divergence", (double)done / ntask);
        }
    }
    for (int t = 0; t < ntask; t++) {
        if (status_of[t] != NG_OK) {
            if (err != NULL) *err = task_err[t];
            status = status_of[t];
            goto cleanup;
        }
        if (rel[t] > out->wasserstein_relative_error)
            out->wasserstein_relative_error = rel[t];
    }
cleanup:
    for (int k = 0; k < degrees; k++) {
        ng_free(cut[0][k]);
        ng_free(cut[1][k]);
    }
    return status;
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
    ng_scale_choice choice;
    status = ng_scale_limit_choose(&space, &o, L, &choice, &graph, err);
    if (status != NG_OK) goto cleanup;
    out->scale_limit = choice.scale_limit;
    out->full_scale = choice.full_scale;
    out->limited_by_budget = choice.limited_by_budget;
    out->size = choice.size;

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
        .progress = o.progress,
        .progress_ctx = o.progress_ctx,
    };
    report(&o, "simplices", 0.0);
    status = ng_complex_build(&spec, &complex, err);
    if (status != NG_OK) goto cleanup;
    ng_csr_free(&graph);
    report(&o, "simplices", 1.0);
    report(&o, "reduction", 0.0);
    status = ng_persistence_compute_progress(complex, o.threads, o.progress,
                                             o.progress_ctx,
                                             &out->persistence, err);
    if (status != NG_OK) goto cleanup;
    report(&o, "reduction", 1.0);
    report(&o, "grid", 0.0);
    status = ng_grid_compute_progress(complex, out->persistence, o.grid,
                                      o.progress, o.progress_ctx, &out->grid,
                                      err);
    if (status != NG_OK) goto cleanup;
    report(&o, "grid", 1.0);
    report(&o, "divergence", 0.0);
    status = divergence(out->persistence, out, &o, err);
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
