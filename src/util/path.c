/* path.c - the default root of a schema (the repository it lies in, else
 * its folder: SPEC §9) and the tidy spelling of paths in messages. */
#include "path.h"

#include <errno.h>
#include <limits.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "text.h"

bool kn_path_is_project(kn_arena *a, const char *dir)
{
    struct stat st;
    const char *git = strcmp(dir, "/") == 0 ? "/.git" : kn_printf(a, "%s/.git", dir);
    return stat(git, &st) == 0 && (S_ISDIR(st.st_mode) || S_ISREG(st.st_mode));
}

char *kn_path_real(kn_arena *a, const char *path)
{
    /* A buffer of our own: a heap result would leak if a later arena
     * allocation ran out of memory and jumped. */
    char r[PATH_MAX];
    if (!realpath(path, r)) {
        if (errno == ENOMEM) {
            kn_arena_oom(a);
        }
        return NULL;
    }
    return kn_strdup(a, r);
}

/* Cuts the last component off an absolute path ("/a/b" -> "/a", "/a" -> "/"). */
static void cut_last(char *p)
{
    char *slash = strrchr(p, '/');
    if (slash) {
        *(slash == p ? slash + 1 : slash) = '\0';
    }
}

char *kn_path_real_dir(kn_arena *a, const char *path)
{
    char *real = kn_path_real(a, path);
    if (real) {
        cut_last(real);
        return real;
    }
    const char *slash = strrchr(path, '/');
    if (!slash) {
        return kn_path_real(a, ".");
    }
    return kn_path_real(a, slash == path ? "/" : kn_strndup(a, path, (size_t)(slash - path)));
}

char *kn_path_default_root(kn_arena *a, const char *schema_path)
{
    char *own = kn_path_real_dir(a, schema_path);
    if (!own) {
        return NULL;
    }
    char *dir = kn_strdup(a, own);
    for (;;) {
        if (kn_path_is_project(a, dir)) {
            return dir;
        }
        if (strcmp(dir, "/") == 0 || !strchr(dir, '/')) {
            return own;
        }
        cut_last(dir);
    }
}

char *kn_path_tidy(kn_arena *a, const char *path)
{
    size_t len = strlen(path);
    bool absolute = path[0] == '/';
    /* Component starts and lengths, as a stack. */
    const char **part = kn_alloc_array(a, len / 2 + 2, sizeof *part);
    size_t *plen = kn_alloc_array(a, len / 2 + 2, sizeof *plen);
    size_t n = 0, ups = 0; /* ups: leading ".." kept at the bottom */
    const char *p = path;
    while (*p) {
        while (*p == '/') {
            p++;
        }
        const char *start = p;
        while (*p && *p != '/') {
            p++;
        }
        size_t l = (size_t)(p - start);
        if (l == 0 || (l == 1 && start[0] == '.')) {
            continue;
        }
        if (l == 2 && start[0] == '.' && start[1] == '.') {
            if (n > ups) {
                n--;
                continue;
            }
            if (absolute) {
                continue; /* "/.." is "/" */
            }
            ups++;
        }
        part[n] = start;
        plen[n] = l;
        n++;
    }
    char *out = kn_alloc(a, len + 2);
    size_t at = 0;
    if (absolute) {
        out[at++] = '/';
    }
    for (size_t i = 0; i < n; i++) {
        if (i) {
            out[at++] = '/';
        }
        memcpy(out + at, part[i], plen[i]);
        at += plen[i];
    }
    if (at == 0) {
        out[at++] = '.';
    }
    out[at] = '\0';
    return out;
}
