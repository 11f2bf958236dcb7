/* availability.c - the timeline rules on columns (SPEC §4.2): after-moment,
 * maybe-after-moment, unordered-event, window-overruns, as-of-after-moment,
 * known-before-inputs, inherits-late-input, built-from-target and
 * target-before-moment.  Reads
 * the ranges the solved timeline computed for every column and pushes one
 * diagnostic per finding into the sink, at the value at fault, with the
 * chain of constraints (or derivations) that proves it in notes. */
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "checks.h"
#include "../util/text.h"

typedef struct cx {
    kn_ctx *ctx;
    const kn_schema *s;
    const kn_timeline *t;
    const char *moment;
    size_t *hops;               /* per column: derivations between it and the target */
    const kn_column **root;     /* per column: the target it derives from */
    const kn_column **stack;    /* scratch for target_hops */
    struct words_slot *words_memo; /* ranges already put in words */
    size_t n_words;
} cx;

static const kn_pos *at(const kn_column *c, const kn_node *n)
{
    if (n) {
        return &n->pos;
    }
    return c->key ? &c->key->pos : NULL;
}

static char *words(const cx *x, kn_interval r)
{
    return kn_timeline_range_words(x->ctx->arena, r, x->moment);
}

/* A "maybe" finding of a rule whose default is error is a warning
 * (SPEC §4.2: inherits-late-input, window-overruns). */
static void at_most_warning(kn_diag *d)
{
    kn_diag_cap(d, KN_SEV_WARNING);
}

static bool late_or_maybe(kn_verdict v)
{
    return v == KN_VERDICT_LATE || v == KN_VERDICT_MAYBE_LATE;
}

static const char *dur(int64_t us, char *buf)
{
    return kn_duration_format(us, buf, 48);
}

/* A lag in words: "2h", "between 1h and 2h", "at least 1h". */
static char *lag_words(kn_arena *a, int64_t lo, int64_t hi)
{
    char b1[48], b2[48];
    if (lo == hi) {
        return kn_printf(a, "%s", dur(lo, b1));
    }
    if (hi >= KN_TIME_INF) {
        return kn_printf(a, "at least %s", dur(lo, b1));
    }
    if (lo == 0) {
        return kn_printf(a, "up to %s", dur(hi, b1));
    }
    return kn_printf(a, "between %s and %s", dur(lo, b1), dur(hi, b2));
}

/* An offset from the moment in words. */
static char *offset_words(const cx *x, int64_t v)
{
    char b[48];
    if (v == 0) {
        return kn_printf(x->ctx->arena, "at the moment '%s'", x->moment);
    }
    return kn_printf(x->ctx->arena, "%s %s the moment '%s'",
                     dur(v < 0 ? kn_time_neg(v) : v, b), v < 0 ? "before" : "after", x->moment);
}

static const kn_node *ref_node_to(const kn_column *c, const kn_column *input)
{
    for (size_t i = 0; i < c->n_derived; i++) {
        if (KN_REF_COLUMN(c->derived_from[i]) == input) {
            return c->derived_from[i].node;
        }
    }
    return c->derived_node;
}

/* Where the column's known is written: the event name, or the one_of list. */
static const kn_node *known_node(const kn_column *c)
{
    return c->known.node ? c->known.node : c->one_of_node;
}

/* The known event(s) in words: "'claim_closed'", or for one_of
 * "one of 'a', 'b'" (names as given: renderers escape). */
static const char *known_words(const cx *x, const kn_column *c)
{
    if (!c->n_one_of) {
        const kn_event *e = KN_REF_EVENT(c->known);
        return kn_printf(x->ctx->arena, "'%s'", e ? e->name : "");
    }
    /* In one pass, the first ONE_OF_SHOWN names and a count of the rest:
     * appending name by name cost a 20,000-member list 12 s and 1.9 GB. */
    enum { ONE_OF_SHOWN = 12 };
    size_t shown = c->n_one_of < ONE_OF_SHOWN ? c->n_one_of : ONE_OF_SHOWN, len = sizeof "one of " + 32;
    for (size_t i = 0; i < shown; i++) {
        len += strlen(c->one_of[i].name ? c->one_of[i].name : "") + 4;
    }
    char *s = kn_alloc(x->ctx->arena, len), *p = s;
    p += sprintf(p, "one of ");
    for (size_t i = 0; i < shown; i++) {
        p += sprintf(p, "%s'%s'", i ? ", " : "", c->one_of[i].name ? c->one_of[i].name : "");
    }
    if (shown < c->n_one_of) {
        sprintf(p, " and %zu more", c->n_one_of - shown);
    }
    return s;
}

/* The as_of of a join in words: "'loss_reported'", or with an offset
 * "1d before 'loss_reported'". */
static const char *as_of_words(const cx *x, const kn_column *c)
{
    const kn_event *e = KN_REF_EVENT(c->join.as_of);
    const char *name = e ? e->name : "";
    if (!c->join.has_offset || (c->join.offset.lo == 0 && c->join.offset.hi == 0)) {
        return kn_printf(x->ctx->arena, "'%s'", name);
    }
    char b[48];
    int64_t v = c->join.offset.lo < 0 ? c->join.offset.lo : c->join.offset.hi;
    return kn_printf(x->ctx->arena, "%s %s '%s'", dur(v < 0 ? kn_time_neg(v) : v, b), v < 0 ? "before" : "after",
                     name);
}

/* --- notes that explain a column's own range ----------------------------- */

static void note_delay(const cx *x, kn_diag *d, const kn_column *c)
{
    if (c->delay.present) {
        kn_diag_note(x->ctx->sink, d, at(c, c->delay.node),
                     "'%s' is recorded %s after that (columns.%s.delay)", c->name,
                     lag_words(x->ctx->arena, c->delay.lo, c->delay.hi), c->name);
    }
}

static void note_wait(const cx *x, kn_diag *d, const kn_column *c)
{
    const kn_source *src = KN_REF_SOURCE(c->source);
    char b[48];
    if (!src) {
        return;
    }
    if (src->latency.present && (src->latency.lo || src->latency.hi)) {
        kn_diag_note(x->ctx->sink, d,
                     src->latency.node ? &src->latency.node->pos : at(c, c->source.node),
                     "source '%s' makes a record queryable %s after its event (sources.%s.latency)",
                     src->name, lag_words(x->ctx->arena, src->latency.lo, src->latency.hi),
                     src->name);
    }
    if (src->has_refresh && src->refresh > 0) {
        const kn_node *n = src->field[KN_SF_REFRESH];
        kn_diag_note(x->ctx->sink, d, n ? &n->pos : at(c, c->source.node),
                     "source '%s' is refreshed every %s, which adds up to %s of waiting "
                     "(sources.%s.refresh)",
                     src->name, dur(src->refresh, b), dur(src->refresh, b), src->name);
    }
    /* Known exactly at the moment and late only by the source's wait: most
     * often a value that comes with the request itself, declared with the
     * source it is also stored in. */
    const kn_column_timing *T = kn_timeline_column_timing(x->t, c);
    bool waits = (src->latency.present && src->latency.hi > 0) || (src->has_refresh && src->refresh > 0);
    if (T && waits && !c->delay.present && !c->n_one_of && T->has[KN_PART_KNOWN] &&
        T->event[KN_PART_KNOWN].lo == 0 && T->event[KN_PART_KNOWN].hi == 0) {
        kn_diag_note(x->ctx->sink, d, at(c, c->source.node),
                     "if '%s' comes with the prediction request itself (sent by the caller or typed in), "
                     "it is there at the moment: declare it without source '%s', whose wait is for "
                     "records the model has to look up",
                     c->name, src->name);
    }
}

/* A range relative to the moment in words, through a small table keyed by
 * the range: many findings name the same few events' ranges, so each range
 * is put in words once.  A full table just stops remembering. */
typedef struct words_slot {
    int64_t lo, hi;
    const char *text;
} words_slot;

static const char *event_words(const cx *x, kn_interval r)
{
    size_t n = x->n_words;
    uint64_t h = ((uint64_t)r.lo * 0x9e3779b97f4a7c15ull) ^ ((uint64_t)r.hi * 0xc2b2ae3d27d4eb4full);
    for (size_t k = 0, i = (size_t)(h % n); k < 8; k++, i = (i + 1) % n) {
        words_slot *w = &x->words_memo[i];
        if (!w->text) {
            w->lo = r.lo;
            w->hi = r.hi;
            w->text = words(x, r);
            return w->text;
        }
        if (w->lo == r.lo && w->hi == r.hi) {
            return w->text;
        }
    }
    return words(x, r);
}

static void explain_event_part(const cx *x, kn_diag *d, const kn_column *c, kn_timing_part p,
                               bool upper)
{
    const kn_column_timing *T = kn_timeline_column_timing(x->t, c);
    kn_sink *sink = x->ctx->sink;
    char b[48];
    const kn_event *e = NULL;
    if (p == KN_PART_KNOWN && c->n_one_of) {
        e = upper ? T->known_hi_by : T->known_lo_by;
        kn_diag_note(sink, d, at(c, c->one_of_node),
                     "'%s' is known at %s, varying per row, which together come %s; the %s end is that of "
                     "'%s' (columns.%s.known.one_of)",
                     c->name, known_words(x, c), words(x, T->event[p]), upper ? "latest" : "earliest",
                     e ? e->name : "", c->name);
    } else if (p == KN_PART_KNOWN) {
        e = KN_REF_EVENT(c->known);
        kn_diag_note(sink, d, at(c, c->known.node), "'%s' is known at '%s', which comes %s (columns.%s.known)",
                     c->name, e->name, event_words(x, T->event[p]), c->name);
    } else if (p == KN_PART_WINDOW) {
        e = KN_REF_EVENT(c->window.anchor);
        kn_diag_note(sink, d, at(c, c->window.anchor.node),
                     "the window of '%s' is anchored at '%s', which comes %s (columns.%s.window.anchor)",
                     c->name, e->name, event_words(x, T->event[p]), c->name);
    } else {
        e = KN_REF_EVENT(c->join.as_of);
        kn_diag_note(sink, d, at(c, c->join.as_of.node),
                     "'%s' is joined as of '%s', which comes %s (columns.%s.join.as_of)", c->name,
                     e->name, event_words(x, T->event[p]), c->name);
        if (c->join.has_offset) {
            kn_diag_note(sink, d, at(c, c->join.offset_node),
                         "the join takes the value as it stood %s, which is %s (columns.%s.join.as_of.offset)",
                         as_of_words(x, c), words(x, T->part[p]), c->name);
        }
    }
    kn_timeline_note_chain(x->t, sink, d, e, upper);
    if (p == KN_PART_KNOWN) {
        note_delay(x, d, c);
        note_wait(x, d, c);
    } else if (p == KN_PART_WINDOW) {
        int64_t v = upper ? c->window.to.hi : c->window.to.lo;
        if (v == 0) {
            kn_diag_note(sink, d, at(c, c->window.to_node),
                         "the window ends at its anchor (columns.%s.window.to)", c->name);
        } else {
            kn_diag_note(sink, d, at(c, c->window.to_node),
                         "the window ends %s %s its anchor (columns.%s.window.to)",
                         dur(v < 0 ? kn_time_neg(v) : v, b), v < 0 ? "before" : "after", c->name);
        }
        note_wait(x, d, c);
    }
}

/* The part that sets the chosen end of a column's range, preferring the
 * column's own timing over its inputs on a tie. */
static kn_timing_part dominant_part(const kn_column_timing *T, bool upper)
{
    static const kn_timing_part order[] = {KN_PART_KNOWN, KN_PART_WINDOW, KN_PART_AS_OF,
                                           KN_PART_INPUTS};
    kn_timing_part best = KN_PART_COUNT;
    int64_t best_v = 0;
    for (size_t i = 0; i < sizeof order / sizeof order[0]; i++) {
        kn_timing_part p = order[i];
        if (!T->has[p]) {
            continue;
        }
        int64_t v = upper ? T->part[p].hi : T->part[p].lo;
        if (best == KN_PART_COUNT || v > best_v) {
            best = p;
            best_v = v;
        }
    }
    return best;
}

/* Explains the chosen end of c's range: through derivations down to the
 * column whose own timing sets it.  With via_inputs, the first step goes
 * through the inputs whatever part dominates. */
static void explain_column(const cx *x, kn_diag *d, const kn_column *c, bool upper, bool via_inputs)
{
    for (size_t guard = 0; c && guard <= x->s->n_columns; guard++) {
        const kn_column_timing *T = kn_timeline_column_timing(x->t, c);
        if (!T || !T->computed) {
            return;
        }
        kn_timing_part p = via_inputs ? KN_PART_INPUTS : dominant_part(T, upper);
        via_inputs = false;
        if (p == KN_PART_COUNT) {
            return;
        }
        if (p != KN_PART_INPUTS) {
            explain_event_part(x, d, c, p, upper);
            return;
        }
        const kn_column *in = upper ? T->latest_hi : T->latest_lo;
        const kn_column_timing *I = kn_timeline_column_timing(x->t, in);
        if (!in || !I) {
            return;
        }
        kn_diag_note(x->ctx->sink, d, at(c, ref_node_to(c, in)),
                     "'%s' is derived from '%s', which is available %s (columns.%s.derived_from)",
                     c->name, in->name, words(x, I->range), c->name);
        note_delay(x, d, c);
        c = in;
    }
}

/* --- the rules ------------------------------------------------------------- */

static void check_known(const cx *x, const kn_column *c, const kn_column_timing *T)
{
    kn_verdict v = T->part_verdict[KN_PART_KNOWN];
    const kn_event *e = T->known_hi_by;
    const char *kw = known_words(x, c);
    kn_sink *sink = x->ctx->sink;
    kn_diag *d;
    if (!e) {
        return;
    }
    if (v == KN_VERDICT_LATE) {
        /* Under strict_moment a range starting exactly at the moment is late. */
        bool at_moment = T->part[KN_PART_KNOWN].lo == 0;
        d = kn_diag_push(sink, KN_R_AFTER_MOMENT, at(c, known_node(c)), c->name,
                         "column '%s' (known at %s) is available only %s: %s", c->name, kw,
                         at_moment ? "at or after the moment, which strict_moment counts as late"
                                   : "after the moment",
                         words(x, T->part[KN_PART_KNOWN]));
        kn_diag_range(d, T->part[KN_PART_KNOWN].lo, T->part[KN_PART_KNOWN].hi);
        explain_event_part(x, d, c, KN_PART_KNOWN, false);
    } else if (v == KN_VERDICT_MAYBE_LATE) {
        d = kn_diag_push(sink, KN_R_MAYBE_AFTER_MOMENT, at(c, known_node(c)), c->name,
                         "column '%s' (known at %s) may be available after the moment: %s",
                         c->name, kw, words(x, T->part[KN_PART_KNOWN]));
        kn_diag_range(d, T->part[KN_PART_KNOWN].lo, T->part[KN_PART_KNOWN].hi);
        explain_event_part(x, d, c, KN_PART_KNOWN, true);
    } else if (v == KN_VERDICT_UNORDERED) {
        if (T->event[KN_PART_KNOWN].lo <= -KN_TIME_INF) {
            d = kn_diag_push(sink, KN_R_UNORDERED_EVENT, at(c, known_node(c)), c->name,
                             "column '%s' is known at '%s', which no chain of constraints ties to "
                             "the moment '%s', so its availability cannot be proven",
                             c->name, e->name, x->moment);
        } else {
            d = kn_diag_push(sink, KN_R_UNORDERED_EVENT, at(c, known_node(c)), c->name,
                             "column '%s' is known at '%s', which no chain of constraints bounds "
                             "from above relative to the moment '%s' (it comes %s), so its "
                             "availability cannot be proven",
                             c->name, e->name, x->moment, words(x, T->event[KN_PART_KNOWN]));
        }
        if (e->key) {
            kn_diag_note(sink, d, &e->key->pos, "'%s' is declared here; add `after` or `before` "
                         "with a maximum lag that ties it to the moment", e->name);
        }
        kn_timeline_note_chain(x->t, sink, d, e, false);
    }
}

static void check_window(const cx *x, const kn_column *c, const kn_column_timing *T)
{
    kn_verdict v = T->part_verdict[KN_PART_WINDOW];
    const kn_event *e = KN_REF_EVENT(c->window.anchor);
    kn_sink *sink = x->ctx->sink;
    kn_arena *a = x->ctx->arena;
    if (v == KN_VERDICT_UNORDERED) {
        kn_diag *d = kn_diag_push(
            sink, KN_R_UNORDERED_EVENT, at(c, c->window.anchor.node), c->name,
            "the window of column '%s' is anchored at '%s', which no chain of constraints bounds "
            "from above relative to the moment '%s' (it comes %s), so its availability cannot be "
            "proven",
            c->name, e->name, x->moment, words(x, T->event[KN_PART_WINDOW]));
        if (e->key) {
            kn_diag_note(sink, d, &e->key->pos, "'%s' is declared here", e->name);
        }
        return;
    }
    /* A window that ends after the moment overruns whatever the source's
     * latency: a negative latency cannot bring a future record into the past. */
    kn_verdict end = kn_timeline_classify(x->t, T->window_end);
    if (end == KN_VERDICT_LATE || (end == KN_VERDICT_MAYBE_LATE && v == KN_VERDICT_AVAILABLE)) {
        v = end;
    }
    if (!late_or_maybe(v)) {
        return;
    }
    const char *first;
    if (end == KN_VERDICT_LATE) {
        first = kn_printf(a, "the window of column '%s' ends after the moment: its end is %s",
                          c->name, words(x, T->window_end));
    } else if (end == KN_VERDICT_MAYBE_LATE) {
        first = kn_printf(a, "the window of column '%s' may end after the moment: its end is %s",
                          c->name, words(x, T->window_end));
    } else {
        first = kn_printf(a, "the window of column '%s' ends %s, %s the newest record that "
                          "has landed by the moment",
                          c->name, words(x, T->window_end),
                          v == KN_VERDICT_LATE ? "after" : "possibly after");
    }
    const kn_source *src = KN_REF_SOURCE(c->source);
    const char *second = "";
    if (src && (T->part[KN_PART_WINDOW].lo != T->window_end.lo ||
                T->part[KN_PART_WINDOW].hi != T->window_end.hi)) {
        second = kn_printf(a, "; with the latency and refresh of source '%s' its records are "
                           "queryable %s",
                           src->name, words(x, T->part[KN_PART_WINDOW]));
    }
    kn_diag *d = kn_diag_push(sink, KN_R_WINDOW_OVERRUNS,
                              at(c, c->window.to_node ? c->window.to_node : c->window.node),
                              c->name, "%s%s", first, second);
    kn_diag_range(d, T->part[KN_PART_WINDOW].lo, T->part[KN_PART_WINDOW].hi);
    if (v == KN_VERDICT_MAYBE_LATE) {
        at_most_warning(d);
    }
    explain_event_part(x, d, c, KN_PART_WINDOW, v == KN_VERDICT_MAYBE_LATE);
}

static void check_as_of(const cx *x, const kn_column *c, const kn_column_timing *T)
{
    kn_verdict v = T->part_verdict[KN_PART_AS_OF];
    const kn_event *e = KN_REF_EVENT(c->join.as_of);
    kn_sink *sink = x->ctx->sink;
    kn_diag *d;
    if (v == KN_VERDICT_UNORDERED) {
        d = kn_diag_push(sink, KN_R_UNORDERED_EVENT, at(c, c->join.as_of.node), c->name,
                         "column '%s' is joined as of '%s', which no chain of constraints bounds "
                         "from above relative to the moment '%s' (it comes %s)",
                         c->name, e->name, x->moment, words(x, T->event[KN_PART_AS_OF]));
        return;
    }
    if (!late_or_maybe(v)) {
        return;
    }
    d = kn_diag_push(sink, KN_R_AS_OF_AFTER_MOMENT, at(c, c->join.offset_node ? c->join.offset_node : c->join.as_of.node),
                     c->name, "column '%s' is joined as of %s, which %s after the moment: %s", c->name,
                     as_of_words(x, c), v == KN_VERDICT_LATE ? "comes" : "may come",
                     words(x, T->part[KN_PART_AS_OF]));
    kn_diag_range(d, T->part[KN_PART_AS_OF].lo, T->part[KN_PART_AS_OF].hi);
    if (v == KN_VERDICT_MAYBE_LATE) {
        at_most_warning(d);
    }
    kn_timeline_note_chain(x->t, sink, d, e, v == KN_VERDICT_MAYBE_LATE);
    if (c->join.has_offset) {
        kn_diag_note(sink, d, at(c, c->join.offset_node),
                     "the offset moves the join to %s (columns.%s.join.as_of.offset)",
                     words(x, T->part[KN_PART_AS_OF]), c->name);
    }
}

/* The number of derivations from column c down to the target it is built
 * from, and that target, each column computed once (an explicit stack: a
 * chain may be as long as the table is wide), so that the findings of a
 * long chain cost the chain once, not once per column on it. */
static size_t target_hops(const cx *x, const kn_column *c, const kn_column **root)
{
    size_t n = x->s->n_columns;
    if (x->hops[c->index] == SIZE_MAX) {
        const kn_column **stack = x->stack;
        size_t top = 0;
        const kn_column *cur = c;
        while (cur && x->hops[cur->index] == SIZE_MAX && top <= n) {
            const kn_column_timing *C = kn_timeline_column_timing(x->t, cur);
            if (!C || !C->target_via) {
                x->hops[cur->index] = 0;
                x->root[cur->index] = cur;
                break;
            }
            stack[top++] = cur;
            cur = C->target_via;
        }
        while (top) {
            const kn_column *u = stack[--top];
            const kn_column *via = kn_timeline_column_timing(x->t, u)->target_via;
            x->hops[u->index] = x->hops[via->index] + 1;
            x->root[u->index] = x->root[via->index];
        }
    }
    *root = x->root[c->index];
    return x->hops[c->index];
}

/* Reports built-from-target; returns whether it did.  The message names at
 * most KN_CHAIN_SHOWN / 2 columns of the way and the notes follow at most
 * KN_CHAIN_SHOWN derivations, each saying how many more there are. */
static bool check_target(const cx *x, const kn_column *c, const kn_column_timing *T)
{
    if (!T->from_target || !T->target_via) {
        return false;
    }
    kn_arena *a = x->ctx->arena;
    const kn_column *root;
    size_t hops = target_hops(x, T->target_via, &root);
    kn_diag *d;
    if (hops) {
        /* "'a', 'b', 'c' and 992 more columns", built in one pass. */
        size_t shown = hops < KN_CHAIN_SHOWN / 2 ? hops : KN_CHAIN_SHOWN / 2, len = 64;
        const kn_column *cur = T->target_via;
        for (size_t i = 0; i < shown; i++, cur = kn_timeline_column_timing(x->t, cur)->target_via) {
            len += strlen(cur->name) + 4;
        }
        char *through = kn_alloc(a, len), *p = through;
        cur = T->target_via;
        for (size_t i = 0; i < shown; i++, cur = kn_timeline_column_timing(x->t, cur)->target_via) {
            size_t k = strlen(cur->name);
            if (i) {
                memcpy(p, ", ", 2);
                p += 2;
            }
            *p++ = '\'';
            memcpy(p, cur->name, k);
            p += k;
            *p++ = '\'';
        }
        if (shown < hops) {
            snprintf(p, len - (size_t)(p - through), " and %zu more columns", hops - shown);
        } else {
            *p = '\0';
        }
        d = kn_diag_push(x->ctx->sink, KN_R_BUILT_FROM_TARGET, at(c, ref_node_to(c, T->target_via)),
                         c->name, "feature '%s' is derived from the target '%s' through %s",
                         c->name, root->name, through);
    } else {
        d = kn_diag_push(x->ctx->sink, KN_R_BUILT_FROM_TARGET, at(c, ref_node_to(c, root)),
                         c->name, "feature '%s' is derived from the target '%s'", c->name,
                         root->name);
    }
    const kn_column *cur = c;
    for (size_t i = 0; cur && i <= hops; i++) {
        const kn_column_timing *C = kn_timeline_column_timing(x->t, cur);
        if (!C || !C->target_via) {
            break;
        }
        if (i == KN_CHAIN_SHOWN) {
            kn_diag_note(x->ctx->sink, d, NULL,
                         "... and %zu more derivations on the way to the target, not shown",
                         hops + 1 - KN_CHAIN_SHOWN);
            break;
        }
        kn_diag_note(x->ctx->sink, d, at(cur, ref_node_to(cur, C->target_via)),
                     "'%s' is derived from '%s' (columns.%s.derived_from)", cur->name,
                     C->target_via->name, cur->name);
        cur = C->target_via;
    }
    if (root == KN_REF_COLUMN(x->s->prediction.target) && x->s->prediction.target.node) {
        kn_diag_note(x->ctx->sink, d, &x->s->prediction.target.node->pos,
                     "'%s' is the target (prediction.target)", root->name);
    } else if (root->role_node) {
        kn_diag_note(x->ctx->sink, d, &root->role_node->pos,
                     "'%s' has role target (columns.%s.role)", root->name, root->name);
    }
    return true;
}

/* The latest of c's timed inputs; with skip_target, inputs that carry the
 * target are left out (built-from-target reports them).  *lo_in and *hi_in
 * are the inputs with the latest lower and upper ends (first on a tie). */
static bool latest_input(const cx *x, const kn_column *c, bool skip_target, kn_interval *out,
                         const kn_column **lo_in, const kn_column **hi_in, const kn_column **unordered)
{
    bool any = false;
    *lo_in = *hi_in = *unordered = NULL;
    for (size_t i = 0; i < c->n_derived; i++) {
        const kn_column *in = KN_REF_COLUMN(c->derived_from[i]);
        const kn_column_timing *I = kn_timeline_column_timing(x->t, in);
        if (!in || in->broken || !I || !I->computed || (skip_target && I->from_target)) {
            continue;
        }
        if (!*hi_in || I->range.hi > out->hi) {
            *hi_in = in;
        }
        if (!*lo_in || I->range.lo > out->lo) {
            *lo_in = in;
        }
        *out = any ? (kn_interval){out->lo > I->range.lo ? out->lo : I->range.lo,
                                   out->hi > I->range.hi ? out->hi : I->range.hi}
                   : I->range;
        any = true;
        if (!*unordered && I->verdict == KN_VERDICT_UNORDERED) {
            *unordered = in;
        }
    }
    return any;
}

static void check_inputs(const cx *x, const kn_column *c, const kn_column_timing *T, bool skip_target)
{
    kn_sink *sink = x->ctx->sink;
    kn_interval latest;
    const kn_column *lo_in, *hi_in, *unordered;
    if (!latest_input(x, c, skip_target, &latest, &lo_in, &hi_in, &unordered)) {
        return;
    }
    if (T->inputs_partial && latest.hi < KN_TIME_INF) {
        latest.hi = KN_TIME_INF; /* an untimed input may come later */
    }
    kn_verdict v = kn_timeline_classify(x->t, latest);
    if (T->inputs_partial && v != KN_VERDICT_LATE) {
        return; /* judged by its own timing, or not at all */
    }
    if (v != KN_VERDICT_LATE && unordered) {
        kn_diag_push(sink, KN_R_UNORDERED_EVENT, at(c, ref_node_to(c, unordered)), c->name,
                     "column '%s' is derived from '%s', whose availability no chain "
                     "of constraints bounds from above relative to the moment '%s'",
                     c->name, unordered->name, x->moment);
        return;
    }
    if (late_or_maybe(v)) {
        bool late = v == KN_VERDICT_LATE;
        const kn_column *in = late ? lo_in : hi_in;
        const kn_column_timing *I = kn_timeline_column_timing(x->t, in);
        kn_diag *d = kn_diag_push(sink, KN_R_INHERITS_LATE_INPUT, at(c, ref_node_to(c, in)),
                                  c->name, "column '%s' is derived from '%s', which %s: %s",
                                  c->name, in->name,
                                  late ? "is available only after the moment"
                                       : "may be available after the moment",
                                  words(x, I->range));
        kn_diag_range(d, I->range.lo, I->range.hi);
        if (!late) {
            at_most_warning(d);
        }
        kn_diag_note(sink, d, at(c, ref_node_to(c, in)),
                     "'%s' is derived from '%s', which is available %s (columns.%s.derived_from)",
                     c->name, in->name, words(x, I->range), c->name);
        note_delay(x, d, c);
        explain_column(x, d, in, !late, false);
        return;
    }
    kn_verdict vd = T->part_verdict[KN_PART_INPUTS];
    if (!skip_target && late_or_maybe(vd)) {
        kn_diag *d = kn_diag_push(
            sink, vd == KN_VERDICT_LATE ? KN_R_AFTER_MOMENT : KN_R_MAYBE_AFTER_MOMENT,
            at(c, c->delay.node ? c->delay.node : c->derived_node), c->name,
            "column '%s' is derived from inputs available %s, but with its delay it %s after the "
            "moment: %s",
            c->name, words(x, T->inputs_latest),
            vd == KN_VERDICT_LATE ? "is available only" : "may be available",
            words(x, T->part[KN_PART_INPUTS]));
        kn_diag_range(d, T->part[KN_PART_INPUTS].lo, T->part[KN_PART_INPUTS].hi);
        note_delay(x, d, c);
    }
}

static void check_known_before_inputs(const cx *x, const kn_column *c, const kn_column_timing *T)
{
    if (!T->has[KN_PART_KNOWN] || !T->has[KN_PART_INPUTS] || !T->latest_lo) {
        return;
    }
    kn_interval k = T->part[KN_PART_KNOWN], in = T->part[KN_PART_INPUTS];
    if (k.lo <= -KN_TIME_INF || in.lo <= -KN_TIME_INF || k.lo >= in.lo) {
        return;
    }
    kn_diag *d = kn_diag_push(
        x->ctx->sink, KN_R_KNOWN_BEFORE_INPUTS, at(c, known_node(c)), c->name,
        "column '%s' is declared known at %s, as early as %s, but its inputs are available no "
        "earlier than %s (input '%s')",
        c->name, known_words(x, c), offset_words(x, k.lo), offset_words(x, in.lo), T->latest_lo->name);
    explain_event_part(x, d, c, KN_PART_KNOWN, false);
    explain_column(x, d, c, false, true);
}

/* target-before-moment (SPEC §4.2): the label is settled (label_known, by
 * default the target's known event itself) at or before the moment in
 * every case consistent with the timeline, so there is nothing left to
 * predict.  The chain of constraints that bounds the label event from
 * above is given in notes. */
static void check_label_settled(const cx *x)
{
    const kn_prediction *p = &x->s->prediction;
    const kn_column *target = KN_REF_COLUMN(p->target);
    const kn_event *e = KN_REF_EVENT(p->label_known);
    const kn_node *at_node = p->label_known.node;
    if (!e && target) {
        e = KN_REF_EVENT(target->known);
        at_node = target->known.node;
    }
    kn_interval r;
    if (!e || !at_node || !kn_timeline_event_range(x->t, e, &r) || r.hi > 0) {
        return;
    }
    const char *label = target ? target->name : "";
    kn_sink *sink = x->ctx->sink;
    kn_diag *d = kn_diag_push(
        sink, KN_R_TARGET_BEFORE_MOMENT, &at_node->pos, label,
        "the label of the target '%s' is settled at '%s', %s in every case: nothing is left to predict at the "
        "moment, or the moment or the label's event is mis-declared",
        label, e->name, r.lo == r.hi ? offset_words(x, r.hi) : words(x, r));
    if (KN_REF_EVENT(p->label_known)) {
        kn_diag_note(sink, d, &at_node->pos, "labels are settled at '%s' (prediction.label_known)", e->name);
    } else {
        kn_diag_note(sink, d, &at_node->pos,
                     "without prediction.label_known the label is settled at the target's known event '%s'",
                     e->name);
    }
    kn_timeline_note_chain(x->t, sink, d, e, true);
    if (p->moment.node) {
        kn_diag_note(sink, d, &p->moment.node->pos,
                     "'%s' is the prediction moment; the label must be settled after it (set label_known to "
                     "the event that settles the outcome)",
                     x->moment);
    }
}

void kn_check_availability(kn_ctx *ctx, const kn_schema *s, const kn_timeline *t)
{
    const kn_event *m = kn_timeline_moment(t);
    size_t n_words = 2 * s->n_events + 61;
    cx x = {ctx, s, t, m ? m->name : "", NULL, NULL, NULL,
            kn_alloc_array(ctx->arena, n_words, sizeof(words_slot)), n_words};
    x.hops = kn_alloc_array(ctx->arena, s->n_columns + 1, sizeof *x.hops);
    x.root = kn_alloc_array(ctx->arena, s->n_columns + 1, sizeof *x.root);
    memset(x.hops, 0xff, (s->n_columns + 1) * sizeof *x.hops);
    x.stack = kn_alloc_array(ctx->arena, s->n_columns + 1, sizeof *x.stack);
    if (m) {
        check_label_settled(&x);
    }
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *c = s->columns[i];
        const kn_column_timing *T = kn_timeline_column_timing(t, c);
        /* A column set aside has its own error; nothing more is said of it. */
        if (!T || !T->ordered || c->broken) {
            continue;
        }
        /* The target is never a feature, whatever its role says. */
        bool feature = c->role == KN_ROLE_FEATURE && KN_REF_COLUMN(s->prediction.target) != c;
        bool from_target = feature && check_target(&x, c, T);
        if (!T->computed || !m) {
            continue;
        }
        check_known_before_inputs(&x, c, T);
        if (!feature) {
            continue;
        }
        if (T->has[KN_PART_KNOWN]) {
            check_known(&x, c, T);
        }
        if (T->has[KN_PART_WINDOW]) {
            check_window(&x, c, T);
        }
        if (c->n_derived) {
            /* built-from-target does not hide a late input of another kind */
            check_inputs(&x, c, T, from_target);
        }
        if (T->has[KN_PART_AS_OF]) {
            check_as_of(&x, c, T);
        }
    }
}
