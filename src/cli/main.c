/* main.c — the nervegap command line: parses arguments, calls the library,
 * prints, and maps error codes to exit codes (0 ok, 1 runtime, 2 usage or
 * input). */
#include "nervegap/common.h"

#include <stdio.h>
#include <string.h>

int main(int argc, char **argv)
{
    if (argc >= 2 && strcmp(argv[1], "--version") == 0) {
        printf("nervegap %s\n", ng_version());
        return 0;
    }
    fprintf(stderr, "nervegap: no subcommand given\n");
    return 2;
}
