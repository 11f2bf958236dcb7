/* table.c - the one pass of `check --data` (see table.h): each record's
 * fields are checked against their column's type and format, counted, and,
 * when the reservoir keeps the row, written into the sample's column
 * stores.  Hands on counts and the sample; the findings are made in
 * src/checks/data_*.c. */
#include "table.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define PCRE2_CODE_UNIT_WIDTH 8
#include <pcre2.h>

#include "hash.h"

enum { EXAMPLE_MAX = 40 };

/* ---- the sample's stores -------------------------------------------------- */

/* Blocks of rows are added as the sample grows and never moved; the first
 * block grows from FIRST_ROWS rows by doubling, so a file of a few rows
 * with many columns costs little. */
#define BLOCK_BITS 14
#define BLOCK_ROWS ((size_t)1 << BLOCK_BITS)
#define FIRST_ROWS ((size_t)64)

typedef struct cells {
    unsigned char **blocks;
    size_t width; /* bytes per cell; 0 for a bit column */
} cells;

struct kn_store {
    kn_arena *a;
    cells *c;     /* n_cells value columns, then n_bits bit columns */
    size_t n;
    size_t n_blocks, cap_blocks;
    size_t rows_cap; /* rows the blocks hold */
};

static size_t block_bytes(const cells *c, size_t rows)
{
    return c->width ? rows * c->width : (rows + 7) / 8;
}

static void store_free(void *p)
{
    kn_store *st = p;
    for (size_t i = 0; i < st->n; i++) {
        if (st->c[i].blocks) {
            for (size_t b = 0; b < st->cap_blocks; b++) {
                free(st->c[i].blocks[b]);
            }
        }
    }
}

/* Makes room for slot (the reservoir fills slots in order before it
 * replaces any). */
static void store_reserve(kn_store *st, size_t slot)
{
    while (slot >= st->rows_cap) {
        if (st->n_blocks == 0 || (st->n_blocks == 1 && st->rows_cap < BLOCK_ROWS)) {
            /* the first block, doubled */
            size_t rows = st->rows_cap ? st->rows_cap * 2 : FIRST_ROWS;
            if (st->cap_blocks == 0) {
                for (size_t i = 0; i < st->n; i++) {
                    st->c[i].blocks = kn_alloc_array(st->a, 8, sizeof *st->c[i].blocks);
                }
                st->cap_blocks = 8;
            }
            for (size_t i = 0; i < st->n; i++) {
                cells *c = &st->c[i];
                c->blocks[0] = kn_xrealloc(st->a, c->blocks[0], block_bytes(c, rows));
                if (!c->width) {
                    size_t had = st->rows_cap ? block_bytes(c, st->rows_cap) : 0;
                    memset(c->blocks[0] + had, 0, block_bytes(c, rows) - had);
                }
            }
            st->n_blocks = 1;
            st->rows_cap = rows;
            continue;
        }
        if (st->n_blocks == st->cap_blocks) {
            size_t cap = st->cap_blocks * 2;
            for (size_t i = 0; i < st->n; i++) {
                unsigned char **b = kn_alloc_array(st->a, cap, sizeof *b);
                memcpy(b, st->c[i].blocks, st->n_blocks * sizeof *b);
                st->c[i].blocks = b;
            }
            st->cap_blocks = cap;
        }
        for (size_t i = 0; i < st->n; i++) {
            cells *c = &st->c[i];
            c->blocks[st->n_blocks] = kn_xrealloc(st->a, NULL, block_bytes(c, BLOCK_ROWS));
            if (!c->width) {
                memset(c->blocks[st->n_blocks], 0, block_bytes(c, BLOCK_ROWS));
            }
        }
        st->n_blocks++;
        st->rows_cap += BLOCK_ROWS;
    }
}

static unsigned char *at(const kn_store *st, size_t cell, size_t slot)
{
    const cells *c = &st->c[cell];
    return c->blocks[slot >> BLOCK_BITS] + (slot & (BLOCK_ROWS - 1)) * c->width;
}

static void put_u32(kn_store *st, size_t cell, size_t slot, uint32_t v)
{
    memcpy(at(st, cell, slot), &v, 4);
}

static void put_num(kn_store *st, size_t cell, size_t slot, double v)
{
    if (st->c[cell].width == 8) {
        memcpy(at(st, cell, slot), &v, 8);
    } else {
        float f = (float)v;
        memcpy(at(st, cell, slot), &f, 4);
    }
}

static void put_bit(kn_store *st, size_t cell, size_t slot, bool v)
{
    unsigned char *byte = st->c[cell].blocks[slot >> BLOCK_BITS] + ((slot & (BLOCK_ROWS - 1)) >> 3);
    unsigned char mask = (unsigned char)(1u << (slot & 7));
    *byte = v ? (unsigned char)(*byte | mask) : (unsigned char)(*byte & ~mask);
}

double kn_table_num(const kn_table *t, size_t cell, size_t slot)
{
    const kn_store *st = t->store;
    if (st->c[cell].width == 8) {
        double d;
        memcpy(&d, at(st, cell, slot), 8);
        return d;
    }
    float f;
    memcpy(&f, at(st, cell, slot), 4);
    return f;
}

uint32_t kn_table_code(const kn_table *t, size_t cell, size_t slot)
{
    uint32_t v;
    memcpy(&v, at(t->store, cell, slot), 4);
    return v;
}

bool kn_table_is_missing(const kn_table *t, size_t mbit, size_t slot)
{
    const kn_store *st = t->store;
    size_t cell = t->n_cells + mbit;
    return st->c[cell].blocks[slot >> BLOCK_BITS][(slot & (BLOCK_ROWS - 1)) >> 3] >> (slot & 7) & 1;
}

uint32_t kn_table_target(const kn_table *t, size_t slot)
{
    return kn_table_code(t, t->target_cell, slot);
}

double kn_table_target_num(const kn_table *t, size_t slot)
{
    return kn_table_num(t, t->target_num_cell, slot);
}

/* ---- layout ------------------------------------------------------------- */

static void free_md(void *p)
{
    pcre2_match_data_free(p);
}

static void setup_segments(kn_table *t, kn_tcol *c)
{
    const pcre2_code *code = c->format;
    uint32_t count = 0;
    if (code) {
        pcre2_pattern_info(code, PCRE2_INFO_NAMECOUNT, &count);
    }
    if (count > KN_TABLE_MAX_SEGMENTS) {
        count = KN_TABLE_MAX_SEGMENTS;
    }
    if (count > 0) {
        uint32_t entry = 0;
        PCRE2_SPTR table = NULL;
        pcre2_pattern_info(code, PCRE2_INFO_NAMEENTRYSIZE, &entry);
        pcre2_pattern_info(code, PCRE2_INFO_NAMETABLE, &table);
        c->segs = kn_alloc_array(t->a, count, sizeof *c->segs);
        for (uint32_t i = 0; i < count; i++) {
            PCRE2_SPTR e = table + (size_t)i * entry;
            kn_segment *g = &c->segs[c->n_segs++];
            g->group = (uint32_t)(e[0] << 8 | e[1]);
            g->name = kn_strdup(t->a, (const char *)e + 2);
        }
    } else {
        c->runs = true;
        c->segs = kn_alloc_array(t->a, KN_TABLE_MAX_RUNS, sizeof *c->segs);
        c->n_segs = KN_TABLE_MAX_RUNS;
    }
    for (size_t i = 0; i < c->n_segs; i++) {
        c->segs[i].d = kn_dict_new(t->a, KN_TABLE_SEGMENT_LEVELS, KN_TABLE_MAX_TEXT);
        c->segs[i].cell = t->n_cells++;
    }
}

void kn_table_layout(kn_table *t)
{
    size_t *width = kn_alloc_array(t->a, 2 * t->n_cols + KN_TABLE_MAX_SEGMENTS * t->n_cols + 3, sizeof *width);
    t->feature_fields = kn_alloc_array(t->a, t->n_cols + 1, sizeof *t->feature_fields);
    if (t->target) {
        t->target_cell = t->n_cells;
        width[t->n_cells++] = 4;
        t->tdict = kn_dict_new(t->a, KN_TABLE_MAX_LEVELS, KN_TABLE_MAX_TEXT);
        t->target_numeric = t->target->type == KN_TYPE_NUMBER;
        if (t->target_numeric) {
            t->target_num_cell = t->n_cells;
            width[t->n_cells++] = 8;
        }
    }
    for (size_t i = 0; i < t->n_cols; i++) {
        kn_tcol *c = &t->cols[i];
        if (c->format) {
            kn_defer *d = kn_arena_defer(t->a, free_md, NULL);
            c->md = pcre2_match_data_create_from_pattern(c->format, NULL);
            if (!c->md) {
                kn_arena_oom(t->a);
            }
            d->ptr = c->md;
        }
        if (c->feature) {
            t->feature_fields[t->n_features++] = c->field;
            c->mbit = t->n_mbits++;
            switch (c->type) {
            case KN_TYPE_NUMBER:
                c->use = KN_USE_NUMBER;
                c->num_cell = t->n_cells;
                width[t->n_cells++] = 4;
                break;
            case KN_TYPE_TIMESTAMP:
            case KN_TYPE_DATE:
                /* microseconds since 1970 need a double's 53 bits */
                c->use = KN_USE_NUMBER;
                c->num_cell = t->n_cells;
                width[t->n_cells++] = 8;
                break;
            case KN_TYPE_UNSET:
                c->use = KN_USE_EITHER;
                c->num_cell = t->n_cells;
                width[t->n_cells++] = 4;
                c->cat_cell = t->n_cells;
                width[t->n_cells++] = 4;
                c->d = kn_dict_new(t->a, KN_TABLE_MAX_LEVELS, KN_TABLE_MAX_TEXT);
                break;
            default:
                c->use = KN_USE_CATEGORY;
                c->cat_cell = t->n_cells;
                width[t->n_cells++] = 4;
                c->d = kn_dict_new(t->a, KN_TABLE_MAX_LEVELS, KN_TABLE_MAX_TEXT);
                break;
            }
        } else if (c->identifier) {
            size_t first = t->n_cells;
            setup_segments(t, c);
            for (size_t j = first; j < t->n_cells; j++) {
                width[j] = 4;
            }
        }
    }
    kn_store *st = kn_alloc(t->a, sizeof *st);
    st->a = t->a;
    st->n = t->n_cells + t->n_mbits;
    st->c = kn_alloc_array(t->a, st->n + 1, sizeof *st->c);
    for (size_t i = 0; i < t->n_cells; i++) {
        st->c[i].width = width[i];
    }
    kn_arena_defer(t->a, store_free, st);
    t->store = st;
    if (t->split && t->n_features) {
        t->shared_rows = kn_overlap_new(t->a);
    }
    if (t->split && t->entity) {
        t->shared_ents = kn_overlap_new(t->a);
    }
    if (t->n_qi) {
        t->qi_groups = kn_groups_new(t->a);
    }
    kn_reservoir_init(&t->rs, t->max_rows, t->seed);
}

/* ---- one row -------------------------------------------------------------- */

/* Plain decimals of up to 15 digits ([+-]digits[.digits]) converted
 * exactly: the digits form an integer below 2^53 and 10^k (k <= 15) is
 * exact, so one IEEE division gives the correctly rounded value, the same
 * double strtod gives (Clinger's fast path).  Anything else goes to
 * kn_value_number. */
static kn_value_status parse_number(const char *s, size_t len, double *out)
{
    static const double pow10[] = {1e0, 1e1, 1e2,  1e3,  1e4,  1e5,  1e6,  1e7,
                                   1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15};
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

/* A value for a message: at most EXAMPLE_MAX bytes, cut on a UTF-8
 * boundary (the renderers escape control characters). */
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
 * line (0 when an earlier field spans lines), computed for all fields of
 * the record at once the first time a finding needs one: O(fields) per
 * record with findings, however many findings it has. */
static uint32_t field_col(kn_table *t, const kn_csv_row *row, size_t i)
{
    if (t->cols_row != row->number + 1) {
        if (row->n_fields > t->colpos_cap) {
            t->colpos = kn_alloc_array(t->a, row->n_fields, sizeof *t->colpos);
            t->colpos_cap = row->n_fields;
        }
        uint64_t c = 1;
        bool spans = false;
        for (size_t j = 0; j < row->n_fields; j++) {
            const kn_csv_field *f = &row->fields[j];
            t->colpos[j] = spans || c > UINT32_MAX ? 0 : (uint32_t)c;
            if (f->quoted) {
                if (memchr(f->ptr, '\n', f->len) || memchr(f->ptr, '\r', f->len)) {
                    spans = true;
                }
                size_t quotes = 0;
                for (const char *p = f->ptr; (p = memchr(p, '"', (size_t)(f->ptr + f->len - p))); p++) {
                    quotes++;
                }
                c += 2 + quotes;
            }
            c += f->len + 1;
        }
        t->cols_row = row->number + 1;
    }
    return i < row->n_fields ? t->colpos[i] : 0;
}

static void first(kn_table *t, kn_first *f, const kn_csv_row *row, size_t field, uint64_t rows)
{
    uint64_t had = f->count;
    f->count += rows;
    if (had == 0) {
        f->line = row->line;
        f->col = row->line ? field_col(t, row, field) : 0;
        f->value = example(t->a, row->fields[field].ptr, row->fields[field].len);
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
static void store_runs(kn_table *t, kn_tcol *c, size_t slot, const char *s, size_t len)
{
    size_t i = 0, n = 0;
    while (i < len && n < KN_TABLE_MAX_RUNS) {
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
        kn_segment *g = &c->segs[n++];
        g->kinds |= letter ? 1u : 2u;
        /* a segment with too many values is not tested: stop looking */
        put_u32(t->store, g->cell, slot, kn_dict_full(g->d) ? KN_DICT_OTHER : kn_dict_id(g->d, s + i, j - i));
        i = j;
    }
}

/* Checks one field (every row) and stores it when the row is kept
 * (slot != KN_RESERVOIR_SKIP). */
static void check_value(kn_table *t, kn_tcol *c, const kn_csv_row *row, size_t slot, int64_t moment_us,
                        bool have_moment, uint64_t rows)
{
    const kn_csv_field *f = &row->fields[c->field];
    kn_value_status st = KN_VALUE_OK;
    double num = NAN;
    const char *text = f->ptr;
    size_t text_len = f->len;
    if (!f->ptr || kn_missing_test(&t->missing, f->ptr, f->len)) { /* NULL: a database's NULL */
        st = KN_VALUE_MISSING;
        c->missing += rows;
    } else {
        switch (c->type) {
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
            st = c->type == KN_TYPE_DATE ? kn_value_date(f->ptr, f->len, &us)
                                         : kn_value_timestamp(f->ptr, f->len, &us, NULL);
            if (st == KN_VALUE_OK) {
                num = (double)us;
                if (c->timed && have_moment && (us > moment_us || (t->strict_moment && us == moment_us))) {
                    if (c->late.count == 0) {
                        const kn_csv_field *mf = &row->fields[t->moment->field];
                        c->late.other = example(t->a, mf->ptr, mf->len);
                    }
                    first(t, &c->late, row, c->field, rows);
                }
            }
            break;
        }
        default:
            if (c->use == KN_USE_EITHER && parse_number(f->ptr, f->len, &num) != KN_VALUE_OK) {
                c->not_numbers++;
                num = NAN;
            }
            break;
        }
        /* The set decided this cell is not missing: a parser's own marker
         * ("NA" for a number when the rulebook drops it) is a bad value. */
        if (st != KN_VALUE_OK) {
            st = KN_VALUE_INVALID;
            first(t, &c->bad_type, row, c->field, rows);
        }
    }

    bool matched = false;
    if (c->md && !c->format_off && st != KN_VALUE_MISSING) {
        uint64_t start = kn_regex_clock();
        int rc = pcre2_match(c->format, (PCRE2_SPTR)f->ptr, f->len, 0, 0, c->md, t->match_context);
        if (kn_regex_budget_charge(&c->format_budget, start, f->len)) {
            c->format_off = true;
            c->limit_line = row->line;
            c->limit_problem = kn_strdup(t->a, kn_regex_budget_words());
        } else if (rc >= 0) {
            matched = true;
        } else if (is_limit(rc)) {
            c->format_off = true;
            c->limit_line = row->line;
            PCRE2_UCHAR msg[160];
            pcre2_get_error_message(rc, msg, sizeof msg);
            c->limit_problem = kn_strdup(t->a, (const char *)msg);
        } else {
            first(t, &c->bad_format, row, c->field, rows);
        }
    }

    if (slot == KN_RESERVOIR_SKIP) {
        return;
    }
    if (c->segs) {
        for (size_t i = 0; i < c->n_segs; i++) {
            put_u32(t->store, c->segs[i].cell, slot, 0);
        }
        if (st != KN_VALUE_MISSING) {
            if (c->runs) {
                store_runs(t, c, slot, f->ptr, f->len);
            } else if (matched) {
                PCRE2_SIZE *ov = pcre2_get_ovector_pointer(c->md);
                uint32_t n_ov = pcre2_get_ovector_count(c->md);
                for (size_t i = 0; i < c->n_segs; i++) {
                    kn_segment *g = &c->segs[i];
                    if (g->group < n_ov && ov[2 * g->group] != PCRE2_UNSET && !kn_dict_full(g->d)) {
                        put_u32(t->store, g->cell, slot,
                                kn_dict_id(g->d, f->ptr + ov[2 * g->group], ov[2 * g->group + 1] - ov[2 * g->group]));
                    }
                }
            }
        }
    }
    if (!c->feature) {
        return;
    }
    put_bit(t->store, t->n_cells + c->mbit, slot, st == KN_VALUE_MISSING);
    if (c->use == KN_USE_NUMBER || c->use == KN_USE_EITHER) {
        put_num(t->store, c->num_cell, slot, st == KN_VALUE_OK ? num : NAN);
    }
    if (c->use == KN_USE_CATEGORY || c->use == KN_USE_EITHER) {
        uint32_t id = 0;
        if (st == KN_VALUE_OK) {
            id = kn_dict_full(c->d) ? KN_DICT_OTHER : kn_dict_id(c->d, text, text_len);
        }
        put_u32(t->store, c->cat_cell, slot, id);
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

unsigned kn_split_side(const char *s, size_t len)
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

static void store_target(kn_table *t, const kn_csv_row *row, size_t slot);

static void read_row(kn_table *t, const kn_csv_row *row)
{
    t->rows++;
    size_t slot = kn_reservoir_offer(&t->rs);
    if (slot != KN_RESERVOIR_SKIP) {
        store_reserve(t->store, slot);
        if (slot >= t->kept) {
            t->kept = slot + 1;
        }
    }
    int64_t moment_us = 0;
    bool have_moment = false;
    if (t->moment) {
        const kn_csv_field *f = &row->fields[t->moment->field];
        have_moment = !kn_missing_test(&t->missing, f->ptr, f->len) &&
                      kn_value_timestamp(f->ptr, f->len, &moment_us, NULL) == KN_VALUE_OK;
    }
    for (size_t i = 0; i < t->n_cols; i++) {
        check_value(t, &t->cols[i], row, slot, moment_us, have_moment, 1);
    }

    /* The counting rules, over every row. */
    unsigned side = 0;
    if (t->split) {
        const kn_csv_field *f = &row->fields[t->split->field];
        side = kn_split_side(f->ptr, f->len);
    }
    if (side && t->shared_rows) {
        uint64_t h = KN_HASH_START;
        for (size_t i = 0; i < t->n_features; i++) {
            const kn_csv_field *f = &row->fields[t->feature_fields[i]];
            h = kn_hash_field(h, f->ptr, f->len);
        }
        kn_overlap_add(t->shared_rows, kn_hash_finish(h), side == 2, row->line);
    }
    if (side && t->shared_ents) {
        const kn_csv_field *f = &row->fields[t->entity->field];
        if (!kn_missing_test(&t->missing, f->ptr, f->len)) {
            kn_overlap_add(t->shared_ents, kn_hash_finish(kn_hash_field(KN_HASH_START, f->ptr, f->len)), side == 2,
                           row->line);
        }
    }
    if (t->qi_groups) {
        uint64_t h = KN_HASH_START;
        for (size_t i = 0; i < t->n_qi; i++) {
            const kn_csv_field *f = &row->fields[t->qi_fields[i]];
            h = kn_hash_field(h, f->ptr, f->len);
        }
        kn_groups_add(t->qi_groups, kn_hash_finish(h), row->line);
    }

    if (slot != KN_RESERVOIR_SKIP && t->target) {
        store_target(t, row, slot);
    }
}

void kn_table_add_group(kn_table *t, const kn_csv_field *fields, size_t n_fields, uint64_t rows, bool keep)
{
    kn_csv_row row = {fields, n_fields, n_fields, 0, 0, 0, 0};
    t->rows += rows;
    size_t slot = KN_RESERVOIR_SKIP;
    if (keep) {
        slot = t->kept++;
        store_reserve(t->store, slot);
        if (slot >= t->weight_cap) {
            size_t cap = t->weight_cap ? 2 * t->weight_cap : 64;
            uint64_t *w = kn_alloc_array(t->a, cap, sizeof *w);
            if (t->weight_cap) {
                memcpy(w, t->weight, t->weight_cap * sizeof *w);
            }
            t->weight = w;
            t->weight_cap = cap;
        }
        t->weight[slot] = rows;
    }
    for (size_t i = 0; i < t->n_cols; i++) {
        check_value(t, &t->cols[i], &row, slot, 0, false, rows);
    }
    if (slot != KN_RESERVOIR_SKIP && t->target) {
        store_target(t, &row, slot);
    }
}

/* The target of a kept row: its dictionary code (booleans as true/false)
 * and, for a numeric target, its number. */
static void store_target(kn_table *t, const kn_csv_row *row, size_t slot)
{
    const kn_csv_field *f = &row->fields[t->target->field];
    const char *y = f->ptr;
    size_t yl = f->len;
    double ynum = NAN;
    bool b;
    if (!y || kn_missing_test(&t->missing, y, yl)) {
        y = NULL;
    } else if (t->target->type == KN_TYPE_BOOLEAN && kn_value_boolean(y, yl, &b) == KN_VALUE_OK) {
        y = b ? "true" : "false";
        yl = strlen(y);
    } else if (t->target_numeric && parse_number(y, yl, &ynum) != KN_VALUE_OK) {
        ynum = NAN;
    }
    put_u32(t->store, t->target_cell, slot, y ? kn_dict_id(t->tdict, y, yl) : 0);
    if (t->target_numeric) {
        put_num(t->store, t->target_num_cell, slot, ynum);
    }
}

/* ---- the pass ------------------------------------------------------------ */

static void tally(kn_table *t, const kn_csv_error *e)
{
    kn_csv_tally *b = &t->bad[e->problem];
    if (b->count++ == 0) {
        b->first = *e;
        b->message = kn_csv_error_message(t->a, e);
    }
}

bool kn_table_read(kn_table *t, kn_csv_reader *rd)
{
    kn_csv_row row;
    kn_csv_error err;
    kn_csv_status st;
    while ((st = kn_csv_next_row(rd, &row, &err)) != KN_CSV_END) {
        if (st == KN_CSV_FAILED) {
            t->failed = true;
            t->fatal = err;
            return false;
        }
        if (st == KN_CSV_BAD_ROW) {
            tally(t, &err);
            continue;
        }
        read_row(t, &row);
    }
    return true;
}
