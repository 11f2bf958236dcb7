/* knowable.h - the public API of libknowable.
 *
 * knowable reads a YAML schema that declares, for every column of a machine
 * learning training table, when its value becomes known, where it comes from
 * and how it was joined, and reports whether each column is available at the
 * prediction moment, with compiler-style diagnostics.
 *
 * Ownership rule for the whole API: every function that writes output writes
 * to a FILE * the caller owns; nothing returned by the library needs freeing
 * by the caller except a kn_options filled by the caller itself (it holds only
 * borrowed pointers).  Strings passed in are borrowed for the duration of the
 * call.  Every run function allocates in one arena of its own and frees it
 * before it returns, also on failure.
 *
 * Exit statuses are those of the command line (SPEC §5). */
#ifndef KNOWABLE_KNOWABLE_H
#define KNOWABLE_KNOWABLE_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#ifdef __cplusplus
extern "C" {
#endif

#define KN_VERSION_STRING "0.1.0"

typedef enum kn_status {
    KN_EXIT_OK = 0,       /* nothing at or above --fail-on */
    KN_EXIT_FINDINGS = 1, /* a diagnostic at or above --fail-on */
    KN_EXIT_FAILED = 2,   /* the check could not be done */
} kn_status;

typedef enum kn_format {
    KN_FORMAT_DEFAULT,  /* the command's own: text for check, markdown for sources */
    KN_FORMAT_TEXT,     /* check */
    KN_FORMAT_JSON,     /* check, sources */
    KN_FORMAT_SARIF,    /* check */
    KN_FORMAT_MARKDOWN, /* sources */
} kn_format;

typedef enum kn_fail_on {
    KN_FAIL_ON_NOTE = 1,
    KN_FAIL_ON_WARNING = 2,
    KN_FAIL_ON_ERROR = 3,
    KN_FAIL_ON_NEVER = 4,
} kn_fail_on;

#define KN_MAX_RULEBOOKS 16

typedef struct kn_options {
    kn_format format;
    kn_fail_on fail_on;
    const char *rulebooks[KN_MAX_RULEBOOKS]; /* --rulebook, in order */
    size_t n_rulebooks;
    const char *data;           /* --data CSV, or NULL */
    long long max_rows;         /* --max-rows; 0: default (1,000,000) */
    long long max_groups;       /* --max-groups: rows read per query from a
                                   database; 0: default (20,000) */
    uint64_t seed;              /* reservoir sampling seed */
    const char *baseline;       /* --baseline */
    const char *write_baseline; /* --write-baseline */
    const char *root;           /* --root, or NULL */
    const char *stdin_name;     /* --stdin-name: the path a schema read from
                                   "-" stands for (positions, root, includes,
                                   rulebook discovery), or NULL */
    const char *today;          /* YYYY-MM-DD for waiver expiry; NULL: the clock
                                   (or the KNOWABLE_TODAY environment variable) */
    const char *output;         /* -o: the report goes to this file, written to a
                                   temporary file and renamed into place, never
                                   over a file the run read; NULL: to out */
    const char *svg;            /* timeline --svg FILE, written the same way */
    bool force;                 /* init -o may replace an existing file */
    const char *table;          /* --table NAME: the table of a database --data,
                                   and of `sql` (schema.table: each part quoted) */
    const char *query;          /* --query FILE.sql: the rows are that query's */
    const char *dialect;        /* sql --dialect postgresql|mysql|sqlite|ansi */
    bool show_waived;
    bool color;
    bool quiet; /* -q: diagnostics only, no notes and no summary line */
} kn_options;

/* Fills defaults: the command's own format, fail on error, no colour. */
void kn_options_init(kn_options *o);

/* `knowable check`: loads the rulebook(s) and each schema, runs every
 * analysis (and the data checks with o->data), renders the diagnostics in
 * o->format to out, and returns the exit status.  Problems that stop the
 * run before any diagnostic can be rendered (out of memory, unreadable
 * rulebook) are written to err. */
kn_status kn_check(const kn_options *o, const char *const *schemas, size_t n,
                   FILE *out, FILE *err);

/* `knowable explain RULE` (text).  Returns KN_EXIT_FAILED for an unknown id
 * after writing a suggestion to err. */
kn_status kn_explain(const char *rule, FILE *out, FILE *err);

/* `knowable rules [SCHEMA]`: every rule with its effective severity under
 * the rulebook in force for schema (NULL: --rulebook, else the built-in
 * default), and which file set each severity. */
kn_status kn_rules(const kn_options *o, const char *schema, FILE *out, FILE *err);

/* `knowable sources`: the register of sources (markdown or json). */
kn_status kn_sources(const kn_options *o, const char *const *schemas, size_t n,
                     FILE *out, FILE *err);

/* `knowable timeline`: text to out (or o->output); the SVG picture to the
 * file o->svg when it is set. */
kn_status kn_timeline_report(const kn_options *o, const char *schema, FILE *out, FILE *err);

/* `knowable init`: a draft schema from a CSV sample.  With o->output, an
 * existing file is replaced only with o->force. */
kn_status kn_init(const kn_options *o, const char *csv, FILE *out, FILE *err);

/* `knowable sql`: the data checks of schema as aggregate SQL for the
 * table o->table (or the rows of the query in the file o->query), in the
 * dialect o->dialect (NULL: ansi), each query commented with the rules it
 * serves. */
kn_status kn_sql(const kn_options *o, const char *schema, FILE *out, FILE *err);

/* `knowable json-schema`: a JSON Schema (draft-07) of the schema format
 * (to o->output when set). */
kn_status kn_json_schema(const kn_options *o, FILE *out, FILE *err);

/* `knowable lsp`: a Language Server (LSP 3.17, JSON-RPC) reading requests
 * from in and answering on out until `exit` or the end of in; o gives
 * --rulebook and --root as `check` takes them.  Returns 0 after shutdown
 * and exit, 1 when the stream ended or exit came without shutdown, 2 when
 * knowable was built without the language server. */
kn_status kn_lsp(const kn_options *o, FILE *in, FILE *out, FILE *err);

/* Output files are written to a temporary file in the same folder and
 * renamed into place; a path naming one of the inputs is refused, when the
 * file is opened and again when it is closed (kn_output_refuse adds the
 * files a run read meanwhile).  A symbolic link is followed (the link
 * stays); a device or a FIFO is written through, never renamed over.
 * kn_output_open returns NULL (and writes why to err) on failure. */
typedef struct kn_output kn_output;
kn_output *kn_output_open(const char *path, const char *const *inputs,
                          size_t n_inputs, FILE *err);
FILE *kn_output_file(kn_output *o);
/* Adds inputs that the file may not replace (borrowed until close). */
void kn_output_refuse(kn_output *o, const char *const *inputs, size_t n_inputs);
/* Flushes, closes and renames into place when ok; otherwise removes the
 * temporary file.  Frees o.  Returns false (and writes why) on failure. */
bool kn_output_close(kn_output *o, bool ok, FILE *err);

#ifdef __cplusplus
}
#endif

#endif
