/* values_tool.c — test-only program: the Rips and Čech values of simplices
 * read from a file (or stdin), for tests/ref_cech.py.
 *
 * Input: one simplex per line, whitespace separated,
 *     METRIC LAW M DIM  x_1[1..DIM] .. x_M[1..DIM]  rho_1 .. rho_M
 * METRIC is euclidean, chebyshev or manhattan, LAW scaled, shifted or
 * power; lines starting with '#' and empty lines are skipped.
 * Output: one line per simplex, "rips cech rips_monotone cech_monotone"
 * with %.17g (raw values of ng_rips_value / ng_cech_value, then those of
 * ng_simplex_values). Exit 0, or 2 with a message naming the line.
 */
#include "nervegap/values.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define MAX_DIM 64

static int fail(long line, const char *what)
{
    fprintf(stderr, "values_tool: line %ld: %s\n", line, what);
    return 2;
}

int main(int argc, char **argv)
{
    FILE *in = stdin;
    if (argc > 1 && strcmp(argv[1], "-") != 0) {
        in = fopen(argv[1], "r");
        if (in == NULL) {
            perror(argv[1]);
            return 2;
        }
    }
    static char buf[1 << 16];
    long line = 0;
    int status = 0;
    while (fgets(buf, sizeof buf, in) != NULL) {
        line++;
        char *p = buf;
        while (*p == ' ' || *p == '\t') p++;
        if (*p == '#' || *p == '\n' || *p == '\0') continue;
        char metric_name[32], law_name[32];
        int m, dim, used;
        if (sscanf(p, "%31s %31s %d %d%n", metric_name, law_name, &m, &dim,
                   &used) != 4) {
            status = fail(line, "expected METRIC LAW M DIM");
            break;
        }
        p += used;
        ng_error err;
        ng_error_clear(&err);
        ng_space s = {0};
        if (ng_metric_parse(metric_name, &s.metric, &err) != NG_OK ||
            ng_law_parse(law_name, &s.law, &err) != NG_OK) {
            status = fail(line, err.message);
            break;
        }
        if (m < 1 || m > NG_SIMPLEX_MAX_VERTICES || dim < 0 || dim > MAX_DIM) {
            status = fail(line, "M or DIM out of range");
            break;
        }
        double coords[NG_SIMPLEX_MAX_VERTICES * MAX_DIM];
        double rho[NG_SIMPLEX_MAX_VERTICES];
        int bad = 0;
        for (int i = 0; i < m * dim + m && !bad; i++) {
            char *end;
            double x = strtod(p, &end);
            if (end == p) bad = 1;
            p = end;
            if (i < m * dim) coords[i] = x;
            else rho[i - m * dim] = x;
        }
        if (bad) {
            status = fail(line, "too few numbers");
            break;
        }
        s.n = (size_t)m;
        s.dim = (size_t)dim;
        s.coords = coords;
        s.rho = rho;
        if (ng_space_check(&s, &err) != NG_OK) {
            status = fail(line, err.message);
            break;
        }
        ng_index v[NG_SIMPLEX_MAX_VERTICES];
        for (int i = 0; i < m; i++) v[i] = (ng_index)i;
        double rips, cech;
        if (ng_simplex_values(&s, v, m, &rips, &cech, &err) != NG_OK) {
            status = fail(line, err.message);
            break;
        }
        printf("%.17g %.17g %.17g %.17g\n", ng_rips_value(&s, v, m),
               ng_cech_value(&s, v, m), rips, cech);
    }
    if (in != stdin) fclose(in);
    return status;
}
