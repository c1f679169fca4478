package main

import (
	"os/exec"
	"strings"
	"testing"
)

// TestLayering keeps the headless core headless: dsp must reach neither
// analysis nor ui, and nothing under dsp or analysis may reach Fyne, so that
// `go test ./dsp/... ./analysis/...` runs without a display and the command
// line never links the toolkit through the core.
func TestLayering(t *testing.T) {
	deps := func(pkgs ...string) []string {
		out, err := exec.Command("go", append([]string{"list", "-deps"}, pkgs...)...).Output()
		if err != nil {
			t.Skipf("go list not available: %v", err)
		}
		return strings.Fields(string(out))
	}
	for _, d := range deps("whirlfit/dsp/...") {
		if strings.HasPrefix(d, "whirlfit/analysis") || strings.HasPrefix(d, "whirlfit/ui") || strings.HasPrefix(d, "fyne.io/") {
			t.Errorf("dsp depends on %s", d)
		}
	}
	for _, d := range deps("whirlfit/analysis/...") {
		if strings.HasPrefix(d, "whirlfit/ui") || strings.HasPrefix(d, "fyne.io/") {
			t.Errorf("analysis depends on %s", d)
		}
	}
}
