package dsp

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"io"

	"github.com/hajimehoshi/go-mp3"
)

// mp3Header is the part of an MPEG audio frame header that sniffing and
// channel counting need (ISO/IEC 11172-3 and 13818-3 frame header layout).
type mp3Header struct {
	sampleRate int
	channels   int
	frameLen   int // bytes, including the header
}

var (
	mp3Bitrates = [2][16]int{ // kbit/s by [MPEG-1 ? 0 : 1][index], Layer III
		{0, 32, 40, 48, 56, 64, 80, 96, 112, 128, 160, 192, 224, 256, 320, 0},
		{0, 8, 16, 24, 32, 40, 48, 56, 64, 80, 96, 112, 128, 144, 160, 0},
	}
	mp3Rates = [4][3]int{ // Hz by [version bits][index]
		{11025, 12000, 8000},  // MPEG-2.5
		{},                    // reserved
		{22050, 24000, 16000}, // MPEG-2
		{44100, 48000, 32000}, // MPEG-1
	}
)

// parseMP3Header parses a Layer III frame header at the start of b.
func parseMP3Header(b []byte) (mp3Header, bool) {
	if len(b) < 4 || b[0] != 0xFF || b[1]&0xE0 != 0xE0 {
		return mp3Header{}, false
	}
	version := int(b[1]>>3) & 3
	layer := int(b[1]>>1) & 3
	bi := int(b[2] >> 4)
	ri := int(b[2]>>2) & 3
	if version == 1 || layer != 1 || bi == 0 || bi == 15 || ri == 3 {
		return mp3Header{}, false
	}
	v2 := 0
	if version != 3 {
		v2 = 1
	}
	rate := mp3Rates[version][ri]
	pad := int(b[2]>>1) & 1
	coef := 144
	if v2 == 1 {
		coef = 72
	}
	h := mp3Header{sampleRate: rate, channels: 2, frameLen: coef*mp3Bitrates[v2][bi]*1000/rate + pad}
	if b[3]>>6 == 3 {
		h.channels = 1
	}
	return h, true
}

// mp3Gapless reads the Xing/Info frame that encoders put first, and the
// LAME tag inside it, from the frame at the start of b. It returns how many
// decoded samples to skip at the start and how many real samples follow
// (keep < 0 when unknown). Layout: the "Xing"/"Info" header follows the side
// information; the LAME extension follows the optional Xing fields, with
// the encoder delay and padding as two 12-bit numbers at its byte 21
// (LAME's "Mp3 Info Tag rev 1" specification).
func mp3Gapless(b []byte, h mp3Header) (skip, keep int, ok bool) {
	if len(b) < 4 {
		return 0, -1, false
	}
	mpeg1 := b[1]>>3&3 == 3
	side := 32
	switch {
	case mpeg1 && h.channels == 1, !mpeg1 && h.channels == 2:
		side = 17
	case !mpeg1:
		side = 9
	}
	samplesPerFrame := 1152
	if !mpeg1 {
		samplesPerFrame = 576
	}
	x := 4 + side
	if b[1]&1 == 0 { // CRC follows the header
		x += 2
	}
	frame := b[:min(len(b), h.frameLen)]
	if len(frame) < x+8 || (string(frame[x:x+4]) != "Xing" && string(frame[x:x+4]) != "Info") {
		return 0, -1, false
	}
	flags := binary.BigEndian.Uint32(frame[x+4:])
	p := x + 8
	frames := -1
	if flags&1 != 0 {
		if len(frame) < p+4 {
			return 0, -1, false
		}
		frames = int(binary.BigEndian.Uint32(frame[p:]))
		p += 4
	}
	for _, f := range []struct {
		bit  uint32
		size int
	}{{2, 4}, {4, 100}, {8, 4}} {
		if flags&f.bit != 0 {
			p += f.size
		}
	}
	// The Xing frame itself decodes to one frame of silence; a standard
	// Layer III decoder adds 529 samples of delay (common practice, the
	// figure LAME's documentation uses).
	const decoderDelay = 529
	skip, keep = samplesPerFrame+decoderDelay, -1
	if len(frame) >= p+24 {
		d := frame[p+21:]
		delay := int(d[0])<<4 | int(d[1])>>4
		padding := int(d[1]&0x0F)<<8 | int(d[2])
		skip += delay
		if frames > 0 && frames*samplesPerFrame > delay+padding {
			keep = frames*samplesPerFrame - delay - padding
		}
	}
	return skip, keep, true
}

// decodeMP3 decodes an MPEG Layer III stream through
// github.com/hajimehoshi/go-mp3, which always yields 16-bit stereo; a mono
// stream (by its first frame header) keeps one channel. When the stream
// starts with a Xing/Info frame, that frame, the decoder delay and the
// encoder delay and padding it records are trimmed, so that sample 0 is the
// encoder's first input sample; otherwise the decoder's delay remains.
// limit bounds the samples over all channels.
func decodeMP3(name string, data []byte, limit int) (a *Audio, err error) {
	defer recoverDecoder(name, "MP3", &err)
	nch := 2
	skip, keep := 0, -1
	for i := 0; i < min(len(data), 1<<16); i++ {
		if h, ok := parseMP3Header(data[i:]); ok && mp3Sync(data[i:]) {
			nch = h.channels
			skip, keep, _ = mp3Gapless(data[i:], h)
			break
		}
	}
	d, err := mp3.NewDecoder(bytes.NewReader(data))
	if err != nil {
		return nil, &FormatError{File: name, Msg: "bad MP3 stream: " + err.Error()}
	}
	const bytesPerFrame = 4 // go-mp3 output: 2 channels × 16 bits
	if n := d.Length() / bytesPerFrame; n > int64(limit/nch) {
		return nil, &UnsupportedError{File: name, Msg: fmt.Sprintf("too long: more than the %d samples whirlfit holds in memory; cut the recording into parts", limit)}
	}
	hint := 0
	if n := d.Length(); n > 0 {
		hint = int(n / bytesPerFrame)
	}
	chans := make([][]float32, nch)
	for c := range chans {
		chans[c] = make([]float32, 0, hint)
	}
	var warnings []string
	buf := make([]byte, 1<<16)
	carry := 0
	const s = 1.0 / (1 << 15)
	for {
		n, rerr := d.Read(buf[carry:])
		n += carry
		whole := n / bytesPerFrame * bytesPerFrame
		if len(chans[0])+whole/bytesPerFrame > limit/nch {
			return nil, &UnsupportedError{File: name, Msg: fmt.Sprintf("too long: more than the %d samples whirlfit holds in memory; cut the recording into parts", limit)}
		}
		for i := 0; i < whole; i += bytesPerFrame {
			chans[0] = append(chans[0], float32(int16(binary.LittleEndian.Uint16(buf[i:])))*s)
			if nch == 2 {
				chans[1] = append(chans[1], float32(int16(binary.LittleEndian.Uint16(buf[i+2:])))*s)
			}
		}
		carry = copy(buf, buf[whole:n])
		if rerr == io.EOF {
			break
		}
		if rerr != nil {
			if len(chans[0]) == 0 {
				return nil, &FormatError{File: name, Msg: "bad MP3 stream: " + rerr.Error()}
			}
			warnings = append(warnings, fmt.Sprintf("damaged MP3 frame after %d samples (%v); kept what came before", len(chans[0]), rerr))
			break
		}
	}
	if n := len(chans[0]); skip > 0 && n > skip {
		end := n
		if keep >= 0 && skip+keep <= n {
			end = skip + keep
		}
		for c := range chans {
			chans[c] = chans[c][skip:end:end]
		}
	}
	return &Audio{
		Container:  "MP3",
		Codec:      "MP3",
		SampleRate: d.SampleRate(),
		Channels:   chans,
		Warnings:   warnings,
	}, nil
}
