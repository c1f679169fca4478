package figure

import (
	"errors"
	"flag"
	"image"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/plot"

	"whirlfit/analysis"
	"whirlfit/analysis/export"
)

var regen = flag.Bool("regen", false, "rewrite the golden images in testdata/")

// Golden comparison tolerances: anti-aliased text and lines may differ
// slightly between font rasterizer versions; a pixel counts as different
// when a channel differs by more than goldenDelta, and at most
// goldenFraction of the pixels may differ.
const (
	goldenDelta    = 24
	goldenFraction = 0.002
)

// checkGolden compares img with testdata/name_golden.png, writing the
// image to testdata/failed/ on a mismatch (git-ignored) and rewriting the
// golden with -regen.
func checkGolden(t *testing.T, name string, img *image.RGBA) {
	t.Helper()
	golden := filepath.Join("testdata", name+"_golden.png")
	if *regen {
		if err := writePNG(golden, img); err != nil {
			t.Fatal(err)
		}
		t.Logf("wrote %s", golden)
		return
	}
	f, err := os.Open(golden)
	if err != nil {
		t.Fatalf("%v (run go test -regen to create it)", err)
	}
	defer f.Close()
	want, err := png.Decode(f)
	if err != nil {
		t.Fatal(err)
	}
	if want.Bounds() != img.Bounds() {
		t.Fatalf("%s: size %v, golden %v", name, img.Bounds(), want.Bounds())
	}
	diff := 0
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r0, g0, b0, _ := want.At(x, y).RGBA()
			c := img.RGBAAt(x, y)
			if absDiff(r0>>8, c.R) > goldenDelta || absDiff(g0>>8, c.G) > goldenDelta || absDiff(b0>>8, c.B) > goldenDelta {
				diff++
			}
		}
	}
	frac := float64(diff) / float64(b.Dx()*b.Dy())
	t.Logf("%s: %d pixels (%.3f %%) beyond ±%d", name, diff, 100*frac, goldenDelta)
	if frac > goldenFraction {
		failed := filepath.Join("testdata", "failed", name+".png")
		if err := os.MkdirAll(filepath.Dir(failed), 0o755); err == nil {
			_ = writePNG(failed, img)
		}
		t.Errorf("%s differs from its golden in %.3f %% of pixels (limit %.3f %%); see %s", name, 100*frac, 100*goldenFraction, failed)
	}
}

func absDiff(a uint32, b uint8) uint32 {
	if a > uint32(b) {
		return a - uint32(b)
	}
	return uint32(b) - a
}

func writePNG(path string, img image.Image) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := png.Encode(f, img); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func TestGoldenFigures(t *testing.T) {
	a := fixtureReport("two-blade-a.wav", 1, 0.040)
	b := fixtureReport("two-blade-b.wav", 2, 0.025)
	cases := []struct {
		name  string
		build func() (*plot.Plot, error)
	}{
		{"spectrogram", func() (*plot.Plot, error) { return SpectrogramPlot(a, Options{}) }},
		{"rpm", func() (*plot.Plot, error) { return RPMPlot(a, Options{}) }},
		{"rpm_step1", func() (*plot.Plot, error) {
			ps, err := RPMStepPlots(a, Options{})
			if err != nil {
				return nil, err
			}
			return ps[0], nil
		}},
		{"compare", func() (*plot.Plot, error) {
			return ComparePlot([]*analysis.Report{a, b}, []string{"A", "B"}, Options{FromCommand: true})
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p, err := c.build()
			if err != nil {
				t.Fatal(err)
			}
			checkGolden(t, c.name, RenderImage(p, 640, 400))
		})
	}
}

// The plotted data are the analysis numbers: the ridge segments are the
// track's blade-pass frequencies, the fitted curve is the step model
// (63.2 % of the change one τ after the response start, as a first-order
// step must be: Ogata, Modern Control Engineering), the seen curve agrees
// with the track samples within their noise, and the markers sit at the
// command times.
func TestPlottedDataMatchAnalysis(t *testing.T) {
	rep := fixtureReport("a.wav", 1, 0.040)
	var ly layers
	if _, err := spectrogramPlot(rep, Options{Ridge: RidgeBladePass, KHz: new(bool)}, &ly); err != nil {
		t.Fatal(err)
	}
	tr := rep.Track
	idx := map[float64]int{}
	for i, tm := range tr.TimeS {
		idx[tm] = i
	}
	pts := 0
	for _, seg := range ly.lines {
		for _, q := range seg {
			i, ok := idx[q.X]
			if !ok || q.Y != tr.BladePassHzAt(i) {
				t.Fatalf("ridge point (%g, %g) is not the track's blade-pass %g", q.X, q.Y, tr.BladePassHzAt(i))
			}
			pts++
		}
	}
	valid := 0
	for i := range tr.TimeS {
		if tr.Valid(i) {
			valid++
		}
	}
	if pts != valid || len(ly.lines) != 2 {
		t.Errorf("ridge has %d points in %d segments, want %d in 2 (one dropout)", pts, len(ly.lines), valid)
	}
	if len(ly.markers) != 2 || ly.markers[0] != 1.0 || ly.markers[1] != 2.0 {
		t.Errorf("markers at %v, want the command times [1 2]", ly.markers)
	}
	s := rep.Steps[0]
	c := curveOf(rep, 0)
	onset, tau := s.ResponseStartS, s.TauS.Value
	want := s.RPMBefore.Value + 0.632120559*(s.RPMAfter.Value-s.RPMBefore.Value)
	if got := c.Model(onset + tau); math.Abs(got-want) > 1e-6 {
		t.Errorf("model at onset + τ = %g rpm, want %g", got, want)
	}
	toHz := func(rpm float64) float64 { return analysis.BladePassHz(analysis.ShaftHz(rpm), rep.Blades) }
	for _, q := range ly.truth[0] {
		if math.Abs(q.Y-toHz(c.Model(q.X))) > 1e-9 {
			t.Fatalf("plotted model %g Hz at %g s, want %g", q.Y, q.X, toHz(c.Model(q.X)))
		}
	}
	// Seen curve against the track: residual RMS near the track's noise
	// (0.3 Hz shaft = 0.6 Hz blade-pass).
	var ss float64
	n := 0
	for i, tm := range tr.TimeS {
		if tr.Valid(i) && tm >= c.FromS && tm <= c.ToS {
			d := tr.BladePassHzAt(i) - toHz(c.Seen(tm))
			ss += d * d
			n++
		}
	}
	rms := math.Sqrt(ss / float64(n))
	t.Logf("seen model vs track over %d samples: RMS %.3f Hz blade-pass", n, rms)
	if rms > 1.5 {
		t.Errorf("seen model is %g Hz RMS off the track", rms)
	}
	// The band contains the model.
	lo, hi := c.Band([]float64{onset + tau})
	if m := c.Model(onset + tau); !(lo[0] <= m && m <= hi[0]) {
		t.Errorf("band %g…%g misses the model %g", lo[0], hi[0], m)
	}
}

func TestSaveFormats(t *testing.T) {
	rep := fixtureReport("a.wav", 1, 0.040)
	p, err := RPMPlot(rep, Options{})
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	for _, ext := range []string{".png", ".svg", ".pdf"} {
		path := filepath.Join(dir, "fig"+ext)
		if err := Save(p, path, 6, 4, false); err != nil {
			t.Fatalf("%s: %v", ext, err)
		}
		b, _ := os.ReadFile(path)
		magic := map[string]string{".png": "\x89PNG", ".svg": "<?xml", ".pdf": "%PDF"}[ext]
		if !strings.HasPrefix(string(b), magic) {
			t.Errorf("%s starts with %q", ext, b[:min(8, len(b))])
		}
		if err := Save(p, path, 6, 4, false); !errors.Is(err, export.ErrExists) {
			t.Errorf("%s: overwrite without force: %v", ext, err)
		}
	}
	if err := Save(p, filepath.Join(dir, "fig.bmp"), 6, 4, false); err == nil {
		t.Error("unknown format accepted")
	}
	ps, _ := RPMStepPlots(rep, Options{})
	if err := SaveGrid(ps, 2, filepath.Join(dir, "grid.png"), 10, 4, false); err != nil {
		t.Fatal(err)
	}
	sp, err := SpectrogramPlot(rep, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := Save(sp, filepath.Join(dir, "spec.svg"), 8, 5, false); err != nil {
		t.Fatal(err)
	}
}

func TestTitleBlock(t *testing.T) {
	rep := fixtureReport("a.wav", 1, 0.040)
	got := TitleBlock(rep, "")
	want := "a.wav\n2 blades\nup at 1.00 s: τ = 40 ± 2 ms, θ = 10.0 ± 1.2 ms\ndown at 2.00 s: τ = 60 ± 4 ms, θ = 12.0 ± 1.5 ms"
	if got != want {
		t.Errorf("title\n%s\nwant\n%s", got, want)
	}
	rep.Steps[1].DeadTimeS = nil
	if !strings.Contains(TitleBlock(rep, "x"), "θ needs the command time") {
		t.Error("missing dead time not said")
	}
}

func BenchmarkSpectrogramPlot(b *testing.B) {
	rep := fixtureReport("a.wav", 1, 0.040)
	b.ReportAllocs()
	for b.Loop() {
		p, err := SpectrogramPlot(rep, Options{})
		if err != nil {
			b.Fatal(err)
		}
		RenderImage(p, 1200, 600)
	}
}
