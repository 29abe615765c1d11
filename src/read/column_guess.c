/* column_guess.c - starter column maps: the field a header cell plainly names, and a whole map
 * for a file, for the user to check and edit (see tw_column_map.h, docs/column-maps.md).
 *
 * A header is taken as a field only when its words name the quantity and, for a quantity
 * with a unit, its unit is one the field can be converted from. Anything less sure is left
 * null in the starter map: it is read by nothing until the user decides. */
#include "read/tw_column_map.h"

#include <cjson/cJSON.h>
#include <ctype.h>
#include <iconv.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_util.h"

#define COUNT(a) (sizeof(a) / sizeof((a)[0]))

/* Lines looked at for the header, and data lines looked at for the decimal mark, dates and
 * missing-value words. */
#define HEADER_SEARCH_LINES 50
#define DATA_SAMPLE_LINES 500

/* ---- one header cell -------------------------------------------------------------------- */

typedef enum { U_NONE, U_VOLT, U_ENERGY_CAL, U_ENERGY_J, U_LENGTH, U_CURRENT, U_TIME, U_POWER,
               U_PERCENT, U_UNKNOWN } unit_kind;

typedef struct {
    unit_kind kind;
    double factor; /* into V, mm, kA, s or kVA */
    int inches, feet; /* lengths that have a column of their own */
} unit;

static unit unit_of(const char *u)
{
    static const struct {
        const char *name;
        unit u;
    } units[] = {
        {"v", {U_VOLT, 1, 0, 0}},          {"kv", {U_VOLT, 1000, 0, 0}},
        {"cal/cm2", {U_ENERGY_CAL, 1, 0, 0}}, {"j/cm2", {U_ENERGY_J, 1, 0, 0}},
        {"mm", {U_LENGTH, 1, 0, 0}},        {"cm", {U_LENGTH, 10, 0, 0}},
        {"m", {U_LENGTH, 1000, 0, 0}},      {"in", {U_LENGTH, 25.4, 1, 0}},
        {"inch", {U_LENGTH, 25.4, 1, 0}},   {"inches", {U_LENGTH, 25.4, 1, 0}},
        {"ft", {U_LENGTH, 304.8, 0, 1}},    {"ka", {U_CURRENT, 1, 0, 0}},
        {"a", {U_CURRENT, 0.001, 0, 0}},    {"s", {U_TIME, 1, 0, 0}},
        {"sec", {U_TIME, 1, 0, 0}},         {"seconds", {U_TIME, 1, 0, 0}},
        {"ms", {U_TIME, 0.001, 0, 0}},      {"kva", {U_POWER, 1, 0, 0}},
        {"mva", {U_POWER, 1000, 0, 0}},     {"%", {U_PERCENT, 1, 0, 0}},
    };
    for (size_t i = 0; i < COUNT(units); i++)
        if (!strcmp(u, units[i].name))
            return units[i].u;
    unit none = {*u ? U_UNKNOWN : U_NONE, 1, 0, 0};
    return none;
}

/* Lower-case words of the header (letters and digits), at most 8, and its unit: the text in
 * the last brackets, or a last word that is a unit ("Bus kV"). */
typedef struct {
    char words[8][24];
    size_t n;
    unit u;
} header_parts;

static void unit_text(const char *s, size_t len, char *out, size_t cap)
{
    size_t o = 0;
    for (size_t i = 0; i < len && o + 1 < cap; i++) {
        unsigned char c = (unsigned char)s[i];
        if (c == 0xC2 && i + 1 < len && (unsigned char)s[i + 1] == 0xB2) { /* superscript two */
            out[o++] = '2';
            i++;
        } else if (c == '^' || c == ' ' || c == '.') {
            continue;
        } else {
            out[o++] = (char)tolower(c);
        }
    }
    out[o] = '\0';
}

static void split_header(const char *h, header_parts *p)
{
    memset(p, 0, sizeof *p);
    const char *open = strrchr(h, '('), *close = open ? strchr(open, ')') : NULL;
    if (!open) {
        open = strrchr(h, '[');
        close = open ? strchr(open, ']') : NULL;
    }
    size_t words_end = strlen(h);
    char ut[32] = "";
    if (open && close) {
        unit_text(open + 1, (size_t)(close - open - 1), ut, sizeof ut);
        words_end = (size_t)(open - h);
    }
    for (size_t i = 0; i < words_end && p->n < COUNT(p->words);) {
        if (!isalnum((unsigned char)h[i]) && h[i] != '%') {
            i++;
            continue;
        }
        size_t k = 0;
        while (i < words_end && (isalnum((unsigned char)h[i]) || h[i] == '%')) {
            if (k + 1 < sizeof p->words[0])
                p->words[p->n][k++] = (char)tolower((unsigned char)h[i]);
            i++;
        }
        p->words[p->n++][k] = '\0';
    }
    if (!*ut && p->n > 1 && unit_of(p->words[p->n - 1]).kind != U_UNKNOWN) {
        snprintf(ut, sizeof ut, "%s", p->words[p->n - 1]);
        p->n--;
    }
    /* "Incident Energy cal/cm2" without brackets: the unit is the text after the last blank. */
    if (!*ut && !open) {
        const char *sp = strrchr(h, ' ');
        if (sp && strchr(sp, '/')) {
            unit_text(sp + 1, strlen(sp + 1), ut, sizeof ut);
            if (unit_of(ut).kind == U_ENERGY_CAL || unit_of(ut).kind == U_ENERGY_J)
                while (p->n > 0 && (!strcmp(p->words[p->n - 1], "cm2") ||
                                    !strcmp(p->words[p->n - 1], "cal") ||
                                    !strcmp(p->words[p->n - 1], "j") ||
                                    !strcmp(p->words[p->n - 1], "cm")))
                    p->n--;
        }
    }
    p->u = unit_of(ut);
}

static int has(const header_parts *p, const char *w)
{
    for (size_t i = 0; i < p->n; i++)
        if (!strcmp(p->words[i], w))
            return 1;
    return 0;
}

static int only(const header_parts *p, const char *a, const char *b)
{
    return p->n == (b ? 2u : 1u) && has(p, a) && (!b || has(p, b));
}

/* A text field named by its words, with no unit. */
static const char *text_field(const header_parts *p)
{
    if (p->u.kind != U_NONE)
        return NULL;
    if (only(p, "equipment", "id") || only(p, "equipment", "name") || only(p, "bus", "name") ||
        only(p, "bus", "id") || only(p, "equipment_id", NULL))
        return "equipment_id";
    if (only(p, "description", NULL) || only(p, "equipment", "description"))
        return "description";
    if (only(p, "location", NULL) || only(p, "equipment", "location"))
        return "location";
    if (only(p, "study", "id"))
        return "study_id";
    if (only(p, "study", "date"))
        return "study_date";
    if (only(p, "scenario", NULL))
        return "scenario";
    if (only(p, "protective", "device"))
        return "protective_device";
    if (only(p, "equipment", "type"))
        return "equipment_type";
    if (only(p, "electrode", "configuration") || only(p, "electrode", "config"))
        return "electrode_config";
    if (only(p, "service", "equipment"))
        return "service_equipment";
    if (only(p, "distance", "exponent") || only(p, "distance", "factor"))
        return "distance_exponent";
    if (has(p, "ppe") && (has(p, "category") || has(p, "cat")) && p->n == 2)
        return "ppe_category";
    return NULL;
}

/* The quantity the words name (NULL when none plainly), and its unit kind. */
static const char *quantity(const header_parts *p, unit_kind *want)
{
    int xfmr = has(p, "transformer") || has(p, "xfmr");
    *want = U_NONE;
    if (xfmr && p->u.kind == U_POWER)
        return *want = U_POWER, "xfmr_kva";
    if (xfmr && (has(p, "impedance") || has(p, "z")) && p->u.kind == U_PERCENT)
        return *want = U_PERCENT, "xfmr_z_percent";
    if (xfmr && has(p, "secondary"))
        return *want = U_VOLT, "xfmr_secondary_v";
    if (xfmr)
        return NULL;
    if (has(p, "voltage") || only(p, "bus", NULL) || only(p, "nominal", NULL))
        return *want = U_VOLT, "nominal_voltage_v";
    if (has(p, "incident") && has(p, "energy"))
        return *want = U_ENERGY_CAL, "incident_energy";
    if (has(p, "working") && has(p, "distance"))
        return *want = U_LENGTH, "working_distance";
    if ((has(p, "boundary") && (has(p, "arc") || has(p, "flash"))) || only(p, "afb", NULL))
        return *want = U_LENGTH, "arc_flash_boundary";
    if (has(p, "gap"))
        return *want = U_LENGTH, "gap";
    if (has(p, "motor") && has(p, "contribution"))
        return *want = U_CURRENT, "motor_contribution_ka";
    if (has(p, "source") && has(p, "fault"))
        return *want = U_CURRENT, "source_fault_ka";
    if (has(p, "bolted") || (has(p, "available") && has(p, "fault")))
        return *want = U_CURRENT, "bolted_fault_ka";
    if ((has(p, "arcing") || has(p, "arc")) && has(p, "current"))
        return *want = U_CURRENT, "arcing_current_ka";
    if ((has(p, "clearing") && has(p, "time")) ||
        ((has(p, "arc") || has(p, "arcing")) && (has(p, "duration") || has(p, "time"))))
        return *want = U_TIME, "clearing_time_s";
    if (has(p, "service") && has(p, "rating"))
        return *want = U_CURRENT, "service_rating_a";
    return NULL;
}

const tw_column *tw_column_guess(const char *header, double *scale)
{
    header_parts p;
    split_header(header, &p);
    *scale = 1;
    const tw_column *exact = tw_column_find(header);
    if (exact)
        return exact;
    const char *text = text_field(&p);
    if (text)
        return tw_column_find(text);
    unit_kind want;
    const char *q = quantity(&p, &want);
    if (!q || p.u.kind == U_NONE || p.u.kind == U_UNKNOWN)
        return NULL; /* no unit, or one we do not know: unsure */
    char name[48];
    if (want == U_ENERGY_CAL) {
        if (p.u.kind != U_ENERGY_CAL && p.u.kind != U_ENERGY_J)
            return NULL;
        return tw_column_find(p.u.kind == U_ENERGY_J ? "incident_energy_j_cm2"
                                                     : "incident_energy_cal_cm2");
    }
    if (p.u.kind != want)
        return NULL;
    if (want == U_LENGTH) {
        int has_in = strcmp(q, "gap") != 0, has_ft = !strcmp(q, "arc_flash_boundary");
        if (p.u.inches && has_in) {
            snprintf(name, sizeof name, "%s_in", q);
        } else if (p.u.feet && has_ft) {
            snprintf(name, sizeof name, "%s_ft", q);
        } else {
            snprintf(name, sizeof name, "%s_mm", q);
            *scale = p.u.factor;
        }
        return tw_column_find(name);
    }
    if (!strcmp(q, "service_rating_a"))
        *scale = p.u.factor * 1000; /* the unit table gives kA; the rating is in A */
    else
        *scale = p.u.factor;
    return tw_column_find(q);
}

/* ---- a whole file ----------------------------------------------------------------------- */

typedef struct {
    tw_diags *d;
    const char *file;
    FILE *out;
    unsigned char taken[TW_F_COUNT]; /* text, whole-number and yes/no fields already mapped */
} starter;

static void note(starter *st, long line, const char *msg)
{
    tw_source src = {st->file, line, NULL};
    tw_diag_add(st->d, TW_WARNING, &src, NULL, NULL, "%s", msg);
}

static void json_string(FILE *f, const char *s)
{
    fputc('"', f);
    for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
        if (*p == '"' || *p == '\\')
            fprintf(f, "\\%c", *p);
        else if (*p == '\t')
            fputs("\\t", f);
        else if (*p < 0x20 || *p == 0x7F)
            fprintf(f, "\\u%04x", *p);
        else
            fputc(*p, f);
    }
    fputc('"', f);
}

static int valid_utf8(const char *s, size_t len)
{
    for (size_t i = 0; i < len;) {
        uint32_t cp;
        size_t n = tw_utf8_decode((const unsigned char *)s + i, len - i, &cp);
        if (n == 0)
            return 0;
        i += n;
    }
    return 1;
}

/* Windows-1252 text as UTF-8 (undefined bytes become U+FFFD): only for showing headers. */
static char *from_1252(const char *s, size_t len)
{
    iconv_t cd = iconv_open("UTF-8", "WINDOWS-1252");
    char *out = malloc(len * 3 + 1);
    if (cd == (iconv_t)-1 || !out) {
        if (cd != (iconv_t)-1)
            iconv_close(cd);
        free(out);
        return NULL;
    }
    char *in = (char *)s, *o = out;
    size_t left = len, room = len * 3;
    while (left > 0) {
        if (iconv(cd, &in, &left, &o, &room) != (size_t)-1)
            break;
        if (room < 3)
            break;
        memcpy(o, "\xEF\xBF\xBD", 3); /* a byte with no character */
        o += 3;
        room -= 3;
        in++;
        left--;
    }
    *o = '\0';
    iconv_close(cd);
    return out;
}

/* Cells of one line split at delim (double quotes respected; a quoted line break is not
 * followed: a header is one line). Each cell trimmed; returns the number of cells. */
static size_t split_line(const char *s, size_t len, char delim, char ***cells)
{
    size_t n = 0, cap = 16;
    char **v = malloc(cap * sizeof *v);
    char *buf = malloc(len + 1);
    if (!v || !buf) {
        free(v);
        free(buf);
        *cells = NULL;
        return 0;
    }
    size_t b = 0;
    int quoted = 0;
    for (size_t i = 0; i <= len; i++) {
        char c = i < len ? s[i] : delim;
        if (quoted && c == '"' && i + 1 < len && s[i + 1] == '"') {
            buf[b++] = '"';
            i++;
        } else if (c == '"') {
            quoted = !quoted;
        } else if (c == delim && (!quoted || i == len)) {
            buf[b] = '\0';
            char *cell = tw_strdup(buf);
            if (cell)
                tw_trim(cell);
            if (n == cap) {
                char **bigger = realloc(v, (cap *= 2) * sizeof *v);
                if (!bigger) {
                    free(cell);
                    break;
                }
                v = bigger;
            }
            v[n++] = cell ? cell : tw_strdup("");
            b = 0;
        } else if (c != '\r') {
            buf[b++] = c;
        }
    }
    free(buf);
    *cells = v;
    return n;
}

static void free_cells(char **cells, size_t n)
{
    for (size_t i = 0; i < n; i++)
        free(cells[i]);
    free(cells);
}

static size_t nonempty_cells(const char *s, size_t len, char delim)
{
    char **cells;
    size_t n = split_line(s, len, delim, &cells), k = 0;
    for (size_t i = 0; i < n; i++)
        k += cells[i] && *cells[i];
    free_cells(cells, n);
    return k;
}

typedef struct {
    const char *s;
    size_t len;
} line_span;

static size_t split_lines(const char *data, size_t len, line_span **out)
{
    size_t n = 0, cap = 64;
    line_span *v = malloc(cap * sizeof *v);
    for (size_t i = 0; v && i < len;) {
        const char *nl = memchr(data + i, '\n', len - i);
        size_t end = nl ? (size_t)(nl - data) : len;
        if (n == cap) {
            line_span *bigger = realloc(v, (cap *= 2) * sizeof *v);
            if (!bigger)
                break;
            v = bigger;
        }
        v[n].s = data + i;
        v[n].len = end - i;
        n++;
        i = end + 1;
    }
    *out = v;
    return v ? n : 0;
}

static int is_blank_line(const line_span *l, char delim)
{
    for (size_t i = 0; i < l->len; i++)
        if (!isspace((unsigned char)l->s[i]) && l->s[i] != delim)
            return 0;
    return 1;
}

/* What the data under the header shows: decimal commas, missing-value words, the order of
 * slash dates in a column, and a footer after a blank line. */
typedef struct {
    int decimal_comma;
    int missing[8];
    int day_first, month_first, slash_dates, dot_dates;
    long footer_line, blank_line;
} data_view;

static const char *const missing_words[] = {"N/A", "n/a", "NA", "-", "--", "\xE2\x80\x94",
                                            "\xE2\x80\x93", "#N/A"};

static int is_decimal_comma(const char *s)
{
    const char *p = s + (*s == '-');
    size_t a = strspn(p, "0123456789");
    return a > 0 && p[a] == ',' && strspn(p + a + 1, "0123456789") > 0 &&
           p[a + 1 + strspn(p + a + 1, "0123456789")] == '\0';
}

static void look_at_dates(data_view *v, const char *c)
{
    int a = 0, b = 0, y = 0;
    char s1 = 0, s2 = 0, end = 0;
    if (sscanf(c, "%d%c%d%c%d%c", &a, &s1, &b, &s2, &y, &end) != 5 || s1 != s2 || y < 1000)
        return;
    if (s1 == '.')
        v->dot_dates = 1;
    if (s1 != '/')
        return;
    v->slash_dates = 1;
    if (a > 12)
        v->day_first = 1;
    if (b > 12)
        v->month_first = 1;
}

static void look_at_data(const line_span *lines, size_t n, size_t header, char delim,
                         long date_col, data_view *v)
{
    memset(v, 0, sizeof *v);
    size_t rows = 0;
    for (size_t i = header + 1; i < n; i++) {
        if (is_blank_line(&lines[i], delim)) {
            if (rows == 0)
                continue;
            for (size_t j = i + 1; j < n; j++) {
                if (!is_blank_line(&lines[j], delim)) {
                    v->blank_line = (long)i + 1;
                    v->footer_line = (long)j + 1;
                    break;
                }
            }
            return;
        }
        if (++rows > DATA_SAMPLE_LINES)
            continue; /* only looking for the end of the table now */
        char **cells;
        size_t k = split_line(lines[i].s, lines[i].len, delim, &cells);
        for (size_t c = 0; c < k; c++) {
            if (!cells[c])
                continue;
            if (delim != ',' && is_decimal_comma(cells[c]))
                v->decimal_comma = 1;
            for (size_t w = 0; w < COUNT(missing_words); w++)
                if (!strcmp(cells[c], missing_words[w]))
                    v->missing[w] = 1;
            if ((long)c == date_col)
                look_at_dates(v, cells[c]);
        }
        free_cells(cells, k);
    }
}

/* The delimiter giving the most named cells on one line, and the first line that has them. */
static char choose_delimiter(const line_span *lines, size_t n, size_t *header)
{
    static const char delims[] = {',', ';', '\t'};
    size_t best = 0;
    char chosen = ',';
    *header = 0;
    for (size_t d = 0; d < COUNT(delims); d++) {
        for (size_t i = 0; i < n && i < HEADER_SEARCH_LINES; i++) {
            size_t k = nonempty_cells(lines[i].s, lines[i].len, delims[d]);
            if (k > best) {
                best = k;
                chosen = delims[d];
                *header = i;
            }
        }
    }
    return chosen;
}

static void emit_column(starter *st, const char *h, int last, const data_view *v)
{
    double scale = 1;
    const tw_column *c = tw_column_guess(h, &scale);
    if (c && c->kind != TW_KIND_NUMBER && st->taken[c->field]++) {
        char *ex = tw_excerpt(h, strlen(h));
        char msg[160];
        snprintf(msg, sizeof msg, "\"%s\" also looks like %s, which an earlier column gives; "
                 "left null (a map reads such a field from one column)", ex ? ex : "?", c->name);
        note(st, 0, msg);
        free(ex);
        c = NULL;
    }
    fputs("    ", st->out);
    json_string(st->out, h);
    fputs(": ", st->out);
    if (!c) {
        fputs("null", st->out);
    } else if (c->field == TW_F_STUDY_DATE && (v->slash_dates || v->dot_dates)) {
        const char *fmt = v->dot_dates                         ? "\"DD.MM.YYYY\""
                          : v->day_first && !v->month_first   ? "\"DD/MM/YYYY\""
                          : v->month_first && !v->day_first   ? "\"MM/DD/YYYY\""
                                                              : "null";
        fprintf(st->out, "{\"field\": \"%s\", \"date_format\": %s}", c->name, fmt);
    } else if (scale != 1) {
        fprintf(st->out, "{\"field\": \"%s\", \"scale\": %.15g}", c->name, scale);
    } else {
        json_string(st->out, c->name);
    }
    fputs(last ? "\n" : ",\n", st->out);
}

static long find_date_column(char **cells, size_t n)
{
    for (size_t i = 0; i < n; i++) {
        double s;
        const tw_column *c = cells[i] ? tw_column_guess(cells[i], &s) : NULL;
        if (c && c->field == TW_F_STUDY_DATE)
            return (long)i;
    }
    return -1;
}

static void emit_csv_map(starter *st, const line_span *lines, size_t n, int utf8)
{
    size_t header = 0;
    char delim = choose_delimiter(lines, n, &header);
    char **cells;
    size_t k = split_line(lines[header].s, lines[header].len, delim, &cells);
    data_view v;
    look_at_data(lines, n, header, delim, find_date_column(cells, k), &v);
    char msg[256];
    snprintf(msg, sizeof msg, "header taken from line %zu (the first with the most named cells), "
             "delimiter %s; check both", header + 1,
             delim == ',' ? "\",\"" : delim == ';' ? "\";\"" : "tab");
    note(st, (long)header + 1, msg);
    if (v.footer_line) {
        snprintf(msg, sizeof msg, "a blank line (line %ld) then more text (line %ld): taken as a "
                 "footer, so stop_at_blank_line is true", v.blank_line, v.footer_line);
        note(st, v.footer_line, msg);
    }
    fprintf(st->out, "{\n  \"encoding\": \"%s\",\n  \"header_line\": %zu,\n",
            utf8 ? "utf-8" : "windows-1252", header + 1);
    fprintf(st->out, "  \"delimiter\": \"%s\",\n  \"decimal\": \"%s\",\n",
            delim == '\t' ? "tab" : delim == ';' ? ";" : ",", v.decimal_comma ? "," : ".");
    fprintf(st->out, "  \"stop_at_blank_line\": %s,\n  \"columns\": {\n",
            v.footer_line ? "true" : "false");
    size_t *emit = malloc((k ? k : 1) * sizeof *emit), count = 0;
    for (size_t i = 0; emit && i < k; i++) {
        int dup = 0;
        for (size_t j = 0; j < i && cells[i]; j++)
            dup |= cells[j] && !strcmp(cells[i], cells[j]);
        int named = cells[i] && *cells[i];
        if (!named || dup || !tw_column_map_name_ok(cells[i]) || i >= TW_MAX_MAP_COLUMNS) {
            snprintf(msg, sizeof msg, "column %zu %s; left out of the map", i + 1,
                     !named ? "has no header"
                     : dup  ? "repeats an earlier header"
                            : "has a header a map cannot name (control characters, more than "
                              "512 bytes, or past 4096 columns)");
            note(st, (long)header + 1, msg);
            continue;
        }
        emit[count++] = i;
    }
    for (size_t i = 0; i < count; i++)
        emit_column(st, cells[emit[i]], i + 1 == count, &v);
    free(emit);
    fputs("  },\n  \"constants\": {},\n  \"missing_values\": [", st->out);
    int first = 1;
    for (size_t w = 0; w < COUNT(missing_words); w++) {
        if (!v.missing[w])
            continue;
        fputs(first ? "" : ", ", st->out);
        json_string(st->out, missing_words[w]);
        first = 0;
    }
    fputs("]\n}\n", st->out);
    free_cells(cells, k);
}

/* Keys of the bus objects (and "study"), each once, in the order first met. */
static int emit_json_map(starter *st, const char *data, size_t len)
{
    cJSON *root = cJSON_ParseWithLength(data, len);
    const cJSON *buses = cJSON_GetObjectItemCaseSensitive(root, "buses");
    if (!cJSON_IsArray(buses)) {
        cJSON_Delete(root);
        tw_source src = {st->file, 0, NULL};
        tw_diag_add(st->d, TW_ERROR, &src, NULL, NULL,
                    "expected JSON results {\"buses\": [...]}; found none to list keys from");
        return -1;
    }
    tw_map seen;
    tw_map_init(&seen);
    const char **keys = NULL;
    size_t n = 0, cap = 0;
    const cJSON *study = cJSON_GetObjectItemCaseSensitive(root, "study");
    for (int pass = 0; pass < 2; pass++) {
        const cJSON *objs = pass == 0 ? NULL : buses->child;
        const cJSON *one = pass == 0 ? study : NULL;
        for (const cJSON *o = one ? one : objs; o; o = one ? NULL : o->next) {
            for (const cJSON *kv = cJSON_IsObject(o) ? o->child : NULL; kv; kv = kv->next) {
                size_t idx;
                if (!kv->string || !tw_column_map_name_ok(kv->string) || n >= TW_MAX_MAP_COLUMNS ||
                    tw_map_get(&seen, kv->string, &idx))
                    continue;
                if (n == cap) {
                    const char **bigger = realloc(keys, (cap = cap ? cap * 2 : 32) * sizeof *keys);
                    if (!bigger)
                        break;
                    keys = bigger;
                }
                keys[n] = kv->string;
                if (tw_map_put(&seen, kv->string, n) == 0)
                    n++;
            }
        }
    }
    data_view v;
    memset(&v, 0, sizeof v);
    fputs("{\n  \"columns\": {\n", st->out);
    for (size_t i = 0; i < n; i++)
        emit_column(st, keys[i], i + 1 == n, &v);
    fputs("  },\n  \"constants\": {},\n  \"missing_values\": []\n}\n", st->out);
    free(keys);
    tw_map_free(&seen);
    cJSON_Delete(root);
    return 0;
}

char *tw_column_map_starter(const char *name, const char *data, size_t len, tw_diags *d)
{
    starter st = {d, name ? name : "-", NULL, {0}};
    char *text = NULL;
    size_t text_len = 0;
    st.out = open_memstream(&text, &text_len);
    if (!st.out)
        return NULL;
    size_t i = len >= 3 && memcmp(data, "\xEF\xBB\xBF", 3) == 0 ? 3 : 0;
    size_t j = i;
    while (j < len && isspace((unsigned char)data[j]))
        j++;
    int rc = 0;
    if (j < len && data[j] == '{') {
        rc = emit_json_map(&st, data + i, len - i);
    } else {
        int utf8 = valid_utf8(data + i, len - i);
        char *conv = utf8 ? NULL : from_1252(data + i, len - i);
        if (!utf8)
            note(&st, 0, "not UTF-8: windows-1252 assumed (the usual for spreadsheets in "
                         "Western Europe and the Americas); check the accented letters below, "
                         "or set iso-8859-1");
        const char *t = conv ? conv : data + i;
        line_span *lines;
        size_t n = split_lines(t, conv ? strlen(conv) : len - i, &lines);
        if (n == 0) {
            tw_source src = {st.file, 0, NULL};
            tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "expected a header line, found no lines");
            rc = -1;
        } else {
            emit_csv_map(&st, lines, n, utf8);
        }
        free(lines);
        free(conv);
    }
    fclose(st.out);
    if (rc != 0) {
        free(text);
        return NULL;
    }
    return text;
}
