# t_registry.sh - one registry per site (site.json "registry", symlinks resolved), the export
# and import commands, and crash safety: runs killed with SIGKILL at random instants, after each
# of which the registry must agree with the PDFs it names (checked page by page with pdftotext)
# and no temporary file may be left once it is next opened.
source "$(dirname "$0")/lib.sh"
small="$TW_DATA/core/small.csv"
cd "$TW_TMP"

# ---- the site's registry -------------------------------------------------------------------
mkdir -p site out
printf '{"site_name": "Registry test site", "registry": "records/site.registry"}\n' >site/site.json
mkdir -p site/records
run labels "$small" --site site/site.json --out out/a.pdf --date 2026-12-01
expect_rc 0 "labels with a site registry"
check "the registry named by site.json, relative to it" test -s site/records/site.registry
lacks "$ERR" "note:" "no note about where the history went"
run labels "$small" --site site/site.json --out out/b.pdf --date 2026-12-01
check "a second PDF does not start a second record" test ! -e out/tagwright-registry.db
run registry export --site site/site.json --format csv --status current
expect_rc 0 "registry export --site"
[ "$(printf '%s\n' "$OUT" | grep -c '^E2E-')" = 4 ] && ok "one current revision per bus" ||
    fail "export: $OUT"
contains "$OUT" "b.pdf" "reprinting the same content keeps the revision and notes where"
pay=$(printf '%s\n' "$OUT" | grep -io 'https://[^,]*' | head -n 1)
run verify --site site/site.json "$pay"
expect_rc 0 "verify --site finds the label in the site's registry"

# a symlink to the registry: the same history, one lock (issue 15, failure 6)
ln -s site/records/site.registry link.registry
run reprint "$small" --bus E2E-MCC-1 --clearing-time 1.0 --manifest link.registry \
    --out out/r.pdf --date 2026-12-02
expect_rc 0 "reprint through a symlink to the registry"
check "the symlink is still a symlink" test -L link.registry
check "no lock on the link's name" test ! -e link.registry.lock
run registry export --site site/site.json --format csv
contains "$OUT" "E2E-MCC-1,2,current" "the revision went into the real registry"

# a JSON manifest given as --manifest is not overwritten: it is to be imported
printf '{"format": "tagwright-manifest", "version": 1, "labels": []}\n' >old.manifest.json
cp old.manifest.json old.keep
run labels "$small" --manifest old.manifest.json --out out/c.pdf --date 2026-12-01
expect_rc 1 "a JSON manifest as --manifest is refused"
contains "$ERR" "tagwright registry import old.manifest.json" "the message says how to import it"
check "the JSON manifest is unchanged" cmp -s old.manifest.json old.keep

# export -> import into a new registry gives the same export
"$TW_BIN" registry export --site site/site.json >exported.json
run registry import --manifest imported.registry exported.json
expect_rc 0 "registry import of an export"
cmp -s exported.json <("$TW_BIN" registry export --manifest imported.registry) &&
    ok "the imported registry exports the same JSON" || fail "import/export differ"
run registry import --manifest imported.registry exported.json
expect_rc 1 "importing the same equipment twice is refused"
run registry export --manifest imported.registry --format yaml
expect_rc 2 "an unknown export format is a usage error"

# ---- kill -9 at random instants ------------------------------------------------------------
# 30 buses in 6 volumes; every run raises the energy (no approval needed), so each run that
# gets recorded supersedes every label.
K="$TW_TMP/kill"
mkdir -p "$K"
gen() { # gen STEP: the study with energies raised by STEP tenths
    awk -v s="$1" 'BEGIN { print "equipment_id,description,location,study_id,study_date,scenario,nominal_voltage_v,working_distance_in,incident_energy_cal_cm2,arc_flash_boundary_in"
        for (i = 0; i < 30; i++)
            printf "KL-PNL-%02d,Panel %d,Room %d,KL-1,2026-01-31,max,480,18,%.1f,%d\n", i, i, i, 1.5 + i / 10 + s / 10, 30 + s }'
}
gen 0 >"$K/s.csv"
"$TW_BIN" labels "$K/s.csv" --out "$K/labels.pdf" --volume-size 5 --manifest "$K/site.registry" \
    --date 2026-12-01 >/dev/null 2>&1
t0=$(date +%s%N)
gen 1 >"$K/s.csv"
"$TW_BIN" labels "$K/s.csv" --out "$K/labels.pdf" --volume-size 5 --manifest "$K/site.registry" \
    --date 2026-12-01 >/dev/null 2>&1
span=$(( ($(date +%s%N) - t0) / 1000 )) # microseconds of one run

# consistent: every current revision's page shows its equipment and energy; nothing else left
consistent() {
    "$TW_BIN" registry export --manifest "$K/site.registry" --status current >"$K/export.json" || return 1
    python3 - "$K" <<'EOF' || return 1
import json, os, subprocess, sys
k = sys.argv[1]
labels = json.load(open(os.path.join(k, "export.json")))["labels"]
if len(labels) != 30:
    sys.exit("expected 30 current revisions, found %d" % len(labels))
pages = {}
for l in labels:
    out = l["output"]
    if out not in pages:
        text = subprocess.run(["pdftotext", "-layout", os.path.join(k, out), "-"],
                              capture_output=True, text=True, check=True).stdout
        pages[out] = text.split("\f")
    page = pages[out][l["page"] - 1]
    energy = [v[len("incident_energy="):] for v in l["content"].split("\n") if v.startswith("incident_energy=")][0]
    if l["equipment_id"] not in page or energy.split()[0] not in page:
        sys.exit("%s revision %d (%s) is not what %s page %d shows" % (l["equipment_id"], l["revision"], energy, out, l["page"]))
allowed = {"site.registry", "site.registry.lock", "site.registry-wal", "site.registry-shm", "s.csv", "export.json"}
allowed |= {"labels-%03d.pdf" % v for v in range(1, 7)}
left = sorted(set(os.listdir(k)) - allowed)
if left:
    sys.exit("left behind: %s" % left)
EOF
}
good=0
for i in $(seq 2 13); do
    gen "$i" >"$K/s.csv"
    "$TW_BIN" labels "$K/s.csv" --out "$K/labels.pdf" --volume-size 5 --manifest "$K/site.registry" \
        --date 2026-12-01 >/dev/null 2>&1 &
    pid=$!
    sleep "$(awk -v s="$span" -v r="$RANDOM" 'BEGIN { printf "%.6f", s * 1.1 * r / 32768 / 1e6 }')"
    kill -9 "$pid" 2>/dev/null || true
    wait "$pid" 2>/dev/null || true
    if msg=$(consistent 2>&1); then
        good=$((good + 1))
    else
        fail "kill -9 in run $i: $msg"
    fi
done
recorded=$(( $(grep -o '"revision":[0-9]*' "$K/export.json" | head -n 1 | cut -d: -f2) - 2 ))
[ "$good" = 12 ] && ok "kill -9 at 12 random instants: the registry agrees with the PDFs every time, nothing left behind ($recorded runs were recorded)" ||
    fail "only $good of 12 killed runs left a consistent registry"
finish
