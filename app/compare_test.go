package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Two recordings of the same motor with different time constants (35 and
// 20 ms, invented with dsp/synth): the table shows both, and the verdict
// says which responds faster.
func TestCompareCommand(t *testing.T) {
	dir := t.TempDir()
	a := renderRecording(t, dir, "slow.wav", 0.035, 11)
	b := renderRecording(t, dir, "fast.wav", 0.020, 12)
	fig := filepath.Join(dir, "cmp.png")
	code, stdout, stderr := runCmd("compare", "-blades", "2", "-step-at", "1,2", "-quiet",
		"-labels", "two-blade slow,two-blade fast", "-plot", fig, "-from-command", a, b)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	t.Logf("\n%s", stdout)
	// Both steps of "fast" have the smaller τ; the verdict must say so for
	// at least one of them (the up-step fit of these scenes is the weaker).
	if !strings.Contains(stdout, "two-blade fast responds faster than two-blade slow: τ") || strings.Contains(stdout, "slow responds faster") {
		t.Errorf("verdict missing:\n%s", stdout)
	}
	if st, err := os.Stat(fig); err != nil || st.Size() == 0 {
		t.Errorf("figure not written: %v", err)
	}
	code, stdout, _ = runCmd("compare", "-blades", "2", "-step-at", "1,2", "-quiet", "-format", "json", a, b)
	var js map[string]any
	if code != 0 || json.Unmarshal([]byte(stdout), &js) != nil || len(js["steps"].([]any)) != 2 {
		t.Errorf("json: exit %d\n%s", code, stdout)
	}
	// (The CSV form is tested in package compare.)
}
