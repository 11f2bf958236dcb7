/* data_rules.h - shared by the data rules (src/checks/data*.c): the run's
 * context and the helpers that place a finding in the CSV file.  The
 * reading itself is src/data/table.c. */
#ifndef KN_CHECKS_DATA_RULES_H
#define KN_CHECKS_DATA_RULES_H

#include "../data/table.h"
#include "checks.h"

/* Rows the statistics read at most (--max-rows), in a file and in a
 * database alike: beyond that, a sample of as many. */
#define KN_DATA_MAX_ROWS 1000000LL

typedef struct kn_dx {
    kn_ctx *ctx;
    const kn_schema *s;
    const char *path;
    kn_arena *a;
    kn_sink *sink;
    kn_table t;
    const kn_column **decl; /* per table column */
    uint32_t *hcol;         /* per table column: byte column of its name in the header */
    long long max_rows;
    uint64_t seed;
    /* a database (data_db.c): each column is its own table of groups */
    bool database;          /* findings point at the table (line 0) */
    const char *key_name;   /* the column that names a row (kn_first.key), or NULL */
    bool target_said;       /* a statistic skipped for the target is recorded once */
    uint64_t sampled_of;    /* the table's rows, when this table is a sample of them */
    uint64_t sample_rows;   /* and the sample's rows (0: this table's rows) */
} kn_dx;

/* A position in the CSV file.  A line beyond what a position holds
 * (2^32 - 1) gives line 0; kn_dx_line_note then says which line. */
kn_pos kn_dx_pos(const kn_dx *x, uint64_t line, uint32_t column);
void kn_dx_line_note(kn_dx *x, kn_diag *d, uint64_t line);

/* Matches a header (a CSV file's first record, or a database table's
 * column names with line 0) with the schema: column-not-in-schema and
 * column-not-in-data, then the table's columns and roles, laid out. */
void kn_dx_read_header(kn_dx *x, const kn_csv_row *h);

/* A database: a note naming a row with the finding's value by its key
 * (the least key among such rows), when the table has a key. */
void kn_dx_key_note(kn_dx *x, kn_diag *d, const char *key);

/* The header field of table column i (line 1). */
kn_pos kn_dx_header_pos(const kn_dx *x, size_t i);

/* A note at the column's declaration in the schema. */
void kn_dx_note_decl(kn_dx *x, kn_diag *d, const kn_column *c, const kn_node *node, const char *what);

/* "computed on a uniform random sample of ..." when a sample was used. */
void kn_dx_note_sample(kn_dx *x, kn_diag *d);

/* data_values.c: csv-malformed (records left out), value-mismatch,
 * bad-pattern (a format that hit a match limit on the data) and
 * timestamp-after-moment, all counted over every row. */
void kn_data_csv_problem(kn_dx *x, const kn_csv_error *e);
void kn_data_values(kn_dx *x);

/* data_stats.c: lone-feature-separates, missingness-predicts,
 * identifier-segment-predicts, on the sample; a statistic the data cannot
 * support is skipped and recorded in the sink (kn_sink_data_skip). */
void kn_data_statistics(kn_dx *x);

/* data_split.c: rows-shared-across-split, entity-in-both-splits and
 * small-quasi-identifier-groups, exact over every row. */
void kn_data_split(kn_dx *x);

#endif
