/* splitmix.h — SplitMix64 (Steele, Lea, Flood, "Fast splittable
 * pseudorandom number generators", OOPSLA 2014): a 64-bit state advanced by
 * a constant and mixed; every seed gives a full-period stream. The one
 * generator of the library (subsample draws), the tests and the
 * benchmarks, so that a seed means the same stream everywhere. */
#ifndef NG_SPLITMIX_H
#define NG_SPLITMIX_H

#include <stdint.h>

/* The next 64 random bits of the stream *state. */
static inline uint64_t ng_splitmix_next(uint64_t *state)
{
    uint64_t z = (*state += 0x9E3779B97F4A7C15u);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9u;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBu;
    return z ^ (z >> 31);
}

/* Uniform in [0, 1), 53 bits. */
static inline double ng_splitmix_uniform(uint64_t *state)
{
    return (double)(ng_splitmix_next(state) >> 11) * 0x1.0p-53;
}

#endif
