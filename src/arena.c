/* arena.c: bump-pointer arena over a chain of blocks, plus the default
 * allocation hook. Blocks grow geometrically up to a cap; an allocation larger
 * than a block gets a block of its own. */
#include "arena.h"

#include <assert.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define ARENA_ALIGN 16u
#define ARENA_FIRST_BLOCK 4096u
#define ARENA_MAX_BLOCK (1u << 20)

struct block {
	struct block *next; /* older block */
	size_t size;        /* usable bytes after the header */
	size_t used;
};

struct arena {
	struct hr_alloc hook;
	struct block *head; /* newest block, the one allocated from */
	struct block *spare; /* blocks released by arena_reset, kept for reuse */
	size_t footprint;
};

static void *default_resize(void *ud, void *p, size_t n)
{
	(void)ud;
	if (n == 0) {
		free(p);
		return NULL;
	}
	return realloc(p, n);
}

struct hr_alloc hr_alloc_default(void)
{
	struct hr_alloc a = {default_resize, NULL};
	return a;
}

void *hr_malloc(const struct hr_alloc *a, size_t n)
{
	return a->resize(a->ud, NULL, n ? n : 1);
}

void *hr_realloc(const struct hr_alloc *a, void *p, size_t n)
{
	return a->resize(a->ud, p, n ? n : 1);
}

void hr_free(const struct hr_alloc *a, void *p)
{
	if (p)
		a->resize(a->ud, p, 0);
}

static size_t header_size(void)
{
	return (sizeof(struct block) + ARENA_ALIGN - 1) & ~(size_t)(ARENA_ALIGN - 1);
}

struct arena *arena_create(const struct hr_alloc *a)
{
	struct arena *ar = a->resize(a->ud, NULL, sizeof *ar);
	if (!ar)
		return NULL;
	ar->hook = *a;
	ar->head = NULL;
	ar->spare = NULL;
	ar->footprint = sizeof *ar;
	return ar;
}

static void free_chain(const struct hr_alloc *a, struct block *b)
{
	while (b) {
		struct block *next = b->next;
		a->resize(a->ud, b, 0);
		b = next;
	}
}

void arena_destroy(struct arena *ar)
{
	if (!ar)
		return;
	struct hr_alloc a = ar->hook;
	free_chain(&a, ar->head);
	free_chain(&a, ar->spare);
	a.resize(a.ud, ar, 0);
}

static struct block *take_spare(struct arena *ar, size_t n)
{
	struct block **pp = &ar->spare;
	while (*pp) {
		struct block *b = *pp;
		if (b->size >= n) {
			*pp = b->next;
			b->used = 0;
			return b;
		}
		pp = &b->next;
	}
	return NULL;
}

static struct block *new_block(struct arena *ar, size_t n)
{
	struct block *b = take_spare(ar, n);
	if (b)
		return b;
	size_t size = ar->head ? ar->head->size * 2 : ARENA_FIRST_BLOCK;
	if (size > ARENA_MAX_BLOCK)
		size = ARENA_MAX_BLOCK;
	if (size < n)
		size = n;
	if (size > SIZE_MAX - header_size())
		return NULL;
	b = ar->hook.resize(ar->hook.ud, NULL, header_size() + size);
	if (!b)
		return NULL;
	b->size = size;
	b->used = 0;
	ar->footprint += header_size() + size;
	return b;
}

void *arena_alloc_aligned(struct arena *ar, size_t n, size_t align)
{
	assert(align && align <= ARENA_ALIGN && (align & (align - 1)) == 0);
	if (n > SIZE_MAX - ARENA_ALIGN)
		return NULL;
	if (n == 0)
		n = 1;
	struct block *b = ar->head;
	size_t start = b ? (b->used + align - 1) & ~(align - 1) : 0;
	if (!b || start > b->size || b->size - start < n) {
		b = new_block(ar, n);
		if (!b)
			return NULL;
		b->next = ar->head;
		ar->head = b;
		start = 0;
	}
	void *p = (char *)b + header_size() + start;
	b->used = start + n;
	return p;
}

void *arena_alloc(struct arena *ar, size_t n)
{
	return arena_alloc_aligned(ar, n, ARENA_ALIGN);
}

void *arena_zalloc(struct arena *ar, size_t n)
{
	void *p = arena_alloc(ar, n);
	if (p)
		memset(p, 0, n);
	return p;
}

char *arena_strndup(struct arena *ar, const char *s, size_t n)
{
	char *p = arena_alloc_aligned(ar, n + 1, 1);
	if (!p)
		return NULL;
	if (n)
		memcpy(p, s, n);
	p[n] = '\0';
	return p;
}

char *arena_strdup(struct arena *ar, const char *s)
{
	return arena_strndup(ar, s, strlen(s));
}

struct arena_mark arena_mark(const struct arena *ar)
{
	struct arena_mark m = {ar->head, ar->head ? ar->head->used : 0};
	return m;
}

void arena_reset(struct arena *ar, struct arena_mark m)
{
	/* Blocks newer than the mark go to the spare list; the marked block is
	 * rewound. Invariant: m.block is on the head chain or NULL. */
	while (ar->head && ar->head != m.block) {
		struct block *b = ar->head;
		ar->head = b->next;
		b->next = ar->spare;
		ar->spare = b;
	}
	if (ar->head)
		ar->head->used = m.used;
}

size_t arena_footprint(const struct arena *ar)
{
	return ar->footprint;
}

const struct hr_alloc *arena_hook(const struct arena *ar)
{
	return &ar->hook;
}
