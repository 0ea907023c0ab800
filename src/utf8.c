/* utf8.c: see utf8.h. Table 3-7 of the Unicode Standard gives the ranges of
 * the second byte that each first byte allows. */
#include "utf8.h"

size_t utf8_seq(const unsigned char *s, size_t n)
{
	if (n == 0)
		return 0;
	unsigned c = s[0];
	if (c < 0x80)
		return 1;
	size_t len;
	unsigned lo = 0x80, hi = 0xBF;
	if (c >= 0xC2 && c <= 0xDF)
		len = 2;
	else if (c >= 0xE0 && c <= 0xEF) {
		len = 3;
		lo = c == 0xE0 ? 0xA0 : 0x80;
		hi = c == 0xED ? 0x9F : 0xBF;
	} else if (c >= 0xF0 && c <= 0xF4) {
		len = 4;
		lo = c == 0xF0 ? 0x90 : 0x80;
		hi = c == 0xF4 ? 0x8F : 0xBF;
	} else
		return 0;
	if (n < len || s[1] < lo || s[1] > hi)
		return 0;
	for (size_t i = 2; i < len; i++)
		if (s[i] < 0x80 || s[i] > 0xBF)
			return 0;
	return len;
}

size_t utf8_check(const char *s, size_t n)
{
	const unsigned char *p = (const unsigned char *)s;
	size_t i = 0;
	while (i < n) {
		size_t k = utf8_seq(p + i, n - i);
		if (k == 0)
			return i;
		i += k;
	}
	return n;
}
