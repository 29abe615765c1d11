/* permit_pdf.c - energized electrical work permit drafts (see tw_permit_pdf.h and docs/permit.md).
 *
 * Two passes. plan_*() turns the job, the derived label and the site into a list of rows, each
 * one line high (a wrapped paragraph is several rows), and paginate() gives every row a page
 * and a place on it; only then is anything drawn, so "Page x of y" knows y and no text is ever
 * drawn outside its column. Rows that belong together (a heading and what follows it, a short
 * field, a checklist item, a signature block) are kept on one page.
 */
#include "write/tw_permit_pdf.h"
#include "base/tw_fonts.h"
#include "base/tw_text.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "write/tw_pdf_doc.h"
#include "write/tw_qr.h"
#include "rules/tw_rules.h"
#include "base/tw_util.h"

/* ---- the words printed on a permit --------------------------------------------------------
 * Our own wording. The element numbers follow NFPA 70E-2024 130.2(B)(2) (from memory; verify
 * against the edition in force). */

#define EDITION "NFPA 70E-2024"
#define BLANK "________ (not given)"
#define BLANK_STUDY "________ (not in the study)"
#define BLANK_FILL "________ (to be completed by the qualified person)"
#define DRAFT_MARK "DRAFT - NOT VALID UNTIL SIGNED"

static const char title_text[] = "ENERGIZED ELECTRICAL WORK PERMIT";

static const char *const cautions[] = {
    "This permit is a draft filled in by tagwright from the arc-flash risk assessment and the "
    "job file. It does not authorize anyone to work until it is completed and signed.",
    "NFPA 70E, local codes, the employer's electrical safety procedures and the judgement of a "
    "licensed engineer govern over anything printed here.",
    "A qualified person must verify every value against the equipment, its posted label and "
    "the current study before anyone signs. Blanks must be completed by hand or the job "
    "file corrected.",
    "Element numbers follow " EDITION " 130.2(B)(2) (from memory; verify against the edition "
    "in force).",
};

static const char footer_caution[] =
    "Draft from the arc-flash study. NFPA 70E, local codes, the employer's procedures and a "
    "licensed engineer's judgement govern; a qualified person must verify.";

/* The job briefing items of element 8 (NFPA 70E 110.5(I) lists what a briefing covers: from
 * memory, verify against the edition in force). Job-specific hazards follow them. */
static const char *const briefing_items[] = {
    "Hazards of this task and of this equipment reviewed, with the study values in 5 and 6",
    "Work procedure and the order of the steps agreed",
    "Special precautions for this job discussed",
    "Energy source controls: what stays energized and what is isolated",
    "Shock PPE and arc-rated PPE from 5 and 6 at hand and inspected",
    "Limited, restricted and arc-flash boundaries known and marked",
    "Test instrument checked on a known source before and after use",
    "Emergency response: escape route, who calls for help, nearest means of disconnect",
};

/* The roles that approve energized work (element 9); a job file may add more. */
static const struct {
    const char *key, *caption;
} standard_roles[] = {
    {"responsible_management", "Responsible management"},
    {"safety_management", "Safety management"},
    {"engineering_management", "Engineering management"},
    {"electrically_knowledgeable_person", "Electrically knowledgeable person"},
};

#define COUNT(a) (sizeof(a) / sizeof((a)[0]))

/* ---- geometry (points) -------------------------------------------------------------------- */

#define MARGIN 40.0
#define HEADER_H 108.0      /* title, draft band, work order, equipment; QR at the right */
#define FOOTER_H 34.0
#define QR_SIDE 88.0
#define BODY_PT 9.5
#define NOTE_PT 7.5
#define HEAD_PT 10.5
#define HEADING_H 17.0
#define SECTION_GAP 9.0
#define CHECK_H 18.0        /* a checklist line with its boxes */
#define SIGN_H 36.0         /* signature and date lines, and room below their captions */
#define INITIALS_W 72.0
#define MIN_PT 5.0

static const tw_rgb HEADING_FILL = {0.86, 0.86, 0.86};
static const tw_rgb CAPTION_INK = {0.2, 0.2, 0.2};

/* ---- rows --------------------------------------------------------------------------------- */

typedef enum {
    R_SPACE,    /* vertical gap, dropped at the top of a page */
    R_HEADING,  /* section heading band: left = title, right = citation */
    R_PAIR,     /* left = caption column, right = value column */
    R_TEXT,     /* right = text across the whole width */
    R_NOTE,     /* right = small grey text across the whole width */
    R_ALERT,    /* right = bold white text on a safety-red band */
    R_BULLET,   /* right = text, a bullet on the first line */
    R_CHECK,    /* right = text; first line: a check box and an initials box */
    R_INITIALS, /* right = name; an initials box */
    R_SIGN,     /* signature and date lines */
} row_kind;

/* Value styles in the right column. */
enum { V_PLAIN, V_STUDY, V_BLANK, V_BOLD };

typedef struct {
    row_kind kind;
    const char *ltext, *rtext;
    tw_span l, r;
    int style;
    int first, last;    /* first / last line of its item */
    int keep_next;      /* no page break after this row */
    double h;
    int page;           /* 1-based, set by paginate() */
    double top;         /* distance from the top of the body area */
} row;

typedef struct {
    const tw_permit *in;
    tw_pdf_doc pdf;
    double page_w, page_h;
    double x, w;            /* body column */
    double cap_w;           /* caption column */
    double body_h;
    row *rows;
    size_t n, cap;
    char **owned;           /* texts made here */
    size_t owned_n, owned_cap;
    int oom;
    int pages;
    tw_qr qr;
    double module;
    char header_line[200];
    const char *bad;        /* what could not be laid out */
} plan;

static row *push_row(plan *P, row_kind kind)
{
    if (P->oom)
        return NULL;
    if (P->n == P->cap) {
        size_t cap = P->cap ? 2 * P->cap : 256;
        row *grown = realloc(P->rows, cap * sizeof *grown);
        if (!grown) {
            P->oom = 1;
            return NULL;
        }
        P->rows = grown;
        P->cap = cap;
    }
    row *r = &P->rows[P->n++];
    memset(r, 0, sizeof *r);
    r->kind = kind;
    return r;
}

/* Keep a text made here until the document is written; NULL when out of memory. */
static const char *own(plan *P, char *s)
{
    if (!s || P->oom) {
        P->oom = 1;
        free(s);
        return NULL;
    }
    if (P->owned_n == P->owned_cap) {
        size_t cap = P->owned_cap ? 2 * P->owned_cap : 32;
        char **grown = realloc(P->owned, cap * sizeof *grown);
        if (!grown) {
            P->oom = 1;
            free(s);
            return NULL;
        }
        P->owned = grown;
        P->owned_cap = cap;
    }
    P->owned[P->owned_n++] = s;
    return s;
}

static const char *ownf(plan *P, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static const char *ownf(plan *P, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    char *s = tw_vasprintf(fmt, ap);
    va_end(ap);
    return own(P, s);
}

/* Wrap s into w at pt: a fresh span array (NULL with *n 0 when out of memory). */
static tw_span *wrap(plan *P, tw_font *f, double pt, const char *s, double w, int *n)
{
    *n = tw_wrap(f, pt, s, w, NULL, 0);
    tw_span *lines = calloc((size_t)(*n > 0 ? *n : 1), sizeof *lines);
    if (!lines) {
        P->oom = 1;
        *n = 0;
        return NULL;
    }
    tw_wrap(f, pt, s, w, lines, *n);
    return lines;
}

static tw_font *value_font(const plan *P, int style)
{
    return style == V_STUDY || style == V_BOLD ? P->pdf.bold : P->pdf.regular;
}

/* Geometry of the right-hand text of a row kind: x offset from the body's left and width. */
static void text_column(const plan *P, row_kind k, double *x, double *w)
{
    switch (k) {
    case R_PAIR:
        *x = P->cap_w;
        break;
    case R_ALERT:
        *x = 8;
        break;
    case R_BULLET:
        *x = 12;
        break;
    case R_CHECK:
        *x = 18;
        break;
    default:
        *x = 0;
    }
    *w = P->w - *x;
    if (k == R_CHECK || k == R_INITIALS)
        *w -= INITIALS_W + 10;
    if (k == R_ALERT)
        *w -= 8;
}

static double kind_pt(row_kind k)
{
    return k == R_NOTE ? NOTE_PT : k == R_HEADING ? HEAD_PT : BODY_PT;
}

static double line_h(row_kind k)
{
    return kind_pt(k) * TW_LEADING;
}

/* Rows for a caption (R_PAIR only) and a text: one per line of the longer of the two. Items
 * of at most keep_lines lines are kept on one page. */
static void add_lines(plan *P, row_kind kind, const char *caption, const char *text, int style,
                      int keep_lines)
{
    double x, w;
    text_column(P, kind, &x, &w);
    double pt = kind_pt(kind);
    int nl = 0, nr = 0;
    tw_span *ls = caption ? wrap(P, P->pdf.regular, pt, caption, P->cap_w - 8, &nl) : NULL;
    tw_span *rs = wrap(P, value_font(P, style), pt, text, w, &nr);
    int n = nl > nr ? nl : nr;
    for (int i = 0; i < n && !P->oom; i++) {
        row *r = push_row(P, kind);
        if (!r)
            break;
        r->ltext = caption;
        r->rtext = text;
        if (i < nl)
            r->l = ls[i];
        else
            r->ltext = NULL;
        if (i < nr)
            r->r = rs[i];
        else
            r->rtext = NULL;
        r->style = style;
        r->first = i == 0;
        r->last = i == n - 1;
        r->keep_next = !r->last && n <= keep_lines;
        r->h = line_h(kind);
        if ((kind == R_CHECK || kind == R_INITIALS) && r->first)
            r->h = CHECK_H;
        if (kind == R_ALERT && (r->first || r->last))
            r->h += 4 * ((r->first ? 1 : 0) + (r->last ? 1 : 0));
    }
    free(ls);
    free(rs);
}

static void add_pair(plan *P, const char *caption, const char *value, int style)
{
    if (!value || !*value)
        add_lines(P, R_PAIR, caption, BLANK, V_BLANK, 8);
    else
        add_lines(P, R_PAIR, caption, value, style, 8);
}

static void add_space(plan *P, double h)
{
    row *r = push_row(P, R_SPACE);
    if (r) {
        r->h = h;
        r->keep_next = 1;
    }
}

static void add_heading(plan *P, int element, const char *title)
{
    add_space(P, SECTION_GAP);
    row *r = push_row(P, R_HEADING);
    if (!r)
        return;
    r->ltext = element ? ownf(P, "%d  %s", element, title) : title;
    r->rtext = element ? ownf(P, EDITION " 130.2(B)(2)(%d)", element) : NULL;
    if (r->ltext)
        r->l = (tw_span){0, strlen(r->ltext)};
    if (r->rtext)
        r->r = (tw_span){0, strlen(r->rtext)};
    r->h = HEADING_H;
    r->keep_next = 1;
    r->first = r->last = 1;
}

static void add_sign(plan *P)
{
    row *r = push_row(P, R_SIGN);
    if (r) {
        r->h = SIGN_H;
        r->first = r->last = 1;
    }
}

/* Make the last row keep with the next one (a caption block and what it introduces). */
static void keep_last(plan *P)
{
    if (P->n)
        P->rows[P->n - 1].keep_next = 1;
}

/* ---- the content -------------------------------------------------------------------------- */

static const char *lv(const plan *P, tw_label_key k)
{
    return P->in->label->value[k];
}

int tw_permit_no_ppe_adequate(const tw_label *l)
{
    return l && l->value[TW_L_NO_PPE_ADEQUATE] != NULL;
}

/* The first section when no PPE the site stocks is adequate. */
static void plan_refusal(plan *P)
{
    const tw_label *l = P->in->label;
    double top = tw_site_max_rating(P->in->site);
    const char *energy = lv(P, TW_L_INCIDENT_ENERGY)
        ? ownf(P, "The incident energy at the working distance, %s,", lv(P, TW_L_INCIDENT_ENERGY))
        : ownf(P, "The arc rating this equipment calls for, %s,",
               lv(P, TW_L_MIN_ARC_RATING) ? lv(P, TW_L_MIN_ARC_RATING) : "unknown");
    const char *limit = top > 0
        ? ownf(P, "exceeds the highest arc rating of any PPE this site stocks (%g cal/cm2).", top)
        : own(P, tw_strdup("cannot be met: this site names no arc-rated PPE."));
    if (!energy || !limit)
        return;
    add_lines(P, R_ALERT, NULL, "NO PPE IS ADEQUATE FOR THIS EQUIPMENT - ENERGIZED WORK SHOULD "
              "NOT BE PERFORMED", V_BOLD, 99);
    keep_last(P);
    const char *body = ownf(P, "%s %s No arc-rated clothing available here would protect a "
                            "worker from this arc flash. Put %s in an electrically safe work "
                            "condition instead, or have the study and the protective device "
                            "settings reviewed to lower the energy. This draft exists only so "
                            "that the job and this finding are on record; it must not be "
                            "approved as written.", energy, limit,
                            l->value[TW_L_EQUIPMENT_ID] ? l->value[TW_L_EQUIPMENT_ID]
                                                        : "the equipment");
    if (body)
        add_lines(P, R_ALERT, NULL, body, V_BOLD, 99);
}

static void plan_cautions(plan *P)
{
    add_heading(P, 0, "About this draft");
    for (size_t i = 0; i < COUNT(cautions); i++)
        add_lines(P, R_BULLET, NULL, cautions[i], V_PLAIN, 6);
    const tw_site *s = P->in->site;
    for (size_t i = 0; i < s->caution_count; i++)
        if (s->cautions[i])
            add_lines(P, R_BULLET, NULL, s->cautions[i], V_BOLD, 6);
}

static void plan_equipment(plan *P)
{
    const tw_job *j = P->in->job;
    add_heading(P, 1, "Circuit or equipment, and location");
    add_pair(P, "Equipment ID", lv(P, TW_L_EQUIPMENT_ID), V_STUDY);
    add_lines(P, R_PAIR, "Description (study)", lv(P, TW_L_DESCRIPTION) ? lv(P, TW_L_DESCRIPTION)
              : BLANK_STUDY, lv(P, TW_L_DESCRIPTION) ? V_STUDY : V_BLANK, 8);
    add_lines(P, R_PAIR, "Location (study)", lv(P, TW_L_LOCATION) ? lv(P, TW_L_LOCATION)
              : BLANK_STUDY, lv(P, TW_L_LOCATION) ? V_STUDY : V_BLANK, 8);
    add_pair(P, "Work location (job)", j->location, V_PLAIN);
    add_pair(P, "Site", P->in->site->site_name, V_PLAIN);
}

static const char *qualified_text(plan *P, const tw_crew_member *c)
{
    const char *name = c->name ? c->name : "________ (name not given)";
    const char *q = c->qualified == TW_QUALIFIED_YES  ? "qualified person"
                    : c->qualified == TW_QUALIFIED_NO ? "NOT a qualified person"
                                                      : "qualification ________ (not given)";
    return ownf(P, "%s - %s", name, q);
}

static void plan_work(plan *P)
{
    const tw_job *j = P->in->job;
    add_heading(P, 2, "Description of the work to be done");
    add_pair(P, "Work order", j->work_order, V_BOLD);
    add_pair(P, "Work to be done", j->work_description, V_PLAIN);
    add_pair(P, "Planned date", j->planned_date, V_PLAIN);
    if (!j->crew_count)
        add_pair(P, "Crew", NULL, V_PLAIN);
    for (size_t i = 0; i < j->crew_count; i++) {
        const char *t = qualified_text(P, &j->crew[i]);
        if (t)
            add_lines(P, R_PAIR, i == 0 ? "Crew" : NULL, t, V_PLAIN, 8);
    }
}

static void plan_justification(plan *P)
{
    add_heading(P, 3, "Justification: why the work must be done energized");
    add_pair(P, "Justification", P->in->job->justification, V_PLAIN);
}

static void plan_practices(plan *P)
{
    const tw_job *j = P->in->job;
    add_heading(P, 4, "Safe work practices to be used");
    if (!j->safe_work_practice_count)
        add_pair(P, "Safe work practices", NULL, V_PLAIN);
    for (size_t i = 0; i < j->safe_work_practice_count; i++)
        add_lines(P, R_BULLET, NULL, j->safe_work_practices[i], V_PLAIN, 6);
}

/* The movable-conductor limited approach boundary is not on the label; it comes from the same
 * NFPA 70E Table 130.4(E)(a) row as the label's fixed-circuit-part boundary, for the nominal
 * voltage the label was derived from, formatted the way tw_label_derive formats the other. */
static const char *movable_boundary(plan *P)
{
    const tw_bus *b = P->in->bus;
    if (!b || !b->governing || !tw_row_has(b->governing, TW_F_NOMINAL_VOLTAGE_V))
        return NULL;
    const tw_approach *a = tw_approach_for_voltage(b->governing->num[TW_F_NOMINAL_VOLTAGE_V]);
    if (!a || !lv(P, TW_L_LIMITED_APPROACH))
        return NULL;
    if (P->in->site->units == TW_UNITS_METRIC)
        return ownf(P, "%.1f m", a->limited_movable_mm / 1000);
    return ownf(P, "%s (%.1f m)", a->limited_movable_ft, a->limited_movable_mm / 1000);
}

static void plan_shock(plan *P)
{
    add_heading(P, 5, "Shock risk assessment");
    add_pair(P, "Voltage to which workers are exposed (nominal)", lv(P, TW_L_NOMINAL_VOLTAGE),
             V_STUDY);
    const char *movable = movable_boundary(P);
    add_lines(P, R_PAIR, "Limited approach boundary, exposed movable conductor",
              movable ? movable : BLANK_STUDY, movable ? V_STUDY : V_BLANK, 8);
    add_lines(P, R_PAIR, "Limited approach boundary, exposed fixed circuit part",
              lv(P, TW_L_LIMITED_APPROACH) ? lv(P, TW_L_LIMITED_APPROACH) : BLANK_STUDY,
              lv(P, TW_L_LIMITED_APPROACH) ? V_STUDY : V_BLANK, 8);
    add_lines(P, R_PAIR, "Restricted approach boundary",
              lv(P, TW_L_RESTRICTED_APPROACH) ? lv(P, TW_L_RESTRICTED_APPROACH) : BLANK_STUDY,
              lv(P, TW_L_RESTRICTED_APPROACH) ? V_STUDY : V_BLANK, 8);
    const char *glove = lv(P, TW_L_GLOVE_CLASS)
        ? ownf(P, "Rubber insulating gloves %s, ASTM D120, with leather protectors",
               lv(P, TW_L_GLOVE_CLASS))
        : "No ASTM D120 glove class covers this voltage: ________ (to be specified)";
    add_lines(P, R_PAIR, "Shock PPE", glove, lv(P, TW_L_GLOVE_CLASS) ? V_STUDY : V_BLANK, 8);
    add_lines(P, R_PAIR, "Other shock PPE and insulated tools", BLANK_FILL, V_BLANK, 8);
    add_lines(P, R_NOTE, NULL, "Approach boundaries: NFPA 70E Table 130.4(E)(a) for the nominal "
              "voltage; glove class: ASTM D120 maximum use voltage (AC). Same values as the "
              "posted label.", V_PLAIN, 4);
}

static void plan_arc_flash(plan *P)
{
    const tw_label *l = P->in->label;
    add_heading(P, 6, "Arc-flash risk assessment");
    /* NFPA 70E 130.5(H) and 130.2(B)(2)(6): incident energy at the working distance, or the
     * PPE category - whichever the label shows. */
    if (lv(P, TW_L_INCIDENT_ENERGY)) {
        const char *e = ownf(P, "%s at a working distance of %s", lv(P, TW_L_INCIDENT_ENERGY),
                             lv(P, TW_L_WORKING_DISTANCE) ? lv(P, TW_L_WORKING_DISTANCE)
                                                          : BLANK_STUDY);
        add_pair(P, "Incident energy at the working distance", e, V_STUDY);
    } else {
        add_pair(P, "Arc-flash PPE category", lv(P, TW_L_PPE_CATEGORY), V_STUDY);
    }
    add_pair(P, "Minimum arc rating of the PPE", lv(P, TW_L_MIN_ARC_RATING), V_STUDY);
    if (tw_permit_no_ppe_adequate(l))
        add_lines(P, R_PAIR, "Site PPE level", "NONE IS ADEQUATE - see the first section",
                  V_STUDY, 8);
    else
        add_pair(P, "Site PPE level", lv(P, TW_L_PPE_LEVEL), V_STUDY);
    const char *afb = lv(P, TW_L_ARC_FLASH_BOUNDARY);
    if (afb && lv(P, TW_L_BOUNDARY_NOTE))
        afb = ownf(P, "%s (%s)", afb, lv(P, TW_L_BOUNDARY_NOTE));
    add_pair(P, "Arc-flash boundary", afb, V_STUDY);
    size_t n = P->in->bus ? P->in->bus->count : 0;
    const char *sc = lv(P, TW_L_SCENARIO)
        ? ownf(P, "%s (the worst of %zu scenario%s studied)", lv(P, TW_L_SCENARIO), n,
               n == 1 ? "" : "s")
        : NULL;
    add_lines(P, R_PAIR, "Governing scenario", sc ? sc : BLANK_STUDY, sc ? V_STUDY : V_BLANK, 8);
    const char *study = ownf(P, "%s, dated %s; review due %s", lv(P, TW_L_STUDY_ID)
                             ? lv(P, TW_L_STUDY_ID) : "(no ID)", lv(P, TW_L_STUDY_DATE)
                             ? lv(P, TW_L_STUDY_DATE) : "(no date)", lv(P, TW_L_REVIEW_DUE)
                             ? lv(P, TW_L_REVIEW_DUE) : "(unknown)");
    add_pair(P, "Study", study, V_PLAIN);
    add_lines(P, R_NOTE, NULL, "Values as on the posted label for this equipment (the QR code "
              "names its revision and content hash), rounded toward safety.", V_PLAIN, 4);
}

static void plan_access(plan *P)
{
    add_heading(P, 7, "Means to restrict the access of unqualified persons");
    add_pair(P, "Means employed", P->in->job->access_restriction, V_PLAIN);
}

static void plan_briefing(plan *P)
{
    const tw_job *j = P->in->job;
    add_heading(P, 8, "Job briefing, including job-specific hazards");
    add_lines(P, R_TEXT, NULL, "Briefing held by ______________________   on (date) "
              "____________   at (time) ________", V_PLAIN, 2);
    add_space(P, 4);
    for (size_t i = 0; i < COUNT(briefing_items); i++)
        add_lines(P, R_CHECK, NULL, briefing_items[i], V_PLAIN, 99);
    if (!j->job_hazard_count)
        add_lines(P, R_CHECK, NULL, "Job-specific hazards: " BLANK, V_BLANK, 99);
    for (size_t i = 0; i < j->job_hazard_count; i++) {
        const char *t = ownf(P, "Job-specific hazard: %s", j->job_hazards[i]);
        if (t)
            add_lines(P, R_CHECK, NULL, t, V_PLAIN, 99);
    }
    add_space(P, 4);
    add_lines(P, R_TEXT, NULL, "Each member of the crew initials that the briefing was given "
              "and understood:", V_PLAIN, 2);
    keep_last(P);
    for (size_t i = 0; i < j->crew_count; i++)
        add_lines(P, R_INITIALS, NULL, j->crew[i].name ? j->crew[i].name
                  : "________ (name not given)", V_PLAIN, 99);
    /* room for people the job file did not list */
    for (int i = 0; i < (j->crew_count ? 1 : 3); i++)
        add_lines(P, R_INITIALS, NULL, "________________________ (name)", V_BLANK, 99);
}

static void plan_role(plan *P, const char *role, const tw_approver *a)
{
    const char *who = a && a->name ? a->name : "________________________ (name)";
    const char *t = a && a->title ? ownf(P, "%s - %s, %s", role, who, a->title)
                                  : ownf(P, "%s - %s", role, who);
    if (!t)
        return;
    add_lines(P, R_TEXT, NULL, t, V_BOLD, 99);
    keep_last(P);
    add_sign(P);
}

static void plan_approval(plan *P)
{
    const tw_job *j = P->in->job;
    add_heading(P, 9, "Energized work approval");
    add_lines(P, R_TEXT, NULL, "By signing, each person approves this energized work as "
              "described above and confirms that the blanks have been completed.", V_PLAIN, 4);
    keep_last(P);
    for (size_t r = 0; r < COUNT(standard_roles); r++) {
        const tw_approver *a = NULL;
        for (size_t i = 0; i < j->approver_count && !a; i++)
            if (j->approvers[i].role && !strcmp(j->approvers[i].role, standard_roles[r].key))
                a = &j->approvers[i];
        plan_role(P, standard_roles[r].caption, a);
    }
    for (size_t i = 0; i < j->approver_count; i++) {
        const tw_approver *a = &j->approvers[i];
        int standard = 0;
        for (size_t r = 0; r < COUNT(standard_roles); r++)
            standard |= a->role && !strcmp(a->role, standard_roles[r].key);
        if (a->role && !standard)
            plan_role(P, a->role, a);
    }
}

static void plan_content(plan *P)
{
    if (tw_permit_no_ppe_adequate(P->in->label))
        plan_refusal(P);
    plan_cautions(P);
    plan_equipment(P);
    plan_work(P);
    plan_justification(P);
    plan_practices(P);
    plan_shock(P);
    plan_arc_flash(P);
    plan_access(P);
    plan_briefing(P);
    plan_approval(P);
}

/* ---- pagination --------------------------------------------------------------------------- */

/* Height of the run of rows from i that must stay together; *end is its last row. */
static double chain_height(const plan *P, size_t i, size_t *end)
{
    double h = P->rows[i].h;
    size_t j = i;
    while (P->rows[j].keep_next && j + 1 < P->n)
        h += P->rows[++j].h;
    *end = j;
    return h;
}

static void place(plan *P, size_t i, int page, double *used)
{
    row *r = &P->rows[i];
    if (r->kind == R_SPACE && *used == 0)
        r->h = 0;   /* no gap at the top of a page */
    r->page = page;
    r->top = *used;
    *used += r->h;
}

static void paginate(plan *P)
{
    int page = 1;
    double used = 0;
    size_t i = 0;
    while (i < P->n) {
        size_t end;
        double h = chain_height(P, i, &end);
        if (used + h <= P->body_h + 1e-6) {
            for (; i <= end; i++)
                place(P, i, page, &used);
        } else if (used > 0 && h <= P->body_h) {
            page++;
            used = 0;
        } else {
            /* longer than a page: break inside it, line by line */
            if (used > 0 && used + P->rows[i].h > P->body_h + 1e-6) {
                page++;
                used = 0;
            }
            place(P, i, page, &used);
            i++;
        }
    }
    P->pages = page;
}

/* ---- drawing ------------------------------------------------------------------------------ */

static double body_top(const plan *P)
{
    return P->page_h - MARGIN - HEADER_H;
}

/* One line of text with its top at top. */
static void line_at(HPDF_Page pg, tw_font *f, double pt, double x, double top, const char *s,
                    tw_span sp, tw_rgb c)
{
    tw_draw_text(pg, f, pt, x, top - tw_baseline_drop(f, pt), s + sp.start, sp.len, c);
}

static void draw_row(const plan *P, HPDF_Page pg, const row *r)
{
    double top = body_top(P) - r->top, x0 = P->x, tx, tw;
    tw_font *reg = P->pdf.regular, *f = value_font(P, r->style);
    tw_rgb ink = r->style == V_BLANK ? TW_GREY : TW_BLACK;
    text_column(P, r->kind, &tx, &tw);
    double pt = kind_pt(r->kind);
    switch (r->kind) {
    case R_SPACE:
        return;
    case R_HEADING: {
        tw_draw_fill(pg, (tw_box){x0, top - r->h, P->w, r->h}, HEADING_FILL);
        double ty = top - (r->h - HEAD_PT * TW_LEADING) / 2;
        if (r->ltext)
            line_at(pg, P->pdf.bold, HEAD_PT, x0 + 5, ty, r->ltext, r->l, TW_BLACK);
        if (r->rtext) {
            double w = tw_text_width(reg, NOTE_PT, r->rtext, r->r.len);
            line_at(pg, reg, NOTE_PT, x0 + P->w - 5 - w, top - (r->h - NOTE_PT * TW_LEADING) / 2,
                    r->rtext, r->r, CAPTION_INK);
        }
        return;
    }
    case R_ALERT: {
        tw_draw_fill(pg, (tw_box){x0, top - r->h, P->w, r->h}, TW_SAFETY_RED);
        top -= r->first ? 4 : 0;
        break;
    }
    case R_PAIR:
        if (r->ltext)
            line_at(pg, reg, pt, x0, top, r->ltext, r->l, CAPTION_INK);
        break;
    case R_BULLET:
        if (r->first)
            line_at(pg, reg, pt, x0 + 3, top, "\xe2\x80\xa2", (tw_span){0, 3}, TW_BLACK);
        break;
    case R_CHECK:
    case R_INITIALS: {
        double bx = x0 + P->w - INITIALS_W;
        if (r->first) {
            if (r->kind == R_CHECK)
                tw_draw_frame(pg, (tw_box){x0 + 2, top - 11.5, 9, 9}, 0.8, TW_BLACK);
            tw_draw_frame(pg, (tw_box){bx, top - 15, INITIALS_W, 14}, 0.6, TW_BLACK);
            tw_draw_text(pg, reg, 5.5, bx + 2, top - 6, "initials", 8, TW_GREY);
        }
        if (r->first)
            top -= 1.5;
        break;
    }
    case R_SIGN: {
        double y = top - 18, mid = x0 + P->w * 0.62;
        tw_draw_line(pg, x0, y, mid - 14, y, 0.6, TW_BLACK);
        tw_draw_line(pg, mid, y, x0 + P->w, y, 0.6, TW_BLACK);
        tw_draw_text(pg, reg, 6.5, x0, y - 8, "signature", 9, TW_GREY);
        tw_draw_text(pg, reg, 6.5, mid, y - 8, "date", 4, TW_GREY);
        return;
    }
    default:
        break;
    }
    if (r->kind == R_ALERT)
        ink = TW_WHITE;
    if (r->kind == R_NOTE)
        ink = TW_GREY, f = reg;
    if (r->rtext)
        line_at(pg, f, pt, x0 + tx, top, r->rtext, r->r, ink);
}

/* Fit s on one line of width w, from start down to MIN_PT; 0 when it does not fit. */
static double fit_line(tw_font *f, const char *s, double w, double start)
{
    return tw_fit_size(f, s, w, 1, start, MIN_PT);
}

static int draw_header(const plan *P, HPDF_Page pg, char *err, size_t errlen)
{
    const tw_job *j = P->in->job;
    double top = P->page_h - MARGIN, x = MARGIN, w = P->w - QR_SIDE - 12;
    tw_font *b = P->pdf.bold, *reg = P->pdf.regular;
    double pt = fit_line(b, title_text, w, 15);
    tw_draw_text(pg, b, pt, x, top - tw_baseline_drop(b, pt), title_text, strlen(title_text),
                 TW_BLACK);
    double band_top = top - 24;
    tw_draw_fill(pg, (tw_box){x, band_top - 20, w, 20}, TW_SAFETY_RED);
    double dpt = fit_line(b, DRAFT_MARK, w - 12, 12);
    double dw = tw_text_width(b, dpt, DRAFT_MARK, strlen(DRAFT_MARK));
    tw_draw_text(pg, b, dpt, x + (w - dw) / 2, band_top - 14.5, DRAFT_MARK, strlen(DRAFT_MARK),
                 TW_WHITE);
    const char *lines[3] = {j->work_order ? j->work_order : BLANK,
                            P->in->label->value[TW_L_EQUIPMENT_ID], P->header_line};
    const char *caps[3] = {"Work order: ", "Equipment: ", ""};
    double y = band_top - 26;
    for (int i = 0; i < 3; i++) {
        char *t = tw_asprintf("%s%s", caps[i], lines[i] ? lines[i] : BLANK);
        if (!t) {
            snprintf(err, errlen, "out of memory");
            return -1;
        }
        tw_font *f = i < 2 ? b : reg;
        double lpt = fit_line(f, t, w, i < 2 ? 11 : 8);
        if (lpt == 0) {
            snprintf(err, errlen, "the permit header line \"%s\" does not fit at %g pt", t, MIN_PT);
            free(t);
            return -1;
        }
        tw_draw_text(pg, f, lpt, x, y - tw_baseline_drop(f, lpt), t, strlen(t), TW_BLACK);
        y -= (i < 2 ? 11 : 8) * TW_LEADING + 2;
        free(t);
    }
    /* the QR code of the posted label, top right, with its revision and hash beneath */
    double side = (P->qr.width + 2 * TW_QR_QUIET_MODULES) * P->module;
    double qx = P->page_w - MARGIN - side;
    if (tw_draw_qr(P->pdf.pdf, pg, &P->qr, qx, top - side, P->module) != 0) {
        snprintf(err, errlen, "out of memory while drawing the QR code");
        return -1;
    }
    char cap[96];
    snprintf(cap, sizeof cap, "label rev %d  sha256 %.12s", P->in->revision, P->in->label->hash);
    double cpt = fit_line(reg, cap, QR_SIDE, 6.5);
    double cw = tw_text_width(reg, cpt, cap, strlen(cap));
    tw_draw_text(pg, reg, cpt, P->page_w - MARGIN - (QR_SIDE + cw) / 2, top - side - 8, cap,
                 strlen(cap), TW_BLACK);
    double bottom = P->page_h - MARGIN - HEADER_H + 4;
    tw_draw_line(pg, MARGIN, bottom, P->page_w - MARGIN, bottom, 0.8, TW_BLACK);
    return 0;
}

static int draw_footer(const plan *P, HPDF_Page pg, int page, char *err, size_t errlen)
{
    const tw_job *j = P->in->job;
    tw_font *b = P->pdf.bold, *reg = P->pdf.regular;
    double top = MARGIN + FOOTER_H - 6;
    tw_draw_line(pg, MARGIN, top + 4, P->page_w - MARGIN, top + 4, 0.5, TW_BLACK);
    char pg_text[48];
    snprintf(pg_text, sizeof pg_text, "Page %d of %d", page, P->pages);
    double pw = tw_text_width(b, 8, pg_text, strlen(pg_text));
    tw_draw_text(pg, b, 8, P->page_w - MARGIN - pw, top - 8, pg_text, strlen(pg_text), TW_BLACK);
    char *left = tw_asprintf(DRAFT_MARK "   Work order: %s   Equipment: %s",
                             j->work_order ? j->work_order : "________",
                             P->in->label->value[TW_L_EQUIPMENT_ID]);
    if (!left) {
        snprintf(err, errlen, "out of memory");
        return -1;
    }
    double avail = P->w - pw - 12;
    double lpt = tw_fit_size(b, left, avail, 2, 8, MIN_PT);
    if (lpt == 0) {
        snprintf(err, errlen, "the permit footer does not fit at %g pt", MIN_PT);
        free(left);
        return -1;
    }
    tw_span sp[2];
    int n = tw_wrap(b, lpt, left, avail, sp, 2);
    tw_draw_lines(pg, b, lpt, MARGIN, top - 8 + tw_baseline_drop(b, lpt), avail, left,
                  sp, n, TW_ALIGN_LEFT, TW_BLACK);
    free(left);
    double cpt = fit_line(reg, footer_caution, P->w, 6.5);
    tw_draw_text(pg, reg, cpt, MARGIN, MARGIN, footer_caution, strlen(footer_caution), TW_GREY);
    return 0;
}

static int draw_pages(plan *P, char *err, size_t errlen)
{
    size_t next = 0;
    for (int page = 1; page <= P->pages; page++) {
        HPDF_Page pg = tw_pdf_doc_page(&P->pdf, P->page_w, P->page_h);
        if (!pg)
            return tw_pdf_doc_check(&P->pdf, err, errlen), -1;
        if (draw_header(P, pg, err, errlen) != 0 || draw_footer(P, pg, page, err, errlen) != 0)
            return -1;
        for (; next < P->n && P->rows[next].page == page; next++)
            draw_row(P, pg, &P->rows[next]);
    }
    return tw_pdf_doc_check(&P->pdf, err, errlen);
}

/* ---- the document ------------------------------------------------------------------------- */

static int check_texts(const tw_permit *in, char *err, size_t errlen)
{
    const tw_site *s = in->site;
    if (s->site_name && !tw_text_ok(s->site_name)) {
        snprintf(err, errlen, "the site name is not printable UTF-8 text");
        return -1;
    }
    for (size_t i = 0; i < s->caution_count; i++)
        if (s->cautions[i] && !tw_text_ok(s->cautions[i])) {
            snprintf(err, errlen, "site caution %zu is not printable UTF-8 text", i + 1);
            return -1;
        }
    for (int k = 0; k < TW_L_COUNT; k++)
        if (in->label->value[k] && !tw_text_ok(in->label->value[k])) {
            snprintf(err, errlen, "label field %s is not printable UTF-8 text",
                     tw_label_key_name((tw_label_key)k));
            return -1;
        }
    const char *named[1 + TW_L_COUNT];
    size_t count = 0;
    named[count++] = s->site_name;
    for (int k = 0; k < TW_L_COUNT; k++)
        named[count++] = in->label->value[k];
    for (size_t i = 0; i < count; i++) {
        uint32_t cp = 0;
        tw_draw_problem p = named[i] ? tw_text_drawable(named[i], &cp) : TW_DRAW_OK;
        if (p != TW_DRAW_OK) {
            char why[512];
            snprintf(err, errlen, "%s: %s",
                     i == 0 ? "the site name" : tw_label_key_name((tw_label_key)(i - 1)),
                     tw_draw_problem_text(p, cp, why, sizeof why));
            return -1;
        }
    }
    for (size_t i = 0; i < s->caution_count; i++) {
        uint32_t cp = 0;
        tw_draw_problem p = s->cautions[i] ? tw_text_drawable(s->cautions[i], &cp) : TW_DRAW_OK;
        if (p != TW_DRAW_OK) {
            char why[512];
            snprintf(err, errlen, "site caution %zu: %s", i + 1,
                     tw_draw_problem_text(p, cp, why, sizeof why));
            return -1;
        }
    }
    if (!in->label->value[TW_L_EQUIPMENT_ID]) {
        snprintf(err, errlen, "the label has no equipment ID");
        return -1;
    }
    return 0;
}

static int start(plan *P, const tw_permit *in, char *err, size_t errlen)
{
    P->in = in;
    P->page_w = in->paper == TW_PAPER_A4 ? 595.28 : 612;
    P->page_h = in->paper == TW_PAPER_A4 ? 841.89 : 792;
    P->x = MARGIN;
    P->w = P->page_w - 2 * MARGIN;
    P->cap_w = 178;
    P->body_h = P->page_h - 2 * MARGIN - HEADER_H - FOOTER_H - 8;
    if (check_texts(in, err, errlen) != 0)
        return -1;
    if (!in->qr_payload || tw_qr_encode(in->qr_payload, &P->qr) != 0) {
        snprintf(err, errlen, "the QR payload cannot be encoded; shorten the record link");
        return -1;
    }
    P->module = tw_qr_module_pt(P->qr.width + 2 * TW_QR_QUIET_MODULES, QR_SIDE, 0, 0);
    if (P->module == 0) {
        snprintf(err, errlen, "the QR code (%d modules) does not fit %g pt; shorten the record "
                 "link", P->qr.width, QR_SIDE);
        return -1;
    }
    const tw_label *l = in->label;
    snprintf(P->header_line, sizeof P->header_line, "Drafted %s from arc-flash study %.64s",
             in->date ? in->date : "", l->value[TW_L_STUDY_ID] ? l->value[TW_L_STUDY_ID] : "");
    return tw_pdf_doc_open(&P->pdf, in->date, err, errlen);
}

static void finish(plan *P)
{
    for (size_t i = 0; i < P->owned_n; i++)
        free(P->owned[i]);
    free(P->owned);
    free(P->rows);
    tw_qr_free(&P->qr);
    tw_pdf_doc_close(&P->pdf);
}

static int permit_write(const tw_permit *in, const char *tmp, const char *path, char *err,
                        size_t errlen)
{
    plan P;
    memset(&P, 0, sizeof P);
    int rc = -1;
    if (!in || !in->job || !in->label || !in->site) {
        snprintf(err, errlen, "nothing to draw");
        return -1;
    }
    if (start(&P, in, err, errlen) != 0)
        goto done;
    plan_content(&P);
    if (P.oom) {
        snprintf(err, errlen, "out of memory while laying out the permit");
        goto done;
    }
    paginate(&P);
    if (draw_pages(&P, err, errlen) != 0)
        goto done;
    if ((tmp ? tw_pdf_doc_write(&P.pdf, tmp, path, err, errlen)
             : tw_pdf_doc_save(&P.pdf, path, err, errlen)) == 0)
        rc = P.pages;
done:
    finish(&P);
    return rc;
}

int tw_permit_write(const tw_permit *in, const char *path, char *err, size_t errlen)
{
    return permit_write(in, NULL, path, err, errlen);
}

int tw_permit_write_tmp(const tw_permit *in, const char *tmp, const char *path, char *err,
                        size_t errlen)
{
    return permit_write(in, tmp, path, err, errlen);
}

char *tw_permit_file_name(const char *work_order, size_t index)
{
    size_t n = work_order ? strlen(work_order) : 0;
    char *name = malloc(n + 1);
    if (!name)
        return NULL;
    size_t k = 0;
    for (size_t i = 0; i < n; i++) {
        unsigned char c = (unsigned char)work_order[i];
        int keep = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
                   c == '-' || c == '_' || c == '.';
        if (c >= 0x80 && (c & 0xC0) == 0x80)
            continue;   /* one '_' per UTF-8 character, not per byte */
        char out = keep ? (char)c : '_';
        if (out == '.' && (k == 0 || name[k - 1] == '.'))
            out = '_';   /* no hidden file, no ".." */
        name[k++] = out;
    }
    if (k > 0 && name[k - 1] == '.')
        name[k - 1] = '_';   /* nor ".." where ".pdf" follows */
    name[k] = '\0';
    int useful = 0;
    for (size_t i = 0; i < k; i++)
        useful |= name[i] != '_' && name[i] != '.';
    char *file = useful ? tw_asprintf("permit-%s.pdf", name)
                        : tw_asprintf("permit-job-%zu.pdf", index + 1);
    free(name);
    return file;
}
