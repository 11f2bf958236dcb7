/* fuzz_rulebook.c - libFuzzer harness for the rulebook loader: the input is
 * written as a rulebook file and read over the built-in rulebook, the
 * result applied to a sink and the sink rendered.  Any input must load or
 * be refused with diagnostics, without a crash, a leak or undefined
 * behaviour. */
#include <setjmp.h>
#include <stdint.h>
#include <stdlib.h>

#include "../../src/report/diag_impl.h"
#include "../../src/report/render.h"
#include "../../src/rulebook/rulebook.h"
#include "../../src/util/arena.h"

#include "fuzz_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *path = fuzz_write_temp(".knowable-rules.yaml", data, size);
    kn_arena *a = kn_arena_new();
    if (!a) {
        return 0;
    }
    jmp_buf oom;
    if (setjmp(oom)) {
        kn_arena_free(a);
        return 0;
    }
    kn_arena_set_oom(a, &oom);
    kn_sink *sink = kn_sink_new(a);
    kn_rulebook *rb = kn_rulebook_new(a);
    if (!kn_rulebook_load_default(rb, a, sink)) {
        abort(); /* the built-in rulebook must always load */
    }
    kn_rulebook_load(rb, a, sink, path);
    kn_rulebook_apply(rb, sink);
    kn_sink_finish(sink, NULL);
    kn_render_opts ro = {false, false, true, 1, NULL};
    kn_render_text(fuzz_devnull(), sink, &ro);
    kn_arena_free(a);
    return 0;
}
