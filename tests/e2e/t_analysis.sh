# t_analysis.sh - physics checks in `check`, `infinite-bus`, `envelope` and `summary`.
# JSON and CSV reports are read back with Python's json and csv modules, the summary PDF with
# qpdf --check, pdfinfo and pdftotext (tools we did not write).
source "$(dirname "$0")/lib.sh"
A="$TW_DATA/analysis"
EX="$TW_ROOT/example-jobs"

# ---- infinite-bus: the textbook 1500 kVA, 480 V, 5.75 %Z transformer (31 374 A printed in
# handbooks, which round the full-load current to 1804 A first; 31 378 A unrounded).
run infinite-bus --kva 1500 --volts 480 --z-percent 5.75
expect_rc 0 "infinite-bus runs"
contains "$OUT" "secondary full-load current: 1804.2 A" "full-load current 1804.2 A"
contains "$OUT" "infinite-bus fault current:  31378 A = 31.38 kA" "infinite-bus current 31378 A"
run infinite-bus --kva 1500 --volts 480 --z-percent 5.75 --xr 6
contains "$OUT" "impedance angle 80.54 deg" "X/R 6 gives 80.54 degrees"
contains "$OUT" "resistance R:   0.00145197 ohm" "R = 0.0014520 ohm"
contains "$OUT" "reactance X:    0.00871183 ohm" "X = 0.0087118 ohm"
run infinite-bus --kva 1500 --volts 480
expect_rc 2 "infinite-bus without %Z is a usage error"
run infinite-bus --kva 1500 --volts 480 --z-percent -5
expect_rc 2 "a negative %Z is a usage error"
contains "$ERR" "--z-percent: expected a number above 0, got '-5'" "the message names the option and value"

# ---- physics checks
run check "$A/physics.csv"
expect_rc 1 "an impossible fault current fails check"
contains "$OUT" "physics.csv:3: error: ZZ-XFM-SB02: bolted_fault_ka: 41.00 kA exceeds" "infinite-bus bound is an error naming file, line, bus and field"
lacks "$OUT" "ZZ-OK-SB01" "a fault current within the bound passes"
contains "$OUT" "physics.csv:4: warning: ZZ-AFB-MC03: arc_flash_boundary_mm: stated 1200 mm" "boundary mismatch names the stated value"
contains "$OUT" "puts the boundary at 1453 mm" "and the computed one"
contains "$OUT" "warning: ZZ-ARC-PP04: arcing_current_ka" "arcing current not below bolted is a warning"
contains "$OUT" "warning: ZZ-SLW-PP05: clearing_time_s: 2.5 s is above 2 s; common practice" "clearing time over 2 s is a warning"
contains "$OUT" "warning: ZZ-RNG-SG06: gap_mm" "a gap outside IEEE 1584-2018 is a warning"
contains "$OUT" "1 error, 5 warnings" "count line"
run check "$EX/results.csv"
expect_rc 0 "the example study passes every physics check"
contains "$OUT" "0 errors, 0 warnings" "without a warning"

# ---- envelope
run envelope "$A/sweep.csv" --target-rating 8 --format json
expect_rc 0 "envelope json"
cp "$TW_TMP/stdout" "$TW_TMP/env.json"
run envelope "$A/sweep.csv" --format json
cp "$TW_TMP/stdout" "$TW_TMP/env2.json"
if has_tool python3; then
    check "JSON is an array with the documented keys and values" python3 - "$TW_TMP/env.json" <<'EOF'
import json, sys
a = json.load(open(sys.argv[1]))
j, s = a
assert isinstance(a, list) and len(a) == 2
assert j["equipment_id"] == "ZZ-JMP-MC01" and j["governing_scenario"] == "source-70"
assert j["incident_energy_cal_cm2"] == 15.24 and j["arc_flash_boundary_mm"] == 2152
assert j["energy_rises_below_ka"] == 23.86 and j["energy_rise"]["to_source_ka"] == 20.88
assert j["lowest_adequate_source_ka"] == 23.86 and j["target_met"] is False
assert j["scenarios_over_target"] == ["source-70", "source-60", "source-50"]
assert s["energy_rises_below_ka"] is None and s["energy_rise"] is None
assert s["target_met"] is True and s["lowest_adequate_source_ka"] == 8.18
EOF
    check "without a target the target keys are absent" python3 -c '
import json, sys
a = json.load(open(sys.argv[1]))
assert all("target_met" not in b and "lowest_adequate_source_ka" not in b for b in a)' "$TW_TMP/env2.json"
    run envelope "$A/sweep.csv" --target-rating 8 --format csv
    printf '%s' "$OUT" >"$TW_TMP/env.csv"
    check "CSV reads back with the same values" python3 -c '
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1], newline="")))
assert len(rows) == 2
r = rows[0]
assert r["equipment_id"] == "ZZ-JMP-MC01" and r["energy_rises_below_ka"] == "23.86"
assert r["rise_to_source_ka"] == "20.88" and r["target_met"] == "no"
assert rows[1]["energy_rises_below_ka"] == "" and rows[1]["target_met"] == "yes"' "$TW_TMP/env.csv"
fi
run envelope "$A/sweep.csv" --target-rating 8
expect_rc 0 "envelope text"
contains "$OUT" "energy rises: 2.45 cal/cm2 at 23.86 kA (source-80) -> 15.24 cal/cm2 at 20.88 kA (source-70)" "text names the step"
contains "$OUT" "1 bus where 8 cal/cm2 is not enough in some scenario: ZZ-JMP-MC01" "text lists the buses short of the rating"
run envelope "$A/sweep.csv" --format json --out "$TW_TMP/out.json"
expect_rc 0 "envelope --out"
check "--out writes the same report as stdout" cmp -s "$TW_TMP/out.json" "$TW_TMP/env2.json"
run envelope "$EX/results.csv" --format json
if has_tool python3; then
    printf '%s' "$OUT" >"$TW_TMP/ex.json"
    check "example study: jumps at QB-HWK-MC01 (below 23.86 kA) and QB-CLR-PP01 (below 13.38 kA)" python3 -c '
import json, sys
a = {b["equipment_id"]: b for b in json.load(open(sys.argv[1]))}
assert a["QB-HWK-MC01"]["energy_rises_below_ka"] == 23.86
assert a["QB-HWK-MC01"]["energy_rise"]["to_scenario"] == "source-70"
assert a["QB-CLR-PP01"]["energy_rises_below_ka"] == 13.38
assert a["QB-CLR-PP01"]["energy_rise"]["to_scenario"] == "source-60"
assert a["QB-AER-SG41"]["energy_rises_below_ka"] is None' "$TW_TMP/ex.json"
fi
run envelope "$EX/broken.csv"
expect_rc 1 "envelope refuses data with errors"
[ -z "$OUT" ] && ok "and prints no report" || fail "a report was printed for data with errors"
run envelope "$A/sweep.csv" --format xml
expect_rc 2 "an unknown format is a usage error"
run envelope "$A/sweep.csv" --target-rating 0
expect_rc 2 "a zero target rating is a usage error"
run envelope "$TW_TMP/does-not-exist.csv"
expect_rc 3 "an unreadable results file is an I/O error"

# ---- summary
S="$TW_TMP/summary.pdf"
run summary "$EX/results.csv" --site "$EX/site.json" --out "$S" --date 2026-10-01
expect_rc 0 "summary of the example study"
if has_tool qpdf; then check "summary passes qpdf --check" qpdf --check "$S"; fi
if has_tool pdftotext; then
    T=$(pdftotext -layout "$S" - 2>/dev/null)
    contains "$T" "Arc-flash study summary" "title"
    contains "$T" "Study QB-AF-2026-R3 of 2026-09-15" "study line"
    row=$(printf '%s\n' "$T" | grep "QB-HWK-MC01" | head -n 1)
    contains "$row" "480 V" "table: voltage"
    contains "$row" "source-70" "table: governing scenario"
    contains "$row" "15.3 cal/cm2" "table: incident energy as the label prints it"
    contains "$row" "7 ft 1 in (2154" "table: boundary"
    contains "$row" "Kit Q2" "table: PPE level"
    contains "$row" "WARNING" "table: signal word"
    contains "$row" "2031-09-15" "table: review due"
    contains "$row" "23.86 kA" "table: energy rises below"
    row=$(printf '%s\n' "$T" | grep "QB-HWK-SG01" | head -n 1)
    contains "$row" "none adequate" "a bus beyond every PPE level says none adequate"
    contains "$row" "DANGER" "and DANGER"
    contains "$T" "Incident energy by bus" "bar chart page"
    contains "$T" "incident energy at the working distance (cal/cm2)" "bar chart axis with units"
    contains "$T" "Scenario sweeps" "sweep plots"
    contains "$T" "source fault current (kA)" "sweep axis with units"
    contains "$T" "energy rises below 23.86 kA" "the jump is marked on the plot"
    contains "$T" "licensed engineer" "the caution is printed"
fi
if has_tool pdfinfo; then
    pages=$(pdfinfo "$S" 2>/dev/null | awk '/^Pages:/ {print $2}')
    [ "$pages" = 6 ] && ok "six pages: two of table, one chart, three of plots" || fail "expected 6 pages, got $pages"
fi
run summary "$EX/results.csv" --site "$EX/site.json" --out "$TW_TMP/again.pdf" --date 2026-10-01
check "the same input and date give the same bytes" cmp -s "$S" "$TW_TMP/again.pdf"
run summary "$EX/broken.csv" --out "$TW_TMP/broken.pdf" --date 2026-10-01
expect_rc 1 "summary refuses data with errors"
[ ! -e "$TW_TMP/broken.pdf" ] && ok "and writes no file" || fail "a summary was written for data with errors"
run summary "$EX/results.csv"
expect_rc 2 "summary without --out is a usage error"
run summary "$EX/results.csv" --out "$EX/results.csv"
expect_rc 3 "summary refuses to overwrite its input"

# ---- a missing boundary computed from the IEEE 1584-2002 exponent for the type (draft only)
run labels "$A/no-boundary.csv" --draft --out "$TW_TMP/nob.pdf" --date 2026-10-01
expect_rc 0 "labels --draft prints the bus without a boundary"
if has_tool pdftotext; then
    T=$(pdftotext "$TW_TMP/nob.pdf" - 2>/dev/null | tr '\n' ' ')
    contains "$T" "1446 mm" "the computed boundary, 455 x (8 / 1.2)^(1 / 1.641) rounded up"
    contains "$T" "computed from incident energy" "the label says it was computed"
fi
finish
