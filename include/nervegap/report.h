/* report.h — pictures of a run, or of two runs side by side, as one SVG
 * document or one self-contained HTML page (`nervegap plot`).
 *
 * A report of one results file has, in order: a summary; the Čech and
 * Rips barcodes per degree side by side (longest bars first, bars alive at
 * the scale limit marked with an arrow, the shortest summarised in words
 * when there are more than max_bars); both persistence diagrams overlaid;
 * the per-scale curves (Betti numbers of both, the simplices Rips fills
 * that Čech does not, the max and 90th percentile of the enlargement
 * factor); the Hilbert function of the slices as a heat map (when the run
 * has slices); a histogram of the base radii; and, for points in the
 * plane, the points with their balls at one scale, coloured by whether
 * they are a vertex of an unfilled triangle (unfilled.h).
 * A comparison of two files draws their barcodes, diagrams, curves and
 * radii on shared axes and gives the bottleneck distance between them.
 *
 * Every section is an SVG group (and in HTML a <section>) whose id names
 * it: summary, barcodes, diagrams, curves, hilbert, radii, balls. Axes
 * carry their range in data-min / data-max attributes.
 */
#ifndef NERVEGAP_REPORT_H
#define NERVEGAP_REPORT_H

#include "nervegap/common.h"
#include "nervegap/results.h"

typedef enum ng_report_format {
    NG_REPORT_SVG = 0,
    NG_REPORT_HTML = 1
} ng_report_format;

#define NG_REPORT_MAX_BARS 2000

typedef struct ng_report_options {
    ng_report_format format;
    size_t max_bars;      /* bars drawn per barcode, longest first (40);
                             1..NG_REPORT_MAX_BARS */
    double at;            /* scale of the ball picture; NaN: where the
                             Čech and Rips Betti-1 numbers differ most */
    const char *points;   /* points of the ball picture; NULL: the input
                             recorded in the file, if unchanged */
    size_t max_points;    /* larger clouds get no ball picture (20 000) */
    int threads;          /* ≤ 0: the OpenMP default */
} ng_report_options;

/* The defaults above: SVG, 40 bars, the default scale, the recorded
 * input, 20 000 points. */
NG_API void ng_report_options_init(ng_report_options *opt);

/* A drawn report. */
typedef struct ng_report {
    char *text;           /* the document, NUL-terminated */
    size_t length;        /* bytes of text */
    double at;            /* scale of the ball picture; NaN when none */
    int n_notes;
    char **notes;         /* what was left out and why, one line each */
} ng_report;

/* Draws the report of run a, or the comparison of runs a and b (b not
 * NULL; the ball picture and options at and points are then refused).
 * Reading the points of the ball picture: from opt->points, or from the
 * input path recorded in a, checked against the recorded SHA-256; when
 * that file is missing or changed the picture is left out and a note says
 * why (a note also says when opt->points differs from the recorded input).
 * On success *out owns the report (free with ng_report_free). On failure
 * *out is NULL: NG_ERR_USAGE naming the option (at outside [0, T] or
 * not a number, max_bars out of range, options that need one file),
 * NG_ERR_INPUT naming opt->points when it cannot be read or does not
 * match the run's points (count, dimension), NG_ERR_NOMEM. */
NG_API int ng_report_build(const ng_results *a, const ng_results *b,
                           const ng_report_options *opt, ng_report **out,
                           ng_error *err);

/* Writes the report to path: under a temporary name in the same
 * directory, renamed onto path when complete. NG_ERR_USAGE naming the
 * path when it cannot be created (a bad -o), NG_ERR_IO when writing
 * fails; nothing is left at path then. */
NG_API int ng_report_save(const ng_report *r, const char *path,
                          ng_error *err);

/* Frees a report. Accepts NULL. */
NG_API void ng_report_free(ng_report *r);

#endif
