/* manifest.h — the job list of a batch (README.md, "Batch runs"): a plain
 * text file of settings, one per line, whose sweeps expand into jobs.
 *
 *   # comment
 *   input       a.csv b.csv "with space.csv"    (repeatable lines)
 *   distances   matrix.npy                      (repeatable lines)
 *   radius      knn:8 knn:16 dtm:16             (several values: a sweep)
 *   law         scaled shifted
 *   scale-limit 2.5
 *   subsamples  20                              (single values only)
 *   subsample-size 100
 *   seed        7
 *   alpha       0.05
 *
 * Keys are the flags of `nervegap run` without the dashes (input,
 * distances, metric, radius, law, raw-radius, merge-duplicates,
 * max-degree, scale-limit, slices, grid, max-simplices, budget; the flags
 * raw-radius and merge-duplicates take yes or no, slices also none) and
 * the subsample settings subsamples, subsample-size, seed, alpha. A value
 * is a word, or a double-quoted string with \" and \\ escapes; '#' starts
 * a comment outside quotes. The jobs are the cross product of every key's
 * values (inputs × metric × radius × law × … in that order; a distance
 * matrix has the metric given), each followed by its subsample jobs 1..B.
 *
 * Every job has a canonical parameter text — key=value fields separated by
 * tabs, every parameter with its default filled in, numbers in a fixed
 * format — and an id of at most NG_JOB_ID_MAX - 1 characters: a readable
 * prefix (input name, radius, law, subsample index; cut when long), '-'
 * and the first 12 hex digits of the SHA-256 of the canonical text. The id
 * depends on nothing else (not the order of lines, not the other jobs), so
 * reruns and edited manifests keep their ids.
 * Relative paths (inputs, file:PATH radii) are relative to the directory
 * of the manifest.
 */
#ifndef NERVEGAP_MANIFEST_H
#define NERVEGAP_MANIFEST_H

#include "nervegap/common.h"
#include "nervegap/job.h"

#define NG_JOB_ID_MAX 64
#define NG_MANIFEST_MAX_JOBS 100000
#define NG_MANIFEST_VALUE_MAX 4000

typedef struct ng_manifest_job {
    char id[NG_JOB_ID_MAX];  /* letters, digits, '.', '_' and '-' */
    char *parameters;        /* canonical text */
    char *input;             /* the input as written in the manifest */
    char *input_path;        /* the path read (job.input points here) */
    ng_job job;              /* id, parameters, subsample_of filled in;
                                command, threads and progress not */
    long parent;             /* subsample jobs: index of the job on all
                                points; −1 for the others */
    int line, column;        /* where the input is named */
    int radius_line, radius_column; /* where the radius is named */
} ng_manifest_job;

typedef struct ng_manifest {
    char *name;              /* as given to the parser */
    double alpha;            /* confidence level of gather (0.05) */
    int subsamples;          /* B; 0: none */
    size_t subsample_size;   /* m */
    uint64_t seed;           /* 1 unless given */
    size_t n_jobs;
    ng_manifest_job *jobs;   /* in expansion order */
} ng_manifest;

/* Parses the manifest text[0..len) (no NUL needed; NUL bytes are an
 * error) and expands its jobs; name is used in messages and for the
 * directory of relative paths. Touches no file. On success *out owns the
 * manifest (ng_manifest_free). On failure *out is NULL and the status is
 * NG_ERR_INPUT with the message "NAME:LINE:COLUMN: what is wrong" (line and
 * column 1-based, the column the byte where the value or key starts), or
 * NG_ERR_NOMEM. */
NG_API int ng_manifest_parse_buffer(const char *text, size_t len,
                                    const char *name, ng_manifest **out,
                                    ng_error *err);

/* Checks that every input file and every file:PATH radius file of m can be
 * opened for reading. NG_ERR_INPUT naming the manifest line and column of
 * the first that cannot. */
NG_API int ng_manifest_check_inputs(const ng_manifest *m, ng_error *err);

/* Reads the file at path, parses it and checks its inputs. Errors as the
 * two above, and NG_ERR_INPUT when path cannot be read. */
NG_API int ng_manifest_load(const char *path, ng_manifest **out,
                            ng_error *err);

/* Frees a manifest. Accepts NULL. */
NG_API void ng_manifest_free(ng_manifest *m);

#endif
