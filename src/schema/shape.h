/* shape.h - the shape of the schema format (SPEC §3) as tables: which keys
 * each mapping takes, of which kind, which are required.  The loader checks
 * documents against these tables and `knowable json-schema` prints them as
 * a JSON Schema, so the two can never disagree. */
#ifndef KN_SCHEMA_SHAPE_H
#define KN_SCHEMA_SHAPE_H

#include <stdbool.h>
#include <stdio.h>
#include <stddef.h>

typedef enum kn_value_kind {
    KN_V_STRING,      /* any non-null scalar */
    KN_V_INT,         /* integer */
    KN_V_VERSION,     /* the integer 1 */
    KN_V_BOOL,        /* YAML 1.1 boolean */
    KN_V_DATE,        /* YYYY-MM-DD */
    KN_V_NAME,        /* a name of an event, column or source (ref says which) */
    KN_V_NAMES,       /* a list of names */
    KN_V_NAME_OR_NAMES, /* one name or a list of names */
    KN_V_DURATION,    /* ISO 8601 duration */
    KN_V_LAG,         /* DURATION or [MIN, MAX] */
    KN_V_ENUM,        /* one of values */
    KN_V_MAP,         /* mapping with keys from sub */
    KN_V_LIST_OF_MAP, /* list of mappings with keys from sub */
    KN_V_RELATION,    /* event name, or mapping event -> LAG (events.after/before) */
    KN_V_NAMED_MAPS,  /* mapping name -> mapping with keys from sub (or null when nullable) */
    KN_V_PATHS,       /* list of relative paths */
    KN_V_PATTERN,     /* a PCRE2 pattern */
    KN_V_NAME_OR_MAP, /* a name, or a mapping with keys from sub */
} kn_value_kind;

typedef enum kn_ref_kind { KN_REF_NONE, KN_REF_EVENT_K, KN_REF_COLUMN_K, KN_REF_SOURCE_K, KN_REF_RULE_K } kn_ref_kind;

typedef struct kn_shape kn_shape;

typedef struct kn_key_spec {
    const char *name;
    kn_value_kind kind;
    bool required;
    const char *const *values; /* KN_V_ENUM: NULL-terminated */
    const kn_shape *sub;       /* KN_V_MAP, KN_V_LIST_OF_MAP, KN_V_NAMED_MAPS */
    kn_ref_kind ref;
    bool nullable;             /* KN_V_NAMED_MAPS: entries may be null */
    const char *doc;
    const char *unless; /* required unless this other key is present */
} kn_key_spec;

struct kn_shape {
    const char *what; /* "column", "source" ... for messages */
    const kn_key_spec *keys;
    size_t n_keys;
};

typedef struct kn_exclusion {
    const kn_shape *shape;
    const char *key, *other; /* not both in one mapping of shape */
} kn_exclusion;
extern const kn_exclusion kn_exclusions[];
extern const size_t kn_n_exclusions;

extern const kn_shape kn_shape_top;
extern const kn_shape kn_shape_included;

/* True when the loader's key indices follow these tables (a unit test). */
bool kn_shape_selfcheck(void);

/* Index of key in shape, or -1. */
int kn_shape_find(const kn_shape *s, const char *key);



/* Value lists, in the order of the enums of schema.h (without UNSET). */
extern const char *const kn_roles[], *const kn_types[], *const kn_kinds[],
    *const kn_histories[], *const kn_anon_methods[], *const kn_steps[], *const kn_fits[],
    *const kn_split_methods[];
extern const kn_shape kn_shape_source;

/* `knowable json-schema`: the tables as a JSON Schema (draft-07). */
void kn_json_schema_write(FILE *out);
#endif
