/* render.h - renderers of a finished sink: text (GNU format), JSON, SARIF. */
#ifndef KN_REPORT_RENDER_H
#define KN_REPORT_RENDER_H

#include <stdbool.h>
#include <stdio.h>

#include "diag.h"

typedef struct kn_render_opts {
    bool color;
    bool quiet;
    bool show_waived;
    size_t n_schemas;
} kn_render_opts;

/* FILE:LINE:COL: SEVERITY: MESSAGE [RULE], notes, then the summary line.
 * Everything that comes from an input is escaped for the terminal. */
void kn_render_text(FILE *out, const kn_sink *s, const kn_render_opts *o);

/* The summary line alone ("2 errors, 3 warnings, 1 note (1 waived) in 1 schema"). */
void kn_render_summary(FILE *out, const kn_sink *s, const kn_render_opts *o);

#endif
