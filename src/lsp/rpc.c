/* rpc.c - the framing of LSP messages (rpc.h). */
#include "rpc.h"

#include <stdbool.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#define MAX_LINE 1024
#define MAX_LINES 32

/* One header line without its line end; -1 at the end of the stream, -2
 * when it is longer than MAX_LINE: then buf keeps its last bytes (at least
 * half of MAX_LINE), where a header may follow the remainder of a body. */
static int read_line(FILE *in, char *buf, size_t *n)
{
    size_t k = 0;
    bool too_long = false;
    int c;
    while ((c = getc(in)) != EOF && c != '\n') {
        if (k == MAX_LINE) {
            memmove(buf, buf + MAX_LINE / 2, MAX_LINE / 2);
            k = MAX_LINE / 2;
            too_long = true;
        }
        buf[k++] = (char)c;
    }
    if (c == EOF && k == 0 && !too_long) {
        return -1;
    }
    if (k && buf[k - 1] == '\r') {
        k--;
    }
    buf[k] = '\0';
    *n = k;
    return too_long ? -2 : (c == EOF ? -1 : 0);
}

/* Where a "Content-Length:" header starts inside line after other bytes,
 * or 0.  A body whose announced length was wrong or unusable leaves its
 * bytes in front of the next message's header, on the same line (a JSON
 * body rarely ends in a line end): that header is where the stream picks
 * up again.  Bytes that may spell a header name before it (X-Content-...)
 * are not such a remainder. */
static size_t embedded_length(const char *line, size_t n)
{
    for (size_t i = n; i-- > 1;) {
        if (n - i < 15 || strncasecmp(line + i, "Content-Length", 14) != 0) {
            continue;
        }
        size_t j = i + 14;
        while (j < n && (line[j] == ' ' || line[j] == '\t')) {
            j++;
        }
        if (j == n || line[j] != ':') {
            continue;
        }
        for (size_t k = 0; k < i; k++) {
            if (!strchr("!#$%&'*+-.^_`|~", line[k]) && !(line[k] >= '0' && line[k] <= '9') &&
                !((line[k] | 0x20) >= 'a' && (line[k] | 0x20) <= 'z')) {
                return i;
            }
        }
        return 0;
    }
    return 0;
}

/* The value of a Content-Length line: digits with optional blanks around
 * (a stray carriage return after them too); false when it is not a number
 * or overflows. */
static bool parse_length(const char *v, size_t *out)
{
    while (*v == ' ' || *v == '\t') {
        v++;
    }
    if (*v < '0' || *v > '9') {
        return false;
    }
    size_t n = 0;
    for (; *v >= '0' && *v <= '9'; v++) {
        size_t d = (size_t)(*v - '0');
        if (n > (SIZE_MAX - d) / 10) {
            return false;
        }
        n = n * 10 + d;
    }
    while (*v == ' ' || *v == '\t' || *v == '\r') {
        v++;
    }
    *out = n;
    return *v == '\0';
}

kn_rpc_result kn_rpc_read(FILE *in, size_t max, char **body, size_t *len)
{
    char line[MAX_LINE + 1];
    bool have = false, bad = false, length_ok = false;
    bool junk = false; /* a line of this block is no header at all */
    size_t length = 0, lines = 0, n;
    for (;;) {
        int r = read_line(in, line, &n);
        if (r == -1) {
            return KN_RPC_EOF;
        }
        size_t at = embedded_length(line, n);
        if (at) {
            /* Start afresh at the header; what came before is dropped. */
            memmove(line, line + at, n - at + 1);
            n -= at;
            have = bad = length_ok = junk = false;
            lines = 0;
            r = 0;
        }
        if (r == -2 || ++lines > MAX_LINES) {
            bad = true;
            if (lines > MAX_LINES) {
                /* A stream of lines without an empty one: give up on this
                 * block so the caller answers, and start afresh. */
                return KN_RPC_BAD_HEADER;
            }
            continue;
        }
        if (n == 0) {
            if (lines == 1) {
                lines = 0; /* stray empty lines between messages */
                continue;
            }
            break;
        }
        const char *colon = memchr(line, ':', n);
        if (!colon) {
            bad = junk = true;
            continue;
        }
        if ((size_t)(colon - line) == 14 && strncasecmp(line, "Content-Length", 14) == 0) {
            if (junk) {
                /* The remainder of a body ended in a line end: the stream
                 * picks up again at this header, as on the same line. */
                have = bad = length_ok = junk = false;
                lines = 1;
            }
            /* The same length twice is one length (as HTTP allows);
             * two different ones leave the body's end unknown. */
            size_t again;
            if (!parse_length(colon + 1, &again) || (have && (!length_ok || again != length))) {
                bad = true;
                length_ok = false;
            } else {
                length = again;
                length_ok = true;
            }
            have = true;
        }
    }
    if (bad || !have) {
        /* A usable length among bad headers: its body goes too, so the
         * next message starts where the sender meant it to. */
        bool len_ok = have && length_ok;
        if (len_ok && !kn_rpc_skip(in, length)) {
            return KN_RPC_EOF;
        }
        return KN_RPC_BAD_HEADER;
    }
    *len = length;
    if (length > max) {
        return KN_RPC_TOO_LARGE;
    }
    char *b = malloc(length + 1);
    if (!b) {
        return kn_rpc_skip(in, length) ? KN_RPC_TOO_LARGE : KN_RPC_EOF;
    }
    if (fread(b, 1, length, in) != length) {
        free(b);
        return KN_RPC_EOF;
    }
    b[length] = '\0';
    *body = b;
    return KN_RPC_MESSAGE;
}

int kn_rpc_skip(FILE *in, size_t n)
{
    char buf[4096];
    while (n) {
        size_t want = n < sizeof buf ? n : sizeof buf;
        size_t got = fread(buf, 1, want, in);
        if (got == 0) {
            return 0;
        }
        n -= got;
    }
    return 1;
}

void kn_rpc_write(FILE *out, const char *body, size_t len)
{
    kn_rpc_write_parts(out, &body, &len, 1);
}

void kn_rpc_write_parts(FILE *out, const char *const *parts, const size_t *lens, size_t n)
{
    size_t len = 0;
    for (size_t i = 0; i < n; i++) {
        len += lens[i];
    }
    fprintf(out, "Content-Length: %zu\r\n\r\n", len);
    for (size_t i = 0; i < n; i++) {
        fwrite(parts[i], 1, lens[i], out);
    }
    fflush(out);
}
