package dsp

import (
	"bytes"
	"encoding/binary"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// wavSpec builds RIFF/WAVE files for tests. Zero fields take defaults:
// PCM, mono, 48 kHz, 16 bits, block align from channels × bits.
type wavSpec struct {
	tag        uint16
	channels   int
	rate       int
	bits       int
	blockAlign int
	extensible bool
	validBits  int
	subFormat  []byte // 16-byte GUID; default from tag
	fmtSize    int    // override the fmt chunk's size field (0 = true size)
	before     []byte // raw chunks between fmt and data
	noFmt      bool
	noData     bool
	dataSize   int64 // -1 = true size
	data       []byte
	after      []byte // raw bytes after the data chunk (pad included by the caller)
}

func (s wavSpec) bytes() []byte {
	le := binary.LittleEndian
	if s.tag == 0 {
		s.tag = wavFormatPCM
	}
	if s.channels == 0 {
		s.channels = 1
	}
	if s.rate == 0 {
		s.rate = 48000
	}
	if s.bits == 0 {
		s.bits = 16
	}
	if s.blockAlign == 0 {
		s.blockAlign = s.channels * s.bits / 8
	}
	var b bytes.Buffer
	b.WriteString("RIFF\x00\x00\x00\x00WAVE")
	if !s.noFmt {
		var f bytes.Buffer
		tag := s.tag
		if s.extensible {
			tag = wavFormatExtensible
		}
		for _, v := range []any{tag, uint16(s.channels), uint32(s.rate), uint32(s.rate * s.blockAlign), uint16(s.blockAlign), uint16(s.bits)} {
			_ = binary.Write(&f, le, v)
		}
		if s.extensible {
			vb := s.validBits
			if vb == 0 {
				vb = s.bits
			}
			_ = binary.Write(&f, le, uint16(22))
			_ = binary.Write(&f, le, uint16(vb))
			_ = binary.Write(&f, le, uint32(0))
			g := s.subFormat
			if g == nil {
				g = append([]byte{byte(s.tag), byte(s.tag >> 8)}, ksDataFormatTail[:]...)
			}
			f.Write(g)
		}
		size := f.Len()
		if s.fmtSize != 0 {
			size = s.fmtSize
		}
		b.WriteString("fmt ")
		_ = binary.Write(&b, le, uint32(size))
		b.Write(f.Bytes())
	}
	b.Write(s.before)
	if !s.noData {
		b.WriteString("data")
		size := uint32(len(s.data))
		if s.dataSize >= 0 {
			size = uint32(s.dataSize)
		}
		_ = binary.Write(&b, le, size)
		b.Write(s.data)
	}
	b.Write(s.after)
	out := b.Bytes()
	le.PutUint32(out[4:], uint32(len(out)-8))
	return out
}

// chunk returns a raw chunk with an optional pad byte.
func chunk(id string, body []byte, pad bool) []byte {
	b := append([]byte(id), 0, 0, 0, 0)
	binary.LittleEndian.PutUint32(b[4:], uint32(len(body)))
	b = append(b, body...)
	if pad && len(body)%2 == 1 {
		b = append(b, 0)
	}
	return b
}

func le16(v ...int16) []byte {
	b := make([]byte, 2*len(v))
	for i, x := range v {
		binary.LittleEndian.PutUint16(b[2*i:], uint16(x))
	}
	return b
}

func le32f(v ...float32) []byte {
	b := make([]byte, 4*len(v))
	for i, x := range v {
		binary.LittleEndian.PutUint32(b[4*i:], math.Float32bits(x))
	}
	return b
}

func le64f(v ...float64) []byte {
	b := make([]byte, 8*len(v))
	for i, x := range v {
		binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(x))
	}
	return b
}

// TestDecodeWAVFormats decodes hand-built files in every coding; the
// expected values are the codes scaled by 2^-(bits-1) (common practice,
// the convention of libsndfile and sox).
func TestDecodeWAVFormats(t *testing.T) {
	tests := wavFormatCases()
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			a, err := decodeWAV(tt.name, tt.spec.bytes(), maxSamples)
			if err != nil {
				t.Fatalf("got error %v", err)
			}
			if a.Container != "WAV" || a.Codec != tt.codec || a.Bits != tt.bits {
				t.Errorf("got %s/%s/%d bits, want WAV/%s/%d", a.Container, a.Codec, a.Bits, tt.codec, tt.bits)
			}
			if a.NonFinite != tt.nonFinite {
				t.Errorf("NonFinite: got %d, want %d", a.NonFinite, tt.nonFinite)
			}
			if len(a.Channels) != len(tt.want) {
				t.Fatalf("got %d channels, want %d", len(a.Channels), len(tt.want))
			}
			for c := range tt.want {
				if len(a.Channels[c]) != len(tt.want[c]) {
					t.Fatalf("channel %d: got %d samples %v, want %v", c, len(a.Channels[c]), a.Channels[c], tt.want[c])
				}
				for i, w := range tt.want[c] {
					if a.Channels[c][i] != w {
						t.Errorf("channel %d sample %d: got %v, want %v", c, i, a.Channels[c][i], w)
					}
				}
			}
			if len(a.Warnings) != 0 {
				t.Errorf("unexpected warnings %q", a.Warnings)
			}
		})
	}
}

// TestDecodeWAVWarnings covers recoverable faults: the samples that are
// there are decoded and the fault is reported in Warnings.
func TestDecodeWAVWarnings(t *testing.T) {
	tests := []struct {
		name   string
		spec   wavSpec
		frames int
		warn   string
	}{
		{"data longer than file", wavSpec{dataSize: 1000, data: le16(1, 2, 3)}, 3, "truncated"},
		{"partial last frame", wavSpec{channels: 2, dataSize: -1, data: append(le16(1, 2, 3), 9)}, 1, "partial frame"},
		{"LIST after data claims 4 GB", wavSpec{dataSize: -1, data: le16(1, 2), after: []byte("LIST\xff\xff\xff\xffINFO")}, 2, "ignored"},
		{"garbage after data", wavSpec{dataSize: -1, data: le16(1, 2), after: []byte{1, 2, 3, 4, 5, 6, 7, 8, 9}}, 2, "ignored"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			a, err := decodeWAV(tt.name, tt.spec.bytes(), maxSamples)
			if err != nil {
				t.Fatalf("got error %v", err)
			}
			if a.Frames() != tt.frames {
				t.Errorf("got %d frames, want %d", a.Frames(), tt.frames)
			}
			if len(a.Warnings) != 1 || !strings.Contains(a.Warnings[0], tt.warn) {
				t.Errorf("got warnings %q, want one containing %q", a.Warnings, tt.warn)
			}
			t.Logf("warning: %s", a.Warnings)
		})
	}
}

// TestDecodeBadInput: each fault gives one line naming the file and the
// fault, of the stated type, and no panic.
func TestDecodeBadInput(t *testing.T) {
	tests := badInputCases()
	d := decoder{limit: maxSamples} // as if ffmpeg were not installed
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			name := "in/" + strings.ReplaceAll(tt.name, " ", "_") + ".wav"
			a, err := d.decode(name, tt.data, "")
			if err == nil {
				t.Fatalf("got no error and %d frames, want an error", a.Frames())
			}
			msg := err.Error()
			t.Logf("%s", msg)
			if !strings.HasPrefix(msg, name+": ") || strings.Contains(msg, "\n") {
				t.Errorf("got %q, want one line starting with the file name", msg)
			}
			if !strings.Contains(msg, tt.want) {
				t.Errorf("got %q, want it to contain %q", msg, tt.want)
			}
			var fe *FormatError
			var ue *UnsupportedError
			if tt.unsupported && !errors.As(err, &ue) {
				t.Errorf("got %T, want *UnsupportedError", err)
			}
			if !tt.unsupported && !errors.As(err, &fe) {
				t.Errorf("got %T, want *FormatError", err)
			}
		})
	}
}

// bytesWith builds the file and lets the caller patch it.
func (s wavSpec) bytesWith(patch func([]byte)) []byte {
	b := s.bytes()
	patch(b)
	return b
}

func TestDecodeFilePaths(t *testing.T) {
	dir := t.TempDir()
	tests := []struct {
		name, path, want string
	}{
		{"directory", dir, "is a directory"},
		{"missing", filepath.Join(dir, "nope.wav"), "no such file"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := DecodeFile(tt.path)
			if err == nil || !strings.HasPrefix(err.Error(), tt.path+": ") || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("got %v, want %q: …%s…", err, tt.path, tt.want)
			}
			t.Logf("%v", err)
		})
	}
	p := filepath.Join(dir, "empty.wav")
	if err := os.WriteFile(p, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := DecodeFile(p); err == nil || err.Error() != p+": empty file" {
		t.Errorf("got %v, want %q", err, p+": empty file")
	}
}

// TestDecodeWAVNoAllocationFromHeader: a 1 kB file whose chunks claim
// gigabytes must cost no more than a few times its own size.
func TestDecodeWAVNoAllocationFromHeader(t *testing.T) {
	cases := map[string][]byte{
		"LIST 4 GB":  wavSpec{dataSize: -1, data: le16(1, 2), before: append([]byte("LIST\xff\xff\xff\xffINFO"), make([]byte, 1000)...)}.bytes(),
		"data 4 GB":  wavSpec{dataSize: 0xFFFFFFFE, data: make([]byte, 1000)}.bytes(),
		"fmt 4 GB":   wavSpec{fmtSize: 0xFFFFFFF0, data: make([]byte, 1000), dataSize: -1}.bytes(),
		"riff 4 GB":  wavSpec{data: make([]byte, 1000), dataSize: -1}.bytesWith(func(b []byte) { copy(b[4:], "\xff\xff\xff\xff") }),
		"huge frame": wavSpec{channels: 65535, bits: 8, blockAlign: 65535, data: make([]byte, 1000), dataSize: -1}.bytes(),
	}
	for name, data := range cases {
		allocs := testing.AllocsPerRun(5, func() { _, _ = decodeWAV(name, data, maxSamples) })
		// Bytes are what matter; AllocsPerRun counts objects, so measure
		// with a small limit instead: a claim is never used as a size.
		if allocs > 20 {
			t.Errorf("%s: %v allocations per decode", name, allocs)
		}
		a, err := decodeWAV(name, data, maxSamples)
		if err == nil && a.Frames()*len(a.Channels) > len(data) {
			t.Errorf("%s: %d samples from %d bytes", name, a.Frames()*len(a.Channels), len(data))
		}
		t.Logf("%s: err=%v, %v allocs", name, err, allocs)
	}
}

// badInputCase is one row of TestDecodeBadInput, reused as a fuzz seed.
type badInputCase struct {
	name        string
	data        []byte
	unsupported bool   // want *UnsupportedError (else *FormatError)
	want        string // in the message
}

func badInputCases() []badInputCase {
	pcm := le16(1, 2, 3, 4)
	huge := wavSpec{dataSize: -1, data: pcm, before: append([]byte("LIST\xff\xff\xff\xffINFO"), make([]byte, 1000)...)}
	return []badInputCase{
		{"empty file", nil, false, "empty file"},
		{"truncated RIFF header", []byte("RIFF\x10\x00"), false, "truncated WAV header"},
		{"header only", []byte("RIFF\x04\x00\x00\x00WAVE"), false, "no fmt chunk"},
		{"truncated fmt chunk", wavSpec{data: pcm, dataSize: -1}.bytes()[:30], false, "\"fmt \" chunk"},
		{"no data chunk", wavSpec{noData: true}.bytes(), false, "no data chunk"},
		{"no fmt chunk", wavSpec{noFmt: true, data: pcm, dataSize: -1}.bytes(), false, "no fmt chunk"},
		{"zero channels", wavSpec{channels: 0, blockAlign: 2, data: pcm, dataSize: -1}.bytesWith(func(b []byte) { b[22] = 0 }), false, "zero channels"},
		{"zero sample rate", wavSpec{rate: 0, data: pcm, dataSize: -1}.bytesWith(func(b []byte) { copy(b[24:28], []byte{0, 0, 0, 0}) }), false, "sample rate 0"},
		{"block align mismatch", wavSpec{blockAlign: 3, data: pcm, dataSize: -1}.bytes(), false, "block align 3"},
		{"text renamed .wav", []byte("hello, this is a text file\nnot audio\n"), false, "text file"},
		{"LIST claims 4 GB in a 1 kB file", huge.bytes(), false, "claims 4294967295 bytes"},
		{"fmt claims 1 GB", wavSpec{fmtSize: 1 << 30, data: pcm, dataSize: -1}.bytes(), false, "claims 1073741824 bytes"},
		{"bad chunk ID", append([]byte("RIFF\x00\x00\x00\x00WAVE"), 0, 1, 2, 3, 4, 0, 0, 0), false, "no RIFF chunk ID"},
		{"fmt too short", wavSpec{fmtSize: 14, data: pcm, dataSize: -1}.bytesWith(func(b []byte) {}), false, ""},
		{"extensible too short", wavSpec{extensible: true, fmtSize: 18, data: pcm, dataSize: -1}.bytes(), false, ""},
		{"valid bits above container", wavSpec{extensible: true, bits: 16, validBits: 20, data: pcm, dataSize: -1}.bytes(), false, "20 valid bits"},
		{"sample rate 4 kHz", wavSpec{rate: 4000, data: pcm, dataSize: -1}.bytes(), true, "4000 Hz outside"},
		{"sample rate 384 kHz", wavSpec{rate: 384000, data: pcm, dataSize: -1}.bytes(), true, "384000 Hz outside"},
		{"12-bit PCM in 12 bits", wavSpec{extensible: true, bits: 12, blockAlign: 2, data: pcm, dataSize: -1}.bytes(), true, "12-bit"},
		{"16-bit float", wavSpec{tag: wavFormatIEEEFloat, bits: 16, data: pcm, dataSize: -1}.bytes(), true, "16-bit IEEE float"},
		{"µ-law", wavSpec{tag: 7, bits: 8, data: pcm, dataSize: -1}.bytes(), true, "µ-law"},
		{"unknown GUID", wavSpec{extensible: true, subFormat: bytes.Repeat([]byte{7}, 16), data: pcm, dataSize: -1}.bytes(), true, "sub-format GUID"},
		{"RIFF but AVI", []byte("RIFF\x04\x00\x00\x00AVI LIST"), true, "not WAVE"},
		{"random bytes", []byte{0x12, 0x00, 0x34, 0x01, 0x99, 0xFE}, true, "not a recognised audio file"},
		{"Ogg without ffmpeg", []byte("OggS\x00\x02\x00\x00\x00\x00"), true, "Ogg audio is not read directly"},
		{"zero-length data", wavSpec{data: nil, dataSize: -1}.bytes(), false, "no samples"},
		{"FLAC signature only", []byte("fLaC"), false, "FLAC"},
		{"MP3 sync then garbage", append([]byte{0xFF, 0xFB, 0x90, 0x64}, make([]byte, 300)...), false, "MP3"},
	}
}

// wavFormatCase is one row of TestDecodeWAVFormats, reused as a fuzz seed.
type wavFormatCase struct {
	name      string
	spec      wavSpec
	codec     string
	bits      int
	want      [][]float32
	nonFinite int
}

func wavFormatCases() []wavFormatCase {
	s24 := []byte{0x00, 0x00, 0x80, 0xFF, 0xFF, 0x7F, 0x00, 0x00, 0x40} // −2^23, 2^23−1, 2^22
	s32 := make([]byte, 12)
	binary.LittleEndian.PutUint32(s32[0:], 0x80000000)
	binary.LittleEndian.PutUint32(s32[4:], 0x40000000)
	binary.LittleEndian.PutUint32(s32[8:], 0xC0000000)
	return []wavFormatCase{
		{"u8", wavSpec{bits: 8, data: []byte{0, 128, 255, 192}, dataSize: -1}, "PCM", 8,
			[][]float32{{-1, 0, 127.0 / 128, 0.5}}, 0},
		{"s16", wavSpec{data: le16(-32768, 0, 32767, 16384), dataSize: -1}, "PCM", 16,
			[][]float32{{-1, 0, 32767.0 / 32768, 0.5}}, 0},
		{"s24", wavSpec{bits: 24, data: s24, dataSize: -1}, "PCM", 24,
			[][]float32{{-1, float32(8388607.0 / 8388608), 0.5}}, 0},
		{"s32", wavSpec{bits: 32, data: s32, dataSize: -1}, "PCM", 32,
			[][]float32{{-1, 0.5, -0.5}}, 0},
		{"f32 with NaN and Inf", wavSpec{tag: wavFormatIEEEFloat, bits: 32, dataSize: -1,
			data: le32f(0.15, -0.5, float32(math.NaN()), float32(math.Inf(1)), 1.5)}, "IEEE float", 32,
			[][]float32{{0.15, -0.5, 0, 0, 1.5}}, 2},
		{"f64", wavSpec{tag: wavFormatIEEEFloat, bits: 64, dataSize: -1,
			data: le64f(0.15, -0.25, math.Inf(-1), 1e300)}, "IEEE float", 64,
			[][]float32{{0.15, -0.25, 0, 0}}, 2},
		{"stereo s16 deinterleaved", wavSpec{channels: 2, data: le16(1, -1, 2, -2, 3, -3), dataSize: -1}, "PCM", 16,
			[][]float32{{1.0 / 32768, 2.0 / 32768, 3.0 / 32768}, {-1.0 / 32768, -2.0 / 32768, -3.0 / 32768}}, 0},
		{"extensible PCM 24 in 32 valid bits", wavSpec{extensible: true, bits: 32, validBits: 24, data: s32, dataSize: -1}, "PCM (extensible)", 24,
			[][]float32{{-1, 0.5, -0.5}}, 0},
		{"extensible float 3 channels", wavSpec{extensible: true, tag: wavFormatIEEEFloat, channels: 3, bits: 32,
			data: le32f(0.1, 0.2, 0.3, -0.1, -0.2, -0.3), dataSize: -1}, "IEEE float (extensible)", 32,
			[][]float32{{0.1, -0.1}, {0.2, -0.2}, {0.3, -0.3}}, 0},
		{"LIST fact bext cue junk before data", wavSpec{dataSize: -1, data: le16(100, 200),
			before: bytes.Join([][]byte{chunk("LIST", []byte("INFOISFT\x03\x00\x00\x00ab\x00"), true), chunk("fact", []byte{2, 0, 0, 0}, true),
				chunk("bext", make([]byte, 11), true), chunk("cue ", make([]byte, 4), true), chunk("junk", make([]byte, 3), true)}, nil)},
			"PCM", 16, [][]float32{{100.0 / 32768, 200.0 / 32768}}, 0},
		{"odd chunk without pad byte", wavSpec{dataSize: -1, data: le16(7), before: chunk("LIST", []byte("INFOx"), false)},
			"PCM", 16, [][]float32{{7.0 / 32768}}, 0},
		{"odd chunk with pad byte", wavSpec{dataSize: -1, data: le16(7), before: chunk("junk", []byte("abc"), true)},
			"PCM", 16, [][]float32{{7.0 / 32768}}, 0},
		{"odd chunk with non-zero pad byte", wavSpec{dataSize: -1, data: le16(7), before: append(chunk("junk", []byte("abc"), false), 'x')},
			"PCM", 16, [][]float32{{7.0 / 32768}}, 0},
		{"odd unknown chunk without pad byte before an unknown chunk", wavSpec{dataSize: -1, data: le16(7),
			before: append(chunk("abcd", []byte("abc"), false), chunk("wxyz", []byte("ab"), false)...)},
			"PCM", 16, [][]float32{{7.0 / 32768}}, 0},
		{"odd u8 data with pad then LIST", wavSpec{bits: 8, dataSize: -1, data: []byte{128, 192, 64}, after: append([]byte{0}, chunk("LIST", []byte("INFO"), true)...)},
			"PCM", 8, [][]float32{{0, 0.5, -0.5}}, 0},
		{"odd u8 data without pad then LIST", wavSpec{bits: 8, dataSize: -1, data: []byte{128, 192, 64}, after: chunk("LIST", []byte("INFO"), true)},
			"PCM", 8, [][]float32{{0, 0.5, -0.5}}, 0},
		{"chunks after data", wavSpec{dataSize: -1, data: le16(5, 6), after: chunk("LIST", []byte("INFOabcd"), true)},
			"PCM", 16, [][]float32{{5.0 / 32768, 6.0 / 32768}}, 0},
		{"data size 0xFFFFFFFF = to end", wavSpec{dataSize: 0xFFFFFFFF, data: le16(1, 2, 3)},
			"PCM", 16, [][]float32{{1.0 / 32768, 2.0 / 32768, 3.0 / 32768}}, 0},
		{"data size 0 = to end", wavSpec{dataSize: 0, data: le16(1, 2, 3)},
			"PCM", 16, [][]float32{{1.0 / 32768, 2.0 / 32768, 3.0 / 32768}}, 0},
		{"8 kHz", wavSpec{rate: 8000, dataSize: -1, data: le16(1)}, "PCM", 16, [][]float32{{1.0 / 32768}}, 0},
		{"192 kHz", wavSpec{rate: 192000, dataSize: -1, data: le16(1)}, "PCM", 16, [][]float32{{1.0 / 32768}}, 0},
		{"9 channels", wavSpec{channels: 9, dataSize: -1, data: le16(1, 2, 3, 4, 5, 6, 7, 8, 9)}, "PCM", 16,
			[][]float32{{1. / 32768}, {2. / 32768}, {3. / 32768}, {4. / 32768}, {5. / 32768}, {6. / 32768}, {7. / 32768}, {8. / 32768}, {9. / 32768}}, 0},
	}
}
