# t_byte_identity.sh - the label, permit and summary PDFs written for example-jobs/ with a fixed
# --date are byte for byte the reference outputs: a change that is meant to move code around
# (not to change what is printed) must leave every byte as it was. The reference is the SHA-256
# of each file in tests/data/identity/example-jobs.sha256.
#
# A change that is meant to change the output (new wording, a new rule, a new layout) updates
# the reference in the same commit, after a person has looked at the new PDFs:
#
#   make && TW_BIN=$PWD/build/tagwright TW_IDENTITY_UPDATE=1 bash tests/e2e/t_byte_identity.sh
#   (the PDFs stay in tests/data/identity/last/ for that look; that folder is not committed)
source "$(dirname "$0")/lib.sh"
jobs="$TW_ROOT/example-jobs"
ref="$TW_DATA/identity/example-jobs.sha256"
out="$TW_TMP/identity"
date=2026-12-01
mkdir -p "$out/permits"

# Each labels run keeps its own registry: the first one holds the labels posted for the
# permit, which must show those very values.

# Spanish and English + Spanish labels, from the example site with another language.
python3 - "$jobs/site.json" "$out" <<'PY'
import json, sys
site = json.load(open(sys.argv[1]))
for lang in ("es", "en+es"):
    json.dump(dict(site, language=lang), open(f"{sys.argv[2]}/site-{lang}.json", "w"))
json.dump(dict(site, units="metric"), open(f"{sys.argv[2]}/site-metric.json", "w"))
PY

produce() { # produce WHAT ARGS...: runs tagwright, which must exit 0
    local what=$1; shift
    run "$@" --date "$date"
    expect_rc 0 "$what"
}
produce "labels for every bus of the example plant" labels "$jobs/results.csv" \
    --site "$jobs/site.json" --out "$out/labels.pdf" --manifest "$out/posted.registry"
produce "labels from the JSON results" labels "$jobs/results.json" \
    --site "$jobs/site.json" --out "$out/labels-json.pdf" --manifest "$out/labels-json.registry"
produce "labels in Spanish on the 4x6 layout" labels "$jobs/results.csv" \
    --site "$out/site-es.json" --layout 4x6 --out "$out/labels-es.pdf" --manifest "$out/labels-es.registry"
produce "labels in English and Spanish" labels "$jobs/results.csv" \
    --site "$out/site-en+es.json" --out "$out/labels-en+es.pdf" --manifest "$out/labels-en+es.registry"
produce "metric labels on the 105x74mm layout" labels "$jobs/results.csv" \
    --site "$out/site-metric.json" --layout 105x74mm --out "$out/labels-metric.pdf" --manifest "$out/labels-metric.registry"
for layout in "$TW_ROOT"/layouts/*.json; do
    name=$(basename "$layout" .json)
    produce "the service switchgear on layout $name" labels "$jobs/results.csv" \
        --site "$jobs/site.json" --layout "$name" --bus QB-MSS-SG01 \
        --out "$out/layout-$name.pdf" --manifest "$out/layout-$name.registry"
done
produce "the permit for one job, beside the registry" permit "$jobs/results.csv" \
    --job "$jobs/job.json" --site "$jobs/site.json" --manifest "$out/posted.registry" \
    --out "$out/permit.pdf"
produce "permits for a batch of jobs" permit "$jobs/results.csv" --job "$jobs/jobs.json" \
    --site "$jobs/site.json" --out "$out/permits"
# The summary names the results file as given: a relative name keeps its bytes the same
# wherever the project is checked out.
pushd "$jobs" >/dev/null
produce "the study summary" summary results.csv --site site.json --out "$out/summary.pdf"
popd >/dev/null

(cd "$out" && find . -name '*.pdf' | LC_ALL=C sort | xargs sha256sum) >"$TW_TMP/now.sha256"
if [ "${TW_IDENTITY_UPDATE:-}" = 1 ]; then
    cp "$TW_TMP/now.sha256" "$ref"
    rm -rf "$TW_DATA/identity/last" && cp -r "$out" "$TW_DATA/identity/last"
    ok "reference rewritten: $ref ($(wc -l <"$ref") files); look at tests/data/identity/last/"
fi
while read -r sum file; do
    if ! grep -q "  $file\$" "$TW_TMP/now.sha256"; then
        fail "$file: in the reference but not written"
    elif grep -q "^$sum  $file\$" "$TW_TMP/now.sha256"; then
        ok "$file: the same bytes as the reference"
    else
        fail "$file: differs from the reference (see the header of this script)"
    fi
done <"$ref"
[ "$(wc -l <"$TW_TMP/now.sha256")" -eq "$(wc -l <"$ref")" ] &&
    ok "no file written beyond the reference" || fail "files written beyond the reference"
finish
