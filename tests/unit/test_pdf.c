/* test_pdf.c - label PDFs, checked with tools we did not write: qpdf --check, pdfinfo,
 * pdftotext, pdftoppm + zbarimg (poppler-utils, qpdf, zbar-tools). A missing tool skips its
 * assertion with a message.
 *
 * The labels are filled by hand for a fictional site (Cedar Hollow water works); their values
 * are strings as the label module would print them. TW_KEEP_TEST_FILES=1 keeps the output
 * directory (it holds label-1.png, a 150 dpi render of the first label, for a visual check). */
#include "tw_test.h"

#include <dirent.h>
#include <sys/stat.h>
#include <unistd.h>

#include "rules/tw_label.h"
#include "write/tw_label_pdf.h"
#include "write/tw_pdf_doc.h"
#include "write/tw_qr.h"
#include "base/tw_util.h"

/* ---- fixtures ----------------------------------------------------------------------------- */

static char dir[64];
static char pdf_path[128];
static char *payloads[3];

#define HASH_A "1a2b3c4d5e6f77889900aabbccddeeff00112233445566778899aabbccddeeff"
#define HASH_B "b0b1b2b3b4b5b6b7b8b9c0c1c2c3c4c5c6c7c8c9d0d1d2d3d4d5d6d7d8d9e0e1"
#define HASH_C "0f0e0d0c0b0a09080706050403020100fffefdfcfbfaf9f8f7f6f5f4f3f2f1f0"

static void set(tw_label *l, tw_label_key k, const char *v)
{
    assert_int_equal(tw_label_set(l, k, v), 0);
}

/* Shock values: NFPA 70E Table 130.4(E)(a), 151 V - 750 V row: limited approach, fixed part
 * 1.07 m (3 ft 6 in); restricted approach 0.3 m (1 ft 0 in). Glove class 00: ASTM D120,
 * maximum use voltage 500 V AC. */
static void common_fields(tw_label *l, const char *id, const char *hash)
{
    memset(l, 0, sizeof *l);
    set(l, TW_L_EQUIPMENT_ID, id);
    set(l, TW_L_NOMINAL_VOLTAGE, "480 V");
    set(l, TW_L_LIMITED_APPROACH, "3 ft 6 in (1067 mm)");
    set(l, TW_L_RESTRICTED_APPROACH, "1 ft 0 in (305 mm)");
    set(l, TW_L_GLOVE_CLASS, "00");
    set(l, TW_L_STUDY_ID, "CH-AF-2024-07");
    set(l, TW_L_STUDY_DATE, "2024-07-15");
    set(l, TW_L_SCENARIO, "Utility maximum, tie breaker open");
    set(l, TW_L_REVIEW_DUE, "2029-07-15");
    memcpy(l->hash, hash, 65);
}

/* A WARNING label showing incident energy at its working distance. */
static void label_warning(tw_label *l)
{
    common_fields(l, "CH-MCC-3", HASH_A);
    l->signal = TW_SIGNAL_WARNING;
    set(l, TW_L_DESCRIPTION, "Motor control centre 3, raw water pumps");
    set(l, TW_L_LOCATION, "Pump house, room 104");
    set(l, TW_L_INCIDENT_ENERGY, "6.3 cal/cm\xc2\xb2");
    set(l, TW_L_WORKING_DISTANCE, "18 in (455 mm)");
    set(l, TW_L_ARC_FLASH_BOUNDARY, "4 ft 7 in (1398 mm)");
    set(l, TW_L_MIN_ARC_RATING, "8 cal/cm\xc2\xb2");
    set(l, TW_L_PPE_LEVEL, "Kit B (12 cal/cm\xc2\xb2)");
}

/* A DANGER label: no stocked PPE is adequate; service equipment (NEC 110.16(B) block). */
static void label_danger(tw_label *l)
{
    common_fields(l, "CH-SWGR-1", HASH_B);
    l->signal = TW_SIGNAL_DANGER;
    set(l, TW_L_DESCRIPTION, "Main switchgear, service entrance");
    set(l, TW_L_LOCATION, "Electrical building, main room");
    set(l, TW_L_INCIDENT_ENERGY, "52.4 cal/cm\xc2\xb2");
    set(l, TW_L_WORKING_DISTANCE, "24 in (610 mm)");
    set(l, TW_L_ARC_FLASH_BOUNDARY, "31 ft 2 in (9500 mm)");
    set(l, TW_L_MIN_ARC_RATING, "53 cal/cm\xc2\xb2");
    set(l, TW_L_NO_PPE_ADEQUATE, "yes");
    set(l, TW_L_AVAILABLE_FAULT, "42 kA");
    set(l, TW_L_SERVICE_CLEARING_TIME, "0.5 s");
    set(l, TW_L_SERVICE_LABEL_DATE, "2024-07-15");
    set(l, TW_L_REVISION_NOTE, "Revised from rev 1: main breaker settings changed");
}

/* A PPE-category label whose names are not Latin-1 (Polish, Greek, Cyrillic). */
static void label_category(tw_label *l)
{
    common_fields(l, "CH-PNL-\xce\xa9\xd0\x96", HASH_C);
    l->signal = TW_SIGNAL_WARNING;
    set(l, TW_L_DESCRIPTION, "Tablica rozdzielcza \xc5\x81\xc3\xb3\x64\xc5\xba "
                             "\xd0\x9d\xd0\xb0\xd1\x81\xd0\xbe\xd1\x81");
    set(l, TW_L_LOCATION, "Filter gallery");
    set(l, TW_L_PPE_CATEGORY, "2");
    set(l, TW_L_ARC_FLASH_BOUNDARY, "6 ft 0 in (1829 mm)");
    set(l, TW_L_BOUNDARY_NOTE, "from NFPA 70E Table 130.7(C)(15)(a)");
    set(l, TW_L_MIN_ARC_RATING, "8 cal/cm\xc2\xb2");
}

static tw_site site_with_caution(void)
{
    static char caution[] = "Cedar Hollow: call the control room on extension 220 first.";
    static char *cautions[] = {caution};
    tw_site s;
    memset(&s, 0, sizeof s);
    s.cautions = cautions;
    s.caution_count = 1;
    return s;
}

static void (*const fills[3])(tw_label *) = {label_warning, label_danger, label_category};

/* Write the three labels to path; fails the test on any error. */
static void write_three(const char *path)
{
    tw_site site = site_with_caution();
    char err[512] = "";
    tw_label_doc *doc = tw_label_doc_new(NULL, &site, "2024-08-01", err, sizeof err);
    if (!doc)
        fail_msg("%s", err);
    for (int i = 0; i < 3; i++) {
        tw_label l;
        fills[i](&l);
        int page = tw_label_doc_add(doc, &l, payloads[i], err, sizeof err);
        if (page < 0)
            fail_msg("%s", err);
        assert_int_equal(page, i + 1);
        tw_label_free(&l);
    }
    assert_int_equal(tw_label_doc_count(doc), 3);
    if (tw_label_doc_save(doc, path, err, sizeof err) != 0)
        fail_msg("%s", err);
    tw_label_doc_free(doc);
}

static int setup(void **state)
{
    (void)state;
    strcpy(dir, "/tmp/tw-test-pdf.XXXXXX");
    if (!mkdtemp(dir))
        return -1;
    snprintf(pdf_path, sizeof pdf_path, "%s/labels.pdf", dir);
    const char *hashes[3] = {HASH_A, HASH_B, HASH_C};
    const char *ids[3] = {"CH-MCC-3", "CH-SWGR-1", "CH-PNL-\xce\xa9\xd0\x96"};
    for (int i = 0; i < 3; i++)
        payloads[i] = tw_qr_payload(NULL, "CH-AF-2024-07", ids[i], 1, hashes[i]);
    return 0;
}

static int teardown(void **state)
{
    (void)state;
    for (int i = 0; i < 3; i++)
        free(payloads[i]);
    const char *keep = getenv("TW_KEEP_TEST_FILES");
    if (keep && *keep && strcmp(keep, "0") != 0) {
        fprintf(stderr, "test files kept in %s\n", dir);
        return 0;
    }
    char *cmd = tw_asprintf("rm -rf '%s'", dir);
    int rc = cmd ? system(cmd) : -1;
    free(cmd);
    return rc == 0 ? 0 : -1;
}

/* ---- external tools ------------------------------------------------------------------------ */

static int have_tool(const char *name)
{
    char *cmd = tw_asprintf("command -v %s >/dev/null 2>&1", name);
    int ok = cmd && system(cmd) == 0;
    free(cmd);
    return ok;
}

#define NEED_TOOL(name)                                                                      \
    do {                                                                                     \
        if (!have_tool(name)) {                                                              \
            fprintf(stderr, "skipped: %s is not installed\n", name);                         \
            skip();                                                                          \
        }                                                                                    \
    } while (0)

/* Run a shell command; its standard output as a fresh string, and its exit status. */
static char *run(const char *cmd, int *status)
{
    FILE *p = popen(cmd, "r");
    assert_non_null(p);
    size_t cap = 4096, n = 0;
    char *out = malloc(cap);
    assert_non_null(out);
    size_t got;
    while ((got = fread(out + n, 1, cap - n - 1, p)) > 0) {
        n += got;
        if (cap - n < 2) {
            cap *= 2;
            out = realloc(out, cap);
            assert_non_null(out);
        }
    }
    out[n] = '\0';
    *status = pclose(p);
    return out;
}

static char *run_ok(const char *cmd)
{
    int status;
    char *out = run(cmd, &status);
    if (status != 0)
        fail_msg("command failed (%d): %s\n%s", status, cmd, out);
    return out;
}

static void assert_contains(const char *hay, const char *needle)
{
    if (!strstr(hay, needle))
        fail_msg("expected \"%s\" in:\n%s", needle, hay);
}

/* Collapse runs of blanks to one, so column padding in tool output does not matter. */
static void squeeze(char *s)
{
    char *w = s;
    for (const char *r = s; *r; r++)
        if (!(*r == ' ' && w > s && w[-1] == ' '))
            *w++ = *r;
    *w = '\0';
}

/* ---- tests -------------------------------------------------------------------------------- */

static void label_doc_should_save_three_labels_as_a_pdf(void **state)
{
    (void)state;
    write_three(pdf_path);
    FILE *f = fopen(pdf_path, "rb");
    assert_non_null(f);
    char magic[5] = "";
    assert_int_equal(fread(magic, 1, 4, f), 4);
    fclose(f);
    assert_string_equal(magic, "%PDF");
}

static void saved_pdf_should_pass_qpdf_check(void **state)
{
    (void)state;
    NEED_TOOL("qpdf");
    char *cmd = tw_asprintf("qpdf --check '%s'", pdf_path);
    char *out = run_ok(cmd);
    assert_non_null(strstr(out, "No syntax or stream encoding errors"));
    free(out);
    free(cmd);
}

/* 4 x 6 in at 72 pt per inch (ISO 32000-1 user space unit): 288 x 432 pt. */
static void pdfinfo_should_report_three_4_by_6_inch_pages(void **state)
{
    (void)state;
    NEED_TOOL("pdfinfo");
    char *cmd = tw_asprintf("pdfinfo '%s' 2>/dev/null", pdf_path);
    char *out = run_ok(cmd);
    squeeze(out);
    assert_contains(out, "Page size: 288 x 432 pts");
    assert_contains(out, "Pages: 3");
    assert_contains(out, "Creator: tagwright");
    assert_contains(out, "CreationDate: Thu Aug 1 00:00:00 2024 UTC");
    free(out);
    free(cmd);
}

static char *page_text(int page)
{
    char *cmd = tw_asprintf("pdftotext -f %d -l %d -layout '%s' - 2>/dev/null", page, page,
                            pdf_path);
    char *out = run_ok(cmd);
    free(cmd);
    return out;
}

/* NFPA 70E 130.5(H): voltage, arc-flash boundary, incident energy at working distance, arc
 * rating, site PPE level; ANSI Z535.4 signal word. */
static void warning_label_text_should_carry_the_required_values(void **state)
{
    (void)state;
    NEED_TOOL("pdftotext");
    char *t = page_text(1);
    const char *want[] = {"WARNING", "CH-MCC-3", "Motor control centre 3", "Pump house",
                          "Incident energy", "6.3 cal/cm\xc2\xb2", "18 in (455 mm)",
                          "Arc-flash boundary", "4 ft 7 in (1398 mm)", "Minimum arc rating",
                          "Kit B", "Nominal voltage", "480 V", "Limited approach",
                          "3 ft 6 in (1067 mm)", "Restricted approach", "1 ft 0 in (305 mm)",
                          "Rubber glove class", "CH-AF-2024-07", "2024-07-15", "2029-07-15",
                          "content hash", "1a2b3c4d5e6f", "NFPA 70E", "licensed engineer",
                          "extension 220", "Qualified persons only"};
    for (size_t i = 0; i < sizeof want / sizeof want[0]; i++)
        assert_contains(t, want[i]);
    assert_null(strstr(t, "PPE category"));
    assert_null(strstr(t, "DRAFT"));
    free(t);
}

/* NEC 110.16(B): available fault current, clearing time, date; no PPE level when none is
 * adequate, the refusal statement instead. */
static void danger_label_should_show_the_service_block_and_refuse_energized_work(void **state)
{
    (void)state;
    NEED_TOOL("pdftotext");
    char *t = page_text(2);
    const char *want[] = {"DANGER", "CH-SWGR-1", "52.4 cal/cm\xc2\xb2", "NEC 110.16(B)",
                          "42 kA", "0.5 s", "NOT PERMITTED", "electrically safe",
                          "Revised from rev 1"};
    for (size_t i = 0; i < sizeof want / sizeof want[0]; i++)
        assert_contains(t, want[i]);
    assert_null(strstr(t, "Site PPE level"));
    free(t);
}

/* NFPA 70E 130.5(H): the PPE category, never together with incident energy. */
static void category_label_should_show_the_category_and_non_latin_names(void **state)
{
    (void)state;
    NEED_TOOL("pdftotext");
    char *t = page_text(3);
    assert_contains(t, "PPE category");
    assert_contains(t, "CH-PNL-\xce\xa9\xd0\x96");
    assert_contains(t, "\xc5\x81\xc3\xb3\x64\xc5\xba");          /* Łódź */
    assert_contains(t, "\xd0\x9d\xd0\xb0\xd1\x81\xd0\xbe\xd1\x81"); /* Насос */
    assert_contains(t, "Table 130.7(C)(15)(a)");
    assert_null(strstr(t, "Incident energy"));
    free(t);
}

/* The QR code, rendered at 300 dpi by poppler and read back by zbar, is the exact payload. */
static void qr_codes_should_decode_to_the_exact_payloads(void **state)
{
    (void)state;
    NEED_TOOL("pdftoppm");
    NEED_TOOL("zbarimg");
    for (int page = 1; page <= 3; page++) {
        char *cmd = tw_asprintf("pdftoppm -r 300 -png -f %d -l %d '%s' '%s/page' 2>/dev/null && "
                                "zbarimg -q --raw '%s'/page-%d.png 2>/dev/null",
                                page, page, pdf_path, dir, dir, page);
        char *out = run_ok(cmd);
        size_t n = strlen(out);
        while (n && (out[n - 1] == '\n' || out[n - 1] == '\r'))
            out[--n] = '\0';
        assert_string_equal(out, payloads[page - 1]);
        free(out);
        free(cmd);
    }
    char *cmd = tw_asprintf("pdftoppm -r 150 -png -f 1 -l 1 -singlefile '%s' '%s/label-1' 2>/dev/null",
                            pdf_path, dir);
    free(run_ok(cmd));
    free(cmd);
}

static void same_input_should_give_identical_bytes(void **state)
{
    (void)state;
    char again[160];
    snprintf(again, sizeof again, "%s/again.pdf", dir);
    write_three(again);
    char err[256];
    size_t la, lb;
    char *a = tw_read_file(pdf_path, &la, err, sizeof err);
    char *b = tw_read_file(again, &lb, err, sizeof err);
    assert_non_null(a);
    assert_non_null(b);
    assert_int_equal(la, lb);
    assert_memory_equal(a, b, la);
    free(a);
    free(b);
    unlink(again);
}

/* Add one label to a fresh document; returns the page number and leaves the message in err. */
static int add_one(tw_label *l, const char *payload, char *err, size_t errlen)
{
    tw_label_doc *doc = tw_label_doc_new(NULL, NULL, "2024-08-01", err, errlen);
    assert_non_null(doc);
    err[0] = '\0';
    int page = tw_label_doc_add(doc, l, payload, err, errlen);
    if (page < 0)
        assert_int_equal(tw_label_doc_count(doc), 0);
    tw_label_doc_free(doc);
    tw_label_free(l);
    return page;
}

static void label_with_energy_and_category_should_be_refused(void **state)
{
    (void)state;
    tw_label l;
    label_warning(&l);
    set(&l, TW_L_PPE_CATEGORY, "2");
    char err[512];
    assert_int_equal(add_one(&l, payloads[0], err, sizeof err), -1);
    assert_non_null(strstr(err, "CH-MCC-3"));
    assert_non_null(strstr(err, "never both"));
}

static void label_without_voltage_should_be_refused(void **state)
{
    (void)state;
    tw_label l;
    label_warning(&l);
    free(l.value[TW_L_NOMINAL_VOLTAGE]);
    l.value[TW_L_NOMINAL_VOLTAGE] = NULL;
    char err[512];
    assert_int_equal(add_one(&l, payloads[0], err, sizeof err), -1);
    assert_non_null(strstr(err, "nominal_voltage is missing"));
}

static void label_whose_qr_lacks_its_hash_should_be_refused(void **state)
{
    (void)state;
    tw_label l;
    label_warning(&l);
    char err[512];
    assert_int_equal(add_one(&l, payloads[1], err, sizeof err), -1);
    assert_non_null(strstr(err, "content hash"));
    label_warning(&l);
    assert_int_equal(add_one(&l, NULL, err, sizeof err), -1);
}

static void label_with_invalid_utf8_should_be_refused(void **state)
{
    (void)state;
    tw_label l;
    label_warning(&l);
    set(&l, TW_L_LOCATION, "Room \xff\xfe");
    char err[512];
    assert_int_equal(add_one(&l, payloads[0], err, sizeof err), -1);
    assert_non_null(strstr(err, "location is not printable UTF-8"));
}

static void description_too_long_should_be_refused_naming_the_field(void **state)
{
    (void)state;
    tw_label l;
    label_warning(&l);
    set(&l, TW_L_DESCRIPTION,
        "Motor control centre 3 feeding raw water pumps one to six, the backwash blowers, the "
        "chemical dosing skids, the sludge scrapers, the intake screens and the standby lighting "
        "of the pump house and the filter gallery, including all spare buckets");
    char err[512];
    assert_int_equal(add_one(&l, payloads[0], err, sizeof err), -1);
    assert_non_null(strstr(err, "label CH-MCC-3: description does not fit the body region at 6 pt"));
    assert_non_null(strstr(err, "needs"));
}

static void long_description_should_shrink_rather_than_fail(void **state)
{
    (void)state;
    tw_label l;
    label_warning(&l);
    set(&l, TW_L_DESCRIPTION, "Motor control centre 3 feeding raw water pumps one to six and "
                              "the backwash blowers of the filter gallery");
    char err[512];
    assert_int_equal(add_one(&l, payloads[0], err, sizeof err), 1);
}

static void draft_should_be_watermarked_and_mark_missing_values(void **state)
{
    (void)state;
    NEED_TOOL("pdftotext");
    tw_label l;
    label_warning(&l);
    l.draft = 1;
    free(l.value[TW_L_ARC_FLASH_BOUNDARY]);
    l.value[TW_L_ARC_FLASH_BOUNDARY] = NULL;
    char err[512], path[160];
    snprintf(path, sizeof path, "%s/draft.pdf", dir);
    tw_label_doc *doc = tw_label_doc_new(NULL, NULL, "2024-08-01", err, sizeof err);
    assert_non_null(doc);
    assert_int_equal(tw_label_doc_add(doc, &l, NULL, err, sizeof err), 1);
    assert_int_equal(tw_label_doc_save(doc, path, err, sizeof err), 0);
    tw_label_doc_free(doc);
    tw_label_free(&l);
    /* -raw keeps the rotated watermark's characters in drawing order, one per line */
    char *cmd = tw_asprintf("pdftotext -raw '%s' - 2>/dev/null | tr -d ' \\n'", path);
    char *t = run_ok(cmd);
    assert_contains(t, "DRAFT-NOTFORPOSTING");
    assert_contains(t, "(missing)");
    assert_contains(t, "noQRcode");
    char *png = tw_asprintf("pdftoppm -r 150 -png -singlefile '%s' '%s/draft' 2>/dev/null", path,
                            dir);
    free(run_ok(png));
    free(png);
    free(t);
    free(cmd);
}

static int dir_entries(const char *d)
{
    DIR *h = opendir(d);
    assert_non_null(h);
    int n = 0;
    for (struct dirent *e; (e = readdir(h));)
        n += strcmp(e->d_name, ".") && strcmp(e->d_name, "..");
    closedir(h);
    return n;
}

static void failed_save_should_leave_the_old_file_and_no_temporary(void **state)
{
    (void)state;
    char sub[128], target[160], err[512];
    snprintf(sub, sizeof sub, "%s/atomic", dir);
    assert_int_equal(mkdir(sub, 0700), 0);
    snprintf(target, sizeof target, "%s/out.pdf", sub);
    FILE *f = fopen(target, "w");
    assert_non_null(f);
    fputs("old", f);
    fclose(f);
    tw_label_doc *doc = tw_label_doc_new(NULL, NULL, "2024-08-01", err, sizeof err);
    assert_non_null(doc);
    assert_int_equal(tw_label_doc_save(doc, target, err, sizeof err), -1); /* no labels */
    tw_label_doc_free(doc);
    assert_int_equal(dir_entries(sub), 1);
    char sub2[200];
    snprintf(sub2, sizeof sub2, "%s/missing-dir/out.pdf", sub);
    doc = tw_label_doc_new(NULL, NULL, "2024-08-01", err, sizeof err);
    tw_label l;
    label_warning(&l);
    assert_int_equal(tw_label_doc_add(doc, &l, payloads[0], err, sizeof err), 1);
    assert_int_equal(tw_label_doc_save(doc, sub2, err, sizeof err), -1);
    assert_non_null(strstr(err, "missing-dir"));
    tw_label_doc_free(doc);
    tw_label_free(&l);
    size_t len;
    char *old = tw_read_file(target, &len, err, sizeof err);
    assert_string_equal(old, "old");
    free(old);
    assert_int_equal(dir_entries(sub), 1);
}

static void missing_fonts_should_be_named_in_the_error(void **state)
{
    (void)state;
    setenv("TAGWRIGHT_FONTS", "/nonexistent-fonts", 1);
    char err[512];
    tw_label_doc *doc = tw_label_doc_new(NULL, NULL, "2024-08-01", err, sizeof err);
    unsetenv("TAGWRIGHT_FONTS");
    assert_null(doc);
    assert_non_null(strstr(err, "/nonexistent-fonts/DejaVuSans.ttf"));
}

static void bad_document_date_should_be_refused(void **state)
{
    (void)state;
    char err[512];
    assert_null(tw_label_doc_new(NULL, NULL, "2024-02-30", err, sizeof err));
    assert_non_null(strstr(err, "YYYY-MM-DD"));
}

/* A full disk read "libharu error 0x1066": the message says disk full and names the output
 * (/dev/full fails every write with ENOSPC). */
static void a_full_disk_should_be_named_with_the_file_being_written(void **state)
{
    (void)state;
    tw_pdf_doc d;
    char err[512] = "";
    assert_int_equal(tw_pdf_doc_open(&d, "2024-08-01", err, sizeof err), 0);
    assert_non_null(tw_pdf_doc_page(&d, 288, 432));
    assert_int_equal(tw_pdf_doc_write(&d, "/dev/full", "labels.pdf", err, sizeof err), -1);
    assert_string_equal(err, "disk full while writing labels.pdf");
    tw_pdf_doc_close(&d);
}

/* Two 4 x 6 in labels side by side on a US Letter sheet (8.5 x 11 in = 612 x 792 pt). */
static void sheet_layout_should_put_two_labels_on_each_page(void **state)
{
    (void)state;
    NEED_TOOL("pdfinfo");
    const char *json = "{\"name\":\"letter-2up\",\"units\":\"in\",\"label\":{\"width\":4,"
                       "\"height\":6},\"page\":{\"width\":8.5,\"height\":11},"
                       "\"grid\":{\"columns\":2,\"rows\":1,\"gutter_x\":0.25},"
                       "\"sheet_margin\":{\"x\":0.125,\"y\":0.5},\"cut_marks\":true,"
                       "\"margin\":0.125,\"header\":{\"height\":0.75,\"font_pt\":24},"
                       "\"body\":{\"font_pt\":9},\"qr\":{\"size\":1.25},"
                       "\"footer\":{\"height\":0.85,\"font_pt\":6.5},\"printer_dpi\":300}";
    tw_diags d;
    tw_diags_init(&d);
    tw_layout lay;
    assert_int_equal(tw_layout_load_mem("letter-2up.json", json, strlen(json), &lay, &d), 0);
    char err[512], path[160];
    snprintf(path, sizeof path, "%s/sheet.pdf", dir);
    tw_label_doc *doc = tw_label_doc_new(&lay, NULL, "2024-08-01", err, sizeof err);
    assert_non_null(doc);
    int expect_page[5] = {1, 1, 2, 2, 3};
    for (int i = 0; i < 5; i++) {
        tw_label l;
        fills[i % 3](&l);
        int page = tw_label_doc_add(doc, &l, payloads[i % 3], err, sizeof err);
        if (page < 0)
            fail_msg("%s", err);
        assert_int_equal(page, expect_page[i]);
        tw_label_free(&l);
    }
    assert_int_equal(tw_label_doc_save(doc, path, err, sizeof err), 0);
    tw_label_doc_free(doc);
    tw_layout_free(&lay);
    tw_diags_free(&d);
    char *cmd = tw_asprintf("pdfinfo '%s' 2>/dev/null", path);
    char *out = run_ok(cmd);
    squeeze(out);
    assert_contains(out, "Page size: 612 x 792 pts");
    assert_contains(out, "Pages: 3");
    free(out);
    free(cmd);
}

/* Issue 13: a layout whose regions overlap (built by hand: the QR box reaching into the
 * footer) is refused before anything is drawn, naming both texts. */
static void text_drawn_over_other_text_should_be_refused(void **state)
{
    (void)state;
    tw_layout lay;
    assert_int_equal(tw_layout_default(&lay), 0);
    lay.qr.y = lay.footer.y; /* the symbol and its caption now cover the cautions */
    char err[512];
    tw_label_doc *doc = tw_label_doc_new(&lay, NULL, "2024-08-01", err, sizeof err);
    assert_non_null(doc);
    tw_label l;
    label_warning(&l);
    assert_int_equal(tw_label_doc_add(doc, &l, payloads[0], err, sizeof err), -1);
    assert_non_null(strstr(err, "label CH-MCC-3: "));
    assert_non_null(strstr(err, "would be drawn over"));
    assert_non_null(strstr(err, "QR code"));
    assert_int_equal(tw_label_doc_count(doc), 0);
    tw_label_free(&l);
    tw_label_doc_free(doc);
    tw_layout_free(&lay);
}

/* Issue 13: a character the label font has no glyph for is refused, in a draft too (it would
 * print as an empty box), naming the field and the character. */
static void text_the_font_cannot_draw_should_be_refused_even_in_a_draft(void **state)
{
    (void)state;
    static const char *const bad[][2] = {
        {"Pump house \xe4\xb8\xad", "U+4E2D"},
        {"Pump house \xf0\x9f\x94\xa5", "U+1F525"},
        {"\xd7\xa9\xd7\x9c\xd7\x95\xd7\x9d", "right-to-left"},
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++)
        for (int draft = 0; draft <= 1; draft++) {
            tw_label l;
            label_warning(&l);
            set(&l, TW_L_LOCATION, bad[i][0]);
            l.draft = draft;
            char err[512];
            assert_int_equal(add_one(&l, payloads[0], err, sizeof err), -1);
            assert_non_null(strstr(err, "label CH-MCC-3: location: character"));
            assert_non_null(strstr(err, bad[i][1]));
        }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(label_doc_should_save_three_labels_as_a_pdf),
        cmocka_unit_test(a_full_disk_should_be_named_with_the_file_being_written),
        cmocka_unit_test(saved_pdf_should_pass_qpdf_check),
        cmocka_unit_test(pdfinfo_should_report_three_4_by_6_inch_pages),
        cmocka_unit_test(warning_label_text_should_carry_the_required_values),
        cmocka_unit_test(danger_label_should_show_the_service_block_and_refuse_energized_work),
        cmocka_unit_test(category_label_should_show_the_category_and_non_latin_names),
        cmocka_unit_test(qr_codes_should_decode_to_the_exact_payloads),
        cmocka_unit_test(same_input_should_give_identical_bytes),
        cmocka_unit_test(label_with_energy_and_category_should_be_refused),
        cmocka_unit_test(label_without_voltage_should_be_refused),
        cmocka_unit_test(label_whose_qr_lacks_its_hash_should_be_refused),
        cmocka_unit_test(label_with_invalid_utf8_should_be_refused),
        cmocka_unit_test(description_too_long_should_be_refused_naming_the_field),
        cmocka_unit_test(long_description_should_shrink_rather_than_fail),
        cmocka_unit_test(draft_should_be_watermarked_and_mark_missing_values),
        cmocka_unit_test(failed_save_should_leave_the_old_file_and_no_temporary),
        cmocka_unit_test(missing_fonts_should_be_named_in_the_error),
        cmocka_unit_test(bad_document_date_should_be_refused),
        cmocka_unit_test(sheet_layout_should_put_two_labels_on_each_page),
        cmocka_unit_test(text_drawn_over_other_text_should_be_refused),
        cmocka_unit_test(text_the_font_cannot_draw_should_be_refused_even_in_a_draft),
    };
    return cmocka_run_group_tests(tests, setup, teardown);
}
