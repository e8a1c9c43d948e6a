/* error.c — the ng_error convention of common.h.
 *
 * Invariant: a message is one line. Messages quote input (a file name, a
 * dataset path, a token, a .npy header key) and input may hold any byte,
 * so control characters other than tab are replaced by '?' after
 * formatting: a message never spans lines nor moves the terminal cursor. */
#include "nervegap/common.h"

#include <stdarg.h>
#include <stdio.h>

int ng_error_set(ng_error *err, int code, const char *fmt, ...)
{
    if (err == NULL || err->code != NG_OK) return code;
    err->code = code;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(err->message, sizeof err->message, fmt, ap);
    va_end(ap);
    for (char *c = err->message; *c; c++)
        if (((unsigned char)*c < 0x20 && *c != '\t') || *c == 0x7f) *c = '?';
    return code;
}

void ng_error_clear(ng_error *err)
{
    if (err == NULL) return;
    err->code = NG_OK;
    err->message[0] = '\0';
}

int ng_error_exit_code(int code)
{
    if (code == NG_OK) return 0;
    if (code == NG_ERR_USAGE || code == NG_ERR_INPUT) return 2;
    return 1;
}

const char *ng_version(void) { return NG_VERSION; }
