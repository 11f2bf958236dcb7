/* timeline_svg.c - the picture of `knowable timeline SCHEMA --svg FILE`: a
 * horizontal time axis relative to the prediction moment on a signed
 * logarithmic scale, the moment as a vertical line, each event as a bar over
 * its range, then each column as a bar over its availability range, grouped
 * and coloured by verdict.  Every verdict also has its own fill pattern and
 * a word beside the row, so the picture reads without colour (the colours
 * are from the Okabe-Ito palette, safe for colour-blind readers).  Reads the
 * solved timeline; writes SVG 1.1 to the caller's FILE.
 *
 * The output is deterministic (no clock, no locale, fixed number format),
 * self-contained (no script, no external font or image) and printable
 * (white background).  Every text from the schema is escaped for XML. */
#include <math.h>
#include <string.h>

#include "docs.h"
#include "../util/text.h"

/* Geometry, in pixels. */
#define WIDTH 1040.0
#define MARGIN 16.0
#define NAME_X MARGIN
#define PLOT_X0 262.0
#define PLOT_X1 822.0
#define NOTE_X 842.0
#define EVENT_ROW 24.0
#define COLUMN_ROW 32.0
#define HEADING_ROW 30.0
#define MIN_TICK_GAP 40.0
#define NAME_CHARS 30  /* code points of a name shown before it is cut */
#define DETAIL_CHARS 38

/* Average advance of an 11px character, for laying out the legend. */
#define CHAR_W 6.4

#define FONT "DejaVu Sans, Verdana, Arial, sans-serif"

/* Okabe-Ito colours. */
#define C_EVENT "#0072B2"     /* blue */
#define C_AVAILABLE "#009E73" /* bluish green */
#define C_MAYBE "#E69F00"     /* orange */
#define C_LATE "#D55E00"      /* vermillion */
#define C_UNORDERED "#56B4E9" /* sky blue */
#define C_MUTED "#595959"

/* Column groups, in the order the picture shows them. */
typedef enum group {
    G_AVAILABLE,
    G_MAYBE,
    G_LATE,
    G_UNORDERED,
    G_NOT_PLACED,
    G_COUNT
} group;

static const char *const group_heading[G_COUNT] = {
    "Columns available at the moment",
    "Columns late in some cases: part of the range is after the moment",
    "Columns late in every case: after the moment",
    "Columns not ordered relative to the moment: no bound",
    "Columns not placed",
};

static const char *const group_word[G_COUNT] = {
    "available", "late in some cases", "late", "unordered", "not placed",
};

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
    double y;            /* top of the next row */
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
    fputs("</defs>\n", f);
}

static const char *group_fill(group gr)
{
    switch (gr) {
    case G_AVAILABLE:
        return C_AVAILABLE;
    case G_MAYBE:
        return "url(#fill-maybe)";
    case G_LATE:
        return "url(#fill-late)";
    case G_UNORDERED:
        return "url(#fill-unordered)";
    case G_NOT_PLACED:
    case G_COUNT:
        break;
    }
    return "none";
}

static const char *group_stroke(group gr)
{
    switch (gr) {
    case G_AVAILABLE:
        return "#00654e";
    case G_MAYBE:
        return "#9a6a00";
    case G_LATE:
        return "#8f3f00";
    case G_UNORDERED:
        return "#1f6f9c";
    case G_NOT_PLACED:
    case G_COUNT:
        break;
    }
    return C_MUTED;
}

/* An arrowhead at x pointing left (dir -1) or right (dir 1), centred on cy. */
static void arrow(FILE *f, double x, double cy, double h, int dir, const char *colour)
{
    double tip = x + dir * (h * 0.9 + 2);
    fprintf(f, "<path d=\"M%.1f %.1fL%.1f %.1fL%.1f %.1fZ\" fill=\"%s\"/>\n", x, cy - h / 2 - 2,
            tip, cy, x, cy + h / 2 + 2, colour);
}

/* A bar over r on the row centred at cy; unbounded or clipped ends get an
 * arrowhead at the edge of the plot; a point gets a diamond. */
static void bar(const svg *g, kn_interval r, double cy, double h, const char *fill,
                const char *stroke, const char *dash)
{
    FILE *f = g->out;
    bool open_lo = r.lo < -g->left, open_hi = r.hi > g->right;
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
            x1, cy - h / 2, x2 - x1, h, fill, stroke, dash ? " stroke-dasharray=\"" : "",
            dash ? dash : "", dash ? "\"" : "");
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

/* ---- rows --------------------------------------------------------------- */

/* A group's heading; fill/stroke, when given, draw its swatch first. */
static void heading(svg *g, const char *words, size_t n, const char *fill, const char *stroke,
                    bool dashed)
{
    FILE *f = g->out;
    double base = g->y + HEADING_ROW - 9;
    double x = NAME_X;
    if (fill) {
        fprintf(f,
                "<rect x=\"%.1f\" y=\"%.1f\" width=\"22\" height=\"12\" fill=\"%s\" stroke=\"%s\" "
                "stroke-width=\"1\"%s/>\n",
                x, base - 10, fill, stroke, dashed ? " stroke-dasharray=\"3 2\"" : "");
        x += 30;
    }
    const char *s = kn_printf(g->a, "%s (%zu)", words, n);
    text(f, x, base, 13, "font-weight=\"bold\" fill=\"#1a1a1a\"", s);
    fprintf(f,
            "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#808080\" "
            "stroke-width=\"0.8\"/>\n",
            NAME_X, g->y + HEADING_ROW - 3, WIDTH - MARGIN, g->y + HEADING_ROW - 3);
    g->y += HEADING_ROW;
}

static void event_row(svg *g, const kn_event *e, const kn_event *m, kn_interval r)
{
    FILE *f = g->out;
    double cy = g->y + EVENT_ROW / 2;
    bool none = r.lo <= -KN_TIME_INF && r.hi >= KN_TIME_INF;
    const char *words = e == m ? "the moment" : none ? "not ordered" : range_words(g->a, r);
    if (e->first_of_node) {
        /* the earliest of several routes: its members in the tooltip */
        const char *names = "";
        for (size_t k = 0; k < e->n_first_of; k++) {
            names = kn_printf(g->a, "%s%s%s", names, k ? " | " : "", e->first_of[k].name);
        }
        words = kn_printf(g->a, "%s; first of %s", words, names);
    }
    fputs("<g class=\"event\"><title>", f);
    put_str(f, kn_printf(g->a, "event %s: %s", e->name, words));
    fputs("</title>\n", f);
    text(f, NAME_X, cy + 4, 12, NULL, cut(g->a, e->name, NAME_CHARS));
    if (none) {
        fprintf(f,
                "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"%s\" "
                "stroke-width=\"2\" stroke-dasharray=\"2 4\"/>\n",
                PLOT_X0, cy, PLOT_X1, cy, C_EVENT);
    } else {
        bar(g, r, cy, 8, C_EVENT, "#004a75", NULL);
    }
    text(f, NOTE_X, cy + 4, 11, e == m ? "font-weight=\"bold\"" : "fill=\"#333333\"", words);
    fputs("</g>\n", f);
    g->y += EVENT_ROW;
}

static group group_of(const kn_column_timing *T)
{
    if (!T || !T->ordered || !T->computed) {
        return G_NOT_PLACED;
    }
    switch (T->verdict) {
    case KN_VERDICT_AVAILABLE:
        return G_AVAILABLE;
    case KN_VERDICT_MAYBE_LATE:
        return G_MAYBE;
    case KN_VERDICT_LATE:
        return G_LATE;
    case KN_VERDICT_UNORDERED:
        return G_UNORDERED;
    case KN_VERDICT_UNKNOWN:
        break;
    }
    return G_NOT_PLACED;
}

/* Where the column's timing comes from, as on the text report's last column. */
static const char *basis(kn_arena *a, const kn_column *c, const kn_column_timing *T)
{
    const char *s = kn_role_name(c->role);
    if (!T) {
        return s;
    }
    if (T->has[KN_PART_KNOWN] && c->n_one_of) {
        s = kn_printf(a, "%s, known at one of", s);
        for (size_t i = 0; i < c->n_one_of; i++) {
            s = kn_printf(a, "%s%s%s", s, i ? " | " : " ", c->one_of[i].name);
        }
    } else if (T->has[KN_PART_KNOWN]) {
        s = kn_printf(a, "%s, known at %s", s, c->known.name);
    }
    if (T->has[KN_PART_WINDOW]) {
        s = kn_printf(a, "%s, window on %s", s, c->window.anchor.name);
    }
    if (T->has[KN_PART_INPUTS]) {
        s = kn_printf(a, "%s, derived from %zu column%s", s, c->n_derived, c->n_derived == 1 ? "" : "s");
    }
    if (T->has[KN_PART_AS_OF]) {
        s = kn_printf(a, "%s, as of %s", s, c->join.as_of.name);
        if (c->join.has_offset) {
            char b[48];
            int64_t v = c->join.offset.lo < 0 ? c->join.offset.lo : c->join.offset.hi;
            s = kn_printf(a, "%s %s%s", s, v > 0 ? "+" : "", kn_duration_format(v, b, sizeof b));
        }
    }
    const kn_source *src = c->join.present && KN_REF_SOURCE(c->join.source) ? KN_REF_SOURCE(c->join.source)
                                                                           : KN_REF_SOURCE(c->source);
    if (src && src->matures.present && src->matures.hi > 0) {
        char b[48];
        s = kn_printf(a, "%s, settles up to %s later", s, kn_duration_format(src->matures.hi, b, sizeof b));
    }
    return s;
}

/* Why a column could not be placed. */
static const char *not_placed(const kn_timeline *t, const kn_column *c, const kn_column_timing *T)
{
    if (!T) {
        return "not placed";
    }
    if (!T->ordered) {
        return "on or behind a derivation cycle";
    }
    if (T->has[KN_PART_INPUTS]) {
        for (size_t i = 0; i < c->n_derived; i++) {
            const kn_column *in = KN_REF_COLUMN(c->derived_from[i]);
            const kn_column_timing *TI = in ? kn_timeline_column_timing(t, in) : NULL;
            if (!TI || !TI->computed) {
                return kn_printf(kn_timeline_arena(t), "its input %s is not placed",
                                 cut(kn_timeline_arena(t), c->derived_from[i].name, 24));
            }
        }
    }
    for (int p = 0; p < KN_PART_COUNT; p++) {
        if (T->has[p]) {
            return "a reference or duration is in error";
        }
    }
    return "no timing declared";
}

static void column_row(svg *g, const kn_timeline *t, const kn_column *c, group gr)
{
    FILE *f = g->out;
    const kn_column_timing *T = kn_timeline_column_timing(t, c);
    double cy = g->y + COLUMN_ROW / 2;
    const char *range = gr == G_NOT_PLACED ? not_placed(t, c, T) : range_words(g->a, T->range);
    const char *tip = kn_printf(g->a, "column %s: %s, %s", c->name, group_word[gr], range);
    fputs("<g class=\"column\"><title>", f);
    put_str(f, tip);
    fputs("</title>\n", f);
    text(f, NAME_X, cy - 1, 12, NULL, cut(g->a, c->name, NAME_CHARS));
    text(f, NAME_X, cy + 11, 10, "fill=\"" C_MUTED "\"", cut(g->a, basis(g->a, c, T), DETAIL_CHARS));
    if (gr == G_NOT_PLACED) {
        fprintf(f,
                "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#bfbfbf\" "
                "stroke-width=\"1\" stroke-dasharray=\"1 3\"/>\n",
                PLOT_X0, cy, PLOT_X1, cy);
    } else {
        bar(g, T->range, cy, 14, group_fill(gr), group_stroke(gr), gr == G_UNORDERED ? "3 2" : NULL);
    }
    /* The target is meant to be late: say so, so that the row does not
     * read as a finding. */
    const char *word = group_word[gr];
    if (c->role == KN_ROLE_TARGET && gr != G_NOT_PLACED) {
        word = kn_printf(g->a, "%s (the target)", word);
    } else if (c->role == KN_ROLE_EXCLUDED && gr != G_NOT_PLACED) {
        word = kn_printf(g->a, "%s (excluded)", word);
    }
    text(f, NOTE_X, cy - 1, 12, "font-weight=\"bold\"", word);
    text(f, NOTE_X, cy + 11, 10, "fill=\"" C_MUTED "\"", cut(g->a, range, DETAIL_CHARS));
    fputs("</g>\n", f);
    g->y += COLUMN_ROW;
}

/* ---- legend ------------------------------------------------------------- */

static void legend(svg *g, double y)
{
    FILE *f = g->out;
    typedef struct item {
        const char *fill, *stroke, *words;
    } item;
    const item items[] = {
        {C_EVENT, "#004a75", "event: when it can happen"},
        {group_fill(G_AVAILABLE), group_stroke(G_AVAILABLE), "available at the moment"},
        {group_fill(G_MAYBE), group_stroke(G_MAYBE), "late in some cases"},
        {group_fill(G_LATE), group_stroke(G_LATE), "late in every case"},
        {group_fill(G_UNORDERED), group_stroke(G_UNORDERED), "not ordered (no bound)"},
    };
    fputs("<g class=\"legend\">\n", f);
    double x = NAME_X;
    for (size_t i = 0; i < sizeof items / sizeof items[0]; i++) {
        double h = i == 0 ? 8 : 12;
        fprintf(f,
                "<rect x=\"%.1f\" y=\"%.1f\" width=\"26\" height=\"%.1f\" fill=\"%s\" stroke=\"%s\" "
                "stroke-width=\"1\"%s/>\n",
                x, y - 9 + (12 - h) / 2, h, items[i].fill, items[i].stroke,
                i == 4 ? " stroke-dasharray=\"3 2\"" : "");
        text(f, x + 32, y + 1, 11, NULL, items[i].words);
        x += 32 + CHAR_W * (double)strlen(items[i].words) + 24;
    }
    y += 20;
    x = NAME_X;
    fprintf(f, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#000000\" stroke-width=\"2\"/>\n",
            x + 13, y - 11, x + 13, y + 3);
    text(f, x + 32, y + 1, 11, NULL, "the prediction moment");
    x += 32 + CHAR_W * 21 + 24;
    fprintf(f, "<rect x=\"%.1f\" y=\"%.1f\" width=\"18\" height=\"12\" fill=\"%s\" stroke=\"%s\"/>\n",
            x, y - 9, C_MUTED, C_MUTED);
    arrow(f, x + 18, y - 3, 12, 1, C_MUTED);
    text(f, x + 40, y + 1, 11, NULL, "no bound on that side");
    x += 40 + CHAR_W * 21 + 24;
    fprintf(f,
            "<path d=\"M%.1f %.1fL%.1f %.1fL%.1f %.1fL%.1f %.1fZ\" fill=\"%s\" stroke=\"#004a75\"/>\n",
            x + 13, y - 10, x + 20, y - 3, x + 13, y + 4, x + 6, y - 3, C_EVENT);
    text(f, x + 32, y + 1, 11, NULL, "a single instant");
    fputs("</g>\n", f);
}

/* "Columns: 5 available, 1 late in some cases, 5 late (one of them the
 * target), 4 not placed." */
static const char *summary(svg *g, const kn_schema *s, const kn_timeline *t, const size_t *n_group)
{
    const char *out = "Columns:";
    const char *sep = " ";
    for (int k = 0; k < G_COUNT; k++) {
        if (!n_group[k]) {
            continue;
        }
        out = kn_printf(g->a, "%s%s%zu %s", out, sep, n_group[k], group_word[k]);
        sep = ", ";
        const kn_column *target = KN_REF_COLUMN(s->prediction.target);
        if (target && group_of(kn_timeline_column_timing(t, target)) == (group)k) {
            out = kn_printf(g->a, "%s (%s the target)", out, n_group[k] == 1 ? "that is" : "one of them");
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
    fprintf(f, "<rect x=\"0\" y=\"0\" width=\"%.0f\" height=\"%.0f\" fill=\"#ffffff\"/>\n", WIDTH,
            height);
}

static void message_doc(FILE *f, const char *title, const char *message)
{
    open_doc(f, 90, title);
    text(f, NAME_X, 30, 18, "font-weight=\"bold\"", title);
    text(f, NAME_X, 60, 13, NULL, message);
    fputs("</svg>\n", f);
}

void kn_timeline_write_svg(FILE *out, const kn_schema *s, const kn_timeline *t)
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
    const char *title = kn_printf(g.a, "Timeline of %s", cut(g.a, name, 60));
    if (kn_timeline_contradictory(t)) {
        message_doc(out, title,
                    "The event constraints contradict each other, so no event or column can be "
                    "placed (see knowable timeline or knowable check).");
        return;
    }

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
    size_t n_group[G_COUNT] = {0};
    group *col_group = kn_alloc_array(g.a, s->n_columns + 1, sizeof *col_group);
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column_timing *T = kn_timeline_column_timing(t, s->columns[i]);
        col_group[i] = group_of(T);
        n_group[col_group[i]]++;
        if (col_group[i] != G_NOT_PLACED) {
            widen(&left, &right, T->range.lo);
            widen(&left, &right, T->range.hi);
        }
    }
    g.left = round_up(left);
    g.right = round_up(right);
    g.s_left = slog(-g.left);
    g.s_right = slog(g.right);

    size_t n_ev_rows = 0;
    for (size_t i = 0; i < s->n_events; i++) {
        n_ev_rows += has_er[i];
    }
    size_t n_headings = 1;
    for (int k = 0; k < G_COUNT; k++) {
        n_headings += n_group[k] > 0;
    }
    double top = 184;
    double rows_h = HEADING_ROW * (double)n_headings + EVENT_ROW * (double)n_ev_rows +
                    COLUMN_ROW * (double)s->n_columns;
    double height = top + rows_h + 52;
    open_doc(out, height, title);
    defs(out);

    text(out, NAME_X, 30, 20, "font-weight=\"bold\"", title);
    const char *sub = kn_printf(g.a,
                                "When each event happens and when each column's value is available, "
                                "relative to the prediction moment '%s'.",
                                cut(g.a, m->name, 40));
    text(out, NAME_X, 50, 12, "fill=\"#333333\"", sub);
    text(out, NAME_X, 66, 12, "fill=\"#333333\"",
         kn_timeline_strict(t)
             ? "Time axis on a signed logarithmic scale. A value recorded exactly at the moment "
               "counts as late (strict_moment)."
             : "Time axis on a signed logarithmic scale. A value recorded exactly at the moment "
               "counts as available.");
    text(out, NAME_X, 84, 12, "font-weight=\"bold\"", summary(&g, s, t, n_group));
    legend(&g, 108);

    double y_axis_label = top - 8;
    double y_plot_top = top - 4, y_plot_bottom = top + rows_h;
    double x0 = x_of(&g, 0);
    /* The side after the moment is shaded: nothing there is known yet. */
    fprintf(out,
            "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" fill=\"#f4f4f4\"/>\n", x0,
            y_plot_top, PLOT_X1 - x0 + 8, y_plot_bottom - y_plot_top);
    text(out, x0 - 6, top - 24, 11, "text-anchor=\"end\" fill=\"#333333\"", "before the moment");
    text(out, x0 + 6, top - 24, 11, "fill=\"#333333\"", "after the moment");
    axis(&g, y_axis_label, y_plot_top, y_plot_bottom);

    g.y = top;
    heading(&g, "Events", n_ev_rows, NULL, NULL, false);
    fputs("<g class=\"events\">\n", out);
    for (size_t i = 0; i < s->n_events; i++) {
        if (has_er[i]) {
            event_row(&g, s->events[i], m, er[i]);
        }
    }
    fputs("</g>\n", out);
    for (int k = 0; k < G_COUNT; k++) {
        if (!n_group[k]) {
            continue;
        }
        heading(&g, group_heading[k], n_group[k], k == G_NOT_PLACED ? NULL : group_fill((group)k),
                group_stroke((group)k), k == G_UNORDERED);
        fprintf(out, "<g class=\"columns-%s\">\n",
                k == G_AVAILABLE ? "available"
                : k == G_MAYBE   ? "maybe-late"
                : k == G_LATE    ? "late"
                : k == G_UNORDERED ? "unordered"
                                   : "not-placed");
        for (size_t i = 0; i < s->n_columns; i++) {
            if (col_group[i] == (group)k) {
                column_row(&g, t, s->columns[i], (group)k);
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
