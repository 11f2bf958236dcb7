/* dict.h - a capped dictionary of values: text -> dense id, for the
 * categorical cells of the sample (src/data/table.c) and for the reference
 * probes.  Id 0 is reserved for "no value"; ids 1..levels are given in
 * order of first appearance.  Once the cap on levels or on bytes of text
 * is reached, new values get KN_DICT_OTHER and the dictionary is "full"
 * (a column with so many values is high-cardinality; no statistic reads
 * it).  Values are compared exactly, byte for byte.
 *
 * Memory: arena memory, about 40 bytes per level plus its text, and a slot
 * table of at most 4 * 12 bytes per level. */
#ifndef KN_DATA_DICT_H
#define KN_DATA_DICT_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "../util/arena.h"

#define KN_DICT_OTHER UINT32_MAX

typedef struct kn_dict kn_dict;

kn_dict *kn_dict_new(kn_arena *a, size_t max_levels, size_t max_text);

/* The id of s[0..len), adding it while the caps allow; KN_DICT_OTHER after. */
uint32_t kn_dict_id(kn_dict *d, const char *s, size_t len);

/* Distinct values kept (ids 1..levels). */
size_t kn_dict_levels(const kn_dict *d);

/* True once a value was refused for a cap. */
bool kn_dict_full(const kn_dict *d);

/* The text of id (1..levels), NUL-terminated; its length in *len. */
const char *kn_dict_text(const kn_dict *d, uint32_t id, size_t *len);

#endif
