/* distance_tool.c — test-only program: diagram distances of many pairs of
 * diagrams from a raw file, for the reference check tests/ref_distance.py.
 *
 * Usage: distance_tool IN OUT [auto|exact|paths] [REL_ERROR]
 *
 * IN (little-endian): the 8 bytes "NGDISTIN", uint64 cases, then per case
 * uint64 na, uint64 nb, na × 2 float64 (birth, death), nb × 2 float64.
 * OUT: the 8 bytes "NGDISTOU", uint64 cases, then per case 5 float64:
 * bottleneck, W1, bound of W1, W2, bound of W2 (ng_wasserstein_distance
 * with REL_ERROR, default 1e-6). The method forces the Wasserstein solver:
 * the Hungarian method (exact) or shortest augmenting paths on the
 * geometric graph (paths) for every size, or the library's choice.
 * Exit code 0 on success, 1 on failure (message on stderr).
 */
#include "nervegap/distance.h"

#include "distance_internal.h"

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

/* Doubles are read and written as the host's; the check runs on
 * little-endian machines only (as ref_distance.py writes "<f8"). */
static int read_doubles(FILE *f, double *x, size_t n)
{
    return fread(x, sizeof *x, n, f) == n;
}

int main(int argc, char **argv)
{
    if (argc < 3 || argc > 5) {
        fprintf(stderr, "usage: distance_tool IN OUT [auto|exact|paths] "
                        "[REL_ERROR]\n");
        return 1;
    }
    if (argc >= 4) {
        if (strcmp(argv[3], "exact") == 0)
            ng_distance_set_exact_limit(SIZE_MAX - 1);
        else if (strcmp(argv[3], "paths") == 0)
            ng_distance_set_exact_limit(0);
        else if (strcmp(argv[3], "auto") != 0) {
            fprintf(stderr, "distance_tool: unknown method %s\n", argv[3]);
            return 1;
        }
    }
    double rel_error = argc == 5 ? strtod(argv[4], NULL) : 1e-6;
    int rc = 1;
    double *a = NULL, *b = NULL;
    FILE *out = NULL;
    FILE *in = fopen(argv[1], "rb");
    if (in == NULL) {
        perror(argv[1]);
        return 1;
    }
    char magic[8];
    uint64_t cases;
    if (fread(magic, 1, 8, in) != 8 || memcmp(magic, "NGDISTIN", 8) != 0 ||
        !read_u64(in, &cases)) {
        fprintf(stderr, "distance_tool: %s is not a distance input\n",
                argv[1]);
        goto cleanup;
    }
    out = fopen(argv[2], "wb");
    if (out == NULL) {
        perror(argv[2]);
        goto cleanup;
    }
    if (fwrite("NGDISTOU", 1, 8, out) != 8 || !write_u64(out, cases))
        goto write_failed;
    for (uint64_t c = 0; c < cases; c++) {
        uint64_t na, nb;
        if (!read_u64(in, &na) || !read_u64(in, &nb) || na > 100000000u ||
            nb > 100000000u) {
            fprintf(stderr, "distance_tool: case %llu: bad header\n",
                    (unsigned long long)c);
            goto cleanup;
        }
        free(a);
        free(b);
        a = malloc((2 * na + 1) * sizeof *a);
        b = malloc((2 * nb + 1) * sizeof *b);
        if (a == NULL || b == NULL || !read_doubles(in, a, 2 * na) ||
            !read_doubles(in, b, 2 * nb)) {
            fprintf(stderr, "distance_tool: case %llu: short input\n",
                    (unsigned long long)c);
            goto cleanup;
        }
        double res[5];
        ng_error err;
        ng_error_clear(&err);
        int status = ng_bottleneck_distance(a, na, b, nb, &res[0], &err);
        if (status == NG_OK)
            status = ng_wasserstein_distance(a, na, b, nb, 1.0, rel_error,
                                             &res[1], &res[2], &err);
        if (status == NG_OK)
            status = ng_wasserstein_distance(a, na, b, nb, 2.0, rel_error,
                                             &res[3], &res[4], &err);
        if (status != NG_OK) {
            fprintf(stderr, "distance_tool: case %llu: %s\n",
                    (unsigned long long)c, err.message);
            goto cleanup;
        }
        if (fwrite(res, sizeof *res, 5, out) != 5) goto write_failed;
    }
    if (fclose(out) != 0) {
        out = NULL;
        goto write_failed;
    }
    out = NULL;
    rc = 0;
    goto cleanup;
write_failed:
    fprintf(stderr, "distance_tool: cannot write %s\n", argv[2]);
cleanup:
    if (out != NULL) fclose(out);
    fclose(in);
    free(a);
    free(b);
    return rc;
}
