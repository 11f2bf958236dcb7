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
    KN_SQLQ_LATE,       /* one row: rows whose value is later than the moment */
    KN_SQLQ_OVERLAP,    /* one row: train, test, shared keys, train and test rows shared */
    KN_SQLQ_GROUPS,     /* rows (size, groups): quasi-identifier group sizes */
} kn_sql_kind;

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
                 kn_sql_dialect d, kn_sql_plan *out);

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
