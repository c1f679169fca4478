package synth

import (
	"bytes"
	"encoding/binary"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/go-audio/wav"
)

func testChannels() [][]float32 {
	a := make([]float32, 1000)
	b := make([]float32, 1000)
	for i := range a {
		a[i] = float32(math.Sin(2 * math.Pi * float64(i) / 50))
		b[i] = float32(i%7)/7 - 0.5
	}
	a[10], a[11] = 1.5, -2 // clamped
	return [][]float32{a, b}
}

func TestWAVPCMRoundTrip(t *testing.T) {
	// Read back with go-audio/wav's decoder (integer PCM from memory, which
	// it decodes correctly: ../shared/reference/libraries.md).
	chs := testChannels()
	for _, bits := range []int{PCM16, PCM24} {
		data, err := EncodeWAV(chs, 44100, bits)
		if err != nil {
			t.Fatal(err)
		}
		d := wav.NewDecoder(bytes.NewReader(data))
		buf, err := d.FullPCMBuffer()
		if err != nil {
			t.Fatal(err)
		}
		if int(d.SampleRate) != 44100 || int(d.NumChans) != 2 || int(d.BitDepth) != bits {
			t.Fatalf("header: %d Hz, %d ch, %d bits", d.SampleRate, d.NumChans, d.BitDepth)
		}
		full := float64(int(1)<<(bits-1) - 1)
		var maxErr float64
		for i := range chs[0] {
			for c := range chs {
				want := math.Max(-1, math.Min(1, float64(chs[c][i])))
				got := float64(buf.Data[2*i+c]) / full
				maxErr = math.Max(maxErr, math.Abs(got-want))
			}
		}
		t.Logf("%d-bit: max error %.3g (half a step %.3g)", bits, maxErr, 0.5/full)
		if maxErr > 0.5/full+1e-12 {
			t.Errorf("%d-bit: error %g exceeds half a quantization step", bits, maxErr)
		}
	}
}

func TestWAVFloat(t *testing.T) {
	chs := testChannels()
	data, err := EncodeWAV(chs, 16000, Float32)
	if err != nil {
		t.Fatal(err)
	}
	le := binary.LittleEndian
	if string(data[0:4]) != "RIFF" || string(data[8:12]) != "WAVE" || le.Uint16(data[20:]) != 3 || le.Uint16(data[34:]) != 32 {
		t.Fatalf("bad header % x", data[:44])
	}
	if int(le.Uint32(data[4:])) != len(data)-8 {
		t.Errorf("RIFF size %d, want %d", le.Uint32(data[4:]), len(data)-8)
	}
	off := 12 + 8 + 18 + 8 + 4 + 8
	if string(data[off-8:off-4]) != "data" {
		t.Fatalf("no data chunk at %d", off-8)
	}
	for i := range chs[0] {
		got := math.Float32frombits(le.Uint32(data[off+8*i:]))
		want := max(-1, min(1, chs[0][i]))
		if got != want {
			t.Fatalf("sample %d = %g, want %g", i, got, want)
		}
	}
	if _, err := EncodeWAV(chs, 16000, 12); err == nil {
		t.Error("12 bits accepted")
	}
	if _, err := EncodeWAV([][]float32{{1}, {1, 2}}, 16000, 16); err == nil {
		t.Error("ragged channels accepted")
	}
}

func TestWAVReadBySox(t *testing.T) {
	// Outside check: Debian's sox reads each coding with the stated rate,
	// channels, bits and length (sox --i).
	sox, err := exec.LookPath("sox")
	if err != nil {
		t.Skip("sox not on PATH")
	}
	chs := testChannels()
	dir := t.TempDir()
	for _, c := range []struct {
		bits int
		enc  string
	}{{PCM16, "16-bit Signed Integer PCM"}, {PCM24, "24-bit Signed Integer PCM"}, {Float32, "32-bit Floating Point PCM"}} {
		data, err := EncodeWAV(chs, 22050, c.bits)
		if err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, "x.wav")
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		out, err := exec.Command(sox, "--i", p).CombinedOutput()
		if err != nil {
			t.Fatalf("sox: %v: %s", err, out)
		}
		s := string(out)
		for _, want := range []string{"Channels       : 2", "Sample Rate    : 22050", "1000 samples", c.enc} {
			if !strings.Contains(s, want) {
				t.Errorf("%d bits: sox --i lacks %q:\n%s", c.bits, want, s)
			}
		}
	}
}
