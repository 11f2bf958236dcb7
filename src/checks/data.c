/* data.c - `check --data FILE` (SPEC §4.7): one schema against one CSV
 * sample.  Reads the file once, front to back (src/data/csv.c):
 *   - the header against the declared columns (column-not-in-schema,
 *     column-not-in-data) and the reader's problems (csv-malformed);
 *   - over every row: values against the declared type and format
 *     (value-mismatch) and timestamp features against moment_column
 *     (timestamp-after-moment);
 *   - a uniform sample of at most --max-rows rows (reservoir sampling,
 *     src/data/stats.c), kept as typed cells, over which the statistics run
 *     after the pass: lone-feature-separates, missingness-predicts,
 *     identifier-segment-predicts, rows-shared-across-split,
 *     entity-in-both-splits and small-quasi-identifier-groups.
 * Every finding points into the CSV file (line 1 and the header field for a
 * column's statistics, the row's line otherwise) with a note at the column's
 * declaration in the schema.
 *
 * Memory: one row of the sample costs 40 bytes of bookkeeping, 8 bytes per
 * cell (one per numeric or categorical feature, two for a feature without a
 * type, one per identifier segment) and one bit per feature; dictionaries of
 * category values are capped (10,000 levels and 1 MiB of text per column).
 * Beyond the sample only per-column counters are kept. */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define PCRE2_CODE_UNIT_WIDTH 8
#include <pcre2.h>

#include "../data/csv.h"
#include "../data/stats.h"
#include "../data/values.h"
#include "../util/names.h"
#include "../util/regex.h"
#include "../util/text.h"
#include "checks.h"

#define DEFAULT_MAX_ROWS 1000000LL

enum {
    DICT_MAX_LEVELS = 10000,    /* a categorical column with more is high-cardinality */
    DICT_MAX_TEXT = 1 << 20,    /* bytes of distinct values kept per column */
    SEGMENT_MAX_LEVELS = 50,    /* "few distinct values" for an identifier segment */
    ROWS_PER_LEVEL = 5,         /* U is only trusted with this many rows per level */
    MIN_CLASS_ROWS = 5,         /* AUC needs this many rows of each class */
    MAX_RUNS = 6,               /* letter/digit positions followed per identifier */
    N_BINS = 10,                /* quantile bins of a numeric feature against a categorical target */
    HEAD_CELLS = 5,             /* line, row hash, entity hash, QI hash, target|side|flags */
    EXAMPLE_MAX = 40,           /* bytes of a value quoted in a message */
};

#define ID_OTHER UINT32_MAX /* a value first seen after its dictionary filled up */

static const char privacy_note[] =
    "this is a screening aid, not a privacy review: what protection the data needs is decided by applicable law "
    "and your organisation's privacy practice";

/* ---- a capped dictionary: value text -> id (1-based; 0 is "missing") ---- */

typedef struct dict {
    kn_arena *a;
    uint32_t *slots; /* 0: empty, else id */
    uint64_t *hashes;
    size_t cap;      /* power of two */
    const char **text;
    size_t *len;
    size_t n;        /* ids in use, id 0 included */
    size_t text_cap;
    size_t bytes, max_levels;
    bool full;
} dict;

static dict *dict_new(kn_arena *a, size_t max_levels)
{
    dict *d = kn_alloc(a, sizeof *d);
    d->a = a;
    d->cap = 16;
    d->slots = kn_alloc_array(a, d->cap, sizeof *d->slots);
    d->hashes = kn_alloc_array(a, d->cap, sizeof *d->hashes);
    d->text_cap = 8;
    d->text = kn_alloc_array(a, d->text_cap, sizeof *d->text);
    d->len = kn_alloc_array(a, d->text_cap, sizeof *d->len);
    d->text[0] = "";
    d->n = 1;
    d->max_levels = max_levels;
    return d;
}

static void dict_grow(dict *d)
{
    size_t cap = d->cap * 2;
    uint32_t *slots = kn_alloc_array(d->a, cap, sizeof *slots);
    uint64_t *hashes = kn_alloc_array(d->a, cap, sizeof *hashes);
    for (size_t i = 0; i < d->cap; i++) {
        if (d->slots[i]) {
            size_t j = d->hashes[i] & (cap - 1);
            while (slots[j]) {
                j = (j + 1) & (cap - 1);
            }
            slots[j] = d->slots[i];
            hashes[j] = d->hashes[i];
        }
    }
    d->slots = slots;
    d->hashes = hashes;
    d->cap = cap;
}

/* The id of s[0..len), adding it while the caps allow; ID_OTHER after. */
static uint32_t dict_id(dict *d, const char *s, size_t len)
{
    uint64_t h = kn_stats_hash(s, len, 0);
    size_t mask = d->cap - 1, i = h & mask;
    for (; d->slots[i]; i = (i + 1) & mask) {
        uint32_t id = d->slots[i];
        if (d->hashes[i] == h && d->len[id] == len && memcmp(d->text[id], s, len) == 0) {
            return id;
        }
    }
    if (d->full || d->n > d->max_levels || d->bytes + len > DICT_MAX_TEXT) {
        d->full = true;
        return ID_OTHER;
    }
    if (d->n == d->text_cap) {
        size_t cap = d->text_cap * 2;
        const char **text = kn_alloc_array(d->a, cap, sizeof *text);
        size_t *lens = kn_alloc_array(d->a, cap, sizeof *lens);
        memcpy(text, d->text, d->n * sizeof *text);
        memcpy(lens, d->len, d->n * sizeof *lens);
        d->text = text;
        d->len = lens;
        d->text_cap = cap;
    }
    uint32_t id = (uint32_t)d->n++;
    d->text[id] = kn_strndup(d->a, s, len);
    d->len[id] = len;
    d->bytes += len;
    d->slots[i] = id;
    d->hashes[i] = h;
    if (d->n * 2 > d->cap) {
        dict_grow(d);
    }
    return id;
}

static size_t dict_levels(const dict *d)
{
    return d->n - 1;
}

/* ---- the columns ------------------------------------------------------ */

typedef enum use { USE_NONE, USE_NUMBER, USE_CATEGORY, USE_EITHER } use;

/* One segment of an identifier: a named group of its format, or the i-th
 * run of letters or digits. */
typedef struct segment {
    const char *name; /* group name, or NULL for a run */
    uint32_t group;   /* capture group number (named groups) */
    unsigned kinds;   /* runs: 1 letters, 2 digits */
    dict *d;
    size_t cell;
} segment;

/* A finding counted over every row: how many, and the first. */
typedef struct first_seen {
    size_t count;
    uint64_t line;
    uint32_t col;
    char *value;
    char *other; /* the moment value, for timestamp-after-moment */
} first_seen;

typedef struct col {
    const kn_column *decl;
    const char *name;
    size_t field;
    uint32_t hcol; /* byte column of the name in the header */
    bool feature;
    use use;
    size_t num_cell, cat_cell, mbit;
    dict *d;
    bool timed; /* a timestamp/date feature compared with moment_column */
    first_seen bad_type, bad_format, late;
    size_t missing, not_numbers;
    /* format */
    pcre2_match_data *md;
    bool format_off; /* a limit was hit: no more matching */
    uint64_t limit_line;
    char *limit_problem;
    segment *segs;
    size_t n_segs;
    bool runs;
} col;

typedef struct bad_kind {
    size_t count;
    kn_csv_error first;
    char *message;
} bad_kind;

typedef struct dx {
    kn_ctx *ctx;
    const kn_schema *s;
    const char *path;
    kn_arena *a;
    kn_sink *sink;

    col *cols; /* one per declared column found in the header */
    size_t n_cols;
    col *target, *entity, *moment, *split;
    size_t n_features, n_qi;
    size_t *feature_fields, *qi_fields;
    dict *tdict;

    pcre2_match_context *mctx;

    /* the sample */
    size_t stride; /* cells per row */
    size_t n_cells; /* head cells included; the missing bits follow */
    size_t n_mbits;
    uint64_t *rows;
    size_t rows_cap, max_kept;
    kn_defer *rows_defer;
    kn_reservoir rs;
    uint64_t seen;   /* good rows */
    long long max_rows;
    uint64_t seed;

    bad_kind bad[KN_CSV_TOO_MANY_COLUMNS + 1];
} dx;

/* ---- helpers -------------------------------------------------------------- */

static kn_pos csv_pos(const dx *x, uint64_t line, uint32_t column)
{
    kn_pos p = {x->path, line > UINT32_MAX ? UINT32_MAX : (uint32_t)line, column, 0};
    return p;
}

/* A value for a message: at most EXAMPLE_MAX bytes, cut on a UTF-8 boundary
 * (the renderer escapes control characters). */
static char *example(kn_arena *a, const char *s, size_t len)
{
    if (len <= EXAMPLE_MAX) {
        return kn_strndup(a, s, len);
    }
    size_t n = EXAMPLE_MAX;
    while (n > 0 && ((unsigned char)s[n] & 0xc0) == 0x80) {
        n--;
    }
    return kn_printf(a, "%.*s...", (int)n, s);
}

/* The 1-based byte column where field i of a record starts on its first
 * line; 0 when an earlier field spans lines. */
static uint32_t field_col(const kn_csv_field *f, size_t i)
{
    size_t c = 1;
    for (size_t j = 0; j < i; j++) {
        if (f[j].quoted) {
            if (memchr(f[j].ptr, '\n', f[j].len) || memchr(f[j].ptr, '\r', f[j].len)) {
                return 0;
            }
            size_t quotes = 0;
            for (const char *p = f[j].ptr; (p = memchr(p, '"', (size_t)(f[j].ptr + f[j].len - p))); p++) {
                quotes++;
            }
            c += 2 + quotes;
        }
        c += f[j].len + 1;
    }
    return c > UINT32_MAX ? 0 : (uint32_t)c;
}

static void note_decl(dx *x, kn_diag *d, const kn_column *c, const kn_node *node, const char *what)
{
    kn_diag_note(x->sink, d, kn_column_pos(c, node), "'%s' is declared here%s", c->name, what ? what : "");
}

static void note_sample(dx *x, kn_diag *d, size_t kept)
{
    if (x->seen > kept) {
        kn_diag_note(x->sink, d, NULL,
                     "computed on a uniform random sample of %zu of the %llu rows (--max-rows %lld, seed %llu); "
                     "counts refer to the sample",
                     kept, (unsigned long long)x->seen, x->max_rows, (unsigned long long)x->seed);
    }
}

static uint64_t *row_at(dx *x, size_t slot)
{
    return x->rows + slot * x->stride;
}

static void free_ptr(void *p)
{
    free(p);
}

static void free_mctx(void *p)
{
    pcre2_match_context_free(p);
}

static void free_md(void *p)
{
    pcre2_match_data_free(p);
}

static void close_file(void *p)
{
    fclose(p);
}

/* Makes room for sample slot `slot`, doubling the row store. */
static uint64_t *reserve(dx *x, size_t slot)
{
    if (slot >= x->rows_cap) {
        size_t cap = x->rows_cap ? x->rows_cap * 2 : 1024;
        if (cap > x->max_kept) {
            cap = x->max_kept;
        }
        if (cap <= slot) {
            cap = slot + 1;
        }
        x->rows = kn_xrealloc(x->a, x->rows, cap * x->stride * sizeof *x->rows);
        x->rows_defer->ptr = x->rows;
        x->rows_cap = cap;
    }
    return row_at(x, slot);
}

static double cell_d(const uint64_t *r, size_t i)
{
    double d;
    memcpy(&d, &r[i], sizeof d);
    return d;
}

static void set_cell_d(uint64_t *r, size_t i, double d)
{
    memcpy(&r[i], &d, sizeof d);
}

static bool missing_bit(const dx *x, const uint64_t *r, size_t b)
{
    const uint64_t *bits = r + x->n_cells;
    return (bits[b / 64] >> (b % 64)) & 1u;
}

static void set_missing_bit(const dx *x, uint64_t *r, size_t b)
{
    uint64_t *bits = r + x->n_cells;
    bits[b / 64] |= (uint64_t)1 << (b % 64);
}

/* Head cell 4: target id (bits 0-31), split side (32-39: 0 none, 1 train,
 * 2 test), entity present (40), QI tuple present (41). */
#define H_LINE 0
#define H_ROW 1
#define H_ENTITY 2
#define H_QI 3
#define H_META 4

static uint32_t meta_target(const uint64_t *r)
{
    return (uint32_t)(r[H_META] & UINT32_MAX);
}

static unsigned meta_side(const uint64_t *r)
{
    return (unsigned)((r[H_META] >> 32) & 0xff);
}

/* ---- header ------------------------------------------------------------- */

static const char *type_words(kn_value_type t)
{
    switch (t) {
    case KN_TYPE_NUMBER:
        return "numbers";
    case KN_TYPE_BOOLEAN:
        return "booleans (true/false, yes/no, 1/0)";
    case KN_TYPE_TIMESTAMP:
        return "ISO 8601 timestamps";
    case KN_TYPE_DATE:
        return "ISO 8601 dates (YYYY-MM-DD)";
    default:
        return "values of the declared type";
    }
}

static void setup_segments(dx *x, col *c)
{
    const kn_column *k = c->decl;
    uint32_t count = 0;
    if (k->format_code) {
        pcre2_pattern_info(k->format_code, PCRE2_INFO_NAMECOUNT, &count);
    }
    if (count > 0) {
        uint32_t entry = 0;
        PCRE2_SPTR table = NULL;
        pcre2_pattern_info(k->format_code, PCRE2_INFO_NAMEENTRYSIZE, &entry);
        pcre2_pattern_info(k->format_code, PCRE2_INFO_NAMETABLE, &table);
        c->segs = kn_alloc_array(x->a, count, sizeof *c->segs);
        for (uint32_t i = 0; i < count; i++) {
            PCRE2_SPTR e = table + (size_t)i * entry;
            segment *g = &c->segs[c->n_segs++];
            g->group = (uint32_t)(e[0] << 8 | e[1]);
            g->name = kn_strdup(x->a, (const char *)e + 2);
            g->d = dict_new(x->a, SEGMENT_MAX_LEVELS);
        }
    } else {
        c->runs = true;
        c->segs = kn_alloc_array(x->a, MAX_RUNS, sizeof *c->segs);
        c->n_segs = MAX_RUNS;
        for (size_t i = 0; i < MAX_RUNS; i++) {
            c->segs[i].d = dict_new(x->a, SEGMENT_MAX_LEVELS);
        }
    }
    for (size_t i = 0; i < c->n_segs; i++) {
        c->segs[i].cell = x->n_cells++;
    }
}

/* The `columns:` key of the schema's main file. */
static const kn_pos *columns_pos(const kn_schema *s)
{
    if (s->root && s->root->kind == KN_NODE_MAP) {
        for (size_t i = 0; i < s->root->u.map.n; i++) {
            const kn_node *k = s->root->u.map.pairs[i].key;
            if (k->kind == KN_NODE_SCALAR && strcmp(k->u.scalar.text, "columns") == 0) {
                return &k->pos;
            }
        }
    }
    return &s->root->pos;
}

/* Matches the header against the schema and lays out the sample's cells.
 * Returns false when nothing can be checked. */
static void read_header(dx *x, const kn_csv_row *h)
{
    const kn_schema *s = x->s;
    kn_name_map *seen = kn_names_new(x->a);
    x->cols = kn_alloc_array(x->a, h->n_fields + 1, sizeof *x->cols);
    const char **declared = kn_alloc_array(x->a, s->n_columns + 1, sizeof *declared);
    for (size_t i = 0; i < s->n_columns; i++) {
        declared[i] = s->columns[i]->name;
    }
    for (size_t i = 0; i < h->n_fields; i++) {
        char *name = kn_strndup(x->a, h->fields[i].ptr, h->fields[i].len);
        uint32_t hc = field_col(h->fields, i);
        kn_pos p = csv_pos(x, h->line, hc);
        if (!kn_names_put(seen, name, name)) {
            kn_diag *d = kn_diag_push(x->sink, KN_R_CSV_MALFORMED, &p, name,
                                      "the header names column '%s' again (field %zu); only its first occurrence is "
                                      "checked",
                                      name, i + 1);
            kn_diag_key(x->sink, d, "duplicate header %s", name);
            continue;
        }
        kn_column *k = kn_schema_column(s, name);
        if (!k) {
            const char *near = kn_suggest(name, declared, s->n_columns);
            kn_diag *d;
            if (near) {
                d = kn_diag_push(x->sink, KN_R_COLUMN_NOT_IN_SCHEMA, &p, name,
                                 "the data has a column '%s' that the schema does not declare; did you mean '%s'?",
                                 name, near);
                kn_diag_note(x->sink, d, kn_column_pos(kn_schema_column(s, near), NULL), "'%s' is declared here",
                             near);
            } else {
                d = kn_diag_push(x->sink, KN_R_COLUMN_NOT_IN_SCHEMA, &p, name,
                                 "the data has a column '%s' that the schema does not declare", name);
                kn_diag_note(x->sink, d, columns_pos(s),
                             "declare it under columns: (role: excluded if the model never sees it)");
            }
            kn_diag_key(x->sink, d, "undeclared %s", name);
            continue;
        }
        col *c = &x->cols[x->n_cols++];
        c->decl = k;
        c->name = k->name;
        c->field = i;
        c->hcol = hc;
    }
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *k = s->columns[i];
        if (!kn_names_get(seen, k->name)) {
            kn_pos p = csv_pos(x, h->line, 0);
            kn_diag *d = kn_diag_push(x->sink, KN_R_COLUMN_NOT_IN_DATA, &p, k->name,
                                      "the schema declares a column '%s' that the data does not have", k->name);
            kn_diag_key(x->sink, d, "absent %s", k->name);
            note_decl(x, d, k, NULL, "");
        }
    }

    /* Layout of the sample and the roles: cell indices count from the
     * start of a row, after the head cells. */
    x->n_cells = HEAD_CELLS;
    x->feature_fields = kn_alloc_array(x->a, x->n_cols + 1, sizeof(size_t));
    x->qi_fields = kn_alloc_array(x->a, x->n_cols + 1, sizeof(size_t));
    for (size_t i = 0; i < x->n_cols; i++) {
        col *c = &x->cols[i];
        const kn_column *k = c->decl;
        if (k == KN_REF_COLUMN(s->prediction.target)) {
            x->target = c;
        }
        if (k == KN_REF_COLUMN(s->prediction.entity)) {
            x->entity = c;
        }
        if (k == KN_REF_COLUMN(s->prediction.moment_column)) {
            x->moment = c;
        }
        if (s->split.present && k == KN_REF_COLUMN(s->split.column)) {
            x->split = c;
        }
        if (k->quasi_identifier == 1) {
            x->qi_fields[x->n_qi++] = c->field;
        }
        if (k->format_code) {
            kn_defer *d = kn_arena_defer(x->a, free_md, NULL);
            c->md = pcre2_match_data_create_from_pattern(k->format_code, NULL);
            if (!c->md) {
                kn_arena_oom(x->a);
            }
            d->ptr = c->md;
        }
        if (k->role == KN_ROLE_FEATURE) {
            c->feature = true;
            x->feature_fields[x->n_features++] = c->field;
            c->mbit = x->n_mbits++;
            switch (k->type) {
            case KN_TYPE_NUMBER:
            case KN_TYPE_TIMESTAMP:
            case KN_TYPE_DATE:
                c->use = USE_NUMBER;
                c->num_cell = x->n_cells++;
                break;
            case KN_TYPE_UNSET:
                c->use = USE_EITHER;
                c->num_cell = x->n_cells++;
                c->cat_cell = x->n_cells++;
                c->d = dict_new(x->a, DICT_MAX_LEVELS);
                break;
            default:
                c->use = USE_CATEGORY;
                c->cat_cell = x->n_cells++;
                c->d = dict_new(x->a, DICT_MAX_LEVELS);
                break;
            }
        } else if (k->role == KN_ROLE_IDENTIFIER) {
            setup_segments(x, c);
        }
    }
    if (x->target) {
        x->tdict = dict_new(x->a, DICT_MAX_LEVELS);
    }
    if (x->moment) {
        for (size_t i = 0; i < x->n_cols; i++) {
            col *c = &x->cols[i];
            c->timed = c->feature && c != x->moment &&
                       (c->decl->type == KN_TYPE_TIMESTAMP || c->decl->type == KN_TYPE_DATE);
        }
    }
    x->stride = x->n_cells + (x->n_mbits + 63) / 64;
}

/* ---- one row -------------------------------------------------------------- */

static void first(kn_arena *a, first_seen *f, const kn_csv_row *row, size_t field)
{
    if (f->count++ == 0) {
        f->line = row->line;
        f->col = field_col(row->fields, field);
        f->value = example(a, row->fields[field].ptr, row->fields[field].len);
    }
}

static bool is_limit(int rc)
{
    return rc == PCRE2_ERROR_MATCHLIMIT || rc == PCRE2_ERROR_DEPTHLIMIT || rc == PCRE2_ERROR_HEAPLIMIT ||
           rc == PCRE2_ERROR_JIT_STACKLIMIT || rc == PCRE2_ERROR_NOMEMORY;
}

static bool is_letter(unsigned char ch)
{
    return (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z');
}

static bool is_digit(unsigned char ch)
{
    return ch >= '0' && ch <= '9';
}

/* Stores the letter and digit runs of an identifier value. */
static void store_runs(col *c, uint64_t *r, const char *s, size_t len)
{
    size_t i = 0, n = 0;
    while (i < len && n < MAX_RUNS) {
        unsigned char ch = (unsigned char)s[i];
        bool letter = is_letter(ch);
        if (!letter && !is_digit(ch)) {
            i++;
            continue;
        }
        size_t j = i;
        while (j < len && (letter ? is_letter((unsigned char)s[j]) : is_digit((unsigned char)s[j]))) {
            j++;
        }
        segment *g = &c->segs[n++];
        g->kinds |= letter ? 1u : 2u;
        if (r) {
            r[g->cell] = dict_id(g->d, s + i, j - i);
        }
        i = j;
    }
}

static void check_value(dx *x, col *c, const kn_csv_row *row, uint64_t *r, int64_t moment_us, bool have_moment)
{
    const kn_column *k = c->decl;
    const kn_csv_field *f = &row->fields[c->field];
    kn_value_status st = KN_VALUE_OK;
    double num = NAN;
    const char *text = f->ptr;
    size_t text_len = f->len;
    switch (k->type) {
    case KN_TYPE_NUMBER:
        st = kn_value_number(f->ptr, f->len, &num);
        break;
    case KN_TYPE_BOOLEAN: {
        bool b;
        st = kn_value_boolean(f->ptr, f->len, &b);
        if (st == KN_VALUE_OK) {
            text = b ? "true" : "false";
            text_len = strlen(text);
        }
        break;
    }
    case KN_TYPE_TIMESTAMP:
    case KN_TYPE_DATE: {
        int64_t us;
        st = k->type == KN_TYPE_DATE ? kn_value_date(f->ptr, f->len, &us) : kn_value_timestamp(f->ptr, f->len, &us, NULL);
        if (st == KN_VALUE_OK) {
            num = (double)us;
            if (c->timed && have_moment && us > moment_us) {
                if (c->late.count == 0) {
                    const kn_csv_field *mf = &row->fields[x->moment->field];
                    c->late.other = example(x->a, mf->ptr, mf->len);
                }
                first(x->a, &c->late, row, c->field);
            }
        }
        break;
    }
    default:
        st = kn_value_is_missing(f->ptr, f->len) ? KN_VALUE_MISSING : KN_VALUE_OK;
        if (st == KN_VALUE_OK && c->use == USE_EITHER) {
            if (kn_value_number(f->ptr, f->len, &num) != KN_VALUE_OK) {
                c->not_numbers++;
            }
        }
        break;
    }
    if (st == KN_VALUE_INVALID) {
        first(x->a, &c->bad_type, row, c->field);
    } else if (st == KN_VALUE_MISSING) {
        c->missing++;
    }

    bool matched = false;
    if (c->md && !c->format_off && st != KN_VALUE_MISSING) {
        int rc = pcre2_match(k->format_code, (PCRE2_SPTR)f->ptr, f->len, 0, 0, c->md, x->mctx);
        if (rc >= 0) {
            matched = true;
        } else if (is_limit(rc)) {
            c->format_off = true;
            c->limit_line = row->line;
            PCRE2_UCHAR msg[160];
            pcre2_get_error_message(rc, msg, sizeof msg);
            c->limit_problem = kn_strdup(x->a, (const char *)msg);
        } else {
            first(x->a, &c->bad_format, row, c->field);
        }
    }

    if (c->segs && st != KN_VALUE_MISSING) {
        if (c->runs) {
            store_runs(c, r, f->ptr, f->len);
        } else if (matched && r) {
            PCRE2_SIZE *ov = pcre2_get_ovector_pointer(c->md);
            uint32_t n_ov = pcre2_get_ovector_count(c->md);
            for (size_t i = 0; i < c->n_segs; i++) {
                segment *g = &c->segs[i];
                if (g->group < n_ov && ov[2 * g->group] != PCRE2_UNSET) {
                    r[g->cell] = dict_id(g->d, f->ptr + ov[2 * g->group], ov[2 * g->group + 1] - ov[2 * g->group]);
                }
            }
        }
    }

    if (!r || !c->feature) {
        return;
    }
    if (st == KN_VALUE_MISSING) {
        set_missing_bit(x, r, c->mbit);
    }
    if (c->use == USE_NUMBER || c->use == USE_EITHER) {
        set_cell_d(r, c->num_cell, st == KN_VALUE_OK ? num : NAN);
    }
    if (c->use == USE_CATEGORY || c->use == USE_EITHER) {
        r[c->cat_cell] = st == KN_VALUE_MISSING ? 0 : dict_id(c->d, text, text_len);
    }
}

static bool equals_nocase(const char *s, size_t len, const char *word)
{
    size_t n = strlen(word);
    if (len != n) {
        return false;
    }
    for (size_t i = 0; i < n; i++) {
        char ch = s[i];
        if (ch >= 'A' && ch <= 'Z') {
            ch = (char)(ch - 'A' + 'a');
        }
        if (ch != word[i]) {
            return false;
        }
    }
    return true;
}

/* 1 training, 2 test, 0 anything else (fold numbers are not compared). */
static unsigned split_side(const char *s, size_t len)
{
    while (len && (*s == ' ' || *s == '\t')) {
        s++, len--;
    }
    while (len && (s[len - 1] == ' ' || s[len - 1] == '\t')) {
        len--;
    }
    static const char *const train[] = {"train", "training"};
    static const char *const test[] = {"test", "testing", "holdout", "validation", "valid", "val", "eval"};
    for (size_t i = 0; i < sizeof train / sizeof *train; i++) {
        if (equals_nocase(s, len, train[i])) {
            return 1;
        }
    }
    for (size_t i = 0; i < sizeof test / sizeof *test; i++) {
        if (equals_nocase(s, len, test[i])) {
            return 2;
        }
    }
    return 0;
}

static void read_row(dx *x, const kn_csv_row *row)
{
    x->seen++;
    size_t slot = kn_reservoir_offer(&x->rs);
    uint64_t *r = NULL;
    if (slot != KN_RESERVOIR_SKIP) {
        r = reserve(x, slot);
        memset(r, 0, x->stride * sizeof *r);
        r[H_LINE] = row->line;
    }
    int64_t moment_us = 0;
    bool have_moment = false;
    if (x->moment) {
        const kn_csv_field *f = &row->fields[x->moment->field];
        have_moment = kn_value_timestamp(f->ptr, f->len, &moment_us, NULL) == KN_VALUE_OK;
    }
    for (size_t i = 0; i < x->n_cols; i++) {
        check_value(x, &x->cols[i], row, r, moment_us, have_moment);
    }
    if (!r) {
        return;
    }
    uint64_t meta = 0;
    if (x->target) {
        const kn_csv_field *f = &row->fields[x->target->field];
        const char *t = f->ptr;
        size_t tl = f->len;
        bool b;
        if (kn_value_is_missing(t, tl)) {
            t = NULL;
        } else if (x->target->decl->type == KN_TYPE_BOOLEAN && kn_value_boolean(t, tl, &b) == KN_VALUE_OK) {
            t = b ? "true" : "false";
            tl = strlen(t);
        }
        meta |= t ? dict_id(x->tdict, t, tl) : 0;
    }
    if (x->split) {
        const kn_csv_field *f = &row->fields[x->split->field];
        meta |= (uint64_t)split_side(f->ptr, f->len) << 32;
    }
    if (x->entity) {
        const kn_csv_field *f = &row->fields[x->entity->field];
        if (!kn_value_is_missing(f->ptr, f->len)) {
            meta |= (uint64_t)1 << 40;
            r[H_ENTITY] = kn_stats_hash(f->ptr, f->len, 0);
        }
    }
    if (x->n_qi) {
        kn_row_hash rh;
        kn_row_hash_init(&rh);
        for (size_t i = 0; i < x->n_qi; i++) {
            const kn_csv_field *f = &row->fields[x->qi_fields[i]];
            kn_row_hash_field(&rh, f->ptr, f->len);
        }
        r[H_QI] = kn_row_hash_final(&rh);
        meta |= (uint64_t)1 << 41;
    }
    if (x->n_features) {
        kn_row_hash rh;
        kn_row_hash_init(&rh);
        for (size_t i = 0; i < x->n_features; i++) {
            const kn_csv_field *f = &row->fields[x->feature_fields[i]];
            kn_row_hash_field(&rh, f->ptr, f->len);
        }
        r[H_ROW] = kn_row_hash_final(&rh);
    }
    r[H_META] = meta;
}

/* ---- findings over every row ------------------------------------------- */

static void report_csv_problem(dx *x, const kn_csv_error *e, bool fatal)
{
    kn_pos p = csv_pos(x, e->line, e->column > UINT32_MAX ? 0 : (uint32_t)e->column);
    char *msg = kn_csv_error_message(x->a, e);
    if (fatal) {
        kn_diag *d = kn_diag_push(x->sink, KN_R_CSV_MALFORMED, &p, "", "%s; the rest of the file is not read", msg);
        kn_diag_key(x->sink, d, "fatal %d", (int)e->problem);
        return;
    }
    bad_kind *b = &x->bad[e->problem];
    if (b->count++ == 0) {
        b->first = *e;
        b->message = msg;
    }
}

static void report_bad_rows(dx *x)
{
    for (size_t i = 0; i <= KN_CSV_TOO_MANY_COLUMNS; i++) {
        bad_kind *b = &x->bad[i];
        if (!b->count) {
            continue;
        }
        kn_pos p = csv_pos(x, b->first.line, b->first.column > UINT32_MAX ? 0 : (uint32_t)b->first.column);
        kn_diag *d;
        if (b->count == 1) {
            d = kn_diag_push(x->sink, KN_R_CSV_MALFORMED, &p, "", "%s; the record is left out of the checks",
                             b->message);
        } else {
            d = kn_diag_push(x->sink, KN_R_CSV_MALFORMED, &p, "",
                             "%s; %zu records have this problem (the first is here) and are left out of the checks",
                             b->message, b->count);
        }
        kn_diag_key(x->sink, d, "bad rows %zu", i);
    }
}

static void report_streamed(dx *x)
{
    for (size_t i = 0; i < x->n_cols; i++) {
        col *c = &x->cols[i];
        const kn_column *k = c->decl;
        if (c->bad_type.count) {
            kn_pos p = csv_pos(x, c->bad_type.line, c->bad_type.col);
            kn_diag *d = kn_diag_push(x->sink, KN_R_VALUE_MISMATCH, &p, c->name,
                                      "%zu of %llu values of '%s' are not %s; the first, here, is '%s'",
                                      c->bad_type.count, (unsigned long long)x->seen, c->name,
                                      type_words(k->type), c->bad_type.value);
            kn_diag_key(x->sink, d, "type %s", c->name);
            note_decl(x, d, k, k->type_node, kn_printf(x->a, " as type %s", kn_type_name(k->type)));
        }
        if (c->bad_format.count) {
            kn_pos p = csv_pos(x, c->bad_format.line, c->bad_format.col);
            kn_diag *d = kn_diag_push(x->sink, KN_R_VALUE_MISMATCH, &p, c->name,
                                      "%zu of %llu values of '%s' do not match its format; the first, here, is '%s'",
                                      c->bad_format.count, (unsigned long long)x->seen, c->name, c->bad_format.value);
            kn_diag_key(x->sink, d, "format %s", c->name);
            note_decl(x, d, k, k->format_node, " with this format");
        }
        if (c->format_off) {
            kn_diag *d = kn_diag_push(x->sink, KN_R_BAD_PATTERN, kn_column_pos(k, k->format_node), c->name,
                                      "the format of '%s' could not be checked against the data: %s", c->name,
                                      c->limit_problem);
            kn_diag_key(x->sink, d, "data limit %s", c->name);
            kn_pos p = csv_pos(x, c->limit_line, 0);
            kn_diag_note(x->sink, d, &p,
                         "on this row's value; the format is not matched against later rows (nested quantifiers "
                         "such as (a+)+ backtrack without end and should be rewritten)");
        }
        if (c->late.count) {
            const kn_column *m = x->moment->decl;
            kn_pos p = csv_pos(x, c->late.line, c->late.col);
            kn_diag *d = kn_diag_push(x->sink, KN_R_TIMESTAMP_AFTER_MOMENT, &p, c->name,
                                      "'%s' is later than the moment column '%s' in %zu of %llu rows; the first, "
                                      "here, is %s after %s",
                                      c->name, m->name, c->late.count, (unsigned long long)x->seen, c->late.value,
                                      c->late.other);
            kn_diag_key(x->sink, d, "late %s", c->name);
            note_decl(x, d, k, NULL, ": a value recorded after the moment cannot be known when the model is asked");
            kn_diag_note(x->sink, d, kn_column_pos(m, x->s->prediction.moment_column.node),
                         "the moment column is named here");
        }
    }
}

/* ---- statistics over the sample ----------------------------------------- */

typedef struct sample {
    size_t n;          /* rows kept */
    size_t *order;     /* slots in line order */
    size_t *labelled;  /* slots with a target value, in line order */
    size_t n_lab;
    bool binary, categorical;
    uint32_t positive; /* binary: the positive class's id */
    bool *pos;         /* per labelled row */
    const char **ytext;
} sample;

static dx *sort_ctx;

static int by_line(const void *pa, const void *pb)
{
    uint64_t a = row_at(sort_ctx, *(const size_t *)pa)[H_LINE];
    uint64_t b = row_at(sort_ctx, *(const size_t *)pb)[H_LINE];
    return (a > b) - (a < b);
}

static int by_double(const void *pa, const void *pb)
{
    double a = *(const double *)pa, b = *(const double *)pb;
    return (a > b) - (a < b);
}

static void prepare_sample(dx *x, sample *sm)
{
    sm->n = x->seen < x->max_kept ? (size_t)x->seen : x->max_kept;
    sm->order = kn_alloc_array(x->a, sm->n + 1, sizeof *sm->order);
    for (size_t i = 0; i < sm->n; i++) {
        sm->order[i] = i;
    }
    if (x->seen > sm->n) {
        sort_ctx = x;
        qsort(sm->order, sm->n, sizeof *sm->order, by_line);
        sort_ctx = NULL;
    }
    if (!x->target || x->tdict->full || dict_levels(x->tdict) < 2) {
        return;
    }
    sm->labelled = kn_alloc_array(x->a, sm->n + 1, sizeof *sm->labelled);
    sm->pos = kn_alloc_array(x->a, sm->n + 1, sizeof *sm->pos);
    sm->ytext = kn_alloc_array(x->a, sm->n + 1, sizeof *sm->ytext);
    if (dict_levels(x->tdict) == 2) {
        sm->binary = true;
        const dict *t = x->tdict;
        /* The positive class: "true" for a boolean target, else the value
         * that sorts last ("1" over "0", "yes" over "no"). */
        sm->positive = strcmp(t->text[1], t->text[2]) > 0 ? 1 : 2;
        if (x->target->decl->type == KN_TYPE_BOOLEAN) {
            sm->positive = strcmp(t->text[1], "true") == 0 ? 1 : 2;
        }
    } else {
        sm->categorical = true;
    }
    for (size_t i = 0; i < sm->n; i++) {
        const uint64_t *r = row_at(x, sm->order[i]);
        uint32_t y = meta_target(r);
        if (y == 0 || y == ID_OTHER) {
            continue;
        }
        sm->pos[sm->n_lab] = y == sm->positive;
        sm->ytext[sm->n_lab] = x->tdict->text[y];
        sm->labelled[sm->n_lab++] = sm->order[i];
    }
    if (sm->binary) {
        size_t np = 0;
        for (size_t i = 0; i < sm->n_lab; i++) {
            np += sm->pos[i];
        }
        if (np < MIN_CLASS_ROWS || sm->n_lab - np < MIN_CLASS_ROWS) {
            sm->binary = false;
            sm->n_lab = 0;
        }
    }
}

static const char *target_name(const dx *x)
{
    return x->target->name;
}

static const char *positive_text(const dx *x, const sample *sm)
{
    return x->tdict->text[sm->positive];
}

static kn_pos header_pos(const dx *x, const col *c)
{
    return csv_pos(x, 1, c->hcol);
}

/* U(target | x) over the labelled rows; x labels come from label(). */
static bool uncertainty(dx *x, const sample *sm, const char *const *labels, kn_uncertainty *u)
{
    kn_contingency *t = kn_contingency_new(x->a, 0);
    for (size_t i = 0; i < sm->n_lab; i++) {
        kn_contingency_add(t, labels[i], strlen(labels[i]), sm->ytext[i], strlen(sm->ytext[i]));
    }
    return kn_contingency_uncertainty(t, u) && !u->high_cardinality;
}

static void numeric_feature(dx *x, const sample *sm, col *c, const char **labels)
{
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    double *score = kn_alloc_array(x->a, sm->n_lab + 1, sizeof *score);
    size_t have = 0;
    for (size_t i = 0; i < sm->n_lab; i++) {
        score[i] = cell_d(row_at(x, sm->labelled[i]), c->num_cell);
        have += !isnan(score[i]);
    }
    if (have == 0) {
        return;
    }
    kn_pos p = header_pos(x, c);
    if (sm->binary) {
        kn_auc auc;
        if (!kn_stats_auc(x->a, score, sm->pos, sm->n_lab, &auc) || auc.n_pos < MIN_CLASS_ROWS ||
            auc.n_neg < MIN_CLASS_ROWS || auc.separation < th->separation_auc) {
            return;
        }
        kn_diag *d = kn_diag_push(x->sink, KN_R_LONE_FEATURE_SEPARATES, &p, c->name,
                                  "'%s' alone separates %s: ROC AUC %.3f (threshold %g) over %zu rows with a value "
                                  "(%zu with %s = %s); %s values go with %s = %s",
                                  c->name, target_name(x), auc.separation, th->separation_auc,
                                  auc.n_pos + auc.n_neg, auc.n_pos, target_name(x), positive_text(x, sm),
                                  auc.auc >= 0.5 ? "higher" : "lower", target_name(x), positive_text(x, sm));
        kn_diag_key(x->sink, d, "separates %s", c->name);
        note_decl(x, d, c->decl, NULL, ": check when its value is really known");
        note_sample(x, d, sm->n);
        return;
    }
    /* A categorical target: quantile bins of the feature, then U. */
    double *sorted = kn_alloc_array(x->a, have, sizeof *sorted);
    size_t m = 0;
    for (size_t i = 0; i < sm->n_lab; i++) {
        if (!isnan(score[i])) {
            sorted[m++] = score[i];
        }
    }
    qsort(sorted, m, sizeof *sorted, by_double);
    double cut[N_BINS - 1];
    for (size_t b = 1; b < N_BINS; b++) {
        cut[b - 1] = sorted[(m * b) / N_BINS];
    }
    static const char *const bins[N_BINS] = {"b0", "b1", "b2", "b3", "b4", "b5", "b6", "b7", "b8", "b9"};
    for (size_t i = 0; i < sm->n_lab; i++) {
        if (isnan(score[i])) {
            labels[i] = "";
            continue;
        }
        size_t b = 0;
        while (b < N_BINS - 1 && score[i] >= cut[b]) {
            b++;
        }
        labels[i] = bins[b];
    }
    kn_uncertainty u;
    if (!uncertainty(x, sm, labels, &u) || u.u < th->uncertainty) {
        return;
    }
    kn_diag *d = kn_diag_push(x->sink, KN_R_LONE_FEATURE_SEPARATES, &p, c->name,
                              "'%s' alone predicts %s: uncertainty coefficient U(%s | %s) %.3f (threshold %g) over "
                              "%zu rows, the feature cut into %d quantile bins",
                              c->name, target_name(x), target_name(x), c->name, u.u, th->uncertainty, u.n, N_BINS);
    kn_diag_key(x->sink, d, "separates %s", c->name);
    note_decl(x, d, c->decl, NULL, ": check when its value is really known");
    note_sample(x, d, sm->n);
}

static void categorical_feature(dx *x, const sample *sm, col *c, const char **labels)
{
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    if (c->d->full) {
        return;
    }
    for (size_t i = 0; i < sm->n_lab; i++) {
        uint32_t id = (uint32_t)row_at(x, sm->labelled[i])[c->cat_cell];
        labels[i] = c->d->text[id];
    }
    kn_uncertainty u;
    if (!uncertainty(x, sm, labels, &u) || u.x_levels < 2 || u.n < ROWS_PER_LEVEL * u.x_levels ||
        u.u < th->uncertainty) {
        return;
    }
    kn_pos p = header_pos(x, c);
    kn_diag *d = kn_diag_push(x->sink, KN_R_LONE_FEATURE_SEPARATES, &p, c->name,
                              "'%s' alone predicts %s: uncertainty coefficient U(%s | %s) %.3f (threshold %g) over "
                              "%zu rows and %zu values",
                              c->name, target_name(x), target_name(x), c->name, u.u, th->uncertainty, u.n,
                              u.x_levels);
    kn_diag_key(x->sink, d, "separates %s", c->name);
    note_decl(x, d, c->decl, NULL, ": check when its value is really known");
    note_sample(x, d, sm->n);
}

static void missingness(dx *x, const sample *sm, col *c, const char **labels)
{
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    size_t miss = 0, miss_pos = 0;
    for (size_t i = 0; i < sm->n_lab; i++) {
        bool m = missing_bit(x, row_at(x, sm->labelled[i]), c->mbit);
        miss += m;
        miss_pos += m && sm->pos[i];
        labels[i] = m ? "missing" : "present";
    }
    if (miss == 0 || miss == sm->n_lab) {
        return;
    }
    kn_pos p = header_pos(x, c);
    kn_diag *d;
    if (sm->binary) {
        double *score = kn_alloc_array(x->a, sm->n_lab, sizeof *score);
        for (size_t i = 0; i < sm->n_lab; i++) {
            score[i] = labels[i][0] == 'm' ? 1.0 : 0.0;
        }
        kn_auc auc;
        if (!kn_stats_auc(x->a, score, sm->pos, sm->n_lab, &auc) || auc.separation < th->missingness_auc) {
            return;
        }
        d = kn_diag_push(x->sink, KN_R_MISSINGNESS_PREDICTS, &p, c->name,
                         "whether '%s' is missing predicts %s: AUC of the missing indicator %.3f (threshold %g); "
                         "%zu of %zu rows miss it, %zu of them with %s = %s",
                         c->name, target_name(x), auc.separation, th->missingness_auc, miss, sm->n_lab, miss_pos,
                         target_name(x), positive_text(x, sm));
    } else {
        kn_uncertainty u;
        if (!uncertainty(x, sm, labels, &u) || u.u < th->uncertainty) {
            return;
        }
        d = kn_diag_push(x->sink, KN_R_MISSINGNESS_PREDICTS, &p, c->name,
                         "whether '%s' is missing predicts %s: U(%s | missing) %.3f (threshold %g); %zu of %zu rows "
                         "miss it",
                         c->name, target_name(x), target_name(x), u.u, th->uncertainty, miss, sm->n_lab);
    }
    kn_diag_key(x->sink, d, "missingness %s", c->name);
    note_decl(x, d, c->decl, NULL, ": a value filled in only when the outcome is known leaks it");
    note_sample(x, d, sm->n);
}

static const char *ordinal(kn_arena *a, size_t i)
{
    static const char *const words[] = {"first", "second", "third", "fourth", "fifth", "sixth"};
    return i < sizeof words / sizeof *words ? words[i] : kn_printf(a, "#%zu", i + 1);
}

static void segments(dx *x, const sample *sm, col *c, const char **labels)
{
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    for (size_t gi = 0; gi < c->n_segs; gi++) {
        segment *g = &c->segs[gi];
        size_t levels = dict_levels(g->d);
        if (g->d->full || levels < 2) {
            continue;
        }
        for (size_t i = 0; i < sm->n_lab; i++) {
            uint32_t id = (uint32_t)row_at(x, sm->labelled[i])[g->cell];
            labels[i] = id == ID_OTHER ? "" : g->d->text[id];
        }
        kn_uncertainty u;
        if (!uncertainty(x, sm, labels, &u) || u.n < ROWS_PER_LEVEL * u.x_levels || u.u < th->segment_uncertainty) {
            continue;
        }
        const char *what;
        if (g->name) {
            what = kn_printf(x->a, "the segment '%s' of '%s'", g->name, c->name);
        } else {
            what = kn_printf(x->a, "the %s run of %s in '%s'", ordinal(x->a, gi),
                             g->kinds == 1 ? "letters" : g->kinds == 2 ? "digits" : "letters or digits", c->name);
        }
        kn_pos p = header_pos(x, c);
        kn_diag *d = kn_diag_push(x->sink, KN_R_IDENTIFIER_SEGMENT_PREDICTS, &p, c->name,
                                  "%s predicts %s: U(%s | segment) %.3f (threshold %g) over %zu rows and %zu "
                                  "distinct values (e.g. '%s')",
                                  what, target_name(x), target_name(x), u.u, th->segment_uncertainty, u.n,
                                  levels, example(x->a, g->d->text[1], g->d->len[1]));
        kn_diag_key(x->sink, d, "segment %s %zu", c->name, gi);
        if (g->name) {
            note_decl(x, d, c->decl, c->decl->format_node, " with this format; the segment is a named group");
        } else {
            note_decl(x, d, c->decl, NULL,
                      "; without named groups in a format, its values were split into runs of letters and digits");
        }
        note_sample(x, d, sm->n);
    }
}

static void split_checks(dx *x, const sample *sm)
{
    if (!x->split) {
        return;
    }
    const kn_schema *s = x->s;
    kn_overlap *rows = x->n_features ? kn_overlap_new(x->a) : NULL;
    kn_overlap *ents = x->entity ? kn_overlap_new(x->a) : NULL;
    for (size_t i = 0; i < sm->n; i++) {
        const uint64_t *r = row_at(x, sm->order[i]);
        unsigned side = meta_side(r);
        if (side == 0) {
            continue;
        }
        if (rows) {
            kn_overlap_add(rows, r[H_ROW], side == 2, r[H_LINE]);
        }
        if (ents && (r[H_META] >> 40 & 1)) {
            kn_overlap_add(ents, r[H_ENTITY], side == 2, r[H_LINE]);
        }
    }
    kn_overlap_result o;
    const kn_column *sc = x->split->decl;
    if (rows) {
        kn_overlap_result_get(rows, &o);
        if (o.shared_keys && o.train_rows && o.test_rows) {
            kn_pos p = csv_pos(x, o.first_test_line, 0);
            kn_diag *d = kn_diag_push(x->sink, KN_R_ROWS_SHARED_ACROSS_SPLIT, &p, sc->name,
                                      "%zu of %zu test rows repeat the feature values of a training row exactly (%zu "
                                      "distinct rows over %zu features); the first is here",
                                      o.test_rows_shared, o.test_rows, o.shared_keys, x->n_features);
            kn_diag_key(x->sink, d, "shared rows %s", sc->name);
            kn_diag_note(x->sink, d, kn_column_pos(sc, s->split.column.node),
                         "the split column '%s' is named here; drop duplicates before splitting, or split by group",
                         sc->name);
            note_sample(x, d, sm->n);
        }
    }
    if (ents) {
        kn_overlap_result_get(ents, &o);
        if (o.shared_keys && o.train_rows && o.test_rows) {
            const kn_column *ec = x->entity->decl;
            kn_pos p = csv_pos(x, o.first_test_line, 0);
            kn_diag *d = kn_diag_push(x->sink, KN_R_ENTITY_IN_BOTH_SPLITS, &p, ec->name,
                                      "%zu values of the entity '%s' have rows in training and in test (%zu of %zu "
                                      "test rows); the first such test row is here",
                                      o.shared_keys, ec->name, o.test_rows_shared, o.test_rows);
            kn_diag_key(x->sink, d, "entity both %s", ec->name);
            kn_diag_note(x->sink, d, kn_column_pos(ec, s->prediction.entity.node),
                         "the entity is named here; assign the split by entity (split.method: group) so that each "
                         "entity's rows stay on one side");
            note_sample(x, d, sm->n);
        }
    }
}

static void kanon(dx *x, const sample *sm)
{
    if (!x->n_qi || sm->n == 0) {
        return;
    }
    long long k = x->ctx->rulebook->thresholds.min_group_size;
    if (k < 2) {
        return;
    }
    kn_groups *g = kn_groups_new(x->a);
    for (size_t i = 0; i < sm->n; i++) {
        const uint64_t *r = row_at(x, sm->order[i]);
        kn_groups_add(g, r[H_QI], r[H_LINE]);
    }
    kn_kanon ka;
    kn_groups_kanon(g, (size_t)k, &ka);
    if (ka.smallest >= (size_t)k) {
        return;
    }
    const char *names = "";
    for (size_t i = 0; i < x->n_cols; i++) {
        if (x->cols[i].decl->quasi_identifier == 1) {
            names = *names ? kn_printf(x->a, "%s, %s", names, x->cols[i].name) : x->cols[i].name;
        }
    }
    kn_pos p = csv_pos(x, ka.smallest_line, 0);
    kn_diag *d = kn_diag_push(x->sink, KN_R_SMALL_QUASI_IDENTIFIER_GROUPS, &p, "",
                              "the quasi-identifiers (%s) leave groups smaller than k = %lld: the smallest has %zu "
                              "row%s (its first row is here); %zu of %zu rows sit in %zu of %zu groups below k",
                              names, k, ka.smallest, ka.smallest == 1 ? "" : "s", ka.rows_below_k, ka.rows,
                              ka.groups_below_k, ka.groups);
    kn_diag_key(x->sink, d, "k-anonymity %s", names);
    for (size_t i = 0; i < x->n_cols; i++) {
        const kn_column *k2 = x->cols[i].decl;
        if (k2->quasi_identifier == 1) {
            note_decl(x, d, k2, k2->qi_node, " as a quasi-identifier");
        }
    }
    kn_diag_note(x->sink, d, NULL, "%s", privacy_note);
    note_sample(x, d, sm->n);
}

static void statistics(dx *x)
{
    sample sm = {0};
    prepare_sample(x, &sm);
    const char **labels = kn_alloc_array(x->a, sm.n + 1, sizeof *labels);
    if (sm.n_lab && (sm.binary || sm.categorical)) {
        for (size_t i = 0; i < x->n_cols; i++) {
            col *c = &x->cols[i];
            if (c->feature) {
                bool numeric = c->use == USE_NUMBER || (c->use == USE_EITHER && c->not_numbers == 0);
                if (numeric) {
                    numeric_feature(x, &sm, c, labels);
                } else {
                    categorical_feature(x, &sm, c, labels);
                }
                missingness(x, &sm, c, labels);
            } else if (c->segs) {
                segments(x, &sm, c, labels);
            }
        }
    }
    split_checks(x, &sm);
    kanon(x, &sm);
}

/* ---- entry point ---------------------------------------------------------- */

void kn_check_data(kn_ctx *c, const kn_schema *s, const char *csv_path, long long max_rows, uint64_t seed)
{
    dx x = {0};
    x.ctx = c;
    x.s = s;
    x.path = csv_path;
    x.a = c->arena;
    x.sink = c->sink;
    x.max_rows = max_rows > 0 ? max_rows : DEFAULT_MAX_ROWS;
    x.seed = seed;
    x.max_kept = (size_t)x.max_rows;

    kn_defer *fd = kn_arena_defer(x.a, close_file, NULL);
    FILE *f = fopen(csv_path, "rb");
    if (!f) {
        kn_pos p = csv_pos(&x, 0, 0);
        kn_diag_push(x.sink, KN_R_CSV_MALFORMED, &p, "", "cannot read the data file: %s", strerror(errno));
        kn_sink_mark_fatal(x.sink);
        return;
    }
    fd->ptr = f;

    kn_defer *md = kn_arena_defer(x.a, free_mctx, NULL);
    x.mctx = pcre2_match_context_create(NULL);
    if (!x.mctx) {
        kn_arena_oom(x.a);
    }
    md->ptr = x.mctx;
    kn_regex_limits lim;
    kn_regex_limits_default(&lim);
    pcre2_set_match_limit(x.mctx, lim.match);
    pcre2_set_depth_limit(x.mctx, lim.depth);
    pcre2_set_heap_limit(x.mctx, lim.heap_kib);

    kn_csv_reader *rd = kn_csv_open_file(x.a, f, NULL);
    kn_csv_row row;
    kn_csv_error err;
    kn_csv_status st = kn_csv_read_header(rd, &row, &err);
    if (st != KN_CSV_ROW) {
        report_csv_problem(&x, &err, true);
        return;
    }
    read_header(&x, &row);
    x.rows_defer = kn_arena_defer(x.a, free_ptr, NULL);
    kn_reservoir_init(&x.rs, x.max_kept, seed);
    while ((st = kn_csv_next_row(rd, &row, &err)) != KN_CSV_END) {
        if (st == KN_CSV_FAILED) {
            report_csv_problem(&x, &err, true);
            break;
        }
        if (st == KN_CSV_BAD_ROW) {
            report_csv_problem(&x, &err, false);
            continue;
        }
        read_row(&x, &row);
    }
    kn_csv_close(rd);
    report_bad_rows(&x);
    report_streamed(&x);
    statistics(&x);
}
