/* gather.c — joining the job files of a batch directory into one HDF5 file
 * and a CSV table, with the subsample confidence (batch.h).
 *
 * Subsample confidence (how it works). For a job on all points with
 * diagram D (per complex and degree) and its subsample jobs with diagrams
 * D_1..D_B, c = the (1 − α) quantile of the bottleneck distances
 * W∞(D, D_i) (nearest rank); a bar of D longer than 2c is significant:
 * the confidence set of radius c around D (in the bottleneck distance)
 * holds no diagram in which that bar has gone to the diagonal (Fasy,
 * Lecci, Rinaldo, Wasserman, Balakrishnan, Singh, "Confidence sets for
 * persistence diagrams", Ann. Statist. 42, 2014, the subsampling method;
 * Chazal, Fasy, Lecci, Michel, Rinaldo, Wasserman, "Robust topological
 * inference: distance to a measure and kernel distance", J. Mach. Learn.
 * Res. 18, 2018, the bootstrap band and its use for significance). The
 * two diagrams of a pair are compared on the common range [0, T] with T
 * the smaller of their scale limits: every bar is cut at T (a bar alive at
 * T, or dying later, dies at T; one born at or after T is dropped), which
 * is the diagram of the filtration cut at T, as the divergence of one run
 * counts deaths of +inf as T (DESIGN §2.6). A bar's length in D is
 * min(death, T_D) − birth.
 *
 * Invariants: at most two results files are in memory at a time (a job on
 * all points and one of its subsamples); every job of the list gets one
 * row and one /index entry, complete or not.
 */
#include "nervegap/batch.h"

#include "alloc.h"
#include "batch_internal.h"
#include "h5util.h"
#include "nervegap/distance.h"
#include "nervegap/results.h"
#include "outfile.h"

#include <errno.h>
#include <hdf5.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#define GATHER_FORMAT "nervegap-gather"
#define GATHER_FORMAT_VERSION 1
#define MAXD NG_COMPLEX_MAX_DIM

static const char *status_names[] = {"complete", "missing", "failed",
                                     "corrupt", "stale"};

typedef struct gjob {
    char *id, *parent_id, *parameters; /* point into the list text */
    long parent;
    int subsample;                     /* index ≥ 1; 0: all points */
    ng_gather_status status;
    char *message;                     /* ng_malloc'd or NULL */
    int max_degree;                    /* from the parameters */
    /* from the file */
    size_t n_points;
    double scale_limit;
    int truncated;
    int64_t simplices[2];              /* Čech, Rips at T, all dims */
    double factor_bound, shift_bound;
    size_t bars[2][MAXD];
    double bottleneck[MAXD], w1[MAXD], w2[MAXD];
    /* confidence (jobs with subsamples) */
    size_t used;                       /* complete subsamples */
    double quantile[2][MAXD];
    size_t significant[2][MAXD];
} gjob;

typedef struct gather {
    const char *dir;
    char *jobs_dir;
    char *list_text;
    gjob *jobs;
    size_t n;
    double alpha;
    int subsamples;
    hid_t out;                         /* the HDF5 file being written */
    hid_t jobs_group, conf_group;
    ng_gather_problem_fn problem;
    void *ctx;
    ng_error *err;
} gather;

double ng_gather_quantile(double *values, size_t n, double alpha)
{
    if (n == 0) return NAN;
    for (size_t i = 1; i < n; i++) { /* insertion sort: B is small */
        double v = values[i];
        size_t j = i;
        for (; j > 0 && values[j - 1] > v; j--) values[j] = values[j - 1];
        values[j] = v;
    }
    double rank = ceil((double)n * (1.0 - alpha));
    size_t r = rank < 1.0 ? 1 : rank > (double)n ? n : (size_t)rank;
    return values[r - 1];
}

/* ---- the job list ---- */

static int read_text(const char *path, char **out, ng_error *err)
{
    *out = NULL;
    FILE *f = fopen(path, "rb");
    if (f == NULL)
        return ng_error_set(err, NG_ERR_INPUT, "%s: cannot open: %s", path,
                            strerror(errno));
    size_t len = 0, cap = 4096;
    char *text = ng_malloc(cap, 1);
    int status = NG_OK;
    while (text) {
        if (len + 1 == cap) {
            char *t = ng_realloc(text, cap * 2, 1);
            if (t == NULL) break;
            text = t;
            cap *= 2;
        }
        size_t got = fread(text + len, 1, cap - 1 - len, f);
        len += got;
        if (got == 0) break;
    }
    if (text == NULL || len + 1 > cap)
        status = ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory", path);
    else if (ferror(f))
        status = ng_error_set(err, NG_ERR_IO, "%s: read error", path);
    fclose(f);
    if (status != NG_OK) {
        ng_free(text);
        return status;
    }
    text[len] = '\0';
    *out = text;
    return NG_OK;
}

/* The value of field key in canonical parameters, copied into buf ("" when
 * absent). */
static const char *param(const char *params, const char *key, char *buf,
                         size_t size)
{
    size_t klen = strlen(key);
    buf[0] = '\0';
    for (const char *f = params; f && *f; f = strchr(f, '\t')) {
        if (*f == '\t') f++;
        if (strncmp(f, key, klen) == 0 && f[klen] == '=') {
            const char *v = f + klen + 1;
            size_t len = strcspn(v, "\t");
            snprintf(buf, size, "%.*s", (int)len, v);
            break;
        }
    }
    return buf;
}

static int read_list(gather *g)
{
    char *path = batch_path(g->dir, BATCH_JOB_LIST, NULL);
    if (path == NULL) return ng_error_set(g->err, NG_ERR_NOMEM, "no memory");
    int status = read_text(path, &g->list_text, g->err);
    if (status != NG_OK) {
        ng_free(path);
        return status;
    }
    size_t lines = 0;
    for (char *c = g->list_text; *c; c++) lines += *c == '\n';
    g->jobs = ng_calloc(lines + 1, sizeof *g->jobs);
    if (g->jobs == NULL) {
        ng_free(path);
        return ng_error_set(g->err, NG_ERR_NOMEM, "out of memory");
    }
    int line = 0;
    char *next = g->list_text;
    while (status == NG_OK && next && *next) {
        char *s = next;
        next = strchr(s, '\n');
        if (next) *next++ = '\0';
        line++;
        char *f[4] = {s, NULL, NULL, NULL};
        for (int i = 1; i < 4 && f[i - 1]; i++) {
            f[i] = strchr(f[i - 1], '\t');
            if (f[i]) *f[i]++ = '\0';
        }
        if (line == 1) {
            if (strcmp(f[0], BATCH_JOB_LIST_FORMAT) != 0 || !f[1] ||
                strcmp(f[1], "1") != 0)
                status = ng_error_set(g->err, NG_ERR_INPUT, "%s:1: not a "
                                      "nervegap job list of format 1", path);
        } else if (strcmp(f[0], "alpha") == 0 && f[1]) {
            if (isnan(g->alpha)) g->alpha = strtod(f[1], NULL);
        } else if (strcmp(f[0], "subsamples") == 0 && f[1]) {
            g->subsamples = atoi(f[1]);
        } else if (strcmp(f[0], "job") == 0 && f[1] && f[2] && f[3]) {
            gjob *j = &g->jobs[g->n];
            j->id = f[1];
            j->parent_id = f[2];
            j->parameters = f[3];
            j->parent = -1;
            if (strcmp(f[2], "-") != 0)
                for (size_t p = g->n; p-- > 0;)
                    if (strcmp(g->jobs[p].id, f[2]) == 0) {
                        j->parent = (long)p;
                        break;
                    }
            if (strcmp(f[2], "-") != 0 && j->parent < 0)
                status = ng_error_set(g->err, NG_ERR_INPUT, "%s:%d: job %s "
                                      "names an unknown parent %s", path,
                                      line, f[1], f[2]);
            char buf[32];
            j->subsample = atoi(param(j->parameters, "subsample", buf,
                                      sizeof buf));
            j->max_degree = atoi(param(j->parameters, "max-degree", buf,
                                       sizeof buf));
            if (j->max_degree < 0 || j->max_degree >= MAXD)
                j->max_degree = 0;
            g->n++;
        } else if (f[0][0] != '\0') {
            status = ng_error_set(g->err, NG_ERR_INPUT, "%s:%d: unexpected "
                                  "line", path, line);
        }
    }
    if (status == NG_OK && !(g->alpha > 0.0 && g->alpha < 1.0))
        status = ng_error_set(g->err, NG_ERR_USAGE, "alpha %g: expected a "
                              "level between 0 and 1", g->alpha);
    ng_free(path);
    return status;
}

/* ---- one job ---- */

static void report(gather *g, gjob *j, ng_gather_status s, const char *msg)
{
    j->status = s;
    ng_free(j->message);
    j->message = ng_strdup(msg ? msg : "");
    if (g->problem) g->problem(j->id, s, msg ? msg : "", g->ctx);
}

/* Loads the file of job j; NULL (with j's status set) when it is not
 * complete. */
static ng_results *load_job(gather *g, gjob *j)
{
    char *path = batch_path(g->jobs_dir, j->id, ".h5");
    char *failed = batch_path(g->jobs_dir, j->id, ".failed");
    ng_results *r = NULL;
    struct stat st;
    if (path == NULL || failed == NULL) {
        report(g, j, NG_GATHER_MISSING, "out of memory");
    } else if (stat(path, &st) != 0) {
        char *text = NULL;
        ng_error e;
        ng_error_clear(&e);
        if (read_text(failed, &text, &e) == NG_OK) {
            char *msg = strchr(text, '\n');
            msg = msg ? msg + 1 : text;
            msg[strcspn(msg, "\n")] = '\0';
            report(g, j, NG_GATHER_FAILED, msg);
        } else {
            report(g, j, NG_GATHER_MISSING, "no results file (not run yet, "
                                            "or killed)");
        }
        ng_free(text);
    } else {
        ng_error e;
        ng_error_clear(&e);
        if (ng_results_load(path, &r, &e) != NG_OK) {
            report(g, j, NG_GATHER_CORRUPT, e.message);
        } else if (r->job_id == NULL || strcmp(r->job_id, j->id) != 0 ||
                   r->job_parameters == NULL ||
                   strcmp(r->job_parameters, j->parameters) != 0) {
            report(g, j, NG_GATHER_STALE, "the file answers other parameters "
                                          "(run nervegap batch again)");
            ng_results_free(r);
            r = NULL;
        }
    }
    ng_free(path);
    ng_free(failed);
    if (r == NULL) return NULL;
    j->status = NG_GATHER_COMPLETE;
    j->n_points = r->n_points;
    j->scale_limit = r->scale_limit;
    j->truncated = r->truncated;
    j->max_degree = r->max_degree;
    j->factor_bound = r->factor_bound;
    j->shift_bound = r->shift_bound;
    j->simplices[0] = j->simplices[1] = -1;
    if (r->has_grid && r->grid.G > 0) {
        size_t w = (size_t)r->max_degree + 2, last = (r->grid.G - 1) * w;
        j->simplices[0] = j->simplices[1] = 0;
        for (size_t k = 0; k < w; k++) {
            j->simplices[0] += r->grid.simplices_cech[last + k];
            j->simplices[1] += r->grid.simplices_rips[last + k];
        }
    }
    for (int k = 0; k <= r->max_degree; k++) {
        j->bars[0][k] = r->cech.bars[k].count;
        j->bars[1][k] = r->rips.bars[k].count;
        j->bottleneck[k] = r->bottleneck[k];
        j->w1[k] = r->wasserstein1[k];
        j->w2[k] = r->wasserstein2[k];
    }
    return r;
}

/* Copies job j's file into /jobs/ID. */
static int copy_job(gather *g, const gjob *j)
{
    char *path = batch_path(g->jobs_dir, j->id, ".h5");
    if (path == NULL) return ng_error_set(g->err, NG_ERR_NOMEM, "no memory");
    hid_t src = H5Fopen(path, H5F_ACC_RDONLY, H5P_DEFAULT);
    herr_t c = src < 0 ? -1
                       : H5Ocopy(src, "/", g->jobs_group, j->id, H5P_DEFAULT,
                                 H5P_DEFAULT);
    if (src >= 0) H5Fclose(src);
    int status = c < 0 ? ng_error_set(g->err, NG_ERR_IO, "%s: cannot copy it "
                                      "into the gathered file", path)
                       : NG_OK;
    ng_free(path);
    return status;
}

/* The bars of b cut at T (see the top of the file) into out (2·count). */
static size_t cut_bars(const ng_bars *b, double T, double *out)
{
    size_t m = 0;
    for (size_t i = 0; i < b->count; i++) {
        double birth = b->interval[2 * i], death = b->interval[2 * i + 1];
        if (death > T) death = T;
        if (!(birth < death)) continue;
        out[2 * m] = birth;
        out[2 * m + 1] = death;
        m++;
    }
    return m;
}

/* ---- HDF5 helpers ---- */

/* The datasets of the gathered file are small: stored contiguous. */
static int write_set(hid_t loc, const char *name, hid_t file_type,
                     hid_t mem_type, int rank, const hsize_t *dims,
                     const void *data)
{
    return ng_h5_dataset_write(loc, name, file_type, mem_type, rank, dims,
                               H5P_DEFAULT, data);
}

static int write_strings(hid_t loc, const char *name, const char **v,
                         size_t n)
{
    hid_t t = ng_h5_string_type();
    hsize_t dims[1] = {n};
    int r = t < 0 ? -1 : write_set(loc, name, t, t, 1, dims, v);
    if (t >= 0) H5Tclose(t);
    return r;
}

/* ---- confidence ---- */

/* The confidence of full job j (loaded as full) from its subsamples; the
 * subsample jobs are loaded, described and copied here, one at a time. */
static int confidence(gather *g, size_t jf, const ng_results *full)
{
    gjob *j = &g->jobs[jf];
    int D = full->max_degree, status = NG_OK;
    size_t B = 0;
    for (size_t c = jf + 1; c < g->n && g->jobs[c].parent == (long)jf; c++)
        B++;
    double *dist = ng_calloc(2 * B * (size_t)(D + 1), sizeof *dist);
    int64_t *index = ng_calloc(B + 1, sizeof *index);
    size_t biggest = 0;
    for (int k = 0; k <= D; k++) {
        if (full->cech.bars[k].count > biggest)
            biggest = full->cech.bars[k].count;
        if (full->rips.bars[k].count > biggest)
            biggest = full->rips.bars[k].count;
    }
    double *a = ng_malloc(2 * biggest + 2, sizeof *a), *b = NULL;
    double *column = ng_malloc(B + 1, sizeof *column);
    if (!dist || !index || !a || !column) {
        status = ng_error_set(g->err, NG_ERR_NOMEM, "out of memory");
        goto cleanup;
    }
    size_t used = 0;
    for (size_t c = jf + 1; c < jf + 1 + B && status == NG_OK; c++) {
        ng_results *sub = load_job(g, &g->jobs[c]);
        if (sub == NULL) continue;
        status = copy_job(g, &g->jobs[c]);
        if (status == NG_OK && sub->max_degree != D)
            status = ng_error_set(g->err, NG_ERR_INPUT, "job %s: max degree "
                                  "%d differs from its parent's %d",
                                  g->jobs[c].id, sub->max_degree, D);
        double T = full->scale_limit < sub->scale_limit ? full->scale_limit
                                                        : sub->scale_limit;
        for (int x = 0; x < 2 && status == NG_OK; x++) {
            const ng_diagram *df = x ? &full->rips : &full->cech;
            const ng_diagram *ds = x ? &sub->rips : &sub->cech;
            for (int k = 0; k <= D && status == NG_OK; k++) {
                ng_free(b);
                b = ng_malloc(2 * ds->bars[k].count + 2, sizeof *b);
                if (b == NULL) {
                    status = ng_error_set(g->err, NG_ERR_NOMEM, "no memory");
                    break;
                }
                size_t na = cut_bars(&df->bars[k], T, a);
                size_t nb = cut_bars(&ds->bars[k], T, b);
                status = ng_bottleneck_distance(
                    a, na, b, nb,
                    &dist[(x * B + used) * (size_t)(D + 1) + (size_t)k],
                    g->err);
            }
        }
        index[used++] = g->jobs[c].subsample;
        ng_results_free(sub);
    }
    j->used = used;
    if (status != NG_OK || used == 0) goto cleanup;

    hid_t grp = ng_h5_group_create(g->conf_group, j->id);
    int r = grp < 0 ? -1 : 0;
    if (r == 0) {
        hsize_t n1[1] = {used};
        r |= ng_h5_attr_double(grp, "alpha", g->alpha);
        r |= ng_h5_attr_int(grp, "subsamples", (int64_t)B);
        r |= ng_h5_attr_int(grp, "subsamples_used", (int64_t)used);
        r |= write_set(grp, "subsample_index", H5T_STD_I64LE,
                       H5T_NATIVE_INT64, 1, n1, index);
    }
    for (int x = 0; x < 2 && r == 0; x++) {
        const ng_diagram *df = x ? &full->rips : &full->cech;
        hid_t cg = ng_h5_group_create(grp, x ? "rips" : "cech");
        if (cg < 0) {
            r = -1;
            break;
        }
        hsize_t d2[2] = {used, (hsize_t)D + 1}, d1[1] = {(hsize_t)D + 1};
        double q[MAXD];
        for (int k = 0; k <= D; k++) {
            for (size_t i = 0; i < used; i++)
                column[i] = dist[(x * B + i) * (size_t)(D + 1) + (size_t)k];
            q[k] = ng_gather_quantile(column, used, g->alpha);
            j->quantile[x][k] = q[k];
        }
        r |= write_set(cg, "bottleneck", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE,
                       2, d2, dist + x * B * (size_t)(D + 1));
        r |= write_set(cg, "quantile", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, 1,
                       d1, q);
        for (int k = 0; k <= D && r == 0; k++) {
            const ng_bars *bars = &df->bars[k];
            unsigned char *mark = ng_malloc(bars->count + 1, 1);
            if (mark == NULL) {
                r = -1;
                break;
            }
            size_t count = 0;
            for (size_t i = 0; i < bars->count; i++) {
                double birth = bars->interval[2 * i];
                double death = bars->interval[2 * i + 1];
                if (death > full->scale_limit) death = full->scale_limit;
                mark[i] = death - birth > 2.0 * q[k];
                count += mark[i];
            }
            j->significant[x][k] = count;
            char name[32];
            snprintf(name, sizeof name, "significant_dim%d", k);
            hsize_t dm[1] = {bars->count};
            r |= write_set(cg, name, H5T_STD_U8LE, H5T_NATIVE_UCHAR, 1, dm,
                           mark);
            ng_free(mark);
        }
        H5Gclose(cg);
    }
    if (grp >= 0) H5Gclose(grp);
    if (r != 0)
        status = ng_error_set(g->err, NG_ERR_IO, "cannot write the "
                              "confidence of job %s", j->id);
cleanup:
    ng_free(dist);
    ng_free(index);
    ng_free(a);
    ng_free(b);
    ng_free(column);
    return status;
}

/* ---- the table ---- */

static void csv_text(FILE *f, const char *s)
{
    if (strpbrk(s, ",\"\n\r") == NULL) {
        fputs(s, f);
        return;
    }
    fputc('"', f);
    for (; *s; s++) {
        if (*s == '"') fputc('"', f);
        fputc(*s, f);
    }
    fputc('"', f);
}

static void csv_number(FILE *f, double v)
{
    if (isnan(v)) return; /* empty: not known */
    if (isinf(v)) fputs(v > 0 ? "inf" : "-inf", f);
    else fprintf(f, "%.17g", v);
}

/* The parameter keys of all jobs, in the order first seen. */
#define MAX_KEYS 32
static int param_keys(const gather *g, char keys[MAX_KEYS][32])
{
    int n = 0;
    for (size_t j = 0; j < g->n; j++) {
        for (const char *f = g->jobs[j].parameters; f && *f;
             f = strchr(f, '\t')) {
            if (*f == '\t') f++;
            size_t len = strcspn(f, "=\t");
            if (len == 0 || len >= 32) continue;
            int seen = 0;
            for (int i = 0; i < n && !seen; i++)
                seen = strlen(keys[i]) == len && !strncmp(keys[i], f, len);
            if (!seen && n < MAX_KEYS) {
                memcpy(keys[n], f, len);
                keys[n][len] = '\0';
                n++;
            }
        }
    }
    return n;
}

static int write_table(const gather *g, const char *table, ng_error *err)
{
    char *text = NULL;
    size_t size = 0;
    FILE *f = open_memstream(&text, &size);
    if (f == NULL) return ng_error_set(err, NG_ERR_NOMEM, "out of memory");
    char keys[MAX_KEYS][32], buf[NG_MANIFEST_VALUE_MAX + 1];
    int nk = param_keys(g, keys), D = 0;
    for (size_t j = 0; j < g->n; j++)
        if (g->jobs[j].max_degree > D) D = g->jobs[j].max_degree;
    fputs("id,status,message,subsample_of", f);
    for (int i = 0; i < nk; i++) {
        fputc(',', f);
        for (const char *c = keys[i]; *c; c++) fputc(*c == '-' ? '_' : *c, f);
    }
    fputs(",n_points,scale_limit_used,truncated,simplices_cech,"
          "simplices_rips,factor_bound,shift_bound", f);
    static const char *per_degree[] = {"bars_cech", "bars_rips",
                                       "bottleneck", "wasserstein1",
                                       "wasserstein2"};
    static const char *conf[] = {"quantile_cech", "quantile_rips",
                                 "significant_cech", "significant_rips"};
    for (int c = 0; c < 5; c++)
        for (int k = 0; k <= D; k++) fprintf(f, ",%s_%d", per_degree[c], k);
    fputs(",subsamples_used", f);
    for (int c = 0; c < 4; c++)
        for (int k = 0; k <= D; k++) fprintf(f, ",%s_%d", conf[c], k);
    fputc('\n', f);
    for (size_t x = 0; x < g->n; x++) {
        const gjob *j = &g->jobs[x];
        int done = j->status == NG_GATHER_COMPLETE;
        csv_text(f, j->id);
        fprintf(f, ",%s,", status_names[j->status]);
        csv_text(f, j->message ? j->message : "");
        fputc(',', f);
        if (j->parent >= 0) csv_text(f, j->parent_id);
        for (int i = 0; i < nk; i++) {
            fputc(',', f);
            csv_text(f, param(j->parameters, keys[i], buf, sizeof buf));
        }
        if (done)
            fprintf(f, ",%zu,%.17g,%d,%lld,%lld", j->n_points, j->scale_limit,
                    j->truncated, (long long)j->simplices[0],
                    (long long)j->simplices[1]);
        else
            fputs(",,,,,", f);
        fputc(',', f);
        if (done) csv_number(f, j->factor_bound);
        fputc(',', f);
        if (done) csv_number(f, j->shift_bound);
        for (int c = 0; c < 5; c++)
            for (int k = 0; k <= D; k++) {
                fputc(',', f);
                if (!done || k > j->max_degree) continue;
                if (c < 2) fprintf(f, "%zu", j->bars[c][k]);
                else csv_number(f, c == 2 ? j->bottleneck[k]
                                   : c == 3 ? j->w1[k]
                                            : j->w2[k]);
            }
        int has_conf = done && j->used > 0;
        fputc(',', f);
        if (j->parent < 0 && g->subsamples > 0) fprintf(f, "%zu", j->used);
        for (int c = 0; c < 4; c++)
            for (int k = 0; k <= D; k++) {
                fputc(',', f);
                if (!has_conf || k > j->max_degree) continue;
                if (c < 2) csv_number(f, j->quantile[c][k]);
                else fprintf(f, "%zu", j->significant[c - 2][k]);
            }
        fputc('\n', f);
    }
    int bad = fclose(f) != 0;
    int status = bad || text == NULL
                     ? ng_error_set(err, NG_ERR_NOMEM, "out of memory")
                     : batch_write_atomic(table, text, err);
    free(text); /* open_memstream's buffer comes from malloc */
    return status;
}

/* ---- the whole ---- */

static int write_index(gather *g)
{
    const char **v = ng_malloc(g->n + 1, sizeof *v);
    if (v == NULL) return ng_error_set(g->err, NG_ERR_NOMEM, "no memory");
    hid_t grp = ng_h5_group_create(g->out, "index");
    int r = grp < 0 ? -1 : 0;
    for (int field = 0; field < 5 && r == 0; field++) {
        for (size_t j = 0; j < g->n; j++) {
            const gjob *x = &g->jobs[j];
            v[j] = field == 0   ? x->id
                   : field == 1 ? status_names[x->status]
                   : field == 2 ? (x->message ? x->message : "")
                   : field == 3 ? (x->parent >= 0 ? x->parent_id : "")
                                : x->parameters;
        }
        static const char *names[] = {"id", "status", "message",
                                      "subsample_of", "parameters"};
        r |= write_strings(grp, names[field], v, g->n);
    }
    if (grp >= 0) H5Gclose(grp);
    ng_free(v);
    return r ? ng_error_set(g->err, NG_ERR_IO, "cannot write /index") : NG_OK;
}

static int gather_all(gather *g, ng_gather_summary *sum)
{
    int status = NG_OK;
    for (size_t x = 0; x < g->n && status == NG_OK; x++) {
        gjob *j = &g->jobs[x];
        if (j->parent >= 0) continue; /* with its parent */
        ng_results *full = load_job(g, j);
        if (full) status = copy_job(g, j);
        if (full && status == NG_OK)
            status = confidence(g, x, full);
        ng_results_free(full);
        if (full) continue;
        /* no parent to compare with: the subsamples alone */
        for (size_t c = x + 1; c < g->n && g->jobs[c].parent == (long)x &&
                               status == NG_OK; c++) {
            ng_results *sub = load_job(g, &g->jobs[c]);
            if (sub) status = copy_job(g, &g->jobs[c]);
            ng_results_free(sub);
        }
    }
    for (size_t x = 0; x < g->n; x++) {
        switch (g->jobs[x].status) {
        case NG_GATHER_COMPLETE: sum->complete++; break;
        case NG_GATHER_MISSING: sum->missing++; break;
        case NG_GATHER_FAILED: sum->failed++; break;
        case NG_GATHER_CORRUPT: sum->corrupt++; break;
        case NG_GATHER_STALE: sum->stale++; break;
        }
    }
    sum->jobs = g->n;
    return status;
}

int ng_gather(const char *dir, const char *output, const char *table,
              double alpha, ng_gather_problem_fn problem, void *ctx,
              ng_gather_summary *sum, ng_error *err)
{
    memset(sum, 0, sizeof *sum);
    if (!isnan(alpha) && !(alpha > 0.0 && alpha < 1.0))
        return ng_error_set(err, NG_ERR_USAGE, "--alpha %g: expected a level "
                            "between 0 and 1", alpha);
    gather g;
    memset(&g, 0, sizeof g);
    g.dir = dir;
    g.alpha = alpha;
    g.problem = problem;
    g.ctx = ctx;
    g.err = err;
    g.out = g.jobs_group = g.conf_group = -1;
    char *temp = NULL;
    ng_h5_quiet quiet;
    ng_h5_quiet_begin(&quiet);
    int status = read_list(&g);
    if (status == NG_OK && (g.jobs_dir = batch_path(dir, "jobs", NULL)) ==
                               NULL)
        status = ng_error_set(err, NG_ERR_NOMEM, "out of memory");
    if (status != NG_OK) goto cleanup;

    int fd;
    status = ng_outfile_create(output, "all.h5", &temp, &fd, err);
    if (status != NG_OK) goto cleanup;
    close(fd);
    g.out = H5Fcreate(temp, H5F_ACC_TRUNC, H5P_DEFAULT, H5P_DEFAULT);
    if (g.out >= 0)
        g.jobs_group = ng_h5_group_create(g.out, "jobs");
    if (g.jobs_group >= 0)
        g.conf_group = ng_h5_group_create(g.out, "confidence");
    if (g.conf_group < 0) {
        status = ng_error_set(err, NG_ERR_IO, "%s: cannot create the HDF5 "
                              "file", output);
        goto cleanup;
    }
    status = gather_all(&g, sum);
    if (status == NG_OK) status = write_index(&g);
    if (status == NG_OK) {
        char when[32];
        time_t t = time(NULL);
        struct tm tm;
        if (gmtime_r(&t, &tm) == NULL ||
            strftime(when, sizeof when, "%Y-%m-%dT%H:%M:%SZ", &tm) == 0)
            snprintf(when, sizeof when, "unknown");
        hid_t root = H5Gopen2(g.out, "/", H5P_DEFAULT);
        int r = root < 0 ? -1 : 0;
        if (r == 0) {
            r |= ng_h5_attr_string(root, "format", GATHER_FORMAT);
            r |= ng_h5_attr_int(root, "format_version", GATHER_FORMAT_VERSION);
            r |= ng_h5_attr_string(root, "tool_version", NG_VERSION);
            r |= ng_h5_attr_string(root, "created", when);
            r |= ng_h5_attr_string(root, "directory", dir);
            r |= ng_h5_attr_double(root, "alpha", g.alpha);
            r |= ng_h5_attr_int(root, "jobs", (int64_t)sum->jobs);
            r |= ng_h5_attr_int(root, "complete", (int64_t)sum->complete);
            H5Gclose(root);
        }
        if (r != 0)
            status = ng_error_set(err, NG_ERR_IO, "%s: cannot write the "
                                  "attributes", output);
    }
cleanup:
    if (g.conf_group >= 0) H5Gclose(g.conf_group);
    if (g.jobs_group >= 0) H5Gclose(g.jobs_group);
    if (g.out >= 0 && H5Fclose(g.out) < 0 && status == NG_OK)
        status = ng_error_set(err, NG_ERR_IO, "%s: writing failed (disk "
                              "full?)", output);
    ng_h5_quiet_end(&quiet);
    if (temp && status == NG_OK && rename(temp, output) != 0)
        status = ng_error_set(err, NG_ERR_IO, "%s: cannot rename %s onto it: "
                              "%s", output, temp, strerror(errno));
    if (temp && status != NG_OK) unlink(temp);
    if (status == NG_OK && table) status = write_table(&g, table, err);
    ng_free(temp);
    for (size_t j = 0; j < g.n; j++) ng_free(g.jobs[j].message);
    ng_free(g.jobs);
    ng_free(g.list_text);
    ng_free(g.jobs_dir);
    return status;
}
