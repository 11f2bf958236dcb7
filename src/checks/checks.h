/* checks.h - the analyses.  Each family of rules has one file; each reads
 * the schema model (and the timeline) and pushes diagnostics into the sink
 * held by the context.  Nothing here prints. */
#ifndef KN_CHECKS_CHECKS_H
#define KN_CHECKS_CHECKS_H

#include <stdio.h>

#include "../report/diag.h"
#include "../rulebook/rulebook.h"
#include "../schema/schema.h"
#include "../time/timeline.h"
#include "../util/arena.h"

typedef struct kn_ctx {
    kn_arena *arena;
    kn_sink *sink;
    const kn_rulebook *rulebook;
    const char *today; /* YYYY-MM-DD */
} kn_ctx;

/* availability.c: after-moment, maybe-after-moment, unordered-event,
 * window-overruns, as-of-after-moment, known-before-inputs,
 * inherits-late-input, built-from-target. */
void kn_check_availability(kn_ctx *c, const kn_schema *s, const kn_timeline *t);

/* maturity.c: reads-unsettled-values. */
void kn_check_maturity(kn_ctx *c, const kn_schema *s, const kn_timeline *t);

/* provenance.c: external-without-provenance, join-latest-value,
 * no-point-in-time-history, missing-source, missing-known, unused-source. */
void kn_check_provenance(kn_ctx *c, const kn_schema *s);

/* identity.c: identifier-structured, identifier-in-features,
 * proxy-of-excluded, suspicious-name, reversible-anonymization. */
void kn_check_identity(kn_ctx *c, const kn_schema *s, const kn_timeline *t);

/* preparation.c: fit-before-split, resample-before-split,
 * target-encoding-in-sample, random-split-temporal, split-gap-short,
 * entity-straddles-split. */
void kn_check_preparation(kn_ctx *c, const kn_schema *s, const kn_timeline *t);

/* waivers.c: declares the schema's waivers to the sink, whose finishing
 * pass applies them and reports waiver-without-reason, waiver-expired and
 * waiver-unused. */
void kn_check_waivers(kn_ctx *c, const kn_schema *s);

/* data.c: `check --data` - the schema against one CSV file (SPEC §4.7):
 * column-not-in-schema, column-not-in-data, value-mismatch, csv-malformed,
 * lone-feature-separates, missingness-predicts, identifier-segment-predicts,
 * timestamp-after-moment, rows-shared-across-split, entity-in-both-splits,
 * small-quasi-identifier-groups.  Reads csv_path once; the statistics run
 * on a reservoir sample of at most max_rows rows (0: 1,000,000) drawn with
 * seed.  An unreadable file is reported and marks the sink fatal. */
void kn_check_data(kn_ctx *c, const kn_schema *s, const char *csv_path, long long max_rows, uint64_t seed);

/* data_db.c: the same rules on a table of a database (SPEC §5.1), data
 * the "odbc:..." connection, with table (a name, schema.table allowed) or
 * query_sql (the rows of a query, read from the file query_label).  The engine scans the rows and sends
 * back aggregates only (src/data/sql.c); the statistics are finished by
 * the code of the CSV path (src/data/stats.c, data_stats.c).  The
 * counted rules count every row; the statistics read a sample of about
 * max_rows rows (0: 1,000,000, as for a file) drawn by the engine from
 * seed when the table has more.  max_groups (0: KN_SQL_MAX_GROUPS) bounds
 * the rows the client reads per query.
 * Findings point at "odbc:<connection, password masked>/<table>".  A
 * connection or SQL error goes to err with the driver's message and marks
 * the sink fatal (exit 2). */
void kn_check_database(kn_ctx *c, const kn_schema *s, const char *data, const char *table, const char *query_label,
                       const char *query_sql, long long max_rows, long long max_groups, uint64_t seed, FILE *err);

#endif
