/* manifest.c — parsing a manifest and expanding its jobs (manifest.h).
 *
 * How it works: each line is cut into words (a key, then its values);
 * every value is checked with the parser of the matching `run` flag and
 * kept in its canonical text, with its line and column for messages. When
 * the whole text is read, the jobs are the cross product of the value
 * lists (a key not given contributes its default), in the order of the
 * axes below; each job is built from the canonical texts with the same
 * parsers, so that what runs is exactly what the canonical text says.
 *
 * Invariants: no value contains a tab, a newline or another control
 * character (the canonical text separates fields with tabs); the values of
 * one key are distinct, so the canonical texts of the jobs are distinct;
 * the ids are distinct (checked). Nothing here touches a file except
 * ng_manifest_check_inputs and ng_manifest_load.
 */
#include "nervegap/manifest.h"

#include "alloc.h"
#include "nervegap/sha256.h"

#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define ID_HASH_DIGITS 12
#define ALPHA_DEFAULT 0.05
#define SEED_DEFAULT 1

/* The keys; the job axes are K_METRIC .. K_WASSERSTEIN_LIMIT, after the
 * inputs. */
enum {
    K_INPUT,
    K_DISTANCES,
    K_METRIC,
    K_RADIUS,
    K_LAW,
    K_RAW_RADIUS,
    K_MERGE,
    K_MAX_DEGREE,
    K_SCALE_LIMIT,
    K_SLICES,
    K_GRID,
    K_MAX_SIMPLICES,
    K_BUDGET,
    K_WASSERSTEIN_LIMIT,
    K_SUBSAMPLES,
    K_SUBSAMPLE_SIZE,
    K_SEED,
    K_ALPHA,
    K_COUNT
};
#define FIRST_AXIS K_METRIC
#define LAST_AXIS K_WASSERSTEIN_LIMIT
#define N_AXES (LAST_AXIS - FIRST_AXIS + 1)

static const struct {
    const char *name;
    int sweep;      /* may list several values */
    int repeatable; /* may be given on several lines (values add up) */
} keys[K_COUNT] = {
    {"input", 1, 1},          {"distances", 1, 1},
    {"metric", 1, 0},         {"radius", 1, 0},
    {"law", 1, 0},            {"raw-radius", 1, 0},
    {"merge-duplicates", 1, 0}, {"max-degree", 1, 0},
    {"scale-limit", 1, 0},    {"slices", 1, 0},
    {"grid", 1, 0},           {"max-simplices", 1, 0},
    {"budget", 1, 0},         {"wasserstein-limit", 1, 0},
    {"subsamples", 0, 0},     {"subsample-size", 0, 0},
    {"seed", 0, 0},           {"alpha", 0, 0},
};

typedef struct value {
    char *text; /* canonical */
    int line, column;
} value;

typedef struct value_list {
    value *v;
    size_t n, cap;
    int line, column; /* of the key, where first given; 0: not given */
} value_list;

typedef struct parser {
    const char *name;
    ng_error *err;
    value_list list[K_COUNT];
    int last_line;
} parser;

/* Sets err to "NAME:LINE:COLUMN: message". */
NG_PRINTF(4, 5)
static int fail_at(parser *p, int line, int column, const char *fmt, ...)
{
    char msg[NG_ERROR_MESSAGE_MAX];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    return ng_error_set(p->err, NG_ERR_INPUT, "%s:%d:%d: %s", p->name, line,
                        column, msg);
}

/* Passes on the error of a `run` flag parser at a manifest position, with
 * the flag's dashes dropped (the key has the flag's name). */
static int fail_from(parser *p, int line, int column, const ng_error *e)
{
    const char *m = e->message;
    if (m[0] == '-' && m[1] == '-') m += 2;
    return fail_at(p, line, column, "%s", m);
}

static int nomem(parser *p)
{
    return ng_error_set(p->err, NG_ERR_NOMEM, "%s: out of memory", p->name);
}

/* ---- a growing string ---- */

typedef struct strbuf {
    char *s;
    size_t len, cap;
    int failed;
} strbuf;

NG_PRINTF(2, 3)
static void sb_add(strbuf *b, const char *fmt, ...)
{
    if (b->failed) return;
    for (;;) {
        va_list ap;
        va_start(ap, fmt);
        int n = vsnprintf(b->s ? b->s + b->len : NULL,
                          b->s ? b->cap - b->len : 0, fmt, ap);
        va_end(ap);
        if (n < 0) {
            b->failed = 1;
            return;
        }
        if (b->s && b->len + (size_t)n < b->cap) {
            b->len += (size_t)n;
            return;
        }
        size_t cap = (b->cap ? b->cap * 2 : 256) + (size_t)n;
        char *s = ng_realloc(b->s, cap, 1);
        if (s == NULL) {
            b->failed = 1;
            return;
        }
        b->s = s;
        b->cap = cap;
    }
}

/* ---- canonical values ---- */

/* Digits only, as an unsigned number ≤ max. */
static int parse_whole(const char *text, unsigned long long max,
                       unsigned long long *out)
{
    if (text[0] < '0' || text[0] > '9') return -1;
    char *end;
    errno = 0;
    unsigned long long v = strtoull(text, &end, 10);
    if (*end != '\0' || errno != 0 || v > max) return -1;
    *out = v;
    return 0;
}

/* -0 and 0 are one value, so they get one canonical text ("0"). */
static double unsigned_zero(double v) { return v == 0.0 ? 0.0 : v; }

/* The canonical text of value raw of key k into *canon (ng_malloc'd). */
static int canonical(parser *p, int k, const char *raw, int line, int column,
                     char **canon)
{
    char buf[NG_RADIUS_TEXT_MAX + 64];
    ng_error e;
    ng_error_clear(&e);
    ng_run_options opt;
    ng_run_options_init(&opt);
    unsigned long long whole = 0;
    switch (k) {
    case K_INPUT:
    case K_DISTANCES:
        snprintf(buf, sizeof buf, "%s", raw);
        break;
    case K_METRIC: {
        ng_metric metric;
        if (ng_metric_parse(raw, &metric, &e) != NG_OK)
            return fail_from(p, line, column, &e);
        snprintf(buf, sizeof buf, "%s", ng_metric_name(metric));
        break;
    }
    case K_RADIUS: {
        ng_radius_rule rule;
        if (ng_radius_parse(raw, &rule, &e) != NG_OK)
            return fail_from(p, line, column, &e);
        ng_radius_format(&rule, buf, sizeof buf);
        break;
    }
    case K_LAW: {
        ng_law law;
        if (ng_law_parse(raw, &law, &e) != NG_OK)
            return fail_from(p, line, column, &e);
        snprintf(buf, sizeof buf, "%s", ng_law_name(law));
        break;
    }
    case K_RAW_RADIUS:
    case K_MERGE:
        if (strcmp(raw, "yes") && strcmp(raw, "no"))
            return fail_at(p, line, column, "%s '%s': expected yes or no",
                           keys[k].name, raw);
        snprintf(buf, sizeof buf, "%s", raw);
        break;
    case K_MAX_DEGREE:
        if (ng_run_parse_max_degree(raw, &opt, &e) != NG_OK)
            return fail_from(p, line, column, &e);
        snprintf(buf, sizeof buf, "%d", opt.max_degree);
        break;
    case K_SCALE_LIMIT:
        if (ng_run_parse_scale_limit(raw, &opt, &e) != NG_OK)
            return fail_from(p, line, column, &e);
        if (opt.scale_auto) snprintf(buf, sizeof buf, "auto");
        else
            snprintf(buf, sizeof buf, "%.17g",
                     unsigned_zero(opt.scale_limit));
        break;
    case K_SLICES: {
        if (strcmp(raw, "none") == 0) {
            snprintf(buf, sizeof buf, "none");
            break;
        }
        if (ng_run_parse_slices(raw, &opt, &e) != NG_OK)
            return fail_from(p, line, column, &e);
        size_t used = (size_t)snprintf(buf, sizeof buf, "%s:",
                                       opt.slice_kind == NG_SLICE_FACTOR
                                           ? "factor"
                                           : "shift");
        for (int j = 0; j < opt.n_slices && used < sizeof buf; j++)
            used += (size_t)snprintf(buf + used, sizeof buf - used, "%s%.17g",
                                     j ? "," : "",
                                     unsigned_zero(opt.slice_values[j]));
        break;
    }
    case K_GRID:
        if (ng_run_parse_grid(raw, &opt, &e) != NG_OK)
            return fail_from(p, line, column, &e);
        snprintf(buf, sizeof buf, "%zu", opt.grid);
        break;
    case K_MAX_SIMPLICES:
        if (ng_run_parse_count(raw, &opt.max_simplices, &e) != NG_OK)
            return fail_from(p, line, column, &e);
        snprintf(buf, sizeof buf, "%zu", opt.max_simplices);
        break;
    case K_BUDGET:
        if (ng_run_parse_budget(raw, &opt.budget_bytes, &e) != NG_OK)
            return fail_from(p, line, column, &e);
        snprintf(buf, sizeof buf, "%zu", opt.budget_bytes);
        break;
    case K_WASSERSTEIN_LIMIT:
        if (ng_run_parse_wasserstein_limit(raw, &opt, &e) != NG_OK)
            return fail_from(p, line, column, &e);
        snprintf(buf, sizeof buf, "%zu", opt.wasserstein_limit);
        break;
    case K_SUBSAMPLES:
        if (parse_whole(raw, 100000, &whole) != 0 || whole < 1)
            return fail_at(p, line, column, "subsamples '%s': expected a "
                           "number of subsamples from 1 to 100000", raw);
        snprintf(buf, sizeof buf, "%llu", whole);
        break;
    case K_SUBSAMPLE_SIZE:
        if (parse_whole(raw, NG_INDEX_MAX, &whole) != 0 || whole < 2)
            return fail_at(p, line, column, "subsample-size '%s': expected a "
                           "number of points ≥ 2", raw);
        snprintf(buf, sizeof buf, "%llu", whole);
        break;
    case K_SEED:
        if (parse_whole(raw, UINT64_MAX, &whole) != 0)
            return fail_at(p, line, column, "seed '%s': expected a whole "
                           "number from 0 to 18446744073709551615", raw);
        snprintf(buf, sizeof buf, "%llu", whole);
        break;
    case K_ALPHA: {
        char *end;
        errno = 0;
        double a = strtod(raw, &end);
        if (end == raw || *end != '\0' || errno != 0 || !(a > 0.0) ||
            !(a < 1.0))
            return fail_at(p, line, column, "alpha '%s': expected a level "
                           "between 0 and 1, such as 0.05", raw);
        snprintf(buf, sizeof buf, "%.17g", a);
        break;
    }
    default:
        return fail_at(p, line, column, "internal: key %d", k);
    }
    *canon = ng_strdup(buf);
    return *canon ? NG_OK : nomem(p);
}

static int add_value(parser *p, int k, const char *raw, int line, int column)
{
    char *text = NULL;
    int status = canonical(p, k, raw, line, column, &text);
    if (status != NG_OK) return status;
    value_list *l = &p->list[k];
    /* inputs and distances share one axis: a path may be in only one */
    int other = k == K_INPUT ? K_DISTANCES : k == K_DISTANCES ? K_INPUT : -1;
    for (int pass = 0; pass < 2; pass++) {
        const value_list *seen = pass == 0 ? l
                                 : other >= 0 ? &p->list[other] : NULL;
        for (size_t i = 0; seen && i < seen->n; i++) {
            if (strcmp(seen->v[i].text, text) != 0) continue;
            status = fail_at(p, line, column, "%s '%s' repeats the value at "
                             "line %d, column %d (each job must differ)",
                             keys[k].name, raw, seen->v[i].line,
                             seen->v[i].column);
            ng_free(text);
            return status;
        }
    }
    if (l->n == l->cap) {
        size_t cap = l->cap ? 2 * l->cap : 4;
        value *v = ng_realloc(l->v, cap, sizeof *v);
        if (v == NULL) {
            ng_free(text);
            return nomem(p);
        }
        l->v = v;
        l->cap = cap;
    }
    l->v[l->n++] = (value){text, line, column};
    return NG_OK;
}

/* ---- reading the text ---- */

static int is_space(char c) { return c == ' ' || c == '\t' || c == '\r'; }

/* The next word of the line [*pos, end) into buf; *found = 0 at the end of
 * the line or at a comment. */
static int next_word(parser *p, const char *text, size_t *pos, size_t end,
                     int line, size_t line_start, char *buf, int *column,
                     int *found)
{
    size_t i = *pos;
    *found = 0;
    while (i < end && is_space(text[i])) i++;
    *pos = i;
    if (i == end || text[i] == '#') return NG_OK;
    *column = (int)(i - line_start + 1);
    size_t n = 0;
    int quoted = text[i] == '"';
    if (quoted) i++;
    for (;; i++) {
        if (i == end) {
            if (quoted)
                return fail_at(p, line, *column, "the quoted value has no "
                               "closing '\"'");
            break;
        }
        char c = text[i];
        int col = (int)(i - line_start + 1);
        if (!quoted && is_space(c)) break;
        if (quoted && c == '"') {
            i++;
            if (i < end && !is_space(text[i]) && text[i] != '#')
                return fail_at(p, line, (int)(i - line_start + 1),
                               "a space must follow the closing '\"'");
            break;
        }
        if (!quoted && c == '"')
            return fail_at(p, line, col, "a '\"' inside a word (quote the "
                           "whole value)");
        if (quoted && c == '\\') {
            if (i + 1 == end || (text[i + 1] != '"' && text[i + 1] != '\\'))
                return fail_at(p, line, col, "unknown escape in a quoted "
                               "value (only \\\" and \\\\)");
            c = text[++i];
        } else if (c == '\0') {
            return fail_at(p, line, col, "a NUL byte");
        } else if ((unsigned char)c < 0x20 || c == 0x7f) {
            return fail_at(p, line, col, "a control character (byte %d)",
                           (unsigned char)c);
        }
        if (n == NG_MANIFEST_VALUE_MAX)
            return fail_at(p, line, *column, "a value longer than %d bytes",
                           NG_MANIFEST_VALUE_MAX);
        buf[n++] = c;
    }
    buf[n] = '\0';
    if (n == 0)
        return fail_at(p, line, *column, "an empty value");
    *pos = i;
    *found = 1;
    return NG_OK;
}

static int key_of(const char *word)
{
    for (int k = 0; k < K_COUNT; k++)
        if (strcmp(keys[k].name, word) == 0) return k;
    return -1;
}

static int parse_line(parser *p, const char *text, size_t start, size_t end,
                      int line)
{
    char word[NG_MANIFEST_VALUE_MAX + 1];
    size_t pos = start;
    int column, found;
    int status = next_word(p, text, &pos, end, line, start, word, &column,
                           &found);
    if (status != NG_OK || !found) return status;
    int k = key_of(word);
    if (k < 0)
        return fail_at(p, line, column,
                       "unknown key '%s' (keys: input, distances, metric, "
                       "radius, law, raw-radius, merge-duplicates, "
                       "max-degree, scale-limit, slices, grid, "
                       "max-simplices, budget, wasserstein-limit, "
                       "subsamples, subsample-size, seed, alpha)", word);
    value_list *l = &p->list[k];
    if (l->line && !keys[k].repeatable)
        return fail_at(p, line, column, "%s is given twice (first at line "
                       "%d); list all its values on one line",
                       keys[k].name, l->line);
    if (!l->line) {
        l->line = line;
        l->column = column;
    }
    int key_column = column, count = 0;
    for (;;) {
        status = next_word(p, text, &pos, end, line, start, word, &column,
                           &found);
        if (status != NG_OK) return status;
        if (!found) break;
        if (count == 1 && !keys[k].sweep)
            return fail_at(p, line, column, "%s takes one value",
                           keys[k].name);
        status = add_value(p, k, word, line, column);
        if (status != NG_OK) return status;
        count++;
    }
    if (count == 0)
        return fail_at(p, line, key_column, "%s has no value", keys[k].name);
    return NG_OK;
}

/* ---- expanding the jobs ---- */

/* The default of an axis key that was not given. */
static const char *default_text(int k, char *buf, size_t size)
{
    switch (k) {
    case K_METRIC: return "euclidean";
    case K_RADIUS: return "uniform";
    case K_LAW: return "scaled";
    case K_RAW_RADIUS:
    case K_MERGE: return "no";
    case K_MAX_DEGREE: return "1";
    case K_SCALE_LIMIT: return "auto";
    case K_SLICES: return "none";
    case K_GRID: return "128";
    case K_MAX_SIMPLICES:
        snprintf(buf, size, "%zu", NG_RUN_DEFAULT_MAX_SIMPLICES);
        return buf;
    case K_BUDGET: return "default";
    case K_WASSERSTEIN_LIMIT:
        snprintf(buf, size, "%zu", NG_RUN_DEFAULT_WASSERSTEIN_LIMIT);
        return buf;
    default: return "";
    }
}

/* Sets what value text (canonical) of axis key k says in job; the status
 * of parsing it again (canonical texts always parse: anything else is a
 * bug of canonical()). */
static int apply(int k, const char *text, ng_job *job)
{
    ng_error e;
    ng_error_clear(&e);
    ng_run_options *o = &job->options;
    switch (k) {
    case K_METRIC: ng_metric_parse(text, &job->scheme.metric, &e); break;
    case K_RADIUS: ng_radius_parse(text, &job->scheme.rule, &e); break;
    case K_LAW: ng_law_parse(text, &job->scheme.law, &e); break;
    case K_RAW_RADIUS: job->scheme.raw_radius = text[0] == 'y'; break;
    case K_MERGE: job->scheme.merge_duplicates = text[0] == 'y'; break;
    case K_MAX_DEGREE: ng_run_parse_max_degree(text, o, &e); break;
    case K_SCALE_LIMIT: ng_run_parse_scale_limit(text, o, &e); break;
    case K_SLICES:
        if (strcmp(text, "none") != 0) ng_run_parse_slices(text, o, &e);
        break;
    case K_GRID: ng_run_parse_grid(text, o, &e); break;
    case K_MAX_SIMPLICES: ng_run_parse_count(text, &o->max_simplices, &e);
        break;
    case K_BUDGET:
        if (strcmp(text, "default") != 0)
            ng_run_parse_budget(text, &o->budget_bytes, &e);
        break;
    case K_WASSERSTEIN_LIMIT: ng_run_parse_wasserstein_limit(text, o, &e);
        break;
    default: break;
    }
    return e.code;
}

/* dir + "/" + path unless path is absolute or dir empty (ng_malloc'd). */
static char *resolve(const char *dir, size_t dir_len, const char *path)
{
    if (path[0] == '/' || dir_len == 0) return ng_strdup(path);
    size_t len = strlen(path);
    char *s = ng_malloc(dir_len + len + 2, 1);
    if (s) {
        memcpy(s, dir, dir_len);
        s[dir_len] = '/';
        memcpy(s + dir_len + 1, path, len + 1);
    }
    return s;
}

/* Appends to id the characters of s[0..len) that are safe in a file name,
 * at most max of them; others become '_' (':' is dropped). */
static void id_part(char *id, size_t size, const char *s, size_t len,
                    size_t max)
{
    size_t used = strlen(id), added = 0;
    for (size_t i = 0; i < len && added < max && used + 1 < size; i++) {
        char c = s[i];
        if (c == ':') continue;
        int safe = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') ||
                   (c >= '0' && c <= '9') || c == '.' || c == '_' ||
                   c == '-';
        if (!safe || (c == '.' && used == 0)) c = '_';
        id[used++] = c;
        added++;
    }
    id[used] = '\0';
}

/* "stem-radius-law[-sI]-hash". The readable prefix is cut where it would
 * leave no room for '-' and the ID_HASH_DIGITS digits of the hash, so that
 * every id ends with the whole hash. */
static void make_id(ng_manifest_job *mj, const char *radius, const char *law)
{
    char *id = mj->id;
    size_t size = sizeof mj->id - 1 - ID_HASH_DIGITS; /* of the prefix */
    id[0] = '\0';
    const char *in = mj->input;
    size_t flen = ng_cloud_spec_file_length(in);
    const char *base = in;
    for (size_t i = 0; i < flen; i++)
        if (in[i] == '/') base = in + i + 1;
    size_t blen = (size_t)(in + flen - base);
    for (size_t i = blen; i > 1; i--)
        if (base[i - 1] == '.') {
            blen = i - 1;
            break;
        }
    id_part(id, size, base, blen, 24);
    if (flen < strlen(in)) { /* FILE.h5:/group/dataset: add "_dataset" */
        const char *ds = strrchr(in + flen, '/');
        ds = ds ? ds + 1 : in + flen + 1;
        id_part(id, size, "_", 1, 1);
        id_part(id, size, ds, strlen(ds), 12);
    }
    if (id[0] == '\0') id_part(id, size, "input", 5, 5);
    id_part(id, size, "-", 1, 1);
    if (strncmp(radius, "file:", 5) == 0) id_part(id, size, "file", 4, 4);
    else id_part(id, size, radius, strlen(radius), 16);
    id_part(id, size, "-", 1, 1);
    id_part(id, size, law, strlen(law), 8);
    if (mj->job.subsample_index > 0) {
        char s[24];
        snprintf(s, sizeof s, "-s%d", mj->job.subsample_index);
        id_part(id, size, s, strlen(s), sizeof s);
    }
    ng_sha256 h;
    unsigned char digest[32];
    ng_sha256_init(&h);
    ng_sha256_update(&h, mj->parameters, strlen(mj->parameters));
    ng_sha256_final(&h, digest);
    size_t used = strlen(id);
    id[used++] = '-';
    for (int i = 0; i < ID_HASH_DIGITS / 2; i++)
        used += (size_t)snprintf(id + used, sizeof mj->id - used, "%02x",
                                 digest[i]);
}

/* Builds job j of m: input value in (is_dist: a distance matrix), the
 * axis values of the odometer, subsample index (0: all points). */
static int make_job(parser *p, ng_manifest *m, size_t j, const value *in,
                    int is_dist, const value *const *axis, int sub,
                    long parent)
{
    ng_manifest_job *mj = &m->jobs[j];
    mj->parent = parent;
    mj->line = in->line;
    mj->column = in->column;
    mj->radius_line = axis[K_RADIUS - FIRST_AXIS]->line;
    mj->radius_column = axis[K_RADIUS - FIRST_AXIS]->column;
    ng_job *job = &mj->job;
    ng_job_init(job);
    strbuf b = {0};
    sb_add(&b, "%s=%s", is_dist ? "distances" : "input", in->text);
    for (int k = FIRST_AXIS; k <= LAST_AXIS; k++) {
        const char *text = axis[k - FIRST_AXIS]->text;
        int given = k == K_METRIC && is_dist; /* set below */
        if (given) text = "given";
        sb_add(&b, "\t%s=%s", keys[k].name, text);
        if (!given && apply(k, text, job) != NG_OK) {
            ng_free(b.s);
            return ng_error_set(p->err, NG_ERR_RUNTIME,
                                "%s:%d:%d: internal error: the canonical "
                                "value '%s' of %s does not parse again",
                                p->name, axis[k - FIRST_AXIS]->line,
                                axis[k - FIRST_AXIS]->column, text,
                                keys[k].name);
        }
    }
    if (is_dist) job->scheme.metric = NG_METRIC_GIVEN;
    if (sub > 0) {
        sb_add(&b, "\tsubsample=%d\tsubsample-size=%zu\tseed=%llu", sub,
               m->subsample_size, (unsigned long long)m->seed);
        job->subsample_size = m->subsample_size;
        job->subsample_index = sub;
        job->subsample_seed = m->seed;
        job->subsample_of = m->jobs[parent].id;
    }
    mj->parameters = b.s;
    if (b.failed) return nomem(p);
    size_t dir_len = 0;
    const char *slash = strrchr(m->name, '/');
    if (slash) dir_len = slash == m->name ? 1 : (size_t)(slash - m->name);
    mj->input = ng_strdup(in->text);
    mj->input_path = resolve(m->name, dir_len, in->text);
    if (mj->input == NULL || mj->input_path == NULL) return nomem(p);
    ng_radius_rule *rule = &job->scheme.rule;
    if (rule->kind == NG_RADIUS_FILE) {
        char *path = resolve(m->name, dir_len, rule->arg);
        if (path == NULL) return nomem(p);
        if (strlen(path) >= sizeof rule->arg) {
            ng_free(path);
            return fail_at(p, mj->radius_line, mj->radius_column,
                           "the radius file path is too long");
        }
        snprintf(rule->arg, sizeof rule->arg, "%s", path);
        ng_free(path);
    }
    job->input = mj->input_path;
    job->distances = is_dist;
    job->parameters = mj->parameters;
    job->id = mj->id;
    make_id(mj, axis[K_RADIUS - FIRST_AXIS]->text,
            axis[K_LAW - FIRST_AXIS]->text);
    return NG_OK;
}

static int by_id(const void *a, const void *b)
{
    const ng_manifest_job *x = *(ng_manifest_job *const *)a,
                          *y = *(ng_manifest_job *const *)b;
    return strcmp(x->id, y->id);
}

static int check_ids(parser *p, ng_manifest *m)
{
    ng_manifest_job **order = ng_malloc(m->n_jobs, sizeof *order);
    if (order == NULL) return nomem(p);
    for (size_t j = 0; j < m->n_jobs; j++) order[j] = &m->jobs[j];
    qsort(order, m->n_jobs, sizeof *order, by_id);
    int status = NG_OK;
    for (size_t j = 1; j < m->n_jobs && status == NG_OK; j++)
        if (strcmp(order[j - 1]->id, order[j]->id) == 0)
            status = fail_at(p, order[j]->line, order[j]->column,
                             "two jobs share the id %s (their parameter "
                             "hashes collide); change the seed or a value",
                             order[j]->id);
    ng_free(order);
    return status;
}

static int expand(parser *p, ng_manifest *m)
{
    char defaults[N_AXES][32];
    value fallback[N_AXES];
    const value_list *inputs[2] = {&p->list[K_INPUT], &p->list[K_DISTANCES]};
    if (inputs[0]->n + inputs[1]->n == 0)
        return fail_at(p, p->last_line + 1, 1, "the manifest names no input "
                       "(add a line such as: input points.csv)");
    /* the subsample settings */
    const value_list *B = &p->list[K_SUBSAMPLES],
                     *M = &p->list[K_SUBSAMPLE_SIZE];
    if (B->n != M->n) {
        const value_list *given = B->n ? B : M;
        return fail_at(p, given->line, given->column,
                       "subsamples and subsample-size go together: give "
                       "both or neither");
    }
    m->subsamples = B->n ? atoi(B->v[0].text) : 0;
    m->subsample_size = M->n ? (size_t)strtoull(M->v[0].text, NULL, 10) : 0;
    m->seed = p->list[K_SEED].n
                  ? (uint64_t)strtoull(p->list[K_SEED].v[0].text, NULL, 10)
                  : SEED_DEFAULT;
    m->alpha = p->list[K_ALPHA].n ? strtod(p->list[K_ALPHA].v[0].text, NULL)
                                  : ALPHA_DEFAULT;
    const value_list *R = &p->list[K_RADIUS];
    for (size_t i = 0; m->subsamples && i < R->n; i++)
        if (strncmp(R->v[i].text, "file:", 5) == 0)
            return fail_at(p, R->v[i].line, R->v[i].column,
                           "radius %s cannot be used with subsamples (the "
                           "file has one radius per input point); use "
                           "column:J", R->v[i].text);

    /* the axes: given values or the default */
    const value *axis_values[N_AXES];
    size_t axis_n[N_AXES];
    for (int a = 0; a < N_AXES; a++) {
        const value_list *l = &p->list[FIRST_AXIS + a];
        if (l->n > 0) {
            axis_values[a] = l->v;
            axis_n[a] = l->n;
        } else {
            char buf[32];
            snprintf(defaults[a], sizeof defaults[a], "%s",
                     default_text(FIRST_AXIS + a, buf, sizeof buf));
            fallback[a] = (value){defaults[a], 0, 0};
            axis_values[a] = &fallback[a];
            axis_n[a] = 1;
        }
    }
    double per_input = 1.0;
    for (int a = 1; a < N_AXES; a++) per_input *= (double)axis_n[a];
    double total = per_input * (double)(1 + m->subsamples) *
                   ((double)inputs[0]->n * (double)axis_n[0] +
                    (double)inputs[1]->n);
    if (total > NG_MANIFEST_MAX_JOBS)
        return fail_at(p, inputs[0]->n ? inputs[0]->line : inputs[1]->line,
                       1, "the sweeps make %.0f jobs; at most %d per "
                       "manifest (split it)", total, NG_MANIFEST_MAX_JOBS);
    m->jobs = ng_calloc((size_t)total, sizeof *m->jobs);
    if (m->jobs == NULL) return nomem(p);

    size_t j = 0;
    for (int d = 0; d < 2; d++) {
        for (size_t i = 0; i < inputs[d]->n; i++) {
            size_t count[N_AXES] = {0};
            for (;;) {
                const value *axis[N_AXES];
                for (int a = 0; a < N_AXES; a++)
                    axis[a] = &axis_values[a][count[a]];
                long parent = (long)j;
                int status = make_job(p, m, j, &inputs[d]->v[i], d, axis, 0,
                                      -1);
                m->n_jobs = ++j;
                for (int s = 1; status == NG_OK && s <= m->subsamples; s++) {
                    status = make_job(p, m, j, &inputs[d]->v[i], d, axis, s,
                                      parent);
                    m->n_jobs = ++j;
                }
                if (status != NG_OK) return status;
                /* the next combination; the metric stays for matrices */
                int a = N_AXES - 1;
                for (; a >= 0; a--) {
                    if (a == 0 && d == 1) a = -1;
                    if (a < 0) break;
                    if (++count[a] < axis_n[a]) break;
                    count[a] = 0;
                }
                if (a < 0) break;
            }
        }
    }
    return check_ids(p, m);
}

/* ---- public ---- */

int ng_manifest_parse_buffer(const char *text, size_t len, const char *name,
                             ng_manifest **out, ng_error *err)
{
    *out = NULL;
    parser p;
    memset(&p, 0, sizeof p);
    p.name = name;
    p.err = err;
    ng_manifest *m = ng_calloc(1, sizeof *m);
    if (m == NULL || (m->name = ng_strdup(name)) == NULL) {
        ng_free(m);
        return ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory", name);
    }
    int status = NG_OK;
    size_t start = 0;
    int line = 0;
    while (status == NG_OK && start < len) {
        size_t end = start;
        while (end < len && text[end] != '\n') end++;
        line++;
        status = parse_line(&p, text, start, end, line);
        start = end + 1;
    }
    p.last_line = line;
    if (status == NG_OK) status = expand(&p, m);
    for (int k = 0; k < K_COUNT; k++) {
        for (size_t i = 0; i < p.list[k].n; i++) ng_free(p.list[k].v[i].text);
        ng_free(p.list[k].v);
    }
    if (status != NG_OK) {
        ng_manifest_free(m);
        return status;
    }
    *out = m;
    return NG_OK;
}

/* 0 when path can be opened for reading, else errno. */
static int readable(const char *path)
{
    FILE *f = fopen(path, "rb");
    if (f == NULL) return errno ? errno : ENOENT;
    fclose(f);
    return 0;
}

int ng_manifest_check_inputs(const ng_manifest *m, ng_error *err)
{
    for (size_t j = 0; j < m->n_jobs; j++) {
        const ng_manifest_job *mj = &m->jobs[j];
        if (mj->parent >= 0) continue; /* the same files as its parent */
        size_t flen = ng_cloud_spec_file_length(mj->input_path);
        char *file = ng_malloc(flen + 1, 1);
        if (file == NULL)
            return ng_error_set(err, NG_ERR_NOMEM, "out of memory");
        memcpy(file, mj->input_path, flen);
        file[flen] = '\0';
        int e = readable(file);
        if (e)
            ng_error_set(err, NG_ERR_INPUT, "%s:%d:%d: input %s: cannot open "
                         "%s: %s", m->name, mj->line, mj->column, mj->input,
                         file, strerror(e));
        ng_free(file);
        if (e) return NG_ERR_INPUT;
        const ng_radius_rule *rule = &mj->job.scheme.rule;
        if (rule->kind == NG_RADIUS_FILE && (e = readable(rule->arg)) != 0)
            return ng_error_set(err, NG_ERR_INPUT, "%s:%d:%d: radius file "
                                "%s: cannot open: %s", m->name,
                                mj->radius_line, mj->radius_column,
                                rule->arg, strerror(e));
    }
    return NG_OK;
}

int ng_manifest_load(const char *path, ng_manifest **out, ng_error *err)
{
    *out = NULL;
    FILE *f = fopen(path, "rb");
    if (f == NULL)
        return ng_error_set(err, NG_ERR_INPUT, "%s: cannot open the "
                            "manifest: %s", path, strerror(errno));
    char *text = NULL;
    size_t len = 0, cap = 0;
    int status = NG_OK;
    for (;;) {
        if (len == cap) {
            cap = cap ? 2 * cap : 4096;
            char *t = ng_realloc(text, cap, 1);
            if (t == NULL) {
                status = ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory",
                                      path);
                break;
            }
            text = t;
        }
        size_t got = fread(text + len, 1, cap - len, f);
        len += got;
        if (got == 0) {
            if (ferror(f))
                status = ng_error_set(err, NG_ERR_IO, "%s: read error",
                                      path);
            break;
        }
    }
    fclose(f);
    if (status == NG_OK)
        status = ng_manifest_parse_buffer(text, len, path, out, err);
    ng_free(text);
    if (status == NG_OK) {
        status = ng_manifest_check_inputs(*out, err);
        if (status != NG_OK) {
            ng_manifest_free(*out);
            *out = NULL;
        }
    }
    return status;
}

void ng_manifest_free(ng_manifest *m)
{
    if (m == NULL) return;
    for (size_t j = 0; j < m->n_jobs; j++) {
        ng_free(m->jobs[j].parameters);
        ng_free(m->jobs[j].input);
        ng_free(m->jobs[j].input_path);
    }
    ng_free(m->jobs);
    ng_free(m->name);
    ng_free(m);
}
