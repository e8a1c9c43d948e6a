/* test_svg.c — the SVG drawing primitives (src/svg.h): XML escaping, the
 * nice tick values of axes, the growing buffer under allocation failures,
 * and the colours: the series colours against colour-vision-deficiency
 * simulation and a contrast standard, the sequential map's lightness. */
#include "svg.h"
#include "alloc.h"

#include <check.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static char *escaped(const char *text)
{
    static char out[512];
    ng_svg s;
    ng_svg_init(&s);
    ng_svg_escape(&s, text);
    ck_assert(!s.failed);
    snprintf(out, sizeof out, "%s", s.data ? s.data : "");
    ng_svg_release(&s);
    return out;
}

#define FFFD "\xEF\xBF\xBD"

START_TEST(escape_markup_characters)
{
    ck_assert_str_eq(escaped("a < b && c > d"), "a &lt; b &amp;&amp; c &gt; d");
    ck_assert_str_eq(escaped("say \"hi\" and 'bye'"),
                     "say &quot;hi&quot; and &#39;bye&#39;");
    ck_assert_str_eq(escaped("</text><script>"),
                     "&lt;/text&gt;&lt;script&gt;");
    ck_assert_str_eq(escaped("&amp;"), "&amp;amp;");
    ck_assert_str_eq(escaped(""), "");
}
END_TEST

START_TEST(escape_keeps_utf8_and_replaces_what_xml_forbids)
{
    /* valid UTF-8 passes through: Č (2 bytes), ⊆ (3), 𝛽 (4) */
    ck_assert_str_eq(escaped("Čech ⊆ \xF0\x9D\x9B\xBD"),
                     "Čech ⊆ \xF0\x9D\x9B\xBD");
    /* tab and newline are XML characters; other controls are not */
    ck_assert_str_eq(escaped("a\tb\nc"), "a\tb\nc");
    ck_assert_str_eq(escaped("a\x01" "b\x1F"), "a" FFFD "b" FFFD);
    /* RFC 3629: a lone continuation byte, a truncated sequence, an
     * overlong form, a UTF-16 surrogate, above U+10FFFF */
    ck_assert_str_eq(escaped("\x80x"), FFFD "x");
    ck_assert_str_eq(escaped("\xC3("), FFFD "(");
    ck_assert_str_eq(escaped("\xC0\xAF"), FFFD FFFD);
    ck_assert_str_eq(escaped("\xED\xA0\x80"), FFFD FFFD FFFD);
    ck_assert_str_eq(escaped("\xF4\x90\x80\x80"), FFFD FFFD FFFD FFFD);
    /* U+FFFE is not an XML character; U+FFFD itself is */
    ck_assert_str_eq(escaped("\xEF\xBF\xBE"), FFFD FFFD FFFD);
    ck_assert_str_eq(escaped(FFFD), FFFD);
    /* a sequence cut by the end of the string */
    ck_assert_str_eq(escaped("ab\xE2\x8A"), "ab" FFFD FFFD);
}
END_TEST

START_TEST(text_and_attributes_are_escaped)
{
    ng_svg s;
    ng_svg_init(&s);
    const ng_svg_font f = {12, NG_SVG_MIDDLE, 0, NULL, 0, "a\"b"};
    ng_svg_text(&s, 1, 2, "x<y", &f);
    ng_svg_group_begin(&s, "id&1", NULL, "t>1", 0, 0);
    ng_svg_group_end(&s);
    ck_assert(!s.failed);
    ck_assert_ptr_nonnull(strstr(s.data, ">x&lt;y</text>"));
    ck_assert_ptr_nonnull(strstr(s.data, "class=\"a&quot;b\""));
    ck_assert_ptr_nonnull(strstr(s.data, "id=\"id&amp;1\""));
    ck_assert_ptr_nonnull(strstr(s.data, "<title>t&gt;1</title>"));
    ng_svg_release(&s);
}
END_TEST

/* ---- ticks ---- */

static int is_nice_step(double step)
{
    double e = floor(log10(step) + 1e-9), f = step / pow(10.0, e);
    return fabs(f - 1) < 1e-9 || fabs(f - 2) < 1e-9 || fabs(f - 5) < 1e-9;
}

/* Worked by hand from the rule (Heckbert, "Nice numbers for graph
 * labels", Graphics Gems, 1990): range = nice(hi − lo) rounded up, step =
 * nice(range / (target − 1)) rounded to the nearest of 1, 2, 5 × 10^e. */
START_TEST(ticks_worked_examples)
{
    ng_svg_ticks t;
    /* [0, 16]: range 20, step nice(5) = 5; tight: 0, 5, 10, 15 */
    ng_svg_ticks_make(0, 16, 5, 0, &t);
    ck_assert_double_eq(t.step, 5);
    ck_assert_double_eq(t.first, 0);
    ck_assert_int_eq(t.count, 4);
    ck_assert_double_eq(t.lo, 0);
    ck_assert_double_eq(t.hi, 16); /* a tight axis ends at the data */
    /* [0, 461] loose: range 500, step nice(100) = 100, axis 0..500 */
    ng_svg_ticks_make(0, 461, 6, 1, &t);
    ck_assert_double_eq(t.step, 100);
    ck_assert_int_eq(t.count, 6);
    ck_assert_double_eq(t.hi, 500);
    ck_assert_int_eq(t.decimals, 0);
    /* [1, 1.149] loose: range 0.2, step nice(0.05) = 0.05: 1 .. 1.15 */
    ng_svg_ticks_make(1, 1.149, 5, 1, &t);
    ck_assert_double_eq_tol(t.step, 0.05, 1e-15);
    ck_assert_double_eq_tol(t.first, 1.0, 1e-12);
    ck_assert_double_eq_tol(t.hi, 1.15, 1e-12);
    ck_assert_int_eq(t.count, 4);
    ck_assert_int_eq(t.decimals, 2);
    /* [−3.7, 12.2] loose: range nice(15.9) = 20, step 5: −5 .. 15 */
    ng_svg_ticks_make(-3.7, 12.2, 5, 1, &t);
    ck_assert_double_eq(t.step, 5);
    ck_assert_double_eq(t.lo, -5);
    ck_assert_double_eq(t.hi, 15);
    ck_assert_int_eq(t.count, 5);
    /* [0, 1] with 6 ticks: range 1, step nice(0.2) = 0.2 */
    ng_svg_ticks_make(0, 1, 6, 1, &t);
    ck_assert_double_eq_tol(t.step, 0.2, 1e-15);
    ck_assert_int_eq(t.count, 6);
    ck_assert_int_eq(t.decimals, 1);
}
END_TEST

START_TEST(ticks_degenerate_ranges)
{
    ng_svg_ticks t;
    ng_svg_ticks_make(0, 0, 5, 1, &t); /* nothing to show: 0..1 */
    ck_assert_double_eq(t.lo, 0);
    ck_assert_double_eq(t.hi, 1);
    ng_svg_ticks_make(5, 5, 5, 1, &t); /* one value: a range around it */
    ck_assert(t.lo < 5 && t.hi > 5 && t.count >= 2);
    ng_svg_ticks_make(NAN, 3, 5, 1, &t);
    ck_assert_double_eq(t.lo, 0);
    ck_assert_double_eq(t.hi, 1);
    ng_svg_ticks_make(3, INFINITY, 5, 0, &t);
    ck_assert_double_eq(t.hi, 1);
    ng_svg_ticks_make(10, 2, 5, 0, &t); /* swapped */
    ck_assert_double_eq(t.lo, 2);
    ck_assert_double_eq(t.hi, 10);
    /* a tight range too short for the first step gets a finer one */
    ng_svg_ticks_make(0.31, 0.39, 3, 0, &t);
    ck_assert_int_ge(t.count, 3);
    ck_assert(t.first >= 0.31 - 1e-12);
}
END_TEST

static double lcg(uint64_t *state)
{
    *state = *state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(*state >> 11) / 9007199254740992.0;
}

START_TEST(ticks_properties_on_many_ranges)
{
    uint64_t seed = 12345;
    for (int trial = 0; trial < 20000; trial++) {
        double mag = pow(10.0, floor(lcg(&seed) * 16) - 8);
        double a = (lcg(&seed) * 2 - 1) * mag, b = (lcg(&seed) * 2 - 1) * mag;
        if (trial % 3 == 0) a = 0; /* count and scale axes start at 0 */
        if (trial % 7 == 0) b = a + mag * 1e-3 * lcg(&seed); /* narrow */
        double lo = fmin(a, b), hi = fmax(a, b);
        int target = 3 + trial % 8, loose = trial % 2;
        ng_svg_ticks t;
        ng_svg_ticks_make(lo, hi, target, loose, &t);
        if (lo == hi) continue; /* widened: checked above */
        ck_assert_msg(is_nice_step(t.step), "step %g for [%g, %g]", t.step,
                      lo, hi);
        ck_assert_int_ge(t.count, 2);
        ck_assert_int_le(t.count, 3 * target);
        double last = t.first + (t.count - 1) * t.step, tol = t.step * 1e-6;
        if (loose) {
            /* the axis covers the data and ends on ticks, within a step */
            ck_assert(t.lo <= lo + tol && t.hi >= hi - tol);
            ck_assert(lo - t.lo < t.step + tol && t.hi - hi < t.step + tol);
            ck_assert(fabs(t.first - t.lo) <= tol && fabs(last - t.hi) <= tol);
        } else {
            /* the axis is the data range; every tick lies inside it */
            ck_assert(t.lo == lo && t.hi == hi);
            ck_assert(t.first >= lo - tol && last <= hi + tol);
            ck_assert(t.first - t.step < lo + tol); /* none missed */
            ck_assert(last + t.step > hi - tol);
        }
        /* labels are distinct and read back as the tick values */
        char prev[64] = "", buf[64];
        for (int i = 0; i < t.count; i++) {
            ng_svg_tick_label(&t, i, buf, sizeof buf);
            ck_assert_msg(strcmp(buf, prev) != 0, "label %s twice", buf);
            ck_assert_msg(fabs(strtod(buf, NULL) - (t.first + i * t.step)) <=
                              t.step * 1e-6,
                          "label %s for %.17g", buf, t.first + i * t.step);
            snprintf(prev, sizeof prev, "%s", buf);
        }
    }
}
END_TEST

START_TEST(tick_labels)
{
    ng_svg_ticks t;
    char buf[64];
    ng_svg_ticks_make(-1, 1, 5, 1, &t); /* −1, −0.5, 0, 0.5, 1 */
    ck_assert_int_eq(t.count, 5);
    ng_svg_tick_label(&t, 2, buf, sizeof buf);
    ck_assert_str_eq(buf, "0.0"); /* the decimals of the axis, never "-0.0" */
    ng_svg_tick_label(&t, 0, buf, sizeof buf);
    ck_assert_str_eq(buf, "-1.0");
    /* large: scientific; range nice(2.5e7) = 5e7, step nice(1.25e7) = 1e7 */
    ng_svg_ticks_make(0, 2.5e7, 5, 1, &t);
    ng_svg_tick_label(&t, 1, buf, sizeof buf);
    ck_assert_str_eq(buf, "1e7");
    ng_svg_ticks_make(0, 2.5e7, 11, 1, &t); /* step 5e6: 1.5e7 */
    ng_svg_tick_label(&t, 3, buf, sizeof buf);
    ck_assert_str_eq(buf, "1.5e7");
    /* tiny: range nice(3e-5) = 5e-5, step nice(1.67e-5) = 2e-5 */
    ng_svg_ticks_make(0, 3e-5, 4, 1, &t);
    ng_svg_tick_label(&t, 1, buf, sizeof buf);
    ck_assert_str_eq(buf, "2e-5");
    ng_svg_number(INFINITY, 4, buf, sizeof buf);
    ck_assert_str_eq(buf, "∞");
    ng_svg_number(12.7349, 4, buf, sizeof buf);
    ck_assert_str_eq(buf, "12.73");
}
END_TEST

START_TEST(plot_maps_ranges_to_pixels)
{
    ng_svg_plot p;
    ng_svg_plot_init(&p, 10, 20, 300, 200, 0, 16, 0, 0, 461, 1);
    ck_assert_double_eq_tol(ng_svg_px(&p, 0), 10, 1e-12);
    ck_assert_double_eq_tol(ng_svg_px(&p, 16), 310, 1e-12);
    ck_assert_double_eq_tol(ng_svg_py(&p, 0), 220, 1e-12); /* y grows up */
    ck_assert_double_eq_tol(ng_svg_py(&p, p.ya.ticks.hi), 20, 1e-12);
    ck_assert(p.ya.ticks.hi >= 461);
}
END_TEST

START_TEST(buffer_grows_and_fails_cleanly)
{
    ng_svg s;
    ng_svg_init(&s);
    char long_text[5000];
    memset(long_text, 'x', sizeof long_text - 1);
    long_text[sizeof long_text - 1] = '\0';
    for (int i = 0; i < 10; i++) ng_svg_printf(&s, "%s|", long_text);
    ck_assert(!s.failed);
    ck_assert_uint_eq(s.length, 10 * sizeof long_text);
    ck_assert_uint_eq(strlen(s.data), s.length);
    ng_svg_release(&s);

    ng_svg_init(&s);
    ng_svg_printf(&s, "start");
    ng_alloc_fail_after(0);
    ng_svg_printf(&s, "%s", long_text); /* needs to grow: fails */
    ng_alloc_fail_after(-1);
    ck_assert(s.failed);
    ng_svg_printf(&s, "more"); /* a no-op after the failure */
    ck_assert_str_eq(s.data, "start");
    ng_svg_release(&s);
}
END_TEST

/* ---- colours ---- */

static double linear(unsigned char c)
{
    double v = c / 255.0;
    return v <= 0.04045 ? v / 12.92 : pow((v + 0.055) / 1.055, 2.4);
}

/* Simulated dichromat vision in linear RGB, severity 1: Machado,
 * Oliveira and Fernandes, "A physiologically-based model for simulation
 * of color vision deficiency", IEEE TVCG 15(6), 2009 (matrices from
 * memory; each row sums to 1, so white stays white, checked below). */
static const double vision[4][3][3] = {
    {{1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
    {{0.152286, 1.052583, -0.204868}, /* protanopia */
     {0.114503, 0.786281, 0.099216},
     {-0.003882, -0.048116, 1.051998}},
    {{0.367322, 0.860646, -0.227968}, /* deuteranopia */
     {0.280085, 0.672501, 0.047413},
     {-0.011820, 0.042940, 0.968881}},
    {{1.255528, -0.076749, -0.178779}, /* tritanopia */
     {-0.078411, 0.930809, 0.147602},
     {0.004733, 0.691367, 0.303900}},
};
static const char *vision_name[4] = {"normal", "protanopia", "deuteranopia",
                                     "tritanopia"};

/* CIELAB (D65 white) of a colour as seen under vision v (CIE 15:2004
 * formulas; sRGB to XYZ by IEC 61966-2-1). */
static void lab_of(ng_svg_rgb c, int v, double lab[3])
{
    double rgb[3] = {linear(c.r), linear(c.g), linear(c.b)}, s[3];
    for (int i = 0; i < 3; i++) {
        s[i] = 0;
        for (int j = 0; j < 3; j++) s[i] += vision[v][i][j] * rgb[j];
        s[i] = fmin(1, fmax(0, s[i]));
    }
    double X = 0.4124564 * s[0] + 0.3575761 * s[1] + 0.1804375 * s[2];
    double Y = 0.2126729 * s[0] + 0.7151522 * s[1] + 0.0721750 * s[2];
    double Z = 0.0193339 * s[0] + 0.1191920 * s[1] + 0.9503041 * s[2];
    double w[3] = {0.95047, 1.0, 1.08883}, t[3] = {X, Y, Z}, f[3];
    for (int i = 0; i < 3; i++) {
        double r = t[i] / w[i];
        f[i] = r > 216.0 / 24389 ? cbrt(r) : (24389.0 / 27 * r + 16) / 116;
    }
    lab[0] = 116 * f[1] - 16;
    lab[1] = 500 * (f[0] - f[1]);
    lab[2] = 200 * (f[1] - f[2]);
}

START_TEST(simulation_keeps_white)
{
    for (int v = 0; v < 4; v++)
        for (int i = 0; i < 3; i++)
            ck_assert_double_eq_tol(vision[v][i][0] + vision[v][i][1] +
                                        vision[v][i][2],
                                    1.0, 2e-6);
}
END_TEST

START_TEST(series_colours_distinct_for_dichromats)
{
    /* every pair at least ΔE*ab 20 apart (CIE76; 2.3 is a just noticeable
     * difference, common practice) for normal vision and the three
     * dichromacies, so no two series merge for any reader */
    for (int v = 0; v < 4; v++) {
        for (int a = 0; a < NG_SVG_N_SERIES; a++) {
            for (int b = a + 1; b < NG_SVG_N_SERIES; b++) {
                double la[3], lb[3];
                lab_of(ng_svg_series_rgb[a], v, la);
                lab_of(ng_svg_series_rgb[b], v, lb);
                double d = sqrt((la[0] - lb[0]) * (la[0] - lb[0]) +
                                (la[1] - lb[1]) * (la[1] - lb[1]) +
                                (la[2] - lb[2]) * (la[2] - lb[2]));
                ck_assert_msg(d >= 20, "colours %d and %d: ΔE %.1f under %s",
                              a, b, d, vision_name[v]);
            }
        }
    }
}
END_TEST

START_TEST(series_colours_stand_out_on_white)
{
    /* contrast ratio (L1 + 0.05) / (L2 + 0.05) against white at least 3:1,
     * the minimum for graphical objects in WCAG 2.1 (W3C, 2018), success
     * criterion 1.4.11; relative luminance as defined there */
    for (int i = 0; i < NG_SVG_N_SERIES; i++) {
        ng_svg_rgb c = ng_svg_series_rgb[i];
        double L = 0.2126 * linear(c.r) + 0.7152 * linear(c.g) +
                   0.0722 * linear(c.b);
        ck_assert_msg(1.05 / (L + 0.05) >= 3.0, "colour %d: contrast %.2f", i,
                      1.05 / (L + 0.05));
        char hex[8];
        ng_svg_hex(c, hex);
        ck_assert_str_eq(hex, ng_svg_series(i)); /* the text form agrees */
    }
}
END_TEST

START_TEST(sequential_map_lightness_is_monotone)
{
    /* lightness falls strictly along the map for every reader, so the
     * order of the values reads from light to dark without hue: strictly
     * over 64 steps (the colour scale draws 48), and never rises over 256
     * (where neighbours may round to the same 8-bit colour) */
    for (int v = 0; v < 4; v++) {
        double prev = INFINITY, lab[3];
        for (int i = 0; i <= 64; i++) {
            lab_of(ng_svg_sequential(i / 64.0), v, lab);
            ck_assert_msg(lab[0] < prev, "L* not falling at %d/64 (%s)", i,
                          vision_name[v]);
            prev = lab[0];
        }
        prev = INFINITY;
        for (int i = 0; i <= 256; i++) {
            lab_of(ng_svg_sequential(i / 256.0), v, lab);
            ck_assert_msg(lab[0] <= prev, "L* rises at %d/256 (%s)", i,
                          vision_name[v]);
            prev = lab[0];
        }
        lab_of(ng_svg_sequential(0), v, lab);
        ck_assert(lab[0] > 90);
        lab_of(ng_svg_sequential(1), v, lab);
        ck_assert(lab[0] < 25);
    }
    ng_svg_rgb lo = ng_svg_sequential(-3), hi = ng_svg_sequential(NAN);
    ck_assert(lo.r == hi.r && lo.g == hi.g && lo.b == hi.b); /* clamped */
}
END_TEST

int main(void)
{
    Suite *s = suite_create("svg");
    TCase *tc = tcase_create("core");
    tcase_add_test(tc, escape_markup_characters);
    tcase_add_test(tc, escape_keeps_utf8_and_replaces_what_xml_forbids);
    tcase_add_test(tc, text_and_attributes_are_escaped);
    tcase_add_test(tc, ticks_worked_examples);
    tcase_add_test(tc, ticks_degenerate_ranges);
    tcase_add_test(tc, ticks_properties_on_many_ranges);
    tcase_add_test(tc, tick_labels);
    tcase_add_test(tc, plot_maps_ranges_to_pixels);
    tcase_add_test(tc, buffer_grows_and_fails_cleanly);
    tcase_add_test(tc, simulation_keeps_white);
    tcase_add_test(tc, series_colours_distinct_for_dichromats);
    tcase_add_test(tc, series_colours_stand_out_on_white);
    tcase_add_test(tc, sequential_map_lightness_is_monotone);
    suite_add_tcase(s, tc);
    SRunner *sr = srunner_create(s);
    srunner_run_all(sr, CK_NORMAL);
    int failed = srunner_ntests_failed(sr);
    srunner_free(sr);
    return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}
