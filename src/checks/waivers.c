/* waivers.c - waivers on columns (SPEC §3.8, §4.6).  Runs after
 * kn_sink_finish, on the final list: a diagnostic is waived by a waiver of
 * its column when the rule is the same and the diagnostic is about that
 * column (its subject) or points inside the column's YAML.  Waived
 * diagnostics stay in the sink, marked, so the renderers can count them and
 * show them with --show-waived.  Then reports waiver-without-reason,
 * waiver-expired (against ctx->today) and waiver-unused, and finishes the
 * sink again so those are sorted in. */
#include <stdlib.h>
#include <string.h>

#include "checks.h"

/* A column's stretch of the schema file: [start, end) in bytes. */
typedef struct span {
    size_t start, end;
    kn_column *col;
} span;

static int by_start(const void *pa, const void *pb)
{
    const span *a = pa, *b = pb;
    return a->start < b->start ? -1 : a->start > b->start;
}

static int by_size(const void *pa, const void *pb)
{
    size_t a = *(const size_t *)pa, b = *(const size_t *)pb;
    return a < b ? -1 : a > b;
}

static bool is_date(const char *s)
{
    if (!s || strlen(s) != 10) {
        return false;
    }
    for (int i = 0; i < 10; i++) {
        bool dash = i == 4 || i == 7;
        if (dash ? s[i] != '-' : (s[i] < '0' || s[i] > '9')) {
            return false;
        }
    }
    return true;
}

static bool blank(const char *s)
{
    if (!s) {
        return true;
    }
    for (; *s; s++) {
        if (*s != ' ' && *s != '\t' && *s != '\n' && *s != '\r') {
            return false;
        }
    }
    return true;
}

/* The columns' stretches, sorted.  A column runs from its key to the next
 * key of the columns mapping or of the top level, whichever comes first
 * (YAML nodes carry no end position; the next key bounds them). */
static span *column_spans(kn_arena *a, const kn_schema *s, size_t *n_out)
{
    size_t n_root = s->root && s->root->kind == KN_NODE_MAP ? s->root->u.map.n : 0;
    size_t *bounds = kn_alloc_array(a, s->n_columns + n_root + 1, sizeof *bounds);
    span *sp = kn_alloc_array(a, s->n_columns + 1, sizeof *sp);
    size_t nb = 0, n = 0;
    for (size_t i = 0; i < s->n_columns; i++) {
        kn_column *c = s->columns[i];
        if (!c->key || !c->key->pos.file || strcmp(c->key->pos.file, s->path) != 0) {
            continue;
        }
        bounds[nb++] = c->key->pos.offset;
        sp[n].start = c->key->pos.offset;
        sp[n].col = c;
        n++;
    }
    for (size_t i = 0; i < n_root; i++) {
        bounds[nb++] = s->root->u.map.pairs[i].key->pos.offset;
    }
    qsort(bounds, nb, sizeof *bounds, by_size);
    qsort(sp, n, sizeof *sp, by_start);
    for (size_t i = 0; i < n; i++) {
        /* the first bound after the start */
        size_t lo = 0, hi = nb;
        while (lo < hi) {
            size_t mid = lo + (hi - lo) / 2;
            if (bounds[mid] <= sp[i].start) {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        sp[i].end = lo < nb ? bounds[lo] : SIZE_MAX;
    }
    *n_out = n;
    return sp;
}

static kn_column *column_at(const span *sp, size_t n, size_t offset)
{
    size_t lo = 0, hi = n;
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (sp[mid].start <= offset) {
            lo = mid + 1;
        } else {
            hi = mid;
        }
    }
    if (lo == 0) {
        return NULL;
    }
    const span *x = &sp[lo - 1];
    return offset < x->end ? x->col : NULL;
}

static bool in_schema_files(const kn_schema *s, const char *file)
{
    for (size_t i = 0; i < s->n_files; i++) {
        if (s->files[i].display && strcmp(s->files[i].display, file) == 0) {
            return true;
        }
    }
    return strcmp(s->path, file) == 0;
}

/* A diagnostic is about this schema's column by subject when it points
 * into one of the schema's files, or (data checks point into the CSV file)
 * when one of its notes does. */
static bool subject_here(const kn_schema *s, const kn_diag *d)
{
    if (in_schema_files(s, d->pos.file)) {
        return true;
    }
    for (size_t i = 0; i < d->n_notes; i++) {
        if (d->notes[i].pos.file && in_schema_files(s, d->notes[i].pos.file)) {
            return true;
        }
    }
    return false;
}

static bool is_waiver_rule(kn_rule r)
{
    return r == KN_R_WAIVER_WITHOUT_REASON || r == KN_R_WAIVER_EXPIRED || r == KN_R_WAIVER_UNUSED;
}

typedef enum wstate { W_ACTIVE, W_NO_RULE, W_NO_REASON, W_EXPIRED } wstate;

static wstate state_of(const kn_waiver *w, const char *today)
{
    if (w->rule < 0) {
        return W_NO_RULE;
    }
    if (blank(w->reason)) {
        return W_NO_REASON;
    }
    if (is_date(today) && is_date(w->expires) && strcmp(w->expires, today) < 0) {
        return W_EXPIRED;
    }
    return W_ACTIVE;
}

/* Offers d to the waivers of column c; counts what each would hide. */
static void offer(kn_diag *d, kn_column *c, const char *today, size_t *would, size_t *base)
{
    for (size_t j = 0; j < c->n_waivers; j++) {
        kn_waiver *w = &c->waivers[j];
        if (w->rule != (int)d->rule) {
            continue;
        }
        wstate st = state_of(w, today);
        if (st == W_ACTIVE) {
            if (!d->waived) {
                d->waived = true;
                w->matched++;
            }
        } else if (st == W_EXPIRED) {
            would[base[c->index] + j]++;
        }
    }
}

void kn_check_waivers(kn_ctx *ctx, kn_schema *s)
{
    size_t total = 0;
    for (size_t i = 0; i < s->n_columns; i++) {
        total += s->columns[i]->n_waivers;
    }
    if (total == 0) {
        return;
    }
    kn_arena *a = ctx->arena;
    kn_sink *sink = ctx->sink;
    const char *today = ctx->today;
    size_t *base = kn_alloc_array(a, s->n_columns + 1, sizeof *base);
    size_t *would = kn_alloc_array(a, total + 1, sizeof *would);
    for (size_t i = 0, k = 0; i < s->n_columns; i++) {
        base[s->columns[i]->index] = k;
        k += s->columns[i]->n_waivers;
    }
    size_t n_spans;
    span *spans = column_spans(a, s, &n_spans);

    size_t n;
    kn_diag **all = kn_sink_diags(sink, &n);
    for (size_t i = 0; i < n; i++) {
        kn_diag *d = all[i];
        if (d->waived || is_waiver_rule(d->rule)) {
            continue;
        }
        kn_column *by_subject = NULL, *by_place = NULL;
        if (d->subject && *d->subject && subject_here(s, d)) {
            by_subject = kn_schema_column(s, d->subject);
        }
        if (d->pos.line > 0 && strcmp(d->pos.file, s->path) == 0) {
            by_place = column_at(spans, n_spans, d->pos.offset);
        }
        if (by_subject && by_subject->n_waivers) {
            offer(d, by_subject, today, would, base);
        }
        if (by_place && by_place != by_subject && by_place->n_waivers) {
            offer(d, by_place, today, would, base);
        }
    }

    for (size_t i = 0; i < s->n_columns; i++) {
        kn_column *c = s->columns[i];
        for (size_t j = 0; j < c->n_waivers; j++) {
            kn_waiver *w = &c->waivers[j];
            const char *id = w->rule_ref.name ? w->rule_ref.name : "?";
            const kn_pos *wpos = kn_column_pos(c, w->node);
            kn_diag *d;
            switch (state_of(w, today)) {
            case W_NO_RULE:
                break;
            case W_NO_REASON:
                d = kn_diag_push(sink, KN_R_WAIVER_WITHOUT_REASON, kn_column_pos(c, w->reason_node ? w->reason_node : w->node),
                                 c->name,
                                 "the waiver of '%s' on column '%s' gives no reason, so it hides nothing: a reviewer "
                                 "needs to read why the finding does not apply",
                                 id, c->name);
                kn_diag_key(sink, d, "no reason %s", id);
                kn_diag_note(sink, d, wpos, "add reason: with the argument (and, better, expires: a date to look again)");
                break;
            case W_EXPIRED:
                d = kn_diag_push(sink, KN_R_WAIVER_EXPIRED, kn_column_pos(c, w->expires_node), c->name,
                                 "the waiver of '%s' on column '%s' expired on %s (today is %s); the %zu finding%s "
                                 "it covered %s reported again",
                                 id, c->name, w->expires, today, would[base[c->index] + j],
                                 would[base[c->index] + j] == 1 ? "" : "s",
                                 would[base[c->index] + j] == 1 ? "is" : "are");
                kn_diag_key(sink, d, "expired %s %s", id, w->expires);
                kn_diag_note(sink, d, wpos, "its reason was: %s", w->reason);
                break;
            case W_ACTIVE:
                if (w->matched == 0) {
                    d = kn_diag_push(sink, KN_R_WAIVER_UNUSED, kn_column_pos(c, w->rule_ref.node), c->name,
                                     "the waiver of '%s' on column '%s' matched no finding: remove it, or it will "
                                     "silently hide the next such finding, which nobody has reviewed",
                                     id, c->name);
                    kn_diag_key(sink, d, "unused %s", id);
                }
                break;
            }
        }
    }
    /* The new diagnostics were pushed after finish: sort them in. */
    kn_sink_finish(sink);
}
