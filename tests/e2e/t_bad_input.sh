#!/usr/bin/env bash
# t_bad_input.sh - every file of the bad-input corpus (tests/bad-input/expect.tsv) gives the
# expected exit status and a message naming the file, the line or JSON path and the field; runs
# that fail write nothing. Then output paths: directories, inputs and missing directories are
# refused before any work. Inputs too big to keep in the repository are generated here.
source "$(dirname "$0")/lib.sh"

BI="$TW_ROOT/tests/bad-input"
GEN="$TW_TMP/gen"
OUTDIR="$TW_TMP/out"
MDIR="$TW_TMP/manifest"
mkdir -p "$GEN" "$OUTDIR" "$MDIR"

# repeat N TEXT: TEXT written N times, no newline.
repeat() { awk -v n="$1" -v s="$2" 'BEGIN { for (i = 0; i < n; i++) printf "%s", s }'; }

generate() { # generate NAME: write $GEN/NAME
    local f="$GEN/$1"
    case $1 in
    csv-10mb-line.csv) # one 10 MiB unquoted cell on a single line
        { printf 'equipment_id,description\nBI-PNL-1,'; head -c 10485760 /dev/zero | tr '\0' x
          printf '\n'; } >"$f" ;;
    csv-10mb-header.csv) # a 10 MB header line of 5 million columns
        { printf 'equipment_id'; repeat 5000000 ',c'; printf '\n'; } >"$f" ;;
    csv-10mb-row-of-cells.csv) # a 10 MB data row of 5 million cells
        { printf 'equipment_id,nominal_voltage_v\nBI-PNL-1'; repeat 5000000 ',1'; printf '\n'; } >"$f" ;;
    csv-long-quoted-cell.csv) # a quoted cell that never ends within 64 KiB
        { printf 'equipment_id,description\nBI-PNL-1,"'; repeat 20000 'line\n'; printf '"\n'; } >"$f" ;;
    csv-many-findings.csv) # 60000 rows with several errors each: more than 100000 findings
        { printf 'equipment_id,nominal_voltage_v,incident_energy_cal_cm2\n'
          awk 'BEGIN { for (i = 0; i < 60000; i++) printf "BI-%d,x,y\n", i }'; } >"$f" ;;
    json-10mb-line.json) # a 10 MiB description on a single line
        { printf '{"buses": [{"equipment_id": "BI-PNL-1", "description": "'
          head -c 10485760 /dev/zero | tr '\0' x; printf '"}]}\n'; } >"$f" ;;
    json-too-many-values.json) # more values than the JSON limit, in 10 MB
        { printf '['; repeat 5000001 '0,'; printf '0]\n'; } >"$f" ;;
    *) return 1 ;;
    esac
}

# no_outputs DIR KEEP...: DIR holds nothing but the files named (and manifest lock files).
no_outputs() {
    local dir=$1 f base keep
    shift
    for f in "$dir"/* "$dir"/.[!.]*; do
        [ -e "$f" ] || continue
        base=$(basename "$f")
        case $base in *.lock) continue ;; esac
        for keep in "$@"; do [ "$base" = "$keep" ] && continue 2; done
        return 1
    done
    return 0
}

check_entry() { # check_entry FILE COMMAND EXIT REGEX
    local file=$1 cmd=$2 want=$3 rx=$4 dir=$BI name=$1
    if [ "${file#gen:}" != "$file" ]; then
        name=${file#gen:}
        dir=$GEN
        [ -e "$GEN/$name" ] || generate "$name" || { fail "$file: no generator"; return; }
    fi
    [ -e "$dir/$name" ] || { fail "$file: missing from the corpus"; return; }
    rm -rf "${OUTDIR:?}"/* "${OUTDIR:?}"/.[!.]* "${MDIR:?}"/* "${MDIR:?}"/.[!.]*
    pushd "$dir" >/dev/null
    case $cmd in
    check)    run check "$name" ;;
    labels)   run labels "$name" --out "$OUTDIR/out.pdf" --date 2025-02-28 ;;
    site)     run check "$BI/good.csv" --site "$name" ;;
    layout)   run labels "$BI/good.csv" --layout "$name" --out "$OUTDIR/out.pdf" --date 2025-02-28 ;;
    permit)   run permit "$BI/good.csv" --job "$name" --out "$OUTDIR/permit.pdf" --date 2025-02-28 ;;
    manifest) cp "$name" "$MDIR/$name"
              cd "$MDIR"
              run registry import "$name" --manifest "$MDIR/site.registry" ;;
    *)        popd >/dev/null; fail "$file: unknown command '$cmd' in expect.tsv"; return ;;
    esac
    popd >/dev/null
    local all="$OUT"$'\n'"$ERR" problems=""
    [ "$RC" -eq "$want" ] || problems+=" exit $RC (expected $want);"
    grep -Eq -- "$rx" <<<"$all" || problems+=" message not matched;"
    no_outputs "$OUTDIR" || problems+=" left files in the output directory: $(ls -A "$OUTDIR");"
    if [ "$cmd" = manifest ]; then
        cmp -s "$dir/$name" "$MDIR/$name" || problems+=" the manifest was changed;"
        no_outputs "$MDIR" "$name" || problems+=" left files beside the manifest;"
    fi
    if [ -z "$problems" ]; then
        ok "$file ($cmd): exit $RC, message matches"
    else
        fail "$file ($cmd):$problems /$rx/ vs: $(head -c 600 <<<"$all")"
    fi
}

echo "-- bad-input corpus"
count=0
while IFS=$'\t' read -r file cmd want rx; do
    case $file in '#'* | '') continue ;; esac
    check_entry "$file" "$cmd" "$want" "$rx"
    count=$((count + 1))
done <"$BI/expect.tsv"
files=$(find "$BI" -type f ! -name expect.tsv ! -name good.csv | wc -l)
[ "$files" -ge 100 ] && ok "the corpus has $files files (at least 100), $count cases" ||
    fail "the corpus has only $files files"
listed=1
for f in "$BI"/*; do
    case $(basename "$f") in expect.tsv | good.csv) continue ;; esac
    grep -q "^$(basename "$f")"$'\t' "$BI/expect.tsv" || { listed=0; echo "  not listed: $f"; }
done
[ $listed -eq 1 ] && ok "every corpus file has an expectation" || fail "corpus files without an expectation"

echo "-- output paths"
cp "$BI/good.csv" "$TW_TMP/results.csv"
cd "$TW_TMP"
run labels results.csv --out "$OUTDIR"
expect_rc 3 "a directory as --out is refused"
contains "$ERR" "is a directory, expected an output file name" "the message says it is a directory"
run labels results.csv --out results.csv
expect_rc 3 "--out naming the results file is refused"
contains "$ERR" "refusing to overwrite it" "the message says the input is kept"
cmp -s results.csv "$BI/good.csv" && ok "the results file is unchanged" || fail "the results file was changed"
ln -sf results.csv link.csv
run labels results.csv --out link.csv
expect_rc 3 "--out naming a symbolic link to the results file is refused"
echo '{"site_name": "Bad-input test site"}' >site.json
cp site.json site.orig
run labels results.csv --site site.json --out site.json
expect_rc 3 "--out naming the site file is refused"
cmp -s site.json site.orig && ok "the site file is unchanged" || fail "the site file was changed"
run labels results.csv --out new.pdf --manifest new.pdf
expect_rc 3 "--manifest naming the PDF is refused"
contains "$ERR" "is also given as new.pdf" "the message names the clash"
[ ! -e new.pdf ] && ok "nothing written for the clash" || fail "new.pdf written"
cp "$TW_ROOT/layouts/4x6.json" lay.json
run labels results.csv --layout ./lay.json --out lay.json
expect_rc 3 "--out naming the layout file is refused"
cmp -s lay.json "$TW_ROOT/layouts/4x6.json" && ok "the layout file is unchanged" || fail "the layout file was changed"
run labels results.csv --out "$TW_TMP/no-such-dir/labels.pdf"
expect_rc 3 "an output directory that does not exist is refused"
contains "$ERR" "no-such-dir does not exist" "the message names the directory"
run labels results.csv --out ""
expect_rc 3 "an empty --out is refused"
run labels results.csv --out out.pdf --manifest "$OUTDIR"
expect_rc 3 "a directory as --manifest is refused"
contains "$ERR" "is a directory" "the message says it is a directory"
run labels results.csv --out out.pdf --manifest results.csv
expect_rc 1 "--manifest naming the results CSV is refused (not a manifest)"
cmp -s results.csv "$BI/good.csv" && ok "the results file is still unchanged" || fail "the results file was changed"
[ ! -e out.pdf ] && ok "no PDF written when the manifest is refused" || fail "out.pdf written"
run labels "$TW_DATA/core/small.csv" --out posted.pdf --manifest posted.registry --date 2026-10-01
cp posted.registry posted.keep
run permit "$TW_DATA/core/small.csv" --job "$TW_DATA/permit/job.json" \
    --manifest posted.registry --out posted.registry --date 2026-10-01
expect_rc 3 "permit --out naming its --manifest (no --site) is refused"
cmp -s posted.registry posted.keep && ok "the registry is unchanged" ||
    fail "the registry was overwritten by the permit"
run reprint "$TW_DATA/core/small.csv" --bus E2E-MCC-1 --clearing-time 0.1 --reason test \
    --manifest posted.registry --out posted.registry --date 2026-10-02
expect_rc 3 "reprint --out naming its --manifest (no --site) is refused"
cmp -s posted.registry posted.keep && ok "the registry is unchanged by reprint" ||
    fail "the registry was overwritten by the reprinted PDF"
run diff "$TW_DATA/core/small.csv" "$TW_DATA/core/small.csv" \
    --manifest posted.registry --out posted.registry --date 2026-10-02
expect_rc 3 "diff --out naming its --manifest (no --site) is refused"
cmp -s posted.registry posted.keep && ok "the registry is unchanged by diff" ||
    fail "the registry was overwritten by diff"
payload=$("$TW_BIN" registry export --manifest posted.registry --format csv --status current |
    grep -io 'https://[^,]*' | head -n 1)
{ printf '%s' "$payload"; repeat 9000 x; printf '\n'; } >long-payload.txt
run verify --manifest posted.registry - <long-payload.txt
expect_rc 2 "verify: a payload on stdin longer than 8192 bytes is refused, not cut short"
contains "$ERR" "longer than 8192 bytes" "the message gives the limit"
printf '%s\n' "$payload" >payload.txt
run verify --manifest posted.registry - <payload.txt
expect_rc 0 "verify: the same payload of normal length is current"
run check no-such-results.csv
expect_rc 3 "a missing results file is an I/O error"
contains "$OUT" "no-such-results.csv: error: cannot open for reading" "the message names the file"
run check "$OUTDIR"
expect_rc 3 "a directory as the results file is an I/O error"
run check results.csv --site no-such-site.json
expect_rc 3 "a missing site file is an I/O error"
contains "$OUT" "no-such-site.json: error:" "the site file is named"
if [ "$(id -u)" -ne 0 ]; then
    chmod 000 site.json
    run check results.csv --site site.json
    expect_rc 3 "an unreadable site file is an I/O error"
    chmod 644 site.json
    mkdir -p ro && chmod 555 ro
    run labels results.csv --out ro/labels.pdf
    expect_rc 3 "an output directory without write permission is refused"
    contains "$ERR" "cannot write in the directory ro" "the message names the directory"
    chmod 755 ro
else
    echo "  (running as root: permission cases skipped, root can read and write anything)"
fi
finish
