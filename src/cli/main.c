/* main.c - the knowable command line: parses options, calls the public API
 * (include/knowable/knowable.h) and nothing else, and leaves through one
 * exit path that checks that standard output was written. */
#include <knowable/knowable.h>

#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define MAX_SCHEMAS 1024

static const char usage_text[] =
    "usage: knowable COMMAND [OPTIONS] ...\n"
    "\n"
    "Prove, from a YAML schema beside your code, that every column of a training\n"
    "table is known at the prediction moment.\n"
    "\n"
    "commands:\n"
    "  check [OPTIONS] [--] SCHEMA... lint schemas (the main job)\n"
    "  explain RULE                   what a rule finds, why, how to fix it\n"
    "  rules [--rulebook F] [SCHEMA]  every rule with its effective severity\n"
    "  sources [--format markdown|json] [-o FILE] [--] SCHEMA...\n"
    "                                 register of feature sources and their provenance\n"
    "  timeline [--svg FILE] [--] SCHEMA   each event and column placed relative to the moment\n"
    "  init [-o FILE [--force]] [--] DATA.csv   draft a schema from a data sample\n"
    "  sql (--table NAME | --query FILE.sql) [--dialect D] [--] SCHEMA\n"
    "                                 the data checks as aggregate SQL, for review\n"
    "  json-schema                    a JSON Schema of the schema format, for editors\n"
    "  lsp [--rulebook F] [--root D]  a language server for editors (LSP over stdin/stdout)\n"
    "  help COMMAND                   help on one command (`knowable help help`)\n"
    "\n"
    "  --help, --version\n"
    "\n"
    "Put -- before file names (knowable check -- $(git ls-files '*.knowable.yaml')):\n"
    "after it nothing is read as an option, whatever a file is called.  A schema\n"
    "named - is read from standard input.\n";

static const char check_help[] =
    "usage: knowable check [OPTIONS] [--] SCHEMA...\n"
    "\n"
    "Put -- before the schema files so that no file name is read as an option.\n"
    "A schema named - is read from standard input.\n"
    "\n"
    "options:\n"
    "  --data FILE            cross-check one schema against a CSV sample\n"
    "  --data 'odbc:CONN' (--table NAME | --query FILE.sql)\n"
    "                         the same checks on a database table, run by the engine\n"
    "  --rulebook FILE        house rulebook (repeatable; later ones override)\n"
    "  --format text|json|sarif\n"
    "  -o, --output FILE      write the report to FILE\n"
    "  --fail-on error|warning|note|never   exit 1 at this severity (default error)\n"
    "  --baseline FILE        report only findings not in FILE\n"
    "  --write-baseline FILE  record the current findings in FILE\n"
    "  --show-waived          print waived findings as notes\n"
    "  --color auto|always|never   auto: colour on a terminal, none when NO_COLOR is set\n"
    "                         or TERM=dumb; FORCE_COLOR or CLICOLOR_FORCE (not 0) force it\n"
    "  --root DIR             includes may not leave DIR, and rulebook discovery stops\n"
    "                         there (default: the repository the schema lies in, the\n"
    "                         nearest folder upwards with .git, else the schema's folder)\n"
    "  --stdin-name PATH      the path a schema read from - stands for: messages,\n"
    "                         includes, the root and rulebook discovery use it\n"
    "  --max-rows N           statistics on a sample of at most N data rows (default\n"
    "                         1000000; counted rules count every row); a file by\n"
    "                         reservoir sampling, a database by a seeded sample the\n"
    "                         engine draws\n"
    "  --max-groups N         in a database, read at most N rows per query (default\n"
    "                         20000); a column with more groups is finished by the engine\n"
    "  -q, --quiet            diagnostics only: no notes, no summary\n"
    "  --today YYYY-MM-DD     the date waivers' expires is compared with (default today,\n"
    "                         UTC, or KNOWABLE_TODAY)\n"
    "\n"
    "rulebook: without --rulebook, each schema is judged under the nearest\n"
    ".knowable-rules.yaml in its folder or a parent (no higher than its repository\n"
    "or --root), else the built-in default; `knowable rules SCHEMA` shows which.\n"
    "\n"
    "exit status: 0 nothing at or above --fail-on, 1 findings, 2 the check could not be done\n";

static const char explain_help[] = "usage: knowable explain RULE\n\nWhat RULE finds, why it matters, an example and how to fix it.\n";
static const char rules_help[] =
    "usage: knowable rules [--rulebook FILE]... [SCHEMA]\n\n"
    "Every rule with its effective severity: under the rulebooks named, else under the\n"
    "rulebook in force for SCHEMA (the nearest .knowable-rules.yaml), else the built-in\n"
    "default; each severity a rulebook set says which file set it.\n";
static const char help_help[] =
    "usage: knowable help [COMMAND]\n\n"
    "Without COMMAND, the list of commands; with one, its options.  The commands are\n"
    "check, explain, rules, sources, timeline, init, sql, json-schema, lsp and help.\n";
static const char sources_help[] =
    "usage: knowable sources [--format markdown|json] [-o FILE] [--rulebook FILE]... [--root DIR]\n"
    "                        [--] SCHEMA...\n\n"
    "The register of feature sources: external sources first, with their provenance,\n"
    "the findings of `check` against each (and the waivers declared on it), then which\n"
    "columns come from each source, by which key and as of which event.  The rulebook\n"
    "decides which provenance fields are required, as for `check`.\n";
static const char timeline_help[] =
    "usage: knowable timeline [--svg FILE] [--rulebook FILE] [--root DIR] [--] SCHEMA\n\n"
    "Each event's range relative to the moment, then each column's availability and verdict.\n"
    "--svg FILE also draws the picture.\n";
static const char init_help[] =
    "usage: knowable init [-o FILE [--force]] [--max-rows N] [--] DATA.csv\n\n"
    "A draft schema from a CSV sample's header and values (the first N rows, default\n"
    "10,000), with placeholders to fill in.  Cells the rulebook's missing_values name\n"
    "are missing; identifier_names marks identifiers.  The rulebook is --rulebook, or\n"
    "the one `check` will find for the draft (from -o FILE's folder, else this one).\n";
static const char lsp_help[] =
    "usage: knowable lsp [--rulebook FILE]... [--root DIR]\n\n"
    "A Language Server (LSP 3.17, JSON-RPC over standard input and output) for editors:\n"
    "the findings of `check` on open, change and save (unsaved buffers of the schema and\n"
    "of its open registers are used), hover, go to definition, completion and code\n"
    "actions.  Without --rulebook each schema uses the rulebook `check` would find.\n\n"
    "exit status: 0 after shutdown and exit, 1 when the input ends or exit comes\n"
    "without shutdown, 2 when knowable was built without the language server\n";
static const char sql_help[] =
    "usage: knowable sql [--dialect postgresql|mysql|sqlite|ansi] [-o FILE] (--table NAME | --query FILE.sql) [--] SCHEMA\n\n"
    "The queries `check --data odbc:...` runs for the data checks of SCHEMA, each commented\n"
    "with the rules it serves: counts, GROUP BY tables of a column and the target, split\n"
    "overlaps and quasi-identifier group sizes, so that only aggregated rows leave the\n"
    "engine.  Names are quoted identifiers of the dialect (default ansi); --table\n"
    "schema.table quotes each part; --query uses the rows of the query in FILE.sql.\n";
static const char json_schema_help[] = "usage: knowable json-schema [-o FILE]\n\nA JSON Schema (draft-07) of the schema file format.\n";

typedef struct args {
    kn_options opt;
    const char *positional[MAX_SCHEMAS];
    size_t n_positional;
    const char *output;
    const char *svg;
    const char *color; /* auto|always|never */
    bool help;
    const char *seen[64]; /* the options given, by their long names (first 64) */
    size_t n_seen;
} args;

/* Options that belong to some commands only, and the commands (a
 * space-separated list) that take each; any other option is common to
 * every command that reads schemas or writes a report.  `check --svg` is a
 * usage error (exit 2), not an option silently ignored. */
static const struct {
    const char *option, *commands;
} own_options[] = {
    {"--data", "check"},          {"--baseline", "check"},   {"--write-baseline", "check"},
    {"--fail-on", "check"},       {"--show-waived", "check"}, {"--max-rows", "check init"}, {"--max-groups", "check"},
    {"--table", "check sql"},     {"--query", "check sql"},  {"--dialect", "sql"},
    {"--svg", "timeline"},        {"--force", "init"},       {"--stdin-name", "check sources timeline rules"},
};

/* The first option given to cmd that belongs to other commands, or NULL. */
static const char *foreign_option(const args *ar, const char *cmd)
{
    size_t lc = strlen(cmd);
    for (size_t i = 0; i < ar->n_seen; i++) {
        for (size_t k = 0; k < sizeof own_options / sizeof *own_options; k++) {
            if (strcmp(ar->seen[i], own_options[k].option) != 0) {
                continue;
            }
            bool ok = false;
            for (const char *c = own_options[k].commands; *c && !ok;) {
                size_t n = strcspn(c, " ");
                ok = n == lc && strncmp(c, cmd, n) == 0;
                c += n;
                c += *c == ' ';
            }
            if (!ok) {
                return own_options[k].option;
            }
        }
    }
    return NULL;
}

/* A copy of the first n bytes of s that lives to the end of the process,
 * from a fixed pool (a command line holds few options; a name that does
 * not fit is kept as ""). */
static const char *kn_cli_strndup(const char *s, size_t n)
{
    static char pool[4096];
    static size_t used;
    if (used + n + 1 > sizeof pool) {
        return "";
    }
    char *p = pool + used;
    memcpy(p, s, n);
    p[n] = '\0';
    used += n + 1;
    return p;
}

/* The command being parsed, once known: a usage error points at its help. */
static const char *usage_command;

__attribute__((format(printf, 1, 2)))
static int bad(const char *fmt, ...)
{
    fputs("knowable: ", stderr);
    va_list ap;
    va_start(ap, fmt);
    vfprintf(stderr, fmt, ap);
    va_end(ap);
    if (usage_command) {
        fprintf(stderr, "\n(see 'knowable help %s')\n", usage_command);
    } else {
        fputs("\n(try 'knowable --help')\n", stderr);
    }
    return KN_EXIT_FAILED;
}

/* Takes the value of an option given as --opt VALUE or --opt=VALUE. */
static const char *value_of(int argc, char **argv, int *i, const char *name)
{
    const char *a = argv[*i];
    size_t n = strlen(name);
    if (strncmp(a, name, n) == 0 && a[n] == '=') {
        return a + n + 1;
    }
    if (strcmp(a, name) == 0) {
        /* "--" ends the options: it is never an option's value (check -o --
         * FILE would otherwise write the report to a file named "--"). */
        if (*i + 1 >= argc || strcmp(argv[*i + 1], "--") == 0) {
            return NULL;
        }
        return argv[++*i];
    }
    return NULL;
}

static bool is_opt(const char *a, const char *name)
{
    size_t n = strlen(name);
    return strncmp(a, name, n) == 0 && (a[n] == '\0' || a[n] == '=');
}

/* Whether an environment variable is set to something other than "" and "0". */
static bool env_on(const char *name)
{
    const char *v = getenv(name);
    return v && *v && strcmp(v, "0") != 0 && strcmp(v, "false") != 0;
}

/* --color: always and never as said; auto colours a terminal, unless
 * NO_COLOR is set or TERM is dumb, and FORCE_COLOR or CLICOLOR_FORCE (set,
 * not 0) force colour wherever the report goes.  FORCE_COLOR=0 turns it
 * off, as in the tools that read it. */
static bool want_color(const char *color, const char *output)
{
    if (strcmp(color, "always") == 0) {
        return true;
    }
    if (strcmp(color, "never") == 0) {
        return false;
    }
    const char *force = getenv("FORCE_COLOR");
    if (force && (strcmp(force, "0") == 0 || strcmp(force, "false") == 0)) {
        return false;
    }
    if (env_on("FORCE_COLOR") || env_on("CLICOLOR_FORCE")) {
        return true;
    }
    const char *no = getenv("NO_COLOR");
    const char *term = getenv("TERM");
    if ((no && *no) || (term && strcmp(term, "dumb") == 0)) {
        return false;
    }
    return !output && isatty(STDOUT_FILENO);
}

/* Edit distance with adjacent transpositions (optimal string alignment),
 * capped: returns cap + 1 as soon as it must exceed cap. */
static size_t distance(const char *x, size_t lx, const char *y, size_t ly, size_t cap)
{
    enum { W = 40 };
    if (lx >= W || ly >= W) {
        return cap + 1;
    }
    size_t d[W][W];
    for (size_t i = 0; i <= lx; i++) {
        d[i][0] = i;
    }
    for (size_t j = 0; j <= ly; j++) {
        d[0][j] = j;
    }
    for (size_t i = 1; i <= lx; i++) {
        size_t row_min = cap + 1;
        for (size_t j = 1; j <= ly; j++) {
            size_t cost = x[i - 1] != y[j - 1];
            size_t best = d[i - 1][j - 1] + cost;
            if (d[i - 1][j] + 1 < best) {
                best = d[i - 1][j] + 1;
            }
            if (d[i][j - 1] + 1 < best) {
                best = d[i][j - 1] + 1;
            }
            if (i > 1 && j > 1 && x[i - 1] == y[j - 2] && x[i - 2] == y[j - 1] && d[i - 2][j - 2] + 1 < best) {
                best = d[i - 2][j - 2] + 1;
            }
            d[i][j] = best;
            if (best < row_min) {
                row_min = best;
            }
        }
        if (row_min > cap) {
            return cap + 1;
        }
    }
    return d[lx][ly];
}

/* The option closest to a mistyped one, for "did you mean": within two
 * edits (one for short names), or a unique prefix ("--write" ->
 * "--write-baseline").  "--fromat=json" is matched on "--fromat". */
static const char *near_option(const char *word)
{
    static const char *const opts[] = {
        "--help",     "--quiet",          "--show-waived", "--data",    "--rulebook",   "--format",
        "--output",   "--fail-on",        "--baseline",    "--write-baseline", "--color", "--root",
        "--max-rows", "--svg",            "--today",       "--stdin-name",     "--version", "--force",
        "--table",    "--query",          "--dialect",     "--max-groups",
    };
    size_t n = strcspn(word, "=");
    if (n < 3 || word[0] != '-') {
        return NULL;
    }
    const char *best = NULL, *prefixed = NULL;
    size_t best_d = 0, n_prefixed = 0;
    /* "-format" (one dash) is "--format" mistyped. */
    char w[40];
    size_t wl = 0;
    if (word[1] != '-' && n + 1 < sizeof w) {
        w[wl++] = '-';
    }
    for (size_t i = 0; i < n && wl + 1 < sizeof w; i++) {
        w[wl++] = word[i];
    }
    w[wl] = '\0';
    for (size_t i = 0; i < sizeof opts / sizeof *opts; i++) {
        size_t lo = strlen(opts[i]);
        size_t cap = lo <= 6 ? 1 : 2;
        size_t d = distance(w, wl, opts[i], lo, cap);
        if (d <= cap && (!best || d < best_d)) {
            best = opts[i];
            best_d = d;
        }
        if (wl >= 4 && wl < lo && strncmp(opts[i], w, wl) == 0) {
            prefixed = opts[i];
            n_prefixed++;
        }
    }
    if (best) {
        return best;
    }
    return n_prefixed == 1 ? prefixed : NULL;
}

static int parse(int argc, char **argv, int first, args *ar)
{
    kn_options_init(&ar->opt);
    ar->color = "auto";
    bool only_positional = false;
    for (int i = first; i < argc; i++) {
        const char *a = argv[i];
        const char *v;
        if (only_positional || a[0] != '-' || strcmp(a, "-") == 0) {
            if (ar->n_positional == MAX_SCHEMAS) {
                return bad("too many files (at most %s)", "1024");
            }
            ar->positional[ar->n_positional++] = a;
            continue;
        }
        if (strcmp(a, "--") != 0 && ar->n_seen < sizeof ar->seen / sizeof *ar->seen) {
            /* The long name, without "=VALUE"; -o, -q and -h by theirs. */
            const char *name = strcmp(a, "-o") == 0 ? "--output"
                               : strcmp(a, "-q") == 0 ? "--quiet"
                               : strcmp(a, "-h") == 0 ? "--help"
                                                      : kn_cli_strndup(a, strcspn(a, "="));
            ar->seen[ar->n_seen++] = name;
        }
        if (strcmp(a, "--") == 0) {
            only_positional = true;
        } else if (strcmp(a, "-h") == 0 || strcmp(a, "--help") == 0) {
            ar->help = true;
        } else if (strcmp(a, "-q") == 0 || strcmp(a, "--quiet") == 0) {
            ar->opt.quiet = true;
        } else if (strcmp(a, "--force") == 0) {
            ar->opt.force = true;
        } else if (strcmp(a, "--show-waived") == 0) {
            ar->opt.show_waived = true;
        } else if (is_opt(a, "--data")) {
            if (!(v = value_of(argc, argv, &i, "--data"))) {
                return bad("%s needs a file", "--data");
            }
            ar->opt.data = v;
        } else if (is_opt(a, "--table")) {
            if (!(v = value_of(argc, argv, &i, "--table"))) {
                return bad("%s needs a table name", "--table");
            }
            ar->opt.table = v;
        } else if (is_opt(a, "--query")) {
            if (!(v = value_of(argc, argv, &i, "--query"))) {
                return bad("%s needs a file", "--query");
            }
            ar->opt.query = v;
        } else if (is_opt(a, "--dialect")) {
            if (!(v = value_of(argc, argv, &i, "--dialect"))) {
                return bad("%s needs postgresql, mysql, sqlite or ansi", "--dialect");
            }
            ar->opt.dialect = v;
        } else if (is_opt(a, "--rulebook")) {
            if (!(v = value_of(argc, argv, &i, "--rulebook"))) {
                return bad("%s needs a file", "--rulebook");
            }
            if (ar->opt.n_rulebooks == KN_MAX_RULEBOOKS) {
                return bad("at most %s rulebooks", "16");
            }
            ar->opt.rulebooks[ar->opt.n_rulebooks++] = v;
        } else if (is_opt(a, "--format")) {
            if (!(v = value_of(argc, argv, &i, "--format"))) {
                return bad("%s needs text, json, sarif or markdown", "--format");
            }
            if (strcmp(v, "text") == 0) {
                ar->opt.format = KN_FORMAT_TEXT;
            } else if (strcmp(v, "json") == 0) {
                ar->opt.format = KN_FORMAT_JSON;
            } else if (strcmp(v, "sarif") == 0) {
                ar->opt.format = KN_FORMAT_SARIF;
            } else if (strcmp(v, "markdown") == 0) {
                ar->opt.format = KN_FORMAT_MARKDOWN;
            } else {
                return bad("unknown format '%s' (check writes text, json or sarif; sources markdown or json)", v);
            }
        } else if (strcmp(a, "-o") == 0 || is_opt(a, "--output")) {
            v = strcmp(a, "-o") == 0 ? (i + 1 < argc && strcmp(argv[i + 1], "--") != 0 ? argv[++i] : NULL)
                                     : value_of(argc, argv, &i, "--output");
            if (!v) {
                return bad("%s needs a file", "-o");
            }
            ar->output = v;
        } else if (is_opt(a, "--fail-on")) {
            if (!(v = value_of(argc, argv, &i, "--fail-on"))) {
                return bad("%s needs error, warning, note or never", "--fail-on");
            }
            if (strcmp(v, "error") == 0) {
                ar->opt.fail_on = KN_FAIL_ON_ERROR;
            } else if (strcmp(v, "warning") == 0) {
                ar->opt.fail_on = KN_FAIL_ON_WARNING;
            } else if (strcmp(v, "note") == 0) {
                ar->opt.fail_on = KN_FAIL_ON_NOTE;
            } else if (strcmp(v, "never") == 0) {
                ar->opt.fail_on = KN_FAIL_ON_NEVER;
            } else {
                return bad("--fail-on takes error, warning, note or never, not '%s'", v);
            }
        } else if (is_opt(a, "--baseline")) {
            if (!(v = value_of(argc, argv, &i, "--baseline"))) {
                return bad("%s needs a file", "--baseline");
            }
            ar->opt.baseline = v;
        } else if (is_opt(a, "--write-baseline")) {
            if (!(v = value_of(argc, argv, &i, "--write-baseline"))) {
                return bad("%s needs a file", "--write-baseline");
            }
            ar->opt.write_baseline = v;
        } else if (is_opt(a, "--color")) {
            if (!(v = value_of(argc, argv, &i, "--color"))) {
                return bad("%s needs auto, always or never", "--color");
            }
            if (strcmp(v, "auto") && strcmp(v, "always") && strcmp(v, "never")) {
                return bad("--color takes auto, always or never, not '%s'", v);
            }
            ar->color = v;
        } else if (is_opt(a, "--root")) {
            if (!(v = value_of(argc, argv, &i, "--root"))) {
                return bad("%s needs a folder", "--root");
            }
            ar->opt.root = v;
        } else if (is_opt(a, "--max-rows") || is_opt(a, "--max-groups")) {
            bool rows = is_opt(a, "--max-rows");
            const char *name = rows ? "--max-rows" : "--max-groups";
            if (!(v = value_of(argc, argv, &i, name))) {
                return bad("%s needs a number", name);
            }
            char *end;
            long long n = strtoll(v, &end, 10);
            if (*end || n < 1) {
                return bad("%s takes a positive number, not '%s'", name, v);
            }
            *(rows ? &ar->opt.max_rows : &ar->opt.max_groups) = n;
        } else if (is_opt(a, "--svg")) {
            if (!(v = value_of(argc, argv, &i, "--svg"))) {
                return bad("%s needs a file", "--svg");
            }
            ar->svg = v;
        } else if (is_opt(a, "--stdin-name")) {
            if (!(v = value_of(argc, argv, &i, "--stdin-name"))) {
                return bad("%s needs the path the schema on standard input stands for", "--stdin-name");
            }
            ar->opt.stdin_name = v;
        } else if (is_opt(a, "--today")) {
            /* For tests and reproducible reports: the date waivers expire against. */
            if (!(v = value_of(argc, argv, &i, "--today"))) {
                return bad("%s needs a date YYYY-MM-DD", "--today");
            }
            ar->opt.today = v;
        } else {
            const char *near = near_option(a);
            if (near) {
                return bad("unknown option '%s'; did you mean '%s'?", a, near);
            }
            return bad("unknown option '%s' (a file whose name starts with '-' goes after --)", a);
        }
    }
    size_t n_stdin = 0;
    for (size_t i = 0; i < ar->n_positional; i++) {
        n_stdin += strcmp(ar->positional[i], "-") == 0;
    }
    if (n_stdin > 1) {
        return bad("standard input ('-') can be read only once");
    }
    if (ar->opt.stdin_name && !n_stdin) {
        return bad("--stdin-name names the schema read from standard input; give that schema as '-'");
    }
    ar->opt.color = want_color(ar->color, ar->output);
    return KN_EXIT_OK;
}

/* Runs fn: the library writes -o FILE itself (atomically, and never over
 * a file the run read), else standard output. */
typedef kn_status (*writer_fn)(args *ar, FILE *out);

static kn_status with_output(args *ar, writer_fn fn)
{
    ar->opt.output = ar->output;
    return fn(ar, stdout);
}

static kn_status run_check(args *ar, FILE *out)
{
    return kn_check(&ar->opt, ar->positional, ar->n_positional, out, stderr);
}

static kn_status run_sources(args *ar, FILE *out)
{
    return kn_sources(&ar->opt, ar->positional, ar->n_positional, out, stderr);
}

static kn_status run_init(args *ar, FILE *out)
{
    return kn_init(&ar->opt, ar->positional[0], out, stderr);
}

static kn_status run_timeline(args *ar, FILE *out)
{
    ar->opt.svg = ar->svg;
    return kn_timeline_report(&ar->opt, ar->positional[0], out, stderr);
}

static kn_status run_sql(args *ar, FILE *out)
{
    return kn_sql(&ar->opt, ar->positional[0], out, stderr);
}

static kn_status run_json_schema(args *ar, FILE *out)
{
    return kn_json_schema(&ar->opt, out, stderr);
}

/* The command closest to a mistyped one (one edit or a shared prefix of
 * three letters), for "did you mean". */
static const char *near_command(const char *word)
{
    if (word[0] == '-') {
        /* Before a command only --version and --help are options. */
        const char *near = near_option(word);
        return near && (strcmp(near, "--version") == 0 || strcmp(near, "--help") == 0) ? near : NULL;
    }
    static const char *const cmds[] = {"check",       "explain", "rules", "sources", "timeline", "init",
                                       "json-schema", "lsp",     "help",  "sql"};
    for (size_t i = 0; i < sizeof cmds / sizeof *cmds; i++) {
        const char *c = cmds[i];
        size_t lw = strlen(word), lc = strlen(c);
        if (lw >= 3 && strncmp(word, c, 3) == 0) {
            return c;
        }
        /* one substitution, insertion or deletion */
        size_t i1 = 0, i2 = 0, edits = 0;
        while (i1 < lw && i2 < lc && edits <= 1) {
            if (word[i1] == c[i2]) {
                i1++, i2++;
            } else {
                edits++;
                if (lw > lc) {
                    i1++;
                } else if (lc > lw) {
                    i2++;
                } else {
                    i1++, i2++;
                }
            }
        }
        edits += (lw - i1) + (lc - i2);
        if (edits <= 1) {
            return c;
        }
    }
    return NULL;
}

static const char *help_for(const char *cmd)
{
    static const struct {
        const char *name, *text;
    } t[] = {{"check", check_help},       {"explain", explain_help},   {"rules", rules_help},
             {"sources", sources_help},   {"timeline", timeline_help}, {"init", init_help},
             {"json-schema", json_schema_help}, {"sql", sql_help}, {"lsp", lsp_help}, {"help", help_help}};
    for (size_t i = 0; i < sizeof t / sizeof *t; i++) {
        if (strcmp(t[i].name, cmd) == 0) {
            return t[i].text;
        }
    }
    return NULL;
}

static int dispatch(int argc, char **argv)
{
    if (argc < 2 || strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0) {
        fputs(usage_text, argc < 2 ? stderr : stdout);
        return argc < 2 ? KN_EXIT_FAILED : KN_EXIT_OK;
    }
    const char *cmd = argv[1];
    if (strcmp(cmd, "--version") == 0) {
        printf("knowable %s\n", KN_VERSION_STRING);
        return KN_EXIT_OK;
    }
    if (strcmp(cmd, "help") == 0) {
        if (argc < 3) {
            fputs(usage_text, stdout);
            return KN_EXIT_OK;
        }
        const char *h = help_for(argv[2]);
        if (!h) {
            const char *near = near_command(argv[2]);
            if (near) {
                return bad("no command '%s'; did you mean '%s'?", argv[2], near);
            }
            return bad("no command '%s'", argv[2]);
        }
        fputs(h, stdout);
        return KN_EXIT_OK;
    }
    const char *h = help_for(cmd);
    if (!h) {
        const char *near = near_command(cmd);
        if (near) {
            return bad("no command '%s'; did you mean '%s'?", cmd, near);
        }
        return bad("no command '%s'", cmd);
    }
    static args ar;
    usage_command = cmd;
    int rc = parse(argc, argv, 2, &ar);
    if (rc != KN_EXIT_OK) {
        return rc;
    }
    if (ar.help) {
        fputs(h, stdout);
        return KN_EXIT_OK;
    }
    const char *foreign = foreign_option(&ar, cmd);
    if (foreign) {
        return bad("%s does not take %s", cmd, foreign);
    }
    if (strcmp(cmd, "check") == 0) {
        if (!ar.n_positional) {
            return bad("%s needs at least one schema file", "check");
        }
        if (ar.opt.data && ar.n_positional != 1) {
            return bad("%s takes exactly one schema", "--data");
        }
        return with_output(&ar, run_check);
    }
    if (strcmp(cmd, "explain") == 0) {
        if (ar.n_positional != 1) {
            return bad("%s takes one rule id", "explain");
        }
        return kn_explain(ar.positional[0], stdout, stderr);
    }
    if (strcmp(cmd, "rules") == 0) {
        if (ar.n_positional > 1) {
            return bad("%s takes at most one schema file", "rules");
        }
        return kn_rules(&ar.opt, ar.n_positional ? ar.positional[0] : NULL, stdout, stderr);
    }
    if (strcmp(cmd, "sources") == 0) {
        if (!ar.n_positional) {
            return bad("%s needs at least one schema file", "sources");
        }
        return with_output(&ar, run_sources);
    }
    if (strcmp(cmd, "timeline") == 0) {
        if (ar.n_positional != 1) {
            return bad("%s takes one schema file", "timeline");
        }
        return with_output(&ar, run_timeline);
    }
    if (strcmp(cmd, "init") == 0) {
        if (ar.n_positional != 1) {
            return bad("%s takes one CSV file", "init");
        }
        return with_output(&ar, run_init);
    }
    if (strcmp(cmd, "sql") == 0) {
        if (ar.n_positional != 1) {
            return bad("%s takes one schema file", "sql");
        }
        return with_output(&ar, run_sql);
    }
    if (strcmp(cmd, "lsp") == 0) {
        if (ar.n_positional) {
            return bad("%s takes no files (the editor sends them)", "lsp");
        }
        return kn_lsp(&ar.opt, stdin, stdout, stderr);
    }
    if (ar.n_positional) {
        return bad("%s takes no files", "json-schema");
    }
    return with_output(&ar, run_json_schema);
}

int main(int argc, char **argv)
{
    int rc = dispatch(argc, argv);
    if (fflush(stdout) != 0 || ferror(stdout)) {
        fputs("knowable: error writing standard output\n", stderr);
        rc = KN_EXIT_FAILED;
    }
    return rc;
}
