package dsp

// WAV (RIFF/WAVE) reading.
//
// whirlfit reads RIFF itself instead of through github.com/go-audio/wav
// v1.1.0. Decoding synthetic files with that version showed that it: decodes
// IEEE float samples as integers and returns no error (0.15 came back as
// 1041865114), fails on 64-bit float, ignores the EXTENSIBLE SubFormat GUID,
// returns no error for a data chunk cut short, returns zero samples and no
// error for a data size of 0 or 0xFFFFFFFF, reports a non-RIFF header as "PCM
// chunk not found", fails on an odd-sized chunk written without its pad byte,
// turns the pad byte of an odd 8-bit data chunk into an extra sample,
// allocates whatever a LIST chunk claims (1.8 GB allocated for a 1 kB file
// whose LIST claimed 256 MiB), and makes one Read call per sample (60 s of
// 16-bit mono: 2.6 s from an *os.File, 51 ms from memory, 4.5 ms for a bulk
// loop over the same bytes). Its encoder is sound and the tests use it to
// write files for round trips.
//
// References: Microsoft "Multimedia Programming Interface and Data
// Specifications 1.0" (RIFF, WAVE, pad bytes) and the WAVEFORMATEXTENSIBLE
// documentation (SubFormat GUIDs KSDATAFORMAT_SUBTYPE_PCM and _IEEE_FLOAT).

import (
	"encoding/binary"
	"fmt"
	"math"
)

// WAVE format tags (wFormatTag).
const (
	wavFormatPCM        = 0x0001
	wavFormatIEEEFloat  = 0x0003
	wavFormatExtensible = 0xFFFE
)

// Sample rates accepted from any container, in Hz.
const (
	MinSampleRate = 8000
	MaxSampleRate = 192000
)

// ksDataFormatTail is bytes 2..15 of the KSDATAFORMAT_SUBTYPE_* GUIDs
// {0000xxxx-0000-0010-8000-00AA00389B71}; the first two bytes hold the format
// tag (1 = PCM, 3 = IEEE float).
var ksDataFormatTail = [14]byte{0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71}

// wavFormatNames names format tags met in the field that whirlfit does not
// decode itself (ffmpeg, when present, reads them).
var wavFormatNames = map[uint16]string{
	0x0002: "Microsoft ADPCM",
	0x0006: "A-law",
	0x0007: "µ-law",
	0x0011: "IMA ADPCM",
	0x0031: "GSM 6.10",
	0x0050: "MPEG audio",
	0x0055: "MPEG layer 3",
}

// wavFormat is what the fmt chunk says, reduced to what decoding needs.
type wavFormat struct {
	tag        uint16 // wavFormatPCM or wavFormatIEEEFloat after EXTENSIBLE is resolved
	extensible bool
	channels   int
	rate       int
	blockAlign int
	container  int // bits per sample in the data (8, 16, 24, 32, 64)
	validBits  int // bits that carry signal (≤ container)
}

// codec names the sample coding for Audio.Codec.
func (f *wavFormat) codec() string {
	s := "PCM"
	if f.tag == wavFormatIEEEFloat {
		s = "IEEE float"
	}
	if f.extensible {
		s += " (extensible)"
	}
	return s
}

// decodeWAV decodes a whole RIFF/WAVE file held in b. name is used in errors;
// limit bounds the number of samples over all channels.
func decodeWAV(name string, b []byte, limit int) (*Audio, error) {
	ferr := func(off int, chunk, format string, args ...any) error {
		return &FormatError{File: name, Offset: int64(off), Chunk: chunk, Msg: fmt.Sprintf(format, args...)}
	}
	if len(b) < 12 {
		return nil, ferr(0, "", "truncated WAV header: %d bytes, a RIFF header needs 12", len(b))
	}
	if string(b[0:4]) != "RIFF" || string(b[8:12]) != "WAVE" {
		return nil, ferr(0, "", "not a WAV file: it starts with %q, not \"RIFF....WAVE\"", printable(b[:12]))
	}

	var (
		format   *wavFormat
		dataOff  = -1
		dataLen  int
		warnings []string
	)
	off := 12
	for off+8 <= len(b) {
		id := b[off : off+4]
		size := int64(binary.LittleEndian.Uint32(b[off+4:]))
		body := off + 8
		remain := int64(len(b) - body)
		if !isChunkID(id) {
			if format != nil && dataOff >= 0 {
				warnings = append(warnings, fmt.Sprintf("ignored %d bytes after the last chunk (no chunk ID at byte %d)", len(b)-off, off))
				break
			}
			return nil, ferr(off, "", "no RIFF chunk ID here (found %q): the file is damaged", printable(id))
		}
		sid := string(id)
		toEnd := false
		switch sid {
		case "fmt ":
			if format != nil {
				warnings = append(warnings, fmt.Sprintf("second fmt chunk at byte %d ignored", off))
				break
			}
			if size > remain {
				return nil, ferr(off, sid, "chunk claims %d bytes but only %d remain in the file", size, remain)
			}
			f, err := parseWAVFormat(name, b[body:body+int(size)], off)
			if err != nil {
				return nil, err
			}
			format = f
		case "data":
			if dataOff >= 0 {
				warnings = append(warnings, fmt.Sprintf("second data chunk at byte %d ignored", off))
				break
			}
			dataOff = body
			switch {
			case size == 0xFFFFFFFF || (size == 0 && !(remain >= 4 && isKnownChunkID(b[body:body+4]))):
				// Streaming writers leave 0 or 0xFFFFFFFF when they cannot
				// seek back: the samples run to the end of the file.
				dataLen = int(remain)
				toEnd = true
			case size > remain:
				dataLen = int(remain)
				toEnd = true
				warnings = append(warnings, fmt.Sprintf("truncated: the data chunk claims %d bytes but the file holds %d; decoded what is there (%.3g%%)", size, remain, 100*float64(remain)/float64(size)))
			default:
				dataLen = int(size)
			}
		default:
			// LIST, fact, bext, cue, junk, …: skipped.
		}
		if toEnd {
			break
		}
		if size > remain {
			if format != nil && dataOff >= 0 {
				warnings = append(warnings, fmt.Sprintf("%q chunk at byte %d claims %d bytes but only %d remain; ignored", sid, off, size, remain))
				break
			}
			return nil, ferr(off, sid, "chunk claims %d bytes but only %d remain in the file", size, remain)
		}
		next := body + int(size)
		if size&1 == 1 && next < len(b) {
			// RIFF pads odd chunks to even length, but some writers omit
			// the pad byte (and some write a non-zero one). Skip it unless
			// a chunk ID starts right here and no known one starts after
			// it.
			switch {
			case next+5 <= len(b) && (isKnownChunkID(b[next+1:next+5]) || string(b[next+1:next+5]) == "data"):
				next++
			case b[next] != 0 && next+4 <= len(b) && isChunkID(b[next:next+4]):
			default:
				next++
			}
		}
		off = next
	}

	if format == nil {
		return nil, ferr(off, "", "no fmt chunk: the file does not say how its samples are coded")
	}
	if dataOff < 0 {
		return nil, ferr(off, "", "no data chunk: the file holds no samples")
	}
	ba := format.blockAlign
	frames := dataLen / ba
	if rest := dataLen % ba; rest != 0 {
		warnings = append(warnings, fmt.Sprintf("the data chunk ends in a partial frame: %d of %d bytes dropped", rest, ba))
	}
	if frames > limit/format.channels {
		return nil, &UnsupportedError{File: name, Msg: fmt.Sprintf("too long: %d frames × %d channels exceeds the %d samples whirlfit holds in memory; cut the recording into parts", frames, format.channels, limit)}
	}

	a := &Audio{
		Container:  "WAV",
		Codec:      format.codec(),
		SampleRate: format.rate,
		Bits:       format.validBits,
		Channels:   makeChannels(format.channels, frames),
		Warnings:   warnings,
	}
	a.NonFinite = convertInterleaved(a.Channels, b[dataOff:dataOff+frames*ba], format)
	return a, nil
}

// parseWAVFormat reads a fmt chunk body; off is the chunk's offset in the
// file (for errors).
func parseWAVFormat(name string, p []byte, off int) (*wavFormat, error) {
	ferr := func(format string, args ...any) error {
		return &FormatError{File: name, Offset: int64(off), Chunk: "fmt ", Msg: fmt.Sprintf(format, args...)}
	}
	unsup := func(convertible bool, format string, args ...any) error {
		return &UnsupportedError{File: name, Msg: fmt.Sprintf(format, args...), convertible: convertible}
	}
	if len(p) < 16 {
		return nil, ferr("chunk too short: %d bytes, need 16", len(p))
	}
	le := binary.LittleEndian
	f := &wavFormat{
		tag:        le.Uint16(p[0:]),
		channels:   int(le.Uint16(p[2:])),
		rate:       int(le.Uint32(p[4:])),
		blockAlign: int(le.Uint16(p[12:])),
		container:  int(le.Uint16(p[14:])),
	}
	f.validBits = f.container
	if f.tag == wavFormatExtensible {
		if len(p) < 40 {
			return nil, ferr("WAVE_FORMAT_EXTENSIBLE chunk too short: %d bytes, need 40", len(p))
		}
		if cb := le.Uint16(p[16:]); cb < 22 {
			return nil, ferr("WAVE_FORMAT_EXTENSIBLE with cbSize %d, need 22", cb)
		}
		f.extensible = true
		if vb := int(le.Uint16(p[18:])); vb != 0 {
			f.validBits = vb
		}
		guid := p[24:40]
		if [14]byte(guid[2:]) != ksDataFormatTail {
			return nil, unsup(true, "WAVE_FORMAT_EXTENSIBLE with sub-format GUID %x, which is neither PCM nor IEEE float", guid)
		}
		f.tag = le.Uint16(guid[0:])
	}
	if f.channels == 0 {
		return nil, ferr("zero channels")
	}
	if f.rate == 0 {
		return nil, ferr("sample rate 0 Hz")
	}
	switch f.tag {
	case wavFormatPCM:
		if f.container%8 != 0 && !f.extensible {
			// Plain PCM with, say, 20 bits: the samples sit left-justified
			// in whole bytes.
			f.validBits = f.container
			f.container = (f.container + 7) / 8 * 8
		}
		switch f.container {
		case 8, 16, 24, 32:
		default:
			return nil, unsup(true, "%d-bit integer PCM (whirlfit reads 8, 16, 24 and 32 bits)", f.container)
		}
	case wavFormatIEEEFloat:
		if f.container != 32 && f.container != 64 {
			return nil, unsup(true, "%d-bit IEEE float (whirlfit reads 32 and 64 bits)", f.container)
		}
	default:
		codec := wavFormatNames[f.tag]
		if codec == "" {
			codec = fmt.Sprintf("format tag 0x%04X", f.tag)
		}
		return nil, unsup(true, "WAV with %s samples is not read directly", codec)
	}
	if f.validBits > f.container || f.validBits == 0 {
		return nil, ferr("%d valid bits in a %d-bit sample", f.validBits, f.container)
	}
	if want := f.channels * f.container / 8; f.blockAlign != want {
		return nil, ferr("block align %d does not match %d channel(s) × %d bits (= %d bytes)", f.blockAlign, f.channels, f.container, want)
	}
	if f.rate < MinSampleRate || f.rate > MaxSampleRate {
		return nil, unsup(false, "sample rate %d Hz outside the %d–%d Hz whirlfit reads; resample it, for example with sox IN -r 48000 OUT.wav", f.rate, MinSampleRate, MaxSampleRate)
	}
	return f, nil
}

// makeChannels returns n channels of frames samples each, sharing one
// allocation.
func makeChannels(n, frames int) [][]float32 {
	all := make([]float32, n*frames)
	ch := make([][]float32, n)
	for c := range ch {
		ch[c] = all[c*frames : (c+1)*frames : (c+1)*frames]
	}
	return ch
}

// convertInterleaved converts interleaved little-endian samples p into dst,
// one loop per coding, and returns the number of NaN or ±Inf samples it
// replaced by 0. Integers are scaled by 2^-(container bits − 1), so full
// negative scale maps to −1.
func convertInterleaved(dst [][]float32, p []byte, f *wavFormat) (nonFinite int) {
	nch := len(dst)
	if nch == 0 {
		return 0
	}
	frames := len(dst[0])
	le := binary.LittleEndian
	i := 0
	switch {
	case f.tag == wavFormatPCM && f.container == 8:
		const s = 1.0 / 128
		for n := 0; n < frames; n++ {
			for c := 0; c < nch; c++ {
				dst[c][n] = (float32(p[i]) - 128) * s
				i++
			}
		}
	case f.tag == wavFormatPCM && f.container == 16:
		const s = 1.0 / (1 << 15)
		for n := 0; n < frames; n++ {
			for c := 0; c < nch; c++ {
				dst[c][n] = float32(int16(le.Uint16(p[i:]))) * s
				i += 2
			}
		}
	case f.tag == wavFormatPCM && f.container == 24:
		const s = 1.0 / (1 << 23)
		for n := 0; n < frames; n++ {
			for c := 0; c < nch; c++ {
				v := int32(uint32(p[i])<<8|uint32(p[i+1])<<16|uint32(p[i+2])<<24) >> 8
				dst[c][n] = float32(v) * s
				i += 3
			}
		}
	case f.tag == wavFormatPCM && f.container == 32:
		const s = 1.0 / (1 << 31)
		for n := 0; n < frames; n++ {
			for c := 0; c < nch; c++ {
				dst[c][n] = float32(float64(int32(le.Uint32(p[i:]))) * s)
				i += 4
			}
		}
	case f.tag == wavFormatIEEEFloat && f.container == 32:
		for n := 0; n < frames; n++ {
			for c := 0; c < nch; c++ {
				v := math.Float32frombits(le.Uint32(p[i:]))
				if v-v != 0 { // NaN or ±Inf
					v = 0
					nonFinite++
				}
				dst[c][n] = v
				i += 4
			}
		}
	case f.tag == wavFormatIEEEFloat && f.container == 64:
		for n := 0; n < frames; n++ {
			for c := 0; c < nch; c++ {
				// A finite value beyond float32's range becomes ±Inf here
				// and is counted with the non-finite ones.
				v := float32(math.Float64frombits(le.Uint64(p[i:])))
				if v-v != 0 {
					v = 0
					nonFinite++
				}
				dst[c][n] = v
				i += 8
			}
		}
	default:
		panic(fmt.Sprintf("dsp: no conversion for format %d, %d bits", f.tag, f.container))
	}
	return nonFinite
}

// isChunkID reports whether id is four printable ASCII characters, as RIFF
// chunk IDs are.
func isChunkID(id []byte) bool {
	for _, c := range id {
		if c < 0x20 || c > 0x7E {
			return false
		}
	}
	return true
}

// isKnownChunkID reports whether id is a chunk commonly found after an empty
// data chunk, so that a data size of 0 followed by one is taken literally.
func isKnownChunkID(id []byte) bool {
	switch string(id) {
	case "LIST", "fact", "bext", "cue ", "junk", "JUNK", "id3 ", "ID3 ", "smpl", "inst", "PAD ", "fmt ":
		return true
	}
	return false
}

// printable returns b with bytes outside printable ASCII replaced by '.'.
func printable(b []byte) string {
	out := make([]byte, len(b))
	for i, c := range b {
		if c < 0x20 || c > 0x7E {
			c = '.'
		}
		out[i] = c
	}
	return string(out)
}
