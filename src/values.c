/* values.c — Rips and Čech values of a simplex (DESIGN §2.3): checks of a
 * weighted point set, vertex births, the Rips edge and simplex values, the
 * dispatch of the Čech value by metric (kernels in cech.c) and the monotone
 * wrapper.
 *
 * Invariant kept by ng_simplex_values: rips ≤ cech and each value is at
 * least the value of every face, whatever the rounding of the kernels.
 */
#include "nervegap/values.h"

#include "cech.h"

#include <math.h>

#define MAXV NG_SIMPLEX_MAX_VERTICES

int ng_space_check(const ng_space *s, ng_error *err)
{
    if (s == NULL)
        return ng_error_set(err, NG_ERR_USAGE, "values: no point set given");
    if (s->metric != NG_METRIC_EUCLIDEAN && s->metric != NG_METRIC_CHEBYSHEV &&
        s->metric != NG_METRIC_MANHATTAN && s->metric != NG_METRIC_GIVEN)
        return ng_error_set(err, NG_ERR_USAGE, "--metric: unknown metric %d",
                            (int)s->metric);
    if (s->law != NG_LAW_SCALED && s->law != NG_LAW_SHIFTED &&
        s->law != NG_LAW_POWER)
        return ng_error_set(err, NG_ERR_USAGE, "--law: unknown growth law %d",
                            (int)s->law);
    if (s->n > 0 && s->rho == NULL)
        return ng_error_set(err, NG_ERR_USAGE,
                            "values: no base radii given for %zu points",
                            s->n);
    if (s->metric == NG_METRIC_GIVEN) {
        if (s->n > 0 && s->dist == NULL)
            return ng_error_set(err, NG_ERR_USAGE,
                                "--distances: no distance matrix given");
    } else {
        if (s->n > 0 && s->dim > 0 && s->coords == NULL)
            return ng_error_set(err, NG_ERR_USAGE,
                                "values: no coordinates given for %zu points",
                                s->n);
        if (s->metric == NG_METRIC_MANHATTAN && s->dim >= 3)
            return ng_error_set(err, NG_ERR_USAGE,
                                "--metric manhattan: Čech values are exact "
                                "only in the plane, where L1 is isometric to "
                                "L∞; this input has dimension %zu", s->dim);
    }
    for (size_t i = 0; i < s->n; i++) {
        double r = s->rho[i];
        if (!(r >= 0.0) || isinf(r))
            return ng_error_set(err, NG_ERR_INPUT,
                                "point %zu (0-based): base radius %g is not "
                                "a finite number ≥ 0", i, r);
    }
    if (s->metric == NG_METRIC_GIVEN) {
        for (size_t i = 0; i < s->n; i++) {
            for (size_t j = 0; j < s->n; j++) {
                double d = s->dist[i * s->n + j], e = s->dist[j * s->n + i];
                if (!(d >= 0.0) || isinf(d))
                    return ng_error_set(err, NG_ERR_INPUT,
                                        "distance matrix entry (%zu, %zu) "
                                        "(0-based): %g is not a finite "
                                        "number ≥ 0", i, j, d);
                if (i == j && d != 0.0)
                    return ng_error_set(err, NG_ERR_INPUT,
                                        "distance matrix entry (%zu, %zu) "
                                        "(0-based): the diagonal must be 0, "
                                        "not %g", i, j, d);
                if (j > i && fabs(d - e) > 1e-12 * fmax(d, e))
                    return ng_error_set(err, NG_ERR_INPUT,
                                        "distance matrix entries (%zu, %zu) "
                                        "and (%zu, %zu) (0-based) differ: "
                                        "%.17g and %.17g; the matrix must be "
                                        "symmetric", i, j, j, i, d, e);
            }
        }
    } else {
        for (size_t i = 0; i < s->n; i++)
            for (size_t c = 0; c < s->dim; c++)
                if (!isfinite(s->coords[i * s->dim + c]))
                    return ng_error_set(err, NG_ERR_INPUT,
                                        "point %zu (0-based), coordinate %zu: "
                                        "%g is not a finite number", i, c,
                                        s->coords[i * s->dim + c]);
    }
    return NG_OK;
}

double ng_vertex_birth(const ng_space *s, ng_index i)
{
    return ng_law_birth(s->law, s->rho[i]);
}

double ng_rips_edge_value(ng_law law, double rho_i, double rho_j, double d)
{
    switch (law) {
    case NG_LAW_SCALED:
        if (d == 0.0) return 0.0;
        return rho_i + rho_j > 0.0 ? d / (rho_i + rho_j) : INFINITY;
    case NG_LAW_SHIFTED:
        return fmax(fmax(rho_i, rho_j), 0.5 * (d + rho_i + rho_j));
    case NG_LAW_POWER: {
        double a = fmin(rho_i, rho_j), b = fmax(rho_i, rho_j);
        if (d * d <= b * b - a * a) return b;
        return sqrt(((a + b) * (a + b) + d * d) * ((b - a) * (b - a) + d * d)) /
               (2.0 * d);
    }
    }
    return INFINITY;
}

/* Distance between points i and j of s. */
static double pair_distance(const ng_space *s, ng_index i, ng_index j)
{
    if (s->metric == NG_METRIC_GIVEN) return s->dist[(size_t)i * s->n + j];
    return ng_metric_distance(s->metric, s->coords + (size_t)i * s->dim,
                              s->coords + (size_t)j * s->dim, s->dim);
}

double ng_rips_value(const ng_space *s, const ng_index *v, int m)
{
    double t = 0.0;
    for (int i = 0; i < m; i++) {
        double b = ng_law_birth(s->law, s->rho[v[i]]);
        if (b > t) t = b;
        for (int j = i + 1; j < m; j++) {
            double e = ng_rips_edge_value(s->law, s->rho[v[i]], s->rho[v[j]],
                                          pair_distance(s, v[i], v[j]));
            if (e > t) t = e;
        }
    }
    return t;
}

/* Čech value in L∞ of coordinates produced by coord(s, vertex, c): the
 * largest one-dimensional value over the coordinates (a common point of
 * boxes exists iff one exists coordinate by coordinate). Manhattan in the
 * plane goes through the isometry (x, y) → (x + y, x − y) onto L∞. */
static double cech_linf(const ng_space *s, const ng_index *v, int m)
{
    double rho[MAXV], center[MAXV];
    for (int i = 0; i < m; i++) rho[i] = s->rho[v[i]];
    int rotate = s->metric == NG_METRIC_MANHATTAN && s->dim == 2;
    double t = 0.0;
    for (int i = 0; i < m; i++) {
        double b = ng_law_birth(s->law, rho[i]);
        if (b > t) t = b;
    }
    for (size_t c = 0; c < s->dim; c++) {
        for (int i = 0; i < m; i++) {
            const double *x = s->coords + (size_t)v[i] * s->dim;
            center[i] = !rotate ? x[c] : c == 0 ? x[0] + x[1] : x[0] - x[1];
        }
        double tc = ng_cech_interval(s->law, m, center, rho);
        if (tc > t) t = tc;
    }
    return t;
}

/* Squared euclidean distances of the simplex v into d2 (m × m). */
static void gather_sqdist(const ng_space *s, const ng_index *v, int m,
                          double *d2)
{
    for (int i = 0; i < m; i++) {
        d2[i * m + i] = 0.0;
        const double *xi = s->coords + (size_t)v[i] * s->dim;
        for (int j = i + 1; j < m; j++) {
            const double *xj = s->coords + (size_t)v[j] * s->dim;
            double acc = 0.0;
            for (size_t c = 0; c < s->dim; c++) {
                double diff = xi[c] - xj[c];
                acc += diff * diff;
            }
            d2[i * m + j] = d2[j * m + i] = acc;
        }
    }
}

double ng_cech_value(const ng_space *s, const ng_index *v, int m)
{
    switch (s->metric) {
    case NG_METRIC_EUCLIDEAN: {
        double d2[MAXV * MAXV], rho[MAXV];
        gather_sqdist(s, v, m, d2);
        for (int i = 0; i < m; i++) rho[i] = s->rho[v[i]];
        return ng_cech_euclid(s->law, m, d2, rho);
    }
    case NG_METRIC_CHEBYSHEV:
    case NG_METRIC_MANHATTAN:
        return cech_linf(s, v, m);
    case NG_METRIC_GIVEN:
        return ng_cech_given(s->law, m, v, s->n, s->dist, s->rho);
    }
    return INFINITY;
}

int ng_simplex_values(const ng_space *s, const ng_index *v, int m,
                      double *rips, double *cech, ng_error *err)
{
    if (m < 1 || m > MAXV)
        return ng_error_set(err, NG_ERR_INPUT,
                            "simplex of %d vertices: between 1 and %d "
                            "vertices are supported", m, MAXV);
    for (int i = 0; i < m; i++) {
        if ((size_t)v[i] >= s->n)
            return ng_error_set(err, NG_ERR_INPUT,
                                "simplex vertex %u: the point set has only "
                                "%zu points (indices are 0-based)",
                                (unsigned)v[i], s->n);
        for (int j = 0; j < i; j++)
            if (v[j] == v[i])
                return ng_error_set(err, NG_ERR_INPUT,
                                    "simplex vertex %u is repeated",
                                    (unsigned)v[i]);
    }
    /* Rips is a max over vertices and edges, monotone by construction. */
    double rips_value = ng_rips_value(s, v, m);

    /* Čech: the raw value of every face, then the max over sub-faces in
     * increasing mask order (every proper subset of a mask is smaller). */
    double face[1u << MAXV];
    double d2[MAXV * MAXV], rho[MAXV];
    int euclid = s->metric == NG_METRIC_EUCLIDEAN;
    if (euclid) gather_sqdist(s, v, m, d2);
    for (int i = 0; i < m; i++) rho[i] = s->rho[v[i]];
    for (unsigned mask = 1; mask < (1u << m); mask++) {
        ng_index sub[MAXV];
        int idx[MAXV], k = 0;
        for (int i = 0; i < m; i++)
            if (mask & (1u << i)) {
                idx[k] = i;
                sub[k++] = v[i];
            }
        double raw;
        if (euclid) {
            double sd2[MAXV * MAXV], srho[MAXV];
            for (int a = 0; a < k; a++) {
                srho[a] = rho[idx[a]];
                for (int b = 0; b < k; b++)
                    sd2[a * k + b] = d2[idx[a] * m + idx[b]];
            }
            raw = ng_cech_euclid(s->law, k, sd2, srho);
        } else {
            raw = ng_cech_value(s, sub, k);
        }
        for (int i = 0; i < m; i++)
            if ((mask & (1u << i)) && mask != (1u << i) &&
                face[mask & ~(1u << i)] > raw)
                raw = face[mask & ~(1u << i)];
        face[mask] = raw;
    }
    double cech_value = face[(1u << m) - 1];
    if (cech_value < rips_value) cech_value = rips_value;
    if (rips) *rips = rips_value;
    if (cech) *cech = cech_value;
    return NG_OK;
}
