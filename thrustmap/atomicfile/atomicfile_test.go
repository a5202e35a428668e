package atomicfile

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"testing"
)

func TestWriteFileAndBackup(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "lever.toml")
	if err := WriteFile(path, []byte("one"), 0o644, true); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(path + BackupSuffix); !os.IsNotExist(err) {
		t.Fatalf("backup made with nothing to back up: %v", err)
	}
	if err := WriteFile(path, []byte("two"), 0o600, true); err != nil {
		t.Fatal(err)
	}
	read := func(p string) string {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	if got := read(path); got != "two" {
		t.Errorf("file = %q", got)
	}
	if got := read(path + BackupSuffix); got != "one" {
		t.Errorf("backup = %q", got)
	}
	if info, _ := os.Stat(path); info.Mode().Perm() != 0o600 {
		t.Errorf("mode %v", info.Mode())
	}
	// No temporary files are left behind.
	entries, _ := os.ReadDir(dir)
	if len(entries) != 2 {
		t.Errorf("directory holds %d entries, want 2", len(entries))
	}
}

func TestWriteFileMissingDir(t *testing.T) {
	err := WriteFile(filepath.Join(t.TempDir(), "no", "such", "f"), []byte("x"), 0o644, false)
	if err == nil {
		t.Fatal("want an error for a missing directory")
	}
}

// TestCreateFileNeverReplaces: a new file is written whole; an existing one
// is left byte for byte as it was, with an error matching fs.ErrExist, and
// no temporary file is left behind either way.
func TestCreateFileNeverReplaces(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "profile.toml")
	if err := CreateFile(path, []byte("first"), 0o644); err != nil {
		t.Fatal(err)
	}
	err := CreateFile(path, []byte("second"), 0o644)
	if !errors.Is(err, fs.ErrExist) {
		t.Errorf("second create: err = %v, want fs.ErrExist", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "first" {
		t.Errorf("file holds %q, want it untouched", b)
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 1 {
		t.Errorf("directory holds %d entries, want 1 (no temporary file left)", len(entries))
	}
}
