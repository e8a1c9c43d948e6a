/* cloud_h5.c — the HDF5 reader: a 2-D float dataset, "FILE.h5:/dataset".
 *
 * The dataset must have a simple 2-D dataspace (n, d) and a datatype of
 * float class (any precision and byte order: HDF5 converts to native
 * double). Integer, string, compound and the other classes are refused:
 * a silent integer conversion would hide a wrong dataset path.
 *
 * Invariants: HDF5's own error printing is switched off while reading and
 * restored afterwards (whatever the outcome), so the only report is the
 * message this reader writes; every HDF5 handle opened is closed.
 */
#include "cloud_internal.h"

#include "alloc.h"
#include "h5util.h"

#include <hdf5.h>
#include <math.h>
#include <string.h>

static const char *class_name(H5T_class_t c)
{
    switch (c) {
    case H5T_INTEGER: return "integer";
    case H5T_FLOAT: return "float";
    case H5T_TIME: return "time";
    case H5T_STRING: return "string";
    case H5T_BITFIELD: return "bitfield";
    case H5T_OPAQUE: return "opaque";
    case H5T_COMPOUND: return "compound";
    case H5T_REFERENCE: return "reference";
    case H5T_ENUM: return "enum";
    case H5T_VLEN: return "variable-length";
    case H5T_ARRAY: return "array";
    default: return "unknown";
    }
}

int cloud_h5_read(const char *path, const char *dataset, cloud_table *t,
                  ng_error *err)
{
    memset(t, 0, sizeof *t);
    int rc = NG_OK;
    hid_t file = H5I_INVALID_HID, dset = H5I_INVALID_HID;
    hid_t type = H5I_INVALID_HID, space = H5I_INVALID_HID;
    ng_h5_quiet quiet;

    FILE *probe = cloud_open(path, err);
    if (!probe) return NG_ERR_INPUT;
    fclose(probe);

    ng_h5_quiet_begin(&quiet);

#if H5_VERSION_GE(1, 12, 0)
    htri_t is_hdf5 = H5Fis_accessible(path, H5P_DEFAULT);
#else
    htri_t is_hdf5 = H5Fis_hdf5(path);
#endif
    if (is_hdf5 <= 0) {
        rc = ng_error_set(err, NG_ERR_INPUT, "%s: not an HDF5 file", path);
        goto cleanup;
    }
    file = H5Fopen(path, H5F_ACC_RDONLY, H5P_DEFAULT);
    if (file < 0) {
        rc = ng_error_set(err, NG_ERR_IO, "%s: HDF5 cannot open the file",
                          path);
        goto cleanup;
    }
    char missing[512];
    if (!ng_h5_path_exists(file, dataset, missing, sizeof missing)) {
        if (strcmp(missing, dataset) == 0)
            rc = ng_error_set(err, NG_ERR_INPUT, "%s: no dataset '%s'", path,
                              dataset);
        else
            rc = ng_error_set(err, NG_ERR_INPUT,
                              "%s: no dataset '%s' (there is no '%s')", path,
                              dataset, missing);
        goto cleanup;
    }
    dset = H5Dopen2(file, dataset, H5P_DEFAULT);
    if (dset < 0) {
        rc = ng_error_set(err, NG_ERR_INPUT,
                          "%s: '%s' is not a dataset (a group?)", path,
                          dataset);
        goto cleanup;
    }
    type = H5Dget_type(dset);
    space = H5Dget_space(dset);
    if (type < 0 || space < 0) {
        rc = ng_error_set(err, NG_ERR_IO,
                          "%s: dataset '%s': cannot read its type or shape",
                          path, dataset);
        goto cleanup;
    }
    H5T_class_t cls = H5Tget_class(type);
    if (cls != H5T_FLOAT) {
        rc = ng_error_set(err, NG_ERR_INPUT,
                          "%s: dataset '%s' has %s class; expected a float "
                          "dataset", path, dataset, class_name(cls));
        goto cleanup;
    }
    int ndims = H5Sget_simple_extent_type(space) == H5S_SIMPLE
                    ? H5Sget_simple_extent_ndims(space)
                    : 0;
    if (ndims != 2) {
        rc = ng_error_set(err, NG_ERR_INPUT,
                          "%s: dataset '%s' has %d dimension%s; expected "
                          "2-D (n, d)", path, dataset, ndims < 0 ? 0 : ndims,
                          ndims == 1 ? "" : "s");
        goto cleanup;
    }
    hsize_t dims[2];
    if (H5Sget_simple_extent_dims(space, dims, NULL) != 2) {
        rc = ng_error_set(err, NG_ERR_IO,
                          "%s: dataset '%s': cannot read its shape", path,
                          dataset);
        goto cleanup;
    }
    char label[700];
    snprintf(label, sizeof label, "%s: dataset '%s'", path, dataset);
    if (dims[0] > SIZE_MAX || dims[1] > SIZE_MAX) {
        rc = ng_error_set(err, NG_ERR_INPUT,
                          "%s: the shape does not fit in size_t", label);
        goto cleanup;
    }
    size_t n = (size_t)dims[0], d = (size_t)dims[1];
    if (d == 0) {
        rc = ng_error_set(err, NG_ERR_INPUT, "%s has no columns", label);
        goto cleanup;
    }
    rc = cloud_check_shape(label, n, d, sizeof(double), err);
    if (rc != NG_OK) goto cleanup;
    t->values = ng_malloc(n * d, sizeof *t->values);
    if (!t->values) {
        rc = ng_error_set(err, NG_ERR_NOMEM,
                          "%s: out of memory for %zu x %zu values", label, n,
                          d);
        goto cleanup;
    }
    if (n > 0 && H5Dread(dset, H5T_NATIVE_DOUBLE, H5S_ALL, H5S_ALL,
                         H5P_DEFAULT, t->values) < 0) {
        rc = ng_error_set(err, NG_ERR_IO, "%s: read failed", label);
        goto cleanup;
    }
    for (size_t i = 0; i < n * d; i++) {
        if (!isfinite(t->values[i])) {
            rc = ng_error_set(err, NG_ERR_INPUT,
                              "%s: row %zu, column %zu (counted from 0): %g "
                              "is not a finite number", label, i / d, i % d,
                              t->values[i]);
            goto cleanup;
        }
    }
    t->rows = n;
    t->cols = d;

cleanup:
    if (space >= 0) H5Sclose(space);
    if (type >= 0) H5Tclose(type);
    if (dset >= 0) H5Dclose(dset);
    if (file >= 0) H5Fclose(file);
    ng_h5_quiet_end(&quiet);
    if (rc != NG_OK) cloud_table_free(t);
    return rc;
}
