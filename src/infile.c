/* infile.c: see infile.h. The file type is taken from the opened
 * descriptor (fstat), so a file swapped between a check and the open cannot
 * slip through; O_NONBLOCK keeps the open of a FIFO from waiting for a
 * writer and is cleared again for reading. */
#define _POSIX_C_SOURCE 200809L
#include "infile.h"

#include <errno.h>
#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

FILE *infile_open(const char *path)
{
	int fd = open(path, O_RDONLY | O_NONBLOCK | O_CLOEXEC | O_NOCTTY);
	if (fd < 0)
		return NULL;
	struct stat st;
	int err = 0;
	if (fstat(fd, &st) != 0)
		err = errno;
	else if (S_ISDIR(st.st_mode))
		err = EISDIR;
	else if (!S_ISREG(st.st_mode))
		err = ENODEV;
	else if (fcntl(fd, F_SETFL, fcntl(fd, F_GETFL) & ~O_NONBLOCK) != 0)
		err = errno;
	FILE *f = err ? NULL : fdopen(fd, "rb");
	if (!f) {
		if (!err)
			err = errno;
		close(fd);
		errno = err;
	}
	return f;
}

const char *infile_error_text(int err)
{
	static const struct {
		int code;
		const char *text;
	} tab[] = {{ENOENT, "no such file"}, {EACCES, "permission denied"},
		   {EISDIR, "is a directory"},
		   {ENODEV, "not a regular file (a FIFO, socket or device)"},
		   {ENOTDIR, "a folder in the path is not a folder"},
		   {ELOOP, "too many symbolic links"}, {ENAMETOOLONG, "name too long"}};
	for (size_t i = 0; i < sizeof tab / sizeof tab[0]; i++)
		if (tab[i].code == err)
			return tab[i].text;
	return "the system refused to open it";
}
