package dsp

import (
	"errors"
	"io"
	"math"
	"os"
	"strings"
	"testing"

	"github.com/go-audio/audio"
	"github.com/go-audio/wav"
	"github.com/mewkiz/flac"
	"github.com/mewkiz/flac/frame"
	"github.com/mewkiz/flac/meta"
)

// fuzzLimit bounds decoded samples while fuzzing (16 MiB of float32), so
// that a tiny FLAC or MP3 that expands enormously is rejected quickly
// instead of exhausting memory; the bound itself is exercised too.
const fuzzLimit = 1 << 22

// addFileSeeds adds every testdata file whose name ends in one of exts.
func addFileSeeds(f *testing.F, exts ...string) {
	entries, err := os.ReadDir(repoTestdata)
	if err != nil {
		f.Fatalf("%v (re-create with scripts/make-testdata.sh)", err)
	}
	for _, e := range entries {
		for _, ext := range exts {
			if strings.HasSuffix(e.Name(), ext) {
				f.Add(readTestdata(f, e.Name())) // sox-generated, see testdata/README.md
			}
		}
	}
}

func addTableSeeds(f *testing.F) {
	for _, c := range wavFormatCases() {
		f.Add(c.spec.bytes())
	}
	for _, c := range badInputCases() {
		f.Add(c.data)
	}
}

// checkDecoded is what every successful decode must satisfy.
func checkDecoded(t *testing.T, a *Audio, err error) {
	t.Helper()
	if err != nil {
		var fe *FormatError
		var ue *UnsupportedError
		if !errors.As(err, &fe) && !errors.As(err, &ue) {
			t.Fatalf("error of type %T: %v", err, err)
		}
		if msg := err.Error(); strings.Contains(msg, "\n") || !strings.HasPrefix(msg, "fuzz: ") {
			t.Fatalf("error not one line naming the file: %q", msg)
		}
		return
	}
	if len(a.Channels) == 0 {
		return
	}
	n := len(a.Channels[0])
	for c, ch := range a.Channels {
		if len(ch) != n {
			t.Fatalf("channel %d has %d samples, channel 0 %d", c, len(ch), n)
		}
		for i, v := range ch {
			if v-v != 0 {
				t.Fatalf("channel %d sample %d is %v", c, i, v)
			}
		}
	}
	if a.SampleRate < MinSampleRate || a.SampleRate > MaxSampleRate {
		// decodeWAV and decodeFLAC check the rate; the dispatcher checks
		// all.
		if a.Container != "MP3" {
			t.Fatalf("sample rate %d accepted", a.SampleRate)
		}
	}
}

func FuzzDecodeWAV(f *testing.F) {
	addFileSeeds(f, ".wav")
	addTableSeeds(f)
	f.Fuzz(func(t *testing.T, data []byte) {
		a, err := decodeWAV("fuzz", data, fuzzLimit)
		checkDecoded(t, a, err)
		if err != nil {
			return
		}
		roundTripWAV(t, a)
	})
}

// roundTripWAV encodes integer PCM with go-audio/wav's encoder and checks
// that decoding gives the same samples back (the png fuzz test's
// decode–encode–decode).
func roundTripWAV(t *testing.T, a *Audio) (ran bool) {
	if a.Codec != "PCM" || a.Bits%8 != 0 || a.Frames() == 0 {
		return false // float and EXTENSIBLE: the encoder writes plain integer PCM only
	}
	bits := a.Bits
	nch := len(a.Channels)
	scale := math.Ldexp(1, bits-1)
	data := make([]int, 0, a.Frames()*nch)
	for i := range a.Frames() {
		for c := range nch {
			v := int(math.Round(float64(a.Channels[c][i]) * scale))
			v = min(max(v, -int(scale)), int(scale)-1) // float32 rounds 2^31−1 up to 2^31
			if bits == 8 {
				v += 128 // go-audio's encoder writes 8-bit samples as given, unsigned
			}
			data = append(data, v)
		}
	}
	var ws memWriteSeeker
	enc := wav.NewEncoder(&ws, a.SampleRate, bits, nch, 1)
	buf := &audio.IntBuffer{Format: &audio.Format{NumChannels: nch, SampleRate: a.SampleRate}, Data: data, SourceBitDepth: bits}
	if err := enc.Write(buf); err != nil {
		t.Fatalf("encode: %v", err)
	}
	if err := enc.Close(); err != nil {
		t.Fatalf("encode: %v", err)
	}
	b, err := decodeWAV("round trip", ws.buf, fuzzLimit)
	if err != nil {
		t.Fatalf("decoding the re-encoded file: %v", err)
	}
	if len(b.Channels) != nch || b.Frames() != a.Frames() || b.Bits != bits {
		t.Fatalf("round trip: got %d×%d %d bits, want %d×%d %d bits", len(b.Channels), b.Frames(), b.Bits, nch, a.Frames(), bits)
	}
	for c := range nch {
		for i := range a.Channels[c] {
			want := a.Channels[c][i]
			if bits == 32 {
				want = min(want, float32((scale-1)/scale)) // the clamp above
			}
			if b.Channels[c][i] != want {
				t.Fatalf("round trip: channel %d sample %d: got %v, want %v", c, i, b.Channels[c][i], want)
			}
		}
	}
	return true
}

func FuzzDecodeFLAC(f *testing.F) {
	addFileSeeds(f, ".flac")
	f.Add([]byte("fLaC"))
	f.Add([]byte("fLaC\x80\x00\x00\x22\x10\x00\x10\x00\x00\x00\x00\x00\x00\x00\x0b\xb8\x00\xf0\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00"))
	f.Fuzz(func(t *testing.T, data []byte) {
		a, err := decodeFLAC("fuzz", data, fuzzLimit)
		checkDecoded(t, a, err)
		if err == nil {
			roundTripFLAC(t, a)
		}
	})
}

// roundTripFLAC re-encodes the decoded samples with mewkiz/flac's encoder
// (verbatim subframes, the encoder may choose better predictors) and
// checks that decoding gives them back exactly. Streams whose frames use a
// bit depth other than the stream's are skipped: their samples need not be
// codes of the stream's depth.
func roundTripFLAC(t *testing.T, a *Audio) (ran bool) {
	nch, bits := len(a.Channels), a.Bits
	if a.Frames() == 0 || nch > 8 || bits < 4 || bits > 32 {
		return false
	}
	scale := math.Ldexp(1, bits-1)
	codes := make([][]int32, nch)
	for c, ch := range a.Channels {
		codes[c] = make([]int32, len(ch))
		for i, v := range ch {
			x := float64(v) * scale
			if x != math.Trunc(x) || x < -scale || x >= scale || (bits == 32 && x != float64(int32(x))) {
				return false
			}
			codes[c][i] = int32(x)
		}
	}
	info := &meta.StreamInfo{BlockSizeMin: 16, BlockSizeMax: 4096, SampleRate: uint32(a.SampleRate),
		NChannels: uint8(nch), BitsPerSample: uint8(bits)}
	var ws memWriteSeeker
	enc, err := flac.NewEncoder(&ws, info)
	if err != nil {
		t.Fatalf("flac encoder: %v", err)
	}
	const block = 4096
	for start := 0; start < a.Frames(); start += block {
		end := min(start+block, a.Frames())
		fr := &frame.Frame{Header: frame.Header{HasFixedBlockSize: true, BlockSize: uint16(end - start),
			SampleRate: uint32(a.SampleRate), Channels: frame.Channels(nch - 1), BitsPerSample: uint8(bits)}}
		for c := range nch {
			fr.Subframes = append(fr.Subframes, &frame.Subframe{SubHeader: frame.SubHeader{Pred: frame.PredVerbatim},
				Samples: codes[c][start:end:end], NSamples: end - start})
		}
		if err := enc.WriteFrame(fr); err != nil {
			t.Fatalf("flac encoder: %v", err)
		}
	}
	if err := enc.Close(); err != nil {
		t.Fatalf("flac encoder: %v", err)
	}
	b, err := decodeFLAC("round trip", ws.buf, fuzzLimit)
	if err != nil {
		t.Fatalf("decoding the re-encoded stream: %v", err)
	}
	if len(b.Channels) != nch || b.Frames() != a.Frames() || b.Bits != bits {
		t.Fatalf("round trip: got %d×%d %d bits, want %d×%d %d bits", len(b.Channels), b.Frames(), b.Bits, nch, a.Frames(), bits)
	}
	for c := range nch {
		for i, v := range a.Channels[c] {
			if b.Channels[c][i] != v {
				t.Fatalf("round trip: channel %d sample %d: got %v, want %v", c, i, b.Channels[c][i], v)
			}
		}
	}
	return true
}

func FuzzDecodeMP3(f *testing.F) {
	addFileSeeds(f, ".mp3")
	f.Add([]byte{0xFF, 0xFB, 0x90, 0x64})
	f.Add(append([]byte{0xFF, 0xFB, 0x90, 0x64}, make([]byte, 600)...))
	f.Add([]byte("ID3\x04\x00\x00\x00\x00\x00\x00\xFF\xF3\x14\xC4"))
	f.Fuzz(func(t *testing.T, data []byte) {
		a, err := decodeMP3("fuzz", data, fuzzLimit)
		checkDecoded(t, a, err)
	})
}

// FuzzDecode drives the dispatcher as if ffmpeg were absent (running a
// process per input would make fuzzing crawl).
func FuzzDecode(f *testing.F) {
	addFileSeeds(f, ".wav", ".flac", ".mp3", ".ogg")
	addTableSeeds(f)
	f.Fuzz(func(t *testing.T, data []byte) {
		a, err := decoder{limit: fuzzLimit}.decode("fuzz", data, "")
		checkDecoded(t, a, err)
		if err == nil && (a.Frames() == 0 || a.SampleRate < MinSampleRate || a.SampleRate > MaxSampleRate) {
			t.Fatalf("accepted %d frames at %d Hz", a.Frames(), a.SampleRate)
		}
	})
}

// memWriteSeeker is an in-memory io.WriteSeeker for the WAV encoder.
type memWriteSeeker struct {
	buf []byte
	pos int
}

func (m *memWriteSeeker) Write(p []byte) (int, error) {
	if need := m.pos + len(p); need > len(m.buf) {
		m.buf = append(m.buf, make([]byte, need-len(m.buf))...)
	}
	copy(m.buf[m.pos:], p)
	m.pos += len(p)
	return len(p), nil
}

func (m *memWriteSeeker) Seek(off int64, whence int) (int64, error) {
	var p int64
	switch whence {
	case io.SeekStart:
		p = off
	case io.SeekCurrent:
		p = int64(m.pos) + off
	case io.SeekEnd:
		p = int64(len(m.buf)) + off
	}
	if p < 0 {
		return 0, errors.New("negative position")
	}
	m.pos = int(p)
	return p, nil
}

// TestRoundTripSoxFiles runs the fuzzers' round trip on the sox files.
func TestRoundTripSoxFiles(t *testing.T) {
	for _, name := range []string{"sine1k_s16.flac", "sine1k_s24.flac"} {
		a, err := decodeFLAC(name, readTestdata(t, name), maxSamples) // sox-generated, see testdata/README.md
		if err != nil {
			t.Fatal(err)
		}
		if !roundTripFLAC(t, a) {
			t.Errorf("%s: round trip skipped", name)
		}
	}
	for _, name := range []string{"sine1k_u8.wav", "sine1k_s16.wav", "sine_stereo_s16.wav"} {
		a, err := decodeWAV(name, readTestdata(t, name), maxSamples) // sox-generated, see testdata/README.md
		if err != nil {
			t.Fatal(err)
		}
		if !roundTripWAV(t, a) {
			t.Errorf("%s: round trip skipped", name)
		}
	}
	// Plain (not EXTENSIBLE) 24- and 32-bit PCM from the table.
	for _, c := range wavFormatCases() {
		a, err := decodeWAV(c.name, c.spec.bytes(), maxSamples)
		if err != nil {
			t.Fatal(err)
		}
		roundTripWAV(t, a)
	}
}
