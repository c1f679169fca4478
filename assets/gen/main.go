// Command gen regenerates the embedded assets: demo.wav, the demo recording
// described by assets.Demo, rendered by dsp/synth, and icon.png, a drawn
// three-blade rotor. Run from the repository root:
//
//	go run ./assets/gen
//
// The flag -dir chooses the output folder (default "assets").
package main

import (
	"flag"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"

	"whirlfit/assets"
	"whirlfit/dsp/synth"
)

func main() {
	dir := flag.String("dir", "assets", "output `folder`")
	flag.Parse()
	if err := run(*dir); err != nil {
		fmt.Fprintln(os.Stderr, "gen:", err)
		os.Exit(1)
	}
}

func run(dir string) error {
	wav, err := DemoWAV(assets.Demo)
	if err != nil {
		return err
	}
	if err := writeFile(filepath.Join(dir, "demo.wav"), func(w io.Writer) error {
		_, err := w.Write(wav)
		return err
	}); err != nil {
		return err
	}
	return writeFile(filepath.Join(dir, "icon.png"), func(w io.Writer) error {
		return png.Encode(w, Icon(256))
	})
}

// writeFile writes path through a temporary file in the same folder and
// renames it into place, so a failed run never leaves a half-written asset.
// (The product uses analysis/export for this; the generator stays free of
// the analysis packages so that it builds on its own.)
func writeFile(path string, write func(io.Writer) error) error {
	f, err := os.CreateTemp(filepath.Dir(path), ".gen-*")
	if err != nil {
		return err
	}
	defer os.Remove(f.Name()) // no-op after a successful rename
	if err := write(f); err != nil {
		f.Close()
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err := os.Chmod(f.Name(), 0o644); err != nil {
		return err
	}
	return os.Rename(f.Name(), path)
}

// Scene returns the synth scene of a demo scenario.
func Scene(d assets.DemoScenario) synth.Scene {
	const rpmPerHz = 60 // shaft rpm per Hz
	steps := make([]synth.Step, len(d.Steps))
	for i, s := range d.Steps {
		steps[i] = synth.Step{CommandS: s.CommandS, TargetHz: s.ToRPM / rpmPerHz, TauS: s.TauS, DeadS: s.DeadS}
	}
	r := synth.NewRotor(d.Blades, d.PolePairs)
	return synth.Scene{
		SampleRate:      d.SampleRate,
		DurationS:       d.DurationS,
		Shaft:           synth.Steps(d.StartRPM/rpmPerHz, steps...),
		Rotor:           r,
		SNRdB:           d.SNRdB,
		NoiseColor:      synth.Pink,
		RotorNoiseShare: d.RotorNoiseShare,
		HighPassHz:      d.HighPassHz,
		ReverbS:         d.ReverbS,
		ReverbDRRdB:     d.ReverbDRRdB,
		PeakLevel:       0.7,
		Seed:            d.Seed,
	}
}

// DemoWAV renders a demo scenario as a WAV file.
func DemoWAV(d assets.DemoScenario) ([]byte, error) {
	x, err := synth.Render(Scene(d))
	if err != nil {
		return nil, err
	}
	return synth.EncodeWAV([][]float32{x}, d.SampleRate, d.Bits)
}

// Icon draws a three-blade rotor in a circle, size×size pixels, with 4×4
// supersampling for smooth edges.
func Icon(size int) *image.NRGBA {
	img := image.NewNRGBA(image.Rect(0, 0, size, size))
	bg := color.NRGBA{0x1e, 0x3a, 0x5f, 0xff}
	ring := color.NRGBA{0x4f, 0x9d, 0xd9, 0xff}
	blade := color.NRGBA{0xf2, 0xf5, 0xf7, 0xff}
	hub := color.NRGBA{0xf2, 0x8c, 0x28, 0xff}
	const ss = 4
	c := float64(size) / 2
	for py := range size {
		for px := range size {
			var r, g, b, a float64
			for sy := range ss {
				for sx := range ss {
					x := (float64(px) + (float64(sx)+0.5)/ss - c) / c
					y := (float64(py) + (float64(sy)+0.5)/ss - c) / c
					col, ok := iconColour(x, y, bg, ring, blade, hub)
					if !ok {
						continue
					}
					r += float64(col.R)
					g += float64(col.G)
					b += float64(col.B)
					a++
				}
			}
			if a == 0 {
				continue
			}
			img.SetNRGBA(px, py, color.NRGBA{
				uint8(r/a + 0.5), uint8(g/a + 0.5), uint8(b/a + 0.5),
				uint8(255*a/(ss*ss) + 0.5),
			})
		}
	}
	return img
}

// iconColour returns the colour at (x, y) in the unit square centred on the
// icon (radius 1 = edge), or false outside the disc.
func iconColour(x, y float64, bg, ring, blade, hub color.NRGBA) (color.NRGBA, bool) {
	r := math.Hypot(x, y)
	switch {
	case r > 0.97:
		return color.NRGBA{}, false
	case r > 0.90:
		return ring, true
	case r < 0.15:
		return hub, true
	}
	for k := range 3 {
		ang := 2*math.Pi*float64(k)/3 + math.Pi/2
		// Blade axis coordinates: u along the blade, v across it.
		u := x*math.Cos(ang) + y*math.Sin(ang)
		v := -x*math.Sin(ang) + y*math.Cos(ang)
		// A swept, tapered blade: an ellipse bent by a slight curvature.
		v -= 0.18 * u * u
		if u > 0 && (u-0.45)*(u-0.45)/(0.40*0.40)+v*v/(0.13*0.13) <= 1 {
			return blade, true
		}
	}
	return bg, true
}
