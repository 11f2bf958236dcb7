/* docs.h - the documents knowable writes for reviewers: the timeline report
 * (each event and column placed relative to the moment).  Documents read the
 * schema model and the solved timeline; they never push diagnostics. */
#ifndef KN_DOCS_DOCS_H
#define KN_DOCS_DOCS_H

#include <stdio.h>

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

#endif
