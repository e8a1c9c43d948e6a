/* fuzz_distances.c — the distance-matrix path (ng_cloud_read_distances:
 * square, zero diagonal, non-negative, symmetric, with FILE:LINE:COLUMN
 * of the offending entry for text). The first input byte picks the format
 * (even: text, odd: .npy); the rest is the file. Seeds: the distance
 * fixtures with that byte in front. */
#include "fuzz_common.h"

#include "nervegap/cloud.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size < 1) return 0;
    const char *path = fuzz_write_file(data[0] & 1 ? "in.npy" : "in.csv",
                                       data + 1, size - 1);
    ng_cloud *c = NULL;
    ng_error err;
    ng_error_clear(&err);
    int rc = ng_cloud_read_distances(path, &c, &err);
    fuzz_check_status(rc, &err);
    if (rc == NG_OK) fuzz_check_cloud(c, 1);
    else if (c) fuzz_fail("a cloud handed out with an error");
    ng_cloud_free(c);
    return 0;
}
