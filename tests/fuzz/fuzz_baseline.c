/* The baseline reader (strict JSON). The input becomes an in-memory file. */
#include "fuzz.h"

#include "arena.h"
#include "diag.h"
#include "waiver.h"

FUZZ_PATH_READER(baseline_load)
