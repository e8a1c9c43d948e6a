/* outfile.h — output files that appear only when complete (private to the
 * library).
 *
 * The results file (results.c), a report (report.c) and the gathered file
 * (gather.c) are written as DIR/.BASE.partial-XXXXXX beside their final
 * path DIR/BASE, in the same directory so that renaming the complete file
 * onto the final path is atomic on POSIX file systems. batch.c finds the
 * partial files that killed jobs left by that name.
 */
#ifndef NERVEGAP_OUTFILE_H
#define NERVEGAP_OUTFILE_H

#include "nervegap/common.h"

/* Creates the temporary file of path, with the permissions of a new file
 * (0666 less the umask), open for writing as *fd (caller closes); *temp
 * is its name (ng_malloc'd; caller frees, and unlinks it on failure).
 * example, when not NULL, is a file name to suggest when path names a
 * directory (ends in '/'): NG_ERR_USAGE then. NG_ERR_USAGE naming path
 * when the file cannot be created there; NG_ERR_NOMEM. */
int ng_outfile_create(const char *path, const char *example, char **temp,
                      int *fd, ng_error *err);

#endif
