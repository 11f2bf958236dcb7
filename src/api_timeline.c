/* api_timeline.c - `knowable timeline SCHEMA`: loads the rulebook (for
 * strict_moment) and the schema, solves the timeline and writes the text
 * report (src/docs/timeline_text.c).  Problems with the schema itself are
 * written to err in the usual diagnostic format; `knowable check` is the
 * place to read the findings. */
#include "entry.h"
#include <knowable/knowable.h>

#include <setjmp.h>

#include "docs/docs.h"
#include "report/diag.h"
#include "report/render.h"
#include "rulebook/rulebook.h"
#include "schema/schema.h"
#include "time/timeline.h"
#include "util/arena.h"

static kn_rulebook *rulebook(kn_arena *a, kn_sink *sink, const kn_options *o, const char *schema)
{
    return kn_rulebook_for(a, sink, o->rulebooks, o->n_rulebooks, schema, o->root);
}

kn_status kn_timeline_report(const kn_options *o, const char *schema, FILE *out, FILE *svg,
                             FILE *err)
{
    KN_ENTRY_ARENA(a, err);

    kn_status status = KN_EXIT_OK;
    kn_sink *sink = kn_sink_new(a);
    kn_render_opts ro = {o->color, o->quiet, false, 1};
    kn_rulebook *rb = rulebook(a, sink, o, schema);
    kn_schema *s = NULL;
    if (!kn_sink_fatal(sink)) {
        kn_rulebook_apply(rb, sink);
        kn_load_options lo = {0};
        lo.root = o->root;
        kn_yaml_limits_default(&lo.limits);
        lo.rulebook = rb;
        s = kn_schema_load(a, sink, schema, &lo);
    }
    if (!s || !s->shape_ok || kn_sink_fatal(sink)) {
        kn_sink_finish(sink);
        kn_render_text(err, sink, &ro);
        fputs("knowable: the schema has errors (above); fix them before placing its timeline\n",
              err);
        status = KN_EXIT_FAILED;
    } else {
        /* Contradictions go to the report itself, not to diagnostics. */
        kn_timeline *t = kn_timeline_solve(a, sink, s, rb->strict_moment);
        kn_timeline_write_text(out, s, t);
        if (svg) {
            kn_timeline_write_svg(svg, s, t);
            if (fflush(svg) != 0 || ferror(svg)) {
                fputs("knowable: error writing the SVG picture\n", err);
                status = KN_EXIT_FAILED;
            }
        }
    }
    kn_arena_free(a);
    return status;
}
