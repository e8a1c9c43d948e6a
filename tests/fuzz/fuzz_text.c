/* fuzz_text.c — the text point reader (cloud_text.c) on arbitrary bytes,
 * read as a coordinate cloud. Seeds: the text fixtures. */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *path = fuzz_write_file("in.csv", data, size);
    fuzz_read_cloud(path, 0);
    return 0;
}
