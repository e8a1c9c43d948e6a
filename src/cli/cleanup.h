/* cleanup.h — removing a temporary output file when SIGINT or SIGTERM
 * ends the command (exit code 128 + the signal). SIGKILL cannot be caught:
 * the file then stays, under its temporary name only. */
#ifndef NERVEGAP_CLI_CLEANUP_H
#define NERVEGAP_CLI_CLEANUP_H

/* Installs the handlers (once) and arms them with a copy of path; NULL
 * disarms them. Not thread-safe: call from the main thread. */
void cleanup_on_signal(const char *path);

#endif
