/* test_arena.c: the arena and the allocation hook, and every allocation
 * failure path of elaboration: failing the Nth allocation, for every N,
 * must give ELAB_OOM (or success when N is past the last allocation), never
 * a crash or a leak (the sanitizer build checks leaks). */
#include "testutil.h"

static void test_arena_basics(void **state)
{
	(void)state;
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	char *a = arena_alloc(ar, 10);
	assert_non_null(a);
	assert_int_equal((uintptr_t)a % 16, 0);
	struct arena_mark m = arena_mark(ar);
	char *big = arena_alloc(ar, 3 << 20); /* larger than a block */
	assert_non_null(big);
	big[(3 << 20) - 1] = 1;
	size_t fp = arena_footprint(ar);
	arena_reset(ar, m);
	char *b = arena_alloc(ar, 100);
	assert_non_null(b);
	assert_int_equal(arena_footprint(ar), fp); /* reused, nothing new */
	assert_string_equal(arena_strndup(ar, "abcdef", 3), "abc");
	arena_destroy(ar);
	arena_destroy(NULL);
}

static void test_arena_fails(void **state)
{
	(void)state;
	struct failing f = {0, 2, 1};
	struct hr_alloc h = {failing_resize, &f};
	struct arena *ar = arena_create(&h);
	assert_non_null(ar);
	assert_null(arena_alloc(ar, 10));
	arena_destroy(ar);
}

static const char *const deck =
	"oom\n.param k=2\n.subckt cell a b params: r=1k\nR1 a m {r*k}\nC1 m b 1n\n"
	"D1 m b dm\n.model dm d is=1e-14 bv=100\n.ends\nX1 in out cell\nX2 out 0 cell r=2k\n"
	"V1 in 0 sin(0 10 1k)\n*@part X1.C1 v_rated=50V\nK1 L1 L2 0.5\nL1 a 0 1m\nL2 b 0 1m\n";

static void test_elab_every_failure(void **state)
{
	(void)state;
	static struct memfs fs;
	fs.name[0] = "top.cir";
	fs.text[0] = deck;
	fs.n = 1;
	long n = 1, oom_runs = 0;
	for (;; n++) {
		struct failing f = {0, n, 1};
		struct hr_alloc h = {failing_resize, &f};
		struct hr_alloc plain = hr_alloc_default();
		struct arena *dar = arena_create(&plain);
		struct diag_sink *d = diag_create(dar, 50);
		struct elab_opts o = {0};
		o.open = memfs_open;
		o.open_ud = &fs;
		struct elab_result r;
		enum elab_status st = elab_file("top.cir", &o, &h, d, &r);
		int failed = f.calls >= n;
		if (failed) {
			if (st != ELAB_OOM)
				fail_msg("allocation %ld failed but status was %d", n, st);
			assert_null(r.circuit);
			oom_runs++;
		} else {
			assert_int_equal(st, ELAB_OK);
			assert_int_equal(nl_part_count(r.circuit), 10);
		}
		nl_destroy(r.circuit);
		diag_destroy(d);
		arena_destroy(dar);
		if (!failed)
			break;
	}
	print_message("elaboration survived %ld failing allocations\n", oom_runs);
	assert_true(oom_runs > 20);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_arena_basics),
		cmocka_unit_test(test_arena_fails),
		cmocka_unit_test(test_elab_every_failure),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
