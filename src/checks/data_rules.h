/* data_rules.h - shared by the data rules (src/checks/data*.c): the run's
 * context and the helpers that place a finding in the CSV file.  The
 * reading itself is src/data/table.c. */
#ifndef KN_CHECKS_DATA_RULES_H
#define KN_CHECKS_DATA_RULES_H

#include "../data/table.h"
#include "checks.h"

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
} kn_dx;

/* A position in the CSV file.  A line beyond what a position holds
 * (2^32 - 1) gives line 0; kn_dx_line_note then says which line. */
kn_pos kn_dx_pos(const kn_dx *x, uint64_t line, uint32_t column);
void kn_dx_line_note(kn_dx *x, kn_diag *d, uint64_t line);

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
