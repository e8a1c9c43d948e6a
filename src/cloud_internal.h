/* cloud_internal.h — what the cloud readers share (private to cloud*.c).
 *
 * Each reader (text, .npy, HDF5) fills a cloud_table: a dense row-major
 * matrix of finite doubles with rows × cols entries, plus what only some
 * formats know (header names, the file line of each text row). cloud.c turns
 * a table into an ng_cloud (coordinates or a distance matrix) and checks what
 * is common to all formats (at least 2 points, square and symmetric
 * distances).
 *
 * Invariants of a table filled by a reader that returned NG_OK: rows ≥ 1
 * for text (a binary format may give 0; cloud.c refuses fewer than 2),
 * cols ≥ 1, rows ≤ NG_INDEX_MAX, rows × cols × sizeof(double) fits in
 * size_t, every value finite. On failure the reader leaves the table empty
 * (all zero / NULL) and has written the message.
 */
#ifndef NERVEGAP_CLOUD_INTERNAL_H
#define NERVEGAP_CLOUD_INTERNAL_H

#include "nervegap/common.h"

#include <stdio.h>

/* How the fields of a text line are separated. */
typedef enum cloud_delim {
    CLOUD_DELIM_COMMA, /* ',' with optional blanks around it */
    CLOUD_DELIM_TAB,   /* '\t' with optional spaces around it */
    CLOUD_DELIM_SPACE  /* runs of spaces and tabs */
} cloud_delim;

typedef struct cloud_table {
    size_t rows, cols;
    double *values;    /* rows × cols, row-major */
    char **names;      /* cols header names (text only), or NULL */
    size_t *row_line;  /* 1-based file line of each row (text, on request) */
    cloud_delim delim; /* text only: the delimiter that was detected */
} cloud_table;

/* Frees what a table owns and empties it. Accepts NULL. */
void cloud_table_free(cloud_table *t);

/* Checks that a matrix of rows × cols values of item_size bytes can be held:
 * rows ≤ NG_INDEX_MAX and rows × cols × item_size (and × sizeof(double))
 * fits in size_t. label names the input in the message (NG_ERR_INPUT). */
int cloud_check_shape(const char *label, size_t rows, size_t cols,
                      size_t item_size, ng_error *err);

/* Text reader: path is a file name. With keep_lines, t->row_line is set so
 * that later checks can name the line of an entry. */
int cloud_text_read(const char *path, int keep_lines, cloud_table *t,
                    ng_error *err);

/* The 1-based character column where field `field` (0-based) of file line
 * `line` starts, when the file can be read again; 0 when it cannot. Only
 * used to make messages precise. */
size_t cloud_text_locate(const char *path, cloud_delim delim, size_t line,
                         size_t field);

/* .npy reader (format 1.0, 2.0, 3.0; '<f8' or '<f4'; C order; 2-D). */
int cloud_npy_read(const char *path, cloud_table *t, ng_error *err);

/* HDF5 reader: a 2-D dataset of float class in file path, read as double. */
int cloud_h5_read(const char *path, const char *dataset, cloud_table *t,
                  ng_error *err);

/* Opens path for reading in binary mode. On failure returns NULL and sets
 * NG_ERR_INPUT ("cannot open", so that a mistyped name is bad usage). */
FILE *cloud_open(const char *path, ng_error *err);

#endif
