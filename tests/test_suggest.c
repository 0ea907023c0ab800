/* test_suggest.c: the "did you mean" distance and its cut-off (suggest.h):
 * insertions, deletions, substitutions and neighbour swaps count one each,
 * case is ignored, and a name is offered only within 2 edits and a third
 * of the word's length. */
#include "testutil.h"

#include "suggest.h"

struct dist_row {
	const char *a, *b;
	size_t d;
};

static const struct dist_row dist_rows[] = {
	{"format", "format", 0},
	{"FORMAT", "format", 0},
	{"formt", "format", 1},   /* deletion */
	{"formaat", "format", 1}, /* insertion */
	{"formet", "format", 1},  /* substitution */
	{"fromat", "format", 1},  /* swap of neighbours: one edit, not two */
	{"fmorat", "format", 2},
	{"frmt", "format", 2},
	{"fmt", "format", SUGGEST_FAR},
	{"", "ab", 2},
	{"", "abc", SUGGEST_FAR},
	{"abcdef", "uvwxyz", SUGGEST_FAR},
	{"ca", "abc", SUGGEST_FAR}, /* OSA: no edit of a swapped pair */
};

static void test_distance(void **state)
{
	(void)state;
	for (size_t i = 0; i < sizeof dist_rows / sizeof dist_rows[0]; i++) {
		const struct dist_row *r = &dist_rows[i];
		size_t d = suggest_distance(r->a, strlen(r->a), r->b, strlen(r->b));
		if (d != r->d)
			fail_msg("distance('%s', '%s') = %zu, want %zu", r->a, r->b, d, r->d);
	}
}

struct near_row {
	const char *word;
	const char *want; /* NULL: no suggestion */
};

static const char *const names[] = {"industrial", "basic", "flight", "--format",
				    "--fail-on", "-j", "dm", "d1n4148", "d1n4149"};

static const struct near_row near_rows[] = {
	{"industral", "industrial"},
	{"flihgt", "flight"},
	{"--formt", "--format"},
	{"--fail-of", "--fail-on"},
	{"-J", "-j"}, /* case only: offered even for a short word */
	{"-x", NULL}, /* one edit in two characters: too far */
	{"dx", NULL},
	{"DM", "dm"},
	{"bsc", NULL},          /* two edits in three characters: too far */
	{"basc", "basic"},      /* one edit in four characters: within a third */
	{"flightxy", "flight"}, /* two edits in eight characters */
	{"flghtxy", NULL},      /* three edits: too far whatever the length */
	{"d1n4147", "d1n4148"}, /* a tie goes to the first in byte order */
	{"nothing-like-it", NULL},
	{"basic", NULL}, /* the word itself is not a suggestion */
};

static void test_nearest(void **state)
{
	(void)state;
	for (size_t i = 0; i < sizeof near_rows / sizeof near_rows[0]; i++) {
		const struct near_row *r = &near_rows[i];
		struct suggest s;
		suggest_init(&s, r->word, strlen(r->word));
		for (size_t k = sizeof names / sizeof names[0]; k-- > 0;)
			suggest_offer(&s, names[k]);
		const char *got = suggest_best(&s);
		if ((got == NULL) != (r->want == NULL) || (got && strcmp(got, r->want) != 0))
			fail_msg("'%s': got %s, want %s", r->word, got ? got : "none",
				 r->want ? r->want : "none");
	}
}

static void test_hint(void **state)
{
	(void)state;
	struct suggest s;
	char buf[SUGGEST_HINT_SIZE];
	suggest_init(&s, "blok", 4);
	suggest_offer(&s, "blk");
	assert_string_equal(suggest_hint(&s, buf, sizeof buf), "; did you mean 'blk'?");
	suggest_init(&s, "zzzz", 4);
	suggest_offer(&s, "blk");
	assert_string_equal(suggest_hint(&s, buf, sizeof buf), "");
}

static void test_long_names(void **state)
{
	(void)state;
	char a[SUGGEST_MAX_LEN + 2], b[SUGGEST_MAX_LEN + 2];
	memset(a, 'x', sizeof a - 1);
	memset(b, 'x', sizeof b - 1);
	a[sizeof a - 1] = b[sizeof b - 1] = '\0';
	b[0] = 'y';
	/* past the limit nothing is compared, never read beyond the table */
	assert_true(suggest_distance(a, strlen(a), b, strlen(b)) == SUGGEST_FAR);
	assert_true(suggest_distance(a, SUGGEST_MAX_LEN, b, SUGGEST_MAX_LEN) == 1);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_distance),
		cmocka_unit_test(test_nearest),
		cmocka_unit_test(test_hint),
		cmocka_unit_test(test_long_names),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
