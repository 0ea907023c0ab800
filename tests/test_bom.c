/* test_bom.c: a BOM file read whole: its columns line, and every
 * allocation failing in turn (a clean NULL with an error, never a crash). */
#include "testutil.h"

#include <unistd.h>

#include "bom.h"

static const char text[] = "Title line\n"
			   "Ref;Qty;Value;Rated Voltage;Type\n"
			   "\"C1, C2\";2;100n;50V;X7R\n"
			   "C3-C5;3;1u 25V;;electrolytic\n"
			   "D1;1;Schottky 40V;;\n";

static char *write_bom(char *path)
{
	strcpy(path, "/tmp/headroom-test-bom-XXXXXX");
	int fd = mkstemp(path);
	assert_true(fd >= 0);
	assert_int_equal(write(fd, text, sizeof text - 1), (ssize_t)(sizeof text - 1));
	close(fd);
	return path;
}

static void test_columns(void **state)
{
	(void)state;
	char buf[64], *path = write_bom(buf);
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct diag_sink *d = diag_create(ar, 50);
	const struct bom *b = bom_load(path, ar, d);
	assert_non_null(b);
	const char *c = bom_columns(b);
	assert_non_null(strstr(c, "header on line 2, ';' separated; designator: column 1 'Ref'; "
				  "value: column 3 'Value'; voltage: column 4 'Rated Voltage'; "
				  "kind: column 5 'Type'; quantity: column 2 'Qty' (not needed)"));
	assert_int_equal(diag_count(d), 0);
	assert_int_equal(bom_unused_count(b), 6 + 3); /* 6 designators, 3 rows */
	unlink(path);
	diag_destroy(d);
	arena_destroy(ar);
}

static void test_oom(void **state)
{
	(void)state;
	char buf[64], *path = write_bom(buf);
	long ok = 0;
	for (long n = 1; n < 400; n++) {
		struct failing f = {0, n, 1};
		struct hr_alloc h = {failing_resize, &f};
		struct arena *ar = arena_create(&h);
		struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
		if (d && bom_load(path, ar, d))
			ok++;
		diag_destroy(d);
		arena_destroy(ar);
	}
	assert_true(ok > 0); /* enough allocations let it through */
	unlink(path);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_columns),
		cmocka_unit_test(test_oom),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
