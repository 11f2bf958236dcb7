/* rulebook.c - reads house rulebooks (SPEC §6) over the built-in default:
 * severities, required provenance fields, suspicious-name patterns, the
 * identifier pattern, thresholds and strict_moment.  Every pattern is
 * compiled once here (src/util/regex.c: JIT where available, limits on
 * every match); errors point into the rulebook file and make the run fail
 * with exit status 2.
 *
 * Layering: the built-in rules/default.yaml first, then each --rulebook
 * file in order (or the discovered .knowable-rules.yaml); a file's
 * `extends` are read before the file itself.  Scalars (severities,
 * strict_moment, identifier_names, thresholds, each `require` list) are
 * replaced by later files; `names` entries accumulate, so a team adds its
 * own patterns to the default ones. */
#include "rulebook.h"

#include "../report/yaml_sink.h"

#include <errno.h>
#include <limits.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "../util/path.h"
#include "../util/names.h"
#include "../util/regex.h"
#include "../util/text.h"

extern const char kn_default_rulebook[];
extern const size_t kn_default_rulebook_len;

#define MAX_EXTENDS_DEPTH 8

static const char *const top_keys[] = {"knowable_rulebook", "extends", "severity", "strict_moment",
                                       "require", "names", "identifier_names", "thresholds", "missing_values"};
static const char *const require_keys[] = {"external_source", "feature"};
static const char *const name_keys[] = {"pattern", "applies_to", "why"};
static const char *const threshold_keys[] = {"separation_auc", "uncertainty", "missingness_auc",
                                             "segment_uncertainty", "min_group_size"};
#define N(a) (sizeof(a) / sizeof((a)[0]))

kn_rulebook *kn_rulebook_new(kn_arena *a)
{
    kn_rulebook *rb = kn_alloc(a, sizeof *rb);
    for (size_t i = 0; i < KN_RULE_COUNT; i++) {
        rb->severity[i] = kn_rule_get((kn_rule)i)->severity;
    }
    rb->thresholds.separation_auc = 0.95;
    rb->thresholds.uncertainty = 0.8;
    rb->thresholds.missingness_auc = 0.9;
    rb->thresholds.segment_uncertainty = 0.5;
    rb->thresholds.min_group_size = 5;
    static const char *const missing[] = {"", "NA", "N/A", "NaN", "null"};
    rb->missing_values = missing;
    rb->n_missing_values = N(missing);
    rb->origin = "(built-in)";
    return rb;
}

typedef struct rb_ld {
    kn_rulebook *rb;
    kn_arena *a;
    kn_sink *sink;
    bool failed;
    /* The files being read, outermost first (real paths), to name an
     * `extends` loop; chain_display holds the same files as printed. */
    const char *chain[MAX_EXTENDS_DEPTH + 2];
    const char *chain_display[MAX_EXTENDS_DEPTH + 2];
    const kn_node *chain_from[MAX_EXTENDS_DEPTH + 2]; /* the extends item that named it */
    int depth;
    /* `extends` obeys the include rules (SPEC §9): relative paths of
     * regular files inside root_real, the repository of the rulebook named
     * first (the nearest folder upwards holding .git), else its folder.
     * loaded holds the real path of every file read, so that a file
     * extended along many paths is read once. */
    const char *root_real;
    kn_name_map *loaded;
    kn_name_map *compiled; /* names pattern text -> its kn_regex, compiled once */
} rb_ld;

/* The most `names` entries a rulebook and everything it extends may hold:
 * house rulebooks hold tens; each pattern costs a few KiB compiled. */
#define MAX_NAMES 20000

__attribute__((format(printf, 4, 5)))
static kn_diag *fail(rb_ld *l, kn_rule r, const kn_node *at, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    char *msg = kn_vprintf(l->a, fmt, ap);
    va_end(ap);
    l->failed = true;
    kn_sink_mark_fatal(l->sink);
    return kn_diag_push(l->sink, r, at ? &at->pos : NULL, NULL, "%s", msg);
}

static bool known_key(rb_ld *l, const kn_node *k, const char *where, const char *const *keys, size_t n)
{
    const char *name = kn_node_str(k);
    if (!name) {
        fail(l, KN_R_SCHEMA_SHAPE, k, "a key of %s must be a plain word", where);
        return false;
    }
    for (size_t i = 0; i < n; i++) {
        if (strcmp(keys[i], name) == 0) {
            return true;
        }
    }
    const char *near = kn_suggest(name, keys, n);
    char *esc = kn_escape_term(l->a, name, strlen(name));
    if (near) {
        fail(l, KN_R_SCHEMA_SHAPE, k, "unknown key '%s' in %s; did you mean '%s'?", esc, where, near);
    } else {
        fail(l, KN_R_SCHEMA_SHAPE, k, "unknown key '%s' in %s", esc, where);
    }
    return false;
}

/* Compiles a rulebook pattern once; NULL after a bad-pattern error that
 * points at the offending character. */
static kn_regex *compile(rb_ld *l, const kn_node *v, const char *what)
{
    kn_regex_error err;
    kn_regex *re = kn_regex_compile(l->a, v->u.scalar.text, v->u.scalar.len, &err);
    if (!re) {
        kn_pos p = kn_node_char_pos(v, err.offset);
        l->failed = true;
        kn_sink_mark_fatal(l->sink);
        kn_diag *dg = kn_diag_push(l->sink, KN_R_BAD_PATTERN, &p, NULL, "%s is not a valid PCRE2 pattern: %s", what,
                                   err.message);
        kn_diag_note(l->sink, dg, &v->pos, "the pattern starts here; the error is at character %zu",
                     err.offset + 1);
        return NULL;
    }
    return re;
}

static bool parse_severity(const char *s, kn_severity *out)
{
    static const struct {
        const char *name;
        kn_severity sev;
    } t[] = {{"error", KN_SEV_ERROR}, {"warning", KN_SEV_WARNING}, {"note", KN_SEV_NOTE}, {"off", KN_SEV_OFF}};
    for (size_t i = 0; i < N(t); i++) {
        if (strcmp(t[i].name, s) == 0) {
            *out = t[i].sev;
            return true;
        }
    }
    return false;
}

static void load_severity(rb_ld *l, const kn_node *v)
{
    if (v->kind != KN_NODE_MAP) {
        fail(l, KN_R_SCHEMA_SHAPE, v, "'severity' must be a mapping of rule ids to error, warning, note or off");
        return;
    }
    for (size_t i = 0; i < v->u.map.n; i++) {
        const kn_node *k = v->u.map.pairs[i].key, *s = v->u.map.pairs[i].value;
        const char *id = kn_node_str(k);
        kn_rule r;
        if (!id || !kn_rule_find(id, strlen(id), &r)) {
            const char *ids[KN_RULE_COUNT];
            for (size_t j = 0; j < KN_RULE_COUNT; j++) {
                ids[j] = kn_rule_get((kn_rule)j)->id;
            }
            const char *near = id ? kn_suggest(id, ids, KN_RULE_COUNT) : NULL;
            const char *esc = id ? kn_escape_term(l->a, id, strlen(id)) : "";
            if (near) {
                fail(l, KN_R_UNKNOWN_REFERENCE, k, "unknown rule id '%s'; did you mean '%s'?", esc, near);
            } else {
                fail(l, KN_R_UNKNOWN_REFERENCE, k, "unknown rule id '%s' (`knowable rules` lists them)", esc);
            }
            continue;
        }
        kn_severity sev;
        const char *word = kn_node_str(s);
        if (!word || !parse_severity(word, &sev)) {
            static const char *const words[] = {"error", "warning", "note", "off"};
            const char *near = word ? kn_suggest(word, words, N(words)) : NULL;
            /* "warn", "err": a short form is a prefix of the word meant. */
            for (size_t w = 0; !near && word && strlen(word) >= 3 && w < N(words); w++) {
                if (strncmp(words[w], word, strlen(word)) == 0) {
                    near = words[w];
                }
            }
            if (near) {
                fail(l, KN_R_SCHEMA_SHAPE, s, "the severity of '%s' must be error, warning, note or off; did you mean '%s'?",
                     id, near);
            } else {
                fail(l, KN_R_SCHEMA_SHAPE, s, "the severity of '%s' must be error, warning, note or off", id);
            }
            continue;
        }
        if (kn_rule_is_schema(r) && sev != KN_SEV_ERROR) {
            /* SPEC §4.1: a broken schema never passes a gate. */
            fail(l, KN_R_SCHEMA_SHAPE, s,
                 "'%s' is a schema rule and stays an error: a schema that cannot be read correctly "
                 "must never pass a gate (waive a finding on its column instead, with a reason)",
                 id);
            continue;
        }
        l->rb->severity[r] = sev;
        l->rb->severity_from[r] = l->depth > 0 ? l->chain_display[l->depth - 1] : NULL;
    }
}

static void load_require(rb_ld *l, const kn_node *v)
{
    if (v->kind != KN_NODE_MAP) {
        fail(l, KN_R_SCHEMA_SHAPE, v, "'require' must be a mapping with external_source and feature");
        return;
    }
    for (size_t i = 0; i < v->u.map.n; i++) {
        const kn_node *k = v->u.map.pairs[i].key, *list = v->u.map.pairs[i].value;
        if (!known_key(l, k, "require", require_keys, N(require_keys))) {
            continue;
        }
        bool ext = strcmp(k->u.scalar.text, "external_source") == 0;
        if (list->kind != KN_NODE_SEQ) {
            fail(l, KN_R_SCHEMA_SHAPE, list, "'require.%s' must be a list of field names", k->u.scalar.text);
            continue;
        }
        if (ext) {
            memset(l->rb->require_external, 0, sizeof l->rb->require_external);
        } else {
            l->rb->require_feature_known = l->rb->require_feature_source = false;
        }
        for (size_t j = 0; j < list->u.seq.n; j++) {
            const kn_node *f = list->u.seq.items[j];
            const char *name = kn_node_str(f);
            if (ext) {
                size_t idx = KN_SF_COUNT;
                for (size_t m = 0; name && m < KN_SF_COUNT; m++) {
                    if (strcmp(kn_source_field_names[m], name) == 0) {
                        idx = m;
                    }
                }
                if (idx == KN_SF_COUNT) {
                    const char *near = name ? kn_suggest(name, kn_source_field_names, KN_SF_COUNT) : NULL;
                    fail(l, KN_R_SCHEMA_SHAPE, f, "'%s' is not a field of a source%s%s%s",
                         name ? kn_escape_term(l->a, name, strlen(name)) : "", near ? "; did you mean '" : "",
                         near ? near : "", near ? "'?" : "");
                    continue;
                }
                l->rb->require_external[idx] = true;
            } else if (name && strcmp(name, "known") == 0) {
                l->rb->require_feature_known = true;
            } else if (name && strcmp(name, "source") == 0) {
                l->rb->require_feature_source = true;
            } else {
                fail(l, KN_R_SCHEMA_SHAPE, f, "'require.feature' takes known and source");
            }
        }
    }
}

static void load_names(rb_ld *l, const kn_node *v)
{
    if (v->kind != KN_NODE_SEQ) {
        fail(l, KN_R_SCHEMA_SHAPE, v, "'names' must be a list of {pattern, applies_to, why}");
        return;
    }
    kn_name_rule *rules = kn_alloc_array(l->a, l->rb->n_names + v->u.seq.n, sizeof *rules);
    if (l->rb->n_names) {
        memcpy(rules, l->rb->names, l->rb->n_names * sizeof *rules);
    }
    size_t n = l->rb->n_names;
    for (size_t i = 0; i < v->u.seq.n; i++) {
        const kn_node *item = v->u.seq.items[i];
        if (item->kind != KN_NODE_MAP) {
            fail(l, KN_R_SCHEMA_SHAPE, item, "each entry of 'names' must be a mapping {pattern, applies_to, why}");
            continue;
        }
        kn_name_rule r = {0};
        r.applies_to = KN_APPLIES_NAME;
        const kn_node *pat = NULL;
        bool ok = true;
        for (size_t j = 0; j < item->u.map.n; j++) {
            const kn_node *k = item->u.map.pairs[j].key, *x = item->u.map.pairs[j].value;
            if (!known_key(l, k, "a names entry", name_keys, N(name_keys))) {
                ok = false;
                continue;
            }
            const char *key = k->u.scalar.text, *val = kn_node_str(x);
            if (!val || kn_node_is_null(x) || !*val) {
                fail(l, KN_R_SCHEMA_SHAPE, x, "'%s' of a names entry must be a non-empty string", key);
                ok = false;
            } else if (strcmp(key, "pattern") == 0) {
                pat = x;
            } else if (strcmp(key, "why") == 0) {
                r.why = val;
            } else if (strcmp(val, "name") == 0) {
                r.applies_to = KN_APPLIES_NAME;
            } else if (strcmp(val, "description") == 0) {
                r.applies_to = KN_APPLIES_DESCRIPTION;
            } else if (strcmp(val, "both") == 0) {
                r.applies_to = KN_APPLIES_BOTH;
            } else {
                fail(l, KN_R_SCHEMA_SHAPE, x, "'applies_to' must be name, description or both");
                ok = false;
            }
        }
        if (!pat || !r.why) {
            if (ok) {
                fail(l, KN_R_SCHEMA_SHAPE, item, "a names entry needs both 'pattern' and 'why'");
            }
            continue;
        }
        if (n >= MAX_NAMES) {
            fail(l, KN_R_SCHEMA_SHAPE, item, "more than %d 'names' entries (with the rulebooks this one extends)",
                 MAX_NAMES);
            break;
        }
        r.pattern = pat->u.scalar.text;
        r.pos = pat->pos;
        r.code = kn_names_get(l->compiled, r.pattern);
        if (!r.code) {
            r.code = compile(l, pat, "this suspicious-name pattern");
            if (r.code && strlen(r.pattern) == pat->u.scalar.len) {
                kn_names_put(l->compiled, r.pattern, r.code);
            }
        }
        if (r.code && ok) {
            rules[n++] = r;
        }
    }
    l->rb->names = rules;
    l->rb->n_names = n;
}

/* missing_values: a list of at most MAX_MISSING_VALUES strings of at most
 * MAX_MISSING_TEXT bytes; it replaces the list it overrides. */
#define MAX_MISSING_VALUES 64
#define MAX_MISSING_TEXT 64
static void load_missing_values(rb_ld *l, const kn_node *v)
{
    if (v->kind != KN_NODE_SEQ || v->u.seq.n > MAX_MISSING_VALUES) {
        fail(l, KN_R_SCHEMA_SHAPE, v, "'missing_values' must be a list of at most %d strings",
             MAX_MISSING_VALUES);
        return;
    }
    const char **words = kn_alloc_array(l->a, v->u.seq.n + 1, sizeof *words);
    for (size_t i = 0; i < v->u.seq.n; i++) {
        const kn_node *w = v->u.seq.items[i];
        if (w->kind != KN_NODE_SCALAR || strlen(w->u.scalar.text) > MAX_MISSING_TEXT) {
            fail(l, KN_R_SCHEMA_SHAPE, w, "each of 'missing_values' must be a string of at most %d bytes",
                 MAX_MISSING_TEXT);
            return;
        }
        words[i] = w->u.scalar.text;
    }
    l->rb->missing_values = words;
    l->rb->n_missing_values = v->u.seq.n;
}

static void load_thresholds(rb_ld *l, const kn_node *v)
{
    if (v->kind != KN_NODE_MAP) {
        fail(l, KN_R_SCHEMA_SHAPE, v, "'thresholds' must be a mapping");
        return;
    }
    kn_thresholds *t = &l->rb->thresholds;
    for (size_t i = 0; i < v->u.map.n; i++) {
        const kn_node *k = v->u.map.pairs[i].key, *x = v->u.map.pairs[i].value;
        if (!known_key(l, k, "thresholds", threshold_keys, N(threshold_keys))) {
            continue;
        }
        const char *key = k->u.scalar.text;
        if (strcmp(key, "min_group_size") == 0) {
            long long n;
            if (!kn_node_int(x, &n) || n < 1 || n > 1000000) {
                fail(l, KN_R_SCHEMA_SHAPE, x, "'min_group_size' must be an integer between 1 and 1000000");
                continue;
            }
            t->min_group_size = n;
            continue;
        }
        double d;
        double lo = strcmp(key, "uncertainty") == 0 || strcmp(key, "segment_uncertainty") == 0 ? 0.0 : 0.5;
        if (!kn_node_number(x, &d) || d < lo || d > 1.0) {
            fail(l, KN_R_SCHEMA_SHAPE, x, "'%s' must be a number between %g and 1", key, lo);
            continue;
        }
        if (strcmp(key, "separation_auc") == 0) {
            t->separation_auc = d;
        } else if (strcmp(key, "uncertainty") == 0) {
            t->uncertainty = d;
        } else if (strcmp(key, "missingness_auc") == 0) {
            t->missingness_auc = d;
        } else {
            t->segment_uncertainty = d;
        }
    }
}

static char *dir_of(kn_arena *a, const char *path)
{
    const char *slash = strrchr(path, '/');
    if (slash == path) {
        return kn_strdup(a, "/");
    }
    return slash ? kn_strndup(a, path, (size_t)(slash - path)) : kn_strdup(a, ".");
}

static bool load_tree(rb_ld *l, const kn_node *root, const char *path, int depth);

/* The number of diagnostics in the sink so far (before kn_sink_finish). */
static size_t pushed(const kn_sink *sink)
{
    return kn_sink_pushed(sink);
}

static char *real_path(rb_ld *l, const char *path)
{
    return kn_path_real(l->a, path);
}

static bool inside_root(const rb_ld *l, const char *real)
{
    size_t n = strlen(l->root_real);
    if (strcmp(l->root_real, "/") == 0) {
        return true;
    }
    return strncmp(real, l->root_real, n) == 0 && (real[n] == '/' || real[n] == '\0');
}

/* Reads one rulebook file and everything it extends.  Anything the YAML
 * reader reports about a rulebook (a duplicate key included) makes the
 * rulebook unusable: the run stops with exit status 2.  from is the
 * `extends` item that names the file (NULL for the rulebook named on the
 * command line or discovered, which the include rules do not apply to). */
static bool load_file(rb_ld *l, const char *path, const kn_node *from)
{
    const char *id = real_path(l, path);
    if (from) {
        const char *shown = kn_escape_term(l->a, kn_node_str(from), strlen(kn_node_str(from)));
        if (!id) {
            /* A missing file outside the root is refused as outside: the
             * tool does not tell whether files exist beyond the root. */
            char *p = kn_strdup(l->a, path);
            const char *parent = NULL;
            for (char *slash = strrchr(p, '/'); slash && !parent; slash = strrchr(p, '/')) {
                *slash = '\0';
                parent = real_path(l, slash == p ? "/" : p);
            }
            if (!parent) {
                parent = real_path(l, ".");
            }
            if (!parent || inside_root(l, parent)) {
                fail(l, KN_R_INCLUDE_REFUSED, from, "extends '%s' is refused: no such file", shown);
                return false;
            }
        }
        if (!id || !inside_root(l, id)) {
            kn_diag *d = fail(l, KN_R_INCLUDE_REFUSED, from, "extends '%s' is refused: it leaves the root folder",
                              shown);
            kn_diag_note(l->sink, d, &from->pos,
                         "the root is '%s', the repository (or else the folder) of the rulebook named first",
                         kn_escape_term(l->a, l->root_real, strlen(l->root_real)));
            return false;
        }
        struct stat st = {0};
        if (stat(id, &st) != 0 || !S_ISREG(st.st_mode)) {
            fail(l, KN_R_INCLUDE_REFUSED, from, "extends '%s' is refused: %s", shown,
                 S_ISDIR(st.st_mode) ? "it is a folder, not a file" : "it is not a regular file");
            return false;
        }
    } else if (!id) {
        id = path;
    }
    for (int i = 0; i < l->depth; i++) {
        if (strcmp(l->chain[i], id) != 0) {
            continue;
        }
        kn_diag *d = fail(l, KN_R_INCLUDE_REFUSED, from,
                          "'%s' is already being read: these rulebooks extend each other in a loop",
                          kn_escape_term(l->a, path, strlen(path)));
        for (int j = i + 1; j < l->depth; j++) {
            kn_diag_note(l->sink, d, &l->chain_from[j]->pos, "'%s' extends '%s'",
                         kn_escape_term(l->a, l->chain_display[j - 1], strlen(l->chain_display[j - 1])),
                         kn_escape_term(l->a, l->chain_display[j], strlen(l->chain_display[j])));
        }
        return false;
    }
    if (kn_names_get(l->loaded, id)) {
        return true; /* extended along another path already: read once */
    }
    if (l->depth > MAX_EXTENDS_DEPTH) {
        fail(l, KN_R_INCLUDE_REFUSED, from, "rulebooks extend each other more than %d levels deep",
             MAX_EXTENDS_DEPTH);
        return false;
    }
    if (!from) {
        l->root_real = kn_path_default_root(l->a, id);
        if (!l->root_real) {
            l->root_real = dir_of(l->a, id);
        }
    }
    kn_names_put(l->loaded, id, l);
    size_t before = pushed(l->sink);
    kn_yaml_limits lim;
    kn_yaml_limits_default(&lim);
    kn_yaml_reporter rep = kn_sink_yaml_reporter(l->sink);
    kn_node *root = kn_yaml_load_file(l->a, &rep, path, path, &lim);
    if (!root || pushed(l->sink) != before) {
        l->failed = true;
        kn_sink_mark_fatal(l->sink);
        return false;
    }
    l->chain[l->depth] = id;
    l->chain_display[l->depth] = path;
    l->chain_from[l->depth] = from;
    l->depth++;
    bool ok = load_tree(l, root, path, l->depth);
    l->depth--;
    return ok;
}

static void load_extends(rb_ld *l, const kn_node *v, const char *path, int depth)
{
    (void)depth;
    const kn_node *single[1] = {v};
    const kn_node *const *items = single;
    size_t n = 1;
    if (v->kind == KN_NODE_SEQ) {
        items = (const kn_node *const *)v->u.seq.items;
        n = v->u.seq.n;
    }
    for (size_t i = 0; i < n; i++) {
        const char *rel = kn_node_str(items[i]);
        if (!rel || !*rel || kn_node_is_null(items[i])) {
            fail(l, KN_R_SCHEMA_SHAPE, items[i], "'extends' takes relative paths of rulebook files");
            continue;
        }
        if (rel[0] == '/') {
            fail(l, KN_R_INCLUDE_REFUSED, items[i], "'extends' takes relative paths; '%s' is absolute",
                 kn_escape_term(l->a, rel, strlen(rel)));
            continue;
        }
        if (strcmp(path, ".") == 0) {
            fail(l, KN_R_INCLUDE_REFUSED, items[i], "the built-in rulebook cannot extend files");
            continue;
        }
        char *dir = dir_of(l->a, path);
        char *full = strcmp(dir, ".") == 0 ? kn_strdup(l->a, rel) : kn_printf(l->a, "%s/%s", dir, rel);
        load_file(l, full, items[i]);
    }
}

static bool load_tree(rb_ld *l, const kn_node *root, const char *path, int depth)
{
    if (root->kind != KN_NODE_MAP) {
        fail(l, KN_R_SCHEMA_SHAPE, root, "a rulebook must be a mapping that starts with knowable_rulebook: 1");
        return false;
    }
    const kn_node *version = kn_map_get(root, "knowable_rulebook");
    long long ver;
    if (!version || !kn_node_int(version, &ver) || ver != 1) {
        fail(l, KN_R_SCHEMA_SHAPE, version ? version : root, "a rulebook starts with knowable_rulebook: 1");
    }
    /* extends first, so this file's settings override the ones it extends. */
    const kn_node *ext = kn_map_get(root, "extends");
    if (ext) {
        load_extends(l, ext, path, depth);
    }
    for (size_t i = 0; i < root->u.map.n; i++) {
        const kn_node *k = root->u.map.pairs[i].key, *v = root->u.map.pairs[i].value;
        if (!known_key(l, k, "the rulebook", top_keys, N(top_keys))) {
            continue;
        }
        const char *key = k->u.scalar.text;
        if (strcmp(key, "severity") == 0) {
            load_severity(l, v);
        } else if (strcmp(key, "strict_moment") == 0) {
            bool b;
            if (!kn_node_bool(v, &b)) {
                fail(l, KN_R_SCHEMA_SHAPE, v, "'strict_moment' must be true or false");
            } else {
                l->rb->strict_moment = b;
            }
        } else if (strcmp(key, "require") == 0) {
            load_require(l, v);
        } else if (strcmp(key, "names") == 0) {
            load_names(l, v);
        } else if (strcmp(key, "identifier_names") == 0) {
            if (v->kind != KN_NODE_SCALAR || kn_node_is_null(v)) {
                fail(l, KN_R_SCHEMA_SHAPE, v, "'identifier_names' must be a pattern");
            } else {
                void *code = compile(l, v, "the identifier_names pattern");
                if (code) {
                    l->rb->identifier_names = v->u.scalar.text;
                    l->rb->identifier_code = code;
                }
            }
        } else if (strcmp(key, "thresholds") == 0) {
            load_thresholds(l, v);
        } else if (strcmp(key, "missing_values") == 0) {
            load_missing_values(l, v);
        }
    }
    return !l->failed;
}

bool kn_rulebook_load_default(kn_rulebook *rb, kn_arena *a, kn_sink *sink)
{
    kn_yaml_limits lim;
    kn_yaml_limits_default(&lim);
    kn_yaml_reporter rep = kn_sink_yaml_reporter(sink);
    kn_node *root = kn_yaml_parse(a, &rep, "(built-in rules/default.yaml)", kn_default_rulebook,
                                  kn_default_rulebook_len, &lim);
    if (!root) {
        return false;
    }
    rb_ld l = {rb, a, sink, false, {0}, {0}, {0}, 0, "/", NULL, NULL};
    l.loaded = kn_names_new(a);
    l.compiled = kn_names_new(a);
    bool ok = load_tree(&l, root, ".", 0);
    rb->origin = "(built-in)";
    return ok;
}

bool kn_rulebook_load(kn_rulebook *rb, kn_arena *a, kn_sink *sink, const char *path)
{
    rb_ld l = {rb, a, sink, false, {0}, {0}, {0}, 0, "/", NULL, NULL};
    l.loaded = kn_names_new(a);
    l.compiled = kn_names_new(a);
    bool ok = load_file(&l, path, NULL) && !l.failed;
    rb->origin = path;
    size_t n = kn_names_count(l.loaded);
    const char **files = kn_alloc_array(a, rb->n_files + n + 1, sizeof *files);
    for (size_t i = 0; i < rb->n_files; i++) {
        files[i] = rb->files[i];
    }
    for (size_t i = 0; i < n; i++) {
        files[rb->n_files + i] = kn_strdup(a, kn_names_at(l.loaded, i));
    }
    rb->files = files;
    rb->n_files += n;
    return ok;
}

static bool exists(const char *path, bool dir)
{
    struct stat st;
    return stat(path, &st) == 0 && (dir ? S_ISDIR(st.st_mode) : S_ISREG(st.st_mode));
}

/* The search walks up the real folders, but the path it returns is
 * spelt from the schema's path as given ("rules/x.knowable.yaml" ->
 * "rules/.knowable-rules.yaml", then "rules/.knowable-rules.yaml" one
 * folder up), tidied ("teams/fraud/../../x" -> "x") when the tidy spelling
 * names the same file, so that diagnostics print paths the user
 * recognises.  It stops at a folder that holds .git and at the root:
 * --root when the schema lies inside it, else the default root (the
 * repository, else the schema's own folder: SPEC §5, §9), so a rulebook
 * planted above the project is never read. */
char *kn_rulebook_discover(kn_arena *a, const char *schema_path, const char *root)
{
    char *dir = kn_path_real_dir(a, schema_path);
    if (!dir) {
        return NULL;
    }
    char *slash;
    const char *root_real = NULL;
    if (!root) {
        root = kn_path_default_root(a, schema_path); /* the repository, else the schema's folder */
    }
    if (root) {
        root_real = kn_path_real(a, root);
    }
    if (root_real) {
        size_t n = strlen(root_real);
        bool inside = strcmp(root_real, "/") == 0 ||
                      (strncmp(dir, root_real, n) == 0 && (dir[n] == '/' || dir[n] == '\0'));
        if (!inside) {
            root_real = NULL;
        }
    }
    const char *shown = dir_of(a, schema_path);
    for (int guard = 0; guard < 256; guard++) {
        char *cand = kn_printf(a, "%s/.knowable-rules.yaml", dir);
        if (exists(cand, false)) {
            char *path = strcmp(shown, ".") == 0 ? kn_strdup(a, ".knowable-rules.yaml")
                                                 : kn_printf(a, "%s/.knowable-rules.yaml", shown);
            char *tidy = kn_path_tidy(a, path);
            const char *r1 = kn_path_real(a, tidy), *r2 = kn_path_real(a, cand);
            bool same = r1 && r2 && strcmp(r1, r2) == 0;
            return same ? tidy : path;
        }
        if (kn_path_is_project(a, dir) || !root_real || strcmp(dir, root_real) == 0) {
            return NULL;
        }
        slash = strrchr(dir, '/');
        if (!slash || !*dir) {
            return NULL;
        }
        *slash = '\0';
        shown = strcmp(shown, ".") == 0 ? ".." : kn_printf(a, "%s/..", shown);
    }
    return NULL;
}

void kn_rulebook_apply(const kn_rulebook *rb, kn_sink *sink)
{
    kn_sink_begin_unit(sink, rb->severity);
}
