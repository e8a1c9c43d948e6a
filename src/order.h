/* order.h — sorting values with their positions (private to the library).
 *
 * The reduction sorts simplices by filtration value, the per-scale grid
 * sorts enlargement factors and shifts: both sort (value, position) pairs
 * by value, ties by position, tens of millions at a time. A radix sort on
 * the bits of the doubles does that in four linear passes. Short lists of
 * plain doubles go through qsort with ng_order_doubles.
 */
#ifndef NERVEGAP_ORDER_H
#define NERVEGAP_ORDER_H

#include <stddef.h>
#include <stdint.h>

typedef struct ng_keyed {
    double value; /* not NaN */
    uint32_t pos;
} ng_keyed;

/* An unsigned key with the order of the double x (−0 taken as +0, as the
 * comparison x < y does; x not NaN). */
uint64_t ng_order_key(double x);

/* Sorts a[0..n) by (value, pos), given that a is in increasing pos order
 * (the sort is stable). Returns 0, or −1 when out of memory (a is then
 * unchanged). */
int ng_sort_keyed(ng_keyed *a, size_t n);

/* The same, by insertion sort (no buffer, no failure): for short lists,
 * a few dozen entries. */
void ng_sort_keyed_short(ng_keyed *a, size_t n);

/* qsort comparator of doubles, increasing (not NaN). */
int ng_order_doubles(const void *a, const void *b);

#endif
