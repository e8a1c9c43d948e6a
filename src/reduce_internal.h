/* reduce_internal.h — switches for the tests of the reduction (private).
 *
 * A column moves to the dense form (reduce.c) only when it grows long and
 * long columns have cost enough; the small complexes of the tests never
 * get there. With the switch on, every column that is not an apparent pair
 * is reduced in the dense form from its first addition on, so the tests
 * compare that form with the textbook reduction too. Likewise the cache of
 * sorted coboundaries fills up only on large complexes; a lower limit makes
 * the tests take the path that sorts a coboundary each time it is added.
 * Process-wide; set them before a reduction starts, not during one.
 */
#ifndef NERVEGAP_REDUCE_INTERNAL_H
#define NERVEGAP_REDUCE_INTERNAL_H

#include <stddef.h>

/* Sets the switch (1: always dense; 0: the normal rule) and returns its
 * previous value. */
int ng_reduce_force_dense(int on);

/* Sets how many entries the cache of sorted coboundaries may hold per
 * filtration (0: none; at most the default, CACHE_MAX in reduce.c, which
 * keeps cache offsets within 32 bits) and returns the previous limit. */
size_t ng_reduce_cache_limit(size_t entries);

#endif
