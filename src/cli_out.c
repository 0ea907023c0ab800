/* cli_out.c: replace-on-success output files (cli_out.h). */
#define _GNU_SOURCE /* O_TMPFILE, linkat's AT_SYMLINK_FOLLOW */
#include "cli_out.h"

#include <errno.h>
#include <fcntl.h>
#include <limits.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

/* The file a name ends at: a symbolic link is followed to its target (the
 * target may not exist yet: then the link's own directory is kept). */
static char *resolve(const char *path)
{
	char buf[PATH_MAX];
	struct stat st;
	if (lstat(path, &st) != 0 || !S_ISLNK(st.st_mode))
		return strdup(path);
	char *real = realpath(path, NULL);
	if (real)
		return real;
	ssize_t k = readlink(path, buf, sizeof buf - 1);
	if (k <= 0)
		return strdup(path);
	buf[k] = '\0';
	const char *slash = strrchr(path, '/');
	if (buf[0] == '/' || !slash)
		return strdup(buf);
	size_t dl = (size_t)(slash - path) + 1;
	char *out = malloc(dl + (size_t)k + 1);
	if (out) {
		memcpy(out, path, dl);
		memcpy(out + dl, buf, (size_t)k + 1);
	}
	return out;
}

/* mkstemp makes the file private: give it the mode a plain create would,
 * or keep the mode of the file it replaces. */
static void set_mode(int fd, const char *target)
{
	struct stat st;
	mode_t mode;
	if (stat(target, &st) == 0) {
		mode = st.st_mode & 07777;
	} else {
		mode_t mask = umask(0);
		umask(mask);
		mode = 0666 & ~mask;
	}
	fchmod(fd, mode);
}

/* An unnamed file in the folder of o->target (O_TMPFILE), or -1 where the
 * system has none or /proc is missing (it gives the file its name). */
static int open_unnamed(struct cli_out *o)
{
#ifdef O_TMPFILE
	const char *slash = strrchr(o->target, '/');
	char *dir = slash ? strndup(o->target, (size_t)(slash - o->target) + 1) : strdup(".");
	int fd = -1;
	if (dir && access("/proc/self/fd", X_OK) == 0)
		fd = open(dir, O_TMPFILE | O_WRONLY | O_CLOEXEC, 0600);
	free(dir);
	return fd;
#else
	(void)o;
	return -1;
#endif
}

/* Gives the unnamed file a temporary name beside the target, to be
 * renamed over it; 0 (printed) on failure. */
static int name_unnamed(struct cli_out *o)
{
	char proc[64];
	size_t n = strlen(o->target) + 48;
	if (fflush(o->f) != 0 || !(o->tmp = malloc(n))) {
		fprintf(stderr, "headroom: cannot write '%s': %s\n", o->path, strerror(errno));
		return 0;
	}
	snprintf(proc, sizeof proc, "/proc/self/fd/%d", fileno(o->f));
	for (int k = 0; k < 100; k++) {
		snprintf(o->tmp, n, "%s.tmp-%ld-%d", o->target, (long)getpid(), k);
		if (linkat(AT_FDCWD, proc, AT_FDCWD, o->tmp, AT_SYMLINK_FOLLOW) == 0)
			return 1;
		if (errno != EEXIST)
			break;
	}
	fprintf(stderr, "headroom: cannot write '%s': %s\n", o->path, strerror(errno));
	free(o->tmp);
	o->tmp = NULL;
	return 0;
}

int cli_out_open(struct cli_out *o, const char *path)
{
	struct stat st;
	memset(o, 0, sizeof *o);
	o->path = path;
	if (stat(path, &st) == 0 && !S_ISREG(st.st_mode)) {
		o->f = fopen(path, "w"); /* a device or FIFO: write through */
		if (!o->f)
			fprintf(stderr, "headroom: cannot write '%s': %s\n", path, strerror(errno));
		return o->f != NULL;
	}
	o->target = resolve(path);
	int ufd = o->target ? open_unnamed(o) : -1;
	if (ufd >= 0) {
		set_mode(ufd, o->target);
		o->f = fdopen(ufd, "w");
		if (o->f) {
			o->unnamed = 1;
			return 1;
		}
		close(ufd);
	}
	o->tmp = o->target ? malloc(strlen(o->target) + 16) : NULL;
	if (!o->tmp) {
		fprintf(stderr, "headroom: out of memory\n");
		return cli_out_close(o, 0), 0;
	}
	sprintf(o->tmp, "%s.tmp-XXXXXX", o->target);
	int fd = mkstemp(o->tmp);
	if (fd >= 0) {
		set_mode(fd, o->target);
		o->f = fdopen(fd, "w");
	}
	if (!o->f) {
		fprintf(stderr, "headroom: cannot create the output file next to '%s'\n", path);
		if (fd >= 0)
			close(fd), remove(o->tmp);
		free(o->tmp), free(o->target);
		o->tmp = o->target = NULL;
	}
	return o->f != NULL;
}

int cli_out_close(struct cli_out *o, int ok)
{
	int good = 1, named = !(o->f && o->unnamed && ok) || name_unnamed(o);
	if (o->f) {
		good = !(ferror(o->f) | fclose(o->f));
		if (!good)
			fprintf(stderr, "headroom: cannot write '%s'\n", o->path);
	}
	good = good && named;
	if (o->tmp && (!ok || !good)) {
		remove(o->tmp);
	} else if (o->tmp && rename(o->tmp, o->target) != 0) {
		fprintf(stderr, "headroom: cannot write '%s': %s\n", o->path, strerror(errno));
		remove(o->tmp);
		good = 0;
	}
	free(o->tmp);
	free(o->target);
	memset(o, 0, sizeof *o);
	return good;
}
