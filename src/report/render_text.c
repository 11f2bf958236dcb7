/* render_text.c - the default output: one GNU-style line per diagnostic
 * (FILE:LINE:COL: SEVERITY: MESSAGE [RULE]), its notes, and a summary. */
#include <string.h>

#include "../util/text.h"
#include "render.h"

#define BOLD "\033[1m"
#define RESET "\033[0m"

static const char *sev_color(kn_severity s)
{
    switch (s) {
    case KN_SEV_ERROR:
        return "\033[1;31m";
    case KN_SEV_WARNING:
        return "\033[1;33m";
    case KN_SEV_NOTE:
    case KN_SEV_OFF:
        break;
    }
    return "\033[1;34m";
}

/* What the renderer keeps between lines: the last file name, escaped once
 * (a report names a handful of files thousands of times), and a buffer the
 * lines are put together in, written out in large blocks (a large report
 * is hundreds of thousands of pieces; one stdio call each cost a tenth of
 * the renderer's time). */
#define TX_BUF 65536
typedef struct tx {
    FILE *out;
    kn_arena *arena;
    bool color;
    const char *file;     /* the last file name seen (by pointer) */
    const char *file_esc; /* ... escaped for the terminal */
    size_t file_len;
    size_t n;             /* bytes in buf */
    char buf[TX_BUF];
} tx;

static void flush(tx *x)
{
    if (x->n) {
        fwrite(x->buf, 1, x->n, x->out);
        x->n = 0;
    }
}

static void put(tx *x, const char *s, size_t len)
{
    if (x->n + len > TX_BUF) {
        flush(x);
        if (len > TX_BUF) {
            fwrite(s, 1, len, x->out);
            return;
        }
    }
    memcpy(x->buf + x->n, s, len);
    x->n += len;
}

static void put_str(tx *x, const char *s)
{
    put(x, s, strlen(s));
}

static void put_char(tx *x, char c)
{
    if (x->n == TX_BUF) {
        flush(x);
    }
    x->buf[x->n++] = c;
}

static void emit_tx(void *ctx, const char *s, size_t n)
{
    put(ctx, s, n);
}

/* Text from an input, escaped for the terminal. */
static void put_term(tx *x, const char *s)
{
    kn_term_escape_to(s, strlen(s), emit_tx, x);
}

static void put_uint(tx *x, unsigned long v)
{
    char b[24];
    size_t i = sizeof b;
    do {
        b[--i] = (char)('0' + v % 10);
        v /= 10;
    } while (v);
    put(x, b + i, sizeof b - i);
}

static void put_pos(tx *x, const kn_pos *p)
{
    if (x->color) {
        put_str(x, BOLD);
    }
    if (p->file != x->file) {
        x->file = p->file;
        x->file_esc = kn_escape_term(x->arena, p->file, strlen(p->file));
        x->file_len = strlen(x->file_esc);
    }
    put(x, x->file_esc, x->file_len);
    put_char(x, ':');
    if (p->line) {
        /* A whole line (a CSV row) without a column: FILE:LINE: as in the
         * GNU format. */
        put_uint(x, p->line);
        put_char(x, ':');
        if (p->col) {
            put_uint(x, p->col);
            put_char(x, ':');
        }
    }
    if (x->color) {
        put_str(x, RESET);
    }
    put_char(x, ' ');
}

static void put_sev(tx *x, const char *word, kn_severity s)
{
    if (x->color) {
        put_str(x, sev_color(s));
    }
    put_str(x, word);
    put_char(x, ':');
    if (x->color) {
        put_str(x, RESET);
    }
    put_char(x, ' ');
}

static void put_diag(tx *x, const kn_diag *d, const kn_render_opts *o)
{
    put_pos(x, &d->pos);
    if (d->waived) {
        put_sev(x, "note", KN_SEV_NOTE);
        put_str(x, "(waived) ");
    } else {
        put_sev(x, kn_severity_name(d->severity), d->severity);
    }
    put_term(x, d->message);
    put_str(x, " [");
    put_str(x, kn_rule_get(d->rule)->id);
    put_str(x, "]\n");
    if (o->quiet) {
        return;
    }
    for (size_t i = 0; i < d->n_notes; i++) {
        put_pos(x, &d->notes[i].pos);
        put_sev(x, "note", KN_SEV_NOTE);
        put_term(x, d->notes[i].message);
        put_char(x, '\n');
    }
}

static void count(FILE *out, size_t n, const char *one, const char *many, bool *first)
{
    fprintf(out, "%s%zu %s", *first ? "" : ", ", n, n == 1 ? one : many);
    *first = false;
}

void kn_render_summary(FILE *out, const kn_sink *s, const kn_render_opts *o)
{
    bool first = true;
    count(out, kn_sink_count(s, KN_SEV_ERROR), "error", "errors", &first);
    count(out, kn_sink_count(s, KN_SEV_WARNING), "warning", "warnings", &first);
    count(out, kn_sink_count(s, KN_SEV_NOTE), "note", "notes", &first);
    size_t w = kn_sink_waived(s), b = kn_sink_baselined(s);
    if (w) {
        fprintf(out, " (%zu waived)", w);
    }
    if (b) {
        fprintf(out, " (%zu matched the baseline)", b);
    }
    if (o->n_schemas) {
        fprintf(out, " in %zu schema%s", o->n_schemas, o->n_schemas == 1 ? "" : "s");
    } else {
        fputs("; no schema was checked", out); /* a rulebook or an option failed first */
    }
    if (o->rulebooks && *o->rulebooks) {
        fputs(" (", out);
        kn_fput_term(out, o->rulebooks, strlen(o->rulebooks));
        fputc(')', out);
    }
    unsigned long long kept, total;
    if (kn_sink_sample(s, &kept, &total)) {
        fprintf(out, "; data statistics on a sample of %llu of %llu rows", kept, total);
    }
    fputc('\n', out);
}

void kn_render_text(FILE *out, const kn_sink *s, const kn_render_opts *o)
{
    size_t n;
    kn_diag **all = kn_sink_diags(s, &n);
    tx *x = kn_alloc(kn_sink_arena(s), sizeof *x);
    x->out = out;
    x->arena = kn_sink_arena(s);
    x->color = o->color;
    for (size_t i = 0; i < n; i++) {
        const kn_diag *d = all[i];
        if (d->baselined || (d->waived && !o->show_waived)) {
            continue;
        }
        put_diag(x, d, o);
    }
    flush(x);
    if (!o->quiet) {
        kn_render_summary(out, s, o);
    }
}
