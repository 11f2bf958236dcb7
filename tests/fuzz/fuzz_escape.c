/* fuzz_escape.c - libFuzzer harness for the escaping of input text (text,
 * JSON, XML for SVG, Markdown).  Each escaper's output is checked against
 * what its consumer needs, by an independent reading: strict UTF-8 (no
 * overlong forms, no surrogates, nothing above U+10FFFF) everywhere, no
 * control characters on a terminal, a well-formed JSON string body, XML
 * text with no markup character outside an entity, Markdown with no raw
 * cell separator or line break. */
#define _GNU_SOURCE /* open_memstream */
#include <setjmp.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/util/arena.h"
#include "../../src/util/text.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* Length of the strictly valid UTF-8 sequence at s, 0 when invalid; *cp
 * gets the code point.  (RFC 3629, table 3-7 of the Unicode standard.) */
static size_t utf8_seq(const unsigned char *s, size_t len, uint32_t *cp)
{
    unsigned char c = s[0];
    size_t n;
    uint32_t v, min;
    if (c < 0x80) {
        *cp = c;
        return 1;
    } else if (c >= 0xc2 && c <= 0xdf) {
        n = 2, v = c & 0x1f, min = 0x80;
    } else if (c >= 0xe0 && c <= 0xef) {
        n = 3, v = c & 0x0f, min = 0x800;
    } else if (c >= 0xf0 && c <= 0xf4) {
        n = 4, v = c & 0x07, min = 0x10000;
    } else {
        return 0;
    }
    if (len < n) {
        return 0;
    }
    for (size_t i = 1; i < n; i++) {
        if ((s[i] & 0xc0) != 0x80) {
            return 0;
        }
        v = (v << 6) | (s[i] & 0x3f);
    }
    if (v < min || v > 0x10ffff || (v >= 0xd800 && v <= 0xdfff)) {
        return 0;
    }
    *cp = v;
    return n;
}

/* Calls ok(code point, bytes, remaining) for each character; aborts on
 * invalid UTF-8. */
static void walk(const char *s, size_t len, void (*ok)(uint32_t, const char *, size_t))
{
    size_t i = 0;
    while (i < len) {
        uint32_t cp;
        size_t n = utf8_seq((const unsigned char *)s + i, len - i, &cp);
        if (!n) {
            abort();
        }
        ok(cp, s + i, len - i);
        i += n;
    }
}

static void term_char(uint32_t cp, const char *p, size_t rest)
{
    (void)p, (void)rest;
    if (cp < 0x20 || cp == 0x7f || (cp >= 0x80 && cp <= 0x9f)) {
        abort();
    }
}

static void markdown_char(uint32_t cp, const char *p, size_t rest)
{
    term_char(cp, p, rest);
}

/* RFC 8259 section 7: U+0000 to U+001F must be escaped; nothing else must. */
static void json_char(uint32_t cp, const char *p, size_t rest)
{
    (void)p, (void)rest;
    if (cp < 0x20) {
        abort();
    }
}

static void check_json(const char *s, size_t len)
{
    walk(s, len, json_char);
    for (size_t i = 0; i < len; i++) {
        if (s[i] == '"') {
            abort(); /* a quote not escaped */
        }
        if (s[i] == '\\') {
            if (i + 1 >= len) {
                abort();
            }
            char e = s[++i];
            if (e == 'u') {
                for (int k = 1; k <= 4; k++) {
                    if (i + (size_t)k >= len || s[i + (size_t)k] == '\0' ||
                        !strchr("0123456789abcdefABCDEF", s[i + (size_t)k])) {
                        abort();
                    }
                }
                i += 4;
            } else if (e == '\0' || !strchr("\"\\/bfnrt", e)) {
                abort();
            }
        }
    }
}

static void xml_char(uint32_t cp, const char *p, size_t rest)
{
    if ((cp < 0x20 && cp != '\t' && cp != '\n') || cp == 0xfffe || cp == 0xffff) {
        abort(); /* not a character XML 1.0 allows */
    }
    if (cp == '<' || cp == '>' || cp == '"' || cp == '\'') {
        abort();
    }
    if (cp == '&') {
        /* an entity: &name; or &#digits; or &#xhex; */
        size_t i = 1;
        if (i < rest && p[i] == '#') {
            i++;
            if (i < rest && p[i] == 'x') {
                i++;
            }
        }
        size_t start = i;
        while (i < rest && ((p[i] >= 'a' && p[i] <= 'z') || (p[i] >= '0' && p[i] <= '9') ||
                            (p[i] >= 'A' && p[i] <= 'F'))) {
            i++;
        }
        if (i == start || i >= rest || p[i] != ';') {
            abort();
        }
    }
}

static void check_markdown(const char *s, size_t len)
{
    walk(s, len, markdown_char);
    for (size_t i = 0; i < len; i++) {
        if (s[i] == '\\') {
            i++; /* the next byte is escaped */
            continue;
        }
        if (s[i] == '|' || s[i] == '`' || s[i] == '<' || s[i] == '>') {
            abort();
        }
    }
}

/* Runs one escaper into memory and returns the bytes (malloc'd). */
static char *capture(void (*fn)(FILE *, const char *, size_t), const char *s, size_t len, size_t *out_len)
{
    char *buf = NULL;
    size_t n = 0;
    FILE *f = open_memstream(&buf, &n);
    if (!f) {
        abort();
    }
    fn(f, s, len);
    if (fclose(f) != 0) {
        abort();
    }
    *out_len = n;
    return buf;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *s = (const char *)data;
    size_t n;
    char *out;

    out = capture(kn_fput_term, s, size, &n);
    walk(out, n, term_char);
    kn_arena *a = kn_arena_new();
    if (!a) {
        abort();
    }
    jmp_buf oom;
    if (setjmp(oom)) {
        abort();
    }
    kn_arena_set_oom(a, &oom);
    char *esc = kn_escape_term(a, s, size);
    if (strlen(esc) != n || memcmp(esc, out, n) != 0) {
        abort(); /* the two terminal escapers must agree */
    }
    kn_arena_free(a);
    free(out);

    out = capture(kn_fput_json, s, size, &n);
    check_json(out, n);
    free(out);

    out = capture(kn_fput_xml, s, size, &n);
    walk(out, n, xml_char);
    free(out);

    out = capture(kn_fput_markdown, s, size, &n);
    check_markdown(out, n);
    free(out);

    for (size_t i = 0; i < size; i++) {
        size_t k = kn_utf8_valid_seq((const unsigned char *)s + i, size - i);
        uint32_t cp;
        if (k != utf8_seq((const unsigned char *)s + i, size - i, &cp)) {
            abort(); /* the library's UTF-8 reading agrees with the strict one */
        }
    }
    return 0;
}
