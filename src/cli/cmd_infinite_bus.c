/* cmd_infinite_bus.c - `tagwright infinite-bus --kva K --volts V --z-percent Z [--xr R]`:
 * the secondary full-load current and infinite-bus fault current of a transformer, and with an
 * X/R ratio its impedance angle and R and X in ohms. The same arithmetic as the infinite-bus
 * check in `tagwright check` (tw_analysis.h). Exit 0, or 2 on bad usage. */
#include <getopt.h>
#include <math.h>
#include <stdio.h>

#include "rules/tw_analysis.h"
#include "cli/tw_cli.h"
#include "base/tw_util.h"

static const char infinite_bus_usage[] =
    "usage: tagwright infinite-bus --kva KVA --volts V --z-percent Z [--xr X/R]\n"
    "Prints the transformer's secondary full-load current and its infinite-bus fault current\n"
    "(every impedance upstream of the transformer taken as zero); with --xr, the impedance\n"
    "angle and the R and X parts of the transformer impedance in ohms, referred to the\n"
    "secondary. V is the secondary phase-to-phase voltage.\n";

/* Parse an option value as a finite number above 0; reports and returns -1 otherwise. */
static int positive_option(const char *name, const char *value, double *out)
{
    double v;
    if (tw_parse_double(value, &v) != 0 || !(v > 0) || !isfinite(v)) {
        tw_usage_error("infinite-bus", "--%s: expected a number above 0, got '%s'", name, value);
        return -1;
    }
    *out = v;
    return 0;
}

int cmd_infinite_bus(int argc, char **argv)
{
    static const struct option opts[] = {
        {"kva", required_argument, NULL, 'k'},
        {"volts", required_argument, NULL, 'v'},
        {"z-percent", required_argument, NULL, 'z'},
        {"xr", required_argument, NULL, 'x'},
        {"help", no_argument, NULL, 'h'},
        {NULL, 0, NULL, 0},
    };
    double kva = NAN, volts = NAN, z = NAN, xr = NAN;
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "h", opts, NULL)) != -1) {
        int bad = 0;
        switch (c) {
        case 'k': bad = positive_option("kva", optarg, &kva); break;
        case 'v': bad = positive_option("volts", optarg, &volts); break;
        case 'z': bad = positive_option("z-percent", optarg, &z); break;
        case 'x': bad = positive_option("xr", optarg, &xr); break;
        case 'h': fputs(infinite_bus_usage, stdout); return TW_EXIT_OK;
        default:
            return tw_usage_error("infinite-bus", "unknown option; see 'tagwright infinite-bus "
                                  "--help'");
        }
        if (bad)
            return TW_EXIT_USAGE;
    }
    if (optind != argc)
        return tw_usage_error("infinite-bus", "unexpected argument '%s'", argv[optind]);
    if (isnan(kva) || isnan(volts) || isnan(z))
        return tw_usage_error("infinite-bus", "--kva, --volts and --z-percent are required");
    if (z >= 100)
        return tw_usage_error("infinite-bus", "--z-percent: expected a percentage below 100, "
                              "got %g", z);
    tw_infinite_bus ib;
    if (tw_infinite_bus_calc(kva, volts, z, &ib) != 0)
        return tw_usage_error("infinite-bus", "these values give no finite current");
    printf("transformer: %g kVA, %g V secondary, %g %%Z\n", kva, volts, z);
    printf("secondary full-load current: %.1f A  (kVA x 1000 / (sqrt(3) x V))\n",
           ib.full_load_a);
    printf("infinite-bus fault current:  %.0f A = %.2f kA  (full-load current x 100 / %%Z)\n",
           ib.fault_a, ib.fault_a / 1000);
    if (!isnan(xr)) {
        tw_xfmr_impedance zi;
        if (tw_xfmr_impedance_calc(kva, volts, z, xr, &zi) != 0)
            return tw_usage_error("infinite-bus", "these values give no finite impedance");
        printf("X/R %g: impedance angle %.2f deg  (atan(X/R))\n", xr, zi.angle_deg);
        printf("base impedance: %.6g ohm  (V^2 / (kVA x 1000))\n", zi.z_base_ohm);
        printf("impedance Z:    %.6g ohm  (base x %%Z / 100)\n", zi.z_ohm);
        printf("resistance R:   %.6g ohm  (Z cos(angle))\n", zi.r_ohm);
        printf("reactance X:    %.6g ohm  (Z sin(angle))\n", zi.x_ohm);
    }
    printf("Upstream impedance and motor contribution are not included; the study's own fault\n"
           "currents govern.\n");
    return TW_EXIT_OK;
}
