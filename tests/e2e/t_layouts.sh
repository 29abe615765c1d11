# t_layouts.sh - shipped layouts, sheets, units and languages, checked with tools we did not
# write: pdfinfo (page size and count), pdftotext (text, accents, order), qpdf --check,
# pdftoppm + zbarimg (every QR code on every layout, rendered at 300 dpi).
source "$(dirname "$0")/lib.sh"
JOBS="$TW_ROOT/example-jobs"
DATE=2026-10-01

# site settings: the demo site with one setting changed (python3 edits the JSON)
site_with() { # site_with KEY VALUE OUT
    python3 -c 'import json,sys; s=json.load(open(sys.argv[1])); s[sys.argv[2]]=sys.argv[3]; json.dump(s,open(sys.argv[4],"w"),ensure_ascii=False)' \
        "$JOBS/site.json" "$1" "$2" "$3"
}
labels() { # labels RESULTS SITE LAYOUT OUT [more args]
    local results=$1 site=$2 layout=$3 out=$4
    shift 4
    run labels "$results" --site "$site" --layout "$layout" --out "$out" \
        --manifest "${out%.pdf}.registry" --date "$DATE" "$@"
}
# decode_all PDF [LAST_PAGE]: every QR payload on the pages, rendered at 300 dpi, sorted
decode_all() {
    rm -f "$TW_TMP"/page-*.pgm
    pdftoppm -r 300 -gray ${2:+-l "$2"} "$1" "$TW_TMP/page" 2>/dev/null
    zbarimg -q --raw --nodbus -Sdisable -Sqrcode.enable "$TW_TMP"/page-*.pgm 2>/dev/null | sort
    rm -f "$TW_TMP"/page-*.pgm
}
payloads_of() { # payloads_of REGISTRY: the payload of every current label, sorted
    python3 -c 'import json,sys; print("\n".join(sorted(l["payload"] for l in json.load(open(sys.argv[1]))["labels"] if l.get("status","current")=="current")))' "$(exported "$1")"
}

# ---- tagwright layouts -----------------------------------------------------------------------
run layouts
expect_rc 0 "tagwright layouts lists the shipped layouts"
shipped=$(cd "$TW_ROOT/layouts" && ls *.json | sed 's/\.json$//')
for name in $shipped; do
    contains "$OUT" "  $name " "layouts lists $name"
done
contains "$OUT" "8.5 x 11 in     6 (2 x 3)" "the 2 x 3 Letter sheet shows its page and grid"
contains "$OUT" "100 x 150 mm (3.94 x 5.91 in)" "sizes in the layout's unit and the other"
run layouts --dir "$TW_TMP/no-such-dir"
expect_rc 3 "an unreadable layouts directory is an I/O error"
run layouts extra
expect_rc 2 "layouts takes no arguments"

# ---- every shipped layout: exact page size, all demo buses, every QR decodes -------------------
# Expected page sizes in points (1 in = 72 pt, 1 mm = 72/25.4 pt; ISO 32000-1 8.3.2.3), printed
# as pdfinfo prints them (%g). Letter is 8.5 x 11 in, A4 210 x 297 mm (ISO 216).
declare -A page=(
    [4x6]="288 x 432" [4x4]="288 x 288" [3.5x5]="252 x 360"
    [100x150mm]="283.465 x 425.197" [105x74mm]="297.638 x 209.764"
    [letter-4x6-2up]="792 x 612" [a4-100x150mm-2up]="841.89 x 595.276"
    [letter-3.5x5-2x2]="612 x 792" [a4-105x74mm-2x2]="841.89 x 595.276"
    [letter-3.75x3.25-2x3]="612 x 792"
)
declare -A per_page=(
    [letter-4x6-2up]=2 [a4-100x150mm-2up]=2 [letter-3.5x5-2x2]=4 [a4-105x74mm-2x2]=4
    [letter-3.75x3.25-2x3]=6
)
buses=$(cut -d, -f1 "$JOBS/results.csv" | sed 1d | sort -u | wc -l)
# Every page of every layout is decoded once; the sanitizer pass (build-asan) writes the same
# PDFs and decodes page 1 only, to keep `make check` short.
all_pages=yes
case "$TW_BIN" in *build-asan*) all_pages= ;; esac
for name in $shipped; do
    if [ -z "${page[$name]:-}" ]; then
        fail "$name: no expected page size in t_layouts.sh"
        continue
    fi
    out="$TW_TMP/$name.pdf"
    labels "$JOBS/results.csv" "$JOBS/site.json" "$name" "$out"
    expect_rc 0 "$name: every demo bus gets a label"
    check "$name: qpdf --check passes" qpdf --check "$out"
    info=$(pdfinfo "$out" 2>/dev/null | tr -s " ")
    contains "$info" "Page size: ${page[$name]} pts" "$name: page is ${page[$name]} pt"
    n=${per_page[$name]:-1}
    contains "$info" "Pages: $(((buses + n - 1) / n))" "$name: $buses labels, $n per page"
    if has_tool zbarimg && has_tool pdftoppm && [ -n "$all_pages" ]; then
        got=$(decode_all "$out")
        want=$(payloads_of "$TW_TMP/$name.registry")
        [ "$(printf '%s\n' "$got" | grep -c .)" -eq "$buses" ] \
            && ok "$name: zbarimg decodes all $buses QR codes at 300 dpi" \
            || fail "$name: zbarimg decoded $(printf '%s\n' "$got" | grep -c .) of $buses QR codes"
        [ "$got" = "$want" ] && ok "$name: each QR carries its registry payload" \
            || fail "$name: decoded payloads differ from the registry"
    elif has_tool zbarimg && has_tool pdftoppm; then
        got=$(decode_all "$out" 1)
        [ "$(printf '%s\n' "$got" | grep -c .)" -eq "$n" ] \
            && ok "$name: zbarimg decodes the $n QR codes of page 1 at 300 dpi" \
            || fail "$name: zbarimg decoded $(printf '%s\n' "$got" | grep -c .) of $n QR codes on page 1"
    else
        fail "zbarimg/pdftoppm not installed"
    fi
done

# ---- a 12-bus run on the 2 x 3 Letter sheet: 2 pages, labels in row order ----------------------
first12=$(cut -d, -f1 "$JOBS/results.csv" | sed 1d | awk '!seen[$0]++' | head -n 12)
awk -F, -v ids="$(echo $first12)" 'BEGIN { n = split(ids, a, " "); for (i = 1; i <= n; i++) keep[a[i]] = 1 }
    NR == 1 || ($1 in keep)' "$JOBS/results.csv" >"$TW_TMP/twelve.csv"
labels "$TW_TMP/twelve.csv" "$JOBS/site.json" letter-3.75x3.25-2x3 "$TW_TMP/twelve.pdf"
expect_rc 0 "12 buses on the 2 x 3 Letter sheet"
contains "$(pdfinfo "$TW_TMP/twelve.pdf" | tr -s " ")" "Pages: 2" "12 labels, 6 per page: 2 pages"
order=""
for p in 1 2; do
    # IDs in reading order (pdftotext -layout keeps each row of labels on the same lines)
    order="$order $(page_text "$TW_TMP/twelve.pdf" $p | grep -oE 'QB-[A-Z]{3}-[A-Z]{2}[0-9]{2}' | awk '!seen[$0]++' | tr '\n' ' ')"
done
[ "$(echo $order)" = "$(echo $first12)" ] && ok "labels are in the results' order, row by row" \
    || fail "order on the sheet: '$(echo $order)', expected '$(echo $first12)'"

# ---- languages: Spanish, and both on one label (English first) --------------------------------
site_with language es "$TW_TMP/site-es.json"
labels "$JOBS/results.csv" "$TW_TMP/site-es.json" 4x6 "$TW_TMP/es.pdf" --bus QB-AER-SG11 --bus QB-HWK-SG01
expect_rc 0 "Spanish labels"
es=$(pdftotext "$TW_TMP/es.pdf" - 2>/dev/null)
for w in "ADVERTENCIA" "PELIGRO" "ARCO ELÉCTRICO" "DESCARGA ELÉCTRICA" "Energía incidente" \
         "Límite de arco eléctrico" "Límite de aproximación limitada" \
         "Límite de aproximación restringida" "Clase de guantes aislantes" \
         "Clase 2 (uso máx. 17000 V CA)" "PROHIBIDO TRABAJAR CON TENSIÓN AQUÍ" "Ubicación" \
         "Rigen la NFPA 70E"; do
    contains "$es" "$w" "pdftotext extracts '$w' with its accents"
done
lacks "$es" "Incident energy" "a Spanish label carries no English captions"
lacks "$es" "WARNING" "nor the English signal word"
# the content hash covers the printed language: glove class words are in the canonical form
contains "$(cat "$(exported "$TW_TMP/es.registry")")" "glove_class=Clase 2 (uso m" "the registry records the Spanish value"

site_with language en+es "$TW_TMP/site-enes.json"
labels "$JOBS/results.csv" "$TW_TMP/site-enes.json" 4x6 "$TW_TMP/enes.pdf" --bus QB-AER-SG11
expect_rc 0 "labels in English and Spanish"
both=$(pdftotext "$TW_TMP/enes.pdf" - 2>/dev/null | tr '\n' ' ')
contains "$both" "WARNING / ADVERTENCIA" "signal word in both languages, English first"
for pair in "Incident energy:Energía incidente" "Restricted approach:Límite de aproximación restringida" \
            "Class 2 (max. use 17000 V AC):Clase 2 (uso máx. 17000 V CA)"; do
    en=${pair%%:*} sp=${pair#*:}
    before=${both%%"$sp"*}
    case "$before" in *"$en"*) ok "'$en' comes before '$sp'";; *) fail "'$en' not before '$sp'";; esac
done
h_es=$(python3 -c 'import json,sys; print([l for l in json.load(open(sys.argv[1]))["labels"] if l["equipment_id"]=="QB-AER-SG11"][0]["content_hash"])' "$(exported "$TW_TMP/es.registry")")
h_enes=$(python3 -c 'import json,sys; print(json.load(open(sys.argv[1]))["labels"][0]["content_hash"])' "$(exported "$TW_TMP/enes.registry")")
[ "$h_es" != "$h_enes" ] && ok "the hash differs between languages (it covers the printed words)" \
    || fail "Spanish and bilingual labels share a hash"
# two languages need room: a small label is refused with the region and the shortfall named
labels "$JOBS/results.csv" "$TW_TMP/site-enes.json" 4x4 "$TW_TMP/small-enes.pdf" --bus QB-MSS-SG01
expect_rc 1 "a 4 x 4 in label cannot hold both languages for the main switchgear"
contains "$ERR" "QB-MSS-SG01" "the refusal names the label"
contains "$ERR" "mm short" "and says by how much"
check "no PDF for a refused run" test ! -e "$TW_TMP/small-enes.pdf"

# ---- units: imperial with metric in brackets (default), or metric only -----------------------
labels "$JOBS/results.csv" "$JOBS/site.json" 4x6 "$TW_TMP/imp.pdf" --bus QB-AER-SG11
imp=$(pdftotext "$TW_TMP/imp.pdf" - 2>/dev/null)
# 36 in working distance = 914.4 mm -> 914 mm (nearest, as stated); NFPA 70E Table 130.4(E)(a)
# 751 V - 15 kV: limited approach (fixed part) 5 ft 0 in / 1.5 m, restricted 2 ft 2 in / 0.7 m
contains "$imp" "36 in (914 mm)" "imperial working distance with metric in brackets"
contains "$imp" "5 ft 0 in (1.5 m)" "limited approach boundary in ft-in with metres"
contains "$imp" "2 ft 2 in (0.7 m)" "restricted approach boundary in ft-in with metres"
site_with units metric "$TW_TMP/site-metric.json"
labels "$JOBS/results.csv" "$TW_TMP/site-metric.json" 4x6 "$TW_TMP/metric.pdf" --bus QB-AER-SG11
expect_rc 0 "metric labels"
met=$(pdftotext "$TW_TMP/metric.pdf" - 2>/dev/null)
contains "$met" "914 mm" "metric working distance"
contains "$met" "1.5 m" "metric limited approach boundary"
contains "$met" "0.7 m" "metric restricted approach boundary"
lacks "$met" " in (" "no inches on a metric label"
lacks "$met" " ft " "no feet on a metric label"

# ---- --layout: a file path or a shipped name; layouts that cannot hold a label -----------------
cp "$TW_ROOT/layouts/4x4.json" "$TW_TMP/my-4x4.json"
labels "$JOBS/results.csv" "$JOBS/site.json" "$TW_TMP/my-4x4.json" "$TW_TMP/path.pdf" --bus QB-AER-SG11
expect_rc 0 "--layout takes a file path"
labels "$JOBS/results.csv" "$JOBS/site.json" no-such-layout "$TW_TMP/none.pdf"
expect_rc 1 "an unknown layout name is refused"
contains "$ERR" "no-such-layout.json" "the missing layout file is named"

small() { # small NAME JSON: write a custom layout
    printf '%s\n' "$2" >"$TW_TMP/$1.json"
}
small tiny '{"units":"in","label":{"width":2,"height":2},"margin":0.1,"header":{"height":0.4,"font_pt":14},"body":{"font_pt":7},"qr":{"size":0.8},"footer":{"height":0.5,"font_pt":6}}'
labels "$JOBS/results.csv" "$JOBS/site.json" "$TW_TMP/tiny.json" "$TW_TMP/tiny.pdf"
expect_rc 1 "a 2 x 2 in layout is refused"
contains "$ERR" "tiny.json" "the refusal names the layout file"
contains "$ERR" "\$.label.height" "and the JSON path of the region that falls short"
contains "$ERR" "mm short" "and by how much"
check "nothing written for a refused layout" test ! -e "$TW_TMP/tiny.pdf"

small lowdpi '{"units":"mm","label":{"width":100,"height":150},"margin":3,"header":{"height":18,"font_pt":20},"body":{"font_pt":9},"qr":{"size":20},"footer":{"height":20,"font_pt":6.5},"printer_dpi":150}'
labels "$JOBS/results.csv" "$JOBS/site.json" "$TW_TMP/lowdpi.json" "$TW_TMP/lowdpi.pdf"
expect_rc 1 "a 20 mm QR box on a 150 dpi printer is refused"
# version 10 with its quiet zone: 65 modules x 2 dots = 130 dots = 22.0 mm at 150 dpi; 20 mm is 118 dots
contains "$ERR" "118 printer dots wide at 150 dpi" "the QR region's dots are named"
contains "$ERR" "needs 130 dots (22.0 mm): 2.0 mm short" "with what it needs and by how much"

small smallqr '{"units":"mm","label":{"width":100,"height":150},"margin":3,"header":{"height":18,"font_pt":20},"body":{"font_pt":9},"qr":{"size":18},"footer":{"height":20,"font_pt":6.5}}'
labels "$JOBS/results.csv" "$JOBS/site.json" "$TW_TMP/smallqr.json" "$TW_TMP/smallqr.pdf"
expect_rc 1 "an 18 mm QR box is refused"
contains "$ERR" "the qr region is 18.0 mm, 2.0 mm below the 20 mm minimum" "QR size and shortfall named"

small smallfont '{"units":"in","label":{"width":4,"height":6},"margin":0.125,"header":{"height":0.7,"font_pt":24},"body":{"font_pt":5.5},"qr":{"size":1.15},"footer":{"height":0.75,"font_pt":6.5}}'
labels "$JOBS/results.csv" "$JOBS/site.json" "$TW_TMP/smallfont.json" "$TW_TMP/smallfont.pdf"
expect_rc 1 "body text below 6 pt is refused"
contains "$ERR" "the body text at 5.5 pt is 0.5 pt below the 6 pt legible minimum" "region and shortfall named"
# A value that cannot fit is named as the value, not as its caption, and the message says why
# when the text is short enough in all but its lines break only between words.
labels "$JOBS/results.csv" "$TW_TMP/site-enes.json" 105x74mm "$TW_TMP/enes-small.pdf" --bus QB-MSS-SG01
expect_rc 1 "a two-language label that does not fit 105 x 74 mm is refused"
contains "$ERR" "label QB-MSS-SG01: glove_class does not fit the body region at 6 pt" "the value that does not fit is named"
lacks "$ERR" "the caption of glove_class" "not its caption"
check "no PDF for the refused label" test ! -e "$TW_TMP/enes-small.pdf"
finish
