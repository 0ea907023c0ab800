/* The parts table reader (CSV). The input becomes an in-memory file. */
#include "fuzz.h"

#include "arena.h"
#include "diag.h"
#include "rating.h"

FUZZ_PATH_READER(rating_table_load)
