/* output.c — JSON and CSV values (output.h). */
#include "output.h"

#include <math.h>

void out_json_string(FILE *f, const char *s)
{
    fputc('"', f);
    for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
        if (*p == '"' || *p == '\\') fprintf(f, "\\%c", *p);
        else if (*p == '\n') fputs("\\n", f);
        else if (*p == '\t') fputs("\\t", f);
        else if (*p < 0x20) fprintf(f, "\\u%04x", *p);
        else fputc(*p, f); /* UTF-8 passes through */
    }
    fputc('"', f);
}

void out_json_number(FILE *f, double v)
{
    if (isfinite(v)) fprintf(f, "%.17g", v);
    else fputs("null", f);
}

void out_csv_number(FILE *f, double v)
{
    if (isnan(v)) fputs("nan", f);
    else if (isinf(v)) fputs(v > 0 ? "inf" : "-inf", f);
    else fprintf(f, "%.17g", v);
}
