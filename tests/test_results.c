/* test_results.c — SHA-256 against the example messages of the Secure Hash
 * Standard, and the results file written and read back by the library:
 * every value equal, every allocation failure of the reader reported and
 * freed, clear errors for files that are not results files. (h5py's view
 * of the same files is checked in tests/ref_results.py.) */
#include "alloc.h"
#include "nervegap/results.h"
#include "nervegap/sha256.h"
#include "results_fixture.h"

#include <check.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

static void hex_of(const void *data, size_t len, size_t piece, char *hex)
{
    ng_sha256 h;
    ng_sha256_init(&h);
    const unsigned char *p = data;
    for (size_t at = 0; at < len; at += piece)
        ng_sha256_update(&h, p + at, len - at < piece ? len - at : piece);
    unsigned char d[32];
    ng_sha256_final(&h, d);
    for (int i = 0; i < 32; i++) snprintf(hex + 2 * i, 3, "%02x", d[i]);
}

/* FIPS 180-2, Appendix B (SHA-256 examples): "abc" (one block), the
 * 448-bit message (two blocks: the padding spills over) and one million
 * 'a'. The digests were written from memory and checked against Python's
 * hashlib.sha256 before being put here; the empty message's digest is
 * likewise hashlib's. */
START_TEST(test_sha256_vectors)
{
    static const struct {
        const char *msg;
        const char *hex;
    } cases[] = {
        {"abc", "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"},
        {"", "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"},
        {"abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq",
         "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1"},
    };
    char hex[65];
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++)
        for (size_t piece = 1; piece <= 70; piece++) {
            hex_of(cases[c].msg, strlen(cases[c].msg), piece, hex);
            ck_assert_str_eq(hex, cases[c].hex);
        }
    size_t n = 1000000;
    char *a = malloc(n);
    memset(a, 'a', n);
    hex_of(a, n, 4096, hex);
    ck_assert_str_eq(hex, "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
    hex_of(a, n, 1000, hex); /* pieces that straddle the blocks */
    ck_assert_str_eq(hex, "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
    free(a);
}
END_TEST

START_TEST(test_sha256_file)
{
    char path[] = "/tmp/ng_sha_XXXXXX";
    int fd = mkstemp(path);
    ck_assert_int_ge(fd, 0);
    ck_assert_int_eq(write(fd, "abc", 3), 3);
    close(fd);
    char hex[NG_SHA256_HEX + 1];
    uint64_t bytes = 0;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_sha256_file(path, hex, &bytes, &err), NG_OK);
    ck_assert_str_eq(hex, "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    ck_assert_uint_eq(bytes, 3);
    unlink(path);
    ck_assert_int_eq(ng_sha256_file(path, hex, &bytes, &err), NG_ERR_INPUT);
    ck_assert_ptr_nonnull(strstr(err.message, path));
}
END_TEST

static void write_fixture(const char *path, fixture *f, unsigned seed, int D,
                          int L)
{
    fixture_make(f, seed, D, L, 50, 7, 20);
    ng_error err;
    ng_error_clear(&err);
    ng_results_file *file;
    ck_assert_int_eq(ng_results_open(path, &file, &err), NG_OK);
    ck_assert_int_eq(ng_results_commit(file, &f->rec, &f->p, &err), NG_OK);
}

static void same_diagram(const ng_diagram *a, const ng_diagram *b, int D)
{
    for (int k = 0; k <= D; k++) {
        const ng_bars *x = &a->bars[k], *y = &b->bars[k];
        ck_assert_uint_eq(x->count, y->count);
        ck_assert_uint_eq(x->truncated, y->truncated);
        ck_assert(x->count == 0 ||
                  memcmp(x->interval, y->interval,
                         2 * x->count * sizeof(double)) == 0);
        ck_assert(x->count == 0 ||
                  memcmp(x->birth_vertices, y->birth_vertices,
                         x->count * (size_t)(k + 1) * sizeof(int64_t)) == 0);
        ck_assert(x->count == 0 ||
                  memcmp(x->death_vertices, y->death_vertices,
                         x->count * (size_t)(k + 2) * sizeof(int64_t)) == 0);
    }
}

START_TEST(test_round_trip)
{
    char path[] = "/tmp/ng_results_XXXXXX";
    int fd = mkstemp(path);
    close(fd);
    for (int L = 0; L <= 2; L += 2)
        for (int D = 0; D <= 3; D++) {
            fixture f;
            write_fixture(path, &f, (unsigned)(10 * D + L), D, L);
            ng_results *r;
            ng_error err;
            ng_error_clear(&err);
            ck_assert_int_eq(ng_results_load(path, &r, &err), NG_OK);
            ck_assert_int_eq(r->format_version, NG_RESULTS_FORMAT_VERSION);
            ck_assert_str_eq(r->command, f.rec.command);
            ck_assert_str_eq(r->input_sha256, f.rec.input_sha256);
            ck_assert_int_eq(r->input_bytes, 12345);
            ck_assert_uint_eq(r->n_points, 50);
            ck_assert_int_eq(r->max_degree, D);
            ck_assert(r->scale_limit == f.rec.scale_limit);
            ck_assert_int_eq(r->scale_auto, f.rec.scale_auto);
            ck_assert(memcmp(r->radius, f.radius, 50 * sizeof(double)) == 0);
            same_diagram(&r->cech, &f.diagrams[0], D);
            same_diagram(&r->rips, &f.diagrams[1], D);
            ck_assert_int_eq(r->n_slices, L);
            for (int j = 0; j < L; j++)
                same_diagram(&r->slices[j], &f.diagrams[2 + j], D);
            ck_assert(r->has_grid && r->grid.G == 7);
            ck_assert(memcmp(r->grid.simplices_rips, f.grid.simplices_rips,
                             7 * (size_t)(D + 2) * sizeof(int64_t)) == 0);
            ck_assert(L == 0 ||
                      memcmp(r->grid.hilbert, f.grid.hilbert,
                             (size_t)L * 7 * (size_t)(D + 1) *
                                 sizeof(int64_t)) == 0);
            ck_assert(r->factor_bound == f.grid.factor_bound);
            ck_assert(r->wasserstein2[D] == f.wasserstein2[D]);
            ck_assert_int_eq(r->threads, 3);
            ck_assert_int_eq(r->n_stages, 4); /* three given + writing */
            ck_assert_str_eq(r->stage_names[1], "reduction");
            ck_assert_str_eq(r->stage_names[3], "writing");
            ck_assert(r->stage_seconds[2] == f.stage_seconds[2]);
            ng_results_free(r);
            fixture_free(&f);
        }
    unlink(path);
}
END_TEST

/* Every allocation of the reader made to fail in turn: NG_ERR_NOMEM,
 * nothing leaked (ASan), and success once there is memory enough. */
START_TEST(test_load_out_of_memory)
{
    char path[] = "/tmp/ng_results_XXXXXX";
    int fd = mkstemp(path);
    close(fd);
    fixture f;
    write_fixture(path, &f, 7, 2, 2);
    fixture_free(&f);
    int succeeded = 0;
    for (long n = 0; n < 2000 && !succeeded; n++) {
        ng_results *r = (ng_results *)1;
        ng_error err;
        ng_error_clear(&err);
        ng_alloc_fail_after(n);
        int st = ng_results_load(path, &r, &err);
        ng_alloc_fail_after(-1);
        if (st == NG_OK) {
            succeeded = 1;
            ng_results_free(r);
        } else {
            ck_assert_int_eq(st, NG_ERR_NOMEM);
            ck_assert_ptr_null(r);
            ck_assert_ptr_nonnull(strstr(err.message, "out of memory"));
        }
    }
    ck_assert(succeeded);
    unlink(path);
}
END_TEST

START_TEST(test_load_errors)
{
    ng_results *r;
    ng_error err;
    ng_error_clear(&err);
    ck_assert_int_eq(ng_results_load("/nonexistent/x.h5", &r, &err),
                     NG_ERR_INPUT);
    ck_assert_ptr_nonnull(strstr(err.message, "/nonexistent/x.h5"));
    ck_assert_ptr_null(r);

    char path[] = "/tmp/ng_results_XXXXXX";
    int fd = mkstemp(path);
    ck_assert_int_eq(write(fd, "x,y\n1,2\n", 8), 8);
    close(fd);
    ng_error_clear(&err);
    ck_assert_int_eq(ng_results_load(path, &r, &err), NG_ERR_INPUT);
    ck_assert_ptr_nonnull(strstr(err.message, "not an HDF5 file"));
    unlink(path);
}
END_TEST

int main(void)
{
    Suite *s = suite_create("results");
    TCase *tc = tcase_create("results");
    tcase_add_test(tc, test_sha256_vectors);
    tcase_add_test(tc, test_sha256_file);
    tcase_add_test(tc, test_round_trip);
    tcase_add_test(tc, test_load_out_of_memory);
    tcase_add_test(tc, test_load_errors);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed ? 1 : 0;
}
