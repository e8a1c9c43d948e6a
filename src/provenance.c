/* provenance.c — threads and peak memory of the process (provenance.h). */
#include "nervegap/provenance.h"

#include <omp.h>
#include <sys/resource.h>

int ng_threads_used(int threads)
{
    return threads > 0 ? threads : omp_get_max_threads();
}

int64_t ng_peak_memory_bytes(void)
{
    struct rusage u;
    if (getrusage(RUSAGE_SELF, &u) != 0 || u.ru_maxrss <= 0) return -1;
    return (int64_t)u.ru_maxrss * 1024; /* Linux reports KiB */
}
