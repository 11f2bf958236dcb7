/* odbc_common.c - what both builds share (odbc.h): recognising a
 * connection and masking its password. */
#include <string.h>
#include <strings.h>

#include "odbc.h"

bool kn_odbc_is_connection(const char *data)
{
    return data && strncmp(data, KN_ODBC_PREFIX, strlen(KN_ODBC_PREFIX)) == 0;
}

/* Whether the attribute starting at p (after a ';' or the start) is a
 * password: PWD or PASSWORD, any case, spaces before '='. */
static bool is_password(const char *p, size_t n)
{
    while (n && (p[n - 1] == ' ' || p[n - 1] == '\t')) {
        n--;
    }
    while (n && (*p == ' ' || *p == '\t')) {
        p++, n--;
    }
    return (n == 3 && strncasecmp(p, "pwd", 3) == 0) || (n == 8 && strncasecmp(p, "password", 8) == 0);
}

char *kn_odbc_display(kn_arena *a, const char *data)
{
    size_t len = strlen(data);
    char *out = kn_alloc(a, 2 * len + 8); /* "PWD=;" (5 bytes) becomes "PWD=***;" (8) */
    size_t w = 0;
    const char *p = data;
    while (*p) {
        const char *eq = strchr(p, '=');
        const char *semi = strchr(p, ';');
        if (!eq || (semi && semi < eq)) {
            /* no value in this attribute */
            size_t n = semi ? (size_t)(semi - p) + 1 : strlen(p);
            memcpy(out + w, p, n);
            w += n;
            p += n;
            continue;
        }
        const char *v = eq + 1;
        const char *end;
        if (*v == '{') {
            /* a braced value runs to the matching '}' ("}}" is a literal '}') */
            end = v + 1;
            while (*end && !(*end == '}' && end[1] != '}')) {
                end += *end == '}' ? 2 : 1;
            }
            if (*end) {
                end++;
            }
        } else {
            end = strchr(v, ';');
            if (!end) {
                end = v + strlen(v);
            }
        }
        size_t key = (size_t)(v - p);
        memcpy(out + w, p, key);
        w += key;
        if (is_password(p, (size_t)(eq - p))) {
            memcpy(out + w, "***", 3);
            w += 3;
        } else {
            memcpy(out + w, v, (size_t)(end - v));
            w += (size_t)(end - v);
        }
        p = end;
        if (*p == ';') {
            out[w++] = *p++;
        }
    }
    out[w] = '\0';
    return out;
}
