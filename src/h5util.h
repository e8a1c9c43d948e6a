/* h5util.h — the small HDF5 steps that the results writer (results.c), the
 * results reader (results_load.c), the gathered file (gather.c) and the
 * HDF5 point reader (cloud_h5.c) share (private to the library).
 *
 * The writing helpers return 0 on success and -1 on failure, so that a
 * caller can OR a run of them together and report one error; every handle
 * they open is closed before they return.
 */
#ifndef NERVEGAP_H5UTIL_H
#define NERVEGAP_H5UTIL_H

#include <hdf5.h>
#include <stddef.h>
#include <stdint.h>

/* HDF5's own error printing, switched off between ng_h5_quiet_begin and
 * ng_h5_quiet_end (which restores what was set before): the library
 * reports errors through ng_error only. */
typedef struct ng_h5_quiet {
    H5E_auto2_t func;
    void *data;
    int saved; /* 1: func and data hold what to restore */
} ng_h5_quiet;

void ng_h5_quiet_begin(ng_h5_quiet *q);
void ng_h5_quiet_end(const ng_h5_quiet *q);

/* 1 when every component of path (absolute or relative, '/'-separated)
 * exists in file (HDF5 1.10's H5Lexists fails on a missing intermediate
 * group, hence the walk); else 0 with the first missing prefix copied to
 * missing (cap bytes). */
int ng_h5_path_exists(hid_t file, const char *path, char *missing,
                      size_t cap);

/* The variable-length UTF-8 string type of the attributes and string
 * datasets written (caller closes it with H5Tclose), or -1. */
hid_t ng_h5_string_type(void);

/* A new group (H5Gclose), or a negative id. */
hid_t ng_h5_group_create(hid_t loc, const char *name);

/* A scalar attribute name of the given type on loc, holding *value. */
int ng_h5_attr_write(hid_t loc, const char *name, hid_t type,
                     const void *value);
int ng_h5_attr_string(hid_t loc, const char *name, const char *value);
int ng_h5_attr_double(hid_t loc, const char *name, double value);
int ng_h5_attr_int(hid_t loc, const char *name, int64_t value);

/* A new dataset name of the given rank and dims, stored as file_type with
 * the creation properties plist (H5P_DEFAULT: contiguous), written from
 * data of mem_type (nothing is written when it has no elements). */
int ng_h5_dataset_write(hid_t loc, const char *name, hid_t file_type,
                        hid_t mem_type, int rank, const hsize_t *dims,
                        hid_t plist, const void *data);

#endif
