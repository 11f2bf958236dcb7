/* render_json.c - the JSON report of a finished sink (SPEC §7):
 * {"version": 1, "diagnostics": [...], "summary": {...}}.  Keys come in a
 * fixed order so that reports diff cleanly; every string goes through
 * kn_fput_json (quotes, control characters, invalid UTF-8 replaced).
 * Durations appear only inside messages, which stay text. */
#include <inttypes.h>
#include <string.h>

#include "../util/text.h"
#include "../time/duration.h"
#include "render.h"

static void put_key(FILE *out, int indent, const char *key)
{
    fprintf(out, "%*s\"%s\": ", indent, "", key);
}

static void put_str_field(FILE *out, int indent, const char *key, const char *value, bool last)
{
    put_key(out, indent, key);
    kn_fput_json_str(out, value);
    fputs(last ? "\n" : ",\n", out);
}

static void put_uint_field(FILE *out, int indent, const char *key, unsigned long long value, bool last)
{
    put_key(out, indent, key);
    fprintf(out, "%llu%s", value, last ? "\n" : ",\n");
}

/* "data": the rows read, the rows the statistics used, and each statistic
 * skipped because the data cannot support it (SPEC §4.7). */
static void put_data_summary(FILE *out, const kn_sink *s)
{
    unsigned long long kept, total;
    kn_sink_sample(s, &kept, &total);
    size_t n;
    const kn_data_skip *k = kn_sink_data_skips(s, &n);
    fputs("    \"data\": {\n", out);
    put_uint_field(out, 6, "rows", total, false);
    put_uint_field(out, 6, "sample_rows", kept, false);
    put_key(out, 6, "skipped");
    fputs(n ? "[\n" : "[]\n", out);
    for (size_t i = 0; i < n; i++) {
        fputs("        {\n", out);
        put_str_field(out, 10, "rule", kn_rule_get(k[i].rule)->id, false);
        put_str_field(out, 10, "subject", k[i].subject, false);
        put_str_field(out, 10, "statistic", k[i].statistic, false);
        put_str_field(out, 10, "reason", k[i].reason, true);
        fputs(i + 1 < n ? "        },\n" : "        }\n", out);
    }
    if (n) {
        fputs("      ]\n", out);
    }
    fputs("    }\n", out);
}

static void put_note(FILE *out, const kn_note *n, bool last)
{
    fputs("        {\n", out);
    put_str_field(out, 10, "file", n->pos.file, false);
    put_uint_field(out, 10, "line", n->pos.line, false);
    put_uint_field(out, 10, "column", n->pos.col, false);
    put_str_field(out, 10, "message", n->message, true);
    fputs(last ? "        }\n" : "        },\n", out);
}

static void put_seconds(FILE *out, int64_t us)
{
    if (us >= KN_TIME_INF || us <= -KN_TIME_INF) {
        fputs("null", out);
    } else if (us % KN_US_PER_SEC == 0) {
        fprintf(out, "%" PRId64, us / KN_US_PER_SEC);
    } else {
        fprintf(out, "%.6f", kn_time_seconds(us));
    }
}

static void put_diag(FILE *out, const kn_diag *d, bool last)
{
    char fp[17];
    snprintf(fp, sizeof fp, "%016" PRIx64, d->fingerprint);
    fputs("    {\n", out);
    put_str_field(out, 6, "rule", kn_rule_get(d->rule)->id, false);
    put_str_field(out, 6, "severity", kn_severity_name(d->severity), false);
    put_str_field(out, 6, "message", d->message, false);
    put_str_field(out, 6, "file", d->pos.file, false);
    put_uint_field(out, 6, "line", d->pos.line, false);
    put_uint_field(out, 6, "column", d->pos.col, false);
    put_str_field(out, 6, "subject", d->subject, false);
    put_str_field(out, 6, "fingerprint", fp, false);
    put_key(out, 6, "waived");
    fputs(d->waived ? "true,\n" : "false,\n", out);
    if (d->has_range) {
        /* When the value is available, relative to the moment, in seconds;
         * null for an unbounded end. */
        put_key(out, 6, "available_seconds");
        fputs("{\"from\": ", out);
        put_seconds(out, d->range_lo);
        fputs(", \"to\": ", out);
        put_seconds(out, d->range_hi);
        fputs("},\n", out);
    }
    put_key(out, 6, "notes");
    if (!d->n_notes) {
        fputs("[]\n", out);
    } else {
        fputs("[\n", out);
        for (size_t i = 0; i < d->n_notes; i++) {
            put_note(out, &d->notes[i], i + 1 == d->n_notes);
        }
        fputs("      ]\n", out);
    }
    fputs(last ? "    }\n" : "    },\n", out);
}

static bool reported(const kn_diag *d, const kn_render_opts *o)
{
    return !d->baselined && (!d->waived || o->show_waived);
}

void kn_render_json(FILE *out, const kn_sink *s, const kn_render_opts *o)
{
    size_t n;
    kn_diag **all = kn_sink_diags(s, &n);
    size_t shown = 0, done = 0;
    for (size_t i = 0; i < n; i++) {
        shown += reported(all[i], o);
    }
    fputs("{\n  \"version\": 1,\n  \"diagnostics\": [", out);
    fputs(shown ? "\n" : "],\n", out);
    for (size_t i = 0; i < n; i++) {
        if (reported(all[i], o)) {
            done++;
            put_diag(out, all[i], done == shown);
        }
    }
    if (shown) {
        fputs("  ],\n", out);
    }
    fputs("  \"summary\": {\n", out);
    put_uint_field(out, 4, "errors", kn_sink_count(s, KN_SEV_ERROR), false);
    put_uint_field(out, 4, "warnings", kn_sink_count(s, KN_SEV_WARNING), false);
    put_uint_field(out, 4, "notes", kn_sink_count(s, KN_SEV_NOTE), false);
    put_uint_field(out, 4, "waived", kn_sink_waived(s), false);
    put_uint_field(out, 4, "baselined", kn_sink_baselined(s), false);
    put_uint_field(out, 4, "schemas", o->n_schemas, !kn_sink_has_data(s));
    if (kn_sink_has_data(s)) {
        put_data_summary(out, s);
    }
    fputs("  }\n}\n", out);
}
