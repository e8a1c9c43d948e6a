/* outfile.c — the temporary file beside an output path (outfile.h). */
#include "outfile.h"

#include "alloc.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

int ng_outfile_create(const char *path, const char *example, char **temp,
                      int *fd, ng_error *err)
{
    *temp = NULL;
    *fd = -1;
    const char *slash = strrchr(path, '/');
    size_t dir_len = slash ? (size_t)(slash - path) + 1 : 0;
    const char *base = path + dir_len;
    if (example && *base == '\0')
        return ng_error_set(err, NG_ERR_USAGE,
                            "-o %s: the output path names a directory; give "
                            "a file name such as %s%s", path, path, example);
    size_t size = strlen(path) + 20;
    char *name = ng_malloc(size, 1);
    if (name == NULL) return ng_error_set(err, NG_ERR_NOMEM, "out of memory");
    /* DIR/.BASE.partial-XXXXXX */
    snprintf(name, size, "%.*s.%s.partial-XXXXXX", (int)dir_len, path, base);
    int f = mkstemp(name);
    if (f < 0) {
        int e = errno;
        ng_free(name);
        return ng_error_set(err, NG_ERR_USAGE,
                            "-o %s: cannot create the output file there: %s",
                            path, strerror(e));
    }
    /* mkstemp makes the file private; give it the usual permissions */
    mode_t mask = umask(0);
    umask(mask);
    (void)fchmod(f, 0666 & ~mask); /* a failure leaves it private: usable */
    *temp = name;
    *fd = f;
    return NG_OK;
}
