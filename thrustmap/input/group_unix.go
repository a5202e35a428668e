//go:build unix

package input

import (
	"os"
	"os/user"
	"strconv"
	"syscall"

	"golang.org/x/sys/unix"
)

// deviceGroup names the group that owns path, "" when unknown.
func deviceGroup(path string) string {
	fi, err := os.Stat(path)
	if err != nil {
		return ""
	}
	st, ok := fi.Sys().(*syscall.Stat_t)
	if !ok {
		return ""
	}
	g, err := user.LookupGroupId(strconv.FormatUint(uint64(st.Gid), 10))
	if err != nil {
		return ""
	}
	return g.Name
}

// hostAccess reports whether the user may read and write path.
func hostAccess(path string) error {
	if err := unix.Access(path, unix.R_OK|unix.W_OK); err != nil {
		return &os.PathError{Op: "access", Path: path, Err: err}
	}
	return nil
}
