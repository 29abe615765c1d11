#!/usr/bin/env bash
# t_fail_closed.sh - whatever `check` rejects, no command writes a posting label, a permit or a
# label record entry (docs/limits.md, "Fail closed"; issue 13), and the smaller points found
# beside it. The property over generated inputs is tests/unit/test_fail_closed.c.
. "$(dirname "$0")/lib.sh"
mkdir "$TW_TMP/work"
cd "$TW_TMP/work"
H=equipment_id,study_id,study_date,nominal_voltage_v,equipment_type,working_distance_in,incident_energy_cal_cm2,arc_flash_boundary_in,distance_exponent
GOOD=BI-MCC-1,ST-1,2026-01-10,480,mcc,18,4.2,38.7,1.641
nothing_here() { # nothing_here WHAT: the directory holds only the inputs
    local left
    left=$(ls -A | grep -v -E '^(r\.csv|good\.csv|job\.json|jobs\.json|many\.csv|dots\.csv|site\.json|batch\.json|payload.*)$' || true)
    [ -z "$left" ] && ok "$1: nothing written" || fail "$1: left $left"
    rm -f $left
}

# The worst-case row of BI-MCC-1 (41 cal/cm2, DANGER) has no equipment ID: check exits 1, and
# today's labels printed WARNING 4.2 cal/cm2 for the bus, exit 0.
printf '%s\n%s\n,ST-1,2026-01-10,480,mcc,18,41.0,154.9,1.641\n' "$H" "$GOOD" >r.csv
printf '%s\n%s\n' "$H" "$GOOD" >good.csv
run check r.csv
expect_rc 1 "check rejects a row without an equipment ID"
run labels r.csv --out l.pdf
expect_rc 1 "labels refuses it"
nothing_here "labels"
run labels r.csv --out l.pdf --bus BI-MCC-1
expect_rc 1 "labels --bus refuses it too: the row cannot be shown not to belong to the bus"
contains "$ERR" "r.csv:3: error: equipment_id: missing" "the finding is printed with --bus"
nothing_here "labels --bus"
cat >job.json <<'JOB'
{"work_order": "WO-FC-1", "equipment_id": "BI-MCC-1", "work_description": "Measure voltage.",
 "justification": "Diagnostic testing.", "safe_work_practices": ["Job briefing"],
 "access_restriction": "Barricade.", "planned_date": "2027-01-10",
 "crew": [{"name": "A. Qualified", "qualified": true}],
 "approvers": [{"role": "responsible_management", "title": "Manager"}]}
JOB
run permit r.csv --job job.json --out p.pdf
expect_rc 1 "permit refuses it"
nothing_here "permit"
run reprint r.csv --bus BI-MCC-1 --incident-energy 5 --out l.pdf
expect_rc 1 "reprint refuses it"
nothing_here "reprint"
run diff good.csv r.csv --out l.pdf
expect_rc 1 "diff --out refuses it"
nothing_here "diff --out"
run labels r.csv --out l.pdf --draft
expect_rc 0 "labels --draft prints"
if has_tool pdftotext; then
    contains "$(pdftotext l.pdf - 2>/dev/null)" "DRAFT" "every label of the run is a watermarked draft"
fi
rm -f l.pdf tagwright-registry.db tagwright-registry.db.lock

# A file check cannot read beyond its findings limit: the findings not kept block every bus.
{ printf '%s\n%s\n' "$H" "$GOOD"; seq 1 100001 | sed 's/.*/X&,ST-1,2026-01-10,480,mcc,18,abc,38.7,1.641/'; } >many.csv
run labels many.csv --out l.pdf --bus BI-MCC-1
expect_rc 1 "100,001 bad rows beside a good one: labels --bus of the good one refuses"
nothing_here "labels beside 100,001 bad rows"

# --bus given three times prints one label.
run labels good.csv --out l.pdf --bus BI-MCC-1 --bus BI-MCC-1 --bus BI-MCC-1
expect_rc 0 "labels with --bus three times"
contains "$OUT" "l.pdf: 1 label" "one label, not three"
rm -f l.pdf tagwright-registry.db tagwright-registry.db.lock

# "." and ".." as IDs stay data in the record link (RFC 3986 5.2.4 would remove them).
printf '%s\n..,.,2026-01-10,480,mcc,18,4.2,38.7,1.641\n' "$H" >dots.csv
run labels dots.csv --out l.pdf
expect_rc 0 "labels for the IDs '.' and '..'"
contains "$("$TW_BIN" registry export --manifest tagwright-registry.db)" "/%2E/%2E%2E/" "'.' and '..' are percent-encoded in the QR link"
rm -f l.pdf tagwright-registry.db tagwright-registry.db.lock

# A study dated after the print date is refused.
run labels good.csv --out l.pdf --date 2025-12-31
expect_rc 1 "labels --date before the study date"
contains "$ERR" "study_date: 2026-01-10 is after the print date 2025-12-31" "names both dates"
nothing_here "labels --date before the study"

# Cautions that do not fit are bad data (exit 1), as a description that does not fit.
python3 -c 'import json; print(json.dumps({"cautions": ["Caution %d: keep the door closed and latched while energized, and wear the PPE the label requires" % i for i in range(30)]}))' >site.json
run labels good.csv --site site.json --out l.pdf
expect_rc 1 "cautions that do not fit the footer"
contains "$ERR" "the cautions do not fit the footer region" "says what does not fit"
rm -f tagwright-registry.db.lock
nothing_here "labels with cautions that do not fit"

# reprint blames its own option for the values it made, not a row of the results.
run reprint good.csv --bus BI-MCC-1 --incident-energy 1e300 --out l.pdf
expect_rc 1 "reprint with an incident energy too large to label"
contains "$ERR" "tagwright reprint: --incident-energy 1e300: error: BI-MCC-1" "the option is named"
lacks "$ERR" "good.csv:2" "the results row is not blamed"
run reprint good.csv --bus BI-MCC-1 --incident-energy 1e-12 --out l.pdf
expect_rc 2 "reprint with an incident energy that would print as 0 is a usage error"
nothing_here "reprint"

# A permit batch is all or nothing: the second permit cannot be written (file size limit),
# and the first, written already, is not published either.
python3 - <<'PY'
import json
one = json.load(open("job.json"))
one["equipment_id"] = "BI-MCC-1"
two = dict(one, work_order="WO-FC-2",
           safe_work_practices=["Practice %d: keep clear of the arc-flash boundary " % i + "x" * 300 for i in range(50)],
           job_hazards=["Hazard %d " % i + "y" * 400 for i in range(50)])
json.dump([one, two], open("batch.json", "w"))
PY
mkdir pb
run permit good.csv --job batch.json --out pb
expect_rc 0 "the batch is written without a limit"
small=$(stat -c %s pb/permit-WO-FC-1.pdf)
big=$(stat -c %s pb/permit-WO-FC-2.pdf)
rm -f pb/*
if [ "$small" -lt "$big" ]; then
    set +e
    (trap '' XFSZ; ulimit -f $(( (small + big) / 2048 )); "$TW_BIN" permit good.csv --job batch.json --out pb >out.txt 2>err.txt)
    RC=$?
    set -e
    ERR=$(cat err.txt)
    expect_rc 3 "the batch fails at the second permit"
    contains "$ERR" "file size limit reached while writing pb/permit-WO-FC-2.pdf" "the failure names the file"
    [ -z "$(ls -A pb)" ] && ok "no permit of the failed batch is left" || fail "left: $(ls -A pb)"
    rm -f out.txt err.txt
else
    fail "the second permit should be the larger ($small, $big bytes)"
fi
rmdir pb

# verify reads exactly one line of text on stdin.
run labels good.csv --out l.pdf
payload=$("$TW_BIN" registry export --manifest tagwright-registry.db |
    sed -n 's/.*"payload":[[:space:]]*"\([^"]*\)".*/\1/p' | head -n 1)
printf '%s\n' "$payload" >payload.txt
run verify --manifest tagwright-registry.db - <payload.txt
expect_rc 0 "verify: the payload is current"
printf '%s\0EVIL\n' "$payload" >payload-nul.txt
run verify --manifest tagwright-registry.db - <payload-nul.txt
expect_rc 2 "verify: a NUL byte on stdin is refused"
contains "$ERR" "NUL byte" "says why"
lacks "$OUT" "current" "no answer is given"
printf '%s\nsecond line\n' "$payload" >payload-two.txt
run verify --manifest tagwright-registry.db - <payload-two.txt
expect_rc 2 "verify: a second line on stdin is refused"
contains "$ERR" "more than one line" "says why"
run verify --manifest tagwright-registry.db "https://records.invalid/nothing"
expect_rc 4 "verify: unknown has its own exit status, 4"
finish
