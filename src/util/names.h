/* names.h - a string -> pointer map (open addressing, arena memory), used
 * for event, source and column names.  Insertion order is kept. */
#ifndef KN_UTIL_NAMES_H
#define KN_UTIL_NAMES_H

#include <stdbool.h>
#include <stddef.h>

#include "arena.h"

typedef struct kn_name_map kn_name_map;

kn_name_map *kn_names_new(kn_arena *a);
/* A map sized for about n names, so that filling it never rehashes. */
kn_name_map *kn_names_new_sized(kn_arena *a, size_t n);
/* Inserts name -> value; returns false (and leaves the map) when the name
 * is already present.  name is borrowed: it must outlive the map. */
bool kn_names_put(kn_name_map *m, const char *name, void *value);
void *kn_names_get(const kn_name_map *m, const char *name);
size_t kn_names_count(const kn_name_map *m);
/* The i-th name inserted (0 <= i < count). */
const char *kn_names_at(const kn_name_map *m, size_t i);

#endif
