/* utf8.h: recognising well-formed UTF-8 (RFC 3629: no overlong forms, no
 * surrogates, nothing past U+10FFFF). Reports write every byte that is not
 * part of a well-formed sequence as U+FFFD, so a Latin-1 comment or a
 * corrupted file never makes a JSON, XML or HTML report unreadable. */
#ifndef HEADROOM_UTF8_H
#define HEADROOM_UTF8_H

#include <stddef.h>

/* Length (1..4) of the well-formed sequence at s[0..n), or 0 if s[0] does
 * not start one. n == 0 gives 0. */
size_t utf8_seq(const unsigned char *s, size_t n);

/* Offset of the first byte of s[0..n) that is not well-formed UTF-8, or n. */
size_t utf8_check(const char *s, size_t n);

#define UTF8_REPLACEMENT "\xEF\xBF\xBD"

#endif
