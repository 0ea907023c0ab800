/* The waiver file reader (*@waive lines, so the directive parser). The input becomes an in-memory file. */
#include "fuzz.h"

#include "arena.h"
#include "diag.h"
#include "waiver.h"

FUZZ_PATH_READER(waiver_load)
