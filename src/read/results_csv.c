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
#include <stdlib.h>
#include <string.h>

#include "base/tw_util.h"

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
        fatal_error(rd, rd->row_line,
                    "expected a header row of column names such as equipment_id, found none that "
                    "tagwright knows; is this a results file?");
        return;
    }
    for (size_t i = 0; i < rd->ncells; i++)
        if (!rd->cols[i])
            warn_unknown_column(rd, i, cell(rd, i));
    if (rd->file_errors)
        rd->stop = 1; /* a duplicated column makes every row ambiguous: read none */
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
    /* The equipment ID first, so every finding about the row can name it. */
    for (int pass = 0; pass < 2; pass++) {
        for (size_t i = 0; i < rd->ncells; i++) {
            const tw_column *c = rd->cols[i];
            if (c && (c->field == TW_F_EQUIPMENT_ID) == (pass == 0))
                tw_row_set_cell(r, c, cell(rd, i), rd->cell_len[i], rd->d);
        }
    }
    if (rd->extra_cells)
        tw_row_diag(rd->d, r, TW_ERROR, TW_F_COUNT, NULL,
                    "row has %zu cells, expected at most %zu (one per header column)",
                    rd->ncols + rd->extra_cells, rd->ncols);
}

static void end_row(csv_reader *rd)
{
    if (!row_is_empty(rd)) {
        if (rd->have_header)
            read_row(rd);
        else
            read_header(rd);
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
    if (!rd->have_header && !rd->stop)
        fatal_error(rd, 1, "expected a header row of column names, found no rows at all");
}

static void reader_free(csv_reader *rd)
{
    csv_free(&rd->parser);
    free(rd->cols);
    free(rd->buf);
    free(rd->cell_off);
    free(rd->cell_len);
}

static int reader_open(csv_reader *rd, const char *name, tw_results *out, tw_diags *d)
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

/* The next bytes of the file, cut anywhere (libcsv keeps its state between calls). */
static void reader_feed(csv_reader *rd, const char *p, size_t len)
{
    size_t used = rd->at_start ? skip_bom(rd, p, len) : 0;
    feed_pieces(rd, p + used, len - used);
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
    csv_reader rd;
    if (reader_open(&rd, name, out, d) != 0)
        return -1;
    reserve_rows(out, count_lines(data, len));
    reader_feed(&rd, data, len);
    return reader_close(&rd);
}

int tw_results_read_csv_stream(const char *name, FILE *f, char *buf, size_t have, size_t cap,
                               size_t size, tw_results *out, tw_diags *d)
{
    csv_reader rd;
    if (reader_open(&rd, name, out, d) != 0)
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
