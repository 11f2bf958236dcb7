/* view.h - a read-only copy of the shown diagnostics of a finished sink,
 * for readers outside src/report/ that are not renderers of a file (the
 * language server).  The sink itself stays closed. */
#ifndef KN_REPORT_VIEW_H
#define KN_REPORT_VIEW_H

#include <stdbool.h>
#include <stddef.h>

#include "diag.h"

typedef struct kn_view_note {
    kn_pos pos;
    const char *message;
} kn_view_note;

typedef struct kn_view {
    kn_rule rule;
    kn_severity severity;
    kn_pos pos;
    const char *subject; /* may be "" */
    const char *message;
    const kn_view_note *notes;
    size_t n_notes;
    /* Filled by kn_sink_view_all only (zero in kn_sink_view): */
    bool waived;               /* hidden by a waiver in force */
    const char *waiver_reason; /* that waiver's reason */
    bool some_cases;           /* a timing finding that holds only in some
                                  cases (maybe-after-moment, or capped) */
    size_t unit;               /* the schema it belongs to: the run's
                                  (n+1)th schema judged under a rulebook */
} kn_view;

/* The diagnostics a report shows (not waived, not baselined), in report
 * order, copied into arena a (the strings are borrowed from the sink).
 * Empty before kn_sink_finish. */
const kn_view *kn_sink_view(const kn_sink *s, kn_arena *a, size_t *n);

/* Every finding a rulebook does not turn off, waived ones included (with
 * the waiver's reason), baselined ones left out, for the documents that
 * show what the check found (the timeline, the register of sources). */
const kn_view *kn_sink_view_all(const kn_sink *s, kn_arena *a, size_t *n);

#endif
