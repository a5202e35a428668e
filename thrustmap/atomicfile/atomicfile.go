// Package atomicfile writes files so that a crash at any moment leaves either
// the old file or the new one, never a torn mix: the data goes to a temporary
// file in the same directory, is synced, and is renamed over the target.
package atomicfile

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// BackupSuffix is appended to a file's name for the copy of its previous
// contents that WriteFile keeps when asked.
const BackupSuffix = ".bak"

// WriteFile writes data to path atomically with permissions perm. When
// backup is true and path already exists, its previous contents are kept in
// path+BackupSuffix (replacing an older backup) before the new file takes its
// place.
func WriteFile(path string, data []byte, perm os.FileMode, backup bool) error {
	tmp, err := writeTemp(path, data, perm)
	if err != nil {
		return err
	}
	if backup {
		if err := keepBackup(path); err != nil {
			os.Remove(tmp)
			return fmt.Errorf("back up %s: %w", path, err)
		}
	}
	if err := os.Rename(tmp, path); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("write %s: %w", path, err)
	}
	syncDir(filepath.Dir(path))
	return nil
}

// CreateFile writes data to a new file at path, complete or not at all, as
// WriteFile does, but never replaces an existing file: then it returns an
// error that matches fs.ErrExist and leaves the file untouched. The new file
// takes its name by a hard link, which fails atomically if the name exists.
func CreateFile(path string, data []byte, perm os.FileMode) error {
	tmp, err := writeTemp(path, data, perm)
	if err != nil {
		return err
	}
	defer os.Remove(tmp)
	if err := os.Link(tmp, path); err != nil {
		var le *os.LinkError
		if errors.As(err, &le) {
			err = le.Err
		}
		return fmt.Errorf("write %s: %w", path, err)
	}
	syncDir(filepath.Dir(path))
	return nil
}

// writeTemp writes data to a synced temporary file beside path and returns
// its name.
func writeTemp(path string, data []byte, perm os.FileMode) (name string, err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return "", fmt.Errorf("write %s: %w", path, err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if _, err = tmp.Write(data); err != nil {
		return "", fmt.Errorf("write %s: %w", path, err)
	}
	if err = tmp.Chmod(perm); err != nil {
		return "", fmt.Errorf("write %s: %w", path, err)
	}
	if err = tmp.Sync(); err != nil {
		return "", fmt.Errorf("write %s: %w", path, err)
	}
	if err = tmp.Close(); err != nil {
		return "", fmt.Errorf("write %s: %w", path, err)
	}
	return tmp.Name(), nil
}

// keepBackup copies path to path+BackupSuffix, itself atomically, so the
// original stays in place until the new file is renamed over it.
func keepBackup(path string) error {
	old, err := os.Open(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		return err
	}
	defer old.Close()
	data, err := io.ReadAll(old)
	if err != nil {
		return err
	}
	info, err := old.Stat()
	if err != nil {
		return err
	}
	return WriteFile(path+BackupSuffix, data, info.Mode().Perm(), false)
}

// syncDir makes a rename in dir durable where the system allows it; a
// failure only weakens durability, so it is ignored.
func syncDir(dir string) {
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
}
