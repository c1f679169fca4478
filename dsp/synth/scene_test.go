package synth

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

func baseScene() Scene {
	return Scene{
		SampleRate: 16000,
		DurationS:  3,
		Shaft:      Steps(150, Step{CommandS: 1, TargetHz: 300, TauS: 0.03, DeadS: 0.005}),
		Rotor:      NewRotor(3, 7),
		SNRdB:      15,
		Seed:       42,
	}
}

func TestSNR(t *testing.T) {
	// Measured independently of the internals: the clean rendering (same
	// seed, no noise) is regressed out of the noisy one and the residual
	// taken as the noise. Chain: no reverberation, clipping or AGC, so the
	// outputs differ only by the noise and the final scale.
	cases := []struct {
		name string
		mod  func(*Scene)
	}{
		{"white", func(*Scene) {}},
		{"pink highpass", func(s *Scene) { s.NoiseColor = Pink; s.HighPassHz = 150; s.HighPassOrder = 4 }},
		{"brown rotor noise", func(s *Scene) { s.NoiseColor = Brown; s.RotorNoiseShare = 0.6 }},
		{"stopped part", func(s *Scene) { s.Shaft = Stopped(s.Shaft, [2]float64{0, 0.5}) }},
	}
	for _, c := range cases {
		for _, snr := range []float64{-5, 0, 12.5, 30} {
			sc := baseScene()
			c.mod(&sc)
			sc.SNRdB = snr
			noisy, err := Render(sc)
			if err != nil {
				t.Fatal(err)
			}
			sc.SNRdB = math.Inf(1)
			clean, err := Render(sc)
			if err != nil {
				t.Fatal(err)
			}
			var cy, cc float64
			for i := range clean {
				cy += float64(clean[i]) * float64(noisy[i])
				cc += float64(clean[i]) * float64(clean[i])
			}
			a := cy / cc
			var pt, pw float64
			var nrun int
			for i := range clean {
				tr := a * float64(clean[i])
				r := float64(noisy[i]) - tr
				pw += r * r
				if sc.Shaft(float64(i)/float64(sc.SampleRate)) > 0 {
					pt += tr * tr
					nrun++
				}
			}
			got := 10 * math.Log10((pt/float64(nrun))/(pw/float64(len(clean))))
			t.Logf("%s: requested %.1f dB, measured %.2f dB", c.name, snr, got)
			if math.Abs(got-snr) > 0.5 {
				t.Errorf("%s: SNR %.2f dB, want %.1f ± 0.5", c.name, got, snr)
			}
		}
	}
}

func TestDeterminism(t *testing.T) {
	sc := baseScene()
	sc.ReverbS, sc.HumHz, sc.ToneHz, sc.AGCS = 0.3, 50, 1234, 1
	sc.Rotor.JitterRel = 0.001
	a, _ := Render(sc)
	b, _ := Render(sc)
	for i := range a {
		if a[i] != b[i] {
			t.Fatalf("same seed differs at sample %d: %g vs %g", i, a[i], b[i])
		}
	}
	sc.Seed++
	c, _ := Render(sc)
	same := 0
	for i := range a {
		if a[i] == c[i] {
			same++
		}
	}
	if same > len(a)/100 {
		t.Errorf("different seeds: %d of %d samples equal", same, len(a))
	}
}

func TestBoundsAndClipping(t *testing.T) {
	cases := []struct {
		name string
		mod  func(*Scene)
		clip bool // expect samples at full scale
	}{
		{"plain", func(*Scene) {}, false},
		{"clip", func(s *Scene) { s.ClipLevel = 0.5 }, true},
		{"clip agc", func(s *Scene) { s.ClipLevel = 0.5; s.AGCS = 0.5 }, false},
		{"agc", func(s *Scene) { s.AGCS = 0.3; s.Shaft = Stopped(s.Shaft, [2]float64{2, 2.5}) }, false},
		{"everything", func(s *Scene) {
			s.ReverbS, s.ReverbDRRdB = 0.8, -3
			s.HumHz, s.HumDB = 60, 0
			s.ToneHz, s.ToneDB = 3000, 3
			s.Others = []Machine{{Rotor: NewRotor(2, 6), Shaft: Constant(90), LevelDB: -3}}
			s.HighPassHz = 200
			s.RotorNoiseShare = 0.5
			s.NoiseColor = Pink
			s.PeakLevel = 1
		}, false},
		{"never running", func(s *Scene) { s.Shaft = Constant(0) }, false},
		{"noiseless", func(s *Scene) { s.SNRdB = math.Inf(1) }, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			sc := baseScene()
			c.mod(&sc)
			x, err := Render(sc)
			if err != nil {
				t.Fatal(err)
			}
			if len(x) != 3*16000 {
				t.Fatalf("%d samples, want 48000", len(x))
			}
			var full int
			var peak float32
			for i, v := range x {
				if v != v || v < -1 || v > 1 {
					t.Fatalf("sample %d = %g", i, v)
				}
				if v == 1 || v == -1 {
					full++
				}
				peak = max(peak, max(v, -v))
			}
			t.Logf("peak %.3f, %d samples at full scale", peak, full)
			if c.clip && full < 100 {
				t.Errorf("%d clipped samples, want many", full)
			}
			if !c.clip && full > 0 && sc.PeakLevel < 1 {
				t.Errorf("%d samples at full scale, want none", full)
			}
		})
	}
}

func TestValidate(t *testing.T) {
	cases := []struct {
		name string
		mod  func(*Scene)
	}{
		{"no rate", func(s *Scene) { s.SampleRate = 0 }},
		{"no duration", func(s *Scene) { s.DurationS = 0 }},
		{"NaN duration", func(s *Scene) { s.DurationS = math.NaN() }},
		{"too long", func(s *Scene) { s.DurationS = 1e9 }},
		{"no shaft", func(s *Scene) { s.Shaft = nil }},
		{"no blades", func(s *Scene) { s.Rotor.Blades = 0 }},
		{"NaN SNR", func(s *Scene) { s.SNRdB = math.NaN() }},
		{"-Inf SNR", func(s *Scene) { s.SNRdB = math.Inf(-1) }},
		{"clip 1", func(s *Scene) { s.ClipLevel = 1 }},
		{"share", func(s *Scene) { s.RotorNoiseShare = 2 }},
		{"other", func(s *Scene) { s.Others = []Machine{{}} }},
		{"NaN level", func(s *Scene) { s.Rotor.BladeLevel = math.NaN() }},
		{"Inf hum", func(s *Scene) { s.HumDB = math.Inf(1) }},
		{"huge harmonics", func(s *Scene) { s.Rotor.BladeHarmonics = 1 << 30 }},
		{"NaN resonance", func(s *Scene) { s.Resonances = []Resonance{{Hz: 100, Q: math.NaN(), GainDB: 3}} }},
		{"NaN other level", func(s *Scene) {
			s.Others = []Machine{{Rotor: NewRotor(2, 0), Shaft: Constant(50), LevelDB: math.NaN()}}
		}},
		{"jitter", func(s *Scene) { s.Rotor.JitterRel = 2 }},
	}
	for _, c := range cases {
		sc := baseScene()
		c.mod(&sc)
		if _, err := Render(sc); !errors.Is(err, ErrScene) {
			t.Errorf("%s: err = %v, want ErrScene", c.name, err)
		}
	}
}

func TestNaNTrajectory(t *testing.T) {
	// A trajectory returning NaN or negative values renders silence there,
	// never NaN.
	sc := baseScene()
	sc.Shaft = func(t float64) float64 {
		switch {
		case t < 1:
			return math.NaN()
		case t < 2:
			return -50
		case t < 2.5:
			return math.Inf(1)
		}
		return 200
	}
	x, err := Render(sc)
	if err != nil {
		t.Fatal(err)
	}
	for i, v := range x {
		if v != v {
			t.Fatalf("NaN at %d", i)
		}
	}
}

func TestTrigger(t *testing.T) {
	sc := baseScene()
	cmd := []float64{0.5, 1.25, 2.0001}
	for _, kind := range []TriggerKind{TriggerToggle, TriggerPulse} {
		st, err := RenderStereo(sc, Trigger{CommandS: cmd, Kind: kind})
		if err != nil {
			t.Fatal(err)
		}
		if len(st) != 2 || len(st[1]) != len(st[0]) {
			t.Fatalf("channels: %d", len(st))
		}
		// Rising or falling edges: where the level crosses 0.
		var edges []int
		for i := 1; i < len(st[1]); i++ {
			a, b := st[1][i-1], st[1][i]
			if kind == TriggerToggle && (a < 0) != (b < 0) || kind == TriggerPulse && a < 0.4 && b >= 0.4 {
				edges = append(edges, i)
			}
		}
		if len(edges) != len(cmd) {
			t.Fatalf("kind %d: %d edges, want %d", kind, len(edges), len(cmd))
		}
		for i, e := range edges {
			want := int(math.Ceil(cmd[i] * 16000))
			if e != want {
				t.Errorf("kind %d edge %d at sample %d, want %d", kind, i, e, want)
			}
		}
	}
	// AC coupling: a toggle decays after each edge.
	st, _ := RenderStereo(sc, Trigger{CommandS: cmd, ACHz: 20})
	e := int(math.Ceil(0.5 * 16000))
	if a, b := st[1][e], st[1][e+1600]; math.Abs(float64(b)) > 0.1*math.Abs(float64(a)) {
		t.Errorf("AC-coupled trigger: %g then %g 0.1 s later, want decay", a, b)
	}
}

func TestRandomStreamsIndependent(t *testing.T) {
	// Switching the hum on must not change the rotor's random line gains:
	// the tonal part is identical.
	sc := baseScene()
	sc.SNRdB = math.Inf(1)
	p1, _ := render(sc)
	sc.HumHz = 50
	p2, _ := render(sc)
	for i := range p1.tonal {
		if p1.tonal[i] != p2.tonal[i] {
			t.Fatalf("tonal differs at %d", i)
		}
	}
}

func TestTriggerPWM(t *testing.T) {
	// 50 Hz frames from 3 ms; a command at 1.0 s reaches the line at the
	// frame starting at 1.003 s, whose pulse widens from 1.2 to 1.8 ms.
	sc := baseScene()
	tg := Trigger{Kind: TriggerPWM, PhaseS: 0.003, StartThrottle: 0.2, CommandS: []float64{1.003}, Throttle: []float64{0.8}}
	if got := tg.FrameS(0.97); math.Abs(got-0.983) > 1e-12 {
		t.Errorf("FrameS(0.97) = %g, want 0.983", got)
	}
	if got := tg.FrameS(1.003); math.Abs(got-1.003) > 1e-12 {
		t.Errorf("FrameS(1.003) = %g, want 1.003", got)
	}
	st, err := RenderStereo(sc, tg)
	if err != nil {
		t.Fatal(err)
	}
	// Pulse widths in samples, frame by frame.
	var starts, widths []int
	x := st[1]
	for i := 1; i < len(x); i++ {
		if x[i-1] < 0.4 && x[i] >= 0.4 {
			starts = append(starts, i)
		}
		if x[i-1] >= 0.4 && x[i] < 0.4 {
			widths = append(widths, i-starts[len(starts)-1])
		}
	}
	if len(starts) != 150 { // 3 s at 50 Hz
		t.Fatalf("%d pulses, want 150", len(starts))
	}
	for k, w := range widths {
		want := int(math.Ceil((0.003+float64(k)*0.02+0.0012)*16000)) - starts[k]
		if float64(starts[k])/16000 >= 1.003-1e-9 {
			want = int(math.Ceil((0.003+float64(k)*0.02+0.0018)*16000)) - starts[k]
		}
		if w != want {
			t.Fatalf("pulse %d at sample %d: width %d, want %d", k, starts[k], w, want)
		}
	}
}

func TestRandomPWMCommandsOnGrid(t *testing.T) {
	o := DefaultRandomOptions()
	o.Stereo = 1
	rng := rand.New(rand.NewPCG(5, 6))
	var n int
	for range 60 {
		c := RandomScene(rng, o)
		if c.Trigger == nil {
			t.Fatal("no trigger with Stereo = 1")
		}
		if c.Trigger.Kind != TriggerPWM {
			continue
		}
		n++
		for _, s := range c.Truth.Steps {
			if g := c.Trigger.FrameS(s.CommandS); math.Abs(g-s.CommandS) > 1e-9 {
				t.Errorf("command %g not on the frame grid (next frame %g)", s.CommandS, g)
			}
		}
	}
	t.Logf("%d PWM cases of 60", n)
	if n == 0 {
		t.Error("no PWM trigger drawn")
	}
}

func TestRecorderFaults(t *testing.T) {
	// Dropouts are exact zeros, the DC offset shifts the mean, a second
	// microphone keeps the rotor and changes the noise, and its delay shifts
	// the signal by whole samples.
	sc := baseScene()
	sc.SNRdB = math.Inf(1)
	ref, _ := Render(sc)
	sc.Dropouts = [][2]float64{{1.5, 1.55}}
	sc.DCOffset = 0.01
	x, _ := Render(sc)
	for i := 24000; i < 24800; i++ {
		if x[i] != 0 {
			t.Fatalf("sample %d = %g inside a dropout", i, x[i])
		}
	}
	var mean float64
	for i := range x {
		if i < 24000 || i >= 24800 {
			mean += float64(x[i] - ref[i])
		}
	}
	mean /= float64(len(x) - 800)
	if math.Abs(mean-0.01) > 1e-6 {
		t.Errorf("mean shift %g, want 0.01", mean)
	}
	sc = baseScene()
	sc.SNRdB = math.Inf(1)
	sc.Mic, sc.MicDelayS = 1, 10.0/16000
	y, _ := Render(sc)
	for i := 10; i < len(y); i++ {
		if y[i] != ref[i-10] {
			t.Fatalf("delayed microphone differs at %d", i)
		}
	}
	sc = baseScene()
	p0, _ := render(sc)
	sc.Mic = 1
	p1, _ := render(sc)
	same := 0
	for i := range p0.noise {
		if p0.noise[i] == p1.noise[i] {
			same++
		}
		if p0.tonal[i] != p1.tonal[i] {
			t.Fatalf("tonal differs between microphones at %d", i)
		}
	}
	if same > 10 {
		t.Errorf("%d equal noise samples between microphones", same)
	}
}

func TestClicks(t *testing.T) {
	// About rate × duration bursts (Poisson), each raising the local peak.
	sc := baseScene()
	sc.SNRdB = math.Inf(1)
	sc.DurationS = 20
	quiet, _ := render(sc)
	sc.ClickRateHz, sc.ClickDB = 2, 20
	loud, _ := render(sc)
	// Without clipping or AGC the output is a scaled sum; the scale is
	// undone by regression on the click-free rendering, which leaves the
	// clicks; count 10 ms blocks where their RMS rises above 10 % of the
	// rotor's RMS after a quiet block.
	var lq, qq float64
	for i := range quiet.mix {
		lq += loud.mix[i] * quiet.mix[i]
		qq += quiet.mix[i] * quiet.mix[i]
	}
	g := qq / lq
	thr := 0.1 * math.Sqrt(meanPower(quiet.mix))
	const block = 160 // 10 ms at 16 kHz
	var bursts int
	prev := false
	for i := 0; i+block <= len(loud.mix); i += block {
		var e float64
		for k := i; k < i+block; k++ {
			d := loud.mix[k]*g - quiet.mix[k]
			e += d * d
		}
		on := math.Sqrt(e/block) > thr
		if on && !prev {
			bursts++
		}
		prev = on
	}
	t.Logf("%d bursts in 20 s at 2 Hz", bursts)
	if bursts < 20 || bursts > 60 { // Poisson mean 40, sd 6.3: ±3 sd
		t.Errorf("%d bursts, want about 40", bursts)
	}
}
