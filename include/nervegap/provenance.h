/* provenance.h — facts about the running process that a results file
 * records: the threads used and the peak memory. */
#ifndef NERVEGAP_PROVENANCE_H
#define NERVEGAP_PROVENANCE_H

#include "nervegap/common.h"

/* The number of threads a library call given `threads` uses: threads
 * itself when positive, else OpenMP's default team size. */
NG_API int ng_threads_used(int threads);

/* Peak resident memory of the process so far in bytes (getrusage), or -1
 * when the system does not tell. */
NG_API int64_t ng_peak_memory_bytes(void);

#endif
