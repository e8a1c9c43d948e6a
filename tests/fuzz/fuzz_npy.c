/* fuzz_npy.c — the .npy reader (cloud_npy.c) on arbitrary bytes, read as
 * a coordinate cloud. Seeds: the .npy fixtures. */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *path = fuzz_write_file("in.npy", data, size);
    fuzz_read_cloud(path, 0);
    return 0;
}
