/*
 * frame_loop.c - libthrustmap as a simulator plugin uses it: open the profile
 * and calibration at load, look up what it needs by name once (the bleeds,
 * the levers, the gate names to show), command every lever once a frame
 * with one call, close at unload.
 *
 * The simulator is scripted here (sim_frame): a takeoff on the ground at a
 * 2000 ft field, OAT 20 degrees C, engine anti-ice on and an assumed
 * temperature of 45 degrees C selected, both levers pushed from idle to the
 * forward stop (lever 2 a little behind), through the reduced-takeoff gate.
 *
 * Build against the installed library (OUTDIR from
 * bash cmd/libthrustmap/build.sh OUTDIR) and run:
 *
 *     make -C examples/c THRUSTMAP=OUTDIR && examples/c/frame_loop
 *
 * or by hand:
 *
 *     cc -std=c11 -I OUTDIR/include -o frame_loop frame_loop.c -L OUTDIR/lib -lthrustmap -Wl,-rpath,OUTDIR/lib
 *
 * frame_loop -x prints every command with exact values (examples/check.py
 * compares them with the command line's).
 *
 * Simulation only: not certified, never for setting thrust on a real
 * aircraft.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "thrustmap.h"

#define MAX_LEVERS 8
#define FRAMES 30

/* What the simulator gives the plugin each frame. */
typedef struct {
    double alt_ft, oat_c, mach;
    int on_ground, engine_anti_ice, assumed_set;
    double assumed_c;
    int raw[MAX_LEVERS]; /* the quadrant's raw counts, by lever */
} sim_state;

/* What the plugin keeps from load to unload. */
static struct {
    int64_t h;
    int nlevers, levers[MAX_LEVERS];
    uint64_t engine_anti_ice; /* the bleed's bit in thrustmap_conditions.bleeds */
    const char *parameter, *unit;
    int exact; /* -x: exact values, one line a lever */
} plugin;

/* fail prints the library's message for the last failed call on h. */
static void fail(int64_t h, const char *what)
{
    char msg[512];
    thrustmap_error(h, msg, sizeof msg);
    fprintf(stderr, "frame_loop: %s: %s\n", what, msg);
}

/* plugin_load opens the profile and calibration and looks up by name what
 * each frame needs. */
static int plugin_load(const char *profile, const char *calibration)
{
    if (thrustmap_abi_version() != THRUSTMAP_ABI_VERSION) {
        fprintf(stderr, "frame_loop: libthrustmap has interface %d, this plugin was built for %d\n",
                thrustmap_abi_version(), THRUSTMAP_ABI_VERSION);
        return 0;
    }
    plugin.h = thrustmap_open(profile, calibration);
    if (plugin.h == 0) {
        fail(0, "thrustmap_open");
        return 0;
    }
    int bit = thrustmap_bleed_bit(plugin.h, "engine-anti-ice");
    if (bit < 0) {
        fail(plugin.h, "bleed engine-anti-ice");
        return 0;
    }
    plugin.engine_anti_ice = (uint64_t)1 << bit;
    plugin.nlevers = thrustmap_lever_ids(plugin.h, plugin.levers, MAX_LEVERS);
    if (plugin.nlevers < 1 || plugin.nlevers > MAX_LEVERS) {
        fprintf(stderr, "frame_loop: the calibration has %d levers; this plugin drives 1 to %d\n", plugin.nlevers,
                MAX_LEVERS);
        return 0;
    }
    plugin.parameter = thrustmap_parameter(plugin.h);
    plugin.unit = thrustmap_unit(plugin.h);

    printf("libthrustmap %d: %s with %s: %s (%s), levers", thrustmap_abi_version(), profile, calibration,
           plugin.parameter, plugin.unit);
    for (int i = 0; i < plugin.nlevers; i++)
        printf(" %d", plugin.levers[i]);
    printf(", gates");
    for (int g = 0; g < thrustmap_gate_count(plugin.h); g++)
        printf(" %s", thrustmap_gate_name(plugin.h, g));
    printf("\n");
    return 1;
}

/* plugin_frame commands every lever at this frame's conditions, in one
 * call, and shows the result. */
static int plugin_frame(int frame, const sim_state *sim)
{
    thrustmap_conditions c = {
        .alt_ft = sim->alt_ft,
        .oat_c = sim->oat_c,
        .mach = sim->mach,
        .bleeds = sim->engine_anti_ice ? plugin.engine_anti_ice : 0,
        .on_ground = sim->on_ground,
        .assumed_set = sim->assumed_set,
        .assumed_c = sim->assumed_c,
    };
    thrustmap_result out[MAX_LEVERS];
    if (thrustmap_command_levers(plugin.h, plugin.nlevers, plugin.levers, sim->raw, &c, out) != THRUSTMAP_OK) {
        fail(plugin.h, "thrustmap_command_levers");
        return 0;
    }
    if (!plugin.exact)
        printf("frame %2d:", frame);
    for (int i = 0; i < plugin.nlevers; i++) {
        const char *gate = thrustmap_gate_name(plugin.h, out[i].gate); /* NULL for none (-1) */
        if (plugin.exact) {
            printf("frame %d lever %d raw %d tla %.17g gate %s value %.17g flags %#x\n", frame, plugin.levers[i],
                   sim->raw[i], out[i].tla_deg, gate ? gate : "-", out[i].value, (unsigned)out[i].flags);
            continue;
        }
        printf("%s lever %d raw %4d TLA %6.2f %-15s %s %6.2f%s", i == 0 ? "" : " |", plugin.levers[i], sim->raw[i],
               out[i].tla_deg, gate ? gate : "(between gates)", plugin.parameter, out[i].value,
               out[i].flags & THRUSTMAP_FLAG_RAISED ? " raised" : "");
    }
    if (!plugin.exact)
        printf("\n");
    return 1;
}

/* plugin_unload closes the handle; the library itself stays loaded. */
static void plugin_unload(void) { thrustmap_close(plugin.h); }

/* sim_frame is the scripted simulator: the levers from idle to the forward
 * stop over the frames (the demo calibration's counts at TLA 0 and 55),
 * lever 2 two frames behind. */
static void sim_frame(int frame, sim_state *sim)
{
    static const int idle[2] = {1218, 3021}, full[2] = {3880, 225};
    *sim = (sim_state){.alt_ft = 2000, .oat_c = 20, .on_ground = 1, .engine_anti_ice = 1, .assumed_set = 1,
                       .assumed_c = 45};
    for (int i = 0; i < plugin.nlevers; i++) {
        int k = i % 2, f = frame - 2 * i;
        f = f < 0 ? 0 : f > FRAMES - 5 ? FRAMES - 5 : f;
        sim->raw[i] = idle[k] + (full[k] - idle[k]) * f / (FRAMES - 5);
    }
}

int main(int argc, char **argv)
{
    plugin.exact = argc > 1 && strcmp(argv[1], "-x") == 0;
    if (argc > 2 || (argc == 2 && !plugin.exact)) {
        fprintf(stderr, "usage: frame_loop [-x]\n");
        return 2;
    }
    if (!plugin_load("demo", "demo"))
        return 1;
    sim_state sim;
    sim_frame(0, &sim);
    printf("conditions: alt_ft %g oat_c %g mach %g on_ground %d assumed_c %g bleeds %s\n", sim.alt_ft, sim.oat_c,
           sim.mach, sim.on_ground, sim.assumed_c, sim.engine_anti_ice ? "engine-anti-ice" : "-");
    int ok = 1;
    for (int frame = 0; ok && frame < FRAMES; frame++) {
        sim_frame(frame, &sim);
        ok = plugin_frame(frame, &sim);
    }
    plugin_unload();
    return ok ? 0 : 1;
}
