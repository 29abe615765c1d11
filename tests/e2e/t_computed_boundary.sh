# t_computed_boundary.sh - a missing arc-flash boundary is computed only with the study's own
# distance exponent, and the label and registry say so; without one the bus is refused.
source "$(dirname "$0")/lib.sh"
run check "$TW_DATA/core/computed-boundary.csv"
expect_rc 0 "check accepts a boundary it can compute from the study's exponent"
contains "$OUT" "computed from incident energy" "check says the boundary will be computed"
# D = 18 in = 457.2 mm, E = 8.0 cal/cm2, x = 1.641 (hand computation):
# 457.2 x (8 / 1.2)^(1 / 1.641) = 457.2 x 3.1775 = 1452.7 mm -> 1453 mm; 57.2 in -> 58 in = 4 ft 10 in
run labels "$TW_DATA/core/computed-boundary.csv" --out "$TW_TMP/c.pdf" --date 2026-12-01
expect_rc 0 "labels prints the computed boundary"
text=$(pdftotext "$TW_TMP/c.pdf" - 2>/dev/null)
contains "$text" "4 ft 10 in (1453 mm)" "the computed boundary, rounded up"
contains "$text" "computed from incident energy" "the label says the boundary was computed"
contains "$(cat "$(exported "$TW_TMP/tagwright-registry.db")")" "boundary_note=computed from incident energy" "the registry says so too"
# Without the study's exponent the boundary is not guessed from a table: the bus is refused.
sed 's/,1.641$/,/' "$TW_DATA/core/computed-boundary.csv" >"$TW_TMP/noexp.csv"
run labels "$TW_TMP/noexp.csv" --out "$TW_TMP/n.pdf"
expect_rc 1 "no exponent: no computed boundary, no label"
check "no PDF written" test ! -e "$TW_TMP/n.pdf"
finish
