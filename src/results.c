/* results.c — writes the HDF5 results file of results.h.
 *
 * Invariants: nothing exists at the final path until ng_results_commit has
 * written and closed every dataset; the temporary file lives in the same
 * directory (so that rename is atomic on POSIX file systems) and is removed
 * on every failure path. HDF5's own error printing is switched off while
 * this module calls it; errors are reported through ng_error instead.
 */
#include "nervegap/results.h"

#include "alloc.h"

#include <errno.h>
#include <hdf5.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

struct ng_results_file {
    char *final_path;
    char *temp_path;
};

const char *ng_results_temp_path(const ng_results_file *f)
{
    return f ? f->temp_path : NULL;
}

int ng_results_open(const char *path, ng_results_file **out, ng_error *err)
{
    *out = NULL;
    ng_results_file *f = ng_calloc(1, sizeof *f);
    const char *slash = strrchr(path, '/');
    size_t dir_len = slash ? (size_t)(slash - path) + 1 : 0;
    const char *base = path + dir_len;
    if (*base == '\0') {
        ng_free(f);
        return ng_error_set(err, NG_ERR_USAGE,
                            "-o %s: the output path names a directory; give "
                            "a file name such as %sout.h5", path, path);
    }
    if (f) {
        f->final_path = ng_strdup(path);
        /* DIR/.BASE.partial-XXXXXX */
        f->temp_path = ng_malloc(strlen(path) + 20, 1);
    }
    if (f == NULL || f->final_path == NULL || f->temp_path == NULL) {
        ng_results_abort(f);
        return ng_error_set(err, NG_ERR_NOMEM, "out of memory");
    }
    snprintf(f->temp_path, strlen(path) + 20, "%.*s.%s.partial-XXXXXX",
             (int)dir_len, path, base);
    int fd = mkstemp(f->temp_path);
    if (fd < 0) {
        int e = errno;
        ng_free(f->final_path);
        ng_free(f->temp_path);
        ng_free(f);
        return ng_error_set(err, NG_ERR_USAGE,
                            "-o %s: cannot create the output file there: %s",
                            path, strerror(e));
    }
    /* mkstemp makes the file private; give it the usual permissions */
    mode_t mask = umask(0);
    umask(mask);
    (void)fchmod(fd, 0666 & ~mask); /* a failure leaves it private: usable */
    close(fd);
    *out = f;
    return NG_OK;
}

void ng_results_abort(ng_results_file *f)
{
    if (f == NULL) return;
    if (f->temp_path) unlink(f->temp_path);
    ng_free(f->final_path);
    ng_free(f->temp_path);
    ng_free(f);
}

/* ---- small HDF5 helpers: each returns 0 on success, -1 on failure ---- */

static int attr_write(hid_t loc, const char *name, hid_t type,
                      const void *value)
{
    hid_t space = H5Screate(H5S_SCALAR);
    hid_t attr = space < 0 ? -1
                           : H5Acreate2(loc, name, type, space, H5P_DEFAULT,
                                        H5P_DEFAULT);
    herr_t w = attr < 0 ? -1 : H5Awrite(attr, type, value);
    if (attr >= 0) H5Aclose(attr);
    if (space >= 0) H5Sclose(space);
    return w < 0 ? -1 : 0;
}

static int attr_string(hid_t loc, const char *name, const char *value)
{
    hid_t type = H5Tcopy(H5T_C_S1);
    if (type < 0) return -1;
    int r = -1;
    if (H5Tset_size(type, H5T_VARIABLE) >= 0 &&
        H5Tset_cset(type, H5T_CSET_UTF8) >= 0)
        r = attr_write(loc, name, type, &value);
    H5Tclose(type);
    return r;
}

static int attr_double(hid_t loc, const char *name, double value)
{
    return attr_write(loc, name, H5T_NATIVE_DOUBLE, &value);
}

static int attr_int(hid_t loc, const char *name, int64_t value)
{
    return attr_write(loc, name, H5T_NATIVE_INT64, &value);
}

static int dataset_write(hid_t loc, const char *name, hid_t file_type,
                         hid_t mem_type, int rank, const hsize_t *dims,
                         const void *data)
{
    hid_t space = H5Screate_simple(rank, dims, NULL);
    hid_t set = space < 0 ? -1
                          : H5Dcreate2(loc, name, file_type, space,
                                       H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT);
    hsize_t total = 1;
    for (int r = 0; r < rank; r++) total *= dims[r];
    herr_t w = set < 0 ? -1
               : total == 0 ? 0
                            : H5Dwrite(set, mem_type, H5S_ALL, H5S_ALL,
                                       H5P_DEFAULT, data);
    if (set >= 0) H5Dclose(set);
    if (space >= 0) H5Sclose(space);
    return w < 0 ? -1 : 0;
}

static int write_doubles(hid_t loc, const char *name, int rank,
                         const hsize_t *dims, const double *data)
{
    return dataset_write(loc, name, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, rank,
                         dims, data);
}

static int write_int64s(hid_t loc, const char *name, int rank,
                        const hsize_t *dims, const int64_t *data)
{
    return dataset_write(loc, name, H5T_STD_I64LE, H5T_NATIVE_INT64, rank,
                         dims, data);
}

static hid_t group_create(hid_t loc, const char *name)
{
    return H5Gcreate2(loc, name, H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT);
}

/* Writes the bars of one diagram under loc/dim{k}/. */
static int write_diagram(hid_t loc, const ng_diagram *d)
{
    for (int k = 0; k <= d->max_degree; k++) {
        const ng_bars *b = &d->bars[k];
        char name[32];
        snprintf(name, sizeof name, "dim%d", k);
        hid_t g = group_create(loc, name);
        if (g < 0) return -1;
        hsize_t dims[2] = {b->count, 2};
        int r = write_doubles(g, "bars", 2, dims, b->interval);
        dims[1] = (hsize_t)k + 1;
        if (r == 0) r = write_int64s(g, "birth_vertices", 2, dims,
                                     b->birth_vertices);
        dims[1] = (hsize_t)k + 2;
        if (r == 0) r = write_int64s(g, "death_vertices", 2, dims,
                                     b->death_vertices);
        if (r == 0) r = attr_int(g, "truncated", (int64_t)b->truncated);
        H5Gclose(g);
        if (r != 0) return -1;
    }
    return 0;
}

static int write_grid(hid_t file, const ng_grid *g)
{
    hid_t grp = group_create(file, "grid");
    if (grp < 0) return -1;
    int r = 0;
    hsize_t G = g->G, w0 = (hsize_t)g->max_degree + 1, w1 = w0 + 1;
    hsize_t d1[1] = {G}, d2[2] = {G, w0}, d3[2] = {G, w1};
    r |= write_doubles(grp, "scale", 1, d1, g->scale);
    r |= write_int64s(grp, "betti_cech", 2, d2, g->betti_cech);
    r |= write_int64s(grp, "betti_rips", 2, d2, g->betti_rips);
    r |= write_int64s(grp, "simplices_cech", 2, d3, g->simplices_cech);
    r |= write_int64s(grp, "simplices_rips", 2, d3, g->simplices_rips);
    r |= write_doubles(grp, "factor_max", 1, d1, g->factor_max);
    r |= write_doubles(grp, "factor_q50", 1, d1, g->factor_q50);
    r |= write_doubles(grp, "factor_q90", 1, d1, g->factor_q90);
    r |= write_doubles(grp, "shift_max", 1, d1, g->shift_max);
    r |= write_doubles(grp, "shift_q50", 1, d1, g->shift_q50);
    r |= write_doubles(grp, "shift_q90", 1, d1, g->shift_q90);
    if (g->n_slices > 0) {
        hsize_t dh[3] = {(hsize_t)g->n_slices, G, w0};
        r |= write_int64s(grp, "hilbert", 3, dh, g->hilbert);
    }
    H5Gclose(grp);
    return r ? -1 : 0;
}

static int write_divergence(hid_t file, const ng_run_record *rec)
{
    hid_t grp = group_create(file, "divergence");
    if (grp < 0) return -1;
    int r = 0;
    hsize_t n = (hsize_t)rec->max_degree + 1;
    r |= write_doubles(grp, "bottleneck", 1, &n, rec->bottleneck);
    r |= write_doubles(grp, "wasserstein1", 1, &n, rec->wasserstein1);
    r |= write_doubles(grp, "wasserstein2", 1, &n, rec->wasserstein2);
    if (rec->grid) {
        r |= attr_double(grp, "factor_bound", rec->grid->factor_bound);
        r |= attr_double(grp, "shift_bound", rec->grid->shift_bound);
        r |= attr_double(grp, "factor_bound_at", rec->grid->factor_bound_at);
        r |= attr_double(grp, "shift_bound_at", rec->grid->shift_bound_at);
    }
    r |= attr_double(grp, "wasserstein_relative_error",
                     rec->wasserstein_relative_error);
    H5Gclose(grp);
    return r ? -1 : 0;
}

static int write_all(hid_t file, const ng_run_record *rec,
                     const ng_persistence *p)
{
    int r = 0;
    hid_t root = H5Gopen2(file, "/", H5P_DEFAULT);
    if (root < 0) return -1;
    r |= attr_string(root, "format", NG_RESULTS_FORMAT);
    r |= attr_int(root, "format_version", NG_RESULTS_FORMAT_VERSION);
    r |= attr_string(root, "tool_version", NG_VERSION);
    r |= attr_string(root, "command", rec->command ? rec->command : "");
    H5Gclose(root);
    if (r) return -1;

    hid_t g = group_create(file, "input");
    if (g < 0) return -1;
    r |= attr_string(g, "source", rec->source);
    r |= attr_int(g, "n_points", (int64_t)rec->n_points);
    r |= attr_int(g, "ambient_dim", (int64_t)rec->ambient_dim);
    r |= attr_string(g, "metric", rec->metric);
    H5Gclose(g);
    if (r) return -1;

    g = group_create(file, "vertices");
    if (g < 0) return -1;
    hsize_t n = rec->n_points;
    r |= write_doubles(g, "radius", 1, &n, rec->radius);
    r |= write_doubles(g, "birth", 1, &n, rec->birth);
    H5Gclose(g);
    if (r) return -1;

    g = group_create(file, "scheme");
    if (g < 0) return -1;
    r |= attr_string(g, "radius_rule", rec->radius_rule);
    r |= attr_string(g, "law", rec->law);
    r |= attr_double(g, "scale_limit", rec->scale_limit);
    r |= attr_int(g, "max_degree", rec->max_degree);
    r |= attr_int(g, "truncated", rec->truncated ? 1 : 0);
    H5Gclose(g);
    if (r) return -1;

    static const char *names[2] = {"cech", "rips"};
    for (int j = 0; j < 2 && j < p->n_filtrations; j++) {
        g = group_create(file, names[j]);
        if (g < 0) return -1;
        r = write_diagram(g, &p->diagram[j]);
        H5Gclose(g);
        if (r) return -1;
    }
    if (rec->n_slices > 0) {
        g = group_create(file, "slices");
        if (g < 0) return -1;
        hsize_t L = (hsize_t)rec->n_slices;
        r |= write_doubles(g, "values", 1, &L, rec->slice_values);
        if (r == 0) {
            hid_t v = H5Dopen2(g, "values", H5P_DEFAULT);
            r |= v < 0 ? -1 : attr_string(v, "kind", rec->slice_kind);
            if (v >= 0) H5Dclose(v);
        }
        for (int s = 0; r == 0 && s < rec->n_slices; s++) {
            char name[32];
            snprintf(name, sizeof name, "%d", s);
            hid_t sg = group_create(g, name);
            if (sg < 0) {
                r = -1;
                break;
            }
            r |= write_diagram(sg, &p->diagram[2 + s]);
            H5Gclose(sg);
        }
        H5Gclose(g);
        if (r) return -1;
    }
    if (rec->grid && write_grid(file, rec->grid) != 0) return -1;
    if (rec->bottleneck && write_divergence(file, rec) != 0) return -1;
    return 0;
}

int ng_results_commit(ng_results_file *f, const ng_run_record *rec,
                      const ng_persistence *p, ng_error *err)
{
    if (p->n_filtrations < 2 + (rec->n_slices > 0 ? rec->n_slices : 0)) {
        ng_results_abort(f);
        return ng_error_set(err, NG_ERR_USAGE,
                            "results: %d filtrations for %d slices",
                            p->n_filtrations, rec->n_slices);
    }
    H5E_auto2_t old_func;
    void *old_data;
    H5Eget_auto2(H5E_DEFAULT, &old_func, &old_data);
    H5Eset_auto2(H5E_DEFAULT, NULL, NULL);
    int status = NG_OK;
    hid_t file = H5Fcreate(f->temp_path, H5F_ACC_TRUNC, H5P_DEFAULT,
                           H5P_DEFAULT);
    if (file < 0) {
        status = ng_error_set(err, NG_ERR_IO, "%s: cannot create the HDF5 "
                              "file (temporary %s)", f->final_path,
                              f->temp_path);
    } else {
        int w = write_all(file, rec, p);
        if (H5Fclose(file) < 0) w = -1;
        if (w != 0)
            status = ng_error_set(err, NG_ERR_IO,
                                  "%s: writing the results failed (disk "
                                  "full?)", f->final_path);
    }
    H5Eset_auto2(H5E_DEFAULT, old_func, old_data);
    if (status == NG_OK && rename(f->temp_path, f->final_path) != 0)
        status = ng_error_set(err, NG_ERR_IO, "%s: cannot rename %s onto it: "
                              "%s", f->final_path, f->temp_path,
                              strerror(errno));
    if (status == NG_OK) {
        ng_free(f->temp_path);
        f->temp_path = NULL; /* renamed: nothing to remove */
    }
    ng_results_abort(f);
    return status;
}

/* ---- reading back ---- */

void ng_results_bars_free(double *bars) { ng_free(bars); }

static int read_scalar_attr(hid_t loc, const char *name, hid_t type,
                            void *out)
{
    if (H5Aexists(loc, name) <= 0) return -1;
    hid_t a = H5Aopen(loc, name, H5P_DEFAULT);
    if (a < 0) return -1;
    herr_t r = H5Aread(a, type, out);
    H5Aclose(a);
    return r < 0 ? -1 : 0;
}

static int read_bars_open(hid_t file, const char *path, const char *group,
                          int k, double **bars, size_t *count,
                          int *max_degree, double *scale_limit,
                          ng_error *err)
{
    char *format = NULL;
    hid_t root = H5Gopen2(file, "/", H5P_DEFAULT);
    hid_t str = H5Tcopy(H5T_C_S1);
    H5Tset_size(str, H5T_VARIABLE);
    H5Tset_cset(str, H5T_CSET_UTF8);
    int ok = root >= 0 && read_scalar_attr(root, "format", str, &format) == 0 &&
             format && strcmp(format, NG_RESULTS_FORMAT) == 0;
    if (format) H5free_memory(format);
    H5Tclose(str);
    if (root >= 0) H5Gclose(root);
    if (!ok)
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s: not a nervegap results file (no format = "
                            "\"%s\" attribute on /)", path, NG_RESULTS_FORMAT);
    int64_t D = -1;
    double T = NAN;
    hid_t scheme = H5Gopen2(file, "scheme", H5P_DEFAULT);
    if (scheme >= 0) {
        read_scalar_attr(scheme, "max_degree", H5T_NATIVE_INT64, &D);
        read_scalar_attr(scheme, "scale_limit", H5T_NATIVE_DOUBLE, &T);
        H5Gclose(scheme);
    }
    if (max_degree) *max_degree = (int)D;
    if (scale_limit) *scale_limit = T;
    if (k < 0 || k > D)
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s: degree %d is not in the file (it has degrees "
                            "0..%lld)", path, k, (long long)D);
    char name[128];
    snprintf(name, sizeof name, "%s/dim%d/bars", group, k);
    if (H5Lexists(file, group, H5P_DEFAULT) <= 0 ||
        H5Lexists(file, name, H5P_DEFAULT) <= 0)
        return ng_error_set(err, NG_ERR_INPUT, "%s: no dataset /%s", path,
                            name);
    hid_t set = H5Dopen2(file, name, H5P_DEFAULT);
    hid_t space = set < 0 ? -1 : H5Dget_space(set);
    hsize_t dims[2] = {0, 0};
    int rank = space < 0 ? -1 : H5Sget_simple_extent_ndims(space);
    if (rank == 2) H5Sget_simple_extent_dims(space, dims, NULL);
    int status = NG_OK;
    if (rank != 2 || dims[1] != 2) {
        status = ng_error_set(err, NG_ERR_INPUT, "%s: /%s is not an m × 2 "
                              "array", path, name);
    } else {
        *count = (size_t)dims[0];
        *bars = ng_malloc(*count, 2 * sizeof **bars);
        if (*bars == NULL)
            status = ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory for "
                                  "%zu bars", path, *count);
        else if (*count > 0 && H5Dread(set, H5T_NATIVE_DOUBLE, H5S_ALL,
                                       H5S_ALL, H5P_DEFAULT, *bars) < 0)
            status = ng_error_set(err, NG_ERR_IO, "%s: cannot read /%s", path,
                                  name);
    }
    if (space >= 0) H5Sclose(space);
    if (set >= 0) H5Dclose(set);
    return status;
}

int ng_results_read_bars(const char *path, const char *group, int k,
                         double **bars, size_t *count, int *max_degree,
                         double *scale_limit, ng_error *err)
{
    *bars = NULL;
    *count = 0;
    H5E_auto2_t old_func;
    void *old_data;
    H5Eget_auto2(H5E_DEFAULT, &old_func, &old_data);
    H5Eset_auto2(H5E_DEFAULT, NULL, NULL);
    int status;
    hid_t file = H5Fopen(path, H5F_ACC_RDONLY, H5P_DEFAULT);
    if (file < 0) {
        status = ng_error_set(err, NG_ERR_INPUT,
                              "%s: cannot open as an HDF5 file", path);
    } else {
        status = read_bars_open(file, path, group, k, bars, count, max_degree,
                                scale_limit, err);
        H5Fclose(file);
    }
    H5Eset_auto2(H5E_DEFAULT, old_func, old_data);
    if (status != NG_OK) {
        ng_free(*bars);
        *bars = NULL;
        *count = 0;
    }
    return status;
}
