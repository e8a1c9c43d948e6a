/* h5util.c — HDF5 steps shared by the modules that read and write HDF5
 * files (h5util.h).
 */
#include "h5util.h"

#include <string.h>

void ng_h5_quiet_begin(ng_h5_quiet *q)
{
    q->saved = H5Eget_auto2(H5E_DEFAULT, &q->func, &q->data) >= 0 &&
               H5Eset_auto2(H5E_DEFAULT, NULL, NULL) >= 0;
}

void ng_h5_quiet_end(const ng_h5_quiet *q)
{
    if (q->saved) H5Eset_auto2(H5E_DEFAULT, q->func, q->data);
}

int ng_h5_path_exists(hid_t file, const char *path, char *missing,
                      size_t cap)
{
    size_t len = strlen(path);
    if (len >= cap) len = cap - 1;
    memcpy(missing, path, len);
    missing[len] = '\0';
    for (size_t k = 1; k <= len; k++) {
        if (k < len && missing[k] != '/') continue;
        char saved = missing[k];
        missing[k] = '\0';
        int slash_only = k == 1 && missing[0] == '/';
        if (!slash_only && missing[k - 1] != '/' &&
            H5Lexists(file, missing, H5P_DEFAULT) <= 0)
            return 0;
        missing[k] = saved;
    }
    return 1;
}

hid_t ng_h5_string_type(void)
{
    hid_t type = H5Tcopy(H5T_C_S1);
    if (type < 0) return -1;
    if (H5Tset_size(type, H5T_VARIABLE) < 0 ||
        H5Tset_cset(type, H5T_CSET_UTF8) < 0) {
        H5Tclose(type);
        return -1;
    }
    return type;
}

hid_t ng_h5_group_create(hid_t loc, const char *name)
{
    return H5Gcreate2(loc, name, H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT);
}

int ng_h5_attr_write(hid_t loc, const char *name, hid_t type,
                     const void *value)
{
    hid_t space = H5Screate(H5S_SCALAR);
    hid_t attr = space < 0 ? -1
                           : H5Acreate2(loc, name, type, space, H5P_DEFAULT,
                                        H5P_DEFAULT);
    herr_t w = attr < 0 ? -1 : H5Awrite(attr, type, value);
    if (attr >= 0) H5Aclose(attr);
    if (space >= 0) H5Sclose(space);
    return w < 0 ? -1 : 0;
}

int ng_h5_attr_string(hid_t loc, const char *name, const char *value)
{
    hid_t type = ng_h5_string_type();
    if (type < 0) return -1;
    int r = ng_h5_attr_write(loc, name, type, &value);
    H5Tclose(type);
    return r;
}

int ng_h5_attr_double(hid_t loc, const char *name, double value)
{
    return ng_h5_attr_write(loc, name, H5T_NATIVE_DOUBLE, &value);
}

int ng_h5_attr_int(hid_t loc, const char *name, int64_t value)
{
    return ng_h5_attr_write(loc, name, H5T_NATIVE_INT64, &value);
}

int ng_h5_dataset_write(hid_t loc, const char *name, hid_t file_type,
                        hid_t mem_type, int rank, const hsize_t *dims,
                        hid_t plist, const void *data)
{
    hsize_t total = 1;
    for (int r = 0; r < rank; r++) total *= dims[r];
    hid_t space = H5Screate_simple(rank, dims, NULL);
    hid_t set = space < 0 ? -1
                          : H5Dcreate2(loc, name, file_type, space,
                                       H5P_DEFAULT, plist, H5P_DEFAULT);
    herr_t w = set < 0 ? -1
               : total == 0 ? 0
                            : H5Dwrite(set, mem_type, H5S_ALL, H5S_ALL,
                                       H5P_DEFAULT, data);
    if (set >= 0 && H5Dclose(set) < 0) w = -1;
    if (space >= 0) H5Sclose(space);
    return w < 0 ? -1 : 0;
}
