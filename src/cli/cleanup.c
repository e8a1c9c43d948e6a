/* cleanup.c — the signal handlers of cleanup.h. */
#include "cleanup.h"

#include <limits.h>
#include <signal.h>
#include <stdio.h>
#include <unistd.h>

/* A copy of the path (the library's copy is freed on commit), armed only
 * while the file exists. */
static char temp_path[PATH_MAX];
static volatile sig_atomic_t armed = 0;

static void on_signal(int sig)
{
    if (armed) unlink(temp_path);
    _exit(128 + sig);
}

void cleanup_on_signal(const char *path)
{
    static int installed = 0;
    armed = 0;
    if (path == NULL) return;
    snprintf(temp_path, sizeof temp_path, "%s", path);
    armed = 1;
    if (!installed) {
        signal(SIGINT, on_signal);
        signal(SIGTERM, on_signal);
        installed = 1;
    }
}
