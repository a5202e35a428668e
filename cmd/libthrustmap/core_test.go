package main

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"unsafe"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// TestCoreConcurrent drives the core behind the exports from goroutines the
// way C threads drive the exports: every lever on its own goroutine with
// exact values from the Go API, several goroutines on one lever, readers,
// and a close while calls are in flight. It is the test to run with -race:
// the C-driven TestCABI cannot, because the race runtime cannot shadow a
// c-shared library loaded high in the address space ("ThreadSanitizer failed
// to allocate ... errno: 12").
func TestCoreConcurrent(t *testing.T) {
	m, err := thrustmap.LoadModel("demo", "demo")
	if err != nil {
		t.Fatal(err)
	}
	id := openHandle("demo", "demo")
	if id == 0 {
		t.Fatal(globalErrText())
	}
	step := 5
	if testing.Short() {
		step = 50
	}
	var levers []int
	for _, l := range m.Calibration().Levers() {
		levers = append(levers, l.ID())
	}

	// sweep runs lever's samples through the handle; with exact, each
	// command must equal the Go API's on a state of its own.
	sweep := func(lever int, exact bool) {
		var want thrustmap.LeverState
		for k, tc := range testConditions {
			in := conditions{tc.AltitudeFt, tc.OATC, tc.Mach, uint64(tc.Bleeds), tc.OnGround, tc.AssumedSet, tc.AssumedC}
			for raw := rawLo; raw <= rawHi; raw += step {
				got, code := call(t, id, func(h *handle) (thrustmap.LeverCommand, int) { return h.command(lever, raw, in) })
				if code != codeOK {
					t.Errorf("lever %d raw %d condition %d: code %d", lever, raw, k, code)
					return
				}
				if exact {
					w, err := m.Command(&want, lever, float64(raw), tc)
					if err != nil || got != w {
						t.Errorf("lever %d raw %d condition %d:\ngot  %+v\nwant %+v (%v)", lever, raw, k, got, w, err)
						return
					}
				} else if got.Gate < -1 || got.Gate >= len(m.Profile().Gates()) || got.TLADeg < -18 || got.TLADeg > 55 {
					t.Errorf("shared lever %d raw %d: %+v", lever, raw, got)
					return
				}
			}
		}
	}

	// Each lever alone on its goroutine, in parallel: exact.
	var wg sync.WaitGroup
	for _, l := range levers {
		wg.Go(func() { sweep(l, true) })
	}
	wg.Wait()

	// Several goroutines per lever, readers of targets, gate names and
	// errors, and failing calls writing the error slot.
	for _, l := range levers {
		for range 3 {
			wg.Go(func() { sweep(l, false) })
		}
	}
	for range 2 {
		wg.Go(func() {
			in := conditions{AltFt: 2000, OATC: 20, OnGround: true}
			for range 200 {
				want, _ := m.Profile().Target("takeoff", thrustmap.Conditions{AltitudeFt: 2000, OATC: 20, OnGround: true})
				v, code := call(t, id, func(h *handle) (thrustmap.Result, int) { return h.target("takeoff", in) })
				if code != codeOK || v != want {
					t.Errorf("target: %v code %d, want %v", v, code, want.Value)
					return
				}
				if _, code := call(t, id, func(h *handle) (thrustmap.Result, int) { return h.target("warp", in) }); code != codeInvalid {
					t.Errorf("unknown rating: code %d", code)
				}
				if msg, ok := errorText(id); !ok || msg == "" {
					t.Errorf("error text %q %v", msg, ok)
				}
				call(t, id, func(h *handle) (int, int) { return 0, boolCode(h.gateName(0) != nil) })
			}
		})
	}
	wg.Wait()

	// Reset makes a lever exact again.
	for _, l := range levers {
		call(t, id, func(h *handle) (int, int) { return 0, h.reset(l) })
		wg.Go(func() { sweep(l, true) })
	}
	wg.Wait()

	// Close while goroutines call: each ends on a bad handle, never a crash.
	var calls atomic.Int64
	for i := range 4 {
		wg.Go(func() {
			in := conditions{OATC: 15, OnGround: true}
			for raw := 0; ; raw++ {
				h := acquire(id)
				if h == nil {
					return
				}
				_, code := h.command(levers[i%len(levers)], 200+raw%3700, in)
				h.release()
				if code != codeOK {
					t.Errorf("command during close: code %d", code)
					return
				}
				calls.Add(1)
			}
		})
	}
	for calls.Load() < 1000 && !t.Failed() {
	}
	closeHandle(id)
	wg.Wait()
	if msg := globalErrText(); !strings.Contains(msg, "not open") {
		t.Errorf("after close the global error is %q", msg)
	}
	closeHandle(id) // twice: nothing
}

// call runs f on the open handle id, failing the test when it is not open.
func call[T any](t *testing.T, id int64, f func(*handle) (T, int)) (T, int) {
	h := acquire(id)
	if h == nil {
		t.Errorf("handle %d is not open", id)
		var zero T
		return zero, codeBadHandle
	}
	defer h.release()
	return f(h)
}

func boolCode(ok bool) int {
	if ok {
		return codeOK
	}
	return codeInternal
}

// TestCoreErrors checks the codes and messages of the core's error paths.
func TestCoreErrors(t *testing.T) {
	if openHandle("no-such-profile.toml", "") != 0 || !strings.Contains(globalErrText(), "no-such-profile.toml") {
		t.Errorf("open of a missing profile: %q", globalErrText())
	}
	if acquire(-7) != nil || globalErrText() != "thrustmap: handle -7 is not open" {
		t.Errorf("bad handle: %q", globalErrText())
	}
	if _, ok := errorText(-7); ok {
		t.Error("errorText of a bad handle")
	}
	id := openHandle("demo", "demo")
	if id == 0 {
		t.Fatal(globalErrText())
	}
	defer closeHandle(id)
	h := acquire(id)
	defer h.release()
	ok := conditions{OATC: 15, OnGround: true}
	for _, c := range []struct {
		name string
		call func() int
		msg  string
	}{
		{"unknown lever", func() int { return code(h.command(9, 1000, ok)) }, "lever 9 is not in calibration"},
		{"bleed bit", func() int { return code(h.command(1, 1000, conditions{OATC: 15, Bleeds: 1 << 3})) }, "bleed bits 0x8 are beyond"},
		{"altitude", func() int { return code(h.command(1, 1000, conditions{AltFt: 1e6})) }, "outside the standard atmosphere"},
		{"unknown rating", func() int { return code(h.target("warp", ok)) }, `unknown rating "warp"`},
		{"reset unknown lever", func() int { return h.reset(0) }, "lever 0 is not in calibration"},
	} {
		h.setErr("")
		if got, msg := c.call(), h.errText(); got != codeInvalid || !strings.Contains(msg, c.msg) {
			t.Errorf("%s: code %d, message %q; want %d and %q", c.name, got, msg, codeInvalid, c.msg)
		}
	}
	if h.gateName(99) != nil || !strings.Contains(h.errText(), "gate 99 is out of range") {
		t.Errorf("gate 99: message %q", h.errText())
	}
	if h.gateName(-1) != nil {
		t.Error("gate -1 has a name")
	}
	if c := recovered(h, "thrustmap_test", "boom"); c != codeInternal || !strings.Contains(h.errText(), "thrustmap_test: internal error") {
		t.Errorf("recovered: %d %q", c, h.errText())
	}
}

// code drops the first result of a core call.
func code[T any](_ T, c int) int { return c }

// TestCopyCString checks the snprintf-like copy: cut at a UTF-8 character
// boundary, always NUL-terminated, never past the buffer.
func TestCopyCString(t *testing.T) {
	const msg = "OAT 40 °C" // ° is 2 bytes: bytes 7 and 8
	for _, c := range []struct {
		size int
		want string
	}{
		{1, ""}, {2, "O"}, {8, "OAT 40 "}, {9, "OAT 40 "}, {10, "OAT 40 °"}, {11, "OAT 40 °C"}, {12, "OAT 40 °C"},
	} {
		buf := []byte(strings.Repeat("x", c.size+1))
		copyCString(buf[:c.size], msg)
		n := strings.IndexByte(string(buf), 0)
		if n < 0 || string(buf[:n]) != c.want || buf[c.size] != 'x' {
			t.Errorf("size %d: %q, want %q then NUL", c.size, buf, c.want)
		}
	}
}

// TestCoreCommandLevers: a batch is its levers' single commands in order
// (also with a lever twice and with the most levers a call takes), checks
// every lever before any moves, and allocates nothing.
func TestCoreCommandLevers(t *testing.T) {
	a, b := openHandle("demo", "demo"), openHandle("demo", "demo")
	if a == 0 || b == 0 {
		t.Fatal(globalErrText())
	}
	defer closeHandle(a)
	defer closeHandle(b)
	ha, hb := acquire(a), acquire(b)
	defer ha.release()
	defer hb.release()

	rnd := uint32(7)
	var levers, raws [maxBatch]int32
	for frame := range 500 {
		n := 1 + frame%4
		if frame%50 == 0 {
			n = maxBatch
		}
		tc := testConditions[frame/25%len(testConditions)]
		in := conditions{tc.AltitudeFt, tc.OATC, tc.Mach, uint64(tc.Bleeds), tc.OnGround, tc.AssumedSet, tc.AssumedC}
		for k := range n {
			rnd = rnd*1664525 + 1013904223 // a linear congruential generator (Numerical Recipes)
			levers[k], raws[k] = int32(1+rnd>>31), int32(200+rnd>>8%3700)
		}
		var got [maxBatch]thrustmap.LeverCommand
		if code := ha.commandLevers(levers[:n], raws[:n], in, func(i int, cmd thrustmap.LeverCommand) { got[i] = cmd }); code != codeOK {
			t.Fatalf("frame %d: code %d: %s", frame, code, ha.errText())
		}
		for k := range n {
			want, code := hb.command(int(levers[k]), int(raws[k]), in)
			if code != codeOK || got[k] != want {
				t.Fatalf("frame %d, lever %d (%d of %d) raw %d:\nbatch  %+v\nsingle %+v (code %d)", frame, levers[k], k, n, raws[k], got[k], want, code)
			}
		}
	}

	// Bad arguments: found before any lever moves. Lever 1 is held at raw
	// 2000 by its deadband (2 counts); had a failed batch moved it to 3000,
	// raw 2001 would be a new reading.
	ok := conditions{OATC: 15, OnGround: true}
	put := func(i int, _ thrustmap.LeverCommand) { t.Errorf("a failing batch put lever %d", i) }
	ha.command(1, 2000, ok)
	hb.command(1, 2000, ok)
	for _, c := range []struct {
		name         string
		levers, raws []int32
		in           conditions
		msg          string
	}{
		{"empty", nil, nil, ok, "n = 0 levers: want 1 to 64"},
		{"too many", make([]int32, maxBatch+1), make([]int32, maxBatch+1), ok, "n = 65 levers"},
		{"raws short", []int32{1, 2}, []int32{3000}, ok, "2 levers, 1 raw counts"},
		{"unknown lever", []int32{1, 7, 2}, []int32{3000, 1000, 1000}, ok, "levers[1]: bad argument: lever 7 is not in calibration"},
		{"bleed bit", []int32{1}, []int32{3000}, conditions{OATC: 15, Bleeds: 1 << 63}, "bleed bits 0x8000000000000000 are beyond"},
	} {
		if code := ha.commandLevers(c.levers, c.raws, c.in, put); code != codeInvalid || !strings.Contains(ha.errText(), c.msg) {
			t.Errorf("%s: code %d, message %q; want %d and %q", c.name, code, ha.errText(), codeInvalid, c.msg)
		}
	}
	mine, _ := ha.command(1, 2001, ok)
	theirs, _ := hb.command(1, 2001, ok)
	if mine != theirs {
		t.Errorf("a failed batch moved lever 1: TLA %v, want %v", mine.TLADeg, theirs.TLADeg)
	}
	for _, n := range []int{0, -1, maxBatch + 1, math.MinInt32, math.MaxInt32} {
		if checkBatch(n) == nil {
			t.Errorf("checkBatch(%d) accepts it", n)
		}
	}
	for _, n := range []int{1, maxBatch} {
		if err := checkBatch(n); err != nil {
			t.Errorf("checkBatch(%d): %v", n, err)
		}
	}

	// No allocation per frame: the conditions drift every frame, as in a
	// climb, so every gate target is worked out again.
	frame := 0
	var sink float64
	allocs := testing.AllocsPerRun(200, func() {
		frame++
		in := conditions{AltFt: float64(frame * 10), OATC: 20 - 0.002*float64(frame*10), Mach: 0.3}
		ha.commandLevers([]int32{1, 2, 1, 2}, []int32{int32(1300 + frame), int32(2900 - frame), 2000, 2100}, in,
			func(_ int, cmd thrustmap.LeverCommand) { sink += cmd.Value })
	})
	if allocs != 0 {
		t.Errorf("commandLevers allocates %v times a frame, want 0", allocs)
	}
}

// TestCoreQueries checks what a handle tells about itself against the Go
// API, on the demo and on testProfile, whose 64 bleeds use bit 63.
func TestCoreQueries(t *testing.T) {
	dir := t.TempDir()
	prof := filepath.Join(dir, "test-profile.toml")
	if err := os.WriteFile(prof, []byte(testProfile()), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ profile, cal string }{{"demo", "demo"}, {prof, ""}} {
		m, err := thrustmap.LoadModel(tc.profile, tc.cal)
		if err != nil {
			t.Fatal(err)
		}
		p := m.Profile()
		id := openHandle(tc.profile, tc.cal)
		if id == 0 {
			t.Fatal(globalErrText())
		}
		h := acquire(id)
		if got, want := cstr(unsafe.Pointer(h.parameter)), p.Parameter().String(); got != want {
			t.Errorf("%s: parameter %q, want %q", tc.profile, got, want)
		}
		if got, want := cstr(unsafe.Pointer(h.unit)), p.Parameter().Unit(); got != want {
			t.Errorf("%s: unit %q, want %q", tc.profile, got, want)
		}
		for i, r := range p.Ratings() {
			if got := cstr(unsafe.Pointer(h.name("f", "rating", i, h.ratingNames))); got != r.Name() {
				t.Errorf("%s: rating %d %q, want %q", tc.profile, i, got, r.Name())
			}
		}
		if h.name("f", "rating", len(p.Ratings()), h.ratingNames) != nil || !strings.Contains(h.errText(), "out of range") {
			t.Errorf("%s: rating out of range: %q", tc.profile, h.errText())
		}
		for i, b := range p.Bleeds() {
			if got := cstr(unsafe.Pointer(h.name("f", "bleed bit", i, h.bleedNames))); got != b {
				t.Errorf("%s: bleed %d %q, want %q", tc.profile, i, got, b)
			}
			if bit := h.bleedBit(b); bit != i {
				t.Errorf("%s: bleed %q has bit %d, want %d", tc.profile, b, bit, i)
			}
		}
		if code := h.bleedBit("no-such-bleed"); code != codeInvalid || !strings.Contains(h.errText(), `unknown bleed "no-such-bleed" (the profile has`) {
			t.Errorf("%s: unknown bleed: code %d, %q", tc.profile, code, h.errText())
		}
		// Every declared bleed on at once is a valid set; one bit more is not.
		all := uint64(1)<<len(p.Bleeds()) - 1
		if len(p.Bleeds()) == 64 {
			all = math.MaxUint64
		}
		if _, err := h.conditions(conditions{Bleeds: all}); err != nil {
			t.Errorf("%s: all %d bleeds: %v", tc.profile, len(p.Bleeds()), err)
		}
		if _, err := h.conditions(conditions{Bleeds: all + 1}); len(p.Bleeds()) < 64 && err == nil {
			t.Errorf("%s: bleed bit %d accepted", tc.profile, len(p.Bleeds()))
		}
		var ids [8]int32
		n := h.leverIDsInto(ids[:])
		var want []int32
		if m.Calibration() != nil {
			for _, l := range m.Calibration().Levers() {
				want = append(want, int32(l.ID()))
			}
		}
		if n != len(want) || !slices.Equal(ids[:n], want) {
			t.Errorf("%s: lever ids %v (%d), want %v", tc.profile, ids[:n], n, want)
		}
		h.release()
		closeHandle(id)
	}
}

// TestTargetDetail: thrustmap_target_result's fields from a Result, with
// NaN for what the assumed-temperature method did not work out.
func TestTargetDetail(t *testing.T) {
	nan := math.NaN()
	same := func(a, b detail) bool {
		eq := func(x, y float64) bool { return x == y || math.IsNaN(x) && math.IsNaN(y) }
		return eq(a.Value, b.Value) && a.Evaluated == b.Evaluated && a.Applied == b.Applied && a.Reasons == b.Reasons &&
			eq(a.AssumedC, b.AssumedC) && eq(a.EffectiveC, b.EffectiveC) && eq(a.ValueFull, b.ValueFull) && eq(a.ThrustReductionPct, b.ThrustReductionPct)
	}
	for _, c := range []struct {
		name string
		res  thrustmap.Result
		want detail
	}{
		{"not evaluated", thrustmap.Result{Value: 95.5}, detail{95.5, 0, 0, 0, nan, nan, 95.5, nan}},
		{"reduced, thrust checked", thrustmap.Result{Value: 90, Reduction: thrustmap.Reduction{Evaluated: true, Applied: true,
			AssumedC: 50, EffectiveC: 48, ValueFull: 95, Reasons: thrustmap.ReductionLimited, ThrustChecked: true, ThrustReductionPct: 25}},
			detail{90, 1, 1, uint32(thrustmap.ReductionLimited), 50, 48, 95, 25}},
		{"no thrust grid", thrustmap.Result{Value: 1.4, Reduction: thrustmap.Reduction{Evaluated: true, Applied: true,
			AssumedC: 40, EffectiveC: 40, ValueFull: 1.5, Reasons: thrustmap.ReductionNotChecked}},
			detail{1.4, 1, 1, uint32(thrustmap.ReductionNotChecked), 40, 40, 1.5, nan}},
		{"full rating", thrustmap.Result{Value: 95, Reduction: thrustmap.Reduction{Evaluated: true,
			AssumedC: 10, EffectiveC: 20, ValueFull: 95, Reasons: thrustmap.TANotAboveOAT, ThrustChecked: true}},
			detail{95, 1, 0, uint32(thrustmap.TANotAboveOAT), 10, 20, 95, 0}},
	} {
		if got := targetDetail(&c.res); !same(got, c.want) {
			t.Errorf("%s: %+v, want %+v", c.name, got, c.want)
		}
	}
}

// cstr copies a NUL-terminated C string (test files cannot use cgo).
func cstr(p unsafe.Pointer) string {
	if p == nil {
		return "<NULL>"
	}
	n := 0
	for *(*byte)(unsafe.Add(p, n)) != 0 {
		n++
	}
	return string(unsafe.Slice((*byte)(p), n))
}

// BenchmarkCoreCommandLevers is the batch call without the crossing from
// C: four levers a frame, the conditions drifting every frame (the
// crossing's own cost is in cmd/libthrustmap/bench).
func BenchmarkCoreCommandLevers(b *testing.B) {
	id := openHandle("demo", "demo")
	if id == 0 {
		b.Fatal(globalErrText())
	}
	defer closeHandle(id)
	levers := []int32{1, 2, 1, 2}
	var raws [4]int32
	sum := 0.0
	put := func(_ int, cmd thrustmap.LeverCommand) { sum += cmd.Value }
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		f := i & 4095
		alt := 30000 * float64(f) / 4096
		in := conditions{AltFt: alt, OATC: 25 - 0.0019812*alt, Mach: 0.3 + 0.48*float64(f)/4096}
		t := f & 2047
		for k := range raws {
			raws[k] = int32(1218 + (3880-1218)*min(t, 2048-t)/1024)
			if k%2 == 1 {
				raws[k] = int32(3021 - (3021-225)*min(t, 2048-t)/1024)
			}
		}
		h := acquire(id)
		if code := h.commandLevers(levers, raws[:], in, put); code != codeOK {
			b.Fatal(h.errText())
		}
		h.release()
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/4, "ns/lever")
}
