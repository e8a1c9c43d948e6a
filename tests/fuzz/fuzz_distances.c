/* fuzz_distances.c — the distance-matrix path (ng_cloud_read_distances:
 * square, zero diagonal, non-negative, symmetric, with FILE:LINE:COLUMN
 * of the offending entry for text). The first input byte picks the format
 * (even: text, odd: .npy); the rest is the file. Seeds: the distance
 * fixtures with that byte in front. */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size < 1) return 0;
    const char *path = fuzz_write_file(data[0] & 1 ? "in.npy" : "in.csv",
                                       data + 1, size - 1);
    fuzz_read_cloud(path, 1);
    return 0;
}
