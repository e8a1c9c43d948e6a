/* cmd_show.c — `nervegap show OUT.h5`: a summary of a results file that a
 * person reads in seconds: input, scheme, scale limit and truncation,
 * simplex counts, the longest bars per degree of the Čech and Rips
 * barcodes (and of each slice), the divergence figures, Λ and Δ with the
 * scales where they are reached, and how the run went. */
#include "commands.h"
#include "args.h"
#include "nervegap/results.h"
#include "nervegap/summary.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const char show_help[] =
    "Usage: nervegap show OUT.h5 [--bars N]\n"
    "\n"
    "Prints a summary of a results file written by nervegap run.\n"
    "  --bars N   the N longest bars per degree and complex (default 3)\n";

#define SHOW_MAX_BARS 50

/* Characters (not bytes) of a UTF-8 string, for aligned columns. */
static int utf8_length(const char *s)
{
    int n = 0;
    for (; *s; s++) n += ((unsigned char)*s & 0xC0) != 0x80;
    return n;
}

static void print_bars(const char *label, const ng_bars *b, size_t count)
{
    ng_ranked_bar top[SHOW_MAX_BARS];
    size_t m = ng_summary_longest(b, count, top);
    printf("    %s%*s %6zu bars ", label, 5 - utf8_length(label), "",
           b->count);
    if (m == 0) printf(" -");
    for (size_t i = 0; i < m; i++) {
        if (isinf(top[i].death))
            printf("  [%.4g, inf)", top[i].birth);
        else
            printf("  [%.4g, %.4g) %.4g", top[i].birth, top[i].death,
                   top[i].length);
    }
    putchar('\n');
}

static const char *memory_text(int64_t bytes, char *buf, size_t size)
{
    if (bytes < 0) snprintf(buf, size, "unknown");
    else if (bytes >= ((int64_t)1 << 30))
        snprintf(buf, size, "%.2f GiB", (double)bytes / (1 << 30));
    else snprintf(buf, size, "%.1f MiB", (double)bytes / (1 << 20));
    return buf;
}

static void show(const ng_results *r, size_t nbars)
{
    int D = r->max_degree;
    char a[32], b[32];
    printf("%s: nervegap results, format %d, written by nervegap %s",
           r->path, r->format_version, r->tool_version);
    if (r->created) printf(" on %s", r->created);
    if (r->host && r->host[0]) printf(" (%s)", r->host);
    printf("\n  command     %s\n", r->command);
    printf("  input       %s: n = %zu points", r->source, r->n_points);
    if (r->ambient_dim > 0) printf(", d = %zu", r->ambient_dim);
    else printf(" (distance matrix)");
    printf(", metric %s\n", r->metric);
    if (r->input_sha256 && r->input_sha256[0])
        printf("              sha256 %s (%lld bytes)\n", r->input_sha256,
               (long long)r->input_bytes);
    printf("  scheme      radius %s, law %s, degrees 0..%d\n",
           r->radius_rule, r->law, D);
    printf("  scale limit T = %.6g", r->scale_limit);
    if (r->scale_auto == 1 && r->limited_by_budget == 1)
        printf(" (auto, limited by the memory budget; the full scale is "
               "%s%.6g)", isnan(r->full_scale) ? "above " : "",
               isnan(r->full_scale) ? r->scale_limit : r->full_scale);
    else if (r->scale_auto == 1)
        printf(" (auto: the full scale, where both complexes are cones)");
    else if (r->scale_auto == 0)
        printf(" (given)");
    putchar('\n');
    size_t alive_c = 0, alive_r = 0;
    for (int k = 0; k <= D; k++) {
        alive_c += r->cech.bars[k].truncated;
        alive_r += r->rips.bars[k].truncated;
    }
    if (r->truncated)
        printf("  truncated   yes: bars alive at T (death inf) — Čech %zu, "
               "Rips %zu, counting the one component\n", alive_c, alive_r);
    else
        printf("  truncated   no: only the one component is alive at T\n");

    if (r->has_grid && r->grid.G > 0) {
        const ng_grid *g = &r->grid;
        size_t last = g->G - 1, w1 = (size_t)D + 2;
        printf("  simplices   at T     ");
        for (int k = 0; k <= D + 1; k++) printf("       dim %d", k);
        printf("\n    Čech              ");
        for (size_t k = 0; k < w1; k++)
            printf(" %11s", ng_summary_grouped(
                                g->simplices_cech[last * w1 + k], a, sizeof a));
        printf("\n    Rips              ");
        for (size_t k = 0; k < w1; k++)
            printf(" %11s", ng_summary_grouped(
                                g->simplices_rips[last * w1 + k], a, sizeof a));
        long long extra = 0;
        for (size_t k = 0; k < w1; k++)
            extra += g->simplices_rips[last * w1 + k] -
                     g->simplices_cech[last * w1 + k];
        printf("\n    (Rips has %s simplices that Čech does not have at T)\n",
               ng_summary_grouped(extra, b, sizeof b));
    }

    printf("  longest bars [birth, death) length; death inf = alive at T\n");
    for (int k = 0; k <= D; k++) {
        printf("  degree %d\n", k);
        print_bars("Čech", &r->cech.bars[k], nbars);
        print_bars("Rips", &r->rips.bars[k], nbars);
    }
    for (int j = 0; j < r->n_slices; j++) {
        printf("  slice %s %.4g:", r->slice_kind, r->slice_values[j]);
        for (int k = D >= 1 ? 1 : 0; k <= D; k++) {
            ng_ranked_bar top[2];
            size_t m = ng_summary_longest(&r->slices[j].bars[k], 2, top);
            printf("  degree %d", k);
            if (m == 0) printf(" -");
            for (size_t i = 0; i < m; i++)
                printf(isinf(top[i].death) ? " [%.4g, inf)" : " [%.4g, %.4g)",
                       top[i].birth, top[i].death);
        }
        putchar('\n');
    }

    if (r->has_divergence) {
        printf("  divergence  Čech vs Rips, deaths of inf counted as T\n");
        printf("    degree   bottleneck wasserstein1 wasserstein2\n");
        int skipped = 0;
        for (int k = 0; k <= D; k++) {
            printf("    %-6d %12.6g %12.6g %12.6g\n", k, r->bottleneck[k],
                   r->wasserstein1[k], r->wasserstein2[k]);
            skipped |= isnan(r->wasserstein1[k]);
        }
        if (skipped && r->wasserstein_limit > 0)
            printf("    (nan: not computed, the diagrams differ in more "
                   "than %lld points; --wasserstein-limit)\n",
                   (long long)r->wasserstein_limit);
        printf("  Λ = %.6g  (Rips(t) ⊆ Čech(Λt) for t ≤ T; reached at "
               "t = %.6g)\n", r->factor_bound, r->factor_bound_at);
        printf("  Δ = %.6g  (Rips(t) ⊆ Čech(t + Δ) for t ≤ T; reached at "
               "t = %.6g)\n", r->shift_bound, r->shift_bound_at);
    }
    if (r->n_stages > 0) {
        printf("  run         %.2f s on %d thread%s, peak memory %s\n",
               r->wall_seconds, r->threads, r->threads == 1 ? "" : "s",
               memory_text(r->peak_memory_bytes, a, sizeof a));
        printf("             ");
        for (int i = 0; i < r->n_stages; i++)
            printf(" %s %.2f%s", r->stage_names[i], r->stage_seconds[i],
                   i + 1 < r->n_stages ? "," : " s\n");
    }
}

int cmd_show(int argc, char **argv)
{
    const char *bars = NULL;
    const cli_option table[] = {
        {"bars", NULL, 1, &bars, NULL},
        {NULL, NULL, 0, NULL, NULL},
    };
    cli_args args;
    ng_error err;
    ng_error_clear(&err);
    if (cli_parse(argc, argv, 2, "show", table, &args, &err) != NG_OK)
        return cli_fail("show", &err);
    if (args.help) {
        fputs(show_help, stdout);
        return 0;
    }
    long nbars = 3;
    if (bars) {
        char *end;
        nbars = strtol(bars, &end, 10);
        if (*bars == '\0' || *end != '\0' || nbars < 1 ||
            nbars > SHOW_MAX_BARS)
            ng_error_set(&err, NG_ERR_USAGE, "--bars %s: expected 1 to %d",
                         bars, SHOW_MAX_BARS);
    }
    if (err.code == NG_OK && args.n_positional != 1)
        ng_error_set(&err, NG_ERR_USAGE,
                     "expected one results file OUT.h5, got %d",
                     args.n_positional);
    if (err.code != NG_OK) return cli_fail("show", &err);
    ng_results *r = NULL;
    if (ng_results_load(args.positional[0], &r, &err) != NG_OK)
        return cli_fail("show", &err);
    show(r, (size_t)nbars);
    ng_results_free(r);
    return 0;
}
