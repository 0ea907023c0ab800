/* The parts table reader (CSV). The input becomes an in-memory file. */
#include "fuzz.h"

#include "rating.h"
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
		rating_table_load(path, ar, d);
	}
	diag_destroy(d);
	arena_destroy(ar);
	close(fd);
	return 0;
}
