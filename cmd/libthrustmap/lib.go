// Libthrustmap is thrustmap's C ABI: built with
//
//	bash cmd/libthrustmap/build.sh OUTDIR
//
// it is a shared library (a DLL on Windows, see build-windows.sh) whose
// interface is documented in thrustmap.h, beside this file, which build.sh
// installs as OUTDIR/include/thrustmap.h. A handle holds one loaded model and
// the state of each calibrated lever; calls on different levers run in
// parallel and calls on one lever are serialised.
//
// Simulation only: not certified, never for setting thrust on a real
// aircraft.
package main

/*
#include <stdlib.h>
#include "thrustmap.h"
*/
import "C"

import (
	"math"
	"unicode/utf8"
	"unsafe"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// main is required by -buildmode=c-shared and never runs.
func main() {}

// The core's interface version, limits and return codes are thrustmap.h's,
// and so are the bits the core's Go types map to: each array type has length
// 0 only when the two agree.
var (
	_ [0]struct{} = [C.THRUSTMAP_ABI_VERSION - abiVersion]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_MAX_BATCH - maxBatch]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_MAX_BLEEDS - thrustmap.MaxBleeds]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_OK - codeOK]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_EBADHANDLE - codeBadHandle]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_EINVAL - codeInvalid]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_ECOMPUTE - codeCompute]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_EINTERNAL - codeInternal]struct{}{}

	_ [0]struct{} = [C.THRUSTMAP_REASON_TA_NOT_ABOVE_OAT - uint(thrustmap.TANotAboveOAT)]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_REASON_TA_BELOW_CORNER - uint(thrustmap.TABelowCorner)]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_REASON_TA_ABOVE_MAX - uint(thrustmap.TAAboveMax)]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_REASON_REDUCTION_LIMITED - uint(thrustmap.ReductionLimited)]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_REASON_REDUCTION_NOT_CHECKED - uint(thrustmap.ReductionNotChecked)]struct{}{}
)

// Every export recovers any panic into THRUSTMAP_EINTERNAL (or 0 or NULL)
// with a message, so no panic crosses into C.

// thrustmap_abi_version returns THRUSTMAP_ABI_VERSION.
//
//export thrustmap_abi_version
func thrustmap_abi_version() C.int { return abiVersion }

// thrustmap_open loads a profile and a calibration and returns a new handle,
// or 0 with the message in the global error.
//
//export thrustmap_open
func thrustmap_open(profile, calibration *C.thrustmap_const_char) (h C.int64_t) {
	defer func() {
		if r := recover(); r != nil {
			recovered(nil, "thrustmap_open", r)
			h = 0
		}
	}()
	if profile == nil {
		setGlobalErr("thrustmap_open: profile is NULL")
		return 0
	}
	cal := ""
	if calibration != nil {
		cal = goString(calibration)
	}
	return C.int64_t(openHandle(goString(profile), cal))
}

// thrustmap_close closes a handle, waiting for calls in progress, and frees
// its names.
//
//export thrustmap_close
func thrustmap_close(h C.int64_t) {
	defer func() {
		if r := recover(); r != nil {
			recovered(nil, "thrustmap_close", r)
		}
	}()
	closeHandle(int64(h))
}

// thrustmap_command maps a raw count of a lever to the engine command at
// the conditions *c and writes it to *out.
//
//export thrustmap_command
func thrustmap_command(h C.int64_t, lever, raw C.int, c *C.thrustmap_const_conditions, out *C.thrustmap_result) (rc C.int) {
	var hd *handle
	defer func() {
		if r := recover(); r != nil {
			rc = C.int(recovered(hd, "thrustmap_command", r))
		}
	}()
	if hd = acquire(int64(h)); hd == nil {
		return C.THRUSTMAP_EBADHANDLE
	}
	defer hd.release()
	if c == nil || out == nil {
		hd.setErr("thrustmap_command: conditions or result pointer is NULL")
		return C.THRUSTMAP_EINVAL
	}
	cmd, code := hd.command(int(lever), int(raw), goConditions(c))
	if code != codeOK {
		return C.int(code)
	}
	setResult(out, &cmd)
	return C.THRUSTMAP_OK
}

// thrustmap_command_levers commands n levers at the conditions *c: out[i]
// is levers[i] at raws[i].
//
//export thrustmap_command_levers
func thrustmap_command_levers(h C.int64_t, n C.int, levers, raws *C.thrustmap_const_int, c *C.thrustmap_const_conditions, out *C.thrustmap_result) (rc C.int) {
	var hd *handle
	defer func() {
		if r := recover(); r != nil {
			rc = C.int(recovered(hd, "thrustmap_command_levers", r))
		}
	}()
	if hd = acquire(int64(h)); hd == nil {
		return C.THRUSTMAP_EBADHANDLE
	}
	defer hd.release()
	if err := checkBatch(int(n)); err != nil {
		return C.int(hd.fail(err))
	}
	if levers == nil || raws == nil || c == nil || out == nil {
		hd.setErr("thrustmap_command_levers: levers, raws, conditions or result pointer is NULL")
		return C.THRUSTMAP_EINVAL
	}
	// C int is 32 bits on every platform Go's cgo builds for.
	ls := unsafe.Slice((*int32)(unsafe.Pointer(levers)), int(n))
	rs := unsafe.Slice((*int32)(unsafe.Pointer(raws)), int(n))
	outs := unsafe.Slice(out, int(n))
	return C.int(hd.commandLevers(ls, rs, goConditions(c), func(i int, cmd thrustmap.LeverCommand) {
		setResult(&outs[i], &cmd)
	}))
}

// thrustmap_reset returns a lever's state to uncaptured with no held reading.
//
//export thrustmap_reset
func thrustmap_reset(h C.int64_t, lever C.int) (rc C.int) {
	var hd *handle
	defer func() {
		if r := recover(); r != nil {
			rc = C.int(recovered(hd, "thrustmap_reset", r))
		}
	}()
	if hd = acquire(int64(h)); hd == nil {
		return C.THRUSTMAP_EBADHANDLE
	}
	defer hd.release()
	return C.int(hd.reset(int(lever)))
}

// thrustmap_target writes the named rating's target at the conditions *c to
// *out.
//
//export thrustmap_target
func thrustmap_target(h C.int64_t, rating *C.thrustmap_const_char, c *C.thrustmap_const_conditions, out *C.double) (rc C.int) {
	var hd *handle
	defer func() {
		if r := recover(); r != nil {
			rc = C.int(recovered(hd, "thrustmap_target", r))
		}
	}()
	if hd = acquire(int64(h)); hd == nil {
		return C.THRUSTMAP_EBADHANDLE
	}
	defer hd.release()
	if rating == nil || c == nil || out == nil {
		hd.setErr("thrustmap_target: rating, conditions or result pointer is NULL")
		return C.THRUSTMAP_EINVAL
	}
	res, code := hd.target(cStringView(rating), goConditions(c))
	if code != codeOK {
		return C.int(code)
	}
	*out = C.double(res.Value)
	return C.THRUSTMAP_OK
}

// thrustmap_target_detail writes the named rating's target at the
// conditions *c, with what shaped it, to *out.
//
//export thrustmap_target_detail
func thrustmap_target_detail(h C.int64_t, rating *C.thrustmap_const_char, c *C.thrustmap_const_conditions, out *C.thrustmap_target_result) (rc C.int) {
	var hd *handle
	defer func() {
		if r := recover(); r != nil {
			rc = C.int(recovered(hd, "thrustmap_target_detail", r))
		}
	}()
	if hd = acquire(int64(h)); hd == nil {
		return C.THRUSTMAP_EBADHANDLE
	}
	defer hd.release()
	if rating == nil || c == nil || out == nil {
		hd.setErr("thrustmap_target_detail: rating, conditions or result pointer is NULL")
		return C.THRUSTMAP_EINVAL
	}
	res, code := hd.target(cStringView(rating), goConditions(c))
	if code != codeOK {
		return C.int(code)
	}
	d := targetDetail(&res)
	*out = C.thrustmap_target_result{
		value:                C.double(d.Value),
		flags:                resultFlags(res.Flags, res.Clamped),
		reduction_evaluated:  C.int(d.Evaluated),
		reduction_applied:    C.int(d.Applied),
		reasons:              C.uint32_t(d.Reasons),
		assumed_c:            C.double(d.AssumedC),
		effective_c:          C.double(d.EffectiveC),
		value_full:           C.double(d.ValueFull),
		thrust_reduction_pct: C.double(d.ThrustReductionPct),
	}
	return C.THRUSTMAP_OK
}

// thrustmap_bleed_bit returns the named bleed's bit in
// thrustmap_conditions.bleeds.
//
//export thrustmap_bleed_bit
func thrustmap_bleed_bit(h C.int64_t, name *C.thrustmap_const_char) (rc C.int) {
	var hd *handle
	defer func() {
		if r := recover(); r != nil {
			rc = C.int(recovered(hd, "thrustmap_bleed_bit", r))
		}
	}()
	if hd = acquire(int64(h)); hd == nil {
		return C.THRUSTMAP_EBADHANDLE
	}
	defer hd.release()
	if name == nil {
		hd.setErr("thrustmap_bleed_bit: name is NULL")
		return C.THRUSTMAP_EINVAL
	}
	return C.int(hd.bleedBit(cStringView(name)))
}

// thrustmap_bleed_count returns how many bleeds the profile declares.
//
//export thrustmap_bleed_count
func thrustmap_bleed_count(h C.int64_t) C.int {
	return count(h, "thrustmap_bleed_count", func(hd *handle) int { return len(hd.bleedNames) })
}

// thrustmap_bleed_name returns the name of bleed bit `bit`, or NULL.
//
//export thrustmap_bleed_name
func thrustmap_bleed_name(h C.int64_t, bit C.int) *C.thrustmap_const_char {
	return name(h, "thrustmap_bleed_name", func(hd *handle) *C.char {
		return hd.name("thrustmap_bleed_name", "bleed bit", int(bit), hd.bleedNames)
	})
}

// thrustmap_parameter returns the profile's parameter name, or NULL.
//
//export thrustmap_parameter
func thrustmap_parameter(h C.int64_t) *C.thrustmap_const_char {
	return name(h, "thrustmap_parameter", func(hd *handle) *C.char { return hd.parameter })
}

// thrustmap_unit returns the unit of the profile's values, or NULL.
//
//export thrustmap_unit
func thrustmap_unit(h C.int64_t) *C.thrustmap_const_char {
	return name(h, "thrustmap_unit", func(hd *handle) *C.char { return hd.unit })
}

// thrustmap_rating_count returns how many ratings the profile declares.
//
//export thrustmap_rating_count
func thrustmap_rating_count(h C.int64_t) C.int {
	return count(h, "thrustmap_rating_count", func(hd *handle) int { return len(hd.ratingNames) })
}

// thrustmap_rating_name returns the name of rating i, or NULL.
//
//export thrustmap_rating_name
func thrustmap_rating_name(h C.int64_t, i C.int) *C.thrustmap_const_char {
	return name(h, "thrustmap_rating_name", func(hd *handle) *C.char {
		return hd.name("thrustmap_rating_name", "rating", int(i), hd.ratingNames)
	})
}

// thrustmap_gate_count returns how many gates the profile declares.
//
//export thrustmap_gate_count
func thrustmap_gate_count(h C.int64_t) C.int {
	return count(h, "thrustmap_gate_count", func(hd *handle) int { return len(hd.gateNames) })
}

// thrustmap_gate_name returns gate i's name as a C string owned by the
// handle, or NULL.
//
//export thrustmap_gate_name
func thrustmap_gate_name(h C.int64_t, gate C.int) *C.thrustmap_const_char {
	return name(h, "thrustmap_gate_name", func(hd *handle) *C.char { return hd.gateName(int(gate)) })
}

// thrustmap_lever_count returns how many levers the calibration holds.
//
//export thrustmap_lever_count
func thrustmap_lever_count(h C.int64_t) C.int {
	return count(h, "thrustmap_lever_count", func(hd *handle) int { return len(hd.leverIDs) })
}

// thrustmap_lever_ids copies the calibrated levers' ids into ids and
// returns how many there are.
//
//export thrustmap_lever_ids
func thrustmap_lever_ids(h C.int64_t, ids *C.int, n C.int) C.int {
	return count(h, "thrustmap_lever_ids", func(hd *handle) int {
		if n < 0 || (ids == nil && n > 0) {
			hd.setErr("thrustmap_lever_ids: len < 0, or ids NULL with len > 0")
			return codeInvalid
		}
		var dst []int32
		if n > 0 {
			dst = unsafe.Slice((*int32)(unsafe.Pointer(ids)), int(n))
		}
		return hd.leverIDsInto(dst)
	})
}

// count runs an int-valued query on an open handle.
func count(h C.int64_t, fn string, f func(*handle) int) (rc C.int) {
	var hd *handle
	defer func() {
		if r := recover(); r != nil {
			rc = C.int(recovered(hd, fn, r))
		}
	}()
	if hd = acquire(int64(h)); hd == nil {
		return C.THRUSTMAP_EBADHANDLE
	}
	defer hd.release()
	return C.int(f(hd))
}

// name runs a name-valued query on an open handle; NULL on error.
func name(h C.int64_t, fn string, f func(*handle) *C.char) (s *C.thrustmap_const_char) {
	var hd *handle
	defer func() {
		if r := recover(); r != nil {
			recovered(hd, fn, r)
			s = nil
		}
	}()
	if hd = acquire(int64(h)); hd == nil {
		return nil
	}
	defer hd.release()
	return (*C.thrustmap_const_char)(unsafe.Pointer(f(hd)))
}

// thrustmap_error copies the last error message of a handle (0: the global
// one) into buf like snprintf and returns its full length.
//
//export thrustmap_error
func thrustmap_error(h C.int64_t, buf *C.char, n C.int) (rc C.int) {
	defer func() {
		if r := recover(); r != nil {
			rc = C.THRUSTMAP_EINTERNAL
		}
	}()
	if n < 0 || (buf == nil && n > 0) {
		return C.THRUSTMAP_EINVAL
	}
	msg, ok := errorText(int64(h))
	if !ok {
		return C.THRUSTMAP_EBADHANDLE
	}
	if n > 0 {
		copyCString(unsafe.Slice((*byte)(unsafe.Pointer(buf)), int(n)), msg)
	}
	return C.int(len(msg))
}

// goConditions copies C conditions.
func goConditions(c *C.thrustmap_const_conditions) conditions {
	return conditions{
		AltFt:      float64(c.alt_ft),
		OATC:       float64(c.oat_c),
		Mach:       float64(c.mach),
		Bleeds:     uint64(c.bleeds),
		OnGround:   c.on_ground != 0,
		AssumedSet: c.assumed_set != 0,
		AssumedC:   float64(c.assumed_c),
	}
}

// setResult writes a lever command to a C result.
func setResult(out *C.thrustmap_result, cmd *thrustmap.LeverCommand) {
	*out = C.thrustmap_result{
		tla_deg: C.double(cmd.TLADeg),
		value:   C.double(cmd.Value),
		gate:    C.int(cmd.Gate),
		flags:   resultFlags(cmd.Flags, cmd.Clamped),
	}
	if cmd.Reverse {
		out.reverse = 1
	}
}

// detail is thrustmap_target_result in Go types.
type detail struct {
	Value                                               float64
	Evaluated, Applied                                  int
	Reasons                                             uint32
	AssumedC, EffectiveC, ValueFull, ThrustReductionPct float64
}

// targetDetail maps a target to thrustmap_target_result's fields: NaN for
// what the method did not work out, the full value equal to the value when
// it did not run.
func targetDetail(res *thrustmap.Result) detail {
	red := &res.Reduction
	d := detail{Value: res.Value, AssumedC: math.NaN(), EffectiveC: math.NaN(), ValueFull: res.Value, ThrustReductionPct: math.NaN()}
	if !red.Evaluated {
		return d
	}
	d.Evaluated, d.Reasons = 1, uint32(red.Reasons)
	if red.Applied {
		d.Applied = 1
	}
	d.AssumedC, d.EffectiveC, d.ValueFull = red.AssumedC, red.EffectiveC, red.ValueFull
	if red.ThrustChecked {
		d.ThrustReductionPct = red.ThrustReductionPct
	}
	return d
}

// copyCString copies as much of msg as fits into dst with a NUL after it,
// cutting at a UTF-8 character boundary; dst must not be empty.
func copyCString(dst []byte, msg string) {
	k := len(dst) - 1
	if k < len(msg) {
		for k > 0 && !utf8.RuneStart(msg[k]) {
			k--
		}
	} else {
		k = len(msg)
	}
	copy(dst, msg[:k])
	dst[k] = 0
}

// resultFlags maps a command's flags and clamped inputs to
// thrustmap_result.flags.
func resultFlags(f thrustmap.Flags, cl thrustmap.Clamped) C.uint32_t {
	var out C.uint32_t
	for _, b := range [...]struct {
		set bool
		bit C.uint32_t
	}{
		{cl != 0, C.THRUSTMAP_FLAG_CLAMPED},
		{f&thrustmap.Raised != 0, C.THRUSTMAP_FLAG_RAISED},
		{f&thrustmap.Limited != 0, C.THRUSTMAP_FLAG_LIMITED},
		{f&thrustmap.Interlock != 0, C.THRUSTMAP_FLAG_INTERLOCK},
		{f&thrustmap.Fallback != 0, C.THRUSTMAP_FLAG_FALLBACK},
		{cl&thrustmap.ClampAltitude != 0, C.THRUSTMAP_CLAMPED_ALTITUDE},
		{cl&thrustmap.ClampTemperature != 0, C.THRUSTMAP_CLAMPED_TEMPERATURE},
		{cl&thrustmap.ClampMach != 0, C.THRUSTMAP_CLAMPED_MACH},
		{cl&thrustmap.ClampRaw != 0, C.THRUSTMAP_CLAMPED_RAW},
		{cl&thrustmap.ClampDevice != 0, C.THRUSTMAP_CLAMPED_DEVICE},
		{cl&thrustmap.ClampLever != 0, C.THRUSTMAP_CLAMPED_LEVER},
	} {
		if b.set {
			out |= b.bit
		}
	}
	return out
}

// goString copies a C string given as const char *.
func goString(s *C.thrustmap_const_char) string {
	return C.GoString((*C.char)(unsafe.Pointer(s)))
}

// cStringView returns the C string s as a Go string that shares its memory,
// without copying: for names looked up during one call and kept by nothing
// (a copy would allocate on every call).
func cStringView(s *C.thrustmap_const_char) string {
	p := unsafe.Pointer(s)
	n := 0
	for *(*byte)(unsafe.Add(p, n)) != 0 {
		n++
	}
	return unsafe.String((*byte)(p), n)
}
