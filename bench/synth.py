#!/usr/bin/env python3
"""synth.py - write a deterministic, fictional arc-flash study results CSV for benchmarks.

    bench/synth.py BUSES OUT.csv [--seed N]

Every bus gets two scenarios (utility-max, utility-min) with physically plausible values:
  - nominal voltages 208, 480, 600 V and 4.16, 13.8 kV;
  - the IEEE 1584-2002 Table 4 distance exponent for the equipment class (from memory, verify
    against the edition in force): 1.473 LV switchgear/switchboards, 1.641 LV MCCs and
    panelboards, 0.973 switchgear 1-15 kV;
  - working distances in the common practice range: 18 in for panelboards and MCCs, 24 in for
    LV switchboards, 36 in for medium-voltage switchgear;
  - the arc-flash boundary D x (E / 1.2)^(1/x), where E is the incident energy at working
    distance D (the definition of the boundary: the distance at which the energy falls to
    1.2 cal/cm2), rounded up to 0.1 in;
  - arcing current below the bolted fault current, clearing times 0.02-0.5 s.
The site is fictional (equipment IDs BN-<area>-<kind><number>, study BN-AF-BENCH). The same
BUSES and seed give the same file byte for byte (random.Random is seeded; no clock, no
environment).
"""
import argparse
import random

KINDS = [
    # kind, equipment_type, volts, working distance in, exponent, energy range cal/cm2
    ("PNL", "panelboard", 208, 18, 1.641, (0.4, 3.9)),
    ("PNL", "panelboard", 480, 18, 1.641, (1.5, 11.0)),
    ("MCC", "mcc", 480, 18, 1.641, (2.0, 24.0)),
    ("MCC", "mcc", 600, 18, 1.641, (2.5, 30.0)),
    ("SWB", "switchboard", 480, 24, 1.473, (4.0, 38.0)),
    ("SWG", "switchgear", 4160, 36, 0.973, (1.5, 12.0)),
    ("SWG", "switchgear", 13800, 36, 0.973, (2.0, 9.5)),
]
AREAS = ["NORTH", "SOUTH", "PUMP", "FILT", "AER", "DIG", "ADMIN", "INTK"]
ROOMS = ["Electrical Room", "Pump Gallery", "Blower Building", "Filter Gallery", "Substation"]
HEADER = ("equipment_id,description,location,study_id,study_date,scenario,nominal_voltage_v,"
          "equipment_type,working_distance_in,incident_energy_cal_cm2,arc_flash_boundary_in,"
          "distance_exponent,bolted_fault_ka,arcing_current_ka,clearing_time_s,"
          "service_equipment,service_rating_a")


def boundary_in(distance_in, energy, exponent):
    afb = distance_in * (energy / 1.2) ** (1.0 / exponent)
    return int(afb * 10 + 0.999999) / 10.0  # rounded up to 0.1 in, toward safety


def rows_for(i, rng):
    kind, etype, volts, dist, x, (emin, emax) = KINDS[rng.randrange(len(KINDS))]
    area = AREAS[rng.randrange(len(AREAS))]
    eid = "BN-%s-%s%06d" % (area, kind, i + 1)
    desc = "%d V %s, fictional bench bus %d" % (volts, etype, i + 1)
    loc = "%s %d, %s area" % (ROOMS[rng.randrange(len(ROOMS))], rng.randrange(1, 40), area.title())
    service = etype == "switchboard" and rng.random() < 0.1
    rating = "2000" if service else ""
    bolted = round(rng.uniform(5.0, 42.0), 2)
    out = []
    for scenario, scale in (("utility-max", 1.0), ("utility-min", rng.uniform(0.7, 0.95))):
        b = round(bolted * scale, 2)
        arcing = round(b * rng.uniform(0.45, 0.85), 2)
        clearing = round(rng.uniform(0.02, 0.5), 3)
        energy = round(rng.uniform(emin, emax), 2)
        afb = boundary_in(dist, energy, x)
        out.append(",".join([
            eid, '"%s"' % desc, '"%s"' % loc, "BN-AF-BENCH", "2026-09-15", scenario, str(volts),
            etype, str(dist), "%.2f" % energy, "%.1f" % afb, "%.3f" % x, "%.2f" % b,
            "%.2f" % arcing, "%.3f" % clearing, "yes" if service else "no", rating,
        ]))
    return out


def write(buses, f, seed=8):
    """Write the results of `buses` buses to the text file f."""
    rng = random.Random(seed)
    f.write(HEADER + "\n")
    for i in range(buses):
        for line in rows_for(i, rng):
            f.write(line + "\n")


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("buses", type=int)
    ap.add_argument("out")
    ap.add_argument("--seed", type=int, default=8)
    a = ap.parse_args()
    with open(a.out, "w", encoding="utf-8", newline="\n") as f:
        write(a.buses, f, a.seed)


if __name__ == "__main__":
    main()
