/* test_messages.c - the message tables: complete in every language, printable, the same
 * placeholders, listed in docs/messages.md; language codes; filling and joining. */
#include "tw_test.h"

#include "write/tw_pdf_doc.h"
#include "base/tw_text.h"
#include "rules/tw_messages.h"
#include "base/tw_util.h"

static const tw_lang all_langs[] = {TW_LANG_EN, TW_LANG_ES};

static void every_message_should_exist_in_every_language(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof all_langs / sizeof all_langs[0]; i++)
        for (int id = 0; id < TW_M_COUNT; id++) {
            const char *m = tw_msg(all_langs[i], id);
            if (!*m)
                fail_msg("message %s is empty in %s", tw_msg_name(id), tw_lang_code(all_langs[i]));
            assert_non_null(tw_msg_name(id));
        }
}

/* Every message is drawn as text: well-formed UTF-8 without control characters. */
static void every_message_should_be_printable_utf8(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof all_langs / sizeof all_langs[0]; i++)
        for (int id = 0; id < TW_M_COUNT; id++)
            if (!tw_text_ok(tw_msg(all_langs[i], id)))
                fail_msg("message %s in %s is not printable UTF-8", tw_msg_name(id),
                         tw_lang_code(all_langs[i]));
}

/* The placeholders {1}..{9} a message uses, as a bit set. */
static unsigned placeholders(const char *m)
{
    unsigned set = 0;
    for (const char *p = m; *p; p++)
        if (p[0] == '{' && p[1] >= '1' && p[1] <= '9' && p[2] == '}')
            set |= 1u << (p[1] - '0');
    return set;
}

static void translations_should_use_the_same_placeholders(void **state)
{
    (void)state;
    for (int id = 0; id < TW_M_COUNT; id++)
        if (placeholders(tw_msg(TW_LANG_ES, id)) != placeholders(tw_msg(TW_LANG_EN, id)))
            fail_msg("message %s: the Spanish text uses other placeholders", tw_msg_name(id));
}

/* ANSI Z535-style bilingual signs use PELIGRO and ADVERTENCIA (common practice). */
static void spanish_signal_words_should_be_peligro_and_advertencia(void **state)
{
    (void)state;
    assert_string_equal(tw_msg(TW_LANG_EN, TW_M_WORD_DANGER), "DANGER");
    assert_string_equal(tw_msg(TW_LANG_EN, TW_M_WORD_WARNING), "WARNING");
    assert_string_equal(tw_msg(TW_LANG_ES, TW_M_WORD_DANGER), "PELIGRO");
    assert_string_equal(tw_msg(TW_LANG_ES, TW_M_WORD_WARNING), "ADVERTENCIA");
}

/* Captions are indexed by label field: the trade's terms in each language. */
static void captions_should_follow_the_label_fields(void **state)
{
    (void)state;
    assert_string_equal(tw_msg(TW_LANG_EN, TW_L_INCIDENT_ENERGY), "Incident energy");
    assert_string_equal(tw_msg(TW_LANG_ES, TW_L_INCIDENT_ENERGY), "Energía incidente");
    assert_string_equal(tw_msg(TW_LANG_ES, TW_L_WORKING_DISTANCE), "Distancia de trabajo");
    assert_string_equal(tw_msg(TW_LANG_ES, TW_L_ARC_FLASH_BOUNDARY), "Límite de arco eléctrico");
    assert_string_equal(tw_msg(TW_LANG_ES, TW_L_LIMITED_APPROACH),
                        "Límite de aproximación limitada");
    assert_string_equal(tw_msg(TW_LANG_ES, TW_L_RESTRICTED_APPROACH),
                        "Límite de aproximación restringida");
    assert_string_equal(tw_msg_name(TW_L_GLOVE_CLASS), "glove_class");
    assert_string_equal(tw_msg_name(TW_M_CAUTIONS), "cautions");
    assert_null(tw_msg_name(TW_M_COUNT));
    assert_string_equal(tw_msg(TW_LANG_EN, TW_M_COUNT), "");
    assert_string_equal(tw_msg(TW_LANG_COUNT, 0), "");
}

static void language_codes_should_parse_one_or_two_languages(void **state)
{
    (void)state;
    tw_lang l[TW_MAX_LANGS];
    assert_int_equal(tw_langs_parse("en", l), 1);
    assert_int_equal(l[0], TW_LANG_EN);
    assert_int_equal(tw_langs_parse("es", l), 1);
    assert_int_equal(l[0], TW_LANG_ES);
    assert_int_equal(tw_langs_parse("en+es", l), 2);
    assert_int_equal(l[0], TW_LANG_EN);
    assert_int_equal(l[1], TW_LANG_ES);
    const char *bad[] = {"", "fr", "en+", "+es", "en+en", "en+es+en", "EN", "en es", "e"};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++)
        if (tw_langs_parse(bad[i], l) != 0)
            fail_msg("'%s' was accepted", bad[i]);
    assert_int_equal(tw_langs_parse(NULL, l), 0);
    assert_string_equal(tw_lang_code(TW_LANG_ES), "es");
    assert_null(tw_lang_code(TW_LANG_COUNT));
}

/* ASTM D120 class 00: maximum use voltage 500 V AC (the value is an argument, not table text). */
static void fill_should_replace_numbered_placeholders(void **state)
{
    (void)state;
    const char *args[] = {"00", "500"};
    char *en = tw_msg_fill(TW_LANG_EN, TW_M_GLOVE_VALUE, args, 2);
    char *es = tw_msg_fill(TW_LANG_ES, TW_M_GLOVE_VALUE, args, 2);
    assert_string_equal(en, "Class 00 (max. use 500 V AC)");
    assert_string_equal(es, "Clase 00 (uso máx. 500 V CA)");
    free(en);
    free(es);
    char *partial = tw_msg_fill(TW_LANG_EN, TW_M_GLOVE_VALUE, args, 1);
    assert_string_equal(partial, "Class 00 (max. use {2} V AC)");
    free(partial);
    char *plain = tw_msg_fill(TW_LANG_ES, TW_M_AVOID_CONTACT, NULL, 0);
    assert_string_equal(plain, "evitar el contacto");
    free(plain);
}

static void join_should_put_english_first(void **state)
{
    (void)state;
    tw_lang both[] = {TW_LANG_EN, TW_LANG_ES};
    char *j = tw_msg_join(both, 2, TW_M_WORD_WARNING, " / ");
    assert_string_equal(j, "WARNING / ADVERTENCIA");
    free(j);
    j = tw_msg_join(both, 1, TW_M_WORD_DANGER, " / ");
    assert_string_equal(j, "DANGER");
    free(j);
    j = tw_msg_join(both, 2, TW_M_HAZARD_LINE, "\n");
    assert_non_null(strstr(j, "only.\nPeligro"));
    free(j);
}

/* docs/messages.md lists every message by name with its text in each language. */
static void docs_should_list_every_message_in_every_language(void **state)
{
    (void)state;
    const char *src = getenv("TW_SOURCE_DIR");
    char path[4096], err[256];
    snprintf(path, sizeof path, "%s/docs/messages.md", src ? src : ".");
    size_t len = 0;
    char *doc = tw_read_file(path, &len, err, sizeof err);
    if (!doc)
        fail_msg("%s", err);
    for (int id = 0; id < TW_M_COUNT; id++) {
        char name[96];
        snprintf(name, sizeof name, "| `%s` |", tw_msg_name(id));
        int listed = 0;
        for (char *row = strstr(doc, name); row && !listed; row = strstr(row + 1, name)) {
            char *end = strchr(row, '\n');
            size_t n = end ? (size_t)(end - row) : strlen(row);
            listed = 1;
            for (size_t i = 0; i < sizeof all_langs / sizeof all_langs[0]; i++) {
                const char *m = tw_msg(all_langs[i], id);
                char *hit = strstr(row, m);
                listed &= hit && (size_t)(hit - row) + strlen(m) <= n;
            }
        }
        if (!listed)
            fail_msg("docs/messages.md has no row %s with the text in every language", name);
    }
    free(doc);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(every_message_should_exist_in_every_language),
        cmocka_unit_test(every_message_should_be_printable_utf8),
        cmocka_unit_test(translations_should_use_the_same_placeholders),
        cmocka_unit_test(spanish_signal_words_should_be_peligro_and_advertencia),
        cmocka_unit_test(captions_should_follow_the_label_fields),
        cmocka_unit_test(language_codes_should_parse_one_or_two_languages),
        cmocka_unit_test(fill_should_replace_numbered_placeholders),
        cmocka_unit_test(join_should_put_english_first),
        cmocka_unit_test(docs_should_list_every_message_in_every_language),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
