/* dense.c: see dense.h. */
#include "dense.h"

#include <math.h>

static void swap_rows(double *a, double *b, size_t m, size_t k, size_t p)
{
	for (size_t j = 0; j < m; j++) {
		double t = a[k * m + j];
		a[k * m + j] = a[p * m + j], a[p * m + j] = t;
	}
	double t = b[k];
	b[k] = b[p], b[p] = t;
}

int dense_solve(double *a, double *b, size_t m, double tiny)
{
	for (size_t k = 0; k < m; k++) {
		size_t p = k;
		for (size_t i = k + 1; i < m; i++)
			if (fabs(a[i * m + k]) > fabs(a[p * m + k]))
				p = i;
		if (!(fabs(a[p * m + k]) > tiny))
			return 0;
		if (p != k)
			swap_rows(a, b, m, k, p);
		for (size_t i = k + 1; i < m; i++) {
			double f = a[i * m + k] / a[k * m + k];
			for (size_t j = k; j < m; j++)
				a[i * m + j] -= f * a[k * m + j];
			b[i] -= f * b[k];
		}
	}
	for (size_t k = m; k-- > 0;) {
		double v = b[k];
		for (size_t j = k + 1; j < m; j++)
			v -= a[k * m + j] * b[j];
		b[k] = v / a[k * m + k];
	}
	return 1;
}
