/* smap.h: a small map from case-insensitive names to pointers, for the
 * tables elaboration keeps per scope (parameters, models, subcircuits).
 * Keys are borrowed and must outlive the map (they live in the arena). */
#ifndef HEADROOM_SMAP_H
#define HEADROOM_SMAP_H

#include <stddef.h>

#include "arena.h"

struct smap;

/* Creates an empty map; NULL on out-of-memory. */
struct smap *smap_create(const struct hr_alloc *a);
/* Frees the map (not keys or values). NULL is a no-op. */
void smap_destroy(struct smap *m);

/* Value for key[0..n) compared case-insensitively, or NULL. */
void *smap_get(const struct smap *m, const char *key, size_t n);
/* Inserts or replaces; key must be NUL-terminated at key[n]. Returns 0 on
 * out-of-memory (map unchanged). */
int smap_put(struct smap *m, const char *key, size_t n, void *value);
size_t smap_count(const struct smap *m);
/* Walks the entries: start with *pos = 0; returns the next key (its value
 * in *value when value is not NULL), or NULL past the last. The order is
 * the table's, not the order of insertion. */
const char *smap_next(const struct smap *m, size_t *pos, void **value);

/* Case-insensitive FNV-1a hash, shared with the node table. */
unsigned long smap_hash(const char *s, size_t n);

#endif
