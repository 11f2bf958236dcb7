/* render.h - renderers of a finished sink: text (GNU format), JSON, SARIF. */
#ifndef KN_REPORT_RENDER_H
#define KN_REPORT_RENDER_H

#include <stdbool.h>
#include <stdio.h>

#include "diag_impl.h"

typedef struct kn_render_opts {
    bool color;
    bool quiet;
    bool show_waived;
    size_t n_schemas;
    const char *rulebooks; /* the rulebooks in force, when not only the
                              built-in one: "rulebook a.yaml" (it judged every
                              schema) or "rulebooks a.yaml for 2, the built-in
                              for 1"; NULL or "" */
} kn_render_opts;

/* FILE:LINE:COL: SEVERITY: MESSAGE [RULE], notes, then the summary line.
 * Everything that comes from an input is escaped for the terminal. */
void kn_render_text(FILE *out, const kn_sink *s, const kn_render_opts *o);

/* {"version": 1, "diagnostics": [...], "summary": {...}} (SPEC §7), keys in
 * a fixed order, two-space indentation, every string escaped by
 * kn_fput_json.  Baselined findings are left out; waived ones only with
 * o->show_waived (then with "waived": true).  o->quiet does not shorten
 * machine output. */
void kn_render_json(FILE *out, const kn_sink *s, const kn_render_opts *o);

/* One SARIF 2.1.0 log with one run: tool.driver lists every rule of the
 * rule table, results carry the shown diagnostics (the same selection as
 * kn_render_json; waived ones shown get a suppression). */
void kn_render_sarif(FILE *out, const kn_sink *s, const kn_render_opts *o);

/* Reads the baseline file at path (before the analysis, so a bad file
 * stops the run at once) and hands its fingerprints to the sink, which
 * applies them when it finishes.  Returns false and writes why to err when
 * the file cannot be read or is not a knowable baseline. */
bool kn_baseline_read(kn_sink *s, const char *path, FILE *err);

/* Writes every diagnostic that is not waived (baselined or not) to path as a
 * knowable baseline: JSON with each finding's fingerprint, and its rule,
 * file, subject and message for people reading it.  The file is written
 * through kn_output_open, so it replaces path atomically and refuses the
 * n_inputs paths in inputs.  Returns false (and writes why) on failure. */
bool kn_baseline_write(const kn_sink *s, const char *path, const char *const *inputs, size_t n_inputs,
                       FILE *err);

/* The summary line alone ("2 errors, 3 warnings, 1 note (1 waived) in 1 schema"). */
void kn_render_summary(FILE *out, const kn_sink *s, const kn_render_opts *o);

#endif
