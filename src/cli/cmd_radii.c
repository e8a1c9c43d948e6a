/* cmd_radii.c — `nervegap radii`: the base radius and vertex birth of every
 * point under a radius scheme, as CSV on stdout. */
#include "commands.h"
#include "scheme_flags.h"

#include <stdio.h>

static const char radii_help[] =
    "Usage: nervegap radii INPUT [scheme flags]\n"
    "       nervegap radii --distances FILE [scheme flags]\n"
    "\n"
    "Prints the base radius rho and the vertex birth of every point as CSV\n"
    "(header index,radius,birth; index is the 0-based input row). Under law\n"
    "scaled, rho is divided by its median unless --raw-radius is given.\n"
    "\n";

int cmd_radii(int argc, char **argv)
{
    scheme_flags f = {0};
    const cli_option table[] = {SCHEME_OPTIONS(f), {NULL, NULL, 0, NULL, NULL}};
    cli_args args;
    ng_error err;
    ng_error_clear(&err);
    if (cli_parse(argc, argv, 2, "radii", table, &args, &err) != NG_OK)
        return cli_fail("radii", &err);
    if (args.help) {
        fputs(radii_help, stdout);
        fputs(scheme_flags_help, stdout);
        return 0;
    }
    if (args.n_positional > 1) {
        ng_error_set(&err, NG_ERR_USAGE, "expected one INPUT, got %d",
                     args.n_positional);
        return cli_fail("radii", &err);
    }
    ng_scheme scheme;
    ng_cloud *cloud = NULL;
    ng_radii radii = {0};
    int threads;
    if (scheme_flags_load(&f, "radii", args.n_positional ? args.positional[0]
                                                         : NULL,
                          &scheme, &threads, &cloud, &err) != NG_OK ||
        ng_radii_compute(cloud, &scheme, threads, &radii, &err) != NG_OK) {
        ng_cloud_free(cloud);
        return cli_fail("radii", &err);
    }
    printf("index,radius,birth\n");
    for (size_t i = 0; i < radii.n; i++)
        printf("%zu,%.17g,%.17g\n", radii.origin[i], radii.rho[i],
               radii.birth[i]);
    if (radii.merged > 0)
        fprintf(stderr, "nervegap radii: merged %zu coincident point%s\n",
                radii.merged, radii.merged == 1 ? "" : "s");
    int status = fflush(stdout) == 0 && !ferror(stdout) ? 0 : 1;
    if (status != 0) fprintf(stderr, "nervegap radii: cannot write stdout\n");
    ng_radii_free(&radii);
    ng_cloud_free(cloud);
    return status;
}
