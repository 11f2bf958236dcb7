/* render_sarif.c - the SARIF 2.1.0 report of a finished sink, for code
 * hosts that show findings on the lines of a pull request.  One run; its
 * tool.driver lists every rule of the one rule table (rules.def) with the
 * explain texts as help; each shown diagnostic becomes a result with its
 * location, its notes as related locations and its fingerprint.  Columns
 * count characters, so the run says columnKind unicodeCodePoints. */
#include <inttypes.h>
#include <string.h>

#include <knowable/knowable.h>

#include "../util/text.h"
#include "render.h"

#define SARIF_SCHEMA "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json"

static const char *level_of(kn_severity s)
{
    switch (s) {
    case KN_SEV_ERROR:
        return "error";
    case KN_SEV_WARNING:
        return "warning";
    case KN_SEV_NOTE:
    case KN_SEV_OFF:
        break;
    }
    return "note";
}

/* A path as a URI reference: relative paths stay relative (without a
 * leading "./") so a code host resolves them against the checkout;
 * absolute ones become file:// URIs.  Bytes outside the unreserved set
 * and '/' are percent-encoded, which also keeps a ':' in the first
 * segment from reading as a scheme. */
static void put_uri(FILE *out, const char *path)
{
    static const char hex[] = "0123456789ABCDEF";
    fputc('"', out);
    if (path[0] == '/') {
        fputs("file://", out);
    } else {
        while (path[0] == '.' && path[1] == '/') {
            path += 2;
            while (*path == '/') {
                path++;
            }
        }
    }
    for (const unsigned char *p = (const unsigned char *)path; *p; p++) {
        unsigned char c = *p;
        if ((c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '-' ||
            c == '.' || c == '_' || c == '~' || c == '/') {
            fputc(c, out);
        } else {
            fprintf(out, "%%%c%c", hex[c >> 4], hex[c & 15]);
        }
    }
    fputc('"', out);
}

/* Positions inside text compiled into knowable (the built-in rulebook,
 * whose display name the loader writes in parentheses) name no file that
 * a code host could show; such locations keep their message only. */
static bool in_a_file(const kn_pos *p)
{
    return p->file[0] && p->file[0] != '(';
}

static void put_physical(FILE *out, int indent, const kn_pos *p)
{
    fprintf(out, "%*s\"physicalLocation\": {\n", indent, "");
    fprintf(out, "%*s\"artifactLocation\": {\"uri\": ", indent + 2, "");
    put_uri(out, p->file);
    fputc('}', out);
    if (p->line) {
        fprintf(out, ",\n%*s\"region\": {\"startLine\": %u, \"startColumn\": %u}", indent + 2, "", p->line,
                p->col ? p->col : 1);
    }
    fprintf(out, "\n%*s}", indent, "");
}

static void put_text(FILE *out, const char *key, const char *text)
{
    fprintf(out, "\"%s\": {\"text\": ", key);
    kn_fput_json_str(out, text);
    fputc('}', out);
}

static void put_json_part(FILE *out, const char *s)
{
    kn_fput_json(out, s, strlen(s));
}

static void put_rule(FILE *out, kn_rule r, bool last)
{
    const kn_rule_info *info = kn_rule_get(r);
    const kn_explain_text *t = kn_rule_explain(r);
    fputs("            {\n              \"id\": ", out);
    kn_fput_json_str(out, info->id);
    fputs(",\n              ", out);
    put_text(out, "shortDescription", info->summary);
    fputs(",\n              ", out);
    put_text(out, "fullDescription", t->finds);
    fputs(",\n              \"help\": {\n                \"text\": \"", out);
    put_json_part(out, t->finds);
    put_json_part(out, "\n\nWhy it matters: ");
    put_json_part(out, t->why);
    put_json_part(out, "\n\nExample:\n");
    put_json_part(out, t->example);
    put_json_part(out, "\n\nHow to fix it: ");
    put_json_part(out, t->fix);
    fputs("\",\n                \"markdown\": \"", out);
    put_json_part(out, t->finds);
    put_json_part(out, "\n\n**Why it matters.** ");
    put_json_part(out, t->why);
    put_json_part(out, "\n\n**Example.**\n\n```yaml\n");
    put_json_part(out, t->example);
    put_json_part(out, "\n```\n\n**How to fix it.** ");
    put_json_part(out, t->fix);
    put_json_part(out, "\n\n`knowable explain ");
    put_json_part(out, info->id);
    put_json_part(out, "` prints this text.");
    fprintf(out, "\"\n              },\n              \"defaultConfiguration\": {\"level\": \"%s\"},\n",
            level_of(info->severity));
    fputs("              \"properties\": {\"tags\": [", out);
    kn_fput_json_str(out, info->family);
    fputs("]}\n", out);
    fputs(last ? "            }\n" : "            },\n", out);
}

static void put_result(FILE *out, const kn_diag *d, bool last)
{
    fputs("        {\n          \"ruleId\": ", out);
    kn_fput_json_str(out, kn_rule_get(d->rule)->id);
    fprintf(out, ",\n          \"ruleIndex\": %d,\n", (int)d->rule);
    fprintf(out, "          \"level\": \"%s\",\n          ", level_of(d->severity));
    put_text(out, "message", d->message);
    fputs(",\n", out);
    if (in_a_file(&d->pos)) {
        fputs("          \"locations\": [\n            {\n", out);
        put_physical(out, 14, &d->pos);
        fputs("\n            }\n          ],\n", out);
    }
    if (d->n_notes) {
        fputs("          \"relatedLocations\": [\n", out);
        for (size_t i = 0; i < d->n_notes; i++) {
            const kn_note *n = &d->notes[i];
            fprintf(out, "            {\n              \"id\": %zu,\n", i + 1);
            if (in_a_file(&n->pos)) {
                put_physical(out, 14, &n->pos);
                fputs(",\n", out);
            }
            fputs("              ", out);
            put_text(out, "message", n->message);
            fputs(i + 1 == d->n_notes ? "\n            }\n" : "\n            },\n", out);
        }
        fputs("          ],\n", out);
    }
    if (d->waived) {
        fputs("          \"suppressions\": [{\"kind\": \"inSource\"}],\n", out);
    }
    fprintf(out, "          \"partialFingerprints\": {\"knowable/v1\": \"%016" PRIx64 "\"}\n", d->fingerprint);
    fputs(last ? "        }\n" : "        },\n", out);
}

static bool reported(const kn_diag *d, const kn_render_opts *o)
{
    return !d->baselined && (!d->waived || o->show_waived);
}

void kn_render_sarif(FILE *out, const kn_sink *s, const kn_render_opts *o)
{
    fputs("{\n  \"$schema\": \"" SARIF_SCHEMA "\",\n  \"version\": \"2.1.0\",\n  \"runs\": [\n    {\n", out);
    fputs("      \"tool\": {\n        \"driver\": {\n          \"name\": \"knowable\",\n", out);
    fputs("          \"version\": \"" KN_VERSION_STRING "\",\n", out);
    fputs("          \"semanticVersion\": \"" KN_VERSION_STRING "\",\n          \"rules\": [\n", out);
    for (size_t r = 0; r < KN_RULE_COUNT; r++) {
        put_rule(out, (kn_rule)r, r + 1 == KN_RULE_COUNT);
    }
    fputs("          ]\n        }\n      },\n", out);
    fprintf(out, "      \"invocations\": [{\"executionSuccessful\": %s}],\n",
            kn_sink_fatal(s) ? "false" : "true");
    fputs("      \"columnKind\": \"unicodeCodePoints\",\n      \"results\": [", out);
    size_t n;
    kn_diag **all = kn_sink_diags(s, &n);
    size_t shown = 0, done = 0;
    for (size_t i = 0; i < n; i++) {
        shown += reported(all[i], o);
    }
    fputs(shown ? "\n" : "]\n", out);
    for (size_t i = 0; i < n; i++) {
        if (reported(all[i], o)) {
            done++;
            put_result(out, all[i], done == shown);
        }
    }
    if (shown) {
        fputs("      ]\n", out);
    }
    fputs("    }\n  ]\n}\n", out);
}
