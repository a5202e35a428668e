package main

/*
#include <stdlib.h>
#include "thrustmap.h"
*/
import "C"

import (
	"errors"
	"fmt"
	"sync"
	"sync/atomic"
	"unsafe"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// The core of the library, in Go types so that it can be tested from Go (and
// under the race detector): the exports in lib.go only convert between C and
// these.

// abiVersion is thrustmap.h's THRUSTMAP_ABI_VERSION (lib.go checks that at
// compile time), the N of the library's soname libthrustmap.so.N.
const abiVersion = 1

// Return codes, equal to thrustmap.h's THRUSTMAP_OK and THRUSTMAP_E* (lib.go
// checks that at compile time).
const (
	codeOK        = 0
	codeBadHandle = -1
	codeInvalid   = -2
	codeCompute   = -3
	codeInternal  = -4
)

// handle is one thrustmap_open: an immutable model, one state per
// calibrated lever, the gate names as C strings and the last error.
type handle struct {
	id    int64
	model *thrustmap.Model
	// bleedMask has a bit for each bleed the profile declares.
	bleedMask uint32
	// levers is fixed at open and read without a lock; each lever's state is
	// guarded by its own mutex.
	levers map[int]*leverSlot
	// gateNames are C strings allocated at open and freed at close.
	gateNames []*C.char

	// life is held shared for the length of every call and exclusively by
	// close, which therefore waits for calls in progress.
	life   sync.RWMutex
	closed bool

	errMu   sync.Mutex
	lastErr string
}

// leverSlot is the state of one calibrated lever of a handle.
type leverSlot struct {
	mu    sync.Mutex
	state thrustmap.LeverState
}

// conditions are thrustmap_conditions in Go types.
type conditions struct {
	AltFt, OATC, Mach    float64
	Bleeds               uint32
	OnGround, AssumedSet bool
	AssumedC             float64
}

var (
	registryMu sync.RWMutex
	registry   = map[int64]*handle{}
	lastID     atomic.Int64

	// globalErr is the message of the last failed open or call with a bad
	// handle: thrustmap_error(0, ...).
	globalErrMu sync.Mutex
	globalErr   string
)

// errArgument marks errors about arguments.
var errArgument = errors.New("bad argument")

// openHandle loads the model and registers a handle for it; on error it
// records the message globally and returns 0.
func openHandle(profile, calibration string) int64 {
	m, err := thrustmap.LoadModel(profile, calibration)
	if err != nil {
		setGlobalErr(err.Error())
		return 0
	}
	p := m.Profile()
	nb := len(p.Bleeds())
	if nb > 32 {
		setGlobalErr(fmt.Sprintf("profile %s declares %d bleeds; the C interface passes at most 32", p.Source(), nb))
		return 0
	}
	h := &handle{model: m, levers: map[int]*leverSlot{}}
	h.bleedMask = uint32(uint64(1)<<nb - 1)
	if cal := m.Calibration(); cal != nil {
		for _, l := range cal.Levers() {
			h.levers[l.ID()] = &leverSlot{}
		}
	}
	for _, g := range p.Gates() {
		h.gateNames = append(h.gateNames, C.CString(g.Name))
	}
	h.id = lastID.Add(1)
	registryMu.Lock()
	registry[h.id] = h
	registryMu.Unlock()
	return h.id
}

// acquire returns the open handle id with its life lock held shared, or nil
// (after recording the error globally). The caller must call release.
func acquire(id int64) *handle {
	registryMu.RLock()
	h := registry[id]
	registryMu.RUnlock()
	if h != nil {
		h.life.RLock()
		if !h.closed {
			return h
		}
		h.life.RUnlock()
	}
	setGlobalErr(fmt.Sprintf("thrustmap: handle %d is not open", id))
	return nil
}

// release ends a call begun with acquire.
func (h *handle) release() { h.life.RUnlock() }

// closeHandle unregisters handle id, waits for calls in progress and frees
// its C strings. An id that is not open is ignored.
func closeHandle(id int64) {
	registryMu.Lock()
	h := registry[id]
	delete(registry, id)
	registryMu.Unlock()
	if h == nil {
		return
	}
	h.life.Lock()
	defer h.life.Unlock()
	h.closed = true
	for i, s := range h.gateNames {
		C.free(unsafe.Pointer(s))
		h.gateNames[i] = nil
	}
}

// command is thrustmap_command on an acquired handle.
func (h *handle) command(lever, raw int, in conditions) (thrustmap.LeverCommand, int) {
	l, err := h.lever(lever)
	if err != nil {
		return thrustmap.LeverCommand{}, h.fail(err)
	}
	c, err := h.conditions(in)
	if err != nil {
		return thrustmap.LeverCommand{}, h.fail(err)
	}
	l.mu.Lock()
	defer l.mu.Unlock()
	done := false
	defer func() {
		if !done { // Command panicked: the state may be half updated
			l.state.Reset()
		}
	}()
	cmd, err := h.model.Command(&l.state, lever, float64(raw), c)
	done = true
	if err != nil {
		return cmd, h.fail(err)
	}
	return cmd, codeOK
}

// target is thrustmap_target on an acquired handle.
func (h *handle) target(rating string, in conditions) (float64, int) {
	c, err := h.conditions(in)
	if err != nil {
		return 0, h.fail(err)
	}
	res, err := h.model.Profile().Target(rating, c)
	if err != nil {
		return 0, h.fail(err)
	}
	return res.Value, codeOK
}

// reset is thrustmap_reset on an acquired handle.
func (h *handle) reset(lever int) int {
	l, err := h.lever(lever)
	if err != nil {
		return h.fail(err)
	}
	l.mu.Lock()
	defer l.mu.Unlock()
	l.state.Reset()
	return codeOK
}

// gateName is thrustmap_gate_name on an acquired handle: the C string of
// gate i, or nil for -1 and (with an error) for a gate out of range.
func (h *handle) gateName(i int) *C.char {
	if i == -1 {
		return nil
	}
	if i < 0 || i >= len(h.gateNames) {
		h.fail(fmt.Errorf("%w: thrustmap_gate_name: gate %d is out of range: the profile has %d gates (0 to %d)",
			errArgument, i, len(h.gateNames), len(h.gateNames)-1))
		return nil
	}
	return h.gateNames[i]
}

// lever returns lever id's state or an error naming the calibration.
func (h *handle) lever(id int) (*leverSlot, error) {
	if l := h.levers[id]; l != nil {
		return l, nil
	}
	if h.model.Calibration() == nil {
		return nil, fmt.Errorf("%w: lever %d: the handle was opened without a calibration", errArgument, id)
	}
	return nil, fmt.Errorf("%w: lever %d is not in calibration %s", errArgument, id, h.model.Calibration().Source())
}

// conditions converts conditions to the library's, checking the bleed bits.
func (h *handle) conditions(in conditions) (thrustmap.Conditions, error) {
	if extra := in.Bleeds &^ h.bleedMask; extra != 0 {
		bleeds := h.model.Profile().Bleeds()
		return thrustmap.Conditions{}, fmt.Errorf("%w: bleed bits %#x are beyond the profile's %d bleeds %v",
			errArgument, extra, len(bleeds), bleeds)
	}
	return thrustmap.Conditions{
		AltitudeFt: in.AltFt,
		OATC:       in.OATC,
		Mach:       in.Mach,
		Bleeds:     thrustmap.Bleeds(in.Bleeds),
		OnGround:   in.OnGround,
		AssumedSet: in.AssumedSet,
		AssumedC:   in.AssumedC,
	}, nil
}

// fail records err as h's last error and returns its code: argument and
// condition errors are codeInvalid. Lever ids are checked before
// Model.Command, so any other error from it (no gate active) is a
// computation error.
func (h *handle) fail(err error) int {
	h.setErr(err.Error())
	switch {
	case errors.Is(err, errArgument),
		errors.Is(err, thrustmap.ErrConditions),
		errors.Is(err, thrustmap.ErrUnknownRating):
		return codeInvalid
	}
	return codeCompute
}

// setErr records the message of a failed call on h.
func (h *handle) setErr(msg string) {
	h.errMu.Lock()
	h.lastErr = msg
	h.errMu.Unlock()
}

// errText returns the message of the last failed call on h.
func (h *handle) errText() string {
	h.errMu.Lock()
	defer h.errMu.Unlock()
	return h.lastErr
}

// errorText returns the last error of handle id (0: the global one), or
// false when the handle is not open.
func errorText(id int64) (string, bool) {
	if id == 0 {
		return globalErrText(), true
	}
	h := acquire(id)
	if h == nil {
		return "", false
	}
	defer h.release()
	return h.errText(), true
}

// setGlobalErr records the message of a failed open or bad-handle call.
func setGlobalErr(msg string) {
	globalErrMu.Lock()
	globalErr = msg
	globalErrMu.Unlock()
}

// globalErrText returns the message setGlobalErr recorded last.
func globalErrText() string {
	globalErrMu.Lock()
	defer globalErrMu.Unlock()
	return globalErr
}

// recovered records a panic recovered in export fn on h (nil: globally)
// and returns codeInternal.
func recovered(h *handle, fn string, r any) int {
	msg := fmt.Sprintf("%s: internal error (a bug in thrustmap, please report it): %v", fn, r)
	if h != nil {
		h.setErr(msg)
	} else {
		setGlobalErr(msg)
	}
	return codeInternal
}
