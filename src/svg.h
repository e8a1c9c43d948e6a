/* svg.h — drawing primitives for SVG documents (private to the library):
 * a growing text buffer, XML escaping, shapes, text, axes with nice tick
 * values, legends and the colours of our figures.
 *
 * Invariants: every string that comes from outside (file names, labels)
 * goes through ng_svg_escape, so the document is well-formed XML whatever
 * the bytes; numbers are printed in the C locale with a bounded number of
 * digits. An allocation failure is remembered in ng_svg.failed and turns
 * every later call into a no-op, so drawing code checks once at the end.
 */
#ifndef NERVEGAP_SVG_H
#define NERVEGAP_SVG_H

#include "nervegap/common.h"

#include <stddef.h>

/* ---- the text buffer ---- */

typedef struct ng_svg {
    char *data;       /* NUL-terminated text, NULL before the first write */
    size_t length;    /* bytes, without the NUL */
    size_t capacity;
    int failed;       /* an allocation failed: the text is incomplete */
} ng_svg;

void ng_svg_init(ng_svg *s);
/* Frees the text. Accepts NULL. */
void ng_svg_release(ng_svg *s);
/* Appends formatted text (not escaped: for markup and numbers only). */
void ng_svg_printf(ng_svg *s, const char *fmt, ...) NG_PRINTF(2, 3);
/* Appends len bytes as they are. */
void ng_svg_append(ng_svg *s, const char *text, size_t len);
/* Appends text escaped for XML character data and attribute values:
 * & < > " ' become entities; bytes that are not valid UTF-8, and control
 * characters other than tab and newline (not allowed in XML 1.0), become
 * U+FFFD. */
void ng_svg_escape(ng_svg *s, const char *text);

/* ---- documents and groups ---- */

/* <svg> root of width × height pixels (viewBox the same), with the font
 * and the title; end with ng_svg_document_end. inline_html: no XML
 * declaration (for an <svg> inside an HTML page). */
void ng_svg_document_begin(ng_svg *s, double width, double height,
                           const char *title, int inline_html);
void ng_svg_document_end(ng_svg *s);

/* <g> translated by (dx, dy), with id and class when not NULL and a
 * <title> child when title is not NULL; end with ng_svg_group_end. */
void ng_svg_group_begin(ng_svg *s, const char *id, const char *cls,
                        const char *title, double dx, double dy);
void ng_svg_group_end(ng_svg *s);

/* ---- shapes ---- */

typedef struct ng_svg_style {
    const char *stroke;   /* "#rrggbb"; NULL: none */
    const char *fill;     /* "#rrggbb"; NULL: none */
    double stroke_width;  /* 0: 1 */
    double opacity;       /* of the fill; 0: 1 (opaque) */
    const char *dash;     /* stroke-dasharray, e.g. "6 3"; NULL: solid */
} ng_svg_style;

void ng_svg_line(ng_svg *s, double x1, double y1, double x2, double y2,
                 const ng_svg_style *st);
void ng_svg_rect(ng_svg *s, double x, double y, double w, double h,
                 const ng_svg_style *st);
void ng_svg_circle(ng_svg *s, double cx, double cy, double r,
                   const ng_svg_style *st);
/* An open polyline (closed = 0) or a polygon (closed = 1) through n points
 * x[i], y[i]; points that are not finite are skipped. */
void ng_svg_polyline(ng_svg *s, const double *x, const double *y, size_t n,
                     int closed, const ng_svg_style *st);

typedef enum ng_svg_anchor {
    NG_SVG_START = 0,
    NG_SVG_MIDDLE,
    NG_SVG_END
} ng_svg_anchor;

typedef struct ng_svg_font {
    double size;          /* pixels; 0: 12 */
    ng_svg_anchor anchor;
    int bold;
    const char *colour;   /* NULL: the text colour */
    double rotate;        /* degrees about (x, y), e.g. −90 for a y label */
    const char *cls;      /* class attribute, or NULL */
} ng_svg_font;

/* Text with its baseline at y, escaped. */
void ng_svg_text(ng_svg *s, double x, double y, const char *text,
                 const ng_svg_font *font);

/* Estimated width in pixels of text set in the document font at size
 * (0.58 em per character, counting UTF-8 characters). */
double ng_svg_text_width(const char *text, double size);

/* ---- numbers on axes ---- */

/* Tick values first + i·step, i = 0..count−1, for the range [lo, hi]. */
typedef struct ng_svg_ticks {
    double lo, hi;    /* the axis range (loose: widened to tick values) */
    double first;     /* the first tick value */
    double step;      /* 1, 2 or 5 × 10^e */
    int count;        /* ≥ 2 unless the range is a single tick */
    int decimals;     /* digits after the point that the labels need */
} ng_svg_ticks;

/* Nice tick values for the data range [lo, hi] with about target ticks
 * (Heckbert's "nice numbers" rule, Graphics Gems, 1990: the step is 1, 2
 * or 5 times a power of ten). loose: the axis range is widened to the
 * nearest tick values outside [lo, hi]; otherwise it stays [lo, hi] and
 * only the ticks inside are kept. lo > hi are swapped; an empty range
 * (lo == hi) is widened around the value; non-finite ends give [0, 1]. */
void ng_svg_ticks_make(double lo, double hi, int target, int loose,
                       ng_svg_ticks *out);

/* Tick i as text with the ticks' decimals ("0", "2.5", "1e+06" for large
 * or tiny values); "-0" never appears. */
void ng_svg_tick_label(const ng_svg_ticks *t, int i, char *buf, size_t size);

/* A number for a label with up to sig significant digits ("12.7", "inf"). */
void ng_svg_number(double v, int sig, char *buf, size_t size);

/* ---- plots ---- */

typedef struct ng_svg_axis {
    ng_svg_ticks ticks; /* ticks.lo, ticks.hi: the data range shown */
    double p0, p1;      /* pixel positions of ticks.lo and ticks.hi */
} ng_svg_axis;

/* A plot area of w × h pixels at (x, y) (top left of the area inside the
 * axes) and the data ranges its axes show. */
typedef struct ng_svg_plot {
    double x, y, w, h;
    ng_svg_axis xa, ya;
} ng_svg_plot;

/* Sets the area and the axes: x from xlo to xhi, y from ylo to yhi (y
 * grows upwards); each axis is loose (widened to nice ticks) or tight. */
void ng_svg_plot_init(ng_svg_plot *p, double x, double y, double w, double h,
                      double xlo, double xhi, int xloose, double ylo,
                      double yhi, int yloose);
/* Pixel of a data value; values outside the range map outside the area. */
double ng_svg_px(const ng_svg_plot *p, double v);
double ng_svg_py(const ng_svg_plot *p, double v);

/* Draws light grid lines at the ticks, the frame, the tick marks and
 * values (class "tick") and the axis labels (class "axis-label"), inside
 * a group of class "axis x" / "axis y" whose data-min and data-max
 * attributes are the axis range. xlabel / ylabel may be NULL: that axis
 * then gets no grid lines, ticks or label (a ranked or categorical axis
 * that the caller labels itself). */
void ng_svg_plot_axes(ng_svg *s, const ng_svg_plot *p, const char *xlabel,
                      const char *ylabel);

/* ---- legends ---- */

typedef enum ng_svg_key_kind {
    NG_SVG_KEY_LINE = 0,  /* a line in the style (stroke, dash) */
    NG_SVG_KEY_BOX,       /* a filled square */
    NG_SVG_KEY_DOT,       /* a circle */
    NG_SVG_KEY_ARROW      /* the marker of a bar alive at the limit */
} ng_svg_key_kind;

typedef struct ng_svg_key {
    ng_svg_key_kind kind;
    ng_svg_style style;
    const char *label;
} ng_svg_key;

/* A legend box with its top-left corner at (x, y) in a group of class
 * "legend": one key per line, or all keys on one line (across). Returns
 * the height drawn. */
double ng_svg_legend(ng_svg *s, double x, double y, const ng_svg_key *keys,
                     int n, int across);
/* Width the legend of these keys needs. */
double ng_svg_legend_width(const ng_svg_key *keys, int n, int across);

/* The marker of a bar alive at the scale limit: a small triangle pointing
 * right with its tip at (x, y). */
void ng_svg_arrow(ng_svg *s, double x, double y, double size,
                  const char *colour);

/* ---- colours ---- */

typedef struct ng_svg_rgb {
    unsigned char r, g, b;
} ng_svg_rgb;

/* The categorical colours of the data series, chosen by hand so that
 * every pair stays distinct for readers with protanopia, deuteranopia or
 * tritanopia (they differ in lightness and along the blue–yellow axis,
 * which dichromats keep) and each stands out on white; test_svg.c checks
 * both with published simulation and contrast formulas. */
enum {
    NG_SVG_BLUE = 0,  /* Čech; file A */
    NG_SVG_ORANGE,    /* Rips; file B */
    NG_SVG_WINE,
    NG_SVG_TEAL,
    NG_SVG_N_SERIES
};
extern const ng_svg_rgb ng_svg_series_rgb[NG_SVG_N_SERIES];
/* "#rrggbb" of series colour i (taken modulo NG_SVG_N_SERIES). */
const char *ng_svg_series(int i);

/* Neutral colours: text, axes, grid lines; the fill of balls. */
#define NG_SVG_INK "#222222"
#define NG_SVG_AXIS "#555555"
#define NG_SVG_GRID "#e4e4e4"
#define NG_SVG_BALL "#8ec3e6"

/* The sequential colour map of heat maps: u in [0, 1] from a light cream
 * (0) to a dark violet (1) through orange, with lightness decreasing
 * strictly along the map for every reader (test_svg.c checks it under the
 * same simulations). u outside [0, 1] is clamped. */
ng_svg_rgb ng_svg_sequential(double u);

/* "#rrggbb" of c into out. */
void ng_svg_hex(ng_svg_rgb c, char out[8]);

#endif
