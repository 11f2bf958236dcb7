/* fuzz_util.h - what the file-based harnesses share: one private temporary
 * folder per process, into which each input is written before the library
 * reads it back by path (the public API and the loaders take paths). */
#ifndef KN_FUZZ_UTIL_H
#define KN_FUZZ_UTIL_H

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

/* Writes data to <private folder>/name and returns the full path (static
 * storage, valid until the next call).  Aborts when the folder cannot be
 * made or the file cannot be written: a harness that tests nothing must not
 * look like one that passes. */
static const char *fuzz_write_temp(const char *name, const uint8_t *data, size_t size)
{
    static char dir[64];
    static char path[128];
    if (!dir[0]) {
        const char *base = getenv("TMPDIR");
        snprintf(dir, sizeof dir, "%s/kn-fuzz-XXXXXX", base && *base && strlen(base) < 40 ? base : "/tmp");
        if (!mkdtemp(dir)) {
            perror("mkdtemp");
            abort();
        }
    }
    snprintf(path, sizeof path, "%s/%s", dir, name);
    FILE *f = fopen(path, "wb");
    if (!f) {
        perror(path);
        abort();
    }
    if (size && fwrite(data, 1, size, f) != size) {
        perror(path);
        abort();
    }
    if (fclose(f) != 0) {
        perror(path);
        abort();
    }
    return path;
}

/* A sink for output that nobody reads, opened once. */
static FILE *fuzz_devnull(void)
{
    static FILE *f;
    if (!f) {
        f = fopen("/dev/null", "w");
        if (!f) {
            abort();
        }
    }
    return f;
}

#endif
