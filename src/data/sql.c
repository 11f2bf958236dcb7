/* sql.c - the data checks as aggregate SQL (sql.h). */
#include "sql.h"

#include <stdint.h>
#include <string.h>

#include "../util/text.h"

bool kn_sql_dialect_parse(const char *name, kn_sql_dialect *out)
{
    static const struct {
        const char *name;
        kn_sql_dialect d;
    } t[] = {{"ansi", KN_SQL_ANSI}, {"postgresql", KN_SQL_POSTGRESQL}, {"mysql", KN_SQL_MYSQL}, {"sqlite", KN_SQL_SQLITE}};
    for (size_t i = 0; i < sizeof t / sizeof *t; i++) {
        if (strcmp(name, t[i].name) == 0) {
            *out = t[i].d;
            return true;
        }
    }
    return false;
}

const char *kn_sql_dialect_name(kn_sql_dialect d)
{
    switch (d) {
    case KN_SQL_POSTGRESQL:
        return "postgresql";
    case KN_SQL_MYSQL:
        return "mysql";
    case KN_SQL_SQLITE:
        return "sqlite";
    case KN_SQL_ANSI:
        break;
    }
    return "ansi";
}

/* ---- text built in the arena ---------------------------------------------- */

typedef struct sbuf {
    kn_arena *a;
    char *p;
    size_t len, cap;
} sbuf;

static void put(sbuf *b, const char *s, size_t n)
{
    if (n > SIZE_MAX / 4 - b->len) {
        kn_arena_oom(b->a); /* the doubling below would overflow */
    }
    if (b->len + n + 1 > b->cap) {
        size_t cap = b->cap ? b->cap : 128;
        while (b->len + n + 1 > cap) {
            cap *= 2;
        }
        char *p = kn_alloc(b->a, cap);
        if (b->len) {
            memcpy(p, b->p, b->len);
        }
        b->p = p;
        b->cap = cap;
    }
    memcpy(b->p + b->len, s, n);
    b->len += n;
    b->p[b->len] = '\0';
}

static void puts_(sbuf *b, const char *s)
{
    put(b, s, strlen(s));
}

/* s between q characters, each q inside doubled (and, with bs, each
 * backslash doubled). */
static void quoted(sbuf *b, const char *s, char q, bool bs)
{
    put(b, &q, 1);
    for (const char *p = s; *p; p++) {
        if (*p == q || (bs && *p == '\\')) {
            put(b, p, 1);
        }
        put(b, p, 1);
    }
    put(b, &q, 1);
}

static void ident(sbuf *b, kn_sql_dialect d, const char *name)
{
    quoted(b, name, d == KN_SQL_MYSQL ? '`' : '"', false);
}

static void literal(sbuf *b, kn_sql_dialect d, const char *s)
{
    quoted(b, s, '\'', d == KN_SQL_MYSQL);
}

char *kn_sql_ident(kn_arena *a, kn_sql_dialect d, const char *name)
{
    sbuf b = {a, NULL, 0, 0};
    ident(&b, d, name);
    return b.p;
}

char *kn_sql_literal(kn_arena *a, kn_sql_dialect d, const char *s)
{
    sbuf b = {a, NULL, 0, 0};
    literal(&b, d, s);
    return b.p;
}

/* The table, each dot-separated part quoted; or (--query) the query as a
 * derived table. */
static void from(sbuf *b, kn_sql_dialect d, const char *table, const char *query_sql)
{
    puts_(b, " FROM ");
    if (query_sql) {
        puts_(b, "(");
        size_t n = strlen(query_sql);
        while (n && (query_sql[n - 1] == ';' || query_sql[n - 1] == ' ' || query_sql[n - 1] == '\n' ||
                     query_sql[n - 1] == '\r' || query_sql[n - 1] == '\t')) {
            n--;
        }
        put(b, query_sql, n);
        puts_(b, "\n) AS ");
        ident(b, d, "knowable_rows");
        return;
    }
    const char *p = table;
    for (;;) {
        const char *dot = strchr(p, '.');
        size_t n = dot ? (size_t)(dot - p) : strlen(p);
        sbuf part = {b->a, NULL, 0, 0};
        put(&part, p, n);
        ident(b, d, part.p ? part.p : "");
        if (!dot) {
            break;
        }
        puts_(b, ".");
        p = dot + 1;
    }
}

/* CAST(col AS <text type>): values compared as text with the CSV path's
 * missing markers and split words. */
static void as_text(sbuf *b, kn_sql_dialect d, const char *col)
{
    puts_(b, "CAST(");
    ident(b, d, col);
    switch (d) {
    case KN_SQL_POSTGRESQL:
    case KN_SQL_SQLITE:
        puts_(b, " AS TEXT)");
        break;
    case KN_SQL_MYSQL:
        puts_(b, " AS CHAR)");
        break;
    case KN_SQL_ANSI:
        puts_(b, " AS VARCHAR(4000))");
        break;
    }
}

/* The split column's value as it is grouped and compared: on MySQL and
 * MariaDB in a binary collation, so that a collation that ignores case or
 * accents does not put 'tést' with 'test' (the CSV path tells them
 * apart); the column itself elsewhere. */
static void split_value(sbuf *b, kn_sql_dialect d, const char *split)
{
    if (d == KN_SQL_MYSQL) {
        puts_(b, "CONVERT(");
        ident(b, d, split);
        puts_(b, " USING utf8mb4) COLLATE utf8mb4_bin");
    } else {
        ident(b, d, split);
    }
}

/* Whether the split column says side (the words of kn_split_side, any
 * case, spaces around ignored).  With sides (the column's raw values,
 * classified in C), the column is compared with those of the side: no
 * text function runs on each row. */
static void side_test(sbuf *b, kn_sql_dialect d, const char *split, bool test, const kn_sql_sides *sides)
{
    if (sides) {
        size_t k = test ? 1 : 0;
        if (!sides->n[k]) {
            puts_(b, "1 = 0");
            return;
        }
        split_value(b, d, split);
        puts_(b, " IN (");
        for (size_t i = 0; i < sides->n[k]; i++) {
            if (i) {
                puts_(b, ", ");
            }
            literal(b, d, sides->values[k][i]);
        }
        puts_(b, ")");
        return;
    }
    static const char *const train[] = {"train", "training"};
    static const char *const tests[] = {"test", "testing", "holdout", "validation", "valid", "val", "eval"};
    const char *const *w = test ? tests : train;
    size_t n = test ? sizeof tests / sizeof *tests : sizeof train / sizeof *train;
    puts_(b, "LOWER(TRIM(");
    if (d == KN_SQL_MYSQL) {
        split_value(b, d, split);
    } else {
        as_text(b, d, split);
    }
    puts_(b, ")) IN (");
    for (size_t i = 0; i < n; i++) {
        if (i) {
            puts_(b, ", ");
        }
        literal(b, d, w[i]);
    }
    puts_(b, ")");
}

/* 1 when the split column says side, else 0, summed. */
static void side_sum(sbuf *b, kn_sql_dialect d, const char *split, bool test, const kn_sql_sides *sides)
{
    puts_(b, "SUM(CASE WHEN ");
    side_test(b, d, split, test, sides);
    puts_(b, " THEN 1 ELSE 0 END)");
}

/* The CSV path's "missing": NULL, or one of the rulebook's markers,
 * spaces around ignored, without regard to ASCII case. */
static void missing_test(sbuf *b, kn_sql_dialect d, const kn_rulebook *rb, const char *col)
{
    ident(b, d, col);
    puts_(b, " IS NULL");
    if (rb->n_missing_values) {
        puts_(b, " OR LOWER(TRIM(");
        as_text(b, d, col);
        puts_(b, ")) IN (");
        for (size_t i = 0; i < rb->n_missing_values; i++) {
            if (i) {
                puts_(b, ", ");
            }
            char *low = kn_strdup(b->a, rb->missing_values[i]);
            for (char *p = low; *p; p++) {
                if (*p >= 'A' && *p <= 'Z') {
                    *p = (char)(*p - 'A' + 'a');
                }
            }
            literal(b, d, low);
        }
        puts_(b, ")");
    }
}

/* missing_test, or only "col IS NULL" when null_only (a column whose SQL
 * type cannot hold the text of any marker: the caller knows), with nan
 * "or col = 'NaN'" (a marker spells NaN). */
static void missing_or_null(sbuf *b, kn_sql_dialect d, const kn_rulebook *rb, const char *col, bool null_only,
                            bool nan)
{
    if (null_only) {
        ident(b, d, col);
        puts_(b, " IS NULL");
        if (nan) {
            /* PostgreSQL's floating and numeric NaN, whose text is 'NaN' */
            puts_(b, " OR ");
            ident(b, d, col);
            puts_(b, " = 'NaN'");
        }
    } else {
        missing_test(b, d, rb, col);
    }
}

/* At most n rows of the result. */
static void limit(sbuf *b, kn_sql_dialect d, unsigned long long n)
{
    char num[32];
    snprintf(num, sizeof num, "%llu", n);
    puts_(b, d == KN_SQL_ANSI ? " FETCH FIRST " : " LIMIT ");
    puts_(b, num);
    puts_(b, d == KN_SQL_ANSI ? " ROWS ONLY" : "");
}

/* A uniform number in [0, 1) for each row (MySQL's from a seed, so that
 * the same scan draws the same rows; PostgreSQL's after setseed,
 * kn_sql_seed_query; SQLite's sample is drawn otherwise,
 * kn_sql_sample_query). */
static void random_unit(sbuf *b, kn_sql_dialect d, uint64_t seed)
{
    char num[32];
    switch (d) {
    case KN_SQL_POSTGRESQL:
        puts_(b, "random()");
        break;
    case KN_SQL_MYSQL:
        snprintf(num, sizeof num, "RAND(%llu)", (unsigned long long)(seed % 1000000007u));
        puts_(b, num);
        break;
    case KN_SQL_SQLITE:
    case KN_SQL_ANSI:
        puts_(b, "RAND()");
        break;
    }
}

static bool has_control(const char *s)
{
    for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
        if (*p < 0x20 || *p == 0x7f) {
            return true;
        }
    }
    return false;
}

/* ---- the queries of the data checks ----------------------------------------- */

char *kn_sql_count_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql)
{
    sbuf b = {a, NULL, 0, 0};
    puts_(&b, "SELECT COUNT(*) AS n_rows");
    from(&b, d, table, query_sql);
    return b.p;
}

char *kn_sql_seed_query(kn_arena *a, kn_sql_dialect d, uint64_t seed)
{
    if (d != KN_SQL_POSTGRESQL) {
        return NULL;
    }
    return kn_printf(a, "SELECT setseed(%.6f)", (double)(seed % 1000000u) / 1000000.0);
}

/* "COL AS v" and, with a target, ", TARGET AS t". */
static void value_and_target(sbuf *b, kn_sql_dialect d, const char *col, const char *target)
{
    ident(b, d, col);
    puts_(b, " AS v");
    if (target) {
        puts_(b, ", ");
        ident(b, d, target);
        puts_(b, " AS t");
    }
}

char *kn_sql_groups_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql, const char *col,
                          const char *target, unsigned long long max_rows)
{
    sbuf b = {a, NULL, 0, 0};
    puts_(&b, "SELECT ");
    value_and_target(&b, d, col, target);
    puts_(&b, ", COUNT(*) AS n");
    from(&b, d, table, query_sql);
    puts_(&b, " GROUP BY ");
    ident(&b, d, col);
    if (target) {
        puts_(&b, ", ");
        ident(&b, d, target);
    }
    if (max_rows) {
        limit(&b, d, max_rows);
    }
    return b.p;
}

char *kn_sql_split_values_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql,
                                const char *split, unsigned long long max_rows)
{
    if (d != KN_SQL_MYSQL) {
        return kn_sql_groups_query(a, d, table, query_sql, split, NULL, max_rows);
    }
    sbuf b = {a, NULL, 0, 0};
    puts_(&b, "SELECT ");
    split_value(&b, d, split);
    puts_(&b, " AS v, COUNT(*) AS n");
    from(&b, d, table, query_sql);
    puts_(&b, " GROUP BY ");
    split_value(&b, d, split);
    limit(&b, d, max_rows);
    return b.p;
}

char *kn_sql_sample_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql, double p,
                          uint64_t seed, kn_sql_sampling how)
{
    sbuf b = {a, NULL, 0, 0};
    char num[128];
    puts_(&b, "SELECT *");
    if (d == KN_SQL_POSTGRESQL && how != KN_SQL_SAMPLE_SCAN && table && !query_sql) {
        /* each row (or each page) is kept by a hash of its place and the
         * seed: the same rows for every query, whatever order the scan
         * takes */
        from(&b, d, table, NULL);
        snprintf(num, sizeof num, " TABLESAMPLE %s (%.17g) REPEATABLE (%llu)",
                 how == KN_SQL_SAMPLE_PAGES ? "SYSTEM" : "BERNOULLI", 100.0 * p,
                 (unsigned long long)(seed % 1000000007u));
        puts_(&b, num);
        return b.p;
    }
    if (d == KN_SQL_SQLITE) {
        /* SQLite's random() takes no seed: each row's number in the scan,
         * mixed (a multiply, a square, a multiply modulo the prime
         * 2^31 - 1), compared with p of the range */
        puts_(&b, " FROM (SELECT *, row_number() OVER () AS knowable_row");
        from(&b, d, table, query_sql);
        snprintf(num, sizeof num, "(((knowable_row + %llu) * 48271) %% 2147483647)",
                 (unsigned long long)(seed % 1000000007u));
        puts_(&b, ") AS ");
        ident(&b, d, "knowable_numbered");
        puts_(&b, " WHERE (((");
        puts_(&b, num);
        puts_(&b, " * ");
        puts_(&b, num);
        snprintf(num, sizeof num, ") %% 2147483647) * 16807) %% 2147483647 < %.0f", p * 2147483647.0);
        puts_(&b, num);
        return b.p;
    }
    from(&b, d, table, query_sql);
    puts_(&b, " WHERE ");
    random_unit(&b, d, seed);
    snprintf(num, sizeof num, " < %.17g", p);
    puts_(&b, num);
    if (d == KN_SQL_POSTGRESQL) {
        /* the test runs on every row, in the scan, before any other */
        puts_(&b, " OFFSET 0");
    }
    return b.p;
}

/* The Mann-Whitney rank sum of col against a binary target, by the
 * engine: per distinct value v, its positive rows p and negative rows q;
 * ascending in v, twice U grows by p (2 q_below + q), where q_below is
 * the negatives of lower values (one window sum): kn_rank_step's sum
 * (src/data/stats.h).  The missing values of col form the group v = NULL,
 * left out of the sums and counted apart (missingness-predicts), so one
 * GROUP BY and one sort serve both. */
char *kn_sql_rank_sum_query(kn_arena *a, kn_sql_dialect d, const kn_rulebook *rb, const char *table,
                            const char *query_sql, const char *col, const char *target, const char *positive,
                            const char *negative, unsigned null_only)
{
    sbuf b = {a, NULL, 0, 0};
    puts_(&b, "SELECT SUM(CASE WHEN v IS NOT NULL THEN p * (2 * COALESCE(q_below, 0) + q) END) AS two_u,\n"
              "       SUM(CASE WHEN v IS NOT NULL THEN p END) AS n_pos, SUM(CASE WHEN v IS NOT NULL THEN q END) AS n_neg,\n"
              "       SUM(CASE WHEN v IS NULL THEN p END) AS missing_pos, SUM(CASE WHEN v IS NULL THEN q END) AS missing_neg\n"
              "FROM (SELECT v, p, q,\n             ");
    if (d == KN_SQL_POSTGRESQL) {
        /* PostgreSQL sums bigints into numerics, slow on every row: the
         * running count in a double instead (exact below 2^53 rows), the
         * products in bigints */
        puts_(&b, "CAST(SUM(CASE WHEN v IS NOT NULL THEN CAST(q AS DOUBLE PRECISION) END) OVER (ORDER BY v ROWS BETWEEN "
                  "UNBOUNDED PRECEDING AND 1 PRECEDING) AS BIGINT) AS q_below\n");
    } else {
        puts_(&b, "SUM(CASE WHEN v IS NOT NULL THEN q END) OVER (ORDER BY v ROWS BETWEEN UNBOUNDED PRECEDING AND 1 "
                  "PRECEDING) AS q_below\n");
    }
    puts_(&b, "      FROM (SELECT ");
    sbuf v = {a, NULL, 0, 0};
    puts_(&v, "CASE WHEN ");
    missing_or_null(&v, d, rb, col, null_only & KN_SQL_COL_NULL_ONLY, null_only & KN_SQL_COL_NAN);
    puts_(&v, " THEN NULL ELSE ");
    if (null_only & KN_SQL_COL_FLOAT) {
        /* the CSV path keeps a number as a 4-byte float (read as a double,
         * then rounded): the same rounding here, so the same values tie */
        puts_(&v, "CAST(CAST(");
        ident(&v, d, col);
        puts_(&v, d == KN_SQL_MYSQL ? " AS DOUBLE) AS FLOAT)" : " AS DOUBLE PRECISION) AS REAL)");
    } else {
        ident(&v, d, col);
    }
    puts_(&v, " END");
    puts_(&b, v.p);
    puts_(&b, " AS v,\n                   SUM(CASE WHEN ");
    ident(&b, d, target);
    puts_(&b, " = ");
    literal(&b, d, positive);
    puts_(&b, " THEN 1 ELSE 0 END) AS p,\n                   SUM(CASE WHEN ");
    ident(&b, d, target);
    puts_(&b, " = ");
    literal(&b, d, negative);
    puts_(&b, " THEN 1 ELSE 0 END) AS q\n           ");
    from(&b, d, table, query_sql);
    puts_(&b, "\n            WHERE NOT (");
    missing_or_null(&b, d, rb, target, null_only & KN_SQL_TARGET_NULL_ONLY, false);
    puts_(&b, ")\n            GROUP BY ");
    puts_(&b, v.p);
    puts_(&b, ") AS ");
    ident(&b, d, "levels");
    puts_(&b, ") AS ");
    ident(&b, d, "ranked");
    return b.p;
}

char *kn_sql_missing_query(kn_arena *a, kn_sql_dialect d, const kn_rulebook *rb, const char *table,
                           const char *query_sql, const char *col, const char *target, unsigned null_only)
{
    sbuf b = {a, NULL, 0, 0};
    puts_(&b, "SELECT ");
    if (target) {
        ident(&b, d, target);
        puts_(&b, " AS t, ");
    }
    puts_(&b, "SUM(CASE WHEN ");
    missing_or_null(&b, d, rb, col, null_only & KN_SQL_COL_NULL_ONLY, null_only & KN_SQL_COL_NAN);
    puts_(&b, " THEN 1 ELSE 0 END) AS n_missing, COUNT(*) AS n");
    from(&b, d, table, query_sql);
    if (target) {
        puts_(&b, " GROUP BY ");
        ident(&b, d, target);
    }
    return b.p;
}

/* The condition of a late value: col later than the moment (or not
 * earlier, strict), neither missing. */
static void late_test(sbuf *b, kn_sql_dialect d, const kn_rulebook *rb, const char *col, const char *moment,
                      unsigned null_only)
{
    ident(b, d, col);
    puts_(b, rb->strict_moment ? " >= " : " > ");
    ident(b, d, moment);
    puts_(b, " AND NOT (");
    missing_or_null(b, d, rb, col, null_only & KN_SQL_COL_NULL_ONLY, false);
    puts_(b, ") AND NOT (");
    missing_or_null(b, d, rb, moment, null_only & KN_SQL_MOMENT_NULL_ONLY, false);
    puts_(b, ")");
}

/* One scan: the late rows counted by a window over all of them, the one
 * with the least key (or value) kept. */
char *kn_sql_late_query(kn_arena *a, kn_sql_dialect d, const kn_rulebook *rb, const char *table,
                        const char *query_sql, const char *col, const char *moment, const char *key,
                        unsigned null_only)
{
    sbuf b = {a, NULL, 0, 0};
    puts_(&b, "SELECT COUNT(*) OVER () AS n, ");
    ident(&b, d, col);
    puts_(&b, " AS v, ");
    ident(&b, d, moment);
    puts_(&b, " AS m");
    if (key) {
        puts_(&b, ", ");
        ident(&b, d, key);
        puts_(&b, " AS k");
    }
    from(&b, d, table, query_sql);
    puts_(&b, " WHERE ");
    late_test(&b, d, rb, col, moment, null_only);
    puts_(&b, " ORDER BY ");
    ident(&b, d, key ? key : col);
    if (key) {
        /* rows of one key in the same order every time */
        puts_(&b, ", ");
        ident(&b, d, col);
    }
    limit(&b, d, 1);
    return b.p;
}

char *kn_sql_key_of_value(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql, const char *col,
                          const char *key, const char *value)
{
    sbuf b = {a, NULL, 0, 0};
    puts_(&b, "SELECT MIN(");
    ident(&b, d, key);
    puts_(&b, ") AS k");
    from(&b, d, table, query_sql);
    puts_(&b, " WHERE ");
    as_text(&b, d, col);
    puts_(&b, " = ");
    literal(&b, d, value);
    return b.p;
}

/* ---- the plan --------------------------------------------------------------- */

typedef struct plan_ctx {
    kn_arena *a;
    kn_sql_dialect d;
    const char *table, *query_sql;
    kn_vec *q;
} plan_ctx;

static void add(plan_ctx *c, kn_sql_kind kind, const char *rules, const kn_column *col, const char *comment,
                const char *text)
{
    kn_sql_query q = {kind, rules, comment, text, col};
    kn_vec_push(c->q, &q);
}

/* A usable column: declared without its own error, with a name SQL can
 * carry in a comment. */
static const kn_column *usable(const kn_column *k)
{
    return k && !k->broken && !has_control(k->name) ? k : NULL;
}

static const char *type_name(kn_value_type t)
{
    switch (t) {
    case KN_TYPE_NUMBER:
        return "number";
    case KN_TYPE_CATEGORY:
        return "category";
    case KN_TYPE_BOOLEAN:
        return "boolean";
    case KN_TYPE_TEXT:
        return "text";
    case KN_TYPE_TIMESTAMP:
        return "timestamp";
    case KN_TYPE_DATE:
        return "date";
    case KN_TYPE_UNSET:
        break;
    }
    return "untyped";
}

static char *esc(kn_arena *a, const char *s)
{
    return kn_escape_term(a, s, strlen(s));
}

/* Rows of two split sides grouped by the columns cols[0..n): one row with
 * train rows, test rows, keys on both sides, training and test rows whose
 * key is on both sides.  skip_missing leaves out rows whose (single) key
 * is missing: on PostgreSQL the groups whose key is missing (the test of
 * the text runs once per group, not once per row), elsewhere the rows (a
 * collation that ignores case or accents could put a missing marker and a
 * value in one group). */
static char *overlap_sql(plan_ctx *c, const kn_rulebook *rb, const char *split, const char *const *cols, size_t n,
                         bool skip_missing, const char *key, const kn_sql_sides *sides, bool hash_rows)
{
    sbuf b = {c->a, NULL, 0, 0};
    bool per_group = skip_missing && c->d == KN_SQL_POSTGRESQL;
    puts_(&b, "SELECT SUM(n_train) AS train_rows, SUM(n_test) AS test_rows,\n"
              "       SUM(CASE WHEN n_train > 0 AND n_test > 0 THEN 1 ELSE 0 END) AS shared_keys,\n"
              "       SUM(CASE WHEN n_train > 0 AND n_test > 0 THEN n_train ELSE 0 END) AS train_rows_shared,\n"
              "       SUM(CASE WHEN n_train > 0 AND n_test > 0 THEN n_test ELSE 0 END) AS test_rows_shared");
    if (skip_missing || key) {
        puts_(&b, ",\n       MIN(CASE WHEN n_train > 0 AND n_test > 0 THEN k END) AS first_key");
    }
    puts_(&b, "\nFROM (SELECT ");
    if (skip_missing) {
        ident(&b, c->d, cols[0]);
        puts_(&b, " AS k, ");
    } else if (key) {
        /* the least key of the group's test rows */
        puts_(&b, "MIN(CASE WHEN ");
        side_test(&b, c->d, split, true, sides);
        puts_(&b, " THEN ");
        ident(&b, c->d, key);
        puts_(&b, " END) AS k,\n             ");
    }
    side_sum(&b, c->d, split, false, sides);
    puts_(&b, " AS n_train,\n             ");
    side_sum(&b, c->d, split, true, sides);
    puts_(&b, " AS n_test\n     ");
    from(&b, c->d, c->table, c->query_sql);
    if (skip_missing && !per_group) {
        puts_(&b, "\n      WHERE NOT (");
        missing_test(&b, c->d, rb, cols[0]);
        puts_(&b, ")");
    }
    puts_(&b, "\n      GROUP BY ");
    bool many = c->d == KN_SQL_POSTGRESQL && n > 1;
    bool hashed = many && hash_rows;
    if (hashed) {
        /* nearly a group a row: grouped by a 64-bit hash of the row (as
         * the CSV path decides by one, src/data/hash.h), which a sort
         * orders much faster than the columns themselves */
        puts_(&b, "hash_record_extended(ROW(");
    }
    for (size_t i = 0; i < n; i++) {
        if (i) {
            puts_(&b, ", ");
        }
        if (many && !hashed) {
            /* before PostgreSQL 14, or a type without an extended hash
             * (money) or without equality (xml, point): the text of each
             * value, as the CSV path reads it */
            as_text(&b, c->d, cols[i]);
        } else {
            ident(&b, c->d, cols[i]);
        }
    }
    if (hashed) {
        puts_(&b, "), 0)");
    }
    if (per_group) {
        /* keeps the planner from moving the test below the grouping */
        puts_(&b, " OFFSET 0");
    }
    puts_(&b, ") AS ");
    ident(&b, c->d, "sides");
    if (per_group) {
        puts_(&b, "\nWHERE NOT (");
        missing_test(&b, c->d, rb, "k");
        puts_(&b, ")");
    }
    return b.p;
}

static void session(plan_ctx *cp)
{
    plan_ctx c = *cp;
    kn_arena *a = c.a;
    switch (c.d) {
    case KN_SQL_POSTGRESQL:
        add(&c, KN_SQLQ_SESSION, "", NULL, "the session reads only",
            "SET SESSION CHARACTERISTICS AS TRANSACTION READ ONLY");
        add(&c, KN_SQLQ_SESSION, "", NULL, kn_printf(a, "a statement is cancelled after %d s", KN_SQL_TIMEOUT_SECONDS),
            kn_printf(a, "SET statement_timeout = %d", KN_SQL_TIMEOUT_SECONDS * 1000));
        break;
    case KN_SQL_MYSQL:
        add(&c, KN_SQLQ_SESSION, "", NULL, "the session reads only", "SET SESSION TRANSACTION READ ONLY");
        add(&c, KN_SQLQ_SESSION, "", NULL,
            kn_printf(a, "a statement is cancelled after %d s (MariaDB's variable; MySQL's is max_execution_time, in ms)",
                      KN_SQL_TIMEOUT_SECONDS),
            kn_printf(a, "SET SESSION max_statement_time = %d", KN_SQL_TIMEOUT_SECONDS));
        break;
    case KN_SQL_SQLITE:
        add(&c, KN_SQLQ_SESSION, "", NULL,
            "the connection reads only (the timeout is the ODBC statement attribute; SQLite has no SQL for it)",
            "PRAGMA query_only = ON");
        break;
    case KN_SQL_ANSI:
        add(&c, KN_SQLQ_SESSION, "", NULL,
            "the transaction reads only (set the engine's own statement timeout as well)", "SET TRANSACTION READ ONLY");
        break;
    }
}

const char *kn_sql_grouping(kn_sql_dialect d, kn_sql_grouping_mode m)
{
    if (d != KN_SQL_POSTGRESQL) {
        return NULL;
    }
    /* The session's own value is kept in a variable of the session
     * (knowable.*) and put back after, not RESET: a value the user's
     * connection set stays. */
    switch (m) {
    case KN_SQL_GROUP_BY_SORT:
        return "SELECT set_config('enable_hashagg', 'off', false), saved.was\n"
               "FROM (SELECT set_config('knowable.enable_hashagg', current_setting('enable_hashagg'), false) AS was) "
               "AS saved";
    case KN_SQL_GROUP_BY_SORT_END:
        return "SELECT set_config('enable_hashagg', current_setting('knowable.enable_hashagg'), false)";
    case KN_SQL_GROUP_IN_MEMORY:
        return "SELECT set_config('work_mem', CASE WHEN pg_size_bytes(saved.was) < pg_size_bytes('" KN_SQL_GROUP_MEMORY
               "') THEN '" KN_SQL_GROUP_MEMORY "' ELSE saved.was END, false)\n"
               "FROM (SELECT set_config('knowable.work_mem', current_setting('work_mem'), false) AS was) AS saved";
    case KN_SQL_GROUP_IN_MEMORY_END:
        return "SELECT set_config('work_mem', current_setting('knowable.work_mem'), false)";
    }
    return NULL;
}

char *kn_sql_columns_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql)
{
    sbuf b = {a, NULL, 0, 0};
    puts_(&b, "SELECT *");
    from(&b, d, table, query_sql);
    puts_(&b, " WHERE 1 = 0");
    return b.p;
}

void kn_sql_session(kn_arena *a, kn_sql_dialect d, kn_sql_plan *out)
{
    plan_ctx c = {a, d, NULL, NULL, kn_vec_new(a, sizeof(kn_sql_query))};
    session(&c);
    out->n = c.q->len;
    out->q = c.q->data;
    out->n_skipped = 0;
    out->skipped = NULL;
}

char *kn_sql_overlap_query(kn_arena *a, kn_sql_dialect d, const kn_rulebook *rb, const char *table,
                           const char *query_sql, const char *split, const char *const *cols, size_t n, bool entity,
                           const char *key, const kn_sql_sides *sides, bool hash_rows)
{
    plan_ctx c = {a, d, table, query_sql, NULL};
    return overlap_sql(&c, rb, split, cols, n, entity, entity ? NULL : key, sides, hash_rows);
}

/* cols[0..n) as quoted identifiers, separated by commas. */
static void ident_list(sbuf *b, kn_sql_dialect d, const char *const *cols, size_t n)
{
    for (size_t i = 0; i < n; i++) {
        if (i) {
            puts_(b, ", ");
        }
        ident(b, d, cols[i]);
    }
}

char *kn_sql_hash_probe(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql,
                        const char *const *cols, size_t n)
{
    sbuf b = {a, NULL, 0, 0};
    puts_(&b, "SELECT hash_record_extended(ROW(");
    ident_list(&b, d, cols, n);
    puts_(&b, "), 0) AS h");
    from(&b, d, table, query_sql);
    limit(&b, d, 1);
    return b.p;
}

char *kn_sql_qi_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql,
                      const char *const *cols, size_t n)
{
    sbuf q = {a, NULL, 0, 0};
    puts_(&q, "SELECT group_size, COUNT(*) AS n_groups\nFROM (SELECT COUNT(*) AS group_size\n     ");
    from(&q, d, table, query_sql);
    puts_(&q, "\n      GROUP BY ");
    ident_list(&q, d, cols, n);
    puts_(&q, ") AS ");
    ident(&q, d, "qi_groups");
    puts_(&q, "\nGROUP BY group_size ORDER BY group_size");
    return q.p;
}

/* The column a database finding names a row by: the entity, else the
 * first identifier. */
const kn_column *kn_sql_key_column(const kn_schema *s, bool (*present)(void *ctx, const kn_column *k), void *ctx)
{
    const kn_column *e = usable(KN_REF_COLUMN(s->prediction.entity));
    if (e && (!present || present(ctx, e))) {
        return e;
    }
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *k = usable(s->columns[i]);
        if (k && k->role == KN_ROLE_IDENTIFIER && (!present || present(ctx, k))) {
            return k;
        }
    }
    return NULL;
}

static bool is_temporal_or_number(kn_value_type t)
{
    return t == KN_TYPE_NUMBER || t == KN_TYPE_TIMESTAMP || t == KN_TYPE_DATE;
}

void kn_sql_make(kn_arena *a, const kn_schema *s, const kn_rulebook *rb, const char *table, const char *query_sql,
                 kn_sql_dialect d, unsigned long long max_groups, uint64_t seed, kn_sql_plan *out)
{
    plan_ctx c = {a, d, table, query_sql, kn_vec_new(a, sizeof(kn_sql_query))};
    kn_vec *skipped = kn_vec_new(a, sizeof(const char *));

    /* The session: read-only, with a statement timeout. */
    session(&c);

    add(&c, KN_SQLQ_COLUMNS, "column-not-in-schema, column-not-in-data", NULL,
        "the table's column names, no rows: compared with the schema's columns",
        kn_sql_columns_query(a, d, table, query_sql));
    add(&c, KN_SQLQ_ROWS, "", NULL, "rows in the table (every rule)", kn_sql_count_query(a, d, table, query_sql));

    /* The statistics' sample, as the CSV path draws one of --max-rows rows. */
    const char *seed_sql = query_sql || !table ? kn_sql_seed_query(a, d, seed) : NULL;
    if (seed_sql) {
        add(&c, KN_SQLQ_SESSION, "", NULL, "the engine's random numbers are seeded before each query on the sample",
            seed_sql);
    }
    sbuf sample = {a, NULL, 0, 0};
    puts_(&sample, "SELECT COUNT(*) AS n_sample");
    from(&sample, d, NULL, kn_sql_sample_query(a, d, table, query_sql, 0.5, seed, KN_SQL_SAMPLE_ROWS));
    add(&c, KN_SQLQ_ROWS, "lone-feature-separates, missingness-predicts, identifier-segment-predicts", NULL,
        "on a table of more than --max-rows rows, the statistics read a sample of about --max-rows of them "
        "(p = max_rows / rows; here 0.5), the same rows every run, in place of the table: the features by "
        "target class, the rank sums and the missing rows per class below (the values and every other rule "
        "count every row); the sample's rows",
        sample.p);

    const kn_column *target = usable(KN_REF_COLUMN(s->prediction.target));
    const kn_column *entity = usable(KN_REF_COLUMN(s->prediction.entity));
    const kn_column *moment = usable(KN_REF_COLUMN(s->prediction.moment_column));
    const kn_column *split = s->split.present ? usable(KN_REF_COLUMN(s->split.column)) : NULL;
    const kn_column *key = kn_sql_key_column(s, NULL, NULL);

    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *k = s->columns[i];
        if (k->broken) {
            continue;
        }
        if (has_control(k->name)) {
            const char *line = kn_printf(a, "column '%s' is left out: its name holds a control character", esc(a, k->name));
            kn_vec_push(skipped, &line);
        }
    }

    if (target) {
        add(&c, KN_SQLQ_VALUES, "value-mismatch, lone-feature-separates, missingness-predicts, identifier-segment-predicts",
            target,
            kn_printf(a, "the target '%s': rows per value, at most %llu (a binary target gives the positive and "
                         "negative class)",
                      esc(a, target->name), max_groups),
            kn_sql_groups_query(a, d, table, query_sql, target->name, NULL, max_groups + 1));
    }

    /* One GROUP BY per column, at most max_groups rows read: its distinct
     * values (value-mismatch and the missing count are decided from them
     * in C, with the CSV path's parsers) and, for a feature, the rows of
     * each target class per value: the contingency table behind U, the
     * positive and negative counts per distinct value behind the exact
     * AUC, missing values included (missingness-predicts).  A column with
     * more groups is finished by the engine (rank sum, missing rows per
     * class), its values streamed for value-mismatch. */
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *k = usable(s->columns[i]);
        if (!k || k == target) {
            continue;
        }
        bool feature = k->role == KN_ROLE_FEATURE;
        bool ident_col = k->role == KN_ROLE_IDENTIFIER;
        bool typed = k->type != KN_TYPE_UNSET || k->format;
        bool with_target = (feature || ident_col) && target;
        if (!typed && !with_target) {
            continue;
        }
        const char *t_name = with_target ? target->name : NULL;
        if (ident_col && target) {
            add(&c, KN_SQLQ_CONTINGENCY, typed ? "value-mismatch, identifier-segment-predicts" : "identifier-segment-predicts",
                k,
                kn_printf(a,
                          "identifier '%s' by target class, segments cut in C; on a table of more than %llu rows, "
                          "a random sample of about %llu of them (WHERE <random in [0, 1)> < %llu / rows)",
                          esc(a, k->name), max_groups, max_groups, max_groups),
                kn_sql_groups_query(a, d, table, query_sql, k->name, t_name, max_groups + 1));
            continue;
        }
        const char *rules;
        const char *what;
        if (feature && target) {
            rules = typed ? "value-mismatch, lone-feature-separates, missingness-predicts"
                          : "lone-feature-separates, missingness-predicts";
            what = kn_printf(a, "'%s' (%s) by target class: per distinct value, positive and negative rows (at most %llu)",
                             esc(a, k->name), type_name(k->type), max_groups);
        } else {
            rules = "value-mismatch";
            what = kn_printf(a, "'%s' (%s): distinct values and their rows, parsed in C (at most %llu)", esc(a, k->name),
                             type_name(k->type), max_groups);
        }
        add(&c, with_target ? KN_SQLQ_CONTINGENCY : KN_SQLQ_VALUES, rules, k, what,
            kn_sql_groups_query(a, d, table, query_sql, k->name, t_name, max_groups + 1));
        if (feature && target) {
            if (is_temporal_or_number(k->type)) {
                add(&c, KN_SQLQ_RANK_SUM, "lone-feature-separates", k,
                    kn_printf(a, "when '%s' has a numeric or temporal SQL type (not SQLite's) and the target two "
                                 "values (in place of ':positive' and ':negative'): the Mann-Whitney rank sum and "
                                 "the missing rows per class, by the engine, instead of the groups above",
                              esc(a, k->name)),
                    kn_sql_rank_sum_query(a, d, rb, table, query_sql, k->name, target->name, ":positive",
                                          ":negative", k->type == KN_TYPE_NUMBER ? KN_SQL_COL_FLOAT : 0));
            }
            add(&c, KN_SQLQ_MISSING, "missingness-predicts", k,
                kn_printf(a, "when '%s' has more than %llu groups and no rank sum: its missing rows per target class",
                          esc(a, k->name), max_groups),
                kn_sql_missing_query(a, d, rb, table, query_sql, k->name, target->name, 0));
        }
        if (typed) {
            add(&c, KN_SQLQ_VALUES, "value-mismatch", k,
                kn_printf(a, "when '%s' has more than %llu groups and a character SQL type: every distinct value, "
                             "streamed and parsed in C",
                          esc(a, k->name), max_groups),
                kn_sql_groups_query(a, d, table, query_sql, k->name, NULL, 0));
        }
    }

    /* timestamp-after-moment: every timed feature against the moment. */
    for (size_t i = 0; moment && i < s->n_columns; i++) {
        const kn_column *k = usable(s->columns[i]);
        if (!k || k == moment || k->role != KN_ROLE_FEATURE ||
            (k->type != KN_TYPE_TIMESTAMP && k->type != KN_TYPE_DATE)) {
            continue;
        }
        add(&c, KN_SQLQ_LATE, "timestamp-after-moment", k,
            kn_printf(a, "rows where '%s' is %s the moment column '%s' (compared by the engine: typed columns, or ISO 8601 "
                         "text in one zone): how many, and the one with the least %s",
                      esc(a, k->name), rb->strict_moment ? "at or after" : "after", esc(a, moment->name),
                      key ? kn_printf(a, "'%s'", esc(a, key->name)) : "value"),
            kn_sql_late_query(a, d, rb, table, query_sql, k->name, moment->name, key ? key->name : NULL, 0));
    }

    /* rows-shared-across-split and entity-in-both-splits. */
    if (split) {
        const char **feats = kn_alloc_array(a, s->n_columns + 1, sizeof *feats);
        size_t nf = 0;
        for (size_t i = 0; i < s->n_columns; i++) {
            const kn_column *k = usable(s->columns[i]);
            if (k && k->role == KN_ROLE_FEATURE) {
                feats[nf++] = k->name;
            }
        }
        const char *by_sort = kn_sql_grouping(d, KN_SQL_GROUP_BY_SORT);
        if (nf && by_sort) {
            add(&c, KN_SQLQ_SESSION, "", NULL, "the feature rows are grouped by sorting their hashes", by_sort);
        }
        if (nf) {
            add(&c, KN_SQLQ_OVERLAP, "rows-shared-across-split", split,
                kn_printf(a, "identical feature rows (%zu feature%s) on both sides of the split '%s'", nf,
                          nf == 1 ? "" : "s", esc(a, split->name)),
                kn_sql_overlap_query(a, d, rb, table, query_sql, split->name, feats, nf, false,
                                     key ? key->name : NULL, NULL, true));
        }
        if (nf && by_sort) {
            add(&c, KN_SQLQ_SESSION, "", NULL, "and the session's own setting back",
                kn_sql_grouping(d, KN_SQL_GROUP_BY_SORT_END));
        }
        const char *in_memory = kn_sql_grouping(d, KN_SQL_GROUP_IN_MEMORY);
        if (entity && in_memory) {
            add(&c, KN_SQLQ_SESSION, "", NULL,
                "the entities' groups are kept in memory up to " KN_SQL_GROUP_MEMORY
                " (raised only: a larger work_mem of the role or database stays)",
                in_memory);
        }
        if (entity) {
            add(&c, KN_SQLQ_OVERLAP, "entity-in-both-splits", entity,
                kn_printf(a, "entities '%s' with rows on both sides of the split '%s'", esc(a, entity->name),
                          esc(a, split->name)),
                kn_sql_overlap_query(a, d, rb, table, query_sql, split->name, &entity->name, 1, true, NULL, NULL, true));
            if (in_memory) {
                add(&c, KN_SQLQ_SESSION, "", NULL, "and the session's own setting back",
                    kn_sql_grouping(d, KN_SQL_GROUP_IN_MEMORY_END));
            }
        }
    }

    /* small-quasi-identifier-groups: the sizes of the groups. */
    const char **qis = kn_alloc_array(a, s->n_columns + 1, sizeof *qis);
    size_t nq = 0;
    sbuf names = {a, NULL, 0, 0};
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *k = usable(s->columns[i]);
        if (k && k->quasi_identifier == 1) {
            if (nq) {
                puts_(&names, ", ");
            }
            qis[nq++] = k->name;
            puts_(&names, esc(a, k->name));
        }
    }
    if (nq) {
        add(&c, KN_SQLQ_GROUPS, "small-quasi-identifier-groups", NULL,
            kn_printf(a, "how many groups of each size the quasi-identifiers (%s) form", names.p),
            kn_sql_qi_query(a, d, table, query_sql, qis, nq));
    }

    out->n = c.q->len;
    out->q = c.q->data;
    out->n_skipped = skipped->len;
    out->skipped = skipped->data;
}

void kn_sql_write(FILE *out, kn_arena *a, const kn_sql_plan *p, const char *schema_path, const char *table,
                  kn_sql_dialect d)
{
    fprintf(out, "-- knowable sql: the data checks of %s as aggregate queries\n", esc(a, schema_path));
    fprintf(out, "-- table %s, dialect %s; only aggregated rows come back, knowable finishes the\n",
            table ? esc(a, table) : "(the rows of --query)", kn_sql_dialect_name(d));
    fputs("-- statistics in C.  Every name is a quoted identifier, every value a string literal.\n", out);
    for (size_t i = 0; i < p->n_skipped; i++) {
        fprintf(out, "-- %s\n", p->skipped[i]);
    }
    for (size_t i = 0; i < p->n; i++) {
        const kn_sql_query *q = &p->q[i];
        fputc('\n', out);
        if (q->rules[0]) {
            fprintf(out, "-- [%s]\n", q->rules);
        }
        fprintf(out, "-- %s\n%s;\n", q->comment, q->text);
    }
}
