# t_columns.sh - study exports read through a column map (--columns, site.json "columns") end
# to end to labels, the map's errors, hints without a map, and `tagwright columns` (the
# starter map). The export is Windows-1252, semicolon-separated with decimal commas, three
# title lines, kV, ms, US dates, N/A and a footer after a blank line (invented demo data).
source "$(dirname "$0")/lib.sh"
D="$TW_DATA/columns"
export_csv="$D/export-1252.csv"
map="$D/export-map.json"

# ---- end to end to labels ----
out="$TW_TMP/labels.pdf"
run labels "$export_csv" --columns "$map" --out "$out" --date 2026-10-01
expect_rc 0 "labels from the export through its map"
check "qpdf --check passes" qpdf --check "$out"
info=$(pdfinfo "$out" | tr -s " ")
contains "$info" "Pages: 3" "one label per bus; the footer is not read as a bus"
contains "$ERR" '1 column not read (not in the column map, or null there): "Notes"' \
    "the unread column is listed once"
p1=$(page_text "$out" 1)
contains "$p1" "RV-MCC-1" "equipment ID from 'Bus Name'"
contains "$p1" "Motor control centre – pumps 1–3" "Windows-1252 dashes read as text"
contains "$p1" "480 V" "0,48 kV read as 480 V"
# utility-min governs: 9.04 > 8.72 cal/cm2; rounded up to 0.1 cal/cm2
contains "$p1" "9.1 cal/cm" "decimal comma energy, governing scenario, rounded up"
contains "$p1" "utility-min" "governing scenario"
# 61,9 in = 1572.26 mm -> 1573 mm, 62 in = 5 ft 2 in (rounded up toward safety)
contains "$p1" "5 ft 2 in (1573 mm)" "decimal comma boundary in inches"
# NFPA 70E Table 130.4(E)(a), 151-750 V: limited approach (fixed part) 3 ft 6 in
contains "$p1" "3 ft 6 in" "limited approach boundary for 480 V"
contains "$p1" "2026-09-15" "9/15/2026 read as 2026-09-15"
contains "$p1" "2031-09-15" "review due 5 years after the study date (NFPA 70E 130.5(G))"
contains "$p1" "RV-AF-2026-R1" "study ID from the map's constants"
p2=$(page_text "$out" 2)
contains "$p2" "Panel, café and office" "é from Windows-1252"
contains "$p2" "208 V" "0,208 kV read as 208 V"
p3=$(page_text "$out" 3)
contains "$p3" "4160 V" "4,16 kV read as 4160 V"
# NFPA 70E Table 130.4(E)(a), 751 V-15 kV: limited 5 ft 0 in, restricted 2 ft 2 in
contains "$p3" "2 ft 2 in" "restricted approach boundary for 4.16 kV"
if has_tool zbarimg; then
    qr=$(qr_of "$out" 1)
    contains "$qr" "RV-AF-2026-R1/RV-MCC-1" "QR payload names the study and the bus"
fi

# check lists the same as labels read
run check "$export_csv" --columns "$map"
expect_rc 0 "check passes the mapped export"
contains "$OUT" "in 3 buses (4 rows)" "4 rows, 3 buses"
contains "$OUT" "the table ended at the blank line 9" "the footer is pointed out"

# the same through site.json (a relative map path is taken from the site file's folder)
mkdir -p "$TW_TMP/site"
cp "$map" "$TW_TMP/site/export-map.json"
printf '{"columns": "export-map.json"}\n' >"$TW_TMP/site/site.json"
run check "$export_csv" --site "$TW_TMP/site/site.json"
expect_rc 0 "site.json names the map"
contains "$OUT" "in 3 buses (4 rows)" "the site's map is used"
printf '{"columns": "none.json"}\n' >"$TW_TMP/site/missing.json"
run check "$export_csv" --site "$TW_TMP/site/missing.json"
expect_rc 3 "a site naming a map that does not exist: I/O error"
contains "$OUT" "none.json" "the missing map is named"

# every command that reads results takes --columns
run envelope "$export_csv" --columns "$map" --format csv
expect_rc 0 "envelope --columns"
contains "$OUT" "RV-SWGR-3" "envelope lists the mapped buses"
run due "$export_csv" --columns "$map" --on 2026-10-01 --all
expect_rc 0 "due --columns"
contains "$OUT" "2031-09-15" "due reads the US dates"
run summary "$export_csv" --columns "$map" --out "$TW_TMP/summary.pdf" --date 2026-10-01
expect_rc 0 "summary --columns"
run diff "$export_csv" "$export_csv" --columns "$map"
expect_rc 0 "diff --columns"

# ---- failing closed ----
# a map naming a column the export lacks: error naming it, nothing written
sed 's/"Trip Time (ms)"/"Trip Time (s)"/' "$map" >"$TW_TMP/wrong-map.json"
out2="$TW_TMP/wrong.pdf"
run labels "$export_csv" --columns "$TW_TMP/wrong-map.json" --out "$out2" --date 2026-10-01
expect_rc 1 "a map naming a column the file lacks fails"
contains "$OUT$ERR" 'column "Trip Time (s)" named in the column map' "the missing column is named"
check "nothing written" test ! -e "$out2"
# a misspelt key in the map: an error at its JSON path, nothing written
sed 's/"scale": 1000/"scael": 1000/' "$map" >"$TW_TMP/typo-map.json"
run labels "$export_csv" --columns "$TW_TMP/typo-map.json" --out "$out2" --date 2026-10-01
expect_rc 1 "a misspelt key in the map fails"
contains "$OUT$ERR" "typo-map.json:columns.Bus kV.scael: error: unknown key" "the key's path is named"
check "nothing written" test ! -e "$out2"
run check "$export_csv" --columns "$TW_TMP/none.json"
expect_rc 3 "an unreadable map is an I/O error"
# the export read as UTF-8: undefined for its bytes; a map without encoding
sed 's/"encoding": "windows-1252",//' "$map" >"$TW_TMP/utf8-map.json"
run check "$export_csv" --columns "$TW_TMP/utf8-map.json"
expect_rc 1 "Windows-1252 text read as UTF-8 fails"
contains "$OUT" 'is not UTF-8; save the file as UTF-8, or set "encoding" in a column map' "the encoding hint"
# a wrong value in a mapped cell names the source column beside the field
sed 's/;250;/;25O;/' "$export_csv" >"$TW_TMP/bad-cell.csv"
run check "$TW_TMP/bad-cell.csv" --columns "$map"
expect_rc 1 "a bad mapped cell fails"
contains "$OUT" 'bad-cell.csv:5: error: RV-MCC-1: clearing_time_s (from "Trip Time (ms)"): expected a decimal number, got '"'25O'" \
    "file, line, ID, field and source column"

# ---- without a map ----
run check "$export_csv"
expect_rc 1 "the export without a map fails"
contains "$OUT" "tagwright columns FILE" "points to the columns command"
contains "$OUT" '"delimiter": ";"' "the semicolon hint"

# ---- the starter map ----
run columns "$export_csv"
expect_rc 0 "columns prints a starter map"
contains "$OUT" '"header_line": 4' "header line found below the titles"
contains "$OUT" '"encoding": "windows-1252"' "non-UTF-8 noted as windows-1252"
contains "$OUT" '"decimal": ","' "decimal comma seen"
contains "$OUT" '"Bus kV": {"field": "nominal_voltage_v", "scale": 1000}' "kV plainly a voltage"
contains "$OUT" '"Study Date": {"field": "study_date", "date_format": "MM/DD/YYYY"}' "US dates (9/15)"
contains "$OUT" '"Trip Time (ms)": null' "unsure: null, not a guess"
contains "$OUT" '"Notes": null' "no field: null"
contains "$ERR" "check the accented letters" "the encoding guess is said"
echo "$OUT" >"$TW_TMP/starter.json"
run check "$export_csv" --columns "$TW_TMP/starter.json"
contains "$OUT" '"Trip Time (ms)", "Electrode", "Notes"' "a starter map reads; its nulls are listed as not read"
printf 'Equipment ID,Nominal Voltage (V),Incident Energy (J/cm2),Arc Flash Boundary (mm),Remarks\nA,480,30,900,\n' >"$TW_TMP/plain.csv"
run columns "$TW_TMP/plain.csv"
expect_rc 0 "columns on a spreadsheet header"
contains "$OUT" '"Equipment ID": "equipment_id"' "equipment ID"
contains "$OUT" '"Incident Energy (J/cm2)": "incident_energy_j_cm2"' "J/cm2"
contains "$OUT" '"stop_at_blank_line": false' "no footer"
run columns "$TW_ROOT/example-jobs/results.json"
expect_rc 0 "columns on JSON results lists the keys"
contains "$OUT" '"equipment_id": "equipment_id"' "a tagwright key maps to itself"
run columns
expect_rc 2 "columns without a file is a usage error"
run columns "$TW_TMP/nothing.csv"
expect_rc 3 "columns on a missing file is an I/O error"
finish
