/* fuzz_common.h — what the fuzz targets share.
 *
 * Every target defines LLVMFuzzerTestOneInput(data, size). The readers it
 * drives open files by name, so the input is first written to a file in a
 * private temporary directory (made once per process, removed at exit).
 * The same target source is linked either with libFuzzer (clang,
 * -fsanitize=fuzzer) or with tests/fuzz/replay.c (any compiler), which
 * feeds it the committed corpus and every crash input found so far.
 *
 * A target aborts (which both drivers report) when the library breaks a
 * promise that the fuzzer can observe: a status that is neither NG_OK nor
 * an NG_ERR_* code, an error without a message or with a control
 * character other than tab (error.c), a cloud that violates the
 * invariants of cloud.h.
 */
#ifndef NERVEGAP_FUZZ_COMMON_H
#define NERVEGAP_FUZZ_COMMON_H

#include "nervegap/common.h"

#include <stddef.h>
#include <stdint.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* Writes data to a file called name (e.g. "in.npy") in the target's
 * temporary directory and returns its path (valid until the next call);
 * aborts when the file cannot be written. */
const char *fuzz_write_file(const char *name, const uint8_t *data,
                            size_t size);

/* The temporary directory itself (made on the first call). */
const char *fuzz_dir(void);

/* Aborts with a message when status and err do not agree with the error
 * convention of common.h. */
void fuzz_check_status(int status, const ng_error *err);

/* Reads file with ng_cloud_read (as_distances: ng_cloud_read_distances)
 * and checks the outcome: the status against the error convention, and a
 * cloud handed out against the invariants of cloud.h (none with an
 * error); aborts when a promise is broken. Frees the cloud. */
void fuzz_read_cloud(const char *file, int as_distances);

/* Aborts with a message (a broken promise the fuzzer found). */
void fuzz_fail(const char *what);

#endif
