/* yaml_sink.c - the YAML reader's problems as diagnostics. */
#include "yaml_sink.h"

static void problem(void *ctx, kn_yaml_problem what, const kn_pos *at, const char *subject, const char *message,
                    const kn_pos *note_at, const char *note)
{
    kn_sink *s = ctx;
    kn_rule r = what == KN_YAML_DUPLICATE_KEY ? KN_R_DUPLICATE_KEY : KN_R_YAML_SYNTAX;
    kn_diag *d = kn_diag_push(s, r, at, subject, "%s", message);
    if (note) {
        kn_diag_note(s, d, note_at, "%s", note);
    }
    if (what == KN_YAML_SYNTAX) {
        kn_sink_mark_fatal(s);
    }
}

kn_yaml_reporter kn_sink_yaml_reporter(kn_sink *s)
{
    kn_yaml_reporter r = {problem, s};
    return r;
}
