/* commands.c - the public entry points (include/knowable/knowable.h).  Each
 * is a short function over one run (run.h): the arena and its
 * out-of-memory target come from KN_ENTRY_ARENA, everything else from the
 * run, so the commands resolve rulebooks, load schemas, report problems
 * and choose exit statuses the same way. */
#include "entry.h"

#include <string.h>

#include "../checks/checks.h"
#include "../data/odbc.h"
#include "../data/sql.h"
#include "../docs/docs.h"
#include "../report/render.h"
#include "../schema/shape.h"
#include "../util/text.h"
#include "run.h"

#define FMT(f) (1u << (f))

void kn_options_init(kn_options *o)
{
    memset(o, 0, sizeof *o);
    o->format = KN_FORMAT_DEFAULT;
    o->fail_on = KN_FAIL_ON_ERROR;
    o->seed = 20261201;
}

/* Ends a run: closes its outputs, frees the arena, returns the status. */
static kn_status end(kn_run *r, kn_status status)
{
    if (!kn_run_close_outputs(r, status != KN_EXIT_FAILED)) {
        status = KN_EXIT_FAILED;
    }
    kn_arena_free(r->arena);
    return status;
}

/* For the commands that write a document, not diagnostics: what stopped
 * them goes to err in the usual diagnostic form. */
static kn_status refuse(kn_run *r, const char *what)
{
    kn_run_finish(r);
    kn_run_render(r, r->err, KN_FORMAT_TEXT);
    if (what) {
        fprintf(r->err, "knowable: %s\n", what);
    }
    return end(r, KN_EXIT_FAILED);
}

/* --write-baseline: records the findings unless the check could not be
 * done (a baseline of a half-read schema would hide its real findings). */
static bool write_baseline(kn_run *r)
{
    const kn_options *o = r->opt;
    if (kn_run_status(r) == KN_EXIT_FAILED) {
        fputs("knowable: not writing the baseline: the check could not be done\n", r->err);
        return false;
    }
    size_t n;
    const char *const *inputs = kn_run_inputs(r, &n);
    if (!kn_baseline_write(r->sink, o->write_baseline, inputs, n, r->err)) {
        return false;
    }
    if (!o->quiet) {
        size_t shown = kn_sink_count(r->sink, KN_SEV_ERROR) + kn_sink_count(r->sink, KN_SEV_WARNING) +
                       kn_sink_count(r->sink, KN_SEV_NOTE) + kn_sink_baselined(r->sink);
        fprintf(r->err, "knowable: recorded %zu finding%s in the baseline\n", shown, shown == 1 ? "" : "s");
    }
    return true;
}

/* check --data 'odbc:...': refused when knowable was built without
 * database support or without one of --table and --query; the query file
 * is read here.  The checks themselves run as for a CSV file
 * (kn_run_analyse, src/checks/data_db.c). */
static const char *read_query(kn_run *r, const char *path);

static bool database_options(kn_run *r)
{
    const kn_options *o = r->opt;
    if (!kn_odbc_built()) {
        fputs("knowable: --data odbc:... needs database support, and this knowable was built without it "
              "(unixODBC: Debian's unixodbc-dev, then meson setup -Dodbc=enabled)\n",
              r->err);
        return false;
    }
    if (!o->table == !o->query || (o->table && !o->table[0])) {
        fputs("knowable: --data odbc:... needs --table NAME or --query FILE.sql (one of them)\n", r->err);
        return false;
    }
    if (o->query && !(r->query_sql = read_query(r, o->query))) {
        return false;
    }
    r->database = true;
    return true;
}

kn_status kn_check(const kn_options *o, const char *const *schemas, size_t n, FILE *out, FILE *err)
{
    KN_ENTRY_ARENA(a, err);
    kn_run r;
    kn_run_init(&r, a, "check", o, out, err);
    kn_format fmt = kn_run_format(&r, FMT(KN_FORMAT_TEXT) | FMT(KN_FORMAT_JSON) | FMT(KN_FORMAT_SARIF),
                                  KN_FORMAT_TEXT);
    if (r.failed || !kn_run_read_baseline(&r)) {
        return end(&r, KN_EXIT_FAILED);
    }
    if (kn_odbc_is_connection(o->data)) {
        if (!database_options(&r)) {
            return end(&r, KN_EXIT_FAILED);
        }
    } else if (o->table || o->query) {
        fputs("knowable: --table and --query go with a database --data 'odbc:...'\n", err);
        return end(&r, KN_EXIT_FAILED);
    }
    for (size_t i = 0; i < n; i++) {
        kn_unit *u = kn_run_load(&r, schemas[i]);
        kn_run_analyse(&r, u);
        kn_run_release(&r, u); /* its findings are recorded */
    }
    kn_run_finish(&r);
    FILE *report = kn_run_open_output(&r, o->output, out, false);
    if (!report) {
        return end(&r, KN_EXIT_FAILED);
    }
    kn_status status = kn_run_status(&r);
    if (o->write_baseline) {
        /* Writing the baseline is the job: it succeeds with exit 0. */
        status = write_baseline(&r) ? KN_EXIT_OK : KN_EXIT_FAILED;
    }
    kn_run_render(&r, report, fmt);
    return end(&r, status);
}

kn_status kn_sources(const kn_options *o, const char *const *schemas, size_t n, FILE *out, FILE *err)
{
    KN_ENTRY_ARENA(a, err);
    kn_run r;
    kn_run_init(&r, a, "sources", o, out, err);
    kn_format fmt = kn_run_format(&r, FMT(KN_FORMAT_MARKDOWN) | FMT(KN_FORMAT_JSON), KN_FORMAT_MARKDOWN);
    if (r.failed) {
        return end(&r, KN_EXIT_FAILED);
    }
    kn_unit **units = kn_alloc_array(a, n ? n : 1, sizeof *units);
    bool ok = n > 0;
    for (size_t i = 0; i < n; i++) {
        units[i] = kn_run_load(&r, schemas[i]);
        ok = ok && units[i]->schema && units[i]->schema->shape_ok;
    }
    if (!ok || kn_sink_fatal(r.sink)) {
        return refuse(&r, "the schema has errors (above); fix them before writing its register of sources");
    }
    /* The register lists what the check finds against each source. */
    kn_schema **loaded = kn_alloc_array(a, n, sizeof *loaded);
    const kn_rulebook **rbs = kn_alloc_array(a, n, sizeof *rbs);
    const kn_doc_findings **found = kn_alloc_array(a, n, sizeof *found);
    for (size_t i = 0; i < n; i++) {
        kn_run_analyse(&r, units[i]);
        loaded[i] = units[i]->schema;
        rbs[i] = units[i]->rulebook;
    }
    kn_run_finish(&r);
    for (size_t i = 0; i < n; i++) {
        found[i] = kn_doc_findings_make(a, r.sink, i + 1, loaded[i], units[i]->timeline);
    }
    FILE *doc = kn_run_open_output(&r, o->output, out, false);
    if (!doc) {
        return end(&r, KN_EXIT_FAILED);
    }
    kn_sources_write(doc, a, loaded, rbs, found, n, fmt == KN_FORMAT_JSON);
    return end(&r, KN_EXIT_OK);
}

kn_status kn_timeline_report(const kn_options *o, const char *schema, FILE *out, FILE *err)
{
    KN_ENTRY_ARENA(a, err);
    kn_run r;
    kn_run_init(&r, a, "timeline", o, out, err);
    kn_run_format(&r, FMT(KN_FORMAT_TEXT), KN_FORMAT_TEXT);
    if (r.failed) {
        return end(&r, KN_EXIT_FAILED);
    }
    kn_unit *u = kn_run_load(&r, schema);
    if (!u->schema || !u->schema->shape_ok || kn_sink_fatal(r.sink)) {
        return refuse(&r, "the schema has errors (above); fix them before placing its timeline");
    }
    /* The same analysis as `check`: the documents show its findings, and
     * contradictions are part of the report itself. */
    kn_run_analyse(&r, u);
    kn_run_finish(&r);
    const kn_doc_findings *found = kn_doc_findings_make(a, r.sink, 0, u->schema, u->timeline);
    FILE *text = kn_run_open_output(&r, o->output, out, false);
    FILE *svg = text ? kn_run_open_output(&r, o->svg, NULL, false) : NULL;
    if (!text || (o->svg && !svg)) {
        return end(&r, KN_EXIT_FAILED);
    }
    kn_timeline_write_text(text, u->schema, u->timeline, found);
    if (svg) {
        kn_timeline_write_svg(svg, u->schema, u->timeline, found);
    }
    return end(&r, KN_EXIT_OK);
}

kn_status kn_init(const kn_options *o, const char *csv, FILE *out, FILE *err)
{
    KN_ENTRY_ARENA(a, err);
    kn_run r;
    kn_run_init(&r, a, "init", o, out, err);
    kn_run_format(&r, 0, KN_FORMAT_DEFAULT);
    if (r.failed) {
        return end(&r, KN_EXIT_FAILED);
    }
    /* The rulebook that will judge the draft: the one found from where it
     * is written (-o), or from the current folder for standard output. */
    kn_rulebook *rb = kn_run_rulebook(&r, o->output ? o->output : "./draft.knowable.yaml");
    if (!rb) {
        return refuse(&r, NULL);
    }
    FILE *draft = kn_run_open_output(&r, o->output, out, !o->force);
    if (!draft) {
        return end(&r, KN_EXIT_FAILED);
    }
    if (!kn_init_write(draft, r.sink, a, csv, o->max_rows, rb)) {
        kn_run_close_outputs(&r, false);
        return refuse(&r, NULL);
    }
    return end(&r, KN_EXIT_OK);
}

/* The text of --query FILE.sql (at most 1 MiB), or NULL with a message. */
static const char *read_query(kn_run *r, const char *path)
{
    enum { MAX_QUERY = 1 << 20 };
    FILE *f = fopen(path, "rb");
    if (!f) {
        fputs("knowable: cannot read the query file ", r->err);
        kn_fput_term(r->err, path, strlen(path));
        fputs("\n", r->err);
        return NULL;
    }
    char *text = kn_alloc(r->arena, MAX_QUERY + 1);
    size_t n = fread(text, 1, MAX_QUERY + 1, f);
    bool bad = ferror(f) || n > MAX_QUERY;
    fclose(f);
    if (bad || n == 0 || memchr(text, '\0', n)) {
        fputs("knowable: the query file ", r->err);
        kn_fput_term(r->err, path, strlen(path));
        fputs(n > MAX_QUERY ? " is larger than 1 MiB\n" : " is empty, unreadable or holds a NUL byte\n", r->err);
        return NULL;
    }
    text[n] = '\0';
    return text;
}

kn_status kn_sql(const kn_options *o, const char *schema, FILE *out, FILE *err)
{
    KN_ENTRY_ARENA(a, err);
    kn_run r;
    kn_run_init(&r, a, "sql", o, out, err);
    kn_run_format(&r, 0, KN_FORMAT_DEFAULT);
    if (r.failed) {
        return end(&r, KN_EXIT_FAILED);
    }
    kn_sql_dialect d = KN_SQL_ANSI;
    if (o->dialect && !kn_sql_dialect_parse(o->dialect, &d)) {
        fputs("knowable: unknown dialect '", err);
        kn_fput_term(err, o->dialect, strlen(o->dialect));
        fputs("' (postgresql, mysql, sqlite or ansi)\n", err);
        return end(&r, KN_EXIT_FAILED);
    }
    if (!o->table == !o->query || (o->table && !o->table[0])) {
        fputs("knowable: sql needs --table NAME or --query FILE.sql (one of them)\n", err);
        return end(&r, KN_EXIT_FAILED);
    }
    const char *query_sql = o->query ? read_query(&r, o->query) : NULL;
    if (o->query && !query_sql) {
        return end(&r, KN_EXIT_FAILED);
    }
    kn_unit *u = kn_run_load(&r, schema);
    if (!u->schema || !u->schema->shape_ok || !u->rulebook || kn_sink_fatal(r.sink)) {
        return refuse(&r, "the schema has errors (above); fix them before writing its queries");
    }
    kn_sql_plan plan;
    kn_sql_make(a, u->schema, u->rulebook, o->table, query_sql, d,
                o->max_groups > 0 ? (unsigned long long)o->max_groups : KN_SQL_MAX_GROUPS, o->seed, &plan);
    FILE *doc = kn_run_open_output(&r, o->output, out, false);
    if (!doc) {
        return end(&r, KN_EXIT_FAILED);
    }
    kn_sql_write(doc, a, &plan, u->schema->path, o->table, d);
    return end(&r, KN_EXIT_OK);
}

kn_status kn_json_schema(const kn_options *o, FILE *out, FILE *err)
{
    KN_ENTRY_ARENA(a, err);
    kn_run r;
    kn_run_init(&r, a, "json-schema", o, out, err);
    kn_run_format(&r, 0, KN_FORMAT_DEFAULT);
    FILE *doc = r.failed ? NULL : kn_run_open_output(&r, o->output, out, false);
    if (!doc) {
        return end(&r, KN_EXIT_FAILED);
    }
    kn_json_schema_write(doc);
    return end(&r, KN_EXIT_OK);
}

kn_status kn_rules(const kn_options *o, const char *schema, FILE *out, FILE *err)
{
    KN_ENTRY_ARENA(a, err);
    kn_run r;
    kn_run_init(&r, a, "rules", o, out, err);
    kn_rulebook *rb = kn_run_rulebook(&r, schema);
    if (!rb) {
        return refuse(&r, NULL);
    }
    const char *family = "";
    for (size_t i = 0; i < KN_RULE_COUNT; i++) {
        const kn_rule_info *info = kn_rule_get((kn_rule)i);
        if (strcmp(family, info->family) != 0) {
            family = info->family;
            fprintf(out, "%s%s\n", i ? "\n" : "", family);
        }
        fprintf(out, "  %-30s %-8s %s", info->id, kn_severity_name(rb->severity[i]), info->summary);
        if (rb->severity_from[i]) {
            fputs(" (set by ", out);
            kn_fput_term(out, rb->severity_from[i], strlen(rb->severity_from[i]));
            fputc(')', out);
        }
        fputc('\n', out);
    }
    fputs("\nrulebook: ", out);
    kn_fput_term(out, rb->origin, strlen(rb->origin));
    fputs(schema ? " (the one in force for this schema)" : "", out);
    fputs("; severities without \"set by\" are the built-in defaults; `knowable explain RULE` tells more\n", out);
    return end(&r, KN_EXIT_OK);
}

/* Writes text indented by two spaces, wrapped at 78 columns. */
static void put_wrapped(FILE *out, const char *text)
{
    const size_t width = 76;
    const char *p = text;
    while (*p) {
        while (*p == ' ') {
            p++;
        }
        size_t len = strlen(p), take = len;
        if (len > width) {
            take = width;
            while (take > 0 && p[take] != ' ') {
                take--;
            }
            if (take == 0) {
                take = width;
            }
        }
        fprintf(out, "  %.*s\n", (int)take, p);
        p += take;
    }
}

kn_status kn_explain(const char *rule, FILE *out, FILE *err)
{
    kn_rule r;
    if (!kn_rule_find(rule, strlen(rule), &r)) {
        const char *ids[KN_RULE_COUNT];
        for (size_t i = 0; i < KN_RULE_COUNT; i++) {
            ids[i] = kn_rule_get((kn_rule)i)->id;
        }
        const char *near = kn_suggest(rule, ids, KN_RULE_COUNT);
        fputs("knowable: no rule '", err);
        kn_fput_term(err, rule, strlen(rule));
        if (near) {
            fprintf(err, "'; did you mean '%s'?\n", near);
        } else {
            fputs("'; `knowable rules` lists them all\n", err);
        }
        return KN_EXIT_FAILED;
    }
    const kn_rule_info *info = kn_rule_get(r);
    const kn_explain_text *t = kn_rule_explain(r);
    fprintf(out, "%s (%s, default %s)\n\n  %c%s.\n", info->id, info->family, kn_severity_name(info->severity),
            info->summary[0] >= 'a' && info->summary[0] <= 'z' ? info->summary[0] - 'a' + 'A' : info->summary[0],
            info->summary + 1);
    fputs("\nWhat it finds\n", out);
    put_wrapped(out, t->finds);
    fputs("\nWhy it matters\n", out);
    put_wrapped(out, t->why);
    fputs("\nExample\n", out);
    const char *p = t->example;
    while (*p) {
        const char *nl = strchr(p, '\n');
        size_t len = nl ? (size_t)(nl - p) : strlen(p);
        fprintf(out, "    %.*s\n", (int)len, p);
        p += len + (nl ? 1 : 0);
    }
    fputs("\nHow to fix it\n", out);
    put_wrapped(out, t->fix);
    return KN_EXIT_OK;
}
