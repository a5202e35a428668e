//go:build linux && (mips || mipsle || mips64 || mips64le || ppc64 || ppc64le || sparc64)

package input

// The ioctl number layout of the MIPS, PowerPC and SPARC kernels, which
// override include/uapi/asm-generic/ioctl.h with a 13-bit size field
// (arch/*/include/uapi/asm/ioctl.h; recalled, not checked against a header
// on such a machine).
const (
	iocSizeBits = 13
	iocRead     = 2
)
