/* order.c — radix sort of (value, position) pairs (order.h).
 *
 * A least-significant-digit radix sort on ng_order_key, 16 bits per pass:
 * stable, so ties keep the input (position) order. A pass whose digit is
 * the same for every entry is skipped (common in the high bits, where the
 * values share a sign and a few exponents).
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

#define DIGITS 65536

int ng_sort_keyed(ng_keyed *a, size_t n)
{
    if (n < 2) return 0;
    ng_keyed *tmp = ng_malloc(n, sizeof *tmp);
    size_t *count = ng_malloc(DIGITS, sizeof *count);
    if (tmp == NULL || count == NULL) {
        ng_free(tmp);
        ng_free(count);
        return -1;
    }
    ng_keyed *src = a, *dst = tmp;
    for (int shift = 0; shift < 64; shift += 16) {
        memset(count, 0, DIGITS * sizeof *count);
        for (size_t i = 0; i < n; i++)
            count[(ng_order_key(src[i].value) >> shift) & 0xFFFF]++;
        if (count[(ng_order_key(src[0].value) >> shift) & 0xFFFF] == n)
            continue; /* one digit for all: this pass changes nothing */
        size_t sum = 0;
        for (size_t d = 0; d < DIGITS; d++) {
            size_t c = count[d];
            count[d] = sum;
            sum += c;
        }
        for (size_t i = 0; i < n; i++)
            dst[count[(ng_order_key(src[i].value) >> shift) & 0xFFFF]++] =
                src[i];
        ng_keyed *t = src;
        src = dst;
        dst = t;
    }
    if (src != a) memcpy(a, src, n * sizeof *a);
    ng_free(tmp);
    ng_free(count);
    return 0;
}
