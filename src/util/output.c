/* output.c - files the tool writes (-o, baselines, pictures, registers):
 * written to a temporary file in the same folder and renamed into place,
 * so a reader never sees half a file; a path that names an input is
 * refused, so the tool never writes over a schema or a data file. */
#include <knowable/knowable.h>

#include <errno.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "text.h"

struct kn_output {
    char *path;
    char *tmp;
    FILE *f;
};

static bool same_file(const char *a, const char *b)
{
    struct stat sa, sb;
    if (stat(a, &sa) != 0 || stat(b, &sb) != 0) {
        return false;
    }
    return sa.st_dev == sb.st_dev && sa.st_ino == sb.st_ino;
}

static void say(FILE *err, const char *path, const char *why)
{
    fputs("knowable: cannot write '", err);
    kn_fput_term(err, path, strlen(path));
    fprintf(err, "': %s\n", why);
}

kn_output *kn_output_open(const char *path, const char *const *inputs, size_t n_inputs, FILE *err)
{
    for (size_t i = 0; i < n_inputs; i++) {
        if (inputs[i] && (strcmp(inputs[i], path) == 0 || same_file(inputs[i], path))) {
            say(err, path, "it is one of the inputs; knowable never writes over an input");
            return NULL;
        }
    }
    kn_output *o = calloc(1, sizeof *o);
    if (!o) {
        say(err, path, "out of memory");
        return NULL;
    }
    size_t len = strlen(path);
    o->path = malloc(len + 1);
    o->tmp = malloc(len + 16);
    if (!o->path || !o->tmp) {
        free(o->path);
        free(o->tmp);
        free(o);
        say(err, path, "out of memory");
        return NULL;
    }
    memcpy(o->path, path, len + 1);
    snprintf(o->tmp, len + 16, "%s.tmp-XXXXXX", path);
    int fd = mkstemp(o->tmp);
    if (fd < 0) {
        say(err, path, strerror(errno));
        free(o->path);
        free(o->tmp);
        free(o);
        return NULL;
    }
    /* mkstemp makes the file 0600; a written report is an ordinary file. */
    mode_t mask = umask(0);
    umask(mask);
    fchmod(fd, 0666 & ~mask);
    o->f = fdopen(fd, "w");
    if (!o->f) {
        say(err, path, strerror(errno));
        close(fd);
        unlink(o->tmp);
        free(o->path);
        free(o->tmp);
        free(o);
        return NULL;
    }
    return o;
}

FILE *kn_output_file(kn_output *o)
{
    return o->f;
}

bool kn_output_close(kn_output *o, bool ok, FILE *err)
{
    bool good = ok;
    if (fflush(o->f) != 0 || ferror(o->f)) {
        if (ok) {
            say(err, o->path, strerror(errno));
        }
        good = false;
    }
    if (fclose(o->f) != 0 && good) {
        say(err, o->path, strerror(errno));
        good = false;
    }
    if (good && rename(o->tmp, o->path) != 0) {
        say(err, o->path, strerror(errno));
        good = false;
    }
    if (!good) {
        unlink(o->tmp);
    }
    free(o->path);
    free(o->tmp);
    free(o);
    return good;
}
