# t_check.sh - `tagwright check`: one line per finding, a count, exit 0/1/2.
source "$(dirname "$0")/lib.sh"
run check "$TW_DATA/core/small.csv"
expect_rc 0 "check passes a clean study"
contains "$OUT" "0 errors" "the count line says 0 errors"
run check "$TW_DATA/core/missing-boundary.csv"
expect_rc 1 "check fails a study with a missing boundary"
contains "$OUT" "missing-boundary.csv:3: error: E2E-NOAFB-1: arc_flash_boundary" "FILE:LINE: error: ID: field: format"
contains "$OUT" "1 error" "the count line"
run check
expect_rc 2 "check without a file is a usage error"
run check --bogus x
expect_rc 2 "unknown option is a usage error"
if [ -e "$TW_ROOT/example-jobs/broken.csv" ]; then
    run check "$TW_ROOT/example-jobs/broken.csv"
    expect_rc 1 "the demo's broken file fails check"
fi
finish
