/* duration_probe.c - reads ISO 8601 durations on stdin, one a line, and
 * prints for each "LO HI" (the interval in microseconds) or
 * "error OFFSET MESSAGE".  Used by tests/ref/duration_ref.py to compare
 * kn_duration_parse with an outside reference. */
#include <stdio.h>
#include <string.h>

#include "../../src/time/duration.h"

int main(void)
{
    static char line[16384];
    int status = 0;
    while (fgets(line, sizeof line, stdin)) {
        size_t len = strlen(line);
        if (len > 0 && line[len - 1] == '\n') {
            len--;
        } else if (!feof(stdin)) {
            /* Longer than the buffer: report it and skip the rest. */
            int c;
            while ((c = getchar()) != EOF && c != '\n') {
            }
            puts("error line-too-long");
            continue;
        }
        kn_interval iv;
        size_t off = 0;
        const char *err = NULL;
        if (kn_duration_parse(line, len, &iv, &off, &err)) {
            printf("%lld %lld\n", (long long)iv.lo, (long long)iv.hi);
        } else {
            printf("error %zu %s\n", off, err);
        }
    }
    if (ferror(stdin) || fflush(stdout) != 0 || ferror(stdout)) {
        status = 1;
    }
    return status;
}
