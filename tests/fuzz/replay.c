/* replay.c - runs a fuzz harness's entry point over saved inputs without
 * libFuzzer, so that the ordinary test run replays every input that once
 * crashed (tests/fuzz/regress/<harness>/) and the seeds.  Arguments are
 * files or folders (each regular file inside, in name order; not recursive).
 * Exits 0 when every input ran, 1 when an argument cannot be read; a harness
 * that finds a fault aborts, which fails the test. */
#include <dirent.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static int run_file(const char *path)
{
    FILE *f = fopen(path, "rb");
    if (!f) {
        perror(path);
        return 1;
    }
    size_t cap = 4096, len = 0;
    uint8_t *buf = malloc(cap);
    if (!buf) {
        fclose(f);
        return 1;
    }
    size_t got;
    while ((got = fread(buf + len, 1, cap - len, f)) > 0) {
        len += got;
        if (len == cap) {
            uint8_t *n = realloc(buf, cap * 2);
            if (!n) {
                free(buf);
                fclose(f);
                return 1;
            }
            buf = n;
            cap *= 2;
        }
    }
    int bad = ferror(f);
    fclose(f);
    if (bad) {
        perror(path);
        free(buf);
        return 1;
    }
    /* A copy of exactly len bytes, so that reading past the input is seen
     * by ASan or valgrind as it would be under libFuzzer. */
    uint8_t *exact = malloc(len ? len : 1);
    if (!exact) {
        free(buf);
        return 1;
    }
    memcpy(exact, buf, len);
    free(buf);
    LLVMFuzzerTestOneInput(exact, len);
    free(exact);
    return 0;
}

static int cmp_names(const void *x, const void *y)
{
    return strcmp(*(char *const *)x, *(char *const *)y);
}

static int run_dir(const char *dir, size_t *count)
{
    DIR *d = opendir(dir);
    if (!d) {
        perror(dir);
        return 1;
    }
    char **names = NULL;
    size_t n = 0, cap = 0;
    struct dirent *e;
    int rc = 0;
    while ((e = readdir(d)) != NULL) {
        if (e->d_name[0] == '.') {
            continue;
        }
        if (n == cap) {
            cap = cap ? cap * 2 : 64;
            char **nn = realloc(names, cap * sizeof *names);
            if (!nn) {
                rc = 1;
                break;
            }
            names = nn;
        }
        size_t need = strlen(dir) + strlen(e->d_name) + 2;
        names[n] = malloc(need);
        if (!names[n]) {
            rc = 1;
            break;
        }
        snprintf(names[n], need, "%s/%s", dir, e->d_name);
        n++;
    }
    closedir(d);
    if (n) {
        qsort(names, n, sizeof *names, cmp_names);
    }
    for (size_t i = 0; i < n; i++) {
        struct stat st;
        if (rc == 0 && stat(names[i], &st) == 0 && S_ISREG(st.st_mode)) {
            rc |= run_file(names[i]);
            (*count)++;
        }
        free(names[i]);
    }
    free(names);
    return rc;
}

int main(int argc, char **argv)
{
    size_t count = 0;
    int rc = 0;
    for (int i = 1; i < argc; i++) {
        struct stat st;
        if (stat(argv[i], &st) != 0) {
            perror(argv[i]);
            return 1;
        }
        if (S_ISDIR(st.st_mode)) {
            rc |= run_dir(argv[i], &count);
        } else {
            rc |= run_file(argv[i]);
            count++;
        }
    }
    printf("replayed %zu inputs\n", count);
    return rc;
}
