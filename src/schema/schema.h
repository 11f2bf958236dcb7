/* schema.h - the schema model (SPEC §3): typed structures built from the
 * YAML tree, each value keeping the node it came from so that a check can
 * point at the exact value at fault.
 *
 * The loader (load.c) reports schema-shape, unknown-reference,
 * duplicate-key, bad-duration, bad-pattern, derivation-cycle and
 * include-refused, and resolves every reference it can: a kn_ref whose
 * target is NULL after loading was reported as unknown (or was absent, in
 * which case its node is NULL too).  Analyses read the model and never
 * change it, except for the `used` marks and the per-column results. */
#ifndef KN_SCHEMA_SCHEMA_H
#define KN_SCHEMA_SCHEMA_H

#include <stdbool.h>
#include <stddef.h>

#include "../report/diag.h"
#include "../time/duration.h"
#include "../util/arena.h"
#include "../yaml/tree.h"

typedef struct kn_event kn_event;
typedef struct kn_source kn_source;
typedef struct kn_column kn_column;
struct kn_waiver;

/* A reference by name.  node is the scalar that names it (NULL: absent). */
typedef struct kn_ref {
    const char *name;
    kn_node *node;
    void *target; /* kn_event *, kn_source * or kn_column *; NULL if unresolved */
} kn_ref;

#define KN_REF_EVENT(r) ((kn_event *)(r).target)
#define KN_REF_SOURCE(r) ((kn_source *)(r).target)
#define KN_REF_COLUMN(r) ((kn_column *)(r).target)

/* A LAG: t(b) - t(a) in [lo, hi] where lo is the smallest value the MIN
 * duration can take and hi the largest the MAX can take (calendar intervals
 * relaxed so that results hold for every calendar).  hi may be KN_TIME_INF. */
typedef struct kn_lag {
    bool present;
    int64_t lo, hi;
    kn_node *node; /* the LAG value (scalar or [MIN, MAX] sequence) */
} kn_lag;

/* One constraint of the timeline: t(later) - t(earlier) in lag.
 * For `x: {after: {e: L}}` earlier = e, later = x; for `before`, earlier = x,
 * later = e.  ref is the event name node inside the after/before mapping. */
typedef struct kn_constraint {
    kn_event *earlier, *later;
    kn_lag lag;
    kn_ref ref;   /* the other event, as named */
    bool before;  /* declared with `before` */
    bool broken;  /* its lag could not be read: it ties the two events, but
                     how closely is unknown (lag present is false) */
} kn_constraint;

struct kn_event {
    const char *name;
    kn_node *key;   /* the name as a mapping key (primary position) */
    kn_node *value; /* the mapping, or a null scalar */
    const char *description;
    kn_constraint *cons; /* the constraints declared on this event */
    size_t n_cons;
    size_t index; /* position in kn_schema.events */
    bool used;    /* some column or the prediction refers to it */
    bool broken;  /* a constraint of its own is malformed or names no event:
                     set aside (with its own error) from the timeline */
    kn_ref *first_of; /* -> kn_event: the earliest of these (SPEC §3.3); such
                         an event has no constraints of its own */
    size_t n_first_of;
    kn_node *first_of_node;
    struct kn_waiver *waivers;
    size_t n_waivers;
};

typedef enum kn_source_kind { KN_SOURCE_UNSET, KN_SOURCE_INTERNAL, KN_SOURCE_EXTERNAL } kn_source_kind;
typedef enum kn_history {
    KN_HISTORY_UNSET,
    KN_HISTORY_APPEND,
    KN_HISTORY_VERSIONED,
    KN_HISTORY_OVERWRITTEN,
} kn_history;

/* Source fields by index, for the rulebook's `require` lists and the
 * register; kn_source.field[i] is the value node (NULL: absent). */
typedef enum kn_source_field {
    KN_SF_KIND,
    KN_SF_DESCRIPTION,
    KN_SF_OWNER,
    KN_SF_CONTACT,
    KN_SF_LATENCY,
    KN_SF_REFRESH,
    KN_SF_HISTORY,
    KN_SF_PROVIDER,
    KN_SF_LICENSE,
    KN_SF_RETRIEVED,
    KN_SF_VERSION,
    KN_SF_POINT_IN_TIME,
    KN_SF_DOCUMENTATION,
    KN_SF_MATURES,
    KN_SF_COUNT
} kn_source_field;

/* The key name of each field ("kind", "description", ...). */
extern const char *const kn_source_field_names[KN_SF_COUNT];

struct kn_source {
    const char *name;
    kn_node *key;
    kn_node *value;
    kn_node *field[KN_SF_COUNT];
    kn_source_kind kind;
    const char *description, *owner, *contact, *provider, *license, *version,
        *documentation, *retrieved;
    kn_lag latency;         /* absent: [0, 0] with present = false */
    bool has_refresh;
    int64_t refresh;        /* upper bound of the refresh period, microseconds */
    kn_history history;
    int point_in_time;      /* -1 unset, 0 false, 1 true */
    kn_lag matures;         /* how long a record's values may still change */
    struct kn_waiver *waivers;
    size_t n_waivers;
    size_t index;
    bool used;
    bool broken; /* a value of its own is malformed: set aside, and the
                    timing of the columns read from it is not judged */
};

typedef enum kn_role {
    KN_ROLE_FEATURE,
    KN_ROLE_TARGET,
    KN_ROLE_IDENTIFIER,
    KN_ROLE_TIMESTAMP,
    KN_ROLE_SPLIT,
    KN_ROLE_WEIGHT,
    KN_ROLE_EXCLUDED,
} kn_role;

typedef enum kn_value_type {
    KN_TYPE_UNSET,
    KN_TYPE_NUMBER,
    KN_TYPE_CATEGORY,
    KN_TYPE_BOOLEAN,
    KN_TYPE_TEXT,
    KN_TYPE_TIMESTAMP,
    KN_TYPE_DATE,
} kn_value_type;

typedef enum kn_anon_method {
    KN_ANON_UNSET,
    KN_ANON_HASH,
    KN_ANON_TOKEN,
    KN_ANON_GENERALIZED,
    KN_ANON_MASKED,
} kn_anon_method;

typedef struct kn_waiver {
    kn_ref rule_ref;  /* rule id as named; target unused */
    int rule;         /* kn_rule, or -1 when unknown */
    const char *reason;
    kn_node *reason_node;
    const char *expires; /* YYYY-MM-DD or NULL */
    kn_node *expires_node;
    kn_node *node;    /* the waiver mapping */
    size_t matched;   /* diagnostics it hid */
} kn_waiver;

struct kn_column {
    const char *name;
    kn_node *key;
    kn_node *value; /* mapping, or null */
    size_t index;

    kn_role role;
    kn_value_type type;
    kn_node *role_node;
    kn_node *type_node;

    kn_ref known;   /* -> kn_event */
    kn_ref *one_of; /* known: {one_of: [...]}: -> kn_event, the row's event is
                       one of these (known itself stays empty) */
    size_t n_one_of;
    kn_node *one_of_node;
    kn_lag delay;
    kn_ref source;  /* -> kn_source */

    struct {
        bool present;
        bool has_offset;   /* as_of: {event, offset} */
        kn_node *node;
        kn_ref *keys; /* -> kn_column */
        size_t n_keys;
        kn_ref as_of;  /* -> kn_event */
        kn_interval offset;
        kn_node *offset_node;
        kn_ref source; /* -> kn_source; absent: the column's source */
    } join;

    kn_ref *derived_from; /* -> kn_column */
    size_t n_derived;
    kn_node *derived_node;

    struct {
        bool present;
        kn_node *node;
        kn_ref anchor; /* -> kn_event */
        kn_interval from, to;
        kn_node *from_node, *to_node;
    } window;

    kn_ref proxy_of; /* -> kn_column */

    const char *format;
    kn_node *format_node;
    void *format_code; /* pcre2_code_8 *, compiled once (owned via arena defer) */

    struct {
        bool present;
        kn_anon_method method;
        int salted; /* -1 unset */
        kn_node *node;
        kn_node *method_node;
        kn_node *salted_node;
    } anonymized;

    kn_node *qi_node;

    const char *description;
    kn_node *description_node;

    kn_waiver *waivers;
    size_t n_waivers;

    int quasi_identifier; /* -1 unset, 0, 1 (beside the flags: no padding) */
    /* Set aside with its own error (SPEC §4, independence of findings): a
     * value of its own is malformed, a reference names nothing, or it lies
     * on a derivation cycle.  Analyses skip it; what is derived from it is
     * judged on its other inputs. */
    bool broken;
    bool stray_key; /* it has a key the format does not know (ignored) */
};

typedef enum kn_step_kind {
    KN_STEP_SCALE,
    KN_STEP_IMPUTE,
    KN_STEP_ENCODE,
    KN_STEP_TARGET_ENCODE,
    KN_STEP_SELECT,
    KN_STEP_REDUCE,
    KN_STEP_RESAMPLE,
    KN_STEP_DISCRETIZE,
    KN_STEP_CLIP,
    KN_STEP_CUSTOM,
} kn_step_kind;

typedef enum kn_fit { KN_FIT_UNSET, KN_FIT_TRAINING, KN_FIT_FOLD, KN_FIT_ALL_ROWS, KN_FIT_NONE } kn_fit;

typedef struct kn_step {
    kn_node *node;
    kn_step_kind kind;
    kn_node *kind_node;
    kn_fit fit;
    kn_node *fit_node;
    kn_ref *columns; /* -> kn_column; NULL/0 = all features */
    size_t n_columns;
    const char *description;
    struct kn_waiver *waivers;
    size_t n_waivers;
} kn_step;

typedef enum kn_split_method {
    KN_SPLIT_UNSET,
    KN_SPLIT_RANDOM,
    KN_SPLIT_TIME,
    KN_SPLIT_GROUP,
    KN_SPLIT_GROUP_TIME,
    KN_SPLIT_PREDEFINED,
} kn_split_method;

typedef struct kn_split {
    bool present;
    kn_node *node;
    kn_split_method method;
    kn_node *method_node;
    kn_ref column, time_column, group_column; /* -> kn_column */
    bool has_gap;
    kn_interval gap;
    kn_node *gap_node;
    long long folds;
    bool purge;
    kn_node *purge_node;
    bool has_embargo;
    kn_interval embargo;
    kn_node *embargo_node;
    struct kn_waiver *waivers;
    size_t n_waivers;
} kn_split;

typedef struct kn_prediction {
    kn_node *node;
    kn_ref moment;        /* -> kn_event */
    kn_ref target;        /* -> kn_column */
    kn_ref entity;        /* -> kn_column */
    kn_ref moment_column; /* -> kn_column */
    kn_ref label_known;   /* -> kn_event */
    struct kn_waiver *waivers;
    size_t n_waivers;
} kn_prediction;

/* One file that took part (the schema and its includes). */
typedef struct kn_schema_file {
    const char *path;    /* as opened */
    const char *display; /* as printed */
    kn_node *root;
    const kn_node *via; /* the include item that read it first; NULL: the schema */
} kn_schema_file;

typedef struct kn_name_map kn_name_map; /* string -> pointer (names.c) */

typedef struct kn_schema {
    const char *path;    /* display path of the main file */
    kn_node *root;
    const char *dataset;
    kn_node *dataset_node;
    const char *description;
    kn_prediction prediction;

    kn_event **events;
    size_t n_events;
    kn_source **sources;
    size_t n_sources;
    kn_column **columns;
    size_t n_columns;
    kn_step *steps;
    size_t n_steps;
    kn_split split;

    kn_schema_file *files;
    size_t n_files;

    kn_name_map *event_names, *source_names, *column_names;
    bool shape_ok; /* no schema error at all (the broken marks of events,
                      sources and columns say what an error affects) */
    bool prediction_broken; /* prediction's moment or target names nothing,
                               or has the wrong type */
} kn_schema;

struct kn_rulebook;

typedef struct kn_load_options {
    const char *root;   /* includes may not leave it; NULL: schema's folder */
    kn_yaml_limits limits;
    const struct kn_rulebook *rulebook; /* for compiling patterns, may be NULL */
    const char *stdin_name; /* the path a schema read from "-" stands for, or NULL */
    struct kn_file_cache *cache; /* included files parsed once per run (yaml/cache.h); NULL: none */
    /* Text that stands for a file (an editor's unsaved buffer): given the
     * file's real path, its text and length, or NULL to read the file.
     * May be NULL.  The text must outlive the model. */
    const char *(*overlay)(void *ctx, const char *real, size_t *len);
    void *overlay_ctx;
} kn_load_options;

/* Loads a schema file and its includes; path "-" reads standard input
 * (printed as opt->stdin_name, or "<stdin>").  Returns the model (arena memory)
 * or NULL when the file could not be read or parsed at all (the sink then
 * holds the reason and is marked fatal).  A model with schema errors is
 * still returned, with shape_ok false. */
kn_schema *kn_schema_load(kn_arena *a, kn_sink *sink, const char *path,
                          const kn_load_options *opt);

/* Lookups by name; NULL when absent. */
kn_event *kn_schema_event(const kn_schema *s, const char *name);
kn_source *kn_schema_source(const kn_schema *s, const char *name);
kn_column *kn_schema_column(const kn_schema *s, const char *name);

/* Names for enums, as written in the schema. */
const char *kn_role_name(kn_role r);
const char *kn_type_name(kn_value_type t);
const char *kn_step_name(kn_step_kind k);
const char *kn_fit_name(kn_fit f);
const char *kn_split_method_name(kn_split_method m);
const char *kn_history_name(kn_history h);

/* The position of a node, or of the column's key when node is NULL. */
const kn_pos *kn_column_pos(const kn_column *c, const kn_node *node);

#endif
