/* view.c - the diagnostics of a finished sink as plain structures (view.h). */
#include "view.h"

#include "diag_impl.h"

static const kn_view *view(const kn_sink *s, kn_arena *a, size_t *n, bool all_kinds)
{
    size_t all = 0;
    kn_diag **d = kn_sink_finished(s) ? kn_sink_diags(s, &all) : NULL;
    kn_view *v = kn_alloc_array(a, all ? all : 1, sizeof *v);
    size_t k = 0;
    for (size_t i = 0; i < all; i++) {
        if ((d[i]->waived && !all_kinds) || d[i]->baselined || d[i]->severity == KN_SEV_OFF) {
            continue;
        }
        kn_view_note *notes = kn_alloc_array(a, d[i]->n_notes ? d[i]->n_notes : 1, sizeof *notes);
        for (size_t j = 0; j < d[i]->n_notes; j++) {
            notes[j] = (kn_view_note){d[i]->notes[j].pos, d[i]->notes[j].message};
        }
        v[k] = (kn_view){.rule = d[i]->rule,
                         .severity = d[i]->severity,
                         .pos = d[i]->pos,
                         .subject = d[i]->subject ? d[i]->subject : "",
                         .message = d[i]->message,
                         .notes = notes,
                         .n_notes = d[i]->n_notes};
        if (all_kinds) {
            v[k].waived = d[i]->waived;
            v[k].waiver_reason = d[i]->waiver_reason;
            v[k].some_cases = d[i]->rule == KN_R_MAYBE_AFTER_MOMENT || d[i]->cap != 0;
            v[k].unit = d[i]->unit;
        }
        k++;
    }
    *n = k;
    return v;
}

const kn_view *kn_sink_view(const kn_sink *s, kn_arena *a, size_t *n)
{
    return view(s, a, n, false);
}

const kn_view *kn_sink_view_all(const kn_sink *s, kn_arena *a, size_t *n)
{
    return view(s, a, n, true);
}
