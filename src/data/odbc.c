/* odbc.c - knowable built with unixODBC (odbc.h). */
#include "odbc.h"

#include <sql.h>
#include <sqlext.h>
#include <string.h>

#include "../util/text.h"
#include "sql.h"

bool kn_odbc_built(void)
{
    return true;
}

/* Writes "knowable: WHAT: " and the driver's messages of handle h, escaped
 * for the terminal, each password in them masked as in the connection
 * string. */
static void driver_error(kn_arena *a, FILE *err, const char *what, SQLSMALLINT type, SQLHANDLE h)
{
    fprintf(err, "knowable: %s", what);
    SQLCHAR state[6], msg[1024];
    SQLINTEGER native;
    SQLSMALLINT len;
    for (SQLSMALLINT i = 1; h && i <= 4; i++) {
        if (!SQL_SUCCEEDED(SQLGetDiagRec(type, h, i, state, &native, msg, sizeof msg, &len))) {
            break;
        }
        const char *m = kn_odbc_display(a, (const char *)msg);
        fputs(i == 1 ? ": " : "; ", err);
        kn_fput_term(err, m, strlen(m));
        fprintf(err, " (SQLSTATE %s)", (const char *)state);
    }
    fputc('\n', err);
}

/* The dialect of the engine behind dbc, from its DBMS name. */
static kn_sql_dialect engine_dialect(SQLHDBC dbc)
{
    SQLCHAR name[128] = "";
    SQLSMALLINT len;
    if (!SQL_SUCCEEDED(SQLGetInfo(dbc, SQL_DBMS_NAME, name, sizeof name, &len))) {
        return KN_SQL_ANSI;
    }
    if (strstr((char *)name, "PostgreSQL")) {
        return KN_SQL_POSTGRESQL;
    }
    if (strstr((char *)name, "MySQL") || strstr((char *)name, "MariaDB")) {
        return KN_SQL_MYSQL;
    }
    if (strstr((char *)name, "SQLite")) {
        return KN_SQL_SQLITE;
    }
    return KN_SQL_ANSI;
}

typedef struct handles {
    SQLHENV env;
    SQLHDBC dbc;
    bool connected;
} handles;

static void release(void *p)
{
    handles *h = p;
    if (h->connected) {
        SQLDisconnect(h->dbc);
    }
    if (h->dbc) {
        SQLFreeHandle(SQL_HANDLE_DBC, h->dbc);
    }
    if (h->env) {
        SQLFreeHandle(SQL_HANDLE_ENV, h->env);
    }
}

/* Runs text on dbc with the statement timeout; the statement handle, or
 * NULL after writing why (what says which statement). */
static SQLHSTMT run(kn_arena *a, SQLHDBC dbc, const char *text, const char *what, FILE *err)
{
    SQLHSTMT st;
    if (!SQL_SUCCEEDED(SQLAllocHandle(SQL_HANDLE_STMT, dbc, &st))) {
        driver_error(a, err, "cannot make a statement", SQL_HANDLE_DBC, dbc);
        return NULL;
    }
    SQLSetStmtAttr(st, SQL_ATTR_QUERY_TIMEOUT, (SQLPOINTER)(SQLULEN)KN_SQL_TIMEOUT_SECONDS, 0);
    if (!SQL_SUCCEEDED(SQLExecDirect(st, (SQLCHAR *)kn_strdup(a, text), SQL_NTS))) {
        driver_error(a, err, what, SQL_HANDLE_STMT, st);
        SQLFreeHandle(SQL_HANDLE_STMT, st);
        return NULL;
    }
    return st;
}

long kn_odbc_probe(kn_arena *a, const char *data, const char *table, const char *query_sql, FILE *err)
{
    handles *h = kn_alloc(a, sizeof *h);
    memset(h, 0, sizeof *h);
    kn_arena_defer(a, release, h);
    if (!SQL_SUCCEEDED(SQLAllocHandle(SQL_HANDLE_ENV, SQL_NULL_HANDLE, &h->env)) ||
        !SQL_SUCCEEDED(SQLSetEnvAttr(h->env, SQL_ATTR_ODBC_VERSION, (SQLPOINTER)SQL_OV_ODBC3, 0)) ||
        !SQL_SUCCEEDED(SQLAllocHandle(SQL_HANDLE_DBC, h->env, &h->dbc))) {
        fputs("knowable: cannot set up ODBC (unixODBC)\n", err);
        return -1;
    }
    SQLSetConnectAttr(h->dbc, SQL_ATTR_LOGIN_TIMEOUT, (SQLPOINTER)(SQLLEN)30, 0);
    const char *conn = data + strlen(KN_ODBC_PREFIX);
    SQLCHAR out[16];
    SQLSMALLINT out_len;
    SQLRETURN rc = SQLDriverConnect(h->dbc, NULL, (SQLCHAR *)kn_strdup(a, conn), SQL_NTS, out, sizeof out, &out_len,
                                    SQL_DRIVER_NOPROMPT);
    if (!SQL_SUCCEEDED(rc)) {
        const char *shown = kn_odbc_display(a, data);
        char *what = kn_printf(a, "cannot connect to %s", kn_escape_term(a, shown, strlen(shown)));
        driver_error(a, err, what, SQL_HANDLE_DBC, h->dbc);
        return -1;
    }
    h->connected = true;
    /* Read-only: the ODBC attribute (a hint some drivers ignore), then the
     * engine's own statement, which must succeed. */
    SQLSetConnectAttr(h->dbc, SQL_ATTR_ACCESS_MODE, (SQLPOINTER)SQL_MODE_READ_ONLY, 0);
    kn_sql_dialect d = engine_dialect(h->dbc);
    kn_sql_plan plan;
    kn_sql_session(a, d, &plan);
    for (size_t i = 0; i < plan.n; i++) {
        char *what = kn_printf(a, "cannot make the session read-only (%s)", plan.q[i].text);
        SQLHSTMT st = run(a, h->dbc, plan.q[i].text, what, err);
        if (!st) {
            return -1;
        }
        SQLFreeHandle(SQL_HANDLE_STMT, st);
    }
    const char *shown = table ? kn_escape_term(a, table, strlen(table)) : "the rows of --query";
    SQLHSTMT st = run(a, h->dbc, kn_sql_columns_query(a, d, table, query_sql),
                      kn_printf(a, "cannot read the columns of %s", shown), err);
    if (!st) {
        return -1;
    }
    SQLSMALLINT n = 0;
    if (!SQL_SUCCEEDED(SQLNumResultCols(st, &n))) {
        driver_error(a, err, kn_printf(a, "cannot read the columns of %s", shown), SQL_HANDLE_STMT, st);
        n = -1;
    }
    SQLFreeHandle(SQL_HANDLE_STMT, st);
    return n;
}
