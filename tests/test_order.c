/* test_order.c — the sort of (value, position) pairs (order.h) against
 * the C library's qsort with the same total order, on lists built to reach
 * every branch: short and long, one value, piles of ties, values spread
 * over hundreds of binary exponents, signed zeros, infinities. */
#include "alloc.h"
#include "order.h"
#include "splitmix.h"

#include <check.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

static int by_value_then_pos(const void *pa, const void *pb)
{
    const ng_keyed *a = pa, *b = pb;
    if (a->value != b->value) return a->value < b->value ? -1 : 1;
    return (a->pos > b->pos) - (a->pos < b->pos);
}

typedef enum shape {
    UNIFORM,      /* uniform in [0.02, 0.09): a few exponents */
    FEW_VALUES,   /* 7 distinct values: long runs of ties */
    WIDE,         /* ± 2^[-300, 300]: buckets far from even */
    ZEROS_INF,    /* ±0, ±inf and small values mixed */
    ONE_PILE,     /* one value, and one other at the end */
    CLUSTER,      /* most in [1, 1 + 1e-9], a few up to 1e6: long buckets
                     of distinct values */
    SHAPES
} shape;

static double draw(shape s, uint64_t *rng)
{
    double u = ng_splitmix_uniform(rng);
    switch (s) {
    case UNIFORM: return 0.02 + 0.07 * u;
    case FEW_VALUES: return floor(7 * u) / 8;
    case WIDE: return (u < 0.5 ? -1 : 1) *
                      ldexp(1 + ng_splitmix_uniform(rng),
                            (int)(600 * ng_splitmix_uniform(rng)) - 300);
    case ZEROS_INF: {
        const double pick[6] = {0.0, -0.0, INFINITY, -INFINITY, 1e-310, -2.5};
        return pick[(int)(6 * u)];
    }
    case CLUSTER: return u < 0.01 ? 1e6 * ng_splitmix_uniform(rng)
                                  : 1 + 1e-9 * ng_splitmix_uniform(rng);
    default: return 3.0;
    }
}

START_TEST(equals_qsort)
{
    const size_t sizes[] = {0, 1, 2, 3, 31, 33, 100, 1000, 65537, 300000};
    uint64_t rng = 20261202;
    for (int s = 0; s < SHAPES; s++)
        for (size_t t = 0; t < sizeof sizes / sizeof sizes[0]; t++) {
            size_t n = sizes[t];
            ng_keyed *a = malloc((n + 1) * sizeof *a);
            ng_keyed *want = malloc((n + 1) * sizeof *want);
            for (size_t i = 0; i < n; i++) {
                a[i] = (ng_keyed){draw((shape)s, &rng), (uint32_t)i};
                if (s == ONE_PILE && i + 1 == n) a[i].value = -1.0;
            }
            memcpy(want, a, n * sizeof *a);
            qsort(want, n, sizeof *want, by_value_then_pos);
            ck_assert_int_eq(ng_sort_keyed(a, n), 0);
            for (size_t i = 0; i < n; i++) {
                /* -0 and +0 compare equal, so the positions decide */
                ck_assert_msg(a[i].pos == want[i].pos,
                              "shape %d, n %zu: entry %zu is position %u, "
                              "expected %u",
                              s, n, i, a[i].pos, want[i].pos);
            }
            free(a);
            free(want);
        }
}
END_TEST

static double from_key(uint64_t key) /* positive doubles only */
{
    uint64_t b = key & ~((uint64_t)1 << 63);
    double x;
    memcpy(&x, &b, sizeof x);
    return x;
}

START_TEST(bucket_of_consecutive_doubles)
{
    /* 1000 consecutive doubles whose keys cross a multiple of 2^33 half
     * way, and one value 2^40 keys below them: they share one bucket
     * (shift 32; its radix passes cover 33 bits), and its order is that
     * of key − smallest key, not of the low key bits */
    size_t n = 1001;
    uint64_t k0 = ng_order_key(1.0) + ((uint64_t)1 << 33) - 500;
    ng_keyed *a = malloc(n * sizeof *a);
    for (size_t j = 0; j < 1000; j++)
        a[j] = (ng_keyed){from_key(k0 + 999 - j), (uint32_t)j};
    a[1000] = (ng_keyed){from_key(k0 - ((uint64_t)1 << 40)), 1000};
    ck_assert_int_eq(ng_sort_keyed(a, n), 0);
    ck_assert_uint_eq(a[0].pos, 1000);
    for (size_t i = 1; i < n; i++)
        ck_assert_msg(a[i].pos == 1000 - i && a[i - 1].value < a[i].value,
                      "entry %zu is position %u", i, a[i].pos);
    free(a);
}
END_TEST

START_TEST(out_of_memory_leaves_the_input)
{
    size_t n = 5000;
    ng_keyed *a = malloc(n * sizeof *a), *copy = malloc(n * sizeof *a);
    uint64_t rng = 7;
    for (size_t i = 0; i < n; i++)
        a[i] = (ng_keyed){ng_splitmix_uniform(&rng), (uint32_t)i};
    memcpy(copy, a, n * sizeof *a);
    /* fail the first, second, … allocation until the sort gets through */
    long k = 0;
    for (;; k++) {
        ng_alloc_fail_after(k);
        int st = ng_sort_keyed(a, n);
        ng_alloc_fail_after(-1);
        if (st == 0) break;
        ck_assert_int_eq(st, -1);
        ck_assert_int_eq(memcmp(a, copy, n * sizeof *a), 0);
    }
    ck_assert_int_gt(k, 0);
    for (size_t i = 1; i < n; i++) ck_assert(a[i - 1].value <= a[i].value);
    free(a);
    free(copy);
}
END_TEST

int main(void)
{
    Suite *s = suite_create("order");
    TCase *tc = tcase_create("core");
    tcase_set_timeout(tc, 300);
    tcase_add_test(tc, equals_qsort);
    tcase_add_test(tc, bucket_of_consecutive_doubles);
    tcase_add_test(tc, out_of_memory_leaves_the_input);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
