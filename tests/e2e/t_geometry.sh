#!/usr/bin/env bash
# t_geometry.sh - no text on a label is drawn over other text or outside the label: the known
# failing case (a long site caution on the side-QR layouts) and random field lengths over every
# shipped layout and language, checked on the PDF with pdftotext -bbox (label_geometry.py).
# TW_GEOMETRY_CASES sets the random cases per layout and language (default 3);
# TW_GEOMETRY_SEED the seed (default 13).
# shellcheck source=lib.sh
. "$(dirname "$0")/lib.sh"

has_tool pdftotext || { fail "pdftotext is needed (poppler-utils)"; finish; exit; }
mkdir -p "$TW_TMP/geometry"
set +e
report=$(python3 "$TW_ROOT/tests/e2e/label_geometry.py" "$TW_BIN" "$TW_ROOT/layouts" \
    "$TW_TMP/geometry" "${TW_GEOMETRY_CASES:-3}" 2>&1)
status=$?
set -e
echo "$report" | sed 's/^/    /'
summary=$(echo "$report" | tail -n 1)
[ "$status" -eq 0 ] && ok "label geometry: $summary" || fail "label geometry: $summary"
contains "$summary" " 0 problems" "no label drew text over text or outside the label"
finish
