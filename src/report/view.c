/* view.c - the shown diagnostics as plain structures (view.h). */
#include "view.h"

#include "diag_impl.h"

const kn_view *kn_sink_view(const kn_sink *s, kn_arena *a, size_t *n)
{
    size_t all = 0;
    kn_diag **d = kn_sink_finished(s) ? kn_sink_diags(s, &all) : NULL;
    kn_view *v = kn_alloc_array(a, all ? all : 1, sizeof *v);
    size_t k = 0;
    for (size_t i = 0; i < all; i++) {
        if (d[i]->waived || d[i]->baselined || d[i]->severity == KN_SEV_OFF) {
            continue;
        }
        kn_view_note *notes = kn_alloc_array(a, d[i]->n_notes ? d[i]->n_notes : 1, sizeof *notes);
        for (size_t j = 0; j < d[i]->n_notes; j++) {
            notes[j] = (kn_view_note){d[i]->notes[j].pos, d[i]->notes[j].message};
        }
        v[k++] = (kn_view){d[i]->rule,    d[i]->severity, d[i]->pos,    d[i]->subject ? d[i]->subject : "",
                           d[i]->message, notes,          d[i]->n_notes};
    }
    *n = k;
    return v;
}
