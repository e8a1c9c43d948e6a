/* alloc_sweep.c — allocation-failure injection over the main commands.
 *
 * For each path (a whole `nervegap` command, run in-process through the
 * command line's own main, compiled here as nervegap_main) the sweep first
 * counts the allocations the path makes through the library's wrapper
 * (src/alloc.h), then reruns it once for every N, making the N-th of them
 * fail (and, as ng_alloc_fail_after does, every later one). Each run must
 *   - return exit code 1 with one line on stderr, "nervegap CMD: ...",
 *     that says "out of memory",
 *   - leave nothing at the output path and no temporary file beside it,
 *   - leak nothing (in a LeakSanitizer build, a leak check runs after every
 *     run and names the N that leaked).
 * A run that succeeds all the same (possible only when the failed
 * allocations were ones the code may do without, such as a shrinking
 * realloc that keeps the larger block) must leave a complete output.
 * The distinct messages (with the temporary directory cut out) are
 * counted: each names what could not be allocated, so their number is a
 * lower bound of the allocation sites the path covers; --verbose lists
 * them.
 *
 *   alloc_sweep [--stride S] [--only PATH] [--verbose] [--fixtures DIR]
 *                                           (default stride 1: every N)
 * With --fixtures (tests/fixtures), `radii` also reads .npy and HDF5.
 *
 * With a stride S > 1, N = 1, 1 + S, 1 + 2S, ... plus the last 16 of the
 * path (where the results file is written): the default suite's sampling;
 * the full sweep is in the slow suite. Threads are fixed to 1 so that the
 * order of allocations, and so the meaning of N, is the same every time.
 */
#include "alloc.h"
#include "nervegap/common.h"

#include <dirent.h>
#include <fcntl.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#if defined(__SANITIZE_ADDRESS__)
#define HAVE_LSAN 1
#elif defined(__has_feature)
#if __has_feature(address_sanitizer)
#define HAVE_LSAN 1
#endif
#endif
#ifdef HAVE_LSAN
#include <sanitizer/lsan_interface.h>
#endif

int nervegap_main(int argc, char **argv);

/* A command-line argument: a mutable copy of s, as main receives them
 * (freed by free_args). */
enum { ARGS_MAX = 256 };
static char *arg_pool[ARGS_MAX];
static size_t n_args;

static char *A(const char *s)
{
    char *copy = strdup(s);
    if (!copy || n_args == ARGS_MAX) exit(99);
    return arg_pool[n_args++] = copy;
}

static void free_args(void)
{
    while (n_args) free(arg_pool[--n_args]);
}

static char dir[256];
static char path_buf[8][512];

static const char *in_dir(int slot, const char *name)
{
    snprintf(path_buf[slot], sizeof path_buf[slot], "%s/%s", dir, name);
    return path_buf[slot];
}

/* ---- inputs --------------------------------------------------------------- */

/* 40 points on a noisy circle of radius 1 in the plane (a fixed linear
 * congruential sequence), rows 1 and 17 exact copies of row 0 so that
 * --merge-duplicates has work; 32 simplices over them; a distance
 * matrix. */
static void write_inputs(void)
{
    unsigned long long s = 12345;
    FILE *f = fopen(in_dir(0, "cloud.csv"), "w");
    FILE *g = fopen(in_dir(1, "cloud_nodup.csv"), "w");
    if (!f || !g) exit(99);
    fprintf(f, "x,y\n");
    double x0 = 0, y0 = 0;
    for (int i = 0; i < 40; i++) {
        s = s * 6364136223846793005ULL + 1442695040888963407ULL;
        double noise = (double)(s >> 11) / 9007199254740992.0 - 0.5;
        double a = 2.0 * 3.14159265358979 * i / 40.0;
        double x = (1.0 + 0.2 * noise) * cos(a), y = (1.0 + 0.2 * noise) * sin(a);
        if (i == 0) x0 = x, y0 = y;
        if (i == 1 || i == 17) x = x0, y = y0;
        fprintf(f, "%.17g,%.17g\n", x, y);
        if (i != 1 && i != 17) fprintf(g, "%.17g %.17g\n", x, y);
    }
    fclose(f);
    fclose(g);
    f = fopen(in_dir(2, "simplices.txt"), "w");
    if (!f) exit(99);
    for (int i = 0; i < 30; i++)
        fprintf(f, "%d %d %d\n", i, (i + 1) % 38, (i + 3) % 38);
    fprintf(f, "# and two larger ones\n0 3 9 21\n4 8 15 16 23 30\n");
    fclose(f);
    /* Euclidean distances between 15 points of a 3 × 5 grid, spacing 0.25 */
    f = fopen(in_dir(3, "dist.csv"), "w");
    if (!f) exit(99);
    for (int i = 0; i < 15; i++)
        for (int j = 0; j < 15; j++)
            fprintf(f, "%.17g%c",
                    0.25 * hypot(i % 5 - j % 5, i / 5 - j / 5),
                    j == 14 ? '\n' : ',');
    fclose(f);
}

/* ---- one run of a command -------------------------------------------------- */

typedef struct outcome {
    int code;
    char err[2048];
    size_t err_lines;
} outcome;

static outcome run_command(char **argv)
{
    outcome o = {0};
    fflush(stdout);
    fflush(stderr);
    int saved_out = dup(1), saved_err = dup(2);
    int null = open("/dev/null", O_WRONLY);
    int errf = open(in_dir(7, "stderr.txt"), O_RDWR | O_CREAT | O_TRUNC,
                    0600);
    if (saved_out < 0 || saved_err < 0 || null < 0 || errf < 0) exit(99);
    dup2(null, 1);
    dup2(errf, 2);
    int argc = 0;
    while (argv[argc]) argc++;
    o.code = nervegap_main(argc, argv);
    fflush(stdout);
    fflush(stderr);
    dup2(saved_out, 1);
    dup2(saved_err, 2);
    close(saved_out);
    close(saved_err);
    close(null);
    ssize_t got = pread(errf, o.err, sizeof o.err - 1, 0);
    close(errf);
    o.err[got > 0 ? got : 0] = '\0';
    for (const char *c = o.err; *c; c++) o.err_lines += *c == '\n';
    return o;
}

/* Files in dir whose name contains part (the output and its temporaries). */
static int files_like(const char *part)
{
    DIR *d = opendir(dir);
    if (!d) exit(99);
    int count = 0;
    struct dirent *e;
    while ((e = readdir(d)) != NULL)
        if (strstr(e->d_name, part)) count++;
    closedir(d);
    return count;
}

/* ---- the paths --------------------------------------------------------------- */

typedef struct sweep_path {
    const char *name;
    const char *output; /* file name in dir the command writes, or NULL */
    char *argv[24];
} sweep_path;

/* Distinct failure messages of one path. */
enum { MESSAGES_MAX = 512 };
static char *messages[MESSAGES_MAX];
static size_t n_messages;
static int verbose;

static void note_message(const char *text)
{
    char buf[2048];
    size_t len = strlen(dir), w = 0;
    for (const char *c = text; *c && w + 1 < sizeof buf;) {
        if (strncmp(c, dir, len) == 0) {
            c += len;
            continue;
        }
        buf[w++] = *c++;
    }
    buf[w] = '\0';
    for (size_t i = 0; i < n_messages; i++)
        if (strcmp(messages[i], buf) == 0) return;
    if (n_messages < MESSAGES_MAX && (messages[n_messages] = strdup(buf)))
        n_messages++;
}

static void forget_messages(void)
{
    for (size_t i = 0; i < n_messages; i++) {
        if (verbose) printf("    %s", messages[i]);
        free(messages[i]);
    }
    n_messages = 0;
}

static int leak_check(void)
{
#ifdef HAVE_LSAN
    return __lsan_do_recoverable_leak_check();
#else
    return 0;
#endif
}

static int sweep(sweep_path *p, long stride)
{
    const char *out = p->output ? in_dir(6, p->output) : NULL;
    char part[64] = "";
    if (p->output) snprintf(part, sizeof part, "%s", p->output);

    ng_alloc_fail_after(-1);
    outcome ok = run_command(p->argv);
    long total = ng_alloc_fail_after(-1);
    if (ok.code != 0) {
        fprintf(stderr, "%s: fails without injection (exit %d): %s",
                p->name, ok.code, ok.err);
        return 1;
    }
    if (out && (access(out, F_OK) != 0 || files_like(part) != 1)) {
        fprintf(stderr, "%s: no output or stray files without injection\n",
                p->name);
        return 1;
    }
    if (out) unlink(out);
    if (leak_check()) {
        fprintf(stderr, "%s: leaks without injection\n", p->name);
        return 1;
    }

    long runs = 0, failed_runs = 0, tolerated = 0, bad = 0;
    for (long n = 1; n <= total; n++) {
        if (stride > 1 && (n - 1) % stride != 0 && n <= total - 16) continue;
        ng_alloc_fail_after(n - 1); /* n - 1 succeed, the n-th fails */
        outcome o = run_command(p->argv);
        long made = ng_alloc_fail_after(-1);
        runs++;
        const char *why = NULL;
        char prefix[64];
        snprintf(prefix, sizeof prefix, "nervegap %s: ", p->argv[1]);
        if (made < n)
            why = "the path made fewer allocations than counted";
        else if (o.code == 0) {
            tolerated++;
            if (out && access(out, F_OK) != 0) why = "exit 0 without output";
        } else {
            failed_runs++;
            if (o.code != 1) why = "exit code is not 1";
            else if (o.err_lines != 1 || strncmp(o.err, prefix,
                                                  strlen(prefix)) != 0)
                why = "stderr is not one 'nervegap CMD: ...' line";
            else if (!strstr(o.err, "out of memory"))
                why = "the message does not say 'out of memory'";
            else if (p->output && files_like(part) != 0)
                why = "a file is left at (or beside) the output path";
            note_message(o.err);
        }
        if (!why && leak_check()) why = "leak (see the report above)";
        if (why) {
            fprintf(stderr, "%s: allocation %ld of %ld: %s (exit %d): %s",
                    p->name, n, total, why, o.code, o.err);
            if (!strchr(o.err, '\n')) fputc('\n', stderr);
            if (++bad >= 10) break;
        }
        if (out) unlink(out);
    }
    printf("%-18s %5ld allocations, %5ld runs: %ld 'out of memory' (exit "
           "1, %zu distinct messages), %ld succeeded all the same%s\n",
           p->name, total, runs, failed_runs, n_messages, tolerated,
           bad ? "  FAILED" : "");
    forget_messages();
    return bad != 0;
}

int main(int argc, char **argv)
{
    long stride = 1;
    const char *only = NULL, *fixtures = NULL;
    for (int i = 1; i < argc; i++) {
        if (strcmp(argv[i], "--stride") == 0 && i + 1 < argc)
            stride = atol(argv[++i]);
        else if (strcmp(argv[i], "--only") == 0 && i + 1 < argc)
            only = argv[++i];
        else if (strcmp(argv[i], "--verbose") == 0)
            verbose = 1;
        else if (strcmp(argv[i], "--fixtures") == 0 && i + 1 < argc)
            fixtures = argv[++i];
        else {
            fprintf(stderr, "usage: alloc_sweep [--stride S] [--only PATH] "
                            "[--verbose] [--fixtures DIR]\n");
            return 2;
        }
    }
    const char *tmp = getenv("TMPDIR");
    snprintf(dir, sizeof dir, "%s/nervegap-alloc-XXXXXX", tmp ? tmp : "/tmp");
    if (!mkdtemp(dir)) return 99;
    write_inputs();
    const char *cloud = in_dir(0, "cloud.csv");
    const char *nodup = in_dir(1, "cloud_nodup.csv");
    const char *simplices = in_dir(2, "simplices.txt");
    const char *dist = in_dir(3, "dist.csv");
    char a_h5[512], b_h5[512];
    snprintf(a_h5, sizeof a_h5, "%s/a.h5", dir);
    snprintf(b_h5, sizeof b_h5, "%s/b.h5", dir);
    /* the two runs that `distance` compares, made without injection */
    char *make_a[] = {A("nervegap"), A("run"), A(nodup), A("--radius"),
                      A("knn:3"), A("--threads"), A("1"), A("--quiet"),
                      A("-o"), a_h5, NULL};
    char *make_b[] = {A("nervegap"), A("run"), A(nodup), A("--radius"),
                      A("dtm:4"), A("--law"), A("shifted"), A("--threads"),
                      A("1"), A("--quiet"), A("-o"), b_h5, NULL};
    if (run_command(make_a).code || run_command(make_b).code) {
        fprintf(stderr, "cannot make the runs to compare\n");
        return 1;
    }

    char out_run[512];
    snprintf(out_run, sizeof out_run, "%s/out_run.h5", dir);
    sweep_path paths[] = {
        {"radii knn merge", NULL,
         {A("nervegap"), A("radii"), A(cloud), A("--radius"), A("knn:5"),
          A("--merge-duplicates"), A("--threads"), A("1"), NULL}},
        {"radii kde", NULL,
         {A("nervegap"), A("radii"), A(nodup), A("--radius"), A("kde"),
          A("--threads"), A("1"), NULL}},
        {"values dtm", NULL,
         {A("nervegap"), A("values"), A(cloud), A("--radius"), A("dtm:3"),
          A("--simplices"), A(simplices), A("--threads"), A("1"), NULL}},
        {"run knn slices", "out_run.h5",
         {A("nervegap"), A("run"), A(nodup), A("--radius"), A("knn:3"),
          A("--slices"), A("factor:1.05,1.2"), A("--max-degree"), A("2"),
          A("--grid"), A("16"), A("--threads"), A("1"), A("--quiet"),
          A("-o"), out_run, NULL}},
        {"run merge power", "out_run.h5",
         {A("nervegap"), A("run"), A(cloud), A("--radius"), A("knn:4"),
          A("--merge-duplicates"), A("--law"), A("power"), A("--slices"),
          A("shift:0.1"), A("--threads"), A("1"), A("--quiet"), A("-o"),
          out_run, NULL}},
        {"run distances", "out_run.h5",
         {A("nervegap"), A("run"), A("--distances"), A(dist), A("--radius"),
          A("dtm:3"), A("--law"), A("shifted"), A("--scale-limit"),
          A("0.8"), A("--threads"), A("1"), A("--quiet"), A("-o"), out_run,
          NULL}},
        {"distance", NULL,
         {A("nervegap"), A("distance"), a_h5, b_h5, NULL}},
    };
    char npy[512], h5[512];
    snprintf(npy, sizeof npy, "%s/good/same_f4.npy", fixtures ? fixtures : "");
    snprintf(h5, sizeof h5, "%s/good/same.h5:/group/points", fixtures ? fixtures : "");
    sweep_path readers[] = {
        {"radii npy dtm", NULL,
         {A("nervegap"), A("radii"), A(npy), A("--radius"), A("dtm:4"),
          A("--threads"), A("1"), NULL}},
        {"radii h5 knn", NULL,
         {A("nervegap"), A("radii"), A(h5), A("--radius"), A("knn:2"),
          A("--threads"), A("1"), NULL}},
    };
    int bad = 0;
    for (size_t i = 0; i < sizeof paths / sizeof paths[0]; i++) {
        if (only && !strstr(paths[i].name, only)) continue;
        bad |= sweep(&paths[i], stride);
    }
    for (size_t i = 0; fixtures && i < sizeof readers / sizeof readers[0]; i++) {
        if (only && !strstr(readers[i].name, only)) continue;
        bad |= sweep(&readers[i], stride);
    }
    unlink(a_h5);
    unlink(b_h5);
    unlink(cloud);
    unlink(nodup);
    unlink(simplices);
    unlink(dist);
    free_args();
    unlink(in_dir(7, "stderr.txt"));
    rmdir(dir);
    printf("%s\n", bad ? "alloc_sweep: FAILED" : "alloc_sweep: every path passed");
    return bad;
}
