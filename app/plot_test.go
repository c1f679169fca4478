package main

import (
	"image/png"
	"os"
	"path/filepath"
	"testing"
)

func TestPlotCommand(t *testing.T) {
	dir := t.TempDir()
	p := renderRecording(t, dir, "p.wav", 0.030, 31)
	for _, c := range []struct{ kind, name string }{{"spectrogram", "s.png"}, {"rpm", "r.svg"}, {"steps", "k.pdf"}} {
		out := filepath.Join(dir, c.name)
		code, _, stderr := runCmd("plot", "-blades", "2", "-quiet", "-kind", c.kind, "-out", out, p)
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", c.kind, code, stderr)
		}
		if st, err := os.Stat(out); err != nil || st.Size() == 0 {
			t.Fatalf("%s: %v", c.name, err)
		}
	}
	f, err := os.Open(filepath.Join(dir, "s.png"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatal(err)
	}
	// 11 × 6 inches at 96 dpi.
	if b := img.Bounds(); b.Dx() != 1056 || b.Dy() != 576 {
		t.Errorf("figure %v, want 1056×576", b)
	}
	if code, _, _ := runCmd("plot", "-blades", "2", "-quiet", "-out", filepath.Join(dir, "s.png"), p); code != 1 {
		t.Errorf("overwrite without -force: exit %d, want 1", code)
	}
}
