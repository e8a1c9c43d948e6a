/* reduce_internal.h — a switch for the tests of the reduction (private).
 *
 * A column moves to the dense form (reduce.c) only when it grows long and
 * long columns have cost enough; the small complexes of the tests never
 * get there. With the switch on, every column that is not an apparent pair
 * is reduced in the dense form from its first addition on, so the tests
 * compare that form with the textbook reduction too. Process-wide; set it
 * before a reduction starts, not during one.
 */
#ifndef NERVEGAP_REDUCE_INTERNAL_H
#define NERVEGAP_REDUCE_INTERNAL_H

/* Sets the switch (1: always dense; 0: the normal rule) and returns its
 * previous value. */
int ng_reduce_force_dense(int on);

#endif
