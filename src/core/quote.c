/* quote.c — file content and command-line text made safe to show in a
 * message: printable ASCII and well-formed UTF-8 (RFC 3629: no overlong
 * forms, no surrogates, nothing above U+10FFFF) are kept, every other byte
 * becomes \xNN, and a long field is cut with "..." so that one message
 * stays one short line. Every reader message goes through it (the
 * detail message of qc_fail too, as a last guard). */
#include "core/internal.h"

#include <stdio.h>
#include <string.h>

/* Length of the well-formed UTF-8 sequence at s (n bytes left), or 0. */
static size_t utf8_sequence(const unsigned char *s, size_t n)
{
    unsigned c = s[0];
    size_t len;
    unsigned lo = 0x80, hi = 0xBF; /* allowed range of the second byte */
    if (c >= 0xC2 && c <= 0xDF)
        len = 2;
    else if (c >= 0xE0 && c <= 0xEF) {
        len = 3;
        if (c == 0xE0)
            lo = 0xA0; /* no overlong forms */
        if (c == 0xED)
            hi = 0x9F; /* no surrogates */
    } else if (c >= 0xF0 && c <= 0xF4) {
        len = 4;
        if (c == 0xF0)
            lo = 0x90;
        if (c == 0xF4)
            hi = 0x8F; /* nothing above U+10FFFF */
    } else {
        return 0;
    }
    if (n < len || s[1] < lo || s[1] > hi)
        return 0;
    for (size_t i = 2; i < len; i++)
        if (s[i] < 0x80 || s[i] > 0xBF)
            return 0;
    return len;
}

const char *qc_quote(const char *text, size_t len, size_t max_chars, char *buf, size_t cap)
{
    static const char ellipsis[] = "...";
    if (!buf || cap == 0)
        return "";
    buf[0] = '\0';
    if (!text)
        return buf;
    if (cap < sizeof ellipsis + 4) /* no room for one escape and the ellipsis */
        return buf;
    const unsigned char *s = (const unsigned char *)text;
    size_t out = 0, shown = 0, i = 0;
    /* room kept for the ellipsis and the terminating NUL */
    const size_t limit = cap - sizeof ellipsis;
    while (i < len) {
        char piece[8];
        size_t plen, used;
        if (s[i] >= 0x20 && s[i] < 0x7F) {
            piece[0] = (char)s[i];
            plen = used = 1;
        } else if ((used = utf8_sequence(s + i, len - i)) > 0) {
            memcpy(piece, s + i, used);
            plen = used;
        } else {
            snprintf(piece, sizeof piece, "\\x%02X", s[i]);
            plen = 4;
            used = 1;
        }
        if (shown >= max_chars || out + plen > limit) {
            memcpy(buf + out, ellipsis, sizeof ellipsis);
            return buf;
        }
        memcpy(buf + out, piece, plen);
        out += plen;
        shown++;
        i += used;
    }
    buf[out] = '\0';
    return buf;
}
