/* view.h - a read-only copy of the shown diagnostics of a finished sink,
 * for readers outside src/report/ that are not renderers of a file (the
 * language server).  The sink itself stays closed. */
#ifndef KN_REPORT_VIEW_H
#define KN_REPORT_VIEW_H

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
} kn_view;

/* The diagnostics a report shows (not waived, not baselined), in report
 * order, copied into arena a (the strings are borrowed from the sink).
 * Empty before kn_sink_finish. */
const kn_view *kn_sink_view(const kn_sink *s, kn_arena *a, size_t *n);

#endif
