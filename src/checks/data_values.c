/* data_values.c - the rules counted over every row of the data (SPEC
 * §4.7): csv-malformed (records the reader could not trust, left out),
 * value-mismatch (type and format), a format that hit PCRE2's match limit
 * on a value (bad-pattern), and timestamp-after-moment (with
 * strict_moment, a value equal to the moment is late too).  Each gives the
 * exact count and the first row. */
#include "data_rules.h"

static const char *type_words(kn_value_type t)
{
    switch (t) {
    case KN_TYPE_NUMBER:
        return "numbers";
    case KN_TYPE_BOOLEAN:
        return "booleans (true/false, yes/no, 1/0)";
    case KN_TYPE_TIMESTAMP:
        return "ISO 8601 timestamps";
    case KN_TYPE_DATE:
        return "ISO 8601 dates (YYYY-MM-DD)";
    default:
        return "values of the declared type";
    }
}

void kn_data_csv_problem(kn_dx *x, const kn_csv_error *e)
{
    kn_pos p = kn_dx_pos(x, e->line, e->column > UINT32_MAX ? 0 : (uint32_t)e->column);
    char *msg = kn_csv_error_message(x->a, e);
    kn_diag *d = e->problem == KN_CSV_NO_HEADER
                     ? kn_diag_push(x->sink, KN_R_CSV_MALFORMED, &p, "", "%s", msg)
                     : kn_diag_push(x->sink, KN_R_CSV_MALFORMED, &p, "", "%s; the rest of the file is not read", msg);
    kn_diag_key(x->sink, d, "fatal %d", (int)e->problem);
    kn_dx_line_note(x, d, e->line);
    if (e->problem == KN_CSV_READ_FAILED) {
        kn_sink_mark_fatal(x->sink);
    }
}

static void bad_rows(kn_dx *x)
{
    for (size_t i = 0; i <= KN_CSV_TOO_MANY_COLUMNS; i++) {
        const kn_csv_tally *b = &x->t.bad[i];
        if (!b->count) {
            continue;
        }
        kn_pos p = kn_dx_pos(x, b->first.line, b->first.column > UINT32_MAX ? 0 : (uint32_t)b->first.column);
        kn_diag *d;
        if (b->count == 1) {
            d = kn_diag_push(x->sink, KN_R_CSV_MALFORMED, &p, "", "%s; the record is left out of the checks",
                             b->message);
        } else {
            d = kn_diag_push(x->sink, KN_R_CSV_MALFORMED, &p, "",
                             "%s; %llu records have this problem (the first is here) and are left out of the checks",
                             b->message, (unsigned long long)b->count);
        }
        kn_diag_key(x->sink, d, "bad rows %zu", i);
        kn_dx_line_note(x, d, b->first.line);
    }
}

void kn_data_values(kn_dx *x)
{
    const kn_table *t = &x->t;
    bad_rows(x);
    for (size_t i = 0; i < t->n_cols; i++) {
        const kn_tcol *c = &t->cols[i];
        const kn_column *k = x->decl[i];
        if (c->bad_type.count) {
            kn_pos p = kn_dx_pos(x, c->bad_type.line, c->bad_type.col);
            kn_diag *d = kn_diag_push(x->sink, KN_R_VALUE_MISMATCH, &p, c->name,
                                      "%llu of %llu values of '%s' are not %s; the first, here, is '%s'",
                                      (unsigned long long)c->bad_type.count, (unsigned long long)t->rows, c->name,
                                      type_words(k->type), c->bad_type.value);
            kn_diag_key(x->sink, d, "type %s", c->name);
            kn_dx_note_decl(x, d, k, k->type_node, kn_printf(x->a, " as type %s", kn_type_name(k->type)));
            kn_dx_line_note(x, d, c->bad_type.line);
            kn_dx_key_note(x, d, c->bad_type.key);
        }
        if (c->bad_format.count) {
            kn_pos p = kn_dx_pos(x, c->bad_format.line, c->bad_format.col);
            kn_diag *d = kn_diag_push(x->sink, KN_R_VALUE_MISMATCH, &p, c->name,
                                      "%llu of %llu values of '%s' do not match its format; the first, here, is '%s'",
                                      (unsigned long long)c->bad_format.count, (unsigned long long)t->rows, c->name,
                                      c->bad_format.value);
            kn_diag_key(x->sink, d, "format %s", c->name);
            kn_dx_note_decl(x, d, k, k->format_node, " with this format");
            kn_dx_line_note(x, d, c->bad_format.line);
            kn_dx_key_note(x, d, c->bad_format.key);
        }
        if (c->format_off) {
            kn_diag *d = kn_diag_push(x->sink, KN_R_BAD_PATTERN, kn_column_pos(k, k->format_node), c->name,
                                      "the format of '%s' could not be checked against the data: %s", c->name,
                                      c->limit_problem);
            kn_diag_key(x->sink, d, "data limit %s", c->name);
            kn_pos p = kn_dx_pos(x, c->limit_line, 0);
            kn_diag_note(x->sink, d, &p,
                         "on this row's value; the format is not matched against later rows (nested quantifiers "
                         "such as (a+)+ backtrack without end and should be rewritten)");
            kn_dx_line_note(x, d, c->limit_line);
        }
        if (c->late.count) {
            const kn_column *m = KN_REF_COLUMN(x->s->prediction.moment_column);
            kn_pos p = kn_dx_pos(x, c->late.line, c->late.col);
            kn_diag *d = kn_diag_push(
                x->sink, KN_R_TIMESTAMP_AFTER_MOMENT, &p, c->name,
                "'%s' is %s the moment column '%s' in %llu of %llu rows; the first, here, is %s %s %s", c->name,
                t->strict_moment ? "not earlier than" : "later than", m->name, (unsigned long long)c->late.count,
                (unsigned long long)t->rows, c->late.value, t->strict_moment ? "at or after" : "after",
                c->late.other);
            kn_diag_key(x->sink, d, "late %s", c->name);
            kn_dx_note_decl(x, d, k, NULL,
                            t->strict_moment
                                ? ": with strict_moment: true, a value recorded at the moment is not available to "
                                  "the model"
                                : ": a value recorded after the moment cannot be known when the model is asked");
            kn_diag_note(x->sink, d, kn_column_pos(m, x->s->prediction.moment_column.node),
                         "the moment column is named here");
            kn_dx_line_note(x, d, c->late.line);
            kn_dx_key_note(x, d, c->late.key);
        }
    }
}
