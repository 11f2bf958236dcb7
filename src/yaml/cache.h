/* cache.h - parsed YAML files kept for a run, keyed by real path, so that
 * a register included by many schemas is read and parsed once per run
 * (200 schemas including one register of 1.6 MB once parsed it 200 times).
 * The trees are read-only once parsed; they live in the cache's arena,
 * which must outlive every model built from them. */
#ifndef KN_YAML_CACHE_H
#define KN_YAML_CACHE_H

#include "../util/arena.h"
#include "tree.h"

typedef struct kn_file_cache kn_file_cache;

/* A cache in arena a (the run's). */
kn_file_cache *kn_file_cache_new(kn_arena *a);

/* The tree of the file at real path real, parsed with kn_yaml_load_file on
 * first use (problems go to rep then, positions name display) and the
 * same tree afterwards; NULL, every time, when the file could not be read
 * or parsed. */
kn_node *kn_file_cache_load(kn_file_cache *c, const kn_yaml_reporter *rep, const char *real,
                            const char *display, const kn_yaml_limits *lim);

/* Files parsed so far (for tests and figures). */
size_t kn_file_cache_count(const kn_file_cache *c);

#endif
