/* scheme_flags.c — parsing of the shared scheme flags (scheme_flags.h). */
#include "scheme_flags.h"

#include <stdlib.h>

const char scheme_flags_help[] =
    "Input (one of):\n"
    "  INPUT                   points: .csv/.tsv/.txt (one point per row,\n"
    "                          optional header, # comments), .npy (2-D\n"
    "                          float32/float64) or FILE.h5:/dataset\n"
    "  --distances FILE        a square distance matrix (text, .npy or\n"
    "                          FILE.h5:/dataset) instead of points\n"
    "Radius scheme:\n"
    "  --metric M              euclidean (default), chebyshev, manhattan\n"
    "  --radius RULE           uniform (default), knn:K, dtm:K, kde, kde:H,\n"
    "                          column:J (0-based index or header name),\n"
    "                          file:PATH (one value per point)\n"
    "  --law L                 scaled (default, ball radius t*rho),\n"
    "                          shifted (t - rho), power (sqrt(t^2 - rho^2))\n"
    "  --raw-radius            under scaled, do not divide rho by its median\n"
    "  --merge-duplicates      merge coincident points (keep the first)\n"
    "  --threads N             worker threads (default: OpenMP's choice)\n";

int scheme_flags_parse(const scheme_flags *f, const char *command,
                       const char *input, ng_scheme *scheme, int *threads,
                       ng_error *err)
{
    *threads = 0;
    ng_scheme_init(scheme);
    if (f->metric && ng_metric_parse(f->metric, &scheme->metric, err))
        return err->code;
    if (f->radius && ng_radius_parse(f->radius, &scheme->rule, err))
        return err->code;
    if (f->law && ng_law_parse(f->law, &scheme->law, err)) return err->code;
    if (f->threads && cli_parse_threads(f->threads, threads, err))
        return err->code;
    scheme->raw_radius = f->raw_radius;
    scheme->merge_duplicates = f->merge_duplicates;

    if (input && f->distances)
        return ng_error_set(err, NG_ERR_USAGE,
                            "give either INPUT or --distances FILE, not both "
                            "(see nervegap %s --help)", command);
    if (!input && !f->distances)
        return ng_error_set(err, NG_ERR_USAGE,
                            "no input: give INPUT or --distances FILE (see "
                            "nervegap %s --help)", command);
    if (f->distances) {
        if (f->metric)
            return ng_error_set(err, NG_ERR_USAGE,
                                "--metric cannot be combined with --distances "
                                "(the matrix is the metric)");
        scheme->metric = NG_METRIC_GIVEN;
    }
    return NG_OK;
}

int scheme_flags_load(const scheme_flags *f, const char *command,
                      const char *input, ng_scheme *scheme, int *threads,
                      ng_cloud **cloud, ng_error *err)
{
    *cloud = NULL;
    int status = scheme_flags_parse(f, command, input, scheme, threads, err);
    if (status != NG_OK) return status;
    if (f->distances) return ng_cloud_read_distances(f->distances, cloud, err);
    return ng_cloud_read(input, cloud, err);
}
