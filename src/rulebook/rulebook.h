/* rulebook.h - the house rulebook (SPEC §6): severities, required fields,
 * suspicious-name patterns, the identifier pattern, thresholds and
 * strict_moment.  Loaded from rules/default.yaml (compiled into the binary)
 * and then from each --rulebook file or the discovered .knowable-rules.yaml,
 * later ones overriding earlier ones. */
#ifndef KN_RULEBOOK_RULEBOOK_H
#define KN_RULEBOOK_RULEBOOK_H

#include <stdbool.h>
#include <stddef.h>

#include "../report/diag.h"
#include "../schema/schema.h"
#include "../util/arena.h"

typedef enum kn_applies { KN_APPLIES_NAME, KN_APPLIES_DESCRIPTION, KN_APPLIES_BOTH } kn_applies;

typedef struct kn_name_rule {
    const char *pattern;
    void *code; /* kn_regex * (src/util/regex.h), compiled once */
    kn_applies applies_to;
    const char *why;
    kn_pos pos; /* of the pattern in its rulebook file */
} kn_name_rule;

typedef struct kn_thresholds {
    double separation_auc;      /* default 0.95 */
    double uncertainty;         /* default 0.8 */
    double missingness_auc;     /* default 0.9 */
    double segment_uncertainty; /* default 0.5 */
    long long min_group_size;   /* default 5 */
} kn_thresholds;

typedef struct kn_rulebook {
    kn_severity severity[KN_RULE_COUNT];
    const char *severity_from[KN_RULE_COUNT]; /* the rulebook file that set it
                                                 (NULL: the built-in default) */
    bool strict_moment;
    bool require_external[KN_SF_COUNT]; /* require.external_source */
    bool require_feature_known;         /* require.feature contains known */
    bool require_feature_source;        /* require.feature contains source */
    kn_name_rule *names;
    size_t n_names;
    const char *identifier_names;
    void *identifier_code; /* kn_regex *, or NULL when identifier_names is unset */
    kn_thresholds thresholds;
    const char *const *missing_values; /* data cells counted as missing (SPEC §6) */
    size_t n_missing_values;
    const char *origin; /* display path of the last file read, or "(built-in)" */
    const char *const *files; /* every rulebook file read into it, extends
                                 included (real paths), for a caller that
                                 keeps it while the files may change */
    size_t n_files;
} kn_rulebook;

/* A rulebook with the rule table's default severities and nothing else;
 * then kn_rulebook_load_default reads the built-in rules/default.yaml. */
kn_rulebook *kn_rulebook_new(kn_arena *a);
bool kn_rulebook_load_default(kn_rulebook *rb, kn_arena *a, kn_sink *sink);

/* Reads a rulebook file over rb (following extends).  Errors are pushed
 * into the sink pointing into the rulebook file and the sink is marked
 * fatal; returns false then. */
bool kn_rulebook_load(kn_rulebook *rb, kn_arena *a, kn_sink *sink, const char *path);

/* Finds .knowable-rules.yaml in the schema's folder or a parent, stopping
 * at a folder that holds .git and at root (--root, or NULL: the
 * repository the schema lies in, else its own folder; a root the schema
 * does not lie in stops the search at the schema's own folder).  Returns
 * an arena path or NULL. */
char *kn_rulebook_discover(kn_arena *a, const char *schema_path, const char *root);

/* Starts the sink's unit of findings judged under this rulebook. */
void kn_rulebook_apply(const kn_rulebook *rb, kn_sink *sink);

#endif
