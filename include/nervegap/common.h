/* common.h — what every nervegap module shares: the export macro, the
 * error convention and the vertex index type.
 *
 * Error convention (the one rule for the whole library):
 *   - A function returns int status (NG_OK = 0, or a negative NG_ERR_* code)
 *     or a pointer (NULL on failure), and fills the caller's ng_error.
 *   - The function that detects an error writes the message, naming the
 *     file, line and column (or the dataset, or the flag) where input is
 *     involved. Callers only pass the status up; they never overwrite it.
 *   - Nothing in the library prints or exits; the command line maps
 *     NG_ERR_USAGE and NG_ERR_INPUT to exit code 2 and the rest to 1.
 *   - ng_error lives in the caller (stack or context), never in a global, so
 *     that the library works under OpenMP.
 */
#ifndef NERVEGAP_COMMON_H
#define NERVEGAP_COMMON_H

#include <stddef.h>
#include <stdint.h>

#if defined(__GNUC__) || defined(__clang__)
#define NG_API __attribute__((visibility("default")))
#define NG_PRINTF(fmt, args) __attribute__((format(printf, fmt, args)))
#else
#define NG_API
#define NG_PRINTF(fmt, args)
#endif

#define NG_VERSION "0.1.0"

enum {
    NG_OK = 0,
    NG_ERR_USAGE = -1,   /* bad command line: exit code 2 */
    NG_ERR_INPUT = -2,   /* bad input data: exit code 2 */
    NG_ERR_NOMEM = -3,   /* allocation failed: exit code 1 */
    NG_ERR_IO = -4,      /* read/write failure of a valid request: exit code 1 */
    NG_ERR_RUNTIME = -5, /* anything else that went wrong at run time: exit 1 */
    NG_ERR_BUDGET = -6   /* a size or memory budget would be exceeded: exit 1 */
};

#define NG_ERROR_MESSAGE_MAX 1024

typedef struct ng_error {
    int code;                           /* NG_OK or an NG_ERR_* value */
    char message[NG_ERROR_MESSAGE_MAX]; /* one line, no trailing newline */
} ng_error;

/* Vertex (point) index. Point sets are limited to UINT32_MAX - 1 points. */
typedef uint32_t ng_index;
#define NG_INDEX_MAX (UINT32_MAX - 1u)

/* Progress of a long stage: fraction runs from 0 (the stage starts) to 1
 * (it is done); called from the thread that called the library function
 * only, never concurrently. stage is a short lowercase name ("simplices"). */
typedef void (*ng_progress_fn)(const char *stage, double fraction,
                               void *ctx);

/* Sets err (when not NULL) to code and the formatted message, unless err
 * already holds an error (the first error detected is the one reported).
 * Returns code, so that `return ng_error_set(err, ...)` reads naturally. */
NG_API int ng_error_set(ng_error *err, int code, const char *fmt, ...)
    NG_PRINTF(3, 4);

/* Resets err to NG_OK with an empty message. Accepts NULL. */
NG_API void ng_error_clear(ng_error *err);

/* Exit code the command line uses for an error code: 0, 1 or 2. */
NG_API int ng_error_exit_code(int code);

/* The library version string, NG_VERSION. */
NG_API const char *ng_version(void);

#endif
