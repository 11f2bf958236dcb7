/* load.c - builds the schema model (schema.h) from YAML trees: checks each
 * mapping against the shape tables (shape.c), parses durations and lags,
 * compiles format patterns, merges included files, resolves every name and
 * finds derivation cycles.  Hands the model on to the analyses. */
#include "schema.h"

#include <errno.h>
#include <limits.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#define PCRE2_CODE_UNIT_WIDTH 8
#include <pcre2.h>

#include "../report/yaml_sink.h"
#include "../util/names.h"
#include "../yaml/cache.h"
#include "../util/path.h"
#include "../util/text.h"
#include "shape.h"

#define MAX_INCLUDE_DEPTH 16
#define MAX_INCLUDED_FILES 256
#define MAX_KEYS 16 /* the most keys a shape table gives one mapping (kn_shape_selfcheck) */

/* Indices into the shape tables of shape.c (kept in the same order; the
 * unit test test_schema checks them against the tables' names). */
enum { T_KNOWABLE, T_DATASET, T_DESCRIPTION, T_INCLUDE, T_PREDICTION, T_EVENTS, T_SOURCES, T_COLUMNS, T_PIPELINE, T_SPLIT };
enum { I_KNOWABLE, I_DESCRIPTION, I_INCLUDE, I_EVENTS, I_SOURCES };
enum { P_MOMENT, P_TARGET, P_ENTITY, P_MOMENT_COLUMN, P_LABEL_KNOWN, P_WAIVE };
enum { E_AFTER, E_BEFORE, E_DESCRIPTION, E_FIRST_OF, E_WAIVE };
enum { C_ROLE, C_TYPE, C_KNOWN, C_DELAY, C_SOURCE, C_JOIN, C_DERIVED, C_WINDOW, C_PROXY, C_FORMAT, C_ANON, C_QI, C_DESCRIPTION, C_WAIVE };
enum { J_KEY, J_AS_OF, J_SOURCE };
enum { AO_EVENT, AO_OFFSET };
enum { K_ONE_OF };
enum { W_ANCHOR, W_FROM, W_TO };
enum { A_METHOD, A_SALTED };
enum { V_RULE, V_REASON, V_EXPIRES };
enum { S_STEP, S_FIT, S_COLUMNS, S_DESCRIPTION, S_WAIVE };
enum { X_METHOD, X_COLUMN, X_TIME_COLUMN, X_GROUP_COLUMN, X_GAP, X_FOLDS, X_PURGE, X_EMBARGO, X_WAIVE };
#define SRC_WAIVE KN_SF_COUNT /* the source shape's waive follows its fields */

const char *const kn_source_field_names[KN_SF_COUNT] = {
    "kind", "description", "owner", "contact", "latency", "refresh", "history",
    "provider", "license", "retrieved", "version", "point_in_time", "documentation", "matures",
};

/* Who owns a mapping, for messages; formatted only when a message needs it. */
typedef struct owner {
    const char *what; /* "column", "source", "event", "prediction", ... */
    const char *name; /* NULL for singletons */
    long index;       /* >= 0 for list items (1-based when printed) */
    kn_node *at;      /* where "missing key" diagnostics point */
} owner;

typedef struct file_ctx {
    const char *real;    /* realpath */
    const char *display; /* as printed */
    kn_node *via;        /* the include item that led here; NULL for the schema */
} file_ctx;

/* The work "did you mean" may take over one load, in kn_suggest_within's
 * units (about a byte compared each): at most about a second in a release
 * build (1,000 unknown references among 1,000 names of 250 bytes take half
 * of it). */
#define KN_LOAD_SUGGEST_BUDGET ((size_t)1 << 30)

typedef struct ld {
    kn_arena *a;
    kn_sink *sink;
    kn_schema *s;
    const kn_load_options *opt;
    const char *root_real;
    const char *stdin_real; /* the schema read from standard input ("-"): its
                               path as named by --stdin-name, or NULL */
    kn_vec *stack;   /* file_ctx: the include chain */
    kn_name_map *loaded;
    kn_vec *events, *sources, *columns; /* pointers */
    kn_node **include_nodes;            /* per stack level: the include's value node */
    size_t n_files;
    bool errors;
    bool calendar; /* some duration read is in months or years: the hints
                      of hint_calendar_units have something to look at */
    size_t unknown_keys;
    size_t value_errors; /* errors that make the object being loaded unusable
                            (every error but an unknown key, which is ignored) */
    size_t suggest_left; /* work left for "did you mean" (kn_suggest_within) */
    bool suggest_spent;  /* the note saying suggestions stopped was given */
} ld;

static const char *owner_str(ld *l, const owner *o)
{
    if (o->name) {
        return kn_printf(l->a, "%s '%s'", o->what, kn_escape_term(l->a, o->name, strlen(o->name)));
    }
    if (o->index >= 0) {
        return kn_printf(l->a, "%s %ld", o->what, o->index + 1);
    }
    return o->what;
}

static const char *esc(ld *l, const char *s)
{
    return kn_escape_term(l->a, s, strlen(s));
}

static const char *node_esc(ld *l, const kn_node *n)
{
    if (n->kind == KN_NODE_SCALAR) {
        return kn_escape_term(l->a, n->u.scalar.text, n->u.scalar.len);
    }
    return "";
}

__attribute__((format(printf, 4, 5)))
static kn_diag *err(ld *l, kn_rule r, const kn_node *at, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    char *msg = kn_vprintf(l->a, fmt, ap);
    va_end(ap);
    l->errors = true;
    l->value_errors++;
    return kn_diag_push(l->sink, r, at ? &at->pos : NULL, NULL, "%s", msg);
}

static const char *kind_expect(const kn_key_spec *k)
{
    switch (k->kind) {
    case KN_V_STRING:
        return "a string";
    case KN_V_INT:
        return "an integer";
    case KN_V_VERSION:
        return "the format version 1";
    case KN_V_BOOL:
        return "true or false";
    case KN_V_DATE:
        return "a date YYYY-MM-DD";
    case KN_V_NAME:
        return k->ref == KN_REF_EVENT_K ? "an event name"
               : k->ref == KN_REF_SOURCE_K ? "a source name"
               : k->ref == KN_REF_RULE_K ? "a rule id"
                                         : "a column name";
    case KN_V_NAMES:
        return k->ref == KN_REF_EVENT_K ? "a list of event names" : "a list of column names";
    case KN_V_NAME_OR_MAP:
        return k->ref == KN_REF_EVENT_K && strcmp(k->name, "known") == 0
                   ? "an event name or a mapping {one_of: [events]}"
                   : "an event name or a mapping {event: E, offset: DURATION}";
    case KN_V_NAME_OR_NAMES:
        return "a column name or a list of column names";
    case KN_V_DURATION:
        return "an ISO 8601 duration such as PT30M";
    case KN_V_LAG:
        return "a duration or a list [MIN, MAX]";
    case KN_V_ENUM:
        return "one of the listed words";
    case KN_V_MAP:
        return "a mapping";
    case KN_V_LIST_OF_MAP:
        return "a list of mappings";
    case KN_V_RELATION:
        return "an event name or a mapping of event names to lags";
    case KN_V_NAMED_MAPS:
        return "a mapping of names";
    case KN_V_PATHS:
        return "a list of relative paths";
    case KN_V_PATTERN:
        return "a PCRE2 pattern";
    }
    return "a value";
}

static kn_diag *wrong_type(ld *l, const owner *o, const kn_key_spec *k, const kn_node *v)
{
    if (v->kind == KN_NODE_SCALAR && !kn_node_is_null(v)) {
        return err(l, KN_R_SCHEMA_SHAPE, v, "'%s' of %s must be %s, not '%s'", k->name, owner_str(l, o),
                   kind_expect(k), node_esc(l, v));
    }
    return err(l, KN_R_SCHEMA_SHAPE, v, "'%s' of %s must be %s, not %s", k->name, owner_str(l, o),
               kind_expect(k), kn_node_kind_name(v));
}

static bool is_name(const kn_node *v)
{
    return v->kind == KN_NODE_SCALAR && !kn_node_is_null(v) && v->u.scalar.len > 0;
}

static bool valid_date(const char *s)
{
    if (strlen(s) != 10 || s[4] != '-' || s[7] != '-') {
        return false;
    }
    for (int i = 0; i < 10; i++) {
        if (i != 4 && i != 7 && (s[i] < '0' || s[i] > '9')) {
            return false;
        }
    }
    int y = atoi(s), m = atoi(s + 5), d = atoi(s + 8);
    static const int days[] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    if (m < 1 || m > 12 || d < 1) {
        return false;
    }
    int max = days[m - 1];
    if (m == 2 && ((y % 4 == 0 && y % 100 != 0) || y % 400 == 0)) {
        max = 29;
    }
    return d <= max;
}

static bool parse_duration(ld *l, const owner *o, const char *key, const kn_node *v, kn_interval *out)
{
    if (v->kind != KN_NODE_SCALAR || kn_node_is_null(v)) {
        err(l, KN_R_BAD_DURATION, v, "'%s' of %s must be an ISO 8601 duration such as PT30M, not %s",
            key, owner_str(l, o), kn_node_kind_name(v));
        return false;
    }
    size_t off = 0;
    const char *why = NULL;
    if (!kn_duration_parse(v->u.scalar.text, v->u.scalar.len, out, &off, &why)) {
        kn_pos p = kn_node_char_pos(v, off);
        l->errors = true;
        l->value_errors++;
        kn_diag *d = kn_diag_push(l->sink, KN_R_BAD_DURATION, &p, o->name,
                                  "'%s' of %s is not an ISO 8601 duration: %s", node_esc(l, v),
                                  owner_str(l, o), why ? why : "malformed");
        char iso[64];
        kn_interval meant;
        size_t off2;
        const char *why2;
        if (kn_duration_suggest(v->u.scalar.text, v->u.scalar.len, iso, sizeof iso) &&
            kn_duration_parse(iso, strlen(iso), &meant, &off2, &why2)) {
            char h[48];
            kn_diag_note(l->sink, d, &v->pos, "did you mean '%s'%s%s%s? (ISO 8601: PnYnMnWnDTnHnMnS, "
                         "with hours, minutes and seconds after the T)", iso, meant.lo == meant.hi ? " (" : "",
                         meant.lo == meant.hi ? kn_duration_format(meant.lo, h, sizeof h) : "",
                         meant.lo == meant.hi ? ")" : "");
        } else {
            kn_diag_note(l->sink, d, &v->pos,
                         "durations look like PT30M, PT6H, P3D, P1W, P1M or -PT1H (PnYnMnWnDTnHnMnS)");
        }
        return false;
    }
    l->calendar = l->calendar ||
                  (kn_duration_units(v->u.scalar.text, v->u.scalar.len) & (KN_DU_MONTHS | KN_DU_YEARS));
    return true;
}

/* LAG: DURATION, or [MIN, MAX] with MAX possibly null (unbounded). */
static bool parse_lag(ld *l, const owner *o, const char *key, kn_node *v, kn_lag *out)
{
    kn_interval a, b;
    out->node = v;
    if (v->kind == KN_NODE_SEQ) {
        if (v->u.seq.n != 2) {
            err(l, KN_R_BAD_DURATION, v, "'%s' of %s must be a duration or a list [MIN, MAX] of two durations; this list has %zu items",
                key, owner_str(l, o), v->u.seq.n);
            return false;
        }
        kn_node *mn = v->u.seq.items[0], *mx = v->u.seq.items[1];
        if (!parse_duration(l, o, key, mn, &a)) {
            return false;
        }
        if (kn_node_is_null(mx)) {
            b.lo = b.hi = KN_TIME_INF;
        } else if (!parse_duration(l, o, key, mx, &b)) {
            return false;
        }
        if (a.lo > b.hi) {
            char s1[48], s2[48];
            kn_diag *d = err(l, KN_R_BAD_DURATION, v, "'%s' of %s has its minimum %s above its maximum %s",
                             key, owner_str(l, o), kn_duration_format(a.lo, s1, sizeof s1),
                             kn_duration_format(b.hi, s2, sizeof s2));
            kn_diag_note(l->sink, d, &mn->pos, "a lag is written [MIN, MAX] with MIN <= MAX");
            return false;
        }
        out->lo = a.lo;
        out->hi = b.hi;
        out->present = true;
        return true;
    }
    if (!parse_duration(l, o, key, v, &a)) {
        return false;
    }
    out->lo = a.lo;
    out->hi = a.hi;
    out->present = true;
    return true;
}

static int enum_index(const char *const *values, const char *s)
{
    for (int i = 0; values[i]; i++) {
        if (strcmp(values[i], s) == 0) {
            return i;
        }
    }
    return -1;
}

static void bad_enum(ld *l, const owner *o, const kn_key_spec *k, const kn_node *v)
{
    size_t n = 0;
    while (k->values[n]) {
        n++;
    }
    const char *list = "";
    for (size_t i = 0; i < n; i++) {
        list = kn_printf(l->a, "%s%s%s", list, i ? (i + 1 == n ? " or " : ", ") : "", k->values[i]);
    }
    const char *near = v->kind == KN_NODE_SCALAR ? kn_suggest(v->u.scalar.text, k->values, n) : NULL;
    if (near) {
        err(l, KN_R_SCHEMA_SHAPE, v, "'%s' of %s is '%s', which is not %s; did you mean '%s'?", k->name,
            owner_str(l, o), node_esc(l, v), list, near);
    } else {
        err(l, KN_R_SCHEMA_SHAPE, v, "'%s' of %s is '%s', which is not %s", k->name, owner_str(l, o),
            node_esc(l, v), list);
    }
}

/* Checks the value of one key against its spec; true when usable. */
static bool check_value(ld *l, const owner *o, const kn_key_spec *k, kn_node *v)
{
    switch (k->kind) {
    case KN_V_STRING:
    case KN_V_PATTERN:
        if (v->kind != KN_NODE_SCALAR || kn_node_is_null(v)) {
            wrong_type(l, o, k, v);
            return false;
        }
        return true;
    case KN_V_INT: {
        long long x;
        if (!kn_node_int(v, &x)) {
            wrong_type(l, o, k, v);
            return false;
        }
        return true;
    }
    case KN_V_VERSION: {
        long long x;
        if (v->kind == KN_NODE_SCALAR && !v->plain) {
            /* knowable: "1" is a string that only looks like the version. */
            err(l, KN_R_SCHEMA_SHAPE, v,
                "the format version must be the number 1, not the quoted string \"%s\": write knowable: 1",
                node_esc(l, v));
            return false;
        }
        if (!kn_node_int(v, &x) || x != 1) {
            err(l, KN_R_SCHEMA_SHAPE, v, "format version '%s' is not supported; this knowable reads version 1",
                v->kind == KN_NODE_SCALAR ? node_esc(l, v) : kn_node_kind_name(v));
            return false;
        }
        return true;
    }
    case KN_V_BOOL: {
        bool b;
        if (!kn_node_bool(v, &b)) {
            wrong_type(l, o, k, v);
            return false;
        }
        return true;
    }
    case KN_V_DATE:
        if (v->kind != KN_NODE_SCALAR || !valid_date(v->u.scalar.text)) {
            if (v->kind == KN_NODE_SCALAR && !kn_node_is_null(v)) {
                err(l, KN_R_SCHEMA_SHAPE, v, "'%s' of %s is '%s', which is not a date YYYY-MM-DD", k->name,
                    owner_str(l, o), node_esc(l, v));
            } else {
                wrong_type(l, o, k, v);
            }
            return false;
        }
        return true;
    case KN_V_NAME:
        if (!is_name(v)) {
            wrong_type(l, o, k, v);
            return false;
        }
        return true;
    case KN_V_NAME_OR_NAMES:
        if (is_name(v)) {
            return true;
        }
        __attribute__((fallthrough));
    case KN_V_NAMES:
    case KN_V_PATHS:
        if (v->kind != KN_NODE_SEQ) {
            wrong_type(l, o, k, v);
            return false;
        }
        for (size_t i = 0; i < v->u.seq.n; i++) {
            if (!is_name(v->u.seq.items[i])) {
                err(l, KN_R_SCHEMA_SHAPE, v->u.seq.items[i], "item %zu of '%s' of %s must be a %s, not %s", i + 1,
                    k->name, owner_str(l, o), k->kind == KN_V_PATHS ? "path" : "name",
                    kn_node_kind_name(v->u.seq.items[i]));
                return false;
            }
        }
        return true;
    case KN_V_DURATION:
    case KN_V_LAG:
        return true; /* parsed by the builders, which report bad-duration */
    case KN_V_ENUM:
        if (v->kind != KN_NODE_SCALAR || kn_node_is_null(v)) {
            wrong_type(l, o, k, v);
            return false;
        }
        if (enum_index(k->values, v->u.scalar.text) < 0) {
            bad_enum(l, o, k, v);
            return false;
        }
        return true;
    case KN_V_MAP:
    case KN_V_NAMED_MAPS:
        if (v->kind != KN_NODE_MAP) {
            wrong_type(l, o, k, v);
            return false;
        }
        return true;
    case KN_V_LIST_OF_MAP:
        if (v->kind != KN_NODE_SEQ) {
            wrong_type(l, o, k, v);
            return false;
        }
        return true;
    case KN_V_RELATION:
    case KN_V_NAME_OR_MAP:
        if (is_name(v) || v->kind == KN_NODE_MAP) {
            return true;
        }
        wrong_type(l, o, k, v);
        return false;
    }
    return false;
}

/* Checks a mapping against a shape: fills vals[i] with the value of key i
 * (NULL when absent or unusable).  Returns false when node is no mapping. */
static bool check_shape(ld *l, const kn_shape *sh, const owner *o, const kn_node *node, kn_node **vals)
{
    memset(vals, 0, sizeof(kn_node *) * sh->n_keys);
    if (!node || node->kind != KN_NODE_MAP) {
        err(l, KN_R_SCHEMA_SHAPE, node ? node : o->at, "%s must be a mapping, not %s", owner_str(l, o),
            kn_node_kind_name(node));
        return false;
    }
    bool present[MAX_KEYS] = {0};
    for (size_t i = 0; i < node->u.map.n; i++) {
        kn_node *k = node->u.map.pairs[i].key, *v = node->u.map.pairs[i].value;
        if (k->kind != KN_NODE_SCALAR) {
            err(l, KN_R_SCHEMA_SHAPE, k, "a key of %s must be a plain word, not %s", owner_str(l, o),
                kn_node_kind_name(k));
            continue;
        }
        const char *name = k->u.scalar.text;
        if (strncmp(name, "x_", 2) == 0) {
            continue; /* free for users */
        }
        int idx = kn_shape_find(sh, name);
        if (idx < 0) {
            const char *cands[MAX_KEYS];
            for (size_t j = 0; j < sh->n_keys; j++) {
                cands[j] = sh->keys[j].name;
            }
            const char *near = kn_suggest(name, cands, sh->n_keys);
            kn_diag *d;
            if (near) {
                d = err(l, KN_R_SCHEMA_SHAPE, k, "unknown key '%s' in %s; did you mean '%s'?", node_esc(l, k),
                        owner_str(l, o), near);
            } else {
                d = err(l, KN_R_SCHEMA_SHAPE, k, "unknown key '%s' in %s", node_esc(l, k), owner_str(l, o));
            }
            l->value_errors--; /* an unknown key is ignored; what it sits in still loads */
            l->unknown_keys++;
            const char *list = "";
            for (size_t j = 0; j < sh->n_keys; j++) {
                list = kn_printf(l->a, "%s%s%s", list, j ? ", " : "", sh->keys[j].name);
            }
            kn_diag_note(l->sink, d, &k->pos, "%s takes %s (keys starting with x_ are free for your own use)",
                         owner_str(l, o), list);
            continue;
        }
        present[idx] = true;
        if (check_value(l, o, &sh->keys[idx], v)) {
            vals[idx] = v;
        }
    }
    for (size_t j = 0; j < sh->n_keys; j++) {
        int other = sh->keys[j].unless ? kn_shape_find(sh, sh->keys[j].unless) : -1;
        if (sh->keys[j].required && !present[j] && !(other >= 0 && present[other])) {
            const kn_node *at = o->at ? o->at : node;
            const char *doc = sh->keys[j].doc;
            if (doc && *doc) {
                err(l, KN_R_SCHEMA_SHAPE, at, "%s lacks the required key '%s' (%s)", owner_str(l, o),
                    sh->keys[j].name, doc);
            } else {
                err(l, KN_R_SCHEMA_SHAPE, at, "%s lacks the required key '%s'", owner_str(l, o), sh->keys[j].name);
            }
        }
    }
    return true;
}

static kn_ref ref_of(kn_node *v)
{
    kn_ref r = {0};
    if (v && is_name(v)) {
        r.name = v->u.scalar.text;
        r.node = v;
    }
    return r;
}

static const char *str_of(const kn_node *v)
{
    return v ? v->u.scalar.text : NULL;
}

static int enum_of(const kn_key_spec *k, const kn_node *v, int dflt)
{
    if (!v) {
        return dflt;
    }
    int i = enum_index(k->values, v->u.scalar.text);
    return i < 0 ? dflt : i;
}

static kn_ref *refs_of(ld *l, kn_node *v, size_t *n)
{
    *n = 0;
    if (!v) {
        return NULL;
    }
    if (v->kind == KN_NODE_SCALAR) {
        kn_ref *r = kn_alloc(l->a, sizeof *r);
        *r = ref_of(v);
        *n = 1;
        return r;
    }
    kn_ref *r = kn_alloc_array(l->a, v->u.seq.n, sizeof *r);
    for (size_t i = 0; i < v->u.seq.n; i++) {
        r[i] = ref_of(v->u.seq.items[i]);
    }
    *n = v->u.seq.n;
    return r;
}

static void load_waivers(ld *l, kn_waiver **out, size_t *n_out, const owner *o, const kn_shape *sh,
                         kn_node *list);

/* ---- events ---- */

static void add_relation(ld *l, kn_event *e, const owner *o, const char *key, kn_node *v, bool before,
                         kn_vec *cons)
{
    if (v->kind == KN_NODE_SCALAR) {
        kn_constraint c = {0};
        c.ref = ref_of(v);
        c.before = before;
        c.lag.present = true;
        c.lag.lo = 0;
        c.lag.hi = KN_TIME_INF;
        c.lag.node = v;
        kn_vec_push(cons, &c);
        return;
    }
    for (size_t i = 0; i < v->u.map.n; i++) {
        kn_node *k = v->u.map.pairs[i].key, *lag = v->u.map.pairs[i].value;
        if (!is_name(k)) {
            err(l, KN_R_SCHEMA_SHAPE, k, "a key of '%s' of %s must be an event name", key, owner_str(l, o));
            continue;
        }
        kn_constraint c = {0};
        c.ref = ref_of(k);
        c.before = before;
        if (!parse_lag(l, o, key, lag, &c.lag)) {
            /* Kept, marked: the timeline needs to know that the two events
             * are tied, to tell what the broken lag could have changed. */
            c.lag.present = false;
            c.broken = true;
        }
        kn_vec_push(cons, &c);
    }
    (void)e;
}

static void define(ld *l, kn_name_map *map, const char *what, const char *name, kn_node *key, void *obj,
                   kn_node *(*key_of)(void *))
{
    if (!kn_names_put(map, name, obj)) {
        void *first = kn_names_get(map, name);
        kn_diag *d = err(l, KN_R_DUPLICATE_KEY, key, "%s '%s' is defined twice", what, esc(l, name));
        kn_diag_note(l->sink, d, &key_of(first)->pos, "'%s' is first defined here", esc(l, name));
    }
}

static kn_node *event_key(void *p)
{
    return ((kn_event *)p)->key;
}

static kn_node *source_key(void *p)
{
    return ((kn_source *)p)->key;
}

static void load_events(ld *l, const kn_key_spec *spec, kn_node *map)
{
    const kn_shape *sh = spec->sub;
    for (size_t i = 0; i < map->u.map.n; i++) {
        kn_node *k = map->u.map.pairs[i].key, *v = map->u.map.pairs[i].value;
        if (!is_name(k)) {
            err(l, KN_R_SCHEMA_SHAPE, k, "an event name must be a plain word, not %s", kn_node_kind_name(k));
            continue;
        }
        kn_event *e = kn_alloc(l->a, sizeof *e);
        e->name = k->u.scalar.text;
        e->key = k;
        e->value = v;
        owner o = {"event", e->name, -1, k};
        size_t errors_before = l->value_errors;
        if (!kn_node_is_null(v)) {
            kn_node *vals[MAX_KEYS];
            if (check_shape(l, sh, &o, v, vals)) {
                kn_vec *cons = kn_vec_new(l->a, sizeof(kn_constraint));
                if (vals[E_AFTER]) {
                    add_relation(l, e, &o, "after", vals[E_AFTER], false, cons);
                }
                if (vals[E_BEFORE]) {
                    add_relation(l, e, &o, "before", vals[E_BEFORE], true, cons);
                }
                e->description = str_of(vals[E_DESCRIPTION]);
                if (vals[E_FIRST_OF]) {
                    /* The earliest of several routes: bounded only by its
                     * members, computed after the solve (SPEC §3.3). */
                    kn_node *bad = vals[E_AFTER] ? vals[E_AFTER] : vals[E_BEFORE];
                    if (bad) {
                        kn_diag *d = err(l, KN_R_SCHEMA_SHAPE, bad,
                                         "event '%s' is a first_of event and takes no '%s' of its own: its "
                                         "range comes from its members alone",
                                         esc(l, e->name), vals[E_AFTER] ? "after" : "before");
                        kn_diag_note(l->sink, d, &vals[E_FIRST_OF]->pos,
                                     "constrain the members instead, or define a separate event");
                    }
                    if (vals[E_FIRST_OF]->u.seq.n == 0) {
                        err(l, KN_R_SCHEMA_SHAPE, vals[E_FIRST_OF], "'first_of' of event '%s' is empty; name at least one event",
                            esc(l, e->name));
                    }
                    e->first_of_node = vals[E_FIRST_OF];
                    e->first_of = refs_of(l, vals[E_FIRST_OF], &e->n_first_of);
                }
                if (vals[E_WAIVE]) {
                    load_waivers(l, &e->waivers, &e->n_waivers, &o, sh->keys[E_WAIVE].sub, vals[E_WAIVE]);
                }
                e->n_cons = cons->len;
                e->cons = kn_alloc_array(l->a, cons->len, sizeof(kn_constraint));
                if (cons->len) {
                    memcpy(e->cons, cons->data, cons->len * sizeof(kn_constraint));
                }
                kn_defer_run(l->a, cons->defer);
            }
        }
        e->broken = l->value_errors != errors_before;
        define(l, l->s->event_names, "event", e->name, k, e, event_key);
        if (kn_names_get(l->s->event_names, e->name) == e) {
            e->index = l->events->len;
            kn_vec_push(l->events, &e);
        }
    }
}

/* ---- sources ---- */

static void load_sources(ld *l, const kn_key_spec *spec, kn_node *map)
{
    const kn_shape *sh = spec->sub;
    for (size_t i = 0; i < map->u.map.n; i++) {
        kn_node *k = map->u.map.pairs[i].key, *v = map->u.map.pairs[i].value;
        if (!is_name(k)) {
            err(l, KN_R_SCHEMA_SHAPE, k, "a source name must be a plain word, not %s", kn_node_kind_name(k));
            continue;
        }
        kn_source *s = kn_alloc(l->a, sizeof *s);
        s->name = k->u.scalar.text;
        s->key = k;
        s->value = v;
        s->point_in_time = -1;
        owner o = {"source", s->name, -1, k};
        size_t errors_before = l->value_errors;
        kn_node *vals[MAX_KEYS];
        if (check_shape(l, sh, &o, v, vals)) {
            for (size_t f = 0; f < KN_SF_COUNT; f++) {
                s->field[f] = vals[f];
            }
            s->kind = (kn_source_kind)enum_of(&sh->keys[KN_SF_KIND], vals[KN_SF_KIND], -1) + 1;
            s->description = str_of(vals[KN_SF_DESCRIPTION]);
            s->owner = str_of(vals[KN_SF_OWNER]);
            s->contact = str_of(vals[KN_SF_CONTACT]);
            s->provider = str_of(vals[KN_SF_PROVIDER]);
            s->license = str_of(vals[KN_SF_LICENSE]);
            s->version = str_of(vals[KN_SF_VERSION]);
            s->documentation = str_of(vals[KN_SF_DOCUMENTATION]);
            s->retrieved = str_of(vals[KN_SF_RETRIEVED]);
            if (vals[KN_SF_LATENCY] && !parse_lag(l, &o, "latency", vals[KN_SF_LATENCY], &s->latency)) {
                s->field[KN_SF_LATENCY] = NULL;
            }
            if (vals[KN_SF_REFRESH]) {
                kn_interval r;
                if (parse_duration(l, &o, "refresh", vals[KN_SF_REFRESH], &r)) {
                    if (r.lo < 0) {
                        err(l, KN_R_BAD_DURATION, vals[KN_SF_REFRESH], "'refresh' of %s is negative; a batch period is positive",
                            owner_str(l, &o));
                    } else {
                        s->has_refresh = true;
                        s->refresh = r.hi;
                    }
                }
            }
            if (vals[KN_SF_MATURES] && !parse_lag(l, &o, "matures", vals[KN_SF_MATURES], &s->matures)) {
                s->field[KN_SF_MATURES] = NULL;
            } else if (vals[KN_SF_MATURES] && s->matures.lo < 0) {
                err(l, KN_R_BAD_DURATION, vals[KN_SF_MATURES],
                    "'matures' of %s is negative; a record's values cannot settle before its event",
                    owner_str(l, &o));
                s->matures.present = false;
            }
            if (vals[SRC_WAIVE]) {
                load_waivers(l, &s->waivers, &s->n_waivers, &o, sh->keys[SRC_WAIVE].sub, vals[SRC_WAIVE]);
            }
            s->history = (kn_history)(enum_of(&sh->keys[KN_SF_HISTORY], vals[KN_SF_HISTORY], -1) + 1);
            bool b;
            if (vals[KN_SF_POINT_IN_TIME] && kn_node_bool(vals[KN_SF_POINT_IN_TIME], &b)) {
                s->point_in_time = b;
            }
        }
        s->broken = l->value_errors != errors_before;
        define(l, l->s->source_names, "source", s->name, k, s, source_key);
        if (kn_names_get(l->s->source_names, s->name) == s) {
            s->index = l->sources->len;
            kn_vec_push(l->sources, &s);
        }
    }
}

/* ---- columns ---- */

static void free_code(void *p)
{
    pcre2_code_free(p);
}

static void compile_format(ld *l, kn_column *c, const owner *o)
{
    int code;
    PCRE2_SIZE off;
    kn_defer *d = kn_arena_defer(l->a, free_code, NULL);
    pcre2_code *re = pcre2_compile((PCRE2_SPTR)c->format, c->format_node->u.scalar.len, PCRE2_UTF, &code, &off, NULL);
    if (!re) {
        if (code == PCRE2_ERROR_NOMEMORY) {
            kn_arena_oom(l->a);
        }
        PCRE2_UCHAR msg[256];
        pcre2_get_error_message(code, msg, sizeof msg);
        kn_pos p = kn_node_char_pos(c->format_node, off);
        l->errors = true;
        kn_diag *dg = kn_diag_push(l->sink, KN_R_BAD_PATTERN, &p, c->name,
                                   "the format of %s is not a valid PCRE2 pattern: %s", owner_str(l, o), (char *)msg);
        kn_diag_note(l->sink, dg, &c->format_node->pos, "the pattern starts here; the error is at character %zu",
                     (size_t)off + 1);
        return;
    }
    d->ptr = re;
    pcre2_jit_compile(re, PCRE2_JIT_COMPLETE);
    c->format_code = re;
}

/* The waivers of one block (SPEC §3.8): a column, an event, a source, a
 * pipeline step, the split or the prediction. */
static void load_waivers(ld *l, kn_waiver **out, size_t *n_out, const owner *o, const kn_shape *sh,
                         kn_node *list)
{
    *out = kn_alloc_array(l->a, list->u.seq.n ? list->u.seq.n : 1, sizeof(kn_waiver));
    *n_out = 0;
    for (size_t i = 0; i < list->u.seq.n; i++) {
        kn_node *v = list->u.seq.items[i];
        owner wo = {kn_printf(l->a, "waiver %zu of %s", i + 1, o->what), o->name, o->name ? -1 : o->index, v};
        if (!o->name && o->index >= 0) {
            wo.what = kn_printf(l->a, "waiver %zu of %s %ld", i + 1, o->what, o->index + 1);
            wo.index = -1;
        }
        kn_node *vals[MAX_KEYS];
        if (!check_shape(l, sh, &wo, v, vals)) {
            continue;
        }
        kn_waiver *w = &(*out)[(*n_out)++];
        w->node = v;
        w->rule = -1;
        w->rule_ref = ref_of(vals[V_RULE]);
        w->reason = str_of(vals[V_REASON]);
        w->reason_node = vals[V_REASON];
        w->expires = str_of(vals[V_EXPIRES]);
        w->expires_node = vals[V_EXPIRES];
    }
}

static void load_column(ld *l, const kn_shape *sh, kn_column *c)
{
    owner o = {"column", c->name, -1, c->key};
    c->quasi_identifier = -1;
    c->anonymized.salted = -1;
    if (kn_node_is_null(c->value)) {
        return;
    }
    kn_node *vals[MAX_KEYS];
    if (!check_shape(l, sh, &o, c->value, vals)) {
        return;
    }
    c->role = (kn_role)enum_of(&sh->keys[C_ROLE], vals[C_ROLE], 0);
    c->role_node = vals[C_ROLE];
    c->type = (kn_value_type)(enum_of(&sh->keys[C_TYPE], vals[C_TYPE], -1) + 1);
    c->type_node = vals[C_TYPE];
    if (vals[C_KNOWN] && vals[C_KNOWN]->kind == KN_NODE_MAP) {
        owner ko = {"known of column", c->name, -1, vals[C_KNOWN]};
        kn_node *kv[MAX_KEYS];
        if (check_shape(l, sh->keys[C_KNOWN].sub, &ko, vals[C_KNOWN], kv) && kv[K_ONE_OF]) {
            if (kv[K_ONE_OF]->u.seq.n == 0) {
                err(l, KN_R_SCHEMA_SHAPE, kv[K_ONE_OF], "'one_of' of the known of column '%s' is empty; name at least one event",
                    esc(l, c->name));
            } else {
                c->one_of_node = kv[K_ONE_OF];
                c->one_of = refs_of(l, kv[K_ONE_OF], &c->n_one_of);
            }
        }
    } else {
        c->known = ref_of(vals[C_KNOWN]);
    }
    if (vals[C_DELAY]) {
        parse_lag(l, &o, "delay", vals[C_DELAY], &c->delay);
    }
    c->source = ref_of(vals[C_SOURCE]);
    if (vals[C_JOIN]) {
        const kn_shape *js = sh->keys[C_JOIN].sub;
        owner jo = {"join of column", c->name, -1, vals[C_JOIN]};
        kn_node *jv[MAX_KEYS];
        if (check_shape(l, js, &jo, vals[C_JOIN], jv)) {
            c->join.present = true;
            c->join.node = vals[C_JOIN];
            c->join.keys = refs_of(l, jv[J_KEY], &c->join.n_keys);
            if (jv[J_AS_OF] && jv[J_AS_OF]->kind == KN_NODE_MAP) {
                owner ao = {"as_of of the join of column", c->name, -1, jv[J_AS_OF]};
                kn_node *av[MAX_KEYS];
                if (check_shape(l, js->keys[J_AS_OF].sub, &ao, jv[J_AS_OF], av)) {
                    c->join.as_of = ref_of(av[AO_EVENT]);
                    if (av[AO_OFFSET] && parse_duration(l, &ao, "offset", av[AO_OFFSET], &c->join.offset)) {
                        c->join.has_offset = true;
                        c->join.offset_node = av[AO_OFFSET];
                    }
                }
            } else {
                c->join.as_of = ref_of(jv[J_AS_OF]);
            }
            c->join.source = ref_of(jv[J_SOURCE]);
        }
    }
    if (vals[C_DERIVED]) {
        c->derived_node = vals[C_DERIVED];
        c->derived_from = refs_of(l, vals[C_DERIVED], &c->n_derived);
    }
    if (vals[C_WINDOW]) {
        const kn_shape *ws = sh->keys[C_WINDOW].sub;
        owner wo = {"window of column", c->name, -1, vals[C_WINDOW]};
        kn_node *wv[MAX_KEYS];
        if (check_shape(l, ws, &wo, vals[C_WINDOW], wv) && wv[W_ANCHOR] && wv[W_FROM] && wv[W_TO]) {
            bool ok = parse_duration(l, &wo, "from", wv[W_FROM], &c->window.from);
            ok = parse_duration(l, &wo, "to", wv[W_TO], &c->window.to) && ok;
            if (ok && c->window.from.lo > c->window.to.hi) {
                char s1[48], s2[48];
                err(l, KN_R_BAD_DURATION, wv[W_FROM], "the window of column '%s' starts (%s) after it ends (%s)",
                    esc(l, c->name), kn_duration_format(c->window.from.lo, s1, sizeof s1),
                    kn_duration_format(c->window.to.hi, s2, sizeof s2));
                ok = false;
            }
            if (ok) {
                c->window.present = true;
                c->window.node = vals[C_WINDOW];
                c->window.anchor = ref_of(wv[W_ANCHOR]);
                c->window.from_node = wv[W_FROM];
                c->window.to_node = wv[W_TO];
            }
        }
    }
    c->proxy_of = ref_of(vals[C_PROXY]);
    if (vals[C_FORMAT]) {
        c->format = vals[C_FORMAT]->u.scalar.text;
        c->format_node = vals[C_FORMAT];
        compile_format(l, c, &o);
    }
    if (vals[C_ANON]) {
        const kn_shape *as = sh->keys[C_ANON].sub;
        owner ao = {"anonymized of column", c->name, -1, vals[C_ANON]};
        kn_node *av[MAX_KEYS];
        if (check_shape(l, as, &ao, vals[C_ANON], av)) {
            c->anonymized.present = true;
            c->anonymized.node = vals[C_ANON];
            c->anonymized.method = (kn_anon_method)(enum_of(&as->keys[A_METHOD], av[A_METHOD], -1) + 1);
            c->anonymized.method_node = av[A_METHOD];
            bool b;
            if (av[A_SALTED] && kn_node_bool(av[A_SALTED], &b)) {
                c->anonymized.salted = b;
                c->anonymized.salted_node = av[A_SALTED];
            }
        }
    }
    bool b;
    if (vals[C_QI] && kn_node_bool(vals[C_QI], &b)) {
        c->quasi_identifier = b;
        c->qi_node = vals[C_QI];
    }
    c->description = str_of(vals[C_DESCRIPTION]);
    c->description_node = vals[C_DESCRIPTION];
    if (vals[C_WAIVE]) {
        load_waivers(l, &c->waivers, &c->n_waivers, &o, sh->keys[C_WAIVE].sub, vals[C_WAIVE]);
    }
}

static void load_columns(ld *l, const kn_key_spec *spec, kn_node *map)
{
    if (kn_names_count(l->s->column_names) == 0) {
        l->s->column_names = kn_names_new_sized(l->a, map->u.map.n);
    }
    /* One array for the mapping's columns: the analyses walk the columns
     * in order, and side by side in memory they are read ahead instead of
     * each costing a cache miss (a tenth of the solver's time on 10,000
     * columns scattered among the tree's nodes). */
    kn_column *block = kn_alloc_array(l->a, map->u.map.n ? map->u.map.n : 1, sizeof *block);
    for (size_t i = 0; i < map->u.map.n; i++) {
        kn_node *k = map->u.map.pairs[i].key, *v = map->u.map.pairs[i].value;
        if (!is_name(k)) {
            err(l, KN_R_SCHEMA_SHAPE, k, "a column name must be a plain word, not %s", kn_node_kind_name(k));
            continue;
        }
        kn_column *c = &block[i];
        c->name = k->u.scalar.text;
        c->key = k;
        c->value = v;
        size_t errors_before = l->value_errors, unknown_before = l->unknown_keys;
        load_column(l, spec->sub, c);
        c->broken = l->value_errors != errors_before;
        c->stray_key = l->unknown_keys != unknown_before;
        if (!kn_names_put(l->s->column_names, c->name, c)) {
            /* The YAML layer already reported the duplicate key. */
            continue;
        }
        c->index = l->columns->len;
        kn_vec_push(l->columns, &c);
    }
}

static void load_pipeline(ld *l, const kn_key_spec *spec, kn_node *list)
{
    const kn_shape *sh = spec->sub;
    l->s->steps = kn_alloc_array(l->a, list->u.seq.n, sizeof(kn_step));
    for (size_t i = 0; i < list->u.seq.n; i++) {
        kn_node *v = list->u.seq.items[i];
        owner o = {"pipeline step", NULL, (long)i, v};
        kn_node *vals[MAX_KEYS];
        if (!check_shape(l, sh, &o, v, vals) || !vals[S_STEP]) {
            continue;
        }
        kn_step *st = &l->s->steps[l->s->n_steps++];
        st->node = v;
        st->kind = (kn_step_kind)enum_of(&sh->keys[S_STEP], vals[S_STEP], 0);
        st->kind_node = vals[S_STEP];
        st->fit = (kn_fit)(enum_of(&sh->keys[S_FIT], vals[S_FIT], -1) + 1);
        st->fit_node = vals[S_FIT];
        st->columns = refs_of(l, vals[S_COLUMNS], &st->n_columns);
        st->description = str_of(vals[S_DESCRIPTION]);
        if (vals[S_WAIVE]) {
            load_waivers(l, &st->waivers, &st->n_waivers, &o, sh->keys[S_WAIVE].sub, vals[S_WAIVE]);
        }
    }
}

static void load_split(ld *l, const kn_key_spec *spec, kn_node *v)
{
    const kn_shape *sh = spec->sub;
    owner o = {"split", NULL, -1, v};
    kn_node *vals[MAX_KEYS];
    if (!check_shape(l, sh, &o, v, vals)) {
        return;
    }
    kn_split *sp = &l->s->split;
    sp->present = true;
    sp->node = v;
    sp->method = (kn_split_method)(enum_of(&sh->keys[X_METHOD], vals[X_METHOD], -1) + 1);
    sp->method_node = vals[X_METHOD];
    sp->column = ref_of(vals[X_COLUMN]);
    sp->time_column = ref_of(vals[X_TIME_COLUMN]);
    sp->group_column = ref_of(vals[X_GROUP_COLUMN]);
    if (vals[X_GAP] && parse_duration(l, &o, "gap", vals[X_GAP], &sp->gap)) {
        sp->has_gap = true;
        sp->gap_node = vals[X_GAP];
    }
    if (vals[X_FOLDS] && kn_node_int(vals[X_FOLDS], &sp->folds) && sp->folds < 2) {
        /* A split into fewer than two folds keeps no rows apart. */
        err(l, KN_R_SCHEMA_SHAPE, vals[X_FOLDS], "'folds' of the split must be at least 2; found %lld",
            (long long)sp->folds);
        sp->folds = 0;
    }
    bool b;
    if (vals[X_PURGE] && kn_node_bool(vals[X_PURGE], &b)) {
        sp->purge = b;
        sp->purge_node = vals[X_PURGE];
    }
    if (vals[X_EMBARGO] && parse_duration(l, &o, "embargo", vals[X_EMBARGO], &sp->embargo)) {
        if (sp->embargo.lo < 0) {
            err(l, KN_R_BAD_DURATION, vals[X_EMBARGO], "'embargo' of the split is negative; it is a time kept out of training");
        } else {
            sp->has_embargo = true;
            sp->embargo_node = vals[X_EMBARGO];
        }
    }
    if (vals[X_WAIVE]) {
        load_waivers(l, &sp->waivers, &sp->n_waivers, &o, sh->keys[X_WAIVE].sub, vals[X_WAIVE]);
    }
}

/* ---- files and includes ---- */

static char *dir_of(ld *l, const char *path)
{
    const char *slash = strrchr(path, '/');
    if (!slash) {
        return kn_strdup(l->a, ".");
    }
    if (slash == path) {
        return kn_strdup(l->a, "/");
    }
    return kn_strndup(l->a, path, (size_t)(slash - path));
}

static char *join_path(ld *l, const char *dir, const char *rel)
{
    if (strcmp(dir, ".") == 0) {
        return kn_strdup(l->a, rel);
    }
    return kn_printf(l->a, "%s/%s", dir, rel);
}

static char *real_path(ld *l, const char *path)
{
    return kn_path_real(l->a, path);
}

static bool inside_root(ld *l, const char *real)
{
    size_t n = strlen(l->root_real);
    if (strcmp(l->root_real, "/") == 0) {
        return true;
    }
    return strncmp(real, l->root_real, n) == 0 && (real[n] == '/' || real[n] == '\0');
}

/* For a path that does not resolve: whether its longest existing prefix lies
 * outside the root, so that a missing file outside is refused as outside
 * (the tool does not tell whether files exist beyond the root). */
static bool prefix_leaves_root(ld *l, const char *joined)
{
    char *p = kn_strdup(l->a, joined);
    for (char *slash = strrchr(p, '/'); slash; slash = strrchr(p, '/')) {
        *slash = '\0';
        char *real = real_path(l, slash == p ? "/" : p);
        if (real) {
            return !inside_root(l, real);
        }
    }
    return false;
}

static void load_file(ld *l, const char *real, const char *display, bool main_file, kn_node *via);

/* For an included path that does not resolve: the real path an editor's
 * buffer of a file not yet saved stands under (its folder's real path and
 * its name, as for a schema given with --stdin-name), when the overlay has
 * a buffer there; else NULL.  Without an overlay (knowable check) a missing
 * file stays missing. */
static char *unsaved_buffer(ld *l, const char *joined)
{
    const char *slash = strrchr(joined, '/');
    const char *base = slash ? slash + 1 : joined;
    if (!l->opt->overlay || !slash || !*base || strcmp(base, ".") == 0 || strcmp(base, "..") == 0) {
        return NULL;
    }
    char *dir = real_path(l, slash == joined ? "/" : kn_strndup(l->a, joined, (size_t)(slash - joined)));
    if (!dir) {
        return NULL;
    }
    char *real = kn_printf(l->a, "%s%s%s", dir, strcmp(dir, "/") == 0 ? "" : "/", base);
    size_t len = 0;
    return l->opt->overlay(l->opt->overlay_ctx, real, &len) ? real : NULL;
}

/* The printed path of an included file: tidied ("teams/a/../shared/r.yaml"
 * -> "teams/shared/r.yaml") when the tidy spelling names the same file. */
static const char *display_of(ld *l, const char *joined, const char *real)
{
    char *tidy = kn_path_tidy(l->a, joined);
    char *tidy_real = strcmp(tidy, joined) == 0 ? NULL : real_path(l, tidy);
    return tidy_real && strcmp(tidy_real, real) == 0 ? tidy : joined;
}

static void refuse(ld *l, kn_node *at, const char *fmt, const char *path, const char *extra)
{
    kn_diag *d = err(l, KN_R_INCLUDE_REFUSED, at, "include '%s' is refused: %s", esc(l, path), fmt);
    if (extra) {
        kn_diag_note(l->sink, d, &at->pos, "%s", extra);
    }
}

static void load_includes(ld *l, const file_ctx *fc, kn_node *list)
{
    for (size_t i = 0; i < list->u.seq.n; i++) {
        kn_node *item = list->u.seq.items[i];
        const char *path = item->u.scalar.text;
        if (path[0] == '/') {
            refuse(l, item, "it is an absolute path", path,
                   "includes are relative to the including file and stay inside the root (--root)");
            continue;
        }
        char *joined = join_path(l, dir_of(l, fc->real), path);
        char *real = real_path(l, joined);
        bool unsaved = !real && (real = unsaved_buffer(l, joined)) != NULL;
        if (!real && !prefix_leaves_root(l, joined)) {
            refuse(l, item, "no such file", path, NULL);
            continue;
        }
        if (!real || !inside_root(l, real)) {
            refuse(l, item, "it leaves the root folder", path,
                   l->opt->root ? kn_printf(l->a, "the root is '%s' (--root)", esc(l, l->opt->root))
                   : kn_path_is_project(l->a, l->root_real)
                       ? kn_printf(l->a, "the root is the repository '%s' lies in (the nearest folder upwards that "
                                         "holds .git); set --root to allow a wider folder",
                                   esc(l, l->s->path))
                       : kn_printf(l->a, "the root is the folder of '%s' (no folder above it holds .git); set "
                                         "--root to allow a wider folder",
                                   esc(l, l->s->path)));
            continue;
        }
        /* A folder, a FIFO or a device would fail or block when read. */
        struct stat st = {0};
        if (!unsaved && (stat(real, &st) != 0 || !S_ISREG(st.st_mode))) {
            refuse(l, item, S_ISDIR(st.st_mode) ? "it is a folder, not a file" : "it is not a regular file", path,
                   NULL);
            continue;
        }
        bool loop = false;
        for (size_t j = 0; j < l->stack->len; j++) {
            if (strcmp(KN_VEC_AT(l->stack, file_ctx, j).real, real) == 0) {
                loop = true;
            }
        }
        if (loop) {
            kn_diag *d = err(l, KN_R_INCLUDE_REFUSED, item, "include '%s' is refused: it loops back to a file that includes it",
                             esc(l, path));
            for (size_t j = 1; j < l->stack->len; j++) {
                const file_ctx *step = &KN_VEC_AT(l->stack, file_ctx, j);
                kn_diag_note(l->sink, d, &step->via->pos, "'%s' includes '%s'",
                             esc(l, KN_VEC_AT(l->stack, file_ctx, j - 1).display), esc(l, step->display));
            }
            continue;
        }
        if (kn_names_get(l->loaded, real)) {
            continue; /* the same register reached twice: merge it once */
        }
        if (l->stack->len >= MAX_INCLUDE_DEPTH || l->n_files >= MAX_INCLUDED_FILES) {
            refuse(l, item, "too many nested or included files", path, NULL);
            continue;
        }
        load_file(l, real, display_of(l, join_path(l, dir_of(l, fc->display), path), real), false, item);
    }
}

static void load_file(ld *l, const char *real, const char *display, bool main_file, kn_node *via)
{
    kn_yaml_reporter rep = kn_sink_yaml_reporter(l->sink);
    const char *from = main_file && l->stdin_real ? "/dev/stdin" : real;
    /* An editor's unsaved buffer stands for its file (knowable lsp); else
     * an included file comes from the run's cache when there is one: a
     * register shared by many schemas is parsed once per run. */
    size_t olen = 0;
    const char *text = l->opt->overlay ? l->opt->overlay(l->opt->overlay_ctx, real, &olen) : NULL;
    kn_node *root = text ? kn_yaml_parse(l->a, &rep, display, text, olen, &l->opt->limits)
                    : !main_file && l->opt->cache
                        ? kn_file_cache_load(l->opt->cache, &rep, real, display, &l->opt->limits)
                        : kn_yaml_load_file(l->a, &rep, from, display, &l->opt->limits);
    if (!root) {
        l->errors = true;
        return;
    }
    l->n_files++;
    kn_names_put(l->loaded, real, l);
    kn_schema_file *files = kn_alloc_array(l->a, l->s->n_files + 1, sizeof *files);
    if (l->s->n_files) {
        memcpy(files, l->s->files, l->s->n_files * sizeof *files);
    }
    files[l->s->n_files++] = (kn_schema_file){real, display, root, via};
    l->s->files = files;

    file_ctx fc = {real, display, via};
    kn_vec_push(l->stack, &fc);
    const kn_shape *sh = main_file ? &kn_shape_top : &kn_shape_included;
    owner o = {main_file ? "the schema" : "the included file", NULL, -1, root};
    kn_node *vals[MAX_KEYS];
    if (root->kind != KN_NODE_MAP) {
        kn_diag *d = err(l, KN_R_SCHEMA_SHAPE, root,
                         "%s must be a mapping with keys such as knowable, dataset, events, columns; found %s",
                         main_file ? "a schema" : "an included file", kn_node_kind_name(root));
        size_t dl = strlen(display);
        if (main_file && dl >= 4 && strcmp(display + dl - 4, ".csv") == 0) {
            kn_diag_note(l->sink, d, &root->pos,
                         "this looks like a data file: a sample of the table goes with --data FILE beside its "
                         "schema (`knowable check --data %s -- SCHEMA`), and `knowable init -- %s` drafts one",
                         display, display);
        }
        l->stack->len--;
        return;
    }
    /* A rulebook given where a schema belongs (a file list from
     * `git ls-files '*.knowable.yaml'` can hold one) is refused outright:
     * checked as a schema it would pass or fail for the wrong reasons. */
    for (size_t i = 0; i < root->u.map.n; i++) {
        kn_node *k = root->u.map.pairs[i].key;
        const char *name = kn_node_str(k);
        if (name && strcmp(name, "knowable_rulebook") == 0) {
            kn_diag *d = err(l, KN_R_SCHEMA_SHAPE, k,
                             "'%s' is a rulebook (it has the key knowable_rulebook), not %s; pass a rulebook with "
                             "--rulebook FILE, or name it .knowable-rules.yaml beside the schemas",
                             esc(l, display), main_file ? "a schema" : "a register to include");
            kn_diag_note(l->sink, d, &k->pos,
                         "a file list from git ls-files can hold a rulebook: with -- before the file names "
                         "(knowable check -- FILE...), one named like an option (--rulebook=...) is read as a "
                         "file and refused here, never taken as an option");
            kn_sink_mark_fatal(l->sink);
            l->stack->len--;
            return;
        }
    }
    /* Keys an included file may not have get a clearer message than "unknown". */
    if (!main_file) {
        for (size_t i = 0; i < root->u.map.n; i++) {
            kn_node *k = root->u.map.pairs[i].key;
            const char *name = kn_node_str(k);
            if (name && kn_shape_find(&kn_shape_top, name) >= 0 && kn_shape_find(sh, name) < 0) {
                err(l, KN_R_SCHEMA_SHAPE, k, "'%s' may not appear in an included file; an included file holds only events, sources, description and include",
                    name);
            }
        }
        kn_node *filtered = kn_alloc(l->a, sizeof *filtered);
        *filtered = *root;
        filtered->u.map.pairs = kn_alloc_array(l->a, root->u.map.n, sizeof(kn_pair));
        filtered->u.map.n = 0;
        for (size_t i = 0; i < root->u.map.n; i++) {
            const char *name = kn_node_str(root->u.map.pairs[i].key);
            if (!(name && kn_shape_find(&kn_shape_top, name) >= 0 && kn_shape_find(sh, name) < 0)) {
                filtered->u.map.pairs[filtered->u.map.n++] = root->u.map.pairs[i];
            }
        }
        check_shape(l, sh, &o, filtered, vals);
    } else {
        check_shape(l, sh, &o, root, vals);
    }
    int ev = main_file ? T_EVENTS : I_EVENTS, so = main_file ? T_SOURCES : I_SOURCES;
    int inc = main_file ? T_INCLUDE : I_INCLUDE;
    if (vals[ev]) {
        load_events(l, &sh->keys[ev], vals[ev]);
    }
    if (vals[so]) {
        load_sources(l, &sh->keys[so], vals[so]);
    }
    if (main_file) {
        kn_schema *s = l->s;
        s->root = root;
        s->dataset = str_of(vals[T_DATASET]);
        s->dataset_node = vals[T_DATASET];
        s->description = str_of(vals[T_DESCRIPTION]);
        if (vals[T_PREDICTION]) {
            kn_node *pv[MAX_KEYS];
            owner po = {"prediction", NULL, -1, vals[T_PREDICTION]};
            size_t errors_before = l->value_errors;
            if (check_shape(l, sh->keys[T_PREDICTION].sub, &po, vals[T_PREDICTION], pv)) {
                s->prediction.node = vals[T_PREDICTION];
                s->prediction.moment = ref_of(pv[P_MOMENT]);
                s->prediction.target = ref_of(pv[P_TARGET]);
                s->prediction.entity = ref_of(pv[P_ENTITY]);
                s->prediction.moment_column = ref_of(pv[P_MOMENT_COLUMN]);
                s->prediction.label_known = ref_of(pv[P_LABEL_KNOWN]);
            }
            s->prediction_broken = l->value_errors != errors_before;
            if (pv[P_WAIVE]) {
                /* After the broken mark: a malformed waiver sets nothing aside. */
                load_waivers(l, &s->prediction.waivers, &s->prediction.n_waivers, &po,
                             sh->keys[T_PREDICTION].sub->keys[P_WAIVE].sub, pv[P_WAIVE]);
            }
        } else {
            s->prediction_broken = true;
        }
        if (vals[T_COLUMNS]) {
            load_columns(l, &sh->keys[T_COLUMNS], vals[T_COLUMNS]);
        }
        if (vals[T_PIPELINE]) {
            load_pipeline(l, &sh->keys[T_PIPELINE], vals[T_PIPELINE]);
        }
        if (vals[T_SPLIT]) {
            load_split(l, &sh->keys[T_SPLIT], vals[T_SPLIT]);
        }
    }
    if (vals[inc]) {
        load_includes(l, &fc, vals[inc]);
    }
    l->stack->len--;
}

/* ---- references ---- */

static const char *const *names_array(ld *l, const kn_name_map *m, size_t *n)
{
    *n = kn_names_count(m);
    const char **a = kn_alloc_array(l->a, *n ? *n : 1, sizeof(char *));
    for (size_t i = 0; i < *n; i++) {
        a[i] = kn_names_at(m, i);
    }
    return a;
}

typedef struct namespace_ {
    const kn_name_map *map;
    const char *what; /* "event", "source", "column" */
    const char *const *names;
    size_t n;
} namespace_;

/* Resolves r; false (after reporting it) when it names nothing. */
static bool resolve(ld *l, namespace_ *ns, kn_ref *r, const char *context)
{
    if (!r->name) {
        return true;
    }
    r->target = kn_names_get(ns->map, r->name);
    if (r->target) {
        return true;
    }
    if (!ns->names) {
        ns->names = names_array(l, ns->map, &ns->n);
    }
    bool had = l->suggest_left > 0;
    const char *near = had ? kn_suggest_within(r->name, ns->names, ns->n, &l->suggest_left) : NULL;
    kn_diag *d;
    if (near) {
        d = err(l, KN_R_UNKNOWN_REFERENCE, r->node, "%s: %s '%s' is not defined; did you mean '%s'?", context,
                ns->what, esc(l, r->name), esc(l, near));
    } else {
        d = err(l, KN_R_UNKNOWN_REFERENCE, r->node, "%s: %s '%s' is not defined", context, ns->what, esc(l, r->name));
    }
    if (l->suggest_left == 0 && !l->suggest_spent) {
        /* Said once, at the first reference the search did not finish for. */
        l->suggest_spent = true;
        kn_diag_note(l->sink, d, NULL,
                     "'did you mean' suggestions stop here: comparing unknown names with the %zu defined "
                     "ones reached this schema's limit, so this and later references get none",
                     ns->n);
    }
    return false;
}

/* resolve() for the references of one named object: the context words
 * ("column 'name'") are only spelt out when a reference fails, so a clean
 * schema of many columns pays one lookup per reference and nothing more. */
static bool resolve_in(ld *l, namespace_ *ns, kn_ref *r, const char *what, const char *name)
{
    if (!r->name) {
        return true;
    }
    r->target = kn_names_get(ns->map, r->name);
    if (!r->target) {
        return resolve(l, ns, r, kn_printf(l->a, "%s '%s'", what, esc(l, name)));
    }
    return true;
}

static void mark_event(kn_ref *r)
{
    if (r->target) {
        KN_REF_EVENT(*r)->used = true;
    }
}

static void mark_source(kn_ref *r)
{
    if (r->target) {
        KN_REF_SOURCE(*r)->used = true;
    }
}

/* The rule ids of a block's waivers; an unknown one is unknown-reference
 * (with a suggestion) and its waiver does nothing. */
static void resolve_waivers(ld *l, kn_waiver *ws, size_t n, const char *what, const char *name)
{
    for (size_t j = 0; j < n; j++) {
        kn_waiver *w = &ws[j];
        if (!w->rule_ref.name) {
            continue;
        }
        kn_rule r;
        if (kn_rule_find(w->rule_ref.name, strlen(w->rule_ref.name), &r)) {
            w->rule = (int)r;
            continue;
        }
        const char *ctx = name ? kn_printf(l->a, "%s '%s'", what, esc(l, name)) : what;
        const char *ids[KN_RULE_COUNT];
        for (size_t k = 0; k < KN_RULE_COUNT; k++) {
            ids[k] = kn_rule_get((kn_rule)k)->id;
        }
        const char *near = kn_suggest(w->rule_ref.name, ids, KN_RULE_COUNT);
        if (near) {
            err(l, KN_R_UNKNOWN_REFERENCE, w->rule_ref.node, "%s: rule '%s' does not exist; did you mean '%s'?",
                ctx, esc(l, w->rule_ref.name), near);
        } else {
            err(l, KN_R_UNKNOWN_REFERENCE, w->rule_ref.node,
                "%s: rule '%s' does not exist (`knowable rules` lists them)", ctx, esc(l, w->rule_ref.name));
        }
    }
}

/* A reference to a first_of event where only an ordinary event will do
 * (SPEC §3.3): in another event's after/before, as a member of another
 * first_of, or as the moment.  A schema-shape error at the reference. */
static void refuse_first_of(ld *l, const kn_ref *r, const char *where, const char *why)
{
    const kn_event *f = KN_REF_EVENT(*r);
    kn_diag *d = err(l, KN_R_SCHEMA_SHAPE, r->node, "%s names '%s', a first_of event: %s", where,
                     esc(l, f->name), why);
    if (f->first_of_node) {
        kn_diag_note(l->sink, d, &f->first_of_node->pos,
                     "'%s' is the earliest of these events; its range is known only after the timeline is "
                     "solved, so nothing can be placed relative to it",
                     esc(l, f->name));
    }
}

static void resolve_all(ld *l)
{
    kn_schema *s = l->s;
    namespace_ ev = {s->event_names, "event", NULL, 0};
    namespace_ so = {s->source_names, "source", NULL, 0};
    namespace_ co = {s->column_names, "column", NULL, 0};

    for (size_t i = 0; i < s->n_events; i++) {
        kn_event *e = s->events[i];
        const char *ctx = NULL;
        for (size_t j = 0; j < e->n_cons; j++) {
            kn_constraint *c = &e->cons[j];
            if (!ctx) {
                ctx = kn_printf(l->a, "event '%s'", esc(l, e->name));
            }
            if (!resolve(l, &ev, &c->ref, ctx)) {
                e->broken = true;
            } else if (KN_REF_EVENT(c->ref)->first_of_node) {
                refuse_first_of(l, &c->ref, ctx,
                                "no event may be constrained relative to the earliest of several; constrain "
                                "it relative to the members");
                e->broken = true;
                c->ref.target = NULL;
            }
            kn_event *other = KN_REF_EVENT(c->ref);
            if (c->before) {
                c->earlier = e;
                c->later = other;
            } else {
                c->earlier = other;
                c->later = e;
            }
        }
    }
    for (size_t i = 0; i < s->n_events; i++) {
        kn_event *e = s->events[i];
        for (size_t j = 0; j < e->n_first_of; j++) {
            kn_ref *r = &e->first_of[j];
            const char *ctx = kn_printf(l->a, "first_of of event '%s'", esc(l, e->name));
            if (!resolve(l, &ev, r, ctx)) {
                e->broken = true;
            } else if (KN_REF_EVENT(*r) == e) {
                err(l, KN_R_SCHEMA_SHAPE, r->node, "%s names the event itself", ctx);
                e->broken = true;
                r->target = NULL;
            } else if (KN_REF_EVENT(*r)->first_of_node) {
                refuse_first_of(l, r, ctx, "list its members here instead (the earliest of the earliest is the earliest of all)");
                e->broken = true;
                r->target = NULL;
            }
        }
        resolve_waivers(l, e->waivers, e->n_waivers, "event", e->name);
    }
    for (size_t i = 0; i < s->n_sources; i++) {
        resolve_waivers(l, s->sources[i]->waivers, s->sources[i]->n_waivers, "source", s->sources[i]->name);
    }
    kn_prediction *p = &s->prediction;
    bool ok = resolve(l, &ev, &p->moment, "prediction moment");
    if (ok && p->moment.target && KN_REF_EVENT(p->moment)->first_of_node) {
        refuse_first_of(l, &p->moment, "prediction moment",
                        "the moment is the point every range is measured from; name the event at which the model is asked");
        p->moment.target = NULL;
        ok = false;
    }
    resolve_waivers(l, p->waivers, p->n_waivers, "prediction", NULL);
    ok = resolve(l, &co, &p->target, "prediction target") && ok;
    ok = resolve(l, &co, &p->entity, "prediction entity") && ok;
    ok = resolve(l, &co, &p->moment_column, "prediction moment_column") && ok;
    ok = resolve(l, &ev, &p->label_known, "prediction label_known") && ok;
    if (!ok) {
        s->prediction_broken = true;
    }
    mark_event(&p->moment);
    mark_event(&p->label_known);

    for (size_t i = 0; i < s->n_columns; i++) {
        kn_column *c = s->columns[i];
        if (!c->known.name && !c->n_one_of && !c->source.name && !c->join.present && !c->n_derived &&
            !c->window.present && !c->proxy_of.name && !c->n_waivers) {
            continue;
        }
        bool col_ok = resolve_in(l, &ev, &c->known, "column", c->name);
        mark_event(&c->known);
        for (size_t j = 0; j < c->n_one_of; j++) {
            col_ok = resolve_in(l, &ev, &c->one_of[j], "column", c->name) && col_ok;
            mark_event(&c->one_of[j]);
        }
        col_ok = resolve_in(l, &so, &c->source, "column", c->name) && col_ok;
        mark_source(&c->source);
        for (size_t j = 0; j < c->join.n_keys; j++) {
            col_ok = resolve_in(l, &co, &c->join.keys[j], "column", c->name) && col_ok;
        }
        col_ok = resolve_in(l, &ev, &c->join.as_of, "column", c->name) && col_ok;
        mark_event(&c->join.as_of);
        col_ok = resolve_in(l, &so, &c->join.source, "column", c->name) && col_ok;
        mark_source(&c->join.source);
        for (size_t j = 0; j < c->n_derived; j++) {
            col_ok = resolve_in(l, &co, &c->derived_from[j], "column", c->name) && col_ok;
        }
        col_ok = resolve_in(l, &ev, &c->window.anchor, "column", c->name) && col_ok;
        mark_event(&c->window.anchor);
        col_ok = resolve_in(l, &co, &c->proxy_of, "column", c->name) && col_ok;
        if (!col_ok) {
            c->broken = true;
        }
        resolve_waivers(l, c->waivers, c->n_waivers, "column", c->name);
    }
    for (size_t i = 0; i < s->n_steps; i++) {
        const char *ctx = kn_printf(l->a, "pipeline step %zu", i + 1);
        for (size_t j = 0; j < s->steps[i].n_columns; j++) {
            resolve(l, &co, &s->steps[i].columns[j], ctx);
        }
        resolve_waivers(l, s->steps[i].waivers, s->steps[i].n_waivers, ctx, NULL);
    }
    resolve_waivers(l, s->split.waivers, s->split.n_waivers, "split", NULL);
    resolve(l, &co, &s->split.column, "split column");
    resolve(l, &co, &s->split.time_column, "split time_column");
    resolve(l, &co, &s->split.group_column, "split group_column");
}

/* One derivation-cycle finding: the columns cyc[0..len-1] of the stack,
 * each derived from the next, the last (cu) from the first through its
 * derived_from entry edge.  The message names at most KN_CHAIN_SHOWN / 2
 * columns, built in one pass, and the notes follow at most KN_CHAIN_SHOWN
 * derivations; both say how many more there are. */
static void report_cycle(ld *l, const size_t *cyc, size_t len, const kn_column *cu, size_t edge)
{
    kn_schema *s = l->s;
    kn_column *first = s->columns[cyc[0]];
    size_t shown = len < KN_CHAIN_SHOWN / 2 ? len : KN_CHAIN_SHOWN / 2;
    const char *names[KN_CHAIN_SHOWN / 2];
    size_t size = 64;
    for (size_t j = 0; j < shown; j++) {
        names[j] = esc(l, s->columns[cyc[j]]->name);
        size += strlen(names[j]) + 6;
    }
    const char *head = esc(l, first->name);
    size += strlen(head);
    char *path = kn_alloc(l->a, size), *p = path;
    for (size_t j = 0; j < shown; j++) {
        p += snprintf(p, size - (size_t)(p - path), "'%s' -> ", names[j]);
    }
    if (shown < len) {
        p += snprintf(p, size - (size_t)(p - path), "(%zu more) -> ", len - shown);
    }
    snprintf(p, size - (size_t)(p - path), "'%s'", head);
    kn_diag *d = err(l, KN_R_DERIVATION_CYCLE, cu->derived_from[edge].node,
                     "column '%s' is derived from itself through %s", head, path);
    for (size_t j = 0; j < len; j++) {
        s->columns[cyc[j]]->broken = true;
    }
    for (size_t j = 0; j < len; j++) {
        if (len > KN_CHAIN_SHOWN && j == KN_CHAIN_SHOWN / 2) {
            kn_diag_note(l->sink, d, NULL, "... and %zu more derivations of this cycle, not shown",
                         len - KN_CHAIN_SHOWN);
            j = len - KN_CHAIN_SHOWN / 2;
        }
        kn_column *cj = s->columns[cyc[j]];
        kn_column *to = j + 1 < len ? s->columns[cyc[j + 1]] : first;
        kn_diag_note(l->sink, d, &cj->derived_node->pos, "'%s' is derived from '%s'", esc(l, cj->name),
                     esc(l, to->name));
    }
}

/* derivation-cycle: iterative depth-first search over derived_from (no
 * recursion: a chain may be as long as the table is wide). */
static void find_cycles(ld *l)
{
    kn_schema *s = l->s;
    size_t n = s->n_columns;
    if (!n) {
        return;
    }
    unsigned char *color = kn_alloc(l->a, n); /* 0 new, 1 on stack, 2 done */
    size_t *stack = kn_alloc_array(l->a, n, sizeof(size_t));
    size_t *next = kn_alloc_array(l->a, n, sizeof(size_t));
    size_t *at = kn_alloc_array(l->a, n, sizeof(size_t)); /* place on the stack */
    for (size_t start = 0; start < n; start++) {
        if (color[start]) {
            continue;
        }
        size_t top = 0;
        at[start] = 0;
        stack[top++] = start;
        color[start] = 1;
        next[start] = 0;
        while (top) {
            size_t u = stack[top - 1];
            kn_column *cu = s->columns[u];
            if (next[u] < cu->n_derived) {
                kn_column *cv = KN_REF_COLUMN(cu->derived_from[next[u]]);
                next[u]++;
                if (!cv) {
                    continue;
                }
                size_t v = cv->index;
                if (color[v] == 0) {
                    color[v] = 1;
                    next[v] = 0;
                    at[v] = top;
                    stack[top++] = v;
                } else if (color[v] == 1) {
                    report_cycle(l, stack + at[v], top - at[v], cu, next[u] - 1);
                }
            } else {
                color[u] = 2;
                top--;
            }
        }
    }
}

static void copy_out(ld *l)
{
    kn_schema *s = l->s;
    s->n_events = l->events->len;
    s->events = kn_alloc_array(l->a, s->n_events ? s->n_events : 1, sizeof(kn_event *));
    if (s->n_events) {
        memcpy(s->events, l->events->data, s->n_events * sizeof(kn_event *));
    }
    s->n_sources = l->sources->len;
    s->sources = kn_alloc_array(l->a, s->n_sources ? s->n_sources : 1, sizeof(kn_source *));
    if (s->n_sources) {
        memcpy(s->sources, l->sources->data, s->n_sources * sizeof(kn_source *));
    }
    s->n_columns = l->columns->len;
    s->columns = kn_alloc_array(l->a, s->n_columns ? s->n_columns : 1, sizeof(kn_column *));
    if (s->n_columns) {
        memcpy(s->columns, l->columns->data, s->n_columns * sizeof(kn_column *));
    }
}

/* The target column carries no other role (issue: a target declared as a
 * feature, or named as the entity or a split column, is silently judged
 * as one thing or the other).  Reported as schema-shape at the second
 * role, with a note at prediction.target.  Not counted in l->errors: the
 * model stays analysable (the target is always treated as the target),
 * so every other finding is still reported. */
static void check_target_roles(ld *l)
{
    const kn_schema *s = l->s;
    const kn_column *target = KN_REF_COLUMN(s->prediction.target);
    if (!target) {
        return;
    }
    const struct {
        const kn_ref *ref;
        const char *what, *as;
    } other[] = {
        {&s->prediction.entity, "prediction.entity", "the entity"},
        {&s->prediction.moment_column, "prediction.moment_column", "the moment's timestamp"},
        {&s->split.column, "split.column", "the split's assignment"},
        {&s->split.time_column, "split.time_column", "the split's time"},
        {&s->split.group_column, "split.group_column", "the split's groups"},
    };
    const char *name = esc(l, target->name);
    kn_diag *d = NULL;
    if (target->role_node && target->role != KN_ROLE_TARGET) {
        d = kn_diag_push(l->sink, KN_R_SCHEMA_SHAPE, &target->role_node->pos, target->name,
                         "column '%s' is the target (prediction.target) and cannot also have role '%s'; give it "
                         "role: target or leave role out",
                         name, kn_role_name(target->role));
        kn_diag_note(l->sink, d, &s->prediction.target.node->pos, "'%s' is named the target here", name);
    }
    for (size_t i = 0; i < sizeof other / sizeof *other; i++) {
        if (KN_REF_COLUMN(*other[i].ref) != target || !other[i].ref->node) {
            continue;
        }
        d = kn_diag_push(l->sink, KN_R_SCHEMA_SHAPE, &other[i].ref->node->pos, target->name,
                         "%s names the target '%s': the column the model predicts cannot also be %s", other[i].what,
                         name, other[i].as);
        kn_diag_note(l->sink, d, &s->prediction.target.node->pos, "'%s' is named the target here", name);
    }
}

/* ---- months written where minutes were meant ------------------------------
 * P15M is fifteen months; PT15M fifteen minutes.  A note-level bad-duration
 * hint goes to a duration in months or years at the MIN end of a lag whose
 * MAX is in hours, minutes or seconds ([P5M, PT4H]), and to a
 * duration in an unusual number of months (not 1, 2, 3, 4, 6, 9, 12...)
 * in a block (a source, a column, an event, the split) that holds such
 * durations, or, for a latency or delay, in a file that does.  Only the keys that hold durations are read, a fixed
 * number of them per block, so the walk is linear in the file. */

#define HINT_MAX_PER_BLOCK 64

typedef struct dur_slot {
    const kn_node *node;
    unsigned units;
    bool recording;         /* latency or delay: event to record, rarely months */
    const kn_node *partner; /* the other end of a [MIN, MAX] lag */
    bool is_min;            /* this is the MIN of such a lag */
} dur_slot;

typedef struct dur_block {
    dur_slot slot[HINT_MAX_PER_BLOCK];
    size_t n;
} dur_block;

static void hint_take(dur_block *b, const kn_node *v, bool recording, const kn_node *partner, bool is_min)
{
    if (!v || v->kind != KN_NODE_SCALAR || b->n == HINT_MAX_PER_BLOCK) {
        return;
    }
    kn_interval iv;
    size_t off;
    const char *why;
    if (!kn_duration_parse(v->u.scalar.text, v->u.scalar.len, &iv, &off, &why)) {
        return;
    }
    b->slot[b->n++] = (dur_slot){v, kn_duration_units(v->u.scalar.text, v->u.scalar.len), recording, partner, is_min};
}

/* A duration or a [MIN, MAX] lag. */
static void hint_take_lag(dur_block *b, const kn_node *v, bool recording)
{
    if (v && v->kind == KN_NODE_SEQ && v->u.seq.n == 2) {
        hint_take(b, v->u.seq.items[0], recording, v->u.seq.items[1], true);
        hint_take(b, v->u.seq.items[1], recording, v->u.seq.items[0], false);
    } else {
        hint_take(b, v, recording, NULL, false);
    }
}

static const kn_node *map_get(const kn_node *m, const char *key)
{
    if (!m || m->kind != KN_NODE_MAP) {
        return NULL;
    }
    for (size_t i = 0; i < m->u.map.n; i++) {
        const char *k = kn_node_str(m->u.map.pairs[i].key);
        if (k && strcmp(k, key) == 0) {
            return m->u.map.pairs[i].value;
        }
    }
    return NULL;
}

/* A count of months that people use as a calendar period (a month, a
 * quarter, half a year, a year...): "P1M" or "P6M" beside hours is a
 * monthly batch, not a slip; "P15M" or "P5M" more often meant minutes. */
static bool usual_months(const char *digits)
{
    static const int usual[] = {1, 2, 3, 4, 6, 9, 12, 18, 24, 36, 48, 60};
    int n = 0;
    size_t k = 0;
    for (; digits[k] >= '0' && digits[k] <= '9' && k < 6; k++) {
        n = n * 10 + (digits[k] - '0');
    }
    if (digits[k] != 'M') {
        return true; /* a fraction or something unusual: no guess */
    }
    for (size_t i = 0; i < sizeof usual / sizeof *usual; i++) {
        if (usual[i] == n) {
            return true;
        }
    }
    return false;
}

static const kn_node *block_clock(const dur_block *b)
{
    for (size_t i = 0; i < b->n; i++) {
        if (b->slot[i].units & (KN_DU_HOURS | KN_DU_MINUTES | KN_DU_SECONDS)) {
            return b->slot[i].node;
        }
    }
    return NULL;
}

/* What a key of a block holds for the duration hints. */
typedef enum hint_kind { HINT_NONE, HINT_RECORDING, HINT_LAG, HINT_RELATION, HINT_WINDOW, HINT_JOIN } hint_kind;

static hint_kind hint_key(const char *k, size_t len)
{
    static const struct {
        const char *word;
        size_t len;
        hint_kind kind;
    } words[] = {
        {"latency", 7, HINT_RECORDING}, {"delay", 5, HINT_RECORDING}, {"refresh", 7, HINT_LAG},
        {"matures", 7, HINT_LAG},       {"gap", 3, HINT_LAG},         {"embargo", 7, HINT_LAG},
        {"after", 5, HINT_RELATION},    {"before", 6, HINT_RELATION}, {"window", 6, HINT_WINDOW},
        {"join", 4, HINT_JOIN},
    };
    for (size_t i = 0; i < sizeof words / sizeof *words; i++) {
        if (words[i].len == len && words[i].word[0] == k[0] && memcmp(words[i].word, k, len) == 0) {
            return words[i].kind;
        }
    }
    return HINT_NONE;
}

/* Reads the durations of one block and returns its first duration in
 * hours, minutes or seconds (or NULL).  With report, pushes the hints: a
 * duration in months or years beside such a duration, and a latency or
 * delay in months also against file_clock (the file's first one). */
static const kn_node *hint_block(ld *l, const kn_node *entry, bool report, const kn_node *file_clock,
                                 bool *calendar)
{
    if (!entry || entry->kind != KN_NODE_MAP) {
        return NULL;
    }
    dur_block b;
    b.n = 0;
    /* One pass over the block's keys; most are neither durations nor
     * lags, and are passed over by their length and first letter. */
    for (size_t i = 0; i < entry->u.map.n; i++) {
        const kn_node *key = entry->u.map.pairs[i].key;
        const kn_node *v = entry->u.map.pairs[i].value;
        if (key->kind != KN_NODE_SCALAR) {
            continue;
        }
        switch (hint_key(key->u.scalar.text, key->u.scalar.len)) {
        case HINT_RECORDING:
            hint_take_lag(&b, v, true);
            break;
        case HINT_LAG:
            hint_take_lag(&b, v, false);
            break;
        case HINT_RELATION:
            for (size_t j = 0; v && v->kind == KN_NODE_MAP && j < v->u.map.n; j++) {
                hint_take_lag(&b, v->u.map.pairs[j].value, false);
            }
            break;
        case HINT_WINDOW:
            hint_take(&b, map_get(v, "from"), false, NULL, false);
            hint_take(&b, map_get(v, "to"), false, NULL, false);
            break;
        case HINT_JOIN:
            hint_take(&b, map_get(map_get(v, "as_of"), "offset"), false, NULL, false);
            break;
        case HINT_NONE:
            break;
        }
    }
    for (size_t i = 0; i < b.n; i++) {
        *calendar = *calendar || (b.slot[i].units & (KN_DU_MONTHS | KN_DU_YEARS));
    }

    const kn_node *own = block_clock(&b);
    if (!report) {
        return own;
    }
    for (size_t i = 0; i < b.n; i++) {
        unsigned u = b.slot[i].units;
        if (!(u & (KN_DU_MONTHS | KN_DU_YEARS))) {
            continue;
        }
        const kn_node *v = b.slot[i].node;
        const char *text = node_esc(l, v);
        /* "P15M" (or "-P15M"): the same digits after a T are minutes. */
        const char *p = strchr(text, 'P');
        bool months_only = u == KN_DU_MONTHS && p && p[1] != '\0';
        const kn_node *partner = b.slot[i].partner;
        const kn_node *clock = NULL;
        const char *where = "";
        bool partner_clock = partner && kn_duration_units(partner->u.scalar.text, partner->u.scalar.len) &
                                            (KN_DU_HOURS | KN_DU_MINUTES | KN_DU_SECONDS);
        /* [P5M, PT4H]: months below hours.  [PT1H, P1Y] is a plain range;
         * [PT1H, P15M] is flagged only for its unusual count. */
        if (partner_clock && (b.slot[i].is_min || (months_only && !usual_months(p + 1)))) {
            clock = partner;
            where = "the other end of the lag";
        } else if (months_only && !usual_months(p + 1)) {
            clock = own ? own : b.slot[i].recording ? file_clock : NULL;
            where = own ? "in the same block" : "in the same file";
        }
        if (!clock) {
            continue;
        }
        const char *fix = months_only ? kn_printf(l->a, "; if minutes were meant, write '%.*sT%s'",
                                                  (int)(p - text + 1), text, p + 1)
                                      : "";
        kn_diag *d = kn_diag_push(l->sink, KN_R_BAD_DURATION, &v->pos, NULL,
                                  "'%s' is in %s, while durations around it are in hours or minutes%s", text,
                                  u & KN_DU_YEARS ? (u & KN_DU_MONTHS ? "years and months" : "years") : "months",
                                  fix);
        kn_diag_cap(d, KN_SEV_NOTE);
        kn_diag_note(l->sink, d, &clock->pos, "'%s', %s, is in hours, minutes or seconds", node_esc(l, clock),
                     where);
        kn_diag_note(l->sink, d, &v->pos,
                     "in ISO 8601 an M before the T is months ([28d, 31d] each), after it minutes: P15M is 15 "
                     "months, PT15M is 15 minutes");
    }
    return own;
}

static void hint_calendar_units(ld *l, const kn_node *root)
{
    if (!root || root->kind != KN_NODE_MAP) {
        return;
    }
    static const char *const collections[] = {"events", "sources", "columns"};
    const kn_node *file_clock = NULL;
    bool calendar = false;
    for (int pass = 0; pass < 2; pass++) {
        for (size_t i = 0; i < 3; i++) {
            const kn_node *c = map_get(root, collections[i]);
            for (size_t j = 0; c && c->kind == KN_NODE_MAP && j < c->u.map.n; j++) {
                const kn_node *found = hint_block(l, c->u.map.pairs[j].value, pass == 1, file_clock, &calendar);
                if (pass == 0 && !file_clock) {
                    file_clock = found;
                }
            }
        }
        const kn_node *found = hint_block(l, map_get(root, "split"), pass == 1, file_clock, &calendar);
        if (pass == 0 && !file_clock) {
            file_clock = found;
        }
        /* The second pass only reports: nothing to report without both kinds. */
        if (!file_clock || !calendar) {
            return;
        }
    }
}

kn_schema *kn_schema_load(kn_arena *a, kn_sink *sink, const char *path, const kn_load_options *opt)
{
    ld l = {0};
    l.a = a;
    l.sink = sink;
    l.suggest_left = KN_LOAD_SUGGEST_BUDGET;
    l.opt = opt;
    l.s = kn_alloc(a, sizeof *l.s);
    l.s->path = path;
    l.s->event_names = kn_names_new(a);
    l.s->source_names = kn_names_new(a);
    l.s->column_names = kn_names_new(a);
    l.stack = kn_vec_new(a, sizeof(file_ctx));
    l.loaded = kn_names_new(a);
    l.events = kn_vec_new(a, sizeof(kn_event *));
    l.sources = kn_vec_new(a, sizeof(kn_source *));
    l.columns = kn_vec_new(a, sizeof(kn_column *));

    char *real;
    if (strcmp(path, "-") == 0) {
        /* Standard input: --stdin-name gives the path it stands for, which
         * places the root and the includes (the file need not exist). */
        path = opt->stdin_name ? opt->stdin_name : "<stdin>";
        l.s->path = path;
        const char *base = strrchr(path, '/') ? strrchr(path, '/') + 1 : path;
        char *dir = kn_path_real_dir(a, opt->stdin_name ? path : "./-");
        real = dir ? kn_printf(a, "%s%s%s", dir, strcmp(dir, "/") == 0 ? "" : "/", base) : NULL;
        l.stdin_real = real;
    } else {
        real = real_path(&l, path);
    }
    if (!real) {
        kn_pos p = {path, 0, 0, 0};
        kn_diag_push(sink, KN_R_YAML_SYNTAX, &p, NULL, "cannot read the file: %s", strerror(errno));
        kn_sink_mark_fatal(sink);
        return NULL;
    }
    /* The root (SPEC §9): --root, else the repository the schema lies in,
     * else its own folder. */
    const char *root = opt->root ? opt->root : kn_path_default_root(a, path);
    l.root_real = root ? real_path(&l, root) : NULL;
    if (!l.root_real) {
        kn_pos p = {path, 0, 0, 0};
        kn_diag_push(sink, KN_R_INCLUDE_REFUSED, &p, NULL, "the root folder '%s' does not exist", esc(&l, root));
        kn_sink_mark_fatal(sink);
        return NULL;
    }
    load_file(&l, real, path, true, NULL);
    if (!l.s->root) {
        return NULL;
    }
    copy_out(&l);
    resolve_all(&l);
    check_target_roles(&l);
    /* The hints need a duration in months or years; the loader has read
     * every duration, so a schema without one is spared the second pass. */
    for (size_t i = 0; l.calendar && i < l.s->n_files; i++) {
        hint_calendar_units(&l, l.s->files[i].root);
    }
    find_cycles(&l);
    l.s->shape_ok = !l.errors;
    return l.s;
}

kn_event *kn_schema_event(const kn_schema *s, const char *name)
{
    return kn_names_get(s->event_names, name);
}

kn_source *kn_schema_source(const kn_schema *s, const char *name)
{
    return kn_names_get(s->source_names, name);
}

kn_column *kn_schema_column(const kn_schema *s, const char *name)
{
    return kn_names_get(s->column_names, name);
}

const char *kn_role_name(kn_role r)
{
    return kn_roles[r];
}

const char *kn_type_name(kn_value_type t)
{
    return t == KN_TYPE_UNSET ? "unset" : kn_types[t - 1];
}

const char *kn_step_name(kn_step_kind k)
{
    return kn_steps[k];
}

const char *kn_fit_name(kn_fit f)
{
    return f == KN_FIT_UNSET ? "unset" : kn_fits[f - 1];
}

const char *kn_split_method_name(kn_split_method m)
{
    return m == KN_SPLIT_UNSET ? "unset" : kn_split_methods[m - 1];
}

const char *kn_history_name(kn_history h)
{
    return h == KN_HISTORY_UNSET ? "unset" : kn_histories[h - 1];
}

const kn_pos *kn_column_pos(const kn_column *c, const kn_node *node)
{
    return node ? &node->pos : &c->key->pos;
}

/* The index enums above must follow the tables of shape.c. */
/* True when shape and every shape below it take at most MAX_KEYS keys (the
 * loader's per-mapping arrays).  Depth-bounded: the tables are finite. */
static bool shape_fits(const kn_shape *sh, int depth)
{
    if (!sh || depth > 8) {
        return true;
    }
    if (sh->n_keys > MAX_KEYS) {
        return false;
    }
    for (size_t i = 0; i < sh->n_keys; i++) {
        if (!shape_fits(sh->keys[i].sub, depth + 1)) {
            return false;
        }
    }
    return true;
}

bool kn_shape_selfcheck(void)
{
    if (!shape_fits(&kn_shape_top, 0) || !shape_fits(&kn_shape_included, 0) || !shape_fits(&kn_shape_source, 0)) {
        return false;
    }
    static const struct {
        const kn_shape *shape;
        int index;
        const char *name;
    } t[] = {
        {&kn_shape_top, T_KNOWABLE, "knowable"}, {&kn_shape_top, T_DATASET, "dataset"},
        {&kn_shape_top, T_DESCRIPTION, "description"}, {&kn_shape_top, T_INCLUDE, "include"},
        {&kn_shape_top, T_PREDICTION, "prediction"}, {&kn_shape_top, T_EVENTS, "events"},
        {&kn_shape_top, T_SOURCES, "sources"}, {&kn_shape_top, T_COLUMNS, "columns"},
        {&kn_shape_top, T_PIPELINE, "pipeline"}, {&kn_shape_top, T_SPLIT, "split"},
        {&kn_shape_included, I_KNOWABLE, "knowable"}, {&kn_shape_included, I_DESCRIPTION, "description"},
        {&kn_shape_included, I_INCLUDE, "include"}, {&kn_shape_included, I_EVENTS, "events"},
        {&kn_shape_included, I_SOURCES, "sources"},
    };
    for (size_t i = 0; i < sizeof t / sizeof *t; i++) {
        if (strcmp(t[i].shape->keys[t[i].index].name, t[i].name) != 0) {
            return false;
        }
    }
    const kn_shape *col = kn_shape_top.keys[T_COLUMNS].sub;
    static const char *const cols[] = {"role", "type", "known", "delay", "source", "join", "derived_from",
                                       "window", "proxy_of", "format", "anonymized", "quasi_identifier",
                                       "description", "waive"};
    for (size_t i = 0; i < sizeof cols / sizeof *cols; i++) {
        if (strcmp(col->keys[i].name, cols[i]) != 0) {
            return false;
        }
    }
    for (size_t i = 0; i < KN_SF_COUNT; i++) {
        if (strcmp(kn_shape_source.keys[i].name, kn_source_field_names[i]) != 0) {
            return false;
        }
    }
    const kn_shape *pred = kn_shape_top.keys[T_PREDICTION].sub, *split = kn_shape_top.keys[T_SPLIT].sub;
    const kn_shape *step = kn_shape_top.keys[T_PIPELINE].sub, *ev = kn_shape_top.keys[T_EVENTS].sub;
    const kn_shape *join = col->keys[C_JOIN].sub, *win = col->keys[C_WINDOW].sub;
    const kn_shape *anon = col->keys[C_ANON].sub, *waive = col->keys[C_WAIVE].sub;
    return strcmp(pred->keys[P_LABEL_KNOWN].name, "label_known") == 0 &&
           strcmp(split->keys[X_FOLDS].name, "folds") == 0 && strcmp(split->keys[X_GAP].name, "gap") == 0 &&
           strcmp(step->keys[S_COLUMNS].name, "columns") == 0 && strcmp(ev->keys[E_BEFORE].name, "before") == 0 &&
           strcmp(join->keys[J_AS_OF].name, "as_of") == 0 && strcmp(win->keys[W_TO].name, "to") == 0 &&
           strcmp(anon->keys[A_SALTED].name, "salted") == 0 && strcmp(waive->keys[V_EXPIRES].name, "expires") == 0 &&
           strcmp(ev->keys[E_FIRST_OF].name, "first_of") == 0 && strcmp(ev->keys[E_WAIVE].name, "waive") == 0 &&
           strcmp(pred->keys[P_WAIVE].name, "waive") == 0 && strcmp(step->keys[S_WAIVE].name, "waive") == 0 &&
           strcmp(split->keys[X_PURGE].name, "purge") == 0 && strcmp(split->keys[X_EMBARGO].name, "embargo") == 0 &&
           strcmp(split->keys[X_WAIVE].name, "waive") == 0 && strcmp(kn_shape_source.keys[SRC_WAIVE].name, "waive") == 0 &&
           strcmp(join->keys[J_AS_OF].sub->keys[AO_OFFSET].name, "offset") == 0 &&
           strcmp(col->keys[C_KNOWN].sub->keys[K_ONE_OF].name, "one_of") == 0;
}
