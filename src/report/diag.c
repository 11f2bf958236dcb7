/* diag.c - the diagnostics sink: collects what the checks push, applies the
 * rulebook's severities, sorts by file, line and column, drops duplicates
 * and computes fingerprints.  Renderers read the finished list. */
#include "diag.h"

#include <stdlib.h>
#include <string.h>

struct kn_sink {
    kn_arena *arena;
    kn_vec *diags; /* kn_diag * */
    kn_severity severity[KN_RULE_COUNT];
    bool fatal;
    bool finished;
    unsigned long long sample_kept, sample_total;
    bool has_data;
    kn_data_skip *skips;
    size_t n_skips, skips_cap;
};

uint64_t kn_hash_bytes(uint64_t h, const void *p, size_t n)
{
    const unsigned char *b = p;
    for (size_t i = 0; i < n; i++) {
        h ^= b[i];
        h *= 0x100000001b3ull;
    }
    return h;
}

kn_sink *kn_sink_new(kn_arena *a)
{
    kn_sink *s = kn_alloc(a, sizeof *s);
    s->arena = a;
    s->diags = kn_vec_new(a, sizeof(kn_diag *));
    for (size_t i = 0; i < KN_RULE_COUNT; i++) {
        s->severity[i] = kn_rule_get((kn_rule)i)->severity;
    }
    return s;
}

kn_arena *kn_sink_arena(const kn_sink *s)
{
    return s->arena;
}

void kn_sink_set_severity(kn_sink *s, kn_rule r, kn_severity sev)
{
    s->severity[r] = sev;
}

kn_severity kn_sink_severity(const kn_sink *s, kn_rule r)
{
    return s->severity[r];
}

static kn_pos pos_or_file(const kn_pos *pos, const char *fallback_file)
{
    kn_pos p = {0};
    if (pos) {
        p = *pos;
    }
    if (!p.file) {
        p.file = fallback_file ? fallback_file : "";
    }
    return p;
}

kn_diag *kn_diag_push(kn_sink *s, kn_rule r, const kn_pos *pos,
                      const char *subject, const char *fmt, ...)
{
    kn_diag *d = kn_alloc(s->arena, sizeof *d);
    d->rule = r;
    d->severity = kn_rule_get(r)->severity;
    d->pos = pos_or_file(pos, NULL);
    d->subject = kn_strdup(s->arena, subject ? subject : "");
    va_list ap;
    va_start(ap, fmt);
    d->message = kn_vprintf(s->arena, fmt, ap);
    va_end(ap);
    d->key = d->message;
    d->seq = s->diags->len;
    kn_vec_push(s->diags, &d);
    return d;
}

void kn_diag_note(kn_sink *s, kn_diag *d, const kn_pos *pos, const char *fmt, ...)
{
    if (d->n_notes == d->cap_notes) {
        size_t cap = d->cap_notes ? d->cap_notes * 2 : 4;
        kn_note *n = kn_alloc_array(s->arena, cap, sizeof *n);
        if (d->n_notes) {
            memcpy(n, d->notes, d->n_notes * sizeof *n);
        }
        d->notes = n;
        d->cap_notes = cap;
    }
    kn_note *note = &d->notes[d->n_notes++];
    note->pos = pos_or_file(pos, d->pos.file);
    va_list ap;
    va_start(ap, fmt);
    note->message = kn_vprintf(s->arena, fmt, ap);
    va_end(ap);
}

void kn_diag_cap(kn_diag *d, kn_severity most)
{
    d->cap = most;
    if (d->severity > most) {
        d->severity = most;
    }
}

void kn_diag_range(kn_diag *d, int64_t lo, int64_t hi)
{
    d->has_range = true;
    d->range_lo = lo;
    d->range_hi = hi;
}

void kn_diag_key(kn_sink *s, kn_diag *d, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    d->key = kn_vprintf(s->arena, fmt, ap);
    va_end(ap);
}

static int cmp_diag(const void *pa, const void *pb)
{
    const kn_diag *a = *(kn_diag *const *)pa;
    const kn_diag *b = *(kn_diag *const *)pb;
    int c = strcmp(a->pos.file, b->pos.file);
    if (c) {
        return c;
    }
    if (a->pos.line != b->pos.line) {
        return a->pos.line < b->pos.line ? -1 : 1;
    }
    if (a->pos.col != b->pos.col) {
        return a->pos.col < b->pos.col ? -1 : 1;
    }
    if (a->rule != b->rule) {
        return a->rule < b->rule ? -1 : 1;
    }
    c = strcmp(a->message, b->message);
    if (c) {
        return c;
    }
    return a->seq < b->seq ? -1 : a->seq > b->seq;
}

static bool same_diag(const kn_diag *a, const kn_diag *b)
{
    return a->rule == b->rule && a->pos.line == b->pos.line && a->pos.col == b->pos.col &&
           strcmp(a->pos.file, b->pos.file) == 0 && strcmp(a->message, b->message) == 0;
}

static uint64_t fingerprint(const kn_diag *d)
{
    uint64_t h = KN_HASH_INIT;
    const char *id = kn_rule_get(d->rule)->id;
    h = kn_hash_bytes(h, id, strlen(id) + 1);
    h = kn_hash_bytes(h, d->pos.file, strlen(d->pos.file) + 1);
    h = kn_hash_bytes(h, d->subject, strlen(d->subject) + 1);
    h = kn_hash_bytes(h, d->key, strlen(d->key) + 1);
    return h;
}

void kn_sink_finish(kn_sink *s)
{
    kn_diag **all = s->diags->data;
    size_t n = s->diags->len, out = 0;
    for (size_t i = 0; i < n; i++) {
        all[i]->severity = s->severity[all[i]->rule];
        if (all[i]->cap && all[i]->severity > all[i]->cap) {
            all[i]->severity = all[i]->cap;
        }
        if (all[i]->severity != KN_SEV_OFF) {
            all[out++] = all[i];
        }
    }
    if (out > 1) {
        qsort(all, out, sizeof *all, cmp_diag);
    }
    size_t kept = 0;
    for (size_t i = 0; i < out; i++) {
        if (kept && same_diag(all[kept - 1], all[i])) {
            continue;
        }
        all[kept] = all[i];
        all[kept]->fingerprint = fingerprint(all[kept]);
        kept++;
    }
    s->diags->len = kept;
    s->finished = true;
}

kn_diag **kn_sink_diags(const kn_sink *s, size_t *n)
{
    *n = s->diags->len;
    return s->diags->data;
}

static bool shown(const kn_diag *d)
{
    return !d->waived && !d->baselined && d->severity != KN_SEV_OFF;
}

size_t kn_sink_count(const kn_sink *s, kn_severity sev)
{
    size_t n = 0;
    kn_diag **all = s->diags->data;
    for (size_t i = 0; i < s->diags->len; i++) {
        if (shown(all[i]) && all[i]->severity == sev) {
            n++;
        }
    }
    return n;
}

size_t kn_sink_waived(const kn_sink *s)
{
    size_t n = 0;
    kn_diag **all = s->diags->data;
    for (size_t i = 0; i < s->diags->len; i++) {
        n += all[i]->waived;
    }
    return n;
}

size_t kn_sink_baselined(const kn_sink *s)
{
    size_t n = 0;
    kn_diag **all = s->diags->data;
    for (size_t i = 0; i < s->diags->len; i++) {
        n += all[i]->baselined && !all[i]->waived;
    }
    return n;
}

bool kn_sink_has(const kn_sink *s, kn_severity at_least)
{
    kn_diag **all = s->diags->data;
    for (size_t i = 0; i < s->diags->len; i++) {
        if (shown(all[i]) && all[i]->severity >= at_least) {
            return true;
        }
    }
    return false;
}

void kn_sink_mark_fatal(kn_sink *s)
{
    s->fatal = true;
}

bool kn_sink_fatal(const kn_sink *s)
{
    return s->fatal;
}

void kn_sink_set_sample(kn_sink *s, unsigned long long kept, unsigned long long total)
{
    s->sample_kept = kept;
    s->sample_total = total;
    s->has_data = true;
}

bool kn_sink_has_data(const kn_sink *s)
{
    return s->has_data;
}

void kn_sink_data_skip(kn_sink *s, kn_rule rule, const char *subject, const char *statistic, const char *reason)
{
    if (s->n_skips == s->skips_cap) {
        size_t cap = s->skips_cap ? s->skips_cap * 2 : 16;
        kn_data_skip *v = kn_alloc_array(s->arena, cap, sizeof *v);
        if (s->n_skips) {
            memcpy(v, s->skips, s->n_skips * sizeof *v);
        }
        s->skips = v;
        s->skips_cap = cap;
    }
    kn_data_skip *k = &s->skips[s->n_skips++];
    k->rule = rule;
    k->subject = subject;
    k->statistic = statistic;
    k->reason = reason;
}

const kn_data_skip *kn_sink_data_skips(const kn_sink *s, size_t *n)
{
    *n = s->n_skips;
    return s->skips;
}

bool kn_sink_sample(const kn_sink *s, unsigned long long *kept, unsigned long long *total)
{
    *kept = s->sample_kept;
    *total = s->sample_total;
    return s->sample_total > s->sample_kept;
}
