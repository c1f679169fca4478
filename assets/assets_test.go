package assets_test

import (
	"bytes"
	"image/png"
	"math"
	"testing"

	"github.com/go-audio/wav"

	"whirlfit/assets"
	"whirlfit/dsp/synth"
)

func TestDemoWAV(t *testing.T) {
	d := assets.Demo
	if n := len(assets.DemoWAV); n > 1<<20 {
		t.Errorf("demo.wav is %d bytes, want ≤ 1 MiB", n)
	}
	dec := wav.NewDecoder(bytes.NewReader(assets.DemoWAV))
	buf, err := dec.FullPCMBuffer()
	if err != nil {
		t.Fatal(err)
	}
	if int(dec.SampleRate) != d.SampleRate || int(dec.BitDepth) != d.Bits || dec.NumChans != 1 {
		t.Errorf("demo.wav: %d Hz %d bits %d ch, want %d Hz %d bits mono", dec.SampleRate, dec.BitDepth, dec.NumChans, d.SampleRate, d.Bits)
	}
	want := int(math.Round(d.DurationS * float64(d.SampleRate)))
	if len(buf.Data) != want {
		t.Errorf("%d samples, want %d", len(buf.Data), want)
	}
	// Highest line (second whine harmonic at the top speed) below Nyquist.
	maxRPM := d.StartRPM
	for _, s := range d.Steps {
		maxRPM = math.Max(maxRPM, s.ToRPM)
	}
	if top := 2 * float64(d.PolePairs) * maxRPM / 60; top > 0.4*float64(d.SampleRate) {
		t.Errorf("top line %.0f Hz too close to Nyquist", top)
	}
}

func TestDemoTruthConsistent(t *testing.T) {
	// FromRPM of each step equals the synthesized trajectory at the step's
	// response start, and every step settles (≥ 20τ) before the next.
	d := assets.Demo
	steps := make([]synth.Step, len(d.Steps))
	for i, s := range d.Steps {
		steps[i] = synth.Step{CommandS: s.CommandS, TargetHz: s.ToRPM / 60, TauS: s.TauS, DeadS: s.DeadS}
	}
	for i, st := range synth.StepsTruth(d.StartRPM/60, steps...) {
		if math.Abs(60*st.FromHz-d.Steps[i].FromRPM) > 1e-6*d.Steps[i].FromRPM {
			t.Errorf("step %d: from %.3f rpm, Demo says %.0f", i, 60*st.FromHz, d.Steps[i].FromRPM)
		}
		if i+1 < len(d.Steps) && d.Steps[i+1].CommandS-st.StartS() < 20*st.TauS {
			t.Errorf("step %d does not settle before the next", i)
		}
	}
}

func TestIcon(t *testing.T) {
	img, err := png.Decode(bytes.NewReader(assets.Icon))
	if err != nil {
		t.Fatal(err)
	}
	if b := img.Bounds(); b.Dx() != 256 || b.Dy() != 256 {
		t.Errorf("icon %v, want 256×256", b)
	}
}
