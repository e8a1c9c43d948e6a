/* alloc.h — the one allocation wrapper of the library (private).
 *
 * Every allocation goes through these functions. They check count × size
 * for overflow (returning NULL, as for an exhausted heap), and a test build
 * can make the N-th allocation fail (ng_alloc_fail_after) to prove that each
 * failure path frees what it took. They never set an ng_error: the caller
 * knows what it was allocating and writes the message (NG_ERR_NOMEM).
 */
#ifndef NERVEGAP_ALLOC_H
#define NERVEGAP_ALLOC_H

#include <stddef.h>

/* malloc of count × size bytes; NULL on overflow or exhaustion.
 * count × size == 0 allocates one byte so that NULL always means failure. */
void *ng_malloc(size_t count, size_t size);
/* As ng_malloc, zero-filled. */
void *ng_calloc(size_t count, size_t size);
/* Resizes p to count × size bytes; on failure p is left untouched and NULL
 * is returned. */
void *ng_realloc(void *p, size_t count, size_t size);
/* Frees p; accepts NULL. */
void ng_free(void *p);
/* Duplicates a NUL-terminated string; NULL on failure. */
char *ng_strdup(const char *s);

/* Fault injection for tests: after n more successful allocations, every
 * allocation fails (n < 0 switches injection off, the default). Returns the
 * number of allocations made since the last call. Thread-safe. */
long ng_alloc_fail_after(long n);

#endif
