# t_lifecycle.sh - reprint after a setting change, diff of two study revisions, review due dates,
# verify of scanned payloads, and the manifest under concurrent and interrupted runs. Outputs
# are checked with tools we did not write: pdftotext, pdfinfo, qpdf --check, pdftoppm + zbarimg,
# python3 -m json.tool.
source "$(dirname "$0")/lib.sh"
D="$TW_DATA/lifecycle"
M="$TW_TMP/site.registry"

# manifest_field ID REVISION KEY: one field of one revision in the registry (its JSON export)
manifest_field() {
    "$TW_BIN" registry export --manifest "$M" | python3 -c 'import json,sys
m = json.load(sys.stdin)
e = [l for l in m["labels"] if l["equipment_id"] == sys.argv[1] and l["revision"] == int(sys.argv[2])]
print(e[0][sys.argv[3]] if e else "(no such entry)")' "$1" "$2" "$3"
}

# ---- reprint ---------------------------------------------------------------------------------
run labels "$D/reprint.csv" --out "$TW_TMP/posted.pdf" --manifest "$M" --date 2026-10-01
expect_rc 0 "labels for the reprint study (revision 1 of every bus)"

# RP-SWGR-1: 8.36 cal/cm2 at 0.38 s (infinite-bus) -> 0.30 s: 8.36 x 0.30 / 0.38 = 6.60 cal/cm2.
# utility-min shares the 0.38 s clearing time and is rescaled too (6.06 -> 4.78); utility-slow
# (0.90 s, 5.00) keeps its values and does not govern. Boundary: 914.4 mm x (6.6/1.2)^(1/0.973)
# = 914.4 x 5.766432 = 5272.8 mm -> 5273 mm; 207.59 in -> 208 in = 17 ft 4 in.
run reprint "$D/reprint.csv" --bus RP-SWGR-1 --clearing-time 0.30 --manifest "$M" \
    --out "$TW_TMP/swgr.pdf" --date 2026-12-05 --reason "MOC-0412 relay 51 retuned" \
    --approved-by "P. Engineer"
expect_rc 0 "reprint after a setting change"
contains "$OUT" "2 of 3 scenarios rescaled" "scenarios with the same clearing time are rescaled"
contains "$OUT" "incident_energy: 8.4 cal/cm2 -> 6.6 cal/cm2" "energy rescaled 8.36 -> 6.60, printed rounded up"
lacks "$ERR" "warning" "no warning for a modest change below 2 s"
check "qpdf --check passes on the reprint" qpdf --check "$TW_TMP/swgr.pdf"
t=$(page_text "$TW_TMP/swgr.pdf" 1)
contains "$t" "6.6 cal/cm" "label shows the rescaled energy"
contains "$t" "17 ft 4 in" "boundary recomputed with x = 0.973 (17 ft 4 in)"
contains "$t" "5273 mm" "boundary recomputed, mm rounded up (5272.8 -> 5273)"
# default site levels AR-4/AR-8/AR-25/AR-40: 8.4 needs AR-25, 6.6 needs AR-8 (PPE level follows)
contains "$t" "AR-8" "PPE level follows the new energy"
contains "$t" "infinite-bus" "governing scenario still named"
contains "$(echo $t)" "clearing time 0.38 s -> 0.3 s" "label states what it was revised from and by what"
check "the revision is recorded as 2" test "$(manifest_field RP-SWGR-1 2 status)" = current
check "revision 1 is superseded" test "$(manifest_field RP-SWGR-1 1 status)" = superseded
check "superseded on the reprint date" test "$(manifest_field RP-SWGR-1 1 superseded_on)" = 2026-12-05
contains "$(manifest_field RP-SWGR-1 2 reason)" "MOC-0412 relay 51 retuned; protective-device setting change: clearing time 0.38 s -> 0.3 s" "reason recorded with old and new clearing time"
contains "$(manifest_field RP-SWGR-1 2 changes)" "incident_energy: 8.4 cal/cm2 -> 6.6 cal/cm2" "old and new values recorded"
h1=$(manifest_field RP-SWGR-1 1 content_hash); h2=$(manifest_field RP-SWGR-1 2 content_hash)
[ "$h1" != "$h2" ] && ok "the revised label's content hash differs from the study's" || fail "same hash"
if has_tool zbarimg && has_tool pdftoppm; then
    q=$(qr_of "$TW_TMP/swgr.pdf" 1)
    contains "$q" "/2/" "QR carries revision 2"
    contains "$q" "${h2^^}" "QR carries the new content hash (in capitals, QR alphanumeric mode)"
else
    fail "zbarimg/pdftoppm not installed"
fi

# RP-MCC-1 has no distance_exponent: IEEE 1584-2002 Table 4, MCC <= 1 kV, x = 1.641.
# 7.81 x 0.10 / 0.15 = 5.2067 -> 5.3; 457.2 x (5.3/1.2)^(1/1.641) = 1130.36 -> 1131 mm, 44.5 -> 45 in.
# Issue 15, failure 3: a revision that lowers the hazard is refused without a named approver,
# with what would go down, and nothing is written (the registry keeps revision 1 current).
cp "$M" "$TW_TMP/before-refusal.registry"
run reprint "$D/reprint.csv" --bus RP-MCC-1 --clearing-time 0.10 --manifest "$M" \
    --out "$TW_TMP/mcc.pdf" --date 2026-12-05
expect_rc 3 "a reprint that lowers the hazard is refused without --approved-by"
contains "$ERR" "incident energy 7.9 -> 5.3 cal/cm2" "the refusal says what would go down"
contains "$ERR" "--approved-by NAME --reason TEXT" "the refusal says an approval is needed"
[ ! -e "$TW_TMP/mcc.pdf" ] && ok "no PDF written for the refused reprint" || fail "mcc.pdf written"
check "the registry is unchanged by the refusal" cmp -s "$M" "$TW_TMP/before-refusal.registry"
run reprint "$D/reprint.csv" --bus RP-MCC-1 --clearing-time 0.10 --manifest "$M" \
    --out "$TW_TMP/mcc.pdf" --date 2026-12-05 --approved-by "P. Engineer"
expect_rc 2 "--approved-by without --reason is a usage error"
run reprint "$D/reprint.csv" --bus RP-MCC-1 --clearing-time 0.10 --manifest "$M" \
    --out "$TW_TMP/mcc.pdf" --date 2026-12-05 --approved-by "P. Engineer" --reason "MOC-0413"
expect_rc 0 "reprint with the exponent from IEEE 1584-2002 Table 4"
check "the approver is recorded" test "$(manifest_field RP-MCC-1 2 approved_by)" = "P. Engineer"
contains "$(manifest_field RP-MCC-1 2 lowered)" "incident energy 7.9 -> 5.3 cal/cm2" "what went down is recorded"
t=$(page_text "$TW_TMP/mcc.pdf" 1)
contains "$t" "5.3 cal/cm" "5.2067 rounded up to 5.3"
contains "$t" "3 ft 9 in (1131 mm)" "boundary from x = 1.641"

# --incident-energy from a re-run study: 4.8 cal/cm2, 457.2 x 4^(1/1.641) = 1064.1 -> 1065 mm, 42 in
run reprint "$D/reprint.csv" --bus RP-MCC-1 --incident-energy 4.8 --manifest "$M" \
    --out "$TW_TMP/mcc2.pdf" --date 2026-12-06 --approved-by "P. Engineer" --reason "re-run"
expect_rc 0 "reprint with an energy from a re-run study"
t=$(page_text "$TW_TMP/mcc2.pdf" 1)
contains "$t" "4.8 cal/cm" "the given energy is printed"
contains "$t" "3 ft 6 in (1065 mm)" "boundary recomputed from it"
contains "$(echo $t)" "re-run study" "revision note names the source"
check "a third revision supersedes the second" test "$(manifest_field RP-MCC-1 3 status)" = current

# a large reduction: 0.38 -> 0.10 s brings the rescaled scenarios to 2.2 cal/cm2, below utility-slow
run reprint "$D/reprint.csv" --bus RP-SWGR-1 --clearing-time 0.10 --out "$TW_TMP/slow.pdf" \
    --manifest "$TW_TMP/other.registry" --date 2026-12-05
expect_rc 0 "reprint with warnings"
contains "$ERR" "factor of 0.26" "warns when the time changes by more than a factor of 2"
contains "$ERR" "utility-slow" "warns that an unrescaled scenario now governs"
contains "$ERR" "re-run study is the proper source" "points to a re-run study"
contains "$(page_text "$TW_TMP/slow.pdf" 1)" "5.0 cal/cm" "label shows the governing (unrescaled) scenario"

run reprint "$D/reprint.csv" --bus RP-LONG-1 --clearing-time 2.5 --out "$TW_TMP/long.pdf" \
    --manifest "$TW_TMP/other.registry" --date 2026-12-05
expect_rc 0 "reprint above 2 s still prints"
contains "$ERR" "above 2 s" "warns above a 2 s clearing time (IEEE 1584 note, common practice)"

run reprint "$D/reprint.csv" --bus RP-NOTIME-1 --clearing-time 0.1 --out "$TW_TMP/none.pdf" \
    --manifest "$TW_TMP/other.registry"
expect_rc 1 "no clearing time in the study"
contains "$ERR" "clearing_time_s" "names the missing field"
contains "$ERR" "reprint.csv:6" "names the file and line"
check "nothing written" test ! -e "$TW_TMP/none.pdf"
run reprint "$D/reprint.csv" --bus RP-NOTIME-1 --incident-energy 3 --out "$TW_TMP/none.pdf" \
    --manifest "$TW_TMP/other.registry" --date 2026-12-05
expect_rc 0 "without a clearing time, --incident-energy still works"
# a bus labelled by PPE category (table method) cannot be rescaled, but takes a re-run value
run reprint "$D/category.csv" --bus CAT-PNL-1 --clearing-time 0.03 --out "$TW_TMP/cat.pdf" \
    --manifest "$TW_TMP/other.registry"
expect_rc 1 "a PPE-category label cannot be rescaled by time"
contains "$ERR" "PPE category cannot be rescaled" "says why"
run reprint "$D/category.csv" --bus CAT-PNL-1 --incident-energy 4.8 --out "$TW_TMP/cat.pdf" \
    --manifest "$TW_TMP/other.registry" --date 2026-12-05
expect_rc 0 "a PPE-category label takes an energy from a re-run study"
t=$(page_text "$TW_TMP/cat.pdf" 1)
contains "$t" "4.8 cal/cm" "the label now shows the energy"
lacks "$t" "PPE category" "and not the category too (NFPA 70E 130.5(H): one or the other)"
run reprint "$D/reprint.csv" --bus RP-MCC-1 --out "$TW_TMP/x.pdf"
expect_rc 2 "neither --clearing-time nor --incident-energy"
run reprint "$D/reprint.csv" --bus RP-MCC-1 --clearing-time 0.1 --incident-energy 3 --out "$TW_TMP/x.pdf"
expect_rc 2 "both --clearing-time and --incident-energy"
run reprint "$D/reprint.csv" --bus RP-MCC-1 --clearing-time -1
expect_rc 2 "a negative clearing time"
run reprint "$D/reprint.csv" --bus NO-SUCH --clearing-time 0.1 --out "$TW_TMP/x.pdf"
expect_rc 1 "an unknown bus"

# ---- verify ----------------------------------------------------------------------------------
p1=$(manifest_field RP-SWGR-1 1 payload); p2=$(manifest_field RP-SWGR-1 2 payload)
run verify --manifest "$M" "$p2"
expect_rc 0 "verify: current label"
contains "$OUT" "current: RP-SWGR-1 revision 2" "verify names equipment and revision"
run verify --manifest "$M" "$p1"
expect_rc 1 "verify: superseded label"
contains "$OUT" "superseded: RP-SWGR-1 revision 1" "verify says superseded"
contains "$OUT" "current revision: 2" "verify names the current revision"
contains "$OUT" "incident_energy: 8.4 cal/cm2 -> 6.6 cal/cm2" "verify shows what changed"
tampered=$(python3 -c 'import sys
p = sys.argv[1]; i = p.rindex("/") + 1
print(p[:i] + ("1" if p[i] != "1" else "2") + p[i + 1:])' "$p2")
[ "$tampered" != "$p2" ] && ok "a tampered payload differs" || fail "tampering did not change the payload"
run verify --manifest "$M" "$tampered"
expect_rc 4 "verify: tampered hash is unknown"
contains "$OUT" "unknown" "verify says unknown"
run verify --manifest "$M" "${p2/\/2\//\/3\/}"
expect_rc 4 "verify: right hash but altered payload is unknown"
run verify --manifest "$M" "https://records.invalid/nothing"
expect_rc 4 "verify: payload without a hash is unknown"
if has_tool zbarimg && has_tool pdftoppm; then
    pdftoppm -f 1 -l 1 -r 300 -png "$TW_TMP/posted.pdf" "$TW_TMP/scan" >/dev/null 2>&1
    set +e
    zbarimg -q --raw "$TW_TMP"/scan-*.png 2>/dev/null | head -n 1 | "$TW_BIN" verify --manifest "$M" - >"$TW_TMP/v" 2>&1
    rc=$?
    set -e
    [ "$rc" -eq 1 ] && ok "verify - reads a scan of the superseded revision 1 label (zbarimg)" || fail "scan verify exit $rc: $(cat "$TW_TMP/v")"
fi
run verify "$p2"
expect_rc 2 "verify without --manifest is a usage error"
[ -z "$OUT" ] && ok "a usage error prints nothing on stdout" || fail "stdout: $OUT"
run verify --manifest "$TW_TMP/missing.registry" "$p2"
expect_rc 3 "verify with a missing manifest"

# ---- diff ------------------------------------------------------------------------------------
run diff "$D/rev1.csv" "$D/rev2.csv" --date 2026-12-01
expect_rc 0 "diff of two study revisions"
contains "$OUT" "added      LC-NEW-1" "added bus"
contains "$OUT" "removed    LC-OLD-1" "removed bus"
contains "$OUT" "changed    LC-MCC-1" "changed bus (energy)"
contains "$OUT" "incident_energy: 7.9 cal/cm2 -> 9.3 cal/cm2" "energy change field by field"
contains "$OUT" "ppe_level: AR-8 (8 cal/cm2) -> AR-25 (25 cal/cm2)" "energy crossing a PPE level"
contains "$OUT" "nominal_voltage: 480 V -> 600 V" "changed voltage"
# ASTM D120: class 00 up to 500 V AC, class 0 up to 1000 V AC
contains "$OUT" "glove_class: Class 00 (max. use 500 V AC) -> Class 0 (max. use 1000 V AC)" "glove class follows the voltage"
contains "$OUT" "unchanged  LC-PNL-1" "unchanged bus (study ID and date differ)"
contains "$OUT" "1 added, 1 removed, 2 changed, 1 unchanged" "summary"
run diff "$D/rev1.csv" "$D/rev2.csv" --format json --date 2026-12-01
expect_rc 0 "diff --format json"
printf '%s' "$OUT" >"$TW_TMP/diff.json"
check "diff JSON is valid (python3 -m json.tool)" python3 -m json.tool "$TW_TMP/diff.json"
j=$(python3 -c 'import json,sys
d = json.load(open(sys.argv[1]))
c = {e["equipment_id"]: {f["field"]: (f["old"], f["new"]) for f in e["changes"]} for e in d["changed"]}
print(d["added"], d["removed"], d["unchanged"], c["LC-SWBD-1"]["nominal_voltage"], c["LC-MCC-1"]["ppe_level"])' "$TW_TMP/diff.json")
contains "$j" "['LC-NEW-1'] ['LC-OLD-1'] ['LC-PNL-1'] ('480 V', '600 V') ('AR-8 (8 cal/cm2)', 'AR-25 (25 cal/cm2)')" "JSON lists match"
DM="$TW_TMP/diff.registry"
run labels "$D/rev1.csv" --out "$TW_TMP/rev1.pdf" --manifest "$DM" --date 2021-03-10
expect_rc 0 "labels for the old revision"
run diff "$D/rev1.csv" "$D/rev2.csv" --out "$TW_TMP/batch.pdf" --manifest "$DM" --date 2026-03-10
expect_rc 0 "diff --out prints the reprint batch"
pages=$(pdfinfo "$TW_TMP/batch.pdf" | awk '/^Pages:/ {print $2}')
[ "$pages" = 3 ] && ok "3 labels: 1 added + 2 changed" || fail "batch has $pages pages, expected 3"
check "qpdf --check passes on the batch" qpdf --check "$TW_TMP/batch.pdf"
lacks "$(pdftotext "$TW_TMP/batch.pdf" - 2>/dev/null)" "LC-PNL-1" "the unchanged bus is not reprinted"
m=$(python3 -c 'import json,sys
m = json.load(sys.stdin)
print(sorted((l["equipment_id"], l["revision"], l["status"]) for l in m["labels"]))' < <("$TW_BIN" registry export --manifest "$DM"))
contains "$m" "('LC-MCC-1', 2, 'current')" "changed bus gets revision 2"
contains "$m" "('LC-MCC-1', 1, 'superseded')" "its revision 1 is superseded"
contains "$m" "('LC-NEW-1', 1, 'current')" "added bus gets revision 1"
contains "$m" "('LC-PNL-1', 1, 'current')" "unchanged bus keeps revision 1"
# Issue 15, failure 4: a bus absent from the new study is marked removed (revisions are never
# deleted), verify on its label says removed and exits non-zero, and the export lists it.
contains "$m" "('LC-OLD-1', 1, 'removed')" "a bus absent from NEW is marked removed, not deleted"
old_payload=$("$TW_BIN" registry export --manifest "$DM" --status removed --format csv | grep -io 'https://[^,]*')
run verify --manifest "$DM" "$old_payload"
expect_rc 1 "verify on a removed bus's label is not current"
contains "$OUT" "removed: LC-OLD-1 revision 1" "verify says removed"
contains "$OUT" "take this label down" "verify says to take it down"
run registry export --manifest "$DM" --status removed --format csv
expect_rc 0 "registry export --status removed"
[ "$(printf '%s\n' "$OUT" | grep -c '^LC-')" = 1 ] && contains "$OUT" "LC-OLD-1,1,removed" \
    "the take-down list holds the removed bus only" || fail "take-down list: $OUT"
# a --bus subset run never marks anything removed
SM="$TW_TMP/subset.registry"
run labels "$D/rev1.csv" --out "$TW_TMP/sub1.pdf" --manifest "$SM" --date 2021-03-10
run labels "$D/rev2.csv" --bus LC-NEW-1 --out "$TW_TMP/sub2.pdf" --manifest "$SM" --date 2026-03-10
expect_rc 0 "labels --bus for one bus of the new study"
run registry export --manifest "$SM" --status removed --format csv
[ "$(printf '%s\n' "$OUT" | wc -l)" = 1 ] && ok "a --bus subset run marks nothing removed" ||
    fail "a subset run marked buses removed: $OUT"
run diff "$D/rev1.csv" "$D/rev2.csv" --manifest "$DM"
expect_rc 2 "--manifest without --out"
run diff "$D/rev1.csv" "$TW_DATA/core/missing-boundary.csv" --date 2026-12-01
expect_rc 1 "diff with errors in NEW"

# ---- due -------------------------------------------------------------------------------------
# DUE-LEAP-1 studied 2020-02-29: 5 years later there is no 29 February, so due 2025-02-28.
run due "$D/due.csv" --on 2025-02-28
expect_rc 0 "due on the leap-day study's due date: due today, not overdue"
contains "$OUT" "due      2025-02-28  DUE-LEAP-1" "29 Feb + 5 years = 28 Feb"
contains "$OUT" "due today" "due today"
run due "$D/due.csv" --on 2025-03-01
expect_rc 1 "a day later it is overdue (exit 1 for cron)"
contains "$OUT" "OVERDUE  2025-02-28  DUE-LEAP-1" "overdue listed"
contains "$OUT" "1 day overdue" "one day overdue"
lacks "$OUT" "DUE-JUN-1" "not due within 0 days"
# 2025-03-01 -> 2025-06-30 is 121 days (31 + 30 + 31 + 29)
run due "$D/due.csv" --on 2025-03-01 --within 121
contains "$OUT" "DUE-JUN-1" "due within 121 days"
run due "$D/due.csv" --on 2025-03-01 --within 120
lacks "$OUT" "DUE-JUN-1" "not within 120 days"
run due "$D/due.csv" --on 2024-01-01 --all
expect_rc 0 "nothing overdue in 2024"
order=$(printf '%s\n' "$OUT" | awk '/^(later|due|OVERDUE)/ {print $3}' | tr '\n' ' ')
[ "$order" = "DUE-LEAP-1 DUE-JUN-1 DUE-MAR-1 " ] && ok "sorted by due date" || fail "order: $order"
# 2023-03-01 + 5 = 2028-03-01; from 2028-02-28 that is 2 days (2028 is a leap year)
run due "$D/due.csv" --on 2028-02-28 --within 2
contains "$OUT" "DUE-MAR-1            study DUE-2023 of 2023-03-01, in 2 days" "counts across 29 February 2028"
run due "$D/due.csv" --on 2025-02-30
expect_rc 2 "--on must be a real date"

# ---- the registry under concurrent and interrupted runs --------------------------------------
CM="$TW_TMP/concurrent.registry"
pids=()
for bus in E2E-PNL-1 E2E-MCC-1 E2E-SWBD-1 E2E-SWGR-1; do
    "$TW_BIN" labels "$TW_DATA/core/small.csv" --bus "$bus" --out "$TW_TMP/c-$bus.pdf" \
        --manifest "$CM" --date 2026-12-01 >/dev/null 2>&1 &
    pids+=($!)
done
crc=0
for p in "${pids[@]}"; do wait "$p" || crc=1; done
[ "$crc" -eq 0 ] && ok "four labels runs in parallel on one registry succeed" || fail "a parallel run failed"
entries_of() { "$TW_BIN" registry export --manifest "$1" | python3 -c 'import json,sys; print(len(json.load(sys.stdin)["labels"]))'; }
n=$(entries_of "$CM")
[ "$n" = 4 ] && ok "all four revisions are present" || fail "$n entries, expected 4"

# A large run killed with SIGKILL midway leaves the old registry and PDF, or the new ones.
# The kill points are fractions of an uninterrupted run's time, most of them near its end, where
# the PDF is staged, recorded and renamed into place.
big="$TW_TMP/big.csv"
head -n 1 "$TW_DATA/core/small.csv" >"$big"
awk 'BEGIN { for (i = 1; i <= 1500; i++)
    printf "BIG-%04d,Panel %d,Room %d,BIG-STUDY,2026-09-15,utility-max,480,panelboard,18,%.2f,40.0,1.641,20,10,0.05,no,\n", i, i, i, 2 + (i % 50) / 10 }' >>"$big"
KM="$TW_TMP/kill.registry"
"$TW_BIN" labels "$TW_DATA/core/small.csv" --out "$TW_TMP/kill.pdf" --manifest "$KM" --date 2026-12-01 >/dev/null 2>&1
cp "$KM" "$TW_TMP/kill.before.registry"
cp "$TW_TMP/kill.pdf" "$TW_TMP/kill.before.pdf"
t0=$(date +%s.%N)
"$TW_BIN" labels "$big" --out "$TW_TMP/kill.pdf" --volume-size 1500 --manifest "$KM" --date 2026-12-02 >/dev/null 2>&1
t1=$(date +%s.%N)
pages_of() { pdfinfo "$1" 2>/dev/null | awk '/^Pages:/ {print $2}'; }
[ "$(entries_of "$KM")" = 1504 ] && [ "$(pages_of "$TW_TMP/kill.pdf")" = 1500 ] &&
    ok "an uninterrupted large run records 1504 entries and prints 1500 pages" || fail "large run"
whole=0 old=0 new=0
for frac in 0.6 0.85 0.92 0.96 0.99; do
    rm -f "$KM-wal" "$KM-shm"
    cp "$TW_TMP/kill.before.registry" "$KM"
    cp "$TW_TMP/kill.before.pdf" "$TW_TMP/kill.pdf"
    delay=$(awk -v a="$t0" -v b="$t1" -v f="$frac" 'BEGIN { printf "%.3f", (b - a) * f }')
    "$TW_BIN" labels "$big" --out "$TW_TMP/kill.pdf" --volume-size 1500 --manifest "$KM" --date 2026-12-02 >/dev/null 2>&1 &
    pid=$!
    sleep "$delay"
    kill -9 "$pid" 2>/dev/null || true
    wait "$pid" 2>/dev/null || true
    entries=$(entries_of "$KM") # the first opener finishes or clears the interrupted run
    if ! qpdf --check "$TW_TMP/kill.pdf" >/dev/null 2>&1; then
        fail "after kill -9 at ${delay}s the PDF is damaged"
        continue
    fi
    pages=$(pages_of "$TW_TMP/kill.pdf")
    if { [ "$entries" = 4 ] && [ "$pages" = 4 ]; } || { [ "$entries" = 1504 ] && [ "$pages" = 1500 ]; }; then
        whole=$((whole + 1))
        [ "$entries" = 1504 ] && new=$((new + 1)) || old=$((old + 1))
    else
        fail "after kill -9 at ${delay}s: manifest $entries entries, PDF $pages pages"
    fi
done
[ "$whole" = 5 ] && ok "kill -9 at five points: registry and PDF agree each time ($old old, $new new)" \
    || fail "only $whole of 5 interrupted runs left whole files"
finish
