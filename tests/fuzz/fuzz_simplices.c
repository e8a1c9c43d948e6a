/* fuzz_simplices.c — the simplices file of `nervegap values`
 * (simplices.c), and the values of every simplex it accepts.
 *
 * The first input byte is the configuration: the number of points the
 * indices are checked against (2 + (b & 15) % 11, so 2..12), the metric
 * (bits 4-5: euclidean, chebyshev, given, euclidean) and the law (bits
 * 6-7: scaled, shifted, power, scaled). The rest is the file. The points
 * are a fixed small set with the degenerate features the values must
 * survive: a duplicate point, three collinear points and a zero base
 * radius. Every accepted simplex is evaluated: the values must be numbers
 * (not NaN) with rips ≤ cech (ng_simplex_values promises a monotone pair).
 * Seeds: simplices lists written by tests/fuzz/seeds.py. */
#include "fuzz_common.h"

#include "nervegap/simplices.h"
#include "nervegap/values.h"

#include <math.h>

enum { N_MAX = 12, DIM = 3 };

/* 12 points of R^3: point 5 duplicates point 0; points 1, 2, 3 lie on one
 * line; the rest are spread out. */
static const double coords[N_MAX * DIM] = {
    0.0, 0.0, 0.0,   1.0, 0.0, 0.0,   2.0, 0.0, 0.0,   3.5, 0.0, 0.0,
    0.3, 1.7, -0.4,  0.0, 0.0, 0.0,   -1.2, 0.8, 2.1,  2.2, 2.2, 0.9,
    0.5, -1.5, 0.7,  1e-9, 2e-9, 0.0, 4.0, 3.0, -2.0,  -0.6, -0.6, -0.6,
};
/* Base radii: point 7 has radius 0 (a ball that never grows under
 * scaled, a point born at 0 under shifted and power). */
static const double rho[N_MAX] = {
    1.0, 0.5, 2.0, 1.0, 0.25, 1.5, 1.0, 0.0, 3.0, 1.0, 0.75, 1.25,
};

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size < 1) return 0;
    unsigned b = data[0];
    size_t n = 2 + (b & 15) % 11;
    static const ng_metric metrics[4] = {NG_METRIC_EUCLIDEAN,
                                         NG_METRIC_CHEBYSHEV,
                                         NG_METRIC_GIVEN,
                                         NG_METRIC_EUCLIDEAN};
    static const ng_law laws[4] = {NG_LAW_SCALED, NG_LAW_SHIFTED,
                                   NG_LAW_POWER, NG_LAW_SCALED};
    const char *path = fuzz_write_file("simplices.txt", data + 1, size - 1);

    ng_simplex_list list;
    ng_error err;
    ng_error_clear(&err);
    int rc = ng_simplex_list_read(path, n, &list, &err);
    fuzz_check_status(rc, &err);
    if (rc != NG_OK) {
        if (list.count || list.size || list.vertex || list.line)
            fuzz_fail("a simplex list handed out with an error");
        return 0;
    }

    double dist[N_MAX * N_MAX];
    for (size_t i = 0; i < n; i++)
        for (size_t j = 0; j < n; j++) {
            double s = 0.0;
            for (int c = 0; c < DIM; c++) {
                double t = coords[i * DIM + c] - coords[j * DIM + c];
                s += t * t;
            }
            dist[i * n + j] = sqrt(s);
        }
    ng_metric metric = metrics[(b >> 4) & 3];
    ng_space space = {
        .metric = metric,
        .law = laws[(b >> 6) & 3],
        .n = n,
        .dim = metric == NG_METRIC_GIVEN ? 0 : DIM,
        .coords = metric == NG_METRIC_GIVEN ? NULL : coords,
        .dist = metric == NG_METRIC_GIVEN ? dist : NULL,
        .rho = rho,
    };
    rc = ng_space_check(&space, &err);
    if (rc != NG_OK) fuzz_fail("the fixed point set was refused");
    for (size_t s = 0; s < list.count; s++) {
        int m = list.size[s];
        const ng_index *v = list.vertex + s * NG_SIMPLICES_MAX_VERTICES;
        if (m < 1 || m > NG_SIMPLICES_MAX_VERTICES)
            fuzz_fail("a simplex of impossible size");
        for (int r = 0; r < m; r++) {
            if (v[r] >= n) fuzz_fail("a vertex index out of range");
            for (int q = 0; q < r; q++)
                if (v[q] == v[r]) fuzz_fail("a repeated vertex");
        }
        double rips, cech;
        rc = ng_simplex_values(&space, v, m, &rips, &cech, &err);
        fuzz_check_status(rc, &err);
        if (rc != NG_OK) continue;
        if (isnan(rips) || isnan(cech)) fuzz_fail("a NaN value");
        if (!(rips <= cech)) fuzz_fail("rips > cech");
    }
    ng_simplex_list_free(&list);
    return 0;
}
