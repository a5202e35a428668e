package main

/*
#include <stdlib.h>
#include "thrustmap.h"
*/
import "C"

import (
	"errors"
	"fmt"
	"math"
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
const abiVersion = 2

// maxBatch is THRUSTMAP_MAX_BATCH, the most levers one
// thrustmap_command_levers call takes: it bounds the work of one call and
// catches a garbage count before the arrays are read.
const maxBatch = 64

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
// calibrated lever, the names a caller may ask for as C strings, and the
// last error.
type handle struct {
	id    int64
	model *thrustmap.Model
	// bleedMask has a bit for each bleed the profile declares.
	bleedMask uint64
	// leverIDs[i] is the calibration id of levers[i]. Both are fixed at open
	// and read without a lock; each lever's state is guarded by its own
	// mutex. A calibration holds a few levers, so a scan of leverIDs finds
	// one faster than a map.
	leverIDs []int
	levers   []leverSlot
	// The names as C strings, allocated at open and freed at close (cstrs
	// holds every one of them).
	gateNames, ratingNames, bleedNames []*C.char
	parameter, unit                    *C.char
	cstrs                              []*C.char

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
	Bleeds               uint64
	OnGround, AssumedSet bool
	AssumedC             float64
}

var (
	// registry maps the open handles' ids to them. Calls read it with one
	// atomic load; open and close, under registryMu, replace it with an
	// edited copy.
	registryMu sync.Mutex
	registry   atomic.Pointer[map[int64]*handle]
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
	if nb > thrustmap.MaxBleeds { // a profile refuses more when it loads
		setGlobalErr(fmt.Sprintf("profile %s declares %d bleeds; the C interface passes at most %d", p.Source(), nb, thrustmap.MaxBleeds))
		return 0
	}
	// A shift by 64 gives 0: no bleeds, no bits.
	h := &handle{model: m, bleedMask: uint64(math.MaxUint64) >> (64 - nb)}
	if cal := m.Calibration(); cal != nil {
		for _, l := range cal.Levers() {
			h.leverIDs = append(h.leverIDs, l.ID())
		}
		h.levers = make([]leverSlot, len(h.leverIDs))
	}
	for _, g := range p.Gates() {
		h.gateNames = append(h.gateNames, h.cstring(g.Name))
	}
	for _, r := range p.Ratings() {
		h.ratingNames = append(h.ratingNames, h.cstring(r.Name()))
	}
	for _, b := range p.Bleeds() {
		h.bleedNames = append(h.bleedNames, h.cstring(b))
	}
	h.parameter = h.cstring(p.Parameter().String())
	h.unit = h.cstring(p.Parameter().Unit())

	registryMu.Lock()
	defer registryMu.Unlock()
	h.id = lastID.Add(1)
	next := map[int64]*handle{h.id: h}
	if old := registry.Load(); old != nil {
		for id, o := range *old {
			next[id] = o
		}
	}
	registry.Store(&next)
	return h.id
}

// cstring returns s as a C string that close frees.
func (h *handle) cstring(s string) *C.char {
	c := C.CString(s)
	h.cstrs = append(h.cstrs, c)
	return c
}

// acquire returns the open handle id with its life lock held shared, or nil
// (after recording the error globally). The caller must call release.
func acquire(id int64) *handle {
	if m := registry.Load(); m != nil {
		if h := (*m)[id]; h != nil {
			h.life.RLock()
			if !h.closed {
				return h
			}
			h.life.RUnlock()
		}
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
	var h *handle
	if old := registry.Load(); old != nil {
		if h = (*old)[id]; h != nil {
			next := make(map[int64]*handle, len(*old)-1)
			for k, o := range *old {
				if k != id {
					next[k] = o
				}
			}
			registry.Store(&next)
		}
	}
	registryMu.Unlock()
	if h == nil {
		return
	}
	h.life.Lock()
	defer h.life.Unlock()
	h.closed = true
	for _, s := range h.cstrs {
		C.free(unsafe.Pointer(s))
	}
	h.cstrs, h.gateNames, h.ratingNames, h.bleedNames, h.parameter, h.unit = nil, nil, nil, nil, nil, nil
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
	cmd, err := h.run(l, lever, raw, c)
	if err != nil {
		return cmd, h.fail(err)
	}
	return cmd, codeOK
}

// checkBatch checks thrustmap_command_levers' count before its arrays are
// read.
func checkBatch(n int) error {
	if n < 1 || n > maxBatch {
		return fmt.Errorf("%w: thrustmap_command_levers: n = %d levers: want 1 to %d (THRUSTMAP_MAX_BATCH)", errArgument, n, maxBatch)
	}
	return nil
}

// commandLevers is thrustmap_command_levers on an acquired handle: put
// receives each lever's command, in order. Every lever id and the conditions'
// bleed bits are checked before any lever moves. It allocates nothing unless
// it fails.
func (h *handle) commandLevers(levers, raws []int32, in conditions, put func(i int, cmd thrustmap.LeverCommand)) int {
	if err := checkBatch(len(levers)); err != nil {
		return h.fail(err)
	}
	if len(raws) != len(levers) {
		return h.fail(fmt.Errorf("%w: thrustmap_command_levers: %d levers, %d raw counts", errArgument, len(levers), len(raws)))
	}
	var slots [maxBatch]*leverSlot
	for i, id := range levers {
		l, err := h.lever(int(id))
		if err != nil {
			return h.fail(fmt.Errorf("thrustmap_command_levers: levers[%d]: %w", i, err))
		}
		slots[i] = l
	}
	c, err := h.conditions(in)
	if err != nil {
		return h.fail(err)
	}
	// One frame: the gate targets the first lever works out serve the others.
	var frame thrustmap.Frame
	for i, id := range levers {
		cmd, err := h.runFrame(&frame, slots[i], int(id), int(raws[i]), c)
		if err != nil {
			return h.fail(fmt.Errorf("thrustmap_command_levers: levers[%d] = %d, raw %d: %w", i, id, raws[i], err))
		}
		put(i, cmd)
	}
	return codeOK
}

// run commands lever (slot l) under its lock. A panic in Command resets the
// lever's state, which it may have left half updated, and goes on up to the
// export's recover.
func (h *handle) run(l *leverSlot, lever, raw int, c thrustmap.Conditions) (thrustmap.LeverCommand, error) {
	return h.runFrame(nil, l, lever, raw, c)
}

// runFrame is run for one lever of a frame (nil: a lone lever).
func (h *handle) runFrame(f *thrustmap.Frame, l *leverSlot, lever, raw int, c thrustmap.Conditions) (cmd thrustmap.LeverCommand, err error) {
	l.mu.Lock()
	done := false
	defer func() {
		if !done {
			l.state.Reset()
		}
		l.mu.Unlock()
	}()
	if f != nil {
		cmd, err = h.model.CommandFrame(f, &l.state, lever, float64(raw), c)
	} else {
		cmd, err = h.model.Command(&l.state, lever, float64(raw), c)
	}
	done = true
	return cmd, err
}

// target is thrustmap_target and thrustmap_target_detail on an acquired
// handle. rating may alias C memory: nothing keeps it.
func (h *handle) target(rating string, in conditions) (thrustmap.Result, int) {
	c, err := h.conditions(in)
	if err != nil {
		return thrustmap.Result{}, h.fail(err)
	}
	res, err := h.model.Profile().Target(rating, c)
	if err != nil {
		return res, h.fail(err)
	}
	return res, codeOK
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

// bleedBit is thrustmap_bleed_bit on an acquired handle. name may alias C
// memory: nothing keeps it.
func (h *handle) bleedBit(name string) int {
	for i, b := range h.model.Profile().Bleeds() {
		if b == name {
			return i
		}
	}
	_, err := h.model.Profile().BleedSet(name)
	return h.fail(fmt.Errorf("%w: thrustmap_bleed_bit: %w", errArgument, err))
}

// gateName is thrustmap_gate_name on an acquired handle: the C string of
// gate i, or nil for -1 and (with an error) for a gate out of range.
func (h *handle) gateName(i int) *C.char {
	if i == -1 {
		return nil
	}
	return h.name("thrustmap_gate_name", "gate", i, h.gateNames)
}

// name returns names[i], or nil with an error naming fn and what is indexed.
func (h *handle) name(fn, what string, i int, names []*C.char) *C.char {
	if i < 0 || i >= len(names) {
		h.fail(fmt.Errorf("%w: %s: %s %d is out of range: the profile has %d (0 to %d)",
			errArgument, fn, what, i, len(names), len(names)-1))
		return nil
	}
	return names[i]
}

// leverIDsInto is thrustmap_lever_ids on an acquired handle: it copies as
// many ids as fit into dst and returns how many levers there are.
func (h *handle) leverIDsInto(dst []int32) int {
	for i := range min(len(dst), len(h.leverIDs)) {
		dst[i] = int32(h.leverIDs[i])
	}
	return len(h.leverIDs)
}

// lever returns lever id's state or an error naming the calibration.
func (h *handle) lever(id int) (*leverSlot, error) {
	for i, x := range h.leverIDs {
		if x == id {
			return &h.levers[i], nil
		}
	}
	if h.model.Calibration() == nil {
		return nil, fmt.Errorf("%w: lever %d: the handle was opened without a calibration", errArgument, id)
	}
	return nil, fmt.Errorf("%w: lever %d is not in calibration %s (its levers are %v)", errArgument, id, h.model.Calibration().Source(), h.leverIDs)
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
