/* diag.h: located diagnostics. Library code adds diagnostics to a sink and
 * carries on; the CLI decides when and where to render them. The sink also
 * owns the table of file names that locations point into. */
#ifndef HEADROOM_DIAG_H
#define HEADROOM_DIAG_H

#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>

#include "arena.h"

#if defined(__GNUC__) || defined(__clang__)
#define DIAG_PRINTF(f, a) __attribute__((format(printf, f, a)))
#else
#define DIAG_PRINTF(f, a)
#endif

enum diag_severity { DIAG_NOTE, DIAG_WARNING, DIAG_ERROR };

/* A place in a source file: 1-based line and column (bytes). file indexes the
 * sink's file table; line 0 means the whole file. */
struct diag_loc {
	uint32_t file;
	uint32_t line;
	uint32_t col;
};

struct diag {
	enum diag_severity severity;
	const char *code;    /* short kebab-case id, e.g. "syntax" (static) */
	const char *message; /* arena-owned, lower-case, no final period */
	struct diag_loc loc;
	uint32_t unit;       /* file id of the top file being processed */
};

struct diag_sink;

/* Creates a sink whose messages live in arena ar (borrowed; must outlive the
 * sink). max_errors caps errors kept per top file (0 = no cap); once reached
 * one last "too many errors" note is kept and diag_full() turns true. */
struct diag_sink *diag_create(struct arena *ar, unsigned max_errors);
void diag_destroy(struct diag_sink *s);

/* Registers a file name (copied) and returns its id, or UINT32_MAX on
 * out-of-memory. The same name registered twice gets two ids. */
uint32_t diag_add_file(struct diag_sink *s, const char *path);
const char *diag_file_name(const struct diag_sink *s, uint32_t id);

/* Sets the top file that following diagnostics are counted against. */
void diag_set_unit(struct diag_sink *s, uint32_t file);

/* Adds a diagnostic with a printf-style message. Out-of-memory while adding
 * is recorded (diag_oom) and the diagnostic is dropped. */
void diag_add(struct diag_sink *s, enum diag_severity sev, const char *code,
	      struct diag_loc loc, const char *fmt, ...)
	DIAG_PRINTF(5, 6);
void diag_vadd(struct diag_sink *s, enum diag_severity sev, const char *code,
	       struct diag_loc loc, const char *fmt, va_list ap);

/* True once the current unit has reached its error cap. */
int diag_full(const struct diag_sink *s);
/* True if memory ran out while recording a diagnostic. */
int diag_oom(const struct diag_sink *s);

size_t diag_count(const struct diag_sink *s);
const struct diag *diag_at(const struct diag_sink *s, size_t i);
/* Errors recorded for unit file id (all units with UINT32_MAX). */
size_t diag_errors(const struct diag_sink *s, uint32_t unit);

/* Writes every diagnostic of unit (all with UINT32_MAX), in order of
 * recording, as "file:line:col: severity: message [code]" followed by the
 * source line and a caret under the column when the file can be read again. */
void diag_render(const struct diag_sink *s, uint32_t unit, FILE *out);

/* Formats one diagnostic header line into buf (no source quote). */
void diag_format(const struct diag_sink *s, const struct diag *d, char *buf,
		 size_t n);

const char *diag_severity_name(enum diag_severity sev);

#endif
