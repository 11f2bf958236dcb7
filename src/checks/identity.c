/* identity.c - identifiers, proxies and anonymization (SPEC §4.4):
 * identifier-structured, identifier-in-features, proxy-of-excluded,
 * suspicious-name and reversible-anonymization.  Reads the schema model,
 * the rulebook's patterns and (for late proxies) the solved timeline, and
 * pushes one diagnostic per finding at the value at fault, with the reason
 * in notes.  Rulebook patterns are matched under the limits of
 * src/util/regex.c; a pattern that hits a limit is reported (bad-pattern)
 * instead of being left to run. */
#include <stdlib.h>
#include <string.h>

#define PCRE2_CODE_UNIT_WIDTH 8
#include <pcre2.h>

#include "../util/regex.h"
#include "checks.h"

/* The anonymization checks are screening aids; every message that touches
 * privacy carries this reminder (SPEC §11). */
static const char privacy_note[] =
    "this is a screening aid, not a privacy review: what protection the data needs is decided by applicable law "
    "and your organisation's privacy practice";

typedef struct cx {
    kn_ctx *ctx;
    const kn_schema *s;
    const kn_timeline *t;
    /* All suspicious-name patterns for names (0) and descriptions (1) as
     * one alternation: a column none of them matches costs one match
     * instead of one per pattern.  NULL when they cannot be combined;
     * holds[side][i] tells whether pattern i is in it (a pattern that does
     * not compose is always matched on its own). */
    kn_regex *any[2];
    bool *holds[2];
    bool all_held[2]; /* every pattern of the side is in any[side] */
} cx;

/* The longest alternation of names patterns compiled (bytes); past it
 * every pattern is matched on its own. */
#define MAX_COMBINED (64 * 1024)

static const kn_pos *at(const kn_column *c, const kn_node *n)
{
    return kn_column_pos(c, n);
}

/* At most max bytes of s for a message, cut on a UTF-8 boundary. */
static const char *clip(kn_arena *a, const char *s, size_t max)
{
    size_t n = strlen(s);
    if (n <= max) {
        return s;
    }
    while (max > 0 && ((unsigned char)s[max] & 0xc0) == 0x80) {
        max--;
    }
    return kn_printf(a, "%.*s...", (int)max, s);
}

/* True when a rulebook position names a real file (the built-in rulebook
 * is compiled in: its positions name no file a reader or SARIF can open). */
static bool in_real_file(const kn_pos *p)
{
    return p && p->file && p->file[0] != '(' && p->line > 0;
}

/* Adds the note that shows where a rulebook pattern comes from. */
static void note_pattern(const cx *x, kn_diag *d, const kn_pos *pattern_pos, const kn_column *c, const char *words)
{
    if (in_real_file(pattern_pos)) {
        kn_diag_note(x->ctx->sink, d, pattern_pos, "%s", words);
    } else if (pattern_pos) {
        kn_diag_note(x->ctx->sink, d, &c->key->pos, "%s (the built-in rulebook, rules/default.yaml line %u)", words,
                     (unsigned)pattern_pos->line);
    }
}

/* Matches a rulebook pattern against a column's name or description.  A
 * match that hits a limit is reported at the value (bad-pattern, with the
 * pattern's place in the rulebook) and counts as no match. */
static bool rulebook_match(const cx *x, kn_regex *re, const char *pattern, const kn_pos *pattern_pos,
                           const kn_column *c, const kn_node *value, const char *text, size_t span[2])
{
    if (kn_regex_spent(re)) {
        return false; /* reported once, where its time ran out */
    }
    kn_match m = kn_regex_match(re, text, strlen(text), span);
    if (m == KN_MATCH_FOUND) {
        return true;
    }
    if (m == KN_MATCH_NONE) {
        return false;
    }
    if (kn_regex_spent(re)) {
        kn_diag *d = kn_diag_push(x->ctx->sink, KN_R_BAD_PATTERN, at(c, value), c->name,
                                  "the rulebook pattern '%s' is no longer matched, from '%s' on: %s",
                                  clip(x->ctx->arena, pattern, 60), clip(x->ctx->arena, text, 60),
                                  kn_regex_problem(re));
        kn_diag_key(x->ctx->sink, d, "spent %s", pattern);
        note_pattern(x, d, pattern_pos, c,
                     "the pattern is defined here; it is not matched against this or any later column, so "
                     "findings of it may be missing");
        return false;
    }
    kn_arena *a = x->ctx->arena;
    kn_diag *d = kn_diag_push(x->ctx->sink, KN_R_BAD_PATTERN, at(c, value), c->name,
                              "the rulebook pattern '%s' could not be checked against '%s': %s", clip(a, pattern, 60),
                              clip(a, text, 60), kn_regex_problem(re));
    kn_diag_key(x->ctx->sink, d, "limit %s", pattern);
    note_pattern(x, d, pattern_pos, c,
                 "the pattern is defined here; nested quantifiers such as (a+)+ backtrack without end on long "
                 "values and should be rewritten");
    return false;
}

/* ---- identifier-structured ---------------------------------------------- */

/* A character that stands for itself in a pattern (outside a class). */
static bool plain_literal(char ch)
{
    return (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || (ch >= '0' && ch <= '9') ||
           (ch && strchr("-_/:#@%&,!=~ '\"<>;`", ch));
}

/* An escaped character that stands for itself: \- \. \/ and other
 * punctuation (letters and digits after a backslash are classes or
 * references). */
static bool escaped_literal(char ch)
{
    return ch && !((ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || (ch >= '0' && ch <= '9'));
}

static bool quantifier(char ch)
{
    return ch == '?' || ch == '*' || ch == '+' || ch == '{';
}

/* Reads the literal run at p[i..end); returns its text (arena) and sets *next
 * past it.  A literal followed by a quantifier is not fixed, so it is left
 * out of the run. */
static char *literal_run(kn_arena *a, const char *p, size_t i, size_t end, size_t *next)
{
    char *out = kn_alloc(a, end - i + 1);
    size_t n = 0, last_start = i, last_n = 0;
    while (i < end) {
        size_t start = i;
        char ch;
        if (p[i] == '\\' && i + 1 < end && escaped_literal(p[i + 1])) {
            ch = p[i + 1];
            i += 2;
        } else if (plain_literal(p[i])) {
            ch = p[i];
            i += 1;
        } else {
            break;
        }
        last_start = start;
        last_n = n;
        out[n++] = ch;
    }
    if (n > 0 && i < end && quantifier(p[i])) {
        i = last_start;
        n = last_n;
    }
    out[n] = '\0';
    *next = i;
    return out;
}

typedef struct group {
    size_t open, close;     /* offsets of '(' and ')' */
    size_t body;            /* offset of the first character inside */
    const char *name;       /* named group, or NULL */
    bool capturing_or_plain; /* (...), (?:...) or named: may hold alternatives */
} group;

/* Finds every group of the pattern in one pass (escapes, character
 * classes and \Q...\E skipped), so a long hostile pattern costs linear time. */
static group *find_groups(kn_arena *a, const char *p, size_t len, size_t *n_out)
{
    size_t *stack = kn_alloc_array(a, len + 1, sizeof *stack);
    group *g = kn_alloc_array(a, len / 2 + 1, sizeof *g);
    size_t depth = 0, n = 0;
    for (size_t i = 0; i < len; i++) {
        char ch = p[i];
        if (ch == '\\') {
            if (i + 1 < len && p[i + 1] == 'Q') {
                const char *e = NULL;
                for (size_t j = i + 2; j + 1 < len; j++) {
                    if (p[j] == '\\' && p[j + 1] == 'E') {
                        e = p + j;
                        break;
                    }
                }
                i = e ? (size_t)(e - p) + 1 : len;
            } else {
                i++;
            }
        } else if (ch == '[') {
            size_t j = i + 1;
            if (j < len && p[j] == '^') {
                j++;
            }
            if (j < len && p[j] == ']') {
                j++;
            }
            while (j < len && p[j] != ']') {
                if (p[j] == '\\') {
                    j++;
                } else if (p[j] == '[' && j + 1 < len && p[j + 1] == ':') {
                    const char *e = strstr(p + j + 2, ":]");
                    if (e && (size_t)(e - p) < len) {
                        j = (size_t)(e - p) + 1;
                    }
                }
                j++;
            }
            i = j;
        } else if (ch == '(') {
            stack[depth++] = i;
        } else if (ch == ')' && depth > 0) {
            size_t o = stack[--depth];
            group *x = &g[n++];
            x->open = o;
            x->close = i;
            x->body = o + 1;
            x->capturing_or_plain = true;
            if (o + 1 < i && p[o + 1] == '?') {
                x->capturing_or_plain = false;
                const char *q = p + o + 2;
                char endc = 0;
                if (q < p + i && *q == ':') {
                    x->capturing_or_plain = true;
                    x->body = o + 3;
                } else if (q < p + i && *q == 'P' && q + 1 < p + i && q[1] == '<') {
                    q += 2;
                    endc = '>';
                } else if (q < p + i && *q == '<' && q + 1 < p + i && q[1] != '=' && q[1] != '!') {
                    q += 1;
                    endc = '>';
                } else if (q < p + i && *q == '\'') {
                    q += 1;
                    endc = '\'';
                }
                if (endc) {
                    const char *e = memchr(q, endc, (size_t)(p + i - q));
                    if (e) {
                        x->name = kn_strndup(a, q, (size_t)(e - q));
                        x->body = (size_t)(e - p) + 1;
                        x->capturing_or_plain = true;
                    }
                }
            }
        }
    }
    *n_out = n;
    return g;
}

/* When the group's body is two or more '|'-separated literals, returns them
 * quoted and comma-separated (arena); otherwise NULL. */
static const char *literal_alternatives(kn_arena *a, const char *p, const group *g, size_t *count)
{
    if (!g->capturing_or_plain) {
        return NULL;
    }
    const char *list = "";
    size_t i = g->body, n = 0;
    for (;;) {
        size_t next;
        char *lit = literal_run(a, p, i, g->close, &next);
        if (!*lit || (next < g->close && p[next] != '|')) {
            return NULL;
        }
        list = n ? kn_printf(a, "%s, '%s'", list, lit) : kn_printf(a, "'%s'", lit);
        n++;
        if (next >= g->close) {
            break;
        }
        i = next + 1;
    }
    if (n < 2) {
        return NULL;
    }
    *count = n;
    return list;
}

/* The fixed literal prefix after ^ or \A (and inline options such as
 * (?i)); NULL when there is none or nothing follows it. */
static char *fixed_prefix(kn_arena *a, const char *p, size_t len, size_t *at_off)
{
    size_t i = 0;
    for (;;) {
        if (i < len && p[i] == '^') {
            i++;
        } else if (i + 1 < len && p[i] == '\\' && p[i + 1] == 'A') {
            i += 2;
        } else if (i + 2 < len && p[i] == '(' && p[i + 1] == '?' && p[i + 2] != ':' && p[i + 2] != '<' &&
                   p[i + 2] != 'P' && p[i + 2] != '\'' && p[i + 2] != '=' && p[i + 2] != '!') {
            /* an inline option setting such as (?i) */
            size_t j = i + 2;
            while (j < len && ((p[j] >= 'a' && p[j] <= 'z') || p[j] == '-' || p[j] == '^')) {
                j++;
            }
            if (j < len && p[j] == ')') {
                i = j + 1;
            } else {
                break;
            }
        } else {
            break;
        }
    }
    size_t next;
    char *lit = literal_run(a, p, i, len, &next);
    if (!*lit) {
        return NULL;
    }
    /* A pattern that is only a literal (a constant) has no segments. */
    size_t rest = next;
    while (rest < len && (p[rest] == '$' || (p[rest] == '\\' && rest + 1 < len && strchr("zZ", p[rest + 1])))) {
        rest += p[rest] == '$' ? 1 : 2;
    }
    if (rest >= len || p[next] == '|') {
        return NULL;
    }
    *at_off = i;
    return lit;
}

static int by_group_number(const void *pa, const void *pb)
{
    PCRE2_SPTR a = *(PCRE2_SPTR const *)pa, b = *(PCRE2_SPTR const *)pb;
    unsigned na = ((unsigned)a[0] << 8) | a[1], nb = ((unsigned)b[0] << 8) | b[1];
    return na < nb ? -1 : na > nb;
}

static void check_structured(const cx *x, const kn_column *c)
{
    if (c->role != KN_ROLE_IDENTIFIER || !c->format || !c->format_node || !c->format_code) {
        return;
    }
    kn_arena *a = x->ctx->arena;
    kn_sink *sink = x->ctx->sink;
    const char *p = c->format;
    size_t len = c->format_node->u.scalar.len;

    size_t n_groups = 0;
    group *groups = find_groups(a, p, len, &n_groups);
    /* Named groups as PCRE2 reports them (the name table), in group order. */
    uint32_t count = 0, entry = 0;
    PCRE2_SPTR table = NULL;
    pcre2_code *code = c->format_code;
    if (pcre2_pattern_info(code, PCRE2_INFO_NAMECOUNT, &count) != 0 ||
        pcre2_pattern_info(code, PCRE2_INFO_NAMEENTRYSIZE, &entry) != 0 ||
        pcre2_pattern_info(code, PCRE2_INFO_NAMETABLE, &table) != 0) {
        count = 0;
    }

    typedef struct seg {
        kn_pos pos;
        char *words;
    } seg;
    seg *segs = kn_alloc_array(a, count + n_groups + 1, sizeof *segs);
    size_t n = 0;
    const char *summary = "", *named = "";
    size_t pre_off = 0;
    char *prefix = fixed_prefix(a, p, len, &pre_off);
    if (prefix) {
        segs[n].pos = kn_node_char_pos(c->format_node, pre_off);
        segs[n].words = kn_printf(a, "a fixed prefix '%s': what follows it is a separate segment, often a serial "
                                     "number issued in order, which tells when the record was made",
                                  prefix);
        summary = kn_printf(a, "fixed prefix '%s'", prefix);
        n++;
    }
    /* The name table is sorted by name; the notes follow the pattern. */
    PCRE2_SPTR *entries = kn_alloc_array(a, count + 1, sizeof *entries);
    for (uint32_t i = 0; i < count; i++) {
        entries[i] = table + (size_t)i * entry;
    }
    qsort(entries, count, sizeof *entries, by_group_number);
    for (uint32_t i = 0; i < count; i++) {
        PCRE2_SPTR e = entries[i];
        unsigned number = ((unsigned)e[0] << 8) | e[1];
        const char *name = (const char *)e + 2;
        const group *g = NULL;
        for (size_t j = 0; j < n_groups; j++) {
            if (groups[j].name && strcmp(groups[j].name, name) == 0) {
                g = &groups[j];
                break;
            }
        }
        size_t alts = 0;
        const char *alt = g ? literal_alternatives(a, p, g, &alts) : NULL;
        const char *body = g ? clip(a, kn_strndup(a, p + g->body, g->close - g->body), 40) : "";
        segs[n].pos = g ? kn_node_char_pos(c->format_node, g->open) : c->format_node->pos;
        if (alt) {
            segs[n].words = kn_printf(a, "segment '%s' (group %u) is one of %zu literals: %s", name, number, alts, alt);
        } else {
            segs[n].words = kn_printf(a, "segment '%s' (group %u): %s", name, number, body);
        }
        named = *named ? kn_printf(a, "%s, '%s'", named, name) : kn_printf(a, "'%s'", name);
        n++;
    }
    if (count) {
        const char *groups_words = kn_printf(a, "named group%s %s", count == 1 ? "" : "s", named);
        summary = *summary ? kn_printf(a, "%s, %s", summary, groups_words) : groups_words;
    }
    for (size_t j = 0; j < n_groups; j++) {
        if (groups[j].name) {
            continue;
        }
        size_t alts = 0;
        const char *alt = literal_alternatives(a, p, &groups[j], &alts);
        if (!alt) {
            continue;
        }
        segs[n].pos = kn_node_char_pos(c->format_node, groups[j].open);
        segs[n].words = kn_printf(a, "a segment of %zu literal alternatives %s at character %zu: each alternative "
                                     "sorts the values into a class",
                                  alts, alt, groups[j].open + 1);
        summary = *summary ? kn_printf(a, "%s, alternatives %s", summary, alt) : kn_printf(a, "alternatives %s", alt);
        n++;
    }
    if (n == 0) {
        return;
    }
    kn_diag *d = kn_diag_push(sink, KN_R_IDENTIFIER_STRUCTURED, &c->format_node->pos, c->name,
                              "identifier '%s' has a structured format (%s): a segment of an identifier can carry "
                              "the outcome or the time of the record",
                              c->name, summary);
    for (size_t i = 0; i < n; i++) {
        kn_diag_note(sink, d, &segs[i].pos, "%s", segs[i].words);
    }
    kn_diag_note(sink, d, &c->key->pos,
                 "keep '%s' and its parts out of the features; `knowable check --data` tests whether a segment "
                 "predicts the target (identifier-segment-predicts)",
                 c->name);
}

/* ---- identifier-in-features ---------------------------------------------- */

static void check_identifier_in_features(const cx *x, const kn_column *c)
{
    if (c->role != KN_ROLE_FEATURE) {
        return;
    }
    const kn_rulebook *rb = x->ctx->rulebook;
    kn_sink *sink = x->ctx->sink;
    size_t span[2];
    bool by_name = rb->identifier_code &&
                   rulebook_match(x, rb->identifier_code, rb->identifier_names, NULL, c, c->key, c->name, span);
    bool by_format = c->format && c->format_node;
    if (!by_name && !by_format) {
        return;
    }
    const char *role = c->role_node ? "role: feature" : "the default role, feature";
    kn_diag *d;
    if (by_name) {
        d = kn_diag_push(sink, KN_R_IDENTIFIER_IN_FEATURES, &c->key->pos, c->name,
                         "feature '%s' is named like an identifier ('%.*s' matches the rulebook's identifier_names): "
                         "an identifier lets the model memorise rows instead of learning from them",
                         c->name, (int)(span[1] - span[0]), c->name + span[0]);
        kn_diag_note(sink, d, &c->key->pos, "the rulebook's identifier_names is '%s'",
                     clip(x->ctx->arena, rb->identifier_names, 80));
        if (by_format) {
            kn_diag_note(sink, d, &c->format_node->pos, "'%s' also declares a format, the shape of an identifier",
                         c->name);
        }
    } else {
        d = kn_diag_push(sink, KN_R_IDENTIFIER_IN_FEATURES, &c->format_node->pos, c->name,
                         "feature '%s' declares a format, the shape of an identifier or code, but is given to the "
                         "model (%s)",
                         c->name, role);
    }
    if (c->role_node) {
        kn_diag_note(sink, d, &c->role_node->pos, "'%s' is a feature here", c->name);
    }
    kn_diag_note(sink, d, &c->key->pos,
                 "if '%s' is a record number or key, give it role: identifier; if it is a real code (a postcode "
                 "area, a product family), waive this with the reason",
                 c->name);
}

/* ---- proxy-of-excluded --------------------------------------------------- */

typedef enum why_bad { NOT_BAD, BAD_TARGET, BAD_EXCLUDED, BAD_LATE } why_bad;

static why_bad badness(const cx *x, const kn_column *c)
{
    if (c == KN_REF_COLUMN(x->s->prediction.target) || c->role == KN_ROLE_TARGET) {
        return BAD_TARGET;
    }
    if (c->role == KN_ROLE_EXCLUDED) {
        return BAD_EXCLUDED;
    }
    if (x->t && kn_timeline_column_verdict(x->t, c) == KN_VERDICT_LATE) {
        return BAD_LATE;
    }
    return NOT_BAD;
}

static void check_proxy(const cx *x, const kn_column *c)
{
    if (c->role != KN_ROLE_FEATURE || !KN_REF_COLUMN(c->proxy_of)) {
        return;
    }
    kn_arena *a = x->ctx->arena;
    kn_sink *sink = x->ctx->sink;
    /* Follow proxy_of links: a proxy of a proxy of the target carries the
     * target too.  The walk is bounded by the number of columns. */
    const kn_column **chain = kn_alloc_array(a, x->s->n_columns + 1, sizeof *chain);
    size_t n = 0;
    const kn_column *cur = KN_REF_COLUMN(c->proxy_of);
    why_bad why = NOT_BAD;
    while (cur && n < x->s->n_columns) {
        chain[n++] = cur;
        why = badness(x, cur);
        if (why != NOT_BAD || cur == c) {
            break;
        }
        cur = KN_REF_COLUMN(cur->proxy_of);
    }
    if (why == NOT_BAD) {
        return;
    }
    const kn_column *bad = chain[n - 1];
    char *range = NULL;
    kn_interval r;
    const kn_event *moment = x->t ? kn_timeline_moment(x->t) : NULL;
    if (why == BAD_LATE && kn_timeline_column_range(x->t, bad, &r)) {
        range = kn_timeline_range_words(a, r, moment ? moment->name : "");
    }
    const char *what = why == BAD_TARGET     ? "the target: a near copy of the target hands the model the answer"
                       : why == BAD_EXCLUDED ? "excluded from the model: the proxy brings back what was left out"
                                             : "available only after the moment: the proxy carries information "
                                               "from after the moment";
    kn_diag *d;
    if (n == 1) {
        d = kn_diag_push(sink, KN_R_PROXY_OF_EXCLUDED, &c->proxy_of.node->pos, c->name,
                         "feature '%s' is declared a proxy of '%s', which is %s", c->name, bad->name, what);
    } else {
        d = kn_diag_push(sink, KN_R_PROXY_OF_EXCLUDED, &c->proxy_of.node->pos, c->name,
                         "feature '%s' is, through %zu proxy_of links, a proxy of '%s', which is %s", c->name, n,
                         bad->name, what);
        for (size_t i = 0; i + 1 < n; i++) {
            kn_diag_note(sink, d, &chain[i]->proxy_of.node->pos, "'%s' is declared a proxy of '%s'", chain[i]->name,
                         chain[i + 1]->name);
        }
    }
    if (why == BAD_TARGET) {
        const kn_node *tn = x->s->prediction.target.node;
        kn_diag_note(sink, d, tn ? &tn->pos : at(bad, bad->role_node), "'%s' is the target (prediction.target)",
                     bad->name);
    } else if (why == BAD_EXCLUDED) {
        kn_diag_note(sink, d, at(bad, bad->role_node), "'%s' is excluded here (columns.%s.role)", bad->name,
                     bad->name);
    } else {
        kn_diag_note(sink, d, at(bad, bad->known.node), "'%s' is available %s", bad->name,
                     range ? range : "only after the moment");
        const kn_event *e = KN_REF_EVENT(bad->known);
        if (e) {
            kn_timeline_note_chain(x->t, sink, d, e, false);
        }
    }
}

/* ---- suspicious-name ----------------------------------------------------- */

static void check_suspicious(const cx *x, const kn_column *c)
{
    if (c->role != KN_ROLE_FEATURE) {
        return;
    }
    const kn_rulebook *rb = x->ctx->rulebook;
    kn_sink *sink = x->ctx->sink;
    bool maybe[2];
    for (int side = 0; side < 2; side++) {
        const char *text = side == 0 ? c->name : c->description;
        /* Only a clean "no match" of the combined pattern skips the
         * patterns it holds (a limit hit is reported by them one by one). */
        maybe[side] = text && (!x->any[side] || kn_regex_match(x->any[side], text, strlen(text), NULL) != KN_MATCH_NONE);
    }
    bool look[2] = {maybe[0] || (c->name && !x->all_held[0]), maybe[1] || (c->description && !x->all_held[1])};
    for (size_t i = 0; i < rb->n_names && (look[0] || look[1]); i++) {
        const kn_name_rule *nr = &rb->names[i];
        for (int side = 0; side < 2; side++) {
            bool on_name = side == 0;
            if (!look[side] || (!maybe[side] && x->holds[side][i])) {
                continue;
            }
            if (on_name ? nr->applies_to == KN_APPLIES_DESCRIPTION : nr->applies_to == KN_APPLIES_NAME) {
                continue;
            }
            const kn_node *node = on_name ? c->key : c->description_node;
            const char *text = on_name ? c->name : c->description;
            size_t span[2];
            if (!node || !text || !rulebook_match(x, nr->code, nr->pattern, &nr->pos, c, node, text, span)) {
                continue;
            }
            kn_pos p = kn_node_char_pos(node, span[0]);
            const char *hit = clip(x->ctx->arena, kn_strndup(x->ctx->arena, text + span[0], span[1] - span[0]), 60);
            kn_diag *d = kn_diag_push(sink, KN_R_SUSPICIOUS_NAME, &p, c->name,
                                      "feature '%s' has a %s that suggests a value known only later ('%s'): %s",
                                      c->name, on_name ? "name" : "description", hit, nr->why);
            kn_diag_key(sink, d, "%s %s", on_name ? "name" : "description", nr->pattern);
            note_pattern(x, d, &nr->pos, c,
                         kn_printf(x->ctx->arena, "the rulebook's pattern '%s'", clip(x->ctx->arena, nr->pattern, 80)));
            kn_diag_note(sink, d, &c->key->pos,
                         "if '%s' is in fact settled by the moment, declare when it is known and waive this "
                         "finding with the reason",
                         c->name);
        }
    }
}

/* ---- reversible-anonymization -------------------------------------------- */

static void check_anonymization(const cx *x, const kn_column *c)
{
    if (!c->anonymized.present) {
        return;
    }
    kn_arena *a = x->ctx->arena;
    kn_sink *sink = x->ctx->sink;
    if (c->anonymized.method == KN_ANON_HASH && c->anonymized.salted != 1) {
        const kn_node *n = c->anonymized.salted == 0 ? c->anonymized.salted_node : c->anonymized.method_node;
        kn_diag *d = kn_diag_push(sink, KN_R_REVERSIBLE_ANONYMIZATION, at(c, n), c->name,
                                  "column '%s' is hashed %s: anyone who can list the candidate values can hash "
                                  "them and look the originals up, so the hash is a pseudonym, not anonymization",
                                  c->name, c->anonymized.salted == 0 ? "with salted: false" : "without a salt");
        if (c->anonymized.salted != 0) {
            kn_diag_note(sink, d, at(c, c->anonymized.node),
                         "no 'salted: true' here; a secret salt kept apart from the data blocks the lookup");
        }
        kn_diag_note(sink, d, &c->key->pos, "%s", privacy_note);
    }
    if (c->role != KN_ROLE_FEATURE) {
        return;
    }
    size_t n_qi = 0;
    const char *names = "";
    for (size_t i = 0; i < x->s->n_columns; i++) {
        const kn_column *q = x->s->columns[i];
        if (q == c || q->quasi_identifier != 1 || q->role != KN_ROLE_FEATURE) {
            continue;
        }
        if (n_qi < 5) {
            names = n_qi ? kn_printf(a, "%s, '%s'", names, q->name) : kn_printf(a, "'%s'", q->name);
        }
        n_qi++;
    }
    if (n_qi == 0) {
        return;
    }
    kn_diag *d = kn_diag_push(sink, KN_R_REVERSIBLE_ANONYMIZATION, at(c, c->anonymized.node), c->name,
                              "anonymized column '%s' is still a feature, together with %zu quasi-identifier%s "
                              "(%s%s): combined, they can single a person out and link the record back",
                              c->name, n_qi, n_qi == 1 ? "" : "s", names, n_qi > 5 ? ", ..." : "");
    for (size_t i = 0; i < x->s->n_columns; i++) {
        const kn_column *q = x->s->columns[i];
        if (q != c && q->quasi_identifier == 1 && q->role == KN_ROLE_FEATURE) {
            kn_diag_note(sink, d, at(q, q->qi_node), "'%s' is a quasi-identifier given to the model", q->name);
        }
    }
    kn_diag_note(sink, d, &c->key->pos,
                 "generalize the quasi-identifiers (an age band, a postcode area) or leave the anonymized column "
                 "out of the features; `--data` counts the groups they leave (small-quasi-identifier-groups)");
    kn_diag_note(sink, d, &c->key->pos, "%s", privacy_note);
}

/* Whether a names pattern keeps its meaning inside an alternation of
 * others, proven by what it may contain: every group is a plain or
 * non-capturing group, a lookaround, an atomic group or an inline option
 * of i, m, s or n; no backtracking verb ((*COMMIT) and friends act on the
 * whole match), no reference to a group by number or name (\1, \g, \k,
 * (?1), (?R), (?&x), conditionals: group numbers shift once combined), no
 * \Q quoting and no extended mode (whose comments run to the end of the
 * line, past the pattern's end). */
static bool composes(const char *p)
{
    bool in_class = false;
    for (const char *q = p; *q; q++) {
        if (*q == '\\') {
            char e = q[1];
            if (!e || (e >= '0' && e <= '9') || e == 'g' || e == 'k' || e == 'Q' || e == 'E') {
                return false;
            }
            q++;
            continue;
        }
        if (in_class) {
            in_class = *q != ']';
            continue;
        }
        if (*q == '[') {
            in_class = true;
            if (q[1] == '^') {
                q++;
            }
            if (q[1] == ']') {
                q++; /* a ']' first in a class is a literal */
            }
            continue;
        }
        if (*q == '#') {
            return false;
        }
        if (*q != '(') {
            continue;
        }
        if (q[1] == '*') {
            return false;
        }
        if (q[1] != '?') {
            continue; /* a capturing group */
        }
        const char *r = q + 2;
        if (*r == ':' || *r == '=' || *r == '!' || *r == '>' ||
            (*r == '<' && (r[1] == '=' || r[1] == '!'))) {
            continue;
        }
        while (*r && strchr("imsn-", *r)) {
            r++;
        }
        if (r == q + 2 || (*r != ')' && *r != ':')) {
            return false;
        }
    }
    return true;
}

/* The alternation of the names patterns that apply to a side and compose
 * (each in a group of its own so that inline options stay inside it),
 * built in one pass; *skips[i] is set for the patterns it holds, so that a
 * clean "no match" of it skips exactly those.  NULL when fewer than two
 * patterns compose or the alternation does not compile. */
static kn_regex *combined(kn_arena *a, const kn_rulebook *rb, bool description, bool *holds)
{
    size_t n = 0, len = 1;
    for (size_t i = 0; i < rb->n_names; i++) {
        const kn_name_rule *nr = &rb->names[i];
        holds[i] = nr->applies_to != (description ? KN_APPLIES_NAME : KN_APPLIES_DESCRIPTION) &&
                   composes(nr->pattern);
        if (holds[i]) {
            len += strlen(nr->pattern) + 5;
            n++;
        }
    }
    if (n < 2 || len > MAX_COMBINED) {
        memset(holds, 0, rb->n_names * sizeof *holds);
        return NULL;
    }
    char *alt = kn_alloc(a, len), *p = alt;
    for (size_t i = 0; i < rb->n_names; i++) {
        if (!holds[i]) {
            continue;
        }
        size_t k = strlen(rb->names[i].pattern);
        if (p != alt) {
            *p++ = '|';
        }
        memcpy(p, "(?:", 3);
        memcpy(p + 3, rb->names[i].pattern, k);
        p[3 + k] = ')';
        p += k + 4;
    }
    *p = '\0';
    kn_regex_error err;
    kn_regex *re = kn_regex_compile(a, alt, (size_t)(p - alt), &err);
    if (!re) {
        memset(holds, 0, rb->n_names * sizeof *holds);
    }
    return re;
}

void kn_check_identity(kn_ctx *ctx, const kn_schema *s, const kn_timeline *t)
{
    cx x = {ctx, s, t, {NULL, NULL}, {NULL, NULL}, {false, false}};
    size_t n = ctx->rulebook->n_names;
    x.holds[0] = kn_alloc_array(ctx->arena, n + 1, sizeof(bool));
    x.holds[1] = kn_alloc_array(ctx->arena, n + 1, sizeof(bool));
    x.any[0] = combined(ctx->arena, ctx->rulebook, false, x.holds[0]);
    x.any[1] = combined(ctx->arena, ctx->rulebook, true, x.holds[1]);
    for (int side = 0; side < 2; side++) {
        x.all_held[side] = x.any[side] != NULL;
        for (size_t i = 0; i < n && x.all_held[side]; i++) {
            const kn_name_rule *nr = &ctx->rulebook->names[i];
            bool applies = nr->applies_to != (side ? KN_APPLIES_NAME : KN_APPLIES_DESCRIPTION);
            x.all_held[side] = !applies || x.holds[side][i];
        }
    }
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *c = s->columns[i];
        if (c->broken) {
            continue; /* set aside with its own error */
        }
        check_structured(&x, c);
        check_identifier_in_features(&x, c);
        check_proxy(&x, c);
        check_suspicious(&x, c);
        check_anonymization(&x, c);
    }
}
