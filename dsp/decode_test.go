package dsp

import (
	"bytes"
	"encoding/binary"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/dsp/fourier"
	"gonum.org/v1/gonum/mat"
)

// repoTestdata is testdata/ at the repository root.
const repoTestdata = "../testdata"

func readTestdata(t testing.TB, name string) []byte {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(repoTestdata, name))
	if err != nil {
		t.Fatalf("%v (re-create with scripts/make-testdata.sh)", err)
	}
	return b
}

// fitSine estimates frequency and amplitude of the strongest sinusoid in
// x: a start from the peak bin of gonum's FFT, then the four-parameter
// least-squares sine fit of IEEE Std 1057 (Gauss–Newton on amplitude terms,
// offset and angular frequency).
func fitSine(x []float32, fs float64) (freq, amp float64) {
	n := len(x)
	seq := make([]float64, n)
	for i, v := range x {
		seq[i] = float64(v)
	}
	coef := fourier.NewFFT(n).Coefficients(nil, seq) // gonum dsp/fourier
	k := 1
	for i := 1; i < len(coef); i++ {
		if cmplx.Abs(coef[i]) > cmplx.Abs(coef[k]) {
			k = i
		}
	}
	w := 2 * math.Pi * float64(k) / float64(n) // rad/sample
	y := mat.NewVecDense(n, seq)
	var a, b float64
	for iter := 0; iter < 50; iter++ {
		cols := 3
		if iter > 0 {
			cols = 4
		}
		A := mat.NewDense(n, cols, nil)
		for i := range n {
			s, c := math.Sincos(w * float64(i))
			A.Set(i, 0, s)
			A.Set(i, 1, c)
			A.Set(i, 2, 1)
			if cols == 4 {
				A.Set(i, 3, float64(i)*(a*c-b*s))
			}
		}
		var sol mat.VecDense
		if err := sol.SolveVec(A, y); err != nil {
			return math.NaN(), math.NaN()
		}
		a, b = sol.AtVec(0), sol.AtVec(1)
		if cols == 4 {
			dw := sol.AtVec(3)
			w += dw
			if math.Abs(dw) < 1e-13 {
				break
			}
		}
	}
	return w * fs / (2 * math.Pi), math.Hypot(a, b)
}

// TestSoxFiles decodes files written by sox (and, where sox cannot write
// the coding, converted by ffmpeg) and compares them with the sine sox was
// asked to synthesize: 0.5·sin(2π·f·n/fs) from phase 0.
// sox-generated, see testdata/README.md.
func TestSoxFiles(t *testing.T) {
	tests := []struct {
		file      string
		container string
		codec     string
		rate      int
		bits      int
		freqs     []float64 // per channel, Hz
		seconds   float64
		tol       float64 // largest |decoded − ideal| allowed
	}{
		// Tolerances: one quantization step 2^-(bits-1) of the coding
		// (sox rounds, so half a step is expected; the other half covers
		// sox's own 32-bit intermediate). For 32-bit int and float files
		// the limit is float32 rounding of a value below 0.5: 2^-25, plus
		// sox's 32-bit intermediate 2^-31, taken as 1e-7.
		{"sine1k_u8.wav", "WAV", "PCM", 48000, 8, []float64{1000}, 0.1, 1.0 / 128},
		{"sine1k_s16.wav", "WAV", "PCM", 48000, 16, []float64{1000}, 0.1, 1.0 / 32768},
		{"sine1k_s24.wav", "WAV", "PCM (extensible)", 48000, 24, []float64{1000}, 0.1, 1.0 / (1 << 23)},
		{"sine1k_s32.wav", "WAV", "PCM (extensible)", 48000, 32, []float64{1000}, 0.1, 1e-7},
		{"sine1k_f32.wav", "WAV", "IEEE float", 48000, 32, []float64{1000}, 0.1, 1e-7},
		{"sine1k_f64.wav", "WAV", "IEEE float", 48000, 64, []float64{1000}, 0.1, 1e-7},
		{"sine1k_s16_8k.wav", "WAV", "PCM", 8000, 16, []float64{1000}, 0.1, 1.0 / 32768},
		{"sine1k_s16_192k.wav", "WAV", "PCM", 192000, 16, []float64{1000}, 0.05, 1.0 / 32768},
		{"sine1k_s16_list.wav", "WAV", "PCM", 48000, 16, []float64{1000}, 0.1, 1.0 / 32768},
		{"sine_stereo_s16.wav", "WAV", "PCM", 44100, 16, []float64{1000, 1500}, 0.1, 1.0 / 32768},
		{"sine_4ch_s16.wav", "WAV", "PCM (extensible)", 48000, 16, []float64{500, 1000, 1500, 2000}, 0.1, 1.0 / 32768},
		{"sine_4ch_f32.wav", "WAV", "IEEE float", 16000, 32, []float64{500, 1000, 1500, 2000}, 0.1, 1e-7},
		{"sine_4ch_f32_ext.wav", "WAV", "IEEE float (extensible)", 16000, 32, []float64{500, 1000, 1500, 2000}, 0.1, 1e-7},
		{"sine1k_s16.flac", "FLAC", "FLAC", 48000, 16, []float64{1000}, 0.1, 1.0 / 32768},
		{"sine1k_s24.flac", "FLAC", "FLAC", 48000, 24, []float64{1000}, 0.1, 1.0 / (1 << 23)},
	}
	for _, tt := range tests {
		t.Run(tt.file, func(t *testing.T) {
			a, err := DecodeFile(filepath.Join(repoTestdata, tt.file))
			if err != nil {
				t.Fatal(err)
			}
			if a.Container != tt.container || a.Codec != tt.codec || a.SampleRate != tt.rate || a.Bits != tt.bits || len(a.Channels) != len(tt.freqs) {
				t.Fatalf("got %s/%s %d Hz %d bits %d ch, want %s/%s %d Hz %d bits %d ch",
					a.Container, a.Codec, a.SampleRate, a.Bits, len(a.Channels), tt.container, tt.codec, tt.rate, tt.bits, len(tt.freqs))
			}
			if want := int(math.Round(tt.seconds * float64(tt.rate))); a.Frames() != want {
				t.Errorf("got %d frames, want %d", a.Frames(), want)
			}
			if len(a.Warnings) != 0 || a.NonFinite != 0 {
				t.Errorf("got warnings %q, %d non-finite", a.Warnings, a.NonFinite)
			}
			fs := float64(a.SampleRate)
			for c, f := range tt.freqs {
				worst := 0.0
				for i, v := range a.Channels[c] {
					want := 0.5 * math.Sin(2*math.Pi*f*float64(i)/fs)
					worst = max(worst, math.Abs(float64(v)-want))
				}
				if worst > tt.tol {
					t.Errorf("channel %d: largest error %.3g, want ≤ %.3g", c, worst, tt.tol)
				}
				gotF, gotA := fitSine(a.Channels[c], fs)
				// The fit recovers frequency to far below a bin (here
				// 1e-4 Hz of a 10 Hz bin); amplitude within the
				// quantization step.
				if math.Abs(gotF-f) > 1e-4 || math.Abs(gotA-0.5) > tt.tol {
					t.Errorf("channel %d: fitted %.6f Hz amplitude %.8f, want %g Hz 0.5 (±%.3g)", c, gotF, gotA, f, tt.tol)
				}
				t.Logf("channel %d: max error %.3g (%.2f steps), fit %.6f Hz amplitude %.8f", c, worst, worst/tt.tol, gotF, gotA)
			}
		})
	}
}

// TestSoxLossyFiles: MP3 (ffmpeg's libmp3lame from a sox sine) decoded
// directly, Ogg Vorbis (sox) through ffmpeg. Lossy coding changes the
// samples, so only frequency and amplitude are checked, away from the
// codec's start-up and end. sox-generated, see testdata/README.md.
func TestSoxLossyFiles(t *testing.T) {
	tests := []struct {
		file       string
		container  string
		needFFmpeg bool
	}{
		{"sine1k.mp3", "MP3", false},
		{"sine1k.ogg", "OGG", true},
	}
	for _, tt := range tests {
		t.Run(tt.file, func(t *testing.T) {
			d := newDecoder().withTools()
			if tt.needFFmpeg && d.ffmpeg == "" {
				t.Skip("ffmpeg is not on PATH")
			}
			a, err := d.decodeFile(filepath.Join(repoTestdata, tt.file))
			if err != nil {
				t.Fatal(err)
			}
			if a.Container != tt.container || a.SampleRate != 48000 || len(a.Channels) != 1 {
				t.Fatalf("got %s %d Hz %d ch, want %s 48000 Hz mono", a.Container, a.SampleRate, len(a.Channels), tt.container)
			}
			// 0.5 s encoded; decoders add up to a couple of thousand
			// samples of delay and padding (common practice for MP3).
			if got := a.DurationS(); got < 0.45 || got > 0.56 {
				t.Errorf("got %.4f s, want about 0.5 s", got)
			}
			x := a.Channels[0]
			x = x[4096 : len(x)-4096]
			f, amp := fitSine(x, float64(a.SampleRate))
			db := 20 * math.Log10(amp/0.5)
			// Perceptual coders keep a lone 1 kHz tone's level within a
			// fraction of a dB (common practice); 0.5 dB allowed.
			if math.Abs(f-1000) > 0.05 || math.Abs(db) > 0.5 {
				t.Errorf("fitted %.4f Hz amplitude %.5f (%.3f dB), want 1000 Hz 0.5", f, amp, db)
			}
			t.Logf("%s: %s %s, %d frames, fit %.4f Hz amplitude %.5f (%+.3f dB)", tt.file, a.Container, a.Codec, a.Frames(), f, amp, db)
			if tt.container != "MP3" {
				return
			}
			// Gapless trimming (Xing/LAME tag): sox wrote 24000 samples.
			if a.Frames() != 24000 {
				t.Errorf("got %d frames, want the 24000 sox wrote", a.Frames())
			}
			if d.ffmpeg == "" {
				return
			}
			// Cross-check go-mp3 against ffmpeg's own MP3 decoder: the
			// level lost above is the encoder's, not the decoder's.
			ref, err := d.decodeFFmpeg(tt.file, readTestdata(t, tt.file), "")
			if err != nil {
				t.Fatal(err)
			}
			y := ref.Channels[0][4096 : ref.Frames()-4096]
			fRef, ampRef := fitSine(y, float64(ref.SampleRate))
			if d := 20 * math.Log10(amp/ampRef); math.Abs(d) > 0.01 || math.Abs(f-fRef) > 0.01 {
				t.Errorf("go-mp3 %.4f Hz %.5f, ffmpeg %.4f Hz %.5f (%.4f dB apart), want within 0.01 dB", f, amp, fRef, ampRef, d)
			}
			t.Logf("ffmpeg decodes %d frames, fit %.4f Hz amplitude %.5f", ref.Frames(), fRef, ampRef)
			// After the Xing/LAME trim go-mp3's samples line up with ffmpeg's
			// (which trims the start the same way but keeps the end
			// padding).
			worst := 0.0
			for i := range min(a.Frames(), ref.Frames()) {
				worst = max(worst, math.Abs(float64(a.Channels[0][i]-ref.Channels[0][i])))
			}
			// Two decoders of one stream differ by rounding only: a few
			// 16-bit steps.
			if worst > 4.0/32768 {
				t.Errorf("go-mp3 and ffmpeg differ by up to %.3g, want ≤ 4 steps of 16 bits", worst)
			}
			t.Logf("go-mp3 vs ffmpeg, sample by sample: largest difference %.3g (%.2f 16-bit steps)", worst, worst*32768)
		})
	}
}

// TestSameSamplesThroughTwoWriters: the same sox synthesis written as WAV
// and as FLAC, or re-written by ffmpeg with extra chunks and as
// EXTENSIBLE, must decode to identical samples.
// sox-generated, see testdata/README.md.
func TestSameSamplesThroughTwoWriters(t *testing.T) {
	pairs := [][2]string{
		{"sine1k_s16.wav", "sine1k_s16.flac"},
		{"sine1k_s24.wav", "sine1k_s24.flac"},
		{"sine1k_s16.wav", "sine1k_s16_list.wav"},
		{"sine_4ch_f32.wav", "sine_4ch_f32_ext.wav"},
	}
	for _, p := range pairs {
		t.Run(p[0]+"="+p[1], func(t *testing.T) {
			a, err := Decode(p[0], readTestdata(t, p[0]))
			if err != nil {
				t.Fatal(err)
			}
			b, err := Decode(p[1], readTestdata(t, p[1]))
			if err != nil {
				t.Fatal(err)
			}
			sameSamples(t, a, b)
		})
	}
}

func sameSamples(t *testing.T, a, b *Audio) {
	t.Helper()
	if len(a.Channels) != len(b.Channels) || a.Frames() != b.Frames() {
		t.Fatalf("got %d×%d, want %d×%d", len(b.Channels), b.Frames(), len(a.Channels), a.Frames())
	}
	for c := range a.Channels {
		for i := range a.Channels[c] {
			if a.Channels[c][i] != b.Channels[c][i] {
				t.Fatalf("channel %d sample %d: got %v, want %v", c, i, b.Channels[c][i], a.Channels[c][i])
			}
		}
	}
}

// TestPatchedSoxFiles derives streaming-writer and damaged variants from
// sox's 16-bit file by patching bytes (see testdata/README.md).
func TestPatchedSoxFiles(t *testing.T) {
	orig := readTestdata(t, "sine1k_s16.wav") // sox-generated, see testdata/README.md
	want, err := Decode("orig", orig)
	if err != nil {
		t.Fatal(err)
	}
	dataAt := bytes.Index(orig, []byte("data"))
	if dataAt < 0 {
		t.Fatal("no data chunk in sine1k_s16.wav")
	}
	patch := func(off int, v uint32) []byte {
		b := bytes.Clone(orig)
		binary.LittleEndian.PutUint32(b[off:], v)
		return b
	}
	t.Run("data and RIFF size 0xFFFFFFFF", func(t *testing.T) {
		b := patch(dataAt+4, 0xFFFFFFFF)
		binary.LittleEndian.PutUint32(b[4:], 0xFFFFFFFF)
		got, err := Decode("streamed", b)
		if err != nil {
			t.Fatal(err)
		}
		sameSamples(t, want, got)
	})
	t.Run("data size 0", func(t *testing.T) {
		got, err := Decode("streamed", patch(dataAt+4, 0))
		if err != nil {
			t.Fatal(err)
		}
		sameSamples(t, want, got)
	})
	t.Run("cut short", func(t *testing.T) {
		b := orig[:len(orig)-1001]
		got, err := Decode("cut", b)
		if err != nil {
			t.Fatal(err)
		}
		if wantN := (len(b) - dataAt - 8) / 2; got.Frames() != wantN {
			t.Errorf("got %d frames, want %d", got.Frames(), wantN)
		}
		if len(got.Warnings) != 2 || !strings.Contains(got.Warnings[0], "truncated") {
			t.Errorf("got warnings %q, want truncated and partial frame", got.Warnings)
		}
		for i, v := range got.Channels[0] {
			if v != want.Channels[0][i] {
				t.Fatalf("sample %d: got %v, want %v", i, v, want.Channels[0][i])
			}
		}
		t.Logf("%q", got.Warnings)
	})
}

// TestSniffIgnoresName: dispatch is by content, so a FLAC file named .wav
// and a WAV named .mp3 decode as what they are.
func TestSniffIgnoresName(t *testing.T) {
	for _, c := range []struct{ file, as, container string }{
		{"sine1k_s16.flac", "x.wav", "FLAC"},
		{"sine1k_s16.wav", "x.mp3", "WAV"},
		{"sine1k.mp3", "x.flac", "MP3"},
	} {
		a, err := Decode(c.as, readTestdata(t, c.file))
		if err != nil || a.Container != c.container {
			t.Errorf("%s as %s: got %v, err %v; want %s", c.file, c.as, a, err, c.container)
		}
	}
}

// TestFFmpegFromMemory decodes Ogg bytes through ffmpeg's stdin, and with
// ffmpeg absent gets the conversion hint.
func TestFFmpegFromMemory(t *testing.T) {
	data := readTestdata(t, "sine1k.ogg") // sox-generated, see testdata/README.md
	_, err := decoder{limit: maxSamples}.decode("x.ogg", data, "")
	if err == nil || !strings.Contains(err.Error(), "ffmpeg -i IN OUT.wav") {
		t.Errorf("without ffmpeg: got %v, want the conversion hint", err)
	}
	d := newDecoder().withTools()
	if d.ffmpeg == "" {
		t.Skip("ffmpeg is not on PATH")
	}
	for _, probe := range []bool{true, false} {
		dd := d
		if !probe {
			dd.ffprobe = "" // rate and channels from ffmpeg's stderr
		}
		a, err := dd.decode("x.ogg", data, "")
		if err != nil {
			t.Fatal(err)
		}
		if a.SampleRate != 48000 || len(a.Channels) != 1 || a.Container != "OGG" || a.Codec != "VORBIS" {
			t.Errorf("ffprobe %v: got %s/%s %d Hz %d ch, want OGG/VORBIS 48000 Hz mono", probe, a.Container, a.Codec, a.SampleRate, len(a.Channels))
		}
	}
	_, err = d.decode("junk.bin", []byte{0x12, 0x00, 0x34, 0x01, 0x99, 0xFE, 0x00, 0x00}, "")
	if err == nil || !strings.HasPrefix(err.Error(), "junk.bin: ") || strings.Contains(err.Error(), "\n") {
		t.Errorf("garbage through ffmpeg: got %v, want one line naming junk.bin", err)
	}
	t.Logf("garbage through ffmpeg: %v", err)
}

func TestParseFFmpegOutput(t *testing.T) {
	log := "Input #0, ogg, from 'pipe:0':\n  Stream #0:0: Audio: vorbis, 44100 Hz, stereo, fltp, 80 kb/s\n" +
		"Output #0, f32le, to 'pipe:1':\n  Metadata:\n    encoder : x\n  Stream #0:0: Audio: pcm_f32le, 44100 Hz, 5.1(side), flt, 1536 kb/s\n"
	rate, ch := parseFFmpegOutput(log)
	if rate != 44100 || ch != 6 {
		t.Errorf("got %d Hz %d ch, want 44100 Hz 6 ch", rate, ch)
	}
	c, codec := parseFFmpegInput(log)
	if c != "OGG" || codec != "VORBIS" {
		t.Errorf("got %s/%s, want OGG/VORBIS", c, codec)
	}
	rate, ch = parseFFmpegOutput(strings.Replace(log, "5.1(side)", "10 channels", 1))
	if rate != 44100 || ch != 10 {
		t.Errorf("got %d Hz %d ch, want 44100 Hz 10 ch", rate, ch)
	}
}

// TestWAVThroughFFmpeg: a WAV coding whirlfit does not read itself (µ-law)
// goes to ffmpeg when it is present, else gets a clear error.
// sox-generated, see testdata/README.md.
func TestWAVThroughFFmpeg(t *testing.T) {
	path := filepath.Join(repoTestdata, "sine1k_ulaw.wav")
	_, err := decoder{limit: maxSamples}.decodeFile(path)
	if err == nil || !strings.Contains(err.Error(), "µ-law") {
		t.Errorf("without ffmpeg: got %v, want an error naming µ-law", err)
	}
	d := newDecoder().withTools()
	if d.ffmpeg == "" {
		t.Skip("ffmpeg is not on PATH")
	}
	a, err := d.decodeFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if a.Container != "WAV" || a.Codec != "PCM_MULAW" || a.SampleRate != 8000 || len(a.Channels) != 1 || a.Frames() != 800 {
		t.Fatalf("got %s/%s %d Hz %d ch %d frames, want WAV/PCM_MULAW 8000 Hz mono 800 frames", a.Container, a.Codec, a.SampleRate, len(a.Channels), a.Frames())
	}
	f, amp := fitSine(a.Channels[0], 8000)
	// µ-law's step near ±0.5 is 1/64 of full scale (ITU-T G.711 segment
	// 7); the fitted amplitude averages it down to well under 1 %.
	if math.Abs(f-1000) > 1e-3 || math.Abs(amp-0.5) > 0.005 {
		t.Errorf("fitted %.5f Hz amplitude %.5f, want 1000 Hz 0.5 ±0.005", f, amp)
	}
	t.Logf("µ-law via ffmpeg: %s %s, fit %.5f Hz amplitude %.5f", a.Container, a.Codec, f, amp)
}
