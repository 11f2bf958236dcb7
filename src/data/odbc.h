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

/* Connects with the string after "odbc:" and checks that a read-only
 * session can be set up (SQL_ATTR_ACCESS_MODE read-only, the dialect's
 * statements, a statement timeout).  false, with the driver's message
 * (password masked) written to err, when it cannot. */
bool kn_odbc_probe(kn_arena *a, const char *data, FILE *err);

#endif
