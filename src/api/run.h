/* run.h - one run of a command: the arena (with its out-of-memory target,
 * set up by the entry point), the rulebook of each schema, the loaded
 * schemas, the one list of analysis families, the sink and its finishing
 * pass, rendering and the exit status.  Every public command
 * (include/knowable/knowable.h) is a short function over it, so the
 * commands cannot drift apart. */
#ifndef KN_API_RUN_H
#define KN_API_RUN_H

#include <knowable/knowable.h>

#include <stdbool.h>
#include <stdio.h>

#include "../report/diag.h"
#include "../rulebook/rulebook.h"
#include "../schema/schema.h"
#include "../time/timeline.h"
#include "../util/arena.h"

/* One schema of the run, under its own rulebook. */
typedef struct kn_unit {
    const char *path;
    kn_rulebook *rulebook; /* NULL: its rulebook could not be read */
    kn_schema *schema;     /* NULL: the schema could not be read at all, or
                              its model was released */
    kn_timeline *timeline; /* after kn_run_analyse */
    kn_arena *arena;       /* the model's own memory (a child of the run's) */
    kn_defer *release;     /* frees it (kn_run_release) */
    const char **files;    /* the files the schema read (run memory) */
    size_t n_files;
} kn_unit;

typedef struct kn_run {
    kn_arena *arena;
    kn_sink *sink;
    const kn_options *opt;
    FILE *out, *err;
    const char *command; /* "check", "sources", ... for messages */
    const char *today;
    kn_rulebook *named;       /* from --rulebook, shared by every schema */
    kn_name_map *discovered;  /* discovered rulebook path -> kn_rulebook * */
    kn_rulebook *builtin;     /* when nothing is named or discovered */
    kn_rulebook *given;       /* resolved by the caller, who keeps it across
                                 runs (the language server): every schema is
                                 judged under it; NULL: resolved here */
    kn_vec *units;            /* kn_unit * */
    kn_vec *outputs;          /* kn_defer * of each kn_output opened */
    struct kn_file_cache *files; /* included files parsed once per run (yaml/cache.h) */
    bool failed;              /* the run cannot be done: exit 2 */
    bool database;            /* --data is a database connection (odbc:...) */
    const char *query_sql;    /* the text of --query, for a database */
    /* Unsaved editor buffers standing for files (kn_load_options.overlay);
     * NULL: files are read from disk. */
    const char *(*overlay)(void *ctx, const char *real, size_t *len);
    void *overlay_ctx;
} kn_run;

/* Sets a run up in arena a (which the caller's entry point owns).  command
 * names the command in messages. */
void kn_run_init(kn_run *r, kn_arena *a, const char *command, const kn_options *o, FILE *out, FILE *err);

/* The format the command writes: o->format, or dflt when none was asked
 * for.  A format outside allowed (a bit set of 1 << kn_format) is refused
 * with a message to err; the run is then failed and KN_FORMAT_DEFAULT is
 * returned. */
kn_format kn_run_format(kn_run *r, unsigned allowed, kn_format dflt);

/* The rulebook a schema is judged under (SPEC §5): the built-in default,
 * then every --rulebook in order, or else the nearest .knowable-rules.yaml
 * of the schema's folder or a parent.  Each file is read once per run.
 * r->given, when set, is returned as it is.  schema may be NULL (no discovery).  NULL when a rulebook is broken (its
 * errors are in the sink, which is then fatal). */
kn_rulebook *kn_run_rulebook(kn_run *r, const char *schema);

/* Loads one schema under its rulebook into a new unit (also when it cannot
 * be read: then unit->schema is NULL and the sink says why). */
kn_unit *kn_run_load(kn_run *r, const char *path);

/* Every analysis family, in pipeline order, on a loaded unit (its schema
 * errors only set aside what depends on them); with o->data the data
 * checks too.  Declares the unit's waivers. */
void kn_run_analyse(kn_run *r, kn_unit *u);

/* Frees the unit's model and timeline once its findings are in the sink
 * (which keeps its own copies of everything it reports), so a run over many
 * schemas holds one model at a time.  Commands that read the model after
 * the analysis (sources, timeline, the language server) keep it. */
void kn_run_release(kn_run *r, kn_unit *u);

/* Reads --baseline before anything is analysed; false (run failed) when
 * it cannot be read. */
bool kn_run_read_baseline(kn_run *r);

/* The sink's one finishing pass. */
void kn_run_finish(kn_run *r);

/* Renders the finished diagnostics in fmt to out (text also for markdown). */
void kn_run_render(kn_run *r, FILE *out, kn_format fmt);

/* The exit status: 2 when the run failed or the sink is fatal, 1 when a
 * shown finding is at or above --fail-on, else 0. */
kn_status kn_run_status(const kn_run *r);

/* The stream a report goes to: path (written to a temporary file and
 * renamed into place by kn_run_close_outputs), or dflt when path is NULL.
 * NULL (run failed, message to err) when path cannot be written or names
 * an input.  With keep_existing, an existing path is refused. */
FILE *kn_run_open_output(kn_run *r, const char *path, FILE *dflt, bool keep_existing);

/* Closes every output opened, renaming each into place when ok and when it
 * names no file the run read; false (run failed) otherwise. */
bool kn_run_close_outputs(kn_run *r, bool ok);

/* Every file the run read (schemas, their includes, rulebooks, the
 * baseline, the data), for the outputs that must not replace them. */
const char *const *kn_run_inputs(const kn_run *r, size_t *n);

#endif
