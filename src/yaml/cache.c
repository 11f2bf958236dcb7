/* cache.c - parsed YAML files kept for a run, keyed by real path (see
 * cache.h).  A file that failed is remembered as failed, so a broken
 * register is reported once and not read again. */
#include "cache.h"

#include "../util/names.h"

struct kn_file_cache {
    kn_arena *a;
    kn_name_map *trees; /* real path -> entry */
};

typedef struct entry {
    kn_node *root; /* NULL: the file could not be read or parsed */
} entry;

kn_file_cache *kn_file_cache_new(kn_arena *a)
{
    kn_file_cache *c = kn_alloc(a, sizeof *c);
    c->a = a;
    c->trees = kn_names_new(a);
    return c;
}

kn_node *kn_file_cache_load(kn_file_cache *c, const kn_yaml_reporter *rep, const char *real,
                            const char *display, const kn_yaml_limits *lim)
{
    entry *e = kn_names_get(c->trees, real);
    if (e) {
        return e->root;
    }
    e = kn_alloc(c->a, sizeof *e);
    e->root = kn_yaml_load_file(c->a, rep, real, kn_strdup(c->a, display), lim);
    kn_names_put(c->trees, kn_strdup(c->a, real), e);
    return e->root;
}

size_t kn_file_cache_count(const kn_file_cache *c)
{
    return kn_names_count(c->trees);
}
