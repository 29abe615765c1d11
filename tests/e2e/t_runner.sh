#!/usr/bin/env bash
# t_runner.sh - the e2e runner itself: a script that ends early is a named failure, and the
# assertions it made before still count (issue 13, item 12).
. "$(dirname "$0")/lib.sh"
cd "$TW_TMP"
cat >t_ends_early.sh <<SCRIPT
. "$TW_ROOT/tests/e2e/lib.sh"
ok "the first assertion"
false
ok "never reached"
finish
SCRIPT
cat >t_whole.sh <<SCRIPT
. "$TW_ROOT/tests/e2e/lib.sh"
ok "one"
ok "two"
finish
SCRIPT
set +e
out=$("$TW_ROOT/tests/e2e/run" "$TW_TMP/t_ends_early.sh" "$TW_TMP/t_whole.sh" 2>&1)
rc=$?
set -e
[ "$rc" -ne 0 ] && ok "the runner fails when a script ends early (exit $rc)" ||
    fail "the runner exited 0 after a script ended early"
contains "$out" "t_ends_early.sh ended early (exit 1) after 1 passed" "the early end is named"
contains "$out" "e2e: 3 passed, 1 failed" "the counts include the assertions made before"
finish
