package main

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"whirlfit/assets"
)

// The embedded demo through the command line, against the truth it was
// synthesized with (assets.Demo): every step found with the right
// direction, τ within 15 % and θ within 3 ms (self-consistency; the
// accuracy goals are tested in package analysis).
func TestAnalyseDemo(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "demo.wav")
	if err := os.WriteFile(p, assets.DemoWAV, 0o644); err != nil {
		t.Fatal(err)
	}
	var cmds []string
	for _, s := range assets.Demo.Steps {
		cmds = append(cmds, strconv.FormatFloat(s.CommandS, 'g', -1, 64))
	}
	code, stdout, stderr := runCmd("analyse", "-blades", "3", "-step-at", strings.Join(cmds, ","), "-quiet", "-format", "json", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var r jsonReport
	if err := json.Unmarshal([]byte(stdout), &r); err != nil {
		t.Fatal(err)
	}
	if len(r.Steps) != len(assets.Demo.Steps) {
		t.Fatalf("%d steps, want %d", len(r.Steps), len(assets.Demo.Steps))
	}
	for i, want := range assets.Demo.Steps {
		s := r.Steps[i]
		dir := "down"
		if want.Up() {
			dir = "up"
		}
		t.Logf("step %d %s: τ %.2f ms (truth %.0f), θ %.2f ms (truth %.0f)", i+1, s.Direction, s.TauS.Value*1e3, want.TauS*1e3, s.DeadTimeS.Value*1e3, want.DeadS*1e3)
		if s.Direction != dir {
			t.Errorf("step %d: %s, want %s", i+1, s.Direction, dir)
		}
		if math.Abs(s.TauS.Value-want.TauS) > 0.15*want.TauS {
			t.Errorf("step %d: τ %.4f s, truth %.4f s", i+1, s.TauS.Value, want.TauS)
		}
		if s.DeadTimeS == nil || math.Abs(s.DeadTimeS.Value-want.DeadS) > 0.003 {
			t.Errorf("step %d: θ %+v, truth %g s", i+1, s.DeadTimeS, want.DeadS)
		}
	}
}

// The progress line redraws in place, shows files done and the stage, is
// throttled, and is cleared at the end.
func TestProgressLine(t *testing.T) {
	var b bytes.Buffer
	p := &progressLine{w: &b, began: time.Now().Add(-time.Second)}
	p.start(3)
	cb := p.stage("a.wav")
	cb("track", 50, 100)
	cb("track", 60, 100) // within progressEvery of the last: not drawn
	p.fileDone()
	p.finish()
	out := b.String()
	t.Logf("%q", out)
	if !strings.Contains(out, "0/3 files done  a.wav: track 50 %") || strings.Count(out, "\r") != 3 {
		t.Errorf("progress output %q", out)
	}
	if !strings.Contains(out, "1/3 files done") || !strings.HasSuffix(out, "\r\033[K") {
		t.Errorf("progress not completed and cleared: %q", out)
	}
	// Quiet, or not a terminal: no progress at all.
	if newProgress(&b, true) != nil || newProgress(&b, false) != nil {
		t.Error("progress line on a buffer or with -quiet")
	}
	var nilp *progressLine
	nilp.start(1)
	nilp.fileDone()
	nilp.finish()
	if nilp.stage("x") != nil {
		t.Error("nil progress line gave a callback")
	}
}

func TestPerFilePath(t *testing.T) {
	cases := []struct {
		path, input string
		many        bool
		want        string
	}{
		{"out/rpm.csv", "rec/a.wav", false, "out/rpm.csv"},
		{"out/rpm.csv", "rec/a.wav", true, "out/rpm-a.csv"},
		{"fig.png", "/x/bench 2.flac", true, "fig-bench 2.png"},
	}
	for _, c := range cases {
		if got := perFilePath(c.path, c.input, c.many); got != c.want {
			t.Errorf("perFilePath(%q, %q, %v) = %q, want %q", c.path, c.input, c.many, got, c.want)
		}
	}
}
