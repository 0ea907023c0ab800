/* The derating profile reader. The input becomes an in-memory file. */
#include "fuzz.h"

#include <stdlib.h>

#include "arena.h"
#include "diag.h"
#include "profile.h"

static void read_profile(const char *path, struct arena *ar, struct diag_sink *d)
{
	(void)ar;
	struct profile *p = malloc(sizeof *p);
	if (p)
		profile_load(path, d, p);
	free(p);
}

FUZZ_PATH_READER(read_profile)
