/* test_results_fast.c - the CSV reader's shortcuts for plain decimals and plain ASCII text give
 * exactly what the general paths give (strtod; trim and the UTF-8 checks). */
#include "tw_test.h"

#include "read/tw_results.h"

/* A small deterministic generator (xorshift64), so the cases are the same on every run. */
static uint64_t rng = 88172645463325252ULL;
static uint64_t next(void)
{
    rng ^= rng << 13;
    rng ^= rng >> 7;
    rng ^= rng << 17;
    return rng;
}

/* Decimals of every shape the readers see, and some they must refuse. */
static void random_number(char *buf, size_t n)
{
    static const char *const fixed[] = {"0",     "-0",    "0.",   ".5",     "-.5",     "5.",
                                        "007.50", "1e3",  "12345678901234567", "0.000000000001",
                                        "999999999999999", "+4.25", "1.5e-3", "3.141592653589793"};
    uint64_t k = next() % 4;
    if (k == 0) {
        snprintf(buf, n, "%s", fixed[next() % (sizeof fixed / sizeof fixed[0])]);
        return;
    }
    int whole = (int)(next() % 8), frac = (int)(next() % 9);
    size_t o = 0;
    if (next() % 5 == 0)
        buf[o++] = '-';
    for (int i = 0; i < whole; i++)
        buf[o++] = (char)('0' + next() % 10);
    if (frac || whole == 0) {
        buf[o++] = '.';
        for (int i = 0; i < frac || (whole == 0 && i == 0); i++)
            buf[o++] = (char)('0' + next() % 10);
    }
    buf[o] = '\0';
}

static void plain_decimals_should_read_exactly_as_strtod_reads_them(void **state)
{
    (void)state;
    enum { N = 20000 };
    char (*vals)[40] = calloc(N, sizeof *vals);
    size_t cap = 64 + (size_t)N * 64, len = 0;
    char *csv = malloc(cap);
    assert_non_null(vals);
    assert_non_null(csv);
    len += (size_t)snprintf(csv, cap, "equipment_id,incident_energy_cal_cm2\n");
    for (int i = 0; i < N; i++) {
        random_number(vals[i], sizeof vals[i]);
        len += (size_t)snprintf(csv + len, cap - len, "B%d, %s \n", i, vals[i]);
    }
    tw_results r;
    tw_diags d;
    tw_diags_init(&d);
    assert_int_equal(tw_results_read_csv("n.csv", csv, len, &r, &d), 0);
    assert_int_equal((int)r.count, N);
    for (int i = 0; i < N; i++) {
        char *end;
        double want = strtod(vals[i], &end);
        if (*vals[i] && !*end) {
            if (!tw_row_has(&r.rows[i], TW_F_INCIDENT_ENERGY_CAL))
                fail_msg("'%s' was not read", vals[i]);
            double got = r.rows[i].num[TW_F_INCIDENT_ENERGY_CAL];
            if (memcmp(&got, &want, sizeof got) != 0) /* same bits, the sign of zero too */
                fail_msg("'%s': got %.17g, strtod gives %.17g", vals[i], got, want);
        }
    }
    tw_results_free(&r);
    tw_diags_free(&d);
    free(csv);
    free(vals);
}

static void plain_and_general_text_should_be_stored_alike(void **state)
{
    (void)state;
    static const char csv[] =
        "equipment_id,description,location\n"
        "  P-1  ,\"\t Panel, room 1 \t\",\"  \"\n"
        "P-2,\"Caf\xC3\xA9 panel \",\"Room 2\"\n"
        "P-3,   ,x\n";
    tw_results r;
    tw_diags d;
    tw_diags_init(&d);
    assert_int_equal(tw_results_read_csv("t.csv", csv, sizeof csv - 1, &r, &d), 0);
    assert_int_equal((int)r.count, 3);
    assert_string_equal(r.rows[0].text[TW_F_EQUIPMENT_ID], "P-1");
    assert_string_equal(r.rows[0].text[TW_F_DESCRIPTION], "Panel, room 1");
    assert_null(r.rows[0].text[TW_F_LOCATION]);
    assert_false(tw_row_has(&r.rows[0], TW_F_LOCATION));
    assert_string_equal(r.rows[1].text[TW_F_DESCRIPTION], "Caf\xC3\xA9 panel");
    assert_string_equal(r.rows[1].text[TW_F_LOCATION], "Room 2");
    assert_null(r.rows[2].text[TW_F_DESCRIPTION]);
    assert_int_equal((int)d.errors, 0);
    tw_results_free(&r);
    tw_diags_free(&d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(plain_decimals_should_read_exactly_as_strtod_reads_them),
        cmocka_unit_test(plain_and_general_text_should_be_stored_alike),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
