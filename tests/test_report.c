/* test_report.c — the report module (report.h) on synthetic results files
 * (tests/results_fixture.h): the sections it draws, the options it
 * refuses, writing the file, and every allocation failure in turn
 * (NG_ERR_NOMEM, nothing leaked under ASan). The drawing is checked
 * against outside references in tests/ref_plot.py. */
#include "nervegap/report.h"
#include "nervegap/sha256.h"
#include "nervegap/summary.h"
#include "alloc.h"
#include "results_fixture.h"

#include <check.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

typedef struct files {
    char csv[64], csvb[64], h5[64], h5b[64];
} files;

/* A results file of fixture seed at path whose input is a real file of
 * 50 points in the plane (csv), so that the ball picture is drawn. */
static ng_results *load_fixture(const char *path, const char *csv,
                                unsigned seed, int L)
{
    fixture f;
    fixture_make(&f, seed, 1, L, 50, 9, 30);
    FILE *out = fopen(csv, "w");
    ck_assert_ptr_nonnull(out);
    fprintf(out, "x,y\n");
    for (int i = 0; i < 50; i++)
        fprintf(out, "%.6f,%.6f\n", 10 * fixture_uniform(&f),
                10 * fixture_uniform(&f));
    fclose(out);
    char hex[NG_SHA256_HEX + 1];
    ck_assert_int_eq(ng_sha256_file(csv, hex, NULL, NULL), NG_OK);
    f.rec.source = csv;
    f.rec.input_file = csv;
    f.rec.input_sha256 = hex;
    f.rec.ambient_dim = 2;
    for (int i = 0; i < 50; i++) f.radius[i] = 0.5 + f.radius[i] / 3;
    ng_results_file *rf;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_results_open(path, &rf, &err), NG_OK);
    ck_assert_int_eq(ng_results_commit(rf, &f.rec, &f.p, &err), NG_OK);
    fixture_free(&f);
    ng_results *r;
    ck_assert_int_eq(ng_results_load(path, &r, &err), NG_OK);
    return r;
}

static void make_names(files *fs)
{
    snprintf(fs->csv, sizeof fs->csv, "/tmp/ng_report_%d.csv", (int)getpid());
    snprintf(fs->csvb, sizeof fs->csvb, "/tmp/ng_report_%d_b.csv",
             (int)getpid());
    snprintf(fs->h5, sizeof fs->h5, "/tmp/ng_report_%d.h5", (int)getpid());
    snprintf(fs->h5b, sizeof fs->h5b, "/tmp/ng_report_%d_b.h5",
             (int)getpid());
}

static void remove_files(const files *fs)
{
    unlink(fs->csv);
    unlink(fs->csvb);
    unlink(fs->h5);
    unlink(fs->h5b);
}

START_TEST(sections_of_a_report_and_a_comparison)
{
    files fs;
    make_names(&fs);
    ng_results *a = load_fixture(fs.h5, fs.csv, 3, 2);
    ng_results *b = load_fixture(fs.h5b, fs.csvb, 4, 0);
    ng_report_options opt;
    ng_report_options_init(&opt);
    ng_report *rep;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_report_build(a, NULL, &opt, &rep, &err), NG_OK);
    ck_assert_msg(rep->n_notes == 0, "%s", rep->n_notes ? rep->notes[0] : "");
    const char *ids[] = {"id=\"summary\"", "id=\"barcodes\"",
                         "id=\"diagrams\"", "id=\"curves\"",
                         "id=\"hilbert\"", "id=\"radii\"", "id=\"balls\""};
    for (size_t i = 0; i < sizeof ids / sizeof ids[0]; i++)
        ck_assert_msg(strstr(rep->text, ids[i]), "%s missing", ids[i]);
    ck_assert(strncmp(rep->text, "<?xml", 5) == 0);
    ck_assert_uint_eq(strlen(rep->text), rep->length);
    ck_assert(isfinite(rep->at));
    ck_assert_msg(rep->n_notes == 0, "%s", rep->n_notes ? rep->notes[0] : "");
    ng_report_free(rep);

    /* the comparison: no heat map, no balls */
    ck_assert_int_eq(ng_report_build(a, b, &opt, &rep, &err), NG_OK);
    ck_assert_ptr_nonnull(strstr(rep->text, "id=\"barcode-b-rips-1\""));
    ck_assert_ptr_null(strstr(rep->text, "id=\"hilbert\""));
    ck_assert_ptr_null(strstr(rep->text, "id=\"balls\""));
    ck_assert(isnan(rep->at));
    ng_report_free(rep);

    /* HTML: a page with the same sections */
    opt.format = NG_REPORT_HTML;
    ck_assert_int_eq(ng_report_build(a, NULL, &opt, &rep, &err), NG_OK);
    ck_assert(strncmp(rep->text, "<!DOCTYPE html>", 15) == 0);
    ck_assert_ptr_nonnull(strstr(rep->text, "<section id=\"balls\">"));
    ng_report_free(rep);

    /* a changed input: the picture is left out, with a note */
    FILE *out = fopen(fs.csv, "a");
    fprintf(out, "# changed\n");
    fclose(out);
    opt.format = NG_REPORT_SVG;
    ck_assert_int_eq(ng_report_build(a, NULL, &opt, &rep, &err), NG_OK);
    ck_assert_ptr_null(strstr(rep->text, "id=\"balls\""));
    ck_assert_int_eq(rep->n_notes, 1);
    ck_assert_ptr_nonnull(strstr(rep->notes[0], "changed"));
    ng_report_free(rep);
    ng_results_free(a);
    ng_results_free(b);
    remove_files(&fs);
}
END_TEST

START_TEST(options_refused)
{
    files fs;
    make_names(&fs);
    ng_results *a = load_fixture(fs.h5, fs.csv, 5, 0);
    ng_report_options opt;
    ng_report *rep = (ng_report *)1;
    ng_error err;
    struct {
        double at;
        size_t bars;
        int two;
        const char *points;
        const char *needle;
        int code;
    } cases[] = {
        {-1, 40, 0, NULL, "--at", NG_ERR_USAGE},
        {1e9, 40, 0, NULL, "--at", NG_ERR_USAGE},
        {NAN, 0, 0, NULL, "--bars", NG_ERR_USAGE},
        {NAN, NG_REPORT_MAX_BARS + 1, 0, NULL, "--bars", NG_ERR_USAGE},
        {1, 40, 1, NULL, "--at", NG_ERR_USAGE},
        {NAN, 40, 1, "p.csv", "--points", NG_ERR_USAGE},
        {NAN, 40, 0, "/nonexistent/p.csv", "/nonexistent/p.csv",
         NG_ERR_INPUT},
    };
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        ng_report_options_init(&opt);
        opt.at = cases[c].at;
        opt.max_bars = cases[c].bars;
        opt.points = cases[c].points;
        ng_error_clear(&err);
        ck_assert_int_eq(ng_report_build(a, cases[c].two ? a : NULL, &opt,
                                         &rep, &err),
                         cases[c].code);
        ck_assert_ptr_null(rep);
        ck_assert_msg(strstr(err.message, cases[c].needle), "%s: %s",
                      cases[c].needle, err.message);
    }
    ng_results_free(a);
    remove_files(&fs);
}
END_TEST

START_TEST(save_writes_the_text_or_nothing)
{
    files fs;
    make_names(&fs);
    ng_results *a = load_fixture(fs.h5, fs.csv, 6, 1);
    ng_report *rep;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_report_build(a, NULL, NULL, &rep, &err), NG_OK);
    char path[80];
    snprintf(path, sizeof path, "/tmp/ng_report_%d.svg", (int)getpid());
    ck_assert_int_eq(ng_report_save(rep, path, &err), NG_OK);
    FILE *in = fopen(path, "rb");
    char *back = malloc(rep->length + 1);
    ck_assert_uint_eq(fread(back, 1, rep->length + 1, in), rep->length);
    fclose(in);
    ck_assert(memcmp(back, rep->text, rep->length) == 0);
    free(back);
    unlink(path);
    ng_error_clear(&err);
    ck_assert_int_eq(ng_report_save(rep, "/nonexistent/dir/r.svg", &err),
                     NG_ERR_USAGE);
    ck_assert_ptr_nonnull(strstr(err.message, "/nonexistent/dir/r.svg"));
    ng_error_clear(&err);
    ck_assert_int_eq(ng_report_save(rep, "/tmp/", &err), NG_ERR_USAGE);
    ng_report_free(rep);
    ng_report_free(NULL);
    ng_results_free(a);
    remove_files(&fs);
}
END_TEST

/* Every allocation made to fail in turn: NG_ERR_NOMEM and nothing leaked
 * (ASan), then success once there is memory enough; for a report with
 * every section and for a comparison. */
START_TEST(every_allocation_failure)
{
    files fs;
    make_names(&fs);
    ng_results *a = load_fixture(fs.h5, fs.csv, 8, 2);
    for (int two = 0; two < 2; two++) {
        int succeeded = 0;
        long n = 0;
        for (; n < 100000 && !succeeded; n++) {
            ng_report *rep = (ng_report *)1;
            ng_error err;
            ng_error_clear(&err);
            ng_alloc_fail_after(n);
            int st = ng_report_build(a, two ? a : NULL, NULL, &rep, &err);
            ng_alloc_fail_after(-1);
            if (st == NG_OK) {
                succeeded = 1;
                ck_assert(two || strstr(rep->text, "id=\"balls\""));
                ng_report_free(rep);
            } else {
                ck_assert_msg(st == NG_ERR_NOMEM, "failure %ld: %s", n,
                              err.message);
                ck_assert_ptr_null(rep);
            }
        }
        ck_assert(succeeded);
        ck_assert_int_gt(n, 20); /* the loop went through many failures */
    }
    ng_results_free(a);
    remove_files(&fs);
}
END_TEST

/* summary.h, shared with nervegap show: digit groups by hand (the demo's
 * 1 592 578 simplices in README.md) and the longest bars of a small
 * barcode ranked by hand. */
START_TEST(summary_pieces_by_hand)
{
    char buf[32];
    ck_assert_str_eq(ng_summary_grouped(0, buf, sizeof buf), "0");
    ck_assert_str_eq(ng_summary_grouped(999, buf, sizeof buf), "999");
    ck_assert_str_eq(ng_summary_grouped(1000, buf, sizeof buf), "1 000");
    ck_assert_str_eq(ng_summary_grouped(1592578, buf, sizeof buf),
                     "1 592 578");
    ck_assert_str_eq(ng_summary_grouped(-14574, buf, sizeof buf), "-14 574");
    ck_assert_int_lt((int)strlen(ng_summary_grouped(1234567, buf, 4)), 4);

    /* lengths 2, 0.5, inf, 2, 2: the bar alive at T, then the three of
     * length 2 by birth, then the short one */
    double interval[] = {1, 3, 5, 5.5, 0, INFINITY, 2, 4, 0, 2};
    ng_bars b = {1, 5, 1, interval, NULL, NULL};
    const double want[5][2] = {{0, INFINITY}, {0, 2}, {1, 3}, {2, 4},
                               {5, 5.5}};
    for (size_t count = 0; count <= 6; count++) {
        ng_ranked_bar top[6];
        size_t m = ng_summary_longest(&b, count, top);
        ck_assert_uint_eq(m, count < 5 ? count : 5);
        for (size_t i = 0; i < m; i++) {
            ck_assert_msg(top[i].birth == want[i][0] &&
                              top[i].death == want[i][1] &&
                              top[i].length == want[i][1] - want[i][0],
                          "count %zu, rank %zu: [%g, %g)", count, i,
                          top[i].birth, top[i].death);
        }
    }
}
END_TEST

int main(void)
{
    Suite *s = suite_create("report");
    TCase *tc = tcase_create("core");
    tcase_set_timeout(tc, 300);
    tcase_add_test(tc, sections_of_a_report_and_a_comparison);
    tcase_add_test(tc, options_refused);
    tcase_add_test(tc, save_writes_the_text_or_nothing);
    tcase_add_test(tc, every_allocation_failure);
    tcase_add_test(tc, summary_pieces_by_hand);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
