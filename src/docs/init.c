/* init.c - `knowable init DATA.csv`: a draft schema for a table that has
 * none yet.  Streams the CSV once (src/data/csv.h), reading at most
 * --max-rows data records (default INIT_ROWS), and infers for every column
 * of the header its type from the values (src/data/values.h), whether it
 * looks like an identifier (nearly unique values in the sample, or a name
 * matching the rulebook's identifier pattern) and whether it holds
 * timestamps.  Hands on YAML text: every name quoted and escaped, every
 * placeholder marked TODO with a comment saying what to fill in, so that
 * `knowable check` on the draft reports only what is left to do (the
 * placeholder event TODO_event, missing-known), never yaml-syntax or
 * schema-shape.
 *
 * Header names the schema cannot hold (empty, repeated, or longer than a
 * YAML scalar may be) are written as comments that say why. */
#include <knowable/knowable.h>

#include <errno.h>
#include <math.h>
#include <setjmp.h>
#include <string.h>

#include "../data/csv.h"
#include "../data/values.h"
#include "../docs/docs.h"
#include "../report/diag.h"
#include "../rulebook/rulebook.h"
#include "../util/arena.h"
#include "../util/names.h"
#include "../util/regex.h"
#include "../util/text.h"

/* Data records read when --max-rows is not given. */
#define INIT_ROWS 10000
/* Values per column whose distinctness is tracked, and the budget of such
 * values over all columns (bounds memory for very wide files). */
#define DISTINCT_SAMPLE 2000
#define DISTINCT_BUDGET 4000000
/* Longest name written as a key; longer ones become comments (the YAML
 * reader caps a scalar at 64 KiB, and libyaml a simple key at 1024 chars). */
#define MAX_NAME_BYTES 4096
#define MAX_CATEGORIES 50

#define PLACEHOLDER_EVENT "TODO_event"
#define MOMENT_EVENT "prediction_moment"
#define LABEL_EVENT "outcome_known"

typedef struct colstat {
    const char *name;
    size_t len;
    size_t index;      /* 0-based position in the header */
    size_t first_same; /* for a repeated name: the first position, else SIZE_MAX */

    uint64_t values;  /* non-missing values seen */
    uint64_t missing;
    uint64_t not_number, not_integer, not_boolean, not_timestamp, not_date;
    bool bool_words;  /* some value was true/false/yes/no, not only 1/0 */
    bool not_split;   /* some value is not a word naming a part of a split */
    size_t max_len;
    uint64_t total_len;

    uint64_t *set;    /* open addressing, 0 = empty slot */
    size_t set_cap, distinct, offered, sample;

    /* Results. */
    kn_value_type type;
    bool identifier, identifier_by_name, timestamp, target, split;
} colstat;

/* Whether s (len bytes) names a part of a train/test split, in any case. */
static bool split_word(const char *s, size_t len)
{
    static const char *const words[] = {"train", "training", "test", "testing", "valid", "validation",
                                        "val", "holdout", "dev"};
    for (size_t i = 0; i < sizeof words / sizeof *words; i++) {
        size_t n = strlen(words[i]);
        if (n == len) {
            size_t k = 0;
            while (k < n && (s[k] | 0x20) == words[i][k]) {
                k++;
            }
            if (k == n) {
                return true;
            }
        }
    }
    return false;
}

/* FNV-1a, 64 bits (Fowler, Noll and Vo); 0 is mapped away from the empty mark. */
static uint64_t hash_bytes(const char *s, size_t len)
{
    uint64_t h = UINT64_C(14695981039346656037);
    for (size_t i = 0; i < len; i++) {
        h ^= (unsigned char)s[i];
        h *= UINT64_C(1099511628211);
    }
    return h ? h : 1;
}

static void offer(kn_arena *a, colstat *c, const char *s, size_t len)
{
    if (c->offered >= c->sample) {
        return;
    }
    if (!c->set) {
        c->set_cap = 16;
        while (c->set_cap < 2 * c->sample) {
            c->set_cap *= 2;
        }
        c->set = kn_alloc_array(a, c->set_cap, sizeof *c->set);
    }
    c->offered++;
    uint64_t h = hash_bytes(s, len);
    size_t i = (size_t)h & (c->set_cap - 1);
    while (c->set[i] && c->set[i] != h) {
        i = (i + 1) & (c->set_cap - 1);
    }
    if (!c->set[i]) {
        c->set[i] = h;
        c->distinct++;
    }
}

static void trim(const char **s, size_t *len)
{
    while (*len && (**s == ' ' || **s == '\t')) {
        (*s)++, (*len)--;
    }
    while (*len && ((*s)[*len - 1] == ' ' || (*s)[*len - 1] == '\t')) {
        (*len)--;
    }
}

static void observe(kn_arena *a, const kn_missing *missing, colstat *c, const char *s, size_t len)
{
    if (kn_missing_test(missing, s, len)) {
        c->missing++;
        return;
    }
    c->values++;
    {
        const char *t = s;
        size_t tl = len;
        trim(&t, &tl);
        c->not_split = c->not_split || !split_word(t, tl);
    }
    double d;
    bool b;
    int64_t us;
    unsigned flags = 0;
    if (kn_value_number(s, len, &d) != KN_VALUE_OK) {
        c->not_number++;
        c->not_integer++;
    } else if (d != floor(d) || memchr(s, '.', len) || memchr(s, 'e', len) || memchr(s, 'E', len)) {
        c->not_integer++;
    }
    if (kn_value_boolean(s, len, &b) != KN_VALUE_OK) {
        c->not_boolean++;
    } else {
        const char *t = s;
        size_t tl = len;
        trim(&t, &tl);
        c->bool_words = c->bool_words || !(tl == 1 && (*t == '0' || *t == '1'));
    }
    if (kn_value_timestamp(s, len, &us, &flags) != KN_VALUE_OK) {
        c->not_timestamp++;
        c->not_date++;
    } else if (!(flags & KN_TS_DATE_ONLY)) {
        c->not_date++;
    }
    if (len > c->max_len) {
        c->max_len = len;
    }
    c->total_len += len;
    offer(a, c, s, len);
}

static void infer(colstat *c, kn_regex *id_names)
{
    if (c->values == 0) {
        c->type = KN_TYPE_UNSET;
    } else if (c->not_boolean == 0 && (c->bool_words || c->distinct <= 2)) {
        c->type = KN_TYPE_BOOLEAN;
    } else if (c->not_number == 0) {
        c->type = KN_TYPE_NUMBER;
    } else if (c->not_date == 0) {
        c->type = KN_TYPE_DATE;
    } else if (c->not_timestamp == 0) {
        c->type = KN_TYPE_TIMESTAMP;
    } else {
        double avg = (double)c->total_len / (double)c->values;
        bool few = c->distinct <= MAX_CATEGORIES && (2 * c->distinct <= c->offered || c->offered < 10);
        c->type = (avg <= 40 && c->max_len <= 200 && few) ? KN_TYPE_CATEGORY : KN_TYPE_TEXT;
    }
    c->timestamp = c->type == KN_TYPE_TIMESTAMP || c->type == KN_TYPE_DATE;

    /* Nearly unique: at least 98% of the sampled values distinct, over a
     * sample large enough to mean something; only for codes and whole
     * numbers (unique measurements and instants are common). */
    bool code_like = c->type == KN_TYPE_TEXT || c->type == KN_TYPE_CATEGORY ||
                     (c->type == KN_TYPE_NUMBER && c->not_integer == 0);
    bool unique = c->offered >= 20 && 100 * c->distinct >= 98 * c->offered;
    if (id_names && c->len && c->type != KN_TYPE_BOOLEAN && !c->timestamp &&
        !(c->type == KN_TYPE_NUMBER && c->not_integer)) {
        c->identifier_by_name = kn_regex_match(id_names, c->name, c->len, NULL) == KN_MATCH_FOUND;
    }
    c->identifier = c->identifier_by_name || (code_like && unique);
    /* Every value a word such as train, test or validation: the split. */
    c->split = c->values > 0 && !c->not_split && !c->identifier && !c->timestamp;
}

/* ---- YAML output ---------------------------------------------------------- */

/* Writes s as a YAML double-quoted scalar.  Every character YAML does not
 * allow raw (C0 and C1 controls, DEL, line and paragraph separators, the
 * byte order mark, U+FFFE, U+FFFF) is escaped; invalid UTF-8 becomes
 * U+FFFD and *changed is set. */
static void put_yaml_str(FILE *f, const char *s, size_t len, bool *changed)
{
    static const char *const c0[32] = {
        "\\0", "\\x01", "\\x02", "\\x03", "\\x04", "\\x05", "\\x06", "\\a",
        "\\b", "\\t", "\\n", "\\v", "\\f", "\\r", "\\x0E", "\\x0F",
        "\\x10", "\\x11", "\\x12", "\\x13", "\\x14", "\\x15", "\\x16", "\\x17",
        "\\x18", "\\x19", "\\x1A", "\\e", "\\x1C", "\\x1D", "\\x1E", "\\x1F",
    };
    const unsigned char *p = (const unsigned char *)s;
    fputc('"', f);
    size_t i = 0;
    while (i < len) {
        unsigned char ch = p[i];
        if (ch < 0x20) {
            fputs(c0[ch], f);
            i++;
        } else if (ch == '"' || ch == '\\') {
            fputc('\\', f);
            fputc(ch, f);
            i++;
        } else if (ch == 0x7f) {
            fputs("\\x7F", f);
            i++;
        } else if (ch < 0x80) {
            fputc(ch, f);
            i++;
        } else {
            size_t n = kn_utf8_valid_seq(p + i, len - i);
            if (!n) {
                fputs("\\uFFFD", f);
                if (changed) {
                    *changed = true;
                }
                i++;
                continue;
            }
            uint32_t cp = n == 2 ? ((p[i] & 0x1fu) << 6) | (p[i + 1] & 0x3fu)
                        : n == 3 ? ((p[i] & 0x0fu) << 12) | ((p[i + 1] & 0x3fu) << 6) | (p[i + 2] & 0x3fu)
                                 : 0x10000;
            if (n == 2 && cp < 0xa0) {
                fprintf(f, "\\x%02X", (unsigned)cp);
            } else if (n == 3 && (cp == 0x2028 || cp == 0x2029 || cp == 0xfeff || cp >= 0xfffe)) {
                fprintf(f, "\\u%04X", (unsigned)cp);
            } else {
                fwrite(p + i, 1, n, f);
            }
            i += n;
        }
    }
    fputc('"', f);
}

static void put_name(FILE *f, const colstat *c, bool *changed)
{
    put_yaml_str(f, c->name, c->len, changed);
}

/* The dataset name: the file's name without folders and extension. */
static void put_dataset(FILE *f, const char *path)
{
    const char *base = strrchr(path, '/');
    base = base ? base + 1 : path;
    size_t len = strlen(base);
    const char *dot = strrchr(base, '.');
    if (dot && dot != base) {
        len = (size_t)(dot - base);
    }
    if (len == 0) {
        base = "dataset", len = 7;
    }
    put_yaml_str(f, base, len, NULL);
}

static const char *type_note(const colstat *c)
{
    switch (c->type) {
    case KN_TYPE_UNSET:
        return "  # TODO: no value in the sample; add type: number, category, boolean, text, timestamp or date";
    case KN_TYPE_TIMESTAMP:
    case KN_TYPE_DATE:
        return "  # timestamps: which event does this record? If it is each row's moment, see prediction.moment_column";
    default:
        return "";
    }
}

static void write_column(FILE *out, const colstat *c, const char *placeholder)
{
    bool changed = false;
    fputs("  ", out);
    if (c->len > 1000) {
        /* libyaml reads at most 1024 characters of a simple key. */
        fputs("? ", out);
        put_name(out, c, &changed);
        fputs("\n  :\n", out);
    } else {
        put_name(out, c, &changed);
        fputs(":\n", out);
    }
    if (changed) {
        fputs("    # the header's name is not valid UTF-8; the bytes that are not were replaced\n"
              "    # by U+FFFD: rename the column in the data, or this entry will not match it\n",
              out);
    }
    if (c->target) {
        fputs("    role: target  # TODO: guessed; the column the model predicts\n", out);
    } else if (c->identifier && c->identifier_by_name && c->distinct <= MAX_CATEGORIES &&
               2 * c->distinct <= c->offered) {
        fprintf(out,
                "    role: identifier  # the name reads as an identifier, but only %zu distinct "
                "values: if it is a feature, remove this line\n",
                c->distinct);
    } else if (c->identifier) {
        fprintf(out, "    role: identifier  # %s\n",
                c->identifier_by_name ? "the name reads as an identifier"
                                      : "nearly every sampled value is different");
    } else if (c->timestamp) {
        fputs("    role: timestamp\n", out);
    } else if (c->split) {
        fputs("    role: split  # its values name the parts of a train/test split\n", out);
    }
    if (c->type != KN_TYPE_UNSET) {
        fprintf(out, "    type: %s%s\n", kn_type_name(c->type), type_note(c));
    } else {
        fprintf(out, "%s\n", type_note(c) + 1);
    }
    if (c->target) {
        fputs("    known: " LABEL_EVENT "\n", out);
    } else if (!c->identifier && !c->split) {
        fprintf(out, "    known: %s\n", placeholder);
    }
}

static void write_skipped(FILE *out, const colstat *c, const colstat *cols)
{
    fprintf(out, "  # column %zu of the header ", c->index + 1);
    if (c->len == 0) {
        fputs("has no name: name it in the data, then declare it here\n", out);
    } else if (c->first_same != SIZE_MAX) {
        fputs("repeats the name ", out);
        put_name(out, c, NULL);
        fprintf(out, " of column %zu; a schema holds one entry per name: rename one in the data\n",
                cols[c->first_same].index + 1);
    } else {
        fprintf(out, "has a name of %zu bytes, longer than a schema may hold: shorten it in the data\n",
                c->len);
    }
}

static bool skipped(const colstat *c)
{
    return c->len == 0 || c->first_same != SIZE_MAX || c->len > MAX_NAME_BYTES;
}

static bool name_says_target(const colstat *c)
{
    static const char *const words[] = {"target", "label", "outcome", "y", "churn", "churned",
                                        "fraud", "is_fraud", "defaulted", "late", "arrived_late"};
    for (size_t i = 0; i < sizeof words / sizeof words[0]; i++) {
        size_t n = strlen(words[i]);
        if (c->len >= n && strncmp(c->name + c->len - n, words[i], n) == 0 &&
            (c->len == n || c->name[c->len - n - 1] == '_')) {
            return true;
        }
    }
    return false;
}

/* The target: a column whose name says so, else the last boolean column,
 * else the last column that is not an identifier, else the first one. */
static colstat *guess_target(colstat *cols, size_t n)
{
    colstat *by_type = NULL, *last = NULL, *first = NULL;
    for (size_t i = 0; i < n; i++) {
        colstat *c = &cols[i];
        if (skipped(c)) {
            continue;
        }
        if (name_says_target(c) && !c->identifier_by_name) {
            return c;
        }
        first = first ? first : c;
        if (c->type == KN_TYPE_BOOLEAN) {
            by_type = c;
        }
        if (!c->identifier && !c->timestamp) {
            last = c;
        }
    }
    return by_type ? by_type : last ? last : first;
}

static void write_draft(FILE *out, const char *path, colstat *cols, size_t n, uint64_t rows,
                        uint64_t bad_rows, const char *bad_first, bool capped)
{
    colstat *target = guess_target(cols, n);
    if (target) {
        target->target = true;
    }
    fputs("# A draft schema written by `knowable init` from the header of ", out);
    put_yaml_str(out, path, strlen(path), NULL);
    fprintf(out, "\n# and the values of its first %llu data record%s%s.\n", (unsigned long long)rows,
            rows == 1 ? "" : "s", capped ? " (--max-rows)" : "");
    if (bad_rows) {
        fprintf(out, "# %llu record%s could not be read and %s left out (first: %s).\n",
                (unsigned long long)bad_rows, bad_rows == 1 ? "" : "s", bad_rows == 1 ? "was" : "were",
                bad_first);
    }
    fputs("#\n"
          "# What is left to do is marked TODO.  `knowable check` on this file lists it:\n"
          "#   - every `known: " PLACEHOLDER_EVENT "` is an unknown event: write instead the event from\n"
          "#     which the column's value exists, and define that event under `events:`;\n"
          "#   - the prediction moment and the target are guesses to confirm.\n"
          "# Then add, where they apply: `source:` (and a `sources:` block saying where\n"
          "# each value comes from), `join: {key: ..., as_of: ...}` for joined values,\n"
          "# `delay:`, `window:` for aggregates, `derived_from:` for computed columns.\n"
          "knowable: 1\n"
          "dataset: ",
          out);
    put_dataset(out, path);
    fputs("\ndescription: \"TODO: what one row of the table stands for, and which rows it holds\"\n\n"
          "prediction:\n"
          "  # TODO: the event at which the deployed model is asked (defined under events:).\n"
          "  moment: " MOMENT_EVENT "\n",
          out);
    if (target) {
        fputs("  # TODO: guessed from the columns: the column the model predicts.\n  target: ", out);
        put_name(out, target, NULL);
        fputc('\n', out);
    }
    const colstat *entity = NULL, *stamp = NULL;
    for (size_t i = 0; i < n; i++) {
        if (skipped(&cols[i]) || cols[i].target) {
            continue;
        }
        if (!entity && cols[i].identifier) {
            entity = &cols[i];
        }
        if (!stamp && cols[i].timestamp) {
            stamp = &cols[i];
        }
    }
    if (entity) {
        fputs("  # entity: ", out);
        put_name(out, entity, NULL);
        fputs("  # TODO: the unit that may have several rows, if there is one\n", out);
    }
    if (stamp) {
        fputs("  # moment_column: ", out);
        put_name(out, stamp, NULL);
        fputs("  # TODO: if this column holds each row's moment\n", out);
    }
    fputs("\n"
          "events:\n"
          "  # The events of the business process, each placed after (or before) another\n"
          "  # with a lag [MIN, MAX] of ISO 8601 durations (null: no upper bound), e.g.\n"
          "  #   dispatch:\n"
          "  #     after: {order_placed: [PT30M, P3D]}\n"
          "  # The two below are placeholders: rename them and add the others.\n"
          "  " MOMENT_EVENT ":\n"
          "    description: \"TODO: the moment the model is asked for a prediction\"\n"
          "  " LABEL_EVENT ":\n"
          "    description: \"TODO: the event at which the target's value is settled\"\n"
          "    after: {" MOMENT_EVENT ": [PT0S, null]}\n"
          "\n"
          "columns:\n"
          "  # Every column of the header, in order, with the type read from its values.\n",
          out);
    for (size_t i = 0; i < n; i++) {
        if (skipped(&cols[i])) {
            write_skipped(out, &cols[i], cols);
        } else {
            write_column(out, &cols[i], PLACEHOLDER_EVENT);
        }
    }
}

/* ---- the command ---------------------------------------------------------- */

static void close_file(void *p)
{
    if (p) {
        fclose(p);
    }
}

bool kn_init_write(FILE *out, kn_sink *sink, kn_arena *a, const char *csv, long long max_rows,
                   const kn_rulebook *rb)
{
    void *id_names = rb->identifier_code;
    /* Missing cells are what the data checks will call missing: the
     * rulebook's missing_values. */
    kn_missing missing;
    kn_missing_init(&missing, rb->missing_values, rb->n_missing_values);
    bool ok = false;
    kn_defer *d = kn_arena_defer(a, close_file, NULL);
    FILE *f = fopen(csv, "rb");
    d->ptr = f;
    kn_csv_reader *r = NULL;
    kn_csv_row header, row;
    kn_csv_error e;
    if (!f) {
        kn_pos p = {csv, 0, 0, 0};
        kn_diag_push(sink, KN_R_CSV_MALFORMED, &p, "", "cannot read the data file: %s", strerror(errno));
        kn_sink_mark_fatal(sink);
        goto done;
    }
    r = kn_csv_open_file(a, f, NULL);
    if (kn_csv_read_header(r, &header, &e) != KN_CSV_ROW) {
        goto bad_csv;
    }

    size_t n = header.n_fields;
    colstat *cols = kn_alloc_array(a, n ? n : 1, sizeof *cols);
    kn_name_map *seen = kn_names_new(a);
    size_t sample = DISTINCT_SAMPLE;
    if (n && DISTINCT_BUDGET / n < sample) {
        sample = DISTINCT_BUDGET / n < 20 ? 20 : DISTINCT_BUDGET / n;
    }
    for (size_t i = 0; i < n; i++) {
        colstat *c = &cols[i];
        c->name = header.fields[i].ptr;
        c->len = header.fields[i].len;
        c->index = i;
        c->first_same = SIZE_MAX;
        c->sample = sample;
        colstat *prev = c->len ? kn_names_get(seen, c->name) : NULL;
        if (prev) {
            c->first_same = (size_t)(prev - cols);
        } else if (c->len) {
            kn_names_put(seen, c->name, c);
        }
    }

    uint64_t limit = max_rows > 0 ? (uint64_t)max_rows : INIT_ROWS;
    uint64_t rows = 0, bad_rows = 0;
    const char *bad_first = NULL;
    for (;;) {
        if (rows >= limit) {
            break;
        }
        kn_csv_status st = kn_csv_next_row(r, &row, &e);
        if (st == KN_CSV_END) {
            break;
        }
        if (st == KN_CSV_FAILED) {
            goto bad_csv;
        }
        if (st == KN_CSV_BAD_ROW) {
            if (!bad_rows++) {
                bad_first = kn_printf(a, "line %llu, %s", (unsigned long long)e.line,
                                      kn_csv_error_message(a, &e));
            }
            continue;
        }
        rows++;
        for (size_t i = 0; i < n && i < row.n_fields; i++) {
            observe(a, &missing, &cols[i], row.fields[i].ptr, row.fields[i].len);
        }
    }
    for (size_t i = 0; i < n; i++) {
        infer(&cols[i], id_names);
    }
    write_draft(out, csv, cols, n, rows, bad_rows, bad_first ? kn_escape_term(a, bad_first, strlen(bad_first)) : "",
                max_rows > 0 && rows >= limit);
    ok = true;
    goto done;

bad_csv: {
    /* The same diagnostic `check --data` gives; without a header there is
     * nothing to draft, so the command cannot be done (exit 2). */
    kn_pos p = {csv, (uint32_t)e.line, (uint32_t)e.column, 0};
    kn_diag_push(sink, KN_R_CSV_MALFORMED, &p, "", "%s", kn_csv_error_message(a, &e));
    kn_sink_mark_fatal(sink);
}
done:
    return ok;
}
