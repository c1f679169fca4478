package dsp

import (
	"bytes"
	"fmt"
	"io"

	"github.com/mewkiz/flac"
)

// decodeFLAC decodes a FLAC stream (starting at its "fLaC" signature)
// through github.com/mewkiz/flac. Samples are scaled by 2^-(bits − 1).
// limit bounds the number of samples over all channels.
func decodeFLAC(name string, data []byte, limit int) (a *Audio, err error) {
	defer recoverDecoder(name, "FLAC", &err)
	s, err := flac.New(bytes.NewReader(data))
	if err != nil {
		return nil, &FormatError{File: name, Chunk: "STREAMINFO", Offset: 4, Msg: "bad FLAC header: " + err.Error()}
	}
	info := s.Info
	nch, bits, rate := int(info.NChannels), int(info.BitsPerSample), int(info.SampleRate)
	if nch < 1 || nch > 8 {
		return nil, &FormatError{File: name, Chunk: "STREAMINFO", Offset: 4, Msg: fmt.Sprintf("%d channels (FLAC allows 1 to 8)", nch)}
	}
	if bits < 4 || bits > 32 {
		return nil, &FormatError{File: name, Chunk: "STREAMINFO", Offset: 4, Msg: fmt.Sprintf("%d bits per sample (FLAC allows 4 to 32)", bits)}
	}
	if rate < MinSampleRate || rate > MaxSampleRate {
		return nil, &UnsupportedError{File: name, Msg: fmt.Sprintf("sample rate %d Hz outside the %d–%d Hz whirlfit reads; resample it, for example with sox IN -r 48000 OUT.wav", rate, MinSampleRate, MaxSampleRate)}
	}

	// Reserve what the header announces only up to the input size and the
	// sample limit: a header may lie, and real audio does not compress to
	// under a byte per frame.
	hint := min(info.NSamples, uint64(len(data)), uint64(limit/nch))
	chans := make([][]float32, nch)
	for c := range chans {
		chans[c] = make([]float32, 0, hint)
	}
	var warnings []string
	total := 0
	for n := 0; ; n++ {
		f, err := s.ParseNext()
		if err == io.EOF {
			break
		}
		if err != nil {
			if total == 0 {
				return nil, &FormatError{File: name, Msg: "FLAC frame 0: " + err.Error()}
			}
			warnings = append(warnings, fmt.Sprintf("truncated: FLAC frame %d cannot be decoded (%v); kept the %d samples before it", n, err, len(chans[0])))
			break
		}
		if len(f.Subframes) != nch {
			return nil, &FormatError{File: name, Msg: fmt.Sprintf("FLAC frame %d has %d channels, the stream %d", n, len(f.Subframes), nch)}
		}
		fb := int(f.BitsPerSample)
		if fb < 1 || fb > 32 {
			return nil, &FormatError{File: name, Msg: fmt.Sprintf("FLAC frame %d has %d bits per sample", n, fb)}
		}
		total += int(f.BlockSize) * nch
		if total > limit {
			return nil, &UnsupportedError{File: name, Msg: fmt.Sprintf("too long: more than the %d samples whirlfit holds in memory; cut the recording into parts", limit)}
		}
		scale := float32(1 / float64(uint64(1)<<(fb-1)))
		for c, sf := range f.Subframes {
			if len(sf.Samples) != len(f.Subframes[0].Samples) {
				return nil, &FormatError{File: name, Msg: fmt.Sprintf("FLAC frame %d: channels of unequal length", n)}
			}
			ch := chans[c]
			for _, v := range sf.Samples {
				ch = append(ch, float32(v)*scale)
			}
			chans[c] = ch
		}
	}
	if info.NSamples != 0 && uint64(len(chans[0])) < info.NSamples {
		warnings = append(warnings, fmt.Sprintf("truncated: %d of the %d samples per channel the header announces", len(chans[0]), info.NSamples))
	}
	return &Audio{
		Container:  "FLAC",
		Codec:      "FLAC",
		SampleRate: rate,
		Bits:       bits,
		Channels:   chans,
		Warnings:   warnings,
	}, nil
}

// recoverDecoder turns a panic inside a third-party decoder into a
// FormatError, so that damaged input never brings the program down.
func recoverDecoder(name, format string, err *error) {
	if r := recover(); r != nil {
		*err = &FormatError{File: name, Msg: fmt.Sprintf("damaged %s data (the decoder failed: %v)", format, r)}
	}
}
