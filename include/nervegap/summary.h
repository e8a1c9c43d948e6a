/* summary.h — the pieces of a run's summary that `nervegap show` prints
 * and the report (report.h) draws: numbers in digit groups and the longest
 * bars of a barcode. The text around them is each one's own.
 */
#ifndef NERVEGAP_SUMMARY_H
#define NERVEGAP_SUMMARY_H

#include "nervegap/common.h"
#include "nervegap/persistence.h"

/* v with its digits in groups of three separated by spaces ("1 592 578",
 * "-1 000"), written into buf (cut to size); returns buf. */
NG_API const char *ng_summary_grouped(long long v, char *buf, size_t size);

/* A bar and its length, death − birth (+inf for a bar alive at T). */
typedef struct ng_ranked_bar {
    double birth, death, length;
} ng_ranked_bar;

/* The count longest bars of b into top (caller-owned, count entries),
 * longest first: bars alive at T first of all, then by length; equal
 * lengths by birth, then death, increasing. Returns how many were written,
 * min(count, b->count). No allocation. */
NG_API size_t ng_summary_longest(const ng_bars *b, size_t count,
                                 ng_ranked_bar *top);

#endif
