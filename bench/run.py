#!/usr/bin/env python3
"""run.py - benchmark `tagwright labels` and `tagwright check` on synthetic studies.

    bench/run.py [--bin build/tagwright] [--sizes 1000,10000,100000] [--repeat N] [--keep DIR]

For each size it writes a deterministic, fictional results file (bench/synth.py: two scenarios
per bus), checks that `tagwright check` finds 0 errors, then times `tagwright check` and
`tagwright labels` under /usr/bin/time -v and prints one table: buses, command, wall seconds,
CPU seconds (user + system), labels per second, peak resident memory (MiB). With --repeat N
each command runs N times and the fastest run is kept (the machine may be shared). Last, it
fits time = a * buses^k by least squares on the logarithms and prints k for each command:
k near 1 means time grows linearly with the number of buses.

Standard library only. /usr/bin/time comes from Debian's `time` package (scripts/install-deps).
"""
import argparse
import math
import os
import re
import shutil
import subprocess
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
import synth  # noqa: E402

TIME = "/usr/bin/time"
DATE = "2026-12-01"


def timed(cmd):
    """Run cmd under /usr/bin/time -v; return (exit status, stdout, measures)."""
    p = subprocess.run([TIME, "-v"] + cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                       text=True)
    m = {}
    for line in p.stderr.splitlines():
        line = line.strip()
        if line.startswith("Elapsed (wall clock) time"):
            parts = line.rsplit(" ", 1)[1].split(":")
            m["wall"] = sum(float(x) * 60 ** i for i, x in enumerate(reversed(parts)))
        elif line.startswith("User time (seconds)"):
            m["user"] = float(line.rsplit(" ", 1)[1])
        elif line.startswith("System time (seconds)"):
            m["sys"] = float(line.rsplit(" ", 1)[1])
        elif line.startswith("Maximum resident set size (kbytes)"):
            m["rss_mib"] = int(line.rsplit(" ", 1)[1]) / 1024.0
    if p.returncode != 0 or "wall" not in m:
        sys.exit("bench: %s failed (exit %d):\n%s" % (" ".join(cmd), p.returncode, p.stderr))
    return p.stdout, m


def best_of(n, cmd, before=None):
    runs = []
    for _ in range(n):
        if before:
            before()
        out, m = timed(cmd)
        runs.append((m["wall"], out, m))
    runs.sort(key=lambda r: r[0])
    return runs[0][1], runs[0][2]


def exponent(points):
    """Least-squares slope of log(t) against log(n)."""
    xs = [math.log(n) for n, t in points if t > 0]
    ys = [math.log(t) for n, t in points if t > 0]
    if len(xs) < 2:
        return float("nan")
    mx, my = sum(xs) / len(xs), sum(ys) / len(ys)
    sxx = sum((x - mx) ** 2 for x in xs)
    return sum((x - mx) * (y - my) for x, y in zip(xs, ys)) / sxx if sxx else float("nan")


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--bin", default=os.path.join(HERE, "..", "build", "tagwright"))
    ap.add_argument("--sizes", default="1000,10000,100000")
    ap.add_argument("--repeat", type=int, default=1)
    ap.add_argument("--keep", help="write inputs and outputs here and keep them")
    a = ap.parse_args()
    if not os.access(TIME, os.X_OK):
        sys.exit("bench: %s not found; run scripts/install-deps (Debian package 'time')" % TIME)
    tw = os.path.abspath(a.bin)
    if not os.access(tw, os.X_OK):
        sys.exit("bench: %s not found; run make first" % tw)
    sizes = [int(s) for s in a.sizes.split(",")]
    work = a.keep or tempfile.mkdtemp(prefix="tw-bench.")
    os.makedirs(work, exist_ok=True)
    env_note = "%d CPUs, load average %s" % (os.cpu_count() or 0,
                                             " ".join(open("/proc/loadavg").read().split()[:3]))
    rows = []
    try:
        for n in sizes:
            csv = os.path.join(work, "results-%d.csv" % n)
            with open(csv, "w", encoding="utf-8", newline="\n") as f:
                synth.write(n, f)
            out, m = best_of(a.repeat, [tw, "check", csv])
            if not re.search(r"^0 errors, 0 warnings in %d buses" % n, out, re.M):
                sys.exit("bench: check did not pass the synthetic data:\n" + out[-2000:])
            rows.append((n, "check", m))
            outdir = os.path.join(work, "labels-%d" % n)

            def fresh():
                shutil.rmtree(outdir, ignore_errors=True)
                os.makedirs(outdir)
            out, m = best_of(a.repeat, [tw, "labels", csv, "--out",
                                        os.path.join(outdir, "labels.pdf"), "--date", DATE],
                             before=fresh)
            rows.append((n, "labels", m))
    finally:
        if not a.keep:
            shutil.rmtree(work, ignore_errors=True)
    print("tagwright bench (%s; best of %d)" % (env_note, a.repeat))
    print("%9s  %-7s %9s %9s %11s %13s" % ("buses", "command", "wall s", "cpu s", "labels/s",
                                            "peak RSS MiB"))
    for n, cmd, m in rows:
        rate = "%.0f" % (n / m["wall"]) if cmd == "labels" else "-"
        print("%9d  %-7s %9.2f %9.2f %11s %13.1f" % (n, cmd, m["wall"], m["user"] + m["sys"],
                                                     rate, m["rss_mib"]))
    for cmd in ("check", "labels"):
        wall = [(n, m["wall"]) for n, c, m in rows if c == cmd]
        cpu = [(n, m["user"] + m["sys"]) for n, c, m in rows if c == cmd]
        print("%s: time ~ buses^k, k = %.2f (wall), %.2f (cpu)" % (cmd, exponent(wall),
                                                                   exponent(cpu)))


if __name__ == "__main__":
    main()
