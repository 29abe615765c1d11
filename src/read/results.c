/* results.c - rows of study results: storing and checking values, findings about rows, and
 * choosing the CSV or JSON reader (see tw_results.h). */
#include "read/tw_results.h"

#include <ctype.h>
#include <errno.h>
#include <float.h>
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_util.h"

/* Two units of one field agree when they differ by at most this fraction: study tools round
 * each unit on its own (48 in is 1219.2 mm, often written 1219). */
#define UNIT_AGREEMENT 0.01

/* Longest excerpt of a bad value quoted in a message, in bytes. */
#define EXCERPT_BYTES 40

static uint32_t bit(tw_field f)
{
    return (uint32_t)1u << f;
}

tw_source tw_row_source(const tw_row *r, tw_field f, char *path_buf, size_t n)
{
    tw_source src = {r->file, r->line, r->path};
    if (r->path && path_buf && n > 0) {
        if (f < TW_F_COUNT)
            snprintf(path_buf, n, "%s.%s", r->path, tw_field_name(f));
        else
            snprintf(path_buf, n, "%s", r->path);
        src.path = path_buf;
    }
    return src;
}

void tw_row_diag(tw_diags *d, tw_row *r, tw_severity sev, tw_field field, const char *field_name,
                 const char *fmt, ...)
{
    const char *name = field_name ? field_name : field < TW_F_COUNT ? tw_field_name(field) : NULL;
    char *path = NULL;
    if (r->path)
        path = field < TW_F_COUNT ? tw_asprintf("%s.%s", r->path, name) : tw_strdup(r->path);
    char *msg = NULL;
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(NULL, 0, fmt, ap);
    va_end(ap);
    if (n >= 0 && (msg = malloc((size_t)n + 1)) != NULL) {
        va_start(ap, fmt);
        vsnprintf(msg, (size_t)n + 1, fmt, ap);
        va_end(ap);
    }
    /* Without memory the finding still counts (tw_diag_add drops only its text). */
    tw_source src = {r->file, r->path ? 0 : r->line, path ? path : r->path};
    tw_diag_add(d, sev, &src, r->text[TW_F_EQUIPMENT_ID], name, "%s",
                msg ? msg : "(out of memory)");
    free(msg);
    free(path);
    if (sev == TW_ERROR)
        r->errors++;
    else
        r->warnings++;
}

int tw_results_reserve(tw_results *r, size_t n)
{
    if (n <= r->cap)
        return 0;
    tw_row *rows = realloc(r->rows, n * sizeof *rows);
    if (!rows)
        return -1;
    tw_advise_large(rows, n * sizeof *rows);
    r->rows = rows;
    r->cap = n;
    return 0;
}

int tw_row_init(tw_results *r, tw_row *row)
{
    if (!r->strings && !(r->strings = calloc(1, sizeof *r->strings)))
        return -1;
    memset(row, 0, sizeof *row);
    row->file = r->file;
    row->strings = r->strings;
    return 0;
}

tw_row *tw_results_add_row(tw_results *r)
{
    if (r->count == r->cap && tw_results_reserve(r, r->cap ? r->cap * 2 : 64) != 0)
        return NULL;
    tw_row *row = &r->rows[r->count];
    if (tw_row_init(r, row) != 0)
        return NULL;
    r->count++;
    return row;
}

void tw_results_free(tw_results *r)
{
    for (size_t i = 0; i < r->count; i++)
        free(r->rows[i].path);
    free(r->rows);
    free(r->file);
    if (r->strings)
        tw_arena_free(&r->strings->arena);
    free(r->strings);
    memset(r, 0, sizeof *r);
}

void tw_row_mark_invalid(tw_row *r, tw_field f)
{
    if (f < TW_TEXT_FIELDS)
        r->text[f] = NULL; /* its bytes stay in the arena until the results are freed */
    r->num[f] = 0;
    r->present &= ~bit(f);
    r->invalid |= bit(f);
}

/* C0 and C1 control characters and DEL. */
static int is_control(uint32_t cp)
{
    return cp < 0x20 || cp == 0x7F || (cp >= 0x80 && cp <= 0x9F);
}

char *tw_excerpt(const char *s, size_t len)
{
    const unsigned char *u = (const unsigned char *)s;
    char *out = malloc(EXCERPT_BYTES + 8);
    if (!out)
        return NULL;
    size_t i = 0, o = 0;
    while (i < len && o < EXCERPT_BYTES) {
        uint32_t cp;
        size_t n = tw_utf8_decode(u + i, len - i, &cp);
        if (n == 0 || is_control(cp)) {
            out[o++] = '?';
            i += n ? n : 1;
        } else if (o + n <= EXCERPT_BYTES) {
            memcpy(out + o, s + i, n);
            o += n;
            i += n;
        } else {
            break;
        }
    }
    if (i < len) {
        memcpy(out + o, "...", 3);
        o += 3;
    }
    out[o] = '\0';
    return out;
}

/* CR LF and lone CR become LF, in place. */
static void normalize_line_breaks(char *s)
{
    char *w = s;
    for (const char *p = s; *p; p++) {
        if (*p == '\r') {
            *w++ = '\n';
            if (p[1] == '\n')
                p++;
        } else {
            *w++ = *p;
        }
    }
    *w = '\0';
}

/* NULL when v is acceptable text, else what is wrong with it (static string or printf format
 * taking one code point). Every value is one line: a label prints each field as one line (it
 * wraps long ones itself), and the canonical form holds one value per line. */
static const char *text_problem(const char *v, uint32_t *bad_cp)
{
    const unsigned char *u = (const unsigned char *)v;
    size_t len = strlen(v);
    for (size_t i = 0; i < len;) {
        uint32_t cp;
        size_t n = tw_utf8_decode(u + i, len - i, &cp);
        if (n == 0)
            return "expected UTF-8 text, found bytes that are not UTF-8; save the file as UTF-8 "
                   "(or, for CSV, set \"encoding\" in a column map: --columns)";
        if (is_control(cp)) {
            *bad_cp = cp;
            return cp == '\n' ? "expected a single line, found a line break"
                              : "expected printable text, found control character";
        }
        i += n;
    }
    return NULL;
}

/* A copy of s in the store, or the last value stored for field f when it is the same. */
static char *store_text(tw_text_store *t, tw_field f, const char *s, size_t len)
{
    if (t->last[f] && t->last_len[f] == len && memcmp(t->last[f], s, len) == 0)
        return (char *)t->last[f];
    char *v = tw_arena_strndup(&t->arena, s, len);
    if (v) {
        t->last[f] = v;
        t->last_len[f] = len;
    }
    return v;
}

/* The common case, taken without the general checks: after trimming, nothing but printable
 * ASCII (so no line break to normalise, nothing to decode, no control character), within the
 * length limit. 1 when the value was stored (or is empty, so absent), 0 to take the long way
 * (which also reports out of memory). */
static int set_plain_ascii(tw_row *r, tw_field f, const char *s, size_t len)
{
    size_t a = 0, b = len;
    while (a < b && isspace((unsigned char)s[a]))
        a++;
    while (b > a && isspace((unsigned char)s[b - 1]))
        b--;
    size_t max = f == TW_F_EQUIPMENT_ID ? TW_MAX_ID_BYTES : TW_MAX_TEXT_BYTES;
    if (b - a > max)
        return 0;
    for (size_t i = a; i < b; i++)
        if ((unsigned char)s[i] < 0x20 || (unsigned char)s[i] > 0x7E)
            return 0;
    if (a == b)
        return 1;
    char *v = r->strings ? store_text(r->strings, f, s + a, b - a) : NULL;
    if (!v)
        return 0;
    r->text[f] = v;
    r->present |= bit(f);
    return 1;
}

void tw_row_set_text(tw_row *r, const tw_column *c, const char *s, size_t len, tw_diags *d)
{
    tw_field f = c->field;
    if (f >= TW_TEXT_FIELDS || (r->invalid & bit(f)))
        return; /* the first is a caller's mistake: a row keeps text for text fields only */
    if (memchr(s, '\0', len)) {
        tw_row_diag(d, r, TW_ERROR, f, c->name,
                    "expected printable text, found control character U+0000");
        tw_row_mark_invalid(r, f);
        return;
    }
    if (set_plain_ascii(r, f, s, len))
        return;
    char *v = tw_strndup(s, len);
    if (!v) {
        tw_row_diag(d, r, TW_ERROR, f, c->name, "out of memory");
        tw_row_mark_invalid(r, f);
        return;
    }
    tw_trim(v);
    normalize_line_breaks(v);
    if (!*v) {
        free(v);
        return;
    }
    size_t max = f == TW_F_EQUIPMENT_ID ? TW_MAX_ID_BYTES : TW_MAX_TEXT_BYTES;
    size_t n = strlen(v);
    uint32_t cp = 0;
    const char *problem = text_problem(v, &cp);
    if (n > max) {
        tw_row_diag(d, r, TW_ERROR, f, c->name, "expected at most %zu bytes, got %zu", max, n);
    } else if (problem && cp) {
        tw_row_diag(d, r, TW_ERROR, f, c->name, "%s U+%04X", problem, (unsigned)cp);
    } else if (problem) {
        tw_row_diag(d, r, TW_ERROR, f, c->name, "%s", problem);
    } else {
        char *kept = r->strings ? store_text(r->strings, f, v, n) : NULL;
        free(v);
        if (!kept) {
            tw_row_diag(d, r, TW_ERROR, f, c->name, "out of memory");
            tw_row_mark_invalid(r, f);
            return;
        }
        r->text[f] = kept;
        r->present |= bit(f);
        return;
    }
    free(v);
    tw_row_mark_invalid(r, f);
}

/* Unit of a field that can be given in more than one unit, for messages. */
static const char *canonical_unit(tw_field f)
{
    return f == TW_F_INCIDENT_ENERGY_CAL ? "cal/cm2" : "mm";
}

void tw_row_set_number(tw_row *r, const tw_column *c, double v, tw_diags *d)
{
    tw_field f = c->field;
    if (r->invalid & bit(f))
        return;
    if (!isfinite(v)) {
        tw_row_diag(d, r, TW_ERROR, f, c->name, "expected a finite number");
        tw_row_mark_invalid(r, f);
        return;
    }
    if (c->kind == TW_KIND_INTEGER && v != floor(v)) {
        tw_row_diag(d, r, TW_ERROR, f, c->name, "expected a whole number, got %g", v);
        tw_row_mark_invalid(r, f);
        return;
    }
    if (v != 0 && fabs(v) < DBL_MIN) { /* CSV's strtod refuses these as out of range: so here */
        tw_row_diag(d, r, TW_ERROR, f, c->name,
                    "expected a number within the range of a double, got %g (below %g)", v,
                    DBL_MIN);
        tw_row_mark_invalid(r, f);
        return;
    }
    double cv = v * c->to_canonical;
    if (!isfinite(cv)) { /* e.g. 1e307 ft: finite as given, infinite in mm */
        tw_row_diag(d, r, TW_ERROR, f, c->name,
                    "expected a number that stays finite in %s, got %g", canonical_unit(f), v);
        tw_row_mark_invalid(r, f);
        return;
    }
    if (!(r->present & bit(f))) {
        r->num[f] = cv;
        r->present |= bit(f);
        return;
    }
    double old = r->num[f];
    if (fabs(old - cv) <= UNIT_AGREEMENT * fmax(fabs(old), fabs(cv))) {
        r->num[f] = fmax(old, cv); /* the two differ by rounding: keep the safer, larger one */
        return;
    }
    const char *unit = canonical_unit(f);
    tw_row_diag(d, r, TW_ERROR, f, c->name,
                "%g is %g %s, but another unit of the same field in this row gives %g %s; "
                "expected both to agree (within 1 %%)",
                v, cv, unit, old, unit);
    tw_row_mark_invalid(r, f);
}

int tw_parse_yes_no(const char *s, int *out)
{
    static const struct {
        const char *word;
        int value;
    } words[] = {{"yes", 1}, {"no", 0},  {"true", 1}, {"false", 0},
                 {"y", 1},   {"n", 0},   {"1", 1},    {"0", 0}};
    for (size_t i = 0; i < sizeof words / sizeof words[0]; i++) {
        if (tw_strcaseeq(s, words[i].word)) {
            *out = words[i].value;
            return 0;
        }
    }
    return -1;
}

/* The plain decimals study tools write ("21.4", "-0.035", "480"), parsed without strtod: at
 * most 15 significant digits make a whole number m < 2^53, held exactly in a double, and
 * 10^k for k <= 22 is exact too, so m / 10^k is one correctly rounded division - the value
 * strtod gives (the fast path of W. D. Clinger, "How to read floating point numbers
 * accurately", PLDI 1990). -1 for anything else, which tw_parse_double then handles. */
#if defined(__GNUC__)
__attribute__((always_inline)) /* in tw_row_set_cell's loop: 1.6 M instructions per 10,000 buses */
#endif
static inline int parse_plain_decimal(const char *s, double *out)
{
    static const double pow10[] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,
                                   1e8,  1e9,  1e10, 1e11, 1e12, 1e13, 1e14, 1e15};
    int neg = *s == '-';
    if (*s == '-' || *s == '+')
        s++;
    uint64_t m = 0;
    int digits = 0, frac = -1, any = 0;
    for (; *s; s++) {
        if (*s >= '0' && *s <= '9') {
            any = 1;
            if (m == 0 && *s == '0' && frac < 0)
                continue; /* a leading zero of the whole part */
            if (++digits > 15)
                return -1;
            m = m * 10 + (uint64_t)(*s - '0');
            if (frac >= 0)
                frac++;
        } else if (*s == '.' && frac < 0) {
            frac = 0;
        } else {
            return -1;
        }
    }
    if (!any)
        return -1;
    if (frac < 0)
        frac = 0;
    double v = (double)m / pow10[frac];
    *out = neg ? -v : v;
    return 0;
}

int tw_parse_cell_number(const char *s, double *out)
{
    return parse_plain_decimal(s, out) == 0 || tw_parse_double(s, out) == 0 ? 0 : -1;
}

/* Report a cell that does not hold the expected kind of value. */
static void bad_cell(tw_row *r, const tw_column *c, const char *expected, const char *s,
                     size_t len, tw_diags *d)
{
    char *ex = tw_excerpt(s, len);
    tw_row_diag(d, r, TW_ERROR, c->field, c->name, "expected %s, got '%s'", expected,
                ex ? ex : "?");
    free(ex);
    tw_row_mark_invalid(r, c->field);
}

void tw_row_set_cell(tw_row *r, const tw_column *c, const char *s, size_t len, tw_diags *d)
{
    if (c->kind == TW_KIND_TEXT) {
        tw_row_set_text(r, c, s, len, d);
        return;
    }
    if (r->invalid & bit(c->field))
        return;
    const char *expected = c->kind == TW_KIND_BOOL      ? "yes or no"
                           : c->kind == TW_KIND_INTEGER ? "a whole number"
                                                        : "a decimal number";
    if (memchr(s, '\0', len)) {
        bad_cell(r, c, expected, s, len, d);
        return;
    }
    /* Numbers are short: a copy on the stack spares a malloc per cell (ten per row). */
    char small[64];
    char *v = len < sizeof small ? small : tw_strndup(s, len);
    if (!v) {
        tw_row_diag(d, r, TW_ERROR, c->field, c->name, "out of memory");
        tw_row_mark_invalid(r, c->field);
        return;
    }
    if (v == small) {
        memcpy(small, s, len);
        small[len] = '\0';
    }
    tw_trim(v);
    double x = 0;
    int yes = 0;
    if (!*v) {
        /* an empty cell is an absent value */
    } else if (c->kind == TW_KIND_BOOL ? tw_parse_yes_no(v, &yes) != 0
                                       : parse_plain_decimal(v, &x) != 0 &&
                                             tw_parse_double(v, &x) != 0) {
        bad_cell(r, c, expected, s, len, d);
    } else if (c->kind == TW_KIND_INTEGER && x != floor(x)) {
        bad_cell(r, c, expected, s, len, d);
    } else {
        tw_row_set_number(r, c, c->kind == TW_KIND_BOOL ? yes : x, d);
    }
    if (v != small)
        free(v);
}

static int ends_with_json(const char *path)
{
    size_t n = strlen(path);
    return n >= 5 && tw_strcaseeq(path + n - 5, ".json");
}

/* Where the text starts: past a byte order mark and blanks (len when there is nothing else). */
static size_t first_content(const char *data, size_t len)
{
    size_t i = len >= 3 && memcmp(data, "\xEF\xBB\xBF", 3) == 0 ? 3 : 0;
    while (i < len && (data[i] == ' ' || data[i] == '\t' || data[i] == '\r' || data[i] == '\n'))
        i++;
    return i;
}

static int looks_like_json(const char *data, size_t len)
{
    size_t i = first_content(data, len);
    return i < len && data[i] == '{';
}

/* A CSV file is read in pieces of this size; JSON (which cJSON parses whole) is read whole. */
#define READ_PIECE ((size_t)256 * 1024)

/* A finding for a file that could not be read; tw_read_file's messages start with the path,
 * which the finding already names. */
static int unreadable(const char *path, const char *err, tw_diags *d)
{
    size_t plen = strlen(path);
    int named = strncmp(err, path, plen) == 0 && err[plen] == ':' && err[plen + 1] == ' ';
    tw_source src = {path, 0, NULL};
    tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "%s", named ? err + plen + 2 : err);
    return -1;
}

/* Whether the file is JSON is decided from its first non-blank byte, so the first piece is
 * read, and more while it is all blank. */
static size_t read_first(FILE *f, char **buf, size_t *cap)
{
    size_t have = 0;
    for (;;) {
        have += fread(*buf + have, 1, *cap - have, f);
        if (have < *cap || first_content(*buf, have) < have)
            return have;
        char *nb = *cap < (size_t)TW_MAX_INPUT_BYTES ? realloc(*buf, *cap * 2) : NULL;
        if (!nb)
            return have;
        *buf = nb;
        *cap *= 2;
    }
}

int tw_results_read(const char *path, tw_results *out, tw_diags *d)
{
    return tw_results_read_map(path, NULL, out, d);
}

int tw_results_read_map(const char *path, const struct tw_column_map *map, tw_results *out,
                        tw_diags *d)
{
    memset(out, 0, sizeof *out);
    char err[1024] = "";
    FILE *f = tw_open_input(path, err, sizeof err);
    if (!f)
        return unreadable(path, err, d);
    size_t cap = READ_PIECE;
    char *buf = malloc(cap);
    if (!buf) {
        fclose(f);
        return unreadable(path, "out of memory", d);
    }
    size_t have = read_first(f, &buf, &cap);
    int rc;
    if (ferror(f)) {
        snprintf(err, sizeof err, "read error: %s", strerror(errno));
        free(buf);
        rc = unreadable(path, err, d);
    } else if (ends_with_json(path) || looks_like_json(buf, have)) {
        size_t len = 0;
        char *data = tw_read_rest(f, path, buf, have, &len, err, sizeof err);
        rc = data ? tw_results_read_json_map(path, data, len, map, out, d)
                  : unreadable(path, err, d);
        free(data);
    } else {
        rc = tw_results_read_csv_stream_map(path, f, buf, have, cap, tw_input_size(f), map, out,
                                            d);
        free(buf);
    }
    fclose(f);
    return rc;
}
