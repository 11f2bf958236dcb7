/* run.c - one run of a command (run.h): rulebooks per schema, loading, the
 * analysis families in pipeline order, the sink's finishing pass,
 * rendering and the exit status. */
#include "run.h"

#include <stdio_ext.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>

#include "../checks/checks.h"
#include "../report/render.h"
#include "../util/names.h"
#include "../util/path.h"
#include "../util/text.h"
#include "../yaml/cache.h"

static const char *today(kn_arena *a, const kn_options *o)
{
    if (o->today) {
        return o->today;
    }
    const char *env = getenv("KNOWABLE_TODAY");
    if (env && *env) {
        return env;
    }
    time_t now = time(NULL);
    struct tm tm;
    gmtime_r(&now, &tm);
    return kn_printf(a, "%04d-%02d-%02d", tm.tm_year + 1900, tm.tm_mon + 1, tm.tm_mday);
}

void kn_run_init(kn_run *r, kn_arena *a, const char *command, const kn_options *o, FILE *out, FILE *err)
{
    memset(r, 0, sizeof *r);
    r->arena = a;
    r->sink = kn_sink_new(a);
    r->opt = o;
    r->out = out;
    r->err = err;
    r->command = command;
    r->today = today(a, o);
    r->discovered = kn_names_new(a);
    r->units = kn_vec_new(a, sizeof(kn_unit *));
    r->outputs = kn_vec_new(a, sizeof(kn_defer *));
    if (o->root) {
        char *real = kn_path_real(a, o->root);
        if (real) {
            kn_sink_set_root(r->sink, real);
        }
    }
}

static const char *const format_names[] = {"default", "text", "json", "sarif", "markdown"};

kn_format kn_run_format(kn_run *r, unsigned allowed, kn_format dflt)
{
    kn_format f = r->opt->format;
    if (f == KN_FORMAT_DEFAULT) {
        return dflt;
    }
    if (allowed & (1u << f)) {
        return f;
    }
    if (!allowed) {
        fprintf(r->err, "knowable %s: takes no --format (it writes one kind of document)\n", r->command);
    } else {
        fprintf(r->err, "knowable %s: --format %s is not available here; it writes ", r->command,
                format_names[f]);
        const char *sep = "";
        for (unsigned i = 1; i < sizeof format_names / sizeof *format_names; i++) {
            if (allowed & (1u << i)) {
                fprintf(r->err, "%s%s", sep, format_names[i]);
                sep = " or ";
            }
        }
        fputc('\n', r->err);
    }
    r->failed = true;
    return KN_FORMAT_DEFAULT;
}

/* A rulebook over the built-in default: the files in order.  NULL (the
 * sink is fatal) when one of them is broken. */
static kn_rulebook *read_rulebook(kn_run *r, const char *const *paths, size_t n)
{
    kn_rulebook *rb = kn_rulebook_new(r->arena);
    if (!kn_rulebook_load_default(rb, r->arena, r->sink)) {
        return NULL;
    }
    for (size_t i = 0; i < n; i++) {
        if (!kn_rulebook_load(rb, r->arena, r->sink, paths[i])) {
            return NULL;
        }
    }
    return rb;
}

kn_rulebook *kn_run_rulebook(kn_run *r, const char *schema)
{
    const kn_options *o = r->opt;
    if (r->given) {
        return r->given;
    }
    if (o->n_rulebooks) {
        if (!r->named && !r->failed) {
            r->named = read_rulebook(r, o->rulebooks, o->n_rulebooks);
            r->failed = !r->named;
        }
        return r->named;
    }
    /* A schema read from "-" is placed where --stdin-name says. */
    if (schema && strcmp(schema, "-") == 0 && o->stdin_name) {
        schema = o->stdin_name;
    }
    const char *found = schema ? kn_rulebook_discover(r->arena, schema, r->opt->root) : NULL;
    if (!found) {
        if (!r->builtin) {
            r->builtin = read_rulebook(r, NULL, 0);
        }
        return r->builtin;
    }
    /* Each discovered file is read once, whatever path reaches it. */
    const char *real = kn_path_real(r->arena, found);
    const char *key = real ? real : found;
    kn_rulebook **cached = kn_names_get(r->discovered, key);
    if (cached) {
        return *cached;
    }
    cached = kn_alloc(r->arena, sizeof *cached);
    *cached = read_rulebook(r, &found, 1);
    kn_names_put(r->discovered, key, cached);
    return *cached;
}

kn_unit *kn_run_load(kn_run *r, const char *path)
{
    kn_unit *u = kn_alloc(r->arena, sizeof *u);
    u->path = path;
    kn_vec_push(r->units, &u);
    u->rulebook = kn_run_rulebook(r, path);
    if (!u->rulebook) {
        return u; /* its rulebook's errors are reported; judged under none */
    }
    kn_rulebook_apply(u->rulebook, r->sink);
    kn_load_options lo = {0};
    lo.root = r->opt->root;
    lo.stdin_name = r->opt->stdin_name;
    kn_yaml_limits_default(&lo.limits);
    lo.rulebook = u->rulebook;
    if (!r->files) {
        r->files = kn_file_cache_new(r->arena);
    }
    lo.cache = r->files;
    lo.overlay = r->overlay;
    lo.overlay_ctx = r->overlay_ctx;
    u->arena = kn_arena_child(r->arena, &u->release);
    u->schema = kn_schema_load(u->arena, r->sink, path, &lo);
    if (u->schema) {
        /* Which files it read outlives the model (outputs may not replace them). */
        u->n_files = u->schema->n_files;
        u->files = kn_alloc_array(r->arena, u->n_files + 1, sizeof *u->files);
        for (size_t i = 0; i < u->n_files; i++) {
            u->files[i] = kn_strdup(r->arena, u->schema->files[i].path);
        }
    }
    return u;
}

void kn_run_release(kn_run *r, kn_unit *u)
{
    if (u->release) {
        kn_defer_run(r->arena, u->release);
        u->release = NULL;
    }
    u->arena = NULL;
    u->schema = NULL;
    u->timeline = NULL;
}

void kn_run_analyse(kn_run *r, kn_unit *u)
{
    if (!u->schema) {
        return;
    }
    kn_ctx ctx = {u->arena, r->sink, u->rulebook, r->today};
    kn_schema *s = u->schema;
    /* The families of rules, in pipeline order; each skips only what a
     * schema error set aside.  The timeline is solved once and read by the
     * families after it. */
    u->timeline = kn_timeline_solve(u->arena, r->sink, s, u->rulebook->strict_moment);
    kn_check_availability(&ctx, s, u->timeline);
    kn_check_maturity(&ctx, s, u->timeline);
    kn_check_provenance(&ctx, s);
    kn_check_identity(&ctx, s, u->timeline);
    kn_check_preparation(&ctx, s, u->timeline);
    if (r->opt->data && r->database) {
        kn_check_database(&ctx, s, r->opt->data, r->opt->table, r->opt->query, r->query_sql, r->opt->max_rows,
                          r->opt->max_groups, r->opt->seed, r->err);
    } else if (r->opt->data) {
        kn_check_data(&ctx, s, r->opt->data, r->opt->max_rows, r->opt->seed);
    }
    kn_check_waivers(&ctx, s);
}

bool kn_run_read_baseline(kn_run *r)
{
    if (!r->opt->baseline || r->failed) {
        return !r->failed;
    }
    if (!kn_baseline_read(r->sink, r->opt->baseline, r->err)) {
        r->failed = true;
    }
    return !r->failed;
}

void kn_run_finish(kn_run *r)
{
    kn_sink_finish(r->sink, r->today);
}

static int cmp_origin(const void *pa, const void *pb)
{
    const char *a = *(const char *const *)pa, *b = *(const char *const *)pb;
    bool ba = strcmp(a, "(built-in)") == 0, bb = strcmp(b, "(built-in)") == 0;
    if (ba != bb) {
        return ba ? 1 : -1;
    }
    return strcmp(a, b);
}

void kn_run_render(kn_run *r, FILE *out, kn_format fmt)
{
    const kn_options *o = r->opt;
    size_t judged = 0; /* schemas that had a rulebook to be judged under */
    kn_unit **units = r->units->data;
    for (size_t i = 0; i < r->units->len; i++) {
        judged += units[i]->rulebook != NULL;
    }
    /* The rulebooks in force, when some schema is not judged by the
     * built-in one alone, in the order first used: "rulebook FILE" when it
     * judged every schema, else each with the number of schemas it judged
     * ("rulebooks a/.knowable-rules.yaml for 2, the built-in for 1"). */
    const char *names = "";
    kn_name_map *seen = kn_names_new(r->arena);
    size_t *count = kn_alloc_array(r->arena, r->units->len + 1, sizeof *count);
    for (size_t i = 0; i < r->units->len; i++) {
        const kn_rulebook *rb = units[i]->rulebook;
        if (!rb) {
            continue;
        }
        size_t *c = kn_names_get(seen, rb->origin);
        if (!c) {
            c = &count[kn_names_count(seen)];
            kn_names_put(seen, rb->origin, c);
        }
        ++*c;
    }
    /* By name, the built-in last: the line is the same whatever the order
     * of the schemas on the command line. */
    size_t n_origins = kn_names_count(seen);
    const char **origins = kn_alloc_array(r->arena, n_origins + 1, sizeof *origins);
    for (size_t i = 0; i < n_origins; i++) {
        origins[i] = kn_names_at(seen, i);
    }
    qsort(origins, n_origins, sizeof *origins, cmp_origin);
    for (size_t i = 0; i < n_origins; i++) {
        const char *origin = origins[i];
        size_t n = *(size_t *)kn_names_get(seen, origin);
        bool builtin = strcmp(origin, "(built-in)") == 0;
        if (n_origins == 1) {
            names = builtin ? "" : kn_printf(r->arena, "rulebook %s", origin);
        } else {
            names = kn_printf(r->arena, "%s%s%s for %zu", names, i ? ", " : "", builtin ? "the built-in" : origin, n);
        }
    }
    if (n_origins > 1) {
        names = kn_printf(r->arena, "rulebooks %s", names);
    }
    kn_render_opts ro = {o->color, o->quiet, o->show_waived, judged, names};
    /* The report is written in many small pieces: the stream is locked once
     * for all of them rather than once per piece (a tenth of the time of
     * rendering a large report went to taking and releasing the lock). */
    flockfile(out);
    int locking = __fsetlocking(out, FSETLOCKING_BYCALLER);
    switch (fmt) {
    case KN_FORMAT_JSON:
        kn_render_json(out, r->sink, &ro);
        break;
    case KN_FORMAT_SARIF:
        kn_render_sarif(out, r->sink, &ro);
        break;
    default:
        kn_render_text(out, r->sink, &ro);
        break;
    }
    __fsetlocking(out, locking);
    funlockfile(out);
}

kn_status kn_run_status(const kn_run *r)
{
    if (r->failed || kn_sink_fatal(r->sink)) {
        return KN_EXIT_FAILED;
    }
    const kn_options *o = r->opt;
    if (o->fail_on != KN_FAIL_ON_NEVER && kn_sink_has(r->sink, (kn_severity)o->fail_on)) {
        return KN_EXIT_FINDINGS;
    }
    return KN_EXIT_OK;
}

const char *const *kn_run_inputs(const kn_run *r, size_t *n)
{
    const kn_options *o = r->opt;
    kn_vec *v = kn_vec_new(r->arena, sizeof(const char *));
    kn_unit **units = r->units->data;
    for (size_t i = 0; i < r->units->len; i++) {
        kn_vec_push(v, &units[i]->path);
        for (size_t k = 0; k < units[i]->n_files; k++) {
            kn_vec_push(v, &units[i]->files[k]);
        }
    }
    for (size_t i = 0; i < o->n_rulebooks; i++) {
        kn_vec_push(v, &o->rulebooks[i]);
    }
    for (size_t i = 0; i < kn_names_count(r->discovered); i++) {
        const char *p = kn_names_at(r->discovered, i);
        kn_vec_push(v, &p);
    }
    if (o->data) {
        kn_vec_push(v, &o->data);
    }
    if (o->query) {
        kn_vec_push(v, &o->query);
    }
    /* The baseline may be replaced by --write-baseline onto itself (the
     * refresh SPEC §7 allows), so it is listed by the callers that must
     * not replace it. */
    *n = v->len;
    const char **out = kn_alloc_array(r->arena, v->len + 1, sizeof *out);
    if (v->len) {
        memcpy(out, v->data, v->len * sizeof *out);
    }
    return out;
}

/* On the out-of-memory path the arena runs this: the temporary file goes. */
static void drop_output(void *p)
{
    if (p) {
        kn_output_close(p, false, stderr);
    }
}

FILE *kn_run_open_output(kn_run *r, const char *path, FILE *dflt, bool keep_existing)
{
    if (!path) {
        return dflt;
    }
    struct stat st;
    if (keep_existing && stat(path, &st) == 0 && S_ISREG(st.st_mode)) {
        fputs("knowable: not replacing '", r->err);
        kn_fput_term(r->err, path, strlen(path));
        fputs("': it exists (--force replaces it)\n", r->err);
        r->failed = true;
        return NULL;
    }
    size_t n;
    const char *const *inputs = kn_run_inputs(r, &n);
    kn_defer *d = kn_arena_defer(r->arena, drop_output, NULL);
    kn_output *o = kn_output_open(path, inputs, n, r->err);
    if (!o) {
        r->failed = true;
        return NULL;
    }
    d->ptr = o;
    kn_vec_push(r->outputs, &d);
    return kn_output_file(o);
}

bool kn_run_close_outputs(kn_run *r, bool ok)
{
    size_t n;
    const char *const *inputs = kn_run_inputs(r, &n);
    /* The baseline read may not be replaced by a report or a picture. */
    const char **refused = kn_alloc_array(r->arena, n + 2, sizeof *refused);
    memcpy(refused, inputs, n * sizeof *refused);
    refused[n++] = r->opt->baseline;
    kn_defer **ds = r->outputs->data;
    bool good = true;
    for (size_t i = 0; i < r->outputs->len; i++) {
        kn_output *o = ds[i]->ptr;
        ds[i]->ptr = NULL;
        kn_defer_run(r->arena, ds[i]);
        kn_output_refuse(o, refused, n);
        good = kn_output_close(o, ok && good, r->err) && good;
    }
    r->outputs->len = 0;
    if (!good) {
        r->failed = true;
    }
    return good;
}
