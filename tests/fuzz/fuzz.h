/* fuzz.h: shared by the fuzz harnesses in tests/fuzz/. Each harness
 * defines LLVMFuzzerTestOneInput; libFuzzer drives it under `make fuzz`,
 * replay.c under `make check` (seeds and saved crash reproducers). */
#ifndef HEADROOM_FUZZ_H
#define HEADROOM_FUZZ_H

#define _GNU_SOURCE
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <sys/mman.h>
#include <unistd.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* The input as a file in memory (memfd): path receives a name the
 * path-based readers can open. Returns the descriptor, -1 on failure. */
static inline int fuzz_memfile(const uint8_t *data, size_t size, char *path, size_t n)
{
	int fd = memfd_create("fuzz-input", 0);
	if (fd < 0)
		return -1;
	size_t done = 0;
	while (done < size) {
		ssize_t k = write(fd, data + done, size - done);
		if (k <= 0) {
			close(fd);
			return -1;
		}
		done += (size_t)k;
	}
	snprintf(path, n, "/proc/self/fd/%d", fd);
	return fd;
}

/* A harness for a reader that takes a path: the input becomes a memory
 * file, and READ(path, ar, d) runs on it with a fresh arena and sink. */
#define FUZZ_PATH_READER(READ)                                              \
	int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)       \
	{                                                                   \
		char path[64];                                              \
		int fd = fuzz_memfile(data, size, path, sizeof path);       \
		if (fd < 0)                                                 \
			return 0;                                           \
		struct hr_alloc h = hr_alloc_default();                     \
		struct arena *ar = arena_create(&h);                        \
		struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;      \
		if (d)                                                      \
			READ(path, ar, d);                                  \
		diag_destroy(d);                                            \
		arena_destroy(ar);                                          \
		close(fd);                                                  \
		return 0;                                                   \
	}

#endif
