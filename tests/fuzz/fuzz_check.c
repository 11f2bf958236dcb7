/* fuzz_check.c - libFuzzer harness for the whole of `knowable check`: the
 * input is written as a schema file and checked through the public kn_check
 * (YAML tree, schema loader with its includes, every analysis, the sink and
 * a renderer chosen by the input's length: text, JSON or SARIF).  Any input
 * must end in exit status 0, 1 or 2 without a crash, a leak or undefined
 * behaviour. */
#include <stdint.h>
#include <stdlib.h>

#include <knowable/knowable.h>

#include "fuzz_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *path = fuzz_write_temp("fuzz.knowable.yaml", data, size);
    kn_options o;
    kn_options_init(&o);
    o.today = "2026-12-01";
    static const kn_format formats[] = {KN_FORMAT_TEXT, KN_FORMAT_JSON, KN_FORMAT_SARIF};
    o.format = formats[size % 3];
    const char *schemas[] = {path};
    kn_status st = kn_check(&o, schemas, 1, fuzz_devnull(), fuzz_devnull());
    if (st != KN_EXIT_OK && st != KN_EXIT_FINDINGS && st != KN_EXIT_FAILED) {
        abort();
    }
    return 0;
}
