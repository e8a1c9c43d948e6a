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

int ng_run_parse_count(const char *text, size_t *out, ng_error *err)
{
    char *end;
    errno = 0;
    double v = strtod(text, &end);
    if (end == text || *end != '\0' || errno != 0 || !(v >= 0.0) ||
        v >= 1.8e19 || v != floor(v))
        return ng_error_set(err, NG_ERR_USAGE,
                            "--max-simplices %s: expected a whole number of "
                            "simplices such as 20000000 or 2e7 (0: no limit "
                            "but memory)", text);
    *out = (size_t)v;
    return NG_OK;
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

/* Bottleneck and Wasserstein distances between the Čech and Rips
 * diagrams, per degree (DESIGN §2.6). */
static int divergence(const ng_persistence *p, ng_run_result *out,
                      const ng_run_options *opt, ng_error *err)
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
        report(opt, "divergence", (k + 1.0) / (p->max_degree + 1.0));
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
