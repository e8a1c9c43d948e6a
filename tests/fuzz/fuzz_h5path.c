/* fuzz_h5path.c — the handling of "FILE.h5:/dataset" input specs
 * (cloud.c picks the reader and splits the spec at the first ':' after a
 * .h5/.hdf5 name; cloud_h5.c walks the dataset path group by group). The
 * input is the spec relative to the fixture directory (NG_FUZZ_FIXTURES,
 * set at build time), cut at the first NUL, so the fuzzer reaches the
 * HDF5 fixtures ("good/same.h5:/group/points") and varies file names,
 * colons and dataset paths. Specs containing ".." are skipped: they could
 * name any file of the system (a FIFO or a device would block). The
 * contents of HDF5 files are HDF5's own parsing and not fuzzed here.
 * Seeds: every HDF5 fixture with its dataset paths (tests/fuzz/seeds.py). */
#include "fuzz_common.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#ifndef NG_FUZZ_FIXTURES
#error "NG_FUZZ_FIXTURES must name tests/fixtures"
#endif

enum { SPEC_MAX = 4096 };

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    size_t len = strnlen((const char *)data, size);
    if (len > SPEC_MAX) return 0;
    static char spec[sizeof NG_FUZZ_FIXTURES + 1 + SPEC_MAX + 1];
    int head = snprintf(spec, sizeof spec, "%s/", NG_FUZZ_FIXTURES);
    memcpy(spec + head, data, len);
    spec[head + len] = '\0';
    if (strstr(spec + head, "..")) return 0;
    fuzz_read_cloud(spec, 0);
    fuzz_read_cloud(spec, 1);
    return 0;
}
