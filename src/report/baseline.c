/* baseline.c - recorded findings, so that a team adopting knowable on a
 * legacy schema fails only on new findings.  --write-baseline writes the
 * fingerprints of the current findings (with rule, file, subject and
 * message for the people who read the file); --baseline reads such a file
 * and marks the findings it records as baselined, which the renderers leave
 * out and the exit status ignores.  Fingerprints come from diag.c (rule,
 * file, subject and a line-independent key), so a baseline survives lines
 * being inserted above a finding and columns being reordered.
 *
 * The file is JSON:
 *   {"knowable_baseline": 2, "findings": [{"fingerprint": "16 hex digits",
 *    "rule": ..., "file": ..., "subject": ..., "message": ...}, ...]}
 * The reader below accepts any JSON (RFC 8259) of that shape, ignores keys
 * it does not know, and is bounded in size and nesting depth. */
#include <inttypes.h>
#include <stdlib.h>
#include <string.h>

#include <knowable/knowable.h>

#include "../util/text.h"
#include "../yaml/tree.h"
#include "render.h"

#define MAX_BASELINE_BYTES (256u << 20)
#define MAX_DEPTH 64

/* ---- writing ---- */

bool kn_baseline_write(const kn_sink *s, const char *path, const char *const *inputs, size_t n_inputs,
                       FILE *err)
{
    kn_output *o = kn_output_open(path, inputs, n_inputs, err);
    if (!o) {
        return false;
    }
    FILE *f = kn_output_file(o);
    size_t n;
    kn_diag **all = kn_sink_diags(s, &n);
    size_t written = 0;
    fputs("{\n  \"knowable_baseline\": 2,\n  \"findings\": [", f);
    for (size_t i = 0; i < n; i++) {
        const kn_diag *d = all[i];
        if (d->waived) {
            continue;
        }
        fprintf(f, "%s\n    {\"fingerprint\": \"%016" PRIx64 "\", \"rule\": ", written ? "," : "", d->fingerprint);
        kn_fput_json_str(f, kn_rule_get(d->rule)->id);
        fputs(", \"file\": ", f);
        kn_fput_json_str(f, d->pos.file);
        fputs(", \"subject\": ", f);
        kn_fput_json_str(f, d->subject);
        fputs(", \"message\": ", f);
        kn_fput_json_str(f, d->message);
        fputc('}', f);
        written++;
    }
    fputs(written ? "\n  ]\n}\n" : "]\n}\n", f);
    return kn_output_close(o, true, err);
}

/* ---- reading ---- */

typedef struct reader {
    const char *p, *end;
    size_t line;
    const char *why; /* first problem, NULL while fine */
    kn_vec *fingerprints; /* uint64_t */
    bool has_version, has_findings;
    bool has_diagnostics; /* a top-level "diagnostics": a check report */
} reader;

/* What the value being read means in a baseline. */
typedef enum slot { S_ANY, S_TOP, S_VERSION, S_FINDINGS, S_FINDING, S_FINGERPRINT } slot;

static bool fail(reader *r, const char *why)
{
    if (!r->why) {
        r->why = why;
    }
    return false;
}

static void skip_ws(reader *r)
{
    while (r->p < r->end && (*r->p == ' ' || *r->p == '\t' || *r->p == '\n' || *r->p == '\r')) {
        r->line += *r->p == '\n';
        r->p++;
    }
}

static bool is_hex(char c)
{
    return (c >= '0' && c <= '9') || (c >= 'a' && c <= 'f') || (c >= 'A' && c <= 'F');
}

/* Reads a string; *start and *len receive its raw inside (escapes kept). */
static bool read_string(reader *r, const char **start, size_t *len)
{
    if (r->p >= r->end || *r->p != '"') {
        return fail(r, "expected a string");
    }
    r->p++;
    const char *s = r->p;
    while (r->p < r->end && *r->p != '"') {
        unsigned char c = (unsigned char)*r->p;
        if (c < 0x20) {
            return fail(r, "a control character inside a string");
        }
        if (c == '\\') {
            r->p++;
            if (r->p >= r->end) {
                break;
            }
            if (*r->p == 'u') {
                for (int i = 1; i <= 4; i++) {
                    if (r->p + i >= r->end || !is_hex(r->p[i])) {
                        return fail(r, "a bad \\u escape");
                    }
                }
                r->p += 4;
            } else if (!strchr("\"\\/bfnrt", *r->p)) {
                return fail(r, "a bad escape in a string");
            }
        }
        r->p++;
    }
    if (r->p >= r->end) {
        return fail(r, "a string that does not end");
    }
    if (start) {
        *start = s;
        *len = (size_t)(r->p - s);
    }
    r->p++;
    return true;
}

static bool read_number(reader *r, double *out)
{
    const char *s = r->p;
    if (r->p < r->end && *r->p == '-') {
        r->p++;
    }
    if (r->p >= r->end || *r->p < '0' || *r->p > '9') {
        return fail(r, "expected a value");
    }
    if (*r->p == '0') {
        r->p++;
    } else {
        while (r->p < r->end && *r->p >= '0' && *r->p <= '9') {
            r->p++;
        }
    }
    if (r->p < r->end && *r->p == '.') {
        r->p++;
        if (r->p >= r->end || *r->p < '0' || *r->p > '9') {
            return fail(r, "a number with no digit after the decimal point");
        }
        while (r->p < r->end && *r->p >= '0' && *r->p <= '9') {
            r->p++;
        }
    }
    if (r->p < r->end && (*r->p == 'e' || *r->p == 'E')) {
        r->p++;
        if (r->p < r->end && (*r->p == '+' || *r->p == '-')) {
            r->p++;
        }
        if (r->p >= r->end || *r->p < '0' || *r->p > '9') {
            return fail(r, "a number with no digit in its exponent");
        }
        while (r->p < r->end && *r->p >= '0' && *r->p <= '9') {
            r->p++;
        }
    }
    char buf[64];
    size_t n = (size_t)(r->p - s);
    if (n >= sizeof buf) {
        *out = 0;
        return true;
    }
    memcpy(buf, s, n);
    buf[n] = '\0';
    *out = strtod(buf, NULL);
    return true;
}

static bool read_literal(reader *r, const char *word)
{
    size_t n = strlen(word);
    if ((size_t)(r->end - r->p) < n || memcmp(r->p, word, n) != 0) {
        return fail(r, "expected a value");
    }
    r->p += n;
    return true;
}

static slot member_slot(slot parent, const char *key, size_t len)
{
    if (parent == S_TOP && len == 17 && memcmp(key, "knowable_baseline", 17) == 0) {
        return S_VERSION;
    }
    if (parent == S_TOP && len == 8 && memcmp(key, "findings", 8) == 0) {
        return S_FINDINGS;
    }
    if (parent == S_FINDING && len == 11 && memcmp(key, "fingerprint", 11) == 0) {
        return S_FINGERPRINT;
    }
    return S_ANY;
}

static bool read_value(reader *r, slot what, int depth);

static bool read_object(reader *r, slot what, int depth)
{
    bool has_fingerprint = false;
    r->p++;
    skip_ws(r);
    if (r->p < r->end && *r->p == '}') {
        r->p++;
        return what != S_FINDING || fail(r, "a finding without a fingerprint");
    }
    for (;;) {
        const char *key;
        size_t len;
        skip_ws(r);
        if (!read_string(r, &key, &len)) {
            return false;
        }
        skip_ws(r);
        if (r->p >= r->end || *r->p != ':') {
            return fail(r, "expected ':' after a key");
        }
        r->p++;
        skip_ws(r);
        slot sub = member_slot(what, key, len);
        has_fingerprint |= sub == S_FINGERPRINT;
        r->has_diagnostics |= what == S_TOP && len == 11 && memcmp(key, "diagnostics", 11) == 0;
        if (!read_value(r, sub, depth + 1)) {
            return false;
        }
        skip_ws(r);
        if (r->p < r->end && *r->p == ',') {
            r->p++;
            continue;
        }
        if (r->p < r->end && *r->p == '}') {
            r->p++;
            break;
        }
        return fail(r, "expected ',' or '}'");
    }
    if (what == S_FINDING && !has_fingerprint) {
        return fail(r, "a finding without a fingerprint");
    }
    return true;
}

static bool read_array(reader *r, slot what, int depth)
{
    r->p++;
    skip_ws(r);
    if (r->p < r->end && *r->p == ']') {
        r->p++;
        return true;
    }
    for (;;) {
        skip_ws(r);
        if (!read_value(r, what == S_FINDINGS ? S_FINDING : S_ANY, depth + 1)) {
            return false;
        }
        skip_ws(r);
        if (r->p < r->end && *r->p == ',') {
            r->p++;
            continue;
        }
        if (r->p < r->end && *r->p == ']') {
            r->p++;
            return true;
        }
        return fail(r, "expected ',' or ']'");
    }
}

static bool read_value(reader *r, slot what, int depth)
{
    if (depth > MAX_DEPTH) {
        return fail(r, "nested too deeply");
    }
    skip_ws(r);
    if (r->p >= r->end) {
        return fail(r, "the file ends where a value was expected");
    }
    char c = *r->p;
    bool ok;
    if (c == '{') {
        if (what != S_ANY && what != S_TOP && what != S_FINDING) {
            return fail(r, what == S_FINDINGS ? "'findings' must be a list" : "a mapping where a value was expected");
        }
        if (what == S_TOP) {
            ok = read_object(r, what, depth);
            if (ok && !r->has_findings) {
                return fail(r, r->has_diagnostics ? "this is a check report (--format json), not a baseline; "
                                                    "write a baseline with --write-baseline FILE"
                                                  : "no 'findings' list");
            }
            if (ok && !r->has_version) {
                return fail(r, "no 'knowable_baseline: 2'; is this a knowable baseline?");
            }
            return ok;
        }
        return read_object(r, what, depth);
    }
    if (what == S_TOP) {
        return fail(r, "a baseline is a JSON object");
    }
    if (what == S_FINDING) {
        return fail(r, "each finding must be an object");
    }
    if (c == '[') {
        if (what == S_FINDINGS) {
            r->has_findings = true;
        } else if (what != S_ANY) {
            return fail(r, "a list where a value was expected");
        }
        return read_array(r, what, depth);
    }
    if (what == S_FINDINGS) {
        return fail(r, "'findings' must be a list");
    }
    if (c == '"') {
        const char *s;
        size_t len;
        if (!read_string(r, &s, &len)) {
            return false;
        }
        if (what == S_FINGERPRINT) {
            if (len != 16) {
                return fail(r, "a fingerprint is 16 hexadecimal digits");
            }
            uint64_t fp = 0;
            for (size_t i = 0; i < 16; i++) {
                if (!is_hex(s[i])) {
                    return fail(r, "a fingerprint is 16 hexadecimal digits");
                }
                char ch = s[i];
                fp = fp << 4 | (uint64_t)(ch <= '9' ? ch - '0' : (ch | 0x20) - 'a' + 10);
            }
            kn_vec_push(r->fingerprints, &fp);
        } else if (what == S_VERSION) {
            return fail(r, "'knowable_baseline' must be 2");
        }
        return true;
    }
    if (what == S_FINGERPRINT) {
        return fail(r, "a fingerprint is a string of 16 hexadecimal digits");
    }
    if (c == 't') {
        ok = read_literal(r, "true");
    } else if (c == 'f') {
        ok = read_literal(r, "false");
    } else if (c == 'n') {
        ok = read_literal(r, "null");
    } else {
        double x;
        ok = read_number(r, &x);
        if (ok && what == S_VERSION) {
            if (x == 1) {
                return fail(r, "it was written by an older knowable, whose fingerprints changed with "
                               "numbers and path spelling; write it again with --write-baseline");
            }
            if (x != 2) {
                return fail(r, "'knowable_baseline' is not 2; this knowable reads version 2");
            }
            r->has_version = true;
            return true;
        }
    }
    if (ok && what == S_VERSION) {
        return fail(r, "'knowable_baseline' must be 2");
    }
    return ok;
}

static int cmp_u64(const void *a, const void *b)
{
    uint64_t x = *(const uint64_t *)a, y = *(const uint64_t *)b;
    return x < y ? -1 : x > y;
}

static void say(FILE *err, const char *path, size_t line, const char *why)
{
    fputs("knowable: baseline '", err);
    kn_fput_term(err, path, strlen(path));
    if (line) {
        fprintf(err, "': line %zu: %s\n", line, why);
    } else {
        fprintf(err, "': %s\n", why);
    }
}

/* Reads the whole file into arena memory (kn_read_file, the reader the
 * schemas use); NULL (and a message) on failure. */
static char *slurp(kn_arena *a, const char *path, size_t *len, FILE *err)
{
    char *buf;
    const char *why;
    if (!kn_read_file(a, path, MAX_BASELINE_BYTES, &buf, len, &why)) {
        say(err, path, 0, strcmp(why, "file too large") == 0 ? "larger than 256 MiB; not a baseline" : why);
        return NULL;
    }
    return buf;
}

bool kn_baseline_read(kn_sink *s, const char *path, FILE *err)
{
    kn_arena *a = kn_sink_arena(s);
    size_t len = 0;
    char *text = slurp(a, path, &len, err);
    if (!text) {
        return false;
    }
    reader r = {text, text + len, 1, NULL, kn_vec_new(a, sizeof(uint64_t)), false, false, false};
    if (len >= 3 && memcmp(text, "\xef\xbb\xbf", 3) == 0) {
        r.p += 3;
    }
    bool ok = read_value(&r, S_TOP, 0);
    if (ok) {
        skip_ws(&r);
        if (r.p != r.end) {
            ok = fail(&r, "text after the end of the baseline");
        }
    }
    if (!ok) {
        say(err, path, r.line, r.why);
        return false;
    }
    size_t nf = r.fingerprints->len;
    uint64_t *fps = kn_alloc_array(a, nf ? nf : 1, sizeof *fps);
    if (nf) {
        memcpy(fps, r.fingerprints->data, nf * sizeof *fps);
        qsort(fps, nf, sizeof *fps, cmp_u64);
    }
    kn_sink_baseline(s, fps, nf);
    return true;
}
