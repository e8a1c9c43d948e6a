/* cloud_npy.c — the .npy reader.
 *
 * Layout of a .npy file: the magic "\x93NUMPY", a major and a minor version
 * byte, the header length (2 bytes little-endian for version 1.0, 4 bytes
 * for 2.0 and 3.0), then the header, a Python dict literal such as
 * {'descr': '<f8', 'fortran_order': False, 'shape': (100, 3), }, padded
 * with spaces and a newline, then the raw array data.
 *
 * Accepted: versions 1.0, 2.0, 3.0; descr '<f8' or '<f4' (float32 values
 * are converted exactly to double); fortran_order False; a 2-D shape
 * (n, d) with d ≥ 1; exactly n × d × itemsize data bytes; finite values.
 * Everything else is refused with a message saying what was found. Sizes
 * are checked against the file before anything large is allocated, so a
 * corrupt header cannot make the reader allocate absurd amounts of memory.
 * Values are decoded as little-endian whatever the host's byte order.
 */
#include "cloud_internal.h"

#include "alloc.h"

#include <errno.h>
#include <math.h>
#include <string.h>
#include <sys/stat.h>

enum {
    HEADER_MAX = 1 << 20, /* far above what numpy writes (< 64 KiB) */
    CHUNK_ITEMS = 1 << 13,
    DESCR_MAX = 32
};

/* ---- header dict parsing -------------------------------------------------- */

typedef struct header_parser {
    const char *p, *end;
} header_parser;

static void skip_space(header_parser *h)
{
    while (h->p < h->end && (*h->p == ' ' || *h->p == '\t' ||
                             *h->p == '\n' || *h->p == '\r'))
        h->p++;
}

static int take_char(header_parser *h, char c)
{
    skip_space(h);
    if (h->p < h->end && *h->p == c) {
        h->p++;
        return 1;
    }
    return 0;
}

static int peek_char(header_parser *h, char c)
{
    skip_space(h);
    return h->p < h->end && *h->p == c;
}

/* A quoted string ('...' or "..."); [*s, *s + *len) is its content. */
static int take_string(header_parser *h, const char **s, size_t *len)
{
    skip_space(h);
    if (h->p >= h->end || (*h->p != '\'' && *h->p != '"')) return 0;
    char quote = *h->p++;
    const char *start = h->p;
    while (h->p < h->end && *h->p != quote) h->p++;
    if (h->p >= h->end) return 0;
    *s = start;
    *len = (size_t)(h->p - start);
    h->p++;
    return 1;
}

static int take_word(header_parser *h, const char *word)
{
    skip_space(h);
    size_t k = strlen(word);
    if ((size_t)(h->end - h->p) < k || memcmp(h->p, word, k) != 0) return 0;
    h->p += k;
    return 1;
}

/* A non-negative integer (an old 'L' suffix allowed); *overflow when it
 * does not fit in size_t. */
static int take_size(header_parser *h, size_t *value, int *overflow)
{
    skip_space(h);
    if (h->p >= h->end || *h->p < '0' || *h->p > '9') return 0;
    size_t v = 0;
    *overflow = 0;
    while (h->p < h->end && *h->p >= '0' && *h->p <= '9') {
        size_t digit = (size_t)(*h->p - '0');
        if (v > (SIZE_MAX - digit) / 10) *overflow = 1;
        v = v * 10 + digit;
        h->p++;
    }
    if (h->p < h->end && *h->p == 'L') h->p++;
    *value = v;
    return 1;
}

typedef struct npy_header {
    char descr[DESCR_MAX + 1];
    int fortran_order;
    size_t ndim;
    size_t shape[2];        /* the first two dimensions */
    const char *shape_text; /* the shape tuple as written, for messages */
    int shape_len;
} npy_header;

static int syntax_error(const char *path, const header_parser *h,
                        const char *start, const char *what, ng_error *err)
{
    return ng_error_set(err, NG_ERR_INPUT,
                        "%s: .npy header: %s at byte %zu of the header dict",
                        path, what, (size_t)(h->p - start) + 1);
}

static int parse_header(const char *path, const char *text, size_t len,
                        npy_header *hd, ng_error *err)
{
    header_parser h = {text, text + len};
    int have_descr = 0, have_order = 0, have_shape = 0;
    memset(hd, 0, sizeof *hd);
    if (!take_char(&h, '{'))
        return syntax_error(path, &h, text, "expected '{'", err);
    for (;;) {
        if (take_char(&h, '}')) break;
        const char *key;
        size_t klen;
        if (!take_string(&h, &key, &klen))
            return syntax_error(path, &h, text, "expected a quoted key", err);
        if (!take_char(&h, ':'))
            return syntax_error(path, &h, text, "expected ':'", err);
        if (klen == 5 && memcmp(key, "descr", 5) == 0) {
            const char *v;
            size_t vlen;
            if (peek_char(&h, '['))
                return ng_error_set(err, NG_ERR_INPUT,
                                    "%s: .npy header: dtype is a structured "
                                    "type (a list of fields); expected '<f8' "
                                    "or '<f4'", path);
            if (!take_string(&h, &v, &vlen))
                return syntax_error(path, &h, text,
                                    "expected a quoted descr", err);
            if (vlen > DESCR_MAX) vlen = DESCR_MAX;
            memcpy(hd->descr, v, vlen);
            hd->descr[vlen] = '\0';
            have_descr = 1;
        } else if (klen == 13 && memcmp(key, "fortran_order", 13) == 0) {
            if (take_word(&h, "True"))
                hd->fortran_order = 1;
            else if (take_word(&h, "False"))
                hd->fortran_order = 0;
            else
                return syntax_error(path, &h, text,
                                    "expected True or False", err);
            have_order = 1;
        } else if (klen == 5 && memcmp(key, "shape", 5) == 0) {
            skip_space(&h);
            hd->shape_text = h.p;
            if (!take_char(&h, '('))
                return syntax_error(path, &h, text, "expected '('", err);
            for (;;) {
                if (take_char(&h, ')')) break;
                size_t v;
                int overflow;
                if (!take_size(&h, &v, &overflow))
                    return syntax_error(path, &h, text,
                                        "expected a dimension", err);
                if (overflow)
                    return ng_error_set(err, NG_ERR_INPUT,
                                        "%s: .npy header: a dimension of the "
                                        "shape does not fit in size_t", path);
                if (hd->ndim < 2) hd->shape[hd->ndim] = v;
                hd->ndim++;
                if (take_char(&h, ')')) break;
                if (!take_char(&h, ','))
                    return syntax_error(path, &h, text,
                                        "expected ',' or ')' in the shape",
                                        err);
            }
            hd->shape_len = (int)(h.p - hd->shape_text);
            have_shape = 1;
        } else {
            return ng_error_set(err, NG_ERR_INPUT,
                                "%s: .npy header: unexpected key '%.*s'",
                                path, (int)(klen > 40 ? 40 : klen), key);
        }
        if (take_char(&h, ',')) continue;
        if (take_char(&h, '}')) break;
        return syntax_error(path, &h, text, "expected ',' or '}'", err);
    }
    if (!have_descr || !have_order || !have_shape)
        return ng_error_set(err, NG_ERR_INPUT,
                            "%s: .npy header: the key '%s' is missing", path,
                            !have_descr ? "descr"
                            : !have_order ? "fortran_order"
                                          : "shape");
    return NG_OK;
}

/* What a refused descr is, in words. */
static const char *descr_kind(const char *d)
{
    if (d[0] == '>' && d[1] == 'f') return " (big-endian)";
    if (d[0] == '\0' || d[1] == '\0') return "";
    switch (d[1]) {
    case 'f': return " (a float of another size)";
    case 'i': return " (integer)";
    case 'u': return " (unsigned integer)";
    case 'b': return " (boolean)";
    case 'c': return " (complex)";
    case 'S':
    case 'U': return " (string)";
    case 'O': return " (Python objects)";
    case 'M':
    case 'm': return " (date/time)";
    default: return "";
    }
}

/* ---- data ---------------------------------------------------------------- */

static int host_is_little_endian(void)
{
    const uint16_t one = 1;
    unsigned char first;
    memcpy(&first, &one, 1);
    return first == 1;
}

static uint64_t load_le64(const unsigned char *b)
{
    uint64_t v = 0;
    for (int k = 7; k >= 0; k--) v = (v << 8) | b[k];
    return v;
}

static uint32_t load_le32(const unsigned char *b)
{
    return (uint32_t)b[0] | (uint32_t)b[1] << 8 | (uint32_t)b[2] << 16 |
           (uint32_t)b[3] << 24;
}

/* Reads count little-endian items of item bytes (8 or 4) into values. */
static int read_values(FILE *f, size_t item, size_t count, double *values)
{
    if (item == 8) {
        if (fread(values, 8, count, f) != count) return 0;
        if (!host_is_little_endian()) {
            for (size_t i = 0; i < count; i++) {
                unsigned char b[8];
                memcpy(b, &values[i], 8);
                uint64_t u = load_le64(b);
                memcpy(&values[i], &u, 8);
            }
        }
        return 1;
    }
    unsigned char buf[CHUNK_ITEMS * 4];
    for (size_t done = 0; done < count;) {
        size_t k = count - done < CHUNK_ITEMS ? count - done : CHUNK_ITEMS;
        if (fread(buf, 4, k, f) != k) return 0;
        for (size_t i = 0; i < k; i++) {
            uint32_t u = load_le32(buf + 4 * i);
            float x;
            memcpy(&x, &u, 4);
            values[done + i] = (double)x;
        }
        done += k;
    }
    return 1;
}

int cloud_npy_read(const char *path, cloud_table *t, ng_error *err)
{
    memset(t, 0, sizeof *t);
    int rc = NG_OK;
    char *text = NULL;
    FILE *f = cloud_open(path, err);
    if (!f) return NG_ERR_INPUT;

    struct stat sb;
    int sized = fstat(fileno(f), &sb) == 0 && S_ISREG(sb.st_mode);
    size_t file_size = sized ? (size_t)sb.st_size : SIZE_MAX;

    unsigned char pre[12];
    size_t got = fread(pre, 1, 10, f);
    if (got < 8 || memcmp(pre, "\x93NUMPY", 6) != 0) {
        rc = ferror(f) ? ng_error_set(err, NG_ERR_IO, "%s: read failed: %s",
                                      path, strerror(errno))
                       : ng_error_set(err, NG_ERR_INPUT,
                                      "%s: not a .npy file (bad magic: it "
                                      "does not start with \\x93NUMPY)", path);
        goto cleanup;
    }
    unsigned major = pre[6], minor = pre[7];
    if ((major != 1 && major != 2 && major != 3) || minor != 0) {
        rc = ng_error_set(err, NG_ERR_INPUT,
                          "%s: .npy header: format version %u.%u is not "
                          "supported (1.0, 2.0 or 3.0)", path, major, minor);
        goto cleanup;
    }
    size_t pre_len = major == 1 ? 10 : 12;
    if (major != 1) got += fread(pre + 10, 1, 2, f);
    if (got < pre_len) {
        rc = ng_error_set(err, NG_ERR_INPUT,
                          "%s: .npy header: truncated (the file ends inside "
                          "the header length)", path);
        goto cleanup;
    }
    size_t hlen = major == 1 ? (size_t)pre[8] | (size_t)pre[9] << 8
                             : (size_t)load_le32(pre + 8);
    if (hlen > HEADER_MAX || hlen > file_size - pre_len) {
        rc = ng_error_set(err, NG_ERR_INPUT,
                          "%s: .npy header: absurd header length %zu bytes "
                          "(%s)", path, hlen,
                          hlen > HEADER_MAX ? "limit 1 MiB"
                                            : "longer than the file");
        goto cleanup;
    }
    text = ng_malloc(hlen + 1, 1);
    if (!text) {
        rc = ng_error_set(err, NG_ERR_NOMEM, "%s: out of memory", path);
        goto cleanup;
    }
    if (fread(text, 1, hlen, f) != hlen) {
        rc = ferror(f) ? ng_error_set(err, NG_ERR_IO, "%s: read failed: %s",
                                      path, strerror(errno))
                       : ng_error_set(err, NG_ERR_INPUT,
                                      "%s: .npy header: truncated", path);
        goto cleanup;
    }
    text[hlen] = '\0';

    npy_header hd;
    rc = parse_header(path, text, hlen, &hd, err);
    if (rc != NG_OK) goto cleanup;
    size_t item;
    if (strcmp(hd.descr, "<f8") == 0)
        item = 8;
    else if (strcmp(hd.descr, "<f4") == 0)
        item = 4;
    else {
        rc = ng_error_set(err, NG_ERR_INPUT,
                          "%s: .npy header: dtype '%s'%s is not supported; "
                          "expected '<f8' or '<f4'", path, hd.descr,
                          descr_kind(hd.descr));
        goto cleanup;
    }
    if (hd.fortran_order) {
        rc = ng_error_set(err, NG_ERR_INPUT,
                          "%s: .npy header: fortran_order True is not "
                          "supported; save a C-ordered array "
                          "(numpy.ascontiguousarray)", path);
        goto cleanup;
    }
    if (hd.ndim != 2) {
        rc = ng_error_set(err, NG_ERR_INPUT,
                          "%s: .npy header: shape %.*s has %zu dimension%s; "
                          "expected 2-D (n, d)", path, hd.shape_len,
                          hd.shape_text, hd.ndim, hd.ndim == 1 ? "" : "s");
        goto cleanup;
    }
    size_t n = hd.shape[0], d = hd.shape[1];
    if (d == 0) {
        rc = ng_error_set(err, NG_ERR_INPUT,
                          "%s: .npy header: shape %.*s has no columns", path,
                          hd.shape_len, hd.shape_text);
        goto cleanup;
    }
    rc = cloud_check_shape(path, n, d, item, err);
    if (rc != NG_OK) goto cleanup;
    size_t count = n * d, need = count * item;
    if (sized) {
        size_t left = file_size - pre_len - hlen;
        if (left != need) {
            rc = left < need
                     ? ng_error_set(err, NG_ERR_INPUT,
                                    "%s: truncated: shape %.*s of '%s' needs "
                                    "%zu data bytes but the file has %zu",
                                    path, hd.shape_len, hd.shape_text,
                                    hd.descr, need, left)
                     : ng_error_set(err, NG_ERR_INPUT,
                                    "%s: %zu bytes after the data of shape "
                                    "%.*s (several arrays in one file?)",
                                    path, left - need, hd.shape_len,
                                    hd.shape_text);
            goto cleanup;
        }
    }
    t->values = ng_malloc(count, sizeof *t->values);
    if (!t->values) {
        rc = ng_error_set(err, NG_ERR_NOMEM,
                          "%s: out of memory for %zu x %zu values", path, n,
                          d);
        goto cleanup;
    }
    if (!read_values(f, item, count, t->values)) {
        rc = ferror(f) ? ng_error_set(err, NG_ERR_IO, "%s: read failed: %s",
                                      path, strerror(errno))
                       : ng_error_set(err, NG_ERR_INPUT,
                                      "%s: truncated: the data ends early",
                                      path);
        goto cleanup;
    }
    for (size_t i = 0; i < count; i++) {
        if (!isfinite(t->values[i])) {
            rc = ng_error_set(err, NG_ERR_INPUT,
                              "%s: row %zu, column %zu (counted from 0): %g "
                              "is not a finite number", path, i / d, i % d,
                              t->values[i]);
            goto cleanup;
        }
    }
    t->rows = n;
    t->cols = d;

cleanup:
    ng_free(text);
    fclose(f);
    if (rc != NG_OK) cloud_table_free(t);
    return rc;
}
