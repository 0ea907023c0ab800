/* simmat.h: the solver's linear system: a sparse matrix whose pattern is
 * fixed once (every stamp position is registered before the first solve),
 * its right-hand side, and the LU factorisation by SuiteSparse KLU (the
 * symbolic analysis is done once; later solves refactor numerically with
 * the same pivot order and fall back to a fresh factorisation when the
 * pivots have gone bad). Row and column -1 stand for ground: stamps there
 * are dropped. */
#ifndef HEADROOM_SIMMAT_H
#define HEADROOM_SIMMAT_H

#include <stddef.h>

#include "arena.h"

struct simmat;

/* A matrix of n unknowns; positions are added with simmat_need. NULL on
 * out-of-memory. */
struct simmat *simmat_create(size_t n, const struct hr_alloc *h);
/* Frees the matrix and its factors. NULL is a no-op. */
void simmat_destroy(struct simmat *m);

/* Registers entry (row, col) and returns a handle for simmat_add, or -1
 * when either index is -1 (ground). Returns -2 on out-of-memory. Only
 * before simmat_freeze. */
long simmat_need(struct simmat *m, long row, long col);

/* Builds the compressed pattern; handles from simmat_need stay valid.
 * Returns 0 on out-of-memory. */
int simmat_freeze(struct simmat *m);

/* Zeroes the matrix values and the right-hand side. */
void simmat_clear(struct simmat *m);
/* Adds v at a handle (-1: dropped). */
void simmat_add(struct simmat *m, long handle, double v);
/* Adds v to the right-hand side at row (-1: dropped). */
void simmat_rhs(struct simmat *m, long row, double v);

/* Factors and solves; the solution replaces the right-hand side and is
 * returned. NULL when the matrix is singular or out of memory. */
const double *simmat_solve(struct simmat *m);

/* Solves the last factorised matrix for nrhs more right-hand sides, b
 * holding them column after column (n each) and getting the solutions.
 * Returns 0 on failure. */
int simmat_solve_more(struct simmat *m, double *b, size_t nrhs);

/* Factorisations done (fresh, numeric refactorisations). */
void simmat_counts(const struct simmat *m, unsigned long *fresh,
		   unsigned long *refactor);

#endif
