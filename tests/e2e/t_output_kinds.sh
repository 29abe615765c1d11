#!/usr/bin/env bash
# t_output_kinds.sh - an output path that names a symbolic link, a FIFO or a device node is
# refused with exit 3 and left as it was; an output naming a label record is refused. Every
# command that writes is tried. Nothing here touches the system's /dev/null: the device case
# uses a symbolic link to it (and a device node of our own when mknod is allowed).
# shellcheck source=lib.sh
. "$(dirname "$0")/lib.sh"

SMALL="$TW_DATA/core/small.csv"
JOB="$TW_DATA/permit/job.json"
D="$TW_TMP/kinds"
mkdir -p "$D"
cd "$D"

# A first run makes the label record that permit and reprint need.
run labels "$SMALL" --out posted.pdf --manifest posted.registry --date 2026-10-01
expect_rc 0 "labels for the record permit and reprint read"

# tw_run ARGS...: as run, but a run that blocks on a FIFO fails after 60 s instead of hanging.
tw_run() {
    set +e
    timeout 60 "${TW_WRAP_CMD[@]}" "$TW_BIN" "$@" >"$TW_TMP/stdout" 2>"$TW_TMP/stderr" </dev/null
    RC=$?
    set -e
    OUT=$(cat "$TW_TMP/stdout")
    ERR=$(cat "$TW_TMP/stderr")
}

# make_target KIND PATH: a FIFO, a symlink to a regular file, a symlink to /dev/null, a
# dangling symlink, or a character device (0 when made, 1 when the system does not allow it).
make_target() {
    rm -f "$2" keep.txt
    case $1 in
    fifo) mkfifo "$2" ;;
    link) echo "keep me" >keep.txt && ln -s keep.txt "$2" ;;
    devlink) ln -s /dev/null "$2" ;;
    dangling) ln -s no-such-file "$2" ;;
    chardev) mknod "$2" c 1 3 2>/dev/null || return 1 ;;
    esac
}

# still_there KIND PATH: the path is still what make_target made.
still_there() {
    case $1 in
    fifo) [ -p "$2" ] ;;
    link) [ -L "$2" ] && [ "$(cat keep.txt)" = "keep me" ] ;;
    devlink | dangling) [ -L "$2" ] ;;
    chardev) [ -c "$2" ] ;;
    esac
}

# try "what" KIND ARGS... (the output is the file named out.x in ARGS)
try() {
    local what=$1 kind=$2
    shift 2
    make_target "$kind" out.x || { ok "$what: $kind (mknod not allowed here; skipped)"; return; }
    tw_run "$@"
    expect_rc 3 "$what --out naming a $kind is refused"
    contains "$ERR" "out.x: is a" "$what: the message names the output and what it is"
    still_there "$kind" out.x && ok "$what: the $kind is left as it was" ||
        fail "$what: the $kind was replaced"
    rm -f out.x keep.txt
}

for kind in fifo link devlink dangling chardev; do
    try labels "$kind" labels "$SMALL" --out out.x --manifest m1.registry --date 2026-10-01
    try permit "$kind" permit "$SMALL" --job "$JOB" --manifest posted.registry \
        --out out.x --date 2026-10-01
    try reprint "$kind" reprint "$SMALL" --bus E2E-MCC-1 --clearing-time 0.05 --reason test \
        --manifest posted.registry --out out.x --date 2026-10-02
    try "diff --out" "$kind" diff "$SMALL" "$SMALL" --out out.x --manifest m2.registry \
        --date 2026-10-01
    try summary "$kind" summary "$SMALL" --out out.x --date 2026-10-01
    try envelope "$kind" envelope "$SMALL" --format json --out out.x
done
ls .m1* m1.registry m2.registry >/dev/null 2>&1 && fail "a refused run left a record or a temporary file" ||
    ok "no refused run left a record or a temporary file"

# The label record itself (--manifest): a FIFO is refused; a symbolic link is followed to the
# file it names (docs/registry.md), which is refused when it is not a registry, and the link
# stays a link.
for kind in fifo link; do
    make_target "$kind" rec.db
    tw_run labels "$SMALL" --out new.pdf --manifest rec.db --date 2026-10-01
    [ "$RC" -ne 0 ] && ok "labels --manifest naming a $kind that is no registry is refused (exit $RC)" ||
        fail "labels --manifest naming a $kind was accepted"
    still_there "$kind" rec.db && ok "the $kind given as the record is left as it was" ||
        fail "the $kind given as the record was replaced"
    [ ! -e new.pdf ] && ok "no PDF when the record is a $kind" || fail "new.pdf written"
    rm -f rec.db rec.db.lock keep.txt new.pdf
done

# An output naming an existing label record (not the one the command updates) is refused.
cp posted.registry record.keep
for cmd in labels summary envelope; do
    case $cmd in
    labels) tw_run labels "$SMALL" --out posted.registry --manifest m3.registry --date 2026-10-01 ;;
    summary) tw_run summary "$SMALL" --out posted.registry --date 2026-10-01 ;;
    envelope) tw_run envelope "$SMALL" --format json --out posted.registry ;;
    esac
    expect_rc 3 "$cmd --out naming a label record is refused"
    contains "$ERR" "record of printed labels" "$cmd: the message says it is a label record"
    cmp -s posted.registry record.keep && ok "$cmd: the record is unchanged" ||
        fail "$cmd: the record was overwritten"
done

# A regular file is still replaced as before.
echo old >plain.pdf
tw_run labels "$SMALL" --out plain.pdf --manifest m4.registry --date 2026-10-01
expect_rc 0 "an existing regular file is replaced"
[ -f plain.pdf ] && [ ! -L plain.pdf ] && check "it is now a PDF" qpdf --check plain.pdf ||
    fail "plain.pdf is not a regular PDF"

finish
