/* odbc_none.c - knowable built without unixODBC (meson -Dodbc=disabled, or
 * its development files absent): a database --data is refused (exit 2);
 * nothing else here is ever reached. */
#include "odbc.h"

bool kn_odbc_built(void)
{
    return false;
}

kn_db *kn_db_open(kn_arena *a, const char *data, FILE *err)
{
    (void)a;
    (void)data;
    fputs("knowable: this knowable was built without database support\n", err);
    return NULL;
}

kn_sql_dialect kn_db_dialect(const kn_db *db)
{
    (void)db;
    return KN_SQL_ANSI;
}

kn_db_rows *kn_db_query(kn_db *db, const char *sql, const char *what)
{
    (void)db;
    (void)sql;
    (void)what;
    return NULL;
}

bool kn_db_try(kn_db *db, const char *sql)
{
    (void)db;
    (void)sql;
    return false;
}

bool kn_db_next(kn_db_rows *r)
{
    (void)r;
    return false;
}

const char *kn_db_get(kn_db_rows *r, size_t i, size_t *len)
{
    (void)r;
    (void)i;
    *len = 0;
    return NULL;
}

size_t kn_db_columns(const kn_db_rows *r)
{
    (void)r;
    return 0;
}

const char *kn_db_column_name(const kn_db_rows *r, size_t i)
{
    (void)r;
    (void)i;
    return "";
}

kn_db_type kn_db_column_type(const kn_db_rows *r, size_t i)
{
    (void)r;
    (void)i;
    return KN_DB_TEXT;
}

void kn_db_done(kn_db_rows *r)
{
    (void)r;
}

bool kn_db_failed(const kn_db *db)
{
    (void)db;
    return true;
}

void kn_db_traffic(const kn_db *db, uint64_t *rows, uint64_t *bytes)
{
    (void)db;
    *rows = *bytes = 0;
}
