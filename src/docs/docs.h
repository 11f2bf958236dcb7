/* docs.h - the documents knowable writes for reviewers: the timeline report
 * (each event and column placed relative to the moment).  Documents read the
 * schema model and the solved timeline; they never push diagnostics. */
#ifndef KN_DOCS_DOCS_H
#define KN_DOCS_DOCS_H

#include <stdio.h>

#include "../rulebook/rulebook.h"
#include "../schema/schema.h"
#include "../time/timeline.h"

/* `knowable timeline SCHEMA` as text: each event's range relative to the
 * moment, then each column's availability range and verdict, aligned in
 * columns for a terminal.  Names from the schema are escaped (no control
 * character is written raw).  t may be NULL (the moment did not resolve);
 * the report then says so.  Scratch memory comes from t's arena; nothing
 * needs freeing.  Write errors are left in out's error indicator. */
void kn_timeline_write_text(FILE *out, const kn_schema *s, const kn_timeline *t);

/* `knowable timeline SCHEMA --svg FILE`: the same placement as a picture
 * (SVG 1.1): a signed logarithmic time axis around the moment, events as
 * bars, then columns as bars grouped by verdict, each verdict with its own
 * colour, fill pattern and word.  Every text is escaped for XML; the output
 * depends only on s and t.  t may be NULL or contradictory: the picture then
 * says why nothing is placed.  Scratch memory comes from t's arena.  Write
 * errors are left in out's error indicator. */
void kn_timeline_write_svg(FILE *out, const kn_schema *s, const kn_timeline *t);

/* `knowable sources`: the register of the sources of n schemas (n >= 1),
 * each read under its own rulebook (the register requires the provenance
 * fields any of them requires), as Markdown or JSON.  Scratch memory in a. */
void kn_sources_write(FILE *out, kn_arena *a, kn_schema *const *schemas, const kn_rulebook *const *rulebooks,
                      size_t n, bool json);

/* `knowable init`: a draft schema from the CSV file at csv (the first
 * max_rows rows, 0: the default), naming identifiers with id_names (a
 * kn_regex *, may be NULL).  Returns false after pushing csv-malformed
 * (and marking the sink fatal) when the file cannot be read as CSV. */
bool kn_init_write(FILE *out, kn_sink *sink, kn_arena *a, const char *csv, long long max_rows, void *id_names);

#endif
