/* test_topo.c: structure recognition and node ranges on the hand-written
 * netlists of tests/data/topo. Each file states its expectations in "*!"
 * lines, worked out by hand from docs/design.md §5/§6 and the textbook results each
 * file names in its header (ideal diodes, no load, steady state):
 *   *! structures N
 *   *! struct output=NODE kind=K stages=S polarity=P drive=NODE reference=NODE
 *   *! range NODE MIN MAX
 *   *! role PART ROLE TEXT
 * Plus the Cockcroft-Walton ladder against its textbook values for N up to
 * 1000 stages, built here. */
#include "testutil.h"

#include <dirent.h>
#include <math.h>
#include <strings.h>
#include <unistd.h>

#include "audit.h"

#define TOPO_DIR "tests/data/topo"

static uint32_t node_id(const struct audit *a, const char *name)
{
	return nl_node_find(a->er.circuit, name, strlen(name));
}

static const struct topo_struct *by_output(const struct audit *a, const char *out)
{
	uint32_t id = node_id(a, out);
	for (size_t i = 0; id != NL_NONE && i < a->topo.n; i++)
		if (a->topo.s[i].output == id)
			return &a->topo.s[i];
	return NULL;
}

static const char *name_of(const struct audit *a, uint32_t id)
{
	return id == NL_NONE ? "-" : nl_node_at(a->er.circuit, id)->name;
}

/* Value of key=... in a line, copied into buf. */
static int field(const char *line, const char *key, char *buf, size_t n)
{
	char pat[32];
	snprintf(pat, sizeof pat, " %s=", key);
	const char *p = strstr(line, pat);
	if (!p)
		return 0;
	p += strlen(pat);
	size_t k = strcspn(p, " \t\r\n");
	snprintf(buf, n, "%.*s", (int)(k < n ? k : n - 1), p);
	return 1;
}

static int check_struct(const struct audit *a, const char *line, const char *file)
{
	char out[64], kind[64], v[64];
	int bad = 0;
	field(line, "output", out, sizeof out);
	const struct topo_struct *s = by_output(a, out);
	if (!s) {
		print_error("%s: no structure with output %s\n", file, out);
		return 1;
	}
	if (field(line, "kind", kind, sizeof kind) && strcmp(kind, topo_kind_name(s->kind))) {
		print_error("%s: output %s: kind %s, expected %s\n", file, out, topo_kind_name(s->kind), kind);
		bad++;
	}
	if (field(line, "stages", v, sizeof v) && fabs(atof(v) - s->stages) > 1e-9) {
		print_error("%s: output %s: %g stages, expected %s\n", file, out, s->stages, v);
		bad++;
	}
	if (field(line, "polarity", v, sizeof v) &&
	    strcmp(v, s->negative ? "negative" : "positive")) {
		print_error("%s: output %s: polarity, expected %s\n", file, out, v);
		bad++;
	}
	if (field(line, "drive", v, sizeof v) && strcasecmp(v, name_of(a, s->drive))) {
		print_error("%s: output %s: drive %s, expected %s\n", file, out, name_of(a, s->drive), v);
		bad++;
	}
	if (field(line, "reference", v, sizeof v) && strcasecmp(v, name_of(a, s->reference))) {
		print_error("%s: output %s: reference %s, expected %s\n", file, out, name_of(a, s->reference), v);
		bad++;
	}
	return bad;
}

static int check_range(const struct audit *a, const char *line, const char *file)
{
	char node[64];
	double lo, hi, glo, ghi;
	int exact;
	if (sscanf(line, "*! range %63s %lf %lf", node, &lo, &hi) != 3) {
		print_error("%s: bad range line: %s", file, line);
		return 1;
	}
	uint32_t id = node_id(a, node);
	if (id == NL_NONE || a->prop.nodes[id].state != PS_RESOLVED) {
		print_error("%s: node %s not settled\n", file, node);
		return 1;
	}
	form_range(&a->prop.fc, a->prop.nodes[id].f, &glo, &ghi, &exact);
	double tol = 1e-6 * fmax(1, fmax(fabs(lo), fabs(hi)));
	if (fabs(glo - lo) > tol || fabs(ghi - hi) > tol) {
		print_error("%s: node %s range [%g, %g], expected [%g, %g]\n", file, node, glo, ghi, lo, hi);
		return 1;
	}
	return 0;
}

static int check_role(const struct audit *a, const char *line, const char *file)
{
	char part[64];
	int off = 0;
	if (sscanf(line, "*! role %63s %n", part, &off) != 1 || !off) {
		print_error("%s: bad role line: %s", file, line);
		return 1;
	}
	char want[128];
	snprintf(want, sizeof want, "%s", line + off);
	want[strcspn(want, "\r\n")] = '\0';
	for (size_t i = 0; i < a->topo.n; i++)
		for (uint32_t k = 0; k < a->topo.s[i].nparts; k++) {
			const struct topo_part *tp = &a->topo.s[i].parts[k];
			if (strcasecmp(nl_part_at(a->er.circuit, tp->part)->path, part) == 0) {
				if (strcmp(tp->role, want) == 0)
					return 0;
				print_error("%s: %s role '%s', expected '%s'\n", file, part, tp->role, want);
				return 1;
			}
		}
	print_error("%s: %s is in no structure\n", file, part);
	return 1;
}

static int check_file(const char *path, int *checks)
{
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct diag_sink *d = diag_create(ar, 50);
	struct audit a;
	int bad = 0;
	if (audit_file(path, NULL, &h, d, &a) != AUDIT_OK) {
		char *txt = render_headers(d);
		print_error("%s: not analysed:\n%s", path, txt);
		free(txt);
		bad = 1;
	}
	FILE *f = fopen(path, "r");
	char line[512];
	while (!bad && f && fgets(line, sizeof line, f)) {
		int n = -1;
		if (strncmp(line, "*! struct ", 10) == 0)
			bad += check_struct(&a, line, path);
		else if (strncmp(line, "*! range ", 9) == 0)
			bad += check_range(&a, line, path);
		else if (strncmp(line, "*! role ", 8) == 0)
			bad += check_role(&a, line, path);
		else if (sscanf(line, "*! structures %d", &n) == 1 && (size_t)n != a.topo.n) {
			print_error("%s: %zu structures, expected %d\n", path, a.topo.n, n);
			bad++;
		} else if (strncmp(line, "*!", 2) != 0)
			continue;
		(*checks)++;
	}
	if (f)
		fclose(f);
	audit_free(&a);
	diag_destroy(d);
	arena_destroy(ar);
	return bad;
}

static void test_hand_netlists(void **state)
{
	(void)state;
	DIR *dir = opendir(TOPO_DIR);
	assert_non_null(dir);
	struct dirent *e;
	int files = 0, checks = 0, bad = 0;
	while ((e = readdir(dir))) {
		size_t n = strlen(e->d_name);
		if (n < 5 || strcmp(e->d_name + n - 4, ".cir") != 0)
			continue;
		char path[512];
		snprintf(path, sizeof path, "%s/%s", TOPO_DIR, e->d_name);
		bad += check_file(path, &checks);
		files++;
	}
	closedir(dir);
	print_message("topo: %d netlists, %d expectations checked, %d wrong\n", files, checks, bad);
	assert_true(files >= 20);
	assert_int_equal(bad, 0);
}

/* A rail written as a slow SIN (2 Hz under a 5 kHz signal) is a rail that
 * sags, not a clock: the diode to it makes a clamp on a moving rail, not a
 * pump stage (the rail 250 times slower than the node it holds). The
 * ranges by hand: the rail 4.5 .. 5.5 V; C1 charges at the rail's bottom
 * to 10 - 4.5 = 5.5 V and keeps it (nothing discharges it), so x = in -
 * 5.5 V swings -15.5 .. 4.5 V, and D1 blocks up to 5.5 + 15.5 = 21 V. */
static void test_slow_sin_rail(void **state)
{
	(void)state;
	char path[] = "/tmp/headroom_topo_XXXXXX";
	int fd = mkstemp(path);
	assert_true(fd >= 0);
	const char *deck =
		"ceiling clamp on a sagging rail\n"
		"*! structures 1\n"
		"*! struct output=x kind=clamp-ceiling stages=0.5 polarity=negative drive=in reference=vdd\n"
		"*! role C1 coupling cap\n"
		"*! role D1 clamp diode\n"
		"*! range vdd 4.5 5.5\n"
		"*! range x -15.5 4.5\n"
		"VDD vdd 0 SIN(5 0.5 2)\nV1 in 0 SIN(0 10 5k)\nC1 in x 10n\nD1 x vdd dideal\n"
		".model dideal d(is=1e-9 n=0.05)\n.end\n";
	assert_true(write(fd, deck, strlen(deck)) == (ssize_t)strlen(deck));
	close(fd);
	int checks = 0;
	int bad = check_file(path, &checks);
	unlink(path);
	assert_int_equal(checks, 6);
	assert_int_equal(bad, 0);
}

/* N-stage half-wave Cockcroft-Walton ladder, flat, driven by Vp = 10 V:
 * textbook (Kuffel, Zaengl & Kuffel, High Voltage Engineering
 * Fundamentals, 2nd ed., section 2.2, from memory; also docs/sources.md §3):
 * output 2N Vp unloaded; DC-column node k at 2k Vp; the first coupling cap
 * sees Vp, every other cap 2Vp; every diode 2Vp reverse. */
static char *ladder_deck(int n)
{
	size_t cap = 256 + (size_t)n * 200, k;
	char *s = malloc(cap), pa[24], pd[24];
	k = (size_t)snprintf(s, cap, "ladder %d\nV1 in 0 sin(0 10 1k)\n.model dm d\n", n);
	for (int i = 1; i <= n; i++) {
		snprintf(pa, sizeof pa, i == 1 ? "in" : "a%d", i - 1);
		snprintf(pd, sizeof pd, i == 1 ? "0" : "d%d", i - 1);
		k += (size_t)snprintf(s + k, cap - k,
			"CA%d %s a%d 1u\nDC%d %s a%d dm\nDP%d a%d d%d dm\nCD%d %s d%d 1u\n",
			i, pa, i, i, pd, i, i, i, i, i, pd, i);
	}
	return s;
}

/* Largest |v(p0) - v(p1)| of a part over the period. */
static double stress(const struct audit *a, const char *path)
{
	const struct nl_circuit *c = a->er.circuit;
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *p = nl_part_at(c, i);
		if (strcmp(p->path, path) != 0)
			continue;
		const uint32_t *q = nl_pins(c, p);
		const struct form *d = form_lin(a->ar, 1,
						a->prop.nodes[q[0]].f, -1, a->prop.nodes[q[1]].f);
		double lo, hi;
		int exact;
		form_range(&a->prop.fc, d, &lo, &hi, &exact);
		return p->kind == NL_D ? -lo : fmax(hi, -lo);
	}
	return NAN;
}

static void check_ladder(int n)
{
	static struct memfs fs;
	char *deck = ladder_deck(n);
	fs.name[0] = "ladder.cir";
	fs.text[0] = deck;
	fs.n = 1;
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct diag_sink *d = diag_create(ar, 50);
	struct audit_opts o;
	memset(&o, 0, sizeof o);
	o.elab.open = memfs_open;
	o.elab.open_ud = &fs;
	o.source_tol = NAN;
	struct audit a;
	assert_int_equal(audit_file("ladder.cir", &o, &h, d, &a), AUDIT_OK);
	assert_int_equal(a.topo.n, 1);
	const struct topo_struct *t = &a.topo.s[0];
	assert_int_equal(t->kind, n == 1 ? TK_DOUBLER_HALF : TK_LADDER);
	assert_true(t->stages == n);
	char name[32];
	snprintf(name, sizeof name, "d%d", n);
	assert_int_equal(t->output, nl_node_find(a.er.circuit, name, strlen(name)));
	const double vp = 10;
	double lo, hi;
	int exact;
	form_range(&a.prop.fc, a.prop.nodes[t->output].f, &lo, &hi, &exact);
	assert_true(fabs(lo - 2 * n * vp) < 1e-9 * n && fabs(hi - 2 * n * vp) < 1e-9 * n);
	for (int i = 1; i <= n; i++) {
		char p[4][16];
		snprintf(p[0], 16, "CA%d", i);
		snprintf(p[1], 16, "CD%d", i);
		snprintf(p[2], 16, "DC%d", i);
		snprintf(p[3], 16, "DP%d", i);
		double want = i == 1 ? vp : 2 * vp;
		if (fabs(stress(&a, p[0]) - want) > 1e-9 || fabs(stress(&a, p[1]) - 2 * vp) > 1e-9 ||
		    fabs(stress(&a, p[2]) - 2 * vp) > 1e-9 || fabs(stress(&a, p[3]) - 2 * vp) > 1e-9)
			fail_msg("ladder %d, stage %d: stresses %g %g %g %g", n, i, stress(&a, p[0]),
				 stress(&a, p[1]), stress(&a, p[2]), stress(&a, p[3]));
	}
	audit_free(&a);
	diag_destroy(d);
	arena_destroy(ar);
	free(deck);
}

static void test_ladders(void **state)
{
	(void)state;
	const int sizes[] = {1, 2, 3, 10, 100, 1000};
	for (size_t i = 0; i < sizeof sizes / sizeof sizes[0]; i++)
		check_ladder(sizes[i]);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_hand_netlists),
		cmocka_unit_test(test_ladders),
		cmocka_unit_test(test_slow_sin_rail),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
