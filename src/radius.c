/* radius.c — radius rules and the preparation of a cloud for a scheme
 * (DESIGN §2.1; see radius.h for the table of rules).
 *
 * Invariants of a successful ng_radii_compute: every rho is finite and ≥ 0;
 * birth = ng_law_birth(law, rho); origin is strictly increasing; under law
 * scaled without raw_radius the median of rho is 1.
 *
 * The kernel density sum is truncated: terms with
 * exp(-d²/(2H²)) < w_cut = 1e-12 / n are left out, i.e. only neighbours
 * within H·sqrt(2·ln(n·1e12)) are summed. The unnormalised sum at x_i is
 * at least 1 (its own term) and at most n − 1 terms are dropped, so the
 * relative error of f_i is below (n − 1)·w_cut < 1e-12 and that of
 * rho_i = f_i^(-1/d) below 1e-12/d.
 */
#include "nervegap/radius.h"

#include "alloc.h"
#include "nervegap/kdtree.h"
#include "order.h"
#include "radius_internal.h"

#include <errno.h>
#include <math.h>
#include <omp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define KDE_RELATIVE_CUT 1e-12
#define NG_PI 3.14159265358979323846

void ng_scheme_init(ng_scheme *scheme)
{
    memset(scheme, 0, sizeof *scheme);
    scheme->metric = NG_METRIC_EUCLIDEAN;
    scheme->rule.kind = NG_RADIUS_UNIFORM;
    scheme->law = NG_LAW_SCALED;
}

/* Parses a positive integer; 0 when text is not one. */
static size_t parse_count(const char *text)
{
    if (*text < '0' || *text > '9') return 0;
    errno = 0;
    char *end;
    unsigned long long v = strtoull(text, &end, 10);
    if (errno != 0 || *end != '\0' || v > NG_INDEX_MAX) return 0;
    return (size_t)v;
}

int ng_radius_parse(const char *text, ng_radius_rule *out, ng_error *err)
{
    memset(out, 0, sizeof *out);
    const char *colon = strchr(text, ':');
    size_t head = colon ? (size_t)(colon - text) : strlen(text);
    const char *arg = colon ? colon + 1 : NULL;

    if (strncmp(text, "uniform", head) == 0 && head == 7 && !arg) {
        out->kind = NG_RADIUS_UNIFORM;
        return NG_OK;
    }
    if ((head == 3 && strncmp(text, "knn", 3) == 0) ||
        (head == 3 && strncmp(text, "dtm", 3) == 0)) {
        out->kind = text[0] == 'k' ? NG_RADIUS_KNN : NG_RADIUS_DTM;
        out->k = arg ? parse_count(arg) : 0;
        if (out->k == 0)
            return ng_error_set(err, NG_ERR_USAGE,
                                "--radius %s: expected %.3s:K with K a "
                                "positive integer, e.g. %.3s:8",
                                text, text, text);
        return NG_OK;
    }
    if (head == 3 && strncmp(text, "kde", 3) == 0) {
        out->kind = NG_RADIUS_KDE;
        if (!arg) return NG_OK; /* Scott's rule */
        errno = 0;
        char *end;
        double h = strtod(arg, &end);
        if (*arg == '\0' || *end != '\0' || errno != 0 || !isfinite(h) ||
            h <= 0.0)
            return ng_error_set(err, NG_ERR_USAGE,
                                "--radius %s: expected kde or kde:H with H a "
                                "positive bandwidth, e.g. kde:0.5", text);
        out->bandwidth = h;
        return NG_OK;
    }
    if ((head == 6 && strncmp(text, "column", 6) == 0) ||
        (head == 4 && strncmp(text, "file", 4) == 0)) {
        out->kind = text[0] == 'c' ? NG_RADIUS_COLUMN : NG_RADIUS_FILE;
        if (!arg || *arg == '\0')
            return ng_error_set(err, NG_ERR_USAGE,
                                "--radius %s: expected %s", text,
                                text[0] == 'c' ? "column:J (0-based index "
                                                 "or header name)"
                                               : "file:PATH");
        if (strlen(arg) >= sizeof out->arg)
            return ng_error_set(err, NG_ERR_USAGE,
                                "--radius: argument longer than %d bytes",
                                NG_RADIUS_TEXT_MAX - 1);
        strcpy(out->arg, arg);
        return NG_OK;
    }
    return ng_error_set(err, NG_ERR_USAGE,
                        "--radius: unknown rule '%s' (expected uniform, "
                        "knn:K, dtm:K, kde, kde:H, column:J or file:PATH)",
                        text);
}

void ng_radius_format(const ng_radius_rule *rule, char *buf, size_t size)
{
    switch (rule->kind) {
    case NG_RADIUS_UNIFORM: snprintf(buf, size, "uniform"); return;
    case NG_RADIUS_KNN: snprintf(buf, size, "knn:%zu", rule->k); return;
    case NG_RADIUS_DTM: snprintf(buf, size, "dtm:%zu", rule->k); return;
    case NG_RADIUS_KDE:
        if (rule->bandwidth > 0.0)
            snprintf(buf, size, "kde:%.17g", rule->bandwidth);
        else
            snprintf(buf, size, "kde");
        return;
    case NG_RADIUS_COLUMN: snprintf(buf, size, "column:%s", rule->arg); return;
    case NG_RADIUS_FILE: snprintf(buf, size, "file:%s", rule->arg); return;
    }
    snprintf(buf, size, "unknown");
}

void ng_radii_free(ng_radii *radii)
{
    if (radii == NULL) return;
    ng_free(radii->rho);
    ng_free(radii->birth);
    ng_free(radii->origin);
    memset(radii, 0, sizeof *radii);
}

/* ---- neighbours of every point: coordinates through the k-d tree, a
 * distance matrix row by row ---- */

typedef struct row_entry { double d; ng_index j; } row_entry;

/* 1 when a comes before b in the order (distance, index). */
static int entry_before(row_entry a, row_entry b)
{
    return a.d < b.d || (a.d == b.d && a.j < b.j);
}

static int entry_cmp(const void *a, const void *b)
{
    const row_entry *x = a, *y = b;
    return entry_before(*x, *y) ? -1 : entry_before(*y, *x);
}

/* Restores the heap h[0..m) (each entry not before its children: the
 * last of the order on top) below position i. */
static void sift_down(row_entry *h, size_t m, size_t i)
{
    for (;;) {
        size_t c = 2 * i + 1;
        if (c >= m) return;
        if (c + 1 < m && entry_before(h[c], h[c + 1])) c++;
        if (!entry_before(h[i], h[c])) return;
        row_entry t = h[i];
        h[i] = h[c];
        h[c] = t;
        i = c;
    }
}

/* Each row keeps the k first others of its order in a heap whose top is
 * the last of them, so that a row costs O(n log k) instead of a sort of
 * the whole row; the k kept are sorted at the end. */
int ng_knn_given(const double *dist, size_t n, size_t k, int threads,
                 double *out_d, ng_index *out_j, ng_error *err)
{
    int status = NG_OK;
    int team = threads > 0 ? threads : omp_get_max_threads();
#pragma omp parallel num_threads(team) if (n > 256)
    {
        row_entry *heap = ng_malloc(k, sizeof *heap);
        if (heap == NULL) {
#pragma omp atomic write
            status = NG_ERR_NOMEM;
        }
#pragma omp for schedule(static)
        for (size_t i = 0; i < n; i++) {
            if (heap == NULL) continue;
            const double *row = dist + i * n;
            size_t m = 0, j = 0;
            for (; j < n && m < k; j++)
                if (j != i) heap[m++] = (row_entry){row[j], (ng_index)j};
            for (size_t p = m / 2; p-- > 0;) sift_down(heap, m, p);
            for (; j < n; j++) {
                row_entry e = {row[j], (ng_index)j};
                if (j != i && entry_before(e, heap[0])) {
                    heap[0] = e;
                    sift_down(heap, m, 0);
                }
            }
            qsort(heap, m, sizeof *heap, entry_cmp);
            for (size_t r = 0; r < m; r++) {
                out_d[i * k + r] = heap[r].d;
                out_j[i * k + r] = heap[r].j;
            }
        }
        ng_free(heap);
    }
    if (status != NG_OK)
        return ng_error_set(err, status, "out of memory sorting distances");
    return NG_OK;
}

/* The k nearest other points of every point (n × k arrays, caller frees). */
static int nearest(const ng_cloud *cloud, ng_metric metric, size_t k,
                   int threads, double **out_d, ng_index **out_j,
                   ng_error *err)
{
    *out_d = ng_malloc(cloud->n, k * sizeof **out_d);
    *out_j = ng_malloc(cloud->n, k * sizeof **out_j);
    int status;
    if (*out_d == NULL || *out_j == NULL || k > SIZE_MAX / sizeof(double))
        status = ng_error_set(err, NG_ERR_NOMEM,
                              "out of memory for %zu × %zu neighbours",
                              cloud->n, k);
    else if (cloud->dist)
        status = ng_knn_given(cloud->dist, cloud->n, k, threads, *out_d,
                              *out_j, err);
    else
        status = ng_knn_all(cloud->coords, cloud->n, cloud->dim, metric, k,
                            threads, *out_d, *out_j, err);
    if (status != NG_OK) {
        ng_free(*out_d);
        ng_free(*out_j);
        *out_d = NULL;
        *out_j = NULL;
    }
    return status;
}

/* ---- coincident points ---- */

/* With nearest[i] the nearest other point of i (ties by index), i repeats
 * an earlier point when that neighbour is at distance 0 and has a smaller
 * index: the smallest index at distance 0 is found first. */
static int merge_duplicates(ng_cloud *cloud, const double *near_d,
                            const ng_index *near_j, size_t *origin,
                            size_t *merged, ng_error *err)
{
    size_t n = cloud->n, kept = 0;
    size_t *keep = ng_malloc(n, sizeof *keep);
    if (keep == NULL)
        return ng_error_set(err, NG_ERR_NOMEM, "out of memory merging points");
    for (size_t i = 0; i < n; i++)
        if (!(near_d[i] == 0.0 && near_j[i] < i)) keep[kept++] = i;
    if (kept < 2) {
        ng_free(keep);
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s: after merging coincident points only %zu "
                            "distinct point%s left; at least 2 are needed",
                            cloud->source, kept, kept == 1 ? " is" : "s are");
    }
    if (cloud->dist) {
        for (size_t a = 0; a < kept; a++)
            for (size_t b = 0; b < kept; b++)
                cloud->dist[a * kept + b] = cloud->dist[keep[a] * n + keep[b]];
    } else {
        for (size_t a = 0; a < kept; a++)
            memmove(cloud->coords + a * cloud->dim,
                    cloud->coords + keep[a] * cloud->dim,
                    cloud->dim * sizeof *cloud->coords);
    }
    for (size_t a = 0; a < kept; a++) origin[a] = origin[keep[a]];
    *merged = n - kept;
    cloud->n = kept;
    ng_free(keep);
    return NG_OK;
}

/* near_d, near_j: rows of length k, the nearest other point first. */
static int refuse_duplicates(const ng_cloud *cloud, size_t k,
                             const double *near_d, const ng_index *near_j,
                             const size_t *origin, ng_error *err)
{
    for (size_t i = 0; i < cloud->n; i++) {
        if (near_d[i * k] == 0.0) {
            size_t j = near_j[i * k];
            size_t a = j < i ? j : i, b = j < i ? i : j;
            return ng_error_set(err, NG_ERR_INPUT,
                                "%s: points %zu and %zu coincide, so a knn "
                                "radius would be 0; remove duplicates or pass "
                                "--merge-duplicates",
                                cloud->source, origin[a], origin[b]);
        }
    }
    return NG_OK;
}

/* ---- the rules ---- */

static void rule_knn(size_t n, size_t k, const double *near_d, double *rho)
{
    for (size_t i = 0; i < n; i++) rho[i] = near_d[i * k + (k - 1)];
}

/* near_d holds the k - 1 nearest others of each point (row length kk). */
static void rule_dtm(size_t n, size_t k, size_t kk, const double *near_d,
                     double *rho)
{
    for (size_t i = 0; i < n; i++) {
        double sum = 0.0; /* y_1 = x_i itself contributes 0 */
        for (size_t r = 0; r + 1 < k; r++) {
            double d = near_d[i * kk + r];
            sum += d * d;
        }
        rho[i] = sqrt(sum / (double)k);
    }
}

/* Scott's rule with an isotropic bandwidth: H = sigma · n^(-1/(d+4)),
 * sigma² the mean over coordinates of the sample variances (ddof 1). */
static double scott_bandwidth(const ng_cloud *cloud)
{
    size_t n = cloud->n, dim = cloud->dim;
    double var_sum = 0.0;
    for (size_t c = 0; c < dim; c++) {
        double mean = 0.0, m2 = 0.0;
        for (size_t i = 0; i < n; i++) { /* Welford: stable in one pass */
            double x = cloud->coords[i * dim + c], delta = x - mean;
            mean += delta / (double)(i + 1);
            m2 += delta * (x - mean);
        }
        var_sum += m2 / (double)(n - 1);
    }
    double sigma = sqrt(var_sum / (double)dim);
    return sigma * pow((double)n, -1.0 / ((double)dim + 4.0));
}

typedef struct kde_ctx {
    double *sum;          /* unnormalised kernel sums, one per point */
    double inv_two_h2;    /* 1 / (2 H²) */
} kde_ctx;

/* Called for every candidate pair (i, j) within the cut-off; adds the
 * kernel term to point i and keeps no edge. ng_neighbors_within handles
 * each query point i in one thread, in a fixed order, so the sums are the
 * same for any thread count. */
static int kde_accumulate(size_t i, size_t j, double d, void *opaque)
{
    (void)j;
    kde_ctx *ctx = opaque;
    ctx->sum[i] += exp(-d * d * ctx->inv_two_h2);
    return 0;
}

static int rule_kde(const ng_cloud *cloud, ng_metric metric, double h,
                    int threads, double *rho, ng_error *err)
{
    size_t n = cloud->n, dim = cloud->dim;
    if (!(h > 0.0) || !isfinite(h))
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s: kde bandwidth %g is not positive (do all "
                            "points coincide?); give one with kde:H",
                            cloud->source, h);
    double cut = h * sqrt(2.0 * log((double)n / KDE_RELATIVE_CUT));
    double *radius = ng_malloc(n, sizeof *radius);
    double *sum = ng_malloc(n, sizeof *sum);
    int status = NG_OK;
    if (radius == NULL || sum == NULL) {
        status = ng_error_set(err, NG_ERR_NOMEM, "out of memory for kde");
        goto cleanup;
    }
    for (size_t i = 0; i < n; i++) {
        radius[i] = cut;
        sum[i] = 1.0; /* the point's own kernel term */
    }
    kde_ctx ctx = {sum, 1.0 / (2.0 * h * h)};
    ng_csr none = {0};
    status = ng_neighbors_within(cloud->coords, n, dim, metric, radius,
                                 kde_accumulate, &ctx, threads, &none, err);
    ng_csr_free(&none);
    if (status != NG_OK) goto cleanup;
    /* f_i = sum_i / (n (2π H²)^(d/2)); rho_i = f_i^(-1/d), in logs so that
     * high dimensions neither overflow nor underflow. */
    double log_norm = log((double)n) +
                      0.5 * (double)dim * log(2.0 * NG_PI * h * h);
    for (size_t i = 0; i < n; i++)
        rho[i] = exp((log_norm - log(sum[i])) / (double)dim);
cleanup:
    ng_free(radius);
    ng_free(sum);
    return status;
}

/* Values of a column:J or file:PATH rule, one per input row. */
static int user_values(ng_cloud *cloud, const ng_radius_rule *rule,
                       double **values, ng_error *err)
{
    *values = NULL;
    if (rule->kind == NG_RADIUS_COLUMN) {
        if (cloud->dist)
            return ng_error_set(err, NG_ERR_USAGE,
                                "--radius column:%s: a distance matrix has "
                                "no columns to take radii from; use "
                                "file:PATH", rule->arg);
        size_t j = cloud->dim;
        for (size_t c = 0; cloud->names && c < cloud->dim; c++)
            if (strcmp(cloud->names[c], rule->arg) == 0) j = c;
        if (j == cloud->dim) {
            char *end;
            errno = 0;
            unsigned long long v = strtoull(rule->arg, &end, 10);
            if (rule->arg[0] < '0' || rule->arg[0] > '9' || *end != '\0' ||
                errno != 0 || v >= cloud->dim)
                return ng_error_set(err, NG_ERR_USAGE,
                                    "--radius column:%s: %s has %zu columns "
                                    "(0-based indices 0..%zu)%s",
                                    rule->arg, cloud->source, cloud->dim,
                                    cloud->dim - 1,
                                    cloud->names ? " and no column of that "
                                                   "name" : "");
            j = (size_t)v;
        }
        return ng_cloud_take_column(cloud, j, values, err);
    }
    ng_cloud *file = NULL;
    int status = ng_cloud_read(rule->arg, &file, err);
    if (status != NG_OK) return status;
    if (file->dim != 1 || file->n != cloud->n) {
        status = ng_error_set(err, NG_ERR_INPUT,
                              "--radius file:%s: expected one value per point "
                              "(%zu rows of 1 column), found %zu rows of %zu "
                              "columns", rule->arg, cloud->n, file->n,
                              file->dim);
        ng_cloud_free(file);
        return status;
    }
    *values = ng_malloc(cloud->n, sizeof **values);
    if (*values == NULL) {
        ng_cloud_free(file);
        return ng_error_set(err, NG_ERR_NOMEM, "out of memory for radii");
    }
    memcpy(*values, file->coords, cloud->n * sizeof **values);
    ng_cloud_free(file);
    return NG_OK;
}

static int check_user_values(const double *values, size_t n,
                             const ng_radius_rule *rule, ng_error *err)
{
    for (size_t i = 0; i < n; i++)
        if (!(values[i] >= 0.0))
            return ng_error_set(err, NG_ERR_INPUT,
                                "--radius %s:%s: the radius of point %zu is "
                                "%g; radii must be ≥ 0",
                                rule->kind == NG_RADIUS_COLUMN ? "column"
                                                               : "file",
                                rule->arg, i, values[i]);
    return NG_OK;
}

/* Median: the middle value, or the mean of the two middle values. */
static int median_of(const double *v, size_t n, double *out, ng_error *err)
{
    double *copy = ng_malloc(n, sizeof *copy);
    if (copy == NULL)
        return ng_error_set(err, NG_ERR_NOMEM, "out of memory for the median");
    memcpy(copy, v, n * sizeof *copy);
    qsort(copy, n, sizeof *copy, ng_order_doubles);
    *out = n % 2 ? copy[n / 2] : 0.5 * (copy[n / 2 - 1] + copy[n / 2]);
    ng_free(copy);
    return NG_OK;
}

/* How many nearest others the rule needs (0: none). */
static size_t neighbours_needed(const ng_scheme *scheme, size_t n,
                                ng_error *err, int *status)
{
    const ng_radius_rule *rule = &scheme->rule;
    size_t k = scheme->merge_duplicates ? 1 : 0;
    *status = NG_OK;
    if (rule->kind == NG_RADIUS_KNN) {
        if (rule->k > n - 1)
            *status = ng_error_set(err, NG_ERR_USAGE,
                                   "--radius knn:%zu: the cloud has %zu "
                                   "points, so K must be at most %zu",
                                   rule->k, n, n - 1);
        if (rule->k > k) k = rule->k;
    } else if (rule->kind == NG_RADIUS_DTM) {
        if (rule->k > n)
            *status = ng_error_set(err, NG_ERR_USAGE,
                                   "--radius dtm:%zu: the cloud has %zu "
                                   "points, so K must be at most %zu",
                                   rule->k, n, n);
        if (rule->k - 1 > k) k = rule->k - 1;
    }
    return k;
}

int ng_radii_compute(ng_cloud *cloud, const ng_scheme *scheme, int threads,
                     ng_radii *out, ng_error *err)
{
    const ng_radius_rule *rule = &scheme->rule;
    double *values = NULL, *near_d = NULL;
    ng_index *near_j = NULL;
    int status = NG_OK;
    memset(out, 0, sizeof *out);
    out->median = 1.0;

    if (rule->kind == NG_RADIUS_KDE && cloud->dist)
        return ng_error_set(err, NG_ERR_USAGE,
                            "--radius kde: a kernel density needs "
                            "coordinates (its ambient dimension); this input "
                            "is a distance matrix");
    if (rule->kind == NG_RADIUS_COLUMN || rule->kind == NG_RADIUS_FILE) {
        status = user_values(cloud, rule, &values, err);
        if (status == NG_OK)
            status = check_user_values(values, cloud->n, rule, err);
        if (status != NG_OK) goto cleanup;
    }

    size_t n = cloud->n;
    out->origin = ng_malloc(n, sizeof *out->origin);
    if (out->origin == NULL) {
        status = ng_error_set(err, NG_ERR_NOMEM, "out of memory for radii");
        goto cleanup;
    }
    for (size_t i = 0; i < n; i++) out->origin[i] = i;

    size_t k = neighbours_needed(scheme, n, err, &status);
    if (status != NG_OK) goto cleanup;
    if (k > 0) {
        status = nearest(cloud, scheme->metric, k, threads, &near_d, &near_j,
                         err);
        if (status != NG_OK) goto cleanup;
    }
    if (scheme->merge_duplicates) {
        /* the first column of the k-row arrays is the nearest other point */
        double *first_d = ng_malloc(n, sizeof *first_d);
        ng_index *first_j = ng_malloc(n, sizeof *first_j);
        if (first_d == NULL || first_j == NULL) {
            ng_free(first_d);
            ng_free(first_j);
            status = ng_error_set(err, NG_ERR_NOMEM, "out of memory merging");
            goto cleanup;
        }
        for (size_t i = 0; i < n; i++) {
            first_d[i] = near_d[i * k];
            first_j[i] = near_j[i * k];
        }
        status = merge_duplicates(cloud, first_d, first_j, out->origin,
                                  &out->merged, err);
        ng_free(first_d);
        ng_free(first_j);
        if (status != NG_OK) goto cleanup;
        if (out->merged > 0) { /* neighbours of the merged cloud */
            n = cloud->n;
            ng_free(near_d);
            ng_free(near_j);
            near_d = NULL;
            near_j = NULL;
            k = neighbours_needed(scheme, n, err, &status);
            if (status != NG_OK) goto cleanup;
            status = nearest(cloud, scheme->metric, k, threads, &near_d,
                             &near_j, err);
            if (status != NG_OK) goto cleanup;
        }
    }

    out->n = n;
    out->rho = ng_malloc(n, sizeof *out->rho);
    out->birth = ng_malloc(n, sizeof *out->birth);
    if (out->rho == NULL || out->birth == NULL) {
        status = ng_error_set(err, NG_ERR_NOMEM, "out of memory for radii");
        goto cleanup;
    }
    switch (rule->kind) {
    case NG_RADIUS_UNIFORM:
        for (size_t i = 0; i < n; i++)
            out->rho[i] = scheme->law == NG_LAW_SCALED ? 1.0 : 0.0;
        break;
    case NG_RADIUS_KNN:
        status = refuse_duplicates(cloud, k, near_d, near_j, out->origin,
                                   err);
        if (status != NG_OK) goto cleanup;
        rule_knn(n, k, near_d, out->rho);
        break;
    case NG_RADIUS_DTM: rule_dtm(n, rule->k, k, near_d, out->rho); break;
    case NG_RADIUS_KDE:
        out->bandwidth =
            rule->bandwidth > 0.0 ? rule->bandwidth : scott_bandwidth(cloud);
        status = rule_kde(cloud, scheme->metric, out->bandwidth, threads,
                          out->rho, err);
        if (status != NG_OK) goto cleanup;
        break;
    case NG_RADIUS_COLUMN:
    case NG_RADIUS_FILE:
        for (size_t i = 0; i < n; i++) out->rho[i] = values[out->origin[i]];
        break;
    }

    if (scheme->law == NG_LAW_SCALED && !scheme->raw_radius) {
        status = median_of(out->rho, n, &out->median, err);
        if (status != NG_OK) goto cleanup;
        if (!(out->median > 0.0)) {
            status = ng_error_set(err, NG_ERR_INPUT,
                                  "%s: the median base radius is 0, so the "
                                  "radii cannot be normalised by it; use "
                                  "another rule or --raw-radius",
                                  cloud->source);
            goto cleanup;
        }
        for (size_t i = 0; i < n; i++) out->rho[i] /= out->median;
    }
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(out->rho[i])) {
            status = ng_error_set(err, NG_ERR_INPUT,
                                  "%s: the base radius of point %zu is not "
                                  "finite", cloud->source, out->origin[i]);
            goto cleanup;
        }
        out->birth[i] = ng_law_birth(scheme->law, out->rho[i]);
    }

cleanup:
    ng_cloud_values_free(values);
    ng_free(near_d);
    ng_free(near_j);
    if (status != NG_OK) ng_radii_free(out);
    return status;
}
