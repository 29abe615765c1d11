/* results_csv.c - study results from CSV (RFC 4180) through libcsv (see tw_results.h).
 *
 * The parser is fed one physical line at a time (long lines in pieces), so every row knows the
 * line it starts on even after quoted cells that span lines and after blank lines. Only LF ends
 * a record; CR counts as a blank, so CRLF and LF files read the same and a CR inside a quoted
 * cell is kept (and later normalized) as part of the text. */
#include "read/tw_results.h"

#include <csv.h>
#include <ctype.h>
#include <errno.h>
#include <iconv.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "base/tw_util.h"
#include "read/tw_column_map.h"

/* Largest cell accepted, in bytes (documented in docs/limits.md). Also the largest piece of a
 * line handed to libcsv at once, so a runaway quoted cell is noticed early. */
#define TW_MAX_CELL_BYTES (64 * 1024)
/* Most columns in the header (documented in docs/limits.md): a header of millions of unknown
 * columns would otherwise cost memory and a warning each. */
#define TW_MAX_COLUMNS 4096

typedef struct {
    tw_results *out;
    tw_diags *d;
    struct csv_parser parser;
    /* the header: one column (or NULL for an ignored one) per cell of the header row */
    const tw_column **cols;
    size_t ncols;
    int have_header;
    /* cells of the row being read, each NUL-terminated in buf */
    char *buf;
    size_t buf_len, buf_cap;
    size_t *cell_off, *cell_len;
    size_t ncells, cells_cap, extra_cells;
    /* where we are */
    long line;          /* physical line being fed */
    long row_line;      /* line the current row starts on */
    long cell_line;     /* line the last complete cell of the current row ended on */
    int row_open;
    unsigned file_errors; /* findings about the file as a whole (counted on every row) */
    int fatal;          /* not a results file, or out of memory: the read returns -1 */
    int stop;           /* reading has stopped */
    int at_start;       /* only the first bom_matched bytes of a byte order mark fed yet */
    size_t bom_matched;
    /* a column map (NULL: the plain reader, whose path the fields below never touch) */
    const tw_column_map *map;
    const tw_mapped_column **mapped; /* per header column: how it is read, or NULL */
    tw_mapped_column *identity;      /* header cells read as the tagwright column they name */
    long header_line;   /* lines before it are titles, not fed to the parser */
    iconv_t conv;       /* to UTF-8, when the map names another encoding */
    int converting;
    long ended_at;      /* line of the blank line that ended the table (stop_at_blank_line) */
} csv_reader;

/* An error about the file rather than one value: rows may be lost or ambiguous, so it counts
 * against every row read (at the end of tw_results_read_csv) and no bus from it is posted. */
static void file_error(csv_reader *rd, long line, const char *msg)
{
    tw_source src = {rd->out->file, line, NULL};
    tw_diag_add(rd->d, TW_ERROR, &src, NULL, NULL, "%s", msg);
    rd->file_errors++;
}

/* Not a results file at all, or out of memory: reading stops and the read fails. */
static void fatal_error(csv_reader *rd, long line, const char *msg)
{
    tw_source src = {rd->out->file, line, NULL};
    tw_diag_add(rd->d, TW_ERROR, &src, NULL, NULL, "%s", msg);
    rd->fatal = 1;
    rd->stop = 1;
}

static int reserve(void **p, size_t *cap, size_t need, size_t size)
{
    if (need <= *cap)
        return 0;
    size_t n = *cap ? *cap : 16;
    while (n < need)
        n *= 2;
    void *q = realloc(*p, n * size);
    if (!q)
        return -1;
    *p = q;
    *cap = n;
    return 0;
}

static int store_cell(csv_reader *rd, const char *s, size_t len)
{
    size_t cap = rd->cells_cap;
    if (reserve((void **)&rd->buf, &rd->buf_cap, rd->buf_len + len + 1, 1) != 0 ||
        reserve((void **)&rd->cell_off, &cap, rd->ncells + 1, sizeof(size_t)) != 0 ||
        reserve((void **)&rd->cell_len, &rd->cells_cap, rd->ncells + 1, sizeof(size_t)) != 0)
        return -1;
    if (len)
        memcpy(rd->buf + rd->buf_len, s, len);
    rd->buf[rd->buf_len + len] = '\0';
    rd->cell_off[rd->ncells] = rd->buf_len;
    rd->cell_len[rd->ncells] = len;
    rd->buf_len += len + 1;
    rd->ncells++;
    return 0;
}

static void on_cell(void *s, size_t len, void *data)
{
    csv_reader *rd = data;
    if (rd->stop)
        return;
    long started = rd->cell_line; /* the previous cell ended, and this one began, there */
    rd->cell_line = rd->line;
    if (len > TW_MAX_CELL_BYTES) {
        file_error(rd, started,
                   "cell starting here is longer than 64 KiB; expected at most that; reading "
                   "stops here");
        rd->stop = 1;
        return;
    }
    if (!rd->have_header && rd->ncells >= TW_MAX_COLUMNS) {
        file_error(rd, rd->line,
                   "header row has more than 4096 columns; expected at most that; reading stops "
                   "here");
        rd->stop = 1;
        return;
    }
    /* Cells past the header's width are only counted: the row is an error anyway. */
    if (rd->have_header && rd->ncells >= rd->ncols) {
        rd->extra_cells++;
        return;
    }
    if (store_cell(rd, s, len) != 0)
        fatal_error(rd, rd->line, "out of memory while reading");
}

static char *cell(csv_reader *rd, size_t i)
{
    return rd->buf + rd->cell_off[i];
}

/* A row of empty cells (",,,," from a spreadsheet) is a blank line. */
static int row_is_empty(csv_reader *rd)
{
    for (size_t i = 0; i < rd->ncells; i++) {
        const char *s = cell(rd, i);
        for (size_t j = 0; j < rd->cell_len[i]; j++)
            if (!isspace((unsigned char)s[j]))
                return 0;
    }
    return rd->extra_cells == 0;
}

static void warn_unknown_column(csv_reader *rd, size_t i, const char *name)
{
    tw_source src = {rd->out->file, rd->row_line, NULL};
    char *ex = tw_excerpt(name, strlen(name));
    const tw_column *like = *name ? tw_column_resembling(name) : NULL;
    if (like)
        tw_diag_add(rd->d, TW_ERROR, &src, NULL, ex ? ex : "?",
                    "unknown column (number %zu) resembles %s (%s); expected the exact name, "
                    "or another name if it is not that value", i + 1, like->name,
                    tw_field_display(like->field));
    else if (*name)
        tw_diag_add(rd->d, TW_WARNING, &src, NULL, ex ? ex : "?",
                    "unknown column (number %zu) is ignored; expected a tagwright column name",
                    i + 1);
    else
        tw_diag_add(rd->d, TW_WARNING, &src, NULL, NULL,
                    "column %zu has no name; its cells are ignored", i + 1);
    free(ex);
}

/* 1 + the first header column that is not UTF-8 (read as UTF-8), else 0. */
static size_t header_not_utf8(csv_reader *rd)
{
    if (rd->map && rd->map->encoding != TW_ENCODING_UTF8)
        return 0;
    for (size_t i = 0; i < rd->ncells; i++) {
        const unsigned char *s = (const unsigned char *)cell(rd, i);
        for (size_t j = 0, n = rd->cell_len[i]; j < n;) {
            uint32_t cp;
            size_t k = tw_utf8_decode(s + j, n - j, &cp);
            if (k == 0)
                return i + 1;
            j += k;
        }
    }
    return 0;
}

#define NOT_UTF8_HINT \
    "save the file as UTF-8, or set \"encoding\" in a column map (--columns)"

/* A header that is not UTF-8 names no column as written: the file is in another encoding. */
static void hint_encoding(csv_reader *rd)
{
    size_t bad = header_not_utf8(rd);
    if (bad) {
        tw_source src = {rd->out->file, rd->row_line, NULL};
        tw_diag_add(rd->d, TW_WARNING, &src, NULL, NULL,
                    "the header (column %zu) is not UTF-8; " NOT_UTF8_HINT, bad);
    }
}

/* 1 when the header is one cell holding semicolons and no commas: a file separated by ';'. */
static int looks_semicolon_separated(csv_reader *rd)
{
    if (rd->ncells != 1 || (rd->map && rd->map->delimiter != ','))
        return 0;
    const char *h = cell(rd, 0);
    return strchr(h, ';') && !strchr(h, ',');
}

/* A header without one name tagwright knows: most likely a study export with its own names,
 * so the message says how to read it. */
static void no_known_column(csv_reader *rd)
{
    char msg[800];
    snprintf(msg, sizeof msg,
             "expected a header row of column names such as equipment_id, found none that "
             "tagwright knows; is this a results file? A study export with its own column names "
             "is read with a column map: --columns MAP.json ('tagwright columns FILE' prints one "
             "to start from)%s%s",
             looks_semicolon_separated(rd)
                 ? "; this header has semicolons and no commas: set \"delimiter\": \";\" in the map"
                 : "",
             header_not_utf8(rd) ? "; the header is not UTF-8: " NOT_UTF8_HINT : "");
    fatal_error(rd, rd->row_line, msg);
}

/* The header row names the columns. Unknown names are a warning; a name given twice makes
 * every row ambiguous, and a header with no known name at all means this is not a results
 * file: both fail the read. */
static void read_header(csv_reader *rd)
{
    rd->cols = calloc(rd->ncells ? rd->ncells : 1, sizeof *rd->cols);
    size_t *first = calloc(tw_column_count, sizeof *first); /* 1 + position of each column */
    if (!rd->cols || !first) {
        free(first);
        fatal_error(rd, rd->row_line, "out of memory while reading the header");
        return;
    }
    rd->ncols = rd->ncells;
    rd->have_header = 1;
    size_t known = 0;
    for (size_t i = 0; i < rd->ncells; i++) {
        int has_nul = memchr(cell(rd, i), '\0', rd->cell_len[i]) != NULL;
        const tw_column *c = has_nul ? NULL : tw_column_find(tw_trim(cell(rd, i)));
        if (!c)
            continue;
        size_t k = (size_t)(c - tw_columns);
        if (first[k]) {
            tw_source src = {rd->out->file, rd->row_line, NULL};
            tw_diag_add(rd->d, TW_ERROR, &src, NULL, c->name,
                        "column given twice (numbers %zu and %zu); expected each column once",
                        first[k], i + 1);
            rd->file_errors++;
            continue;
        }
        first[k] = i + 1;
        rd->cols[i] = c;
        known++;
    }
    free(first);
    if (known == 0) {
        no_known_column(rd);
        return;
    }
    hint_encoding(rd);
    for (size_t i = 0; i < rd->ncells; i++)
        if (!rd->cols[i])
            warn_unknown_column(rd, i, cell(rd, i));
    if (rd->file_errors)
        rd->stop = 1; /* a duplicated column makes every row ambiguous: read none */
}

static void read_row(csv_reader *rd);

/* ---- with a column map ------------------------------------------------------------------ */

/* Header cells the map does not read, listed in one warning. */
static void list_ignored(csv_reader *rd)
{
    size_t cap = 256, len = 0, n = 0;
    char *list = malloc(cap);
    for (size_t i = 0; list && i < rd->ncells; i++) {
        if (rd->mapped[i])
            continue;
        char *ex = tw_excerpt(cell(rd, i), strlen(cell(rd, i)));
        size_t need = len + (ex ? strlen(ex) : 1) + 8;
        if (need > cap) {
            char *bigger = realloc(list, cap = need * 2);
            if (!bigger) {
                free(ex);
                break;
            }
            list = bigger;
        }
        len += (size_t)snprintf(list + len, cap - len, "%s\"%s\"", n ? ", " : "", ex ? ex : "?");
        n++;
        free(ex);
    }
    if (n > 0 && list) {
        tw_source src = {rd->out->file, rd->row_line, NULL};
        tw_diag_add(rd->d, TW_WARNING, &src, NULL, NULL,
                    "%zu column%s not read (not in the column map, or null there): %s", n,
                    n == 1 ? "" : "s", list);
    }
    free(list);
}

static void header_error(csv_reader *rd, const char *field, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 3, 4)))
#endif
    ;

static void header_error(csv_reader *rd, const char *field, const char *fmt, ...)
{
    tw_source src = {rd->out->file, rd->row_line, NULL};
    va_list ap;
    va_start(ap, fmt);
    tw_diag_vadd(rd->d, TW_ERROR, &src, NULL, field, fmt, ap);
    va_end(ap);
    rd->file_errors++;
}

/* How header cell i is read: the map's entry for it, else the column it names exactly. */
static const tw_mapped_column *bind_cell(csv_reader *rd, size_t i, unsigned char *found)
{
    char *h = cell(rd, i);
    if (memchr(h, '\0', rd->cell_len[i]))
        return NULL;
    tw_trim(h);
    const tw_mapped_column *mc = tw_column_map_find(rd->map, h);
    if (mc) {
        size_t k = (size_t)(mc - rd->map->columns);
        if (found[k])
            header_error(rd, NULL, "column \"%s\" given twice (numbers %u and %zu); expected "
                                   "each column once", mc->source, found[k], i + 1);
        found[k] = (unsigned char)(i + 1 < 255 ? i + 1 : 255);
        return mc->column ? mc : NULL;
    }
    const tw_column *c = tw_column_find(h);
    if (!c)
        return NULL;
    tw_mapped_column *id = &rd->identity[i];
    id->source = (char *)c->name;
    id->column = c;
    id->as = *c;
    id->scale = 1;
    id->scale_pow10 = 0;
    id->dates = TW_DATES_ISO;
    return id;
}

/* A text, boolean or whole-number field read from two columns (or from a column and a
 * constant) would keep one value silently. */
static void check_fields_once(csv_reader *rd)
{
    size_t from[TW_F_COUNT] = {0};
    for (size_t i = 0; i < rd->ncells; i++) {
        const tw_mapped_column *mc = rd->mapped[i];
        if (!mc)
            continue;
        tw_field f = mc->as.field;
        if (tw_column_map_constant(rd->map, f))
            header_error(rd, mc->column->name, "read from column %zu and also given in the "
                         "column map's constants; expected one or the other", i + 1);
        if (mc->as.kind == TW_KIND_NUMBER)
            continue;
        if (from[f])
            header_error(rd, mc->column->name, "read from columns %zu and %zu; expected one",
                         from[f], i + 1);
        from[f] = i + 1;
    }
}

static void read_header_mapped(csv_reader *rd)
{
    hint_encoding(rd);
    size_t n = rd->ncells ? rd->ncells : 1;
    const tw_column_map *m = rd->map;
    rd->mapped = calloc(n, sizeof *rd->mapped);
    rd->identity = calloc(n, sizeof *rd->identity);
    unsigned char *found = calloc(m->column_count + 1, 1);
    if (!rd->mapped || !rd->identity || !found) {
        free(found);
        fatal_error(rd, rd->row_line, "out of memory while reading the header");
        return;
    }
    rd->ncols = rd->ncells;
    rd->have_header = 1;
    size_t known = 0;
    for (size_t i = 0; i < rd->ncells; i++)
        known += (rd->mapped[i] = bind_cell(rd, i, found)) != NULL;
    for (size_t k = 0; k < m->column_count; k++)
        if (!found[k] && m->columns[k].column)
            header_error(rd, NULL,
                         "column \"%s\" named in the column map %s is not in this header; "
                         "expected it (check the spelling and header_line)",
                         m->columns[k].source, m->file);
    free(found);
    if (known == 0) {
        char msg[256];
        snprintf(msg, sizeof msg,
                 "expected the header on line %ld to hold columns the column map %s reads, found "
                 "none; is header_line right?",
                 rd->row_line, m->file);
        fatal_error(rd, rd->row_line, msg);
        return;
    }
    check_fields_once(rd);
    list_ignored(rd);
    if (rd->file_errors)
        rd->stop = 1; /* a column read twice or missing makes every row doubtful: read none */
}

/* The cells of a row; the equipment ID first, so every finding about the row can name it. */
static void set_cells(csv_reader *rd, tw_row *r)
{
    for (int pass = 0; pass < 2; pass++) {
        for (size_t i = 0; i < rd->ncells; i++) {
            const tw_column *c = rd->cols[i];
            if (c && (c->field == TW_F_EQUIPMENT_ID) == (pass == 0))
                tw_row_set_cell(r, c, cell(rd, i), rd->cell_len[i], rd->d);
        }
    }
}

/* The same through the column map: each column's transform was chosen with the header. */
static void set_cells_mapped(csv_reader *rd, tw_row *r)
{
    for (int pass = 0; pass < 2; pass++) {
        for (size_t i = 0; i < rd->ncells; i++) {
            const tw_mapped_column *mc = rd->mapped[i];
            if (mc && (mc->as.field == TW_F_EQUIPMENT_ID) == (pass == 0))
                tw_mapped_set_cell(rd->map, mc, r, cell(rd, i), rd->cell_len[i], rd->d);
        }
    }
    tw_column_map_apply_constants(rd->map, r, rd->d);
}

static void read_row(csv_reader *rd)
{
    if (rd->out->count >= TW_MAX_ROWS) {
        tw_source src = {rd->out->file, rd->row_line, NULL};
        tw_diag_add(rd->d, TW_ERROR, &src, NULL, NULL,
                    "more than %d rows; expected at most that many in one file; reading stops here",
                    TW_MAX_ROWS);
        rd->file_errors++;
        rd->stop = 1;
        return;
    }
    tw_row *r = tw_results_add_row(rd->out);
    if (!r) {
        fatal_error(rd, rd->row_line, "out of memory while reading");
        return;
    }
    r->line = rd->row_line;
    if (rd->map)
        set_cells_mapped(rd, r);
    else
        set_cells(rd, r);
    if (rd->extra_cells)
        tw_row_diag(rd->d, r, TW_ERROR, TW_F_COUNT, NULL,
                    "row has %zu cells, expected at most %zu (one per header column)",
                    rd->ncols + rd->extra_cells, rd->ncols);
}

/* With stop_at_blank_line, the first blank line (or row of empty cells) after a data row
 * ends the table: a footer below it is not data. */
static int ends_table(const csv_reader *rd)
{
    return rd->map && rd->map->stop_at_blank_line && rd->out->count > 0;
}

static void read_header_mapped(csv_reader *rd);

static void end_row(csv_reader *rd)
{
    if (!row_is_empty(rd)) {
        if (rd->have_header)
            read_row(rd);
        else
            rd->map ? read_header_mapped(rd) : read_header(rd);
    } else if (ends_table(rd)) {
        rd->ended_at = rd->row_line;
    }
    rd->ncells = 0;
    rd->buf_len = 0;
    rd->extra_cells = 0;
    rd->row_open = 0;
}

static void on_row(int terminator, void *data)
{
    (void)terminator;
    csv_reader *rd = data;
    if (!rd->stop)
        end_row(rd);
}

static int is_blank_char(unsigned char c)
{
    return c == ' ' || c == '\t' || c == '\r';
}

static int is_record_end(unsigned char c)
{
    return c == '\n';
}

static int is_blank(const char *s, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (!is_blank_char((unsigned char)s[i]) && s[i] != '\n')
            return 0;
    return 1;
}

/* Feed one piece of the input: at most one line, at most TW_MAX_CELL_BYTES. */
static void feed(csv_reader *rd, const char *s, size_t n)
{
    if (!rd->row_open && !is_blank(s, n)) {
        rd->row_open = 1;
        rd->row_line = rd->line;
        rd->cell_line = rd->line;
    } else if (!rd->row_open && ends_table(rd) && n > 0 && s[n - 1] == '\n') {
        rd->ended_at = rd->line;
        return;
    }
    size_t used = csv_parse(&rd->parser, s, n, on_cell, on_row, rd);
    if (rd->stop)
        return;
    if (used < n) {
        file_error(rd, rd->line,
                   "malformed quoting: expected a cell either without '\"' or wholly inside "
                   "'\"' (a '\"' inside written as '\"\"'); reading stops here");
        rd->stop = 1;
    } else if (csv_get_buffer_size(&rd->parser) > 2 * TW_MAX_CELL_BYTES) {
        file_error(rd, rd->cell_line,
                   "cell starting here is longer than 64 KiB; expected at most that; reading "
                   "stops here");
        rd->stop = 1;
    }
}

static void finish(csv_reader *rd)
{
    if (rd->stop)
        return;
    if (csv_fini(&rd->parser, on_cell, on_row, rd) != 0) {
        file_error(rd, rd->cell_line,
                   "unterminated quoted cell: the '\"' opened on this line is never closed; "
                   "expected a closing '\"' before the end of the file");
        return;
    }
    if (!rd->have_header && !rd->stop && rd->header_line > 1) {
        char msg[160];
        snprintf(msg, sizeof msg,
                 "expected a header row on line %ld (header_line in the column map), found no "
                 "rows from there on", rd->header_line);
        fatal_error(rd, rd->header_line, msg);
    } else if (!rd->have_header && !rd->stop) {
        fatal_error(rd, 1, "expected a header row of column names, found no rows at all");
    }
}

static void reader_free(csv_reader *rd)
{
    csv_free(&rd->parser);
    if (rd->converting)
        iconv_close(rd->conv);
    free(rd->mapped);
    free(rd->identity);
    free(rd->cols);
    free(rd->buf);
    free(rd->cell_off);
    free(rd->cell_len);
}

static const char *encoding_name(tw_encoding e)
{
    return e == TW_ENCODING_WINDOWS_1252 ? "windows-1252" : "iso-8859-1";
}

/* A tab-separated file keeps its tabs: only spaces and CR are blanks around a cell. */
static int is_blank_char_not_tab(unsigned char c)
{
    return c == ' ' || c == '\r';
}

/* What the map says about the file as a whole: delimiter, title lines, encoding. */
static int reader_use_map(csv_reader *rd, const tw_column_map *map)
{
    rd->map = map;
    rd->header_line = map->header_line;
    csv_set_delim(&rd->parser, (unsigned char)map->delimiter);
    if (map->delimiter == '\t')
        csv_set_space_func(&rd->parser, is_blank_char_not_tab);
    if (map->encoding == TW_ENCODING_UTF8)
        return 0;
    rd->conv = iconv_open("UTF-8", map->encoding == TW_ENCODING_WINDOWS_1252 ? "WINDOWS-1252"
                                                                            : "ISO-8859-1");
    if (rd->conv == (iconv_t)-1) {
        tw_source src = {rd->out->file, 0, NULL};
        tw_diag_add(rd->d, TW_ERROR, &src, NULL, NULL,
                    "cannot convert from %s on this system (iconv); expected it to be available",
                    encoding_name(map->encoding));
        return -1;
    }
    rd->converting = 1;
    return 0;
}

static int reader_open(csv_reader *rd, const char *name, const tw_column_map *map,
                       tw_results *out, tw_diags *d)
{
    memset(out, 0, sizeof *out);
    out->file = tw_strdup(name ? name : "-");
    memset(rd, 0, sizeof *rd);
    rd->out = out;
    rd->d = d;
    rd->line = 1;
    rd->at_start = 1;
    if (!out->file || csv_init(&rd->parser, CSV_STRICT | CSV_STRICT_FINI) != 0) {
        tw_source src = {name, 0, NULL};
        tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "out of memory");
        free(out->file);
        out->file = NULL;
        return -1;
    }
    csv_set_space_func(&rd->parser, is_blank_char);
    csv_set_term_func(&rd->parser, is_record_end);
    rd->header_line = 1;
    if (map && reader_use_map(rd, map) != 0) {
        reader_free(rd);
        free(out->file);
        out->file = NULL;
        return -1;
    }
    return 0;
}

/* Bytes handed to feed() in pieces of at most one line. */
static void feed_pieces(csv_reader *rd, const char *p, size_t len);

/* A UTF-8 byte order mark at the start is skipped, even when it comes split over pieces: the
 * bytes matched so far are held back, and fed after all when the mark turns out not to be one. */
static const char bom[] = "\xEF\xBB\xBF";

static size_t skip_bom(csv_reader *rd, const char *p, size_t len)
{
    size_t used = 0;
    while (rd->at_start && used < len) {
        if (p[used] != bom[rd->bom_matched]) {
            rd->at_start = 0;
            feed_pieces(rd, bom, rd->bom_matched);
            return used;
        }
        used++;
        if (++rd->bom_matched == 3)
            rd->at_start = 0;
    }
    return used;
}

static void feed_utf8(csv_reader *rd, const char *p, size_t len)
{
    size_t used = rd->at_start ? skip_bom(rd, p, len) : 0;
    feed_pieces(rd, p + used, len - used);
}

/* Bytes in the map's encoding, fed as UTF-8 in pieces. Both encodings are one byte a
 * character, so a piece never ends inside a character. */
static void feed_converted(csv_reader *rd, const char *p, size_t len)
{
    char *in = (char *)p;
    size_t left = len;
    while (left > 0 && !rd->stop) {
        char out[16384];
        char *o = out;
        size_t room = sizeof out;
        size_t rc = iconv(rd->conv, &in, &left, &o, &room);
        int err = rc == (size_t)-1 ? errno : 0;
        feed_utf8(rd, out, (size_t)(o - out));
        if (err && err != E2BIG && !rd->stop) {
            char msg[160];
            snprintf(msg, sizeof msg,
                     "byte 0x%02X is not a character of %s, the column map's encoding; expected "
                     "text in that encoding; reading stops here",
                     (unsigned)(unsigned char)*in, encoding_name(rd->map->encoding));
            file_error(rd, rd->line, msg);
            rd->stop = 1;
        }
    }
}

/* The next bytes of the file, cut anywhere (libcsv keeps its state between calls). */
static void reader_feed(csv_reader *rd, const char *p, size_t len)
{
    if (rd->converting)
        feed_converted(rd, p, len);
    else
        feed_utf8(rd, p, len);
}

/* After the table has ended, the rest is only looked at: text there is a footer, which the
 * user is told about once, since it is not read. */
static void after_table(csv_reader *rd, const char *p, size_t n)
{
    if (is_blank(p, n))
        return;
    tw_source src = {rd->out->file, rd->line, NULL};
    tw_diag_add(rd->d, TW_WARNING, &src, NULL, NULL,
                "not read: the table ended at the blank line %ld (stop_at_blank_line in the "
                "column map); this and later lines are taken as a footer",
                rd->ended_at);
    rd->stop = 1;
}

static void feed_pieces(csv_reader *rd, const char *p, size_t len)
{
    const char *end = p + len;
    while (p < end && !rd->stop) {
        size_t n = (size_t)(end - p);
        if (n > TW_MAX_CELL_BYTES)
            n = TW_MAX_CELL_BYTES;
        const char *nl = memchr(p, '\n', n);
        if (nl)
            n = (size_t)(nl - p) + 1;
        if (rd->line < rd->header_line) /* a title line above the header */
            ;
        else if (rd->ended_at)
            after_table(rd, p, n);
        else
            feed(rd, p, n);
        p += n;
        if (nl)
            rd->line++;
    }
}

static int reader_close(csv_reader *rd)
{
    if (rd->at_start) /* the file ended inside what began like a byte order mark */
        feed_pieces(rd, bom, rd->bom_matched);
    finish(rd);
    reader_free(rd);
    for (size_t i = 0; i < rd->out->count; i++)
        rd->out->rows[i].errors += rd->file_errors;
    return rd->fatal ? -1 : 0;
}

/* Lines in data: a row takes at least one. */
static size_t count_lines(const char *data, size_t len)
{
    size_t lines = 1;
    for (const char *q = data, *end = data + len; (q = memchr(q, '\n', (size_t)(end - q)));
         q++)
        lines++;
    return lines;
}

/* Room for that many rows at once (up to the limit), so that the array never moves; when the
 * guess is short it grows as it goes. */
static void reserve_rows(tw_results *out, size_t rows)
{
    (void)tw_results_reserve(out, rows < TW_MAX_ROWS ? rows : TW_MAX_ROWS);
}

int tw_results_read_csv(const char *name, const char *data, size_t len, tw_results *out,
                        tw_diags *d)
{
    return tw_results_read_csv_map(name, data, len, NULL, out, d);
}

int tw_results_read_csv_map(const char *name, const char *data, size_t len,
                            const tw_column_map *map, tw_results *out, tw_diags *d)
{
    csv_reader rd;
    if (reader_open(&rd, name, map, out, d) != 0)
        return -1;
    reserve_rows(out, count_lines(data, len));
    reader_feed(&rd, data, len);
    return reader_close(&rd);
}

int tw_results_read_csv_stream(const char *name, FILE *f, char *buf, size_t have, size_t cap,
                               size_t size, tw_results *out, tw_diags *d)
{
    return tw_results_read_csv_stream_map(name, f, buf, have, cap, size, NULL, out, d);
}

int tw_results_read_csv_stream_map(const char *name, FILE *f, char *buf, size_t have,
                                   size_t cap, size_t size, const tw_column_map *map,
                                   tw_results *out, tw_diags *d)
{
    csv_reader rd;
    if (reader_open(&rd, name, map, out, d) != 0)
        return -1;
    /* Rows in the whole file, guessed from the lines of the first piece. */
    size_t lines = count_lines(buf, have);
    if (have > 0 && size > have) /* (at most 1.05 x size: no overflow) */
        lines = (size_t)((double)lines * (double)size / (double)have * 1.05) + 64;
    reserve_rows(out, lines);
    size_t total = have;
    int bad = 0;
    for (;;) {
        reader_feed(&rd, buf, have);
        if (have < cap || rd.stop)
            break;
        have = fread(buf, 1, cap, f);
        total += have;
        if (have == 0)
            break;
        if (total > (size_t)TW_MAX_INPUT_BYTES) {
            tw_source src = {name, 0, NULL};
            tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "larger than the %ld MiB limit",
                        TW_MAX_INPUT_BYTES / (1024 * 1024));
            bad = 1;
            break;
        }
    }
    if (ferror(f)) {
        tw_source src = {name, 0, NULL};
        tw_diag_add(d, TW_ERROR, &src, NULL, NULL, "read error: %s", strerror(errno));
        bad = 1;
    }
    int rc = reader_close(&rd);
    return bad ? -1 : rc;
}
