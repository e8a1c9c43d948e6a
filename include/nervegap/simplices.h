/* simplices.h — a list of simplices read from a text file: one simplex per
 * line as 0-based vertex indices separated by spaces, tabs or commas
 * (`nervegap values --simplices FILE`). Blank lines and '#' comments are
 * skipped. Every simplex has 1..NG_SIMPLICES_MAX_VERTICES distinct
 * vertices below the number of points. */
#ifndef NERVEGAP_SIMPLICES_H
#define NERVEGAP_SIMPLICES_H

#include "nervegap/common.h"

#define NG_SIMPLICES_MAX_VERTICES 6

typedef struct ng_simplex_list {
    size_t count;     /* number of simplices */
    int *size;        /* vertices of simplex s: size[s] */
    ng_index *vertex; /* vertex[s * NG_SIMPLICES_MAX_VERTICES + r], r < size[s] */
    size_t *line;     /* the 1-based input line of simplex s */
} ng_simplex_list;

/* Reads path, checking every index against n_points. On success *out holds
 * the list (free with ng_simplex_list_free). Errors: NG_ERR_INPUT naming
 * path:line:column for a token that is not an index, an index ≥ n_points,
 * a repeated vertex or more than NG_SIMPLICES_MAX_VERTICES vertices (and
 * for a file that cannot be opened); NG_ERR_IO, NG_ERR_NOMEM. */
NG_API int ng_simplex_list_read(const char *path, size_t n_points,
                                ng_simplex_list *out, ng_error *err);

/* Frees the arrays of a list and zeroes it. Accepts NULL. */
NG_API void ng_simplex_list_free(ng_simplex_list *list);

#endif
