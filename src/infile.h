/* infile.h: opening an outside file for reading. Only regular files are
 * read: a directory, FIFO, socket or device (/dev/zero) is refused at once,
 * so a named pipe never blocks the run and a device never feeds it forever. */
#ifndef HEADROOM_INFILE_H
#define HEADROOM_INFILE_H

#include <stdio.h>

/* Opens path for binary reading. On failure returns NULL with errno set;
 * EISDIR for a directory, ENODEV for any other file that is not regular. */
FILE *infile_open(const char *path);

/* A short lower-case reason for errno value err ("no such file", ...). */
const char *infile_error_text(int err);

#endif
