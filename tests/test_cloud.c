/* test_cloud.c — the cloud readers (text, .npy, HDF5, distance matrices).
 *
 * Fixtures live in $NG_FIXTURES (tests/fixtures, set by tests/meson.build):
 * good/ holds inputs whose values are checked, bad/ one file per refused
 * case, listed in bad/EXPECTED with the substring the message must contain.
 * good/same.* hold one random 50 × 4 array written by numpy/h5py in every
 * format (make_fixtures.py); the readers must agree bit for bit.
 */
#include "nervegap/cloud.h"
#include "alloc.h"

#include <check.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

static char fixture_path[4096];

static const char *fixture(const char *sub, const char *name)
{
    const char *root = getenv("NG_FIXTURES");
    ck_assert_msg(root != NULL, "NG_FIXTURES is not set");
    snprintf(fixture_path, sizeof fixture_path, "%s/%s/%s", root, sub, name);
    return fixture_path;
}

static ng_cloud *read_ok(const char *spec)
{
    ng_error err;
    ng_error_clear(&err);
    ng_cloud *c = NULL;
    int rc = ng_cloud_read(spec, &c, &err);
    ck_assert_msg(rc == NG_OK, "%s: %s", spec, err.message);
    ck_assert_ptr_nonnull(c);
    return c;
}

static ng_cloud *read_dist_ok(const char *spec)
{
    ng_error err;
    ng_error_clear(&err);
    ng_cloud *c = NULL;
    int rc = ng_cloud_read_distances(spec, &c, &err);
    ck_assert_msg(rc == NG_OK, "%s: %s", spec, err.message);
    ck_assert_ptr_nonnull(c);
    return c;
}

/* Bit-for-bit equality (so that -0.0 and 0.0 are told apart). */
static int same_bits(double a, double b) { return memcmp(&a, &b, sizeof a) == 0; }

/* ---- bad inputs: every line of bad/EXPECTED ---------------------------- */

START_TEST(bad_fixtures_are_refused_with_their_message)
{
    FILE *f = fopen(fixture("bad", "EXPECTED"), "r");
    ck_assert_msg(f != NULL, "cannot open %s", fixture_path);
    char line[2048];
    int cases = 0;
    while (fgets(line, sizeof line, f)) {
        line[strcspn(line, "\n")] = '\0';
        if (line[0] == '\0') continue;
        char *tab1 = strchr(line, '\t');
        ck_assert_ptr_nonnull(tab1);
        *tab1 = '\0';
        char *reader = tab1 + 1;
        char *tab2 = strchr(reader, '\t');
        ck_assert_ptr_nonnull(tab2);
        *tab2 = '\0';
        const char *expect = tab2 + 1;
        ck_assert(strcmp(reader, "points") == 0 ||
                  strcmp(reader, "distances") == 0);
        const char *spec = fixture("bad", line);

        ng_error err;
        ng_error_clear(&err);
        static ng_cloud sentinel;
        ng_cloud *c = &sentinel; /* the reader must reset it to NULL */
        int rc = strcmp(reader, "points") == 0
                     ? ng_cloud_read(spec, &c, &err)
                     : ng_cloud_read_distances(spec, &c, &err);
        ck_assert_msg(rc == NG_ERR_INPUT, "%s: code %d (%s)", line, rc,
                      err.message);
        ck_assert_int_eq(err.code, NG_ERR_INPUT);
        ck_assert_int_eq(ng_error_exit_code(rc), 2);
        ck_assert_ptr_null(c);
        ck_assert_msg(strstr(err.message, expect) != NULL,
                      "%s: message '%s' lacks '%s'", line, err.message,
                      expect);
        cases++;
    }
    fclose(f);
    ck_assert_int_ge(cases, 40);
}
END_TEST

/* The distance-matrix fixtures are valid point clouds, and the point
 * fixtures that fail only as points also fail as distances: the failure is
 * the content, not the reader choice. */
START_TEST(distance_checks_only_apply_to_distances)
{
    ng_cloud *c = read_ok(fixture("bad", "dist_asymmetric.csv"));
    ck_assert_uint_eq(c->n, 3);
    ck_assert_uint_eq(c->dim, 3);
    ng_cloud_free(c);
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_cloud_read_distances(fixture("bad", "ragged_short.csv"),
                                             &c, &err),
                     NG_ERR_INPUT);
    ck_assert_ptr_null(c);
    ck_assert_ptr_nonnull(strstr(err.message, ":3:4: 2 fields"));
}
END_TEST

/* ---- good text inputs -------------------------------------------------- */

START_TEST(csv_with_header_comments_blank_lines)
{
    ng_cloud *c = read_ok(fixture("good", "header.csv"));
    /* hand computation: the literals written in header.csv */
    const double want[3][3] = {{0.5, 1.25, -3}, {1e-3, 2, 3.5e2}, {-0.0, 7, 8}};
    ck_assert_uint_eq(c->n, 3);
    ck_assert_uint_eq(c->dim, 3);
    ck_assert_ptr_null(c->dist);
    for (size_t i = 0; i < 3; i++)
        for (size_t j = 0; j < 3; j++)
            ck_assert_msg(same_bits(c->coords[i * 3 + j], want[i][j]),
                          "[%zu][%zu] = %.17g", i, j, c->coords[i * 3 + j]);
    ck_assert_ptr_nonnull(c->names);
    ck_assert_str_eq(c->names[0], "x");
    ck_assert_str_eq(c->names[1], "y"); /* blanks around it trimmed */
    ck_assert_str_eq(c->names[2], "z"); /* trailing comment dropped */
    ck_assert_str_eq(c->source, fixture("good", "header.csv"));
    ng_cloud_free(c);
}
END_TEST

START_TEST(crlf_tsv_spaces_quoted_header)
{
    ng_cloud *c = read_ok(fixture("good", "crlf.csv"));
    ck_assert_uint_eq(c->n, 2);
    ck_assert_uint_eq(c->dim, 2);
    ck_assert_str_eq(c->names[0], "a");
    ck_assert_str_eq(c->names[1], "b"); /* no '\r' left */
    /* hand computation: the literals of crlf.csv */
    ck_assert(c->coords[0] == 1 && c->coords[1] == 2 && c->coords[2] == 3 &&
              c->coords[3] == 4);
    ng_cloud_free(c);

    c = read_ok(fixture("good", "plain.tsv"));
    ck_assert_uint_eq(c->n, 3); /* the last line has no '\n' */
    ck_assert_uint_eq(c->dim, 2);
    ck_assert_ptr_null(c->names);
    for (size_t k = 0; k < 6; k++) ck_assert(c->coords[k] == (double)(k + 1));
    ng_cloud_free(c);

    c = read_ok(fixture("good", "spaces.txt"));
    ck_assert_uint_eq(c->n, 2);
    ck_assert_uint_eq(c->dim, 3);
    for (size_t k = 0; k < 6; k++) ck_assert(c->coords[k] == (double)(k + 1));
    ng_cloud_free(c);

    c = read_ok(fixture("good", "quoted_header.csv"));
    ck_assert_str_eq(c->names[0], "p");
    ck_assert_str_eq(c->names[1], "q");
    ng_cloud_free(c);
}
END_TEST

/* ---- the same array in every format ------------------------------------ */

static void assert_same_cloud(const ng_cloud *ref, const ng_cloud *c,
                              int as_float)
{
    ck_assert_uint_eq(c->n, ref->n);
    ck_assert_uint_eq(c->dim, ref->dim);
    for (size_t k = 0; k < ref->n * ref->dim; k++) {
        double want = as_float ? (double)(float)ref->coords[k] : ref->coords[k];
        ck_assert_msg(same_bits(c->coords[k], want), "%s: value %zu: %.17g vs %.17g",
                      c->source, k, c->coords[k], want);
    }
}

START_TEST(all_formats_agree)
{
    /* reference: numpy wrote one array as repr() text, .npy 1.0/2.0/3.0
     * and HDF5 (make_fixtures.py); float32 files hold numpy's
     * round-to-nearest conversion, which (float) reproduces. */
    ng_cloud *ref = read_ok(fixture("good", "same.csv"));
    ck_assert_uint_eq(ref->n, 50);
    ck_assert_uint_eq(ref->dim, 4);
    ck_assert_str_eq(ref->names[3], "c3");
    const char *specs[] = {"same.npy", "same_v2.npy", "same_v3.npy",
                           "same.h5:/group/points", "same.h5:/group/points_be",
                           "same_f4.npy", "same.h5:/group/points_f4"};
    for (size_t s = 0; s < sizeof specs / sizeof specs[0]; s++) {
        ng_cloud *c = read_ok(fixture("good", specs[s]));
        ck_assert_ptr_null(c->names);
        assert_same_cloud(ref, c, strstr(specs[s], "f4") != NULL);
        ng_cloud_free(c);
    }
    ng_cloud_free(ref);
}
END_TEST

START_TEST(distance_matrices)
{
    ng_cloud *ref = read_dist_ok(fixture("good", "dist.csv"));
    ck_assert_uint_eq(ref->n, 5);
    ck_assert_uint_eq(ref->dim, 0);
    ck_assert_ptr_null(ref->coords);
    ck_assert_ptr_nonnull(ref->dist);
    for (size_t i = 0; i < 5; i++) {
        ck_assert(ref->dist[i * 5 + i] == 0.0);
        for (size_t j = 0; j < 5; j++)
            ck_assert(ref->dist[i * 5 + j] == ref->dist[j * 5 + i]);
    }
    /* reference: numpy wrote the same matrix as text, .npy and HDF5 */
    const char *specs[] = {"dist.npy", "dist.h5:/d"};
    for (size_t s = 0; s < 2; s++) {
        ng_cloud *c = read_dist_ok(fixture("good", specs[s]));
        ck_assert_uint_eq(c->n, 5);
        for (size_t k = 0; k < 25; k++)
            ck_assert(same_bits(c->dist[k], ref->dist[k]));
        ng_cloud_free(c);
    }
    ng_cloud_free(ref);
}
END_TEST

/* ---- take_column ------------------------------------------------------- */

START_TEST(take_column_removes_one_coordinate)
{
    ng_cloud *c = read_ok(fixture("good", "header.csv"));
    ng_error err;
    ng_error_clear(&err);
    double *v = NULL;
    ck_assert_int_eq(ng_cloud_take_column(c, 1, &v, &err), NG_OK);
    /* hand computation: column y of header.csv, and what is left */
    ck_assert(v[0] == 1.25 && v[1] == 2 && v[2] == 7);
    ck_assert_uint_eq(c->dim, 2);
    const double left[6] = {0.5, -3, 1e-3, 3.5e2, -0.0, 8};
    for (size_t k = 0; k < 6; k++) ck_assert(same_bits(c->coords[k], left[k]));
    ck_assert_str_eq(c->names[0], "x");
    ck_assert_str_eq(c->names[1], "z");
    ng_cloud_values_free(v);

    ck_assert_int_eq(ng_cloud_take_column(c, 2, &v, &err), NG_ERR_USAGE);
    ck_assert_ptr_null(v);
    ck_assert_ptr_nonnull(strstr(err.message, "column 2: the input has 2 columns"));
    ng_error_clear(&err);
    ck_assert_int_eq(ng_cloud_take_column(c, 1, &v, &err), NG_OK);
    ng_cloud_values_free(v);
    ck_assert_int_eq(ng_cloud_take_column(c, 0, &v, &err), NG_ERR_USAGE);
    ck_assert_ptr_nonnull(strstr(err.message, "no coordinate would be left"));
    ck_assert_uint_eq(c->dim, 1); /* unchanged on failure */
    ck_assert(c->coords[1] == 1e-3);
    ng_cloud_free(c);

    c = read_dist_ok(fixture("good", "dist.csv"));
    ng_error_clear(&err);
    ck_assert_int_eq(ng_cloud_take_column(c, 0, &v, &err), NG_ERR_USAGE);
    ck_assert_ptr_nonnull(strstr(err.message, "distance matrix"));
    ng_cloud_free(c);
    ng_cloud_free(NULL);
    ng_cloud_values_free(NULL);
}
END_TEST

/* ---- generated inputs: growth, long lines, block boundaries ------------ */

static char *temp_file(void)
{
    static char name[64];
    snprintf(name, sizeof name, "/tmp/ng_cloud_XXXXXX");
    int fd = mkstemp(name);
    ck_assert_int_ge(fd, 0);
    close(fd);
    return name;
}

START_TEST(many_rows_and_wide_rows)
{
    /* 30000 rows cross many 64 KiB read blocks and value-array doublings;
     * the values are exact binary fractions, so printing with %.17g and
     * reading back must give them exactly (hand computation). */
    char *name = temp_file();
    FILE *f = fopen(name, "w");
    const size_t n = 30000;
    fprintf(f, "# generated\nu\tv\tw\n");
    for (size_t i = 0; i < n; i++)
        fprintf(f, "%zu\t%.17g\t%.17g\n", i, i / 4.0, -(double)i * 1024);
    fclose(f);
    ng_cloud *c = read_ok(name);
    ck_assert_uint_eq(c->n, n);
    ck_assert_uint_eq(c->dim, 3);
    for (size_t i = 0; i < n; i++) {
        ck_assert(c->coords[3 * i] == (double)i);
        ck_assert(c->coords[3 * i + 1] == i / 4.0);
        ck_assert(c->coords[3 * i + 2] == -(double)i * 1024);
    }
    ng_cloud_free(c);

    /* Two rows of 20000 fields: each line is longer than a read block. */
    const size_t d = 20000;
    f = fopen(name, "w");
    for (size_t r = 0; r < 2; r++)
        for (size_t j = 0; j < d; j++)
            fprintf(f, "%zu%s", j + r * d, j + 1 < d ? ", " : "\n");
    fclose(f);
    c = read_ok(name);
    ck_assert_uint_eq(c->n, 2);
    ck_assert_uint_eq(c->dim, d);
    for (size_t k = 0; k < 2 * d; k++) ck_assert(c->coords[k] == (double)k);
    ng_cloud_free(c);
    remove(name);
}
END_TEST

START_TEST(spec_forms)
{
    ng_error err;
    ng_cloud *c = NULL;
    char spec[4200];
    /* "FILE.h5:" with nothing after the colon */
    snprintf(spec, sizeof spec, "%s:", fixture("good", "same.h5"));
    ng_error_clear(&err);
    ck_assert_int_eq(ng_cloud_read(spec, &c, &err), NG_ERR_INPUT);
    ck_assert_ptr_nonnull(strstr(err.message, "append ':/dataset'"));
    /* a dataset path without the leading '/' is resolved from the root */
    snprintf(spec, sizeof spec, "%s:group/points", fixture("good", "same.h5"));
    c = read_ok(spec);
    ck_assert_uint_eq(c->n, 50);
    ck_assert_str_eq(c->source, spec);
    ng_cloud_free(c);
    /* the distance reader goes through the same HDF5 path */
    snprintf(spec, sizeof spec, "%s:/group/points", fixture("good", "same.h5"));
    ng_error_clear(&err);
    ck_assert_int_eq(ng_cloud_read_distances(spec, &c, &err), NG_ERR_INPUT);
    ck_assert_ptr_nonnull(strstr(err.message, "50 rows of 4 values"));
}
END_TEST

START_TEST(read_failure_of_an_opened_file_is_io)
{
    /* A directory opens (fopen "rb" succeeds on Linux) but cannot be read:
     * that is NG_ERR_IO, exit code 1, not bad input. */
    ng_error err;
    ng_error_clear(&err);
    ng_cloud *c = NULL;
    const char *root = getenv("NG_FIXTURES");
    ck_assert_ptr_nonnull(root);
    int rc = ng_cloud_read(root, &c, &err);
    ck_assert_msg(rc == NG_ERR_IO, "%d %s", rc, err.message);
    ck_assert_ptr_null(c);
    ck_assert_int_eq(ng_error_exit_code(rc), 1);
    ck_assert_ptr_nonnull(strstr(err.message, "read failed"));
}
END_TEST

/* ---- allocation failures ------------------------------------------------ */

/* Makes the k-th allocation fail for k = 0, 1, ... until the read
 * succeeds; every failure must be NG_ERR_NOMEM with nothing handed out
 * (leaks show under ASan / valgrind, which run the same test). */
static void fail_each_allocation(const char *spec, int distances)
{
    for (long k = 0;; k++) {
        ng_error err;
        ng_error_clear(&err);
        ng_cloud *c = NULL;
        ng_alloc_fail_after(k);
        int rc = distances ? ng_cloud_read_distances(spec, &c, &err)
                           : ng_cloud_read(spec, &c, &err);
        ng_alloc_fail_after(-1);
        if (rc == NG_OK) {
            ck_assert_ptr_nonnull(c);
            ck_assert_int_gt(k, 0);
            ng_cloud_free(c);
            return;
        }
        ck_assert_msg(rc == NG_ERR_NOMEM, "%s, failing allocation %ld: %d %s",
                      spec, k, rc, err.message);
        ck_assert_ptr_null(c);
        ck_assert_ptr_nonnull(strstr(err.message, "out of memory"));
        ck_assert_int_lt(k, 1000);
    }
}

START_TEST(allocation_failures_are_clean)
{
    fail_each_allocation(fixture("good", "header.csv"), 0);
    fail_each_allocation(fixture("good", "same.npy"), 0);
    fail_each_allocation(fixture("good", "same_f4.npy"), 0);
    fail_each_allocation(fixture("good", "same.h5:/group/points"), 0);
    fail_each_allocation(fixture("good", "dist.csv"), 1);
    fail_each_allocation(fixture("bad", "dist_asymmetric.csv"), 0);

    ng_cloud *c = read_ok(fixture("good", "header.csv"));
    ng_error err;
    ng_error_clear(&err);
    double *v = NULL;
    ng_alloc_fail_after(0);
    int rc = ng_cloud_take_column(c, 0, &v, &err);
    ng_alloc_fail_after(-1);
    ck_assert_int_eq(rc, NG_ERR_NOMEM);
    ck_assert_ptr_null(v);
    ck_assert_uint_eq(c->dim, 3); /* unchanged */
    ck_assert_str_eq(c->names[0], "x");
    ng_cloud_free(c);
}
END_TEST

int main(void)
{
    Suite *s = suite_create("cloud");
    TCase *tc = tcase_create("core");
    tcase_add_test(tc, bad_fixtures_are_refused_with_their_message);
    tcase_add_test(tc, distance_checks_only_apply_to_distances);
    tcase_add_test(tc, csv_with_header_comments_blank_lines);
    tcase_add_test(tc, crlf_tsv_spaces_quoted_header);
    tcase_add_test(tc, all_formats_agree);
    tcase_add_test(tc, distance_matrices);
    tcase_add_test(tc, take_column_removes_one_coordinate);
    tcase_add_test(tc, many_rows_and_wide_rows);
    tcase_add_test(tc, spec_forms);
    tcase_add_test(tc, read_failure_of_an_opened_file_is_io);
    tcase_add_test(tc, allocation_failures_are_clean);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
