//go:build linux && !(mips || mipsle || mips64 || mips64le || ppc64 || ppc64le || sparc64)

package input

// The generic ioctl number layout of include/uapi/asm-generic/ioctl.h.
const (
	iocSizeBits = 14
	iocRead     = 2
)
