/* report_internal.h — what the files of the report share (private):
 * report.c assembles the document (summary, sections, SVG or HTML) and
 * writes it; report_plots.c draws the barcodes, diagrams, curves, heat
 * maps and histograms; report_balls.c reads the points again and draws
 * the balls of the plane picture.
 *
 * Every section is drawn into its own buffer with its top-left corner at
 * (0, 0) and REPORT_CONTENT pixels wide; report.c places it, under its
 * heading, in the SVG document or in an HTML <section>.
 */
#ifndef NERVEGAP_REPORT_INTERNAL_H
#define NERVEGAP_REPORT_INTERNAL_H

#include "nervegap/report.h"
#include "nervegap/unfilled.h"
#include "svg.h"

#define REPORT_WIDTH 1240.0
#define REPORT_MARGIN 20.0
#define REPORT_CONTENT (REPORT_WIDTH - 2 * REPORT_MARGIN)
#define REPORT_MAX_SECTIONS 12
#define REPORT_TEXT 256

typedef struct report_section {
    const char *id;           /* summary, barcodes, … */
    char title[REPORT_TEXT];  /* the heading */
    ng_svg body;
    double height;            /* of the body, pixels */
} report_section;

/* The ball picture's data, prepared before the sections are drawn. */
typedef struct report_balls {
    int ready;                /* 1: the picture is drawn */
    char reason[2 * NG_ERROR_MESSAGE_MAX]; /* why it is left out (not ready) */
    double at;                /* the scale t */
    char at_rule[REPORT_TEXT];/* how t was chosen, for the figure */
    size_t n;
    double *xy;               /* n × 2 points (owned) */
    char *names[2];           /* coordinate names from a header, or NULL */
    char *points_file;        /* the file the points came from */
    int metric;               /* ng_metric */
    ng_unfilled unfilled;
} report_balls;

typedef struct report_ctx {
    const ng_results *run[2];
    int n_runs;               /* 1: a report, 2: a comparison */
    const ng_report_options *opt;
    report_section section[REPORT_MAX_SECTIONS];
    int n_sections;
    char **notes;
    int n_notes;
    int failed;               /* an allocation failed */
    report_balls balls;
    ng_error *err;
} report_ctx;

/* A new section (NULL after an allocation failure or when full). */
report_section *report_section_add(report_ctx *c, const char *id,
                                   const char *title);

/* Adds a note (also shown in the summary). */
void report_note(report_ctx *c, const char *fmt, ...) NG_PRINTF(2, 3);

/* The label of the scale axis with its unit, e.g. "scale t (data units)". */
const char *report_scale_label(const ng_results *r);

/* Sections drawn by report_plots.c, for c->n_runs runs. */
void report_barcodes(report_ctx *c);
void report_diagrams(report_ctx *c);
void report_curves(report_ctx *c);
void report_hilbert(report_ctx *c);
void report_radii(report_ctx *c);

/* report_balls.c: chooses the scale, reads the points and finds the
 * unfilled triangles (c->balls); a missing or changed input only leaves
 * the picture out, with the reason. Fails (NG_ERR_INPUT naming the file)
 * only for opt->points that cannot be read or do not fit the run. */
int report_balls_prepare(report_ctx *c);
void report_balls_draw(report_ctx *c);
void report_balls_free(report_balls *b);

#endif
