/* dense.h: a small dense linear solve (Gaussian elimination with partial
 * pivoting), for the few systems of at most a few hundred unknowns that do
 * not need the sparse solver: the shooting-Newton step (simpss.c) and the
 * resistance across a capacitor (discharge.c). */
#ifndef HEADROOM_DENSE_H
#define HEADROOM_DENSE_H

#include <stddef.h>

/* Solves a x = b in place (a: m x m row-major, destroyed; b becomes x).
 * Returns 0 when a pivot's magnitude is not above tiny (singular to that
 * tolerance). */
int dense_solve(double *a, double *b, size_t m, double tiny);

#endif
