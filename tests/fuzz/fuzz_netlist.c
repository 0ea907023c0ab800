/* Scanner and parser: the bytes as one netlist stream. */
#include "fuzz.h"

#include "arena.h"
#include "deck.h"
#include "diag.h"
#include "parse.h"

static int count_card(void *ud, const struct deck_card *card)
{
	(void)card;
	(*(size_t *)ud)++;
	return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	if (size == 0)
		return 0;
	FILE *in = fmemopen((void *)data, size, "r");
	if (!in)
		return 0;
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct arena *scratch = arena_create(&h);
	struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
	if (d && scratch) {
		uint32_t file = diag_add_file(d, "fuzz.cir");
		struct parse_opts o = {file, 1, 4096, 0, 0};
		size_t cards = 0;
		parse_stream(in, &o, scratch, d, count_card, &cards);
	}
	fclose(in);
	diag_destroy(d);
	arena_destroy(scratch);
	arena_destroy(ar);
	return 0;
}
