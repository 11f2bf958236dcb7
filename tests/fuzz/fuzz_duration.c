/* fuzz_duration.c - libFuzzer harness for kn_duration_parse and
 * kn_duration_format: any bytes must be accepted as an interval within
 * KN_DURATION_MAX or refused with an offset inside the input, and every
 * accepted bound must format into 48 bytes. */
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/time/duration.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    kn_interval iv;
    size_t off = SIZE_MAX;
    const char *err = NULL;
    if (kn_duration_parse((const char *)data, size, &iv, &off, &err)) {
        if (iv.lo > iv.hi || iv.hi > KN_DURATION_MAX || iv.lo < -KN_DURATION_MAX) {
            abort();
        }
        char buf[48];
        kn_duration_format(iv.lo, buf, sizeof buf);
        kn_duration_format(iv.hi, buf, sizeof buf);
        if (strlen(buf) >= sizeof buf - 1) {
            abort();
        }
    } else if (!err || off > size) {
        abort();
    }
    return 0;
}
