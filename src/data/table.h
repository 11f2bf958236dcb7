/* table.h - the data engine of `check --data` (SPEC §4.7): one pass over a
 * CSV file that reads every row into typed cells and keeps
 *   - per column, exact counts over every row: missing cells, values that
 *     do not parse as the declared type or do not match the format (with
 *     the first one), timestamps later than the moment column;
 *   - exact tallies over every row for the counting rules: feature rows
 *     and entities on each side of the split, quasi-identifier groups;
 *   - a uniform reservoir sample of at most max_rows rows (Vitter's
 *     Algorithm R, seeded), column by column in compact stores, for the
 *     statistics: a 4-byte float per numeric cell (8-byte double for
 *     timestamps and dates), a 4-byte dictionary code per categorical cell
 *     and identifier segment, one bit per feature for "missing", and the
 *     target's code (plus its number for a numeric target).
 * The rules that turn these into findings live in src/checks/data_*.c.
 *
 * Memory (bytes), with N = min(rows, max_rows):
 *   sample: N * (4 + 8 [numeric target] + 4 per number, category or
 *           boolean feature + 8 per timestamp/date feature + 8 per untyped
 *           feature + 4 per identifier segment + 1/8 per feature),
 *           in blocks of 16,384 rows (the first grows from 64 rows);
 *   dictionaries: at most 10,000 values and 1 MiB of text per column
 *           (50 values per identifier segment), about 60 bytes a value;
 *   exact tallies: 64 to 128 bytes per distinct feature row with a
 *           split side, per distinct entity with a side and per distinct
 *           quasi-identifier tuple (hash tables a quarter to half full, 32-byte
 *           slots), 1.5 times that while a table doubles;
 *   reader: see csv.h (1 MiB block plus about twice the longest record).
 * No allocation per row. */
#ifndef KN_DATA_TABLE_H
#define KN_DATA_TABLE_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "../schema/schema.h"
#include "../util/arena.h"
#include "../util/regex.h"
#include "csv.h"
#include "dict.h"
#include "stats.h"
#include "values.h"

enum {
    KN_TABLE_MAX_LEVELS = 10000,     /* distinct values kept per categorical column */
    KN_TABLE_MAX_TEXT = 1 << 20,     /* bytes of distinct values kept per column */
    KN_TABLE_SEGMENT_LEVELS = 50,    /* distinct values kept per identifier segment */
    KN_TABLE_MAX_RUNS = 6,           /* letter/digit runs followed per identifier */
    KN_TABLE_MAX_SEGMENTS = 16,      /* named groups followed per identifier format */
};

typedef enum kn_cell_use {
    KN_USE_NONE,
    KN_USE_NUMBER,   /* a number cell (type number, timestamp, date) */
    KN_USE_CATEGORY, /* a dictionary code (category, boolean, text) */
    KN_USE_EITHER,   /* no type: both, decided after the pass */
} kn_cell_use;

/* A finding counted over every row: how many, and the first. */
typedef struct kn_first {
    uint64_t count;
    uint64_t line;
    uint32_t col;  /* byte column of the field on its line, 0 if unknown */
    char *value;   /* the value, cut to 40 bytes */
    char *other;   /* the moment's value, for a late timestamp */
    char *key;     /* a database: the key of an offending row, or NULL */
} kn_first;

/* One segment of an identifier: a named group of its format, or the i-th
 * run of letters or digits. */
typedef struct kn_segment {
    const char *name; /* group name, or NULL for a run */
    uint32_t group;   /* capture group number (named groups) */
    unsigned kinds;   /* runs: 1 letters, 2 digits */
    kn_dict *d;
    size_t cell;
} kn_segment;

typedef struct kn_tcol {
    /* set by the caller before kn_table_layout */
    const char *name;
    size_t field;          /* index in the header */
    kn_value_type type;
    const void *format;    /* pcre2_code *, or NULL */
    bool feature;          /* role feature: cells and a missing bit in the sample */
    bool identifier;       /* role identifier: segments in the sample */
    bool timed;            /* compared with the moment column */

    /* filled by kn_table_layout and kn_table_read */
    kn_cell_use use;
    size_t num_cell, cat_cell, mbit;
    kn_dict *d;
    kn_first bad_type, bad_format, late;
    uint64_t missing;      /* missing cells over every row */
    uint64_t not_numbers;  /* untyped: non-missing cells that are not numbers */
    void *md;              /* pcre2_match_data * */
    bool format_off;       /* a match limit was hit: the format is no longer matched */
    kn_regex_budget format_budget; /* total matching time of the format (util/regex.h) */
    uint64_t limit_line;
    char *limit_problem;
    kn_segment *segs;
    size_t n_segs;
    bool runs;

    /* a database (src/checks/data_db.c) */
    bool wide;             /* more distinct values than the client reads: no
                              value was kept, statistics from the engine */
    bool has_auc;          /* auc is the engine's rank sum over every row */
    kn_auc auc;
} kn_tcol;

/* Records with one kind of problem: how many, and the first. */
typedef struct kn_csv_tally {
    uint64_t count;
    kn_csv_error first;
    char *message;
} kn_csv_tally;

typedef struct kn_store kn_store;

typedef struct kn_table {
    kn_arena *a;
    /* set by the caller */
    kn_tcol *cols;
    size_t n_cols;
    kn_tcol *target, *entity, *moment, *split;
    size_t *qi_fields;     /* header fields of the quasi-identifiers, in schema order */
    size_t n_qi;
    bool strict_moment;    /* a timestamp equal to the moment is late too */
    kn_missing missing;
    size_t max_rows;
    uint64_t seed;
    void *match_context;       /* pcre2_match_context * with the limits */

    /* filled by the pass */
    uint64_t rows;         /* good records */
    size_t kept;           /* rows in the sample */
    kn_dict *tdict;        /* target values of the sampled rows */
    bool target_numeric;   /* the target has type number: its value is kept too */
    size_t n_features;
    size_t *feature_fields;
    kn_overlap *shared_rows;    /* feature rows by side, every row with a side */
    kn_overlap *shared_ents;    /* entities by side, every row with a side and an entity */
    kn_groups *qi_groups;       /* quasi-identifier tuples, every row */
    kn_csv_tally bad[KN_CSV_TOO_MANY_COLUMNS + 1];
    bool failed;           /* a fatal reader problem ended the pass */
    kn_csv_error fatal;

    /* internal */
    size_t n_cells, n_mbits, target_cell, target_num_cell;
    kn_store *store;
    kn_reservoir rs;
    uint64_t cols_row;     /* the record whose field columns are in colpos (0: none) */
    uint32_t *colpos;
    size_t colpos_cap;

    /* a database's groups (kn_table_add_group): slot s stands for
     * weight[s] rows; NULL for a CSV file (one row a slot) */
    uint64_t *weight;
    size_t weight_cap;
} kn_table;

/* Lays out the sample's cells, dictionaries and segments once the caller
 * has set the columns and roles. */
void kn_table_layout(kn_table *t);

/* Reads every record of rd (whose header the caller has read).  Returns
 * false when a fatal reader problem stopped it (t->fatal). */
bool kn_table_read(kn_table *t, kn_csv_reader *rd);

/* A database's aggregated row instead of a CSV record: `rows` rows whose
 * fields are fields[0..n_fields) (a field whose ptr is NULL is SQL NULL,
 * missing whatever the rulebook says), counted like CSV records (no
 * line) and, with keep, stored in the next slot with that weight.  No
 * moment, split or quasi-identifier tally: the engine counts those. */
void kn_table_add_group(kn_table *t, const kn_csv_field *fields, size_t n_fields, uint64_t rows, bool keep);

/* The sample, by slot in [0, t->kept). */
double kn_table_num(const kn_table *t, size_t cell, size_t slot);     /* NaN: missing or invalid */
uint32_t kn_table_code(const kn_table *t, size_t cell, size_t slot);  /* 0: missing; KN_DICT_OTHER: beyond a cap */
bool kn_table_is_missing(const kn_table *t, size_t mbit, size_t slot);
uint32_t kn_table_target(const kn_table *t, size_t slot);             /* code in tdict, 0 missing */
double kn_table_target_num(const kn_table *t, size_t slot);           /* numeric target only */

/* 1 training, 2 test, 0 anything else (fold numbers are not compared). */
unsigned kn_split_side(const char *s, size_t len);

#endif
