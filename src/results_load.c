/* results_load.c — reads a whole results file (results.h) into memory.
 *
 * Every object is looked up by its full HDF5 path, and every failure names
 * the file and that path ("out.h5: /cech/dim1/bars: expected float64[m][2],
 * found a 1-D dataset"). Shapes are checked against each other: D + 1
 * degrees everywhere, n vertices, G scales, L slices. Format 1 files (no
 * provenance) load with the missing fields marked as results.h says.
 * HDF5's own error printing is switched off while this module calls it.
 */
#include "nervegap/results.h"

#include "alloc.h"
#include "h5util.h"

#include <errno.h>
#include <hdf5.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#define ANY_SIZE ((hsize_t)-1)

typedef struct loader {
    hid_t file;
    const char *path;
    ng_error *err;
} loader;

static int bad(loader *L, const char *object, const char *what)
{
    return ng_error_set(L->err, NG_ERR_INPUT, "%s: %s: %s", L->path, object,
                        what);
}

static int nomem(loader *L, const char *object)
{
    return ng_error_set(L->err, NG_ERR_NOMEM, "%s: %s: out of memory",
                        L->path, object);
}

/* 1 when the object at the absolute path exists (0 for a path too long
 * for any object of a results file). */
static int exists(loader *L, const char *object)
{
    char missing[256];
    return strlen(object) < sizeof missing &&
           ng_h5_path_exists(L->file, object, missing, sizeof missing);
}

/* Opens the attribute name of object; -1 with *status set when it is
 * missing (NG_ERR_INPUT if required, else NG_OK). */
static hid_t attr_open(loader *L, const char *object, const char *name,
                       int required, int *status)
{
    *status = NG_OK;
    if (H5Aexists_by_name(L->file, object, name, H5P_DEFAULT) <= 0) {
        if (required) {
            char what[128];
            snprintf(what, sizeof what, "attribute %s is missing", name);
            *status = bad(L, object, what);
        }
        return -1;
    }
    hid_t a = H5Aopen_by_name(L->file, object, name, H5P_DEFAULT,
                              H5P_DEFAULT);
    if (a < 0)
        *status = ng_error_set(L->err, NG_ERR_IO, "%s: %s: cannot open "
                               "attribute %s", L->path, object, name);
    return a;
}

/* 1 when attribute a holds one value (a scalar or a one-element array). */
static int attr_single(hid_t a)
{
    hid_t space = H5Aget_space(a);
    hssize_t n = space < 0 ? -1 : H5Sget_simple_extent_npoints(space);
    if (space >= 0) H5Sclose(space);
    return n == 1;
}

/* A string attribute (variable or fixed length) into *out (ng_strdup'd);
 * *out stays NULL when it is absent and not required. */
static int attr_text(loader *L, const char *object, const char *name,
                     int required, char **out)
{
    int status;
    hid_t a = attr_open(L, object, name, required, &status);
    if (a < 0) return status;
    hid_t ft = H5Aget_type(a);
    char what[128];
    if (ft < 0 || H5Tget_class(ft) != H5T_STRING || !attr_single(a)) {
        snprintf(what, sizeof what, "attribute %s is not a string", name);
        status = bad(L, object, what);
    } else if (H5Tis_variable_str(ft) > 0) {
        hid_t mt = H5Tcopy(H5T_C_S1);
        char *value = NULL;
        if (mt < 0 || H5Tset_size(mt, H5T_VARIABLE) < 0 ||
            H5Tset_cset(mt, H5Tget_cset(ft)) < 0 ||
            H5Aread(a, mt, &value) < 0) {
            status = ng_error_set(L->err, NG_ERR_IO, "%s: %s: cannot read "
                                  "attribute %s", L->path, object, name);
        } else {
            *out = ng_strdup(value ? value : "");
            if (*out == NULL) status = nomem(L, object);
        }
        if (value) H5free_memory(value);
        if (mt >= 0) H5Tclose(mt);
    } else {
        size_t size = H5Tget_size(ft);
        hid_t mt = H5Tcopy(ft);
        *out = ng_calloc(size + 1, 1);
        if (*out == NULL)
            status = nomem(L, object);
        else if (mt < 0 || H5Aread(a, mt, *out) < 0)
            status = ng_error_set(L->err, NG_ERR_IO, "%s: %s: cannot read "
                                  "attribute %s", L->path, object, name);
        if (mt >= 0) H5Tclose(mt);
    }
    if (ft >= 0) H5Tclose(ft);
    H5Aclose(a);
    if (status != NG_OK) {
        ng_free(*out);
        *out = NULL;
    }
    return status;
}

/* A numeric attribute read as mem_type (HDF5 converts integers and
 * floats); *out is left untouched when absent and not required. */
static int attr_number(loader *L, const char *object, const char *name,
                       int required, hid_t mem_type, void *out)
{
    int status;
    hid_t a = attr_open(L, object, name, required, &status);
    if (a < 0) return status;
    hid_t ft = H5Aget_type(a);
    H5T_class_t cls = ft < 0 ? H5T_NO_CLASS : H5Tget_class(ft);
    if ((cls != H5T_INTEGER && cls != H5T_FLOAT) || !attr_single(a)) {
        char what[128];
        snprintf(what, sizeof what, "attribute %s is not a number", name);
        status = bad(L, object, what);
    } else if (H5Aread(a, mem_type, out) < 0) {
        status = ng_error_set(L->err, NG_ERR_IO, "%s: %s: cannot read "
                              "attribute %s", L->path, object, name);
    }
    if (ft >= 0) H5Tclose(ft);
    H5Aclose(a);
    return status;
}

static int attr_int(loader *L, const char *object, const char *name,
                    int required, int64_t *out)
{
    return attr_number(L, object, name, required, H5T_NATIVE_INT64, out);
}

static int attr_double(loader *L, const char *object, const char *name,
                       int required, double *out)
{
    return attr_number(L, object, name, required, H5T_NATIVE_DOUBLE, out);
}

/* Describes a shape as "float64[3][2]" (ANY_SIZE as a letter). */
static void shape_text(int is_float, int rank, const hsize_t *dims,
                       const char *letters, char *buf, size_t size)
{
    size_t used = (size_t)snprintf(buf, size, "%s",
                                   is_float ? "float64" : "int64");
    for (int r = 0; r < rank && used < size; r++) {
        if (dims[r] == ANY_SIZE)
            used += (size_t)snprintf(buf + used, size - used, "[%c]",
                                     letters[r]);
        else
            used += (size_t)snprintf(buf + used, size - used, "[%llu]",
                                     (unsigned long long)dims[r]);
    }
}

/* Reads the dataset at object: floats (is_float) or integers, of the given
 * rank and dims (ANY_SIZE: any extent, written back into dims). *out gets
 * the elements as doubles or int64 (ng_malloc'd, at least one byte).
 * letters name the free extents in messages ("m", "G", ...). */
static int dataset_read(loader *L, const char *object, int is_float,
                        int rank, hsize_t *dims, const char *letters,
                        void **out)
{
    *out = NULL;
    if (!exists(L, object)) return bad(L, object, "no such dataset");
    hid_t obj = H5Oopen(L->file, object, H5P_DEFAULT);
    int is_set = obj >= 0 && H5Iget_type(obj) == H5I_DATASET;
    if (obj >= 0) H5Oclose(obj);
    if (!is_set) return bad(L, object, "is not a dataset");
    hid_t set = H5Dopen2(L->file, object, H5P_DEFAULT);
    hid_t space = set < 0 ? -1 : H5Dget_space(set);
    hid_t ft = set < 0 ? -1 : H5Dget_type(set);
    int status = NG_OK;
    char want[96], what[256];
    shape_text(is_float, rank, dims, letters, want, sizeof want);
    if (set < 0 || space < 0 || ft < 0) {
        status = ng_error_set(L->err, NG_ERR_IO, "%s: %s: cannot open the "
                              "dataset", L->path, object);
        goto done;
    }
    H5T_class_t cls = H5Tget_class(ft);
    int got_rank = H5Sget_simple_extent_ndims(space);
    hsize_t got[H5S_MAX_RANK];
    if (got_rank >= 0 && got_rank <= H5S_MAX_RANK)
        H5Sget_simple_extent_dims(space, got, NULL);
    int ok = got_rank == rank &&
             cls == (is_float ? H5T_FLOAT : H5T_INTEGER);
    for (int r = 0; ok && r < rank; r++)
        if (dims[r] != ANY_SIZE && dims[r] != got[r]) ok = 0;
    if (!ok) {
        if (got_rank == rank && got_rank >= 0) {
            char found[96];
            shape_text(cls == H5T_FLOAT, rank, got, letters, found,
                       sizeof found);
            snprintf(what, sizeof what, "expected %s, found %s%s", want,
                     cls == H5T_FLOAT || cls == H5T_INTEGER ? "" : "non-"
                                                                   "numeric ",
                     found);
        } else {
            snprintf(what, sizeof what, "expected %s, found a %d-D dataset",
                     want, got_rank);
        }
        status = bad(L, object, what);
        goto done;
    }
    size_t total = 1;
    for (int r = 0; r < rank; r++) {
        dims[r] = got[r];
        if (got[r] != 0 && total > SIZE_MAX / 8 / (size_t)got[r]) {
            status = bad(L, object, "too large");
            goto done;
        }
        total *= (size_t)got[r];
    }
    *out = ng_malloc(total, 8);
    if (*out == NULL) {
        status = nomem(L, object);
        goto done;
    }
    if (total > 0 &&
        H5Dread(set, is_float ? H5T_NATIVE_DOUBLE : H5T_NATIVE_INT64,
                H5S_ALL, H5S_ALL, H5P_DEFAULT, *out) < 0)
        status = ng_error_set(L->err, NG_ERR_IO, "%s: %s: cannot read the "
                              "data (corrupt file?)", L->path, object);
done:
    if (ft >= 0) H5Tclose(ft);
    if (space >= 0) H5Sclose(space);
    if (set >= 0) H5Dclose(set);
    if (status != NG_OK) {
        ng_free(*out);
        *out = NULL;
    }
    return status;
}

static int read_doubles(loader *L, const char *object, int rank,
                        hsize_t *dims, const char *letters, double **out)
{
    return dataset_read(L, object, 1, rank, dims, letters, (void **)out);
}

static int read_int64s(loader *L, const char *object, int rank,
                       hsize_t *dims, const char *letters, int64_t **out)
{
    return dataset_read(L, object, 0, rank, dims, letters, (void **)out);
}

static void diagram_release(ng_diagram *d)
{
    for (int k = 0; k < NG_COMPLEX_MAX_DIM; k++) {
        ng_free(d->bars[k].interval);
        ng_free(d->bars[k].birth_vertices);
        ng_free(d->bars[k].death_vertices);
    }
    memset(d, 0, sizeof *d);
}

/* The bars of group (e.g. "/cech", "/slices/0"), degrees 0..D. */
static int read_diagram(loader *L, const char *group, int D, ng_diagram *d)
{
    char object[256];
    if (!exists(L, group)) return bad(L, group, "no such group");
    d->max_degree = D;
    for (int k = 0; k <= D; k++) {
        ng_bars *b = &d->bars[k];
        b->degree = k;
        hsize_t dims[2] = {ANY_SIZE, 2};
        snprintf(object, sizeof object, "%s/dim%d/bars", group, k);
        int status = read_doubles(L, object, 2, dims, "m", &b->interval);
        if (status != NG_OK) return status;
        b->count = (size_t)dims[0];
        dims[1] = (hsize_t)k + 1;
        snprintf(object, sizeof object, "%s/dim%d/birth_vertices", group, k);
        status = read_int64s(L, object, 2, dims, "m", &b->birth_vertices);
        if (status != NG_OK) return status;
        dims[1] = (hsize_t)k + 2;
        snprintf(object, sizeof object, "%s/dim%d/death_vertices", group, k);
        status = read_int64s(L, object, 2, dims, "m", &b->death_vertices);
        if (status != NG_OK) return status;
        for (size_t i = 0; i < b->count; i++)
            if (isinf(b->interval[2 * i + 1])) b->truncated++;
    }
    return NG_OK;
}

static int read_grid(loader *L, ng_results *r)
{
    ng_grid *g = &r->grid;
    g->max_degree = r->max_degree;
    g->n_slices = r->n_slices;
    hsize_t w0 = (hsize_t)r->max_degree + 1, w1 = w0 + 1;
    hsize_t d1[1] = {ANY_SIZE};
    int status = read_doubles(L, "/grid/scale", 1, d1, "G", &g->scale);
    if (status != NG_OK) return status;
    g->G = (size_t)d1[0];
    hsize_t G = d1[0];
    hsize_t d2[2] = {G, w0}, d3[2] = {G, w1};
    struct { const char *name; int64_t **dst; hsize_t *dims; } ints[] = {
        {"/grid/betti_cech", &g->betti_cech, d2},
        {"/grid/betti_rips", &g->betti_rips, d2},
        {"/grid/simplices_cech", &g->simplices_cech, d3},
        {"/grid/simplices_rips", &g->simplices_rips, d3},
    };
    for (size_t i = 0; i < sizeof ints / sizeof ints[0]; i++) {
        hsize_t dims[2] = {ints[i].dims[0], ints[i].dims[1]};
        status = read_int64s(L, ints[i].name, 2, dims, "GD", ints[i].dst);
        if (status != NG_OK) return status;
    }
    struct { const char *name; double **dst; } reals[] = {
        {"/grid/factor_max", &g->factor_max},
        {"/grid/factor_q50", &g->factor_q50},
        {"/grid/factor_q90", &g->factor_q90},
        {"/grid/shift_max", &g->shift_max},
        {"/grid/shift_q50", &g->shift_q50},
        {"/grid/shift_q90", &g->shift_q90},
    };
    for (size_t i = 0; i < sizeof reals / sizeof reals[0]; i++) {
        hsize_t dims[1] = {G};
        status = read_doubles(L, reals[i].name, 1, dims, "G", reals[i].dst);
        if (status != NG_OK) return status;
    }
    if (r->n_slices > 0) {
        hsize_t dh[3] = {(hsize_t)r->n_slices, G, w0};
        status = read_int64s(L, "/grid/hilbert", 3, dh, "LGD", &g->hilbert);
        if (status != NG_OK) return status;
    } else if (exists(L, "/grid/hilbert")) {
        return bad(L, "/grid/hilbert", "present, but the file has no "
                                       "/slices");
    }
    return NG_OK;
}

static int read_divergence(loader *L, ng_results *r)
{
    hsize_t n = (hsize_t)r->max_degree + 1;
    struct { const char *name; double *dst; } sets[] = {
        {"/divergence/bottleneck", r->bottleneck},
        {"/divergence/wasserstein1", r->wasserstein1},
        {"/divergence/wasserstein2", r->wasserstein2},
    };
    for (size_t i = 0; i < sizeof sets / sizeof sets[0]; i++) {
        hsize_t dims[1] = {n};
        double *v = NULL;
        int status = read_doubles(L, sets[i].name, 1, dims, "D", &v);
        if (status != NG_OK) return status;
        memcpy(sets[i].dst, v, (size_t)n * sizeof *v);
        ng_free(v);
    }
    struct { const char *name; double *dst; } attrs[] = {
        {"factor_bound", &r->factor_bound},
        {"shift_bound", &r->shift_bound},
        {"factor_bound_at", &r->factor_bound_at},
        {"shift_bound_at", &r->shift_bound_at},
        {"wasserstein_relative_error", &r->wasserstein_relative_error},
    };
    for (size_t i = 0; i < sizeof attrs / sizeof attrs[0]; i++) {
        int status = attr_double(L, "/divergence", attrs[i].name, 1,
                                 attrs[i].dst);
        if (status != NG_OK) return status;
    }
    int status = attr_int(L, "/divergence", "wasserstein_limit", 0,
                          &r->wasserstein_limit);
    if (status != NG_OK) return status;
    if (r->has_grid) {
        r->grid.factor_bound = r->factor_bound;
        r->grid.shift_bound = r->shift_bound;
        r->grid.factor_bound_at = r->factor_bound_at;
        r->grid.shift_bound_at = r->shift_bound_at;
    }
    return NG_OK;
}

/* Collects the names of the stage attributes (in creation order when the
 * group tracks it, else by name). */
typedef struct stage_list {
    char **names;
    int count, cap, failed;
} stage_list;

static herr_t collect_stage(hid_t loc, const char *name,
                            const H5A_info_t *info, void *opaque)
{
    (void)loc;
    (void)info;
    stage_list *s = opaque;
    if (s->count == s->cap) {
        int cap = s->cap ? 2 * s->cap : 16;
        char **grown = ng_realloc(s->names, (size_t)cap, sizeof *grown);
        if (grown == NULL) {
            s->failed = 1;
            return -1;
        }
        s->names = grown;
        s->cap = cap;
    }
    s->names[s->count] = ng_strdup(name);
    if (s->names[s->count] == NULL) {
        s->failed = 1;
        return -1;
    }
    s->count++;
    return 0;
}

static int read_provenance(loader *L, ng_results *r)
{
    const char *P = "/provenance", *S = "/provenance/stage_seconds";
    if (!exists(L, P)) return bad(L, P, "no such group");
    int64_t v = 0;
    int status = attr_text(L, P, "hdf5_version", 1, &r->hdf5_version);
    if (status == NG_OK) status = attr_text(L, P, "created", 1, &r->created);
    if (status == NG_OK) status = attr_text(L, P, "host", 1, &r->host);
    if (status == NG_OK) status = attr_int(L, P, "threads", 1, &v);
    r->threads = (int)v;
    if (status == NG_OK)
        status = attr_int(L, P, "peak_memory_bytes", 1,
                          &r->peak_memory_bytes);
    if (status == NG_OK)
        status = attr_double(L, P, "wall_seconds", 1, &r->wall_seconds);
    if (status != NG_OK) return status;
    if (!exists(L, S)) return bad(L, S, "no such group");
    hid_t g = H5Gopen2(L->file, S, H5P_DEFAULT);
    if (g < 0) return bad(L, S, "cannot open the group");
    stage_list list = {NULL, 0, 0, 0};
    hid_t pl = H5Gget_create_plist(g);
    unsigned order = 0;
    if (pl >= 0) {
        H5Pget_attr_creation_order(pl, &order);
        H5Pclose(pl);
    }
    hsize_t idx = 0;
    herr_t it = H5Aiterate2(g, (order & H5P_CRT_ORDER_INDEXED)
                                   ? H5_INDEX_CRT_ORDER
                                   : H5_INDEX_NAME,
                            H5_ITER_INC, &idx, collect_stage, &list);
    H5Gclose(g);
    r->stage_names = list.names;
    r->n_stages = list.count;
    if (list.failed) return nomem(L, S);
    if (it < 0) return bad(L, S, "cannot list the attributes");
    r->stage_seconds = ng_malloc((size_t)list.count, sizeof *r->stage_seconds);
    if (r->stage_seconds == NULL) return nomem(L, S);
    for (int i = 0; i < list.count && status == NG_OK; i++)
        status = attr_double(L, S, list.names[i], 1, &r->stage_seconds[i]);
    return status;
}

/* /job, written for the jobs of a batch. */
static int read_job(loader *L, ng_results *r)
{
    const char *J = "/job";
    int status = attr_text(L, J, "id", 1, &r->job_id);
    if (status == NG_OK)
        status = attr_text(L, J, "parameters", 1, &r->job_parameters);
    if (status == NG_OK)
        status = attr_text(L, J, "subsample_of", 0, &r->subsample_of);
    if (status != NG_OK || r->subsample_of == NULL) return status;
    int64_t v = 0;
    status = attr_int(L, J, "subsample_index", 1, &v);
    if (status != NG_OK) return status;
    if (v < 1 || v > INT32_MAX) return bad(L, J, "subsample_index is not ≥ 1");
    r->subsample_index = (int)v;
    status = attr_int(L, J, "subsample_seed", 1, &r->subsample_seed);
    hsize_t n[1] = {r->n_points};
    if (status == NG_OK)
        status = read_int64s(L, "/job/subsample_points", 1, n, "n",
                             &r->subsample_points);
    return status;
}

static int load_open(loader *L, ng_results *r)
{
    char *format = NULL;
    int64_t v = 0;
    int status = attr_text(L, "/", "format", 0, &format);
    int ours = status == NG_OK && format &&
               strcmp(format, NG_RESULTS_FORMAT) == 0;
    ng_free(format);
    if (status != NG_OK && status != NG_ERR_INPUT) return status;
    if (!ours) {
        ng_error_clear(L->err);
        return bad(L, "/", "not a nervegap results file (no format = "
                           "\"" NG_RESULTS_FORMAT "\" attribute)");
    }
    status = attr_int(L, "/", "format_version", 1, &v);
    if (status != NG_OK) return status;
    if (v < 1 || v > NG_RESULTS_FORMAT_VERSION) {
        char what[160];
        snprintf(what, sizeof what, "format_version %lld; this nervegap "
                 "(%s) reads versions 1 to %d", (long long)v, NG_VERSION,
                 NG_RESULTS_FORMAT_VERSION);
        return bad(L, "/", what);
    }
    r->format_version = (int)v;
    int v2 = r->format_version >= 2;
    status = attr_text(L, "/", "tool_version", 1, &r->tool_version);
    if (status == NG_OK) status = attr_text(L, "/", "command", 1, &r->command);

    const char *I = "/input";
    if (status == NG_OK && !exists(L, I)) status = bad(L, I, "no such group");
    if (status == NG_OK) status = attr_text(L, I, "source", 1, &r->source);
    if (status == NG_OK) status = attr_text(L, I, "file", v2, &r->input_file);
    if (status == NG_OK)
        status = attr_text(L, I, "sha256", v2, &r->input_sha256);
    if (status == NG_OK) status = attr_int(L, I, "bytes", v2, &r->input_bytes);
    if (status == NG_OK) status = attr_int(L, I, "n_points", 1, &v);
    if (status != NG_OK) return status;
    if (v < 1) return bad(L, I, "n_points is below 1");
    r->n_points = (size_t)v;
    status = attr_int(L, I, "ambient_dim", 1, &v);
    if (status != NG_OK) return status;
    if (v < 0) return bad(L, I, "ambient_dim is negative");
    r->ambient_dim = (size_t)v;
    status = attr_text(L, I, "metric", 1, &r->metric);
    if (status != NG_OK) return status;

    hsize_t n[1] = {r->n_points};
    status = read_doubles(L, "/vertices/radius", 1, n, "n", &r->radius);
    if (status == NG_OK)
        status = read_doubles(L, "/vertices/birth", 1, n, "n", &r->birth);
    if (status != NG_OK) return status;

    const char *S = "/scheme";
    if (!exists(L, S)) return bad(L, S, "no such group");
    status = attr_text(L, S, "radius_rule", 1, &r->radius_rule);
    if (status == NG_OK) status = attr_text(L, S, "law", 1, &r->law);
    if (status == NG_OK)
        status = attr_double(L, S, "scale_limit", 1, &r->scale_limit);
    if (status == NG_OK)
        status = attr_double(L, S, "full_scale", v2, &r->full_scale);
    v = -1;
    if (status == NG_OK) status = attr_int(L, S, "scale_auto", v2, &v);
    r->scale_auto = (int)v;
    v = -1;
    if (status == NG_OK) status = attr_int(L, S, "limited_by_budget", v2, &v);
    r->limited_by_budget = (int)v;
    if (status == NG_OK) status = attr_int(L, S, "truncated", 1, &v);
    r->truncated = (int)v;
    if (status == NG_OK) status = attr_int(L, S, "max_degree", 1, &v);
    if (status != NG_OK) return status;
    if (v < 0 || v >= NG_COMPLEX_MAX_DIM) {
        char what[96];
        snprintf(what, sizeof what, "max_degree %lld is not in 0..%d",
                 (long long)v, NG_COMPLEX_MAX_DIM - 1);
        return bad(L, S, what);
    }
    r->max_degree = (int)v;
    int D = r->max_degree;

    status = read_diagram(L, "/cech", D, &r->cech);
    if (status == NG_OK) status = read_diagram(L, "/rips", D, &r->rips);
    if (status != NG_OK) return status;

    if (exists(L, "/slices")) {
        hsize_t dims[1] = {ANY_SIZE};
        status = read_doubles(L, "/slices/values", 1, dims, "L",
                              &r->slice_values);
        if (status != NG_OK) return status;
        if (dims[0] > 4096) return bad(L, "/slices/values", "too many slices");
        r->n_slices = (int)dims[0];
        status = attr_text(L, "/slices/values", "kind", 1, &r->slice_kind);
        if (status != NG_OK) return status;
        if (strcmp(r->slice_kind, "factor") && strcmp(r->slice_kind, "shift"))
            return bad(L, "/slices/values", "attribute kind is neither "
                                            "factor nor shift");
        r->slices = ng_calloc((size_t)r->n_slices, sizeof *r->slices);
        if (r->slices == NULL) return nomem(L, "/slices");
        for (int j = 0; j < r->n_slices && status == NG_OK; j++) {
            char group[32];
            snprintf(group, sizeof group, "/slices/%d", j);
            status = read_diagram(L, group, D, &r->slices[j]);
        }
        if (status != NG_OK) return status;
    }
    if (exists(L, "/grid")) {
        r->has_grid = 1;
        status = read_grid(L, r);
        if (status != NG_OK) return status;
    }
    if (exists(L, "/divergence")) {
        r->has_divergence = 1;
        status = read_divergence(L, r);
        if (status != NG_OK) return status;
    }
    if (exists(L, "/job")) {
        status = read_job(L, r);
        if (status != NG_OK) return status;
    }
    if (v2) return read_provenance(L, r);
    return NG_OK;
}

int ng_results_load(const char *path, ng_results **out, ng_error *err)
{
    *out = NULL;
    ng_results *r = ng_calloc(1, sizeof *r);
    if (r == NULL || (r->path = ng_strdup(path)) == NULL) {
        ng_free(r);
        return ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory", path);
    }
    r->input_bytes = -1;
    r->scale_auto = r->limited_by_budget = r->threads = -1;
    r->peak_memory_bytes = -1;
    r->full_scale = r->wall_seconds = NAN;
    r->factor_bound = r->shift_bound = NAN;
    r->factor_bound_at = r->shift_bound_at = NAN;
    r->wasserstein_relative_error = NAN;
    for (int k = 0; k < NG_COMPLEX_MAX_DIM; k++)
        r->bottleneck[k] = r->wasserstein1[k] = r->wasserstein2[k] = NAN;

    FILE *probe = fopen(path, "rb");
    if (probe == NULL) {
        int e = errno;
        ng_results_free(r);
        return ng_error_set(err, NG_ERR_INPUT, "%s: cannot open: %s", path,
                            strerror(e));
    }
    fclose(probe);
    ng_h5_quiet quiet;
    ng_h5_quiet_begin(&quiet);
    int status;
    hid_t file = H5Fis_hdf5(path) > 0
                     ? H5Fopen(path, H5F_ACC_RDONLY, H5P_DEFAULT)
                     : -1;
    if (file < 0) {
        status = ng_error_set(err, NG_ERR_INPUT,
                              "%s: not an HDF5 file (or a damaged one)",
                              path);
    } else {
        loader L = {file, path, err};
        status = load_open(&L, r);
        H5Fclose(file);
    }
    ng_h5_quiet_end(&quiet);
    if (status != NG_OK) {
        ng_results_free(r);
        return status;
    }
    *out = r;
    return NG_OK;
}

void ng_results_free(ng_results *r)
{
    if (r == NULL) return;
    char **strings[] = {&r->path,         &r->tool_version, &r->command,
                        &r->source,       &r->input_file,   &r->input_sha256,
                        &r->metric,       &r->radius_rule,  &r->law,
                        &r->slice_kind,   &r->hdf5_version, &r->created,
                        &r->host,         &r->job_id,       &r->job_parameters,
                        &r->subsample_of};
    for (size_t i = 0; i < sizeof strings / sizeof strings[0]; i++)
        ng_free(*strings[i]);
    ng_free(r->radius);
    ng_free(r->birth);
    ng_free(r->subsample_points);
    diagram_release(&r->cech);
    diagram_release(&r->rips);
    if (r->slices)
        for (int j = 0; j < r->n_slices; j++) diagram_release(&r->slices[j]);
    ng_free(r->slices);
    ng_free(r->slice_values);
    ng_grid_free(&r->grid);
    for (int i = 0; i < r->n_stages; i++) ng_free(r->stage_names[i]);
    ng_free(r->stage_names);
    ng_free(r->stage_seconds);
    ng_free(r);
}

const ng_diagram *ng_results_diagram(const ng_results *r, int j)
{
    if (j == 0) return &r->cech;
    if (j == 1) return &r->rips;
    if (j >= 2 && j - 2 < r->n_slices) return &r->slices[j - 2];
    return NULL;
}

const char *ng_results_diagram_name(int j, char *buf, size_t size)
{
    if (j < 0) return NULL;
    if (j == 0) snprintf(buf, size, "cech");
    else if (j == 1) snprintf(buf, size, "rips");
    else snprintf(buf, size, "slices/%d", j - 2);
    return buf;
}
