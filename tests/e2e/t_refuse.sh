# t_refuse.sh - fail closed: a bus with a missing boundary gets no label, the run writes nothing,
# and an earlier PDF stays intact; --draft prints a watermarked draft instead.
source "$(dirname "$0")/lib.sh"
out="$TW_TMP/labels.pdf"
echo "earlier output" >"$out"
run labels "$TW_DATA/core/missing-boundary.csv" --out "$out"
expect_rc 1 "labels refuses a study with a missing boundary"
contains "$ERR" "missing-boundary.csv:3:" "the error names the file and line"
contains "$ERR" "E2E-NOAFB-1" "the error names the equipment"
contains "$ERR" "arc_flash_boundary" "the error names the field"
check "the earlier output is intact" grep -q "earlier output" "$out"
check "no temporary files left" test -z "$(find "$TW_TMP" -name '.labels.pdf.*')"
check "no registry written" test ! -e "$TW_TMP/tagwright-registry.db"

run labels "$TW_DATA/core/missing-boundary.csv" --out "$TW_TMP/draft.pdf" --draft --date 2026-12-01
expect_rc 0 "--draft prints watermarked drafts"
contains "$(pdftotext "$TW_TMP/draft.pdf" - 2>/dev/null)" "NOT FOR POSTING" "the draft is watermarked"
check "qpdf --check passes on drafts" qpdf --check "$TW_TMP/draft.pdf"
if [ -e "$TW_TMP/tagwright-registry.db" ]; then
    lacks "$(cat "$(exported "$TW_TMP/tagwright-registry.db")")" "E2E-NOAFB-1" "drafts are not recorded as posted labels"
fi

run labels "$TW_DATA/core/small.csv" --out "$TW_DATA/core/small.csv"
expect_rc 3 "refuses to overwrite the input file"
run labels "$TW_DATA/core/small.csv" --out "$TW_TMP"
expect_rc 3 "refuses a directory as output"
run labels "$TW_TMP/no-such-file.csv" --out "$TW_TMP/x.pdf"
expect_rc 3 "an unreadable input is an I/O error"
contains "$ERR" "no-such-file.csv" "the unreadable path is named"
run labels
expect_rc 2 "no arguments is a usage error"
finish
