/* timeline_text.c - the text form of `knowable timeline SCHEMA`: every
 * event's range relative to the moment, then every column's availability
 * range in the groups the check's findings decide (findings.c), with the
 * rules that fired on it, as aligned tables for a terminal.  Reads the
 * solved timeline and the findings; writes to the caller's FILE. */
#include <string.h>

#include "docs.h"
#include "../util/text.h"

#define MAX_COLS 7

typedef struct table {
    size_t n_cols;
    size_t n_rows, cap;
    const char **cells; /* n_rows * n_cols, already escaped; a heading row
                           has its text in the first cell and NULL after */
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

/* A row of cells; heading: one text spanning the table, taking no width. */
static void put_row(table *t, const char *const *cells, bool heading)
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
        t->cells[t->n_rows * t->n_cols + i] = heading && i ? NULL : c;
        if (heading) {
            continue;
        }
        size_t w = text_width(c);
        if (w > t->width[i]) {
            t->width[i] = w;
        }
    }
    t->n_rows++;
}

static void add_row(table *t, const char *const *cells)
{
    put_row(t, cells, false);
}

static void add_heading(table *t, const char *text)
{
    const char *cells[MAX_COLS] = {text};
    put_row(t, cells, true);
}

static void print_table(FILE *out, const table *t)
{
    for (size_t r = 0; r < t->n_rows; r++) {
        if (t->n_cols > 1 && !t->cells[r * t->n_cols + 1]) {
            fprintf(out, "%s%s\n", r ? "\n" : "", t->cells[r * t->n_cols]);
            continue;
        }
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

static void write_contradictions(FILE *out, kn_arena *a, const kn_timeline *t)
{
    const kn_contradiction *cy;
    size_t n = kn_timeline_contradictions(t, &cy);
    fprintf(out, "The event constraints contradict each other (%zu contradiction%s): the events on a "
                 "contradiction, and those tied to the moment only through one, are set aside; the rest "
                 "is placed below.\n",
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

void kn_timeline_write_text(FILE *out, const kn_schema *s, const kn_timeline *t, const kn_doc_findings *f)
{
    const kn_event *m = kn_timeline_moment(t);
    if (!t || !m) {
        fputs("The prediction moment does not name a defined event, so nothing can be placed "
              "(see `knowable check`).\n",
              out);
        return;
    }
    kn_arena *a = kn_timeline_arena(t);
    if (!f) {
        f = kn_doc_findings_make(a, NULL, 0, s, t);
    }
    fprintf(out, "Timeline of %s: moment '%s'; a value recorded exactly at the moment counts as %s.\n",
            s->dataset ? kn_printf(a, "'%s'", esc(a, s->dataset)) : esc(a, s->path), esc(a, m->name),
            kn_timeline_strict(t) ? "late (strict_moment)" : "available");
    if (kn_timeline_contradictory(t)) {
        fputc('\n', out);
        write_contradictions(out, a, t);
    }

    table ev = {.n_cols = 4, .a = a};
    const char *head[] = {"event", "earliest", "latest", ""};
    add_row(&ev, head);
    for (size_t i = 0; i < s->n_events; i++) {
        const kn_event *e = s->events[i];
        kn_interval r;
        if (!kn_timeline_event_range(t, e, &r)) {
            const char *row[] = {esc(a, e->name), "-", "-", "set aside: a schema error or a contradiction"};
            add_row(&ev, row);
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
            const char *names = esc(a, kn_doc_names(a, e->first_of, e->n_first_of, " | "));
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
    table co = {.n_cols = 7, .a = a};
    const char *chead[] = {"column", "role", "earliest", "latest", "verdict", "rules", "from"};
    add_row(&co, chead);
    for (int k = 0; k < KN_ROW_CLASS_COUNT; k++) {
        size_t n = 0;
        for (size_t i = 0; i < s->n_columns; i++) {
            n += f->rows[i].cls == (kn_row_class)k;
        }
        if (!n) {
            continue;
        }
        add_heading(&co, kn_printf(a, "%s (%zu):", kn_row_class_heading((kn_row_class)k), n));
        for (size_t i = 0; i < s->n_columns; i++) {
            const kn_doc_row *row = &f->rows[i];
            if (row->cls != (kn_row_class)k) {
                continue;
            }
            const kn_column *c = s->columns[i];
            const kn_column_timing *T = kn_timeline_column_timing(t, c);
            const char *lo = "-", *hi = "-";
            if (T && T->computed && row->cls != KN_ROW_NO_TIMING) {
                lo = offset(a, T->range.lo);
                hi = offset(a, T->range.hi);
            }
            const char *cells[] = {esc(a, c->name), kn_role_name(c->role), lo, hi,
                                   esc(a, kn_row_verdict_words(a, t, c, row->cls)), kn_row_rules_words(a, row),
                                   esc(a, kn_column_timing_words(a, c))};
            add_row(&co, cells);
        }
    }
    fputs("\nColumns, available relative to the moment, in the groups of `knowable check`'s findings:\n", out);
    print_table(out, &co);
}
