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
	"unicode/utf8"
	"unsafe"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// main is required by -buildmode=c-shared and never runs.
func main() {}

// The core's interface version and return codes are thrustmap.h's: each array type has length 0
// only when the two agree.
var (
	_ [0]struct{} = [C.THRUSTMAP_ABI_VERSION - abiVersion]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_OK - codeOK]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_EBADHANDLE - codeBadHandle]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_EINVAL - codeInvalid]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_ECOMPUTE - codeCompute]struct{}{}
	_ [0]struct{} = [C.THRUSTMAP_EINTERNAL - codeInternal]struct{}{}
)

// Every export recovers any panic into THRUSTMAP_EINTERNAL with a message,
// so no panic crosses into C.

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
	*out = C.thrustmap_result{
		tla_deg: C.double(cmd.TLADeg),
		value:   C.double(cmd.Value),
		gate:    C.int(cmd.Gate),
		flags:   resultFlags(cmd.Flags, cmd.Clamped),
	}
	if cmd.Reverse {
		out.reverse = 1
	}
	return C.THRUSTMAP_OK
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
	v, code := hd.target(goString(rating), goConditions(c))
	if code != codeOK {
		return C.int(code)
	}
	*out = C.double(v)
	return C.THRUSTMAP_OK
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

// thrustmap_gate_name returns gate i's name as a C string owned by the
// handle, or NULL.
//
//export thrustmap_gate_name
func thrustmap_gate_name(h C.int64_t, gate C.int) (name *C.thrustmap_const_char) {
	var hd *handle
	defer func() {
		if r := recover(); r != nil {
			recovered(hd, "thrustmap_gate_name", r)
			name = nil
		}
	}()
	if hd = acquire(int64(h)); hd == nil {
		return nil
	}
	defer hd.release()
	return (*C.thrustmap_const_char)(unsafe.Pointer(hd.gateName(int(gate))))
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

// thrustmap_close closes a handle, waiting for calls in progress, and frees
// its gate names.
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

// goConditions copies C conditions.
func goConditions(c *C.thrustmap_const_conditions) conditions {
	return conditions{
		AltFt:      float64(c.alt_ft),
		OATC:       float64(c.oat_c),
		Mach:       float64(c.mach),
		Bleeds:     uint32(c.bleeds),
		OnGround:   c.on_ground != 0,
		AssumedSet: c.assumed_set != 0,
		AssumedC:   float64(c.assumed_c),
	}
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
