/* data.c - `check --data FILE` (SPEC §4.7): one schema against one CSV
 * file.  This file matches the header with the declared columns
 * (column-not-in-schema, column-not-in-data), sets up the table
 * (src/data/table.c: one pass, every row counted, a reservoir sample kept)
 * and hands the result to the rules: data_values.c (counted over every
 * row), data_split.c (exact over every row) and data_stats.c (on the
 * sample).  Every finding points into the CSV file with a note at the
 * column's declaration in the schema. */
#include <errno.h>
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>

#include "../util/names.h"
#include "../util/regex.h"
#include "../util/text.h"
#include "data_rules.h"

/* Edit distances computed for "did you mean" over the whole header: past
 * this, undeclared columns get no suggestion (a header of 100,000 unknown
 * names must not cost 10^10 comparisons). */
#define SUGGEST_BUDGET 200000u

kn_pos kn_dx_pos(const kn_dx *x, uint64_t line, uint32_t column)
{
    /* line 0: the file (a database's table) as a whole, no column */
    kn_pos p = {x->path, line > UINT32_MAX ? 0 : (uint32_t)line, line > UINT32_MAX || line == 0 ? 0 : column, 0};
    return p;
}

void kn_dx_line_note(kn_dx *x, kn_diag *d, uint64_t line)
{
    if (line > UINT32_MAX) {
        kn_diag_note(x->sink, d, NULL, "the row is on line %llu of the file", (unsigned long long)line);
    }
}

void kn_dx_key_note(kn_dx *x, kn_diag *d, const char *key)
{
    if (key && x->key_name) {
        kn_diag_note(x->sink, d, NULL, "a row with it, the one with the least key: '%s' = '%.60s'", x->key_name, key);
    }
}

kn_pos kn_dx_header_pos(const kn_dx *x, size_t i)
{
    if (x->database) {
        return kn_dx_pos(x, 0, 0); /* the table */
    }
    return kn_dx_pos(x, 1, x->hcol[i]);
}

void kn_dx_note_decl(kn_dx *x, kn_diag *d, const kn_column *c, const kn_node *node, const char *what)
{
    kn_diag_note(x->sink, d, kn_column_pos(c, node), "'%s' is declared here%s", c->name, what ? what : "");
}

void kn_dx_note_sample(kn_dx *x, kn_diag *d)
{
    if (x->t.weight) {
        /* a database: groups over every row, unless the engine sampled */
        uint64_t n = x->sample_rows ? x->sample_rows : x->t.rows;
        if (x->sampled_of > n) {
            kn_diag_note(x->sink, d, NULL,
                         "computed on a random sample of %llu of the %llu rows, drawn by the engine the same way "
                         "every run (--max-rows %lld, seed %llu); counts refer to the sample",
                         (unsigned long long)n, (unsigned long long)x->sampled_of, x->max_rows,
                         (unsigned long long)x->seed);
        }
        return;
    }
    if (x->t.rows > x->t.kept) {
        kn_diag_note(x->sink, d, NULL,
                     "computed on a uniform random sample of %zu of the %llu rows (--max-rows %lld, seed %llu); "
                     "counts refer to the sample",
                     x->t.kept, (unsigned long long)x->t.rows, x->max_rows, (unsigned long long)x->seed);
    }
}

static void close_file(void *p)
{
    fclose(p);
}

/* The `columns:` key of the schema's main file. */
static const kn_pos *columns_pos(const kn_schema *s)
{
    if (s->root && s->root->kind == KN_NODE_MAP) {
        for (size_t i = 0; i < s->root->u.map.n; i++) {
            const kn_node *k = s->root->u.map.pairs[i].key;
            if (k->kind == KN_NODE_SCALAR && strcmp(k->u.scalar.text, "columns") == 0) {
                return &k->pos;
            }
        }
    }
    return &s->root->pos;
}

/* Byte columns of the header's fields, in one pass (the header is on line
 * 1; a quoted name with a line break makes the later ones unknown, 0). */
static uint32_t *header_columns(kn_arena *a, const kn_csv_row *h)
{
    uint32_t *col = kn_alloc_array(a, h->n_fields + 1, sizeof *col);
    uint64_t c = 1;
    bool spans = false;
    for (size_t i = 0; i < h->n_fields; i++) {
        const kn_csv_field *f = &h->fields[i];
        col[i] = spans || c > UINT32_MAX ? 0 : (uint32_t)c;
        if (f->quoted) {
            spans = spans || memchr(f->ptr, '\n', f->len) || memchr(f->ptr, '\r', f->len);
            for (const char *p = f->ptr; (p = memchr(p, '"', (size_t)(f->ptr + f->len - p))); p++) {
                c++;
            }
            c += 2;
        }
        c += f->len + 1;
    }
    return col;
}

/* Matches the header with the schema and sets the table's columns and
 * roles. */
void kn_dx_read_header(kn_dx *x, const kn_csv_row *h)
{
    const kn_schema *s = x->s;
    kn_table *t = &x->t;
    uint32_t *hc = header_columns(x->a, h);
    kn_name_map *seen = kn_names_new(x->a);
    bool *unknown = kn_alloc_array(x->a, h->n_fields + 1, sizeof *unknown);
    t->cols = kn_alloc_array(x->a, h->n_fields + 1, sizeof *t->cols);
    x->decl = kn_alloc_array(x->a, h->n_fields + 1, sizeof *x->decl);
    x->hcol = kn_alloc_array(x->a, h->n_fields + 1, sizeof *x->hcol);
    for (size_t i = 0; i < h->n_fields; i++) {
        const char *name = h->fields[i].ptr;
        kn_pos p = kn_dx_pos(x, h->line, hc[i]);
        if (!kn_names_put(seen, name, &unknown[i])) {
            kn_diag *d = kn_diag_push(x->sink, KN_R_CSV_MALFORMED, &p, name,
                                      "the header names column '%s' again (field %zu); only its first occurrence is "
                                      "checked",
                                      name, i + 1);
            kn_diag_key(x->sink, d, "duplicate header %s", name);
            continue;
        }
        kn_column *k = kn_schema_column(s, name);
        if (!k) {
            unknown[i] = true;
            continue;
        }
        size_t j = t->n_cols++;
        t->cols[j].name = k->name;
        t->cols[j].field = i;
        x->decl[j] = k;
        x->hcol[j] = hc[i];
    }
    /* Declared columns the data lacks; they are also the candidates of
     * "did you mean" for the data's undeclared columns. */
    const char **absent = kn_alloc_array(x->a, s->n_columns + 1, sizeof *absent);
    size_t n_absent = 0;
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *k = s->columns[i];
        if (!kn_names_get(seen, k->name)) {
            absent[n_absent++] = k->name;
            kn_pos p = kn_dx_pos(x, h->line, 0);
            kn_diag *d = kn_diag_push(x->sink, KN_R_COLUMN_NOT_IN_DATA, &p, k->name,
                                      "the schema declares a column '%s' that the data does not have", k->name);
            kn_diag_key(x->sink, d, "absent %s", k->name);
            kn_dx_note_decl(x, d, k, NULL, "");
        }
    }
    size_t budget = SUGGEST_BUDGET;
    for (size_t i = 0; i < h->n_fields; i++) {
        if (!unknown[i]) {
            continue;
        }
        const char *name = h->fields[i].ptr;
        kn_pos p = kn_dx_pos(x, h->line, hc[i]);
        const char *near = NULL;
        if (n_absent && n_absent <= budget) {
            budget -= n_absent;
            near = kn_suggest(name, absent, n_absent);
        }
        kn_diag *d;
        if (near) {
            d = kn_diag_push(x->sink, KN_R_COLUMN_NOT_IN_SCHEMA, &p, name,
                             "the data has a column '%s' that the schema does not declare; did you mean '%s'?", name,
                             near);
            kn_diag_note(x->sink, d, kn_column_pos(kn_schema_column(s, near), NULL), "'%s' is declared here", near);
        } else {
            d = kn_diag_push(x->sink, KN_R_COLUMN_NOT_IN_SCHEMA, &p, name,
                             "the data has a column '%s' that the schema does not declare", name);
            kn_diag_note(x->sink, d, columns_pos(s), "declare it under columns: (role: excluded if the model never sees it)");
        }
        kn_diag_key(x->sink, d, "undeclared %s", name);
    }

    /* Roles. */
    t->qi_fields = kn_alloc_array(x->a, t->n_cols + 1, sizeof *t->qi_fields);
    for (size_t i = 0; i < t->n_cols; i++) {
        kn_tcol *c = &t->cols[i];
        const kn_column *k = x->decl[i];
        c->type = k->type;
        c->format = k->format_code;
        c->feature = k->role == KN_ROLE_FEATURE;
        c->identifier = k->role == KN_ROLE_IDENTIFIER;
        if (k == KN_REF_COLUMN(s->prediction.target)) {
            t->target = c;
        }
        if (k == KN_REF_COLUMN(s->prediction.entity)) {
            t->entity = c;
        }
        if (k == KN_REF_COLUMN(s->prediction.moment_column)) {
            t->moment = c;
        }
        if (s->split.present && k == KN_REF_COLUMN(s->split.column)) {
            t->split = c;
        }
        if (k->quasi_identifier == 1) {
            t->qi_fields[t->n_qi++] = c->field;
        }
    }
    for (size_t i = 0; i < t->n_cols && t->moment; i++) {
        kn_tcol *c = &t->cols[i];
        c->timed = c->feature && c != t->moment && (c->type == KN_TYPE_TIMESTAMP || c->type == KN_TYPE_DATE);
    }
    kn_table_layout(t);
}

void kn_check_data(kn_ctx *c, const kn_schema *s, const char *csv_path, long long max_rows, uint64_t seed)
{
    kn_dx x = {0};
    x.ctx = c;
    x.s = s;
    x.path = csv_path;
    x.a = c->arena;
    x.sink = c->sink;
    x.max_rows = max_rows > 0 ? max_rows : KN_DATA_MAX_ROWS;
    x.seed = seed;
    x.t.a = x.a;
    x.t.max_rows = (size_t)x.max_rows;
    x.t.seed = seed;
    x.t.strict_moment = c->rulebook->strict_moment;
    kn_missing_init(&x.t.missing, c->rulebook->missing_values, c->rulebook->n_missing_values);

    kn_defer *fd = kn_arena_defer(x.a, close_file, NULL);
    FILE *f = fopen(csv_path, "rb");
    if (!f) {
        kn_pos p = kn_dx_pos(&x, 0, 0);
        kn_diag_push(x.sink, KN_R_CSV_MALFORMED, &p, "", "cannot read the data file: %s", strerror(errno));
        kn_sink_mark_fatal(x.sink);
        return;
    }
    fd->ptr = f;
    struct stat sb;
    if (fstat(fileno(f), &sb) == 0 && S_ISDIR(sb.st_mode)) {
        kn_pos p = kn_dx_pos(&x, 0, 0);
        kn_diag_push(x.sink, KN_R_CSV_MALFORMED, &p, "", "cannot read the data file: it is a folder");
        kn_sink_mark_fatal(x.sink);
        return;
    }

    x.t.match_context = kn_regex_limited_context(x.a);

    kn_csv_reader *rd = kn_csv_open_file(x.a, f, NULL);
    kn_csv_row row;
    kn_csv_error err;
    if (kn_csv_read_header(rd, &row, &err) != KN_CSV_ROW) {
        kn_data_csv_problem(&x, &err);
        return;
    }
    kn_dx_read_header(&x, &row);
    if (!kn_table_read(&x.t, rd)) {
        kn_data_csv_problem(&x, &x.t.fatal);
    }
    kn_csv_close(rd);
    kn_data_values(&x);
    kn_data_statistics(&x);
    kn_data_split(&x);
    kn_sink_set_sample(x.sink, (unsigned long long)x.t.kept, (unsigned long long)x.t.rows);
}
