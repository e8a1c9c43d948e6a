/* report_plots.c — the sections of a report drawn from the results file
 * alone: barcodes, persistence diagrams, per-scale curves, the Hilbert
 * function as a heat map and the histogram of the base radii.
 *
 * One run draws Čech against Rips; two runs (a comparison) draw run A
 * against run B, Čech and Rips apart. The scale axis of every plot spans
 * [0, T] (the larger T of two runs) exactly, so figures line up; count
 * axes start at 0 and end at the next nice value above the data.
 * Plots are laid out left to right in rows (a flow), each a box with its
 * title above the plot area and its axis labels below.
 */
#include "report_internal.h"

#include "alloc.h"
#include "nervegap/summary.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* ---- layout ---- */

#define BOX_TITLE 24.0   /* title line above a plot area */
#define BOX_AXIS 42.0    /* tick values and axis label below it */
#define BOX_LEFT 66.0    /* y tick values and label */
#define LINE 16.0        /* one line of text */
#define GAP 22.0         /* between boxes */

typedef struct flow {
    double x, y, row_h;
} flow;

/* Starts a new row (unless the current one is empty). */
static void flow_break(flow *f)
{
    if (f->x > 0) {
        f->y += f->row_h;
        f->x = 0;
        f->row_h = 0;
    }
}

/* Places a box of w × h: on the current row when it fits, else on a new
 * one. */
static void flow_place(flow *f, double w, double h, double *x, double *y)
{
    if (f->x + w > REPORT_CONTENT + 0.5) flow_break(f);
    *x = f->x;
    *y = f->y;
    f->x += w;
    if (h > f->row_h) f->row_h = h;
}

static double flow_end(const flow *f)
{
    return f->y + f->row_h;
}

static const ng_svg_font title_font = {13, NG_SVG_START, 1, NULL, 0,
                                       "plot-title"};
static const ng_svg_font note_font = {11.5, NG_SVG_START, 0, "#444444", 0,
                                      "plot-note"};

static const char *degree_word(int k)
{
    static const char *words[] = {"components", "loops", "voids"};
    return k >= 0 && k < 3 ? words[k] : "cavities";
}

static double tmax_of(const report_ctx *c)
{
    double t = 0;
    for (int i = 0; i < c->n_runs; i++) t = fmax(t, c->run[i]->scale_limit);
    return t > 0 ? t : 1.0;
}

static int dmax_of(const report_ctx *c)
{
    int d = 0;
    for (int i = 0; i < c->n_runs; i++)
        if (c->run[i]->max_degree > d) d = c->run[i]->max_degree;
    return d;
}

/* What one line, bar set or point set of a plot shows. */
typedef struct series {
    const ng_results *r;
    int filtration;      /* 0 Čech, 1 Rips */
    const char *colour;
    const char *dash;    /* NULL: solid */
    char label[48];      /* "Čech", or "A Čech" in a comparison */
} series;

static const char *complex_name(int j)
{
    return j == 0 ? "Čech" : "Rips";
}

/* The series of a section: one run gives Čech (blue, solid) and Rips
 * (orange, dashed); two give A and B (blue, orange) of each complex, Čech
 * solid and Rips dashed. Returns the count (2 or 4), in the order
 * A Čech, A Rips[, B Čech, B Rips]. */
static int section_series(const report_ctx *c, series out[4])
{
    int n = 0;
    for (int i = 0; i < c->n_runs; i++) {
        for (int j = 0; j < 2; j++) {
            series *s = &out[n++];
            s->r = c->run[i];
            s->filtration = j;
            s->colour = ng_svg_series(c->n_runs == 1 ? j : i);
            s->dash = j == 1 ? "7 4" : NULL;
            if (c->n_runs == 1)
                snprintf(s->label, sizeof s->label, "%s", complex_name(j));
            else
                snprintf(s->label, sizeof s->label, "%c %s", 'A' + i,
                         complex_name(j));
        }
    }
    return n;
}

static const ng_bars *series_bars(const series *s, int k)
{
    if (k > s->r->max_degree) return NULL;
    const ng_diagram *d = ng_results_diagram(s->r, s->filtration);
    return &d->bars[k];
}

/* ---- bars ranked by length ---- */

/* The count longest bars of b, longest first (summary.h); NULL with
 * *failed set on allocation failure, NULL for no bars. */
static ng_ranked_bar *rank_bars(const ng_bars *b, size_t count, int *failed)
{
    if (b == NULL || b->count == 0) return NULL;
    if (count > b->count) count = b->count;
    ng_ranked_bar *r = ng_malloc(count, sizeof *r);
    if (r == NULL) {
        *failed = 1;
        return NULL;
    }
    ng_summary_longest(b, count, r);
    return r;
}

/* ---- barcodes ---- */

/* One barcode: the shown longest bars of s in degree k, in a box of width
 * w at (x, y) whose plot area is plot_h high; returns the box height. */
static double barcode_box(report_ctx *c, ng_svg *g, double x, double y,
                          double w, double plot_h, const series *s, int k,
                          int run_index)
{
    char id[64], title[128], buf[256], num[32];
    size_t max_bars = c->opt->max_bars;
    const ng_bars *b = series_bars(s, k);
    double T = s->r->scale_limit, tmax = tmax_of(c);
    snprintf(id, sizeof id, "barcode-%s%s-%d",
             c->n_runs == 2 ? (run_index ? "b-" : "a-") : "",
             s->filtration ? "rips" : "cech", k);
    snprintf(title, sizeof title, "%s · degree %d (%s)", s->label, k,
             degree_word(k));
    ng_svg_group_begin(g, id, "plot barcode", title, x, y);
    ng_svg_font tf = title_font;
    tf.colour = s->colour;
    ng_svg_text(g, 0, 16, title, &tf);

    ng_svg_plot p;
    size_t count = b ? b->count : 0;
    size_t shown = count < max_bars ? count : max_bars;
    double rows = shown > 0 ? (double)shown : 1.0;
    ng_svg_plot_init(&p, 14, BOX_TITLE, w - 14 - 46, plot_h, 0, tmax, 0, 0,
                     rows, 0);
    ng_svg_plot_axes(g, &p, report_scale_label(s->r), NULL);

    ng_ranked_bar *bars = rank_bars(b, max_bars, &c->failed);
    double slot = plot_h / rows, thick = fmax(0.8, fmin(slot * 0.72, 10));
    const ng_svg_style bar = {NULL, s->colour, 0, 0, NULL};
    for (size_t i = 0; bars && i < shown; i++) {
        double yc = ng_svg_py(&p, rows - (double)i - 0.5);
        double x0 = ng_svg_px(&p, bars[i].birth);
        double x1 = ng_svg_px(&p, isinf(bars[i].death) ? T : bars[i].death);
        ng_svg_rect(g, x0, yc - thick / 2, fmax(x1 - x0, 1.0), thick, &bar);
        if (isinf(bars[i].death))
            ng_svg_arrow(g, x1 + 2 + fmin(7, fmax(4, thick)), yc,
                         fmin(7, fmax(4, thick)), NG_SVG_INK);
    }
    /* the scale limit of this run */
    const ng_svg_style limit = {NG_SVG_AXIS, NULL, 1, 0, "3 3"};
    double xt = ng_svg_px(&p, T);
    ng_svg_line(g, xt, p.y, xt, p.y + p.h, &limit);
    const ng_svg_font tl = {11, NG_SVG_MIDDLE, 0, NG_SVG_AXIS, 0, NULL};
    ng_svg_text(g, xt, p.y - 3, "T", &tl);

    /* what is drawn, in words */
    double ty = p.y + p.h + BOX_AXIS + 12;
    if (count == 0) {
        snprintf(buf, sizeof buf, "no bars of degree %d%s", k,
                 b ? "" : " in this run");
    } else if (shown == count) {
        snprintf(buf, sizeof buf, "all %zu bar%s drawn, longest first; "
                 "%zu alive at T", count, count == 1 ? "" : "s",
                 b->truncated);
    } else {
        ng_svg_number(bars ? bars[shown - 1].length : 0, 3, num, sizeof num);
        snprintf(buf, sizeof buf, "the %zu longest of %zu bars drawn; %zu "
                 "shorter ones (length ≤ %s) not drawn; %zu alive at T",
                 shown, count, count - shown, num, b->truncated);
    }
    ng_svg_text(g, 14, ty, buf, &note_font);
    ng_free(bars);
    ng_svg_group_end(g);
    return ty + 10;
}

static double barcode_plot_height(const report_ctx *c, const series *a,
                                  const series *b, int k)
{
    size_t n = 1;
    const ng_bars *x = series_bars(a, k), *y = series_bars(b, k);
    if (x && x->count > n) n = x->count;
    if (y && y->count > n) n = y->count;
    if (n > c->opt->max_bars) n = c->opt->max_bars;
    double h = 7.0 * (double)n;
    return h < 40 ? 40 : h > 420 ? 420 : h;
}

void report_barcodes(report_ctx *c)
{
    report_section *sec = report_section_add(
        c, "barcodes",
        c->n_runs == 1 ? "Barcodes: Čech and Rips side by side, per degree"
                       : "Barcodes: A and B side by side, per complex and "
                         "degree");
    if (sec == NULL) return;
    series s[4];
    int ns = section_series(c, s);
    ng_svg *g = &sec->body;
    const ng_svg_style limit = {NG_SVG_AXIS, NULL, 1, 0, "3 3"};
    ng_svg_key keys[4] = {
        {NG_SVG_KEY_BOX, {NULL, s[0].colour, 0, 0, NULL},
         c->n_runs == 1 ? "Čech bar [birth, death)" : "A"},
        {NG_SVG_KEY_BOX, {NULL, s[ns - 1].colour, 0, 0, NULL},
         c->n_runs == 1 ? "Rips bar [birth, death)" : "B"},
        {NG_SVG_KEY_ARROW, {NG_SVG_INK, NULL, 2, 0, NULL},
         "alive at the scale limit T (death ∞)"},
        {NG_SVG_KEY_LINE, limit, "scale limit T"},
    };
    double h = ng_svg_legend(g, 0, 0, keys, 4, 1) + 10;
    double w = (REPORT_CONTENT - GAP) / 2;
    int D = dmax_of(c);
    for (int k = 0; k <= D; k++) {
        /* one run: [Čech | Rips]; two: [A Čech | B Čech], [A Rips | B Rips] */
        for (int row = 0; row < (c->n_runs == 1 ? 1 : 2); row++) {
            const series *left = c->n_runs == 1 ? &s[0] : &s[row];
            const series *right = c->n_runs == 1 ? &s[1] : &s[2 + row];
            double ph = barcode_plot_height(c, left, right, k);
            double h1 = barcode_box(c, g, 0, h, w, ph, left, k, 0);
            double h2 = barcode_box(c, g, w + GAP, h, w, ph, right, k,
                                    c->n_runs == 2);
            h += fmax(h1, h2) + 14;
        }
    }
    sec->height = h;
}

/* ---- persistence diagrams ---- */

#define DIAGRAM_MAX_POINTS 5000

static void diagram_points(ng_svg *g, const ng_svg_plot *p, const series *s,
                           int k, int hollow, double inf_row, int *failed,
                           size_t *drawn, size_t *total)
{
    const ng_bars *b = series_bars(s, k);
    *drawn = *total = 0;
    if (b == NULL || b->count == 0) return;
    ng_ranked_bar *bars = rank_bars(b, DIAGRAM_MAX_POINTS, failed);
    if (bars == NULL) return;
    size_t m = b->count < DIAGRAM_MAX_POINTS ? b->count : DIAGRAM_MAX_POINTS;
    const ng_svg_style open = {s->colour, NULL, 1.3, 0, NULL};
    const ng_svg_style full = {NULL, s->colour, 0, 0, NULL};
    /* shortest first, so the far-off points are drawn on top */
    for (size_t i = m; i-- > 0;) {
        double d = isinf(bars[i].death) ? inf_row : bars[i].death;
        ng_svg_circle(g, ng_svg_px(p, bars[i].birth), ng_svg_py(p, d),
                      hollow ? 3.6 : 2.2, hollow ? &open : &full);
    }
    *drawn = m;
    *total = b->count;
    ng_free(bars);
}

void report_diagrams(report_ctx *c)
{
    report_section *sec = report_section_add(
        c, "diagrams",
        c->n_runs == 1 ? "Persistence diagrams: Čech and Rips overlaid"
                       : "Persistence diagrams: A and B overlaid, per "
                         "complex");
    if (sec == NULL) return;
    series s[4];
    section_series(c, s);
    ng_svg *g = &sec->body;
    double tmax = tmax_of(c), inf_row = tmax * 1.07;
    const ng_svg_style diag = {NG_SVG_AXIS, NULL, 1, 0, NULL};
    const ng_svg_style limit = {NG_SVG_AXIS, NULL, 1, 0, "3 3"};
    ng_svg_key keys[4];
    int nk = 0;
    if (c->n_runs == 1) {
        keys[nk++] = (ng_svg_key){NG_SVG_KEY_DOT,
                                  {s[0].colour, NULL, 1.3, 0, NULL},
                                  "Čech (birth, death)"};
        keys[nk++] = (ng_svg_key){NG_SVG_KEY_DOT,
                                  {NULL, s[1].colour, 0, 0, NULL},
                                  "Rips (birth, death)"};
    } else {
        keys[nk++] = (ng_svg_key){NG_SVG_KEY_DOT,
                                  {s[0].colour, NULL, 1.3, 0, NULL}, "A"};
        keys[nk++] = (ng_svg_key){NG_SVG_KEY_DOT,
                                  {NULL, s[2].colour, 0, 0, NULL}, "B"};
    }
    keys[nk++] = (ng_svg_key){NG_SVG_KEY_LINE, diag, "diagonal death = birth"};
    keys[nk++] = (ng_svg_key){NG_SVG_KEY_LINE, limit,
                              "scale limit T; above it: death ∞"};
    double top = ng_svg_legend(g, 0, 0, keys, nk, 1) + 10;
    flow f = {0, top, 0};
    int D = dmax_of(c);
    double bw = REPORT_CONTENT / 3, side = bw - BOX_LEFT - GAP;
    const ng_svg_font inf_font = {13, NG_SVG_END, 0, NG_SVG_AXIS, 0, NULL};
    /* one run: a row of degrees; two: a row of degrees per complex */
    for (int j = 0; j < (c->n_runs == 1 ? 1 : 2); j++) {
        flow_break(&f);
        for (int k = 0; k <= D; k++) {
            /* one run: Čech and Rips; two: A and B of complex j */
            const series *first = c->n_runs == 1 ? &s[0] : &s[j];
            const series *second = c->n_runs == 1 ? &s[1] : &s[2 + j];
            double x, y, bh = BOX_TITLE + side + BOX_AXIS + 2 * LINE + 8;
            flow_place(&f, bw, bh, &x, &y);
            char id[48], title[96], buf[160];
            snprintf(id, sizeof id, "diagram-%s%d",
                     c->n_runs == 1 ? "" : j ? "rips-" : "cech-", k);
            if (c->n_runs == 1)
                snprintf(title, sizeof title, "degree %d (%s)", k,
                         degree_word(k));
            else
                snprintf(title, sizeof title, "%s · degree %d (%s)",
                         complex_name(j), k, degree_word(k));
            ng_svg_group_begin(g, id, "plot diagram", title, x, y);
            ng_svg_text(g, BOX_LEFT, 16, title, &title_font);
            ng_svg_plot p;
            ng_svg_plot_init(&p, BOX_LEFT, BOX_TITLE, side, side, 0, tmax, 0,
                             0, tmax * 1.12, 0);
            ng_svg_plot_axes(g, &p, "birth (scale t)", "death (scale t)");
            ng_svg_line(g, ng_svg_px(&p, 0), ng_svg_py(&p, 0),
                        ng_svg_px(&p, tmax), ng_svg_py(&p, tmax), &diag);
            ng_svg_line(g, p.x, ng_svg_py(&p, tmax), p.x + p.w,
                        ng_svg_py(&p, tmax), &limit);
            ng_svg_text(g, p.x + p.w - 4, ng_svg_py(&p, inf_row) + 4, "∞",
                        &inf_font);
            size_t d1, t1, d2, t2;
            diagram_points(g, &p, first, k, 1, inf_row, &c->failed, &d1,
                           &t1);
            diagram_points(g, &p, second, k, 0, inf_row, &c->failed, &d2,
                           &t2);
            double ty = p.y + p.h + BOX_AXIS + 12;
            snprintf(buf, sizeof buf, "%s: %zu points, %s: %zu points",
                     first->label, t1, second->label, t2);
            ng_svg_text(g, BOX_LEFT - 40, ty, buf, &note_font);
            if (d1 < t1 || d2 < t2) {
                snprintf(buf, sizeof buf, "drawn: the %d most persistent "
                         "of each", DIAGRAM_MAX_POINTS);
                ng_svg_text(g, BOX_LEFT - 40, ty + LINE, buf, &note_font);
            }
            ng_svg_group_end(g);
        }
    }
    sec->height = flow_end(&f);
}

/* ---- per-scale curves ---- */

/* A step line through the grid values v[i * stride] at scales t[i]. */
static void step_line(ng_svg *g, const ng_svg_plot *p, const double *t,
                      const double *v, size_t G, const ng_svg_style *st,
                      int *failed)
{
    double *px = ng_malloc(2 * G, sizeof *px), *py = ng_malloc(2 * G,
                                                               sizeof *py);
    if (px == NULL || py == NULL) {
        *failed = 1;
    } else {
        size_t m = 0;
        for (size_t i = 0; i < G; i++) {
            if (i > 0) { /* hold the previous value up to t_i */
                px[m] = ng_svg_px(p, t[i]);
                py[m++] = ng_svg_py(p, v[i - 1]);
            }
            px[m] = ng_svg_px(p, t[i]);
            py[m++] = ng_svg_py(p, v[i]);
        }
        ng_svg_polyline(g, px, py, m, 0, st);
    }
    ng_free(px);
    ng_free(py);
}

/* A straight line through the grid values. */
static void plain_line(ng_svg *g, const ng_svg_plot *p, const double *t,
                       const double *v, size_t G, const ng_svg_style *st,
                       int *failed)
{
    double *px = ng_malloc(G, sizeof *px), *py = ng_malloc(G, sizeof *py);
    if (px == NULL || py == NULL) {
        *failed = 1;
    } else {
        for (size_t i = 0; i < G; i++) {
            px[i] = ng_svg_px(p, t[i]);
            py[i] = ng_svg_py(p, v[i]);
        }
        ng_svg_polyline(g, px, py, G, 0, st);
    }
    ng_free(px);
    ng_free(py);
}

/* The curves of one plot, each G values over its run's grid. */
#define MAX_CURVES 10

typedef struct curves {
    int n;
    const ng_results *run[MAX_CURVES];
    double *v[MAX_CURVES];
    ng_svg_key key[MAX_CURVES];
    char label[MAX_CURVES][64];
    int steps;            /* counts: drawn as steps */
} curves;

static double *curve_add(curves *cv, const ng_results *r, const char *colour,
                         const char *dash, const char *label, int *failed)
{
    if (cv->n == MAX_CURVES || !r->has_grid) return NULL;
    double *v = ng_calloc(r->grid.G, sizeof *v);
    if (v == NULL) {
        *failed = 1;
        return NULL;
    }
    int i = cv->n++;
    cv->run[i] = r;
    cv->v[i] = v;
    snprintf(cv->label[i], sizeof cv->label[i], "%s", label);
    cv->key[i] = (ng_svg_key){NG_SVG_KEY_LINE, {colour, NULL, 2, 0, dash},
                              cv->label[i]};
    return v;
}

static void curves_free(curves *cv)
{
    for (int i = 0; i < cv->n; i++) ng_free(cv->v[i]);
    cv->n = 0;
}

/* One plot of curves in a box at the next place of the flow. ylo is the
 * bottom of the y axis (0 for counts, 1 for factors). at: a scale to mark
 * (NaN: none). */
static void curves_box(report_ctx *c, ng_svg *g, flow *f, const char *id,
                       const char *title, const char *ylabel, curves *cv,
                       double ylo, int with_legend, double at,
                       const char *at_label)
{
    double bw = REPORT_CONTENT / 3, pw = bw - BOX_LEFT - GAP, ph = 190;
    double legend_h = with_legend ? 8 + 17.0 * cv->n + 6 : 0;
    double bh = BOX_TITLE + ph + BOX_AXIS + legend_h + 12, x, y;
    flow_place(f, bw, bh, &x, &y);
    ng_svg_group_begin(g, id, "plot curves", title, x, y);
    ng_svg_text(g, BOX_LEFT, 16, title, &title_font);
    double yhi = ylo;
    for (int i = 0; i < cv->n; i++)
        for (size_t t = 0; t < cv->run[i]->grid.G; t++)
            if (isfinite(cv->v[i][t])) yhi = fmax(yhi, cv->v[i][t]);
    ng_svg_plot p;
    ng_svg_plot_init(&p, BOX_LEFT, BOX_TITLE, pw, ph, 0, tmax_of(c), 0, ylo,
                     yhi, 1);
    ng_svg_plot_axes(g, &p, report_scale_label(c->run[0]), ylabel);
    for (int i = 0; i < cv->n; i++) {
        const ng_grid *gr = &cv->run[i]->grid;
        if (cv->steps)
            step_line(g, &p, gr->scale, cv->v[i], gr->G, &cv->key[i].style,
                      &c->failed);
        else
            plain_line(g, &p, gr->scale, cv->v[i], gr->G, &cv->key[i].style,
                       &c->failed);
    }
    if (isfinite(at)) {
        const ng_svg_style mark = {NG_SVG_INK, NULL, 1, 0, "1 3"};
        const ng_svg_font mf = {10.5, NG_SVG_START, 0, NG_SVG_INK, 0, NULL};
        double xa = ng_svg_px(&p, at);
        ng_svg_line(g, xa, p.y, xa, p.y + p.h, &mark);
        ng_svg_text(g, xa + 3, p.y + 11, at_label, &mf);
    }
    if (with_legend)
        ng_svg_legend(g, BOX_LEFT, p.y + p.h + BOX_AXIS, cv->key, cv->n, 0);
    ng_svg_group_end(g);
}

void report_curves(report_ctx *c)
{
    report_section *sec = report_section_add(c, "curves",
                                             "Per-scale curves on the grid "
                                             "of scales");
    if (sec == NULL) return;
    ng_svg *g = &sec->body;
    series s[4];
    int ns = section_series(c, s);
    int any_grid = 0;
    for (int i = 0; i < c->n_runs; i++) any_grid |= c->run[i]->has_grid;
    if (!any_grid) {
        ng_svg_text(g, 0, 14, "no per-scale grid in the file", &note_font);
        sec->height = 24;
        return;
    }
    ng_svg_key keys[4];
    for (int i = 0; i < ns; i++)
        keys[i] = (ng_svg_key){NG_SVG_KEY_LINE,
                               {s[i].colour, NULL, 2, 0, s[i].dash},
                               s[i].label};
    double top = ng_svg_legend(g, 0, 0, keys, ns, 1) + 10;
    flow f = {0, top, 0};
    double at = c->balls.ready ? c->balls.at : NAN;
    char id[32], title[96], ylabel[64];

    /* Betti numbers per degree */
    for (int k = 0; k <= dmax_of(c); k++) {
        curves cv = {0};
        cv.steps = 1;
        for (int i = 0; i < ns; i++) {
            const ng_results *r = s[i].r;
            if (k > r->max_degree) continue;
            double *v = curve_add(&cv, r, s[i].colour, s[i].dash, s[i].label,
                                  &c->failed);
            if (v == NULL) continue;
            const int64_t *b = s[i].filtration ? r->grid.betti_rips
                                               : r->grid.betti_cech;
            for (size_t t = 0; t < r->grid.G; t++)
                v[t] = (double)b[t * (size_t)(r->max_degree + 1) + k];
        }
        snprintf(id, sizeof id, "betti-%d", k);
        snprintf(title, sizeof title, "Betti number β%d (%s)", k,
                 degree_word(k));
        snprintf(ylabel, sizeof ylabel, "β%d (count)", k);
        curves_box(c, g, &f, id, title, ylabel, &cv, 0, 0,
                   k == 1 ? at : NAN, "ball picture");
        curves_free(&cv);
    }

    /* simplices that Rips has and Čech does not */
    curves cv = {0};
    cv.steps = 1;
    for (int i = 0; i < c->n_runs; i++) {
        const ng_results *r = c->run[i];
        if (!r->has_grid) continue;
        size_t w = (size_t)r->max_degree + 2;
        for (int k = 1; k <= r->max_degree + 1; k++) {
            int64_t most = 0;
            for (size_t t = 0; t < r->grid.G; t++) {
                int64_t d = r->grid.simplices_rips[t * w + k] -
                            r->grid.simplices_cech[t * w + k];
                if (d > most) most = d;
            }
            /* edges agree in every coordinate metric: drawn only when
             * they differ (a given distance matrix) */
            if (k == 1 && most == 0) continue;
            char label[64];
            if (c->n_runs == 1)
                snprintf(label, sizeof label, "dimension %d", k);
            else
                snprintf(label, sizeof label, "%c, dimension %d", 'A' + i, k);
            const char *colour =
                ng_svg_series(c->n_runs == 1 ? NG_SVG_WINE + k - 1 : i);
            /* dimension 2 solid; 1 (a given metric only) dotted */
            static const char *dashes[] = {"2 3", NULL, "7 4", "9 3 2 3",
                                           "4 2"};
            double *v = curve_add(&cv, r, colour, dashes[k - 1], label,
                                  &c->failed);
            if (v == NULL) continue;
            for (size_t t = 0; t < r->grid.G; t++)
                v[t] = (double)(r->grid.simplices_rips[t * w + k] -
                                r->grid.simplices_cech[t * w + k]);
        }
    }
    curves_box(c, g, &f, "unfilled", "Simplices in Rips, not in Čech",
               "simplices (count)", &cv, 0, 1, at, "ball picture");
    curves_free(&cv);

    /* enlargement factor */
    cv.steps = 0;
    for (int i = 0; i < c->n_runs; i++) {
        const ng_results *r = c->run[i];
        if (!r->has_grid) continue;
        char label[64];
        for (int q = 0; q < 2; q++) {
            if (c->n_runs == 1)
                snprintf(label, sizeof label, "%s", q ? "90th percentile"
                                                      : "max");
            else
                snprintf(label, sizeof label, "%c %s", 'A' + i,
                         q ? "90th percentile" : "max");
            const char *colour = ng_svg_series(
                c->n_runs == 1 ? (q ? NG_SVG_TEAL : NG_SVG_WINE) : i);
            double *v = curve_add(&cv, r, colour, q ? "7 4" : NULL, label,
                                  &c->failed);
            if (v)
                memcpy(v, q ? r->grid.factor_q90 : r->grid.factor_max,
                       r->grid.G * sizeof *v);
        }
    }
    curves_box(c, g, &f, "factor",
               "Enlargement factor cech/rips, simplices of dim ≥ 2",
               "factor (ratio ≥ 1)", &cv, 1, 1, NAN, NULL);
    curves_free(&cv);
    sec->height = flow_end(&f);
}

/* ---- the Hilbert function ---- */

/* Position of a count v in the colour map: a square-root scale, so that
 * the few long-lived classes (counts 1 and 2 where small loops number
 * dozens) stay visible next to the peak. */
static double count_colour(double v, double vmax)
{
    return sqrt(fmax(v, 0) / vmax);
}

/* A vertical colour scale for counts 0..vmax at (x, y), h high, with
 * its ticks at their square-root positions. */
static void colour_scale(ng_svg *g, double x, double y, double h,
                         double vmax, const char *label)
{
    const int steps = 48;
    for (int i = 0; i < steps; i++) {
        char hex[8];
        ng_svg_hex(ng_svg_sequential((i + 0.5) / steps), hex);
        const ng_svg_style st = {NULL, hex, 0, 0, NULL};
        double y0 = y + h - (i + 1) * h / steps;
        ng_svg_rect(g, x, y0, 16, h / steps + 0.4, &st);
    }
    ng_svg_ticks t;
    ng_svg_ticks_make(0, vmax, (int)(h / 30) + 2, 0, &t);
    const ng_svg_style axis = {NG_SVG_AXIS, NULL, 1, 0, NULL};
    const ng_svg_font tick = {11, NG_SVG_START, 0, NULL, 0, "tick"};
    ng_svg_rect(g, x, y, 16, h, &axis);
    ng_svg_printf(g, "<g class=\"axis colour-scale\" data-min=\"0\" "
                     "data-max=\"%.17g\">\n", vmax);
    char buf[32];
    double last = INFINITY;
    for (int i = 0; i < t.count; i++) {
        double v = t.first + i * t.step;
        double yy = y + h - count_colour(v, vmax) * h;
        if (last - yy < 12 && i + 1 < t.count) continue; /* crowded */
        ng_svg_line(g, x + 16, yy, x + 20, yy, &axis);
        ng_svg_tick_label(&t, i, buf, sizeof buf);
        ng_svg_text(g, x + 23, yy + 4, buf, &tick);
        last = yy;
    }
    const ng_svg_font lf = {12, NG_SVG_START, 0, NULL, 0, "axis-label"};
    ng_svg_text(g, x - 4, y - 22, label, &lf);
    const ng_svg_font sf = {10.5, NG_SVG_START, 0, "#444444", 0, NULL};
    ng_svg_text(g, x - 4, y - 8, "square-root scale", &sf);
    ng_svg_printf(g, "</g>\n");
}

void report_hilbert(report_ctx *c)
{
    const ng_results *r = c->run[0];
    if (c->n_runs != 1 || r->n_slices == 0 || !r->has_grid ||
        r->grid.hilbert == NULL)
        return;
    int factor = r->slice_kind && strcmp(r->slice_kind, "factor") == 0;
    report_section *sec = report_section_add(
        c, "hilbert",
        factor ? "Hilbert function β_k(t, λ) of the bi-parameter complex "
                 "(slices max(rips, cech/λ))"
               : "Hilbert function β_k(t, δ) of the bi-parameter complex "
                 "(slices max(rips, cech − δ))");
    if (sec == NULL) return;
    ng_svg *g = &sec->body;
    int L = r->n_slices, D = r->max_degree, rows = L + 2;
    size_t G = r->grid.G, w = (size_t)D + 1;
    int *order = ng_malloc((size_t)L, sizeof *order);
    if (order == NULL) {
        c->failed = 1;
        return;
    }
    /* the slices by value (insertion sort: at most NG_RUN_MAX_SLICES) */
    for (int j = 0; j < L; j++) {
        int e = j;
        while (e > 0 && r->slice_values[order[e - 1]] > r->slice_values[j]) {
            order[e] = order[e - 1];
            e--;
        }
        order[e] = j;
    }
    double row_h = 22, left = 150, pw = REPORT_CONTENT - left - 130;
    double ph = row_h * rows, y = 0;
    const ng_svg_font rl = {11, NG_SVG_END, 0, NULL, 0, "tick"};
    for (int k = D >= 1 ? 1 : 0; k <= D; k++) {
        char id[32], title[96], lab[48];
        snprintf(id, sizeof id, "hilbert-%d", k);
        snprintf(title, sizeof title, "β%d (%s) over scale and %s", k,
                 degree_word(k), factor ? "enlargement λ" : "shift δ");
        ng_svg_group_begin(g, id, "plot heatmap", title, 0, y);
        ng_svg_text(g, left, 16, title, &title_font);
        ng_svg_plot p;
        ng_svg_plot_init(&p, left, BOX_TITLE, pw, ph, 0, tmax_of(c), 0, 0,
                         rows, 0);
        ng_svg_plot_axes(g, &p, report_scale_label(r), NULL); /* under */
        /* rows from the bottom: Čech (λ = 1 or δ = 0), the slices by
         * value, Rips (∞) */
        int64_t vmax = 1;
        for (size_t i = 0; i < G; i++) {
            int64_t v = r->grid.betti_cech[i * w + k];
            if (r->grid.betti_rips[i * w + k] > v)
                v = r->grid.betti_rips[i * w + k];
            for (int j = 0; j < L; j++)
                if (r->grid.hilbert[((size_t)j * G + i) * w + k] > v)
                    v = r->grid.hilbert[((size_t)j * G + i) * w + k];
            if (v > vmax) vmax = v;
        }
        double cell = G > 1 ? r->scale_limit / (double)(G - 1) : 1;
        for (int row = 0; row < rows; row++) {
            const int64_t *src;
            size_t stride = w;
            if (row == 0) src = r->grid.betti_cech;
            else if (row == rows - 1) src = r->grid.betti_rips;
            else src = r->grid.hilbert + (size_t)order[row - 1] * G * w;
            double y0 = ng_svg_py(&p, row + 1), y1 = ng_svg_py(&p, row);
            /* runs of equal values become one rectangle */
            size_t i = 0;
            while (i < G) {
                int64_t v = src[i * stride + k];
                size_t e = i + 1;
                while (e < G && src[e * stride + k] == v) e++;
                double t0 = fmax(0, r->grid.scale[i] - cell / 2);
                double t1 = fmin(r->scale_limit,
                                 r->grid.scale[e - 1] + cell / 2);
                char hex[8];
                ng_svg_hex(ng_svg_sequential(count_colour((double)v, (double)vmax)),
                           hex);
                const ng_svg_style st = {NULL, hex, 0, 0, NULL};
                double x0 = ng_svg_px(&p, t0);
                ng_svg_rect(g, x0, y0, ng_svg_px(&p, t1) - x0 + 0.3,
                            y1 - y0, &st);
                i = e;
            }
            if (row == 0)
                snprintf(lab, sizeof lab, "%s (Čech)", factor ? "1" : "0");
            else if (row == rows - 1)
                snprintf(lab, sizeof lab, "∞ (Rips)");
            else
                ng_svg_number(r->slice_values[order[row - 1]], 4, lab,
                              sizeof lab);
            ng_svg_text(g, left - 6, (y0 + y1) / 2 + 4, lab, &rl);
        }
        const ng_svg_style frame = {NG_SVG_AXIS, NULL, 1, 0, NULL};
        ng_svg_rect(g, p.x, p.y, p.w, p.h, &frame);
        const ng_svg_font yl = {12, NG_SVG_MIDDLE, 0, NULL, -90,
                                "axis-label"};
        ng_svg_text(g, left - 100, p.y + ph / 2,
                    factor ? "enlargement λ" : "shift δ (data units)", &yl);
        char cl[32];
        snprintf(cl, sizeof cl, "β%d (count)", k);
        colour_scale(g, left + pw + 30, p.y + 28, fmax(ph - 28, 60),
                     (double)vmax, cl);
        ng_svg_group_end(g);
        y += BOX_TITLE + fmax(ph, 74) + BOX_AXIS + 16;
    }
    ng_free(order);
    sec->height = y;
}

/* ---- base radii ---- */

void report_radii(report_ctx *c)
{
    report_section *sec = report_section_add(c, "radii",
                                             "Base radii of the points");
    if (sec == NULL) return;
    ng_svg *g = &sec->body;
    double lo = INFINITY, hi = -INFINITY;
    size_t nmax = 0;
    for (int i = 0; i < c->n_runs; i++) {
        const ng_results *r = c->run[i];
        for (size_t p = 0; p < r->n_points; p++) {
            lo = fmin(lo, r->radius[p]);
            hi = fmax(hi, r->radius[p]);
        }
        if (r->n_points > nmax) nmax = r->n_points;
    }
    if (!(lo <= hi)) lo = hi = 0;
    /* Rice's rule, 2·n^(1/3) bins (common practice), 5 to 60 */
    int bins = (int)ceil(2.0 * cbrt((double)nmax));
    bins = bins < 5 ? 5 : bins > 60 ? 60 : bins;
    double width = hi > lo ? (hi - lo) / bins : fmax(fabs(lo) * 0.05, 0.05);
    double first = hi > lo ? lo : lo - width / 2;
    if (hi == lo) bins = 1;
    size_t *count = ng_calloc((size_t)bins * (size_t)c->n_runs,
                              sizeof *count);
    if (count == NULL) {
        c->failed = 1;
        return;
    }
    size_t most = 1;
    for (int i = 0; i < c->n_runs; i++) {
        const ng_results *r = c->run[i];
        for (size_t p = 0; p < r->n_points; p++) {
            int b = (int)((r->radius[p] - first) / width);
            b = b < 0 ? 0 : b >= bins ? bins - 1 : b;
            size_t *cell = &count[(size_t)i * (size_t)bins + (size_t)b];
            if (++*cell > most) most = *cell;
        }
    }
    const ng_results *r0 = c->run[0];
    int scaled = strcmp(r0->law, "scaled") == 0 &&
                 (r0->command == NULL || !strstr(r0->command, "--raw-radius"));
    const char *xlabel = scaled ? "base radius ρ (divided by its median)"
                                : "base radius ρ (data units)";
    double bw = REPORT_CONTENT / 2, pw = bw - BOX_LEFT - GAP, ph = 200;
    ng_svg_group_begin(g, "radii-histogram", "plot histogram",
                       "histogram of the base radii", 0, 0);
    char title[160];
    if (c->n_runs == 1)
        snprintf(title, sizeof title, "radius rule %s, law %s: %zu points",
                 r0->radius_rule, r0->law, r0->n_points);
    else
        snprintf(title, sizeof title, "A: %s, %s; B: %s, %s",
                 r0->radius_rule, r0->law, c->run[1]->radius_rule,
                 c->run[1]->law);
    ng_svg_text(g, BOX_LEFT, 16, title, &title_font);
    ng_svg_plot p;
    ng_svg_plot_init(&p, BOX_LEFT, BOX_TITLE, pw, ph, first,
                     first + width * bins, 1, 0, (double)most, 1);
    ng_svg_plot_axes(g, &p, xlabel, "points (count)");
    ng_svg_key keys[3];
    int nk = 0;
    for (int i = 0; i < c->n_runs; i++) {
        /* A filled, B in outline on top, told apart in grey as well */
        const char *colour = ng_svg_series(i == 0 ? NG_SVG_BLUE
                                                  : NG_SVG_ORANGE);
        const ng_svg_style st = {colour, i == 0 ? colour : NULL,
                                 i == 0 ? 1 : 2, 0.35, NULL};
        for (int b = 0; b < bins; b++) {
            size_t v = count[(size_t)i * (size_t)bins + (size_t)b];
            if (v == 0) continue;
            double x0 = ng_svg_px(&p, first + b * width);
            double x1 = ng_svg_px(&p, first + (b + 1) * width);
            double y0 = ng_svg_py(&p, (double)v);
            ng_svg_rect(g, x0, y0, x1 - x0, ng_svg_py(&p, 0) - y0, &st);
        }
        keys[nk++] = (ng_svg_key){NG_SVG_KEY_BOX, st,
                                  c->n_runs == 1 ? "points per bin"
                                  : i == 0       ? "A"
                                                 : "B"};
    }
    if (c->n_runs == 1 && scaled) {
        const ng_svg_style med = {NG_SVG_INK, NULL, 1.5, 0, "5 3"};
        double xm = ng_svg_px(&p, 1.0);
        ng_svg_line(g, xm, p.y, xm, p.y + p.h, &med);
        keys[nk++] = (ng_svg_key){NG_SVG_KEY_LINE, med, "the median, 1"};
    }
    ng_svg_legend(g, p.x + p.w - ng_svg_legend_width(keys, nk, 0) - 6,
                  p.y + 6, keys, nk, 0);
    ng_svg_group_end(g);
    ng_free(count);
    sec->height = BOX_TITLE + ph + BOX_AXIS + 10;
}
