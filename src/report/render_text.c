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

static void put_pos(FILE *out, const kn_pos *p, bool color)
{
    if (color) {
        fputs(BOLD, out);
    }
    kn_fput_term(out, p->file, strlen(p->file));
    if (p->line && p->col) {
        fprintf(out, ":%u:%u:", p->line, p->col);
    } else if (p->line) {
        /* A whole line (a CSV row): FILE:LINE: as in the GNU format. */
        fprintf(out, ":%u:", p->line);
    } else {
        fputc(':', out);
    }
    if (color) {
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

static void put_diag(FILE *out, const kn_diag *d, const kn_render_opts *o)
{
    put_pos(out, &d->pos, o->color);
    if (d->waived) {
        put_sev(out, "note", KN_SEV_NOTE, o->color);
        fputs("(waived) ", out);
    } else {
        put_sev(out, kn_severity_name(d->severity), d->severity, o->color);
    }
    kn_fput_term(out, d->message, strlen(d->message));
    fprintf(out, " [%s]\n", kn_rule_get(d->rule)->id);
    if (o->quiet) {
        return;
    }
    for (size_t i = 0; i < d->n_notes; i++) {
        put_pos(out, &d->notes[i].pos, o->color);
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
        fputs(" (rulebook ", out);
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
    for (size_t i = 0; i < n; i++) {
        const kn_diag *d = all[i];
        if (d->baselined || (d->waived && !o->show_waived)) {
            continue;
        }
        put_diag(out, d, o);
    }
    if (!o->quiet) {
        kn_render_summary(out, s, o);
    }
}
