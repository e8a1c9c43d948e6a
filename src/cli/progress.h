/* progress.h — progress of a long command on stderr, with the wall time of
 * each stage.
 *
 * Stages follow one another: a stage starts where the previous one ended
 * (the first at progress_init), so the stage times add up to the run's
 * wall time. On a terminal the current stage is one line redrawn in place
 * with its percentage and an estimate of the time left; otherwise (a batch
 * log) one plain line is printed when each stage ends. --quiet prints
 * nothing. (The library records the stage times in the results file.)
 */
#ifndef NERVEGAP_CLI_PROGRESS_H
#define NERVEGAP_CLI_PROGRESS_H

#include <stdio.h>
#include <time.h>

#define PROGRESS_NAME_MAX 32

typedef struct progress {
    const char *command;        /* "run": lines start "nervegap run: " */
    int quiet, tty;
    int write_pause_ms;         /* test hook, see progress_init */
    struct timespec start;      /* progress_init */
    struct timespec stage_start;
    struct timespec last_draw;
    char stage[PROGRESS_NAME_MAX]; /* the current or last stage */
    int open;                   /* the stage has not ended */
    int drawn;                  /* a partial line is on the terminal */
} progress;

/* Starts the clock; tty from isatty(stderr). */
void progress_init(progress *p, const char *command, int quiet);

/* An ng_progress_fn (ctx = the progress): fraction 0..1 of stage. A new
 * stage name ends the current stage; fraction ≥ 1 ends it; a repeated end
 * is ignored. */
void progress_report(const char *stage, double fraction, void *ctx);

/* Ends a partial terminal line, so that a message can follow. */
void progress_break(progress *p);

/* Seconds since progress_init. */
double progress_elapsed(const progress *p);

#endif
