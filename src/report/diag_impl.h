/* diag_impl.h - the inside of the sink, for src/report/ (the renderers,
 * the baseline writer) and white-box unit tests; nothing else includes it. */
#ifndef KN_REPORT_DIAG_IMPL_H
#define KN_REPORT_DIAG_IMPL_H

#include "diag.h"

typedef struct kn_note {
    kn_pos pos;
    const char *message;
} kn_note;

struct kn_diag {
    kn_rule rule;
    kn_severity severity; /* effective, after the rulebook and the cap */
    kn_pos pos;
    char *subject; /* column, event or source name; may be "" */
    char *message;
    char *key; /* line-independent identity for the fingerprint; defaults to message */
    kn_note *notes;
    size_t n_notes, cap_notes;
    kn_severity cap; /* when set, the most severe level this finding may take (a
                        "maybe" finding of an error rule is a warning); 0: no cap */
    bool waived;
    const char *waiver_reason; /* the reason of the waiver that hid it (sink memory) */
    bool baselined;
    bool has_range;               /* a timing finding: when the value is available */
    int64_t range_lo, range_hi;   /* microseconds relative to the moment (+-KN_TIME_INF unbounded) */
    uint64_t fingerprint;
    size_t unit; /* kn_sink_begin_unit count when pushed (0: before any) */
    size_t seq;  /* push order, the last sort key */
};

/* The diagnostics: in push order before kn_sink_finish, in report order
 * after it. */
kn_diag **kn_sink_diags(const kn_sink *s, size_t *n);

#endif
