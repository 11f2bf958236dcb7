/* data_db.c - `check --data 'odbc:...' --table NAME` (SPEC §5.1): the data
 * rules of §4.7 where the table lives.  The engine scans the rows; only
 * aggregated rows cross the connection (src/data/sql.c builds the
 * queries, src/data/odbc.c runs them), and the findings are made by the
 * rules of the CSV path from the same structures:
 *   - the column names become the header (kn_dx_read_header):
 *     column-not-in-schema, column-not-in-data;
 *   - each column's GROUP BY rows (value, target value, rows) are fed to a
 *     table of its own as groups of rows (kn_table_add_group), whose
 *     cells are parsed and matched by the CSV path's code (value-mismatch)
 *     and whose weighted slots the statistics read (data_stats.c:
 *     lone-feature-separates, missingness-predicts,
 *     identifier-segment-predicts, finished by src/data/stats.c);
 *   - a column with more groups than the client reads (--max-rows, default
 *     KN_SQL_MAX_GROUPS) is "wide": its AUC is the engine's rank sum (a
 *     numeric or temporal SQL type and a binary target), its missingness
 *     comes from missing rows per class, its values are streamed for
 *     value-mismatch when its SQL type is text (a typed column cannot hold
 *     a value of another type), and an identifier of a table larger than
 *     that is read from a random sample of about as many rows, drawn by
 *     the engine;
 *   - on a table of more rows than --max-rows (default 1,000,000, as for a
 *     file) the statistics read a sample of about --max-rows rows, drawn
 *     by the engine the same way every run (kn_sql_sample_query), as the
 *     CSV path computes them on a sample of as many; the value checks
 *     and the counted rules below still count every row;
 *   - timestamp-after-moment, rows-shared-across-split,
 *     entity-in-both-splits and small-quasi-identifier-groups are counted
 *     by the engine over every row and finished by data_values.c and
 *     data_split.c (kn_overlap_set, kn_groups_add_sizes).
 * Findings point at "odbc:<connection, password masked>/<table>" (line 0:
 * the table as a whole) with the note at the column's declaration, and
 * name the first offending row by its key (the entity, else the first
 * identifier) where the table has one. */
#include <stdlib.h>
#include <string.h>

#include "../data/odbc.h"
#include "../data/sql.h"
#include "../util/regex.h"
#include "data_rules.h"

/* Where a query reads its rows: the table (or --query), or a sample of
 * it; seed_sql, when set, runs before each query on it. */
typedef struct source {
    const char *table, *query_sql, *seed_sql;
} source;

typedef struct db_run {
    kn_dx x; /* the whole table: header, roles, counted rules */
    kn_db *db;
    kn_sql_dialect d;
    const char *table, *query_sql, *shown;
    unsigned long long cap; /* groups read per query */
    source all;             /* every row */
    source stats;           /* the statistics' rows: all, or a sample of about max_rows */
    bool sampled;           /* stats is a sample */
    uint64_t sample_rows;   /* its rows */
    int tablesample;        /* PostgreSQL's TABLESAMPLE works on the table: 1, not: -1, not tried: 0 */
    bool target_wide;       /* the target has more values than cap */
    const char *key;        /* the key column's name, or NULL */
    /* a binary target of two raw values, for the engine's rank sum */
    bool rank_ok;
    char *raw[2];           /* the two raw values as the engine sent them */
    uint64_t raw_rows[2];   /* and their rows */
    kn_db_type target_kind; /* the target's SQL kind */
    bool raw_positive[2];
    kn_db_type *kinds; /* each field's SQL kind */
    /* the split column's raw values on each side, when the client read
     * them all (then no query tests the text of each row's split value) */
    kn_sql_sides sides;
    bool have_sides;
    FILE *err;
} db_run;

/* The count in a result's text ("123", "123.000" from a DECIMAL sum). */
static bool parse_count(const char *s, size_t len, uint64_t *out)
{
    uint64_t v = 0;
    size_t i = 0;
    if (!s || len == 0) {
        *out = 0;
        return s != NULL; /* an empty result: 0; NULL (SUM of no rows): 0 too */
    }
    for (; i < len && s[i] >= '0' && s[i] <= '9'; i++) {
        if (v > (UINT64_MAX - 9) / 10) {
            return false;
        }
        v = v * 10 + (uint64_t)(s[i] - '0');
    }
    if (i == 0) {
        return false;
    }
    if (i < len && s[i] == '.') {
        for (i++; i < len && s[i] == '0'; i++) {
        }
    }
    *out = v;
    return i == len;
}

/* The value of column i of the current row as a count; NULL is 0. */
static bool count_at(db_run *r, kn_db_rows *q, size_t i, uint64_t *out)
{
    size_t len;
    const char *s = kn_db_get(q, i, &len);
    if (!s) {
        *out = 0;
        return true;
    }
    if (!parse_count(s, len, out)) {
        fprintf(r->err, "knowable: the database sent '%.40s' where a count was expected\n", s);
        return false;
    }
    return true;
}

static void failed(db_run *r)
{
    kn_sink_mark_fatal(r->x.sink);
}

static kn_db_rows *query(db_run *r, const char *sql, const char *what)
{
    kn_db_rows *q = kn_db_query(r->db, sql, kn_printf(r->x.a, "%s (%s)", what, r->shown));
    if (!q) {
        failed(r);
    }
    return q;
}

/* A query on the rows of src: its seed first, where it has one. */
static kn_db_rows *query_on(db_run *r, const source *src, const char *sql, const char *what)
{
    if (src->seed_sql) {
        kn_db_rows *q = query(r, src->seed_sql, "cannot seed the engine's random numbers");
        if (!q) {
            return NULL;
        }
        while (kn_db_next(q)) {
        }
        kn_db_done(q);
    }
    return query(r, sql, what);
}

/* Samples of at least this many rows are drawn by whole pages on
 * PostgreSQL (TABLESAMPLE SYSTEM): a tenth of the time of a row-by-row
 * draw, which reads every page, and still spread over hundreds of pages
 * (a page holds at most about 290 rows). */
#define PAGE_SAMPLE_ROWS 100000

/* A sample of the table, each row kept with probability p (about n
 * rows), the same rows every run: on PostgreSQL by TABLESAMPLE where the
 * table takes it (not a view), by pages for a large sample, else by the
 * seeded random(). */
static void sample_of(db_run *r, double p, unsigned long long n, source *out)
{
    kn_arena *a = r->x.a;
    if (r->d == KN_SQL_POSTGRESQL && !r->tablesample) {
        const char *probe = r->table ? kn_sql_columns_query(a, r->d, NULL,
                                                            kn_sql_sample_query(a, r->d, r->table, NULL, p, r->x.seed,
                                                                                KN_SQL_SAMPLE_ROWS))
                                     : NULL;
        r->tablesample = probe && kn_db_try(r->db, probe) ? 1 : -1;
    }
    kn_sql_sampling how = r->tablesample <= 0      ? KN_SQL_SAMPLE_SCAN
                          : n >= PAGE_SAMPLE_ROWS ? KN_SQL_SAMPLE_PAGES
                                                  : KN_SQL_SAMPLE_ROWS;
    out->table = NULL;
    out->query_sql = kn_sql_sample_query(a, r->d, r->all.table, r->all.query_sql, p, r->x.seed, how);
    out->seed_sql = how == KN_SQL_SAMPLE_SCAN ? kn_sql_seed_query(a, r->d, r->x.seed) : NULL;
}

/* ---- one column's tables ------------------------------------------------------ */

/* A table of groups for column src (a copy of the whole table's column,
 * its format only when with_format) and, with_target, the target. */
static void column_table(db_run *r, kn_dx *cx, kn_arena *a, const kn_tcol *src, const kn_column *decl,
                         bool with_target, bool with_format)
{
    const kn_dx *x = &r->x;
    memset(cx, 0, sizeof *cx);
    cx->ctx = x->ctx;
    cx->s = x->s;
    cx->path = x->path;
    cx->a = a;
    cx->sink = x->sink;
    cx->max_rows = x->max_rows;
    cx->seed = x->seed;
    cx->database = true;
    cx->key_name = r->key;
    kn_table *t = &cx->t;
    t->a = a;
    t->max_rows = 1;
    t->seed = x->seed;
    t->strict_moment = x->t.strict_moment;
    t->missing = x->t.missing;
    t->match_context = x->t.match_context;
    t->cols = kn_alloc_array(a, 2, sizeof *t->cols);
    cx->decl = kn_alloc_array(a, 2, sizeof *cx->decl);
    cx->hcol = kn_alloc_array(a, 2, sizeof *cx->hcol);
    kn_tcol *c = &t->cols[t->n_cols];
    c->name = src->name;
    c->field = 0;
    c->type = src->type;
    c->format = with_format ? src->format : NULL;
    c->feature = src->feature;
    c->identifier = src->identifier;
    cx->decl[t->n_cols++] = decl;
    if (with_target) {
        const kn_tcol *tg = x->t.target;
        kn_tcol *tc = &t->cols[t->n_cols];
        tc->name = tg->name;
        tc->field = 1;
        tc->type = tg->type;
        cx->decl[t->n_cols++] = KN_REF_COLUMN(x->s->prediction.target);
        t->target = tc;
    }
    kn_table_layout(t);
}

/* The raw text of the first value that failed its type or its format, for
 * the key of its row. */
typedef struct firsts {
    char *type, *format;
} firsts;

/* Feeds the rows (v[, t], n) of q into cx's table as groups, at most cap
 * of them (0: all).  *wide when there were more.  False on an error. */
static bool feed(db_run *r, kn_dx *cx, kn_db_rows *q, bool with_target, bool keep, unsigned long long cap,
                 bool *wide, firsts *f)
{
    kn_table *t = &cx->t;
    kn_tcol *c = &t->cols[0];
    unsigned long long n = 0;
    size_t count_col = with_target ? 2 : 1;
    *wide = false;
    while (kn_db_next(q)) {
        if (cap && ++n > cap) {
            *wide = true;
            break;
        }
        kn_csv_field fields[2];
        size_t len;
        fields[0].ptr = kn_db_get(q, 0, &len);
        fields[0].len = len;
        fields[0].quoted = false;
        if (with_target) {
            fields[1].ptr = kn_db_get(q, 1, &len);
            fields[1].len = len;
            fields[1].quoted = false;
        }
        uint64_t rows;
        if (!count_at(r, q, count_col, &rows)) {
            kn_db_done(q);
            return false;
        }
        uint64_t had_type = c->bad_type.count, had_format = c->bad_format.count;
        kn_table_add_group(t, fields, with_target ? 2 : 1, rows, keep);
        if (f && !had_type && c->bad_type.count) {
            f->type = kn_strndup(r->x.a, fields[0].ptr, fields[0].len);
        }
        if (f && !had_format && c->bad_format.count) {
            f->format = kn_strndup(r->x.a, fields[0].ptr, fields[0].len);
        }
    }
    kn_db_done(q);
    return !kn_db_failed(r->db);
}

/* The key of the first row whose column holds value (as text). */
static char *key_of(db_run *r, const char *col, const char *value)
{
    if (!r->key || !value) {
        return NULL;
    }
    kn_db_rows *q = query(r, kn_sql_key_of_value(r->x.a, r->d, r->table, r->query_sql, col, r->key, value),
                          "cannot find the row of a value");
    char *key = NULL;
    if (q && kn_db_next(q)) {
        size_t len;
        const char *k = kn_db_get(q, 0, &len);
        key = k ? kn_strndup(r->x.a, k, len) : NULL;
    }
    if (q) {
        kn_db_done(q);
    }
    return key;
}

/* Whether a column of SQL kind k can only hold values of type t (then no
 * value of it can fail its type).  SQLite keeps any value in any column
 * (its declared type is an affinity), so there only the types that take
 * any value count. */
static bool typed_by_engine(const db_run *r, kn_value_type t, kn_db_type k)
{
    if (r->d == KN_SQL_SQLITE) {
        k = KN_DB_TEXT;
    }
    switch (t) {
    case KN_TYPE_NUMBER:
        return k == KN_DB_NUMBER || k == KN_DB_INTEGER;
    case KN_TYPE_TIMESTAMP:
        return k == KN_DB_TIMESTAMP || k == KN_DB_DATE;
    case KN_TYPE_DATE:
        return k == KN_DB_DATE;
    case KN_TYPE_BOOLEAN:
        return k == KN_DB_BOOLEAN;
    default:
        return true; /* category, text, untyped: any value is one */
    }
}

static bool equals_nocase(const char *s, const char *word)
{
    for (; *s && *word; s++, word++) {
        char c = *s >= 'A' && *s <= 'Z' ? (char)(*s - 'A' + 'a') : *s;
        if (c != *word) {
            return false;
        }
    }
    return !*s && !*word;
}

/* How "missing" can be tested on a column of SQL kind k without casting
 * every value to text: when no missing marker of the rulebook can be the
 * text of such a value, it is SQL NULL alone (KN_SQL_COL_NULL_ONLY), on
 * PostgreSQL's floats and numerics with NaN when a marker spells it (its
 * text 'NaN'; also KN_SQL_COL_NAN); 0 when every value's text must be
 * compared.  Dates, timestamps and numbers print digits (and Infinity),
 * booleans true/false, 1/0 or t/f; SQLite's columns hold anything. */
static unsigned null_only(const db_run *r, kn_db_type k)
{
    if (k == KN_DB_TEXT || r->d == KN_SQL_SQLITE || r->d == KN_SQL_ANSI) {
        return 0;
    }
    const kn_rulebook *rb = r->x.ctx->rulebook;
    bool nan = false;
    for (size_t i = 0; i < rb->n_missing_values; i++) {
        const char *m = rb->missing_values[i];
        bool b;
        if (strpbrk(m, "0123456789") || kn_value_boolean(m, strlen(m), &b) == KN_VALUE_OK ||
            (strlen(m) == 1 && strchr("tfTF", m[0])) || equals_nocase(m, "infinity") ||
            equals_nocase(m, "-infinity") || equals_nocase(m, "inf")) {
            return 0;
        }
        nan = nan || equals_nocase(m, "nan");
    }
    if (k == KN_DB_NUMBER && nan) {
        if (r->d != KN_SQL_POSTGRESQL) {
            return r->d == KN_SQL_MYSQL ? KN_SQL_COL_NULL_ONLY : 0; /* MySQL's numbers are never NaN */
        }
        return KN_SQL_COL_NULL_ONLY | KN_SQL_COL_NAN;
    }
    return KN_SQL_COL_NULL_ONLY;
}

/* A value of type t that parses, standing for "not missing". */
static const char *present_value(kn_value_type t)
{
    switch (t) {
    case KN_TYPE_NUMBER:
        return "0";
    case KN_TYPE_TIMESTAMP:
    case KN_TYPE_DATE:
        return "1970-01-01";
    case KN_TYPE_BOOLEAN:
        return "true";
    default:
        return "present";
    }
}

/* Copies what a column's table counted into the whole table's column. */
static char *keep(db_run *r, const char *s)
{
    return s ? kn_strdup(r->x.a, s) : NULL;
}

static void take_values(db_run *r, kn_tcol *dst, const kn_tcol *src, const firsts *f)
{
    /* the column's table lives in an arena of its own, freed next */
    dst->bad_type = src->bad_type;
    dst->bad_type.value = keep(r, src->bad_type.value);
    dst->bad_format = src->bad_format;
    dst->bad_format.value = keep(r, src->bad_format.value);
    dst->missing = src->missing;
    if (src->format_off) {
        dst->format_off = true;
        dst->limit_line = 0;
        dst->limit_problem = keep(r, src->limit_problem);
    }
    if (dst->bad_type.count) {
        dst->bad_type.key = key_of(r, dst->name, f->type);
    }
    if (dst->bad_format.count) {
        dst->bad_format.key = key_of(r, dst->name, f->format);
    }
}

/* Streams every distinct value of column i for value-mismatch. */
static bool stream_values(db_run *r, size_t i)
{
    kn_dx vx;
    kn_tcol *dst = &r->x.t.cols[i];
    kn_defer *rel;
    kn_arena *ca = kn_arena_child(r->x.a, &rel);
    column_table(r, &vx, ca, dst, r->x.decl[i], false, true);
    kn_db_rows *q = query(r, kn_sql_groups_query(ca, r->d, r->table, r->query_sql, dst->name, NULL, 0),
                          kn_printf(ca, "cannot read the values of '%s'", dst->name));
    firsts f = {0};
    bool wide;
    bool ok = q && feed(r, &vx, q, false, false, 0, &wide, &f);
    if (ok) {
        take_values(r, dst, &vx.t.cols[0], &f);
    }
    kn_defer_run(r->x.a, rel);
    return ok;
}

/* The engine's rank sum of a wide numeric feature against a binary
 * target, and its missing rows per class as groups of cx's table (for
 * missingness-predicts).  The two classes must account for the rows
 * counted (an engine that compares the target's text otherwise than it
 * sent it gives no AUC, and the statistic is skipped); *done says whether
 * the missing rows were read. */
static bool rank_sum(db_run *r, const source *src, kn_dx *cx, kn_db_type kind, bool *done)
{
    kn_tcol *c = &cx->t.cols[0];
    int p = r->raw_positive[0] ? 0 : 1;
    unsigned nulls =
        null_only(r, kind) |
        (null_only(r, r->target_kind) && r->target_kind != KN_DB_NUMBER ? KN_SQL_TARGET_NULL_ONLY : 0) |
        (c->type == KN_TYPE_NUMBER ? KN_SQL_COL_FLOAT : 0);
    kn_db_rows *q =
        query_on(r, src,
                 kn_sql_rank_sum_query(cx->a, r->d, r->x.ctx->rulebook, src->table, src->query_sql, c->name,
                                       r->x.t.target->name, r->raw[p], r->raw[1 - p], nulls),
                 kn_printf(cx->a, "cannot rank the values of '%s'", c->name));
    *done = false;
    if (!q) {
        return false;
    }
    uint64_t v[5] = {0, 0, 0, 0, 0};
    bool got = kn_db_next(q);
    bool ok = true;
    for (size_t i = 0; got && ok && i < 5; i++) {
        ok = count_at(r, q, i, &v[i]);
    }
    kn_db_done(q);
    if (!ok || kn_db_failed(r->db)) {
        return false;
    }
    uint64_t n_pos = v[1] + v[3], n_neg = v[2] + v[4];
    if (!got || n_pos != r->raw_rows[p] || n_neg != r->raw_rows[1 - p]) {
        return true; /* the classes do not add up: no statistic from here */
    }
    if (v[1] + v[2] > 0) {
        c->has_auc = true;
        kn_auc_finish(v[0], v[1], v[2], &c->auc);
    }
    /* missing and present rows of each class, as for missing_groups */
    const char *present = present_value(c->type);
    for (int k = 0; k < 2; k++) {
        int which = k == 0 ? p : 1 - p;
        uint64_t missing = v[3 + k], with = v[1 + k];
        kn_csv_field fields[2] = {{NULL, 0, false}, {r->raw[which], strlen(r->raw[which]), false}};
        if (missing) {
            kn_table_add_group(&cx->t, fields, 2, missing, true);
        }
        if (with) {
            fields[0] = (kn_csv_field){present, strlen(present), false};
            kn_table_add_group(&cx->t, fields, 2, with, true);
        }
    }
    *done = true;
    return true;
}

/* A wide feature's missing rows per target value, as two groups per
 * class (missing, present) for missingness-predicts. */
static bool missing_groups(db_run *r, const source *src, kn_dx *cx, const kn_tcol *c, kn_db_type kind)
{
    kn_db_rows *q = query_on(r, src,
                             kn_sql_missing_query(cx->a, r->d, r->x.ctx->rulebook, src->table, src->query_sql,
                                                  c->name, r->x.t.target->name, null_only(r, kind)),
                             kn_printf(cx->a, "cannot count the missing values of '%s'", c->name));
    if (!q) {
        return false;
    }
    unsigned long long n = 0;
    while (kn_db_next(q)) {
        if (++n > r->cap) {
            break; /* the target query said how many values it has */
        }
        size_t len;
        kn_csv_field fields[2] = {{NULL, 0, false}, {NULL, 0, false}};
        fields[1].ptr = kn_db_get(q, 0, &len);
        fields[1].len = len;
        uint64_t missing, rows;
        if (!count_at(r, q, 1, &missing) || !count_at(r, q, 2, &rows) || missing > rows) {
            kn_db_done(q);
            return false;
        }
        if (missing) {
            kn_table_add_group(&cx->t, fields, 2, missing, true);
        }
        if (rows > missing) {
            const char *v = present_value(c->type);
            fields[0].ptr = v;
            fields[0].len = strlen(v);
            kn_table_add_group(&cx->t, fields, 2, rows - missing, true);
        }
    }
    kn_db_done(q);
    return !kn_db_failed(r->db);
}

/* The statistics of a column's table cx, which is a sample of `of` rows
 * of the table (0: every row), of n rows (0: its own count). */
static void statistics(db_run *r, kn_dx *cx, uint64_t of, uint64_t n)
{
    cx->sampled_of = of;
    cx->sample_rows = n;
    cx->target_said = r->x.target_said;
    kn_data_statistics(cx);
    r->x.target_said = cx->target_said;
}

/* Whether a column's values must be read to be checked: a type the
 * engine's SQL type does not already guarantee, or a format. */
static bool values_to_check(const db_run *r, const kn_tcol *c, kn_db_type kind)
{
    bool typed = c->type != KN_TYPE_UNSET || c->format;
    return typed && (c->format || !typed_by_engine(r, c->type, kind));
}

/* A column's values over every row, for value-mismatch: its groups, or
 * when it has more than the client reads, every distinct value streamed. */
static bool values_in(db_run *r, size_t i, kn_db_type kind, kn_arena *ca)
{
    kn_tcol *c = &r->x.t.cols[i];
    kn_dx cx;
    firsts f = {0};
    bool wide = false;
    column_table(r, &cx, ca, c, r->x.decl[i], false, true);
    kn_db_rows *q = query(r, kn_sql_groups_query(ca, r->d, r->table, r->query_sql, c->name, NULL, r->cap + 1),
                          kn_printf(ca, "cannot read the values of '%s'", c->name));
    if (!q || !feed(r, &cx, q, false, false, r->cap, &wide, &f)) {
        return false;
    }
    if (!wide) {
        take_values(r, c, &cx.t.cols[0], &f);
        return true;
    }
    return !values_to_check(r, c, kind) || stream_values(r, i);
}

/* One column's statistics on the rows of src (every row, or the sample),
 * with its value findings from the same groups when values (src is then
 * every row). */
static bool stats_in(db_run *r, size_t i, kn_db_type kind, kn_arena *ca, const source *src, bool values)
{
    kn_dx *x = &r->x;
    kn_tcol *c = &x->t.cols[i];
    const kn_column *k = x->decl[i];
    kn_dx cx;
    firsts f = {0};
    bool wide = false;
    bool numeric = c->type == KN_TYPE_NUMBER || c->type == KN_TYPE_TIMESTAMP || c->type == KN_TYPE_DATE;
    /* the engine orders the values as numbers or instants only when its
     * type holds nothing else (not SQLite: see typed_by_engine) */
    bool engine_ordered =
        typed_by_engine(r, c->type, kind) &&
        (kind == KN_DB_NUMBER || kind == KN_DB_INTEGER || kind == KN_DB_TIMESTAMP || kind == KN_DB_DATE);
    bool by_rank = c->feature && numeric && engine_ordered && r->rank_ok;
    uint64_t of = src == &r->stats && r->sampled ? x->t.rows : 0;
    if (by_rank && !c->format) {
        /* A number or an instant the engine keeps in type, against a
         * binary target: no value can fail its type, and one scan gives
         * the rank sum (on 4-byte floats, as the CSV path keeps numbers)
         * and the missing rows per class, however many distinct values
         * the column has.  When the classes do not add up, the groups are
         * read as below. */
        column_table(r, &cx, ca, c, k, true, false);
        bool counted = false;
        if (!rank_sum(r, src, &cx, kind, &counted)) {
            return false;
        }
        if (counted && cx.t.cols[0].has_auc) {
            statistics(r, &cx, of, of ? r->sample_rows : 0);
            return true;
        }
    }
    column_table(r, &cx, ca, c, k, true, true);
    kn_db_rows *q = query_on(r, src,
                             kn_sql_groups_query(ca, r->d, src->table, src->query_sql, c->name,
                                                 x->t.target->name, r->cap + 1),
                             kn_printf(ca, "cannot read the values of '%s'", c->name));
    if (!q || !feed(r, &cx, q, true, true, r->cap, &wide, values ? &f : NULL)) {
        return false;
    }
    if (!wide && values) {
        take_values(r, c, &cx.t.cols[0], &f);
    } else if (wide) {
        /* Too many groups to read: the values are checked by streaming
         * them when the engine's type does not already guarantee them,
         * the statistics finished by the engine. */
        if (values && values_to_check(r, c, kind) && !stream_values(r, i)) {
            return false;
        }
        if (c->identifier) {
            return true; /* an identifier of so few rows has fewer groups (stats_of samples it) */
        }
        column_table(r, &cx, ca, c, k, true, false);
        cx.t.cols[0].wide = true;
        bool counted = false;
        if (by_rank && !rank_sum(r, src, &cx, kind, &counted)) {
            return false;
        }
        if (!counted && !missing_groups(r, src, &cx, c, kind)) {
            return false;
        }
    }
    statistics(r, &cx, of, of ? r->sample_rows : 0);
    return true;
}

/* One column: its value findings into the whole table, counted over every
 * row, and its statistics, on the statistics' rows. */
static bool column_in(db_run *r, size_t i, kn_db_type kind, kn_arena *ca)
{
    kn_dx *x = &r->x;
    kn_tcol *c = &x->t.cols[i];
    bool stats = x->t.target && !r->target_wide && (c->feature || c->identifier);
    bool check = values_to_check(r, c, kind);
    if (!stats) {
        return !check || values_in(r, i, kind, ca);
    }
    /* An identifier's values are read group by group: on a table of more
     * rows than the client reads, from a sample of about as many rows
     * (its segments are statistics). */
    unsigned long long id_rows = r->cap < (unsigned long long)x->max_rows ? r->cap : (unsigned long long)x->max_rows;
    if (c->identifier && x->t.rows > id_rows) {
        if (check && !values_in(r, i, kind, ca)) {
            return false;
        }
        source sample;
        sample_of(r, (double)id_rows / (double)x->t.rows, id_rows, &sample);
        kn_dx cx;
        bool wide;
        column_table(r, &cx, ca, c, x->decl[i], true, true);
        kn_db_rows *q = query_on(r, &sample,
                                 kn_sql_groups_query(ca, r->d, NULL, sample.query_sql, c->name, x->t.target->name,
                                                     2 * id_rows),
                                 kn_printf(ca, "cannot read a sample of '%s'", c->name));
        if (!q || !feed(r, &cx, q, true, true, 2 * id_rows, &wide, NULL)) {
            return false;
        }
        statistics(r, &cx, x->t.rows, 0);
        return true;
    }
    if (r->sampled) {
        /* the values over every row, the statistics on the sample */
        return (!check || values_in(r, i, kind, ca)) && stats_in(r, i, kind, ca, &r->stats, false);
    }
    return stats_in(r, i, kind, ca, &r->all, true);
}

/* Each column's tables live in an arena of their own, freed once its
 * findings are in the sink: memory does not grow with the columns. */
static bool column(db_run *r, size_t i, kn_db_type kind)
{
    kn_defer *rel;
    kn_arena *ca = kn_arena_child(r->x.a, &rel);
    bool ok = column_in(r, i, kind, ca);
    kn_defer_run(r->x.a, rel);
    return ok;
}

/* ---- the target ----------------------------------------------------------------- */

/* The target's values: value-mismatch of the target, and whether the
 * engine's rank sum can serve a binary target (exactly two raw values,
 * two classes). */
static bool target(db_run *r, size_t i, kn_db_type kind)
{
    kn_dx *x = &r->x;
    kn_tcol *c = &x->t.cols[i];
    kn_dx cx;
    firsts f = {0};
    bool wide;
    column_table(r, &cx, x->a, c, x->decl[i], false, true);
    kn_db_rows *q =
        query(r, kn_sql_groups_query(x->a, r->d, r->table, r->query_sql, c->name, NULL, r->cap + 1),
              kn_printf(x->a, "cannot read the values of the target '%s'", c->name));
    if (!q) {
        return false;
    }
    /* The raw values as they come, kept beside the table's count. */
    kn_table *t = &cx.t;
    kn_tcol *tc = &t->cols[0];
    size_t raw = 0;
    unsigned long long n = 0;
    wide = false;
    while (kn_db_next(q)) {
        if (++n > r->cap) {
            wide = true;
            break;
        }
        size_t len;
        kn_csv_field field = {kn_db_get(q, 0, &len), 0, false};
        field.len = len;
        uint64_t rows;
        if (!count_at(r, q, 1, &rows)) {
            kn_db_done(q);
            return false;
        }
        uint64_t had_type = tc->bad_type.count, had_format = tc->bad_format.count, had_missing = tc->missing;
        kn_table_add_group(t, &field, 1, rows, false);
        if (!had_type && tc->bad_type.count) {
            f.type = kn_strndup(x->a, field.ptr, field.len);
        }
        if (!had_format && tc->bad_format.count) {
            f.format = kn_strndup(x->a, field.ptr, field.len);
        }
        if (tc->missing == had_missing) {
            if (raw < 2) {
                r->raw[raw] = kn_strndup(x->a, field.ptr, field.len);
                r->raw_rows[raw] = rows;
            }
            raw++;
        }
    }
    kn_db_done(q);
    if (kn_db_failed(r->db)) {
        return false;
    }
    if (wide) {
        r->target_wide = true;
        const char *why = kn_printf(x->a,
                                    "the target '%s' has more values than the client reads from the database "
                                    "(--max-groups %llu)",
                                    c->name, r->cap);
        kn_sink_data_skip(x->sink, KN_R_LONE_FEATURE_SEPARATES, "", "all", why);
        kn_sink_data_skip(x->sink, KN_R_MISSINGNESS_PREDICTS, "", "all", why);
        kn_sink_data_skip(x->sink, KN_R_IDENTIFIER_SEGMENT_PREDICTS, "", "all", why);
        x->target_said = true;
        bool typed = c->type != KN_TYPE_UNSET || c->format;
        return !(typed && (c->format || !typed_by_engine(r, c->type, kind))) || stream_values(r, i);
    }
    take_values(r, c, tc, &f);
    /* Two raw values that are two classes (as prepare() in data_stats.c
     * names them: a boolean as true/false, the positive class the one that
     * sorts last, or true). */
    if (raw == 2) {
        const char *norm[2];
        for (int k = 0; k < 2; k++) {
            bool b;
            norm[k] = r->raw[k];
            if (c->type == KN_TYPE_BOOLEAN &&
                kn_value_boolean(r->raw[k], strlen(r->raw[k]), &b) == KN_VALUE_OK) {
                norm[k] = b ? "true" : "false";
            }
        }
        if (strcmp(norm[0], norm[1]) != 0) {
            r->rank_ok = true;
            bool first_positive = strcmp(norm[0], norm[1]) > 0;
            if (c->type == KN_TYPE_BOOLEAN &&
                (strcmp(norm[0], "true") == 0 || strcmp(norm[1], "true") == 0)) {
                first_positive = strcmp(norm[0], "true") == 0;
            }
            r->raw_positive[0] = first_positive;
            r->raw_positive[1] = !first_positive;
        }
    }
    return true;
}

/* The target's rows per value in the sample: the sample's size, and the
 * rows of the two raw values there (which the rank sums must add up to). */
static bool sample_counts(db_run *r)
{
    kn_dx *x = &r->x;
    kn_db_rows *q = query_on(r, &r->stats,
                             kn_sql_groups_query(x->a, r->d, NULL, r->stats.query_sql, x->t.target->name, NULL,
                                                 r->cap + 1),
                             "cannot count the rows of the sample");
    if (!q) {
        return false;
    }
    uint64_t total = 0, got[2] = {0, 0};
    while (kn_db_next(q)) {
        uint64_t n;
        if (!count_at(r, q, 1, &n) || n > x->t.rows - total) {
            kn_db_done(q);
            if (!kn_db_failed(r->db)) {
                fputs("knowable: the database's sample has more rows than its table\n", r->err);
            }
            return false;
        }
        total += n;
        size_t len;
        const char *v = kn_db_get(q, 0, &len);
        for (int k = 0; k < 2 && v; k++) {
            if (r->raw[k] && strlen(r->raw[k]) == len && memcmp(r->raw[k], v, len) == 0) {
                got[k] = n;
            }
        }
    }
    kn_db_done(q);
    if (kn_db_failed(r->db)) {
        return false;
    }
    r->sample_rows = total;
    r->raw_rows[0] = got[0];
    r->raw_rows[1] = got[1];
    return true;
}

/* ---- the counted rules ----------------------------------------------------------- */

static bool late(db_run *r)
{
    kn_dx *x = &r->x;
    const kn_rulebook *rb = x->ctx->rulebook;
    for (size_t i = 0; i < x->t.n_cols && x->t.moment; i++) {
        kn_tcol *c = &x->t.cols[i];
        if (!c->timed) {
            continue;
        }
        /* typed columns: "missing" is NULL alone (as for the rank sums) */
        bool col_null = null_only(r, r->kinds[c->field]) == KN_SQL_COL_NULL_ONLY;
        bool moment_null = null_only(r, r->kinds[x->t.moment->field]) == KN_SQL_COL_NULL_ONLY;
        unsigned nulls = (col_null ? KN_SQL_COL_NULL_ONLY : 0) | (moment_null ? KN_SQL_MOMENT_NULL_ONLY : 0);
        kn_db_rows *q = query(r,
                              kn_sql_late_query(x->a, r->d, rb, r->table, r->query_sql, c->name,
                                                x->t.moment->name, r->key, nulls),
                              kn_printf(x->a, "cannot compare '%s' with the moment", c->name));
        if (!q) {
            return false;
        }
        uint64_t n = 0;
        bool ok = true;
        if (kn_db_next(q) && (ok = count_at(r, q, 0, &n)) && n) {
            size_t len;
            const char *v = kn_db_get(q, 1, &len);
            c->late.count = n;
            c->late.value = kn_printf(x->a, "%.40s%s", v ? v : "NULL", len > 40 ? "..." : "");
            v = kn_db_get(q, 2, &len);
            c->late.other = kn_printf(x->a, "%.40s%s", v ? v : "NULL", len > 40 ? "..." : "");
            if (r->key && (v = kn_db_get(q, 3, &len))) {
                c->late.key = kn_strndup(x->a, v, len);
            }
        }
        kn_db_done(q);
        if (!ok || kn_db_failed(r->db)) {
            return false;
        }
    }
    return true;
}

/* One overlap query (kn_sql_overlap_query) into *res; with key (or an
 * entity) its first_key too. */
static bool overlap_query(db_run *r, const char *const *cols, size_t n, bool entity, const char *key,
                          bool hash_rows, kn_overlap_result *res)
{
    kn_dx *x = &r->x;
    kn_db_rows *q = query(r,
                          kn_sql_overlap_query(x->a, r->d, x->ctx->rulebook, r->table, r->query_sql,
                                               x->t.split->name, cols, n, entity, key,
                                               r->have_sides ? &r->sides : NULL, hash_rows),
                          entity ? "cannot count the entities on each side of the split"
                                 : "cannot count the feature rows on each side of the split");
    if (!q) {
        return false;
    }
    memset(res, 0, sizeof *res);
    if (kn_db_next(q)) {
        uint64_t v[5];
        for (size_t i = 0; i < 5; i++) {
            if (!count_at(r, q, i, &v[i])) {
                kn_db_done(q);
                return false;
            }
        }
        res->train_rows = (size_t)v[0];
        res->test_rows = (size_t)v[1];
        res->shared_keys = (size_t)v[2];
        res->train_rows_shared = (size_t)v[3];
        res->test_rows_shared = (size_t)v[4];
        size_t len;
        const char *k = entity || key ? kn_db_get(q, 5, &len) : NULL;
        res->first_key = k ? kn_strndup(x->a, k, len) : NULL;
    }
    kn_db_done(q);
    return !kn_db_failed(r->db);
}

/* Feature rows (or entities) on both sides of the split.  The feature
 * rows are counted without the least key of a shared row (a text kept
 * for each of the groups, nearly one a row): only when some are shared
 * is the grouping run again for it. */
static bool overlap(db_run *r, kn_overlap *o, const char *const *cols, size_t n, bool entity)
{
    kn_overlap_result res;
    /* PostgreSQL's hash of a row needs version 14 and an extended hash
     * for every column's type (money, xml and the geometric types have
     * none): tried on one row first */
    bool hash_rows = r->d == KN_SQL_POSTGRESQL && n > 1 &&
                     kn_db_try(r->db, kn_sql_hash_probe(r->x.a, r->d, r->table, r->query_sql, cols, n));
    if (!overlap_query(r, cols, n, entity, NULL, hash_rows, &res)) {
        return false;
    }
    if (!entity && r->key && res.shared_keys) {
        kn_overlap_result with_key;
        if (!overlap_query(r, cols, n, false, r->key, hash_rows, &with_key)) {
            return false;
        }
        res.first_key = with_key.first_key;
    }
    kn_overlap_set(o, &res);
    return true;
}

/* Sets how the engine groups, where the dialect asks for it
 * (kn_sql_grouping). */
static bool grouping(db_run *r, kn_sql_grouping_mode m)
{
    const char *sql = kn_sql_grouping(r->d, m);
    kn_db_rows *q = sql ? query(r, sql, "cannot choose how the engine groups") : NULL;
    if (q) {
        kn_db_done(q);
    }
    return !sql || q;
}

static bool counted(db_run *r)
{
    kn_dx *x = &r->x;
    kn_table *t = &x->t;
    if (!late(r)) {
        return false;
    }
    if (t->shared_rows) {
        const char **feats = kn_alloc_array(x->a, t->n_cols + 1, sizeof *feats);
        size_t nf = 0;
        for (size_t i = 0; i < t->n_cols; i++) {
            if (t->cols[i].feature) {
                feats[nf++] = t->cols[i].name;
            }
        }
        if (!grouping(r, KN_SQL_GROUP_BY_SORT) || !overlap(r, t->shared_rows, feats, nf, false) ||
            !grouping(r, KN_SQL_GROUP_BY_SORT_END)) {
            return false;
        }
    }
    if (t->shared_ents &&
        (!grouping(r, KN_SQL_GROUP_IN_MEMORY) || !overlap(r, t->shared_ents, &t->entity->name, 1, true) ||
         !grouping(r, KN_SQL_GROUP_IN_MEMORY_END))) {
        return false;
    }
    if (t->qi_groups) {
        const char **qis = kn_alloc_array(x->a, t->n_cols + 1, sizeof *qis);
        size_t nq = 0;
        for (size_t i = 0; i < t->n_cols; i++) {
            if (x->decl[i]->quasi_identifier == 1) {
                qis[nq++] = t->cols[i].name;
            }
        }
        kn_db_rows *q = query(r, kn_sql_qi_query(x->a, r->d, r->table, r->query_sql, qis, nq),
                              "cannot count the quasi-identifier groups");
        if (!q) {
            return false;
        }
        while (kn_db_next(q)) {
            uint64_t size, groups;
            if (!count_at(r, q, 0, &size) || !count_at(r, q, 1, &groups)) {
                kn_db_done(q);
                return false;
            }
            kn_groups_add_sizes(t->qi_groups, (size_t)size, (size_t)groups);
        }
        kn_db_done(q);
        if (kn_db_failed(r->db)) {
            return false;
        }
    }
    return true;
}

/* ---- the check ---------------------------------------------------------------------- */

static bool present(void *ctx, const kn_column *k)
{
    const kn_dx *x = ctx;
    for (size_t i = 0; i < x->t.n_cols; i++) {
        if (x->decl[i] == k) {
            return true;
        }
    }
    return false;
}

/* The split column's values and their rows, at most cap of them: the
 * table's rows and the values of each side (r->sides).  1 when read, 0
 * when the column has more values (the rows are then counted apart and
 * the queries test each row's text), -1 on an error. */
static int split_values(db_run *r, uint64_t *rows)
{
    kn_dx *x = &r->x;
    kn_db_rows *q = query(
        r, kn_sql_split_values_query(x->a, r->d, r->table, r->query_sql, x->t.split->name, r->cap + 1),
        "cannot count the rows of each split value");
    if (!q) {
        return -1;
    }
    kn_vec *side[2] = {kn_vec_new(x->a, sizeof(const char *)), kn_vec_new(x->a, sizeof(const char *))};
    uint64_t total = 0;
    unsigned long long n = 0;
    int got = 1;
    while (kn_db_next(q)) {
        uint64_t k;
        if (++n > r->cap) {
            got = 0;
            break;
        }
        if (!count_at(r, q, 1, &k) || total > UINT64_MAX - k) {
            got = -1;
            break;
        }
        total += k;
        size_t len;
        const char *v = kn_db_get(q, 0, &len);
        unsigned s = v ? kn_split_side(v, len) : 0;
        if (s) {
            const char *copy = kn_strndup(x->a, v, len);
            kn_vec_push(side[s - 1], &copy);
        }
    }
    kn_db_done(q);
    if (kn_db_failed(r->db)) {
        return -1;
    }
    if (got <= 0) {
        return got;
    }
    for (int s = 0; s < 2; s++) {
        r->sides.values[s] = side[s]->data;
        r->sides.n[s] = side[s]->len;
    }
    r->have_sides = true;
    *rows = total;
    return 1;
}

static bool run_checks(db_run *r, const char *data)
{
    kn_dx *x = &r->x;
    r->db = kn_db_open(x->a, data, r->err);
    if (!r->db) {
        return false;
    }
    r->d = kn_db_dialect(r->db);

    /* The header: the result's column names and SQL kinds. */
    kn_db_rows *q =
        query(r, kn_sql_columns_query(x->a, r->d, r->table, r->query_sql), "cannot read the columns");
    if (!q) {
        return false;
    }
    size_t n = kn_db_columns(q);
    kn_csv_field *fields = kn_alloc_array(x->a, n + 1, sizeof *fields);
    kn_db_type *kinds = kn_alloc_array(x->a, n + 1, sizeof *kinds);
    for (size_t i = 0; i < n; i++) {
        fields[i].ptr = kn_strdup(x->a, kn_db_column_name(q, i));
        fields[i].len = strlen(fields[i].ptr);
        kinds[i] = kn_db_column_type(q, i);
    }
    kn_db_done(q);
    kn_csv_row header = {fields, n, n, 0, 0, 0, 0};
    kn_dx_read_header(x, &header);
    const kn_column *key = kn_sql_key_column(x->s, present, x);
    r->key = key ? key->name : NULL;
    x->key_name = r->key;

    r->kinds = kinds;
    uint64_t rows = 0;
    bool ok = false;
    if (x->t.split && (x->t.shared_rows || x->t.shared_ents)) {
        /* The rows counted per split value: the values of each side,
         * classified here as the CSV path does (kn_split_side), so that
         * the overlap queries compare the column with them. */
        int got = split_values(r, &rows);
        if (got < 0) {
            return false;
        }
        ok = got > 0;
    }
    if (!ok) {
        q = query(r, kn_sql_count_query(x->a, r->d, r->table, r->query_sql), "cannot count the rows");
        if (!q) {
            return false;
        }
        ok = kn_db_next(q) && count_at(r, q, 0, &rows);
        kn_db_done(q);
    }
    if (!ok) {
        if (!kn_db_failed(r->db)) {
            fputs("knowable: the database sent no row count\n", r->err);
        }
        return false;
    }
    x->t.rows = rows;
    r->stats = r->all;
    r->sample_rows = rows;

    if (x->t.target) {
        size_t ti = (size_t)(x->t.target - x->t.cols);
        r->target_kind = kinds[x->t.target->field];
        if (!target(r, ti, kinds[x->t.target->field])) {
            return false;
        }
        if (!r->target_wide && rows > (uint64_t)x->max_rows) {
            /* the statistics on a sample of about --max-rows rows */
            sample_of(r, (double)x->max_rows / (double)rows, (unsigned long long)x->max_rows, &r->stats);
            r->sampled = true;
            if (!sample_counts(r)) {
                return false;
            }
        }
    }
    for (size_t i = 0; i < x->t.n_cols; i++) {
        if (&x->t.cols[i] != x->t.target && !column(r, i, kinds[x->t.cols[i].field])) {
            return false;
        }
    }
    return counted(r);
}

void kn_check_database(kn_ctx *c, const kn_schema *s, const char *data, const char *table,
                       const char *query_label, const char *query_sql, long long max_rows, long long max_groups,
                       uint64_t seed, FILE *err)
{
    db_run r;
    memset(&r, 0, sizeof r);
    kn_dx *x = &r.x;
    x->ctx = c;
    x->s = s;
    x->a = c->arena;
    x->sink = c->sink;
    x->database = true;
    x->max_rows = max_rows > 0 ? max_rows : KN_DATA_MAX_ROWS;
    x->seed = seed;
    r.cap = max_groups > 0 ? (unsigned long long)max_groups : KN_SQL_MAX_GROUPS;
    r.err = err;
    r.table = table;
    r.query_sql = table ? NULL : query_sql;
    r.all = (source){r.table, r.query_sql, NULL};
    r.shown = table ? table : query_label;
    x->path = kn_printf(x->a, "%s/%s", kn_odbc_display(x->a, data), table ? table : query_label);
    x->t.a = x->a;
    x->t.max_rows = 1;
    x->t.seed = seed;
    x->t.strict_moment = c->rulebook->strict_moment;
    kn_missing_init(&x->t.missing, c->rulebook->missing_values, c->rulebook->n_missing_values);

    x->t.match_context = kn_regex_limited_context(x->a);

    if (!run_checks(&r, data)) {
        failed(&r);
        return;
    }
    kn_data_values(x);
    kn_data_split(x);
    kn_sink_set_sample(x->sink, (unsigned long long)r.sample_rows, (unsigned long long)x->t.rows);
    if (getenv("KNOWABLE_ODBC_TRAFFIC")) {
        uint64_t rows, bytes;
        kn_db_traffic(r.db, &rows, &bytes);
        fprintf(err, "knowable: %llu rows and %llu bytes of values came from the database\n",
                (unsigned long long)rows, (unsigned long long)bytes);
    }
}
