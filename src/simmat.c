/* simmat.c: see simmat.h. Why KLU: it is the sparse LU written for circuit
 * matrices (block triangular form, AMD ordering, fast numeric refactor with
 * a kept pivot order), it is packaged by Debian (libsuitesparse-dev) and
 * maintained; docs/solver.md says more. KLU allocates through the C
 * library's malloc: SuiteSparse's allocator setting is process-wide, and
 * batch mode runs threads, so it is left alone. */
#include "simmat.h"

#include <klu.h>
#include <stdlib.h>
#include <string.h>

struct entry {
	long row, col;
	long id; /* handle order */
};

struct simmat {
	struct hr_alloc h;
	size_t n;
	struct entry *ent;   /* registered positions, before freeze */
	size_t nent, capent;
	long *slot;          /* handle -> index into ax */
	int *ap, *ai;
	double *ax, *b;
	klu_common common;
	klu_symbolic *sym;
	klu_numeric *num;
	unsigned long fresh, refactor;
};

struct simmat *simmat_create(size_t n, const struct hr_alloc *h)
{
	struct simmat *m = hr_malloc(h, sizeof *m);
	if (!m)
		return NULL;
	memset(m, 0, sizeof *m);
	m->h = *h;
	m->n = n;
	klu_defaults(&m->common);
	m->common.scale = 0; /* no row scaling (as SPICE): it cost a tenth of the run */
	return m;
}

void simmat_destroy(struct simmat *m)
{
	if (!m)
		return;
	if (m->num)
		klu_free_numeric(&m->num, &m->common);
	if (m->sym)
		klu_free_symbolic(&m->sym, &m->common);
	hr_free(&m->h, m->ent);
	hr_free(&m->h, m->slot);
	hr_free(&m->h, m->ap);
	hr_free(&m->h, m->ai);
	hr_free(&m->h, m->ax);
	hr_free(&m->h, m->b);
	hr_free(&m->h, m);
}

long simmat_need(struct simmat *m, long row, long col)
{
	if (row < 0 || col < 0)
		return -1;
	if (m->nent == m->capent) {
		size_t cap = m->capent ? m->capent * 2 : 64;
		struct entry *e = hr_realloc(&m->h, m->ent, cap * sizeof *e);
		if (!e)
			return -2;
		m->ent = e;
		m->capent = cap;
	}
	m->ent[m->nent] = (struct entry){row, col, (long)m->nent};
	return (long)m->nent++;
}

static int by_position(const void *a, const void *b)
{
	const struct entry *x = a, *y = b;
	if (x->col != y->col)
		return x->col < y->col ? -1 : 1;
	if (x->row != y->row)
		return x->row < y->row ? -1 : 1;
	return 0;
}

/* Every diagonal is present, so a row or column that no part touches
 * shows up as a zero pivot rather than a malformed pattern. */
static int add_diagonal(struct simmat *m)
{
	for (size_t i = 0; i < m->n; i++)
		if (simmat_need(m, (long)i, (long)i) == -2)
			return 0;
	return 1;
}

int simmat_freeze(struct simmat *m)
{
	size_t nhandles = m->nent;
	if (!add_diagonal(m))
		return 0;
	m->slot = hr_malloc(&m->h, (m->nent + 1) * sizeof *m->slot);
	m->ap = hr_malloc(&m->h, (m->n + 1) * sizeof *m->ap);
	m->ai = hr_malloc(&m->h, (m->nent + 1) * sizeof *m->ai);
	m->ax = hr_malloc(&m->h, (m->nent + 1) * sizeof *m->ax);
	m->b = hr_malloc(&m->h, (m->n + 1) * sizeof *m->b);
	if (!m->slot || !m->ap || !m->ai || !m->ax || !m->b)
		return 0;
	if (m->nent)
		qsort(m->ent, m->nent, sizeof *m->ent, by_position);
	size_t nz = 0;
	memset(m->ap, 0, (m->n + 1) * sizeof *m->ap);
	for (size_t i = 0; i < m->nent; i++) {
		const struct entry *e = &m->ent[i];
		if (i == 0 || by_position(e, &m->ent[i - 1]) != 0) {
			m->ai[nz] = (int)e->row;
			m->ap[e->col + 1]++;
			nz++;
		}
		if (e->id < (long)nhandles)
			m->slot[e->id] = (long)nz - 1;
	}
	for (size_t c = 0; c < m->n; c++)
		m->ap[c + 1] += m->ap[c];
	hr_free(&m->h, m->ent);
	m->ent = NULL;
	m->nent = nz;
	if (m->n == 0)
		return 1;
	m->sym = klu_analyze((int)m->n, m->ap, m->ai, &m->common);
	return m->sym != NULL;
}

void simmat_clear(struct simmat *m)
{
	memset(m->ax, 0, m->nent * sizeof *m->ax);
	memset(m->b, 0, m->n * sizeof *m->b);
}

void simmat_add(struct simmat *m, long handle, double v)
{
	if (handle >= 0)
		m->ax[m->slot[handle]] += v;
}

void simmat_rhs(struct simmat *m, long row, double v)
{
	if (row >= 0)
		m->b[row] += v;
}

/* A kept pivot order is trusted while the smallest pivot stays above this
 * fraction of the largest (KLU's cheap estimate). */
#define SIMMAT_MIN_RCOND 1e-14

static int factor(struct simmat *m)
{
	if (m->num && klu_refactor(m->ap, m->ai, m->ax, m->sym, m->num, &m->common) &&
	    klu_rcond(m->sym, m->num, &m->common) && m->common.rcond > SIMMAT_MIN_RCOND) {
		m->refactor++;
		return 1;
	}
	if (m->num)
		klu_free_numeric(&m->num, &m->common);
	m->num = klu_factor(m->ap, m->ai, m->ax, m->sym, &m->common);
	m->fresh++;
	return m->num != NULL && m->common.status == KLU_OK;
}

const double *simmat_solve(struct simmat *m)
{
	if (m->n == 0)
		return m->b;
	if (!factor(m))
		return NULL;
	if (!klu_solve(m->sym, m->num, (int)m->n, 1, m->b, &m->common))
		return NULL;
	return m->b;
}

int simmat_solve_more(struct simmat *m, double *b, size_t nrhs)
{
	if (m->n == 0 || nrhs == 0)
		return 1;
	if (!m->num)
		return 0;
	return klu_solve(m->sym, m->num, (int)m->n, (int)nrhs, b, &m->common) != 0;
}

void simmat_counts(const struct simmat *m, unsigned long *fresh,
		   unsigned long *refactor)
{
	*fresh = m->fresh;
	*refactor = m->refactor;
}
