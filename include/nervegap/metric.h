/* metric.h — the metrics of a point cloud (DESIGN §2): euclidean,
 * chebyshev (L∞), manhattan (L1), or a given distance matrix. */
#ifndef NERVEGAP_METRIC_H
#define NERVEGAP_METRIC_H

#include "nervegap/common.h"

typedef enum ng_metric {
    NG_METRIC_EUCLIDEAN = 0,
    NG_METRIC_CHEBYSHEV = 1,
    NG_METRIC_MANHATTAN = 2,
    NG_METRIC_GIVEN = 3 /* a finite metric space read as a distance matrix */
} ng_metric;

/* Parses "euclidean", "chebyshev" or "manhattan" (the names of the
 * --metric flag; "given" is implied by --distances and not parsed here).
 * Returns NG_OK, or NG_ERR_USAGE naming the flag and the accepted words. */
NG_API int ng_metric_parse(const char *text, ng_metric *out, ng_error *err);

/* The name of a metric as written in files and messages. */
NG_API const char *ng_metric_name(ng_metric metric);

/* Distance between two coordinate vectors of length dim under a coordinate
 * metric (not NG_METRIC_GIVEN). */
NG_API double ng_metric_distance(ng_metric metric, const double *a,
                                 const double *b, size_t dim);

#endif
