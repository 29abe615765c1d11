#!/usr/bin/env python3
"""generate.py - write the invented example study for tagwright's demo and tests.

Everything here is fictional: the Quillfen Basin Water Reclamation Plant, its equipment IDs,
its utility and its people do not exist. The numbers are made physically consistent so that
tagwright's cross-checks pass on the good files and fire on the broken one:

  * fault currents come from a small impedance model of the invented one-line diagram
    (utility source, transformers, feeders), with the "infinite-bus" scenario taking every
    impedance above the bus's nearest transformer primary as zero;
  * bolted_fault_ka = source_fault_ka + motor_contribution_ka;
  * arcing current and incident energy follow the IEEE 1584-2002 empirical equations
    (from memory, verify against the edition in force); they are used here only to make
    believable demo numbers, not as a study method;
  * arc_flash_boundary = D x (E / 1.2)^(1/x), written rounded up to 0.1 in.

Python 3 standard library only; deterministic (no clock, no randomness). Run from anywhere:

    python3 example-jobs/generate.py

and commit the generated files together with this script.
"""

import csv
import json
import math
import os

HERE = os.path.dirname(os.path.abspath(__file__))

SITE_NAME = "Quillfen Basin Water Reclamation Plant"
SITE_SLUG = "quillfen-basin-wrp"
STUDY_ID = "QB-AF-2026-R3"
STUDY_DATE = "2026-09-15"
OLD_STUDY_ID = "QB-AF-2021-R2"
OLD_STUDY_DATE = "2021-03-01"

COLUMNS = [
    "equipment_id", "description", "location", "study_id", "study_date", "scenario",
    "nominal_voltage_v", "equipment_type", "electrode_config", "gap_mm", "working_distance_in",
    "incident_energy_cal_cm2", "arc_flash_boundary_in", "distance_exponent", "source_fault_ka",
    "bolted_fault_ka", "arcing_current_ka", "clearing_time_s", "protective_device",
    "service_equipment", "service_rating_a", "xfmr_kva", "xfmr_z_percent", "xfmr_secondary_v",
    "motor_contribution_ka",
]

# --- Equipment classes --------------------------------------------------------------------
# Working distance: IEEE 1584-2002 Table 3 typical working distances (from memory, verify
# against the edition in force): 910 mm (36 in) for 5 kV and 15 kV switchgear, 610 mm (24 in)
# for LV switchgear, 455 mm (18 in) for LV MCCs and panelboards. Switchboards are treated like
# LV switchgear here (common practice).
# Distance exponent: IEEE 1584-2002 Table 4 (from memory): switchgear <= 1 kV 1.473,
# MCC/panelboard <= 1 kV 1.641, switchgear 1-15 kV 0.973.
# Gap: IEEE 1584-2002 Table 2 typical bus gaps (from memory): 15 kV switchgear 153 mm, 5 kV
# switchgear 102 mm, LV switchgear 32 mm, LV MCCs and panelboards 25 mm.
CLASSES = {
    "mv15-swgr": dict(equipment_type="switchgear", wd_in=36, x=0.973, gap=153),
    "mv5-swgr": dict(equipment_type="switchgear", wd_in=36, x=0.973, gap=102),
    "lv-swgr": dict(equipment_type="switchgear", wd_in=24, x=1.473, gap=32),
    "lv-swbd": dict(equipment_type="switchboard", wd_in=24, x=1.473, gap=32),
    "lv-mcc": dict(equipment_type="mcc", wd_in=18, x=1.641, gap=25),
    "lv-panel": dict(equipment_type="panelboard", wd_in=18, x=1.641, gap=25),
}

# Realistic ranges for the governing (label) incident energy, cal/cm2, by kind of bus.
ENERGY_RANGE = {
    "mv": (2.0, 15.0),
    "480-gear": (4.0, 40.0),
    "480-mcc": (5.0, 25.0),
    "480-panel": (2.0, 12.0),
    "208-panel": (0.5, 2.0),
}
DANGER_ABOVE = 40.0  # site.json danger_above_cal_cm2 and the highest PPE kit

# --- One-line diagram ---------------------------------------------------------------------
# Sources: a 115 kV utility transmission supply for the main substation and a 12.47 kV utility
# distribution feeder for the three separately served buildings. Short-circuit MVA at maximum
# and minimum utility generation.
SOURCES = {
    "GRID-115": dict(v=115000.0, mva_max=2600.0, mva_min=1100.0),
    "GRID-12": dict(v=12470.0, mva_max=260.0, mva_min=140.0),
}

# Every node: parent, how it is fed (xfmr: kva, z%; cable: ohms at this node's voltage),
# voltage. Buses are the nodes that carry a "bus" entry.
#
# Protective device models (clearing time as seen by an arcing fault on the bus):
#   fixed:   definite-time relay plus breaker, or a short-time band without instantaneous
#   step:    breaker with an instantaneous pickup (kA of arcing current): t_fast at or above,
#            t_slow below (short-time or long-time region)
#   inverse: fuse in its time-current region, t = k / Ia^2 (clipped to 0.02-2.0 s)

def bus(eid, cls, desc, loc, device, dev_text, motor=0.0, service=None, sweep=False):
    return dict(eid=eid, cls=cls, desc=desc, loc=loc, device=device, dev_text=dev_text,
                motor=motor, service=service, sweep=sweep)


NODES = {}


def node(name, parent, v, feed, b=None):
    NODES[name] = dict(name=name, parent=parent, v=float(v), feed=feed, bus=b)


def build_one_line(old=False):
    """The plant as studied in 2026 (old=False) or in the 2021 revision (old=True)."""
    NODES.clear()
    hwk_kva = 1500 if old else 2000           # headworks unit substation replaced in 2024
    aer_std = 0.42 if old else 0.32           # aeration main short-time band lowered in 2025

    node("QB-MSS-SG01", "GRID-115", 13800, ("xfmr", 30000, 7.5),
         bus("QB-MSS-SG01", "mv15-swgr", "13.8 kV main switchgear, service entrance",
             "Main Substation, Switchgear Room", ("fixed", 0.38),
             "Main breaker 52-M1, relay 51 definite time 0.30 s + 5-cycle breaker",
             motor=0.35, service=1200))
    node("QB-AER-SG11", "QB-MSS-SG01", 13800, ("cable", 0.06),
         bus("QB-AER-SG11", "mv15-swgr", "13.8 kV switchgear, aeration substation",
             "Aeration Substation, Room 12", ("fixed", 0.30),
             "Feeder breaker 52-F2 (QB-MSS-SG01), relay 51 definite time 0.22 s + 5-cycle breaker",
             motor=0.30))
    node("QB-AER-SG41", "QB-AER-SG11", 4160, ("xfmr", 7500, 6.5),
         bus("QB-AER-SG41", "mv5-swgr", "4.16 kV blower switchgear",
             "Aeration Substation, Room 14", ("fixed", 0.48),
             "Main breaker 52-A41M, relay 51 definite time 0.40 s + 5-cycle breaker",
             motor=1.60, sweep=True))
    node("QB-EFP-SG41", "QB-MSS-SG01", 4160, ("xfmr", 5000, 6.0),
         bus("QB-EFP-SG41", "mv5-swgr", "4.16 kV effluent pump switchgear",
             "Effluent Pump Station, Electrical Room", ("fixed", 0.35),
             "Main breaker 52-E41M, relay 51 definite time 0.27 s + 5-cycle breaker",
             motor=1.10))

    # Headworks: the main bus is cleared only by the 13.8 kV primary fuse (DANGER bus).
    node("QB-HWK-SG01", "QB-MSS-SG01", 480, ("xfmr", hwk_kva, 5.75),
         bus("QB-HWK-SG01", "lv-swgr", "480 V switchgear, headworks unit substation, main bus",
             "Headworks Building, Electrical Room 101", ("fixed", 1.10),
             "13.8 kV primary fuse 125E (transformer T-HWK1), line side of main breaker",
             motor=2.20))
    node("QB-HWK-MC01", "QB-HWK-SG01", 480, ("cable", 0.0020),
         bus("QB-HWK-MC01", "lv-mcc", "MCC, screens and grit pumps",
             "Headworks Building, Electrical Room 101", ("step", 14.0, 0.05, 0.35),
             "Feeder breaker HWK-SG01-F3, 800 A LSI, instantaneous 14 kA",
             motor=1.10, sweep=True))
    node("QB-HWK-MC02", "QB-HWK-SG01", 480, ("cable", 0.0045),
         bus("QB-HWK-MC02", "lv-mcc", "MCC, odour control fans",
             "Headworks Building, Odour Control Room", ("fixed", 0.20),
             "Feeder breaker HWK-SG01-F5, 400 A LS, short-time band 0.18 s", motor=0.45))
    node("QB-HWK-PP01", "QB-HWK-SG01", 480, ("cable", 0.0080),
         bus("QB-HWK-PP01", "lv-panel", "480 V power panel, headworks",
             "Headworks Building, Corridor 104", ("inverse", 18.0),
             "Fused switch HWK-SG01-F7, 200 A class J fuse"))
    node("QB-HWK-LP01", "QB-HWK-PP01", 208, ("xfmr", 45, 3.5),
         bus("QB-HWK-LP01", "lv-panel", "208Y/120 V lighting and receptacle panel",
             "Headworks Building, Corridor 104", ("fixed", 0.25),
             "Panel main breaker 150 A, long-time region"))

    # Aeration 480 V: main breaker without instantaneous (short-time band), several feeders.
    node("QB-AER-SG01", "QB-AER-SG11", 480, ("xfmr", 2500, 5.75),
         bus("QB-AER-SG01", "lv-swgr", "480 V switchgear, aeration unit substation",
             "Aeration Substation, Room 12", ("fixed", aer_std),
             "Main breaker AER-SG01-M, 3200 A LS, short-time band %.2f s" % (aer_std - 0.02),
             motor=2.80, sweep=True))
    node("QB-AER-MC01", "QB-AER-SG01", 480, ("cable", 0.0022),
         bus("QB-AER-MC01", "lv-mcc", "MCC, mixers and RAS valves",
             "Aeration Basin 1, Gallery", ("fixed", 0.25),
             "Feeder breaker AER-SG01-F2, 600 A LS, short-time band 0.22 s", motor=0.90))
    node("QB-AER-MC02", "QB-AER-SG01", 480, ("cable", 0.0030),
         bus("QB-AER-MC02", "lv-mcc", "MCC, basin 2 auxiliaries",
             "Aeration Basin 2, Gallery", ("inverse", 55.0),
             "Fused switch AER-SG01-F4, 400 A class RK1 fuse", motor=0.70))
    node("QB-AER-PP01", "QB-AER-SG01", 480, ("cable", 0.0100),
         bus("QB-AER-PP01", "lv-panel", "480 V power panel, blower auxiliaries",
             "Aeration Substation, Room 12", ("step", 12.0, 0.05, 0.25),
             "Feeder breaker AER-SG01-F6, 225 A LSI, instantaneous 12 kA"))

    # Dewatering / clarifiers 480 V switchboard.
    node("QB-DWT-SB01", "QB-MSS-SG01", 480, ("xfmr", 1500, 5.75),
         bus("QB-DWT-SB01", "lv-swbd", "480 V switchboard, dewatering building",
             "Dewatering Building, Electrical Room 2", ("fixed", 0.45),
             "Main breaker DWT-SB01-M, 2000 A LS, short-time band 0.42 s", motor=1.40))
    node("QB-DWT-MC01", "QB-DWT-SB01", 480, ("cable", 0.0025),
         bus("QB-DWT-MC01", "lv-mcc", "MCC, centrifuges and polymer feed",
             "Dewatering Building, Electrical Room 2", ("fixed", 0.15),
             "Feeder breaker DWT-SB01-F1, 800 A LS, short-time band 0.12 s", motor=1.00))
    # Clarifier MCC: long cable, feeder without instantaneous, slow long-time clearing (DANGER).
    node("QB-CLR-MC01", "QB-DWT-SB01", 480, ("cable", 0.0035),
         bus("QB-CLR-MC01", "lv-mcc", "MCC, clarifier drives and scum pumps, no instantaneous",
             "Clarifier Gallery, Electrical Alcove", ("fixed", 1.00),
             "Feeder breaker DWT-SB01-F3, 400 A LS (no instantaneous), long-time region",
             motor=0.60))
    node("QB-CLR-PP01", "QB-DWT-SB01", 480, ("cable", 0.0050),
         bus("QB-CLR-PP01", "lv-panel", "480 V power panel, clarifier area",
             "Clarifier Gallery, Electrical Alcove", ("step", 8.0, 0.05, 0.35),
             "Feeder breaker DWT-SB01-F5, 400 A LSI, instantaneous 8 kA", sweep=True))

    # UV disinfection (added after 2021).
    if not old:
        node("QB-UVD-SB01", "QB-MSS-SG01", 480, ("xfmr", 1000, 5.75),
             bus("QB-UVD-SB01", "lv-swbd", "480 V switchboard, UV disinfection",
                 "UV Building, Electrical Room", ("inverse", 60.0),
                 "13.8 kV primary fuse 65E (transformer T-UVD1)", motor=0.50, sweep=True))
        node("QB-UVD-MC01", "QB-UVD-SB01", 480, ("cable", 0.0030),
             bus("QB-UVD-MC01", "lv-mcc", "MCC, UV banks 1-4 and channel gates",
                 "UV Building, Electrical Room", ("step", 10.4, 0.05, 0.40),
                 "Feeder breaker UVD-SB01-F1, 600 A LSI, instantaneous 10.4 kA", motor=0.40))
        node("QB-UVD-LP01", "QB-UVD-SB01", 208, ("xfmr", 45, 3.0),
             bus("QB-UVD-LP01", "lv-panel", "208Y/120 V panel, UV controls",
                 "UV Building, Control Room", ("fixed", 0.28),
                 "Panel main breaker 125 A, long-time region"))
    else:
        # Retired in 2023 when the old chlorine contact tank was demolished.
        node("QB-CCT-PP01", "QB-DWT-SB01", 480, ("cable", 0.0060),
             bus("QB-CCT-PP01", "lv-panel", "480 V power panel, chlorine contact tank",
                 "Chlorine Building, Room 3", ("fixed", 0.10),
                 "Feeder breaker DWT-SB01-F6, 225 A LSI, instantaneous region (6-cycle breaker)"))

    # Separately served buildings (utility-owned pad-mount transformers).
    node("QB-ADM-SB01", "GRID-12", 480, ("xfmr", 1500, 5.5),
         bus("QB-ADM-SB01", "lv-swbd", "480 V service switchboard, administration and laboratory",
             "Administration Building, Room B05", ("step", 16.0, 0.05, 0.40),
             "Service main breaker ADM-SB01-M, 2000 A LSI, instantaneous 16 kA",
             motor=0.30, service=2000))
    node("QB-ADM-PP01", "QB-ADM-SB01", 480, ("cable", 0.0060),
         bus("QB-ADM-PP01", "lv-panel", "480 V power panel, HVAC and laboratory",
             "Administration Building, Room B05", ("fixed", 0.10),
             "Feeder breaker ADM-SB01-F2, 400 A LSI, instantaneous region (6-cycle breaker)"))
    node("QB-ADM-LP01", "QB-ADM-PP01", 208, ("xfmr", 112.5, 4.0),
         bus("QB-ADM-LP01", "lv-panel", "208Y/120 V panel, laboratory benches",
             "Administration Building, Laboratory 110", ("fixed", 0.12),
             "Panel main breaker 400 A, instantaneous region"))
    node("QB-ADM-LP02", "QB-ADM-PP01", 208, ("xfmr", 75, 3.5),
         bus("QB-ADM-LP02", "lv-panel", "208Y/120 V panel, offices",
             "Administration Building, Room 121", ("fixed", 0.15),
             "Panel main breaker 225 A, short-time region"))

    node("QB-RAS-SB01", "GRID-12", 480, ("xfmr", 2000, 5.75),
         bus("QB-RAS-SB01", "lv-swbd", "480 V service switchboard, return sludge pump station",
             "RAS Pump Station, Electrical Room", ("step", 24.0, 0.05, 0.40),
             "Service main breaker RAS-SB01-M, 3000 A LSI, instantaneous 24 kA",
             motor=1.80, service=3000))
    node("QB-RAS-MC01", "QB-RAS-SB01", 480, ("cable", 0.0020),
         bus("QB-RAS-MC01", "lv-mcc", "MCC, RAS and WAS pumps",
             "RAS Pump Station, Electrical Room", ("fixed", 0.20),
             "Feeder breaker RAS-SB01-F1, 1200 A LS, short-time band 0.18 s", motor=1.20))

    node("QB-MNT-SB01", "GRID-12", 480, ("xfmr", 500, 4.5),
         bus("QB-MNT-SB01", "lv-swbd", "480 V service switchboard, maintenance shop",
             "Maintenance Shop, Electrical Room", ("step", 8.0, 0.05, 0.30),
             "Service main breaker MNT-SB01-M, 800 A LSI, instantaneous 8 kA",
             motor=0.20, service=800))
    node("QB-MNT-PP01", "QB-MNT-SB01", 480, ("cable", 0.0045),
         bus("QB-MNT-PP01", "lv-panel", "480 V power panel, shop machines, welding receptacles",
             "Maintenance Shop, Bay 2", ("fixed", 0.30),
             "Feeder breaker MNT-SB01-F2, 225 A LSI, short-time band 0.27 s"))
    node("QB-MNT-LP01", "QB-MNT-PP01", 208, ("xfmr", 75, 3.5),
         bus("QB-MNT-LP01", "lv-panel", "208Y/120 V panel, shop lighting and receptacles",
             "Maintenance Shop, Bay 2", ("fixed", 0.20),
             "Panel main breaker 225 A, short-time region"))


# --- Short-circuit model ------------------------------------------------------------------

def z_ohms(name, scenario):
    """Thevenin impedance magnitude (ohms, at the node's voltage) seen from a fault at name.

    scenario: "max", "min" or "inf" (every impedance above the nearest transformer primary
    of this node is zero). Impedance magnitudes are added arithmetically, which overstates
    the total a little; good enough for invented data."""
    n = NODES[name]
    kind = n["feed"][0]
    if kind == "cable":
        return n["feed"][1] + z_ohms(n["parent"], scenario)
    _, kva, zpct = n["feed"]
    v = n["v"]
    z_x = zpct / 100.0 * v * v / (kva * 1000.0)
    if scenario == "inf":
        return z_x
    return z_x + upstream_ohms(n["parent"], scenario) * (v / node_v(n["parent"])) ** 2


def upstream_ohms(name, scenario):
    """Impedance of the supply at a transformer's primary node (max or min utility)."""
    if name in SOURCES:
        s = SOURCES[name]
        mva = s["mva_max"] if scenario == "max" else s["mva_min"]
        return s["v"] ** 2 / (mva * 1e6)
    return z_ohms(name, scenario)


def node_v(name):
    return SOURCES[name]["v"] if name in SOURCES else NODES[name]["v"]


def fault_ka(name, scenario):
    v = NODES[name]["v"]
    return v / (math.sqrt(3.0) * z_ohms(name, scenario)) / 1000.0


def xfmr_infinite_ka(kva, v, zpct):
    """Transformer-limited (infinite primary bus) three-phase fault current, kA."""
    return kva * 1000.0 / (math.sqrt(3.0) * v) * 100.0 / zpct / 1000.0


# --- IEEE 1584-2002 empirical model (from memory, verify against the edition in force) ----

def arcing_ka(ibf, v, gap):
    kv = v / 1000.0
    lg = math.log10(ibf)
    if kv < 1.0:
        k = -0.097  # enclosed (box)
        lga = (k + 0.662 * lg + 0.0966 * kv + 0.000526 * gap + 0.5588 * kv * lg
               - 0.00304 * gap * lg)
    else:
        lga = 0.00402 + 0.983 * lg
    return 10.0 ** lga


def energy_cal(ia, v, gap, t, d_mm, x):
    k1, k2 = -0.555, -0.113  # enclosed, solidly grounded
    en = 10.0 ** (k1 + k2 + 1.081 * math.log10(ia) + 0.0011 * gap)  # J/cm2 at 610 mm, 0.2 s
    cf = 1.5 if v <= 1000.0 else 1.0
    return cf * en * (t / 0.2) * (610.0 / d_mm) ** x  # cal/cm2 (4.184 J/cal cancels)


def clearing_s(device, ia):
    kind = device[0]
    if kind == "fixed":
        t = device[1]
    elif kind == "step":
        _, pickup, fast, slow = device
        t = fast if ia >= pickup else slow
    else:
        t = min(2.0, max(0.02, device[1] / (ia * ia)))
    assert 0.02 <= t <= 2.0, (device, ia, t)
    return t


# --- Rounding (written values) -------------------------------------------------------------

def floor2(x):
    return math.floor(x * 100.0) / 100.0


def ceil2(x):
    return math.ceil(x * 100.0 - 1e-9) / 100.0


def ceil1(x):
    return math.ceil(x * 10.0 - 1e-9) / 10.0


def f2(x):
    return "%.2f" % x


def boundary_in(d_in, e, x):
    return d_in * (e / 1.2) ** (1.0 / x)


# --- Rows ---------------------------------------------------------------------------------

SWEEP = [("source-90", 0.9), ("source-80", 0.8), ("source-70", 0.7), ("source-60", 0.6),
         ("source-50", 0.5)]


def bus_rows(name, study_id, study_date):
    n = NODES[name]
    b = n["bus"]
    c = CLASSES[b["cls"]]
    v = n["v"]
    motor = round(b["motor"], 2)
    src = {"utility-max": fault_ka(name, "max"), "utility-min": fault_ka(name, "min"),
           "infinite-bus": fault_ka(name, "inf")}
    order = ["utility-max", "utility-min", "infinite-bus"]
    if b["sweep"]:
        for scen, k in SWEEP:
            src[scen] = src["utility-max"] * k
            order.append(scen)
    xfmr = n["feed"] if n["feed"][0] == "xfmr" else None
    rows = []
    for scen in order:
        source = floor2(src[scen])
        bolted = round(source + motor, 2)
        ia = arcing_ka(bolted, v, c["gap"])
        t = clearing_s(b["device"], ia)
        e = ceil2(energy_cal(ia, v, c["gap"], t, c["wd_in"] * 25.4, c["x"]))
        afb = ceil1(boundary_in(c["wd_in"], e, c["x"]))
        row = {
            "equipment_id": b["eid"], "description": b["desc"], "location": b["loc"],
            "study_id": study_id, "study_date": study_date, "scenario": scen,
            "nominal_voltage_v": "%d" % v, "equipment_type": c["equipment_type"],
            "electrode_config": "VCB", "gap_mm": "%d" % c["gap"],
            "working_distance_in": "%d" % c["wd_in"], "incident_energy_cal_cm2": f2(e),
            "arc_flash_boundary_in": "%.1f" % afb, "distance_exponent": "%.3f" % c["x"],
            "source_fault_ka": f2(source), "bolted_fault_ka": f2(bolted),
            "arcing_current_ka": f2(ia), "clearing_time_s": "%.3f" % t,
            "protective_device": b["dev_text"],
            "service_equipment": "yes" if b["service"] else "no",
            "service_rating_a": "%d" % b["service"] if b["service"] else "",
            "xfmr_kva": ("%g" % xfmr[1]) if xfmr else "",
            "xfmr_z_percent": ("%g" % xfmr[2]) if xfmr else "",
            "xfmr_secondary_v": ("%d" % v) if xfmr else "",
            "motor_contribution_ka": f2(motor),
        }
        check_row(row, b, xfmr)
        rows.append(row)
    check_bus(rows, b)
    return rows


# --- Consistency rules (the same ones tagwright cross-checks) -----------------------------

def num(row, key):
    return float(row[key])


def check_row(row, b, xfmr):
    eid, scen = row["equipment_id"], row["scenario"]
    where = "%s %s" % (eid, scen)
    v = num(row, "nominal_voltage_v")
    d, e, x = num(row, "working_distance_in"), num(row, "incident_energy_cal_cm2"), \
        num(row, "distance_exponent")
    afb = num(row, "arc_flash_boundary_in")
    exact = boundary_in(d, e, x)
    assert exact <= afb <= exact * 1.01, (where, "boundary", afb, exact)
    bolted, source, motor = num(row, "bolted_fault_ka"), num(row, "source_fault_ka"), \
        num(row, "motor_contribution_ka")
    assert abs(bolted - (source + motor)) < 0.005, (where, "bolted = source + motor")
    ia = num(row, "arcing_current_ka")
    ratio = ia / bolted
    if v <= 1000:
        assert 0.40 <= ratio <= 0.67, (where, "LV arcing/bolted", ratio)
    else:
        assert 0.85 <= ratio < 1.0, (where, "MV arcing/bolted", ratio)
    t = num(row, "clearing_time_s")
    assert 0.02 <= t <= 2.0, (where, "clearing time", t)
    assert 0.1 <= e <= 100.0, (where, "energy", e)
    if xfmr:
        limit = xfmr_infinite_ka(xfmr[1], v, xfmr[2]) + motor
        assert bolted <= limit, (where, "bolted above transformer infinite bus", bolted, limit)
        if scen == "infinite-bus":
            assert bolted >= 0.99 * limit, (where, "infinite-bus not at the limit", bolted, limit)
        else:
            assert bolted < 0.995 * limit, (where, "utility case at the limit", bolted, limit)
    if b["service"]:
        assert row["service_equipment"] == "yes" and int(row["service_rating_a"]) > 0


def energy_class(row):
    v = num(row, "nominal_voltage_v")
    kind = row["equipment_type"]
    if v > 1000:
        return "mv"
    if v < 300:
        return "208-panel"
    return {"mcc": "480-mcc", "panelboard": "480-panel"}.get(kind, "480-gear")


def check_bus(rows, b):
    by = {r["scenario"]: r for r in rows}
    mx, mn, inf = by["utility-max"], by["utility-min"], by["infinite-bus"]
    # Behind a small transformer the utility's swing can vanish in the rounding to 0.01 kA.
    assert num(inf, "bolted_fault_ka") >= num(mx, "bolted_fault_ka") >= num(mn, "bolted_fault_ka"), \
        (b["eid"], "infinite >= utility-max >= utility-min")
    worst = max(num(r, "incident_energy_cal_cm2") for r in rows)
    lo, hi = ENERGY_RANGE[energy_class(rows[0])]
    if b["eid"] in DANGER_BUSES:
        assert worst > DANGER_ABOVE and energy_class(rows[0]).startswith("480"), \
            (b["eid"], "should be a DANGER bus", worst)
    else:
        assert lo <= worst <= hi, (b["eid"], "governing energy outside its range", worst, lo, hi)


DANGER_BUSES = {"QB-HWK-SG01", "QB-CLR-MC01"}
JUMP_BUSES = {"QB-HWK-MC01": "source-70", "QB-CLR-PP01": "source-60"}


def energy_jumps(rows):
    """Scenarios of the sweep where the source current fell and the energy rose by > 50 %."""
    sweep = [r for r in rows if r["scenario"] in ("utility-max",) + tuple(s for s, _ in SWEEP)]
    out = []
    for a, b in zip(sweep, sweep[1:]):
        if num(b, "source_fault_ka") < num(a, "source_fault_ka") and \
                num(b, "incident_energy_cal_cm2") > 1.5 * num(a, "incident_energy_cal_cm2"):
            out.append(b["scenario"])
    return out


# --- Writers ------------------------------------------------------------------------------

def write_csv(path, rows, columns=COLUMNS):
    with open(path, "w", newline="", encoding="utf-8") as f:
        w = csv.DictWriter(f, fieldnames=columns, lineterminator="\n")
        w.writeheader()
        for r in rows:
            w.writerow(r)


def json_value(key, text):
    if text == "":
        return None
    if key == "service_equipment":
        return text == "yes"
    if key in ("equipment_id", "description", "location", "study_id", "study_date", "scenario",
               "equipment_type", "electrode_config", "protective_device"):
        return text
    value = float(text)
    return int(value) if value.is_integer() and "." not in text else value


def write_json(path, rows, study_id, study_date):
    buses = []
    for r in rows:
        obj = {}
        for k in COLUMNS:
            if k in ("study_id", "study_date"):
                continue  # taken from the study object
            val = json_value(k, r[k])
            if val is not None:
                obj[k] = val
        buses.append(obj)
    doc = {"study": {"study_id": study_id, "study_date": study_date}, "buses": buses}
    with open(path, "w", encoding="utf-8") as f:
        json.dump(doc, f, indent=2)
        f.write("\n")


def study_rows(old):
    build_one_line(old=old)
    sid, sdate = (OLD_STUDY_ID, OLD_STUDY_DATE) if old else (STUDY_ID, STUDY_DATE)
    rows = []
    for name, n in NODES.items():
        if n["bus"]:
            if old and name not in OLD_BUSES:
                continue
            rows.extend(bus_rows(name, sid, sdate))
    return rows


# The 2021 revision covered fewer buses; QB-CCT-PP01 existed then and is gone now, and
# QB-UVD-SB01 exists now but not then.
OLD_BUSES = ["QB-MSS-SG01", "QB-HWK-SG01", "QB-HWK-MC01", "QB-HWK-PP01", "QB-AER-SG01",
             "QB-AER-MC01", "QB-DWT-SB01", "QB-ADM-SB01", "QB-CCT-PP01"]


def old_rows():
    rows = [r for r in study_rows(old=True)
            if r["scenario"] in ("utility-max", "utility-min", "infinite-bus")]
    return rows


def broken_rows(good):
    """A small file with one deliberate fault per bus (see README.md in this directory)."""
    pick = {(r["equipment_id"], r["scenario"]): dict(r) for r in good}
    rows = []
    ok = pick[("QB-MNT-PP01", "utility-max")]                 # a clean row
    rows.append(ok)
    r = pick[("QB-HWK-PP01", "utility-max")]
    r["arc_flash_boundary_in"] = ""                           # missing boundary
    rows.append(r)
    r = pick[("QB-AER-PP01", "utility-max")]
    r["incident_energy_cal_cm2"] = "-" + r["incident_energy_cal_cm2"]  # negative energy
    rows.append(r)
    r = pick[("QB-DWT-MC01", "utility-max")]
    r["bolted_fault_ka"] = "21.4O"                            # letter O, not a zero
    rows.append(r)
    r = pick[("QB-ADM-PP01", "utility-max")]
    r["study_date"] = "2026-02-30"                            # no such day
    rows.append(r)
    r = pick[("QB-ADM-LP02", "utility-max")]
    rows.append(dict(r))
    r2 = dict(r)
    r2["description"] = r["description"] + " (entered twice)"
    rows.append(r2)                                           # duplicate ID in one scenario
    r = pick[("QB-MNT-LP01", "utility-max")]
    r["nominal_voltage_v"] = "30"                             # below any table
    rows.append(r)
    for r in rows:
        r["panel_colour"] = "ANSI 61 grey"                    # unknown column
    return rows


def main():
    rows = study_rows(old=False)
    buses = []
    for r in rows:
        if r["equipment_id"] not in buses:
            buses.append(r["equipment_id"])
    assert 25 <= len(buses) <= 35, len(buses)
    volts = sorted({r["nominal_voltage_v"] for r in rows}, key=float)
    assert volts == ["208", "480", "4160", "13800"], volts
    services = {r["equipment_id"]: int(r["service_rating_a"]) for r in rows
                if r["service_equipment"] == "yes"}
    assert sum(1 for a in services.values() if 1200 <= a <= 4000) >= 2, services
    assert 800 in services.values(), services

    by_bus = {}
    for r in rows:
        by_bus.setdefault(r["equipment_id"], []).append(r)
    sweep_buses = [b for b, rs in by_bus.items() if any(r["scenario"] == "source-50" for r in rs)]
    assert 4 <= len(sweep_buses) <= 5, sweep_buses
    for b in sweep_buses:
        jumps = energy_jumps(by_bus[b])
        want = [JUMP_BUSES[b]] if b in JUMP_BUSES else []
        assert jumps == want, (b, jumps, want)
    seen = set()
    for r in rows:
        key = (r["equipment_id"], r["scenario"])
        assert key not in seen, key
        seen.add(key)

    write_csv(os.path.join(HERE, "results.csv"), rows)
    json_buses = ["QB-MSS-SG01", "QB-AER-SG11", "QB-AER-SG41", "QB-EFP-SG41", "QB-HWK-MC01",
                  "QB-ADM-SB01", "QB-ADM-PP01", "QB-ADM-LP01", "QB-ADM-LP02"]
    write_json(os.path.join(HERE, "results.json"),
               [r for r in rows if r["equipment_id"] in json_buses], STUDY_ID, STUDY_DATE)

    old = old_rows()
    old_ids = {r["equipment_id"] for r in old}
    assert "QB-CCT-PP01" in old_ids and "QB-CCT-PP01" not in by_bus
    assert "QB-UVD-SB01" in by_bus and "QB-UVD-SB01" not in old_ids
    write_csv(os.path.join(HERE, "results-2021.csv"), old)

    write_csv(os.path.join(HERE, "broken.csv"), broken_rows(rows), COLUMNS + ["panel_colour"])

    if os.environ.get("QB_VERBOSE"):
        for b, rs in by_bus.items():
            worst = max(rs, key=lambda r: float(r["incident_energy_cal_cm2"]))
            print("%-12s %5s %-11s %7s kA  worst %6s cal/cm2 (%s) t=%s" % (
                b, rs[0]["nominal_voltage_v"], rs[0]["equipment_type"],
                rs[0]["bolted_fault_ka"], worst["incident_energy_cal_cm2"], worst["scenario"],
                worst["clearing_time_s"]))
    print("generate.py: %d buses, %d rows in results.csv; %d rows in results-2021.csv" % (
        len(by_bus), len(rows), len(old)))


if __name__ == "__main__":
    main()
