/* output.c - files the tool writes (-o, baselines, pictures, registers):
 * written to a temporary file in the same folder and renamed into place,
 * so a reader never sees half a file; a path that names an input is
 * refused, so the tool never writes over a schema or a data file.
 *
 * Only a regular file (or a new one) is replaced by renaming.  A symbolic
 * link is followed and the file it names is replaced, so the link stays;
 * anything that is not a regular file (a device such as /dev/null or
 * /dev/stdout, a FIFO) is written through, never renamed over: as root
 * in a CI container, -o /dev/null must not delete /dev/null. */
#include <knowable/knowable.h>

#include <errno.h>
#include <limits.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "text.h"

struct kn_output {
    char *path; /* where the file goes (a symbolic link resolved) */
    char *tmp;  /* the temporary file, or NULL when writing through */
    FILE *f;
    const char *const *refused; /* more inputs, checked at close */
    size_t n_refused;
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

/* Whether following path's symbolic links passes through a folder under
 * /proc (as /dev/stdout -> /proc/self/fd/1 and /dev/fd/1 do): the path
 * then names an open descriptor, not a file to replace. */
static bool names_descriptor(const char *path)
{
    char cur[PATH_MAX], dir[PATH_MAX], link[PATH_MAX];
    if (strlen(path) >= sizeof cur) {
        return false;
    }
    strcpy(cur, path);
    for (int hop = 0; hop < 40; hop++) {
        /* The folder part, resolved. */
        const char *slash = strrchr(cur, '/');
        char part[PATH_MAX];
        if (!slash) {
            strcpy(part, ".");
        } else if (slash == cur) {
            strcpy(part, "/");
        } else {
            memcpy(part, cur, (size_t)(slash - cur));
            part[slash - cur] = '\0';
        }
        if (realpath(part, dir) && strncmp(dir, "/proc/", 6) == 0) {
            return true;
        }
        struct stat st;
        if (lstat(cur, &st) != 0 || !S_ISLNK(st.st_mode)) {
            return false;
        }
        ssize_t n = readlink(cur, link, sizeof link - 1);
        if (n <= 0) {
            return false;
        }
        link[n] = '\0';
        if (link[0] == '/') {
            strcpy(cur, link);
        } else {
            size_t dl = strlen(dir);
            if (dl + 1 + (size_t)n >= sizeof cur) {
                return false;
            }
            memcpy(cur, dir, dl);
            cur[dl] = '/';
            memcpy(cur + dl + 1, link, (size_t)n + 1);
        }
    }
    return false;
}

static void free_output(kn_output *o)
{
    if (o) {
        free(o->path);
        free(o->tmp);
        free(o);
    }
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
    struct stat lst, st;
    bool exists = lstat(path, &lst) == 0;
    bool through = false; /* write into what is there, never rename */
    if (exists && S_ISLNK(lst.st_mode)) {
        if (names_descriptor(path)) {
            /* /dev/stdout, /dev/fd/3, /proc/self/fd/1: the stream the
             * caller opened (a pipe, a terminal, or a file opened with > or
             * >>), written through and appended to, never replaced. */
            through = true;
            o->path = strdup(path);
            exists = stat(path, &st) == 0;
        } else {
            /* Follow the link: the file it names is replaced, the link stays. */
            o->path = realpath(path, NULL);
            if (!o->path) {
                say(err, path,
                    errno == ENOENT ? "it is a symbolic link to a file that does not exist" : strerror(errno));
                free_output(o);
                return NULL;
            }
            exists = stat(o->path, &st) == 0;
        }
    } else {
        o->path = strdup(path);
        st = lst;
    }
    if (!o->path) {
        say(err, path, "out of memory");
        free_output(o);
        return NULL;
    }
    if (exists && S_ISDIR(st.st_mode)) {
        say(err, path, "it is a folder");
        free_output(o);
        return NULL;
    }
    if (through || (exists && !S_ISREG(st.st_mode))) {
        /* A device, a FIFO or a descriptor: write through, never rename
         * over it ("a": a file behind a descriptor keeps what the caller's
         * redirection left in it). */
        o->f = fopen(o->path, "a");
        if (!o->f) {
            say(err, path, strerror(errno));
            free_output(o);
            return NULL;
        }
        return o;
    }
    size_t len = strlen(o->path);
    o->tmp = malloc(len + 16);
    if (!o->tmp) {
        say(err, path, "out of memory");
        free_output(o);
        return NULL;
    }
    snprintf(o->tmp, len + 16, "%s.tmp-XXXXXX", o->path);
    int fd = mkstemp(o->tmp);
    if (fd < 0) {
        say(err, path, strerror(errno));
        free_output(o);
        return NULL;
    }
    /* mkstemp makes the file 0600; a written report is an ordinary file
     * (a replaced file keeps its permissions). */
    mode_t mask = umask(0);
    umask(mask);
    fchmod(fd, exists ? (st.st_mode & 07777) : (0666 & ~mask));
    o->f = fdopen(fd, "w");
    if (!o->f) {
        say(err, path, strerror(errno));
        close(fd);
        unlink(o->tmp);
        free_output(o);
        return NULL;
    }
    /* A report of thousands of lines goes out in large blocks. */
    setvbuf(o->f, NULL, _IOFBF, 1 << 16);
    return o;
}

FILE *kn_output_file(kn_output *o)
{
    return o->f;
}

void kn_output_refuse(kn_output *o, const char *const *inputs, size_t n_inputs)
{
    o->refused = inputs;
    o->n_refused = n_inputs;
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
    /* The run may have read files that were unknown when it opened this
     * one (included registers, a discovered rulebook). */
    for (size_t i = 0; good && i < o->n_refused; i++) {
        if (o->refused[i] && (strcmp(o->refused[i], o->path) == 0 || same_file(o->refused[i], o->path))) {
            say(err, o->path, "the run read it; knowable never writes over an input");
            good = false;
        }
    }
    if (o->tmp) {
        if (good && rename(o->tmp, o->path) != 0) {
            say(err, o->path, strerror(errno));
            good = false;
        }
        if (!good) {
            unlink(o->tmp);
        }
    }
    free_output(o);
    return good;
}
