/* tree.h - a YAML document as a tree whose every node knows its position.
 *
 * The loader drives libyaml's event parser and builds the tree iteratively
 * (no recursion, so nesting depth costs no C stack).  Aliases point at the
 * anchored node (the tree is a DAG); the expanded size is computed once and
 * capped, so a "billion laughs" file is refused without being expanded. */
#ifndef KN_YAML_TREE_H
#define KN_YAML_TREE_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "../util/arena.h"
#include "../util/pos.h"

typedef enum kn_node_kind {
    KN_NODE_SCALAR,
    KN_NODE_SEQ,
    KN_NODE_MAP,
} kn_node_kind;

typedef struct kn_node kn_node;

typedef struct kn_pair {
    kn_node *key;
    kn_node *value;
} kn_pair;

/* The order of the fields keeps it at 72 bytes (kind and plain share a
 * word): a 10,000-column schema has about 80,000 nodes. */
struct kn_node {
    kn_pos pos;
    kn_node_kind kind;
    bool plain;      /* scalar in plain style (unquoted): may be null/bool/int */
    const char *tag; /* explicit tag, or NULL */
    const char *raw; /* the file's bytes from this node's start to the end */
    size_t raw_len;
    union {
        struct {
            char *text; /* NUL-terminated; may contain NUL bytes before len */
            size_t len;
        } scalar;
        struct {
            kn_node **items;
            size_t n;
        } seq;
        struct {
            kn_pair *pairs;
            size_t n;
        } map;
    } u;
};

typedef struct kn_yaml_limits {
    size_t max_file_bytes;   /* default 8 MiB */
    size_t max_depth;        /* default 64 */
    size_t max_nodes;        /* default 1,000,000 (after alias expansion) */
    size_t max_scalar_bytes; /* default 64 KiB */
} kn_yaml_limits;

void kn_yaml_limits_default(kn_yaml_limits *l);

/* What the reader finds goes to the caller through this (the reader knows
 * nothing of diagnostics): a syntax problem (fatal: the parse stops) or a
 * key given twice in one mapping (the parse goes on).  subject may be NULL;
 * note_at and note are NULL when there is no second position. */
typedef enum kn_yaml_problem { KN_YAML_SYNTAX, KN_YAML_DUPLICATE_KEY } kn_yaml_problem;
typedef struct kn_yaml_reporter {
    void (*problem)(void *ctx, kn_yaml_problem what, const kn_pos *at, const char *subject,
                    const char *message, const kn_pos *note_at, const char *note);
    void *ctx;
} kn_yaml_reporter;

/* Parses buf (len bytes) as one YAML document.  display is the path printed
 * in diagnostics.  Returns the root node (arena memory), or NULL after
 * reporting a syntax problem (a duplicate key is reported and does not stop
 * loading).  An empty document yields a null scalar. */
kn_node *kn_yaml_parse(kn_arena *a, const kn_yaml_reporter *rep, const char *display,
                       const char *buf, size_t len, const kn_yaml_limits *lim);

/* Reads a file (refusing more than lim->max_file_bytes) and parses it.
 * On a read failure reports a syntax problem at display:0 and returns NULL. */
kn_node *kn_yaml_load_file(kn_arena *a, const kn_yaml_reporter *rep, const char *path,
                           const char *display, const kn_yaml_limits *lim);

/* Reads a whole file into arena memory (NUL-terminated).  Returns false and
 * sets *err (static text) on failure or when the file exceeds max bytes. */
bool kn_read_file(kn_arena *a, const char *path, size_t max, char **out,
                  size_t *len, const char **err);

/* Scalar helpers.  YAML 1.1 plain scalars: null is "", "~", "null", "Null",
 * "NULL"; booleans are true/false/yes/no/on/off in their three casings. */
bool kn_node_is_null(const kn_node *n);
bool kn_node_bool(const kn_node *n, bool *out);
bool kn_node_int(const kn_node *n, long long *out);
bool kn_node_number(const kn_node *n, double *out);
/* The scalar's text, or NULL when n is not a scalar. */
const char *kn_node_str(const kn_node *n);
/* Looks a key up in a mapping; NULL when absent or n is not a mapping. */
kn_node *kn_map_get(const kn_node *n, const char *key);
const char *kn_node_kind_name(const kn_node *n);

/* The position of the byte at offset off of a scalar's value, when the
 * value is written on one line without escapes (plain, or quoted without
 * backslashes or doubled quotes); otherwise the scalar's own position. */
kn_pos kn_node_char_pos(const kn_node *n, size_t off);

#endif
