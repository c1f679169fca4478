package dsp_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"whirlfit/assets"
	"whirlfit/dsp"
	"whirlfit/dsp/synth"
)

// TestDecodeDemo: the embedded demo recording decodes cleanly.
func TestDecodeDemo(t *testing.T) {
	a, err := dsp.Decode("demo.wav", assets.DemoWAV)
	if err != nil {
		t.Fatal(err)
	}
	if len(a.Warnings) != 0 || a.NonFinite != 0 || a.Frames() == 0 {
		t.Errorf("got %d frames, warnings %q, %d non-finite", a.Frames(), a.Warnings, a.NonFinite)
	}
	l := dsp.Levels(a)
	t.Logf("demo: %s %s %d Hz %d bits %d ch %.2f s, peak %.2f dBFS, RMS %.2f dBFS, %d clipped",
		a.Container, a.Codec, a.SampleRate, a.Bits, len(a.Channels), a.DurationS(), l.PeakDBFS, l.RMSDBFS, l.Clipped)
}

// TestSynthWAVRoundTrip: the project's own WAV writer and reader agree to
// within the coding's quantization step (self-consistency, seeded noise).
func TestSynthWAVRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(2, 1))
	ch := [][]float32{make([]float32, 1000), make([]float32, 1000)}
	for _, c := range ch {
		for i := range c {
			c[i] = float32(r.Float64()*1.8 - 0.9)
		}
	}
	for _, bits := range []int{synth.PCM16, synth.PCM24, synth.Float32} {
		b, err := synth.EncodeWAV(ch, 48000, bits)
		if err != nil {
			t.Fatal(err)
		}
		a, err := dsp.Decode("synth.wav", b)
		if err != nil {
			t.Fatal(err)
		}
		// One step: rounding gives half, and the writer scales by
		// 2^(bits−1) − 1 where the reader divides by 2^(bits−1), which
		// adds up to 0.9 · 2^−(bits−1) here.
		tol := 2 * math.Ldexp(1, -(bits-1))
		if bits == synth.Float32 {
			tol = 0
		}
		worst := 0.0
		for c := range ch {
			for i, v := range ch[c] {
				worst = max(worst, math.Abs(float64(a.Channels[c][i]-v)))
			}
		}
		if worst > tol || a.Bits != bits {
			t.Errorf("%d bits: got %d bits, largest error %.3g, want ≤ %.3g", bits, a.Bits, worst, tol)
		}
		t.Logf("%d bits: %s, largest error %.3g", bits, a.Codec, worst)
	}
}

func ExampleDecodeFile() {
	a, err := dsp.DecodeFile("../testdata/sine1k_s16.wav") // sox-generated, see testdata/README.md
	if err != nil {
		fmt.Println(err)
		return
	}
	l := dsp.Levels(a)
	fmt.Printf("%s %s, %d Hz, %d-bit, %d channel(s), %.3f s\n", a.Container, a.Codec, a.SampleRate, a.Bits, len(a.Channels), a.DurationS())
	fmt.Printf("peak %.2f dBFS, RMS %.2f dBFS, %d clipped\n", l.PeakDBFS, l.RMSDBFS, l.Clipped)

	_, err = dsp.Decode("notes.wav", []byte("not audio at all\n"))
	fmt.Println(err)
	// Output:
	// WAV PCM, 48000 Hz, 16-bit, 1 channel(s), 0.100 s
	// peak -6.02 dBFS, RMS -9.03 dBFS, 0 clipped
	// notes.wav: a text file, not audio (it starts "not audio at all")
}
