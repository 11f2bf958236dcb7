/* odbc.h - data in a database (SPEC §5.1): `check --data 'odbc:...'` with
 * --table NAME or --query FILE.sql.  unixODBC is a meson feature option
 * (-Dodbc=auto); without it knowable builds all the same and refuses a
 * database --data with exit 2 (odbc_none.c). */
#ifndef KN_DATA_ODBC_H
#define KN_DATA_ODBC_H

#include <stdbool.h>
#include <stdio.h>

#include "../util/arena.h"

#define KN_ODBC_PREFIX "odbc:"

/* Whether --data names a database connection (it starts with "odbc:"). */
bool kn_odbc_is_connection(const char *data);

/* Whether this knowable was built with database support. */
bool kn_odbc_built(void);

/* The connection string for messages: every PWD= or PASSWORD= value (any
 * case, braced or not) replaced by ***, so no password is ever printed. */
char *kn_odbc_display(kn_arena *a, const char *data);

/* Connects with the string after "odbc:", sets up a read-only session
 * (SQL_ATTR_ACCESS_MODE read-only, the dialect's statements, a statement
 * timeout on every statement) and reads the column names of table (or of
 * the rows of query_sql, the text of --query).  Returns the number of
 * columns, or -1 with the driver's message (password masked) written to
 * err. */
long kn_odbc_probe(kn_arena *a, const char *data, const char *table, const char *query_sql, FILE *err);

#endif
