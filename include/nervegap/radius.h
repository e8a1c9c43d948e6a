/* radius.h — radius rules (DESIGN §2.1): the base radius rho_i ≥ 0 of every
 * point, from a local density rule or from user data, and the preparation
 * of a cloud for a radius scheme (taking out a radius column, merging
 * duplicate points).
 *
 *   uniform      1 under law scaled, 0 under shifted and power
 *   knn:K        distance to the K-th nearest other point
 *   dtm:K        sqrt((1/K) Σ_{j=1..K} d(x_i, y_j)²), y_1 = x_i, y_2.. the
 *                nearest others (distance to measure with mass K/n)
 *   kde[:H]      f_i^(-1/d), f_i the Gaussian kernel density estimate with
 *                isotropic bandwidth H at x_i (Scott's rule without H)
 *   column:J     coordinate column J (0-based, or a header name), removed
 *                from the coordinates
 *   file:PATH    one value per point from PATH
 *
 * Under law scaled rho is divided by its median unless raw_radius is set.
 */
#ifndef NERVEGAP_RADIUS_H
#define NERVEGAP_RADIUS_H

#include "nervegap/cloud.h"
#include "nervegap/common.h"
#include "nervegap/law.h"
#include "nervegap/metric.h"

typedef enum ng_radius_kind {
    NG_RADIUS_UNIFORM = 0,
    NG_RADIUS_KNN,
    NG_RADIUS_DTM,
    NG_RADIUS_KDE,
    NG_RADIUS_COLUMN,
    NG_RADIUS_FILE
} ng_radius_kind;

#define NG_RADIUS_TEXT_MAX 4096

typedef struct ng_radius_rule {
    ng_radius_kind kind;
    size_t k;                      /* knn, dtm */
    double bandwidth;              /* kde; 0 = Scott's rule */
    char arg[NG_RADIUS_TEXT_MAX];  /* column name or index; file path */
} ng_radius_rule;

/* A full radius scheme: what the command-line flags --metric, --radius,
 * --law, --raw-radius and --merge-duplicates say. */
typedef struct ng_scheme {
    ng_metric metric;
    ng_radius_rule rule;
    ng_law law;
    int raw_radius;        /* nonzero: no median normalisation */
    int merge_duplicates;  /* nonzero: coincident points are merged */
} ng_scheme;

/* The defaults: euclidean, uniform, scaled, normalised, no merging. */
NG_API void ng_scheme_init(ng_scheme *scheme);

/* Parses the text of --radius (e.g. "knn:8", "kde", "kde:0.5",
 * "column:2", "file:radii.txt"). NG_ERR_USAGE naming --radius on error. */
NG_API int ng_radius_parse(const char *text, ng_radius_rule *out,
                           ng_error *err);

/* Writes the canonical text of a rule ("knn:8") into buf (size bytes). */
NG_API void ng_radius_format(const ng_radius_rule *rule, char *buf,
                             size_t size);

/* Radii of a prepared cloud. */
typedef struct ng_radii {
    size_t n;
    double *rho;         /* base radius after normalisation, n entries */
    double *birth;       /* vertex birth b_i under the law, n entries */
    size_t *origin;      /* input row of each point (differs after merging) */
    size_t merged;       /* number of input points merged into others */
    double median;       /* the median the radii were divided by (1 if none) */
    double bandwidth;    /* kde: the bandwidth used (after Scott's rule) */
} ng_radii;

/* Prepares cloud for scheme and computes its radii. The cloud may be
 * changed in place: a column:J rule removes that column, and with
 * merge_duplicates every point equal to an earlier one is removed (its
 * input row stays recorded in out->origin of the kept points only).
 * Without merging, coincident points under knn are an NG_ERR_INPUT error
 * naming two of them. threads ≤ 0: the OpenMP default. On success out holds
 * arrays the caller frees with ng_radii_free; on failure out is zeroed and
 * nothing is leaked (the cloud may have lost the radius column). */
NG_API int ng_radii_compute(ng_cloud *cloud, const ng_scheme *scheme,
                            int threads, ng_radii *out, ng_error *err);

/* Frees the arrays of out and zeroes it. Accepts NULL. */
NG_API void ng_radii_free(ng_radii *radii);

#endif
