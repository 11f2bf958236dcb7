/* bare_parse.c - the floor for SPEC §8's speed target: read a YAML file
 * into memory and pull every libyaml event from it, doing nothing else.
 * `knowable check` must read the file the same way, so its cost over this
 * is what the tool adds.  Prints the number of events.
 *
 * Usage: bare_parse FILE [REPEAT] */
#include <stdio.h>
#include <stdlib.h>

#include <yaml.h>

int main(int argc, char **argv)
{
    if (argc < 2) {
        fputs("usage: bare_parse FILE [REPEAT]\n", stderr);
        return 2;
    }
    int repeat = argc > 2 ? atoi(argv[2]) : 1;
    unsigned long events = 0;
    for (int r = 0; r < repeat; r++) {
        FILE *f = fopen(argv[1], "rb");
        if (!f) {
            perror(argv[1]);
            return 2;
        }
        size_t cap = 1 << 16, len = 0, got;
        unsigned char *buf = malloc(cap);
        while (buf && (got = fread(buf + len, 1, cap - len, f)) > 0) {
            len += got;
            if (len == cap) {
                unsigned char *nb = realloc(buf, cap * 2);
                if (!nb) {
                    free(buf);
                    buf = NULL;
                    break;
                }
                buf = nb;
                cap *= 2;
            }
        }
        fclose(f);
        if (!buf) {
            return 2;
        }
        yaml_parser_t p;
        yaml_parser_initialize(&p);
        yaml_parser_set_input_string(&p, buf, len);
        yaml_event_t e;
        int done = 0;
        while (!done) {
            if (!yaml_parser_parse(&p, &e)) {
                fprintf(stderr, "%s:%zu:%zu: %s\n", argv[1], p.problem_mark.line + 1, p.problem_mark.column + 1,
                        p.problem ? p.problem : "error");
                yaml_parser_delete(&p);
                free(buf);
                return 1;
            }
            done = e.type == YAML_STREAM_END_EVENT;
            events++;
            yaml_event_delete(&e);
        }
        yaml_parser_delete(&p);
        free(buf);
    }
    printf("%lu events\n", events);
    return 0;
}
