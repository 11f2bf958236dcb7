/* tree_only.c - a second floor for SPEC §8's speed target: read a YAML
 * file and build knowable's positioned tree from it (src/yaml/tree.c), as
 * `knowable check` does first, and nothing else.  Between the bare libyaml
 * parse (bare_parse.c) and the whole check, it shows what the tree costs and
 * what the model, the analyses and the report cost after it.
 *
 * Usage: tree_only FILE (built by tests/bench/run.sh against the build's
 * libknowable.a).  Prints the kind of the root node; exit 1 when the file
 * cannot be parsed. */
#include <stdio.h>

#include "util/arena.h"
#include "yaml/tree.h"

static void problem(void *ctx, kn_yaml_problem what, const kn_pos *at, const char *subject,
                    const char *message, const kn_pos *note_at, const char *note)
{
    (void)ctx, (void)what, (void)subject, (void)note_at, (void)note;
    fprintf(stderr, "%s:%u:%u: %s\n", at->file, at->line, at->col, message);
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        fputs("usage: tree_only FILE\n", stderr);
        return 2;
    }
    kn_arena *a = kn_arena_new();
    jmp_buf oom;
    if (!a || setjmp(oom)) {
        fputs("tree_only: out of memory\n", stderr);
        return 2;
    }
    kn_arena_set_oom(a, &oom);
    kn_yaml_limits lim;
    kn_yaml_limits_default(&lim);
    kn_yaml_reporter rep = {problem, NULL};
    kn_node *root = kn_yaml_load_file(a, &rep, argv[1], argv[1], &lim);
    printf("%d\n", root ? (int)root->kind : -1);
    kn_arena_free(a);
    return root ? 0 : 1;
}
