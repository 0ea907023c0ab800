/* cli_sim.c: `headroom sim FILE --node N [--node M] [--until T [--from T]]
 * [--max-step S] [--max-periods N] [-o FILE]`: the waveforms of chosen
 * nodes as CSV, over one period of the periodic steady state (default) or
 * from 0 to --until. A summary of the run goes to standard error. */
#include "cli_sim.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "cli_out.h"
#include "diag.h"
#include "elab.h"
#include "num.h"
#include "simrun.h"
#include "suggest.h"

#define EXIT_SOLVER 3
#define CLI_SIM_MAX_NODES 64

struct sim_cli {
	const char *file, *out_path;
	const char *nodes[CLI_SIM_MAX_NODES];
	size_t nnodes;
	struct simrun_opts o;
};

static int number(const char *opt, const char *val, double *out)
{
	size_t bad;
	if (!val || !num_ok(num_parse(val, strlen(val), out, &bad)) || *out < 0) {
		fprintf(stderr, "headroom: %s takes a time or number (e.g. 20m), not '%s'\n",
			opt, val ? val : "");
		return 0;
	}
	return 1;
}

/* An option sim does not know, or -o without its file. */
static void unknown(const char *a)
{
	static const char *const opts[] = {"--node", "-o", "--until", "--from", "--max-step",
					   "--max-periods"};
	char hint[SUGGEST_HINT_SIZE];
	if (strcmp(a, "-o") == 0)
		fprintf(stderr, "headroom: sim: -o needs a file name\n");
	else
		fprintf(stderr, "headroom: sim: unknown option '%s'%s\n", a,
			cli_hint(a, opts, sizeof opts / sizeof opts[0], hint, sizeof hint));
}

static int one_option(struct sim_cli *c, const char *a, const char *val)
{
	double x;
	if (strcmp(a, "--node") == 0) {
		if (!val || c->nnodes == CLI_SIM_MAX_NODES) {
			fprintf(stderr, "headroom: --node takes a node name (at most %d)\n",
				CLI_SIM_MAX_NODES);
			return 0;
		}
		c->nodes[c->nnodes++] = val;
	} else if (strcmp(a, "-o") == 0 && val) {
		c->out_path = val;
	} else if (strcmp(a, "--until") == 0 || strcmp(a, "--from") == 0 ||
		   strcmp(a, "--max-step") == 0 || strcmp(a, "--max-periods") == 0) {
		if (!number(a, val, &x))
			return 0;
		if (a[2] == 'u')
			c->o.until = x;
		else if (a[2] == 'f')
			c->o.from = x;
		else if (a[6] == 's')
			c->o.max_step = x;
		else
			c->o.max_periods = x > 1e6 ? 1000000u : (unsigned)x;
	} else {
		unknown(a);
		return 0;
	}
	return 1;
}

static int parse(struct sim_cli *c, int argc, char **argv)
{
	for (int i = 1; i < argc; i++) {
		if (argv[i][0] == '-' && argv[i][1]) {
			if (!one_option(c, argv[i], i + 1 < argc ? argv[i + 1] : NULL))
				return 0;
			i++;
		} else if (!c->file) {
			c->file = argv[i];
		} else {
			fprintf(stderr, "headroom: sim reads one netlist, not also '%s'\n", argv[i]);
			return 0;
		}
	}
	if (!c->file || c->nnodes == 0) {
		fprintf(stderr, "headroom: usage: headroom sim FILE --node NODE [--node NODE...]\n"
				"  [--until T [--from T]] [--max-step S] [--max-periods N] [-o FILE]\n");
		return 0;
	}
	return 1;
}

static void summary(const struct sim_cli *c, const struct simrun_result *r)
{
	fprintf(stderr, "sim: %s: %zu unknowns, %lu points (%lu rejected), %lu Newton "
			"iterations, %lu+%lu LU factorisations",
		c->file, r->stats.unknowns, r->stats.points, r->stats.rejected,
		r->stats.newton, r->stats.fresh_lu, r->stats.refactor_lu);
	if (c->o.until > 0)
		fprintf(stderr, "; 0 to %g s\n", c->o.until);
	else if (r->period > 0 && r->settled && r->stats.noise > 0)
		fprintf(stderr, "; steady after %u periods of %g s, to within %.3g V from one "
				"period to the next (the solver's noise floor)\n",
			r->periods, r->period, r->stats.noise);
	else if (r->period > 0)
		fprintf(stderr, "; %s after %u periods of %g s\n",
			r->settled ? "steady" : "NOT settled", r->periods, r->period);
	else
		fputs("; nothing repeats: use --until\n", stderr);
}

static int run(const struct sim_cli *c, struct nl_circuit *circ)
{
	const struct hr_alloc hook = hr_alloc_default();
	struct cli_out o = {0};
	if (c->out_path && !cli_out_open(&o, c->out_path))
		return EXIT_USAGE;
	FILE *out = c->out_path ? o.f : stdout;
	struct simrun_result r;
	const char *bad = NULL;
	struct simrun_opts so = c->o;
	so.hold_slow = so.until <= 0; /* the steady state of a far slower PULSE's high level */
	int ok = simrun_csv(out, circ, c->nodes, c->nnodes, &so, &hook, &r, &bad);
	int good = ok && r.status == SIM_OK;
	if (c->out_path && !cli_out_close(&o, good))
		good = ok = 0;
	if (!good) {
		if (bad)
			fprintf(stderr, "%s: error: no node named '%s'\n", c->file, bad);
		else if (r.status == SIM_REFUSED && r.refusal.part != NL_NONE)
			fprintf(stderr, "%s: error: %s: %s\n", c->file,
				nl_part_at(circ, r.refusal.part)->path, r.refusal.why);
		else if (ok || r.status != SIM_OK)
			fprintf(stderr, "%s: error: %s\n", c->file, sim_status_text(r.status));
		return bad || r.status == SIM_REFUSED || r.status == SIM_OK ? EXIT_USAGE : EXIT_SOLVER;
	}
	summary(c, &r);
	return 0;
}

int cli_sim(int argc, char **argv)
{
	struct sim_cli c;
	memset(&c, 0, sizeof c);
	if (!parse(&c, argc, argv))
		return EXIT_USAGE;
	struct hr_alloc hook = hr_alloc_default();
	struct arena *ar = arena_create(&hook);
	struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
	if (!d) {
		arena_destroy(ar);
		return EXIT_USAGE;
	}
	struct elab_opts eo = {0};
	struct elab_result er;
	enum elab_status st = elab_file(c.file, &eo, &hook, d, &er);
	diag_render(d, UINT32_MAX, stderr);
	int rc = st == ELAB_OK ? run(&c, er.circuit) : EXIT_USAGE;
	nl_destroy(er.circuit);
	diag_destroy(d);
	arena_destroy(ar);
	return rc;
}
