/* sha256.h — the SHA-256 digest (FIPS 180-4, Secure Hash Standard), for
 * recording which input a results file was computed from.
 *
 * Incremental use: ng_sha256_init, any number of ng_sha256_update calls,
 * ng_sha256_final. No allocation; a context may live on the stack.
 */
#ifndef NERVEGAP_SHA256_H
#define NERVEGAP_SHA256_H

#include "nervegap/common.h"

/* Length of the hexadecimal digest, without the terminating NUL. */
#define NG_SHA256_HEX 64

typedef struct ng_sha256 {
    uint32_t state[8];
    uint64_t length;         /* bytes hashed so far */
    unsigned char block[64]; /* pending bytes of the current block */
    size_t fill;             /* how many of block are pending */
} ng_sha256;

NG_API void ng_sha256_init(ng_sha256 *h);
NG_API void ng_sha256_update(ng_sha256 *h, const void *data, size_t len);
/* Writes the 32-byte digest; h must be initialised again before reuse. */
NG_API void ng_sha256_final(ng_sha256 *h, unsigned char digest[32]);

/* Digest of a whole file as 64 lowercase hexadecimal digits and a NUL in
 * hex[NG_SHA256_HEX + 1]; *bytes (when not NULL) gets the file length.
 * NG_ERR_INPUT naming the path when it cannot be opened, NG_ERR_IO when a
 * read fails. */
NG_API int ng_sha256_file(const char *path, char hex[NG_SHA256_HEX + 1],
                          uint64_t *bytes, ng_error *err);

#endif
