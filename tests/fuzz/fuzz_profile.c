/* The derating profile reader. The input becomes an in-memory file. */
#include "fuzz.h"

#include <stdlib.h>
#include "profile.h"
#include "arena.h"
#include "diag.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	char path[64];
	int fd = fuzz_memfile(data, size, path, sizeof path);
	if (fd < 0)
		return 0;
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
	if (d) {
		struct profile *p = malloc(sizeof *p);
		if (p)
			profile_load(path, d, p);
		free(p);
	}
	diag_destroy(d);
	arena_destroy(ar);
	close(fd);
	return 0;
}
