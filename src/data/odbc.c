/* odbc.c - knowable built with unixODBC (odbc.h): the connection, its
 * read-only session and the rows of the aggregate queries, as text.
 *
 * unixODBC's driver manager is loaded (dlopen) when a database is first
 * opened, not linked: every other run of knowable would otherwise map it
 * and its libltdl at start, about a millisecond of each small check on the
 * build machine (an empty program linked with them: 5.6 ms against 4.6),
 * and a machine without unixODBC could not run knowable at all. */
#include "odbc.h"

#include <dlfcn.h>
#include <locale.h>
#include <sql.h>
#include <sqlext.h>
#include <sqlucode.h>
#include <stdlib.h>
#include <string.h>

/* The driver manager's functions knowable calls, by name. */
#define KN_ODBC_FUNCTIONS(X)                                                                                          \
    X(SQLAllocHandle)                                                                                                 \
    X(SQLDescribeColW)                                                                                                \
    X(SQLDisconnect)                                                                                                  \
    X(SQLDriverConnect)                                                                                               \
    X(SQLExecDirectW)                                                                                                 \
    X(SQLFetch)                                                                                                       \
    X(SQLFreeHandle)                                                                                                  \
    X(SQLGetData)                                                                                                     \
    X(SQLGetDiagRec)                                                                                                  \
    X(SQLGetInfo)                                                                                                     \
    X(SQLNumResultCols)                                                                                               \
    X(SQLSetConnectAttr)                                                                                              \
    X(SQLSetEnvAttr)                                                                                                  \
    X(SQLSetStmtAttr)

#define KN_ODBC_POINTER(f) __typeof__(f) *f;
static struct {
    bool tried;
    const char *problem; /* why it could not be loaded, or NULL */
    KN_ODBC_FUNCTIONS(KN_ODBC_POINTER)
} api;

/* The library's soname, or KNOWABLE_ODBC_LIBRARY for a driver manager
 * installed elsewhere. */
#define KN_ODBC_LIBRARY "libodbc.so.2"

/* Loads the driver manager once; NULL when it is there, else why not. */
static const char *load_api(void)
{
    if (api.tried) {
        return api.problem;
    }
    api.tried = true;
    const char *name = getenv("KNOWABLE_ODBC_LIBRARY");
    if (!name || !*name) {
        name = KN_ODBC_LIBRARY;
    }
    void *lib = dlopen(name, RTLD_NOW | RTLD_LOCAL);
    if (!lib) {
        const char *why = dlerror();
        api.problem = why ? why : name;
        return api.problem;
    }
    /* dlsym's object pointer is stored through a void ** (POSIX's idiom):
     * ISO C has no conversion to a function pointer. */
#define KN_ODBC_LOAD(f)                                                                                               \
    if (!(*(void **)&api.f = dlsym(lib, #f))) {                                                                         \
        api.problem = #f " is missing from the driver manager";                                                        \
        return api.problem;                                                                                           \
    }
    KN_ODBC_FUNCTIONS(KN_ODBC_LOAD)
#undef KN_ODBC_LOAD
    return NULL; /* the library stays loaded: its drivers may run until exit */
}

/* From here on every call goes through the loaded functions. */
#define SQLAllocHandle (*api.SQLAllocHandle)
#define SQLDescribeColW (*api.SQLDescribeColW)
#define SQLDisconnect (*api.SQLDisconnect)
#define SQLDriverConnect (*api.SQLDriverConnect)
#define SQLExecDirectW (*api.SQLExecDirectW)
#define SQLFetch (*api.SQLFetch)
#define SQLFreeHandle (*api.SQLFreeHandle)
#define SQLGetData (*api.SQLGetData)
#define SQLGetDiagRec (*api.SQLGetDiagRec)
#define SQLGetInfo (*api.SQLGetInfo)
#define SQLNumResultCols (*api.SQLNumResultCols)
#define SQLSetConnectAttr (*api.SQLSetConnectAttr)
#define SQLSetEnvAttr (*api.SQLSetEnvAttr)
#define SQLSetStmtAttr (*api.SQLSetStmtAttr)

#include "../util/text.h"

enum {
    MAX_VALUE = 1 << 20, /* bytes of one value kept; the rest is cut */
    LOGIN_TIMEOUT = 30,  /* seconds */
};

struct kn_db {
    kn_arena *a;
    FILE *err;
    SQLHENV env;
    SQLHDBC dbc;
    bool connected, failed;
    kn_sql_dialect dialect;
    uint64_t rows, bytes;
    SQLWCHAR *buf; /* one chunk of SQLGetData, shared by every result */
};

typedef struct value {
    char *p; /* UTF-8, NUL-terminated */
    size_t len, cap;
    bool null;
} value;

struct kn_db_rows {
    kn_db *db;
    SQLHSTMT st;
    const char *what;
    size_t n;
    char **names;
    kn_db_type *types;
    value *v;
    SQLWCHAR *buf; /* one chunk of SQLGetData */
};

bool kn_odbc_built(void)
{
    return true;
}

/* ---- UTF-8 and UTF-16 ------------------------------------------------------ */

/* UTF-16 code units of UTF-8 s (a byte that is not valid UTF-8 becomes
 * U+FFFD), NUL-terminated. */
static SQLWCHAR *to_wide(kn_arena *a, const char *s)
{
    size_t n = strlen(s);
    SQLWCHAR *w = kn_alloc_array(a, 2 * n + 1, sizeof *w);
    size_t k = 0;
    const unsigned char *p = (const unsigned char *)s, *end = p + n;
    while (p < end) {
        uint32_t c = *p, need = 0;
        if (c < 0x80) {
            need = 0;
        } else if ((c & 0xe0) == 0xc0) {
            c &= 0x1f, need = 1;
        } else if ((c & 0xf0) == 0xe0) {
            c &= 0x0f, need = 2;
        } else if ((c & 0xf8) == 0xf0) {
            c &= 0x07, need = 3;
        } else {
            c = 0xfffd, need = 0;
        }
        p++;
        for (uint32_t i = 0; i < need; i++) {
            if (p >= end || (*p & 0xc0) != 0x80) {
                c = 0xfffd;
                break;
            }
            c = c << 6 | (*p++ & 0x3f);
        }
        if (c >= 0x10000 && c <= 0x10ffff) {
            c -= 0x10000;
            w[k++] = (SQLWCHAR)(0xd800 | c >> 10);
            w[k++] = (SQLWCHAR)(0xdc00 | (c & 0x3ff));
        } else {
            w[k++] = (SQLWCHAR)(c > 0x10ffff || (c >= 0xd800 && c <= 0xdfff) ? 0xfffd : c);
        }
    }
    w[k] = 0;
    return w;
}

/* Appends n UTF-16 code units to v as UTF-8, keeping at most MAX_VALUE
 * bytes; *hi holds a high surrogate waiting for its pair across chunks. */
static void append_utf8(kn_db_rows *r, value *v, const SQLWCHAR *w, size_t n, uint32_t *hi)
{
    for (size_t i = 0; i < n; i++) {
        uint32_t c = w[i];
        if (c >= 0xd800 && c <= 0xdbff) {
            *hi = c;
            continue;
        }
        if (c >= 0xdc00 && c <= 0xdfff) {
            c = *hi ? 0x10000 + ((*hi - 0xd800) << 10) + (c - 0xdc00) : 0xfffd;
        } else if (*hi) {
            c = 0xfffd; /* a lone high surrogate; c itself is lost too */
        }
        *hi = 0;
        if (v->len + 5 > v->cap) {
            if (v->len >= MAX_VALUE) {
                return;
            }
            size_t cap = v->cap ? 2 * v->cap : 64;
            char *p = kn_alloc(r->db->a, cap + 1);
            if (v->len) {
                memcpy(p, v->p, v->len);
            }
            v->p = p;
            v->cap = cap;
        }
        char *o = v->p + v->len;
        if (c < 0x80) {
            *o++ = (char)c;
        } else if (c < 0x800) {
            *o++ = (char)(0xc0 | c >> 6);
            *o++ = (char)(0x80 | (c & 0x3f));
        } else if (c < 0x10000) {
            *o++ = (char)(0xe0 | c >> 12);
            *o++ = (char)(0x80 | (c >> 6 & 0x3f));
            *o++ = (char)(0x80 | (c & 0x3f));
        } else {
            *o++ = (char)(0xf0 | c >> 18);
            *o++ = (char)(0x80 | (c >> 12 & 0x3f));
            *o++ = (char)(0x80 | (c >> 6 & 0x3f));
            *o++ = (char)(0x80 | (c & 0x3f));
        }
        v->len = (size_t)(o - v->p);
    }
}

static char *wide_to_utf8(kn_db_rows *r, const SQLWCHAR *w, size_t n)
{
    value v = {0};
    uint32_t hi = 0;
    append_utf8(r, &v, w, n, &hi);
    if (!v.p) {
        return kn_strdup(r->db->a, "");
    }
    v.p[v.len] = '\0';
    return v.p;
}

/* ---- messages ------------------------------------------------------------ */

/* Writes "knowable: WHAT: " and the driver's messages of handle h, escaped
 * for the terminal, each password in them masked as in the connection
 * string. */
static void driver_error(kn_arena *a, FILE *err, const char *what, SQLSMALLINT type, SQLHANDLE h)
{
    fputs("knowable: ", err);
    kn_fput_term(err, what, strlen(what));
    SQLCHAR state[6], msg[1024];
    SQLINTEGER native;
    SQLSMALLINT len;
    for (SQLSMALLINT i = 1; h && i <= 4; i++) {
        if (!SQL_SUCCEEDED(SQLGetDiagRec(type, h, i, state, &native, msg, sizeof msg, &len))) {
            break;
        }
        const char *m = kn_odbc_display(a, (const char *)msg);
        fputs(i == 1 ? ": " : "; ", err);
        /* A driver's message may span lines (PostgreSQL's does): its lines
         * joined by "; ", not a "\n" escaped into one line. */
        char last = 0; /* the last character written of this message */
        while (*m) {
            size_t n = strcspn(m, "\r\n"), end = n;
            while (end && (m[end - 1] == ' ' || m[end - 1] == '\t')) {
                end--;
            }
            if (end) {
                if (last) {
                    fputs(strchr(".;:", last) ? " " : "; ", err);
                }
                kn_fput_term(err, m, end);
                last = m[end - 1];
            }
            m += n;
            m += strspn(m, "\r\n");
        }
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

/* ---- the connection ---------------------------------------------------------- */

static void release(void *p)
{
    kn_db *h = p;
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

kn_db *kn_db_open(kn_arena *a, const char *data, FILE *err)
{
    const char *missing = load_api();
    if (missing) {
        fputs("knowable: cannot load unixODBC's driver manager (Debian's package libodbc2): ", err);
        kn_fput_term(err, missing, strlen(missing));
        fputc('\n', err);
        return NULL;
    }
    kn_db *h = kn_alloc(a, sizeof *h);
    memset(h, 0, sizeof *h);
    h->a = a;
    h->err = err;
    kn_arena_defer(a, release, h);
    /* unixODBC converts between UTF-16 and the text of a driver without
     * the W functions (SQLite's) by the locale's character set: UTF-8
     * then, whatever the environment says.  Nothing else in knowable
     * reads the locale (numbers are parsed by hand or under LC_NUMERIC
     * "C", which this leaves alone). */
    if (!setlocale(LC_CTYPE, "C.UTF-8")) {
        setlocale(LC_CTYPE, "C.utf8");
    }
    if (!SQL_SUCCEEDED(SQLAllocHandle(SQL_HANDLE_ENV, SQL_NULL_HANDLE, &h->env)) ||
        !SQL_SUCCEEDED(SQLSetEnvAttr(h->env, SQL_ATTR_ODBC_VERSION, (SQLPOINTER)SQL_OV_ODBC3, 0)) ||
        !SQL_SUCCEEDED(SQLAllocHandle(SQL_HANDLE_DBC, h->env, &h->dbc))) {
        fputs("knowable: cannot set up ODBC (unixODBC)\n", err);
        return NULL;
    }
    SQLSetConnectAttr(h->dbc, SQL_ATTR_LOGIN_TIMEOUT, (SQLPOINTER)(SQLLEN)LOGIN_TIMEOUT, 0);
    const char *conn = data + strlen(KN_ODBC_PREFIX);
    /* The connection string goes in 8-bit (UTF-8) text: MariaDB's driver
     * (3.1) reads past the end of its own copy of a UTF-16 one
     * (AddressSanitizer, in SQLDriverConnectW). */
    SQLCHAR out[16];
    SQLSMALLINT out_len;
    SQLRETURN rc = SQLDriverConnect(h->dbc, NULL, (SQLCHAR *)kn_strdup(a, conn), SQL_NTS, out, sizeof out,
                                    &out_len, SQL_DRIVER_NOPROMPT);
    if (!SQL_SUCCEEDED(rc)) {
        const char *shown = kn_odbc_display(a, data);
        driver_error(a, err, kn_printf(a, "cannot connect to %s", shown), SQL_HANDLE_DBC, h->dbc);
        return NULL;
    }
    h->connected = true;
    /* Read-only: the ODBC attribute (a hint some drivers ignore), then the
     * engine's own statement, which must succeed. */
    SQLSetConnectAttr(h->dbc, SQL_ATTR_ACCESS_MODE, (SQLPOINTER)SQL_MODE_READ_ONLY, 0);
    h->dialect = engine_dialect(h->dbc);
    kn_sql_plan plan;
    kn_sql_session(a, h->dialect, &plan);
    for (size_t i = 0; i < plan.n; i++) {
        kn_db_rows *r = kn_db_query(h, plan.q[i].text,
                                    kn_printf(a, "cannot make the session read-only (%s)", plan.q[i].text));
        if (!r) {
            return NULL;
        }
        kn_db_done(r);
    }
    return h;
}

kn_sql_dialect kn_db_dialect(const kn_db *db)
{
    return db->dialect;
}

bool kn_db_failed(const kn_db *db)
{
    return db->failed;
}

void kn_db_traffic(const kn_db *db, uint64_t *rows, uint64_t *bytes)
{
    *rows = db->rows;
    *bytes = db->bytes;
}

/* ---- results --------------------------------------------------------------- */

static kn_db_type kind_of(SQLSMALLINT t)
{
    switch (t) {
    case SQL_TINYINT:
    case SQL_SMALLINT:
    case SQL_INTEGER:
    case SQL_BIGINT:
        return KN_DB_INTEGER;
    case SQL_DECIMAL:
    case SQL_NUMERIC:
    case SQL_REAL:
    case SQL_FLOAT:
    case SQL_DOUBLE:
        return KN_DB_NUMBER;
    case SQL_TYPE_TIMESTAMP:
    case SQL_TIMESTAMP:
        return KN_DB_TIMESTAMP;
    case SQL_TYPE_DATE:
    case SQL_DATE:
        return KN_DB_DATE;
    case SQL_BIT:
        return KN_DB_BOOLEAN;
    default:
        return KN_DB_TEXT;
    }
}

static void free_stmt(void *p)
{
    kn_db_rows *r = p;
    if (r->st) {
        SQLFreeHandle(SQL_HANDLE_STMT, r->st);
        r->st = NULL;
    }
}

kn_db_rows *kn_db_query(kn_db *db, const char *sql, const char *what)
{
    kn_arena *a = db->a;
    if (db->failed) {
        return NULL;
    }
    kn_db_rows *r = kn_alloc(a, sizeof *r);
    memset(r, 0, sizeof *r);
    r->db = db;
    r->what = what;
    if (!SQL_SUCCEEDED(SQLAllocHandle(SQL_HANDLE_STMT, db->dbc, &r->st))) {
        driver_error(a, db->err, "cannot make a statement", SQL_HANDLE_DBC, db->dbc);
        r->st = NULL;
        db->failed = true;
        return NULL;
    }
    kn_arena_defer(a, free_stmt, r);
    SQLSetStmtAttr(r->st, SQL_ATTR_QUERY_TIMEOUT, (SQLPOINTER)(SQLULEN)KN_SQL_TIMEOUT_SECONDS, 0);
    SQLRETURN rc = SQLExecDirectW(r->st, to_wide(a, sql), SQL_NTS);
    if (!SQL_SUCCEEDED(rc) && rc != SQL_NO_DATA) {
        driver_error(a, db->err, what, SQL_HANDLE_STMT, r->st);
        free_stmt(r);
        db->failed = true;
        return NULL;
    }
    SQLSMALLINT n = 0;
    if (!SQL_SUCCEEDED(SQLNumResultCols(r->st, &n)) || n < 0) {
        driver_error(a, db->err, what, SQL_HANDLE_STMT, r->st);
        free_stmt(r);
        db->failed = true;
        return NULL;
    }
    r->n = (size_t)n;
    r->names = kn_alloc_array(a, r->n + 1, sizeof *r->names);
    r->types = kn_alloc_array(a, r->n + 1, sizeof *r->types);
    r->v = kn_alloc_array(a, r->n + 1, sizeof *r->v);
    if (!db->buf) {
        db->buf = kn_alloc_array(a, 4096, sizeof *db->buf);
    }
    r->buf = db->buf;
    for (size_t i = 0; i < r->n; i++) {
        SQLWCHAR name[1024];
        SQLSMALLINT len = 0, type = 0, digits, nullable;
        SQLULEN size;
        if (!SQL_SUCCEEDED(SQLDescribeColW(r->st, (SQLUSMALLINT)(i + 1), name, 1024, &len, &type, &size,
                                           &digits, &nullable))) {
            driver_error(a, db->err, what, SQL_HANDLE_STMT, r->st);
            free_stmt(r);
            db->failed = true;
            return NULL;
        }
        r->names[i] = wide_to_utf8(r, name, len < 0 ? 0 : len > 1023 ? 1023 : (size_t)len);
        r->types[i] = kind_of(type);
    }
    return r;
}

bool kn_db_try(kn_db *db, const char *sql)
{
    if (db->failed) {
        return false;
    }
    SQLHSTMT st = NULL;
    if (!SQL_SUCCEEDED(SQLAllocHandle(SQL_HANDLE_STMT, db->dbc, &st))) {
        return false;
    }
    SQLSetStmtAttr(st, SQL_ATTR_QUERY_TIMEOUT, (SQLPOINTER)(SQLULEN)KN_SQL_TIMEOUT_SECONDS, 0);
    SQLRETURN rc = SQLExecDirectW(st, to_wide(db->a, sql), SQL_NTS);
    bool ok = SQL_SUCCEEDED(rc) || rc == SQL_NO_DATA;
    while (ok && rc != SQL_NO_DATA && (rc = SQLFetch(st)) != SQL_NO_DATA) {
        ok = SQL_SUCCEEDED(rc);
    }
    SQLFreeHandle(SQL_HANDLE_STMT, st);
    return ok;
}

size_t kn_db_columns(const kn_db_rows *r)
{
    return r->n;
}

const char *kn_db_column_name(const kn_db_rows *r, size_t i)
{
    return r->names[i];
}

kn_db_type kn_db_column_type(const kn_db_rows *r, size_t i)
{
    return r->types[i];
}

/* Reads value i of the current row in chunks. */
static bool get_value(kn_db_rows *r, size_t i)
{
    value *v = &r->v[i];
    v->len = 0;
    v->null = false;
    uint32_t hi = 0;
    const SQLLEN chunk = 4096 * sizeof(SQLWCHAR);
    for (;;) {
        SQLLEN ind = 0;
        SQLRETURN rc = SQLGetData(r->st, (SQLUSMALLINT)(i + 1), SQL_C_WCHAR, r->buf, chunk, &ind);
        if (rc == SQL_NO_DATA) {
            break;
        }
        if (!SQL_SUCCEEDED(rc)) {
            driver_error(r->db->a, r->db->err, r->what, SQL_HANDLE_STMT, r->st);
            r->db->failed = true;
            return false;
        }
        if (ind == SQL_NULL_DATA) {
            v->null = true;
            return true;
        }
        /* the units in the buffer: all of them but the terminator when the
         * value goes on, else what the indicator says */
        size_t units = (size_t)(chunk / (SQLLEN)sizeof(SQLWCHAR)) - 1;
        if (rc == SQL_SUCCESS && ind != SQL_NO_TOTAL && ind >= 0) {
            units = (size_t)ind / sizeof(SQLWCHAR);
        }
        append_utf8(r, v, r->buf, units, &hi);
        if (rc == SQL_SUCCESS) {
            break;
        }
    }
    if (!v->p) {
        v->p = kn_alloc(r->db->a, 1);
        v->cap = 0;
    }
    v->p[v->len] = '\0';
    r->db->bytes += v->len;
    return true;
}

bool kn_db_next(kn_db_rows *r)
{
    if (!r->st) {
        return false;
    }
    SQLRETURN rc = SQLFetch(r->st);
    if (rc == SQL_NO_DATA) {
        return false;
    }
    if (!SQL_SUCCEEDED(rc)) {
        driver_error(r->db->a, r->db->err, r->what, SQL_HANDLE_STMT, r->st);
        r->db->failed = true;
        return false;
    }
    r->db->rows++;
    for (size_t i = 0; i < r->n; i++) {
        if (!get_value(r, i)) {
            return false;
        }
    }
    return true;
}

const char *kn_db_get(kn_db_rows *r, size_t i, size_t *len)
{
    const value *v = &r->v[i];
    *len = v->null ? 0 : v->len;
    return v->null ? NULL : v->p;
}

void kn_db_done(kn_db_rows *r)
{
    free_stmt(r);
}
