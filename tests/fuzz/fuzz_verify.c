/* fuzz_verify.c - libFuzzer harness: QR verify payloads. Each input is the text a scanner read
 * off a label, given to `tagwright verify` (cmd_verify, the command itself) against a fixed
 * manifest of five labels, one of them superseded. The answer must be current (0),
 * superseded (1) or unknown (2); anything else - and 3, the manifest is fine - is reported as
 * a crash. The manifest is written once to a temporary file; stdout goes to /dev/null. */
#include <stdint.h>
#include <unistd.h>

#include "fuzz_common.h"
#include "cli/tw_cli.h"
#include "write/tw_registry.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* Printed by tagwright labels from tests/data/core/small.csv, then again with the lighting
 * panel's description and energy changed (fictional study). */
static const char manifest_json[] =
    "{\"labels\":[{\"equipment_id\":\"E2E-PNL-1\",\"revision\":1,\"status\":\"superseded\",\"content_hash\":\""
    "bac0eb563b4d22aab1837b23d68a73a05636af688a729f0704a007eb2019d1ac\",\"study_id\":\"E2E-STUDY\",\""
    "printed\":\"2025-01-10\",\"output\":\"v.pdf\",\"volume\":1,\"page\":1,\"payload\":\"https://records.inva"
    "lid/study/E2E-STUDY/E2E-PNL-1?rev=1&sha256=bac0eb563b4d22aab1837b23d68a73a05636af688a729f0"
    "704a007eb2019d1ac\",\"reason\":null,\"changes\":null,\"superseded_on\":\"2025-02-10\",\"content\":\"si"
    "gnal_word=WARNING\\nequipment_id=E2E-PNL-1\\ndescription=Lighting panel\\nlocation=Room 101\\n"
    "nominal_voltage=208 V\\narc_flash_boundary=1 ft 7 in (465 mm)\\nincident_energy=1.3 cal/cm2\\"
    "nworking_distance=18 in (457 mm)\\nmin_arc_rating=1.3 cal/cm2\\nppe_level=AR-4 (4 cal/cm2)\\n"
    "limited_approach=3 ft 6 in (1.0 m)\\nrestricted_approach=1 ft 0 in (0.3 m)\\nglove_class=Cla"
    "ss 00 (max. use 500 V AC)\\nstudy_id=E2E-STUDY\\nstudy_date=2026-09-15\\nscenario=utility-max"
    "\\nreview_due=2031-09-15\\n\"},{\"equipment_id\":\"E2E-MCC-1\",\"revision\":1,\"status\":\"current\",\"c"
    "ontent_hash\":\"638232dbab865cbbb2f02a3d83741a0150e588aa09b374042f6e6e46d9380340\",\"study_id\""
    ":\"E2E-STUDY\",\"printed\":\"2025-02-10\",\"output\":\"v.pdf\",\"volume\":1,\"page\":2,\"payload\":\"https:"
    "//records.invalid/study/E2E-STUDY/E2E-MCC-1?rev=1&sha256=638232dbab865cbbb2f02a3d83741a015"
    "0e588aa09b374042f6e6e46d9380340\",\"reason\":null,\"changes\":null,\"superseded_on\":null,\"conten"
    "t\":\"signal_word=WARNING\\nequipment_id=E2E-MCC-1\\ndescription=Motor control centre, line 2\\"
    "nlocation=Room 102\\nnominal_voltage=480 V\\narc_flash_boundary=4 ft 9 in (1433 mm)\\ninciden"
    "t_energy=7.9 cal/cm2\\nworking_distance=18 in (457 mm)\\nmin_arc_rating=7.9 cal/cm2\\nppe_lev"
    "el=AR-8 (8 cal/cm2)\\nlimited_approach=3 ft 6 in (1.0 m)\\nrestricted_approach=1 ft 0 in (0."
    "3 m)\\nglove_class=Class 00 (max. use 500 V AC)\\nstudy_id=E2E-STUDY\\nstudy_date=2026-09-15\\"
    "nscenario=utility-min\\nreview_due=2031-09-15\\n\"},{\"equipment_id\":\"E2E-SWBD-1\",\"revision\":1"
    ",\"status\":\"current\",\"content_hash\":\"77ddfaa7a07c8b5b0ba2eb008ec57a44d939af20a1869be0b035ea"
    "8d9811d3f3\",\"study_id\":\"E2E-STUDY\",\"printed\":\"2025-02-10\",\"output\":\"v.pdf\",\"volume\":1,\"pag"
    "e\":3,\"payload\":\"https://records.invalid/study/E2E-STUDY/E2E-SWBD-1?rev=1&sha256=77ddfaa7a0"
    "7c8b5b0ba2eb008ec57a44d939af20a1869be0b035ea8d9811d3f3\",\"reason\":null,\"changes\":null,\"supe"
    "rseded_on\":null,\"content\":\"signal_word=DANGER\\nequipment_id=E2E-SWBD-1\\ndescription=Main s"
    "witchboard\\nlocation=Room 103\\nnominal_voltage=480 V\\narc_flash_boundary=24 ft 7 in (7481 "
    "mm)\\nincident_energy=48.2 cal/cm2\\nworking_distance=24 in (610 mm)\\nmin_arc_rating=48.2 ca"
    "l/cm2\\nno_ppe_adequate=yes\\nlimited_approach=3 ft 6 in (1.0 m)\\nrestricted_approach=1 ft 0"
    " in (0.3 m)\\nglove_class=Class 00 (max. use 500 V AC)\\navailable_fault=42.5 kA\\nservice_cl"
    "earing_time=0.500 s\\nstudy_id=E2E-STUDY\\nstudy_date=2026-09-15\\nscenario=utility-max\\nrevi"
    "ew_due=2031-09-15\\n\"},{\"equipment_id\":\"E2E-SWGR-1\",\"revision\":1,\"status\":\"current\",\"conten"
    "t_hash\":\"9a0d4d2d4787e24eadb63821be28706ac24b5abb32c29ab2304760c93e552ba3\",\"study_id\":\"E2E"
    "-STUDY\",\"printed\":\"2025-02-10\",\"output\":\"v.pdf\",\"volume\":1,\"page\":4,\"payload\":\"https://rec"
    "ords.invalid/study/E2E-STUDY/E2E-SWGR-1?rev=1&sha256=9a0d4d2d4787e24eadb63821be28706ac24b5"
    "abb32c29ab2304760c93e552ba3\",\"reason\":null,\"changes\":null,\"superseded_on\":null,\"content\":\""
    "signal_word=WARNING\\nequipment_id=E2E-SWGR-1\\ndescription=Incoming switchgear\\nlocation=Su"
    "bstation\\nnominal_voltage=13800 V\\narc_flash_boundary=11 ft 5 in (3478 mm)\\nincident_energ"
    "y=4.4 cal/cm2\\nworking_distance=36 in (914 mm)\\nmin_arc_rating=4.4 cal/cm2\\nppe_level=AR-8"
    " (8 cal/cm2)\\nlimited_approach=5 ft 0 in (1.5 m)\\nrestricted_approach=2 ft 2 in (0.7 m)\\ng"
    "love_class=Class 2 (max. use 17000 V AC)\\nstudy_id=E2E-STUDY\\nstudy_date=2026-09-15\\nscena"
    "rio=utility-max\\nreview_due=2031-09-15\\n\"},{\"equipment_id\":\"E2E-PNL-1\",\"revision\":2,\"statu"
    "s\":\"current\",\"content_hash\":\"dbf873d99fd2409303a161bec13260024cd9c284350d107b526dbcd7fae16"
    "22e\",\"study_id\":\"E2E-STUDY\",\"printed\":\"2025-02-10\",\"output\":\"v.pdf\",\"volume\":1,\"page\":1,\"p"
    "ayload\":\"https://records.invalid/study/E2E-STUDY/E2E-PNL-1?rev=2&sha256=dbf873d99fd2409303"
    "a161bec13260024cd9c284350d107b526dbcd7fae1622e\",\"reason\":null,\"changes\":\"description: Ligh"
    "ting panel -> Lighting panel east\",\"superseded_on\":null,\"content\":\"signal_word=WARNING\\neq"
    "uipment_id=E2E-PNL-1\\ndescription=Lighting panel east\\nlocation=Room 101\\nnominal_voltage="
    "208 V\\narc_flash_boundary=1 ft 7 in (465 mm)\\nincident_energy=1.3 cal/cm2\\nworking_distanc"
    "e=18 in (457 mm)\\nmin_arc_rating=1.3 cal/cm2\\nppe_level=AR-4 (4 cal/cm2)\\nlimited_approach"
    "=3 ft 6 in (1.0 m)\\nrestricted_approach=1 ft 0 in (0.3 m)\\nglove_class=Class 00 (max. use "
    "500 V AC)\\nstudy_id=E2E-STUDY\\nstudy_date=2026-09-15\\nscenario=utility-max\\nreview_due=203"
    "1-09-15\\n\"}],\"format\":\"tagwright-manifest\",\"version\":1}";

static char manifest_path[64];
static char registry_path[80];

static void remove_manifest(void)
{
    unlink(manifest_path);
    unlink(registry_path);
    char lock[96];
    snprintf(lock, sizeof lock, "%s.lock", registry_path);
    unlink(lock);
}

static int setup(void)
{
    if (manifest_path[0])
        return 0;
    if (!freopen("/dev/null", "w", stdout) || !freopen("/dev/null", "r", stdin))
        return -1;
    snprintf(manifest_path, sizeof manifest_path, "/tmp/tw-fuzz-verify.XXXXXX");
    int fd = mkstemp(manifest_path);
    if (fd < 0)
        return -1;
    size_t n = sizeof manifest_json - 1;
    int ok = write(fd, manifest_json, n) == (ssize_t)n;
    close(fd);
    atexit(remove_manifest);
    /* verify reads a registry: the manifest is imported into one, once */
    snprintf(registry_path, sizeof registry_path, "%s.registry", manifest_path);
    tw_registry r;
    char err[512];
    size_t count;
    ok = ok && tw_registry_open(&r, registry_path, 1, err, sizeof err) == 0;
    if (ok) {
        ok = tw_registry_import(&r, manifest_path, manifest_json, sizeof manifest_json - 1,
                                &count, err, sizeof err) == 0;
        tw_registry_close(&r);
    }
    return ok ? 0 : -1;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (setup() != 0)
        abort();
    char *payload = malloc(size + 1); /* argv strings end at a NUL, as on a command line */
    if (!payload)
        return 0;
    memcpy(payload, data, size);
    payload[size] = '\0';
    char *argv[] = {"verify", "--manifest", registry_path, "--", payload, NULL};
    int rc = cmd_verify(5, argv);
    free(payload);
    if (rc != 0 && rc != 1 && rc != 4)
        abort(); /* an answer is current (0), superseded (1) or unknown (4) */
    return 0;
}
