/* document_load.c - a peer for SPEC §8's speed target: libyaml's own way to
 * read a file as a tree, yaml_parser_load into a yaml_document_t, node by
 * node with its tags and positions.  The documents are not freed (the
 * process ends), so the peer pays only for reading.  Prints the number of
 * nodes.  tests/bench/bench.py reports it beside the bare event parse, the
 * floor the target is measured against.
 *
 * Usage: document_load FILE */
#include <stdio.h>

#include <yaml.h>

int main(int argc, char **argv)
{
    if (argc < 2) {
        fputs("usage: document_load FILE\n", stderr);
        return 2;
    }
    FILE *f = fopen(argv[1], "rb");
    if (!f) {
        perror(argv[1]);
        return 2;
    }
    yaml_parser_t p;
    yaml_parser_initialize(&p);
    yaml_parser_set_input_file(&p, f);
    unsigned long nodes = 0;
    for (;;) {
        static yaml_document_t d; /* one at a time; never freed, see above */
        if (!yaml_parser_load(&p, &d)) {
            fprintf(stderr, "%s:%zu:%zu: %s\n", argv[1], p.problem_mark.line + 1, p.problem_mark.column + 1,
                    p.problem ? p.problem : "error");
            return 1;
        }
        if (!yaml_document_get_root_node(&d)) {
            break;
        }
        nodes += (unsigned long)(d.nodes.top - d.nodes.start);
    }
    fclose(f);
    printf("%lu nodes\n", nodes);
    return 0;
}
