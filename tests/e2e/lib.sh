# lib.sh - helpers for the end-to-end tests. Each t_*.sh sources this, runs the built binary
# ($TW_BIN) and calls ok/fail per assertion; the runner adds up the results.
set -u
: "${TW_BIN:?TW_BIN must point at the built tagwright}"
TW_ROOT=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
TW_DATA="$TW_ROOT/tests/data"
TW_TMP=$(mktemp -d /tmp/tw-e2e.XXXXXX)
trap 'rm -rf "$TW_TMP"' EXIT
export TAGWRIGHT_LAYOUTS="$TW_ROOT/layouts"
PASSES=0
FAILS=0
RESULTS_FILE=${TW_RESULTS_FILE:-/dev/null}

# Each result is recorded as it happens, so a script that ends early still counts what it did;
# finish records "done", and the runner names a script without it as a failure.
ok()   { PASSES=$((PASSES + 1)); echo "1 0" >>"$RESULTS_FILE"; echo "  ok   $*"; }
fail() { FAILS=$((FAILS + 1)); echo "0 1" >>"$RESULTS_FILE"; echo "  FAIL $*"; }
check() { # check "description" command...
    local what=$1; shift
    if "$@" >/dev/null 2>&1; then ok "$what"; else fail "$what"; fi
}
has_tool() { command -v "$1" >/dev/null 2>&1; }
# TW_WRAP: a command every run is wrapped in, e.g. valgrind (make valgrind sets it).
# shellcheck disable=SC2206
TW_WRAP_CMD=(${TW_WRAP:-})
# run CMD...: runs tagwright, keeps stdout/stderr/status in $OUT $ERR $RC
run() {
    set +e
    "${TW_WRAP_CMD[@]}" "$TW_BIN" "$@" >"$TW_TMP/stdout" 2>"$TW_TMP/stderr"
    RC=$?
    set -e
    OUT=$(cat "$TW_TMP/stdout")
    ERR=$(cat "$TW_TMP/stderr")
}
expect_rc() { # expect_rc N "what"
    if [ "$RC" -eq "$1" ]; then ok "$2 (exit $RC)"; else fail "$2: expected exit $1, got $RC; stderr: $ERR"; fi
}
contains() { # contains "haystack" "needle" "what"
    case "$1" in *"$2"*) ok "$3";; *) fail "$3: '$2' not found";; esac
}
lacks() {
    case "$1" in *"$2"*) fail "$3: '$2' found";; *) ok "$3";; esac
}
# page_text PDF N: text of page N (pdftotext)
page_text() { pdftotext -f "$2" -l "$2" -layout "$1" - 2>/dev/null; }
# qr_of PDF N: decoded QR payload of page N rendered at 300 dpi
qr_of() {
    pdftoppm -f "$2" -l "$2" -r 300 -png "$1" "$TW_TMP/qr" >/dev/null 2>&1
    zbarimg -q --raw "$TW_TMP"/qr-*.png 2>/dev/null | head -n 1
    rm -f "$TW_TMP"/qr-*.png
}
# exported REGISTRY: its JSON export in a file beside it (REGISTRY.json), for python3 to read
exported() { "$TW_BIN" registry export --manifest "$1" >"$1.json" 2>/dev/null; echo "$1.json"; }
finish() {
    echo "done" >>"$RESULTS_FILE"
    [ "$FAILS" -eq 0 ]
}
set -e
