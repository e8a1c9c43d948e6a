/* cloud_text.c — the text reader: CSV, TSV or whitespace-separated numbers.
 *
 * One point per line. '#' starts a comment (whole line or trailing); blank
 * lines are skipped; CRLF line endings and a UTF-8 byte order mark are
 * accepted. The first line with content fixes the delimiter (comma if it has
 * one, else tab, else runs of blanks) and the number of fields; it is a
 * header when any of its fields is not a number. Numbers are parsed with
 * strtod in the C locale (the library never calls setlocale); every value
 * must be finite, and an overflow such as 1e999 is refused (an underflow to
 * zero or a subnormal is accepted: the value is finite).
 *
 * Invariants: the file is streamed in blocks; the line buffer and the value
 * array grow geometrically, so reading is linear in the file size. Every
 * message names FILE:LINE:COLUMN, both 1-based, COLUMN being the byte
 * position where the offending token starts (counted after a byte order
 * mark on line 1).
 */
#include "cloud_internal.h"

#include "alloc.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

enum { BLOCK_BYTES = 1 << 16, TOKEN_SHOWN = 40 };

/* ---- streaming line reader -------------------------------------------- */

typedef struct line_reader {
    FILE *f;
    char *block;
    size_t block_len, block_pos;
    int at_eof;
    char *line; /* current line, NUL-terminated, without its '\n' */
    size_t line_len, line_cap;
    size_t line_no;     /* 1-based number of the current line */
    size_t bytes_total; /* bytes read so far */
} line_reader;

static int reader_init(line_reader *r, FILE *f)
{
    memset(r, 0, sizeof *r);
    r->f = f;
    r->block = ng_malloc(BLOCK_BYTES, 1);
    r->line_cap = 256;
    r->line = ng_malloc(r->line_cap, 1);
    return r->block && r->line ? NG_OK : NG_ERR_NOMEM;
}

static void reader_free(line_reader *r)
{
    ng_free(r->block);
    ng_free(r->line);
    r->block = r->line = NULL;
}

static int line_append(line_reader *r, const char *s, size_t len)
{
    if (r->line_len + len + 1 > r->line_cap) {
        size_t cap = r->line_cap;
        while (cap < r->line_len + len + 1) {
            if (cap > SIZE_MAX / 2) return NG_ERR_NOMEM;
            cap *= 2;
        }
        char *p = ng_realloc(r->line, cap, 1);
        if (!p) return NG_ERR_NOMEM;
        r->line = p;
        r->line_cap = cap;
    }
    memcpy(r->line + r->line_len, s, len);
    r->line_len += len;
    r->line[r->line_len] = '\0';
    return NG_OK;
}

/* Reads the next line: 1 when there is one, 0 at the end of the file,
 * NG_ERR_IO or NG_ERR_NOMEM on failure. */
static int reader_next(line_reader *r)
{
    r->line_len = 0;
    r->line[0] = '\0';
    int got_bytes = 0;
    for (;;) {
        if (r->block_pos == r->block_len) {
            if (r->at_eof) {
                if (!got_bytes) return 0;
                r->line_no++; /* a last line without '\n' */
                return 1;
            }
            r->block_len = fread(r->block, 1, BLOCK_BYTES, r->f);
            r->block_pos = 0;
            r->bytes_total += r->block_len;
            if (r->block_len < BLOCK_BYTES) {
                if (ferror(r->f)) return NG_ERR_IO;
                r->at_eof = 1;
            }
            continue;
        }
        const char *start = r->block + r->block_pos;
        size_t avail = r->block_len - r->block_pos;
        const char *nl = memchr(start, '\n', avail);
        size_t take = nl ? (size_t)(nl - start) : avail;
        int rc = line_append(r, start, take);
        if (rc != NG_OK) return rc;
        got_bytes = 1;
        r->block_pos += take + (nl ? 1 : 0);
        if (nl) {
            r->line_no++;
            return 1;
        }
    }
}

/* ---- fields --------------------------------------------------------------- */

static int is_blank(char c)
{
    return c == ' ' || c == '\t' || c == '\r' || c == '\v' || c == '\f';
}

/* Cuts a raw line down to its content: skips a byte order mark on line 1,
 * drops the comment and trailing blanks (including the '\r' of CRLF).
 * Returns the content start; *end is set to its end. */
static char *line_content(char *line, size_t len, size_t line_no, char **end)
{
    char *s = line;
    if (line_no == 1 && len >= 3 && (unsigned char)s[0] == 0xEF &&
        (unsigned char)s[1] == 0xBB && (unsigned char)s[2] == 0xBF)
        s += 3;
    char *e = line + len;
    char *hash = memchr(s, '#', (size_t)(e - s));
    if (hash) e = hash;
    while (e > s && is_blank(e[-1])) e--;
    *end = e;
    return s;
}

static int content_is_blank(const char *s, const char *e)
{
    for (; s < e; s++)
        if (!is_blank(*s)) return 0;
    return 1;
}

typedef struct field_iter {
    const char *p, *end;
    cloud_delim delim;
    int done;
} field_iter;

/* Next field of the line as [*fs, *fe), blanks trimmed; 0 when none is
 * left. With ',' or '\t' delimiters a field may be empty. */
static int next_field(field_iter *it, const char **fs, const char **fe)
{
    if (it->done) return 0;
    if (it->delim == CLOUD_DELIM_SPACE) {
        while (it->p < it->end && is_blank(*it->p)) it->p++;
        if (it->p == it->end) {
            it->done = 1;
            return 0;
        }
        *fs = it->p;
        while (it->p < it->end && !is_blank(*it->p)) it->p++;
        *fe = it->p;
        return 1;
    }
    char sep = it->delim == CLOUD_DELIM_COMMA ? ',' : '\t';
    const char *s = it->p;
    const char *hit = memchr(s, sep, (size_t)(it->end - s));
    const char *e = hit ? hit : it->end;
    if (hit)
        it->p = hit + 1;
    else
        it->done = 1;
    while (s < e && is_blank(*s)) s++;
    while (e > s && is_blank(e[-1])) e--;
    *fs = s;
    *fe = e;
    return 1;
}

/* Parses [s, e) as a whole number token. Returns 1 and sets *value and
 * *overflow when the token is a number (possibly nan/inf), else 0. */
static int parse_number(const char *s, const char *e, double *value,
                        int *overflow)
{
    if (s == e) return 0;
    /* strtod stops at the blank or delimiter that ends the token, so it
     * never reads past e into a following field. */
    errno = 0;
    char *stop;
    double v = strtod(s, &stop);
    if (stop != e) return 0;
    *overflow = errno == ERANGE && isinf(v);
    *value = v;
    return 1;
}

/* ---- the reader ------------------------------------------------------------ */

typedef struct text_state {
    const char *path;
    line_reader r;
    cloud_table *t;
    size_t value_cap; /* doubles allocated in t->values */
    size_t line_cap;  /* entries allocated in t->row_line */
    int keep_lines;
    size_t shape_line; /* line that fixed the number of fields */
    int has_header;
} text_state;

static int token_error(text_state *st, ng_error *err, const char *line,
                       const char *fs, const char *fe, size_t field,
                       const char *what)
{
    size_t len = (size_t)(fe - fs);
    return ng_error_set(err, NG_ERR_INPUT,
                        "%s:%zu:%zu: field %zu: '%.*s%s' %s", st->path,
                        st->r.line_no, (size_t)(fs - line) + 1, field + 1,
                        (int)(len > TOKEN_SHOWN ? TOKEN_SHOWN : len), fs,
                        len > TOKEN_SHOWN ? "..." : "", what);
}

/* Makes room for one more row of t->cols values. */
static int grow_rows(text_state *st, ng_error *err)
{
    cloud_table *t = st->t;
    if (t->rows >= NG_INDEX_MAX)
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s:%zu: more than %u points (the limit of the "
                            "vertex index)", st->path, st->r.line_no,
                            (unsigned)NG_INDEX_MAX);
    size_t need = (t->rows + 1) * t->cols; /* ≤ line length × NG_INDEX_MAX */
    if (need / t->cols != t->rows + 1)
        return ng_error_set(err, NG_ERR_INPUT, "%s:%zu: too many values",
                            st->path, st->r.line_no);
    if (need > st->value_cap) {
        size_t cap = st->value_cap ? st->value_cap : 1024;
        while (cap < need) {
            if (cap > SIZE_MAX / 2)
                return ng_error_set(err, NG_ERR_INPUT,
                                    "%s:%zu: too many values", st->path,
                                    st->r.line_no);
            cap *= 2;
        }
        double *v = ng_realloc(t->values, cap, sizeof *v);
        if (!v)
            return ng_error_set(err, NG_ERR_NOMEM,
                                "%s:%zu: out of memory for %zu values",
                                st->path, st->r.line_no, need);
        t->values = v;
        st->value_cap = cap;
    }
    if (st->keep_lines && t->rows + 1 > st->line_cap) {
        size_t cap = st->line_cap ? st->line_cap * 2 : 256;
        size_t *l = ng_realloc(t->row_line, cap, sizeof *l);
        if (!l)
            return ng_error_set(err, NG_ERR_NOMEM,
                                "%s:%zu: out of memory for %zu rows",
                                st->path, st->r.line_no, t->rows + 1);
        t->row_line = l;
        st->line_cap = cap;
    }
    return NG_OK;
}

/* Reads the first content line: delimiter, field count, header names or
 * the first row. */
static int first_line(text_state *st, const char *s, const char *e,
                      ng_error *err)
{
    cloud_table *t = st->t;
    t->delim = memchr(s, ',', (size_t)(e - s))    ? CLOUD_DELIM_COMMA
               : memchr(s, '\t', (size_t)(e - s)) ? CLOUD_DELIM_TAB
                                                  : CLOUD_DELIM_SPACE;
    st->shape_line = st->r.line_no;

    size_t cols = 0;
    int header = 0;
    const char *fs, *fe;
    field_iter it = {s, e, t->delim, 0};
    while (next_field(&it, &fs, &fe)) {
        double v;
        int overflow;
        if (!parse_number(fs, fe, &v, &overflow)) header = 1;
        cols++;
    }
    t->cols = cols;
    st->has_header = header;
    if (!header) return NG_OK; /* the caller parses it as the first row */

    t->names = ng_calloc(cols, sizeof *t->names);
    if (!t->names)
        return ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory", st->path);
    it = (field_iter){s, e, t->delim, 0};
    for (size_t j = 0; next_field(&it, &fs, &fe); j++) {
        if (fe - fs >= 2 && *fs == '"' && fe[-1] == '"') {
            fs++;
            fe--;
        }
        size_t len = (size_t)(fe - fs);
        t->names[j] = ng_malloc(len + 1, 1);
        if (!t->names[j])
            return ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory",
                                st->path);
        memcpy(t->names[j], fs, len);
        t->names[j][len] = '\0';
    }
    return NG_OK;
}

/* Parses one data line into a new row. */
static int data_line(text_state *st, const char *line, const char *s,
                     const char *e, ng_error *err)
{
    cloud_table *t = st->t;
    int rc = grow_rows(st, err);
    if (rc != NG_OK) return rc;
    double *row = t->values + t->rows * t->cols;
    const char *fs, *fe;
    const char *extra = NULL; /* start of the first field beyond t->cols */
    size_t count = 0;
    int last_empty = 0;
    field_iter it = {s, e, t->delim, 0};
    while (next_field(&it, &fs, &fe)) {
        if (count >= t->cols) {
            if (!extra) extra = fs;
            last_empty = fs == fe;
            count++;
            continue;
        }
        if (fs == fe)
            return ng_error_set(err, NG_ERR_INPUT,
                                "%s:%zu:%zu: field %zu is empty", st->path,
                                st->r.line_no, (size_t)(fs - line) + 1,
                                count + 1);
        double v;
        int overflow;
        if (!parse_number(fs, fe, &v, &overflow))
            return token_error(st, err, line, fs, fe, count,
                               "is not a number");
        if (overflow)
            return token_error(st, err, line, fs, fe, count,
                               "is out of range (overflows a double)");
        if (!isfinite(v))
            return token_error(st, err, line, fs, fe, count,
                               "is not a finite number");
        row[count++] = v;
    }
    if (count != t->cols) {
        size_t col = extra ? (size_t)(extra - line) + 1
                           : (size_t)(e - line) + 1;
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s:%zu:%zu: %zu field%s where %zu %s expected "
                            "(as %s line %zu)%s", st->path, st->r.line_no,
                            col, count, count == 1 ? "" : "s", t->cols,
                            t->cols == 1 ? "was" : "were",
                            st->has_header ? "in the header on" : "on",
                            st->shape_line,
                            count == t->cols + 1 && last_empty
                                ? "; the line ends with a delimiter"
                                : "");
    }
    if (st->keep_lines) t->row_line[t->rows] = st->r.line_no;
    t->rows++;
    return NG_OK;
}

FILE *cloud_open(const char *path, ng_error *err)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        ng_error_set(err, NG_ERR_INPUT, "%s: cannot open: %s", path,
                     strerror(errno));
    return f;
}

int cloud_text_read(const char *path, int keep_lines, cloud_table *t,
                    ng_error *err)
{
    memset(t, 0, sizeof *t);
    text_state st = {0};
    st.path = path;
    st.t = t;
    st.keep_lines = keep_lines;
    int rc = NG_OK;
    int any_content = 0;
    FILE *f = cloud_open(path, err);
    if (!f) return NG_ERR_INPUT;
    if (reader_init(&st.r, f) != NG_OK) {
        rc = ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory", path);
        goto cleanup;
    }
    for (;;) {
        int got = reader_next(&st.r);
        if (got == 0) break;
        if (got == NG_ERR_IO) {
            rc = ng_error_set(err, NG_ERR_IO, "%s:%zu: read failed: %s",
                              path, st.r.line_no + 1, strerror(errno));
            goto cleanup;
        }
        if (got < 0) {
            rc = ng_error_set(err, NG_ERR_NOMEM,
                              "%s:%zu: out of memory for a line", path,
                              st.r.line_no + 1);
            goto cleanup;
        }
        char *line = st.r.line;
        if (memchr(line, '\0', st.r.line_len)) {
            rc = ng_error_set(err, NG_ERR_INPUT,
                              "%s:%zu:%zu: NUL byte: not a text file", path,
                              st.r.line_no,
                              (size_t)((char *)memchr(line, '\0',
                                                      st.r.line_len) -
                                       line) + 1);
            goto cleanup;
        }
        char *e;
        char *s = line_content(line, st.r.line_len, st.r.line_no, &e);
        if (content_is_blank(s, e)) continue;
        if (!any_content) {
            any_content = 1;
            rc = first_line(&st, s, e, err);
            if (rc != NG_OK) goto cleanup;
            if (st.has_header) continue;
        }
        rc = data_line(&st, line, s, e, err);
        if (rc != NG_OK) goto cleanup;
    }
    if (t->rows == 0) {
        if (st.r.bytes_total == 0)
            rc = ng_error_set(err, NG_ERR_INPUT, "%s: the file is empty",
                              path);
        else if (!any_content)
            rc = ng_error_set(err, NG_ERR_INPUT,
                              "%s: no data (only comments and blank lines)",
                              path);
        else
            rc = ng_error_set(err, NG_ERR_INPUT,
                              "%s:%zu: a header line but no data rows", path,
                              st.shape_line);
        goto cleanup;
    }
    /* Give back the unused tail of the geometric growth (keep it if the
     * smaller block cannot be had: it is still valid). */
    double *fit = ng_realloc(t->values, t->rows * t->cols, sizeof *fit);
    if (fit) t->values = fit;

cleanup:
    reader_free(&st.r);
    fclose(f);
    if (rc != NG_OK) cloud_table_free(t);
    return rc;
}

size_t cloud_text_locate(const char *path, cloud_delim delim, size_t line,
                         size_t field)
{
    FILE *f = fopen(path, "rb");
    if (!f) return 0;
    line_reader r;
    size_t column = 0;
    if (reader_init(&r, f) != NG_OK) goto cleanup;
    while (reader_next(&r) == 1) {
        if (r.line_no < line) continue;
        char *e;
        char *s = line_content(r.line, r.line_len, r.line_no, &e);
        field_iter it = {s, e, delim, 0};
        const char *fs, *fe;
        for (size_t j = 0; next_field(&it, &fs, &fe); j++) {
            if (j == field) {
                column = (size_t)(fs - r.line) + 1;
                break;
            }
        }
        break;
    }
cleanup:
    reader_free(&r);
    fclose(f);
    return column;
}
