/* shape.c - the tables of the schema format, version 1 (SPEC §3).  The
 * order of keys in each table is the order of the fields the loader fills;
 * the enum value lists follow the enums of schema.h. */
#include "shape.h"

#include <string.h>

#define N(a) (sizeof(a) / sizeof((a)[0]))

static const kn_shape waiver_shape;
#define WAIVE(what) {"waive", KN_V_LIST_OF_MAP, false, NULL, &waiver_shape, KN_REF_NONE, false, "accepted findings on this " what, NULL}

const char *const kn_roles[] = {"feature", "target", "identifier", "timestamp", "split", "weight", "excluded", NULL};
const char *const kn_types[] = {"number", "category", "boolean", "text", "timestamp", "date", NULL};
const char *const kn_kinds[] = {"internal", "external", NULL};
const char *const kn_histories[] = {"append", "versioned", "overwritten", NULL};
const char *const kn_anon_methods[] = {"hash", "token", "generalized", "masked", NULL};
const char *const kn_steps[] = {"scale", "impute", "encode", "target_encode", "select", "reduce",
                                "resample", "discretize", "clip", "custom", NULL};
const char *const kn_fits[] = {"training", "fold", "all_rows", "none", NULL};
const char *const kn_split_methods[] = {"random", "time", "group", "group_time", "predefined", NULL};

static const kn_key_spec prediction_keys[] = {
    {"moment", KN_V_NAME, true, NULL, NULL, KN_REF_EVENT_K, false, "the event at which the deployed model is asked for a prediction", NULL},
    {"target", KN_V_NAME, true, NULL, NULL, KN_REF_COLUMN_K, false, "the column the model predicts", NULL},
    {"entity", KN_V_NAME, false, NULL, NULL, KN_REF_COLUMN_K, false, "the unit that may have several rows (a customer, a vehicle)", NULL},
    {"moment_column", KN_V_NAME, false, NULL, NULL, KN_REF_COLUMN_K, false, "the column holding, per row, the timestamp of the moment", NULL},
    {"label_known", KN_V_NAME, false, NULL, NULL, KN_REF_EVENT_K, false, "when the target's value is settled (default: the target's known)", NULL},
    WAIVE("block"),
};
static const kn_shape prediction_shape = {"prediction", prediction_keys, N(prediction_keys)};

static const kn_key_spec event_keys[] = {
    {"after", KN_V_RELATION, false, NULL, NULL, KN_REF_EVENT_K, false, "t(this) - t(E) lies in LAG; a bare name means at or after E", NULL},
    {"before", KN_V_RELATION, false, NULL, NULL, KN_REF_EVENT_K, false, "t(E) - t(this) lies in LAG", NULL},
    {"description", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "", NULL},
    {"first_of", KN_V_NAMES, false, NULL, NULL, KN_REF_EVENT_K, false, "the earliest of these events (alternative routes); takes no after or before", NULL},
    WAIVE("event"),
};
static const kn_shape event_shape = {"event", event_keys, N(event_keys)};

/* Keys that exclude each other in one mapping (the loader reports the
 * second; the JSON Schema says "not both"). */
const kn_exclusion kn_exclusions[] = {
    {&event_shape, "first_of", "after"},
    {&event_shape, "first_of", "before"},
};
const size_t kn_n_exclusions = N(kn_exclusions);

static const kn_key_spec source_keys[] = {
    {"kind", KN_V_ENUM, true, kn_kinds, NULL, KN_REF_NONE, false, "internal, or external (bought, downloaded or otherwise third-party)", NULL},
    {"description", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "", NULL},
    {"owner", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "who owns the source in the organisation", NULL},
    {"contact", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "whom to ask", NULL},
    {"latency", KN_V_LAG, false, NULL, NULL, KN_REF_NONE, false, "from an event to its record being queryable", NULL},
    {"refresh", KN_V_DURATION, false, NULL, NULL, KN_REF_NONE, false, "batch period; adds up to one period of waiting", NULL},
    {"history", KN_V_ENUM, false, kn_histories, NULL, KN_REF_NONE, false, "how old values are kept; overwritten = updated in place", NULL},
    {"provider", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "who supplies the data", NULL},
    {"license", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "SPDX identifier or free text", NULL},
    {"retrieved", KN_V_DATE, false, NULL, NULL, KN_REF_NONE, false, "when the copy in use was taken (YYYY-MM-DD)", NULL},
    {"version", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "provider's release or snapshot id", NULL},
    {"point_in_time", KN_V_BOOL, false, NULL, NULL, KN_REF_NONE, false, "the provider can serve values as they stood at a past date", NULL},
    {"documentation", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "URL or path of the provider's documentation", NULL},
    {"matures", KN_V_LAG, false, NULL, NULL, KN_REF_NONE, false, "how long after its event a record's values may still change", NULL},
    WAIVE("source"),
};
const kn_shape kn_shape_source = {"source", source_keys, N(source_keys)};

static const kn_key_spec as_of_keys[] = {
    {"event", KN_V_NAME, true, NULL, NULL, KN_REF_EVENT_K, false, "the event as of which the joined value is taken", NULL},
    {"offset", KN_V_DURATION, false, NULL, NULL, KN_REF_NONE, false, "added to the event: -P1D = as it stood a day before", NULL},
};
static const kn_shape as_of_shape = {"as_of", as_of_keys, N(as_of_keys)};

static const kn_key_spec known_keys[] = {
    {"one_of", KN_V_NAMES, true, NULL, NULL, KN_REF_EVENT_K, false, "the value exists from one of these events, varying per row", NULL},
};
static const kn_shape known_shape = {"known", known_keys, N(known_keys)};

static const kn_key_spec join_keys[] = {
    {"key", KN_V_NAME_OR_NAMES, false, NULL, NULL, KN_REF_COLUMN_K, false, "the join key column(s)", NULL},
    {"as_of", KN_V_NAME_OR_MAP, false, NULL, &as_of_shape, KN_REF_EVENT_K, false, "the event as of which the joined value is taken, or {event, offset}; absent: today's value", NULL},
    {"source", KN_V_NAME, false, NULL, NULL, KN_REF_SOURCE_K, false, "default: the column's source", NULL},
};
static const kn_shape join_shape = {"join", join_keys, N(join_keys)};

static const kn_key_spec window_keys[] = {
    {"anchor", KN_V_NAME, true, NULL, NULL, KN_REF_EVENT_K, false, "the event the window is placed against", NULL},
    {"from", KN_V_DURATION, true, NULL, NULL, KN_REF_NONE, false, "start of the window relative to the anchor", NULL},
    {"to", KN_V_DURATION, true, NULL, NULL, KN_REF_NONE, false, "end of the window relative to the anchor", NULL},
};
static const kn_shape window_shape = {"window", window_keys, N(window_keys)};

static const kn_key_spec anonymized_keys[] = {
    {"method", KN_V_ENUM, true, kn_anon_methods, NULL, KN_REF_NONE, false, "", NULL},
    {"salted", KN_V_BOOL, false, NULL, NULL, KN_REF_NONE, false, "", NULL},
};
static const kn_shape anonymized_shape = {"anonymized", anonymized_keys, N(anonymized_keys)};

static const kn_key_spec waiver_keys[] = {
    {"rule", KN_V_NAME, true, NULL, NULL, KN_REF_RULE_K, false, "the rule id waived", NULL},
    {"reason", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "why the finding is accepted", NULL},
    {"expires", KN_V_DATE, false, NULL, NULL, KN_REF_NONE, false, "YYYY-MM-DD after which the waiver no longer holds", NULL},
};
static const kn_shape waiver_shape = {"waiver", waiver_keys, N(waiver_keys)};

static const kn_key_spec column_keys[] = {
    {"role", KN_V_ENUM, false, kn_roles, NULL, KN_REF_NONE, false, "default feature; excluded: kept in the table, never given to the model", NULL},
    {"type", KN_V_ENUM, false, kn_types, NULL, KN_REF_NONE, false, "used by data checks", NULL},
    {"known", KN_V_NAME_OR_MAP, false, NULL, &known_shape, KN_REF_EVENT_K, false, "the event from which the value exists, or {one_of: [...]}", NULL},
    {"delay", KN_V_LAG, false, NULL, NULL, KN_REF_NONE, false, "extra delay after known before the value is recorded", NULL},
    {"source", KN_V_NAME, false, NULL, NULL, KN_REF_SOURCE_K, false, "where the value comes from", NULL},
    {"join", KN_V_MAP, false, NULL, &join_shape, KN_REF_NONE, false, "how it was joined in", NULL},
    {"derived_from", KN_V_NAMES, false, NULL, NULL, KN_REF_COLUMN_K, false, "computed from these columns", NULL},
    {"window", KN_V_MAP, false, NULL, &window_shape, KN_REF_NONE, false, "an aggregate over the records timed in [anchor+from, anchor+to]", NULL},
    {"proxy_of", KN_V_NAME, false, NULL, NULL, KN_REF_COLUMN_K, false, "carries (nearly) the same information as that column", NULL},
    {"format", KN_V_PATTERN, false, NULL, NULL, KN_REF_NONE, false, "PCRE2 pattern of the values", NULL},
    {"anonymized", KN_V_MAP, false, NULL, &anonymized_shape, KN_REF_NONE, false, "", NULL},
    {"quasi_identifier", KN_V_BOOL, false, NULL, NULL, KN_REF_NONE, false, "could single out a person in combination with others", NULL},
    {"description", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "", NULL},
    {"waive", KN_V_LIST_OF_MAP, false, NULL, &waiver_shape, KN_REF_NONE, false, "accepted findings on this column", NULL},
};
static const kn_shape column_shape = {"column", column_keys, N(column_keys)};

static const kn_key_spec step_keys[] = {
    {"step", KN_V_ENUM, true, kn_steps, NULL, KN_REF_NONE, false, "what the step does", NULL},
    {"fit", KN_V_ENUM, false, kn_fits, NULL, KN_REF_NONE, false, "which rows its parameters are estimated from", NULL},
    {"columns", KN_V_NAMES, false, NULL, NULL, KN_REF_COLUMN_K, false, "default: all features", NULL},
    {"description", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "", NULL},
    WAIVE("pipeline step"),
};
static const kn_shape step_shape = {"pipeline step", step_keys, N(step_keys)};

static const kn_key_spec split_keys[] = {
    {"method", KN_V_ENUM, false, kn_split_methods, NULL, KN_REF_NONE, false, "how rows are assigned to training and test", NULL},
    {"column", KN_V_NAME, false, NULL, NULL, KN_REF_COLUMN_K, false, "holds the assignment (train/test or fold numbers)", NULL},
    {"time_column", KN_V_NAME, false, NULL, NULL, KN_REF_COLUMN_K, false, "for time and group_time", NULL},
    {"group_column", KN_V_NAME, false, NULL, NULL, KN_REF_COLUMN_K, false, "for group and group_time; default prediction.entity", NULL},
    {"gap", KN_V_DURATION, false, NULL, NULL, KN_REF_NONE, false, "time between the end of training and the start of test", NULL},
    {"folds", KN_V_INT, false, NULL, NULL, KN_REF_NONE, false, "", NULL},
    {"purge", KN_V_BOOL, false, NULL, NULL, KN_REF_NONE, false, "training rows whose label horizon overlaps the test period are dropped", NULL},
    {"embargo", KN_V_DURATION, false, NULL, NULL, KN_REF_NONE, false, "rows just after each test period are kept out of training", NULL},
    WAIVE("split"),
};
static const kn_shape split_shape = {"split", split_keys, N(split_keys)};

static const kn_key_spec top_keys[] = {
    {"knowable", KN_V_VERSION, true, NULL, NULL, KN_REF_NONE, false, "format version, 1", NULL},
    {"dataset", KN_V_STRING, true, NULL, NULL, KN_REF_NONE, false, "name of the training table", NULL},
    {"description", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "", NULL},
    {"include", KN_V_PATHS, false, NULL, NULL, KN_REF_NONE, false, "files whose events and sources are merged in", NULL},
    {"prediction", KN_V_MAP, true, NULL, &prediction_shape, KN_REF_NONE, false, "", NULL},
    {"events", KN_V_NAMED_MAPS, true, NULL, &event_shape, KN_REF_NONE, true, "named points of the business process", "include"},
    {"sources", KN_V_NAMED_MAPS, false, NULL, &kn_shape_source, KN_REF_NONE, false, "where values come from", NULL},
    {"columns", KN_V_NAMED_MAPS, true, NULL, &column_shape, KN_REF_NONE, true, "the columns of the table, by name", NULL},
    {"pipeline", KN_V_LIST_OF_MAP, false, NULL, &step_shape, KN_REF_NONE, false, "preparation steps", NULL},
    {"split", KN_V_MAP, false, NULL, &split_shape, KN_REF_NONE, false, "how rows are assigned to training and test", NULL},
};
const kn_shape kn_shape_top = {"schema", top_keys, N(top_keys)};
#undef WAIVE

static const kn_key_spec included_keys[] = {
    {"knowable", KN_V_VERSION, true, NULL, NULL, KN_REF_NONE, false, "format version, 1", NULL},
    {"description", KN_V_STRING, false, NULL, NULL, KN_REF_NONE, false, "", NULL},
    {"include", KN_V_PATHS, false, NULL, NULL, KN_REF_NONE, false, "further files to merge in", NULL},
    {"events", KN_V_NAMED_MAPS, false, NULL, &event_shape, KN_REF_NONE, true, "", NULL},
    {"sources", KN_V_NAMED_MAPS, false, NULL, &kn_shape_source, KN_REF_NONE, false, "", NULL},
};
const kn_shape kn_shape_included = {"included file", included_keys, N(included_keys)};

int kn_shape_find(const kn_shape *s, const char *key)
{
    for (size_t i = 0; i < s->n_keys; i++) {
        if (s->keys[i].name[0] == key[0] && strcmp(s->keys[i].name, key) == 0) {
            return (int)i;
        }
    }
    return -1;
}
