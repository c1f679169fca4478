package export

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"
)

func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.csv")
	write := func(s string) func(io.Writer) error {
		return func(w io.Writer) error { _, err := io.WriteString(w, s); return err }
	}
	if err := WriteFileAtomic(p, false, write("one")); err != nil {
		t.Fatal(err)
	}
	if err := WriteFileAtomic(p, false, write("two")); !errors.Is(err, ErrExists) {
		t.Fatalf("second write without force: got %v, want ErrExists", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "one" {
		t.Fatalf("after refused overwrite: got %q, want %q", b, "one")
	}
	if err := WriteFileAtomic(p, true, write("three")); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(p); string(b) != "three" {
		t.Fatalf("after forced overwrite: got %q, want %q", b, "three")
	}
	// A failing writer leaves the old file and no temporary behind.
	boom := errors.New("boom")
	if err := WriteFileAtomic(p, true, func(w io.Writer) error { io.WriteString(w, "half"); return boom }); !errors.Is(err, boom) {
		t.Fatalf("failing writer: got %v, want boom", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "three" {
		t.Fatalf("after failed write: got %q, want %q", b, "three")
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Fatalf("folder holds %d entries after writes, want 1 (no temporaries left)", len(ents))
	}
}
