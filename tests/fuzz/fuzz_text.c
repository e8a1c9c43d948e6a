/* fuzz_text.c — the text point reader (cloud_text.c) on arbitrary bytes,
 * read as a coordinate cloud. Seeds: the text fixtures. */
#include "fuzz_common.h"

#include "nervegap/cloud.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *path = fuzz_write_file("in.csv", data, size);
    ng_cloud *c = NULL;
    ng_error err;
    ng_error_clear(&err);
    int rc = ng_cloud_read(path, &c, &err);
    fuzz_check_status(rc, &err);
    if (rc == NG_OK) fuzz_check_cloud(c, 0);
    else if (c) fuzz_fail("a cloud handed out with an error");
    ng_cloud_free(c);
    return 0;
}
