/* text.c - edit distance, suggestions and the escaping of input text for
 * each output (terminal, JSON, XML, Markdown).  Text from an input file is
 * never written raw: a schema in an untrusted pull request must not be able
 * to move the reviewer's cursor or forge a line of output. */
#include "text.h"

#include <stdint.h>
#include <string.h>

size_t kn_edit_distance(const char *a, const char *b, size_t limit)
{
    /* Optimal string alignment: Levenshtein plus adjacent transpositions,
     * so that "knwon" is one edit from "known".  Only the band of cells
     * within limit of the diagonal is computed (a cell outside it is more
     * than limit edits away), so the cost is O(strlen(a) * limit). */
    size_t la = strlen(a), lb = strlen(b);
    if (la > 256 || lb > 256 || limit >= 256) {
        return limit + 1;
    }
    if ((la > lb ? la - lb : lb - la) > limit) {
        return limit + 1;
    }
    const size_t far = limit + 1;
    static size_t rows[3][258];
    size_t *prev2 = rows[0], *prev = rows[1], *cur = rows[2];
    for (size_t j = 0; j <= lb + 1; j++) {
        prev[j] = j <= limit ? j : far;
        prev2[j] = far;
    }
    for (size_t i = 1; i <= la; i++) {
        size_t lo = i > limit ? i - limit : 1;
        size_t hi = i + limit < lb ? i + limit : lb;
        cur[lo - 1] = lo == 1 ? (i <= limit ? i : far) : far;
        size_t best = cur[lo - 1];
        for (size_t j = lo; j <= hi; j++) {
            size_t cost = a[i - 1] == b[j - 1] ? 0 : 1;
            size_t v = prev[j - 1] + cost;
            if (prev[j] + 1 < v) {
                v = prev[j] + 1;
            }
            if (cur[j - 1] + 1 < v) {
                v = cur[j - 1] + 1;
            }
            if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1] && prev2[j - 2] + 1 < v) {
                v = prev2[j - 2] + 1;
            }
            cur[j] = v > far ? far : v;
            if (v < best) {
                best = v;
            }
        }
        cur[hi + 1] = far;
        if (best > limit) {
            return far;
        }
        size_t *t = prev2;
        prev2 = prev;
        prev = cur;
        cur = t;
    }
    return prev[lb] > limit ? far : prev[lb];
}

/* The bag distance of the word (byte counts in count_a, length la) and b:
 * the bytes of either not matched by a byte of the other, a lower bound of
 * the edit distance that costs O(strlen(b)).  count_b is all zero before
 * and after. */
static size_t bag_distance(const size_t count_a[256], size_t la, size_t count_b[256],
                           const unsigned char *b, size_t lb)
{
    for (size_t j = 0; j < lb; j++) {
        count_b[b[j]]++;
    }
    size_t extra_b = 0;
    for (size_t j = 0; j < lb; j++) {
        size_t k = count_b[b[j]];
        if (k) {
            extra_b += k > count_a[b[j]] ? k - count_a[b[j]] : 0;
            count_b[b[j]] = 0;
        }
    }
    size_t extra_a = la - (lb - extra_b);
    return extra_a > extra_b ? extra_a : extra_b;
}

const char *kn_suggest_within(const char *word, const char *const *candidates, size_t n,
                              size_t *budget)
{
    size_t len = strlen(word);
    size_t limit = len <= 3 ? 1 : (len / 3 > 2 ? len / 3 : 2);
    if (limit > KN_SUGGEST_MAX_EDITS) {
        limit = KN_SUGGEST_MAX_EDITS;
    }
    if (len > 256) {
        return NULL;
    }
    size_t count[256] = {0}, scratch[256] = {0};
    for (size_t i = 0; i < len; i++) {
        count[(unsigned char)word[i]]++;
    }
    const char *best = NULL;
    size_t best_d = limit + 1;
    for (size_t i = 0; i < n && best_d > 1; i++) {
        if (*budget < 2 * 256 * (2 * KN_SUGGEST_MAX_EDITS + 1)) {
            *budget = 0;
            break;
        }
        const char *c = candidates[i];
        size_t lc = strlen(c);
        *budget -= 1;
        if ((len > lc ? len - lc : lc - len) > limit || lc > 256) {
            continue;
        }
        *budget -= 2 * lc;
        if (bag_distance(count, len, scratch, (const unsigned char *)c, lc) >= best_d) {
            continue;
        }
        *budget -= len * (2 * limit + 1);
        size_t d = kn_edit_distance(word, c, best_d - 1);
        if (d > 0 && d < best_d) {
            best = c;
            best_d = d;
        }
    }
    return best;
}

const char *kn_suggest(const char *word, const char *const *candidates, size_t n)
{
    size_t budget = KN_SUGGEST_BUDGET;
    return kn_suggest_within(word, candidates, n, &budget);
}

size_t kn_utf8_valid_seq(const unsigned char *s, size_t len)
{
    unsigned char c = s[0];
    if (c < 0x80) {
        return 1;
    }
    size_t n;
    uint32_t cp;
    if (c >= 0xc2 && c <= 0xdf) {
        n = 2;
        cp = c & 0x1f;
    } else if (c >= 0xe0 && c <= 0xef) {
        n = 3;
        cp = c & 0x0f;
    } else if (c >= 0xf0 && c <= 0xf4) {
        n = 4;
        cp = c & 0x07;
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
        cp = (cp << 6) | (s[i] & 0x3f);
    }
    if ((n == 3 && cp < 0x800) || (n == 4 && (cp < 0x10000 || cp > 0x10ffff)) ||
        (cp >= 0xd800 && cp <= 0xdfff)) {
        return 0;
    }
    return n;
}

/* Escapes for a terminal into a callback, so file and arena outputs share it. */
typedef kn_emit_fn emit_fn;

static void term_escape(const char *s, size_t len, emit_fn emit, void *ctx)
{
    const unsigned char *p = (const unsigned char *)s;
    size_t i = 0;
    while (i < len) {
        unsigned char c = p[i];
        if (c >= 0x20 && c < 0x7f) {
            size_t j = i;
            /* Eight bytes at a time while all are printable ASCII
             * (0x20 <= b < 0x7f): the usual "has a byte below n" word test
             * (Anderson, Bit Twiddling Hacks) for < 0x20 and for == 0x7f,
             * plus the high bits; a borrow can only flag bytes above a
             * byte that really is flagged, and the byte loop below sorts
             * that out. */
            while (len - j >= 8) {
                uint64_t w;
                memcpy(&w, p + j, 8);
                const uint64_t ones = 0x0101010101010101ull, highs = 0x8080808080808080ull;
                /* high bit set, or below 0x20, or equal to 0x7f */
                uint64_t bad = (w & highs) | ((w - 0x20 * ones) & ~w & highs) |
                               ((((w ^ (0x7f * ones)) - ones) & ~(w ^ (0x7f * ones))) & highs);
                if (bad) {
                    break;
                }
                j += 8;
            }
            while (j < len && p[j] >= 0x20 && p[j] < 0x7f) {
                j++;
            }
            emit(ctx, s + i, j - i);
            i = j;
            continue;
        }
        if (c >= 0x80) {
            size_t n = kn_utf8_valid_seq(p + i, len - i);
            /* C1 controls (U+0080..U+009F) act on some terminals. */
            if (n == 2 && c == 0xc2 && p[i + 1] < 0xa0) {
                n = 0;
            }
            /* Bidirectional controls (U+200E, U+200F, U+202A..U+202E,
             * U+2066..U+2069) reorder the text a reader sees. */
            if (n == 3 && c == 0xe2 &&
                ((p[i + 1] == 0x80 && (p[i + 2] == 0x8e || p[i + 2] == 0x8f || (p[i + 2] >= 0xaa && p[i + 2] <= 0xae))) ||
                 (p[i + 1] == 0x81 && p[i + 2] >= 0xa6 && p[i + 2] <= 0xa9))) {
                n = 0;
            }
            if (n) {
                emit(ctx, s + i, n);
                i += n;
                continue;
            }
        }
        char buf[8];
        switch (c) {
        case '\n':
            memcpy(buf, "\\n", 3);
            break;
        case '\t':
            memcpy(buf, "\\t", 3);
            break;
        case '\r':
            memcpy(buf, "\\r", 3);
            break;
        case 0x1b:
            memcpy(buf, "\\e", 3);
            break;
        default: {
            static const char hex[] = "0123456789abcdef";
            buf[0] = '\\';
            buf[1] = 'x';
            buf[2] = hex[c >> 4];
            buf[3] = hex[c & 15];
            buf[4] = '\0';
        }
        }
        emit(ctx, buf, strlen(buf));
        i++;
    }
}

void kn_term_escape_to(const char *s, size_t len, kn_emit_fn emit, void *ctx)
{
    term_escape(s, len, emit, ctx);
}

static void emit_file(void *ctx, const char *s, size_t n)
{
    fwrite(s, 1, n, (FILE *)ctx);
}

void kn_fput_term(FILE *f, const char *s, size_t len)
{
    term_escape(s, len, emit_file, f);
}

typedef struct buf {
    kn_arena *arena;
    char *data;
    size_t len, cap;
} buf;

static void emit_buf(void *ctx, const char *s, size_t n)
{
    buf *b = ctx;
    if (b->len + n + 1 > b->cap) {
        size_t cap = (b->len + n + 1) * 2;
        char *d = kn_alloc(b->arena, cap);
        if (b->len) {
            memcpy(d, b->data, b->len);
        }
        b->data = d;
        b->cap = cap;
    }
    memcpy(b->data + b->len, s, n);
    b->len += n;
    b->data[b->len] = '\0';
}

char *kn_escape_term(kn_arena *a, const char *s, size_t len)
{
    buf b = {a, NULL, 0, 0};
    emit_buf(&b, "", 0);
    term_escape(s, len, emit_buf, &b);
    return b.data;
}

/* The code point of the valid UTF-8 sequence p (n bytes) when it is a C1
 * control (U+0080..U+009F), a bidirectional control (U+061C, U+200E,
 * U+200F, U+202A..U+202E, U+2066..U+2069) or a line or paragraph separator
 * (U+2028, U+2029); else 0. */
static uint32_t hidden_code_point(const unsigned char *p, size_t n)
{
    uint32_t cp;
    if (n == 2) {
        cp = ((uint32_t)(p[0] & 0x1f) << 6) | (p[1] & 0x3f);
    } else if (n == 3) {
        cp = ((uint32_t)(p[0] & 0x0f) << 12) | ((uint32_t)(p[1] & 0x3f) << 6) | (p[2] & 0x3f);
    } else {
        return 0;
    }
    bool hidden = (cp >= 0x80 && cp <= 0x9f) || cp == 0x61c || cp == 0x200e || cp == 0x200f ||
                  (cp >= 0x2028 && cp <= 0x202e) || (cp >= 0x2066 && cp <= 0x2069);
    return hidden ? cp : 0;
}

void kn_fput_json(FILE *f, const char *s, size_t len)
{
    const unsigned char *p = (const unsigned char *)s;
    size_t i = 0;
    while (i < len) {
        unsigned char c = p[i];
        if (c == '"' || c == '\\') {
            fputc('\\', f);
            fputc(c, f);
            i++;
        } else if (c < 0x20 || c == 0x7f) {
            switch (c) {
            case '\n':
                fputs("\\n", f);
                break;
            case '\t':
                fputs("\\t", f);
                break;
            case '\r':
                fputs("\\r", f);
                break;
            default:
                fprintf(f, "\\u%04x", c);
            }
            i++;
        } else if (c < 0x80) {
            fputc(c, f);
            i++;
        } else {
            size_t n = kn_utf8_valid_seq(p + i, len - i);
            uint32_t cp = n ? hidden_code_point(p + i, n) : 0;
            if (cp) {
                /* Valid JSON either way; escaped, a reader of the raw file
                 * (or a viewer that shows it) sees the control instead of
                 * being moved by it. */
                fprintf(f, "\\u%04x", (unsigned)cp);
                i += n;
            } else if (n) {
                fwrite(p + i, 1, n, f);
                i += n;
            } else {
                fputs("\\ufffd", f);
                i++;
            }
        }
    }
}

void kn_fput_json_str(FILE *f, const char *s)
{
    fputc('"', f);
    kn_fput_json(f, s ? s : "", s ? strlen(s) : 0);
    fputc('"', f);
}

void kn_fput_xml(FILE *f, const char *s, size_t len)
{
    const unsigned char *p = (const unsigned char *)s;
    size_t i = 0;
    while (i < len) {
        unsigned char c = p[i];
        switch (c) {
        case '&':
            fputs("&amp;", f);
            break;
        case '<':
            fputs("&lt;", f);
            break;
        case '>':
            fputs("&gt;", f);
            break;
        case '"':
            fputs("&quot;", f);
            break;
        case '\'':
            fputs("&apos;", f);
            break;
        default:
            if (c >= 0x80) {
                size_t n = kn_utf8_valid_seq(p + i, len - i);
                /* U+FFFE and U+FFFF are not XML 1.0 characters. */
                if (n == 3 && p[i] == 0xef && p[i + 1] == 0xbf && p[i + 2] >= 0xbe) {
                    n = 0;
                }
                if (n) {
                    fwrite(p + i, 1, n, f);
                    i += n;
                } else {
                    fputs("\xef\xbf\xbd", f);
                    i++;
                }
                continue;
            }
            if (c >= 0x20 || c == '\t' || c == '\n') {
                fputc(c, f);
            }
        }
        i++;
    }
}

void kn_fput_markdown(FILE *f, const char *s, size_t len)
{
    const unsigned char *p = (const unsigned char *)s;
    size_t i = 0;
    while (i < len) {
        unsigned char c = p[i];
        if (c == '\n' || c == '\r') {
            fputc(' ', f);
            i++;
        } else if (strchr("|\\`*_[]<>#", c) && c) {
            fputc('\\', f);
            fputc(c, f);
            i++;
        } else {
            size_t j = i;
            while (j < len && p[j] != '\n' && p[j] != '\r' && !(p[j] && strchr("|\\`*_[]<>#", p[j]))) {
                j++;
            }
            term_escape(s + i, j - i, emit_file, f);
            i = j;
        }
    }
}
