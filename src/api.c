/* api.c - the public entry points (include/knowable/knowable.h).  Each one
 * makes an arena, installs the out-of-memory jump target, runs the stages
 * of the pipeline in order and frees the arena on every path. */
#include "entry.h"
#include <knowable/knowable.h>

#include <setjmp.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "checks/checks.h"
#include "report/diag.h"
#include "report/render.h"
#include "rulebook/rulebook.h"
#include "schema/schema.h"
#include "util/arena.h"
#include "util/text.h"

void kn_options_init(kn_options *o)
{
    memset(o, 0, sizeof *o);
    o->format = KN_FORMAT_TEXT;
    o->fail_on = KN_FAIL_ON_ERROR;
    o->seed = 20261201;
}

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


static void render(FILE *out, kn_sink *sink, const kn_options *o, size_t n_schemas)
{
    kn_render_opts ro = {o->color, o->quiet, o->show_waived, n_schemas};
    switch (o->format) {
    case KN_FORMAT_TEXT:
    case KN_FORMAT_MARKDOWN:
        kn_render_text(out, sink, &ro);
        break;
    case KN_FORMAT_JSON:
        kn_render_json(out, sink, &ro);
        break;
    case KN_FORMAT_SARIF:
        kn_render_sarif(out, sink, &ro);
        break;
    }
}

/* --write-baseline: records the findings unless the check could not be
 * done (a baseline of a half-read schema would hide its real findings).
 * The baseline may replace the --baseline file, never another input. */
static bool write_baseline(kn_arena *a, const kn_sink *sink, const kn_options *o, const char *const *schemas,
                           size_t n, FILE *err)
{
    if (kn_sink_fatal(sink)) {
        fputs("knowable: not writing the baseline: the check could not be done\n", err);
        return false;
    }
    size_t n_inputs = 0;
    const char **inputs = kn_alloc_array(a, n + o->n_rulebooks + 1, sizeof *inputs);
    for (size_t i = 0; i < n; i++) {
        inputs[n_inputs++] = schemas[i];
    }
    for (size_t i = 0; i < o->n_rulebooks; i++) {
        inputs[n_inputs++] = o->rulebooks[i];
    }
    inputs[n_inputs++] = o->data;
    if (!kn_baseline_write(sink, o->write_baseline, inputs, n_inputs, err)) {
        return false;
    }
    if (!o->quiet) {
        size_t total;
        kn_sink_diags(sink, &total);
        fprintf(err, "knowable: recorded %zu finding%s in the baseline\n", total - kn_sink_waived(sink),
                total - kn_sink_waived(sink) == 1 ? "" : "s");
    }
    return true;
}

/* Runs every analysis on a schema that loaded without schema errors.  Each
 * family of rules adds its one call here, in pipeline order. */
static void analyse(kn_ctx *ctx, kn_schema *s, const kn_options *o)
{
    /* timeline + availability (src/time/timeline.c, src/checks/availability.c);
     * t is NULL when the moment did not resolve, and later families read it. */
    kn_timeline *t = kn_timeline_solve(ctx->arena, ctx->sink, s, ctx->rulebook->strict_moment);
    kn_check_availability(ctx, s, t);
    kn_check_provenance(ctx, s);
    kn_check_identity(ctx, s, t);
    kn_check_preparation(ctx, s, t);
    if (o->data) {
        kn_check_data(ctx, s, o->data, o->max_rows, o->seed);
    }
}

kn_status kn_check(const kn_options *o, const char *const *schemas, size_t n, FILE *out, FILE *err)
{
    KN_ENTRY_ARENA(a, err);

    kn_sink *sink = kn_sink_new(a);
    kn_rulebook *rb = kn_rulebook_for(a, sink, o->rulebooks, o->n_rulebooks, n ? schemas[0] : NULL, o->root);
    kn_status status = KN_EXIT_OK;
    if (kn_sink_fatal(sink)) {
        kn_sink_finish(sink);
        render(out, sink, o, 0);
        kn_arena_free(a);
        return KN_EXIT_FAILED;
    }
    kn_rulebook_apply(rb, sink);
    kn_ctx ctx = {a, sink, rb, today(a, o)};

    kn_load_options lo = {0};
    lo.root = o->root;
    kn_yaml_limits_default(&lo.limits);
    lo.rulebook = rb;
    kn_schema **loaded = kn_alloc_array(a, n ? n : 1, sizeof *loaded);
    for (size_t i = 0; i < n; i++) {
        loaded[i] = kn_schema_load(a, sink, schemas[i], &lo);
        if (loaded[i]) {
            analyse(&ctx, loaded[i], o);
        }
    }
    kn_sink_finish(sink);
    /* After finish: waivers and baselines act on the final list.
     * (waivers.c and baseline.c add their calls here.) */
    for (size_t i = 0; i < n; i++) {
        if (loaded[i]) {
            kn_check_waivers(&ctx, loaded[i]);
        }
    }
    if (o->baseline && !kn_baseline_apply(sink, o->baseline, err)) {
        kn_arena_free(a);
        return KN_EXIT_FAILED;
    }
    if (o->write_baseline && !write_baseline(a, sink, o, schemas, n, err)) {
        kn_arena_free(a);
        return KN_EXIT_FAILED;
    }
    render(out, sink, o, n);
    if (kn_sink_fatal(sink)) {
        status = KN_EXIT_FAILED;
    } else if (o->fail_on != KN_FAIL_ON_NEVER && kn_sink_has(sink, (kn_severity)o->fail_on)) {
        status = KN_EXIT_FINDINGS;
    }
    kn_arena_free(a);
    return status;
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

kn_status kn_rules(const kn_options *o, FILE *out, FILE *err)
{
    KN_ENTRY_ARENA(a, err);
    kn_sink *sink = kn_sink_new(a);
    kn_rulebook *rb = kn_rulebook_for(a, sink, o->rulebooks, o->n_rulebooks, NULL, NULL);
    if (kn_sink_fatal(sink)) {
        kn_sink_finish(sink);
        render(out, sink, o, 0);
        kn_arena_free(a);
        return KN_EXIT_FAILED;
    }
    const char *family = "";
    for (size_t i = 0; i < KN_RULE_COUNT; i++) {
        const kn_rule_info *info = kn_rule_get((kn_rule)i);
        if (strcmp(family, info->family) != 0) {
            family = info->family;
            fprintf(out, "%s%s\n", i ? "\n" : "", family);
        }
        fprintf(out, "  %-30s %-8s %s\n", info->id, kn_severity_name(rb->severity[i]), info->summary);
    }
    fprintf(out, "\nseverities from %s; `knowable explain RULE` tells more\n", rb->origin);
    kn_arena_free(a);
    return KN_EXIT_OK;
}
