/* timeline_svg.c - the picture of `knowable timeline SCHEMA --svg FILE`: a
 * horizontal time axis relative to the prediction moment on a signed
 * logarithmic scale, the moment as a vertical line, the label horizon and
 * the split's gap as bands on the axis, each event as a bar over its range,
 * then each column as a bar over its availability range, in the groups the
 * check's findings decide (findings.c), each row with the rules that fired on
 * it.  Every group also has its own fill pattern and a word beside the row,
 * so the picture reads without colour (the colours are from the Okabe-Ito
 * palette, safe for colour-blind readers).  Names, sources and as_of events
 * are written in full, wrapped onto more lines where they are long.  Reads
 * the solved timeline and the findings; writes SVG 1.1 to the caller's FILE.
 *
 * The output is deterministic (no clock, no locale, fixed number format),
 * self-contained (no script, no external font or image) and printable
 * (white background).  Every text from the schema is escaped for XML. */
#include <math.h>
#include <string.h>

#include "docs.h"
#include "../util/text.h"

/* Geometry, in pixels: a column of names and details, the plot, a column of
 * verdicts and rules. */
#define WIDTH 1280.0
#define MARGIN 16.0
#define NAME_X MARGIN
#define LEFT_W 396.0
#define PLOT_X0 432.0
#define PLOT_X1 992.0
#define NOTE_X 1018.0
#define NOTE_W 246.0
#define HEADING_ROW 30.0
#define LINE 13.0     /* one line of 10px detail text */
#define ROW_HEAD 22.0 /* a row's first line: name, bar, verdict */
#define ROW_PAD 7.0
#define MIN_TICK_GAP 40.0
#define NAME_CHARS 56 /* code points of a name on one line (longer ones wrap) */
#define NAME_LINE 14.0 /* a further line of a wrapped 12px name */

/* Average advance of a character, for laying out and wrapping (generous, so
 * that a wrapped line never runs into the next column). */
#define CHAR_W 6.4   /* 11px */
#define CHAR_W10 6.1 /* 10px */

#define FONT "DejaVu Sans, Verdana, Arial, sans-serif"

/* Okabe-Ito colours. */
#define C_EVENT "#0072B2"     /* blue */
#define C_AVAILABLE "#009E73" /* bluish green */
#define C_MAYBE "#E69F00"     /* orange */
#define C_LATE "#D55E00"      /* vermillion */
#define C_UNORDERED "#56B4E9" /* sky blue */
#define C_TARGET "#CC79A7"    /* reddish purple */
#define C_NEUTRAL "#BDBDBD"   /* grey: not given to the model */
#define C_MUTED "#595959"

/* The word beside each row and in the summary, by group (kn_row_class). */
static const char *const group_word[KN_ROW_CLASS_COUNT] = {
    [KN_ROW_LATE] = "late",
    [KN_ROW_MAYBE] = "late in some cases",
    [KN_ROW_FROM_TARGET] = "built from the target",
    [KN_ROW_UNORDERED] = "unordered",
    [KN_ROW_RULE_OFF] = "late, rule off",
    [KN_ROW_AVAILABLE] = "available",
    [KN_ROW_NOT_FEATURE] = "not a feature",
    [KN_ROW_NO_TIMING] = "no timing",
    [KN_ROW_NOT_PLACED] = "not placed",
};

/* The class of each group's <g>, for readers and tests. */
static const char *const group_class[KN_ROW_CLASS_COUNT] = {
    [KN_ROW_LATE] = "columns-late",
    [KN_ROW_MAYBE] = "columns-maybe-late",
    [KN_ROW_FROM_TARGET] = "columns-from-target",
    [KN_ROW_UNORDERED] = "columns-unordered",
    [KN_ROW_RULE_OFF] = "columns-rule-off",
    [KN_ROW_AVAILABLE] = "columns-available",
    [KN_ROW_NOT_FEATURE] = "columns-not-feature",
    [KN_ROW_NO_TIMING] = "columns-no-timing",
    [KN_ROW_NOT_PLACED] = "columns-not-placed",
};

typedef kn_row_class group;

/* Tick marks: magnitude, label, priority (lower = kept first when crowded). */
typedef struct tick {
    int64_t us;
    const char *label;
    int prio;
} tick;

static const tick ticks[] = {
    {KN_US_PER_MIN, "1min", 3},
    {10 * KN_US_PER_MIN, "10min", 2},
    {KN_US_PER_HOUR, "1h", 1},
    {6 * KN_US_PER_HOUR, "6h", 3},
    {KN_US_PER_DAY, "1d", 1},
    {7 * KN_US_PER_DAY, "7d", 2},
    {30 * KN_US_PER_DAY, "30d", 1},
    {90 * KN_US_PER_DAY, "90d", 3},
    {365 * KN_US_PER_DAY, "1y", 1},
    {3650 * KN_US_PER_DAY, "10y", 2},
    {36500 * KN_US_PER_DAY, "100y", 2},
    {365000 * KN_US_PER_DAY, "1000y", 2},
    {3650000 * KN_US_PER_DAY, "10000y", 2},
};
#define N_TICKS (sizeof ticks / sizeof ticks[0])

typedef struct svg {
    FILE *out;
    kn_arena *a;
    int64_t left, right; /* the axis runs from -left to +right */
    double s_left, s_right;
    double y; /* top of the next row */
} svg;

/* ---- text --------------------------------------------------------------- */

/* Writes s escaped for XML.  kn_fput_xml keeps U+FFFE and U+FFFF, which XML
 * 1.0 does not allow, so they are replaced here; tabs and line breaks become
 * spaces, since a renderer would drop them and join the words. */
static void put_text(FILE *f, const char *s, size_t len)
{
    size_t start = 0;
    for (size_t i = 0; i < len; i++) {
        const unsigned char *p = (const unsigned char *)s + i;
        if (p[0] == '\n' || p[0] == '\t' || p[0] == '\r') {
            kn_fput_xml(f, s + start, i - start);
            fputc(' ', f);
            start = i + 1;
        } else if (i + 2 < len && p[0] == 0xef && p[1] == 0xbf && (p[2] == 0xbe || p[2] == 0xbf)) {
            kn_fput_xml(f, s + start, i - start);
            fputs("\xef\xbf\xbd", f);
            start = i + 3;
            i += 2;
        }
    }
    kn_fput_xml(f, s + start, len - start);
}

static void put_str(FILE *f, const char *s)
{
    if (s) {
        put_text(f, s, strlen(s));
    }
}

/* s cut to at most max code points (an invalid byte counts as one), with
 * "..." when cut.  Arena memory. */
static const char *cut(kn_arena *a, const char *s, size_t max)
{
    if (!s) {
        return "";
    }
    size_t len = strlen(s), i = 0, n = 0;
    while (i < len && n < max) {
        size_t k = kn_utf8_valid_seq((const unsigned char *)s + i, len - i);
        i += k ? k : 1;
        n++;
    }
    if (i >= len) {
        return s;
    }
    /* Room for the dots: drop one more code point. */
    size_t j = 0, keep = 0;
    n = 0;
    while (j < len && n + 1 < max) {
        size_t k = kn_utf8_valid_seq((const unsigned char *)s + j, len - j);
        j += k ? k : 1;
        n++;
        keep = j;
    }
    return kn_printf(a, "%.*s...", (int)keep, s);
}

/* A bound relative to the moment: "-3d", "+30min", "0", "unbounded". */
static const char *offset(kn_arena *a, int64_t v)
{
    char b[48];
    if (v >= KN_TIME_INF) {
        return "no upper bound";
    }
    if (v <= -KN_TIME_INF) {
        return "no lower bound";
    }
    if (v == 0) {
        return "0";
    }
    kn_duration_format(v, b, sizeof b);
    return kn_printf(a, "%s%s", v > 0 ? "+" : "", b);
}

static const char *range_words(kn_arena *a, kn_interval r)
{
    bool open_lo = r.lo <= -KN_TIME_INF, open_hi = r.hi >= KN_TIME_INF;
    if (open_lo && open_hi) {
        return "any time";
    }
    if (open_lo) {
        return kn_printf(a, "%s or earlier", offset(a, r.hi));
    }
    if (open_hi) {
        return kn_printf(a, "%s or later", offset(a, r.lo));
    }
    if (r.lo == r.hi) {
        return r.lo == 0 ? "at the moment" : kn_printf(a, "at %s", offset(a, r.lo));
    }
    return kn_printf(a, "%s to %s", offset(a, r.lo), offset(a, r.hi));
}

/* ---- scale -------------------------------------------------------------- */

/* Signed logarithm with a linear part under one minute:
 * sign(t) * log10(1 + |t| / 1 min). */
static double slog(int64_t us)
{
    double m = fabs((double)us) / (double)KN_US_PER_MIN;
    double v = log10(1.0 + m);
    return us < 0 ? -v : v;
}

static double x_of(const svg *g, int64_t us)
{
    if (us < -g->left) {
        us = -g->left;
    }
    if (us > g->right) {
        us = g->right;
    }
    return PLOT_X0 + (slog(us) - g->s_left) / (g->s_right - g->s_left) * (PLOT_X1 - PLOT_X0);
}

static void widen(int64_t *left, int64_t *right, int64_t v)
{
    if (v <= -KN_TIME_INF || v >= KN_TIME_INF) {
        return;
    }
    if (v < 0 && -v > *left) {
        *left = -v;
    }
    if (v > 0 && v > *right) {
        *right = v;
    }
}

/* The smallest tick at or above v (at least one hour; the largest tick when
 * v is beyond every tick). */
static int64_t round_up(int64_t v)
{
    for (size_t i = 0; i < N_TICKS; i++) {
        if (ticks[i].us >= v && ticks[i].us >= KN_US_PER_HOUR) {
            return ticks[i].us;
        }
    }
    return ticks[N_TICKS - 1].us;
}

/* ---- drawing ------------------------------------------------------------ */

static void defs(FILE *f)
{
    fputs("<defs>\n", f);
    /* Late in some cases: diagonal stripes. */
    fprintf(f,
            "<pattern id=\"fill-maybe\" width=\"6\" height=\"6\" patternUnits=\"userSpaceOnUse\" "
            "patternTransform=\"rotate(45)\"><rect width=\"6\" height=\"6\" fill=\"%s\"/>"
            "<rect width=\"2.5\" height=\"6\" fill=\"#ffffff\"/></pattern>\n",
            C_MAYBE);
    /* Late in every case: a cross-hatch. */
    fprintf(f,
            "<pattern id=\"fill-late\" width=\"6\" height=\"6\" patternUnits=\"userSpaceOnUse\" "
            "patternTransform=\"rotate(45)\"><rect width=\"6\" height=\"6\" fill=\"%s\"/>"
            "<rect width=\"1.5\" height=\"6\" fill=\"#ffffff\"/>"
            "<rect width=\"6\" height=\"1.5\" fill=\"#ffffff\"/></pattern>\n",
            C_LATE);
    /* Unordered: dots. */
    fprintf(f,
            "<pattern id=\"fill-unordered\" width=\"5\" height=\"5\" patternUnits=\"userSpaceOnUse\">"
            "<rect width=\"5\" height=\"5\" fill=\"#ffffff\"/>"
            "<circle cx=\"2.5\" cy=\"2.5\" r=\"1.4\" fill=\"%s\"/></pattern>\n",
            C_UNORDERED);
    /* Built from the target: upright stripes. */
    fprintf(f,
            "<pattern id=\"fill-target\" width=\"5\" height=\"5\" patternUnits=\"userSpaceOnUse\">"
            "<rect width=\"5\" height=\"5\" fill=\"%s\"/>"
            "<rect width=\"1.6\" height=\"5\" fill=\"#ffffff\"/></pattern>\n",
            C_TARGET);
    /* The label horizon on the axis: horizontal stripes. */
    fprintf(f,
            "<pattern id=\"fill-horizon\" width=\"6\" height=\"4\" patternUnits=\"userSpaceOnUse\">"
            "<rect width=\"6\" height=\"4\" fill=\"%s\"/>"
            "<rect width=\"6\" height=\"1.5\" fill=\"#ffffff\"/></pattern>\n",
            C_TARGET);
    fputs("</defs>\n", f);
}

static const char *group_fill(group gr)
{
    switch (gr) {
    case KN_ROW_AVAILABLE:
        return C_AVAILABLE;
    case KN_ROW_MAYBE:
        return "url(#fill-maybe)";
    case KN_ROW_LATE:
        return "url(#fill-late)";
    case KN_ROW_UNORDERED:
        return "url(#fill-unordered)";
    case KN_ROW_FROM_TARGET:
        return "url(#fill-target)";
    case KN_ROW_RULE_OFF:
        return "#ffffff";
    case KN_ROW_NOT_FEATURE:
        return C_NEUTRAL;
    default:
        break;
    }
    return "none";
}

static const char *group_stroke(group gr)
{
    switch (gr) {
    case KN_ROW_AVAILABLE:
        return "#00654e";
    case KN_ROW_MAYBE:
        return "#9a6a00";
    case KN_ROW_LATE:
    case KN_ROW_RULE_OFF:
        return "#8f3f00";
    case KN_ROW_UNORDERED:
        return "#1f6f9c";
    case KN_ROW_FROM_TARGET:
        return "#8a3f6c";
    case KN_ROW_NOT_FEATURE:
        return "#707070";
    default:
        break;
    }
    return C_MUTED;
}

static const char *group_dash(group gr)
{
    return gr == KN_ROW_UNORDERED ? "3 2" : gr == KN_ROW_RULE_OFF ? "4 2" : NULL;
}

static bool group_has_bar(group gr)
{
    return gr != KN_ROW_NO_TIMING && gr != KN_ROW_NOT_PLACED;
}

/* An arrowhead at x pointing left (dir -1) or right (dir 1), centred on cy. */
static void arrow(FILE *f, double x, double cy, double h, int dir, const char *colour)
{
    double tip = x + dir * (h * 0.9 + 2);
    fprintf(f, "<path d=\"M%.1f %.1fL%.1f %.1fL%.1f %.1fZ\" fill=\"%s\"/>\n", x, cy - h / 2 - 2, tip, cy, x,
            cy + h / 2 + 2, colour);
}

/* A bar over r on the row centred at cy; unbounded or clipped ends get an
 * arrowhead at the edge of the plot; a point gets a diamond. */
static void bar(const svg *g, kn_interval r, double cy, double h, const char *fill, const char *stroke,
                const char *dash)
{
    FILE *f = g->out;
    bool open_lo = r.lo<-g->left, open_hi = r.hi> g->right;
    double x1 = x_of(g, r.lo), x2 = x_of(g, r.hi);
    if (!open_lo && !open_hi && x2 - x1 < 3.0) {
        double cx = (x1 + x2) / 2, d = h / 2 + 2;
        fprintf(f,
                "<path d=\"M%.1f %.1fL%.1f %.1fL%.1f %.1fL%.1f %.1fZ\" fill=\"%s\" stroke=\"%s\" "
                "stroke-width=\"1\"/>\n",
                cx, cy - d, cx + d, cy, cx, cy + d, cx - d, cy, fill, stroke);
        return;
    }
    fprintf(f,
            "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" fill=\"%s\" stroke=\"%s\" "
            "stroke-width=\"1\"%s%s%s/>\n",
            x1, cy - h / 2, x2 - x1, h, fill, stroke, dash ? " stroke-dasharray=\"" : "", dash ? dash : "",
            dash ? "\"" : "");
    if (open_lo) {
        arrow(f, x1, cy, h, -1, stroke);
    }
    if (open_hi) {
        arrow(f, x2, cy, h, 1, stroke);
    }
}

static void text(FILE *f, double x, double y, double size, const char *attrs, const char *s)
{
    fprintf(f, "<text x=\"%.1f\" y=\"%.1f\" font-size=\"%.1f\"%s%s>", x, y, size, attrs ? " " : "",
            attrs ? attrs : "");
    put_str(f, s);
    fputs("</text>\n", f);
}

static void axis(svg *g, double y_label, double y_top, double y_bottom)
{
    FILE *f = g->out;
    /* Which ticks fit: by priority, each at least MIN_TICK_GAP from those kept. */
    double kept[2 * N_TICKS + 1];
    size_t n_kept = 0;
    kept[n_kept++] = x_of(g, 0);
    bool show[2][N_TICKS] = {{false}};
    for (int prio = 0; prio <= 3; prio++) {
        for (size_t i = 0; i < N_TICKS; i++) {
            for (int side = 0; side < 2; side++) {
                int64_t limit = side ? g->right : g->left;
                int want = ticks[i].us == limit ? 0 : ticks[i].prio;
                if (want != prio || ticks[i].us > limit || show[side][i]) {
                    continue;
                }
                double x = x_of(g, side ? ticks[i].us : -ticks[i].us);
                bool room = true;
                for (size_t k = 0; k < n_kept; k++) {
                    room = room && fabs(kept[k] - x) >= MIN_TICK_GAP;
                }
                if (room) {
                    kept[n_kept++] = x;
                    show[side][i] = true;
                }
            }
        }
    }
    fputs("<g class=\"axis\">\n", f);
    for (int side = 0; side < 2; side++) {
        for (size_t i = 0; i < N_TICKS; i++) {
            if (!show[side][i]) {
                continue;
            }
            double x = x_of(g, side ? ticks[i].us : -ticks[i].us);
            fprintf(f,
                    "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#d9d9d9\" "
                    "stroke-width=\"1\"/>\n",
                    x, y_top, x, y_bottom);
            const char *label = kn_printf(g->a, "%s%s", side ? "+" : "-", ticks[i].label);
            text(f, x, y_label, 11, "text-anchor=\"middle\" fill=\"#333333\"", label);
            text(f, x, y_bottom + 14, 11, "text-anchor=\"middle\" fill=\"#333333\"", label);
        }
    }
    double x0 = x_of(g, 0);
    text(f, x0, y_label, 11, "text-anchor=\"middle\" font-weight=\"bold\"", "0");
    text(f, x0, y_bottom + 14, 11, "text-anchor=\"middle\" font-weight=\"bold\"", "0");
    fputs("</g>\n", f);
}

/* ---- wrapped lines ------------------------------------------------------ */

/* Lines of detail text, each with a tag: -1 plain, k >= 0 the k-th finding of
 * the row (its first line), -2 a finding's continuation. */
typedef struct lines {
    const char **text;
    int *tag;
    size_t n, cap;
} lines;

static void lines_add(kn_arena *a, lines *l, const char *s, int tag)
{
    if (l->n == l->cap) {
        size_t cap = l->cap ? l->cap * 2 : 8;
        const char **t = kn_alloc_array(a, cap, sizeof *t);
        int *g = kn_alloc_array(a, cap, sizeof *g);
        if (l->n) {
            memcpy(t, l->text, l->n * sizeof *t);
            memcpy(g, l->tag, l->n * sizeof *g);
        }
        l->text = t;
        l->tag = g;
        l->cap = cap;
    }
    l->text[l->n] = s;
    l->tag[l->n++] = tag;
}

/* Whether the space at s[j] holds a duration together ("2h 15min",
 * "-4d 23h"): the word before it starts with a digit (after a sign) and the
 * word after it too.  A line is not broken there. */
static bool duration_space(const char *s, size_t from, size_t j, size_t len)
{
    size_t t = j;
    while (t > from && s[t - 1] != ' ') {
        t--;
    }
    if (t < j && (s[t] == '+' || s[t] == '-')) {
        t++;
    }
    return t < j && s[t] >= '0' && s[t] <= '9' && j + 1 < len && s[j + 1] >= '0' && s[j + 1] <= '9';
}

/* Appends s wrapped at max code points a line: at the last space that fits
 * (not inside a duration), or after max code points inside a longer word.
 * Nothing is cut off. */
static void wrap(kn_arena *a, lines *l, const char *s, size_t max, int tag)
{
    size_t len = strlen(s), i = 0;
    bool first = true;
    while (i < len) {
        while (i < len && s[i] == ' ') {
            i++;
        }
        if (i >= len) {
            break;
        }
        size_t j = i, n = 0, space = 0;
        while (j < len && n < max) {
            if (s[j] == ' ' && !duration_space(s, i, j, len)) {
                space = j;
            }
            size_t k = kn_utf8_valid_seq((const unsigned char *)s + j, len - j);
            j += k ? k : 1;
            n++;
        }
        size_t end = j >= len || (s[j] == ' ' && !duration_space(s, i, j, len)) ? j : space > i ? space : j;
        lines_add(a, l, kn_strndup(a, s + i, end - i), first ? tag : (tag >= 0 ? -2 : tag));
        first = false;
        i = end;
    }
}

#define LEFT_CHARS ((size_t)(LEFT_W / CHAR_W10))
#define NOTE_CHARS ((size_t)(NOTE_W / CHAR_W10))

static double lines_h(size_t n)
{
    return n ? LINE * (double)n : 0;
}

/* A row's name in full, wrapped at NAME_CHARS code points a line (a name
 * cut short could leave two rows that read the same): after the last '_',
 * '-', '.' or space that fits, else after NAME_CHARS code points.  Nothing
 * is dropped: the lines put together are the name. */
static lines name_lines(kn_arena *a, const char *name)
{
    lines l = {0};
    size_t len = strlen(name), i = 0;
    while (i < len) {
        size_t j = i, n = 0, brk = 0, before = 0, n_brk = 0, n_before = 0;
        while (j < len && n < NAME_CHARS) {
            char c = name[j];
            size_t k = kn_utf8_valid_seq((const unsigned char *)name + j, len - j);
            j += k ? k : 1;
            n++;
            if (c == '_' || c == '-' || c == '.' || c == ' ') {
                before = brk;
                n_before = n_brk;
                brk = j;
                n_brk = n;
            }
        }
        /* A last line of a few characters ("bakery_" / "0") reads badly:
         * then the separator before, when the line keeps half its width. */
        if (j < len && brk > i && len - brk < 8 && before > i && n_before >= NAME_CHARS / 2) {
            brk = before;
        }
        size_t end = j >= len || brk <= i ? j : brk;
        lines_add(a, &l, kn_strndup(a, name + i, end - i), -1);
        i = end;
    }
    if (!l.n) {
        lines_add(a, &l, "", -1);
    }
    return l;
}

/* How far a wrapped name pushes the lines under it down. */
static double name_extra(const lines *name)
{
    return NAME_LINE * (double)(name->n - 1);
}

/* The name's lines, the first on the row's first line; each is class
 * "name", so that a reader can put the name together again. */
static void draw_name(FILE *f, double cy, const lines *name)
{
    for (size_t i = 0; i < name->n; i++) {
        text(f, NAME_X, cy + 4 + NAME_LINE * (double)i, 12, "class=\"name\"", name->text[i]);
    }
}

static double max_h(double a, double b)
{
    return a > b ? a : b;
}

/* ---- rows --------------------------------------------------------------- */

/* A group's heading; fill/stroke, when given, draw its swatch first. */
static void heading(svg *g, const char *words, size_t n, const char *fill, const char *stroke,
                    const char *dash)
{
    FILE *f = g->out;
    double base = g->y + HEADING_ROW - 9;
    double x = NAME_X;
    if (fill) {
        fprintf(f,
                "<rect x=\"%.1f\" y=\"%.1f\" width=\"22\" height=\"12\" fill=\"%s\" stroke=\"%s\" "
                "stroke-width=\"1\"%s%s%s/>\n",
                x, base - 10, fill, stroke, dash ? " stroke-dasharray=\"" : "", dash ? dash : "",
                dash ? "\"" : "");
        x += 30;
    }
    const char *s = n ? kn_printf(g->a, "%s (%zu)", words, n) : words;
    text(f, x, base, 13, "font-weight=\"bold\" fill=\"#1a1a1a\"", s);
    fprintf(f,
            "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#808080\" "
            "stroke-width=\"0.8\"/>\n",
            NAME_X, g->y + HEADING_ROW - 3, WIDTH - MARGIN, g->y + HEADING_ROW - 3);
    g->y += HEADING_ROW;
}

/* Detail lines under a row's first line, from x. */
static void detail(svg *g, double x, double y, const lines *l, const char *attrs)
{
    for (size_t i = 0; i < l->n; i++) {
        text(g->out, x, y + ROW_HEAD + 8 + LINE * (double)i, 10, attrs, l->text[i]);
    }
}

/* An event's range in words, and for a first_of event its members. */
static void event_lines(svg *g, const kn_timeline *t, const kn_event *e, lines *right)
{
    if (!e->first_of_node) {
        return;
    }
    const kn_event *lo_by = kn_timeline_first_of_member(t, e, false);
    const kn_event *hi_by = kn_timeline_first_of_member(t, e, true);
    const char *names = kn_doc_names(g->a, e->first_of, e->n_first_of, " | ");
    wrap(g->a, right, kn_printf(g->a, "first of %s", names), NOTE_CHARS, -1);
    if (lo_by && hi_by) {
        wrap(g->a, right, kn_printf(g->a, "earliest from %s, latest from %s", lo_by->name, hi_by->name),
             NOTE_CHARS, -1);
    }
}

static double event_height(svg *g, const kn_timeline *t, const kn_event *e, bool placed)
{
    lines right = {0};
    if (placed) {
        event_lines(g, t, e, &right);
    } else {
        wrap(g->a, &right, "a schema error or a contradiction", NOTE_CHARS, -1);
    }
    lines name = name_lines(g->a, e->name);
    return right.n || name.n > 1 ? ROW_HEAD + max_h(name_extra(&name), lines_h(right.n)) + ROW_PAD : 24.0;
}

/* An event's row; placed false: it has no range (set aside). */
static void event_row(svg *g, const kn_timeline *t, const kn_event *e, const kn_event *m, kn_interval r,
                      bool placed)
{
    FILE *f = g->out;
    double cy = g->y + 12;
    bool none = !placed || (r.lo <= -KN_TIME_INF && r.hi >= KN_TIME_INF);
    const char *words = !placed  ? "set aside"
                        : e == m ? "the moment"
                        : none   ? "not ordered"
                                 : range_words(g->a, r);
    lines right = {0};
    if (placed) {
        event_lines(g, t, e, &right);
    } else {
        wrap(g->a, &right, "a schema error or a contradiction", NOTE_CHARS, -1);
    }
    const char *tip = kn_printf(g->a, "event %s: %s", e->name, words);
    if (right.n) {
        tip = kn_printf(g->a, "%s; %s", tip, kn_doc_join(g->a, right.text, right.n, " "));
    }
    fputs("<g class=\"event\"><title>", f);
    put_str(f, tip);
    fputs("</title>\n", f);
    lines name = name_lines(g->a, e->name);
    draw_name(f, cy, &name);
    if (none) {
        fprintf(f,
                "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"%s\" "
                "stroke-width=\"%s\" stroke-dasharray=\"%s\"/>\n",
                PLOT_X0, cy, PLOT_X1, cy, placed ? C_EVENT : "#bfbfbf", placed ? "2" : "1",
                placed ? "2 4" : "1 3");
    } else {
        bar(g, r, cy, 8, C_EVENT, "#004a75", NULL);
    }
    text(f, NOTE_X, cy + 4, 11, e == m ? "font-weight=\"bold\"" : "fill=\"#333333\"", words);
    detail(g, NOTE_X, g->y, &right, "fill=\"" C_MUTED "\"");
    fputs("</g>\n", f);
    g->y += right.n || name.n > 1 ? ROW_HEAD + max_h(name_extra(&name), lines_h(right.n)) + ROW_PAD : 24.0;
}

/* The words under a column's verdict: its range, or why it has none. */
static const char *column_range(svg *g, const kn_timeline *t, const kn_column *c, group gr)
{
    const kn_column_timing *T = kn_timeline_column_timing(t, c);
    if (gr == KN_ROW_NOT_PLACED) {
        return kn_column_not_placed_words(g->a, t, c);
    }
    if (gr == KN_ROW_NO_TIMING) {
        return c->join.present && c->join.as_of.name
                   ? "the as_of join says when the join reads, not when the value exists"
                   : "nothing says when its value exists";
    }
    return range_words(g->a, T->range);
}

/* The lines of a column row: its timing on the left, its range and the
 * findings about it on the right. */
static void column_lines(svg *g, const kn_timeline *t, const kn_column *c, const kn_doc_row *row, lines *left,
                         lines *right)
{
    const char *b = kn_column_timing_words(g->a, c);
    wrap(g->a, left, kn_printf(g->a, "%s%s%s", kn_role_name(c->role), *b ? ", " : "", b), LEFT_CHARS, -1);
    wrap(g->a, right, column_range(g, t, c, row->cls), NOTE_CHARS, -1);
    for (size_t i = 0; i < row->n_findings; i++) {
        wrap(g->a, right, kn_row_finding_words(g->a, &row->findings[i]), NOTE_CHARS, (int)i);
    }
}

static double column_height(svg *g, const kn_timeline *t, const kn_column *c, const kn_doc_row *row)
{
    lines left = {0}, right = {0};
    column_lines(g, t, c, row, &left, &right);
    lines name = name_lines(g->a, c->name);
    return ROW_HEAD + max_h(name_extra(&name) + lines_h(left.n), lines_h(right.n)) + ROW_PAD;
}

/* One finding as the hover text says it. */
static const char *finding_tip(kn_arena *a, const kn_row_finding *fd)
{
    const char *s =
        kn_printf(a, "%s (%s): %s", kn_rule_get(fd->rule)->id, kn_severity_name(fd->severity), fd->message);
    if (fd->waived) {
        s = kn_printf(a, "%s. Waived: %s", s, fd->reason ? fd->reason : "");
    }
    return s;
}

static void column_row(svg *g, const kn_timeline *t, const kn_column *c, const kn_doc_row *row)
{
    FILE *f = g->out;
    group gr = row->cls;
    const kn_column_timing *T = kn_timeline_column_timing(t, c);
    double cy = g->y + 11;
    lines left = {0}, right = {0};
    column_lines(g, t, c, row, &left, &right);
    const char *word = group_word[gr];
    if (gr == KN_ROW_NOT_FEATURE) {
        word = c->role == KN_ROLE_FEATURE || c->role == KN_ROLE_TARGET ? "the target" : kn_role_name(c->role);
    }
    const char *tip =
        kn_printf(g->a, "column %s: %s, %s", c->name, group_word[gr], column_range(g, t, c, gr));
    const char **tips = kn_alloc_array(g->a, row->n_findings + 1, sizeof *tips);
    tips[0] = tip;
    for (size_t i = 0; i < row->n_findings; i++) {
        tips[i + 1] = finding_tip(g->a, &row->findings[i]);
    }
    tip = kn_doc_join(g->a, tips, row->n_findings + 1, "; ");
    fputs("<g class=\"column\"><title>", f);
    put_str(f, tip);
    fputs("</title>\n", f);
    lines name = name_lines(g->a, c->name);
    draw_name(f, cy, &name);
    detail(g, NAME_X + 10, g->y + name_extra(&name), &left, "fill=\"" C_MUTED "\"");
    if (!group_has_bar(gr)) {
        fprintf(f,
                "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#bfbfbf\" "
                "stroke-width=\"1\" stroke-dasharray=\"1 3\"/>\n",
                PLOT_X0, cy, PLOT_X1, cy);
    } else {
        bar(g, T->range, cy, 14, group_fill(gr), group_stroke(gr), group_dash(gr));
    }
    text(f, NOTE_X, cy + 4, 12, "font-weight=\"bold\"", word);
    /* the range, then one group per finding, with its own hover text */
    size_t k = 0;
    while (k < right.n) {
        double y = g->y + ROW_HEAD + 8 + LINE * (double)k;
        int tag = right.tag[k];
        if (tag < 0) {
            text(f, NOTE_X, y, 10, "fill=\"" C_MUTED "\"", right.text[k++]);
            continue;
        }
        const kn_row_finding *fd = &row->findings[tag];
        fputs("<g class=\"finding\"><title>", f);
        put_str(f, finding_tip(g->a, fd));
        fputs("</title>\n", f);
        const char *style = fd->waived ? "class=\"rule\" fill=\"" C_MUTED "\" font-style=\"italic\""
                                       : "class=\"rule\" fill=\"#1a1a1a\" font-weight=\"bold\"";
        text(f, NOTE_X, y, 10, style, right.text[k++]);
        while (k < right.n && right.tag[k] == -2) {
            y = g->y + ROW_HEAD + 8 + LINE * (double)k;
            text(f, NOTE_X, y, 10,
                 fd->waived ? "fill=\"" C_MUTED "\" font-style=\"italic\"" : "fill=\"#1a1a1a\"",
                 right.text[k++]);
        }
        fputs("</g>\n", f);
    }
    fputs("</g>\n", f);
    g->y += ROW_HEAD + max_h(name_extra(&name) + lines_h(left.n), lines_h(right.n)) + ROW_PAD;
}

/* ---- the label horizon against the split's gap -------------------------- */

/* The label horizon as the split check reads it (SPEC §3.2): label_known,
 * else the target's known event (the latest member of a known.one_of). */
static bool label_horizon(const kn_schema *s, const kn_timeline *t, kn_interval *h, const char **words,
                          kn_arena *a)
{
    const kn_prediction *p = &s->prediction;
    const kn_event *e = KN_REF_EVENT(p->label_known);
    if (e) {
        *words = kn_printf(a, "labels settle at %s (label_known)", e->name);
        return kn_timeline_event_range(t, e, h);
    }
    const kn_column *target = KN_REF_COLUMN(p->target);
    if (!target || target->broken) {
        return false;
    }
    if (target->n_one_of) {
        const kn_column_timing *T = kn_timeline_column_timing(t, target);
        if (!T || !T->computed || !T->has[KN_PART_KNOWN] || !T->known_hi_by) {
            return false;
        }
        *h = T->event[KN_PART_KNOWN];
        *words = kn_printf(a, "labels settle at one of the target's events, at the latest at %s",
                           T->known_hi_by->name);
        return true;
    }
    e = KN_REF_EVENT(target->known);
    if (!e) {
        return false;
    }
    *words = kn_printf(a, "labels settle at %s, where the target %s becomes known", e->name, target->name);
    return kn_timeline_event_range(t, e, h);
}

typedef struct bands {
    bool horizon, split;
    kn_interval h;
    lines h_left, s_left, s_right;
    const kn_view *short_gap; /* split-gap-short, when the check found it */
    int64_t gap_us;
    double height;
} bands;

static bool time_split(const kn_split *sp)
{
    return sp->method == KN_SPLIT_TIME || sp->method == KN_SPLIT_GROUP_TIME;
}

static void plan_bands(svg *g, const kn_schema *s, const kn_timeline *t, const kn_doc_findings *f, bands *b)
{
    const char *hw = "";
    b->horizon = label_horizon(s, t, &b->h, &hw, g->a) && b->h.hi > 0;
    if (b->horizon) {
        wrap(g->a, &b->h_left, kn_printf(g->a, "label horizon: %s, %s", hw, range_words(g->a, b->h)),
             LEFT_CHARS, -1);
    }
    const kn_split *sp = &s->split;
    b->split = sp->present;
    if (!b->split) {
        return;
    }
    char b1[48], b2[48];
    const char *gap = "no gap";
    if (sp->has_gap && sp->gap.lo == sp->gap.hi) {
        gap = kn_printf(g->a, "a gap of %s", kn_duration_format(sp->gap.lo, b1, sizeof b1));
    } else if (sp->has_gap) {
        /* a calendar unit: as written, and its shortest length, which the
         * check compares */
        gap = kn_printf(g->a, "a gap of %s (as short as %s)",
                        sp->gap_node && sp->gap_node->kind == KN_NODE_SCALAR ? sp->gap_node->u.scalar.text
                                                                             : "?",
                        kn_duration_format(sp->gap.lo, b1, sizeof b1));
    }
    const char *more = "";
    if (sp->purge) {
        more = ", purge";
    }
    if (sp->has_embargo) {
        more = kn_printf(g->a, "%s, embargo %s", more, kn_duration_format(sp->embargo.hi, b2, sizeof b2));
    }
    wrap(g->a, &b->s_left,
         kn_printf(g->a, "split gap: %s split with %s%s", kn_split_method_name(sp->method), gap, more),
         LEFT_CHARS, -1);
    for (size_t i = 0; i < f->n_all; i++) {
        if (f->all[i].rule == KN_R_SPLIT_GAP_SHORT) {
            b->short_gap = &f->all[i];
        }
    }
    const char *verdict;
    if (b->short_gap) {
        verdict = kn_printf(g->a, "split-gap-short (%s%s)", kn_severity_name(b->short_gap->severity),
                            b->short_gap->waived ? ", waived" : "");
    } else if (!time_split(sp)) {
        verdict = "not a time split: the gap is not judged";
    } else if (sp->purge) {
        verdict = "overlapping training rows purged";
    } else if (b->horizon) {
        verdict = "the gap covers the label horizon";
    } else {
        verdict = "no label horizon to compare with";
    }
    wrap(g->a, &b->s_right, verdict, NOTE_CHARS, -1);
}

static double band_row_h(size_t left, size_t right)
{
    size_t n = left > right ? left : right;
    return 8 + LINE * (double)(n ? n : 1) + 6;
}

static double bands_height(const bands *b)
{
    double h = 0;
    if (b->horizon) {
        h += band_row_h(b->h_left.n, 1);
    }
    if (b->split) {
        h += band_row_h(b->s_left.n, b->s_right.n);
    }
    return h ? HEADING_ROW + h : 0;
}

static void draw_bands(svg *g, const bands *b)
{
    FILE *f = g->out;
    if (!b->horizon && !b->split) {
        return;
    }
    heading(g, "Label horizon against the split's gap, on the axis", 0, NULL, NULL, NULL);
    fputs("<g class=\"bands\">\n", f);
    double x0 = x_of(g, 0);
    if (b->horizon) {
        double y = g->y, cy = y + 10;
        fputs("<g class=\"horizon\"><title>", f);
        put_str(f, kn_printf(g->a, "the label horizon: %s", range_words(g->a, b->h)));
        fputs("</title>\n", f);
        for (size_t i = 0; i < b->h_left.n; i++) {
            text(f, NAME_X, y + 14 + LINE * (double)i, 10, "fill=\"#1a1a1a\"", b->h_left.text[i]);
        }
        kn_interval band = {0, b->h.hi};
        bar(g, band, cy, 10, "url(#fill-horizon)", "#8a3f6c", NULL);
        text(f, NOTE_X, y + 14, 10, "fill=\"#1a1a1a\"", "labels settle within this band");
        fputs("</g>\n", f);
        g->y += band_row_h(b->h_left.n, 1);
    }
    if (b->split) {
        double y = g->y, cy = y + 10;
        fputs("<g class=\"split-gap\"><title>", f);
        put_str(f, b->short_gap ? kn_printf(g->a, "split-gap-short: %s%s%s", b->short_gap->message,
                                            b->short_gap->waived ? ". Waived: " : "",
                                            b->short_gap->waived && b->short_gap->waiver_reason
                                                ? b->short_gap->waiver_reason
                                                : "")
                                : "the split's gap");
        fputs("</title>\n", f);
        for (size_t i = 0; i < b->s_left.n; i++) {
            text(f, NAME_X, y + 14 + LINE * (double)i, 10, "fill=\"#1a1a1a\"", b->s_left.text[i]);
        }
        for (size_t i = 0; i < b->s_right.n; i++) {
            text(f, NOTE_X, y + 14 + LINE * (double)i, 10,
                 b->short_gap ? "class=\"rule\" font-weight=\"bold\" fill=\"#1a1a1a\"" : "fill=\"#1a1a1a\"",
                 b->s_right.text[i]);
        }
        if (b->gap_us > 0) {
            bar(g, (kn_interval){0, b->gap_us}, cy, 10, "#333333", "#000000", NULL);
        } else {
            fprintf(f,
                    "<path d=\"M%.1f %.1fL%.1f %.1fL%.1f %.1fL%.1f %.1fZ\" fill=\"#ffffff\" "
                    "stroke=\"#000000\"/>\n",
                    x0, cy - 6, x0 + 6, cy, x0, cy + 6, x0 - 6, cy);
        }
        fputs("</g>\n", f);
        g->y += band_row_h(b->s_left.n, b->s_right.n);
    }
    fputs("</g>\n", f);
}

/* ---- legend ------------------------------------------------------------- */

typedef struct legend_item {
    const char *fill, *stroke, *dash, *words;
    double h;
} legend_item;

/* Lays the legend out from y (draw: write it); returns the y below it. */
static double legend(svg *g, double y, const size_t *n_group, bool draw)
{
    FILE *f = g->out;
    legend_item items[KN_ROW_CLASS_COUNT + 1];
    size_t n = 0;
    items[n++] = (legend_item){C_EVENT, "#004a75", NULL, "event: when it can happen", 8};
    static const group shown[] = {KN_ROW_AVAILABLE, KN_ROW_MAYBE,    KN_ROW_LATE,       KN_ROW_FROM_TARGET,
                                  KN_ROW_UNORDERED, KN_ROW_RULE_OFF, KN_ROW_NOT_FEATURE};
    static const char *const words[] = {
        "feature available at the moment", "late in some cases",     "late in every case",
        "built from the target",           "not ordered (no bound)", "late, its rule off in the rulebook",
        "not a feature: never late"};
    for (size_t i = 0; i < sizeof shown / sizeof shown[0]; i++) {
        /* the three main verdicts always; the others when they occur */
        if (i < 3 || n_group[shown[i]]) {
            items[n++] = (legend_item){group_fill(shown[i]), group_stroke(shown[i]), group_dash(shown[i]),
                                       words[i], 12};
        }
    }
    if (draw) {
        fputs("<g class=\"legend\">\n", f);
    }
    double x = NAME_X;
    for (size_t i = 0; i < n; i++) {
        double w = 32 + CHAR_W * (double)strlen(items[i].words) + 24;
        if (x > NAME_X && x + w > WIDTH - MARGIN) {
            x = NAME_X;
            y += 20;
        }
        if (draw) {
            fprintf(f,
                    "<rect x=\"%.1f\" y=\"%.1f\" width=\"26\" height=\"%.1f\" fill=\"%s\" stroke=\"%s\" "
                    "stroke-width=\"1\"%s%s%s/>\n",
                    x, y - 9 + (12 - items[i].h) / 2, items[i].h, items[i].fill, items[i].stroke,
                    items[i].dash ? " stroke-dasharray=\"" : "", items[i].dash ? items[i].dash : "",
                    items[i].dash ? "\"" : "");
            text(f, x + 32, y + 1, 11, NULL, items[i].words);
        }
        x += w;
    }
    y += 20;
    x = NAME_X;
    if (draw) {
        fprintf(
            f,
            "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#000000\" stroke-width=\"2\"/>\n",
            x + 13, y - 11, x + 13, y + 3);
        text(f, x + 32, y + 1, 11, NULL, "the prediction moment");
    }
    x += 32 + CHAR_W * 21 + 24;
    if (draw) {
        fprintf(f, "<rect x=\"%.1f\" y=\"%.1f\" width=\"18\" height=\"12\" fill=\"%s\" stroke=\"%s\"/>\n", x,
                y - 9, C_MUTED, C_MUTED);
        arrow(f, x + 18, y - 3, 12, 1, C_MUTED);
        text(f, x + 40, y + 1, 11, NULL, "no bound on that side");
    }
    x += 40 + CHAR_W * 21 + 24;
    if (draw) {
        fprintf(f, "<path d=\"M%.1f %.1fL%.1f %.1fL%.1f %.1fL%.1f %.1fZ\" fill=\"%s\" stroke=\"#004a75\"/>\n",
                x + 13, y - 10, x + 20, y - 3, x + 13, y + 4, x + 6, y - 3, C_EVENT);
        text(f, x + 32, y + 1, 11, NULL, "a single instant");
    }
    x += 32 + CHAR_W * 16 + 24;
    if (draw) {
        fprintf(f,
                "<rect x=\"%.1f\" y=\"%.1f\" width=\"26\" height=\"10\" fill=\"url(#fill-horizon)\" "
                "stroke=\"#8a3f6c\"/>\n",
                x, y - 8);
        text(f, x + 32, y + 1, 11, NULL, "label horizon");
        fputs("</g>\n", f);
    }
    return y + 20;
}

/* "Columns: 2 late, 1 late in some cases, 5 available, 3 not features, 2
 * with no timing." */
static const char *summary(svg *g, const kn_schema *s, const size_t *n_group)
{
    static const char *const words[KN_ROW_CLASS_COUNT] = {
        [KN_ROW_LATE] = "late in every case",
        [KN_ROW_MAYBE] = "late in some cases",
        [KN_ROW_FROM_TARGET] = "built from the target",
        [KN_ROW_UNORDERED] = "not ordered",
        [KN_ROW_RULE_OFF] = "late with the rule off",
        [KN_ROW_AVAILABLE] = "available",
        [KN_ROW_NOT_FEATURE] = "not features",
        [KN_ROW_NO_TIMING] = "with no timing",
        [KN_ROW_NOT_PLACED] = "not placed",
    };
    const char *out = "Columns, as knowable check judges them:";
    const char *sep = " ";
    for (int k = 0; k < KN_ROW_CLASS_COUNT; k++) {
        if (n_group[k]) {
            out = kn_printf(g->a, "%s%s%zu %s", out, sep, n_group[k],
                            k == KN_ROW_NOT_FEATURE && n_group[k] == 1 ? "not a feature" : words[k]);
            sep = ", ";
        }
    }
    return s->n_columns ? kn_printf(g->a, "%s.", out) : "No columns.";
}

/* ---- the document ------------------------------------------------------- */

static void open_doc(FILE *f, double height, const char *title)
{
    fputs("<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"no\"?>\n", f);
    fprintf(f,
            "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"%.0f\" "
            "height=\"%.0f\" viewBox=\"0 0 %.0f %.0f\" font-family=\"%s\">\n",
            WIDTH, height, WIDTH, height, FONT);
    fputs("<title>", f);
    put_str(f, title);
    fputs("</title>\n", f);
    fprintf(f, "<rect x=\"0\" y=\"0\" width=\"%.0f\" height=\"%.0f\" fill=\"#ffffff\"/>\n", WIDTH, height);
}

static void message_doc(FILE *f, const char *title, const char *message)
{
    open_doc(f, 90, title);
    text(f, NAME_X, 30, 18, "font-weight=\"bold\"", title);
    text(f, NAME_X, 60, 13, NULL, message);
    fputs("</svg>\n", f);
}

void kn_timeline_write_svg(FILE *out, const kn_schema *s, const kn_timeline *t, const kn_doc_findings *f)
{
    const char *name = s->dataset ? s->dataset : s->path;
    const kn_event *m = kn_timeline_moment(t);
    if (!t || !m) {
        message_doc(out, "Timeline",
                    "The prediction moment does not name a defined event, so nothing can be "
                    "placed (see knowable check).");
        return;
    }
    svg g = {.out = out, .a = kn_timeline_arena(t)};
    if (!f) {
        f = kn_doc_findings_make(g.a, NULL, 0, s, t);
    }
    const char *title = kn_printf(g.a, "Timeline of %s", cut(g.a, name, 60));
    size_t n_contra = 0;
    if (kn_timeline_contradictory(t)) {
        const kn_contradiction *cy;
        n_contra = kn_timeline_contradictions(t, &cy);
    }
    double y_legend = n_contra ? 126 : 108;

    /* The axis covers every finite end, each side rounded up to a tick. */
    int64_t left = 0, right = 0;
    kn_interval *er = kn_alloc_array(g.a, s->n_events + 1, sizeof *er);
    bool *has_er = kn_alloc_array(g.a, s->n_events + 1, sizeof *has_er);
    for (size_t i = 0; i < s->n_events; i++) {
        has_er[i] = kn_timeline_event_range(t, s->events[i], &er[i]);
        if (has_er[i]) {
            widen(&left, &right, er[i].lo);
            widen(&left, &right, er[i].hi);
        }
    }
    size_t n_group[KN_ROW_CLASS_COUNT] = {0};
    for (size_t i = 0; i < s->n_columns; i++) {
        group gr = f->rows[i].cls;
        n_group[gr]++;
        if (group_has_bar(gr)) {
            const kn_column_timing *T = kn_timeline_column_timing(t, s->columns[i]);
            widen(&left, &right, T->range.lo);
            widen(&left, &right, T->range.hi);
        }
    }
    bands b = {0};
    plan_bands(&g, s, t, f, &b);
    b.gap_us = s->split.present && s->split.has_gap ? s->split.gap.lo : 0;
    if (b.horizon) {
        widen(&left, &right, b.h.hi);
    }
    widen(&left, &right, b.gap_us);
    g.left = round_up(left);
    g.right = round_up(right);
    g.s_left = slog(-g.left);
    g.s_right = slog(g.right);

    /* Layout first: the height goes in the document's first line. */
    double legend_end = legend(&g, y_legend, n_group, false);
    double top = legend_end + 44;
    double rows_h = bands_height(&b) + HEADING_ROW;
    for (size_t i = 0; i < s->n_events; i++) {
        rows_h += event_height(&g, t, s->events[i], has_er[i]);
    }
    for (int k = 0; k < KN_ROW_CLASS_COUNT; k++) {
        rows_h += n_group[k] ? HEADING_ROW : 0;
    }
    for (size_t i = 0; i < s->n_columns; i++) {
        rows_h += column_height(&g, t, s->columns[i], &f->rows[i]);
    }
    double height = top + rows_h + 52;
    open_doc(out, height, title);
    defs(out);

    text(out, NAME_X, 30, 20, "font-weight=\"bold\"", title);
    const char *sub = kn_printf(g.a,
                                "When each event happens and when each column's value is available, "
                                "relative to the prediction moment '%s'.",
                                cut(g.a, m->name, 96));
    text(out, NAME_X, 50, 12, "fill=\"#333333\"", sub);
    text(out, NAME_X, 66, 12, "fill=\"#333333\"",
         kn_timeline_strict(t)
             ? "Time axis on a signed logarithmic scale. A value recorded exactly at the moment "
               "counts as late (strict_moment). Groups and rules are those of knowable check."
             : "Time axis on a signed logarithmic scale. A value recorded exactly at the moment "
               "counts as available. Groups and rules are those of knowable check.");
    text(out, NAME_X, 84, 12, "font-weight=\"bold\"", summary(&g, s, n_group));
    if (n_contra) {
        text(out, NAME_X, 102, 12, "font-weight=\"bold\" fill=\"#8f3f00\"",
             kn_printf(
                 g.a,
                 "The event constraints contradict each other (%zu contradiction%s): the events on one, and "
                 "those tied to the moment only through one, are set aside (see knowable timeline).",
                 n_contra, n_contra == 1 ? "" : "s"));
    }
    legend(&g, y_legend, n_group, true);

    double y_axis_label = top - 8;
    double y_plot_top = top - 4, y_plot_bottom = top + rows_h;
    double x0 = x_of(&g, 0);
    /* The side after the moment is shaded: nothing there is known yet. */
    fprintf(out, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" fill=\"#f4f4f4\"/>\n", x0,
            y_plot_top, PLOT_X1 - x0 + 8, y_plot_bottom - y_plot_top);
    text(out, x0 - 6, top - 24, 11, "text-anchor=\"end\" fill=\"#333333\"", "before the moment");
    text(out, x0 + 6, top - 24, 11, "fill=\"#333333\"", "after the moment");
    axis(&g, y_axis_label, y_plot_top, y_plot_bottom);

    g.y = top;
    draw_bands(&g, &b);
    heading(&g, "Events", s->n_events, NULL, NULL, NULL);
    fputs("<g class=\"events\">\n", out);
    for (size_t i = 0; i < s->n_events; i++) {
        event_row(&g, t, s->events[i], m, er[i], has_er[i]);
    }
    fputs("</g>\n", out);
    for (int k = 0; k < KN_ROW_CLASS_COUNT; k++) {
        if (!n_group[k]) {
            continue;
        }
        group gr = (group)k;
        heading(&g, kn_row_class_heading(gr), n_group[k], group_has_bar(gr) ? group_fill(gr) : NULL,
                group_stroke(gr), group_dash(gr));
        fprintf(out, "<g class=\"%s\">\n", group_class[k]);
        for (size_t i = 0; i < s->n_columns; i++) {
            if (f->rows[i].cls == gr) {
                column_row(&g, t, s->columns[i], &f->rows[i]);
            }
        }
        fputs("</g>\n", out);
    }

    text(out, x0, y_plot_bottom + 30, 11, "text-anchor=\"middle\" font-weight=\"bold\"",
         kn_printf(g.a, "the moment: %s", cut(g.a, m->name, 40)));
    /* The moment line goes over the rows. */
    fprintf(out,
            "<line class=\"moment\" x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
            "stroke=\"#000000\" stroke-width=\"2\"/>\n",
            x0, y_plot_top, x0, y_plot_bottom);
    fputs("</svg>\n", out);
}
