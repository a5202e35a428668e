package main

import (
	"strings"
	"sync"
	"sync/atomic"
	"testing"

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
			in := conditions{tc.AltitudeFt, tc.OATC, tc.Mach, uint32(tc.Bleeds), tc.OnGround, tc.AssumedSet, tc.AssumedC}
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
				v, code := call(t, id, func(h *handle) (float64, int) { return h.target("takeoff", in) })
				if code != codeOK || v != want.Value {
					t.Errorf("target: %v code %d, want %v", v, code, want.Value)
					return
				}
				if _, code := call(t, id, func(h *handle) (float64, int) { return h.target("warp", in) }); code != codeInvalid {
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
