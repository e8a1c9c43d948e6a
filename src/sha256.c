/* sha256.c — SHA-256 as specified in FIPS 180-4 (identical to FIPS 180-2
 * for this function): 64 rounds over 512-bit blocks, the message padded
 * with a 1 bit, zeros and its length in bits as a 64-bit big-endian number.
 * Checked against the standard's example messages and Python's hashlib
 * (tests/test_results.c, tests/ref_results.py).
 */
#include "nervegap/sha256.h"

#include <errno.h>
#include <stdio.h>
#include <string.h>

/* The first 32 bits of the fractional parts of the cube roots of the first
 * 64 primes (FIPS 180-4 §4.2.2). */
static const uint32_t K[64] = {
    0x428a2f98, 0x71374491, 0xb5c0fbcf, 0xe9b5dba5, 0x3956c25b, 0x59f111f1,
    0x923f82a4, 0xab1c5ed5, 0xd807aa98, 0x12835b01, 0x243185be, 0x550c7dc3,
    0x72be5d74, 0x80deb1fe, 0x9bdc06a7, 0xc19bf174, 0xe49b69c1, 0xefbe4786,
    0x0fc19dc6, 0x240ca1cc, 0x2de92c6f, 0x4a7484aa, 0x5cb0a9dc, 0x76f988da,
    0x983e5152, 0xa831c66d, 0xb00327c8, 0xbf597fc7, 0xc6e00bf3, 0xd5a79147,
    0x06ca6351, 0x14292967, 0x27b70a85, 0x2e1b2138, 0x4d2c6dfc, 0x53380d13,
    0x650a7354, 0x766a0abb, 0x81c2c92e, 0x92722c85, 0xa2bfe8a1, 0xa81a664b,
    0xc24b8b70, 0xc76c51a3, 0xd192e819, 0xd6990624, 0xf40e3585, 0x106aa070,
    0x19a4c116, 0x1e376c08, 0x2748774c, 0x34b0bcb5, 0x391c0cb3, 0x4ed8aa4a,
    0x5b9cca4f, 0x682e6ff3, 0x748f82ee, 0x78a5636f, 0x84c87814, 0x8cc70208,
    0x90befffa, 0xa4506ceb, 0xbef9a3f7, 0xc67178f2};

static uint32_t rotr(uint32_t x, int n) { return (x >> n) | (x << (32 - n)); }

static void compress(uint32_t state[8], const unsigned char *p)
{
    uint32_t w[64];
    for (int t = 0; t < 16; t++)
        w[t] = (uint32_t)p[4 * t] << 24 | (uint32_t)p[4 * t + 1] << 16 |
               (uint32_t)p[4 * t + 2] << 8 | (uint32_t)p[4 * t + 3];
    for (int t = 16; t < 64; t++) {
        uint32_t s0 = rotr(w[t - 15], 7) ^ rotr(w[t - 15], 18) ^
                      (w[t - 15] >> 3);
        uint32_t s1 = rotr(w[t - 2], 17) ^ rotr(w[t - 2], 19) ^
                      (w[t - 2] >> 10);
        w[t] = w[t - 16] + s0 + w[t - 7] + s1;
    }
    uint32_t a = state[0], b = state[1], c = state[2], d = state[3],
             e = state[4], f = state[5], g = state[6], h = state[7];
    for (int t = 0; t < 64; t++) {
        uint32_t t1 = h + (rotr(e, 6) ^ rotr(e, 11) ^ rotr(e, 25)) +
                      ((e & f) ^ (~e & g)) + K[t] + w[t];
        uint32_t t2 = (rotr(a, 2) ^ rotr(a, 13) ^ rotr(a, 22)) +
                      ((a & b) ^ (a & c) ^ (b & c));
        h = g;
        g = f;
        f = e;
        e = d + t1;
        d = c;
        c = b;
        b = a;
        a = t1 + t2;
    }
    state[0] += a;
    state[1] += b;
    state[2] += c;
    state[3] += d;
    state[4] += e;
    state[5] += f;
    state[6] += g;
    state[7] += h;
}

void ng_sha256_init(ng_sha256 *h)
{
    /* the first 32 bits of the fractional parts of the square roots of the
     * first 8 primes (FIPS 180-4 §5.3.3) */
    static const uint32_t H0[8] = {0x6a09e667, 0xbb67ae85, 0x3c6ef372,
                                   0xa54ff53a, 0x510e527f, 0x9b05688c,
                                   0x1f83d9ab, 0x5be0cd19};
    memcpy(h->state, H0, sizeof H0);
    h->length = 0;
    h->fill = 0;
}

void ng_sha256_update(ng_sha256 *h, const void *data, size_t len)
{
    const unsigned char *p = data;
    h->length += len;
    if (h->fill > 0) {
        size_t take = 64 - h->fill < len ? 64 - h->fill : len;
        memcpy(h->block + h->fill, p, take);
        h->fill += take;
        p += take;
        len -= take;
        if (h->fill < 64) return;
        compress(h->state, h->block);
        h->fill = 0;
    }
    for (; len >= 64; p += 64, len -= 64) compress(h->state, p);
    memcpy(h->block, p, len);
    h->fill = len;
}

void ng_sha256_final(ng_sha256 *h, unsigned char digest[32])
{
    uint64_t bits = h->length * 8u;
    h->block[h->fill++] = 0x80;
    if (h->fill > 56) {
        memset(h->block + h->fill, 0, 64 - h->fill);
        compress(h->state, h->block);
        h->fill = 0;
    }
    memset(h->block + h->fill, 0, 56 - h->fill);
    for (int i = 0; i < 8; i++)
        h->block[56 + i] = (unsigned char)(bits >> (56 - 8 * i));
    compress(h->state, h->block);
    for (int i = 0; i < 8; i++)
        for (int b = 0; b < 4; b++)
            digest[4 * i + b] = (unsigned char)(h->state[i] >> (24 - 8 * b));
    h->fill = 0;
}

int ng_sha256_file(const char *path, char hex[NG_SHA256_HEX + 1],
                   uint64_t *bytes, ng_error *err)
{
    hex[0] = '\0';
    FILE *fp = fopen(path, "rb");
    if (fp == NULL)
        return ng_error_set(err, NG_ERR_INPUT, "%s: cannot open: %s", path,
                            strerror(errno));
    ng_sha256 h;
    ng_sha256_init(&h);
    unsigned char buf[1 << 16];
    size_t got;
    while ((got = fread(buf, 1, sizeof buf, fp)) > 0)
        ng_sha256_update(&h, buf, got);
    int failed = ferror(fp);
    fclose(fp);
    if (failed)
        return ng_error_set(err, NG_ERR_IO, "%s: read error while hashing",
                            path);
    unsigned char d[32];
    uint64_t len = h.length;
    ng_sha256_final(&h, d);
    static const char digits[] = "0123456789abcdef";
    for (int i = 0; i < 32; i++) {
        hex[2 * i] = digits[d[i] >> 4];
        hex[2 * i + 1] = digits[d[i] & 15];
    }
    hex[NG_SHA256_HEX] = '\0';
    if (bytes) *bytes = len;
    return NG_OK;
}
