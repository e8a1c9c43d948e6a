/* output.h — printing values for machines: JSON strings and numbers, CSV
 * numbers. Numbers use 17 significant digits, so that they read back as
 * the same double. */
#ifndef NERVEGAP_CLI_OUTPUT_H
#define NERVEGAP_CLI_OUTPUT_H

#include <stdio.h>

/* s as a JSON string, with quotes and escapes. */
void out_json_string(FILE *f, const char *s);

/* v as a JSON number; null when it is not finite. */
void out_json_number(FILE *f, double v);

/* v as a CSV field: %.17g, "inf" / "-inf" / "nan" when not finite (read
 * as such by Python's float and R's as.numeric). */
void out_csv_number(FILE *f, double v);

#endif
