#!/usr/bin/env bash
# t_atomic.sh - nothing lost: a labels run killed midway (SIGTERM, SIGINT, SIGHUP, SIGKILL; while
# it computes and while it is writing its output, in one PDF or in volumes) leaves the earlier
# PDF and registry as they were (or, past the point of recording, both the new ones), and once
# the registry is next opened no partial or temporary file beside them. The large input is
# generated here;
# TW_ATOMIC_BUSES sets its size (default 2000 buses).
source "$(dirname "$0")/lib.sh"

N=${TW_ATOMIC_BUSES:-2000}
DIR="$TW_TMP/atomic"
mkdir -p "$DIR"
HEADER="equipment_id,description,location,study_id,study_date,scenario,nominal_voltage_v,working_distance_in,incident_energy_cal_cm2,arc_flash_boundary_in"
# Fictional buses of one study, energies from 1 to 30.9 cal/cm2.
awk -v n="$N" -v h="$HEADER" 'BEGIN { print h
    for (i = 0; i < n; i++)
        printf "AT-PNL-%05d,Panel %d,Building %d,AT-2025-1,2025-01-31,max,480,18,%.1f,%d\n",
               i, i, i % 40, 1 + (i % 300) / 10.0, 20 + i % 100 }' >"$TW_TMP/big.csv"
head -n 4 "$TW_TMP/big.csv" >"$TW_TMP/small.csv"

PDF="$DIR/labels.pdf"
MANIFEST="$DIR/tagwright-registry.db"
run labels "$TW_TMP/small.csv" --out "$PDF" --date 2025-02-28
expect_rc 0 "the earlier run prints 3 labels"
# the registry as a reader sees it (the first opener after a killed run finishes or clears it)
registry_state() { "$TW_BIN" registry export --manifest "$MANIFEST" 2>&1 | sha256sum; }
before_pdf=$(sha256sum <"$PDF")
before_manifest=$(registry_state)
cp "$PDF" "$TW_TMP/earlier.pdf"
cp "$MANIFEST" "$TW_TMP/earlier.registry"
restore() {
    cp "$TW_TMP/earlier.pdf" "$PDF"
    rm -f "$MANIFEST-wal" "$MANIFEST-shm"
    cp "$TW_TMP/earlier.registry" "$MANIFEST"
}

# both_new: a signal held back while both outputs were being renamed ends the run just after;
# then the PDF and the manifest must both be the complete new ones.
both_new() {
    [ "$(pdfinfo "$PDF" 2>/dev/null | sed -n 's/^Pages: *//p')" = "$N" ] &&
        "$TW_BIN" registry export --manifest "$MANIFEST" --format csv |
            grep -q "^AT-PNL-$(printf '%05d' $((N - 1))),1,current"
}

# only_outputs: the directory holds the PDF, the registry and its lock file, nothing else.
only_outputs() {
    local f
    for f in "$DIR"/* "$DIR"/.[!.]*; do
        [ -e "$f" ] || continue
        case $(basename "$f") in
        labels.pdf | tagwright-registry.db | tagwright-registry.db.lock) ;;
        tagwright-registry.db-wal | tagwright-registry.db-shm) ;;
        *) echo "  unexpected file: $f"; return 1 ;;
        esac
    done
}

# writing PID: 1 while the process has a file open in $DIR other than the manifest lock.
writing() {
    ls -l "/proc/$1/fd" 2>/dev/null | grep -F "$DIR/" | grep -vq '\.lock$'
}

# kill_run SIGNAL WHEN: start a large run, send SIGNAL when WHEN is "writing" (a file is open in
# the output directory) or after WHEN seconds; sets KILLED=1 when the signal ended the run.
kill_run() {
    local sig=$1 when=$2 waited=0
    shift 2 # further arguments go to labels (e.g. --volume-size)
    # job control on, so that the background run does not start with SIGINT ignored
    set -m
    "${TW_WRAP_CMD[@]}" "$TW_BIN" labels "$TW_TMP/big.csv" --out "$PDF" --date 2025-03-01 "$@" \
        >/dev/null 2>"$TW_TMP/kill.err" &
    local pid=$!
    set +m
    if [ "$when" = writing ]; then
        while kill -0 "$pid" 2>/dev/null && ! writing "$pid" && [ $waited -lt 60000 ]; do
            sleep 0.002
            waited=$((waited + 2))
        done
    else
        sleep "$when"
    fi
    WAS_WRITING=0
    if writing "$pid"; then WAS_WRITING=1; fi
    kill "-$sig" "$pid" 2>/dev/null
    set +e
    wait "$pid" 2>/dev/null
    local rc=$?
    set -e
    KILLED=0
    if [ $rc -gt 128 ]; then KILLED=1; fi
}

# ignored SIG: SIG was ignored when this shell started (a background job ignores SIGINT, nohup
# SIGHUP); bash cannot undo that, so neither can the runs it starts - and tagwright keeps it so.
ignored() {
    local mask num
    num=$(kill -l "$1")
    mask=$(awk '/^SigIgn:/ { print $2 }' /proc/$$/status 2>/dev/null)
    [ -n "$mask" ] && (( (16#$mask >> (num - 1)) & 1 ))
}

# The last two runs print in volumes of N/4 labels (labels-001.pdf ...): none may appear.
for run_case in TERM:0.3 TERM:writing INT:0.3 INT:writing HUP:0.3 HUP:writing KILL:0.3 \
    KILL:writing TERM:writing:volumes KILL:writing:volumes; do
    IFS=: read -r sig when volumes <<<"$run_case"
    if ignored "$sig"; then
        echo "  (SIG$sig is ignored in this shell, as in a background job or under nohup, and so"
        echo "   in the runs it starts: the SIG$sig case ($when) is skipped)"
        continue
    fi
    what="SIG$sig $([ "$when" = writing ] && echo "while writing" || echo "after ${when}s")"
    extra=(--volume-size "$N") # one PDF
    if [ -n "$volumes" ]; then
        what="$what, in volumes"
        extra=(--volume-size $((N / 4)))
    fi
    {
        kill_run "$sig" "$when" "${extra[@]}"
        if [ $KILLED -eq 1 ] && [ "$when" = writing ] && [ $WAS_WRITING -eq 0 ]; then
            fail "$what: the run was killed before it opened its output; nothing was tested"
        elif [ $KILLED -eq 1 ]; then
            ok "$what: the run was killed midway$([ $WAS_WRITING -eq 1 ] && echo ", its output open")"
        else
            fail "$what: the run ended before the signal; raise TW_ATOMIC_BUSES"
        fi
        state=$(registry_state) # the next run: finishes a recorded run, clears an unrecorded one
        if [ "$(sha256sum <"$PDF")" = "$before_pdf" ]; then
            ok "$what: the earlier PDF is intact"
            [ "$state" = "$before_manifest" ] &&
                ok "$what: the earlier registry is intact" ||
                fail "$what: the registry changed without the PDF"
        elif both_new; then
            ok "$what: the signal came once the run was recorded; both are the new ones"
        else
            fail "$what: the earlier PDF changed and the new outputs are not complete"
        fi
        only_outputs && ok "$what: no partial or temporary file left once the registry is opened" ||
            fail "$what: files left behind"
        restore
    }
done
# A worker process killed while the parent prepares the records: the run fails with exit 3 and
# names it, and nothing is published (the parent's signal handler is not involved here).
if [ -z "${TW_WRAP:-}" ]; then
    set -m
    "$TW_BIN" labels "$TW_TMP/big.csv" --out "$PDF" --date 2025-03-01 --volume-size $((N / 4)) \
        --jobs 2 >/dev/null 2>"$TW_TMP/worker.err" &
    parent=$!
    set +m
    child=""
    for _ in $(seq 1 400); do
        child=$(pgrep -P "$parent" 2>/dev/null | head -n 1)
        [ -n "$child" ] && break
        sleep 0.01
    done
    [ -n "$child" ] && kill -KILL "$child" 2>/dev/null || true
    rc=0
    wait "$parent" || rc=$?
    if [ -z "$child" ]; then
        fail "a killed worker: no worker process was seen"
    else
        [ "$rc" -eq 3 ] && ok "a killed worker fails the run (exit 3)" || fail "a killed worker: exit $rc"
        contains "$(cat "$TW_TMP/worker.err")" "ended by signal 9" "a killed worker is named with its signal"
        [ "$(sha256sum <"$PDF")" = "$before_pdf" ] && ok "a killed worker: the earlier PDF is intact" ||
            fail "a killed worker: the earlier PDF changed"
        only_outputs && ok "a killed worker: no volume or temporary file left" ||
            fail "a killed worker: files left behind"
    fi
fi
if has_tool qpdf; then
    check "the earlier PDF still passes qpdf --check" qpdf --check "$PDF"
fi
finish
