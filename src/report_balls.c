/* report_balls.c — the ball picture of a report: for a run on points in
 * the plane, the points with their balls of radius r_i(t) at one scale t,
 * the triangles that Rips fills and Čech does not at t (unfilled.h), and
 * their vertices in their own colour.
 *
 * The results file keeps the radii but not the points: they are read
 * again from the input path it records (or from --points), and the file
 * is checked against the recorded SHA-256 so that the picture never shows
 * other points than the run's. A column:J rule or merged duplicates are
 * replayed with the recorded scheme (ng_radii_compute) to get the run's
 * points; the radii drawn are always the recorded ones.
 */
#include "report_internal.h"

#include "alloc.h"
#include "nervegap/cloud.h"
#include "nervegap/law.h"
#include "nervegap/metric.h"
#include "nervegap/radius.h"
#include "nervegap/sha256.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

void report_balls_free(report_balls *b)
{
    ng_free(b->xy);
    ng_free(b->names[0]);
    ng_free(b->names[1]);
    ng_free(b->points_file);
    ng_unfilled_free(&b->unfilled);
    memset(b, 0, sizeof *b);
}

/* The default scale: the grid scale where the Čech and Rips Betti-1
 * numbers differ most (the first such), else half the scale limit. */
static void default_scale(const ng_results *r, report_balls *b)
{
    if (r->has_grid && r->max_degree >= 1) {
        size_t w = (size_t)r->max_degree + 1, best = 0;
        int64_t most = 0;
        for (size_t i = 0; i < r->grid.G; i++) {
            int64_t d = r->grid.betti_cech[i * w + 1] -
                        r->grid.betti_rips[i * w + 1];
            if (d < 0) d = -d;
            if (d > most) {
                most = d;
                best = i;
            }
        }
        if (most > 0) {
            b->at = r->grid.scale[best];
            snprintf(b->at_rule, sizeof b->at_rule,
                     "t = %.4g, where the Čech and Rips Betti-1 numbers "
                     "differ most (Čech %lld, Rips %lld loops); choose "
                     "another t with --at",
                     b->at, (long long)r->grid.betti_cech[best * w + 1],
                     (long long)r->grid.betti_rips[best * w + 1]);
            return;
        }
    }
    b->at = r->scale_limit / 2;
    snprintf(b->at_rule, sizeof b->at_rule,
             "t = %.4g, half the scale limit (the Čech and Rips Betti-1 "
             "numbers do not differ on the grid); choose another t with "
             "--at", b->at);
}

/* Reads the points (NG_OK with *cloud NULL and b->reason set when the
 * recorded input cannot be used; an error only for opt->points). */
static int read_points(report_ctx *c, ng_cloud **cloud)
{
    report_balls *b = &c->balls;
    const ng_results *r = c->run[0];
    const char *given = c->opt->points;
    const char *path = given ? given : r->source;
    ng_error e;
    ng_error_clear(&e);
    *cloud = NULL;
    if (path == NULL || path[0] == '\0') {
        snprintf(b->reason, sizeof b->reason,
                 "the file records no input path; give --points FILE");
        return NG_OK;
    }
    if (ng_cloud_read(path, cloud, &e) != NG_OK) {
        if (e.code == NG_ERR_NOMEM)
            return ng_error_set(c->err, NG_ERR_NOMEM, "%s", e.message);
        if (given)
            return ng_error_set(c->err, NG_ERR_INPUT, "--points: %s",
                                e.message);
        snprintf(b->reason, sizeof b->reason,
                 "the recorded input %s cannot be read (%s); give "
                 "--points FILE", path, e.message);
        return NG_OK;
    }
    const char *want = r->input_sha256;
    if (want == NULL || want[0] == '\0') {
        report_note(c, "ball picture: the points of %s are not checked: the "
                       "results file records no SHA-256 of its input",
                    (*cloud)->file);
        return NG_OK;
    }
    char hex[NG_SHA256_HEX + 1];
    if (ng_sha256_file((*cloud)->file, hex, NULL, &e) != NG_OK) {
        ng_cloud_free(*cloud);
        *cloud = NULL;
        if (given)
            return ng_error_set(c->err, NG_ERR_INPUT, "--points: %s",
                                e.message);
        snprintf(b->reason, sizeof b->reason, "%s", e.message);
        return NG_OK;
    }
    if (strcmp(hex, want) != 0) {
        if (given) {
            report_note(c, "ball picture: --points %s differs from the "
                           "input recorded in %s (SHA-256 %.12s…, recorded "
                           "%.12s…); drawn because it was asked for",
                        path, r->path, hex, want);
            return NG_OK;
        }
        ng_cloud_free(*cloud);
        *cloud = NULL;
        snprintf(b->reason, sizeof b->reason,
                 "the input %s has changed since the run (SHA-256 %.12s…, "
                 "recorded %.12s…); give the original points with "
                 "--points FILE", path, hex, want);
    }
    return NG_OK;
}

/* Brings the cloud to the run's points: takes out a radius column and
 * merges duplicates as the run did. NG_OK with b->reason set when that is
 * not possible; an error for opt->points that do not fit. */
static int prepare_points(report_ctx *c, ng_cloud *cloud)
{
    report_balls *b = &c->balls;
    const ng_results *r = c->run[0];
    ng_error e;
    ng_error_clear(&e);
    if (cloud->n != r->n_points || cloud->dim != r->ambient_dim) {
        ng_scheme scheme;
        ng_radii radii = {0};
        ng_scheme_init(&scheme);
        scheme.merge_duplicates = cloud->n > r->n_points;
        scheme.raw_radius = 1; /* the radii are not used */
        if (ng_metric_parse(r->metric, &scheme.metric, &e) == NG_OK &&
            ng_radius_parse(r->radius_rule, &scheme.rule, &e) == NG_OK &&
            ng_law_parse(r->law, &scheme.law, &e) == NG_OK)
            ng_radii_compute(cloud, &scheme, c->opt->threads, &radii, &e);
        ng_radii_free(&radii);
        if (e.code == NG_ERR_NOMEM)
            return ng_error_set(c->err, NG_ERR_NOMEM, "%s", e.message);
    }
    if (e.code == NG_OK && cloud->n == r->n_points && cloud->dim == 2)
        return NG_OK;
    char why[NG_ERROR_MESSAGE_MAX];
    if (e.code != NG_OK)
        snprintf(why, sizeof why, "%s", e.message);
    else
        snprintf(why, sizeof why, "%s has %zu points in dimension %zu, the "
                 "run %zu points in dimension %zu", cloud->source, cloud->n,
                 cloud->dim, r->n_points, r->ambient_dim);
    if (c->opt->points)
        return ng_error_set(c->err, NG_ERR_INPUT,
                            "--points: %s: not the points of %s: %s",
                            c->opt->points, r->path, why);
    snprintf(b->reason, sizeof b->reason, "%s", why);
    return NG_OK;
}

int report_balls_prepare(report_ctx *c)
{
    report_balls *b = &c->balls;
    const ng_results *r = c->run[0];
    b->at = NAN;
    if (c->n_runs != 1) return NG_OK;
    if (isnan(c->opt->at)) {
        default_scale(r, b);
    } else {
        b->at = c->opt->at;
        snprintf(b->at_rule, sizeof b->at_rule, "t = %.6g (--at)", b->at);
    }
    if (r->ambient_dim != 2) {
        if (r->ambient_dim == 0)
            snprintf(b->reason, sizeof b->reason,
                     "it needs points in the plane; this run's input is a "
                     "distance matrix");
        else
            snprintf(b->reason, sizeof b->reason,
                     "it needs points in the plane; this input has "
                     "dimension %zu", r->ambient_dim);
        return NG_OK;
    }
    if (r->n_points > c->opt->max_points) {
        snprintf(b->reason, sizeof b->reason,
                 "%zu points are more than the %zu that the picture draws",
                 r->n_points, c->opt->max_points);
        return NG_OK;
    }
    ng_cloud *cloud = NULL;
    int status = read_points(c, &cloud);
    if (status == NG_OK && cloud) status = prepare_points(c, cloud);
    if (status != NG_OK || cloud == NULL || b->reason[0]) {
        ng_cloud_free(cloud);
        return status;
    }
    b->n = cloud->n;
    b->xy = ng_malloc(2 * cloud->n, sizeof *b->xy);
    b->points_file = ng_strdup(cloud->file);
    for (int j = 0; j < 2 && cloud->names; j++)
        b->names[j] = ng_strdup(cloud->names[j]);
    if (b->xy == NULL || b->points_file == NULL ||
        (cloud->names && (!b->names[0] || !b->names[1]))) {
        ng_cloud_free(cloud);
        return ng_error_set(c->err, NG_ERR_NOMEM,
                            "ball picture: out of memory");
    }
    memcpy(b->xy, cloud->coords, 2 * cloud->n * sizeof *b->xy);
    ng_cloud_free(cloud);

    ng_error e;
    ng_error_clear(&e);
    ng_space space = {0};
    space.n = b->n;
    space.dim = 2;
    space.coords = b->xy;
    space.rho = r->radius;
    if (ng_metric_parse(r->metric, &space.metric, &e) != NG_OK ||
        ng_law_parse(r->law, &space.law, &e) != NG_OK ||
        ng_space_check(&space, &e) != NG_OK ||
        ng_unfilled_compute(&space, b->at, NG_UNFILLED_DEFAULT_MAX,
                            c->opt->threads, &b->unfilled, &e) != NG_OK) {
        if (e.code == NG_ERR_NOMEM)
            return ng_error_set(c->err, NG_ERR_NOMEM, "%s", e.message);
        snprintf(b->reason, sizeof b->reason, "%s", e.message);
        return NG_OK;
    }
    b->metric = (int)space.metric;
    b->ready = 1;
    return NG_OK;
}

/* ---- drawing ---- */

#define BALL_MAX_TRIANGLES 20000
#define LINE_H 16.0

/* The ball of radius rad (pixels) around (x, y) in the metric's shape. */
static void ball(ng_svg *g, int metric, double x, double y, double rad,
                 const ng_svg_style *st)
{
    if (metric == NG_METRIC_CHEBYSHEV) {
        ng_svg_rect(g, x - rad, y - rad, 2 * rad, 2 * rad, st);
    } else if (metric == NG_METRIC_MANHATTAN) {
        double px[4] = {x - rad, x, x + rad, x}, py[4] = {y, y - rad, y,
                                                           y + rad};
        ng_svg_polyline(g, px, py, 4, 1, st);
    } else {
        ng_svg_circle(g, x, y, rad, st);
    }
}

static void axis_name(const report_balls *b, int j, char *buf, size_t size)
{
    if (b->names[j] && b->names[j][0])
        snprintf(buf, size, "%s (data units)", b->names[j]);
    else
        snprintf(buf, size, "coordinate %d (data units)", j + 1);
}

void report_balls_draw(report_ctx *c)
{
    report_balls *b = &c->balls;
    const ng_results *r = c->run[0];
    if (!b->ready) return;
    char title[REPORT_TEXT];
    snprintf(title, sizeof title, "Balls at t = %.4g: where Rips fills "
             "triangles that Čech leaves open", b->at);
    report_section *sec = report_section_add(c, "balls", title);
    if (sec == NULL) return;
    ng_svg *g = &sec->body;
    ng_law law = NG_LAW_SCALED;
    ng_law_parse(r->law, &law, NULL);

    /* equal units on both axes: the bounding box of the points, padded */
    double x0 = INFINITY, x1 = -INFINITY, y0 = INFINITY, y1 = -INFINITY;
    for (size_t i = 0; i < b->n; i++) {
        x0 = fmin(x0, b->xy[2 * i]);
        x1 = fmax(x1, b->xy[2 * i]);
        y0 = fmin(y0, b->xy[2 * i + 1]);
        y1 = fmax(y1, b->xy[2 * i + 1]);
    }
    double span = fmax(fmax(x1 - x0, y1 - y0), 1e-12), pad = span * 0.05;
    x0 -= pad;
    x1 += pad;
    y0 -= pad;
    y1 += pad;
    double maxw = 760, maxh = 640;
    double scale = fmin(maxw / (x1 - x0), maxh / (y1 - y0));
    double pw = (x1 - x0) * scale, ph = (y1 - y0) * scale;
    const ng_svg_font note = {12, NG_SVG_START, 0, NULL, 0, "plot-note"};
    ng_svg_text(g, 0, 14, b->at_rule, &note);
    char line[REPORT_TEXT * 2];
    snprintf(line, sizeof line, "points read from %s%s", b->points_file,
             r->input_sha256 && r->input_sha256[0]
                 ? " (SHA-256 checked against the run)"
                 : "");
    ng_svg_text(g, 0, 30, line, &note);

    ng_svg_group_begin(g, "balls-plot", "plot balls",
                       "points, balls and unfilled triangles", 0, 40);
    ng_svg_plot p;
    ng_svg_plot_init(&p, 70, 10, pw, ph, x0, x1, 0, y0, y1, 0);
    ng_svg_printf(g, "<defs><clipPath id=\"balls-clip\"><rect x=\"%.2f\" "
                     "y=\"%.2f\" width=\"%.2f\" height=\"%.2f\"/></clipPath>"
                     "</defs>\n", p.x, p.y, p.w, p.h);
    char xl[96], yl[96];
    axis_name(b, 0, xl, sizeof xl);
    axis_name(b, 1, yl, sizeof yl);
    ng_svg_plot_axes(g, &p, xl, yl);
    const ng_unfilled *u = &b->unfilled;
    ng_svg_printf(g, "<g clip-path=\"url(#balls-clip)\" data-at=\"%.17g\">\n",
                  b->at);
    const ng_svg_style ball_st = {NULL, NG_SVG_BALL, 0, 0.3, NULL};
    size_t absent = 0;
    ng_svg_printf(g, "<g class=\"balls\">\n");
    for (size_t i = 0; i < b->n; i++) {
        if (ng_law_birth(law, r->radius[i]) > b->at) {
            absent++;
            continue;
        }
        double rad = ng_law_radius(law, r->radius[i], b->at) * scale;
        ball(g, b->metric, ng_svg_px(&p, b->xy[2 * i]),
             ng_svg_py(&p, b->xy[2 * i + 1]), rad, &ball_st);
    }
    const char *wine = ng_svg_series(NG_SVG_WINE);
    const ng_svg_style tri_st = {wine, wine, 0.7, 0.22, NULL};
    size_t drawn = u->count < BALL_MAX_TRIANGLES ? u->count
                                                 : BALL_MAX_TRIANGLES;
    ng_svg_printf(g, "</g>\n<g class=\"unfilled-triangles\" "
                     "data-count=\"%zu\">\n", u->count);
    for (size_t t = 0; t < drawn; t++) {
        double tx[3], ty[3];
        for (int v = 0; v < 3; v++) {
            ng_index i = u->triangle[3 * t + v];
            tx[v] = ng_svg_px(&p, b->xy[2 * i]);
            ty[v] = ng_svg_py(&p, b->xy[2 * i + 1]);
        }
        ng_svg_polyline(g, tx, ty, 3, 1, &tri_st);
    }
    const char *orange = ng_svg_series(NG_SVG_ORANGE);
    const ng_svg_style other = {NULL, "#333333", 0, 0, NULL};
    const ng_svg_style hit = {NG_SVG_INK, orange, 0.6, 0, NULL};
    size_t in = 0;
    for (int pass = 0; pass < 2; pass++) { /* marked points on top */
        ng_svg_printf(g, "</g>\n<g class=\"%s\">\n",
                      pass ? "points-unfilled" : "points-other");
        for (size_t i = 0; i < b->n; i++) {
            int mark = u->in_unfilled && u->in_unfilled[i];
            if (mark != pass) continue;
            in += mark;
            ng_svg_circle(g, ng_svg_px(&p, b->xy[2 * i]),
                          ng_svg_py(&p, b->xy[2 * i + 1]), mark ? 3.0 : 1.6,
                          mark ? &hit : &other);
        }
    }
    ng_svg_printf(g, "</g>\n</g>\n");

    /* legend and counts beside the plot */
    char k0[96], k1[128], k2[128], k3[96];
    snprintf(k0, sizeof k0, "ball of radius r_i(t) at t = %.4g", b->at);
    snprintf(k1, sizeof k1, "unfilled triangle (rips ≤ t < cech): %zu",
             u->count);
    snprintf(k2, sizeof k2, "its vertices: %zu of %zu points", in, b->n);
    snprintf(k3, sizeof k3, "other point");
    ng_svg_key keys[4] = {
        {NG_SVG_KEY_BOX, ball_st, k0},
        {NG_SVG_KEY_BOX, tri_st, k1},
        {NG_SVG_KEY_DOT, hit, k2},
        {NG_SVG_KEY_DOT, other, k3},
    };
    double lx = p.x + p.w + 24;
    double lh = ng_svg_legend(g, lx, p.y, keys, 4, 0);
    const ng_svg_font small = {11.5, NG_SVG_START, 0, "#444444", 0,
                               "plot-note"};
    double ty = p.y + lh + 20;
    snprintf(line, sizeof line, "at t = %.4g Rips has %zu edges and %zu "
             "triangles;", b->at, u->edges, u->rips_triangles);
    ng_svg_text(g, lx, ty, line, &small);
    snprintf(line, sizeof line, "Čech lacks %zu of those triangles (their",
             u->count);
    ng_svg_text(g, lx, ty + LINE_H, line, &small);
    ng_svg_text(g, lx, ty + 2 * LINE_H,
                "balls meet pairwise but share no point).", &small);
    int extra = 3;
    if (drawn < u->count) {
        snprintf(line, sizeof line, "drawn: the first %zu triangles", drawn);
        ng_svg_text(g, lx, ty + extra++ * LINE_H, line, &small);
    }
    if (absent > 0) {
        snprintf(line, sizeof line, "%zu points are not born yet at t "
                 "(no ball)", absent);
        ng_svg_text(g, lx, ty + extra++ * LINE_H, line, &small);
    }
    ng_svg_group_end(g);
    sec->height = 40 + 10 + ph + 44 + 8;
}
