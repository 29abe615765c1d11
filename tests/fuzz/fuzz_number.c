/* fuzz_number.c - libFuzzer harness, differential: a numeric CSV cell read through
 * tw_row_set_cell (which takes a fast path of its own for plain decimals) must give exactly
 * what tw_parse_double (strtod with tagwright's stricter rules) gives for the same text - the
 * same double, bit for bit - or be refused when that refuses it. A difference is a wrong value
 * on a label, and is reported as a crash. */
#include <stdint.h>

#include "fuzz_common.h"
#include "base/tw_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size > 256 || memchr(data, '\0', size))
        return 0; /* cells with a NUL are refused before any parsing; long ones take no path */
    char text[257];
    memcpy(text, data, size);
    text[size] = '\0';
    const tw_column *c = tw_column_find("nominal_voltage_v"); /* a number, factor 1 */
    if (!c)
        abort();
    tw_results r;
    memset(&r, 0, sizeof r);
    tw_diags d;
    tw_diags_init(&d);
    tw_row *row = tw_results_add_row(&r);
    if (row) {
        tw_row_set_cell(row, c, text, size, &d);
        char *trimmed = tw_strdup(text);
        double want = 0;
        int ok = trimmed && tw_parse_double(trimmed, &want) == 0;
        int empty = trimmed && *tw_trim(trimmed) == '\0';
        int has = tw_row_has(row, c->field);
        if (trimmed && !empty) {
            if (ok != has)
                abort(); /* one path accepts what the other refuses */
            if (ok && memcmp(&want, &row->num[c->field], sizeof want) != 0)
                abort(); /* the same text read as two different numbers */
        }
        free(trimmed);
    }
    tw_results_free(&r);
    tw_diags_free(&d);
    return 0;
}
