/* report.c — a report of one run or a comparison of two (report.h): the
 * options, the summary, the order of the sections, the SVG document or
 * HTML page around them, and writing the file.
 *
 * The SVG document is the summary followed by every section under its
 * heading, one below the other, REPORT_WIDTH pixels wide. The HTML page
 * has the same sections, each an inline <svg> under an <h2>, and the
 * summary as a list; it refers to nothing outside itself.
 */
#include "report_internal.h"

#include "alloc.h"
#include "nervegap/distance.h"
#include "nervegap/summary.h"
#include "outfile.h"

#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

void ng_report_options_init(ng_report_options *opt)
{
    memset(opt, 0, sizeof *opt);
    opt->format = NG_REPORT_SVG;
    opt->max_bars = 40;
    opt->at = NAN;
    opt->points = NULL;
    opt->max_points = 20000;
    opt->threads = 0;
}

const char *report_scale_label(const ng_results *r)
{
    /* under law scaled with --raw-radius the ball radius is t·ρ with ρ in
     * data units, so t itself has none */
    if (r->law && strcmp(r->law, "scaled") == 0 && r->command &&
        strstr(r->command, "--raw-radius"))
        return "scale t (ball radius t·ρ)";
    return "scale t (data units)";
}

report_section *report_section_add(report_ctx *c, const char *id,
                                   const char *title)
{
    if (c->failed || c->n_sections == REPORT_MAX_SECTIONS) return NULL;
    report_section *s = &c->section[c->n_sections++];
    memset(s, 0, sizeof *s);
    s->id = id;
    snprintf(s->title, sizeof s->title, "%s", title);
    ng_svg_init(&s->body);
    return s;
}

/* Appends a copy of text to the n strings of *list; sets *failed when
 * out of memory (the list stays as it was, owned by the caller). */
static void append_copy(char ***list, int *n, int *failed, const char *text)
{
    char **more = ng_realloc(*list, (size_t)*n + 1, sizeof *more);
    char *copy = ng_strdup(text);
    if (more == NULL || copy == NULL) {
        if (more) *list = more;
        ng_free(copy);
        *failed = 1;
        return;
    }
    *list = more;
    (*list)[(*n)++] = copy;
}

void report_note(report_ctx *c, const char *fmt, ...)
{
    char buf[REPORT_TEXT * 3];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(buf, sizeof buf, fmt, ap);
    va_end(ap);
    append_copy(&c->notes, &c->n_notes, &c->failed, buf);
}

/* ---- the summary ---- */

typedef struct lines {
    char **line;
    int n;
    int failed;
} lines;

static void add_line(lines *l, const char *fmt, ...) NG_PRINTF(2, 3);

static void add_line(lines *l, const char *fmt, ...)
{
    char buf[REPORT_TEXT * 4];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(buf, sizeof buf, fmt, ap);
    va_end(ap);
    append_copy(&l->line, &l->n, &l->failed, buf);
}

static void lines_free(lines *l)
{
    for (int i = 0; i < l->n; i++) ng_free(l->line[i]);
    ng_free(l->line);
    memset(l, 0, sizeof *l);
}

static void describe_run(lines *l, const ng_results *r, const char *who)
{
    char a[32];
    add_line(l, "%sfile %s: nervegap results format %d, written by nervegap "
                "%s%s%s", who, r->path, r->format_version,
             r->tool_version ? r->tool_version : "?",
             r->created ? " on " : "", r->created ? r->created : "");
    if (r->ambient_dim > 0)
        add_line(l, "%sinput %s: n = %s points in dimension %zu, metric %s",
                 who, r->source,
                 ng_summary_grouped((long long)r->n_points, a, sizeof a),
                 r->ambient_dim, r->metric);
    else
        add_line(l, "%sinput %s: distance matrix of n = %s points", who,
                 r->source,
                 ng_summary_grouped((long long)r->n_points, a, sizeof a));
    add_line(l, "%sscheme: radius %s, law %s, degrees 0..%d; scale limit "
                "T = %.6g%s; %s", who, r->radius_rule, r->law, r->max_degree,
             r->scale_limit,
             r->scale_auto == 1 ? (r->limited_by_budget == 1
                                       ? " (auto, limited by the budget)"
                                       : " (auto: the full scale)")
                                : r->scale_auto == 0 ? " (given)" : "",
             r->truncated ? "bars alive at T are drawn with an arrow"
                          : "only the one component is alive at T");
}

static void summary_one(const ng_results *r, lines *l)
{
    char a[32], b[32], c[32];
    describe_run(l, r, "");
    if (r->input_sha256 && r->input_sha256[0])
        add_line(l, "input SHA-256 %s", r->input_sha256);
    if (r->has_grid && r->grid.G > 0) {
        size_t last = r->grid.G - 1, w = (size_t)r->max_degree + 2;
        long long extra = 0;
        char cech[160] = "", rips[160] = "";
        size_t uc = 0, ur = 0;
        for (size_t k = 0; k < w; k++) {
            int64_t sc = r->grid.simplices_cech[last * w + k];
            int64_t sr = r->grid.simplices_rips[last * w + k];
            extra += sr - sc;
            uc += (size_t)snprintf(cech + uc, sizeof cech - uc, "%s%s",
                                   k ? " · " : "",
                                   ng_summary_grouped(sc, a, sizeof a));
            ur += (size_t)snprintf(rips + ur, sizeof rips - ur, "%s%s",
                                   k ? " · " : "",
                                   ng_summary_grouped(sr, b, sizeof b));
            if (uc >= sizeof cech || ur >= sizeof rips) break;
        }
        add_line(l, "simplices at T by dimension 0..%d: Čech %s; Rips %s; "
                    "Rips has %s that Čech does not", r->max_degree + 1,
                 cech, rips, ng_summary_grouped(extra, c, sizeof c));
    }
    if (r->has_divergence) {
        char buf[REPORT_TEXT * 2] = "";
        size_t u = 0;
        for (int k = 0; k <= r->max_degree && u < sizeof buf; k++)
            u += (size_t)snprintf(buf + u, sizeof buf - u,
                                  "%sdegree %d: %.4g / %.4g / %.4g",
                                  k ? "; " : "", k, r->bottleneck[k],
                                  r->wasserstein1[k], r->wasserstein2[k]);
        add_line(l, "divergence Čech vs Rips (bottleneck / 1-Wasserstein / "
                    "2-Wasserstein, deaths ∞ counted as T): %s", buf);
        add_line(l, "Λ = %.6g: Rips(t) ⊆ Čech(Λt) for t ≤ T, reached at "
                    "t = %.6g; Δ = %.6g, reached at t = %.6g",
                 r->factor_bound, r->factor_bound_at, r->shift_bound,
                 r->shift_bound_at);
    }
    if (r->n_slices > 0) {
        char buf[REPORT_TEXT * 2] = "";
        size_t u = 0;
        for (int j = 0; j < r->n_slices && u < sizeof buf; j++)
            u += (size_t)snprintf(buf + u, sizeof buf - u, "%s%.6g",
                                  j ? ", " : "", r->slice_values[j]);
        add_line(l, "slices (%s): %s", r->slice_kind, buf);
    }
}

/* Bottleneck distances between the runs, per complex and degree. */
static int summary_compare(report_ctx *c, lines *l)
{
    const ng_results *a = c->run[0], *b = c->run[1];
    describe_run(l, a, "A: ");
    describe_run(l, b, "B: ");
    if (a->input_sha256 && b->input_sha256 && a->input_sha256[0])
        add_line(l, "%s", strcmp(a->input_sha256, b->input_sha256) == 0
                              ? "A and B were computed from the same input "
                                "file (equal SHA-256)"
                              : "A and B were computed from different input "
                                "files (SHA-256 differs)");
    int D = a->max_degree < b->max_degree ? a->max_degree : b->max_degree;
    for (int j = 0; j < 2; j++) {
        char buf[REPORT_TEXT * 2] = "";
        size_t u = 0;
        for (int k = 0; k <= D && u < sizeof buf; k++) {
            const ng_bars *x = &ng_results_diagram(a, j)->bars[k];
            const ng_bars *y = &ng_results_diagram(b, j)->bars[k];
            double d = NAN;
            ng_error e;
            ng_error_clear(&e);
            if (ng_bottleneck_distance(x->interval, x->count, y->interval,
                                       y->count, &d, &e) != NG_OK)
                return ng_error_set(c->err, e.code, "%s", e.message);
            char num[32];
            ng_svg_number(d, 4, num, sizeof num);
            u += (size_t)snprintf(buf + u, sizeof buf - u,
                                  "%sdegree %d: %s%s", k ? "; " : "", k, num,
                                  isinf(d) ? " (different numbers of bars "
                                             "alive at T)"
                                           : "");
        }
        add_line(l, "bottleneck distance A vs B, %s: %s",
                 j == 0 ? "Čech" : "Rips", buf);
    }
    return NG_OK;
}

/* ---- assembling the document ---- */

#define SUMMARY_FONT 12.5
#define SUMMARY_LINE 18.0
#define HEADING 36.0   /* heading line above a section body */
#define SECTION_GAP 18.0

/* Text cut to about the width of the page, with "…" at the end. */
static void fitted(const char *text, char *buf, size_t size)
{
    size_t most = (size_t)(REPORT_CONTENT / (0.58 * SUMMARY_FONT));
    size_t chars = 0, cut = 0;
    for (size_t i = 0; text[i]; i++) {
        if (((unsigned char)text[i] & 0xC0) == 0x80) continue;
        if (chars == most - 1) cut = i; /* where character most − 1 starts */
        chars++;
    }
    if (chars <= most) snprintf(buf, size, "%s", text);
    else snprintf(buf, size, "%.*s…", (int)cut, text);
}

static void document_title(const report_ctx *c, char *buf, size_t size)
{
    if (c->n_runs == 1)
        snprintf(buf, size, "nervegap report: %s", c->run[0]->path);
    else
        snprintf(buf, size, "nervegap comparison: A = %s, B = %s",
                 c->run[0]->path, c->run[1]->path);
}

static void svg_document(report_ctx *c, const lines *l, ng_svg *out)
{
    char title[REPORT_TEXT * 2], buf[REPORT_TEXT * 4];
    document_title(c, title, sizeof title);
    double h = 56 + SUMMARY_LINE * l->n + 10;
    for (int i = 0; i < c->n_sections; i++)
        h += HEADING + c->section[i].height + SECTION_GAP;
    ng_svg_document_begin(out, REPORT_WIDTH, ceil(h), title, 0);
    const ng_svg_font big = {20, NG_SVG_START, 1, NULL, 0, "report-title"};
    const ng_svg_font line = {SUMMARY_FONT, NG_SVG_START, 0, NULL, 0, NULL};
    const ng_svg_font head = {16, NG_SVG_START, 1, NULL, 0, "heading"};
    ng_svg_group_begin(out, "summary", "section", "summary", 0, 0);
    fitted(title, buf, sizeof buf);
    ng_svg_text(out, REPORT_MARGIN, 34, buf, &big);
    double y = 56;
    for (int i = 0; i < l->n; i++, y += SUMMARY_LINE) {
        fitted(l->line[i], buf, sizeof buf);
        ng_svg_text(out, REPORT_MARGIN, y + 4, buf, &line);
    }
    ng_svg_group_end(out);
    y += 10;
    for (int i = 0; i < c->n_sections; i++) {
        const report_section *s = &c->section[i];
        ng_svg_group_begin(out, s->id, "section", s->title, 0, y);
        ng_svg_text(out, REPORT_MARGIN, 24, s->title, &head);
        ng_svg_group_begin(out, NULL, NULL, NULL, REPORT_MARGIN, HEADING);
        ng_svg_append(out, s->body.data ? s->body.data : "", s->body.length);
        ng_svg_group_end(out);
        ng_svg_group_end(out);
        y += HEADING + s->height + SECTION_GAP;
    }
    ng_svg_document_end(out);
}

static void html_document(report_ctx *c, const lines *l, ng_svg *out)
{
    char title[REPORT_TEXT * 2];
    document_title(c, title, sizeof title);
    ng_svg_printf(out, "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n"
                       "<meta charset=\"utf-8\">\n<title>");
    ng_svg_escape(out, title);
    ng_svg_printf(out,
                  "</title>\n<style>\n"
                  "body { font-family: 'DejaVu Sans', Verdana, Arial, "
                  "sans-serif; color: %s; max-width: %.0fpx; margin: 1em "
                  "auto; padding: 0 %.0fpx; }\n"
                  "h1 { font-size: 20px; } h2 { font-size: 16px; margin: "
                  "1.4em 0 0.4em; }\n"
                  "ul.summary { font-size: 13px; line-height: 1.5; "
                  "padding-left: 1.2em; }\n"
                  "svg { display: block; max-width: 100%%; height: auto; }\n"
                  "</style>\n</head>\n<body>\n<h1>",
                  NG_SVG_INK, REPORT_CONTENT, REPORT_MARGIN);
    ng_svg_escape(out, title);
    ng_svg_printf(out, "</h1>\n<section id=\"summary\">\n<ul class="
                       "\"summary\">\n");
    for (int i = 0; i < l->n; i++) {
        ng_svg_printf(out, "<li>");
        ng_svg_escape(out, l->line[i]);
        ng_svg_printf(out, "</li>\n");
    }
    ng_svg_printf(out, "</ul>\n</section>\n");
    for (int i = 0; i < c->n_sections; i++) {
        const report_section *s = &c->section[i];
        ng_svg_printf(out, "<section id=\"%s\">\n<h2>", s->id);
        ng_svg_escape(out, s->title);
        ng_svg_printf(out, "</h2>\n");
        ng_svg_document_begin(out, REPORT_CONTENT, ceil(s->height), s->title,
                              1);
        ng_svg_append(out, s->body.data ? s->body.data : "", s->body.length);
        ng_svg_document_end(out);
        ng_svg_printf(out, "</section>\n");
    }
    ng_svg_printf(out, "</body>\n</html>\n");
}

/* ---- building ---- */

static int check_options(const ng_results *a, const ng_results *b,
                         const ng_report_options *opt, ng_error *err)
{
    if (opt->format != NG_REPORT_SVG && opt->format != NG_REPORT_HTML)
        return ng_error_set(err, NG_ERR_USAGE, "--format: unknown format %d",
                            (int)opt->format);
    if (opt->max_bars < 1 || opt->max_bars > NG_REPORT_MAX_BARS)
        return ng_error_set(err, NG_ERR_USAGE,
                            "--bars %zu: expected 1 to %d", opt->max_bars,
                            NG_REPORT_MAX_BARS);
    if (b && (opt->points || !isnan(opt->at)))
        return ng_error_set(err, NG_ERR_USAGE,
                            "%s: the ball picture is drawn for one results "
                            "file, not for a comparison",
                            opt->points ? "--points" : "--at");
    if (!isnan(opt->at) && !(opt->at >= 0 && opt->at <= a->scale_limit))
        return ng_error_set(err, NG_ERR_USAGE,
                            "--at %g: expected a scale from 0 to the scale "
                            "limit T = %g of %s", opt->at, a->scale_limit,
                            a->path);
    return NG_OK;
}

static void context_free(report_ctx *c)
{
    for (int i = 0; i < c->n_sections; i++) ng_svg_release(&c->section[i].body);
    for (int i = 0; i < c->n_notes; i++) ng_free(c->notes[i]);
    ng_free(c->notes);
    report_balls_free(&c->balls);
}

int ng_report_build(const ng_results *a, const ng_results *b,
                    const ng_report_options *opt, ng_report **out,
                    ng_error *err)
{
    *out = NULL;
    ng_report_options defaults;
    if (opt == NULL) {
        ng_report_options_init(&defaults);
        opt = &defaults;
    }
    if (a == NULL)
        return ng_error_set(err, NG_ERR_USAGE, "report: no results given");
    int status = check_options(a, b, opt, err);
    if (status != NG_OK) return status;

    report_ctx c;
    memset(&c, 0, sizeof c);
    c.run[0] = a;
    c.run[1] = b;
    c.n_runs = b ? 2 : 1;
    c.opt = opt;
    c.err = err;
    lines summary = {0};
    ng_svg doc;
    ng_svg_init(&doc);
    ng_report *rep = NULL;

    status = report_balls_prepare(&c);
    if (status != NG_OK) goto cleanup;
    if (c.n_runs == 1) {
        summary_one(a, &summary);
        for (int i = 0; i < c.n_notes; i++) /* from reading the points */
            add_line(&summary, "note: %s", c.notes[i]);
        if (c.balls.ready) {
            add_line(&summary, "ball picture: %s", c.balls.at_rule);
        } else {
            add_line(&summary, "no ball picture: %s", c.balls.reason);
            report_note(&c, "no ball picture: %s", c.balls.reason);
        }
    } else {
        status = summary_compare(&c, &summary);
        if (status != NG_OK) goto cleanup;
    }
    report_barcodes(&c);
    report_diagrams(&c);
    report_curves(&c);
    report_hilbert(&c);
    report_radii(&c);
    report_balls_draw(&c);
    for (int i = 0; i < c.n_sections; i++)
        c.failed |= c.section[i].body.failed;
    if (c.failed || summary.failed) goto nomem;

    if (opt->format == NG_REPORT_HTML) html_document(&c, &summary, &doc);
    else svg_document(&c, &summary, &doc);
    rep = ng_calloc(1, sizeof *rep);
    if (doc.failed || rep == NULL) goto nomem;
    rep->text = doc.data;
    rep->length = doc.length;
    doc.data = NULL;
    rep->at = c.balls.ready ? c.balls.at : NAN;
    rep->notes = c.notes;
    rep->n_notes = c.n_notes;
    c.notes = NULL;
    c.n_notes = 0;
    *out = rep;
    rep = NULL;
    goto cleanup;

nomem:
    status = ng_error_set(err, NG_ERR_NOMEM, "report: out of memory");
cleanup:
    ng_free(rep);
    ng_svg_release(&doc);
    lines_free(&summary);
    context_free(&c);
    return status;
}

void ng_report_free(ng_report *r)
{
    if (r == NULL) return;
    ng_free(r->text);
    for (int i = 0; i < r->n_notes; i++) ng_free(r->notes[i]);
    ng_free(r->notes);
    ng_free(r);
}

/* ---- writing ---- */

int ng_report_save(const ng_report *r, const char *path, ng_error *err)
{
    char *temp;
    int fd;
    int status = ng_outfile_create(path, "report.svg", &temp, &fd, err);
    if (status != NG_OK) return status;
    size_t done = 0;
    int e = 0;
    while (done < r->length) {
        ssize_t n = write(fd, r->text + done, r->length - done);
        if (n < 0) {
            if (errno == EINTR) continue;
            e = errno;
            break;
        }
        done += (size_t)n;
    }
    if (close(fd) != 0 && e == 0) e = errno;
    if (e == 0 && rename(temp, path) != 0) e = errno;
    if (e != 0) {
        unlink(temp);
        ng_free(temp);
        return ng_error_set(err, NG_ERR_IO, "-o %s: writing failed: %s",
                            path, strerror(e));
    }
    ng_free(temp);
    return NG_OK;
}
