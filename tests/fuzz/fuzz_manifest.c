/* fuzz_manifest.c — the batch manifest parser (manifest.c,
 * ng_manifest_parse_buffer) on arbitrary bytes. The parser reads a buffer
 * and touches no file, so the input is handed over as it is, under the
 * name "sweeps/m.txt" (relative paths resolve into "sweeps/").
 *
 * On failure: no manifest, and NG_ERR_NOMEM or an NG_ERR_INPUT message
 * "sweeps/m.txt:LINE:COLUMN: what" whose line is a line of the input (or
 * the one after the last, where a missing key is reported) and whose
 * column is a byte of that line.
 * On success, the promises of manifest.h:
 *   - 1..NG_MANIFEST_MAX_JOBS jobs, each job on all points followed by its
 *     subsamples 1..B, so that n_jobs is a multiple of 1 + B;
 *   - every canonical parameter text has every key in the fixed order
 *     (defaults filled in), no control character but the tabs between
 *     fields, and names the input the job reads;
 *   - every id is a prefix of letters, digits, '.', '_' and '-' (not
 *     starting with '.'), a '-' and the first 12 hex digits of the SHA-256
 *     of the canonical text; ids are distinct, and so are the texts;
 *   - the ng_job of a manifest job points at its strings and agrees with
 *     its parameters (input or distances, subsample fields, parent);
 *   - ids do not depend on the order of lines: the input with its lines
 *     reversed gives the same jobs, or fails as well;
 *   - the canonical text says what runs: a manifest written from the
 *     parameters of one job alone gives exactly that job, same text, same
 *     id (checked for up to ROUND_TRIPS jobs per input).
 * Seeds (tests/fuzz/seeds.py): the manifest of README.md, those of
 * tests/test_manifest.c, tests/ref_batch.py and tests/slurm_cluster.py, and
 * manifests with every key and value form. */
#include "fuzz_common.h"

#include "nervegap/manifest.h"
#include "nervegap/sha256.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define NAME "sweeps/m.txt"
#define NAME_DIR "sweeps/"
#define ID_HASH_DIGITS 12

enum { ROUND_TRIPS = 8, TOP_FIELDS = 13, SUB_FIELDS = 3 };

/* The keys of a canonical text in their order; field 0 is input or
 * distances. */
static const char *const field_keys[TOP_FIELDS + SUB_FIELDS] = {
    "input",       "metric",     "radius",
    "law",         "raw-radius", "merge-duplicates",
    "max-degree",  "scale-limit", "slices",
    "grid",        "max-simplices", "budget",
    "wasserstein-limit",
    "subsample",   "subsample-size", "seed",
};

static int parse(const char *text, size_t len, ng_manifest **m,
                 ng_error *err)
{
    ng_error_clear(err);
    int rc = ng_manifest_parse_buffer(text, len, NAME, m, err);
    fuzz_check_status(rc, err);
    if (rc != NG_OK && *m) fuzz_fail("a manifest handed out with an error");
    if (rc == NG_OK && !*m) fuzz_fail("NG_OK without a manifest");
    return rc;
}

/* The length of line `line` (1-based, as the parser counts them: pieces
 * between '\n', none after a final '\n'), or -1 when the text has fewer
 * lines; *lines gets the number of lines. */
static long line_length(const char *text, size_t len, long line,
                        long *lines)
{
    long found = -1, count = 0;
    for (size_t start = 0; start < len;) {
        const char *nl = memchr(text + start, '\n', len - start);
        size_t end = nl ? (size_t)(nl - text) : len;
        if (++count == line) found = (long)(end - start);
        start = end + 1;
    }
    *lines = count;
    return found;
}

static int is_digit(char c) { return c >= '0' && c <= '9'; }

static void check_failure(const char *text, size_t len, int rc,
                          const ng_error *err)
{
    if (rc == NG_ERR_NOMEM) return;
    if (rc != NG_ERR_INPUT)
        fuzz_fail("a manifest error that is not NG_ERR_INPUT");
    const char *s = err->message;
    if (strncmp(s, NAME ":", sizeof NAME) != 0)
        fuzz_fail("an error that does not start with the manifest name");
    s += sizeof NAME;
    char *end;
    if (!is_digit(*s)) fuzz_fail("an error without its line");
    long line = strtol(s, &end, 10);
    if (*end != ':' || !is_digit(end[1]))
        fuzz_fail("an error without its column");
    long column = strtol(end + 1, &end, 10);
    if (strncmp(end, ": ", 2) != 0 || end[2] == '\0')
        fuzz_fail("an error without what is wrong");
    long lines;
    long length = line_length(text, len, line, &lines);
    if (line < 1 || line > lines + 1)
        fuzz_fail("an error at a line the manifest does not have");
    if (line == lines + 1 ? column != 1 : (column < 1 || column > length))
        fuzz_fail("an error at a column outside its line");
}

static int by_id(const void *a, const void *b)
{
    return strcmp((*(const ng_manifest_job *const *)a)->id,
                  (*(const ng_manifest_job *const *)b)->id);
}

static int by_parameters(const void *a, const void *b)
{
    return strcmp((*(const ng_manifest_job *const *)a)->parameters,
                  (*(const ng_manifest_job *const *)b)->parameters);
}

/* Pointers to the jobs of m in the order of cmp (caller frees). */
static const ng_manifest_job **sorted(const ng_manifest *m,
                                      int (*cmp)(const void *, const void *))
{
    const ng_manifest_job **order = malloc(m->n_jobs * sizeof *order);
    if (!order) fuzz_fail("out of memory in the target");
    for (size_t j = 0; j < m->n_jobs; j++) order[j] = &m->jobs[j];
    qsort(order, m->n_jobs, sizeof *order, cmp);
    return order;
}

/* No control character; tab only where tabs is nonzero. */
static void check_text(const char *s, int tabs, const char *what)
{
    if (!s || !*s) fuzz_fail(what);
    for (; *s; s++)
        if (((unsigned char)*s < 0x20 && !(tabs && *s == '\t')) || *s == 0x7f)
            fuzz_fail(what);
}

/* The fields key=value of a canonical text, in order; the first value
 * names the input, metric is given exactly for distance matrices. */
static void check_fields(const ng_manifest_job *mj, int sub)
{
    const char *p = mj->parameters;
    int n = sub ? TOP_FIELDS + SUB_FIELDS : TOP_FIELDS;
    for (int f = 0; f < n; f++) {
        const char *key = f == 0 && mj->job.distances ? "distances"
                                                      : field_keys[f];
        size_t klen = strlen(key);
        if (strncmp(p, key, klen) != 0 || p[klen] != '=')
            fuzz_fail("a canonical text with a missing or misplaced key");
        const char *value = p + klen + 1;
        size_t vlen = strcspn(value, "\t");
        if (vlen == 0) fuzz_fail("a canonical text with an empty value");
        if (f == 0 && (vlen != strlen(mj->input) ||
                       memcmp(value, mj->input, vlen) != 0))
            fuzz_fail("a canonical text naming another input");
        if (f == 1 && (vlen == 5 && memcmp(value, "given", 5) == 0) !=
                          (mj->job.distances != 0))
            fuzz_fail("metric given for points, or not for distances");
        p = value + vlen;
        if (f + 1 < n && *p++ != '\t')
            fuzz_fail("a canonical text with too few fields");
    }
    if (*p) fuzz_fail("a canonical text with too many fields");
}

static void check_id(const ng_manifest_job *mj)
{
    size_t len = strnlen(mj->id, NG_JOB_ID_MAX);
    if (len == NG_JOB_ID_MAX) fuzz_fail("an id that does not end");
    if (len < ID_HASH_DIGITS + 2) fuzz_fail("an id without its hash");
    size_t prefix = len - ID_HASH_DIGITS - 1;
    if (mj->id[prefix] != '-') fuzz_fail("an id without '-' before its hash");
    if (mj->id[0] == '.') fuzz_fail("an id that starts with '.'");
    for (size_t i = 0; i < prefix; i++) {
        char c = mj->id[i];
        if (!((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') ||
              is_digit(c) || c == '.' || c == '_' || c == '-'))
            fuzz_fail("an id with a character unsafe in a file name");
    }
    ng_sha256 h;
    unsigned char digest[32];
    ng_sha256_init(&h);
    ng_sha256_update(&h, mj->parameters, strlen(mj->parameters));
    ng_sha256_final(&h, digest);
    char hex[ID_HASH_DIGITS + 1];
    for (int i = 0; i < ID_HASH_DIGITS / 2; i++)
        snprintf(hex + 2 * i, 3, "%02x", digest[i]);
    if (memcmp(mj->id + prefix + 1, hex, ID_HASH_DIGITS) != 0)
        fuzz_fail("an id whose hash is not that of its parameters");
}

/* path is input read from the manifest's directory (input itself when
 * absolute). */
static int is_resolved(const char *path, const char *input)
{
    if (input[0] == '/') return strcmp(path, input) == 0;
    size_t d = strlen(NAME_DIR);
    return strncmp(path, NAME_DIR, d) == 0 && strcmp(path + d, input) == 0;
}

static void check_job(const ng_manifest *m, size_t j)
{
    const ng_manifest_job *mj = &m->jobs[j];
    const ng_job *job = &mj->job;
    size_t sub = j % (1 + (size_t)m->subsamples);
    check_text(mj->parameters, 1, "a canonical text empty or with a "
               "control character");
    check_text(mj->input, 0, "an input empty or with a control character");
    if (!mj->input_path || !is_resolved(mj->input_path, mj->input))
        fuzz_fail("an input path not relative to the manifest directory");
    if (job->input != mj->input_path || job->id != mj->id ||
        job->parameters != mj->parameters)
        fuzz_fail("a job that does not point at its manifest job");
    if ((job->scheme.metric == NG_METRIC_GIVEN) != (job->distances != 0))
        fuzz_fail("a job whose metric is given exactly for matrices");
    if (mj->line < 1 || mj->column < 1 || mj->radius_line < 0 ||
        mj->radius_column < 0)
        fuzz_fail("a job named at an impossible position");
    check_fields(mj, sub > 0);
    check_id(mj);
    if (sub == 0) {
        if (mj->parent != -1 || job->subsample_size || job->subsample_index ||
            job->subsample_of)
            fuzz_fail("a job on all points with subsample settings");
        return;
    }
    if (mj->parent != (long)(j - sub))
        fuzz_fail("a subsample job that does not follow its parent");
    const ng_manifest_job *parent = &m->jobs[mj->parent];
    if (job->subsample_index != (int)sub ||
        job->subsample_size != m->subsample_size ||
        job->subsample_seed != m->seed || job->subsample_of != parent->id ||
        mj->line != parent->line || mj->column != parent->column)
        fuzz_fail("a subsample job that disagrees with the manifest");
    char tail[128];
    snprintf(tail, sizeof tail,
             "\tsubsample=%zu\tsubsample-size=%zu\tseed=%llu", sub,
             m->subsample_size, (unsigned long long)m->seed);
    size_t plen = strlen(parent->parameters);
    if (strncmp(mj->parameters, parent->parameters, plen) != 0 ||
        strcmp(mj->parameters + plen, tail) != 0)
        fuzz_fail("a subsample's text is not its parent's and the draw");
}

static void check_manifest(const ng_manifest *m)
{
    if (!m->name || strcmp(m->name, NAME) != 0)
        fuzz_fail("a manifest that lost its name");
    if (m->n_jobs < 1 || m->n_jobs > NG_MANIFEST_MAX_JOBS || !m->jobs)
        fuzz_fail("a manifest of no jobs or too many");
    if (m->subsamples < 0 || m->subsamples > 100000 ||
        (m->subsamples > 0) != (m->subsample_size >= 2) ||
        (m->subsamples == 0 && m->subsample_size != 0))
        fuzz_fail("subsample settings out of range");
    if (!(m->alpha > 0.0 && m->alpha < 1.0)) fuzz_fail("alpha out of (0, 1)");
    if (m->n_jobs % (1 + (size_t)m->subsamples) != 0)
        fuzz_fail("a job count that is no multiple of 1 + subsamples");
    for (size_t j = 0; j < m->n_jobs; j++) check_job(m, j);
    const ng_manifest_job **order = sorted(m, by_id);
    for (size_t j = 1; j < m->n_jobs; j++)
        if (strcmp(order[j - 1]->id, order[j]->id) == 0)
            fuzz_fail("two jobs with one id");
    free(order);
    order = sorted(m, by_parameters);
    for (size_t j = 1; j < m->n_jobs; j++)
        if (strcmp(order[j - 1]->parameters, order[j]->parameters) == 0)
            fuzz_fail("two jobs with one canonical text");
    free(order);
}

/* The text with its lines in reverse order, *out_len bytes (caller
 * frees). */
static char *reversed(const char *text, size_t len, size_t *out_len)
{
    char *out = malloc(len + 1);
    if (!out) fuzz_fail("out of memory in the target");
    size_t used = 0, end = len;
    if (end > 0 && text[end - 1] == '\n') end--; /* no line after it */
    for (;;) {
        size_t start = end;
        while (start > 0 && text[start - 1] != '\n') start--;
        memcpy(out + used, text + start, end - start);
        used += end - start;
        if (start == 0) break;
        out[used++] = '\n';
        end = start - 1;
    }
    *out_len = used;
    return out;
}

/* What must not change when the lines are reversed: the ids and the
 * digests of the canonical texts, sorted (a copy, so that the first
 * manifest is freed before the second is parsed: a manifest of the
 * largest size takes half a gigabyte). */
typedef struct job_key {
    char id[NG_JOB_ID_MAX];
    unsigned char digest[32];
} job_key;

static int by_key(const void *a, const void *b)
{
    return memcmp(a, b, sizeof(job_key));
}

static job_key *job_keys(const ng_manifest *m)
{
    job_key *keys = calloc(m->n_jobs, sizeof *keys);
    if (!keys) fuzz_fail("out of memory in the target");
    for (size_t j = 0; j < m->n_jobs; j++) {
        memcpy(keys[j].id, m->jobs[j].id,
               strnlen(m->jobs[j].id, NG_JOB_ID_MAX));
        ng_sha256 h;
        ng_sha256_init(&h);
        ng_sha256_update(&h, m->jobs[j].parameters,
                         strlen(m->jobs[j].parameters));
        ng_sha256_final(&h, keys[j].digest);
    }
    qsort(keys, m->n_jobs, sizeof *keys, by_key);
    return keys;
}

/* A manifest of one line per field of the canonical text of mj (quoted,
 * with \" and \\), leaving out what has no manifest spelling: metric given
 * (implied by distances) and budget default (the key not given). */
static char *manifest_of(const ng_manifest_job *mj, size_t *len)
{
    size_t cap = 2 * strlen(mj->parameters) + 4 * TOP_FIELDS + 1;
    char *out = malloc(cap);
    if (!out) fuzz_fail("out of memory in the target");
    size_t used = 0;
    for (const char *p = mj->parameters; *p;) {
        size_t flen = strcspn(p, "\t");
        const char *eq = memchr(p, '=', flen);
        if (!eq) fuzz_fail("a field without '='");
        size_t klen = (size_t)(eq - p), vlen = flen - klen - 1;
        int skip = (klen == 6 && memcmp(p, "metric", 6) == 0 &&
                    vlen == 5 && memcmp(eq + 1, "given", 5) == 0) ||
                   (klen == 6 && memcmp(p, "budget", 6) == 0 &&
                    vlen == 7 && memcmp(eq + 1, "default", 7) == 0);
        if (!skip) {
            memcpy(out + used, p, klen);
            used += klen;
            out[used++] = ' ';
            out[used++] = '"';
            for (size_t i = 0; i < vlen; i++) {
                char c = eq[1 + i];
                if (c == '"' || c == '\\') out[used++] = '\\';
                out[used++] = c;
            }
            out[used++] = '"';
            out[used++] = '\n';
        }
        p += flen;
        if (*p == '\t') p++;
    }
    *len = used;
    return out;
}

static void check_round_trip(const ng_manifest_job *mj)
{
    size_t len;
    char *text = manifest_of(mj, &len);
    ng_manifest *one = NULL;
    ng_error err;
    int rc = parse(text, len, &one, &err);
    free(text);
    if (rc == NG_ERR_NOMEM) return;
    if (rc != NG_OK) {
        fprintf(stderr, "%s\n", err.message);
        fuzz_fail("the canonical text of a job does not parse");
    }
    if (one->n_jobs != 1 || strcmp(one->jobs[0].parameters, mj->parameters) ||
        strcmp(one->jobs[0].id, mj->id) != 0)
        fuzz_fail("the canonical text of a job gives another job");
    ng_manifest_free(one);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *text = (const char *)data;
    ng_manifest *m = NULL;
    ng_error err;
    int rc = parse(text, size, &m, &err);
    job_key *keys = NULL;
    size_t n_jobs = 0;
    if (rc == NG_OK) {
        check_manifest(m);
        size_t top = m->n_jobs / (1 + (size_t)m->subsamples);
        size_t step = (top + ROUND_TRIPS - 1) / ROUND_TRIPS;
        for (size_t t = 0; t < top; t += step)
            check_round_trip(&m->jobs[t * (1 + (size_t)m->subsamples)]);
        keys = job_keys(m);
        n_jobs = m->n_jobs;
        ng_manifest_free(m);
    } else {
        check_failure(text, size, rc, &err);
    }

    size_t back_len;
    char *back = reversed(text, size, &back_len);
    ng_manifest *r = NULL;
    int rrc = parse(back, back_len, &r, &err);
    free(back);
    if (rc != NG_ERR_NOMEM && rrc != NG_ERR_NOMEM) {
        if ((rc == NG_OK) != (rrc == NG_OK))
            fuzz_fail("reversing the lines changed whether it parses");
        if (rc == NG_OK) {
            job_key *rkeys = job_keys(r);
            if (r->n_jobs != n_jobs ||
                memcmp(keys, rkeys, n_jobs * sizeof *keys) != 0)
                fuzz_fail("reversing the lines changed the jobs");
            free(rkeys);
        }
    }
    ng_manifest_free(r);
    free(keys);
    return 0;
}
