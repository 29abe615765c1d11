# t_determinism.sh - the same input and --date give the same bytes (PDFs and registry exports), and a
# run split into volumes writes the expected files, records each label's volume and page, and
# leaves nothing behind when a later volume fails; volumes drawn by several worker processes
# are the same bytes as those drawn by one. Checked with qpdf --check, pdfinfo and
# zbarimg (decoding the QR of a page in the second volume).
source "$(dirname "$0")/lib.sh"
small="$TW_DATA/core/small.csv"   # 4 buses, 5 scenario rows
R=tagwright-registry.db
field() { # field EXPORT EQUIPMENT_ID KEY: that label's value in a registry export
    python3 -c 'import json,sys; m=json.load(open(sys.argv[1])); print([l for l in m["labels"] if l["equipment_id"]==sys.argv[2] and l["status"]=="current"][0][sys.argv[3]])' "$1" "$2" "$3"
}

# --- byte-for-byte reproducible ------------------------------------------------------------
mkdir -p "$TW_TMP/a" "$TW_TMP/b"
run labels "$small" --out "$TW_TMP/a/labels.pdf" --date 2026-12-01
expect_rc 0 "first run"
run labels "$small" --out "$TW_TMP/b/labels.pdf" --date 2026-12-01
expect_rc 0 "second run, same input and date"
check "same PDF bytes from the same input and --date" cmp "$TW_TMP/a/labels.pdf" "$TW_TMP/b/labels.pdf"
check "same manifest bytes from the same input and --date" \
    cmp "$(exported "$TW_TMP/a/$R")" "$(exported "$TW_TMP/b/$R")"
contains "$(pdfinfo "$TW_TMP/a/labels.pdf" 2>/dev/null)" "Dec  1 00:00:00 2026" \
    "PDF creation date taken from --date, not the clock"

# --- volumes ----------------------------------------------------------------------------------
mkdir -p "$TW_TMP/v" "$TW_TMP/w"
run labels "$small" --out "$TW_TMP/v/labels.pdf" --volume-size 3 --date 2026-12-01
expect_rc 0 "4 labels at --volume-size 3"
contains "$OUT" "2 volumes" "the run reports its volumes"
check "volume 1 written as labels-001.pdf" test -s "$TW_TMP/v/labels-001.pdf"
check "volume 2 written as labels-002.pdf" test -s "$TW_TMP/v/labels-002.pdf"
check "no unsplit labels.pdf when the run is split" test ! -e "$TW_TMP/v/labels.pdf"
check "no third volume" test ! -e "$TW_TMP/v/labels-003.pdf"
check "qpdf --check passes volume 1" qpdf --check "$TW_TMP/v/labels-001.pdf"
check "qpdf --check passes volume 2" qpdf --check "$TW_TMP/v/labels-002.pdf"
contains "$(pdfinfo "$TW_TMP/v/labels-001.pdf" | tr -s ' ')" "Pages: 3" "volume 1 holds 3 labels"
contains "$(pdfinfo "$TW_TMP/v/labels-002.pdf" | tr -s ' ')" "Pages: 1" "volume 2 holds the last label"
check "no temporary files left" test -z "$(find "$TW_TMP/v" -name '.*' -type f ! -name '*.lock')"
m=$(exported "$TW_TMP/v/$R")
[ "$(field "$m" E2E-PNL-1 volume)/$(field "$m" E2E-PNL-1 page)/$(field "$m" E2E-PNL-1 output)" = "1/1/labels-001.pdf" ] &&
    ok "registry: first label in volume 1, page 1, labels-001.pdf" || fail "manifest volume of E2E-PNL-1"
[ "$(field "$m" E2E-SWGR-1 volume)/$(field "$m" E2E-SWGR-1 page)/$(field "$m" E2E-SWGR-1 output)" = "2/1/labels-002.pdf" ] &&
    ok "registry: fourth label in volume 2, page 1, labels-002.pdf" || fail "manifest volume of E2E-SWGR-1"
contains "$(page_text "$TW_TMP/v/labels-002.pdf" 1)" "E2E-SWGR-1" "volume 2 page 1 is the fourth bus"
if has_tool zbarimg && has_tool pdftoppm; then
    [ "$(qr_of "$TW_TMP/v/labels-002.pdf" 1)" = "$(field "$m" E2E-SWGR-1 payload)" ] &&
        ok "QR in volume 2 decodes to the registry's payload" || fail "QR in volume 2"
else
    fail "zbarimg/pdftoppm not installed"
fi
run labels "$small" --out "$TW_TMP/w/labels.pdf" --volume-size 3 --date 2026-12-01
check "split runs are reproducible too (volume 1)" cmp "$TW_TMP/v/labels-001.pdf" "$TW_TMP/w/labels-001.pdf"
check "split runs are reproducible too (volume 2)" cmp "$TW_TMP/v/labels-002.pdf" "$TW_TMP/w/labels-002.pdf"
check "split runs are reproducible too (registry)" cmp "$m" "$(exported "$TW_TMP/w/$R")"

# A batch that fits one volume keeps its name, whatever the volume size.
mkdir -p "$TW_TMP/one"
run labels "$small" --out "$TW_TMP/one/labels.pdf" --volume-size 4 --date 2026-12-01
check "4 labels at --volume-size 4: one labels.pdf" test -s "$TW_TMP/one/labels.pdf"
check "... and no numbered volume" test ! -e "$TW_TMP/one/labels-001.pdf"

# A label that cannot be drawn in the last volume: no volume at all, nothing recorded, no temp
# files.
mkdir -p "$TW_TMP/fail"
long=$(printf 'Very long description %.0s' $(seq 20))
sed "s/Incoming switchgear/\"$long\"/" "$small" >"$TW_TMP/late-fail.csv"
run labels "$TW_TMP/late-fail.csv" --out "$TW_TMP/fail/labels.pdf" --volume-size 1 --date 2026-12-01
expect_rc 1 "the last label does not fit its layout"
contains "$ERR" "E2E-SWGR-1" "the label that failed is named"
check "no volume left behind by a failed run" test -z "$(find "$TW_TMP/fail" -name '*.pdf')"
check "no temporary file left behind by a failed run" \
    test -z "$(find "$TW_TMP/fail" -name '.*' -type f ! -name '*.lock')"
check "nothing recorded by a failed run" test "$(grep -c equipment_id "$(exported "$TW_TMP/fail/$R")")" = 0

# Volumes drawn by several worker processes: the same bytes as one process.
mkdir -p "$TW_TMP/j1" "$TW_TMP/j3"
run labels "$small" --out "$TW_TMP/j1/labels.pdf" --volume-size 1 --jobs 1 --date 2026-12-01
expect_rc 0 "4 volumes drawn by one process"
run labels "$small" --out "$TW_TMP/j3/labels.pdf" --volume-size 1 --jobs 3 --date 2026-12-01
expect_rc 0 "4 volumes drawn by three worker processes"
for v in 001 002 003 004; do
    check "volume $v: the same bytes with --jobs 3 as with --jobs 1" \
        cmp "$TW_TMP/j1/labels-$v.pdf" "$TW_TMP/j3/labels-$v.pdf"
done
check "the manifest: the same bytes with --jobs 3 as with --jobs 1" \
    cmp "$(exported "$TW_TMP/j1/$R")" "$(exported "$TW_TMP/j3/$R")"
check "no temporary files left by the workers" \
    test -z "$(find "$TW_TMP/j3" -name '.*' -type f ! -name '*.lock')"

# A worker whose volume fails: the run fails with that label's message, nothing is published.
mkdir -p "$TW_TMP/jfail"
run labels "$TW_TMP/late-fail.csv" --out "$TW_TMP/jfail/labels.pdf" --volume-size 1 --jobs 3 \
    --date 2026-12-01
expect_rc 1 "a failing worker fails the run"
contains "$ERR" "E2E-SWGR-1" "the label that failed is named, as with one process"
check "no volume published when a worker fails" test -z "$(find "$TW_TMP/jfail" -name '*.pdf')"
check "no temporary file left when a worker fails" \
    test -z "$(find "$TW_TMP/jfail" -name '.*' -type f ! -name '*.lock')"
check "nothing recorded when a worker fails" test "$(grep -c equipment_id "$(exported "$TW_TMP/jfail/$R")")" = 0

for bad in 0 -1 65 two; do
    run labels "$small" --out "$TW_TMP/bad.pdf" --jobs "$bad"
    expect_rc 2 "--jobs $bad is a usage error"
done

# --volume-size is checked as it is parsed.
for bad in 0 -3 abc 30001 12x; do
    run labels "$small" --out "$TW_TMP/bad.pdf" --volume-size "$bad"
    expect_rc 2 "--volume-size $bad is a usage error"
done
check "nothing written for a bad --volume-size" test ! -e "$TW_TMP/bad.pdf"
finish
