/* metric.c — distances under the coordinate metrics. */
#include "nervegap/metric.h"

#include <math.h>
#include <string.h>

int ng_metric_parse(const char *text, ng_metric *out, ng_error *err)
{
    static const struct { const char *name; ng_metric metric; } table[] = {
        {"euclidean", NG_METRIC_EUCLIDEAN},
        {"chebyshev", NG_METRIC_CHEBYSHEV},
        {"manhattan", NG_METRIC_MANHATTAN},
    };
    for (size_t i = 0; i < sizeof table / sizeof table[0]; i++) {
        if (strcmp(text, table[i].name) == 0) {
            *out = table[i].metric;
            return NG_OK;
        }
    }
    return ng_error_set(err, NG_ERR_USAGE,
                        "--metric: unknown metric '%s' (expected euclidean, "
                        "chebyshev or manhattan)", text);
}

const char *ng_metric_name(ng_metric metric)
{
    switch (metric) {
    case NG_METRIC_EUCLIDEAN: return "euclidean";
    case NG_METRIC_CHEBYSHEV: return "chebyshev";
    case NG_METRIC_MANHATTAN: return "manhattan";
    case NG_METRIC_GIVEN: return "given";
    }
    return "unknown";
}

double ng_metric_distance(ng_metric metric, const double *a, const double *b,
                          size_t dim)
{
    double acc = 0.0;
    switch (metric) {
    case NG_METRIC_CHEBYSHEV:
        for (size_t k = 0; k < dim; k++) {
            double diff = fabs(a[k] - b[k]);
            if (diff > acc) acc = diff;
        }
        return acc;
    case NG_METRIC_MANHATTAN:
        for (size_t k = 0; k < dim; k++) acc += fabs(a[k] - b[k]);
        return acc;
    case NG_METRIC_EUCLIDEAN:
    case NG_METRIC_GIVEN:
        break;
    }
    for (size_t k = 0; k < dim; k++) {
        double diff = a[k] - b[k];
        acc += diff * diff;
    }
    return sqrt(acc);
}
