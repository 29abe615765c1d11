# t_labels.sh - labels from a small crafted study, checked with tools we did not write:
# qpdf --check, pdfinfo (page size and count), pdftotext (values), pdftoppm + zbarimg (QR).
source "$(dirname "$0")/lib.sh"
out="$TW_TMP/labels.pdf"
run labels "$TW_DATA/core/small.csv" --out "$out" --date 2026-12-01
expect_rc 0 "labels for a clean study"
check "the PDF exists" test -s "$out"
check "without a site registry the labels are recorded beside the PDF" test -s "$TW_TMP/tagwright-registry.db"
contains "$ERR" "recorded in $TW_TMP/tagwright-registry.db" "the run says where the history went"
exported "$TW_TMP/tagwright-registry.db" >/dev/null
check "qpdf --check passes" qpdf --check "$out"
info=$(pdfinfo "$out" | tr -s " ")
contains "$info" "Pages: 4" "one page per bus (4 buses, 5 scenario rows)"
contains "$info" "Page size: 288 x 432 pts" "4 x 6 in pages (288 x 432 pt)"

# Page 2 is E2E-MCC-1: the utility-min scenario governs (7.81 > 6.25 cal/cm2).
p2=$(page_text "$out" 2)
contains "$p2" "E2E-MCC-1" "equipment ID printed"
contains "$p2" "480 V" "nominal voltage printed"
contains "$p2" "7.9 cal/cm" "incident energy rounded up to 0.1 (7.81 -> 7.9)"
contains "$p2" "utility-min" "governing scenario named"
# 56.4 in = 1432.56 mm -> 1433 mm; 57 in = 4 ft 9 in (rounded up toward safety)
contains "$p2" "4 ft 9 in" "arc-flash boundary in ft-in, rounded up"
contains "$p2" "1433 mm" "arc-flash boundary in mm, rounded up"
# NFPA 70E Table 130.4(E)(a), 151-750 V: limited (fixed part) 3 ft 6 in, restricted 1 ft 0 in
contains "$p2" "3 ft 6 in" "limited approach boundary for 480 V"
contains "$p2" "1 ft 0 in" "restricted approach boundary for 480 V"
# ASTM D120: class 00 maximum use voltage 500 V AC covers 480 V
contains "$p2" "Class 00" "glove class for 480 V"
contains "$p2" "18 in (457 mm)" "working distance as stated, to the nearest inch and mm"
contains "$p2" "2031-09-15" "review due 5 years after the study date (NFPA 70E 130.5(G))"
lacks "$p2" "PPE category" "never both incident energy and PPE category (NFPA 70E 130.5(H))"
contains "$p2" "WARNING" "signal word WARNING below 40 cal/cm2"

# Page 3 is the 2000 A service switchboard at 48.2 cal/cm2: DANGER, no PPE adequate, NEC 110.16(B)
p3=$(page_text "$out" 3)
contains "$p3" "DANGER" "signal word DANGER above 40 cal/cm2"
contains "$p3" "42.5 kA" "NEC 110.16(B) available fault current"
contains "$p3" "0.500 s" "NEC 110.16(B) clearing time"

# Page 4: 13.8 kV switchgear. Table 130.4(E)(a) 751 V-15 kV: 5 ft 0 in / 2 ft 2 in; ASTM D120 class 2.
p4=$(page_text "$out" 4)
contains "$p4" "5 ft 0 in" "limited approach boundary for 13.8 kV"
contains "$p4" "2 ft 2 in" "restricted approach boundary for 13.8 kV"
contains "$p4" "Class 2" "glove class for 13.8 kV"

if has_tool zbarimg && has_tool pdftoppm; then
    payload=$(qr_of "$out" 2)
    hash=$(python3 -c 'import json,sys; m=json.load(open(sys.argv[1])); print([l for l in m["labels"] if l["equipment_id"]=="E2E-MCC-1"][0]["content_hash"])' "$TW_TMP/tagwright-registry.db.json")
    mpay=$(python3 -c 'import json,sys; m=json.load(open(sys.argv[1])); print([l for l in m["labels"] if l["equipment_id"]=="E2E-MCC-1"][0]["payload"])' "$TW_TMP/tagwright-registry.db.json")
    contains "$payload" "${hash^^}" "QR decoded by zbarimg carries the registry's content hash (in capitals)"
    contains "$payload" "HTTPS://RECORDS.INVALID/E2E-STUDY/E2E-MCC-1/1/" "default record link: study, equipment, revision"
    [ "$payload" = "$mpay" ] && ok "QR payload equals the registry's payload" || fail "QR payload '$payload' != '$mpay'"
    # the hash is the SHA-256 of the canonical content recorded in the registry
    content_hash=$(python3 -c 'import json,sys; m=json.load(open(sys.argv[1])); print([l for l in m["labels"] if l["equipment_id"]=="E2E-MCC-1"][0]["content"], end="")' "$TW_TMP/tagwright-registry.db.json" | sha256sum | cut -d" " -f1)
    [ "$content_hash" = "$hash" ] && ok "content hash = sha256sum of the canonical form" || fail "sha256sum gives $content_hash, registry says $hash"
else
    fail "zbarimg/pdftoppm not installed"
fi

# Fonts: text WinAnsiEncoding can hold is shown in single-byte TrueType fonts; a description
# outside it (Greek, an arrow, CJK) brings in the UTF-8 (Identity-H) font for that label only.
# (DejaVu Sans has no CJK glyphs: this checks the fonts and the text layer, not the drawing.)
fonts=$(pdffonts "$out" 2>/dev/null)
contains "$fonts" "WinAnsi" "pdffonts: single-byte WinAnsi fonts for ASCII text"
lacks "$fonts" "Identity-H" "pdffonts: no two-byte font when no text needs one"
sed 's/^E2E-PNL-1,Lighting panel,/E2E-PNL-1,"Lighting panel Ω → φωτισμός — café",/' "$TW_DATA/core/small.csv" >"$TW_TMP/wide.csv"
run labels "$TW_TMP/wide.csv" --out "$TW_TMP/wide.pdf" --date 2026-12-01
expect_rc 0 "labels with text outside WinAnsiEncoding"
fonts=$(pdffonts "$TW_TMP/wide.pdf" 2>/dev/null)
contains "$fonts" "Identity-H" "pdffonts: the UTF-8 font is embedded when a text needs it"
contains "$(page_text "$TW_TMP/wide.pdf" 1)" "Lighting panel Ω → φωτισμός — café" "pdftotext reads back the text outside WinAnsiEncoding"
contains "$(page_text "$TW_TMP/wide.pdf" 2)" "Motor control centre, line 2" "the other labels read back as before"
# CJK has no glyph in DejaVu Sans: refused (it would print as boxes), also as a draft.
sed 's/^E2E-PNL-1,Lighting panel,/E2E-PNL-1,"Lighting panel 照明",/' "$TW_DATA/core/small.csv" >"$TW_TMP/cjk.csv"
for draft in "" --draft; do
    run labels "$TW_TMP/cjk.csv" --out "$TW_TMP/cjk.pdf" --date 2026-12-01 $draft
    expect_rc 1 "labels $draft with a character the font has no glyph for is refused"
    contains "$OUT$ERR" "description: character U+7167" "the message names the field and the character"
    [ ! -e "$TW_TMP/cjk.pdf" ] && ok "no PDF written ($draft)" || fail "cjk.pdf written ($draft)"
done

# Lines that follow one another are shown with the next-line operator ('), not a move each;
# pdftotext -bbox reads the caption lines back one leading (9 pt x 1.2 = 10.8 pt) apart.
if has_tool qpdf; then
    qpdf --qdf --object-streams=disable "$out" "$TW_TMP/labels-qdf.pdf"
    nextline=$(grep -ac "^(Working distance) '$" "$TW_TMP/labels-qdf.pdf")
    [ "$nextline" -ge 1 ] && ok "qpdf --qdf: a caption that follows the one above is shown with '" \
        || fail "no caption shown with the next-line operator"
fi
pdftotext -bbox -f 2 -l 2 "$out" "$TW_TMP/bbox.html"
gap=$(python3 - "$TW_TMP/bbox.html" <<'PY'
import re, sys
words = re.findall(r'<word xMin="[\d.]+" yMin="([\d.]+)"[^>]*>([^<]*)</word>', open(sys.argv[1]).read())
y = {w: float(v) for v, w in words}
print("%.3f" % (y["Working"] - y["Incident"]))
PY
)
[ "$gap" = "10.800" ] && ok "pdftotext -bbox: consecutive captions are 10.8 pt apart" \
    || fail "consecutive captions are $gap pt apart, expected 10.800"

# --bus selects one label
run labels "$TW_DATA/core/small.csv" --out "$TW_TMP/one.pdf" --bus E2E-SWGR-1 --date 2026-12-01
expect_rc 0 "--bus prints one label"
contains "$(pdfinfo "$TW_TMP/one.pdf" | tr -s " ")" "Pages: 1" "one page for one --bus"
run labels "$TW_DATA/core/small.csv" --out "$TW_TMP/none.pdf" --bus NO-SUCH-BUS
expect_rc 1 "--bus with an unknown ID"
contains "$ERR" "NO-SUCH-BUS" "the unknown ID is named"
check "no PDF for an unknown --bus" test ! -e "$TW_TMP/none.pdf"

# the same input and date give the same bytes
run labels "$TW_DATA/core/small.csv" --out "$TW_TMP/again.pdf" --manifest "$TW_TMP/again.registry" --date 2026-12-01
check "output is byte-for-byte reproducible" cmp "$out" "$TW_TMP/again.pdf"
finish
