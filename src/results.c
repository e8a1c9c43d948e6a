/* results.c — writes the HDF5 results file of results.h (the reader is
 * results_load.c).
 *
 * Invariants: nothing exists at the final path until ng_results_commit has
 * written and closed every dataset; the temporary file lives in the same
 * directory (so that rename is atomic on POSIX file systems) and is removed
 * on every failure path. HDF5's own error printing is switched off while
 * this module calls it; errors are reported through ng_error instead.
 */
#include "nervegap/results.h"

#include "alloc.h"
#include "h5util.h"
#include "outfile.h"

#include <errno.h>
#include <hdf5.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

struct ng_results_file {
    char *final_path;
    char *temp_path;
    ng_progress_fn progress;
    void *progress_ctx;
};

void ng_results_set_progress(ng_results_file *f, ng_progress_fn fn,
                             void *ctx)
{
    f->progress = fn;
    f->progress_ctx = ctx;
}

const char *ng_results_temp_path(const ng_results_file *f)
{
    return f ? f->temp_path : NULL;
}

int ng_results_open(const char *path, ng_results_file **out, ng_error *err)
{
    *out = NULL;
    char *temp;
    int fd;
    int status = ng_outfile_create(path, "out.h5", &temp, &fd, err);
    if (status != NG_OK) return status;
    close(fd);
    ng_results_file *f = ng_calloc(1, sizeof *f);
    if (f == NULL) {
        unlink(temp);
        ng_free(temp);
        return ng_error_set(err, NG_ERR_NOMEM, "out of memory");
    }
    f->temp_path = temp;
    f->final_path = ng_strdup(path);
    if (f->final_path == NULL) {
        ng_results_abort(f);
        return ng_error_set(err, NG_ERR_NOMEM, "out of memory");
    }
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

/* What the writing helpers share: progress over the data elements. */
typedef struct writer {
    ng_progress_fn progress;
    void *ctx;
    double total; /* elements of all datasets */
    double done;
} writer;

/* Creation properties of a dataset: chunked with shuffle and deflate when
 * it holds at least NG_RESULTS_CHUNK_MIN elements (chunks of about 2^17
 * elements, whole rows), else contiguous (H5P_DEFAULT). */
static hid_t dataset_plist(int rank, const hsize_t *dims, hsize_t total)
{
    if (total < NG_RESULTS_CHUNK_MIN ||
        H5Zfilter_avail(H5Z_FILTER_DEFLATE) <= 0)
        return H5P_DEFAULT;
    hsize_t chunk[3], row = 1;
    for (int r = 1; r < rank; r++) {
        chunk[r] = dims[r];
        row *= dims[r];
    }
    hsize_t rows = ((hsize_t)1 << 17) / (row ? row : 1);
    chunk[0] = rows < 1 ? 1 : rows > dims[0] ? dims[0] : rows;
    hid_t pl = H5Pcreate(H5P_DATASET_CREATE);
    if (pl < 0) return -1;
    if (H5Pset_chunk(pl, rank, chunk) < 0 || H5Pset_shuffle(pl) < 0 ||
        H5Pset_deflate(pl, 4) < 0) {
        H5Pclose(pl);
        return -1;
    }
    return pl;
}

/* Writes one dataset (0, or -1 on failure) and reports the progress. */
static int dataset_write(writer *w, hid_t loc, const char *name,
                         hid_t file_type, hid_t mem_type, int rank,
                         const hsize_t *dims, const void *data)
{
    hsize_t total = 1;
    for (int r = 0; r < rank; r++) total *= dims[r];
    hid_t pl = dataset_plist(rank, dims, total);
    int r = pl < 0 ? -1
                   : ng_h5_dataset_write(loc, name, file_type, mem_type, rank,
                                         dims, pl, data);
    if (pl > 0 && pl != H5P_DEFAULT) H5Pclose(pl);
    w->done += (double)total;
    if (w->progress && w->total > 0.0 && w->done < w->total)
        w->progress("writing", w->done / w->total, w->ctx);
    return r;
}

static int write_doubles(writer *w, hid_t loc, const char *name, int rank,
                         const hsize_t *dims, const double *data)
{
    return dataset_write(w, loc, name, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE,
                         rank, dims, data);
}

static int write_int64s(writer *w, hid_t loc, const char *name, int rank,
                        const hsize_t *dims, const int64_t *data)
{
    return dataset_write(w, loc, name, H5T_STD_I64LE, H5T_NATIVE_INT64, rank,
                         dims, data);
}

/* Data elements of one diagram, for the progress fraction. */
static double diagram_elements(const ng_diagram *d)
{
    double e = 0.0;
    for (int k = 0; k <= d->max_degree; k++)
        e += (double)d->bars[k].count * (double)(2 + k + 1 + k + 2);
    return e;
}

/* Writes the bars of one diagram under loc/dim{k}/. */
static int write_diagram(writer *w, hid_t loc, const ng_diagram *d)
{
    for (int k = 0; k <= d->max_degree; k++) {
        const ng_bars *b = &d->bars[k];
        char name[32];
        snprintf(name, sizeof name, "dim%d", k);
        hid_t g = ng_h5_group_create(loc, name);
        if (g < 0) return -1;
        hsize_t dims[2] = {b->count, 2};
        int r = write_doubles(w, g, "bars", 2, dims, b->interval);
        dims[1] = (hsize_t)k + 1;
        if (r == 0) r = write_int64s(w, g, "birth_vertices", 2, dims,
                                     b->birth_vertices);
        dims[1] = (hsize_t)k + 2;
        if (r == 0) r = write_int64s(w, g, "death_vertices", 2, dims,
                                     b->death_vertices);
        if (r == 0) r = ng_h5_attr_int(g, "truncated", (int64_t)b->truncated);
        H5Gclose(g);
        if (r != 0) return -1;
    }
    return 0;
}

static double grid_elements(const ng_grid *g)
{
    double G = (double)g->G, w0 = g->max_degree + 1.0;
    return G * (7.0 + 2.0 * w0 + 2.0 * (w0 + 1.0) + g->n_slices * w0);
}

static int write_grid(writer *w, hid_t file, const ng_grid *g)
{
    hid_t grp = ng_h5_group_create(file, "grid");
    if (grp < 0) return -1;
    int r = 0;
    hsize_t G = g->G, w0 = (hsize_t)g->max_degree + 1, w1 = w0 + 1;
    hsize_t d1[1] = {G}, d2[2] = {G, w0}, d3[2] = {G, w1};
    r |= write_doubles(w, grp, "scale", 1, d1, g->scale);
    r |= write_int64s(w, grp, "betti_cech", 2, d2, g->betti_cech);
    r |= write_int64s(w, grp, "betti_rips", 2, d2, g->betti_rips);
    r |= write_int64s(w, grp, "simplices_cech", 2, d3, g->simplices_cech);
    r |= write_int64s(w, grp, "simplices_rips", 2, d3, g->simplices_rips);
    r |= write_doubles(w, grp, "factor_max", 1, d1, g->factor_max);
    r |= write_doubles(w, grp, "factor_q50", 1, d1, g->factor_q50);
    r |= write_doubles(w, grp, "factor_q90", 1, d1, g->factor_q90);
    r |= write_doubles(w, grp, "shift_max", 1, d1, g->shift_max);
    r |= write_doubles(w, grp, "shift_q50", 1, d1, g->shift_q50);
    r |= write_doubles(w, grp, "shift_q90", 1, d1, g->shift_q90);
    if (g->n_slices > 0) {
        hsize_t dh[3] = {(hsize_t)g->n_slices, G, w0};
        r |= write_int64s(w, grp, "hilbert", 3, dh, g->hilbert);
    }
    H5Gclose(grp);
    return r ? -1 : 0;
}

static int write_divergence(writer *w, hid_t file, const ng_run_record *rec)
{
    hid_t grp = ng_h5_group_create(file, "divergence");
    if (grp < 0) return -1;
    int r = 0;
    hsize_t n = (hsize_t)rec->max_degree + 1;
    r |= write_doubles(w, grp, "bottleneck", 1, &n, rec->bottleneck);
    r |= write_doubles(w, grp, "wasserstein1", 1, &n, rec->wasserstein1);
    r |= write_doubles(w, grp, "wasserstein2", 1, &n, rec->wasserstein2);
    if (rec->grid) {
        r |= ng_h5_attr_double(grp, "factor_bound", rec->grid->factor_bound);
        r |= ng_h5_attr_double(grp, "shift_bound", rec->grid->shift_bound);
        r |= ng_h5_attr_double(grp, "factor_bound_at",
                               rec->grid->factor_bound_at);
        r |= ng_h5_attr_double(grp, "shift_bound_at",
                               rec->grid->shift_bound_at);
    }
    r |= ng_h5_attr_double(grp, "wasserstein_relative_error",
                           rec->wasserstein_relative_error);
    r |= ng_h5_attr_int(grp, "wasserstein_limit",
                        (int64_t)rec->wasserstein_limit);
    H5Gclose(grp);
    return r ? -1 : 0;
}

/* /job: which job of a batch this file answers (job.h, manifest.h). */
static int write_job(writer *w, hid_t file, const ng_run_record *rec)
{
    hid_t g = ng_h5_group_create(file, "job");
    if (g < 0) return -1;
    int r = ng_h5_attr_string(g, "id", rec->job_id);
    r |= ng_h5_attr_string(g, "parameters",
                           rec->job_parameters ? rec->job_parameters : "");
    if (rec->subsample_of) {
        hsize_t n = rec->n_points;
        r |= ng_h5_attr_string(g, "subsample_of", rec->subsample_of);
        r |= ng_h5_attr_int(g, "subsample_index", rec->subsample_index);
        r |= ng_h5_attr_int(g, "subsample_seed", (int64_t)rec->subsample_seed);
        r |= write_int64s(w, g, "subsample_points", 1, &n,
                          rec->subsample_points);
    }
    H5Gclose(g);
    return r ? -1 : 0;
}

static double seconds_since(const struct timespec *t0)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)(t.tv_sec - t0->tv_sec) +
           1e-9 * (double)(t.tv_nsec - t0->tv_nsec);
}

/* /provenance: the last group written, so that the "writing" stage covers
 * everything but this group and closing the file. */
static int write_provenance(hid_t file, const ng_run_record *rec,
                            const struct timespec *start)
{
    hid_t grp = ng_h5_group_create(file, "provenance");
    if (grp < 0) return -1;
    int r = 0;
    unsigned major = 0, minor = 0, release = 0;
    char text[256];
    H5get_libversion(&major, &minor, &release);
    snprintf(text, sizeof text, "%u.%u.%u", major, minor, release);
    r |= ng_h5_attr_string(grp, "hdf5_version", text);
    r |= ng_h5_attr_int(grp, "threads", rec->threads);
    r |= ng_h5_attr_int(grp, "peak_memory_bytes", rec->peak_memory_bytes);
    time_t now = time(NULL);
    struct tm utc;
    if (gmtime_r(&now, &utc) == NULL ||
        strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &utc) == 0)
        text[0] = '\0';
    r |= ng_h5_attr_string(grp, "created", text);
    if (gethostname(text, sizeof text) != 0) text[0] = '\0';
    text[sizeof text - 1] = '\0';
    r |= ng_h5_attr_string(grp, "host", text);

    /* one attribute per stage, listed in creation order by readers */
    hid_t pl = H5Pcreate(H5P_GROUP_CREATE);
    if (pl < 0 || H5Pset_attr_creation_order(pl, H5P_CRT_ORDER_TRACKED |
                                                     H5P_CRT_ORDER_INDEXED) < 0)
        r = -1;
    hid_t st = r ? -1
                 : H5Gcreate2(grp, "stage_seconds", H5P_DEFAULT, pl,
                              H5P_DEFAULT);
    if (pl >= 0) H5Pclose(pl);
    double total = 0.0;
    if (st < 0) r = -1;
    for (int i = 0; r == 0 && i < rec->n_stages; i++) {
        r |= ng_h5_attr_double(st, rec->stage_names[i], rec->stage_seconds[i]);
        total += rec->stage_seconds[i];
    }
    double writing = seconds_since(start);
    if (r == 0) r |= ng_h5_attr_double(st, "writing", writing);
    if (st >= 0) H5Gclose(st);
    r |= ng_h5_attr_double(grp, "wall_seconds", total + writing);
    H5Gclose(grp);
    return r ? -1 : 0;
}

static int write_all(hid_t file, const ng_run_record *rec,
                     const ng_persistence *p, writer *w,
                     const struct timespec *start)
{
    int r = 0;
    int n_diagrams = 2 + (rec->n_slices > 0 ? rec->n_slices : 0);
    w->total = 2.0 * (double)rec->n_points;
    for (int j = 0; j < n_diagrams; j++)
        w->total += diagram_elements(&p->diagram[j]);
    if (rec->grid) w->total += grid_elements(rec->grid);
    if (rec->subsample_of) w->total += (double)rec->n_points;
    if (w->progress) w->progress("writing", 0.0, w->ctx);

    hid_t root = H5Gopen2(file, "/", H5P_DEFAULT);
    if (root < 0) return -1;
    r |= ng_h5_attr_string(root, "format", NG_RESULTS_FORMAT);
    r |= ng_h5_attr_int(root, "format_version", NG_RESULTS_FORMAT_VERSION);
    r |= ng_h5_attr_string(root, "tool_version", NG_VERSION);
    r |= ng_h5_attr_string(root, "command", rec->command ? rec->command : "");
    H5Gclose(root);
    if (r) return -1;

    hid_t g = ng_h5_group_create(file, "input");
    if (g < 0) return -1;
    r |= ng_h5_attr_string(g, "source", rec->source);
    r |= ng_h5_attr_string(g, "file", rec->input_file ? rec->input_file : "");
    r |= ng_h5_attr_string(g, "sha256",
                           rec->input_sha256 ? rec->input_sha256 : "");
    r |= ng_h5_attr_int(g, "bytes", (int64_t)rec->input_bytes);
    r |= ng_h5_attr_int(g, "n_points", (int64_t)rec->n_points);
    r |= ng_h5_attr_int(g, "ambient_dim", (int64_t)rec->ambient_dim);
    r |= ng_h5_attr_string(g, "metric", rec->metric);
    H5Gclose(g);
    if (r) return -1;

    g = ng_h5_group_create(file, "vertices");
    if (g < 0) return -1;
    hsize_t n = rec->n_points;
    r |= write_doubles(w, g, "radius", 1, &n, rec->radius);
    r |= write_doubles(w, g, "birth", 1, &n, rec->birth);
    H5Gclose(g);
    if (r) return -1;

    g = ng_h5_group_create(file, "scheme");
    if (g < 0) return -1;
    r |= ng_h5_attr_string(g, "radius_rule", rec->radius_rule);
    r |= ng_h5_attr_string(g, "law", rec->law);
    r |= ng_h5_attr_double(g, "scale_limit", rec->scale_limit);
    r |= ng_h5_attr_int(g, "scale_auto", rec->scale_auto ? 1 : 0);
    r |= ng_h5_attr_double(g, "full_scale", rec->full_scale);
    r |= ng_h5_attr_int(g, "limited_by_budget",
                        rec->limited_by_budget ? 1 : 0);
    r |= ng_h5_attr_int(g, "max_degree", rec->max_degree);
    r |= ng_h5_attr_int(g, "truncated", rec->truncated ? 1 : 0);
    H5Gclose(g);
    if (r) return -1;

    static const char *names[2] = {"cech", "rips"};
    for (int j = 0; j < 2 && j < p->n_filtrations; j++) {
        g = ng_h5_group_create(file, names[j]);
        if (g < 0) return -1;
        r = write_diagram(w, g, &p->diagram[j]);
        H5Gclose(g);
        if (r) return -1;
    }
    if (rec->n_slices > 0) {
        g = ng_h5_group_create(file, "slices");
        if (g < 0) return -1;
        hsize_t L = (hsize_t)rec->n_slices;
        r |= write_doubles(w, g, "values", 1, &L, rec->slice_values);
        if (r == 0) {
            hid_t v = H5Dopen2(g, "values", H5P_DEFAULT);
            r |= v < 0 ? -1 : ng_h5_attr_string(v, "kind", rec->slice_kind);
            if (v >= 0) H5Dclose(v);
        }
        for (int s = 0; r == 0 && s < rec->n_slices; s++) {
            char name[32];
            snprintf(name, sizeof name, "%d", s);
            hid_t sg = ng_h5_group_create(g, name);
            if (sg < 0) {
                r = -1;
                break;
            }
            r |= write_diagram(w, sg, &p->diagram[2 + s]);
            H5Gclose(sg);
        }
        H5Gclose(g);
        if (r) return -1;
    }
    if (rec->grid && write_grid(w, file, rec->grid) != 0) return -1;
    if (rec->bottleneck && write_divergence(w, file, rec) != 0) return -1;
    if (rec->job_id && write_job(w, file, rec) != 0) return -1;
    return write_provenance(file, rec, start);
}

int ng_results_commit(ng_results_file *f, const ng_run_record *rec,
                      const ng_persistence *p, ng_error *err)
{
    struct timespec start;
    clock_gettime(CLOCK_MONOTONIC, &start);
    if (p->n_filtrations < 2 + (rec->n_slices > 0 ? rec->n_slices : 0)) {
        ng_results_abort(f);
        return ng_error_set(err, NG_ERR_USAGE,
                            "results: %d filtrations for %d slices",
                            p->n_filtrations, rec->n_slices);
    }
    ng_h5_quiet quiet;
    ng_h5_quiet_begin(&quiet);
    int status = NG_OK;
    writer w = {f->progress, f->progress_ctx, 0.0, 0.0};
    hid_t file = H5Fcreate(f->temp_path, H5F_ACC_TRUNC, H5P_DEFAULT,
                           H5P_DEFAULT);
    if (file < 0) {
        status = ng_error_set(err, NG_ERR_IO, "%s: cannot create the HDF5 "
                              "file (temporary %s)", f->final_path,
                              f->temp_path);
    } else {
        int r = write_all(file, rec, p, &w, &start);
        if (H5Fclose(file) < 0) r = -1;
        if (r != 0)
            status = ng_error_set(err, NG_ERR_IO,
                                  "%s: writing the results failed (disk "
                                  "full?)", f->final_path);
    }
    ng_h5_quiet_end(&quiet);
    if (status == NG_OK && rename(f->temp_path, f->final_path) != 0)
        status = ng_error_set(err, NG_ERR_IO, "%s: cannot rename %s onto it: "
                              "%s", f->final_path, f->temp_path,
                              strerror(errno));
    if (status == NG_OK) {
        ng_free(f->temp_path);
        f->temp_path = NULL; /* renamed: nothing to remove */
        if (w.progress) w.progress("writing", 1.0, w.ctx);
    }
    ng_results_abort(f);
    return status;
}
