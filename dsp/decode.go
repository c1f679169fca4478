package dsp

import (
	"bytes"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"os/exec"
	"unicode/utf8"
)

// maxSamples bounds the decoded samples over all channels (1 GiB of
// float32): about 46 minutes of 48 kHz stereo. Compressed formats can
// expand far beyond their file size, so the bound is checked while decoding.
const maxSamples = 1 << 28

// maxFileBytes bounds the size of a file read into memory (4 GiB, the
// largest a RIFF file can be).
const maxFileBytes = 1 << 32

// DecodeFile reads the audio file at path once and decodes every channel.
// The format is chosen from the file's first bytes, not its name: RIFF/WAVE,
// FLAC and MP3 are read directly; anything else goes through ffmpeg when it
// is on PATH. Errors are *FormatError or *UnsupportedError for bad or
// unsupported content, and name the file.
func DecodeFile(path string) (*Audio, error) {
	return newDecoder().decodeFile(path)
}

// Decode decodes a whole audio file held in memory, as DecodeFile does;
// name is used in errors only.
func Decode(name string, data []byte) (*Audio, error) {
	return newDecoder().decode(name, data, "")
}

// decoder holds what decoding depends on outside the data, so that tests
// can decode as if ffmpeg were absent and fuzzing can use a small limit.
type decoder struct {
	ffmpeg  string // path of ffmpeg, "" when absent
	ffprobe string // path of ffprobe, "" when absent
	limit   int    // maximum samples over all channels
	// lookPath asks for ffmpeg and ffprobe to be searched on PATH when
	// first needed (not for the formats read directly).
	lookPath bool
}

func newDecoder() decoder {
	return decoder{limit: maxSamples, lookPath: true}
}

// withTools returns d with the ffmpeg and ffprobe paths filled in from
// PATH if d asks for it.
func (d decoder) withTools() decoder {
	if d.lookPath {
		d.ffmpeg, _ = exec.LookPath("ffmpeg")
		d.ffprobe, _ = exec.LookPath("ffprobe")
		d.lookPath = false
	}
	return d
}

func (d decoder) decodeFile(path string) (*Audio, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return nil, pathError(path, err)
	}
	if fi.IsDir() {
		return nil, fmt.Errorf("%s: is a directory, not an audio file", path)
	}
	if !fi.Mode().IsRegular() && fi.Mode()&fs.ModeNamedPipe == 0 {
		return nil, fmt.Errorf("%s: not a regular file", path)
	}
	if fi.Size() > maxFileBytes {
		return nil, &UnsupportedError{File: path, Msg: fmt.Sprintf("%d bytes is more than the %d whirlfit reads; cut the recording into parts", fi.Size(), int64(maxFileBytes))}
	}
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, pathError(path, err)
	}
	return d.decode(path, data, path)
}

// pathError turns an *fs.PathError into "FILE: fault".
func pathError(path string, err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return fmt.Errorf("%s: %w", path, pe.Err)
	}
	return fmt.Errorf("%s: %w", path, err)
}

// decode dispatches on content. path, when not empty, is the file data came
// from, handed to ffmpeg so that it can seek.
func (d decoder) decode(name string, data []byte, path string) (a *Audio, err error) {
	if len(data) == 0 {
		return nil, &FormatError{File: name, Msg: "empty file"}
	}
	kind, off := sniff(data)
	switch kind {
	case kindWAV:
		a, err = decodeWAV(name, data, d.limit)
		var ue *UnsupportedError
		if errors.As(err, &ue) && ue.convertible {
			d = d.withTools()
		}
		if errors.As(err, &ue) && ue.convertible {
			if d.ffmpeg != "" {
				a, err = d.decodeFFmpeg(name, data, path)
			} else {
				err = &UnsupportedError{File: name, Msg: ue.Msg + " and ffmpeg is not on PATH; convert it to 16-bit PCM, for example with sox IN -b 16 -e signed-integer OUT.wav"}
			}
		}
	case kindFLAC:
		a, err = decodeFLAC(name, data[off:], d.limit)
	case kindMP3:
		a, err = decodeMP3(name, data[off:], d.limit)
	case kindText:
		return nil, &FormatError{File: name, Msg: fmt.Sprintf("a text file, not audio (it starts %q)", textStart(data))}
	default:
		d = d.withTools()
		if d.ffmpeg == "" {
			what := kind.String()
			if what == "" {
				what = fmt.Sprintf("not a recognised audio file (it starts with bytes % x)", data[:min(len(data), 8)])
			} else {
				what += " is not read directly"
			}
			return nil, &UnsupportedError{File: name, Msg: what + " and ffmpeg is not on PATH; convert it to WAV or FLAC, for example with ffmpeg -i IN OUT.wav"}
		}
		a, err = d.decodeFFmpeg(name, data, path)
	}
	if err != nil {
		return nil, err
	}
	if a.SampleRate < MinSampleRate || a.SampleRate > MaxSampleRate {
		return nil, &UnsupportedError{File: name, Msg: fmt.Sprintf("sample rate %d Hz outside the %d–%d Hz whirlfit reads; resample it, for example with sox IN -r 48000 OUT.wav", a.SampleRate, MinSampleRate, MaxSampleRate)}
	}
	if len(a.Channels) == 0 || a.Frames() == 0 {
		return nil, &FormatError{File: name, Msg: fmt.Sprintf("no samples: the %s file holds no audio", a.Container)}
	}
	return a, nil
}

// fileKind is what a file's first bytes announce.
type fileKind int

const (
	kindUnknown fileKind = iota
	kindWAV
	kindFLAC
	kindMP3
	kindText
	kindOgg
	kindMP4
	kindAIFF
	kindAMR
	kindRF64
	kindRIFX
	kindWave64
	kindMatroska
	kindCAF
	kindRIFFOther
)

// String names kinds that are not read directly, for messages.
func (k fileKind) String() string {
	switch k {
	case kindOgg:
		return "Ogg audio"
	case kindMP4:
		return "MP4/M4A audio"
	case kindAIFF:
		return "AIFF audio"
	case kindAMR:
		return "AMR audio"
	case kindRF64:
		return "RF64 (64-bit WAV)"
	case kindRIFX:
		return "big-endian WAV (RIFX)"
	case kindWave64:
		return "Wave64"
	case kindMatroska:
		return "Matroska/WebM"
	case kindCAF:
		return "Core Audio Format"
	case kindRIFFOther:
		return "a RIFF file that is not WAVE"
	}
	return ""
}

// sniff classifies data by its first bytes. For FLAC and MP3 it also returns
// the offset past any ID3v2 tag.
func sniff(data []byte) (fileKind, int) {
	has := func(at int, s string) bool {
		return len(data) >= at+len(s) && string(data[at:at+len(s)]) == s
	}
	switch {
	case has(0, "RIFF") && has(8, "WAVE"):
		return kindWAV, 0
	case has(0, "RIFF"):
		// A RIFF header cut before its form type is still meant as WAV;
		// decodeWAV reports it as truncated.
		if len(data) < 12 {
			return kindWAV, 0
		}
		return kindRIFFOther, 0
	case has(0, "fLaC"):
		return kindFLAC, 0
	case has(0, "OggS"):
		return kindOgg, 0
	case has(4, "ftyp"):
		return kindMP4, 0
	case has(0, "FORM") && (has(8, "AIFF") || has(8, "AIFC")):
		return kindAIFF, 0
	case has(0, "#!AMR"):
		return kindAMR, 0
	case has(0, "RF64"), has(0, "BW64"):
		return kindRF64, 0
	case has(0, "RIFX"):
		return kindRIFX, 0
	case has(0, "riff\x2e\x91\xcf\x11"):
		return kindWave64, 0
	case has(0, "\x1a\x45\xdf\xa3"):
		return kindMatroska, 0
	case has(0, "caff"):
		return kindCAF, 0
	}
	if off, ok := id3v2Size(data); ok {
		rest := data[min(off, len(data)):]
		switch {
		case len(rest) >= 4 && string(rest[:4]) == "fLaC":
			return kindFLAC, off
		case mp3Sync(rest):
			return kindMP3, off
		}
		return kindUnknown, 0
	}
	if mp3Sync(data) {
		return kindMP3, 0
	}
	if isText(data) {
		return kindText, 0
	}
	return kindUnknown, 0
}

// id3v2Size returns the length of an ID3v2 tag at the start of data
// (header, body and footer), per the ID3v2.4 structure document.
func id3v2Size(data []byte) (int, bool) {
	if len(data) < 10 || string(data[:3]) != "ID3" {
		return 0, false
	}
	for _, c := range data[6:10] {
		if c&0x80 != 0 {
			return 0, false
		}
	}
	n := 10 + (int(data[6])<<21 | int(data[7])<<14 | int(data[8])<<7 | int(data[9]))
	if data[5]&0x10 != 0 { // footer present
		n += 10
	}
	return n, true
}

// mp3Sync reports whether data starts with an MPEG audio Layer III frame
// header whose successor, when the data is long enough to hold one, is a
// Layer III header too.
func mp3Sync(data []byte) bool {
	h, ok := parseMP3Header(data)
	if !ok {
		return false
	}
	if len(data) >= h.frameLen+4 {
		_, ok = parseMP3Header(data[h.frameLen:])
	}
	return ok
}

// isText reports whether the first bytes of data look like text: valid
// UTF-8 without control characters other than tab, newline, carriage return
// and form feed.
func isText(data []byte) bool {
	p := data[:min(len(data), 512)]
	for _, c := range p {
		if c < 0x20 && c != '\t' && c != '\n' && c != '\r' && c != '\f' || c == 0x7F {
			return false
		}
	}
	// The cut may split a multi-byte character.
	for i := 0; i < utf8.UTFMax && len(p) > 0 && !utf8.Valid(p); i++ {
		p = p[:len(p)-1]
	}
	return len(p) > 0 && utf8.Valid(p)
}

// textStart returns the first characters of a text file, for messages.
func textStart(data []byte) string {
	p := data[:min(len(data), 24)]
	for len(p) > 0 && !utf8.Valid(p) {
		p = p[:len(p)-1]
	}
	return string(bytes.TrimSpace(p))
}
