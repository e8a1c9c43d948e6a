/* cloud.h — a point cloud (or a finite metric space) read from a file.
 *
 * Readers: text (CSV, TSV or whitespace-separated; one point per row; a
 * non-numeric first data line is a header; '#' comments and blank lines are
 * skipped), .npy (versions 1-3 header, float32/float64, little-endian,
 * C order, 2-D) and HDF5 ("FILE.h5:/dataset", a 2-D float dataset).
 * A distance matrix (text or .npy) is read by ng_cloud_read_distances.
 *
 * Invariants of a cloud returned by a reader: n ≥ 2; every value finite;
 * coordinate clouds have dim ≥ 1, coords != NULL, dist == NULL; distance
 * clouds have dim == 0, coords == NULL, dist an n×n row-major matrix that
 * is symmetric with zero diagonal and non-negative entries.
 */
#ifndef NERVEGAP_CLOUD_H
#define NERVEGAP_CLOUD_H

#include "nervegap/common.h"
#include "nervegap/metric.h"

typedef struct ng_cloud {
    size_t n;         /* number of points */
    size_t dim;       /* coordinates per point; 0 for a distance matrix */
    double *coords;   /* n × dim, row-major; NULL for a distance matrix */
    double *dist;     /* n × n, row-major, when read as distances; else NULL */
    char **names;     /* dim column names from a text header, or NULL */
    char *source;     /* the path (or path:/dataset) it was read from */
    char *file;       /* the file part of source (without :/dataset) */
} ng_cloud;

/* Reads a coordinate cloud from spec: a text file, a .npy file, or
 * "FILE.h5:/dataset" (also .hdf5; a bare FILE.h5 is refused with a hint to
 * append ":/dataset"). On success *out owns a new cloud (caller frees with
 * ng_cloud_free) and NG_OK is returned. On failure *out is NULL, nothing is
 * leaked, and err names the file and line and column (text, as
 * "FILE:LINE:COLUMN: field F: 'abc' is not a number", all 1-based, COLUMN
 * the byte where the token starts), the header field (.npy) or the dataset
 * (HDF5); binary values are named by row and column counted from 0.
 * Codes: NG_ERR_INPUT for bad content and for a file that cannot be opened
 * (a mistyped name is bad usage, exit code 2), NG_ERR_IO for a read failure
 * of an opened file, NG_ERR_NOMEM. Text is parsed with strtod in the C
 * locale. */
NG_API int ng_cloud_read(const char *spec, ng_cloud **out, ng_error *err);

/* Reads a square distance matrix (text or .npy, or FILE.h5:/dataset) and
 * checks that it is symmetric (exactly), has a zero diagonal and no negative
 * entry; the cloud has dim = 0, dist set and names NULL. The first offending
 * entry in row-major order is named as [i][j] (points counted from 0), with
 * FILE:LINE:COLUMN for text. Ownership and errors as ng_cloud_read. */
NG_API int ng_cloud_read_distances(const char *spec, ng_cloud **out,
                                   ng_error *err);

/* Removes coordinate column j from a coordinate cloud and returns its values
 * in *values (n doubles; caller frees with ng_cloud_values_free).
 * names (when present) lose entry j too. Fails with NG_ERR_USAGE when the
 * cloud is a distance matrix, j ≥ dim or dim == 1 (no coordinate would be
 * left), NG_ERR_NOMEM; on failure *values is NULL and the cloud unchanged. */
NG_API int ng_cloud_take_column(ng_cloud *cloud, size_t j, double **values,
                                ng_error *err);

/* A new cloud of the m points rows[0..m-1] of cloud (0-based rows, in that
 * order; for a distance matrix the rows and columns), with the same
 * source, file and column names. On success *out owns it (ng_cloud_free).
 * NG_ERR_USAGE when m < 2 or a row is out of range, NG_ERR_NOMEM; *out is
 * NULL on failure. */
NG_API int ng_cloud_subset(const ng_cloud *cloud, const int64_t *rows,
                           size_t m, ng_cloud **out, ng_error *err);

/* Length of the file part of an input spec: up to the colon of
 * "FILE.h5:/dataset" (or .hdf5), else the whole spec. */
NG_API size_t ng_cloud_spec_file_length(const char *spec);

/* Frees an array returned by ng_cloud_take_column. Accepts NULL. */
NG_API void ng_cloud_values_free(double *values);

/* Frees a cloud and everything it owns. Accepts NULL. */
NG_API void ng_cloud_free(ng_cloud *cloud);

#endif
