/* fuzz_common.c — temporary files and status checks of the fuzz targets
 * (fuzz_common.h). */
#include "fuzz_common.h"

#include "nervegap/cloud.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

static char dir[256];
static char path[512];

static void remove_dir(void)
{
    if (path[0]) unlink(path);
    if (dir[0]) rmdir(dir);
}

const char *fuzz_dir(void)
{
    if (dir[0]) return dir;
    const char *base = access("/dev/shm", W_OK) == 0 ? "/dev/shm" : "/tmp";
    snprintf(dir, sizeof dir, "%s/nervegap-fuzz-XXXXXX", base);
    if (!mkdtemp(dir)) fuzz_fail("cannot make a temporary directory");
    atexit(remove_dir);
    return dir;
}

const char *fuzz_write_file(const char *name, const uint8_t *data,
                            size_t size)
{
    if (path[0]) unlink(path);
    snprintf(path, sizeof path, "%s/%s", fuzz_dir(), name);
    FILE *f = fopen(path, "wb");
    if (!f || (size && fwrite(data, 1, size, f) != size) || fclose(f) != 0)
        fuzz_fail("cannot write the input file");
    return path;
}

void fuzz_check_status(int status, const ng_error *err)
{
    if (status == NG_OK) {
        if (err->code != NG_OK) fuzz_fail("NG_OK returned with an error set");
        return;
    }
    if (status < NG_ERR_BUDGET || status > NG_ERR_USAGE)
        fuzz_fail("a status that is no NG_ERR_* code");
    if (err->code != status) fuzz_fail("status and err->code differ");
    if (err->message[0] == '\0') fuzz_fail("an error without a message");
    for (const char *c = err->message; *c; c++)
        if (((unsigned char)*c < 0x20 && *c != '\t') || *c == 0x7f)
            fuzz_fail("an error message with a control character (one "
                      "line, no cursor moves)");
}

void fuzz_fail(const char *what)
{
    fprintf(stderr, "fuzz target: %s\n", what);
    abort();
}

static void check_cloud(const ng_cloud *c, int as_distances)
{
    if (!c) fuzz_fail("NG_OK without a cloud");
    if (c->n < 2) fuzz_fail("a cloud of fewer than 2 points");
    if (!c->source) fuzz_fail("a cloud without its source");
    if (as_distances) {
        if (c->dim != 0 || c->coords || !c->dist || c->names)
            fuzz_fail("a distance cloud with coordinates or no matrix");
        for (size_t i = 0; i < c->n; i++)
            for (size_t j = 0; j < c->n; j++) {
                double d = c->dist[i * c->n + j];
                if (!isfinite(d) || d < 0.0 || d != c->dist[j * c->n + i] ||
                    (i == j && d != 0.0))
                    fuzz_fail("a distance matrix entry breaks cloud.h");
            }
        return;
    }
    if (c->dim < 1 || !c->coords || c->dist)
        fuzz_fail("a coordinate cloud without coordinates");
    for (size_t i = 0; i < c->n * c->dim; i++)
        if (!isfinite(c->coords[i])) fuzz_fail("a coordinate is not finite");
    if (c->names)
        for (size_t j = 0; j < c->dim; j++)
            if (!c->names[j]) fuzz_fail("a header name is missing");
}

void fuzz_read_cloud(const char *file, int as_distances)
{
    ng_cloud *c = NULL;
    ng_error err;
    ng_error_clear(&err);
    int rc = as_distances ? ng_cloud_read_distances(file, &c, &err)
                          : ng_cloud_read(file, &c, &err);
    fuzz_check_status(rc, &err);
    if (rc == NG_OK) check_cloud(c, as_distances);
    else if (c) fuzz_fail("a cloud handed out with an error");
    ng_cloud_free(c);
}
