/* order.c — radix sort of (value, position) pairs (order.h).
 *
 * A most-significant-digit bucket sort on key = ng_order_key(value). One
 * stable counting pass spreads the entries over about n/2 buckets (at
 * most 2^16) by the leading bits of key − smallest key: the buckets are in
 * key order, and values that span a few binary exponents (the usual case)
 * fill them evenly. Each bucket is then finished alone, while it sits in
 * cache: by insertion sort when it is short (≤ 32), otherwise by the same
 * pass on its own key range (≤ 256 buckets, counters on the stack). Every
 * step is stable, so ties keep the input (position) order, and a bucket of
 * equal values costs one read. Each level resolves at least 4 more bits
 * of the key (a bucket longer than 32 gets at least 16 sub-buckets), so
 * the recursion is at most 16 levels deep (2 KB of stack each) whatever
 * the values.
 */
#include "order.h"

#include "alloc.h"

#include <string.h>

uint64_t ng_order_key(double x)
{
    uint64_t b;
    if (x == 0) x = 0.0;
    memcpy(&b, &x, sizeof b);
    return b >> 63 ? ~b : b | ((uint64_t)1 << 63);
}

int ng_order_doubles(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

#define SHORT_RUN 32
#define TOP_BUCKET_BITS 16
#define SUB_BUCKET_BITS 8

void ng_sort_keyed_short(ng_keyed *a, size_t n)
{
    for (size_t i = 1; i < n; i++) {
        ng_keyed e = a[i];
        size_t j = i;
        while (j > 0 && e.value < a[j - 1].value) {
            a[j] = a[j - 1];
            j--;
        }
        a[j] = e;
    }
}

/* Sorts a[0..n) (n > SHORT_RUN) stably by key, tmp as buffer (n entries),
 * count as 2^max_bits + 1 counters. */
static void bucket_sort(ng_keyed *a, ng_keyed *tmp, size_t n, size_t *count,
                        int max_bits)
{
    uint64_t lo = UINT64_MAX, hi = 0;
    for (size_t i = 0; i < n; i++) {
        uint64_t key = ng_order_key(a[i].value);
        if (key < lo) lo = key;
        if (key > hi) hi = key;
    }
    if (lo == hi) return; /* all equal: already in position order */
    int range_bits = 64 - __builtin_clzll(hi - lo), bits = 1;
    while (bits < max_bits && ((size_t)1 << bits) < n / 2) bits++;
    if (bits > range_bits) bits = range_bits;
    int shift = range_bits - bits;
    size_t nb = (size_t)1 << bits;
    memset(count, 0, (nb + 1) * sizeof *count);
    for (size_t i = 0; i < n; i++)
        count[((ng_order_key(a[i].value) - lo) >> shift) + 1]++;
    for (size_t b = 0; b < nb; b++) count[b + 1] += count[b];
    for (size_t i = 0; i < n; i++)
        tmp[count[(ng_order_key(a[i].value) - lo) >> shift]++] = a[i];
    memcpy(a, tmp, n * sizeof *a);
    /* count[b] is now the end of bucket b */
    size_t from = 0;
    for (size_t b = 0; b < nb; b++) {
        size_t len = count[b] - from;
        if (len > SHORT_RUN) {
            size_t sub[((size_t)1 << SUB_BUCKET_BITS) + 1];
            bucket_sort(a + from, tmp + from, len, sub, SUB_BUCKET_BITS);
        } else if (len > 1) {
            ng_sort_keyed_short(a + from, len);
        }
        from = count[b];
    }
}

int ng_sort_keyed(ng_keyed *a, size_t n)
{
    if (n <= SHORT_RUN) {
        ng_sort_keyed_short(a, n);
        return 0;
    }
    ng_keyed *tmp = ng_malloc(n, sizeof *tmp);
    size_t *count = ng_malloc(((size_t)1 << TOP_BUCKET_BITS) + 1,
                              sizeof *count);
    if (tmp == NULL || count == NULL) {
        ng_free(tmp);
        ng_free(count);
        return -1;
    }
    bucket_sort(a, tmp, n, count, TOP_BUCKET_BITS);
    ng_free(tmp);
    ng_free(count);
    return 0;
}
