/* replay.c: runs one fuzz harness over saved inputs, without libFuzzer:
 * every file named, and every file in every directory named (in name
 * order). `make check` uses it on the seed corpus and the crash
 * reproducers of tests/fuzz/; under `make asan` the same inputs run with
 * the sanitizers. Prints how many inputs ran. */
#include "fuzz.h"

#include <dirent.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

static int run_file(const char *path)
{
	FILE *f = fopen(path, "rb");
	if (!f) {
		fprintf(stderr, "replay: cannot read %s\n", path);
		return 0;
	}
	size_t cap = 4096, n = 0;
	uint8_t *buf = malloc(cap);
	size_t k;
	while (buf && (k = fread(buf + n, 1, cap - n, f)) > 0) {
		n += k;
		if (n == cap) {
			uint8_t *b = realloc(buf, cap * 2);
			if (!b) {
				free(buf);
				buf = NULL;
				break;
			}
			buf = b;
			cap *= 2;
		}
	}
	fclose(f);
	if (!buf)
		return 0;
	LLVMFuzzerTestOneInput(buf, n);
	free(buf);
	return 1;
}

static int by_name(const void *a, const void *b)
{
	return strcmp(*(char *const *)a, *(char *const *)b);
}

static int run_dir(const char *dir, size_t *count)
{
	DIR *d = opendir(dir);
	if (!d)
		return 0;
	char **names = NULL;
	size_t n = 0, cap = 0;
	struct dirent *e;
	while ((e = readdir(d))) {
		if (e->d_name[0] == '.')
			continue;
		if (n == cap) {
			cap = cap ? cap * 2 : 64;
			char **v = realloc(names, cap * sizeof *v);
			if (!v)
				break;
			names = v;
		}
		names[n++] = strdup(e->d_name);
	}
	closedir(d);
	if (n)
		qsort(names, n, sizeof *names, by_name);
	int ok = 1;
	for (size_t i = 0; i < n; i++) {
		char path[4096];
		snprintf(path, sizeof path, "%s/%s", dir, names[i]);
		if (names[i] && run_file(path))
			(*count)++;
		else
			ok = 0;
		free(names[i]);
	}
	free(names);
	return ok;
}

int main(int argc, char **argv)
{
	size_t count = 0;
	int ok = 1;
	for (int i = 1; i < argc; i++) {
		struct stat st;
		if (stat(argv[i], &st) != 0)
			continue; /* a harness with no reproducers yet */
		if (S_ISDIR(st.st_mode))
			ok &= run_dir(argv[i], &count);
		else if (run_file(argv[i]))
			count++;
		else
			ok = 0;
	}
	printf("replay %s: %zu inputs\n", argv[0], count);
	return ok ? 0 : 1;
}
