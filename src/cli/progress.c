/* progress.c — stage progress on stderr (progress.h). */
#include "progress.h"

#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define REDRAW_SECONDS 0.1

static double seconds_between(const struct timespec *a,
                              const struct timespec *b)
{
    return (double)(b->tv_sec - a->tv_sec) +
           1e-9 * (double)(b->tv_nsec - a->tv_nsec);
}

void progress_init(progress *p, const char *command, int quiet)
{
    memset(p, 0, sizeof *p);
    /* Test hook: NG_TEST_WRITE_PAUSE_MS slows the writing stage down (a
     * pause at each of its progress reports), so that tests can kill a run
     * in the middle of its write deterministically. */
    const char *pause = getenv("NG_TEST_WRITE_PAUSE_MS");
    if (pause) p->write_pause_ms = atoi(pause);
    p->command = command;
    p->quiet = quiet;
    p->tty = isatty(STDERR_FILENO);
    clock_gettime(CLOCK_MONOTONIC, &p->start);
    p->stage_start = p->start;
}

double progress_elapsed(const progress *p)
{
    struct timespec now;
    clock_gettime(CLOCK_MONOTONIC, &now);
    return seconds_between(&p->start, &now);
}

void progress_break(progress *p)
{
    if (p->drawn) fputs("\r\033[K", stderr);
    p->drawn = 0;
}

static void finish(progress *p, const struct timespec *now)
{
    double s = seconds_between(&p->stage_start, now);
    p->open = 0;
    p->stage_start = *now;
    if (p->quiet) return;
    progress_break(p);
    fprintf(stderr, "nervegap %s: %-12s done in %.2f s\n", p->command,
            p->stage, s);
}

/* "12 s", "3 min 20 s", "1 h 05 min" */
static void duration_text(double s, char *buf, size_t size)
{
    long t = (long)(s + 0.5);
    if (t < 60) snprintf(buf, size, "%ld s", t);
    else if (t < 3600) snprintf(buf, size, "%ld min %02ld s", t / 60, t % 60);
    else snprintf(buf, size, "%ld h %02ld min", t / 3600, t / 60 % 60);
}

void progress_report(const char *stage, double fraction, void *ctx)
{
    progress *p = ctx;
    struct timespec now;
    clock_gettime(CLOCK_MONOTONIC, &now);
    if (strncmp(stage, p->stage, sizeof p->stage) != 0) {
        if (p->open) finish(p, &now);
        snprintf(p->stage, sizeof p->stage, "%s", stage);
        p->open = 1;
        p->last_draw.tv_sec = 0;
        p->last_draw.tv_nsec = 0;
    } else if (!p->open) {
        return; /* a repeated end, or a report after the end */
    }
    if (fraction >= 1.0) {
        finish(p, &now);
        return;
    }
    if (p->write_pause_ms > 0 && strcmp(stage, "writing") == 0) {
        struct timespec d = {p->write_pause_ms / 1000,
                             (long)(p->write_pause_ms % 1000) * 1000000L};
        nanosleep(&d, NULL);
    }
    if (p->quiet || !p->tty ||
        seconds_between(&p->last_draw, &now) < REDRAW_SECONDS)
        return;
    p->last_draw = now;
    double spent = seconds_between(&p->stage_start, &now);
    char eta[48] = "";
    if (fraction >= 0.01 && spent >= 1.0) {
        char left[32];
        duration_text(spent * (1.0 - fraction) / fraction, left, sizeof left);
        snprintf(eta, sizeof eta, "  about %s left", left);
    }
    fprintf(stderr, "\r\033[Knervegap %s: %-12s %3d%%%s", p->command, stage,
            (int)(100.0 * (fraction > 0.0 ? fraction : 0.0)), eta);
    fflush(stderr);
    p->drawn = 1;
}
