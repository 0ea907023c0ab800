/* arena.h: one allocator hook for the whole library, and bump-pointer arenas.
 * Everything built from one input lives in one arena and is freed at once;
 * objects with other lifetimes (hash tables, file buffers) take the hook directly. */
#ifndef HEADROOM_ARENA_H
#define HEADROOM_ARENA_H

#include <stddef.h>

/* The allocation hook, shaped like a resize function: resize(ud, p, 0) frees p
 * and returns NULL; resize(ud, NULL, n) allocates; otherwise reallocates.
 * Returns NULL on failure (n > 0), leaving p untouched. Tests install a hook
 * that fails the Nth call. */
struct hr_alloc {
	void *(*resize)(void *ud, void *p, size_t n);
	void *ud;
};

/* The default hook over malloc/realloc/free. */
struct hr_alloc hr_alloc_default(void);

/* Thin wrappers over the hook. hr_free(a, NULL) is a no-op. */
void *hr_malloc(const struct hr_alloc *a, size_t n);
void *hr_realloc(const struct hr_alloc *a, void *p, size_t n);
void hr_free(const struct hr_alloc *a, void *p);

struct arena;

/* Creates an empty arena that takes its blocks from *a (copied). Returns NULL
 * on out-of-memory. */
struct arena *arena_create(const struct hr_alloc *a);

/* Frees every block and the arena itself. NULL is a no-op. */
void arena_destroy(struct arena *ar);

/* Returns n bytes aligned for any object, or NULL on out-of-memory. The memory
 * lives until the arena is destroyed or reset below a mark taken before it. */
void *arena_alloc(struct arena *ar, size_t n);

/* As arena_alloc with a smaller alignment (a power of two up to 16): small
 * strings and index arrays do not pay for 16-byte rounding. */
void *arena_alloc_aligned(struct arena *ar, size_t n, size_t align);

/* As arena_alloc, zero-filled. */
void *arena_zalloc(struct arena *ar, size_t n);

/* Copies n bytes of s and appends a NUL. NULL on out-of-memory. */
char *arena_strndup(struct arena *ar, const char *s, size_t n);

/* Copies a NUL-terminated string. */
char *arena_strdup(struct arena *ar, const char *s);

/* A position in the arena, for scratch use: everything allocated after a
 * mark is released by arena_reset(ar, mark). Blocks are kept for reuse. */
struct arena_mark {
	void *block;
	size_t used;
};

struct arena_mark arena_mark(const struct arena *ar);
void arena_reset(struct arena *ar, struct arena_mark m);

/* Bytes currently taken from the hook by this arena (blocks and headers). */
size_t arena_footprint(const struct arena *ar);

/* The hook the arena was created with. */
const struct hr_alloc *arena_hook(const struct arena *ar);

#endif
