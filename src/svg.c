/* svg.c — SVG drawing primitives (svg.h).
 *
 * Everything is appended to one growing buffer. Numbers are printed with
 * "%.2f" for pixel coordinates (a hundredth of a pixel is below what any
 * renderer shows) in the C locale, which the command line never changes.
 */
#include "svg.h"
#include "alloc.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

/* ---- the text buffer ---- */

void ng_svg_init(ng_svg *s)
{
    memset(s, 0, sizeof *s);
}

void ng_svg_release(ng_svg *s)
{
    if (s == NULL) return;
    ng_free(s->data);
    memset(s, 0, sizeof *s);
}

/* Makes room for extra more bytes and the NUL; 0 on failure. */
static int reserve(ng_svg *s, size_t extra)
{
    if (s->failed) return 0;
    if (s->length + extra + 1 <= s->capacity) return 1;
    size_t cap = s->capacity ? s->capacity : 4096;
    while (cap < s->length + extra + 1) {
        if (cap > ((size_t)-1) / 2) {
            s->failed = 1;
            return 0;
        }
        cap *= 2;
    }
    char *p = ng_realloc(s->data, cap, 1);
    if (p == NULL) {
        s->failed = 1;
        return 0;
    }
    s->data = p;
    s->capacity = cap;
    return 1;
}

void ng_svg_append(ng_svg *s, const char *text, size_t len)
{
    if (!reserve(s, len)) return;
    memcpy(s->data + s->length, text, len);
    s->length += len;
    s->data[s->length] = '\0';
}

void ng_svg_printf(ng_svg *s, const char *fmt, ...)
{
    if (s->failed) return;
    char small[256];
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(small, sizeof small, fmt, ap);
    va_end(ap);
    if (n < 0) {
        s->failed = 1;
        return;
    }
    if ((size_t)n < sizeof small) {
        ng_svg_append(s, small, (size_t)n);
        return;
    }
    if (!reserve(s, (size_t)n)) return;
    va_start(ap, fmt);
    vsnprintf(s->data + s->length, (size_t)n + 1, fmt, ap);
    va_end(ap);
    s->length += (size_t)n;
}

/* Length of the valid UTF-8 sequence at p (1..4), or 0 when the bytes
 * there are not one (RFC 3629: no overlong forms, no surrogates, nothing
 * above U+10FFFF). */
static int utf8_sequence(const unsigned char *p)
{
    unsigned char c = p[0];
    if (c < 0x80) return 1;
    if (c >= 0xC2 && c <= 0xDF) return (p[1] & 0xC0) == 0x80 ? 2 : 0;
    if (c >= 0xE0 && c <= 0xEF) {
        unsigned char lo = c == 0xE0 ? 0xA0 : 0x80;
        unsigned char hi = c == 0xED ? 0x9F : 0xBF;
        if (p[1] < lo || p[1] > hi || (p[2] & 0xC0) != 0x80) return 0;
        /* U+FFFE and U+FFFF are not XML characters */
        if (c == 0xEF && p[1] == 0xBF && (p[2] == 0xBE || p[2] == 0xBF))
            return 0;
        return 3;
    }
    if (c >= 0xF0 && c <= 0xF4) {
        unsigned char lo = c == 0xF0 ? 0x90 : 0x80;
        unsigned char hi = c == 0xF4 ? 0x8F : 0xBF;
        if (p[1] < lo || p[1] > hi || (p[2] & 0xC0) != 0x80 ||
            (p[3] & 0xC0) != 0x80)
            return 0;
        return 4;
    }
    return 0;
}

void ng_svg_escape(ng_svg *s, const char *text)
{
    static const char replacement[] = "\xEF\xBF\xBD"; /* U+FFFD */
    const unsigned char *p = (const unsigned char *)text;
    while (*p) {
        int n = utf8_sequence(p);
        if (n == 0) {
            ng_svg_append(s, replacement, 3);
            p++;
            continue;
        }
        if (n > 1) {
            ng_svg_append(s, (const char *)p, (size_t)n);
            p += n;
            continue;
        }
        switch (*p) {
        case '&': ng_svg_append(s, "&amp;", 5); break;
        case '<': ng_svg_append(s, "&lt;", 4); break;
        case '>': ng_svg_append(s, "&gt;", 4); break;
        case '"': ng_svg_append(s, "&quot;", 6); break;
        case '\'': ng_svg_append(s, "&#39;", 5); break;
        default:
            if (*p < 0x20 && *p != '\t' && *p != '\n')
                ng_svg_append(s, replacement, 3);
            else
                ng_svg_append(s, (const char *)p, 1);
        }
        p++;
    }
}

/* ---- documents and groups ---- */

void ng_svg_document_begin(ng_svg *s, double width, double height,
                           const char *title, int inline_html)
{
    if (!inline_html)
        ng_svg_printf(s, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    ng_svg_printf(s,
                  "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" "
                  "width=\"%.0f\" height=\"%.0f\" viewBox=\"0 0 %.0f %.0f\" "
                  "font-family=\"DejaVu Sans, Verdana, Arial, sans-serif\" "
                  "font-size=\"12\" fill=\"%s\">\n",
                  width, height, width, height, NG_SVG_INK);
    if (title) {
        ng_svg_printf(s, "<title>");
        ng_svg_escape(s, title);
        ng_svg_printf(s, "</title>\n");
    }
    ng_svg_printf(s, "<rect x=\"0\" y=\"0\" width=\"%.0f\" height=\"%.0f\" "
                     "fill=\"#ffffff\"/>\n", width, height);
}

void ng_svg_document_end(ng_svg *s)
{
    ng_svg_printf(s, "</svg>\n");
}

void ng_svg_group_begin(ng_svg *s, const char *id, const char *cls,
                        const char *title, double dx, double dy)
{
    ng_svg_printf(s, "<g");
    if (id) {
        ng_svg_printf(s, " id=\"");
        ng_svg_escape(s, id);
        ng_svg_printf(s, "\"");
    }
    if (cls) {
        ng_svg_printf(s, " class=\"");
        ng_svg_escape(s, cls);
        ng_svg_printf(s, "\"");
    }
    if (dx != 0.0 || dy != 0.0)
        ng_svg_printf(s, " transform=\"translate(%.2f %.2f)\"", dx, dy);
    ng_svg_printf(s, ">");
    if (title) {
        ng_svg_printf(s, "<title>");
        ng_svg_escape(s, title);
        ng_svg_printf(s, "</title>");
    }
    ng_svg_printf(s, "\n");
}

void ng_svg_group_end(ng_svg *s)
{
    ng_svg_printf(s, "</g>\n");
}

/* ---- shapes ---- */

static void style_attributes(ng_svg *s, const ng_svg_style *st)
{
    ng_svg_printf(s, " fill=\"%s\"", st && st->fill ? st->fill : "none");
    if (st && st->fill && st->opacity > 0.0 && st->opacity < 1.0)
        ng_svg_printf(s, " fill-opacity=\"%.2f\"", st->opacity);
    if (st && st->stroke) {
        ng_svg_printf(s, " stroke=\"%s\"", st->stroke);
        if (st->stroke_width > 0.0 && st->stroke_width != 1.0)
            ng_svg_printf(s, " stroke-width=\"%.2f\"", st->stroke_width);
        if (st->dash) ng_svg_printf(s, " stroke-dasharray=\"%s\"", st->dash);
    }
}

void ng_svg_line(ng_svg *s, double x1, double y1, double x2, double y2,
                 const ng_svg_style *st)
{
    ng_svg_printf(s, "<line x1=\"%.2f\" y1=\"%.2f\" x2=\"%.2f\" y2=\"%.2f\"",
                  x1, y1, x2, y2);
    style_attributes(s, st);
    ng_svg_printf(s, "/>\n");
}

void ng_svg_rect(ng_svg *s, double x, double y, double w, double h,
                 const ng_svg_style *st)
{
    ng_svg_printf(s,
                  "<rect x=\"%.2f\" y=\"%.2f\" width=\"%.2f\" height=\"%.2f\"",
                  x, y, w > 0 ? w : 0, h > 0 ? h : 0);
    style_attributes(s, st);
    ng_svg_printf(s, "/>\n");
}

void ng_svg_circle(ng_svg *s, double cx, double cy, double r,
                   const ng_svg_style *st)
{
    ng_svg_printf(s, "<circle cx=\"%.2f\" cy=\"%.2f\" r=\"%.2f\"", cx, cy,
                  r > 0 ? r : 0);
    style_attributes(s, st);
    ng_svg_printf(s, "/>\n");
}

void ng_svg_polyline(ng_svg *s, const double *x, const double *y, size_t n,
                     int closed, const ng_svg_style *st)
{
    ng_svg_printf(s, closed ? "<polygon points=\"" : "<polyline points=\"");
    int first = 1;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(x[i]) || !isfinite(y[i])) continue;
        ng_svg_printf(s, first ? "%.2f,%.2f" : " %.2f,%.2f", x[i], y[i]);
        first = 0;
    }
    ng_svg_printf(s, "\"");
    if (!closed)
        ng_svg_printf(s, " stroke-linejoin=\"round\"");
    style_attributes(s, st);
    ng_svg_printf(s, "/>\n");
}

void ng_svg_text(ng_svg *s, double x, double y, const char *text,
                 const ng_svg_font *font)
{
    static const char *anchors[] = {"start", "middle", "end"};
    ng_svg_font plain = {0};
    if (font == NULL) font = &plain;
    ng_svg_printf(s, "<text x=\"%.2f\" y=\"%.2f\"", x, y);
    if (font->size > 0 && font->size != 12)
        ng_svg_printf(s, " font-size=\"%.1f\"", font->size);
    if (font->anchor != NG_SVG_START)
        ng_svg_printf(s, " text-anchor=\"%s\"", anchors[font->anchor]);
    if (font->bold) ng_svg_printf(s, " font-weight=\"bold\"");
    if (font->colour) ng_svg_printf(s, " fill=\"%s\"", font->colour);
    if (font->rotate != 0.0)
        ng_svg_printf(s, " transform=\"rotate(%.1f %.2f %.2f)\"",
                      font->rotate, x, y);
    if (font->cls) {
        ng_svg_printf(s, " class=\"");
        ng_svg_escape(s, font->cls);
        ng_svg_printf(s, "\"");
    }
    ng_svg_printf(s, ">");
    ng_svg_escape(s, text);
    ng_svg_printf(s, "</text>\n");
}

double ng_svg_text_width(const char *text, double size)
{
    size_t chars = 0;
    for (const unsigned char *p = (const unsigned char *)text; *p; p++)
        chars += (*p & 0xC0) != 0x80;
    return 0.58 * (size > 0 ? size : 12) * (double)chars;
}

/* ---- numbers on axes ---- */

/* Heckbert's nice number near x > 0: 1, 2, 5 or 10 times a power of ten,
 * the nearest (round) or the smallest not below x. */
static double nice_number(double x, int round)
{
    double e = floor(log10(x));
    double unit = pow(10.0, e);
    double f = x / unit, nf;
    if (round)
        nf = f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10;
    else
        nf = f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10;
    return nf * unit;
}

/* The next smaller step of the 1-2-5 series. */
static double smaller_step(double step)
{
    double e = floor(log10(step) + 1e-9);
    double unit = pow(10.0, e);
    double f = step / unit;
    if (f > 4.5) return 2 * unit;
    if (f > 1.5) return unit;
    return 0.5 * unit;
}

void ng_svg_ticks_make(double lo, double hi, int target, int loose,
                       ng_svg_ticks *out)
{
    if (!isfinite(lo) || !isfinite(hi)) {
        lo = 0.0;
        hi = 1.0;
    }
    if (lo > hi) {
        double t = lo;
        lo = hi;
        hi = t;
    }
    if (hi == lo) { /* one value: a range around it */
        double w = lo == 0.0 ? 1.0 : fabs(lo) * 0.1;
        if (lo >= 0.0 && lo - w < 0.0) lo = 0.0;
        else lo -= w;
        hi += w;
    }
    if (target < 2) target = 2;
    double range = nice_number(hi - lo, 0);
    double step = nice_number(range / (target - 1), 1);
    const double eps = 1e-9;
    double k0, k1;
    for (;;) {
        if (loose) {
            k0 = floor(lo / step + eps);
            k1 = ceil(hi / step - eps);
        } else {
            k0 = ceil(lo / step - eps);
            k1 = floor(hi / step + eps);
        }
        /* a tight range can hold too few ticks: refine the step */
        if (loose || k1 - k0 + 1 >= 3 || step <= (hi - lo) * 1e-6) break;
        step = smaller_step(step);
    }
    out->step = step;
    out->first = k0 * step;
    out->count = (int)(k1 - k0 + 1);
    if (out->count < 1) out->count = 1;
    out->lo = loose ? k0 * step : lo;
    out->hi = loose ? k1 * step : hi;
    int d = (int)-floor(log10(step) + eps);
    out->decimals = d > 0 ? d : 0;
}

/* "1.5e+07" → "1.5e7", "2e-05" → "2e-5". */
static void tidy_exponent(char *buf)
{
    char *e = strchr(buf, 'e');
    if (e == NULL) return;
    char *src = e + 1, *dst = e + 1;
    if (*src == '+') src++;
    else if (*src == '-') *dst++ = *src++;
    while (*src == '0' && src[1] != '\0') src++;
    memmove(dst, src, strlen(src) + 1);
}

void ng_svg_tick_label(const ng_svg_ticks *t, int i, char *buf, size_t size)
{
    double v = t->first + i * t->step;
    if (fabs(v) < t->step * 1e-9) v = 0.0; /* no "-0" */
    double big = fmax(fabs(t->lo), fabs(t->hi));
    if (big >= 1e7 || t->step < 1e-4) {
        /* scientific: as many mantissa digits as the step needs */
        int digits = 0;
        if (v != 0.0)
            digits = (int)(floor(log10(fabs(v)) + 1e-9) -
                           floor(log10(t->step) + 1e-9));
        if (digits < 0) digits = 0;
        snprintf(buf, size, "%.*e", digits, v);
        tidy_exponent(buf);
    } else {
        snprintf(buf, size, "%.*f", t->decimals, v);
    }
}

void ng_svg_number(double v, int sig, char *buf, size_t size)
{
    if (isnan(v)) snprintf(buf, size, "nan");
    else if (isinf(v)) snprintf(buf, size, v > 0 ? "∞" : "−∞");
    else {
        snprintf(buf, size, "%.*g", sig, v == 0.0 ? 0.0 : v);
        tidy_exponent(buf);
    }
}

/* ---- plots ---- */

static void axis_init(ng_svg_axis *a, double lo, double hi, int loose,
                      double p0, double p1, int target)
{
    ng_svg_ticks_make(lo, hi, target, loose, &a->ticks);
    a->p0 = p0;
    a->p1 = p1;
}

static double axis_map(const ng_svg_axis *a, double v)
{
    double span = a->ticks.hi - a->ticks.lo;
    return a->p0 + (v - a->ticks.lo) / span * (a->p1 - a->p0);
}

void ng_svg_plot_init(ng_svg_plot *p, double x, double y, double w, double h,
                      double xlo, double xhi, int xloose, double ylo,
                      double yhi, int yloose)
{
    p->x = x;
    p->y = y;
    p->w = w;
    p->h = h;
    /* about one tick per 90 px across, one per 45 px up */
    int xt = (int)(w / 90.0) + 1, yt = (int)(h / 45.0) + 1;
    axis_init(&p->xa, xlo, xhi, xloose, x, x + w, xt < 3 ? 3 : xt);
    axis_init(&p->ya, ylo, yhi, yloose, y + h, y, yt < 3 ? 3 : yt);
}

double ng_svg_px(const ng_svg_plot *p, double v)
{
    return axis_map(&p->xa, v);
}

double ng_svg_py(const ng_svg_plot *p, double v)
{
    return axis_map(&p->ya, v);
}

static void axis_group_begin(ng_svg *s, const char *cls,
                             const ng_svg_axis *a, const char *label)
{
    ng_svg_printf(s, "<g class=\"%s\" data-min=\"%.17g\" data-max=\"%.17g\"",
                  cls, a->ticks.lo, a->ticks.hi);
    if (label) {
        ng_svg_printf(s, " data-label=\"");
        ng_svg_escape(s, label);
        ng_svg_printf(s, "\"");
    }
    ng_svg_printf(s, ">\n");
}

void ng_svg_plot_axes(ng_svg *s, const ng_svg_plot *p, const char *xlabel,
                      const char *ylabel)
{
    const ng_svg_style grid = {NG_SVG_GRID, NULL, 1, 0, NULL};
    const ng_svg_style axis = {NG_SVG_AXIS, NULL, 1, 0, NULL};
    const ng_svg_font tick_x = {11, NG_SVG_MIDDLE, 0, NULL, 0, "tick"};
    const ng_svg_font tick_y = {11, NG_SVG_END, 0, NULL, 0, "tick"};
    const ng_svg_font label_x = {12, NG_SVG_MIDDLE, 0, NULL, 0,
                                 "axis-label"};
    char buf[64];
    double bottom = p->y + p->h, left = p->x;
    /* grid lines first, under everything */
    for (int i = 0; xlabel && i < p->xa.ticks.count; i++) {
        double x = ng_svg_px(p, p->xa.ticks.first + i * p->xa.ticks.step);
        ng_svg_line(s, x, p->y, x, bottom, &grid);
    }
    for (int i = 0; ylabel && i < p->ya.ticks.count; i++) {
        double y = ng_svg_py(p, p->ya.ticks.first + i * p->ya.ticks.step);
        ng_svg_line(s, left, y, left + p->w, y, &grid);
    }
    ng_svg_rect(s, p->x, p->y, p->w, p->h, &axis);

    axis_group_begin(s, "axis x", &p->xa, xlabel);
    for (int i = 0; xlabel && i < p->xa.ticks.count; i++) {
        double x = ng_svg_px(p, p->xa.ticks.first + i * p->xa.ticks.step);
        ng_svg_line(s, x, bottom, x, bottom + 4, &axis);
        ng_svg_tick_label(&p->xa.ticks, i, buf, sizeof buf);
        ng_svg_text(s, x, bottom + 16, buf, &tick_x);
    }
    if (xlabel) ng_svg_text(s, left + p->w / 2, bottom + 33, xlabel, &label_x);
    ng_svg_group_end(s);

    axis_group_begin(s, "axis y", &p->ya, ylabel);
    double widest = 0;
    for (int i = 0; ylabel && i < p->ya.ticks.count; i++) {
        double y = ng_svg_py(p, p->ya.ticks.first + i * p->ya.ticks.step);
        ng_svg_line(s, left - 4, y, left, y, &axis);
        ng_svg_tick_label(&p->ya.ticks, i, buf, sizeof buf);
        ng_svg_text(s, left - 6, y + 4, buf, &tick_y);
        widest = fmax(widest, ng_svg_text_width(buf, 11));
    }
    if (ylabel) {
        ng_svg_font label_y = label_x;
        label_y.rotate = -90;
        ng_svg_text(s, left - 12 - widest, p->y + p->h / 2, ylabel,
                    &label_y);
    }
    ng_svg_group_end(s);
}

/* ---- legends ---- */

#define KEY_ROW 17.0
#define KEY_SWATCH 24.0
#define KEY_FONT 12.0
#define KEY_GAP 18.0

/* Width of one key: swatch, gap, label. */
static double key_width(const ng_svg_key *k)
{
    return KEY_SWATCH + 8 + ng_svg_text_width(k->label, KEY_FONT);
}

double ng_svg_legend_width(const ng_svg_key *keys, int n, int across)
{
    double w = 0;
    for (int i = 0; i < n; i++) {
        double kw = key_width(&keys[i]);
        w = across ? w + kw + (i ? KEY_GAP : 0) : fmax(w, kw);
    }
    return w + 14;
}

void ng_svg_arrow(ng_svg *s, double x, double y, double size,
                  const char *colour)
{
    double px[3] = {x - size, x, x - size};
    double py[3] = {y - size * 0.6, y, y + size * 0.6};
    const ng_svg_style st = {NULL, colour, 0, 0, NULL};
    ng_svg_polyline(s, px, py, 3, 1, &st);
}

double ng_svg_legend(ng_svg *s, double x, double y, const ng_svg_key *keys,
                     int n, int across)
{
    const ng_svg_style frame = {"#bbbbbb", "#ffffff", 1, 0.92, NULL};
    const ng_svg_font font = {KEY_FONT, NG_SVG_START, 0, NULL, 0, NULL};
    double w = ng_svg_legend_width(keys, n, across);
    double h = 8 + KEY_ROW * (across ? 1 : n);
    ng_svg_printf(s, "<g class=\"legend\">\n");
    ng_svg_rect(s, x, y, w, h, &frame);
    double sx = x + 7, cy = y + 4 + KEY_ROW * 0.5;
    for (int i = 0; i < n; i++) {
        const ng_svg_key *k = &keys[i];
        switch (k->kind) {
        case NG_SVG_KEY_LINE: {
            ng_svg_style st = k->style;
            if (st.stroke_width < 2) st.stroke_width = 2;
            ng_svg_line(s, sx, cy, sx + KEY_SWATCH, cy, &st);
            break;
        }
        case NG_SVG_KEY_BOX:
            ng_svg_rect(s, sx + 4, cy - 6, KEY_SWATCH - 8, 12, &k->style);
            break;
        case NG_SVG_KEY_DOT:
            ng_svg_circle(s, sx + KEY_SWATCH / 2, cy, 4, &k->style);
            break;
        case NG_SVG_KEY_ARROW:
            ng_svg_line(s, sx, cy, sx + KEY_SWATCH - 6, cy, &k->style);
            ng_svg_arrow(s, sx + KEY_SWATCH, cy, 6, k->style.stroke);
            break;
        }
        ng_svg_text(s, sx + KEY_SWATCH + 8, cy + 4, k->label, &font);
        if (across) {
            sx += key_width(k) + KEY_GAP;
        } else {
            cy += KEY_ROW;
        }
    }
    ng_svg_printf(s, "</g>\n");
    return h;
}

/* ---- colours ---- */

const ng_svg_rgb ng_svg_series_rgb[NG_SVG_N_SERIES] = {
    {0x1F, 0x5F, 0xA8}, /* blue, lightness L* 40 */
    {0xC9, 0x65, 0x00}, /* orange, L* 54 */
    {0x7A, 0x28, 0x50}, /* wine, L* 30 */
    {0x2E, 0x9C, 0x8C}, /* teal, L* 58 */
};

static const char *const series_hex[NG_SVG_N_SERIES] = {
    "#1f5fa8", "#c96500", "#7a2850", "#2e9c8c"};

const char *ng_svg_series(int i)
{
    if (i < 0) i = -i;
    return series_hex[i % NG_SVG_N_SERIES];
}

/* Control points of the sequential map, equally spaced in u; the
 * lightness L* of each is 97, 83, 66, 45, 18. */
static const ng_svg_rgb sequential_points[] = {
    {0xFB, 0xF7, 0xE4}, {0xF2, 0xC8, 0x79}, {0xDE, 0x8A, 0x4A},
    {0xA8, 0x43, 0x6B}, {0x3B, 0x1C, 0x5A}};

ng_svg_rgb ng_svg_sequential(double u)
{
    const int last = (int)(sizeof sequential_points /
                           sizeof sequential_points[0]) - 1;
    if (!(u > 0.0)) u = 0.0; /* NaN too */
    if (u > 1.0) u = 1.0;
    int k = (int)(u * last);
    if (k >= last) k = last - 1;
    double f = u * last - k;
    const ng_svg_rgb *a = &sequential_points[k], *b = &sequential_points[k + 1];
    ng_svg_rgb c = {
        (unsigned char)lround(a->r + f * (b->r - a->r)),
        (unsigned char)lround(a->g + f * (b->g - a->g)),
        (unsigned char)lround(a->b + f * (b->b - a->b)),
    };
    return c;
}

void ng_svg_hex(ng_svg_rgb c, char out[8])
{
    snprintf(out, 8, "#%02x%02x%02x", c.r, c.g, c.b);
}
