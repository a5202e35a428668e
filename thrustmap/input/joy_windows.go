//go:build windows

package input

import (
	"unsafe"

	"golang.org/x/sys/windows"
)

// The calls into winmm.dll: the only code here that cannot run on Linux.
// Decoding, polling and axis mapping are in joy.go.
var (
	winmm              = windows.NewLazySystemDLL("winmm.dll")
	procJoyGetDevCapsW = winmm.NewProc("joyGetDevCapsW")
	procJoyGetPosEx    = winmm.NewProc("joyGetPosEx")
)

// winmmDLL calls winmm.dll.
type winmmDLL struct{}

// getDevCaps calls MMRESULT joyGetDevCapsW(UINT_PTR uJoyID, LPJOYCAPSW pjc, UINT cbjc).
func (winmmDLL) getDevCaps(id int, caps *[joyCapsSize / 4]uint32) uint32 {
	if err := procJoyGetDevCapsW.Find(); err != nil {
		return mmsyserrNoDriver
	}
	r, _, _ := procJoyGetDevCapsW.Call(uintptr(id), uintptr(unsafe.Pointer(caps)), joyCapsSize)
	return uint32(r)
}

// getPosEx calls MMRESULT joyGetPosEx(UINT uJoyID, LPJOYINFOEX pji).
func (winmmDLL) getPosEx(id int, info *[joyInfoExSize / 4]uint32) uint32 {
	if err := procJoyGetPosEx.Find(); err != nil {
		return mmsyserrNoDriver
	}
	r, _, _ := procJoyGetPosEx.Call(uintptr(id), uintptr(unsafe.Pointer(info)))
	return uint32(r)
}

// hostControllers reads game controllers through winmm.dll.
func hostControllers() JoyAPI { return winmmAPI{winmmDLL{}} }
