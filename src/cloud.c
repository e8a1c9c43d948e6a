/* cloud.c — the public face of the cloud readers (cloud.h).
 *
 * Chooses the reader from the input spec (FILE.h5:/dataset or
 * FILE.hdf5:/dataset → HDF5, *.npy → .npy, anything else → text), turns
 * the table it returns into an ng_cloud, and checks what every format
 * shares: at least 2 points; for a distance matrix, square, zero diagonal,
 * non-negative and exactly symmetric. The first offending entry in row-major
 * (file) order is the one reported; matrix entries are named [i][j] with
 * point indices counted from 0, as everywhere in nervegap, and text inputs
 * add LINE:COLUMN.
 *
 * Invariant: a cloud handed out satisfies everything cloud.h promises; on
 * any failure nothing is handed out and nothing is leaked.
 */
#include "nervegap/cloud.h"

#include "alloc.h"
#include "cloud_internal.h"

#include <stdio.h>
#include <string.h>

void cloud_table_free(cloud_table *t)
{
    if (!t) return;
    if (t->names)
        for (size_t j = 0; j < t->cols; j++) ng_free(t->names[j]);
    ng_free(t->names);
    ng_free(t->values);
    ng_free(t->row_line);
    memset(t, 0, sizeof *t);
}

int cloud_check_shape(const char *label, size_t rows, size_t cols,
                      size_t item_size, ng_error *err)
{
    if (rows > NG_INDEX_MAX)
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s: %zu points exceed the limit of %u points",
                            label, rows, (unsigned)NG_INDEX_MAX);
    size_t item = item_size > sizeof(double) ? item_size : sizeof(double);
    if (cols != 0 && rows > SIZE_MAX / cols / item)
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s: %zu x %zu values do not fit in memory "
                            "(the size overflows size_t)", label, rows, cols);
    return NG_OK;
}

/* 1 when the first len bytes of s end with suffix, ignoring ASCII case. */
static int ends_with(const char *s, size_t len, const char *suffix)
{
    size_t k = strlen(suffix);
    if (len < k) return 0;
    for (size_t i = 0; i < k; i++) {
        char c = s[len - k + i];
        if (c >= 'A' && c <= 'Z') c = (char)(c - 'A' + 'a');
        if (c != suffix[i]) return 0;
    }
    return 1;
}

static int is_h5_name(const char *s, size_t len)
{
    return ends_with(s, len, ".h5") || ends_with(s, len, ".hdf5");
}

size_t ng_cloud_spec_file_length(const char *spec)
{
    for (const char *colon = strchr(spec, ':'); colon;
         colon = strchr(colon + 1, ':')) {
        size_t flen = (size_t)(colon - spec);
        if (!is_h5_name(spec, flen)) continue;
        if (colon[1] == '\0') break; /* "FILE.h5:" — no dataset path */
        return flen;
    }
    return strlen(spec);
}

/* Reads spec with the right reader. *file gets the file part of the spec
 * (caller frees with ng_free). */
static int read_table(const char *spec, int keep_lines, cloud_table *t,
                      char **file, ng_error *err)
{
    memset(t, 0, sizeof *t);
    *file = NULL;
    size_t len = strlen(spec), flen = ng_cloud_spec_file_length(spec);
    if (flen < len) {
        *file = ng_malloc(flen + 1, 1);
        if (!*file)
            return ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory", spec);
        memcpy(*file, spec, flen);
        (*file)[flen] = '\0';
        return cloud_h5_read(*file, spec + flen + 1, t, err);
    }
    if (is_h5_name(spec, len) || (len > 0 && spec[len - 1] == ':' &&
                                  is_h5_name(spec, len - 1))) {
        flen = spec[len - 1] == ':' ? len - 1 : len;
        return ng_error_set(err, NG_ERR_INPUT,
                            "%.*s: an HDF5 input needs a dataset path: "
                            "append ':/dataset' (for example %.*s:/points)",
                            (int)flen, spec, (int)flen, spec);
    }
    *file = ng_strdup(spec);
    if (!*file)
        return ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory", spec);
    if (ends_with(spec, len, ".npy")) return cloud_npy_read(spec, t, err);
    return cloud_text_read(spec, keep_lines, t, err);
}

static int check_points(const char *spec, const cloud_table *t, ng_error *err)
{
    if (t->rows < 2)
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s: %zu point%s; at least 2 points are needed",
                            spec, t->rows, t->rows == 1 ? "" : "s");
    return NG_OK;
}

static ng_cloud *cloud_new(const char *spec)
{
    ng_cloud *c = ng_calloc(1, sizeof *c);
    if (!c) return NULL;
    c->source = ng_strdup(spec);
    if (!c->source) {
        ng_free(c);
        return NULL;
    }
    return c;
}

int ng_cloud_read(const char *spec, ng_cloud **out, ng_error *err)
{
    *out = NULL;
    cloud_table t;
    char *file = NULL;
    int rc = read_table(spec, 0, &t, &file, err);
    if (rc == NG_OK) rc = check_points(spec, &t, err);
    if (rc != NG_OK) goto cleanup;
    ng_cloud *c = cloud_new(spec);
    if (!c) {
        rc = ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory", spec);
        goto cleanup;
    }
    c->n = t.rows;
    c->dim = t.cols;
    c->coords = t.values;
    c->names = t.names;
    c->file = file;
    t.values = NULL;
    t.names = NULL;
    file = NULL;
    *out = c;

cleanup:
    cloud_table_free(&t);
    ng_free(file);
    return rc;
}

/* Where entry [i][j] sits, for messages: "FILE:LINE:COLUMN" for text, the
 * spec otherwise. */
static void entry_where(const char *spec, const char *file,
                        const cloud_table *t, size_t i, size_t j, char *buf,
                        size_t cap)
{
    if (!t->row_line) {
        snprintf(buf, cap, "%s", spec);
        return;
    }
    size_t column = cloud_text_locate(file, t->delim, t->row_line[i], j);
    if (column)
        snprintf(buf, cap, "%s:%zu:%zu", file, t->row_line[i], column);
    else
        snprintf(buf, cap, "%s:%zu", file, t->row_line[i]);
}

static int check_distances(const char *spec, const char *file,
                           const cloud_table *t, ng_error *err)
{
    size_t n = t->rows;
    if (t->cols != n)
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s: the distance matrix has %zu rows of %zu "
                            "values; it must be square (n x n)",
                            spec, n, t->cols);
    char where[NG_ERROR_MESSAGE_MAX / 2], other[NG_ERROR_MESSAGE_MAX / 4];
    const double *d = t->values;
    for (size_t i = 0; i < n; i++) {
        for (size_t j = 0; j < n; j++) {
            double v = d[i * n + j];
            int bad_diag = i == j && v != 0.0;
            int negative = v < 0.0;
            int asymmetric = j < i && v != d[j * n + i];
            if (!bad_diag && !negative && !asymmetric) continue;
            entry_where(spec, file, t, i, j, where, sizeof where);
            if (bad_diag)
                return ng_error_set(err, NG_ERR_INPUT,
                                    "%s: distance matrix entry [%zu][%zu] = "
                                    "%.17g: the diagonal must be zero "
                                    "(points counted from 0)",
                                    where, i, j, v);
            if (negative)
                return ng_error_set(err, NG_ERR_INPUT,
                                    "%s: distance matrix entry [%zu][%zu] = "
                                    "%.17g is negative (points counted "
                                    "from 0)", where, i, j, v);
            other[0] = '\0';
            if (t->row_line) {
                char at[NG_ERROR_MESSAGE_MAX / 4 - 8];
                entry_where(spec, file, t, j, i, at, sizeof at);
                snprintf(other, sizeof other, " at %s", at);
            }
            return ng_error_set(err, NG_ERR_INPUT,
                                "%s: distance matrix entry [%zu][%zu] = "
                                "%.17g differs from entry [%zu][%zu] = "
                                "%.17g%s: the matrix must be symmetric "
                                "(points counted from 0)",
                                where, i, j, v, j, i, d[j * n + i], other);
        }
    }
    return check_points(spec, t, err);
}

int ng_cloud_read_distances(const char *spec, ng_cloud **out, ng_error *err)
{
    *out = NULL;
    cloud_table t;
    char *file = NULL;
    int rc = read_table(spec, 1, &t, &file, err);
    if (rc == NG_OK) rc = check_distances(spec, file, &t, err);
    if (rc != NG_OK) goto cleanup;
    ng_cloud *c = cloud_new(spec);
    if (!c) {
        rc = ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory", spec);
        goto cleanup;
    }
    c->n = t.rows;
    c->dim = 0;
    c->dist = t.values;
    c->file = file;
    t.values = NULL;
    file = NULL;
    *out = c;

cleanup:
    cloud_table_free(&t);
    ng_free(file);
    return rc;
}

int ng_cloud_take_column(ng_cloud *cloud, size_t j, double **values,
                         ng_error *err)
{
    *values = NULL;
    if (!cloud->coords)
        return ng_error_set(err, NG_ERR_USAGE,
                            "%s: column %zu: a distance matrix has no "
                            "coordinate columns", cloud->source, j);
    if (j >= cloud->dim)
        return ng_error_set(err, NG_ERR_USAGE,
                            "%s: column %zu: the input has %zu column%s "
                            "(counted from 0)", cloud->source, j, cloud->dim,
                            cloud->dim == 1 ? "" : "s");
    if (cloud->dim == 1)
        return ng_error_set(err, NG_ERR_USAGE,
                            "%s: column %zu: the input has only this column; "
                            "no coordinate would be left", cloud->source, j);
    size_t n = cloud->n, dim = cloud->dim;
    double *v = ng_malloc(n, sizeof *v);
    if (!v)
        return ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory",
                            cloud->source);
    double *c = cloud->coords;
    size_t w = 0;
    for (size_t i = 0; i < n; i++) {
        v[i] = c[i * dim + j];
        /* w ≤ i·dim + k always, so the compaction reads before it writes. */
        for (size_t k = 0; k < dim; k++)
            if (k != j) c[w++] = c[i * dim + k];
    }
    if (cloud->names) {
        ng_free(cloud->names[j]);
        memmove(cloud->names + j, cloud->names + j + 1,
                (dim - j - 1) * sizeof *cloud->names);
    }
    cloud->dim = dim - 1;
    double *fit = ng_realloc(cloud->coords, n * cloud->dim, sizeof *fit);
    if (fit) cloud->coords = fit; /* else keep the larger block */
    *values = v;
    return NG_OK;
}

int ng_cloud_subset(const ng_cloud *cloud, const int64_t *rows, size_t m,
                    ng_cloud **out, ng_error *err)
{
    *out = NULL;
    size_t n = cloud->n, dim = cloud->dim;
    if (m < 2)
        return ng_error_set(err, NG_ERR_USAGE, "%s: a subset of %zu point%s; "
                            "at least 2 points are needed", cloud->source, m,
                            m == 1 ? "" : "s");
    for (size_t i = 0; i < m; i++)
        if (rows[i] < 0 || (uint64_t)rows[i] >= n)
            return ng_error_set(err, NG_ERR_USAGE, "%s: row %lld of a subset "
                                "is not one of the %zu rows", cloud->source,
                                (long long)rows[i], n);
    ng_cloud *c = cloud_new(cloud->source);
    int ok = c != NULL && (c->file = ng_strdup(cloud->file)) != NULL;
    if (ok && cloud->coords) {
        c->dim = dim;
        c->coords = ng_malloc(m * dim, sizeof *c->coords);
        ok = c->coords != NULL;
        for (size_t i = 0; ok && i < m; i++)
            memcpy(c->coords + i * dim, cloud->coords + (size_t)rows[i] * dim,
                   dim * sizeof *c->coords);
    }
    if (ok && cloud->dist) {
        c->dist = ng_malloc(m * m, sizeof *c->dist);
        ok = c->dist != NULL;
        for (size_t i = 0; ok && i < m; i++)
            for (size_t j = 0; j < m; j++)
                c->dist[i * m + j] =
                    cloud->dist[(size_t)rows[i] * n + (size_t)rows[j]];
    }
    if (ok && cloud->names) {
        c->names = ng_calloc(dim, sizeof *c->names);
        ok = c->names != NULL;
        for (size_t j = 0; ok && j < dim; j++)
            ok = (c->names[j] = ng_strdup(cloud->names[j])) != NULL;
    }
    if (!ok) {
        ng_cloud_free(c);
        return ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory",
                            cloud->source);
    }
    c->n = m;
    *out = c;
    return NG_OK;
}

void ng_cloud_values_free(double *values) { ng_free(values); }

void ng_cloud_free(ng_cloud *cloud)
{
    if (!cloud) return;
    if (cloud->names)
        for (size_t j = 0; j < cloud->dim; j++) ng_free(cloud->names[j]);
    ng_free(cloud->names);
    ng_free(cloud->coords);
    ng_free(cloud->dist);
    ng_free(cloud->source);
    ng_free(cloud->file);
    ng_free(cloud);
}
