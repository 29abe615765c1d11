# t_permit.sh - energized work permit drafts (docs/permit.md), checked with tools we did not
# write: qpdf --check, pdfinfo, pdftotext, pdftoppm + zbarimg. Study: tests/data/core/small.csv;
# jobs: tests/data/permit/.
source "$(dirname "$0")/lib.sh"
small="$TW_DATA/core/small.csv"
jobs="$TW_DATA/permit"
out="$TW_TMP/permit.pdf"

run permit "$small" --job "$jobs/job.json" --out "$out" --date 2026-12-01
expect_rc 0 "a permit for a clean bus"
check "qpdf --check passes" qpdf --check "$out"
pages=$(pdfinfo "$out" 2>/dev/null | awk '/^Pages:/ {print $2}')
[ "${pages:-0}" -ge 2 ] && ok "the permit has $pages pages" || fail "expected at least 2 pages, got '$pages'"
text=$(pdftotext -layout "$out" - 2>/dev/null)

# The nine elements of NFPA 70E-2024 130.2(B)(2) (numbering from memory), each with its heading.
for n in 1 2 3 4 5 6 7 8 9; do
    contains "$text" "130.2(B)(2)($n)" "element $n of NFPA 70E 130.2(B)(2) is present"
done
# 1 equipment and location; 2 work; 3 justification; 4 practices; 7 access; 8 briefing (job file)
contains "$text" "E2E-MCC-1" "1: equipment ID"
contains "$text" "Room 102, bucket 4B" "1: work location from the job"
contains "$text" "Motor control centre, line 2" "1: description from the study"
contains "$text" "control transformer secondary voltage" "2: the work to be done"
contains "$text" "Diagnostic testing" "3: the justification"
contains "$text" "Voltage tester checked on a known source" "4: safe work practices"
contains "$text" "Barricade at the arc-flash boundary" "7: means to restrict access"
contains "$text" "Conveyor 2 may restart" "8: the job-specific hazard is a checklist item"
contains "$text" "initials" "8: initials boxes"
contains "$text" "Test Person One" "8: the crew member initials the briefing"
# 5 shock: NFPA 70E Table 130.4(E)(a), 151-750 V: limited approach 10 ft 0 in (movable
# conductor) and 3 ft 6 in (fixed circuit part), restricted 1 ft 0 in; ASTM D120 class 00
# (maximum use 500 V AC) for 480 V.
contains "$text" "480 V" "5: voltage"
contains "$text" "10 ft 0 in (3.0 m)" "5: limited approach, movable conductor"
contains "$text" "3 ft 6 in (1.0 m)" "5: limited approach, fixed circuit part"
contains "$text" "1 ft 0 in (0.3 m)" "5: restricted approach"
contains "$text" "Class 00" "5: glove class"
# 6 arc flash: utility-min governs, 7.81 -> 7.9 cal/cm2 at 18 in; boundary 56.4 in -> 4 ft 9 in
# (1433 mm), rounded up as on the label; default site: the 8 cal/cm2 level covers 7.9.
contains "$text" "7.9 cal/cm2 at a working distance of 18 in (457 mm)" "6: incident energy at the working distance"
contains "$text" "4 ft 9 in (1433 mm)" "6: arc-flash boundary"
contains "$text" "utility-min" "6: governing scenario"
contains "$text" "AR-8 (8 cal/cm2)" "6: site PPE level"
# 9 approval: the four roles, a name from the job file
for role in "Responsible management" "Safety management - Test Approver" "Engineering management" "Electrically knowledgeable person"; do
    contains "$text" "$role" "9: signature line for $role"
done
contains "$text" "licensed engineer" "the cautions defer to a licensed engineer's judgement"
lacks "$text" "NO PPE IS ADEQUATE" "no refusal statement where PPE is adequate"

# Every page: draft mark, work order, equipment ID, page x of y.
for ((p = 1; p <= ${pages:-0}; p++)); do
    pt=$(page_text "$out" "$p")
    contains "$pt" "DRAFT - NOT VALID UNTIL SIGNED" "page $p is marked as a draft"
    contains "$pt" "WO-E2E-1" "page $p names the work order"
    contains "$pt" "E2E-MCC-1" "page $p names the equipment"
    contains "$pt" "Page $p of $pages" "page $p says page $p of $pages"
done

# The QR code of every page is the posted label's: the same payload as the labels command
# records in the registry for the same results and site.
run labels "$small" --out "$TW_TMP/labels.pdf" --manifest "$TW_TMP/L.registry" --date 2026-12-01
expect_rc 0 "labels for the same study"
mpay=$(python3 -c 'import json,sys; m=json.load(open(sys.argv[1])); print([l for l in m["labels"] if l["equipment_id"]=="E2E-MCC-1" and l["status"]=="current"][0]["payload"])' "$(exported "$TW_TMP/L.registry")")
for ((p = 1; p <= ${pages:-0}; p++)); do
    q=$(qr_of "$out" "$p")
    [ -n "$q" ] && [ "$q" = "$mpay" ] && ok "page $p: zbarimg decodes the label's payload" \
        || fail "page $p: QR '$q' != registry '$mpay'"
done
run permit "$small" --job "$jobs/job.json" --out "$TW_TMP/with-registry.pdf" --date 2026-12-01 \
    --manifest "$TW_TMP/L.registry"
expect_rc 0 "a permit naming the labels registry"
q=$(qr_of "$TW_TMP/with-registry.pdf" 1)
[ "$q" = "$mpay" ] && ok "with --manifest the QR is the current label's payload" || fail "QR '$q' != '$mpay'"

# A label posted from other content: the permit is refused, never drafted with other values.
sed 's/,7.81,/,8.25,/' "$small" >"$TW_TMP/changed.csv"
run labels "$TW_TMP/changed.csv" --out "$TW_TMP/old.pdf" --manifest "$TW_TMP/O.registry" --date 2026-11-01
run permit "$small" --job "$jobs/job.json" --out "$TW_TMP/rev2.pdf" --date 2026-12-01 \
    --manifest "$TW_TMP/O.registry"
expect_rc 3 "a permit against a registry whose posted label says something else is refused"
contains "$ERR" "incident_energy: 8.3 cal/cm2 -> 7.9 cal/cm2" "the refusal shows what differs"
contains "$ERR" "Post a label of the current study first" "the refusal says what to do"
check "no permit written when refused" test ! -e "$TW_TMP/rev2.pdf"
run permit "$small" --job "$jobs/job.json" --out "$TW_TMP/none.pdf" --date 2026-12-01 \
    --manifest "$TW_TMP/L.registry" --date 2026-12-01
expect_rc 0 "the permit of a bus whose posted label matches"

# Issue 15, failure 1: after a reprint posts a higher energy, a permit from the study values is
# refused (exit 3, nothing written), never printed under "Values as on the posted label".
run reprint "$small" --bus E2E-MCC-1 --clearing-time 1.9 --manifest "$TW_TMP/L.registry" \
    --out "$TW_TMP/reprinted.pdf" --date 2026-12-02
expect_rc 0 "reprint with a longer clearing time (higher energy: no approval needed)"
run permit "$small" --job "$jobs/job.json" --out "$TW_TMP/after-reprint.pdf" --date 2026-12-03 \
    --manifest "$TW_TMP/L.registry"
expect_rc 3 "a permit after a reprint posted other values is refused"
contains "$ERR" "refused" "the permit says refused"
check "no permit written after the reprint" test ! -e "$TW_TMP/after-reprint.pdf"
# Issue 15, failure 2: printing the study values again would lower the posted hazard: refused
# without an approver, and the reprinted revision stays current.
run labels "$small" --bus E2E-MCC-1 --out "$TW_TMP/back.pdf" --manifest "$TW_TMP/L.registry" \
    --date 2026-12-03
expect_rc 3 "labels --bus that would lower the posted label is refused"
contains "$ERR" "signal word DANGER -> WARNING" "the refusal names DANGER -> WARNING"
check "no label written" test ! -e "$TW_TMP/back.pdf"
run labels "$small" --bus E2E-MCC-1 --out "$TW_TMP/back.pdf" --manifest "$TW_TMP/L.registry" \
    --date 2026-12-03 --approved-by "P. Engineer" --reason "relay restored to study settings"
expect_rc 0 "with --approved-by and --reason the lowered label is printed"
run permit "$small" --job "$jobs/job.json" --out "$TW_TMP/after-approval.pdf" --date 2026-12-03 \
    --manifest "$TW_TMP/L.registry"
expect_rc 0 "the permit matches the posted label again"
q=$(qr_of "$TW_TMP/after-approval.pdf" 1)
contains "$q" "/3/" "the permit's QR names the posted revision 3"
run verify --manifest "$TW_TMP/L.registry" "$q"
contains "$OUT" "approved by P. Engineer: relay restored to study settings" "verify shows the approval"

# Same input and date, same bytes.
run permit "$small" --job "$jobs/job.json" --out "$TW_TMP/again.pdf" --date 2026-12-01
check "output is byte-for-byte reproducible" cmp "$out" "$TW_TMP/again.pdf"

# No PPE adequate (48.2 cal/cm2 > the default 40 cal/cm2 top level): drafted, says so first, exit 3.
run permit "$small" --job "$jobs/job-no-ppe.json" --out "$TW_TMP/no-ppe.pdf" --date 2026-12-01
expect_rc 3 "no PPE adequate exits 3"
check "the no-PPE permit is still drafted" qpdf --check "$TW_TMP/no-ppe.pdf"
p1=$(page_text "$TW_TMP/no-ppe.pdf" 1)
contains "$p1" "NO PPE IS ADEQUATE" "the first section says no PPE is adequate"
contains "$p1" "ENERGIZED WORK SHOULD" "... and that energized work should not be performed"
first_line=$(printf '%s\n' "$p1" | grep -n "NO PPE IS ADEQUATE" | cut -d: -f1)
about_line=$(printf '%s\n' "$p1" | grep -n "About this draft" | cut -d: -f1)
[ "${first_line:-99}" -lt "${about_line:-0}" ] && ok "the statement comes before every other section" || fail "statement at line $first_line, cautions at $about_line"
contains "$ERR" "no PPE level" "stderr says why the exit status is 3"

# Unknown equipment: a clear error, exit 1, no file.
run permit "$small" --job "$jobs/job-unknown.json" --out "$TW_TMP/unknown.pdf"
expect_rc 1 "an unknown equipment ID"
contains "$ERR" "E2E-NO-SUCH-BUS" "the unknown ID is named"
contains "$ERR" "not in the results" "the error says the ID is not in the results"
contains "$ERR" "job-unknown.json:equipment_id" "the error names the job file and key"
check "no file for an unknown ID" test ! -e "$TW_TMP/unknown.pdf"

# A bus with data errors: refused with the check findings, no file.
run permit "$TW_DATA/core/missing-boundary.csv" --job "$jobs/job-data-error.json" --out "$TW_TMP/err.pdf"
expect_rc 1 "a bus with data errors is refused"
contains "$ERR" "missing-boundary.csv:3:" "the finding names the results file and line"
contains "$ERR" "arc_flash_boundary" "the finding names the field"
check "no file for a bus with errors" test ! -e "$TW_TMP/err.pdf"

# A bad job file: finding with the JSON path, no file.
run permit "$small" --job "$jobs/job-bad.json" --out "$TW_TMP/bad.pdf"
expect_rc 1 "a job file with a wrong type"
contains "$ERR" "crew[0].qualified" "the finding names the JSON path"
check "no file for a bad job file" test ! -e "$TW_TMP/bad.pdf"

# Batch: an array of two jobs, one PDF each, named after the (sanitized) work order.
run permit "$small" --job "$jobs/jobs.json" --out "$TW_TMP/batch" --date 2026-12-01
expect_rc 0 "a batch of two jobs"
n=$(find "$TW_TMP/batch" -name '*.pdf' | wc -l)
[ "$n" -eq 2 ] && ok "two PDFs written" || fail "expected 2 PDFs, found $n"
check "permit-WO-E2E-1.pdf passes qpdf --check" qpdf --check "$TW_TMP/batch/permit-WO-E2E-1.pdf"
check "permit-WO_E2E_2.pdf passes qpdf --check" qpdf --check "$TW_TMP/batch/permit-WO_E2E_2.pdf"
contains "$(pdftotext "$TW_TMP/batch/permit-WO_E2E_2.pdf" - 2>/dev/null)" "Class 2" "the second permit has its own bus's values (13.8 kV: ASTM D120 class 2)"
run permit "$small" --job "$jobs/jobs-same-order.json" --out "$TW_TMP/dup"
expect_rc 1 "two jobs that would share a file name"
check "nothing written for the clashing batch" test -z "$(find "$TW_TMP/dup" -name '*.pdf' 2>/dev/null)"

# Usage and I/O
run permit "$small" --out "$TW_TMP/x.pdf"
expect_rc 2 "--job is required"
run permit "$small" --job "$jobs/job.json" --out "$small"
expect_rc 3 "refuses to overwrite the results file"
run permit "$small" --job "$TW_TMP/no-such-job.json" --out "$TW_TMP/x.pdf"
expect_rc 3 "an unreadable job file is an I/O error"
check "no temporary files left" test -z "$(find "$TW_TMP" -name '.*.tmp')"
finish
