/* simplices.c — the reader of simplices.h. Lines of any length are read;
 * memory grows geometrically with the number of simplices. */
#include "nervegap/simplices.h"

#include "alloc.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void ng_simplex_list_free(ng_simplex_list *list)
{
    if (list == NULL) return;
    ng_free(list->size);
    ng_free(list->vertex);
    ng_free(list->line);
    memset(list, 0, sizeof *list);
}

static int grow(ng_simplex_list *list, size_t *capacity)
{
    if (list->count < *capacity) return 1;
    size_t cap = *capacity ? 2 * *capacity : 256;
    int *size = ng_realloc(list->size, cap, sizeof *size);
    if (size) list->size = size;
    ng_index *vertex = size ? ng_realloc(list->vertex, cap,
                                         NG_SIMPLICES_MAX_VERTICES *
                                             sizeof *vertex)
                            : NULL;
    if (vertex) list->vertex = vertex;
    size_t *line = vertex ? ng_realloc(list->line, cap, sizeof *line) : NULL;
    if (line) list->line = line;
    if (line == NULL) return 0;
    *capacity = cap;
    return 1;
}

/* Reads one line of any length into *buf (grown as needed). Returns the
 * length, or -1 at end of file, or -2 when out of memory. */
static long read_line(FILE *fp, char **buf, size_t *cap)
{
    size_t len = 0;
    int c;
    while ((c = fgetc(fp)) != EOF) {
        if (len + 1 >= *cap) {
            size_t ncap = *cap ? 2 * *cap : 256;
            char *nbuf = ng_realloc(*buf, ncap, 1);
            if (nbuf == NULL) return -2;
            *buf = nbuf;
            *cap = ncap;
        }
        if (c == '\n') break;
        (*buf)[len++] = (char)c;
    }
    if (c == EOF && len == 0) return -1;
    if (*buf) (*buf)[len] = '\0';
    if (len > 0 && (*buf)[len - 1] == '\r') (*buf)[--len] = '\0';
    return (long)len;
}

static int is_separator(char c)
{
    return c == ' ' || c == '\t' || c == ',';
}

/* Parses one line into simplex s of the list (already grown). Returns 0
 * for a blank or comment line, 1 for a simplex, or a negative status. */
static int parse_line(const char *path, size_t lineno, char *text,
                      size_t n_points, ng_simplex_list *list, ng_error *err)
{
    char *hash = strchr(text, '#');
    if (hash) *hash = '\0';
    ng_index *v = list->vertex + list->count * NG_SIMPLICES_MAX_VERTICES;
    int m = 0;
    char *p = text;
    for (;;) {
        while (is_separator(*p)) p++;
        if (*p == '\0') break;
        size_t column = (size_t)(p - text) + 1;
        char *end;
        errno = 0;
        unsigned long long idx = (*p >= '0' && *p <= '9')
                                     ? strtoull(p, &end, 10)
                                     : (end = p, 0);
        if (end == p || (*end != '\0' && !is_separator(*end))) {
            size_t len = strcspn(p, " \t,");
            return ng_error_set(err, NG_ERR_INPUT,
                                "%s:%zu:%zu: '%.*s' is not a vertex index "
                                "(expected a whole number ≥ 0)",
                                path, lineno, column, (int)(len > 40 ? 40 : len),
                                p);
        }
        if (errno != 0 || idx >= n_points)
            return ng_error_set(err, NG_ERR_INPUT,
                                "%s:%zu:%zu: vertex %.*s is out of range (the "
                                "cloud has %zu points, indices 0..%zu)",
                                path, lineno, column, (int)(end - p), p,
                                n_points, n_points - 1);
        if (m == NG_SIMPLICES_MAX_VERTICES)
            return ng_error_set(err, NG_ERR_INPUT,
                                "%s:%zu:%zu: more than %d vertices (simplices "
                                "up to dimension %d are supported)",
                                path, lineno, column,
                                NG_SIMPLICES_MAX_VERTICES,
                                NG_SIMPLICES_MAX_VERTICES - 1);
        for (int r = 0; r < m; r++)
            if (v[r] == idx)
                return ng_error_set(err, NG_ERR_INPUT,
                                    "%s:%zu:%zu: vertex %llu is repeated",
                                    path, lineno, column, idx);
        v[m++] = (ng_index)idx;
        p = end;
    }
    if (m == 0) return 0;
    list->size[list->count] = m;
    list->line[list->count] = lineno;
    return 1;
}

int ng_simplex_list_read(const char *path, size_t n_points,
                         ng_simplex_list *out, ng_error *err)
{
    memset(out, 0, sizeof *out);
    FILE *fp = fopen(path, "r");
    if (fp == NULL)
        return ng_error_set(err, NG_ERR_INPUT, "%s: cannot open: %s", path,
                            strerror(errno));
    char *buf = NULL;
    size_t buf_cap = 0, capacity = 0, lineno = 0;
    int status = NG_OK;
    long len;
    while ((len = read_line(fp, &buf, &buf_cap)) >= 0) {
        lineno++;
        if (!grow(out, &capacity)) {
            len = -2;
            break;
        }
        int r = parse_line(path, lineno, buf, n_points, out, err);
        if (r < 0) {
            status = r;
            break;
        }
        out->count += (size_t)r;
    }
    if (status == NG_OK && len == -2)
        status = ng_error_set(err, NG_ERR_NOMEM,
                              "%s: out of memory after %zu lines", path,
                              lineno);
    if (status == NG_OK && ferror(fp))
        status = ng_error_set(err, NG_ERR_IO, "%s: read error", path);
    if (status == NG_OK && out->count == 0)
        status = ng_error_set(err, NG_ERR_INPUT, "%s: no simplices found",
                              path);
    fclose(fp);
    ng_free(buf);
    if (status != NG_OK) ng_simplex_list_free(out);
    return status;
}
