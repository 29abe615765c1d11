/* test_analysis.c - infinite-bus current, transformer impedance, arc-flash boundary, IEEE 1584
 * exponents and ranges, and the envelope of a bus's scenarios.
 *
 * Trade values are checked against a handbook worked example, IEEE 1584-2002 Table 4 and
 * IEEE 1584-2018 clause 4.2 (both from memory, verify against the edition in force), and hand
 * computations written out beside each assertion. Rows are built by hand; names are fictional.
 */
#include "tw_test.h"

#include "rules/tw_analysis.h"
#include "rules/tw_label.h"
#include "read/tw_results.h"
#include "rules/tw_scenario.h"
#include "read/tw_site.h"
#include "rules/tw_validate.h"

/* ---- infinite bus ----------------------------------------------------------------------- */

/* The textbook example: 1500 kVA, 480 V, 5.75 %Z.
 * I_fla = 1 500 000 / (1.7320508 x 480) = 1 500 000 / 831.3844 = 1804.22 A
 * I_ib  = 1804.22 x 100 / 5.75 = 31 377.7 A.
 * The handbook prints 31 374 A because it rounds I_fla to 1804 A first
 * (1804 x 17.3913 = 31 373.9 A); we keep full precision, 0.012 % above it. */
static void infinite_bus_should_match_the_1500kva_480v_textbook_example(void **state)
{
    (void)state;
    tw_infinite_bus ib;
    assert_int_equal(tw_infinite_bus_calc(1500, 480, 5.75, &ib), 0);
    assert_near(ib.full_load_a, 1804.22, 0.01);
    assert_near(ib.fault_a, 31377.73, 0.01);
    assert_near(ib.fault_a, 31374, 31374 * 0.0005); /* the printed figure, within 0.05 % */
}

/* Hand computation: 1000 kVA, 208 V, 5 %Z.
 * sqrt(3) x 208 = 360.2666; I_fla = 1 000 000 / 360.2666 = 2775.72 A;
 * I_ib = 2775.72 x 100 / 5 = 55 514.4 A. */
static void infinite_bus_should_be_55514a_for_1000kva_208v_5pct(void **state)
{
    (void)state;
    tw_infinite_bus ib;
    assert_int_equal(tw_infinite_bus_calc(1000, 208, 5, &ib), 0);
    assert_near(ib.full_load_a, 2775.72, 0.01);
    assert_near(ib.fault_a, 55514.4, 0.1);
}

/* Hand computation: 2500 kVA, 4160 V, 6 %Z.
 * sqrt(3) x 4160 = 7205.33; I_fla = 2 500 000 / 7205.33 = 346.97 A;
 * I_ib = 346.97 x 100 / 6 = 5782.8 A. */
static void infinite_bus_should_be_5783a_for_2500kva_4160v_6pct(void **state)
{
    (void)state;
    tw_infinite_bus ib;
    assert_int_equal(tw_infinite_bus_calc(2500, 4160, 6, &ib), 0);
    assert_near(ib.full_load_a, 346.97, 0.01);
    assert_near(ib.fault_a, 5782.76, 0.01);
}

static void infinite_bus_should_refuse_zero_negative_and_nan_inputs(void **state)
{
    (void)state;
    tw_infinite_bus ib;
    assert_int_equal(tw_infinite_bus_calc(0, 480, 5.75, &ib), -1);
    assert_int_equal(tw_infinite_bus_calc(1500, -480, 5.75, &ib), -1);
    assert_int_equal(tw_infinite_bus_calc(1500, 480, NAN, &ib), -1);
    assert_int_equal(tw_infinite_bus_calc(INFINITY, 480, 5.75, &ib), -1);
    assert_int_equal(tw_infinite_bus_calc(1e308, 1e-300, 1e-300, &ib), -1); /* overflows */
    assert_int_equal(tw_infinite_bus_calc(1500, 480, 5.75, NULL), -1);
}

/* Hand computation: 1500 kVA, 480 V, 5.75 %Z, X/R 6.
 * Z_base = 480^2 / 1 500 000 = 0.1536 ohm; Z = 0.1536 x 0.0575 = 0.008832 ohm;
 * angle = atan(6) = 80.538 deg; R = Z / sqrt(37) = 0.0014520 ohm; X = 6 R = 0.0087118 ohm. */
static void impedance_should_split_by_x_over_r(void **state)
{
    (void)state;
    tw_xfmr_impedance z;
    assert_int_equal(tw_xfmr_impedance_calc(1500, 480, 5.75, 6, &z), 0);
    assert_near(z.z_base_ohm, 0.1536, 1e-9);
    assert_near(z.z_ohm, 0.008832, 1e-9);
    assert_near(z.angle_deg, 80.538, 0.001);
    assert_near(z.r_ohm, 0.0014520, 1e-7);
    assert_near(z.x_ohm, 0.0087118, 1e-7);
    assert_near(hypot(z.r_ohm, z.x_ohm), z.z_ohm, 1e-12);
    assert_int_equal(tw_xfmr_impedance_calc(1500, 480, 5.75, 0, &z), -1);
}

/* ---- arc-flash boundary ----------------------------------------------------------------- */

/* AFB = D x (E / 1.2)^(1/x), by hand:
 *  E 4.8, D 457.2 mm, x 2:      457.2 x 4^(1/2) = 914.4 mm
 *  E 2.4, D 300 mm, x 1:        300 x 2 = 600 mm
 *  E 8, D 455 mm, x 1.641:      455 x 6.6667^0.609385 = 455 x 3.17744 = 1445.73 mm
 *  E 4.8, D 610 mm, x 1.473:    610 x 4^0.678887 = 610 x 2.56289 = 1563.36 mm */
static void boundary_should_match_hand_computations(void **state)
{
    (void)state;
    assert_near(tw_afb_mm(4.8, 457.2, 2.0), 914.4, 1e-9);
    assert_near(tw_afb_mm(2.4, 300, 1.0), 600, 1e-9);
    assert_near(tw_afb_mm(8, 455, 1.641), 1445.73, 0.01);
    assert_near(tw_afb_mm(4.8, 610, 1.473), 1563.36, 0.01);
}

static void boundary_should_equal_working_distance_at_1_2_cal(void **state)
{
    (void)state;
    assert_near(tw_afb_mm(1.2, 455, 1.641), 455, 1e-9);
}

static void boundary_should_be_nan_for_unusable_inputs(void **state)
{
    (void)state;
    assert_true(isnan(tw_afb_mm(0, 455, 1.641)));
    assert_true(isnan(tw_afb_mm(8, -1, 1.641)));
    assert_true(isnan(tw_afb_mm(8, 455, 0)));
    assert_true(isnan(tw_afb_mm(NAN, 455, 1.641)));
    assert_true(isnan(tw_afb_mm(1e300, 455, 1e-3))); /* overflows */
}

/* IEEE 1584-2002 Table 4 (from memory, verify against the edition in force). */
static void exponent_should_follow_ieee1584_2002_table_4(void **state)
{
    (void)state;
    const char *src = NULL;
    assert_near(tw_distance_exponent_for("switchgear", 480, &src), 1.473, 1e-12);
    assert_non_null(src);
    assert_near(tw_distance_exponent_for("MCC", 480, NULL), 1.641, 1e-12);
    assert_near(tw_distance_exponent_for("panelboard", 208, NULL), 1.641, 1e-12);
    assert_near(tw_distance_exponent_for("switchboard", 480, NULL), 1.473, 1e-12);
    assert_near(tw_distance_exponent_for("cable", 480, NULL), 2.000, 1e-12);
    assert_near(tw_distance_exponent_for("open-air", 13800, NULL), 2.000, 1e-12);
    assert_near(tw_distance_exponent_for("switchgear", 4160, NULL), 0.973, 1e-12);
    assert_near(tw_distance_exponent_for("switchgear", 13800, NULL), 0.973, 1e-12);
}

static void exponent_should_be_unknown_outside_the_table(void **state)
{
    (void)state;
    assert_true(isnan(tw_distance_exponent_for("mcc", 4160, NULL)));
    assert_true(isnan(tw_distance_exponent_for("switchgear", 34500, NULL)));
    assert_true(isnan(tw_distance_exponent_for("switchgear", 120, NULL)));
    assert_true(isnan(tw_distance_exponent_for("busway", 480, NULL)));
    assert_true(isnan(tw_distance_exponent_for(NULL, 480, NULL)));
}

/* IEEE 1584-2018 clause 4.2 (from memory, verify against the edition in force). */
static void ranges_should_follow_ieee1584_2018(void **state)
{
    (void)state;
    const tw_ieee1584_range *lv = tw_ieee1584_range_for(480);
    assert_non_null(lv);
    assert_near(lv->ibf_min_ka, 0.5, 1e-12);
    assert_near(lv->ibf_max_ka, 106, 1e-12);
    assert_near(lv->gap_min_mm, 6.35, 1e-12);
    assert_near(lv->gap_max_mm, 76.2, 1e-12);
    assert_ptr_equal(tw_ieee1584_range_for(600), lv);
    assert_ptr_equal(tw_ieee1584_range_for(208), lv);
    const tw_ieee1584_range *mv = tw_ieee1584_range_for(13800);
    assert_non_null(mv);
    assert_ptr_not_equal(mv, lv);
    assert_near(mv->ibf_min_ka, 0.2, 1e-12);
    assert_near(mv->ibf_max_ka, 65, 1e-12);
    assert_near(mv->gap_min_mm, 19.05, 1e-12);
    assert_near(mv->gap_max_mm, 254, 1e-12);
    assert_ptr_equal(tw_ieee1584_range_for(601), mv);
    assert_ptr_equal(tw_ieee1584_range_for(15000), mv);
    assert_null(tw_ieee1584_range_for(207.9));
    assert_null(tw_ieee1584_range_for(15001));
    assert_null(tw_ieee1584_range_for(NAN));
}

/* ---- envelope ----------------------------------------------------------------------------- */

#define MAX_ROWS 16

typedef struct {
    tw_row rows[MAX_ROWS];
    tw_row *ptrs[MAX_ROWS];
    tw_bus bus;
    tw_envelope env;
} sweep_fixture;

static void set_num(tw_row *r, tw_field f, double v)
{
    r->num[f] = v;
    r->present |= 1u << f;
}

static void set_text(tw_row *r, tw_field f, const char *v)
{
    r->text[f] = (char *)v;
    r->present |= 1u << f;
}

static tw_row *add_row(sweep_fixture *F, const char *scenario, double source_ka, double cal,
                       double afb_mm)
{
    tw_row *r = &F->rows[F->bus.count];
    set_text(r, TW_F_EQUIPMENT_ID, "ZZ-TEST-MC01");
    set_text(r, TW_F_SCENARIO, scenario);
    if (source_ka > 0)
        set_num(r, TW_F_SOURCE_FAULT_KA, source_ka);
    set_num(r, TW_F_INCIDENT_ENERGY_CAL, cal);
    set_num(r, TW_F_ARC_FLASH_BOUNDARY_MM, afb_mm);
    F->ptrs[F->bus.count++] = r;
    return r;
}

static int setup_fixture(void **state)
{
    sweep_fixture *F = calloc(1, sizeof *F);
    if (!F)
        return -1;
    F->bus.equipment_id = "ZZ-TEST-MC01";
    F->bus.rows = F->ptrs;
    *state = F;
    return 0;
}

static int teardown_fixture(void **state)
{
    sweep_fixture *F = *state;
    tw_envelope_free(&F->env);
    free(F);
    return 0;
}

/* A crafted sweep: an LV breaker's instantaneous trip holds the energy down until the arcing
 * current falls below its pickup between 24 kA and 21 kA of source current; the energy then
 * jumps from 2.45 to 15.24 cal/cm2. Rows are given out of order on purpose. */
static void crafted_sweep(sweep_fixture *F)
{
    add_row(F, "source-70", 20.88, 15.24, 2154);
    add_row(F, "utility-max", 29.83, 2.99, 798);
    add_row(F, "source-50", 14.91, 11.37, 1801);
    add_row(F, "infinite-bus", 32.13, 3.19, 831);
    add_row(F, "source-90", 26.85, 2.72, 755);
    add_row(F, "source-80", 23.86, 2.45, 709);
    add_row(F, "source-60", 17.90, 13.32, 1984);
    add_row(F, "utility-min", 29.45, 2.95, 793);
}

static void envelope_should_govern_with_the_highest_energy(void **state)
{
    sweep_fixture *F = *state;
    crafted_sweep(F);
    assert_int_equal(tw_envelope_bus(&F->bus, NAN, &F->env), 0);
    assert_string_equal(F->env.governing->text[TW_F_SCENARIO], "source-70");
    assert_near(F->env.energy_cal, 15.24, 1e-12);
    assert_near(F->env.rating_cal, 15.3, 1e-9);
    assert_near(F->env.boundary_mm, 2154, 1e-12);
    assert_int_equal(F->env.sweep_count, 8);
    assert_near(F->env.sweep[0].source_ka, 32.13, 1e-12);
    assert_near(F->env.sweep[7].source_ka, 14.91, 1e-12);
    assert_false(F->env.has_target);
}

static void envelope_should_find_the_rise_below_23_86ka(void **state)
{
    sweep_fixture *F = *state;
    crafted_sweep(F);
    assert_int_equal(tw_envelope_bus(&F->bus, NAN, &F->env), 0);
    assert_true(F->env.rises);
    /* Energy is 2.45 cal/cm2 at 23.86 kA and 15.24 cal/cm2 at the next step, 20.88 kA. */
    assert_near(F->env.rises_below_ka, 23.86, 1e-12);
    assert_near(F->env.sweep[F->env.rise_index].source_ka, 20.88, 1e-12);
    assert_true(tw_envelope_has_sweep(&F->env));
}

static void envelope_should_not_call_a_falling_sweep_a_rise(void **state)
{
    sweep_fixture *F = *state;
    add_row(F, "a", 16.0, 9.59, 900);
    add_row(F, "b", 11.7, 7.11, 800);
    add_row(F, "c", 9.35, 5.79, 700);
    add_row(F, "d", 5.84, 3.84, 600);
    assert_int_equal(tw_envelope_bus(&F->bus, NAN, &F->env), 0);
    assert_false(F->env.rises);
    assert_true(isnan(F->env.rises_below_ka));
}

/* 2.00 -> 2.09 is 4.5 % (below 5 %); 0.10 -> 0.19 is 90 % but only 0.09 cal/cm2: neither is a
 * rise (rounding of the report). 2.00 -> 2.11 is 5.5 % and 0.11 cal/cm2: a rise. */
static void envelope_should_ignore_rises_within_rounding(void **state)
{
    sweep_fixture *F = *state;
    add_row(F, "a", 20, 2.00, 500);
    add_row(F, "b", 18, 2.09, 510);
    add_row(F, "c", 16, 0.10, 100);
    add_row(F, "d", 14, 0.19, 110);
    assert_int_equal(tw_envelope_bus(&F->bus, NAN, &F->env), 0);
    assert_false(F->env.rises);
    tw_envelope_free(&F->env);
    F->rows[1].num[TW_F_INCIDENT_ENERGY_CAL] = 2.11;
    assert_int_equal(tw_envelope_bus(&F->bus, NAN, &F->env), 0);
    assert_true(F->env.rises);
    assert_near(F->env.rises_below_ka, 20, 1e-12);
}

/* Target 8 cal/cm2: every scenario from 32.13 kA down to 23.86 kA stays within it (3.19 ...
 * 2.45), 20.88 kA does not (15.24), so the lowest adequate source current is 23.86 kA and the
 * target is not met. */
static void envelope_should_find_the_lowest_adequate_source_current(void **state)
{
    sweep_fixture *F = *state;
    crafted_sweep(F);
    assert_int_equal(tw_envelope_bus(&F->bus, 8, &F->env), 0);
    assert_true(F->env.has_target);
    assert_near(F->env.lowest_adequate_ka, 23.86, 1e-12);
    assert_false(F->env.target_met);
    assert_true(tw_envelope_row_over(&F->env, &F->rows[0]));   /* source-70 */
    assert_false(tw_envelope_row_over(&F->env, &F->rows[1]));  /* utility-max */
}

static void envelope_should_meet_a_target_above_every_scenario(void **state)
{
    sweep_fixture *F = *state;
    crafted_sweep(F);
    assert_int_equal(tw_envelope_bus(&F->bus, 25, &F->env), 0);
    assert_true(F->env.target_met);
    assert_near(F->env.lowest_adequate_ka, 14.91, 1e-12); /* the lowest current studied */
}

/* The target is compared with the energy rounded up as the label prints it: 8.01 -> 8.1. */
static void envelope_should_round_energy_up_before_comparing(void **state)
{
    sweep_fixture *F = *state;
    add_row(F, "a", 20, 8.01, 1500);
    add_row(F, "b", 18, 7.5, 1400);
    assert_int_equal(tw_envelope_bus(&F->bus, 8, &F->env), 0);
    assert_false(F->env.target_met);
    assert_true(isnan(F->env.lowest_adequate_ka)); /* even the highest current exceeds it */
}

/* A scenario without a source current is outside the sweep but still counts for the target. */
static void envelope_should_count_scenarios_without_source_current_for_the_target(void **state)
{
    sweep_fixture *F = *state;
    add_row(F, "a", 20, 3, 600);
    add_row(F, "b", 18, 2.5, 550);
    add_row(F, "maintenance-off", 0, 12, 1900);
    assert_int_equal(tw_envelope_bus(&F->bus, 8, &F->env), 0);
    assert_int_equal(F->env.sweep_count, 2);
    assert_near(F->env.lowest_adequate_ka, 18, 1e-12);
    assert_false(F->env.target_met);
    assert_string_equal(F->env.governing->text[TW_F_SCENARIO], "maintenance-off");
    assert_false(tw_envelope_has_sweep(&F->env));
}

/* Two scenarios at the same source current: the worse one stands for it. */
static void envelope_should_keep_the_worse_of_equal_currents(void **state)
{
    sweep_fixture *F = *state;
    add_row(F, "a", 20, 3, 600);
    add_row(F, "b", 18, 2.5, 550);
    add_row(F, "b-alt", 18, 4.0, 700);
    assert_int_equal(tw_envelope_bus(&F->bus, NAN, &F->env), 0);
    assert_int_equal(F->env.sweep_count, 2);
    assert_near(F->env.sweep[1].energy_cal, 4.0, 1e-12);
    assert_true(F->env.rises);
}

static void envelope_should_handle_a_bus_with_only_a_ppe_category(void **state)
{
    sweep_fixture *F = *state;
    tw_row *r = &F->rows[0];
    set_text(r, TW_F_EQUIPMENT_ID, "ZZ-TEST-PP01");
    set_num(r, TW_F_PPE_CATEGORY, 2);
    F->ptrs[F->bus.count++] = r;
    assert_int_equal(tw_envelope_bus(&F->bus, 8, &F->env), 0);
    assert_true(isnan(F->env.energy_cal));
    assert_near(F->env.rating_cal, 8, 1e-12); /* NFPA 70E Table 130.7(C)(15)(c): category 2 */
    assert_true(F->env.target_met);
    assert_int_equal(F->env.sweep_count, 0);
    assert_true(isnan(F->env.lowest_adequate_ka));
}

static void envelope_should_accept_an_empty_bus_and_free_twice(void **state)
{
    sweep_fixture *F = *state;
    assert_int_equal(tw_envelope_bus(&F->bus, 8, &F->env), 0);
    assert_null(F->env.governing);
    assert_false(F->env.target_met); /* unknown hazard: not met */
    tw_envelope_free(&F->env);
    tw_envelope_free(&F->env);
    tw_envelope_free(NULL);
}

/* ---- physics checks in tagwright check (validate.c) -------------------------------------- */

typedef struct {
    tw_results r;
    tw_bus_set s;
    tw_diags d;
} checked;

#define PHYS_HEAD                                                                               \
    "equipment_id,study_id,study_date,nominal_voltage_v,equipment_type,incident_energy_cal_cm2," \
    "working_distance_mm,arc_flash_boundary_mm,distance_exponent,bolted_fault_ka,"            \
    "arcing_current_ka,clearing_time_s,gap_mm,xfmr_kva,xfmr_z_percent,xfmr_secondary_v,"      \
    "motor_contribution_ka\n"

static void run_checks(checked *c, const char *csv)
{
    memset(c, 0, sizeof *c);
    tw_diags_init(&c->d);
    assert_int_equal(tw_results_read_csv("physics.csv", csv, strlen(csv), &c->r, &c->d), 0);
    assert_int_equal(tw_bus_set_build(&c->r, &c->s), 0);
    tw_validate(&c->r, &c->s, NULL, &c->d);
}

static void checked_free(checked *c)
{
    tw_bus_set_free(&c->s);
    tw_results_free(&c->r);
    tw_diags_free(&c->d);
}

/* The finding about field on line, or NULL. */
static const tw_diag *finding(const checked *c, long line, const char *field)
{
    for (size_t i = 0; i < c->d.count; i++)
        if (c->d.items[i].line == line && c->d.items[i].field &&
            strstr(c->d.items[i].field, field))
            return &c->d.items[i];
    return NULL;
}

/* 1500 kVA, 480 V, 5.75 %Z: 31.378 kA infinite bus, plus 1.10 kA of motors = 32.478 kA.
 * The limit with the 10 % tolerance is 35.73 kA: 35.5 kA passes, 36.0 kA is an error.
 * E 8 cal/cm2 at 455 mm with x 1.641 gives 1445.7 mm, so the stated boundary matches. */
static void bolted_current_above_the_infinite_bus_limit_should_be_an_error(void **state)
{
    (void)state;
    checked c;
    run_checks(&c, PHYS_HEAD
               "T-A,S,2026-01-05,480,mcc,8,455,1446,1.641,35.5,20,0.1,25,1500,5.75,480,1.10\n"
               "T-B,S,2026-01-05,480,mcc,8,455,1446,1.641,36.0,20,0.1,25,1500,5.75,480,1.10\n");
    assert_null(finding(&c, 2, "bolted_fault_ka"));
    const tw_diag *g = finding(&c, 3, "bolted_fault_ka");
    assert_non_null(g);
    assert_int_equal(g->severity, TW_ERROR);
    assert_non_null(strstr(g->message, "32.48 kA"));
    assert_non_null(strstr(g->message, "31.38 kA infinite bus"));
    assert_int_equal(c.d.errors, 1);
    checked_free(&c);
}

/* Without motor contribution the limit is 31.378 x 1.1 = 34.52 kA. */
static void motor_contribution_should_raise_the_limit(void **state)
{
    (void)state;
    checked c;
    run_checks(&c, PHYS_HEAD
               "T-A,S,2026-01-05,480,mcc,8,455,1446,1.641,35.0,20,0.1,25,1500,5.75,480,\n"
               "T-B,S,2026-01-05,480,mcc,8,455,1446,1.641,35.0,20,0.1,25,1500,5.75,480,1.0\n");
    assert_non_null(finding(&c, 2, "bolted_fault_ka"));
    assert_null(finding(&c, 3, "bolted_fault_ka"));
    checked_free(&c);
}

static void partial_transformer_data_should_be_a_warning(void **state)
{
    (void)state;
    checked c;
    run_checks(&c, PHYS_HEAD
               "T-A,S,2026-01-05,480,mcc,8,455,1446,1.641,90,20,0.1,25,1500,,480,\n");
    const tw_diag *g = finding(&c, 2, "xfmr_z_percent");
    assert_non_null(g);
    assert_int_equal(g->severity, TW_WARNING);
    assert_int_equal(c.d.errors, 0);
    checked_free(&c);
}

/* 1445.7 mm computed: 1380 mm is 4.5 % closer (fine), 1370 mm 5.2 % closer (warning),
 * 1515 mm 4.8 % farther (fine), 1520 mm 5.1 % farther (warning). */
static void a_boundary_off_by_more_than_5pct_should_be_a_warning_naming_both(void **state)
{
    (void)state;
    checked c;
    run_checks(&c, PHYS_HEAD
               "T-A,S,2026-01-05,480,mcc,8,455,1380,1.641,,,,,,,,\n"
               "T-B,S,2026-01-05,480,mcc,8,455,1370,1.641,,,,,,,,\n"
               "T-C,S,2026-01-05,480,mcc,8,455,1515,1.641,,,,,,,,\n"
               "T-D,S,2026-01-05,480,mcc,8,455,1520,1.641,,,,,,,,\n");
    assert_null(finding(&c, 2, "arc_flash_boundary"));
    const tw_diag *g = finding(&c, 3, "arc_flash_boundary");
    assert_non_null(g);
    assert_int_equal(g->severity, TW_WARNING);
    assert_non_null(strstr(g->message, "stated 1370 mm"));
    assert_non_null(strstr(g->message, "1446 mm"));
    assert_null(finding(&c, 4, "arc_flash_boundary"));
    assert_non_null(finding(&c, 5, "arc_flash_boundary"));
    assert_int_equal(c.d.errors, 0);
    checked_free(&c);
}

/* No distance_exponent column value: the IEEE 1584-2002 Table 4 default for the type is used.
 * Switchgear at 480 V, x 1.473: 4.8 cal/cm2 at 610 mm gives 1563.4 mm. */
static void the_boundary_check_should_use_the_default_exponent_for_the_type(void **state)
{
    (void)state;
    checked c;
    run_checks(&c, PHYS_HEAD
               "T-A,S,2026-01-05,480,switchgear,4.8,610,1564,,,,,,,,,\n"
               "T-B,S,2026-01-05,480,switchgear,4.8,610,1300,,,,,,,,,\n"
               "T-C,S,2026-01-05,480,busway,4.8,610,1300,,,,,,,,,\n");
    assert_null(finding(&c, 2, "arc_flash_boundary"));
    const tw_diag *g = finding(&c, 3, "arc_flash_boundary");
    assert_non_null(g);
    assert_non_null(strstr(g->message, "IEEE 1584-2002 Table 4"));
    assert_null(finding(&c, 4, "arc_flash_boundary")); /* unknown type: no check */
    checked_free(&c);
}

/* IEEE 1584-2018 ranges: 13.8 kV with a 10 mm gap and 70 kA; 480 V at 250 mm working
 * distance; 120 V is outside the model. */
static void values_outside_the_ieee1584_2018_ranges_should_be_warnings(void **state)
{
    (void)state;
    checked c;
    run_checks(&c, PHYS_HEAD
               "T-A,S,2026-01-05,13800,switchgear,8,910,2000,,70,60,0.2,10,,,,\n"
               "T-B,S,2026-01-05,480,mcc,8,250,795,1.641,30,15,0.1,25,,,,\n"
               "T-C,S,2026-01-05,120,panelboard,1.5,455,520,1.641,5,2,0.1,25,,,,\n"
               "T-D,S,2026-01-05,480,mcc,8,455,1446,1.641,106,50,0.1,76.2,,,,\n");
    assert_non_null(finding(&c, 2, "gap_mm"));
    assert_non_null(finding(&c, 2, "bolted_fault_ka"));
    assert_non_null(finding(&c, 3, "working_distance"));
    assert_non_null(finding(&c, 4, "nominal_voltage_v"));
    assert_int_equal(finding(&c, 4, "nominal_voltage_v")->severity, TW_WARNING);
    assert_null(finding(&c, 5, "bolted_fault_ka")); /* 106 kA and 76.2 mm: at the limits */
    assert_null(finding(&c, 5, "gap_mm"));
    checked_free(&c);
}

static void arcing_current_not_below_bolted_should_be_a_warning(void **state)
{
    (void)state;
    checked c;
    run_checks(&c, PHYS_HEAD
               "T-A,S,2026-01-05,480,mcc,8,455,1446,1.641,20,19.9,0.1,25,,,,\n"
               "T-B,S,2026-01-05,480,mcc,8,455,1446,1.641,20,20,0.1,25,,,,\n");
    assert_null(finding(&c, 2, "arcing_current_ka"));
    const tw_diag *g = finding(&c, 3, "arcing_current_ka");
    assert_non_null(g);
    assert_int_equal(g->severity, TW_WARNING);
    checked_free(&c);
}

/* Common practice: 2 s. */
static void a_clearing_time_above_2s_should_be_a_warning(void **state)
{
    (void)state;
    checked c;
    run_checks(&c, PHYS_HEAD
               "T-A,S,2026-01-05,480,mcc,8,455,1446,1.641,20,12,2.0,25,,,,\n"
               "T-B,S,2026-01-05,480,mcc,8,455,1446,1.641,20,12,2.01,25,,,,\n");
    assert_null(finding(&c, 2, "clearing_time_s"));
    const tw_diag *g = finding(&c, 3, "clearing_time_s");
    assert_non_null(g);
    assert_int_equal(g->severity, TW_WARNING);
    assert_non_null(strstr(g->message, "common practice"));
    assert_int_equal(c.d.errors, 0);
    checked_free(&c);
}

/* ---- a missing boundary computed on the label (label.c) ----------------------------------- */

/* An MCC at 480 V without a boundary or a distance_exponent: the IEEE 1584-2002 Table 4 value
 * for an MCC, 1.641, is used: 455 x (8 / 1.2)^(1 / 1.641) = 1445.73 mm, printed rounded up;
 * the note names the exponent and its source, and the canonical form (which the manifest
 * stores as the label's content) carries the note. */
static void a_missing_boundary_should_be_computed_with_the_default_exponent_and_say_so(void **s)
{
    (void)s;
    checked c;
    run_checks(&c, PHYS_HEAD "T-MCC,S,2026-01-05,480,mcc,8,455,,,,,,,,,,\n");
    tw_site site;
    assert_int_equal(tw_site_defaults(&site), 0);
    tw_label l;
    tw_label_derive(&c.s.buses[0], &site, "2026-02-01", &l, NULL);
    assert_near(l.boundary_mm, 1446, 1e-9);
    assert_string_equal(l.value[TW_L_ARC_FLASH_BOUNDARY], "4 ft 9 in (1446 mm)");
    assert_string_equal(l.value[TW_L_BOUNDARY_NOTE], "computed from incident energy, distance "
                        "exponent 1.641 (IEEE 1584-2002 Table 4, mcc)");
    char *canon = tw_label_canonical(&l);
    assert_non_null(canon);
    assert_non_null(strstr(canon, "boundary_note=computed from incident energy"));
    free(canon);
    tw_label_free(&l);
    tw_site_free(&site);
    checked_free(&c);
}

/* Without an exponent and with a type the table does not know, nothing is computed. */
static void a_missing_boundary_should_stay_missing_without_any_exponent(void **s)
{
    (void)s;
    checked c;
    run_checks(&c, PHYS_HEAD "T-BW,S,2026-01-05,480,busway,8,455,,,,,,,,,,\n");
    tw_site site;
    assert_int_equal(tw_site_defaults(&site), 0);
    tw_label l;
    assert_int_equal(tw_label_derive(&c.s.buses[0], &site, "2026-02-01", &l, NULL), -1);
    assert_null(l.value[TW_L_ARC_FLASH_BOUNDARY]);
    assert_null(l.value[TW_L_BOUNDARY_NOTE]);
    tw_label_free(&l);
    tw_site_free(&site);
    checked_free(&c);
}

#define FT(name) cmocka_unit_test_setup_teardown(name, setup_fixture, teardown_fixture)

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(infinite_bus_should_match_the_1500kva_480v_textbook_example),
        cmocka_unit_test(infinite_bus_should_be_55514a_for_1000kva_208v_5pct),
        cmocka_unit_test(infinite_bus_should_be_5783a_for_2500kva_4160v_6pct),
        cmocka_unit_test(infinite_bus_should_refuse_zero_negative_and_nan_inputs),
        cmocka_unit_test(impedance_should_split_by_x_over_r),
        cmocka_unit_test(boundary_should_match_hand_computations),
        cmocka_unit_test(boundary_should_equal_working_distance_at_1_2_cal),
        cmocka_unit_test(boundary_should_be_nan_for_unusable_inputs),
        cmocka_unit_test(exponent_should_follow_ieee1584_2002_table_4),
        cmocka_unit_test(exponent_should_be_unknown_outside_the_table),
        cmocka_unit_test(ranges_should_follow_ieee1584_2018),
        FT(envelope_should_govern_with_the_highest_energy),
        FT(envelope_should_find_the_rise_below_23_86ka),
        FT(envelope_should_not_call_a_falling_sweep_a_rise),
        FT(envelope_should_ignore_rises_within_rounding),
        FT(envelope_should_find_the_lowest_adequate_source_current),
        FT(envelope_should_meet_a_target_above_every_scenario),
        FT(envelope_should_round_energy_up_before_comparing),
        FT(envelope_should_count_scenarios_without_source_current_for_the_target),
        FT(envelope_should_keep_the_worse_of_equal_currents),
        FT(envelope_should_handle_a_bus_with_only_a_ppe_category),
        FT(envelope_should_accept_an_empty_bus_and_free_twice),
        cmocka_unit_test(bolted_current_above_the_infinite_bus_limit_should_be_an_error),
        cmocka_unit_test(motor_contribution_should_raise_the_limit),
        cmocka_unit_test(partial_transformer_data_should_be_a_warning),
        cmocka_unit_test(a_boundary_off_by_more_than_5pct_should_be_a_warning_naming_both),
        cmocka_unit_test(the_boundary_check_should_use_the_default_exponent_for_the_type),
        cmocka_unit_test(values_outside_the_ieee1584_2018_ranges_should_be_warnings),
        cmocka_unit_test(arcing_current_not_below_bolted_should_be_a_warning),
        cmocka_unit_test(a_clearing_time_above_2s_should_be_a_warning),
        cmocka_unit_test(a_missing_boundary_should_be_computed_with_the_default_exponent_and_say_so),
        cmocka_unit_test(a_missing_boundary_should_stay_missing_without_any_exponent),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
