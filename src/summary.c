/* summary.c — digit groups and the longest bars, for `nervegap show` and
 * the report (summary.h).
 *
 * The longest bars are picked with a heap of count entries whose top is
 * the shortest kept, O(m log count) for m bars, and sorted at the end.
 * The order is total on (length, birth, death), so the result does not
 * depend on the order of the bars.
 */
#include "nervegap/summary.h"

#include <stdio.h>
#include <stdlib.h>

const char *ng_summary_grouped(long long v, char *buf, size_t size)
{
    char digits[32];
    int n = snprintf(digits, sizeof digits, "%lld", v < 0 ? -v : v);
    size_t used = 0;
    if (v < 0 && used + 1 < size) buf[used++] = '-';
    for (int i = 0; i < n && used + 2 < size; i++) {
        if (i > 0 && (n - i) % 3 == 0) buf[used++] = ' ';
        buf[used++] = digits[i];
    }
    buf[used] = '\0';
    return buf;
}

/* < 0 when a comes first: longer, then earlier birth, then earlier death. */
static int longer_first(const void *pa, const void *pb)
{
    const ng_ranked_bar *a = pa, *b = pb;
    if (a->length != b->length) return a->length > b->length ? -1 : 1;
    if (a->birth != b->birth) return a->birth < b->birth ? -1 : 1;
    return (a->death > b->death) - (a->death < b->death);
}

/* Restores the heap h[0..m) (the last of the order on top) below i. */
static void sift_down(ng_ranked_bar *h, size_t m, size_t i)
{
    for (;;) {
        size_t c = 2 * i + 1;
        if (c >= m) return;
        if (c + 1 < m && longer_first(&h[c], &h[c + 1]) < 0) c++;
        if (longer_first(&h[i], &h[c]) >= 0) return;
        ng_ranked_bar t = h[i];
        h[i] = h[c];
        h[c] = t;
        i = c;
    }
}

size_t ng_summary_longest(const ng_bars *b, size_t count, ng_ranked_bar *top)
{
    size_t m = 0;
    if (count == 0) return 0;
    for (size_t i = 0; i < b->count; i++) {
        ng_ranked_bar x = {b->interval[2 * i], b->interval[2 * i + 1], 0.0};
        x.length = x.death - x.birth; /* +inf for bars alive at T */
        if (m < count) {
            top[m++] = x;
            if (m == count)
                for (size_t p = m / 2; p-- > 0;) sift_down(top, m, p);
        } else if (longer_first(&x, &top[0]) < 0) {
            top[0] = x;
            sift_down(top, m, 0);
        }
    }
    qsort(top, m, sizeof *top, longer_first);
    return m;
}
