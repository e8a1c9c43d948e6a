/* batch_internal.h — what batch.c and gather.c share (private). */
#ifndef NERVEGAP_BATCH_INTERNAL_H
#define NERVEGAP_BATCH_INTERNAL_H

#include "nervegap/common.h"

/* The job list in the output directory, and its first line. */
#define BATCH_JOB_LIST "jobs.tsv"
#define BATCH_JOB_LIST_FORMAT "nervegap-jobs"

/* dir + "/" + a + b (b may be NULL), ng_malloc'd; NULL when out of
 * memory. */
char *batch_path(const char *dir, const char *a, const char *b);

/* Creates the directory path unless it exists. NG_ERR_IO naming it. */
int batch_mkdir(const char *path, ng_error *err);

/* Writes text to path under a temporary name in the same directory and
 * renames it onto path. NG_ERR_IO naming path, NG_ERR_NOMEM. */
int batch_write_atomic(const char *path, const char *text, ng_error *err);

#endif
