/* values_probe.c - reads lines "KIND TEXT" from stdin (KIND: n number,
 * b boolean, t timestamp, d date) and prints, per line, "ok VALUE",
 * "missing" or "invalid", for tests/ref/values_ref.py.  Numbers are printed
 * with %.17g (exact round trip), timestamps and dates in microseconds. */
#include <inttypes.h>
#include <stdio.h>
#include <string.h>

#include "../../src/data/values.h"

int main(void)
{
    char line[4096];
    while (fgets(line, sizeof line, stdin)) {
        size_t len = strlen(line);
        if (len && line[len - 1] == '\n') {
            line[--len] = '\0';
        }
        if (len < 2) {
            puts("invalid");
            continue;
        }
        const char *text = line + 2;
        size_t n = len - 2;
        kn_value_status s = KN_VALUE_INVALID;
        double d = 0;
        bool b = false;
        int64_t us = 0;
        switch (line[0]) {
        case 'n':
            s = kn_value_number(text, n, &d);
            break;
        case 'b':
            s = kn_value_boolean(text, n, &b);
            break;
        case 't':
            s = kn_value_timestamp(text, n, &us, NULL);
            break;
        case 'd':
            s = kn_value_date(text, n, &us);
            break;
        default:
            break;
        }
        if (s == KN_VALUE_MISSING) {
            puts("missing");
        } else if (s == KN_VALUE_INVALID) {
            puts("invalid");
        } else if (line[0] == 'n') {
            printf("ok %.17g\n", d);
        } else if (line[0] == 'b') {
            printf("ok %d\n", b ? 1 : 0);
        } else {
            printf("ok %" PRId64 "\n", us);
        }
    }
    return ferror(stdout) ? 1 : 0;
}
