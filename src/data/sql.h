/* sql.h - the data checks of SPEC §4.7 as aggregate SQL (SPEC §5.1): for
 * one schema and one table, the queries an engine runs so that only
 * aggregated rows come back (counts with WHERE, GROUP BY contingency tables
 * of a column and the target, split overlaps, quasi-identifier group
 * sizes).  `knowable sql` prints them for review; the ODBC path runs the
 * same list and finishes the statistics with src/data/stats.c.
 *
 * Nothing from a schema is spliced into SQL: every identifier is a quoted
 * identifier of the dialect (its quote character doubled), every value
 * (missing markers, split side words) a string literal of the dialect.  A
 * name holding a control character is left out of the queries (a comment
 * says so, its name escaped), so no name can end a comment line. */
#ifndef KN_DATA_SQL_H
#define KN_DATA_SQL_H

#include <stdbool.h>
#include <stddef.h>
#include <stdio.h>

#include "../rulebook/rulebook.h"
#include "../schema/schema.h"
#include "../util/arena.h"

typedef enum kn_sql_dialect {
    KN_SQL_ANSI,
    KN_SQL_POSTGRESQL,
    KN_SQL_MYSQL, /* MySQL and MariaDB */
    KN_SQL_SQLITE,
} kn_sql_dialect;

/* "postgresql", "mysql", "sqlite" or "ansi"; false for anything else. */
bool kn_sql_dialect_parse(const char *name, kn_sql_dialect *out);
const char *kn_sql_dialect_name(kn_sql_dialect d);

/* Seconds a statement may run before the engine cancels it. */
#define KN_SQL_TIMEOUT_SECONDS 300

/* What a query's rows are, for the code that reads them back. */
typedef enum kn_sql_kind {
    KN_SQLQ_SESSION,    /* a session setting: no rows */
    KN_SQLQ_COLUMNS,    /* no rows; the result's column names */
    KN_SQLQ_ROWS,       /* one row: rows */
    KN_SQLQ_VALUES,     /* rows (v, n): the column's distinct values */
    KN_SQLQ_CONTINGENCY,/* rows (v, t, n): distinct value, target value, rows */
    KN_SQLQ_LATE,       /* at most one row (n, v, m[, k]): late rows, the first of them */
    KN_SQLQ_OVERLAP,    /* one row: train, test, shared keys, train and test rows shared */
    KN_SQLQ_GROUPS,     /* rows (size, groups): quasi-identifier group sizes */
    KN_SQLQ_RANK_SUM,   /* rows (t, two_u, n): the engine's rank sum per target value */
    KN_SQLQ_MISSING,    /* rows (t, missing, n): missing rows per target value */
} kn_sql_kind;

/* null_only flags of the queries below: the column (or the target) has an
 * SQL type whose values' text is never one of the rulebook's missing
 * markers, so "missing" is "IS NULL" (no cast to text on every row). */
enum {
    KN_SQL_COL_NULL_ONLY = 1u,
    KN_SQL_TARGET_NULL_ONLY = 2u,
    KN_SQL_COL_NAN = 4u, /* with KN_SQL_COL_NULL_ONLY: NaN too (PostgreSQL's floats) */
    KN_SQL_COL_FLOAT = 8u, /* rank sum: the values rounded to 4-byte floats, as the CSV path keeps numbers */
    KN_SQL_MOMENT_NULL_ONLY = 16u, /* late rows: the moment column's missing values are NULL alone */
};

/* Rows of one aggregate query the client reads by default (--max-rows in
 * a database): a column with more groups (distinct values, or values and
 * target classes) is finished by the engine, and an identifier of a
 * larger table is read from a random sample of about this many rows. */
#define KN_SQL_MAX_GROUPS 20000

typedef struct kn_sql_query {
    kn_sql_kind kind;
    const char *rules;         /* the rule ids it serves, comma-separated */
    const char *comment;       /* one line, safe inside a -- comment */
    const char *text;          /* the statement, without the final ';' */
    const kn_column *column;   /* the column it is about, or NULL */
} kn_sql_query;

typedef struct kn_sql_plan {
    kn_sql_query *q;
    size_t n;
    const char **skipped; /* comment lines for names left out */
    size_t n_skipped;
} kn_sql_plan;

/* The queries for schema s (its columns and prediction) on table (split at
 * dots into quoted parts: schema.table) under rulebook rb.  With query_sql
 * (the text of --query FILE.sql) the rows are those of that query, used as
 * a derived table. */
void kn_sql_make(kn_arena *a, const kn_schema *s, const kn_rulebook *rb, const char *table, const char *query_sql,
                 kn_sql_dialect d, unsigned long long max_groups, uint64_t seed, kn_sql_plan *out);

/* The queries one by one (the plan above is made of them; the ODBC path
 * runs them on the columns the table has).  Every column name is quoted;
 * table and query_sql as for kn_sql_make. */

/* SELECT COUNT(*). */
char *kn_sql_count_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql);

/* Rows (v[, t], n): the distinct values of col (with target: of col and
 * the target) and their rows, at most max_rows of them (0: all). */
char *kn_sql_groups_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql, const char *col,
                          const char *target, unsigned long long max_rows);

/* Rows (v, n): the split column's distinct values, as kn_sql_groups_query,
 * but on MySQL and MariaDB grouped in a binary collation (a collation that
 * ignores case or accents would put values the CSV path tells apart into
 * one group); the overlap queries compare the column in the same way. */
char *kn_sql_split_values_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql,
                                const char *split, unsigned long long max_rows);

/* How PostgreSQL draws a sample of a table (the other engines draw in
 * the scan). */
typedef enum kn_sql_sampling {
    KN_SQL_SAMPLE_SCAN,  /* random() in the scan, after kn_sql_seed_query (a view, --query) */
    KN_SQL_SAMPLE_ROWS,  /* TABLESAMPLE BERNOULLI: each row by a hash of its place */
    KN_SQL_SAMPLE_PAGES, /* TABLESAMPLE SYSTEM: each page by a hash of its place, all its rows */
} kn_sql_sampling;

/* A SELECT of a sample of the rows, each kept with probability p, the
 * same rows on every run (SPEC §4.7: the statistics' sample of
 * --max-rows rows), for use as query_sql: on PostgreSQL as how says
 * (TABLESAMPLE ... REPEATABLE (seed) needs a table: the same rows
 * whatever the scan's order), MySQL's RAND(seed), on SQLite the row's
 * number in the scan, mixed with the seed (its random() takes no seed). */
char *kn_sql_sample_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql, double p,
                          uint64_t seed, kn_sql_sampling how);

/* The statement that seeds the engine's random() before a sample that
 * uses it (PostgreSQL's setseed), or NULL when the dialect seeds in the
 * query. */
char *kn_sql_seed_query(kn_arena *a, kn_sql_dialect d, uint64_t seed);

/* One row (two_u, n_pos, n_neg, missing_pos, missing_neg): twice the
 * Mann-Whitney U of col with the target value positive (a string literal,
 * as the engine sent it) against negative, and the rows of each with a
 * value of col; then the rows of each where col is missing.  Rows whose
 * target is missing are left out.  A window sum (SQL:2003). */
char *kn_sql_rank_sum_query(kn_arena *a, kn_sql_dialect d, const kn_rulebook *rb, const char *table,
                            const char *query_sql, const char *col, const char *target, const char *positive,
                            const char *negative, unsigned null_only);

/* Rows ([t,] n_missing, n): rows where col is missing, per target value
 * (target NULL: one row). */
char *kn_sql_missing_query(kn_arena *a, kn_sql_dialect d, const kn_rulebook *rb, const char *table,
                           const char *query_sql, const char *col, const char *target, unsigned null_only);

/* At most one row (n, v, m[, k]): how many rows have col later than the
 * moment (not earlier with strict_moment), and of them the one with the
 * least key, then value (NULL key: the least value); no row when there is none.
 * null_only: KN_SQL_COL_NULL_ONLY and KN_SQL_MOMENT_NULL_ONLY. */
char *kn_sql_late_query(kn_arena *a, kn_sql_dialect d, const kn_rulebook *rb, const char *table,
                        const char *query_sql, const char *col, const char *moment, const char *key,
                        unsigned null_only);

/* One row (k): the least key of the rows whose col, as text, is value. */
char *kn_sql_key_of_value(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql, const char *col,
                          const char *key, const char *value);

/* The raw values of the split column on each side (values[0] training,
 * values[1] test), as the engine sent them and kn_split_side classified
 * them: the queries then compare the column with these values instead of
 * testing the text of every row. */
typedef struct kn_sql_sides {
    const char **values[2];
    size_t n[2];
} kn_sql_sides;
/* One row (train_rows, test_rows, shared_keys, train_rows_shared,
 * test_rows_shared[, first_key]): rows grouped by cols[0..n) on the two
 * sides of the split; with entity, cols[0] is the entity, rows where it is
 * missing are left out and the least shared entity comes back too;
 * otherwise, with key, the least key of a test row in a shared group.
 * On PostgreSQL several columns are grouped by hash_record_extended of
 * the row when hash_rows (64 bits, as the CSV path compares rows;
 * PostgreSQL 14 or later, and types with an extended hash), else by the
 * text of each column.
 * sides NULL: the split column's text is tested on every row. */
char *kn_sql_overlap_query(kn_arena *a, kn_sql_dialect d, const kn_rulebook *rb, const char *table,
                           const char *query_sql, const char *split, const char *const *cols, size_t n, bool entity,
                           const char *key, const kn_sql_sides *sides, bool hash_rows);

/* A query that fails where kn_sql_overlap_query's hash of the rows of
 * cols[0..n) cannot run (PostgreSQL before 14, a type without an extended
 * hash): the hash of the first row. */
char *kn_sql_hash_probe(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql,
                        const char *const *cols, size_t n);

/* Rows (group_size, n_groups): how many groups of each size cols[0..n)
 * form. */
char *kn_sql_qi_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql,
                      const char *const *cols, size_t n);

/* The column that names a row in a database finding: the entity, else
 * the first identifier, among the columns present (present NULL: all). */
const kn_column *kn_sql_key_column(const kn_schema *s, bool (*present)(void *ctx, const kn_column *k), void *ctx);

/* How the engine groups the rows of the overlap queries, each set before
 * its query and the session's own value put back after (PostgreSQL,
 * through the session variables knowable.*; the others need nothing): the
 * feature rows, nearly a group a row, by sorting their hashes (a hash
 * table of them spills to disk and is slower, and more memory made it
 * slower still); the entities, far fewer, in a hash table of up to
 * KN_SQL_GROUP_MEMORY (work_mem, raised only), which the default 4 MB
 * makes spill. */
typedef enum kn_sql_grouping_mode {
    KN_SQL_GROUP_BY_SORT,
    KN_SQL_GROUP_BY_SORT_END,
    KN_SQL_GROUP_IN_MEMORY,
    KN_SQL_GROUP_IN_MEMORY_END,
} kn_sql_grouping_mode;
#define KN_SQL_GROUP_MEMORY "64MB"
/* The statement for m in dialect d, or NULL. */
const char *kn_sql_grouping(kn_sql_dialect d, kn_sql_grouping_mode m);
/* The query of the table's column names (no rows). */
char *kn_sql_columns_query(kn_arena *a, kn_sql_dialect d, const char *table, const char *query_sql);

/* Only the session statements of dialect d (read-only, the timeout). */
void kn_sql_session(kn_arena *a, kn_sql_dialect d, kn_sql_plan *out);

/* Writes the plan as a commented SQL script. */
void kn_sql_write(FILE *out, kn_arena *a, const kn_sql_plan *p, const char *schema_path, const char *table,
                  kn_sql_dialect d);

/* The dialect's quoted identifier for name (quote character doubled). */
char *kn_sql_ident(kn_arena *a, kn_sql_dialect d, const char *name);

/* The dialect's string literal for s (quotes doubled; backslashes too for
 * MySQL, whose default mode reads them as escapes). */
char *kn_sql_literal(kn_arena *a, kn_sql_dialect d, const char *s);

#endif
