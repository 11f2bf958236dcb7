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
 * (a report names a handful of files thousands of times). */
typedef struct tx {
    FILE *out;
    kn_arena *arena;
    bool color;
    const char *file;     /* the last file name seen (by pointer) */
    const char *file_esc; /* ... escaped for the terminal */
    size_t file_len;
} tx;

static void put_uint(FILE *out, unsigned long v)
{
    char b[24];
    size_t i = sizeof b;
    do {
        b[--i] = (char)('0' + v % 10);
        v /= 10;
    } while (v);
    fwrite(b + i, 1, sizeof b - i, out);
}

static void put_pos(tx *x, const kn_pos *p)
{
    FILE *out = x->out;
    if (x->color) {
        fputs(BOLD, out);
    }
    if (p->file != x->file) {
        x->file = p->file;
        x->file_esc = kn_escape_term(x->arena, p->file, strlen(p->file));
        x->file_len = strlen(x->file_esc);
    }
    fwrite(x->file_esc, 1, x->file_len, out);
    fputc(':', out);
    if (p->line) {
        /* A whole line (a CSV row) without a column: FILE:LINE: as in the
         * GNU format. */
        put_uint(out, p->line);
        fputc(':', out);
        if (p->col) {
            put_uint(out, p->col);
            fputc(':', out);
        }
    }
    if (x->color) {
        fputs(RESET, out);
    }
    fputc(' ', out);
}

static void put_sev(FILE *out, const char *word, kn_severity s, bool color)
{
    if (color) {
        fputs(sev_color(s), out);
    }
    fputs(word, out);
    fputc(':', out);
    if (color) {
        fputs(RESET, out);
    }
    fputc(' ', out);
}

static void put_diag(tx *x, const kn_diag *d, const kn_render_opts *o)
{
    FILE *out = x->out;
    put_pos(x, &d->pos);
    if (d->waived) {
        put_sev(out, "note", KN_SEV_NOTE, o->color);
        fputs("(waived) ", out);
    } else {
        put_sev(out, kn_severity_name(d->severity), d->severity, o->color);
    }
    kn_fput_term(out, d->message, strlen(d->message));
    fputs(" [", out);
    fputs(kn_rule_get(d->rule)->id, out);
    fputs("]\n", out);
    if (o->quiet) {
        return;
    }
    for (size_t i = 0; i < d->n_notes; i++) {
        put_pos(x, &d->notes[i].pos);
        put_sev(out, "note", KN_SEV_NOTE, o->color);
        kn_fput_term(out, d->notes[i].message, strlen(d->notes[i].message));
        fputc('\n', out);
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
    fprintf(out, " in %zu schema%s", o->n_schemas, o->n_schemas == 1 ? "" : "s");
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
    tx x = {out, kn_sink_arena(s), o->color, NULL, NULL, 0};
    for (size_t i = 0; i < n; i++) {
        const kn_diag *d = all[i];
        if (d->baselined || (d->waived && !o->show_waived)) {
            continue;
        }
        put_diag(&x, d, o);
    }
    if (!o->quiet) {
        kn_render_summary(out, s, o);
    }
}
