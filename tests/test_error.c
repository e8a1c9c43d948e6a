/* test_error.c — the error convention and the allocation wrapper. */
#include "nervegap/common.h"
#include "alloc.h"

#include <check.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

START_TEST(first_error_wins)
{
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_error_set(&err, NG_ERR_INPUT, "a %d", 1), NG_ERR_INPUT);
    ck_assert_int_eq(ng_error_set(&err, NG_ERR_IO, "b"), NG_ERR_IO);
    ck_assert_int_eq(err.code, NG_ERR_INPUT);
    ck_assert_str_eq(err.message, "a 1");
    ck_assert_int_eq(ng_error_set(NULL, NG_ERR_IO, "x"), NG_ERR_IO);
}
END_TEST

/* Input quoted in a message may hold any byte: the message stays one line
 * (the fuzzers found a .npy header key and a dataset path with '\n'). */
START_TEST(message_is_one_line)
{
    ng_error err;
    ng_error_clear(&err);
    ng_error_set(&err, NG_ERR_INPUT, "key '%s'", "a\nb\rc\td\x1b[2J\x7f");
    ck_assert_str_eq(err.message, "key 'a?b?c\td?[2J?'");
}
END_TEST

START_TEST(exit_codes)
{
    ck_assert_int_eq(ng_error_exit_code(NG_OK), 0);
    ck_assert_int_eq(ng_error_exit_code(NG_ERR_USAGE), 2);
    ck_assert_int_eq(ng_error_exit_code(NG_ERR_INPUT), 2);
    ck_assert_int_eq(ng_error_exit_code(NG_ERR_NOMEM), 1);
    ck_assert_int_eq(ng_error_exit_code(NG_ERR_IO), 1);
    ck_assert_int_eq(ng_error_exit_code(NG_ERR_BUDGET), 1);
}
END_TEST

START_TEST(allocation_overflow_is_refused)
{
    ck_assert_ptr_null(ng_malloc(SIZE_MAX / 2, 3));
    ck_assert_ptr_null(ng_calloc(SIZE_MAX, SIZE_MAX));
    void *p = ng_malloc(4, 8);
    ck_assert_ptr_nonnull(p);
    ck_assert_ptr_null(ng_realloc(p, SIZE_MAX / 4, 8));
    ng_free(p); /* still owned after a failed realloc */
    ng_free(NULL);
}
END_TEST

START_TEST(fault_injection_counts_and_fails)
{
    ng_alloc_fail_after(2);
    void *a = ng_malloc(1, 1), *b = ng_malloc(1, 1), *c = ng_malloc(1, 1);
    ck_assert_ptr_nonnull(a);
    ck_assert_ptr_nonnull(b);
    ck_assert_ptr_null(c);
    ck_assert_int_eq(ng_alloc_fail_after(-1), 3);
    void *d = ng_malloc(1, 1);
    ck_assert_ptr_nonnull(d);
    ng_free(a);
    ng_free(b);
    ng_free(d);
    char *s = ng_strdup("radius");
    ck_assert_str_eq(s, "radius");
    ng_free(s);
}
END_TEST

int main(void)
{
    Suite *s = suite_create("error");
    TCase *tc = tcase_create("core");
    tcase_add_test(tc, first_error_wins);
    tcase_add_test(tc, message_is_one_line);
    tcase_add_test(tc, exit_codes);
    tcase_add_test(tc, allocation_overflow_is_refused);
    tcase_add_test(tc, fault_injection_counts_and_fails);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
