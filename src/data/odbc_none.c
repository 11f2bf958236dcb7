/* odbc_none.c - knowable built without unixODBC (meson -Dodbc=disabled, or
 * its development files absent): a database --data is refused (exit 2). */
#include "odbc.h"

bool kn_odbc_built(void)
{
    return false;
}

long kn_odbc_probe(kn_arena *a, const char *data, const char *table, const char *query_sql, FILE *err)
{
    (void)a;
    (void)data;
    (void)table;
    (void)query_sql;
    fputs("knowable: this knowable was built without database support\n", err);
    return -1;
}
