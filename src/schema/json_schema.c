/* json_schema.c - `knowable json-schema`: prints a JSON Schema (draft-07)
 * of the schema file format, generated from the shape tables of shape.c
 * that the loader checks documents against, so that YAML-aware editors
 * complete keys and flag mistakes while people type, and the two can never
 * disagree.  The root describes a schema file (NAME.knowable.yaml);
 * definitions/included_file describes a shared register pulled in with
 * `include`.
 *
 * What a JSON Schema can say and the loader also checks: keys, required
 * keys, value kinds, enum words, the version, ISO 8601 durations and
 * calendar dates.  What it cannot: names that refer to nothing, a lag
 * whose MIN exceeds its MAX, durations too large to hold, duplicate keys
 * (a YAML reader keeps one of them before a JSON Schema sees the data). */
#include <string.h>

#include <knowable/knowable.h>

#include "../util/text.h"
#include "shape.h"

/* ISO 8601 durations as kn_duration_parse reads them: components in the
 * order Y M W D T H M S, upper-case designators, an optional '-', a
 * fraction (decimal point or comma) only on the last component, at least
 * one component, and at least one after 'T'. */
static const char duration_pattern[] =
    "^(?=[^.,]*(?:[.,][0-9]+[YMWDHS])?$)(?!-?P$)(?!.*T$)-?P"
    "(?:[0-9]+(?:[.,][0-9]+)?Y)?(?:[0-9]+(?:[.,][0-9]+)?M)?(?:[0-9]+(?:[.,][0-9]+)?W)?"
    "(?:[0-9]+(?:[.,][0-9]+)?D)?"
    "(?:T(?:[0-9]+(?:[.,][0-9]+)?H)?(?:[0-9]+(?:[.,][0-9]+)?M)?(?:[0-9]+(?:[.,][0-9]+)?S)?)?$";

/* A calendar date YYYY-MM-DD with the days of each month and leap years of
 * the Gregorian calendar, as the loader's date check. */
static const char date_pattern[] =
    "^(?:[0-9]{4}-(?:(?:0[13578]|1[02])-(?:0[1-9]|[12][0-9]|3[01])|(?:0[469]|11)-(?:0[1-9]|[12][0-9]|30)"
    "|02-(?:0[1-9]|1[0-9]|2[0-8]))"
    "|(?:[0-9]{2}(?:0[48]|[2468][048]|[13579][26])|(?:[02468][048]|[13579][26])00)-02-29)$";

/* A small pretty-printing writer: two-space indentation, one member per
 * line, commas placed by the writer. */
#define MAX_NEST 32
typedef struct jw {
    FILE *f;
    int depth;
    bool first[MAX_NEST];
} jw;

static void newline(jw *w)
{
    fprintf(w->f, "%s\n%*s", w->first[w->depth] ? "" : ",", 2 * w->depth, "");
    w->first[w->depth] = false;
}

static void key(jw *w, const char *k)
{
    newline(w);
    kn_fput_json_str(w->f, k);
    fputs(": ", w->f);
}

/* Opens an object or array as member k, or as an array element (k NULL). */
static void open_(jw *w, const char *k, char c)
{
    if (k) {
        key(w, k);
    } else if (w->depth > 0) {
        newline(w);
    }
    fputc(c, w->f);
    w->depth++;
    w->first[w->depth] = true;
}

static void obj(jw *w, const char *k)
{
    open_(w, k, '{');
}

static void arr(jw *w, const char *k)
{
    open_(w, k, '[');
}

static void close_(jw *w, char c)
{
    bool empty = w->first[w->depth];
    w->depth--;
    if (!empty) {
        fprintf(w->f, "\n%*s", 2 * w->depth, "");
    }
    fputc(c, w->f);
}

static void str(jw *w, const char *k, const char *v)
{
    key(w, k);
    kn_fput_json_str(w->f, v);
}

static void raw(jw *w, const char *k, const char *v)
{
    key(w, k);
    fputs(v, w->f);
}

static void str_elem(jw *w, const char *v)
{
    newline(w);
    kn_fput_json_str(w->f, v);
}

/* {"$ref": "#/definitions/def"} as member k or as an element (k NULL). */
static void ref(jw *w, const char *k, const char *def)
{
    obj(w, k);
    key(w, "$ref");
    fputs("\"#/definitions/", w->f);
    kn_fput_json(w->f, def, strlen(def));
    fputc('"', w->f);
    close_(w, '}');
}

/* Definition names: the shape's "what" with spaces as underscores. */
static const char *def_name(const kn_shape *s, char *buf, size_t n)
{
    snprintf(buf, n, "%s", s->what);
    for (char *p = buf; *p; p++) {
        if (*p == ' ') {
            *p = '_';
        }
    }
    return buf;
}

/* The definition a kind of value refers to, or NULL when it is written
 * in place. */
static const char *kind_def(const kn_key_spec *k, char *buf, size_t n)
{
    switch (k->kind) {
    case KN_V_STRING:
    case KN_V_PATTERN:
        return "scalar";
    case KN_V_NAME:
        return "name";
    case KN_V_NAMES:
    case KN_V_PATHS:
        return "names";
    case KN_V_NAME_OR_NAMES:
        return "name_or_names";
    case KN_V_DURATION:
        return "duration";
    case KN_V_LAG:
        return "lag";
    case KN_V_DATE:
        return "date";
    case KN_V_RELATION:
        return "relation";
    case KN_V_MAP:
        return def_name(k->sub, buf, n);
    case KN_V_INT:
    case KN_V_VERSION:
    case KN_V_BOOL:
    case KN_V_ENUM:
    case KN_V_LIST_OF_MAP:
    case KN_V_NAMED_MAPS:
    case KN_V_NAME_OR_MAP:
        break;
    }
    return NULL;
}

/* The schema of one key's value, as member k->name.  A description beside
 * a reference goes through allOf, since draft-07 ignores the siblings of
 * "$ref". */
static void value_schema(jw *w, const kn_key_spec *k)
{
    char buf[64];
    obj(w, k->name);
    if (k->doc && *k->doc) {
        str(w, "description", k->doc);
    }
    const char *def = kind_def(k, buf, sizeof buf);
    if (def) {
        arr(w, "allOf");
        ref(w, NULL, def);
        close_(w, ']');
    }
    switch (k->kind) {
    case KN_V_INT:
        raw(w, "type", "\"integer\"");
        break;
    case KN_V_VERSION:
        raw(w, "const", "1");
        break;
    case KN_V_BOOL:
        raw(w, "type", "\"boolean\"");
        break;
    case KN_V_ENUM:
        raw(w, "type", "\"string\"");
        arr(w, "enum");
        for (size_t i = 0; k->values[i]; i++) {
            str_elem(w, k->values[i]);
        }
        close_(w, ']');
        break;
    case KN_V_LIST_OF_MAP:
        raw(w, "type", "\"array\"");
        ref(w, "items", def_name(k->sub, buf, sizeof buf));
        break;
    case KN_V_NAME_OR_MAP:
        arr(w, "anyOf");
        ref(w, NULL, "name");
        ref(w, NULL, def_name(k->sub, buf, sizeof buf));
        close_(w, ']');
        break;
    case KN_V_NAMED_MAPS:
        raw(w, "type", "\"object\"");
        ref(w, "propertyNames", "name_key");
        if (k->nullable) {
            obj(w, "additionalProperties");
            arr(w, "anyOf");
            ref(w, NULL, def_name(k->sub, buf, sizeof buf));
            obj(w, NULL);
            raw(w, "type", "\"null\"");
            close_(w, '}');
            close_(w, ']');
            close_(w, '}');
        } else {
            ref(w, "additionalProperties", def_name(k->sub, buf, sizeof buf));
        }
        break;
    default:
        break;
    }
    close_(w, '}');
}

/* The members of an object schema for shape s: its keys, x_ keys free,
 * no others, the required ones (and "required unless" as anyOf). */
static void shape_members(jw *w, const kn_shape *s)
{
    raw(w, "type", "\"object\"");
    obj(w, "properties");
    for (size_t i = 0; i < s->n_keys; i++) {
        value_schema(w, &s->keys[i]);
    }
    close_(w, '}');
    obj(w, "patternProperties");
    obj(w, "^x_");
    str(w, "description", "free for your own use; knowable ignores it");
    close_(w, '}');
    close_(w, '}');
    raw(w, "additionalProperties", "false");
    size_t n_required = 0;
    for (size_t i = 0; i < s->n_keys; i++) {
        n_required += s->keys[i].required && !s->keys[i].unless;
    }
    if (n_required) {
        arr(w, "required");
        for (size_t i = 0; i < s->n_keys; i++) {
            if (s->keys[i].required && !s->keys[i].unless) {
                str_elem(w, s->keys[i].name);
            }
        }
        close_(w, ']');
    }
    size_t n_excl = 0;
    for (size_t i = 0; i < kn_n_exclusions; i++) {
        n_excl += kn_exclusions[i].shape == s;
    }
    if (n_excl) {
        obj(w, "not");
        arr(w, "anyOf");
        for (size_t i = 0; i < kn_n_exclusions; i++) {
            if (kn_exclusions[i].shape != s) {
                continue;
            }
            obj(w, NULL);
            arr(w, "required");
            str_elem(w, kn_exclusions[i].key);
            str_elem(w, kn_exclusions[i].other);
            close_(w, ']');
            close_(w, '}');
        }
        close_(w, ']');
        close_(w, '}');
    }
        bool any_unless = false;
    for (size_t i = 0; i < s->n_keys; i++) {
        any_unless |= s->keys[i].required && s->keys[i].unless;
    }
    if (!any_unless) {
        return;
    }
    arr(w, "allOf");
    for (size_t i = 0; i < s->n_keys; i++) {
        if (!(s->keys[i].required && s->keys[i].unless)) {
            continue;
        }
        obj(w, NULL);
        arr(w, "anyOf");
        obj(w, NULL);
        arr(w, "required");
        str_elem(w, s->keys[i].name);
        close_(w, ']');
        close_(w, '}');
        obj(w, NULL);
        arr(w, "required");
        str_elem(w, s->keys[i].unless);
        close_(w, ']');
        close_(w, '}');
        close_(w, ']');
        close_(w, '}');
    }
    close_(w, ']');
}

/* Every shape reachable from s, each once, in the order first met. */
static void collect(const kn_shape *s, const kn_shape **seen, size_t *n, size_t cap)
{
    for (size_t i = 0; i < *n; i++) {
        if (seen[i] == s) {
            return;
        }
    }
    if (*n == cap) {
        return;
    }
    seen[(*n)++] = s;
    for (size_t i = 0; i < s->n_keys; i++) {
        if (s->keys[i].sub) {
            collect(s->keys[i].sub, seen, n, cap);
        }
    }
}

static void simple_definitions(jw *w)
{
    obj(w, "scalar");
    str(w, "description", "a value that is not null, a list or a mapping");
    raw(w, "type", "[\"string\", \"number\", \"boolean\"]");
    close_(w, '}');

    obj(w, "name");
    str(w, "description", "the name of an event, column or source");
    raw(w, "type", "[\"string\", \"number\", \"boolean\"]");
    raw(w, "minLength", "1");
    close_(w, '}');

    obj(w, "name_key");
    str(w, "description", "a name defined by this mapping");
    raw(w, "minLength", "1");
    close_(w, '}');

    obj(w, "names");
    raw(w, "type", "\"array\"");
    ref(w, "items", "name");
    close_(w, '}');

    obj(w, "name_or_names");
    arr(w, "anyOf");
    ref(w, NULL, "name");
    ref(w, NULL, "names");
    close_(w, ']');
    close_(w, '}');

    obj(w, "duration");
    str(w, "description", "an ISO 8601 duration PnYnMnWnDTnHnMnS, e.g. PT30M, P3D, -PT1H; P1M counts as 28 to 31 days");
    raw(w, "type", "\"string\"");
    str(w, "pattern", duration_pattern);
    close_(w, '}');

    obj(w, "lag");
    str(w, "description", "a DURATION, or [MIN, MAX] with MAX null for unbounded");
    arr(w, "anyOf");
    ref(w, NULL, "duration");
    obj(w, NULL);
    raw(w, "type", "\"array\"");
    raw(w, "minItems", "2");
    raw(w, "maxItems", "2");
    arr(w, "items");
    ref(w, NULL, "duration");
    obj(w, NULL);
    arr(w, "anyOf");
    ref(w, NULL, "duration");
    obj(w, NULL);
    raw(w, "type", "\"null\"");
    close_(w, '}');
    close_(w, ']');
    close_(w, '}');
    close_(w, ']');
    close_(w, '}');
    close_(w, ']');
    close_(w, '}');

    obj(w, "relation");
    str(w, "description", "an event name, or a mapping of event names to LAGs");
    arr(w, "anyOf");
    ref(w, NULL, "name");
    obj(w, NULL);
    raw(w, "type", "\"object\"");
    ref(w, "propertyNames", "name_key");
    ref(w, "additionalProperties", "lag");
    close_(w, '}');
    close_(w, ']');
    close_(w, '}');

    obj(w, "date");
    str(w, "description", "a calendar date YYYY-MM-DD");
    raw(w, "type", "\"string\"");
    str(w, "pattern", date_pattern);
    close_(w, '}');
}

void kn_json_schema_write(FILE *out)
{
    jw w = {out, 0, {true}};
    const kn_shape *shapes[32];
    size_t n = 0;
    collect(&kn_shape_top, shapes, &n, sizeof shapes / sizeof *shapes);
    collect(&kn_shape_included, shapes, &n, sizeof shapes / sizeof *shapes);

    obj(&w, NULL);
    str(&w, "$schema", "http://json-schema.org/draft-07/schema#");
    str(&w, "title", "knowable schema file, format version 1");
    str(&w, "description",
        "Declares, for every column of a training table, when its value becomes known, where it comes from "
        "and how it was joined.  Generated by `knowable json-schema " KN_VERSION_STRING "` from the tables "
        "the loader checks files against; `knowable check` also resolves names and proves availability.");
    shape_members(&w, &kn_shape_top);
    obj(&w, "definitions");
    simple_definitions(&w);
    char buf[64];
    /* The root is the schema file itself; every other shape is a
     * definition (included_file for registers). */
    for (size_t i = 1; i < n; i++) {
        const char *name = shapes[i] == &kn_shape_included ? "included_file" : def_name(shapes[i], buf, sizeof buf);
        obj(&w, name);
        str(&w, "title", shapes[i]->what);
        shape_members(&w, shapes[i]);
        close_(&w, '}');
    }
    close_(&w, '}');
    close_(&w, '}');
    fputc('\n', out);
}
