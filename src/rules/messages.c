/* messages.c - the fixed texts of a label in each language (see tw_messages.h and
 * docs/messages.md). The wording is our own. Unit symbols (V, kA, s, mm, m, ft, in, cal/cm2)
 * are not translated: they are printed as the study and NFPA 70E's tables give them. */
#include "rules/tw_messages.h"

#include <stdlib.h>
#include <string.h>

/* Names of the fixed texts after the label fields; a label field's message is named by its
 * canonical key (tw_label_key_name), so the two lists cannot drift apart. */
static const char *const names[TW_M_COUNT] = {
    [TW_M_TITLE_ARC_FLASH] = "title_arc_flash",
    [TW_M_TITLE_SHOCK] = "title_shock",
    [TW_M_TITLE_SERVICE] = "title_service",
    [TW_M_HAZARD_LINE] = "hazard_line",
    [TW_M_WORD_WARNING] = "word_warning",
    [TW_M_WORD_DANGER] = "word_danger",
    [TW_M_DRAFT_TAG] = "draft_tag",
    [TW_M_WATERMARK] = "watermark",
    [TW_M_HASH_CAPTION] = "hash_caption",
    [TW_M_CAUTIONS] = "cautions",
    [TW_M_MISSING] = "missing",
    [TW_M_NO_QR] = "no_qr",
    [TW_M_NO_EQUIPMENT_ID] = "no_equipment_id",
    [TW_M_GLOVE_VALUE] = "glove_value",
    [TW_M_AVOID_CONTACT] = "avoid_contact",
    [TW_M_BOUNDARY_COMPUTED] = "boundary_computed",
    [TW_M_BOUNDARY_COMPUTED_EXPONENT] = "boundary_computed_exponent",
};

static const char *const messages_en[TW_M_COUNT] = {
    [TW_L_SIGNAL_WORD] = "Signal word",
    [TW_L_EQUIPMENT_ID] = "Equipment",
    [TW_L_DESCRIPTION] = "Description",
    [TW_L_LOCATION] = "Location",
    [TW_L_NOMINAL_VOLTAGE] = "Nominal voltage",
    [TW_L_ARC_FLASH_BOUNDARY] = "Arc-flash boundary",
    [TW_L_BOUNDARY_NOTE] = "Boundary note",
    [TW_L_INCIDENT_ENERGY] = "Incident energy",
    [TW_L_WORKING_DISTANCE] = "Working distance",
    [TW_L_PPE_CATEGORY] = "PPE category",
    [TW_L_MIN_ARC_RATING] = "Minimum arc rating",
    [TW_L_PPE_LEVEL] = "Site PPE level",
    [TW_L_NO_PPE_ADEQUATE] = "ENERGIZED WORK IS NOT PERMITTED HERE. No PPE level stocked at "
                             "this site is adequate. Put the equipment in an electrically safe "
                             "work condition first.",
    [TW_L_LIMITED_APPROACH] = "Limited approach",
    [TW_L_RESTRICTED_APPROACH] = "Restricted approach",
    [TW_L_GLOVE_CLASS] = "Rubber glove class",
    [TW_L_AVAILABLE_FAULT] = "Available fault current",
    [TW_L_SERVICE_CLEARING_TIME] = "Service device clearing time",
    [TW_L_SERVICE_LABEL_DATE] = "Date of these values",
    [TW_L_STUDY_ID] = "Study",
    [TW_L_STUDY_DATE] = "Study date",
    [TW_L_SCENARIO] = "Governing case",
    [TW_L_REVIEW_DUE] = "Review due",
    [TW_L_REVISION_NOTE] = "Revision",
    [TW_M_TITLE_ARC_FLASH] = "ARC FLASH",
    [TW_M_TITLE_SHOCK] = "SHOCK",
    [TW_M_TITLE_SERVICE] = "SERVICE EQUIPMENT (NEC 110.16(B))",
    [TW_M_HAZARD_LINE] = "Arc-flash and shock hazard. Qualified persons only.",
    [TW_M_WORD_WARNING] = "WARNING",
    [TW_M_WORD_DANGER] = "DANGER",
    [TW_M_DRAFT_TAG] = "DRAFT",
    [TW_M_WATERMARK] = "DRAFT - NOT FOR POSTING",
    [TW_M_HASH_CAPTION] = "content hash",
    [TW_M_CAUTIONS] = "This label reflects the arc-flash risk assessment named on it and is valid "
                      "only while the equipment, its protective device settings and its supply "
                      "are unchanged. De-energize and verify the absence of voltage wherever "
                      "possible. NFPA 70E, local codes and a licensed engineer's judgement "
                      "govern.",
    [TW_M_MISSING] = "(missing)",
    [TW_M_NO_QR] = "no QR code",
    [TW_M_NO_EQUIPMENT_ID] = "(no equipment ID)",
    [TW_M_GLOVE_VALUE] = "Class {1} (max. use {2} V AC)",
    [TW_M_AVOID_CONTACT] = "avoid contact",
    [TW_M_BOUNDARY_COMPUTED] = "computed from incident energy",
    [TW_M_BOUNDARY_COMPUTED_EXPONENT] = ("computed from incident energy, distance exponent "
                                         "{1} ({2}, {3})"),
};

/* Spanish: ADVERTENCIA / PELIGRO are the usual signal words of bilingual signs in the ANSI
 * Z535 manner; EPP = equipo de protección personal; CA = corriente alterna. */
static const char *const messages_es[TW_M_COUNT] = {
    [TW_L_SIGNAL_WORD] = "Palabra de advertencia",
    [TW_L_EQUIPMENT_ID] = "Equipo",
    [TW_L_DESCRIPTION] = "Descripción",
    [TW_L_LOCATION] = "Ubicación",
    [TW_L_NOMINAL_VOLTAGE] = "Tensión nominal",
    [TW_L_ARC_FLASH_BOUNDARY] = "Límite de arco eléctrico",
    [TW_L_BOUNDARY_NOTE] = "Nota sobre el límite",
    [TW_L_INCIDENT_ENERGY] = "Energía incidente",
    [TW_L_WORKING_DISTANCE] = "Distancia de trabajo",
    [TW_L_PPE_CATEGORY] = "Categoría de EPP",
    [TW_L_MIN_ARC_RATING] = "Valor mínimo de arco",
    [TW_L_PPE_LEVEL] = "Nivel de EPP de la planta",
    [TW_L_NO_PPE_ADEQUATE] = "PROHIBIDO TRABAJAR CON TENSIÓN AQUÍ. Ningún nivel de EPP de "
                             "esta planta es suficiente. Primero deje el equipo en condición "
                             "de trabajo eléctricamente segura.",
    [TW_L_LIMITED_APPROACH] = "Límite de aproximación limitada",
    [TW_L_RESTRICTED_APPROACH] = "Límite de aproximación restringida",
    [TW_L_GLOVE_CLASS] = "Clase de guantes aislantes",
    [TW_L_AVAILABLE_FAULT] = "Corriente de falla disponible",
    [TW_L_SERVICE_CLEARING_TIME] = "Tiempo de despeje del dispositivo de acometida",
    [TW_L_SERVICE_LABEL_DATE] = "Fecha de estos valores",
    [TW_L_STUDY_ID] = "Estudio",
    [TW_L_STUDY_DATE] = "Fecha del estudio",
    [TW_L_SCENARIO] = "Caso determinante",
    [TW_L_REVIEW_DUE] = "Revisar antes de",
    [TW_L_REVISION_NOTE] = "Revisión",
    [TW_M_TITLE_ARC_FLASH] = "ARCO ELÉCTRICO",
    [TW_M_TITLE_SHOCK] = "DESCARGA ELÉCTRICA",
    [TW_M_TITLE_SERVICE] = "EQUIPO DE ACOMETIDA (NEC 110.16(B))",
    [TW_M_HAZARD_LINE] = "Peligro de arco eléctrico y de descarga eléctrica. Solo personal "
                         "calificado.",
    [TW_M_WORD_WARNING] = "ADVERTENCIA",
    [TW_M_WORD_DANGER] = "PELIGRO",
    [TW_M_DRAFT_TAG] = "BORRADOR",
    [TW_M_WATERMARK] = "BORRADOR - NO APTO PARA COLOCAR",
    [TW_M_HASH_CAPTION] = "hash del contenido",
    [TW_M_CAUTIONS] = "Esta etiqueta refleja la evaluación de riesgo de arco eléctrico que se "
                      "indica en ella y solo es válida mientras no cambien el equipo, los "
                      "ajustes de sus protecciones ni su alimentación. Siempre que sea posible, "
                      "desenergice y verifique la ausencia de tensión. Rigen la NFPA 70E, los "
                      "códigos locales y el criterio de un ingeniero con licencia.",
    [TW_M_MISSING] = "(falta)",
    [TW_M_NO_QR] = "sin código QR",
    [TW_M_NO_EQUIPMENT_ID] = "(sin ID de equipo)",
    [TW_M_GLOVE_VALUE] = "Clase {1} (uso máx. {2} V CA)",
    [TW_M_AVOID_CONTACT] = "evitar el contacto",
    [TW_M_BOUNDARY_COMPUTED] = "calculado a partir de la energía incidente",
    [TW_M_BOUNDARY_COMPUTED_EXPONENT] = ("calculado a partir de la energía incidente, "
                                         "exponente de distancia {1} ({2}, {3})"),
};

static const char *const *const tables[TW_LANG_COUNT] = {
    [TW_LANG_EN] = messages_en,
    [TW_LANG_ES] = messages_es,
};

static const char *const codes[TW_LANG_COUNT] = {
    [TW_LANG_EN] = "en",
    [TW_LANG_ES] = "es",
};

const char *tw_lang_code(tw_lang lang)
{
    return (unsigned)lang < TW_LANG_COUNT ? codes[lang] : NULL;
}

static int lang_of(const char *s, size_t n, tw_lang *out)
{
    for (int i = 0; i < TW_LANG_COUNT; i++)
        if (strlen(codes[i]) == n && strncmp(s, codes[i], n) == 0) {
            *out = (tw_lang)i;
            return 0;
        }
    return -1;
}

int tw_langs_parse(const char *code, tw_lang out[TW_MAX_LANGS])
{
    if (!code)
        return 0;
    int n = 0;
    for (const char *p = code;; n++) {
        const char *plus = strchr(p, '+');
        size_t len = plus ? (size_t)(plus - p) : strlen(p);
        if (n == TW_MAX_LANGS || lang_of(p, len, &out[n]) != 0)
            return 0;
        for (int i = 0; i < n; i++)
            if (out[i] == out[n])
                return 0;
        if (!plus)
            return n + 1;
        p = plus + 1;
    }
}

const char *tw_msg(tw_lang lang, int id)
{
    if ((unsigned)lang >= TW_LANG_COUNT || id < 0 || id >= TW_M_COUNT)
        return "";
    const char *m = tables[lang][id];
    return m ? m : "";
}

const char *tw_msg_name(int id)
{
    if (id >= 0 && id < (int)TW_L_COUNT)
        return tw_label_key_name((tw_label_key)id);
    return id >= 0 && id < TW_M_COUNT ? names[id] : NULL;
}

/* The argument a placeholder "{k}" at s names, and its length in *used; NULL when s does not
 * start a placeholder with 1 <= k <= n. */
static const char *placeholder(const char *s, const char *const *args, size_t n, size_t *used)
{
    if (s[0] != '{' || s[1] < '1' || s[1] > '9' || s[2] != '}')
        return NULL;
    size_t k = (size_t)(s[1] - '1');
    if (k >= n)
        return NULL;
    *used = 3;
    return args[k] ? args[k] : "";
}

char *tw_msg_fill(tw_lang lang, int id, const char *const *args, size_t n)
{
    const char *m = tw_msg(lang, id);
    size_t len = 0, used;
    for (const char *p = m; *p;) {
        const char *a = placeholder(p, args, n, &used);
        len += a ? strlen(a) : 1;
        p += a ? used : 1;
    }
    char *out = malloc(len + 1), *o = out;
    if (!out)
        return NULL;
    for (const char *p = m; *p;) {
        const char *a = placeholder(p, args, n, &used);
        if (a) {
            size_t k = strlen(a);
            memcpy(o, a, k);
            o += k;
            p += used;
        } else {
            *o++ = *p++;
        }
    }
    *o = '\0';
    return out;
}

char *tw_msg_join(const tw_lang *langs, int n, int id, const char *sep)
{
    size_t len = 1;
    for (int i = 0; i < n; i++)
        len += strlen(tw_msg(langs[i], id)) + (i ? strlen(sep) : 0);
    char *out = malloc(len);
    if (!out)
        return NULL;
    out[0] = '\0';
    for (int i = 0; i < n; i++) {
        if (i)
            strcat(out, sep);
        strcat(out, tw_msg(langs[i], id));
    }
    return out;
}
