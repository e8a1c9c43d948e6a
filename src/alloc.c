/* alloc.c — checked allocation with optional fault injection (see alloc.h). */
#include "alloc.h"

#include <stdatomic.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

static atomic_long fail_after = -1; /* < 0: never fail */
static atomic_long counted = 0;

long ng_alloc_fail_after(long n)
{
    long made = atomic_exchange(&counted, 0);
    atomic_store(&fail_after, n);
    return made;
}

/* One allocation is about to happen: 1 if it must fail. */
static int injected_failure(void)
{
    atomic_fetch_add(&counted, 1);
    long left = atomic_load(&fail_after);
    while (left >= 0) {
        if (left == 0) return 1;
        if (atomic_compare_exchange_weak(&fail_after, &left, left - 1))
            return 0;
    }
    return 0;
}

static int checked_bytes(size_t count, size_t size, size_t *bytes)
{
    if (size != 0 && count > SIZE_MAX / size) return 0;
    *bytes = count * size;
    if (*bytes == 0) *bytes = 1;
    return 1;
}

void *ng_malloc(size_t count, size_t size)
{
    size_t bytes;
    if (!checked_bytes(count, size, &bytes) || injected_failure()) return NULL;
    return malloc(bytes);
}

void *ng_calloc(size_t count, size_t size)
{
    size_t bytes;
    if (!checked_bytes(count, size, &bytes) || injected_failure()) return NULL;
    return calloc(1, bytes);
}

void *ng_realloc(void *p, size_t count, size_t size)
{
    size_t bytes;
    if (!checked_bytes(count, size, &bytes) || injected_failure()) return NULL;
    return realloc(p, bytes);
}

void ng_free(void *p) { free(p); }

char *ng_strdup(const char *s)
{
    size_t len = strlen(s) + 1;
    char *copy = ng_malloc(len, 1);
    if (copy) memcpy(copy, s, len);
    return copy;
}
