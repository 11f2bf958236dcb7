/* diag.c - the diagnostics sink: collects what the checks push and, in one
 * finishing pass, applies each schema's severities and the caps, drops
 * duplicates, applies the waivers and reports the findings they raise,
 * sorts, computes fingerprints and marks what the baseline records.
 * Renderers read the finished list. */
#include "diag_impl.h"

#include <limits.h>
#include <stdlib.h>
#include <string.h>

#include "../util/hash.h"
#include "../util/names.h"
#include "../util/path.h"

typedef struct waiver {
    kn_waiver_decl d;
    size_t unit;
    size_t matched; /* findings it hid */
    size_t would;   /* findings it would hide, had it not expired */
} waiver;

#define NOTE_CLASSES 40

struct kn_sink {
    kn_arena *arena;
    kn_vec *diags;  /* kn_diag * */
    kn_vec *units;  /* const kn_severity *, unit i + 1 at index i */
    kn_vec *waivers; /* waiver */
    const uint64_t *baseline; /* sorted */
    size_t n_baseline;
    const char *root;
    kn_name_map *paths; /* display path -> path in fingerprints */
    kn_name_map *files; /* file names the findings name, owned by the sink */
    const char *last_file, *last_own;
    bool fatal;
    bool finished;
    unsigned long long sample_kept, sample_total;
    bool has_data;
    kn_data_skip *skips;
    size_t n_skips, skips_cap;
    /* Note arrays outgrown by their finding, by size class (4 << k notes),
     * for the next finding that needs one of that size. */
    kn_note *spare_notes[NOTE_CLASSES];
};

kn_sink *kn_sink_new(kn_arena *a)
{
    kn_sink *s = kn_alloc(a, sizeof *s);
    s->arena = a;
    s->diags = kn_vec_new(a, sizeof(kn_diag *));
    s->units = kn_vec_new(a, sizeof(const kn_severity *));
    s->waivers = kn_vec_new(a, sizeof(waiver));
    s->paths = kn_names_new(a);
    s->files = kn_names_new(a);
    return s;
}

kn_arena *kn_sink_arena(const kn_sink *s)
{
    return s->arena;
}

void kn_sink_begin_unit(kn_sink *s, const kn_severity *sev)
{
    kn_vec_push(s->units, &sev);
}

/* The sink's own copy of a file name: a finding outlives the model of the
 * schema it is about (the run frees each model once it is analysed), so
 * nothing the sink keeps may point into it.  Each name is copied once. */
static const char *own_file(kn_sink *s, const char *file)
{
    if (!file || !*file) {
        return "";
    }
    if (file == s->last_file) {
        return s->last_own;
    }
    const char *own = kn_names_get(s->files, file);
    if (!own) {
        char *copy = kn_strdup(s->arena, file);
        kn_names_put(s->files, copy, copy);
        own = copy;
    }
    s->last_file = file;
    s->last_own = own;
    return own;
}

static kn_pos pos_or_file(kn_sink *s, const kn_pos *pos, const char *fallback_file)
{
    kn_pos p = {0};
    if (pos) {
        p = *pos;
    }
    p.file = p.file ? own_file(s, p.file) : fallback_file ? own_file(s, fallback_file) : "";
    return p;
}

static const kn_pos *own_pos(kn_sink *s, const kn_pos *pos)
{
    if (!pos) {
        return NULL;
    }
    kn_pos *p = kn_alloc(s->arena, sizeof *p);
    *p = pos_or_file(s, pos, NULL);
    return p;
}

static const char *own_str(kn_sink *s, const char *text)
{
    return text ? kn_strdup(s->arena, text) : NULL;
}

static kn_diag *vpush(kn_sink *s, kn_rule r, const kn_pos *pos, const char *subject, size_t unit,
                      const char *fmt, va_list ap)
{
    kn_diag *d = kn_alloc(s->arena, sizeof *d);
    d->rule = r;
    d->severity = kn_rule_get(r)->severity;
    d->pos = pos_or_file(s, pos, NULL);
    d->subject = kn_strdup(s->arena, subject ? subject : "");
    d->message = kn_vprintf(s->arena, fmt, ap);
    d->key = d->message;
    d->unit = unit;
    d->seq = s->diags->len;
    kn_vec_push(s->diags, &d);
    return d;
}

kn_diag *kn_diag_push(kn_sink *s, kn_rule r, const kn_pos *pos, const char *subject, const char *fmt, ...)
{
    if (s->finished) {
        return NULL; /* the report is settled: nothing may join it */
    }
    va_list ap;
    va_start(ap, fmt);
    kn_diag *d = vpush(s, r, pos, subject, s->units->len, fmt, ap);
    va_end(ap);
    return d;
}

/* The size class of an array of cap notes (cap = 4 << k). */
static size_t note_class(size_t cap)
{
    size_t k = 0;
    while (cap > 4 && k + 1 < NOTE_CLASSES) {
        cap /= 2;
        k++;
    }
    return k;
}

static kn_note *new_note(kn_sink *s, kn_diag *d, const kn_pos *pos)
{
    if (d->n_notes == d->cap_notes) {
        /* A finding's notes grow by doubling; the array it leaves is kept
         * for the next finding that reaches that size (a chain of twenty
         * steps otherwise leaves three arrays behind for every finding). */
        size_t cap = d->cap_notes ? d->cap_notes * 2 : 4;
        kn_note **spare = &s->spare_notes[note_class(cap)];
        kn_note *n;
        if (*spare) {
            n = *spare;
            memcpy(spare, n, sizeof *spare); /* the next spare, kept in its first bytes */
        } else {
            n = kn_alloc_array(s->arena, cap, sizeof *n);
        }
        if (d->n_notes) {
            memcpy(n, d->notes, d->n_notes * sizeof *n);
            kn_note **old = &s->spare_notes[note_class(d->cap_notes)];
            memcpy(d->notes, old, sizeof *old);
            *old = d->notes;
        }
        d->notes = n;
        d->cap_notes = cap;
    }
    kn_note *note = &d->notes[d->n_notes++];
    note->pos = pos_or_file(s, pos, d->pos.file);
    return note;
}

void kn_diag_note_text(kn_sink *s, kn_diag *d, const kn_pos *pos, const char *text)
{
    if (!d || s->finished) {
        return;
    }
    new_note(s, d, pos)->message = text;
}

void kn_diag_note(kn_sink *s, kn_diag *d, const kn_pos *pos, const char *fmt, ...)
{
    if (!d || s->finished) {
        return;
    }
    kn_note *note = new_note(s, d, pos);
    va_list ap;
    va_start(ap, fmt);
    note->message = kn_vprintf(s->arena, fmt, ap);
    va_end(ap);
}

void kn_diag_cap(kn_diag *d, kn_severity most)
{
    if (!d) {
        return;
    }
    d->cap = most;
    if (d->severity > most) {
        d->severity = most;
    }
}

void kn_diag_range(kn_diag *d, int64_t lo, int64_t hi)
{
    if (!d) {
        return;
    }
    d->has_range = true;
    d->range_lo = lo;
    d->range_hi = hi;
}

void kn_diag_key(kn_sink *s, kn_diag *d, const char *fmt, ...)
{
    if (!d || s->finished) {
        return;
    }
    va_list ap;
    va_start(ap, fmt);
    d->key = kn_vprintf(s->arena, fmt, ap);
    va_end(ap);
}

void kn_sink_waiver(kn_sink *s, const kn_waiver_decl *w)
{
    if (s->finished) {
        return;
    }
    waiver x = {*w, s->units->len, 0, 0};
    /* Copied: the model the declaration points into goes before the sink. */
    x.d.rule_id = own_str(s, w->rule_id);
    x.d.subject = own_str(s, w->subject);
    x.d.block = own_str(s, w->block);
    x.d.file = w->file ? own_file(s, w->file) : NULL;
    x.d.reason = own_str(s, w->reason);
    x.d.expires = own_str(s, w->expires);
    x.d.at = own_pos(s, w->at);
    x.d.rule_at = own_pos(s, w->rule_at);
    x.d.reason_at = own_pos(s, w->reason_at);
    x.d.expires_at = own_pos(s, w->expires_at);
    kn_vec_push(s->waivers, &x);
}

void kn_sink_baseline(kn_sink *s, const uint64_t *fingerprints, size_t n)
{
    s->baseline = fingerprints;
    s->n_baseline = n;
}

void kn_sink_set_root(kn_sink *s, const char *root)
{
    s->root = root;
}

/* ---- finishing ---- */

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

/* Severities of the unit each finding was pushed in, then its cap; rules
 * turned off are dropped; then sorted, duplicates dropped. */
static void settle(kn_sink *s, size_t from)
{
    kn_diag **all = s->diags->data;
    const kn_severity **units = s->units->data;
    size_t n = s->diags->len, out = from;
    for (size_t i = from; i < n; i++) {
        kn_diag *d = all[i];
        d->severity = d->unit ? units[d->unit - 1][d->rule] : kn_rule_get(d->rule)->severity;
        if (d->cap && d->severity > d->cap) {
            d->severity = d->cap;
        }
        if (d->severity != KN_SEV_OFF) {
            all[out++] = d;
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
        all[kept++] = all[i];
    }
    s->diags->len = kept;
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

typedef enum wstate { W_ACTIVE, W_NO_RULE, W_NO_REASON, W_EXPIRED } wstate;

static wstate state_of(const waiver *w, const char *today)
{
    if (w->d.rule < 0) {
        return W_NO_RULE;
    }
    if (blank(w->d.reason)) {
        return W_NO_REASON;
    }
    if (is_date(today) && is_date(w->d.expires) && strcmp(w->d.expires, today) < 0) {
        return W_EXPIRED;
    }
    return W_ACTIVE;
}

static bool is_waiver_rule(kn_rule r)
{
    return r == KN_R_WAIVER_WITHOUT_REASON || r == KN_R_WAIVER_EXPIRED || r == KN_R_WAIVER_UNUSED;
}

/* A waiver covers a finding of its rule about its block: by subject within
 * the same schema, or by place (the finding points inside the block). */
static bool covers(const waiver *w, const kn_diag *d)
{
    if (w->unit == d->unit && w->d.subject && d->subject[0] && strcmp(w->d.subject, d->subject) == 0) {
        return true;
    }
    return d->pos.line > 0 && w->d.file && d->pos.offset >= w->d.start && d->pos.offset < w->d.end &&
           strcmp(w->d.file, d->pos.file) == 0;
}

__attribute__((format(printf, 5, 6)))
static kn_diag *raise(kn_sink *s, const waiver *w, kn_rule r, const kn_pos *at, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    kn_diag *d = vpush(s, r, at ? at : w->d.at, w->d.subject, w->unit, fmt, ap);
    va_end(ap);
    return d;
}

static void apply_waivers(kn_sink *s, const char *today)
{
    size_t nw = s->waivers->len;
    if (!nw) {
        return;
    }
    waiver *ws = s->waivers->data;
    /* Waivers by rule, so each finding looks only at the waivers of its own. */
    size_t *off = kn_alloc_array(s->arena, KN_RULE_COUNT + 1, sizeof *off);
    size_t *idx = kn_alloc_array(s->arena, nw, sizeof *idx);
    for (size_t i = 0; i < nw; i++) {
        if (ws[i].d.rule >= 0 && ws[i].d.rule < (int)KN_RULE_COUNT) {
            off[ws[i].d.rule + 1]++;
        }
    }
    for (size_t r = 0; r < KN_RULE_COUNT; r++) {
        off[r + 1] += off[r];
    }
    size_t *fill = kn_alloc_array(s->arena, KN_RULE_COUNT + 1, sizeof *fill);
    memcpy(fill, off, (KN_RULE_COUNT + 1) * sizeof *fill);
    for (size_t i = 0; i < nw; i++) {
        if (ws[i].d.rule >= 0 && ws[i].d.rule < (int)KN_RULE_COUNT) {
            idx[fill[ws[i].d.rule]++] = i;
        }
    }

    size_t n;
    kn_diag **all = kn_sink_diags(s, &n);
    for (size_t i = 0; i < n; i++) {
        kn_diag *d = all[i];
        if (is_waiver_rule(d->rule)) {
            continue;
        }
        for (size_t k = off[d->rule]; k < off[d->rule + 1]; k++) {
            waiver *w = &ws[idx[k]];
            if (!covers(w, d)) {
                continue;
            }
            wstate st = state_of(w, today);
            if (st == W_ACTIVE && !d->waived) {
                d->waived = true;
                d->waiver_reason = w->d.reason;
                w->matched++;
            } else if (st == W_EXPIRED) {
                w->would++;
            }
        }
    }

    size_t before = s->diags->len;
    for (size_t i = 0; i < nw; i++) {
        waiver *w = &ws[i];
        const char *id = w->d.rule_id ? w->d.rule_id : "?";
        const char *name = w->d.block ? w->d.block
                           : kn_printf(s->arena, "column '%s'", w->d.subject ? w->d.subject : "");
        kn_diag *d;
        switch (state_of(w, today)) {
        case W_NO_RULE:
            break;
        case W_NO_REASON:
            d = raise(s, w, KN_R_WAIVER_WITHOUT_REASON, w->d.reason_at,
                      "the waiver of '%s' on %s gives no reason, so it hides nothing: a reviewer "
                      "needs to read why the finding does not apply",
                      id, name);
            d->key = kn_printf(s->arena, "no reason %s", id);
            kn_diag_note(s, d, w->d.at, "add reason: with the argument (and, better, expires: a date to look again)");
            break;
        case W_EXPIRED:
            d = raise(s, w, KN_R_WAIVER_EXPIRED, w->d.expires_at,
                      "the waiver of '%s' on %s expired on %s (today is %s); %s",
                      id, name, w->d.expires, today,
                      w->would == 0 ? "it covers no current finding: remove it, or renew it with a reason"
                                    : kn_printf(s->arena, "the %zu finding%s it covered %s reported again",
                                                w->would, w->would == 1 ? "" : "s",
                                                w->would == 1 ? "is" : "are"));
            d->key = kn_printf(s->arena, "expired %s %s", id, w->d.expires);
            kn_diag_note(s, d, w->d.at, "its reason was: %s", w->d.reason);
            break;
        case W_ACTIVE:
            if (w->matched == 0) {
                d = raise(s, w, KN_R_WAIVER_UNUSED, w->d.rule_at,
                          "the waiver of '%s' on %s matched no finding: remove it, or it will "
                          "silently hide the next such finding, which nobody has reviewed",
                          id, name);
                d->key = kn_printf(s->arena, "unused %s", id);
            }
            break;
        }
    }
    if (s->diags->len > before) {
        settle(s, 0);
    }
}

/* ---- fingerprints ---- */

/* The file as fingerprints name it: relative to the root (or the file's
 * repository, SPEC §9's default root), so that ./a.yaml, a.yaml and
 * d/../a.yaml are one file. */
static const char *print_path(kn_sink *s, const char *file)
{
    const char *known = kn_names_get(s->paths, file);
    if (known) {
        return known;
    }
    const char *out = kn_path_tidy(s->arena, file);
    const char *r = *file ? kn_path_real(s->arena, file) : NULL;
    if (r) {
        const char *root = s->root;
        if (!root) {
            /* the repository; without one the path stays as given, tidied */
            root = kn_path_default_root(s->arena, r);
            root = root && kn_path_is_project(s->arena, root) ? root : NULL;
        }
        size_t rl = root ? strlen(root) : 0;
        if (root && strncmp(r, root, rl) == 0 && (r[rl] == '/' || (rl == 1 && root[0] == '/'))) {
            out = r + rl + (r[rl] == '/');
        }
    }
    char *copy = kn_strdup(s->arena, out);
    kn_names_put(s->paths, kn_strdup(s->arena, file), copy);
    return out;
}

/* The key without its numbers: words separated by spaces, where a quoted
 * name is part of its word whatever it holds; a word with a digit outside
 * quotes is left out, so editing a lag keeps the fingerprint. */
static uint64_t hash_key(uint64_t h, const char *key)
{
    const char *p = key;
    while (*p) {
        while (*p == ' ') {
            p++;
        }
        if (!*p) {
            break;
        }
        const char *start = p;
        bool quoted = false, digit = false;
        while (*p && (quoted || *p != ' ')) {
            if (*p == '\'') {
                quoted = !quoted;
            } else if (!quoted && *p >= '0' && *p <= '9') {
                digit = true;
            }
            p++;
        }
        if (!digit) {
            h = kn_hash_bytes(h, start, (size_t)(p - start));
            h = kn_hash_bytes(h, " ", 1);
        }
    }
    return kn_hash_bytes(h, "", 1);
}

static uint64_t fingerprint(kn_sink *s, const kn_diag *d)
{
    uint64_t h = KN_HASH_INIT;
    const char *id = kn_rule_get(d->rule)->id;
    h = kn_hash_bytes(h, id, strlen(id) + 1);
    const char *path = print_path(s, d->pos.file);
    h = kn_hash_bytes(h, path, strlen(path) + 1);
    h = kn_hash_bytes(h, d->subject, strlen(d->subject) + 1);
    return hash_key(h, d->key);
}

static void apply_baseline(kn_sink *s)
{
    size_t nf = s->n_baseline;
    const uint64_t *fps = s->baseline;
    if (!fps) {
        return;
    }
    bool *used = kn_alloc_array(s->arena, nf ? nf : 1, sizeof *used);
    size_t n;
    kn_diag **all = kn_sink_diags(s, &n);
    for (size_t i = 0; i < n; i++) {
        kn_diag *d = all[i];
        if (d->waived) {
            continue;
        }
        /* Lower bound, then the first unused copy: a fingerprint recorded
         * twice matches two findings, and a third is new. */
        size_t lo = 0, hi = nf;
        while (lo < hi) {
            size_t mid = lo + (hi - lo) / 2;
            if (fps[mid] < d->fingerprint) {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        while (lo < nf && fps[lo] == d->fingerprint && used[lo]) {
            lo++;
        }
        if (lo < nf && fps[lo] == d->fingerprint) {
            used[lo] = true;
            d->baselined = true;
        }
    }
}

void kn_sink_finish(kn_sink *s, const char *today)
{
    if (s->finished) {
        return;
    }
    settle(s, 0);
    apply_waivers(s, today);
    size_t n;
    kn_diag **all = kn_sink_diags(s, &n);
    for (size_t i = 0; i < n; i++) {
        all[i]->fingerprint = fingerprint(s, all[i]);
    }
    apply_baseline(s);
    s->finished = true;
}

bool kn_sink_finished(const kn_sink *s)
{
    return s->finished;
}

size_t kn_sink_pushed(const kn_sink *s)
{
    return s->diags->len;
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
    k->subject = own_str(s, subject);
    k->statistic = own_str(s, statistic);
    k->reason = own_str(s, reason);
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
