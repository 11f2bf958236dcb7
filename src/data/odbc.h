/* odbc.h - data in a database (SPEC §5.1): `check --data 'odbc:...'` with
 * --table NAME or --query FILE.sql.  unixODBC is a meson feature option
 * (-Dodbc=auto); without it knowable builds all the same and refuses a
 * database --data with exit 2 (odbc_none.c).
 *
 * A connection (kn_db) is opened once per run, made read-only and given a
 * statement timeout; src/checks/data_db.c sends it the aggregate queries
 * of src/data/sql.c and reads their rows back as text.  Text crosses the
 * driver as UTF-16 (the W functions of ODBC) and is UTF-8 on both sides,
 * whatever the process's locale.  Every message about the connection goes
 * to the error stream given at kn_db_open, with the driver's own words,
 * escaped for the terminal, every password masked. */
#ifndef KN_DATA_ODBC_H
#define KN_DATA_ODBC_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "../util/arena.h"
#include "sql.h"

#define KN_ODBC_PREFIX "odbc:"

/* Whether --data names a database connection (it starts with "odbc:"). */
bool kn_odbc_is_connection(const char *data);

/* Whether this knowable was built with database support. */
bool kn_odbc_built(void);

/* The connection string for messages: every PWD= or PASSWORD= value (any
 * case, braced or not) replaced by ***, so no password is ever printed. */
char *kn_odbc_display(kn_arena *a, const char *data);

typedef struct kn_db kn_db;
typedef struct kn_db_rows kn_db_rows;

/* What a result column holds, from its SQL type. */
typedef enum kn_db_type {
    KN_DB_TEXT,      /* character types and anything not below */
    KN_DB_NUMBER,    /* decimal and floating types */
    KN_DB_INTEGER,   /* integer types */
    KN_DB_TIMESTAMP, /* timestamp types */
    KN_DB_DATE,      /* date */
    KN_DB_BOOLEAN,   /* bit / boolean */
} kn_db_type;

/* Connects with the string after "odbc:" (data), sets up a read-only
 * session (SQL_ATTR_ACCESS_MODE read-only and the dialect's statements of
 * kn_sql_session, which must succeed) and a statement timeout on every
 * statement.  The connection is closed when a is freed.  NULL after a
 * message to err when it cannot be done. */
kn_db *kn_db_open(kn_arena *a, const char *data, FILE *err);

/* The dialect of the engine behind the connection (from its DBMS name). */
kn_sql_dialect kn_db_dialect(const kn_db *db);

/* Runs sql.  NULL after writing "knowable: WHAT: <driver's message>" to
 * the error stream (the connection is then failed). */
kn_db_rows *kn_db_query(kn_db *db, const char *sql, const char *what);

/* Runs sql and reads its rows, saying nothing: false when the engine
 * refuses it (the connection stays usable).  For probing what the
 * engine can do. */
bool kn_db_try(kn_db *db, const char *sql);

/* The next row: true, false at the end or on an error (kn_db_failed). */
bool kn_db_next(kn_db_rows *r);

/* Value i of the current row as UTF-8 text, NUL-terminated, its length in
 * *len; NULL for SQL NULL.  Valid until the next kn_db_next.  A value
 * longer than 1 MiB is cut there. */
const char *kn_db_get(kn_db_rows *r, size_t i, size_t *len);

/* The result's columns, their names (UTF-8) and kinds. */
size_t kn_db_columns(const kn_db_rows *r);
const char *kn_db_column_name(const kn_db_rows *r, size_t i);
kn_db_type kn_db_column_type(const kn_db_rows *r, size_t i);

/* Ends a result (its statement is freed). */
void kn_db_done(kn_db_rows *r);

/* Whether an error ended a query or a fetch. */
bool kn_db_failed(const kn_db *db);

/* What crossed the connection so far: result rows and bytes of values
 * (as UTF-8 text). */
void kn_db_traffic(const kn_db *db, uint64_t *rows, uint64_t *bytes);

#endif
