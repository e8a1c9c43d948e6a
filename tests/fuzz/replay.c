/* replay.c — runs a fuzz target over files, without libFuzzer: each
 * argument is a file or a directory whose regular files are read (one
 * level, in name order). This is how the default test suite replays the
 * committed corpus and every crash input found so far with any compiler
 * (and under the sanitizers). Exit 0 when every input ran (a broken
 * promise aborts). */
#include "fuzz_common.h"

#include <dirent.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

static int run_file(const char *path)
{
    FILE *f = fopen(path, "rb");
    if (!f) {
        fprintf(stderr, "replay: cannot open %s\n", path);
        return 1;
    }
    size_t cap = 4096, len = 0;
    unsigned char *buf = malloc(cap);
    size_t got;
    while (buf && (got = fread(buf + len, 1, cap - len, f)) > 0) {
        len += got;
        if (len == cap) {
            unsigned char *more = realloc(buf, cap *= 2);
            if (!more) free(buf);
            buf = more;
        }
    }
    fclose(f);
    if (!buf) {
        fprintf(stderr, "replay: out of memory for %s\n", path);
        return 1;
    }
    LLVMFuzzerTestOneInput(buf, len);
    free(buf);
    return 0;
}

static int by_name(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

static int run_dir(const char *dir, size_t *count)
{
    DIR *d = opendir(dir);
    if (!d) {
        fprintf(stderr, "replay: cannot open directory %s\n", dir);
        return 1;
    }
    char **names = NULL;
    size_t n = 0, cap = 0;
    int bad = 0;
    struct dirent *e;
    while ((e = readdir(d)) != NULL) {
        if (e->d_name[0] == '.') continue;
        if (n == cap) {
            char **more = realloc(names, (cap = cap ? 2 * cap : 64) *
                                             sizeof *names);
            if (!more) {
                bad = 1;
                break;
            }
            names = more;
        }
        size_t len = strlen(dir) + strlen(e->d_name) + 2;
        names[n] = malloc(len);
        if (!names[n]) {
            bad = 1;
            break;
        }
        snprintf(names[n++], len, "%s/%s", dir, e->d_name);
    }
    closedir(d);
    if (names) qsort(names, n, sizeof *names, by_name);
    for (size_t i = 0; i < n; i++) {
        struct stat sb;
        if (!bad && stat(names[i], &sb) == 0 && S_ISREG(sb.st_mode)) {
            bad |= run_file(names[i]);
            ++*count;
        }
        free(names[i]);
    }
    free(names);
    return bad;
}

int main(int argc, char **argv)
{
    size_t count = 0;
    int bad = 0;
    for (int i = 1; i < argc; i++) {
        struct stat sb;
        if (stat(argv[i], &sb) != 0) {
            fprintf(stderr, "replay: no such file or directory %s\n",
                    argv[i]);
            bad = 1;
        } else if (S_ISDIR(sb.st_mode)) {
            bad |= run_dir(argv[i], &count);
        } else {
            bad |= run_file(argv[i]);
            count++;
        }
    }
    printf("replay: %zu inputs\n", count);
    return bad || count == 0;
}
