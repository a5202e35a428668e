package export

import (
	"bytes"
	"errors"
	"flag"
	"fmt"
	"hash/fnv"
	"log"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atmos"
)

var updateC = flag.Bool("update-c", false, "rewrite the golden files of the C export under testdata/c")

// cStrict are the flags the generated file must compile cleanly with: the
// plugin build's (-std=c99 -Wall -Wextra -Werror -O2) and stricter ones.
var cStrict = []string{"-std=c99", "-Wall", "-Wextra", "-Werror", "-O2", "-pedantic", "-Wshadow",
	"-Wconversion", "-Wstrict-prototypes", "-Wmissing-prototypes", "-Wcast-qual", "-Wundef"}

func needGCC(t *testing.T) string {
	t.Helper()
	gcc, err := exec.LookPath("gcc")
	if err != nil {
		t.Skip("gcc is not on PATH")
	}
	return gcc
}

func gcc(t *testing.T, gccPath, dir string, args ...string) {
	t.Helper()
	cmd := exec.Command(gccPath, args...)
	cmd.Dir = dir
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("gcc %s: %v\n%s", strings.Join(args, " "), err, out)
	}
}

func writeC(t *testing.T, m *thrustmap.Model, o COptions) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := WriteC(&b, m, o); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// cModels are the models the C is checked against: every embedded demo
// profile with its built-in calibration, the demo without one, and the
// expression test profile with a variant (expressions reading tla, so gate
// values are worked out at every position; reverse allowed in the air; the
// N1 reduction by method "table"; a derate whose reduction is not checked),
// and a profile with 64 bleeds.
func cModels(t *testing.T) map[string]*thrustmap.Model {
	t.Helper()
	out := map[string]*thrustmap.Model{}
	for _, name := range thrustmap.EmbeddedProfiles() {
		m, err := thrustmap.LoadModel(name, name)
		if err != nil {
			t.Fatal(err)
		}
		out[name] = m
	}
	m, err := thrustmap.LoadModel("demo", "")
	if err != nil {
		t.Fatal(err)
	}
	out["demo-no-calibration"] = m
	cal := filepath.Join("testdata", "c", "exprs.cal.toml")
	if out["exprs"], err = thrustmap.LoadModel(filepath.Join("testdata", "c", "exprs.toml"), cal); err != nil {
		t.Fatal(err)
	}
	src, err := os.ReadFile(filepath.Join("testdata", "c", "exprs.toml"))
	if err != nil {
		t.Fatal(err)
	}
	variant := string(src)
	for _, r := range [][2]string{
		{"clamp((oat - 5) / 20, 0, 1)", "clamp((tla - 5) / 2, 0, 1)"},
		{"isa_temp(alt * 2.5 + 1000)", "isa_temp(alt * 2.5 + tla * 100)"},
		{"reverse_on_ground_only = true", "reverse_on_ground_only = false"},
		{`method = "corrected"`, `method = "table"`},
		{"thrust_kn = [[100, 100, 100, 88, 76], [85, 85, 85, 74, 63]]", ""},
	} {
		if !strings.Contains(variant, r[0]) {
			t.Fatalf("exprs.toml no longer holds %q for the variant", r[0])
		}
		variant = strings.ReplaceAll(variant, r[0], r[1])
	}
	path := filepath.Join(t.TempDir(), "exprs-tla.toml")
	if err := os.WriteFile(path, []byte(variant), 0o644); err != nil {
		t.Fatal(err)
	}
	if out["exprs-tla"], err = thrustmap.LoadModel(path, cal); err != nil {
		t.Fatal(err)
	}
	if out["bleeds64"], err = thrustmap.LoadModel(filepath.Join("testdata", "c", "bleeds64.toml"), ""); err != nil {
		t.Fatal(err)
	}
	// Bare profiles: no bleeds, corrections, redline, idle gate (so no
	// reverse range) or assumed temperature; gates with only a when (and a
	// speed where no gate is active), or only targets.
	for name, gates := range map[string]string{
		"bare-when": `
[[gate]]
name = "low"
tla_deg = 0
rating = "only"
when = "mach < 0.3"

[[gate]]
name = "high"
tla_deg = 10
rating = "only"
when = "mach > 0.6"
`,
		"bare-target": `
[[gate]]
name = "low"
tla_deg = 0
capture_deg = 1
rating = "only"

[[gate]]
name = "high"
tla_deg = 10
capture_deg = 1
hysteresis_deg = 1
target = "rating('only') + mach / 10"
`,
	} {
		text := `schema = 1
name = "bare (fictional)"
parameter = "EPR"

[[rating]]
name = "only"
values = 1.2

[lever]
tla_min_deg = 0
tla_max_deg = 10
` + gates
		p, err := thrustmap.ParseProfile(name+".toml", []byte(text))
		if err != nil {
			t.Fatal(err)
		}
		if out[name], err = thrustmap.NewModel(p, nil); err != nil {
			t.Fatal(err)
		}
	}
	return out
}

// TestWriteCMatchesGo compiles the C of each model with a driver that reads
// test vectors — targets at random conditions, lever sequences through the
// gates with noise, a deadband and the hysteresis bands, conditions that
// change under a held lever, bad input — and compares every answer with the
// Go library's (the reference implementation of the same methods).
func TestWriteCMatchesGo(t *testing.T) {
	gccPath := needGCC(t)
	var mu sync.Mutex
	seen := map[string]int{}
	t.Cleanup(func() {
		// The vectors must reach every situation the C has code for, in
		// one model or another.
		if t.Failed() {
			return
		}
		for _, s := range cSituations {
			if seen[s] == 0 {
				t.Errorf("no test vector reached %q", s)
			}
		}
	})
	for name, m := range cModels(t) {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			dir := t.TempDir()
			src := writeC(t, m, COptions{})
			if err := os.WriteFile(filepath.Join(dir, "model.c"), src, 0o644); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(filepath.Join(dir, "main.c"), []byte(cDriver), 0o644); err != nil {
				t.Fatal(err)
			}
			gcc(t, gccPath, dir, slicesConcat(cStrict, "-c", "model.c", "-o", "model.o")...)
			gcc(t, gccPath, dir, "-std=c99", "-Wall", "-Wextra", "-Werror", "-O2", "main.c", "model.o", "-o", "driver", "-lm")

			h := fnv.New64a()
			h.Write([]byte(name))
			v := newCVectors(t, m, rand.New(rand.NewPCG(20240611, h.Sum64())))
			v.generate()
			mu.Lock()
			for k, n := range v.seen {
				seen[k] += n
			}
			mu.Unlock()
			t.Logf("situations: %v", v.seen)
			vecPath := filepath.Join(dir, "vectors.txt")
			if err := os.WriteFile(vecPath, v.in.Bytes(), 0o644); err != nil {
				t.Fatal(err)
			}
			// Keep the expected answers beside the vectors for a reader
			// debugging a failure in the temporary directory.
			if err := os.WriteFile(filepath.Join(dir, "expected.txt"), []byte(strings.Join(v.want, "\n")+"\n"), 0o644); err != nil {
				t.Fatal(err)
			}
			cmd := exec.Command(filepath.Join(dir, "driver"), vecPath)
			out, err := cmd.Output()
			if err != nil {
				t.Fatalf("driver: %v", err)
			}
			v.compare(string(out), cBitExact, cBitExact && !bytes.Contains(src, []byte("pow(")))
		})
	}
}

// cSituations must each be reached by the vectors of some model.
var cSituations = []string{
	"reason ta_not_above_oat", "reason ta_below_corner", "reason ta_above_max", "reason reduction_limited", "reason reduction_not_checked",
	"target limited",
	"command raised", "command limited", "command interlock", "command fallback",
	"clamped altitude", "clamped temperature", "clamped mach", "clamped raw", "clamped device", "clamped lever",
	"hysteresis band", "between gates", "in a capture zone", "reverse", "deadband held",
	"assumed at the corner", "state shared across geometries", "bleed bit beyond the profile's",
	fmt.Sprintf("command error %d", cErrCond), fmt.Sprintf("command error %d", cErrLever), fmt.Sprintf("command error %d", cErrInput),
	fmt.Sprintf("command error %d", cErrNoGate),
}

func slicesConcat(a []string, b ...string) []string { return append(append([]string(nil), a...), b...) }

// cDriver reads one operation a line and prints one answer a line, numbers
// in C99 hexadecimal floating point so nothing is lost in the text.
const cDriver = `#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#define ENGINE_HEADER_ONLY
#include "model.c"

#define NSTATES 8
static engine_lever_state states[NSTATES];

static double num(const char *s) { return strtod(s, NULL); }

static void conditions(char **t, engine_conditions *c)
{
    c->alt_ft = num(t[0]);
    c->oat_c = num(t[1]);
    c->mach = num(t[2]);
    c->bleeds = strtoull(t[3], NULL, 10);
    c->on_ground = atoi(t[4]);
    c->assumed_set = atoi(t[5]);
    c->assumed_c = num(t[6]);
}

static void command(int rc, const engine_command *o)
{
    if (rc != 0) {
        printf("%d\n", rc);
        return;
    }
    printf("%d %a %a %d %d %d %a %d %u %u\n", rc, o->tla_deg, o->value, o->gate, o->lower, o->upper,
           o->fraction, o->reverse, (unsigned)o->flags, (unsigned)o->clamped);
}

int main(int argc, char **argv)
{
    char line[2048];
    FILE *in;
    if (argc != 2 || (in = fopen(argv[1], "r")) == NULL)
        return 2;
    while (fgets(line, sizeof line, in)) {
        char *t[16], *p;
        int n = 0;
        engine_conditions c;
        engine_command o;
        for (p = strtok(line, " \n"); p && n < 16; p = strtok(NULL, " \n"))
            t[n++] = p;
        if (n == 0)
            continue;
        switch (t[0][0]) {
        case 'T': {
            engine_target_result r;
            int rc;
            memset(&r, 0x5a, sizeof r); /* written only on success */
            conditions(t + 2, &c);
            rc = engine_target_detail(atoi(t[1]), &c, &r);
            if (rc != 0)
                printf("%d %d\n", rc, r.reduction_evaluated);
            else
                printf("%d %a %u %d %d %u %a %a %a %a\n", rc, r.value, (unsigned)r.flags, r.reduction_evaluated,
                       r.reduction_applied, (unsigned)r.reasons, r.assumed_c, r.effective_c, r.value_full,
                       r.thrust_reduction_pct);
            break;
        }
        case 'V': {
            double v = -1;
            int rc;
            conditions(t + 2, &c);
            rc = engine_target(atoi(t[1]), &c, &v);
            printf("%d %a\n", rc, v);
            break;
        }
        case 'Z': { /* NULL pointers */
            engine_target_result r;
            double v;
            conditions(t + 1, &c);
            printf("%d %d %d %d %d %d %d %d", engine_target(0, NULL, &v), engine_target(0, &c, NULL),
                   engine_target_detail(0, NULL, &r), engine_target_detail(0, &c, NULL), engine_bleed_bit(NULL),
                   engine_command_tla(ENGINE_NO_LEVER, NULL, 0, &c, &o), engine_command_tla(ENGINE_NO_LEVER, &states[0], 0, NULL, &o),
                   engine_command_tla(ENGINE_NO_LEVER, &states[0], 0, &c, NULL));
            engine_lever_reset(NULL);
#if ENGINE_NUM_LEVERS > 0
            printf(" %d %d %d %d %d", engine_command_raw(engine_lever_id(0), NULL, 0, &c, &o),
                       engine_command_raw(engine_lever_id(0), &states[0], 0, NULL, &o),
                       engine_command_raw(engine_lever_id(0), &states[0], 0, &c, NULL),
                   engine_raw_to_tla(engine_lever_id(0), 0, NULL, NULL), engine_tla_to_raw(engine_lever_id(0), 0, NULL, NULL));
#endif
            printf("\n");
            break;
        }
        case 'A':
            conditions(t + 4, &c);
            command(engine_command_tla(atoi(t[1]), &states[atoi(t[2])], num(t[3]), &c, &o), &o);
            break;
#if ENGINE_NUM_LEVERS > 0
        case 'R':
            conditions(t + 4, &c);
            command(engine_command_raw(atoi(t[1]), &states[atoi(t[2])], num(t[3]), &c, &o), &o);
            break;
        case 'F': {
            double tla = 0;
            uint32_t cl = 0;
            int rc = engine_raw_to_tla(atoi(t[1]), num(t[2]), &tla, &cl);
            if (rc != 0)
                printf("%d\n", rc);
            else
                printf("%d %a %u\n", rc, tla, (unsigned)cl);
            break;
        }
        case 'I': {
            double raw = 0;
            int cl = 0, rc = engine_tla_to_raw(atoi(t[1]), num(t[2]), &raw, &cl);
            if (rc != 0)
                printf("%d\n", rc);
            else
                printf("%d %a %d\n", rc, raw, cl);
            break;
        }
        case 'L':
            printf("%d\n", engine_lever_id(atoi(t[1])));
            break;
#else
        case 'R': /* no lever functions without a calibration */
            printf("%d\n", ENGINE_ERR_LEVER);
            break;
#endif
        case 'X':
            engine_lever_reset(&states[atoi(t[1])]);
            printf("ok\n");
            break;
        case 'N':
            printf("%d\n", engine_rating_index(t[1]));
            break;
        case 'S':
            printf("%s\n", engine_rating_name(atoi(t[1])));
            break;
        case 'B':
            printf("%d\n", engine_bleed_bit(t[1]));
            break;
        case 'b':
            printf("%s\n", engine_bleed_name(atoi(t[1])));
            break;
        case 'G':
            printf("%s\n", engine_gate_name(atoi(t[1])));
            break;
        case 'P': {
            double span = ENGINE_TLA_MAX_DEG-ENGINE_TLA_MIN_DEG; /* the macros are whole expressions */
            (void)span;
            printf("%s %s %d %d %d %d\n", ENGINE_PARAMETER, ENGINE_UNIT, ENGINE_NUM_RATINGS, ENGINE_NUM_GATES, ENGINE_NUM_BLEEDS,
                   ENGINE_API_VERSION);
            break;
        }
        default:
            printf("?\n");
        }
    }
    fclose(in);
    return 0;
}
`

// The C return codes.
const (
	cOK         = 0
	cErrCond    = -1
	cErrRating  = -2
	cErrLever   = -3
	cErrInput   = -4
	cErrNoGate  = -5
	cErrBleed   = -6
	cNumStates  = 8
	cTolerance  = 1e-9
	cHexFloat   = 'x'
	cFloatToken = "~"
)

// cVectors builds the driver's input and the Go library's answers.
type cVectors struct {
	t      *testing.T
	m      *thrustmap.Model
	p      *thrustmap.Profile
	rng    *rand.Rand
	in     bytes.Buffer
	ops    []string // each input line, for messages
	want   []string // each expected answer; ~ marks a float compared with tolerance
	states [cNumStates]thrustmap.LeverState
	seen   map[string]int // situations the vectors reached, by name

	lastTLA, lastRaw [cNumStates]float64
}

// cBitExact: on amd64, where C doubles are SSE2 and gcc -std=c99 contracts
// no multiply-add, the C must agree with Go to the last bit unless Go
// itself fuses multiply-adds (GOAMD64=v3 and up) or the C calls pow, whose
// last bit glibc and Go's math.Pow may round differently.
var cBitExact = runtime.GOARCH == "amd64" && !goFusesMultiplyAdd()

// fmaProbe is read at run time so the compiler cannot fold it.
var fmaProbe = [3]float64{1 + 0x1p-30, 1 - 0x1p-30, -1}

// goFusesMultiplyAdd reports whether this build computes x*y+z with one
// rounding: exactly, (1+e)(1-e) - 1 = -e², which one rounding keeps and two
// lose.
func goFusesMultiplyAdd() bool {
	x, y, z := fmaProbe[0], fmaProbe[1], fmaProbe[2]
	return x*y+z != 0
}

func newCVectors(t *testing.T, m *thrustmap.Model, rng *rand.Rand) *cVectors {
	return &cVectors{t: t, m: m, p: m.Profile(), rng: rng, seen: map[string]int{}}
}

func hexf(v float64) string  { return strconv.FormatFloat(v, cHexFloat, -1, 64) }
func wantf(v float64) string { return cFloatToken + hexf(v) }

func b01(b bool) int {
	if b {
		return 1
	}
	return 0
}

func condText(c thrustmap.Conditions) string {
	return fmt.Sprintf("%s %s %s %d %d %d %s", hexf(c.AltitudeFt), hexf(c.OATC), hexf(c.Mach), uint64(c.Bleeds),
		b01(c.OnGround), b01(c.AssumedSet), hexf(c.AssumedC))
}

func (v *cVectors) add(op string, want ...any) {
	v.in.WriteString(op + "\n")
	v.ops = append(v.ops, op)
	var parts []string
	for _, w := range want {
		switch w := w.(type) {
		case float64:
			parts = append(parts, wantf(w))
		default:
			parts = append(parts, fmt.Sprint(w))
		}
	}
	v.want = append(v.want, strings.Join(parts, " "))
}

// cond draws conditions: mostly inside the tables, some beyond their edges,
// a few outside the atmosphere or not finite.
func (v *cVectors) cond() thrustmap.Conditions {
	r := v.rng
	var c thrustmap.Conditions
	switch x := r.Float64(); {
	case x < 0.5:
		c.AltitudeFt = -2500 + r.Float64()*17000
	case x < 0.97:
		c.AltitudeFt = -3000 + r.Float64()*48000
	case x < 0.985:
		c.AltitudeFt = []float64{atmos.MinAltitudeFt - 1, atmos.MaxAltitudeFt + 1, 2e5, math.NaN()}[r.IntN(4)]
	default:
		c.AltitudeFt = []float64{0, 11000 / atmos.FeetToMeters, 20000 / atmos.FeetToMeters, atmos.MinAltitudeFt, atmos.MaxAltitudeFt}[r.IntN(5)]
	}
	isa := 15.0
	if t, err := atmos.ISATemperatureC(c.AltitudeFt); err == nil {
		isa = t
	}
	c.OATC = isa - 45 + r.Float64()*95
	if r.IntN(100) == 0 {
		c.OATC = []float64{-300, math.Inf(1), 15, 30}[r.IntN(4)]
	}
	c.Mach = r.Float64() * 0.95
	switch r.IntN(60) {
	case 0:
		c.Mach = []float64{-0.1, 6, math.NaN(), 0, 5}[r.IntN(5)]
	case 1:
		c.Mach = 0.45
	}
	if n := len(v.p.Bleeds()); n > 0 {
		c.Bleeds = thrustmap.Bleeds(r.Uint64() & (1<<uint(n) - 1))
		if r.IntN(3) == 0 {
			c.Bleeds = 0
		}
	}
	c.OnGround = r.IntN(2) == 0
	c.AssumedSet = r.IntN(2) == 0
	c.AssumedC = c.OATC - 10 + r.Float64()*90
	switch r.IntN(40) {
	case 0:
		c.AssumedC = c.OATC
	case 1:
		c.AssumedC = []float64{math.NaN(), -280, 65, 70}[r.IntN(4)]
	}
	return c
}

// varied changes one thing about c, as a pilot or simulator would between
// lever samples.
func (v *cVectors) varied(c thrustmap.Conditions) thrustmap.Conditions {
	r := v.rng
	switch r.IntN(7) {
	case 0:
		c.OnGround = !c.OnGround
	case 1:
		c.AssumedSet = !c.AssumedSet
	case 2:
		if n := len(v.p.Bleeds()); n > 0 {
			c.Bleeds ^= 1 << uint(r.IntN(n))
		}
	case 3:
		c.OATC += r.Float64()*4 - 2
	case 4:
		c.AltitudeFt += r.Float64()*2000 - 1000
	case 5:
		c.Mach = math.Max(0, c.Mach+r.Float64()*0.1-0.05)
	default:
		return v.cond()
	}
	return c
}

func (v *cVectors) generate() {
	p := v.p
	v.add("P", fmt.Sprintf("%s %s %d %d %d 2", p.Parameter(), p.Parameter().Unit(), len(p.Ratings()), len(p.Gates()), len(p.Bleeds())))
	for i, r := range p.Ratings() {
		v.add("N "+r.Name(), i)
		v.add(fmt.Sprintf("S %d", i), r.Name())
	}
	v.add("N no-such-rating", -1)
	v.add(fmt.Sprintf("S %d", len(p.Ratings())), "")
	for i, b := range p.Bleeds() {
		v.add("B "+b, i)
		v.add(fmt.Sprintf("b %d", i), b)
	}
	v.add("B no-such-bleed", cErrBleed)
	v.add("b -1", "")
	v.add(fmt.Sprintf("b %d", len(p.Bleeds())), "")
	for i := -1; i <= len(p.Gates()); i++ {
		v.add(fmt.Sprintf("G %d", i), v.m.GateName(i))
	}
	v.targets()
	v.mappings()
	v.levers()
}

// targets asks every rating for its target at random conditions.
func (v *cVectors) targets() {
	ratings := v.p.Ratings()
	for i, r := range ratings {
		n := 300
		if r.Assumed() {
			n = 1500
		}
		for range n {
			c := v.cond()
			if r.Assumed() && v.rng.IntN(4) > 0 {
				c.AssumedSet = true
				isa, err := atmos.ISATemperatureC(c.AltitudeFt)
				if corner, ok := r.CornerOAT(c.AltitudeFt, isa); ok && err == nil && v.rng.IntN(8) == 0 {
					c.AssumedC = corner // rule 1 at its edge: Ta = corner
					v.seen["assumed at the corner"]++
				}
			}
			v.target(i, r, c)
		}
	}
	for _, i := range []int{-1, len(ratings), 99} {
		v.add(fmt.Sprintf("T %d %s", i, condText(thrustmap.Conditions{})), cErrRating, cUntouched)
		v.add(fmt.Sprintf("V %d %s", i, condText(thrustmap.Conditions{})), cErrRating, -1.0)
	}
	// A bleed bit the profile does not declare is refused, as the C library
	// refuses it (the Go library ignores it).
	if n := len(v.p.Bleeds()); n < thrustmap.MaxBleeds && len(ratings) > 0 {
		c := thrustmap.Conditions{AltitudeFt: 1000, OATC: 15, Mach: 0.2, Bleeds: 1 << uint(n)}
		v.add(fmt.Sprintf("T 0 %s", condText(c)), cErrCond, cUntouched)
		v.add(fmt.Sprintf("V 0 %s", condText(c)), cErrCond, -1.0)
		v.add(fmt.Sprintf("A %d 3 0x0p+00 %s", thrustmap.NoLever, condText(c)), cErrCond)
		c.Bleeds = 1 << 63
		v.add(fmt.Sprintf("T 0 %s", condText(c)), cErrCond, cUntouched)
		v.seen["bleed bit beyond the profile's"]++
	}
	// NULL pointers: ENGINE_ERR_INPUT from every function that takes one.
	nulls := strings.Repeat(fmt.Sprintf(" %d", cErrInput), 8)
	if v.m.Calibration() != nil {
		nulls += strings.Repeat(fmt.Sprintf(" %d", cErrInput), 5)
	}
	v.add("Z "+condText(thrustmap.Conditions{AltitudeFt: 1000, OATC: 15}), strings.TrimPrefix(nulls, " "))
}

// cUntouched is what the driver prints for a target result's
// reduction_evaluated when the call left the result as it was (bytes 0x5a).
const cUntouched = 0x5a5a5a5a

// target asks rating i for its target at c with engine_target_detail and
// engine_target, expecting what thrustmap_target_detail in the C library
// gives for the Go library's answer: NaN for what the assumed-temperature
// method did not work out, the full value equal to the value when it did
// not run.
func (v *cVectors) target(i int, r *thrustmap.Rating, c thrustmap.Conditions) {
	res, err := v.p.RatingTarget(r, c)
	op := fmt.Sprintf("T %d %s", i, condText(c))
	vop := fmt.Sprintf("V %d %s", i, condText(c))
	if err != nil {
		if !errors.Is(err, thrustmap.ErrConditions) {
			v.t.Fatalf("%s: %v", op, err)
		}
		v.add(op, cErrCond, cUntouched)
		v.add(vop, cErrCond, -1.0)
		return
	}
	red := res.Reduction
	for _, n := range red.Reasons.Names() {
		v.seen["reason "+n]++
	}
	for _, n := range res.Flags.Names() {
		v.seen["target "+n]++
	}
	nan := math.NaN()
	assumed, effective, full, pct := nan, nan, res.Value, nan
	if red.Evaluated {
		assumed, effective, full = red.AssumedC, red.EffectiveC, red.ValueFull
		if red.ThrustChecked {
			pct = red.ThrustReductionPct
		}
	}
	v.add(op, cOK, res.Value, cFlags(res.Flags, res.Clamped), b01(red.Evaluated), b01(red.Applied),
		uint8(red.Reasons), assumed, effective, full, pct)
	v.add(vop, cOK, res.Value)
}

// cClamped are the generated C's ENGINE_CLAMPED_* bits alone.
func cClamped(cl thrustmap.Clamped) uint32 { return cFlags(0, cl) &^ 1 }

// cFlags are the generated C's flag bits for a result's flags and clamped
// inputs: those of the C library's header (cmd/libthrustmap/thrustmap.h),
// written out here: ENGINE_FLAG_CLAMPED 1<<0, _RAISED 1<<1, _LIMITED 1<<2,
// _INTERLOCK 1<<3, _FALLBACK 1<<4; ENGINE_CLAMPED_ALTITUDE 1<<8,
// _TEMPERATURE 1<<9, _MACH 1<<10, _RAW 1<<11, _DEVICE 1<<12, _LEVER 1<<13.
func cFlags(f thrustmap.Flags, cl thrustmap.Clamped) uint32 {
	var out uint32
	for _, b := range []struct {
		set bool
		bit uint32
	}{
		{cl != 0, 1 << 0},
		{f&thrustmap.Raised != 0, 1 << 1}, {f&thrustmap.Limited != 0, 1 << 2},
		{f&thrustmap.Interlock != 0, 1 << 3}, {f&thrustmap.Fallback != 0, 1 << 4},
		{cl&thrustmap.ClampAltitude != 0, 1 << 8}, {cl&thrustmap.ClampTemperature != 0, 1 << 9},
		{cl&thrustmap.ClampMach != 0, 1 << 10}, {cl&thrustmap.ClampRaw != 0, 1 << 11},
		{cl&thrustmap.ClampDevice != 0, 1 << 12}, {cl&thrustmap.ClampLever != 0, 1 << 13},
	} {
		if b.set {
			out |= b.bit
		}
	}
	return out
}

// mappings maps raw counts to TLA and back on every calibrated lever.
func (v *cVectors) mappings() {
	cal := v.m.Calibration()
	if cal == nil {
		return
	}
	for i, l := range cal.Levers() {
		v.add(fmt.Sprintf("L %d", i), l.ID())
		s := l.Spec()
		for range 400 {
			raw := s.RawMin - 100 + v.rng.Float64()*(s.RawMax-s.RawMin+200)
			if v.rng.IntN(2) == 0 {
				raw = math.Round(raw)
			}
			tla, cl := l.TLA(raw)
			v.add(fmt.Sprintf("F %d %s", l.ID(), hexf(raw)), cOK, tla, cClamped(cl))
		}
		for _, pt := range s.Points {
			tla, cl := l.TLA(pt[0])
			v.add(fmt.Sprintf("F %d %s", l.ID(), hexf(pt[0])), cOK, tla, cClamped(cl))
			raw, rc := l.Raw(pt[1])
			v.add(fmt.Sprintf("I %d %s", l.ID(), hexf(pt[1])), cOK, raw, b01(rc))
		}
		lv := v.p.Lever()
		for range 400 {
			tla := lv.TLAMinDeg - 5 + v.rng.Float64()*(lv.TLAMaxDeg-lv.TLAMinDeg+10)
			raw, rc := l.Raw(tla)
			v.add(fmt.Sprintf("I %d %s", l.ID(), hexf(tla)), cOK, raw, b01(rc))
		}
		v.add(fmt.Sprintf("F %d %s", l.ID(), hexf(math.NaN())), cErrInput)
		v.add(fmt.Sprintf("I %d %s", l.ID(), hexf(math.NaN())), cErrInput)
	}
	v.add("F 99 0x0p+00", cErrLever)
	v.add("I 99 0x0p+00", cErrLever)
}

// levers drives each lever (raw counts and angles) and the profile's own
// zones (angles) through sequences: towards waypoints at the gates, at and
// around their capture and hysteresis edges and anywhere on the travel,
// dwelling there with noise, while conditions change now and then. States
// are shared between levers now and then, as a careless plugin might.
func (v *cVectors) levers() {
	type target struct {
		id  int
		raw bool
	}
	var targets []target
	if cal := v.m.Calibration(); cal != nil {
		for _, l := range cal.Levers() {
			targets = append(targets, target{l.ID(), true}, target{l.ID(), false})
		}
	}
	targets = append(targets, target{thrustmap.NoLever, false})
	for k, tg := range targets {
		state := k % cNumStates
		for seq := range 4 {
			if v.rng.IntN(3) == 0 {
				state = v.rng.IntN(cNumStates)
			}
			v.sequence(tg.id, tg.raw, state, 500+seq*100)
		}
	}
	if cal := v.m.Calibration(); cal != nil {
		for _, l := range cal.Levers() {
			v.deviceEdges(l)
		}
		// One state for two levers, or for a lever's counts and the
		// profile's own angles: every sample moves the state to another
		// gate geometry.
		ls := cal.Levers()
		a, b := ls[0], ls[len(ls)-1]
		v.interleaved(func(k int, tla float64, c thrustmap.Conditions) {
			if k%2 == 0 {
				raw, _ := a.Raw(tla)
				v.command(a.ID(), true, 0, math.Round(raw+v.rng.NormFloat64()), c)
			} else {
				raw, _ := b.Raw(tla + v.rng.NormFloat64()*0.3)
				v.command(b.ID(), true, 0, math.Round(raw), c)
			}
		})
		v.interleaved(func(k int, tla float64, c thrustmap.Conditions) {
			if k%3 == 0 {
				v.command(thrustmap.NoLever, false, 1, tla, c)
			} else {
				raw, _ := a.Raw(tla)
				v.command(a.ID(), true, 1, math.Round(raw+v.rng.NormFloat64()*2), c)
			}
		})
	}
	c := v.cond()
	c.AltitudeFt, c.OATC, c.Mach = 1000, 15, 0.2
	v.command(99, false, 0, 0, c)
	v.command(99, true, 0, 0, c)
	v.command(thrustmap.NoLever, false, 0, math.Inf(1), c)
}

// deviceEdges rests lever l at each end of its device range, where the
// deadband can hold a reading inside the range while the count is beyond it.
func (v *cVectors) deviceEdges(l *thrustmap.LeverCalibration) {
	s := l.Spec()
	c := thrustmap.Conditions{AltitudeFt: 500, OATC: 20, Mach: 0.1, OnGround: true}
	for _, edge := range []float64{s.RawMin, s.RawMax} {
		for range 40 {
			raw := edge + v.rng.NormFloat64()*math.Max(1, s.Deadband)
			if v.rng.IntN(2) == 0 {
				raw = math.Round(raw)
			}
			v.command(s.ID, true, 2, raw, c)
		}
	}
}

// interleaved moves a lever slowly through every gate's zones, calling step
// at each position with conditions that change now and then.
func (v *cVectors) interleaved(step func(k int, tla float64, c thrustmap.Conditions)) {
	lv := v.p.Lever()
	c := thrustmap.Conditions{AltitudeFt: 800, OATC: 25, Mach: 0.15, OnGround: true, AssumedSet: true, AssumedC: 50}
	k := 0
	for tla := lv.TLAMinDeg - 1; tla <= lv.TLAMaxDeg+1; tla += 0.07 {
		if v.rng.IntN(100) == 0 {
			c = v.varied(c)
		}
		step(k, tla, c)
		k++
	}
	v.seen["state shared across geometries"]++
}

func (v *cVectors) sequence(lever int, raw bool, state, n int) {
	r := v.rng
	p := v.p
	lv := p.Lever()
	gates := p.Gates()
	var lc *thrustmap.LeverCalibration
	if raw {
		lc = v.m.Calibration().Lever(lever)
	}
	c := v.cond()
	for range 10 {
		if c.AltitudeFt == c.AltitudeFt && math.Abs(c.AltitudeFt) < 60000 && c.Mach >= 0 && c.Mach <= 1 {
			break
		}
		c = v.cond()
	}
	pos := lv.TLAMinDeg + r.Float64()*(lv.TLAMaxDeg-lv.TLAMinDeg)
	way, dwell, speed := pos, 0, 1.0
	for range n {
		switch x := r.IntN(1000); {
		case x < 30:
			c = v.varied(c)
		case x < 33:
			v.add(fmt.Sprintf("X %d", state), "ok")
			v.states[state].Reset()
		}
		if dwell > 0 {
			dwell--
		} else if math.Abs(pos-way) < 1e-9 {
			way, dwell, speed = v.waypoint(lever, gates), r.IntN(25), 0.05+r.Float64()*3
		}
		pos += math.Max(-speed, math.Min(speed, way-pos))
		if raw {
			x, _ := lc.Raw(pos)
			x += r.NormFloat64() * 2.5
			switch r.IntN(200) {
			case 0:
				x = []float64{-40, 4300, math.NaN(), math.Inf(-1)}[r.IntN(4)]
			case 1, 2, 3, 4, 5, 6:
			default:
				x = math.Round(x)
			}
			v.command(lever, true, state, x, c)
		} else {
			tla := pos + r.NormFloat64()*0.05
			if r.IntN(400) == 0 {
				tla = math.NaN()
			}
			v.command(lever, false, state, tla, c)
		}
	}
}

// waypoint is a lever angle worth resting at: a gate, the edge of its
// capture zone, somewhere in its hysteresis band, just beyond it, or
// anywhere on the travel and a little past the stops.
func (v *cVectors) waypoint(lever int, gates []thrustmap.Gate) float64 {
	r := v.rng
	lv := v.p.Lever()
	if r.IntN(5) == 0 {
		return lv.TLAMinDeg - 2 + r.Float64()*(lv.TLAMaxDeg-lv.TLAMinDeg+4)
	}
	i := r.IntN(len(gates))
	capture, hyst, err := v.m.EffectiveZone(lever, i)
	if err != nil {
		v.t.Fatal(err)
	}
	side := float64(1 - 2*r.IntN(2))
	var off float64
	switch r.IntN(4) {
	case 0:
		off = 0
	case 1:
		off = capture
	case 2:
		off = capture + hyst*r.Float64()
	default:
		off = capture + hyst + 0.1*r.Float64()
	}
	return gates[i].TLADeg + side*off
}

func (v *cVectors) command(lever int, raw bool, state int, x float64, c thrustmap.Conditions) {
	var out thrustmap.LeverCommand
	var err error
	var op string
	if raw {
		out, err = v.m.Command(&v.states[state], lever, x, c)
		op = fmt.Sprintf("R %d %d %s %s", lever, state, hexf(x), condText(c))
	} else {
		out, err = v.m.CommandAtTLA(&v.states[state], lever, x, c)
		op = fmt.Sprintf("A %d %d %s %s", lever, state, hexf(x), condText(c))
	}
	if err != nil {
		rc := cErrLever
		switch msg := err.Error(); {
		case errors.Is(err, thrustmap.ErrConditions):
			rc = cErrCond
		case !errors.Is(err, thrustmap.ErrLever):
			v.t.Fatalf("%s: %v", op, err)
		case strings.Contains(msg, "not a finite"):
			rc = cErrInput
		case strings.Contains(msg, "no gate is active"):
			rc = cErrNoGate
		}
		v.seen[fmt.Sprintf("command error %d", rc)]++
		v.add(op, rc)
		return
	}
	for _, n := range out.Flags.Names() {
		v.seen["command "+n]++
	}
	for _, n := range out.Clamped.Names() {
		v.seen["clamped "+n]++
	}
	switch {
	case out.Gate >= 0 && out.Lower >= 0:
		v.seen["hysteresis band"]++
	case out.Lower >= 0:
		v.seen["between gates"]++
	case out.Gate >= 0:
		v.seen["in a capture zone"]++
	}
	if out.Reverse {
		v.seen["reverse"]++
	}
	if raw && out.TLADeg == v.lastTLA[state] && x != v.lastRaw[state] {
		v.seen["deadband held"]++
	}
	if raw {
		v.lastTLA[state], v.lastRaw[state] = out.TLADeg, x
	}
	v.add(op, cOK, out.TLADeg, out.Value, out.Gate, out.Lower, out.Upper, out.Fraction, b01(out.Reverse),
		cFlags(out.Flags, out.Clamped), cClamped(out.Clamped))
}

// compare checks the driver's answers against the library's: integers and
// names exactly, numbers to cTolerance relative (absolute below 1), or to
// the last bit when exact (lever commands when exactCommands).
func (v *cVectors) compare(out string, exact, exactCommands bool) {
	t := v.t
	lines := strings.Split(strings.TrimSuffix(out, "\n"), "\n")
	if len(lines) != len(v.want) {
		t.Fatalf("driver gave %d answers to %d operations", len(lines), len(v.want))
	}
	var floats, inexact, failures int
	worst := 0.0
	for i, got := range lines {
		want := v.want[i]
		gf, wf := strings.Fields(got), strings.Fields(want)
		strict := exact
		if op := v.ops[i]; strings.HasPrefix(op, "R ") || strings.HasPrefix(op, "A ") {
			strict = exactCommands
		}
		ok := len(gf) == len(wf) || (len(wf) == 0 && got == want)
		for j := 0; ok && j < len(wf); j++ {
			if !strings.HasPrefix(wf[j], cFloatToken) {
				ok = gf[j] == wf[j]
				continue
			}
			w, err1 := strconv.ParseFloat(wf[j][1:], 64)
			g, err2 := parseCFloat(gf[j])
			if err1 != nil || err2 != nil {
				ok = false
				continue
			}
			floats++
			if math.Float64bits(g) != math.Float64bits(w) && !(math.IsNaN(g) && math.IsNaN(w)) {
				inexact++
				d := math.Abs(g-w) / math.Max(1, math.Max(math.Abs(g), math.Abs(w)))
				worst = math.Max(worst, d)
				ok = d <= cTolerance && !strict
			}
		}
		if !ok {
			failures++
			t.Errorf("operation %d: %s\n  C:  %s\n  Go: %s", i+1, v.ops[i], got, decodeWant(want))
			if failures >= 20 {
				t.Fatal("too many differences")
			}
		}
	}
	t.Logf("%d operations, %d numbers: %d not identical to the last bit, largest relative difference %.3g (bit-exact: targets %v, commands %v)",
		len(v.want), floats, inexact, worst, exact, exactCommands)
}

func parseCFloat(s string) (float64, error) {
	switch strings.TrimLeft(strings.ToLower(s), "+-") {
	case "nan":
		return math.NaN(), nil
	}
	return strconv.ParseFloat(s, 64)
}

// decodeWant shows an expected answer with its floats in decimal.
func decodeWant(s string) string {
	f := strings.Fields(s)
	for i, x := range f {
		if strings.HasPrefix(x, cFloatToken) {
			if v, err := strconv.ParseFloat(x[1:], 64); err == nil {
				f[i] = strconv.FormatFloat(v, 'g', -1, 64)
			}
		}
	}
	return strings.Join(f, " ")
}

// TestWriteCHeader checks the opening comment of the demo's C against its
// golden file (go test ./thrustmap/export -run Header -update-c rewrites it).
func TestWriteCHeader(t *testing.T) {
	m, err := thrustmap.LoadModel("demo", "demo")
	if err != nil {
		t.Fatal(err)
	}
	src := string(writeC(t, m, COptions{}))
	end := strings.Index(src, "*/\n")
	if !strings.HasPrefix(src, "/*\n") || end < 0 {
		t.Fatalf("the C does not open with a comment:\n%.400s", src)
	}
	header := src[:end+3]
	for _, must := range []string{"embedded:demo", "SIMULATION ONLY. NOT CERTIFIED.", "real aircraft", "Nothing", "resampled"} {
		if !strings.Contains(header, must) {
			t.Errorf("header lacks %q", must)
		}
	}
	golden := filepath.Join("testdata", "c", "demo.header.golden")
	if *updateC {
		if err := os.WriteFile(golden, []byte(header), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatalf("%v (run with -update-c to create it)", err)
	}
	if header != string(want) {
		t.Errorf("header differs from %s (run with -update-c after checking):\n%s", golden, header)
	}
}

// TestWriteCDeterministic: the same model gives the same text.
func TestWriteCDeterministic(t *testing.T) {
	for name, m := range cModels(t) {
		a, b := writeC(t, m, COptions{}), writeC(t, m, COptions{})
		if !bytes.Equal(a, b) {
			t.Errorf("%s: two exports differ", name)
		}
	}
}

// TestWriteCRefuses: what the C cannot reproduce is an error naming the gate
// and the reason, and so is a prefix that is no C identifier.
func TestWriteCRefuses(t *testing.T) {
	src, err := os.ReadFile(filepath.Join("testdata", "c", "exprs.toml"))
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		old, new string
		want     []string
	}{
		{`"(oat / 10) ** 1.5 + 60"`, `"ceil(oat) + 60"`, []string{`gate "pow"`, "target", "ceil(oat) + 60", "VM"}},
		{`"(oat / 10) ** 1.5 + 60"`, `"max(oat, 1, 2) + 60"`, []string{`gate "pow"`, "max(oat, 1, 2)"}},
		{`"!on_ground || bleed('packs-off')"`, `"on_ground == true"`, []string{`gate "climb"`, "when", "on_ground == true"}},
		{`"assumed('takeoff')"`, `"len('abc') + 0.5"`, []string{`gate "reduced-takeoff"`, "target"}},
	} {
		text := strings.Replace(string(src), tc.old, tc.new, 1)
		if text == string(src) {
			t.Fatalf("exprs.toml no longer holds %s", tc.old)
		}
		p, err := thrustmap.ParseProfile("refuse.toml", []byte(text))
		if err != nil {
			t.Fatalf("%s: %v", tc.new, err)
		}
		m, err := thrustmap.NewModel(p, nil)
		if err != nil {
			t.Fatal(err)
		}
		err = WriteC(&bytes.Buffer{}, m, COptions{})
		if err == nil || !errors.Is(err, ErrCExport) {
			t.Fatalf("%s: got %v, want an export error", tc.new, err)
		}
		for _, w := range tc.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: error %q does not say %q", tc.new, err, w)
			}
		}
	}
	m, err := thrustmap.LoadModel("demo", "")
	if err != nil {
		t.Fatal(err)
	}
	for _, prefix := range []string{"2x_", "engine-", "__engine", "_Engine", "en gine"} {
		if err := WriteC(&bytes.Buffer{}, m, COptions{Prefix: prefix}); err == nil || !strings.Contains(err.Error(), "prefix") {
			t.Errorf("prefix %q: got %v, want an error about the prefix", prefix, err)
		}
	}
}

// TestWriteCPrefix: with another prefix every declared name carries it, and
// two models with different prefixes link into one program.
func TestWriteCPrefix(t *testing.T) {
	gccPath := needGCC(t)
	dir := t.TempDir()
	a, err := thrustmap.LoadModel("demo", "demo")
	if err != nil {
		t.Fatal(err)
	}
	b, err := thrustmap.LoadModel(filepath.Join("testdata", "c", "exprs.toml"), filepath.Join("testdata", "c", "exprs.cal.toml"))
	if err != nil {
		t.Fatal(err)
	}
	srcA := writeC(t, a, COptions{Prefix: "twin_"})
	srcB := writeC(t, b, COptions{Prefix: "Test"})
	if loc := regexp.MustCompile(`\b(engine|ENGINE)_`).FindIndex(srcA); loc != nil {
		t.Errorf("twin_ C still says %q", srcA[max(0, loc[0]-40):loc[1]+20])
	}
	for name, src := range map[string][]byte{"a.c": srcA, "b.c": srcB} {
		if err := os.WriteFile(filepath.Join(dir, name), src, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	const main = `#include <stdio.h>
#define TWIN_HEADER_ONLY
#include "a.c"
#define TESTHEADER_ONLY
#include "b.c"

int main(void)
{
    twin_conditions c = {1000, 15, 0.2, 0, 1, 0, 0};
    Testconditions d = {1000, 15, 0.2, 0, 1, 0, 0};
    twin_target_result r;
    double s;
    twin_lever_state st = {0};
    twin_command cmd;
    if (twin_target_detail(twin_rating_index("takeoff"), &c, &r) != TWIN_OK || Testtarget(Testrating_index("takeoff"), &d, &s) != TESTOK)
        return 1;
    if (twin_command_raw(1, &st, 2000, &c, &cmd) != TWIN_OK)
        return 1;
    printf("%.3f %.3f %s\n", r.value, s, twin_gate_name(cmd.gate));
    return 0;
}
`
	if err := os.WriteFile(filepath.Join(dir, "main.c"), []byte(main), 0o644); err != nil {
		t.Fatal(err)
	}
	gcc(t, gccPath, dir, slicesConcat(cStrict, "-c", "a.c", "-o", "a.o")...)
	gcc(t, gccPath, dir, slicesConcat(cStrict, "-c", "b.c", "-o", "b.o")...)
	gcc(t, gccPath, dir, "-std=c99", "-Wall", "-Wextra", "-Werror", "-O2", "main.c", "a.o", "b.o", "-o", "both", "-lm")
	out, err := exec.Command(filepath.Join(dir, "both")).Output()
	if err != nil {
		t.Fatalf("both: %v", err)
	}
	ra, _ := a.Profile().Target("takeoff", thrustmap.Conditions{AltitudeFt: 1000, OATC: 15, Mach: 0.2, OnGround: true})
	rb, _ := b.Profile().Target("takeoff", thrustmap.Conditions{AltitudeFt: 1000, OATC: 15, Mach: 0.2, OnGround: true})
	var st thrustmap.LeverState
	cmd, err := a.Command(&st, 1, 2000, thrustmap.Conditions{AltitudeFt: 1000, OATC: 15, Mach: 0.2, OnGround: true})
	if err != nil {
		t.Fatal(err)
	}
	want := fmt.Sprintf("%.3f %.3f %s\n", ra.Value, rb.Value, a.GateName(cmd.Gate))
	if string(out) != want {
		t.Errorf("got %q, want %q", out, want)
	}
}

// The C for the embedded demo with its built-in calibration; a plugin
// compiles the file with its own sources (cc -std=c99 ... -lm).
func ExampleWriteC() {
	m, err := thrustmap.LoadModel("demo", "demo")
	if err != nil {
		log.Fatal(err)
	}
	var b bytes.Buffer
	if err := WriteC(&b, m, COptions{Prefix: "twin_"}); err != nil {
		log.Fatal(err)
	}
	for _, line := range strings.Split(b.String(), "\n") {
		if strings.HasPrefix(line, "int twin_command_raw") || strings.HasPrefix(line, " * SIMULATION ONLY") {
			fmt.Println(line)
		}
	}
	// Output:
	//  * SIMULATION ONLY. NOT CERTIFIED. Never use this code, its data or its
	// int twin_command_raw(int lever, twin_lever_state *s, double raw, const twin_conditions *c, twin_command *out);
	// int twin_command_raw(int lever, twin_lever_state *s, double raw, const twin_conditions *c, twin_command *out)
}
