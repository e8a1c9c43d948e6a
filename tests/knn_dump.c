/* knn_dump.c — test-only program: k nearest neighbours of a raw point file,
 * for the reference check tests/ref_knn.py.
 *
 * Usage: knn_dump IN OUT
 *
 * IN (little-endian): the 8 bytes "NGKNNIN1", then five uint64 — n, dim,
 * k, metric (0 euclidean, 1 chebyshev, 2 manhattan), threads — then n × dim
 * float64 coordinates, row-major.
 * OUT (little-endian): the 8 bytes "NGKNNOUT", uint64 n, uint64 k, then
 * n × k float64 distances and n × k uint32 indices, as ng_knn_all returns
 * them. Exit code 0 on success, 1 on failure (message on stderr).
 */
#include "nervegap/kdtree.h"

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static int read_u64(FILE *f, uint64_t *v)
{
    unsigned char b[8];
    if (fread(b, 1, 8, f) != 8) return 0;
    *v = 0;
    for (int i = 7; i >= 0; i--) *v = (*v << 8) | b[i];
    return 1;
}

static int write_u64(FILE *f, uint64_t v)
{
    unsigned char b[8];
    for (int i = 0; i < 8; i++) b[i] = (unsigned char)(v >> (8 * i));
    return fwrite(b, 1, 8, f) == 8;
}

int main(int argc, char **argv)
{
    if (argc != 3) {
        fprintf(stderr, "usage: knn_dump IN OUT\n");
        return 1;
    }
    int rc = 1;
    double *pts = NULL, *dist = NULL;
    ng_index *idx = NULL;
    FILE *out = NULL;
    FILE *in = fopen(argv[1], "rb");
    if (in == NULL) {
        perror(argv[1]);
        return 1;
    }
    char magic[8];
    uint64_t n, dim, k, metric, threads;
    if (fread(magic, 1, 8, in) != 8 || memcmp(magic, "NGKNNIN1", 8) != 0 ||
        !read_u64(in, &n) || !read_u64(in, &dim) || !read_u64(in, &k) ||
        !read_u64(in, &metric) || !read_u64(in, &threads) || metric > 2 ||
        n == 0 || dim == 0 || n > SIZE_MAX / 8 / dim || k > n) {
        fprintf(stderr, "%s: bad header\n", argv[1]);
        goto cleanup;
    }
    pts = malloc(n * dim * sizeof *pts);
    dist = malloc(n * k * sizeof *dist + 1);
    idx = malloc(n * k * sizeof *idx + 1);
    if (pts == NULL || dist == NULL || idx == NULL) {
        fprintf(stderr, "knn_dump: out of memory\n");
        goto cleanup;
    }
    /* the host is little-endian (x86-64, aarch64): doubles are read as is */
    if (fread(pts, sizeof *pts, n * dim, in) != n * dim) {
        fprintf(stderr, "%s: truncated coordinates\n", argv[1]);
        goto cleanup;
    }
    ng_error err;
    ng_error_clear(&err);
    if (ng_knn_all(pts, n, dim, (ng_metric)metric, k, (int)threads, dist, idx,
                   &err) != NG_OK) {
        fprintf(stderr, "knn_dump: %s\n", err.message);
        goto cleanup;
    }
    out = fopen(argv[2], "wb");
    if (out == NULL || fwrite("NGKNNOUT", 1, 8, out) != 8 ||
        !write_u64(out, n) || !write_u64(out, k) ||
        fwrite(dist, sizeof *dist, n * k, out) != n * k ||
        fwrite(idx, sizeof *idx, n * k, out) != n * k) {
        perror(argv[2]);
        goto cleanup;
    }
    rc = 0;

cleanup:
    if (out != NULL && fclose(out) != 0) rc = 1;
    fclose(in);
    free(pts);
    free(dist);
    free(idx);
    return rc;
}
