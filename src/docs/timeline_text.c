/* timeline_text.c - the text form of `knowable timeline SCHEMA`: every
 * event's range relative to the moment, then every column's availability
 * range and verdict, as aligned tables for a terminal.  Reads the solved
 * timeline; writes to the caller's FILE. */
#include <string.h>

#include "docs.h"
#include "../util/text.h"

#define MAX_COLS 6

typedef struct table {
    size_t n_cols;
    size_t n_rows, cap;
    const char **cells; /* n_rows * n_cols, already escaped */
    size_t width[MAX_COLS];
    kn_arena *a;
} table;

/* Display width of escaped text: one per character, so UTF-8 continuation
 * bytes do not count. */
static size_t text_width(const char *s)
{
    size_t w = 0;
    for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
        w += (*p & 0xC0) != 0x80;
    }
    return w;
}

static void add_row(table *t, const char *const *cells)
{
    if (t->n_rows == t->cap) {
        size_t cap = t->cap ? t->cap * 2 : 16;
        const char **n = kn_alloc_array(t->a, cap * t->n_cols, sizeof *n);
        if (t->n_rows) {
            memcpy(n, t->cells, t->n_rows * t->n_cols * sizeof *n);
        }
        t->cells = n;
        t->cap = cap;
    }
    for (size_t i = 0; i < t->n_cols; i++) {
        const char *c = cells[i] ? cells[i] : "";
        t->cells[t->n_rows * t->n_cols + i] = c;
        size_t w = text_width(c);
        if (w > t->width[i]) {
            t->width[i] = w;
        }
    }
    t->n_rows++;
}

static void print_table(FILE *out, const table *t)
{
    for (size_t r = 0; r < t->n_rows; r++) {
        /* Trailing empty cells print nothing, so lines carry no trailing blanks. */
        size_t last = t->n_cols;
        while (last > 1 && !*t->cells[r * t->n_cols + last - 1]) {
            last--;
        }
        fputs("  ", out);
        for (size_t i = 0; i < last; i++) {
            const char *c = t->cells[r * t->n_cols + i];
            fputs(c, out);
            if (i + 1 < last) {
                for (size_t k = text_width(c); k < t->width[i] + 2; k++) {
                    fputc(' ', out);
                }
            }
        }
        fputc('\n', out);
    }
}

static const char *esc(kn_arena *a, const char *s)
{
    return s ? kn_escape_term(a, s, strlen(s)) : "";
}

/* A bound relative to the moment: "-3d", "+30min", "0s", "unbounded". */
static const char *offset(kn_arena *a, int64_t v)
{
    char b[48];
    if (v >= KN_TIME_INF || v <= -KN_TIME_INF) {
        return "unbounded";
    }
    kn_duration_format(v, b, sizeof b);
    return kn_printf(a, "%s%s", v > 0 ? "+" : "", b);
}

static const char *verdict_words(kn_arena *a, const kn_timeline *t, const kn_column *c,
                                 const kn_column_timing *T)
{
    if (!T || !T->ordered) {
        return "not placed: on or behind a derivation cycle";
    }
    switch (T->verdict) {
    case KN_VERDICT_AVAILABLE:
        return "available";
    case KN_VERDICT_MAYBE_LATE:
        return "maybe after the moment";
    case KN_VERDICT_LATE:
        return "after the moment";
    case KN_VERDICT_UNORDERED:
        return "unordered: no upper bound relative to the moment";
    case KN_VERDICT_UNKNOWN:
        break;
    }
    /* A derived column is placed only when all its inputs are. */
    for (size_t i = 0; i < c->n_derived; i++) {
        const kn_column *in = KN_REF_COLUMN(c->derived_from[i]);
        const kn_column_timing *TI = in ? kn_timeline_column_timing(t, in) : NULL;
        if (!TI || !TI->computed) {
            return kn_printf(a, "not placed: its input '%s' is not placed", esc(a, c->derived_from[i].name));
        }
    }
    bool any = false;
    for (int p = 0; p < KN_PART_COUNT; p++) {
        any = any || T->has[p];
    }
    return any ? "not placed: a reference or duration is in error" : "not placed: no timing declared";
}

static const char *basis(kn_arena *a, const kn_column *c, const kn_column_timing *T)
{
    const char *s = "";
    const char *sep = "";
    if (!T) {
        return s;
    }
    if (T->has[KN_PART_KNOWN] && c->n_one_of) {
        const char *names = "";
        for (size_t i = 0; i < c->n_one_of; i++) {
            names = kn_printf(a, "%s%s%s", names, i ? " | " : "", esc(a, c->one_of[i].name));
        }
        s = kn_printf(a, "%s%sknown at one of %s", s, sep, names);
        sep = ", ";
    } else if (T->has[KN_PART_KNOWN]) {
        s = kn_printf(a, "%s%sknown at %s", s, sep, esc(a, c->known.name));
        sep = ", ";
    }
    if (T->has[KN_PART_WINDOW]) {
        s = kn_printf(a, "%s%swindow on %s", s, sep, esc(a, c->window.anchor.name));
        sep = ", ";
    }
    if (T->has[KN_PART_INPUTS]) {
        s = kn_printf(a, "%s%sderived from %zu column%s", s, sep, c->n_derived,
                      c->n_derived == 1 ? "" : "s");
        sep = ", ";
    }
    if (T->has[KN_PART_AS_OF]) {
        s = kn_printf(a, "%s%sas of %s", s, sep, esc(a, c->join.as_of.name));
        if (c->join.has_offset) {
            s = kn_printf(a, "%s %s", s, offset(a, c->join.offset.lo < 0 ? c->join.offset.lo : c->join.offset.hi));
        }
        sep = ", ";
    }
    const kn_source *src = c->join.present && KN_REF_SOURCE(c->join.source) ? KN_REF_SOURCE(c->join.source)
                                                                           : KN_REF_SOURCE(c->source);
    if (src && src->matures.present && src->matures.hi > 0) {
        char b[48];
        s = kn_printf(a, "%s%ssource settles up to %s later", s, sep, kn_duration_format(src->matures.hi, b, sizeof b));
    }
    return s;
}

static void write_contradictions(FILE *out, kn_arena *a, const kn_timeline *t)
{
    const kn_contradiction *cy;
    size_t n = kn_timeline_contradictions(t, &cy);
    fprintf(out, "The event constraints contradict each other (%zu contradiction%s), so no event "
                 "or column can be placed.\n",
            n, n == 1 ? "" : "s");
    for (size_t i = 0; i < n; i++) {
        fprintf(out, "\ncontradiction %zu: following these round the loop puts an event before "
                     "itself\n",
                i + 1);
        for (size_t k = 0; k < cy[i].n_steps; k++) {
            const kn_chain_step *st = &cy[i].steps[(cy[i].at + k) % cy[i].n_steps];
            const kn_node *n_at = st->con->lag.node ? st->con->lag.node : st->con->ref.node;
            const char *w = kn_timeline_step_words(a, st);
            if (n_at) {
                fprintf(out, "  line %u: ", (unsigned)n_at->pos.line);
            } else {
                fputs("  ", out);
            }
            kn_fput_term(out, w, strlen(w));
            fputc('\n', out);
        }
    }
}

void kn_timeline_write_text(FILE *out, const kn_schema *s, const kn_timeline *t)
{
    const kn_event *m = kn_timeline_moment(t);
    if (!t || !m) {
        fputs("The prediction moment does not name a defined event, so nothing can be placed "
              "(see `knowable check`).\n",
              out);
        return;
    }
    kn_arena *a = kn_timeline_arena(t);
    fprintf(out, "Timeline of %s: moment '%s'; a value recorded exactly at the moment counts as %s.\n",
            s->dataset ? kn_printf(a, "'%s'", esc(a, s->dataset)) : esc(a, s->path), esc(a, m->name),
            kn_timeline_strict(t) ? "late (strict_moment)" : "available");
    if (kn_timeline_contradictory(t)) {
        fputc('\n', out);
        write_contradictions(out, a, t);
        return;
    }

    table ev = {.n_cols = 4, .a = a};
    const char *head[] = {"event", "earliest", "latest", ""};
    add_row(&ev, head);
    for (size_t i = 0; i < s->n_events; i++) {
        const kn_event *e = s->events[i];
        kn_interval r;
        if (!kn_timeline_event_range(t, e, &r)) {
            continue;
        }
        const char *remark = "";
        if (e == m) {
            remark = "the moment";
        } else if (e->first_of_node) {
            /* the earliest of its members: say which members and which
             * one decides each end */
            const kn_event *lo_by = kn_timeline_first_of_member(t, e, false);
            const kn_event *hi_by = kn_timeline_first_of_member(t, e, true);
            const char *names = "";
            for (size_t k = 0; k < e->n_first_of; k++) {
                names = kn_printf(a, "%s%s%s", names, k ? " | " : "", esc(a, e->first_of[k].name));
            }
            remark = kn_printf(a, "first of %s (earliest from %s, latest from %s)", names,
                               lo_by ? esc(a, lo_by->name) : "-", hi_by ? esc(a, hi_by->name) : "-");
        } else if (r.lo <= -KN_TIME_INF && r.hi >= KN_TIME_INF) {
            remark = "no chain of constraints to the moment";
        } else if (r.hi >= KN_TIME_INF) {
            remark = "no upper bound";
        } else if (r.lo <= -KN_TIME_INF) {
            remark = "no lower bound";
        }
        const char *row[] = {esc(a, e->name), offset(a, r.lo), offset(a, r.hi), remark};
        add_row(&ev, row);
    }
    fputs("\nEvents, relative to the moment:\n", out);
    print_table(out, &ev);

    if (s->n_columns == 0) {
        return;
    }
    table co = {.n_cols = 6, .a = a};
    const char *chead[] = {"column", "role", "earliest", "latest", "verdict", "from"};
    add_row(&co, chead);
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *c = s->columns[i];
        const kn_column_timing *T = kn_timeline_column_timing(t, c);
        const char *lo = "-", *hi = "-";
        if (T && T->computed) {
            lo = offset(a, T->range.lo);
            hi = offset(a, T->range.hi);
        }
        const char *row[] = {esc(a, c->name), kn_role_name(c->role), lo, hi, verdict_words(a, t, c, T),
                             basis(a, c, T)};
        add_row(&co, row);
    }
    fputs("\nColumns, available relative to the moment:\n", out);
    print_table(out, &co);
}
