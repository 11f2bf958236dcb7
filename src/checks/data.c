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
#include <sys/stat.h>

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
    MAX_SEGMENTS = 16,          /* named groups followed per identifier format */
    N_BINS = 10,                /* quantile bins of a numeric feature against a categorical target */
    HEAD_CELLS = 5,             /* line, row hash, entity hash, QI hash, target|side|flags */
    EXAMPLE_MAX = 40,           /* bytes of a value quoted in a message */
    TABLE_MAX = 1 << 22,        /* contingency cells counted in an array */
};

#define ID_OTHER UINT32_MAX /* a value first seen after its dictionary filled up */

static const char privacy_note[] =
    "this is a screening aid, not a privacy review: what protection the data needs is decided by applicable law "
    "and your organisation's privacy practice";

/* ---- hashing and numbers on the hot path -------------------------------- */

/* The splitmix64 finaliser: every output bit depends on every input bit. */
static uint64_t mix64(uint64_t h)
{
    h ^= h >> 30;
    h *= 0xbf58476d1ce4e5b9ull;
    h ^= h >> 27;
    h *= 0x94d049bb133111ebull;
    h ^= h >> 31;
    return h;
}

/* One multiply-fold step: the 128-bit product of a and b, high half
 * xor low half (the mixing step of wyhash, Wang Yi, 2019). */
static uint64_t mum(uint64_t a, uint64_t b)
{
    __extension__ typedef unsigned __int128 u128;
    u128 r = (u128)a * b;
    return (uint64_t)(r >> 64) ^ (uint64_t)r;
}

static uint64_t load32(const char *s)
{
    uint32_t w;
    memcpy(&w, s, 4);
    return w;
}

/* The bytes of a text of at most 8 bytes as one word, without a
 * variable-length copy: two overlapping 4-byte loads, or the first,
 * middle and last byte below 4 bytes (as wyhash reads short keys).  Given
 * the length, the word determines the text. */
static uint64_t short_word(const char *s, size_t len)
{
    if (len >= 4) {
        return load32(s) | load32(s + len - 4) << 32;
    }
    if (len > 0) {
        return (uint64_t)(unsigned char)s[0] | (uint64_t)(unsigned char)s[len / 2] << 8 |
               (uint64_t)(unsigned char)s[len - 1] << 16;
    }
    return 0;
}

/* A 64-bit hash of s[0..len) chained onto h, eight bytes per multiply (the
 * byte-wise FNV-1a of kn_stats_hash cost a tenth of the time budget on
 * wide files).  The length goes in too, so ("ab", "c") and ("a", "bc")
 * differ when fields are chained.  Callers finish with mix64. */
static uint64_t hash_chain(uint64_t h, const char *s, size_t len)
{
    h = mum(h ^ 0xa0761d6478bd642full, len ^ 0xe7037ed1a0b428dbull);
    while (len >= 8) {
        uint64_t w;
        memcpy(&w, s, 8);
        h = mum(h ^ w, 0x8ebc6af09c88c6e3ull);
        s += 8;
        len -= 8;
    }
    if (len) {
        h = mum(h ^ short_word(s, len), 0x589965cc75374cc3ull);
    }
    return h;
}

/* Plain decimals of up to 15 digits ([+-]digits[.digits]) converted
 * exactly: the digits form an integer below 2^53 and 10^k (k <= 15) is
 * exact, so one IEEE division gives the correctly rounded value, the same
 * double strtod gives (Clinger's fast path).  Anything else, or a text
 * with more digits, goes to kn_value_number. */
static kn_value_status parse_number(const char *s, size_t len, double *out)
{
    static const double pow10[] = {1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15};
    size_t i = 0;
    bool neg = false;
    if (len && (s[0] == '-' || s[0] == '+')) {
        neg = s[0] == '-';
        i = 1;
    }
    uint64_t m = 0;
    size_t digits = 0, frac = 0, int_digits = 0;
    bool dot = false;
    for (; i < len; i++) {
        unsigned char ch = (unsigned char)s[i];
        if (ch >= '0' && ch <= '9') {
            m = m * 10 + (ch - '0');
            digits++;
            if (dot) {
                frac++;
            } else {
                int_digits++;
            }
        } else if (ch == '.' && !dot) {
            dot = true;
        } else {
            break;
        }
    }
    if (i == len && int_digits > 0 && digits <= 15 && (!dot || frac > 0)) {
        double v = (double)m / pow10[frac];
        *out = neg ? -v : v;
        return KN_VALUE_OK;
    }
    return kn_value_number(s, len, out);
}

/* ---- a capped dictionary: value text -> id (1-based; 0 is "missing") ---- */

typedef struct dict {
    kn_arena *a;
    uint32_t *slots; /* 0: empty, else id */
    uint64_t *hashes;
    size_t cap;      /* power of two */
    const char **text;
    size_t *len;
    uint64_t *word;  /* short_word of a value of up to 8 bytes, else its first 8 bytes */
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
    d->word = kn_alloc_array(a, d->text_cap, sizeof *d->word);
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
    uint64_t w, h;
    if (len <= 8) {
        w = short_word(s, len);
    } else {
        memcpy(&w, s, 8);
    }
    h = len <= 8 ? mix64(w ^ ((uint64_t)len << 58) ^ 0x9e3779b97f4a7c15ull) : mix64(hash_chain(0, s, len));
    size_t mask = d->cap - 1, i = h & mask;
    for (; d->slots[i]; i = (i + 1) & mask) {
        uint32_t id = d->slots[i];
        if (d->hashes[i] == h && d->len[id] == len && d->word[id] == w &&
            (len <= 8 || memcmp(d->text[id] + 8, s + 8, len - 8) == 0)) {
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
        uint64_t *words = kn_alloc_array(d->a, cap, sizeof *words);
        memcpy(text, d->text, d->n * sizeof *text);
        memcpy(lens, d->len, d->n * sizeof *lens);
        memcpy(words, d->word, d->n * sizeof *words);
        d->text = text;
        d->len = lens;
        d->word = words;
        d->text_cap = cap;
    }
    uint32_t id = (uint32_t)d->n++;
    d->text[id] = kn_strndup(d->a, s, len);
    d->len[id] = len;
    d->word[id] = w;
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
    size_t n_cells; /* head cells included */
    size_t n_mbits;
    struct store *store; /* the sample, one array per cell */
    size_t rows_cap, max_kept;
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

/* The sample, column by column (the statistics read one column at a time,
 * so a column's values sit together in memory): cell[i][slot] for the head
 * cells and the features' cells, miss[b][slot] for the missing flags.  The
 * arrays are heap memory, grown together and freed by one deferred
 * cleanup. */
typedef struct store {
    uint64_t ***cell; /* cell[i][block][row in block] */
    size_t n_cells;
    uint8_t ***miss;
    size_t n_miss;
    size_t n_blocks, cap_blocks;
} store;

/* Rows per block: blocks are added as the sample grows and never moved, so
 * growing costs no copy and no transient second copy of the sample. */
#define BLOCK_BITS 14
#define BLOCK_ROWS ((size_t)1 << BLOCK_BITS)
#define CELL(x, i, slot) ((x)->store->cell[i][(slot) >> BLOCK_BITS][(slot) & (BLOCK_ROWS - 1)])
#define MISS(x, b, slot) ((x)->store->miss[b][(slot) >> BLOCK_BITS][(slot) & (BLOCK_ROWS - 1)])

static void free_store(void *p)
{
    store *st = p;
    /* Up to cap_blocks: a block half-allocated when memory ran out is freed
     * too (block pointers start NULL). */
    for (size_t b = 0; b < st->cap_blocks; b++) {
        for (size_t i = 0; i < st->n_cells; i++) {
            free(st->cell[i][b]);
        }
        for (size_t i = 0; i < st->n_miss; i++) {
            free(st->miss[i][b]);
        }
    }
}

static void store_new(dx *x)
{
    store *st = kn_alloc(x->a, sizeof *st);
    st->cell = kn_alloc_array(x->a, x->n_cells, sizeof *st->cell);
    st->miss = kn_alloc_array(x->a, x->n_mbits + 1, sizeof *st->miss);
    st->n_cells = x->n_cells;
    st->n_miss = x->n_mbits;
    kn_arena_defer(x->a, free_store, st);
    x->store = st;
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

/* Makes room for sample slot `slot`, adding a block to every array when
 * the slot starts one (the reservoir fills slots in order before it
 * replaces any).  The slot is not cleared: read_row writes every cell of a
 * kept row. */
static void reserve(dx *x, size_t slot)
{
    store *st = x->store;
    while (slot >= x->rows_cap) {
        if (st->n_blocks == st->cap_blocks) {
            size_t cap = st->cap_blocks ? st->cap_blocks * 2 : 8;
            for (size_t i = 0; i < st->n_cells; i++) {
                uint64_t **b = kn_alloc_array(x->a, cap, sizeof *b);
                if (st->n_blocks) {
                    memcpy(b, st->cell[i], st->n_blocks * sizeof *b);
                }
                st->cell[i] = b;
            }
            for (size_t i = 0; i < st->n_miss; i++) {
                uint8_t **b = kn_alloc_array(x->a, cap, sizeof *b);
                if (st->n_blocks) {
                    memcpy(b, st->miss[i], st->n_blocks * sizeof *b);
                }
                st->miss[i] = b;
            }
            st->cap_blocks = cap;
        }
        size_t b = st->n_blocks;
        for (size_t i = 0; i < st->n_cells; i++) {
            st->cell[i][b] = kn_xrealloc(x->a, NULL, BLOCK_ROWS * sizeof ***st->cell);
        }
        for (size_t i = 0; i < st->n_miss; i++) {
            st->miss[i][b] = kn_xrealloc(x->a, NULL, BLOCK_ROWS);
        }
        st->n_blocks++;
        x->rows_cap += BLOCK_ROWS;
    }
}

static double cell_d(const dx *x, size_t i, size_t slot)
{
    double d;
    memcpy(&d, &CELL(x, i, slot), sizeof d);
    return d;
}

static void set_cell_d(dx *x, size_t i, size_t slot, double d)
{
    memcpy(&CELL(x, i, slot), &d, sizeof d);
}

/* Head cell 4: target id (bits 0-31), split side (32-39: 0 none, 1 train,
 * 2 test), entity present (40), QI tuple present (41). */
#define H_LINE 0
#define H_ROW 1
#define H_ENTITY 2
#define H_QI 3
#define H_META 4

static uint32_t meta_target(const dx *x, size_t slot)
{
    return (uint32_t)(CELL(x, H_META, slot) & UINT32_MAX);
}

static unsigned meta_side(const dx *x, size_t slot)
{
    return (unsigned)((CELL(x, H_META, slot) >> 32) & 0xff);
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
    if (count > MAX_SEGMENTS) {
        count = MAX_SEGMENTS;
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
    store_new(x);
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
static void store_runs(dx *x, col *c, size_t slot, const char *s, size_t len)
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
        if (slot != KN_RESERVOIR_SKIP) {
            /* A segment with too many values is not tested: stop looking. */
            CELL(x, g->cell, slot) = g->d->full ? ID_OTHER : dict_id(g->d, s + i, j - i);
        }
        i = j;
    }
}

/* Checks one field over every row and stores it when the row is kept
 * (slot != KN_RESERVOIR_SKIP). */
static void check_value(dx *x, col *c, const kn_csv_row *row, size_t slot, int64_t moment_us, bool have_moment)
{
    const kn_column *k = c->decl;
    const kn_csv_field *f = &row->fields[c->field];
    kn_value_status st = KN_VALUE_OK;
    double num = NAN;
    const char *text = f->ptr;
    size_t text_len = f->len;
    switch (k->type) {
    case KN_TYPE_NUMBER:
        st = parse_number(f->ptr, f->len, &num);
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
            if (parse_number(f->ptr, f->len, &num) != KN_VALUE_OK) {
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

    if (c->segs && slot != KN_RESERVOIR_SKIP) {
        for (size_t i = 0; i < c->n_segs; i++) {
            CELL(x, c->segs[i].cell, slot) = 0;
        }
    }
    if (c->segs && st != KN_VALUE_MISSING) {
        if (c->runs) {
            store_runs(x, c, slot, f->ptr, f->len);
        } else if (matched && slot != KN_RESERVOIR_SKIP) {
            PCRE2_SIZE *ov = pcre2_get_ovector_pointer(c->md);
            uint32_t n_ov = pcre2_get_ovector_count(c->md);
            for (size_t i = 0; i < c->n_segs; i++) {
                segment *g = &c->segs[i];
                if (g->group < n_ov && ov[2 * g->group] != PCRE2_UNSET && !g->d->full) {
                    CELL(x, g->cell, slot) = dict_id(g->d, f->ptr + ov[2 * g->group], ov[2 * g->group + 1] - ov[2 * g->group]);
                }
            }
        }
    }

    if (slot == KN_RESERVOIR_SKIP || !c->feature) {
        return;
    }
    MISS(x, c->mbit, slot) = st == KN_VALUE_MISSING;
    if (c->use == USE_NUMBER || c->use == USE_EITHER) {
        set_cell_d(x, c->num_cell, slot, st == KN_VALUE_OK ? num : NAN);
    }
    if (c->use == USE_CATEGORY || c->use == USE_EITHER) {
        CELL(x, c->cat_cell, slot) = st == KN_VALUE_MISSING ? 0 : c->d->full ? ID_OTHER : dict_id(c->d, text, text_len);
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
    if (slot != KN_RESERVOIR_SKIP) {
        reserve(x, slot);
        CELL(x, H_LINE, slot) = row->line;
        CELL(x, H_ROW, slot) = 0;
        CELL(x, H_ENTITY, slot) = 0;
        CELL(x, H_QI, slot) = 0;
    }
    int64_t moment_us = 0;
    bool have_moment = false;
    if (x->moment) {
        const kn_csv_field *f = &row->fields[x->moment->field];
        have_moment = kn_value_timestamp(f->ptr, f->len, &moment_us, NULL) == KN_VALUE_OK;
    }
    for (size_t i = 0; i < x->n_cols; i++) {
        check_value(x, &x->cols[i], row, slot, moment_us, have_moment);
    }
    if (slot == KN_RESERVOIR_SKIP) {
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
            CELL(x, H_ENTITY, slot) = mix64(hash_chain(0, f->ptr, f->len));
        }
    }
    if (x->n_qi) {
        uint64_t h = 0;
        for (size_t i = 0; i < x->n_qi; i++) {
            const kn_csv_field *f = &row->fields[x->qi_fields[i]];
            h = hash_chain(h, f->ptr, f->len);
        }
        CELL(x, H_QI, slot) = mix64(h);
        meta |= (uint64_t)1 << 41;
    }
    if (x->n_features) {
        uint64_t h = 0;
        for (size_t i = 0; i < x->n_features; i++) {
            const kn_csv_field *f = &row->fields[x->feature_fields[i]];
            h = hash_chain(h, f->ptr, f->len);
        }
        CELL(x, H_ROW, slot) = mix64(h);
    }
    CELL(x, H_META, slot) = meta;
}

/* ---- findings over every row ------------------------------------------- */

static void report_csv_problem(dx *x, const kn_csv_error *e, bool fatal)
{
    kn_pos p = csv_pos(x, e->line, e->column > UINT32_MAX ? 0 : (uint32_t)e->column);
    char *msg = kn_csv_error_message(x->a, e);
    if (fatal) {
        kn_diag *d = e->problem == KN_CSV_NO_HEADER
                         ? kn_diag_push(x->sink, KN_R_CSV_MALFORMED, &p, "", "%s", msg)
                         : kn_diag_push(x->sink, KN_R_CSV_MALFORMED, &p, "", "%s; the rest of the file is not read", msg);
        kn_diag_key(x->sink, d, "fatal %d", (int)e->problem);
        if (e->problem == KN_CSV_READ_FAILED) {
            kn_sink_mark_fatal(x->sink);
        }
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
    uint32_t *yid;
    double *score;     /* scratch, one per labelled row */
    uint32_t *xid;     /* scratch */
    uint64_t *pairs;   /* scratch */
    uint32_t *table;   /* scratch contingency table */
    size_t table_cap;
} sample;

static dx *sort_ctx;

static int by_line(const void *pa, const void *pb)
{
    uint64_t a = CELL(sort_ctx, H_LINE, *(const size_t *)pa);
    uint64_t b = CELL(sort_ctx, H_LINE, *(const size_t *)pb);
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
    sm->yid = kn_alloc_array(x->a, sm->n + 1, sizeof *sm->yid);
    sm->score = kn_alloc_array(x->a, sm->n + 1, sizeof *sm->score);
    sm->xid = kn_alloc_array(x->a, sm->n + 1, sizeof *sm->xid);
    sm->pairs = kn_alloc_array(x->a, sm->n + 1, sizeof *sm->pairs);
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
        uint32_t y = meta_target(x, sm->order[i]);
        if (y == 0 || y == ID_OTHER) {
            continue;
        }
        sm->pos[sm->n_lab] = y == sm->positive;
        sm->yid[sm->n_lab] = y;
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

static int by_u64(const void *pa, const void *pb)
{
    uint64_t a = *(const uint64_t *)pa, b = *(const uint64_t *)pb;
    return (a > b) - (a < b);
}

/* Adds one cell of the contingency table to I(Y; X). */
static double mi_term(double nxy, double n, double nx, double ny)
{
    return nxy / n * (log(nxy) + log(n) - log(nx) - log(ny));
}

/* The uncertainty coefficient U(target | X) = I(target; X) / H(target)
 * (Theil's U) over the labelled rows, X given per row as an id below nx:
 * the same formula as kn_contingency_uncertainty (natural logarithms, I
 * clamped to [0, H]), counted on ids rather than strings.  Small tables are
 * counted in an array, large ones by sorting the (x, y) pairs. */
static bool uncertainty(dx *x, sample *sm, const uint32_t *xid, size_t nx, kn_uncertainty *u)
{
    size_t n = sm->n_lab, ny = x->tdict->n;
    memset(u, 0, sizeof *u);
    if (n == 0) {
        return false;
    }
    size_t *cx = kn_alloc_array(x->a, nx, sizeof *cx);
    size_t *cy = kn_alloc_array(x->a, ny, sizeof *cy);
    for (size_t i = 0; i < n; i++) {
        cx[xid[i]]++;
        cy[sm->yid[i]]++;
    }
    double dn = (double)n, h_y = 0, mi = 0;
    for (size_t y = 0; y < ny; y++) {
        if (cy[y]) {
            double p = (double)cy[y] / dn;
            h_y -= p * log(p);
            u->y_levels++;
        }
    }
    for (size_t i = 0; i < nx; i++) {
        u->x_levels += cx[i] != 0;
    }
    if (nx <= TABLE_MAX / ny) {
        size_t cells = nx * ny;
        if (sm->table_cap < cells) {
            sm->table = kn_alloc_array(x->a, cells, sizeof *sm->table);
            sm->table_cap = cells;
        } else {
            memset(sm->table, 0, cells * sizeof *sm->table);
        }
        for (size_t i = 0; i < n; i++) {
            sm->table[(size_t)xid[i] * ny + sm->yid[i]]++;
        }
        for (size_t i = 0; i < cells; i++) {
            if (sm->table[i]) {
                mi += mi_term((double)sm->table[i], dn, (double)cx[i / ny], (double)cy[i % ny]);
            }
        }
    } else {
        for (size_t i = 0; i < n; i++) {
            sm->pairs[i] = (uint64_t)xid[i] << 32 | sm->yid[i];
        }
        qsort(sm->pairs, n, sizeof *sm->pairs, by_u64);
        for (size_t i = 0; i < n;) {
            size_t j = i;
            while (j < n && sm->pairs[j] == sm->pairs[i]) {
                j++;
            }
            mi += mi_term((double)(j - i), dn, (double)cx[sm->pairs[i] >> 32], (double)cy[sm->pairs[i] & UINT32_MAX]);
            i = j;
        }
    }
    u->n = n;
    kn_uncertainty_set(u, h_y, mi);
    return true;
}

static void numeric_feature(dx *x, sample *sm, col *c)
{
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    double *score = sm->score;
    size_t have = 0;
    for (size_t i = 0; i < sm->n_lab; i++) {
        score[i] = cell_d(x, c->num_cell, sm->labelled[i]);
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
    for (size_t i = 0; i < sm->n_lab; i++) {
        if (isnan(score[i])) {
            sm->xid[i] = 0;
            continue;
        }
        size_t b = 0;
        while (b < N_BINS - 1 && score[i] >= cut[b]) {
            b++;
        }
        sm->xid[i] = (uint32_t)b + 1;
    }
    kn_uncertainty u;
    if (!uncertainty(x, sm, sm->xid, N_BINS + 1, &u) || u.u < th->uncertainty) {
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

static void categorical_feature(dx *x, sample *sm, col *c)
{
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    if (c->d->full) {
        return;
    }
    for (size_t i = 0; i < sm->n_lab; i++) {
        uint32_t id = (uint32_t)CELL(x, c->cat_cell, sm->labelled[i]);
        sm->xid[i] = id;
    }
    kn_uncertainty u;
    if (!uncertainty(x, sm, sm->xid, c->d->n, &u) || u.x_levels < 2 || u.n < ROWS_PER_LEVEL * u.x_levels ||
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

static void missingness(dx *x, sample *sm, col *c)
{
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    size_t miss = 0, miss_pos = 0;
    for (size_t i = 0; i < sm->n_lab; i++) {
        bool m = MISS(x, c->mbit, sm->labelled[i]);
        miss += m;
        miss_pos += m && sm->pos[i];
        sm->xid[i] = m;
    }
    if (miss == 0 || miss == sm->n_lab) {
        return;
    }
    kn_pos p = header_pos(x, c);
    kn_diag *d;
    if (sm->binary) {
        /* The Mann-Whitney AUC of a 0/1 score in closed form: with p and q
         * the shares of positives and of negatives that miss the value,
         * P(pos > neg) + P(tie) / 2 = p (1 - q) + (p q + (1 - p)(1 - q)) / 2
         * = (1 + p - q) / 2. */
        size_t n_pos = 0;
        for (size_t i = 0; i < sm->n_lab; i++) {
            n_pos += sm->pos[i];
        }
        double share_pos = (double)miss_pos / (double)n_pos;
        double share_neg = (double)(miss - miss_pos) / (double)(sm->n_lab - n_pos);
        double auc = (1.0 + share_pos - share_neg) / 2.0;
        double separation = auc > 0.5 ? auc : 1.0 - auc;
        if (separation < th->missingness_auc) {
            return;
        }
        d = kn_diag_push(x->sink, KN_R_MISSINGNESS_PREDICTS, &p, c->name,
                         "whether '%s' is missing predicts %s: AUC of the missing indicator %.3f (threshold %g); "
                         "%zu of %zu rows miss it, %zu of them with %s = %s",
                         c->name, target_name(x), separation, th->missingness_auc, miss, sm->n_lab, miss_pos,
                         target_name(x), positive_text(x, sm));
    } else {
        kn_uncertainty u;
        if (!uncertainty(x, sm, sm->xid, 2, &u) || u.u < th->uncertainty) {
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

static void segments(dx *x, sample *sm, col *c)
{
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    for (size_t gi = 0; gi < c->n_segs; gi++) {
        segment *g = &c->segs[gi];
        size_t levels = dict_levels(g->d);
        if (g->d->full || levels < 2) {
            continue;
        }
        for (size_t i = 0; i < sm->n_lab; i++) {
            uint32_t id = (uint32_t)CELL(x, g->cell, sm->labelled[i]);
            sm->xid[i] = id == ID_OTHER ? 0 : id;
        }
        kn_uncertainty u;
        if (!uncertainty(x, sm, sm->xid, g->d->n, &u) || u.n < ROWS_PER_LEVEL * u.x_levels || u.u < th->segment_uncertainty) {
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
        size_t slot = sm->order[i];
        unsigned side = meta_side(x, slot);
        if (side == 0) {
            continue;
        }
        if (rows) {
            kn_overlap_add(rows, CELL(x, H_ROW, slot), side == 2, CELL(x, H_LINE, slot));
        }
        if (ents && (CELL(x, H_META, slot) >> 40 & 1)) {
            kn_overlap_add(ents, CELL(x, H_ENTITY, slot), side == 2, CELL(x, H_LINE, slot));
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
        size_t slot = sm->order[i];
        kn_groups_add(g, CELL(x, H_QI, slot), CELL(x, H_LINE, slot));
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
    if (sm.n_lab && (sm.binary || sm.categorical)) {
        for (size_t i = 0; i < x->n_cols; i++) {
            col *c = &x->cols[i];
            if (c->feature) {
                bool numeric = c->use == USE_NUMBER || (c->use == USE_EITHER && c->not_numbers == 0);
                if (numeric) {
                    numeric_feature(x, &sm, c);
                } else {
                    categorical_feature(x, &sm, c);
                }
                missingness(x, &sm, c);
            } else if (c->segs) {
                segments(x, &sm, c);
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
    struct stat sb;
    if (fstat(fileno(f), &sb) == 0 && S_ISDIR(sb.st_mode)) {
        kn_pos p = csv_pos(&x, 0, 0);
        kn_diag_push(x.sink, KN_R_CSV_MALFORMED, &p, "", "cannot read the data file: it is a folder");
        kn_sink_mark_fatal(x.sink);
        return;
    }

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
    if (x.seen > x.max_kept) {
        kn_sink_set_sample(x.sink, (unsigned long long)x.max_kept, (unsigned long long)x.seen);
    }
}
