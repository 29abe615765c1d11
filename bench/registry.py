#!/usr/bin/env python3
"""registry.py - benchmark the label registry (docs/performance.md).

    bench/registry.py [--bin build/tagwright] [--record build/bench/record]
                      [--sizes 1000,50000] [--repeat N] [--record-labels 10000]

For each size it builds a registry of that many labels (a generated export, brought in with
`tagwright registry import`), then times `tagwright verify` of one payload and a one-label
`tagwright reprint` beside it under /usr/bin/time -v, keeping the fastest of --repeat runs, and
prints wall and CPU seconds and peak memory, with the ratio of the largest size to the
smallest (the goal: at most 3x, under 64 MiB). Last, build/bench/record times the one
transaction that records a run of --record-labels labels (goal: under 0.1 s), wall and CPU.
Standard library only.
"""
import argparse
import hashlib
import json
import os
import shutil
import subprocess
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
from run import best_of  # noqa: E402

HEADER = ("equipment_id,description,location,study_id,study_date,scenario,nominal_voltage_v,"
          "working_distance_in,incident_energy_cal_cm2,arc_flash_boundary_in,distance_exponent")


def content_of(i):
    energy = 1.0 + (i % 300) / 10
    return ("signal_word=WARNING\nequipment_id=BENCH-%06d\ndescription=Panel %d\n"
            "location=Building %d\nnominal_voltage=480 V\n"
            "arc_flash_boundary=4 ft 7 in (1395 mm)\nincident_energy=%.1f cal/cm2\n"
            "working_distance=18 in (457 mm)\nmin_arc_rating=%.1f cal/cm2\nppe_level=AR-8\n"
            "study_id=BENCH-1\nstudy_date=2026-09-15\nscenario=max\nreview_due=2031-09-15\n"
            % (i, i, i % 40, energy, energy))


def export_of(n):
    labels = []
    for i in range(n):
        c = content_of(i)
        h = hashlib.sha256(c.encode()).hexdigest()
        labels.append({"equipment_id": "BENCH-%06d" % i, "revision": 1, "status": "current",
                       "content_hash": h, "study_id": "BENCH-1", "study_date": "2026-09-15",
                       "printed": "2026-12-01", "output": "labels-%03d.pdf" % (i // 1000 + 1),
                       "volume": i // 1000 + 1, "page": i % 1000 + 1,
                       "payload": "HTTPS://RECORDS.INVALID/BENCH-1/BENCH-%06d/1/%s" % (i, h.upper()),
                       "content": c})
    return {"format": "tagwright-manifest", "version": 2, "labels": labels}


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--bin", default="build/tagwright")
    ap.add_argument("--record", default="build/bench/record")
    ap.add_argument("--sizes", default="1000,50000")
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--record-labels", type=int, default=10000)
    a = ap.parse_args()
    tw = os.path.abspath(a.bin)
    sizes = [int(s) for s in a.sizes.split(",")]
    tmp = tempfile.mkdtemp(prefix="tw-bench-registry.")
    rows = {}
    try:
        results = os.path.join(tmp, "one.csv")
        with open(results, "w") as f:
            f.write(HEADER + "\nBENCH-000007,Panel 7,Building 7,BENCH-1,2026-09-15,max,480,18,"
                    "3.0,40,1.641\n")
        for n in sizes:
            d = os.path.join(tmp, str(n))
            os.mkdir(d)
            reg = os.path.join(d, "site.registry")
            exp = os.path.join(d, "export.json")
            with open(exp, "w") as f:
                json.dump(export_of(n), f)
            subprocess.run([tw, "registry", "import", "--manifest", reg, exp], check=True,
                           stdout=subprocess.DEVNULL)
            payload = export_of(1)["labels"][0]["payload"]
            _, v = best_of(a.repeat, [tw, "verify", "--manifest", reg, payload])
            copy = os.path.join(d, "copy.registry")

            def fresh():
                shutil.copy(reg, copy)
            _, r = best_of(a.repeat, [tw, "reprint", results, "--bus", "BENCH-000007",
                                      "--incident-energy", "40", "--manifest", copy,
                                      "--out", os.path.join(d, "r.pdf"), "--date", "2026-12-02"],
                           before=fresh)
            rows[n] = (v, r)
        print("%-8s %-8s %8s %8s %9s" % ("labels", "command", "wall s", "cpu s", "peak MiB"))
        for n in sizes:
            for name, m in zip(("verify", "reprint"), rows[n]):
                print("%-8d %-8s %8.3f %8.3f %9.1f" % (n, name, m["wall"], m["user"] + m["sys"],
                                                       m["rss_mib"]))
        lo, hi = sizes[0], sizes[-1]
        for k, name in enumerate(("verify", "reprint")):
            a_, b_ = rows[lo][k], rows[hi][k]
            print("%s: %d labels / %d labels: wall x%.2f, cpu x%.2f, peak memory %.1f MiB"
                  % (name, hi, lo, b_["wall"] / a_["wall"],
                     (b_["user"] + b_["sys"]) / max(a_["user"] + a_["sys"], 1e-3),
                     b_["rss_mib"]))
        rec = os.path.join(tmp, "record")
        os.mkdir(rec)
        out = subprocess.run([os.path.abspath(a.record), rec, str(a.record_labels)], check=True,
                             capture_output=True, text=True).stdout
        for line in out.splitlines():
            print("recording a %d-label run (%s)" % (a.record_labels, line))
    finally:
        shutil.rmtree(tmp)


if __name__ == "__main__":
    main()
