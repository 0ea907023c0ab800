/* Elaboration with includes: the input is a set of in-memory files, so the
 * fuzzer can build include trees and cycles. The first file is "top.cir";
 * a line "@@@ NAME" starts the next file. */
#include "fuzz.h"

#include <stdlib.h>
#include <string.h>

#include "arena.h"
#include "diag.h"
#include "elab.h"
#include "nl.h"

#define FILES 8

struct files {
	const char *name[FILES];
	const char *text[FILES];
	size_t len[FILES];
	int n;
};

static FILE *open_mem(void *ud, const char *path)
{
	struct files *fs = ud;
	for (int i = 0; i < fs->n; i++)
		if (strcmp(fs->name[i], path) == 0)
			return fmemopen((void *)fs->text[i], fs->len[i] ? fs->len[i] : 1, "r");
	return fopen("/nonexistent/headroom-fuzz", "r"); /* sets errno */
}

/* Splits buf (NUL-terminated copy of the input) in place. */
static void split(char *buf, struct files *fs)
{
	fs->name[0] = "top.cir";
	fs->text[0] = buf;
	fs->n = 1;
	char *p = buf;
	while ((p = strstr(p, "\n@@@ ")) && fs->n < FILES) {
		*p = '\0';
		char *name = p + 5, *eol = strchr(name, '\n');
		if (!eol)
			break;
		*eol = '\0';
		fs->name[fs->n] = name;
		fs->text[fs->n++] = eol + 1;
		p = eol + 1;
	}
	for (int i = 0; i < fs->n; i++)
		fs->len[i] = strlen(fs->text[i]);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	if (size == 0 || size > 1 << 20)
		return 0;
	char *buf = malloc(size + 1);
	if (!buf)
		return 0;
	memcpy(buf, data, size);
	buf[size] = '\0';
	struct files fs;
	split(buf, &fs);
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
	if (d) {
		struct elab_opts o;
		memset(&o, 0, sizeof o);
		o.open = open_mem;
		o.open_ud = &fs;
		o.max_parts = 20000;
		o.max_line_len = 4096;
		o.max_includes = 200; /* fan-out x depth stays fast under ASan */
		struct elab_result res;
		memset(&res, 0, sizeof res);
		elab_file("top.cir", &o, &h, d, &res);
		nl_destroy(res.circuit);
	}
	diag_destroy(d);
	arena_destroy(ar);
	free(buf);
	return 0;
}
