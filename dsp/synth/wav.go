package synth

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"

	"github.com/go-audio/audio"
	"github.com/go-audio/wav"
)

// Sample codings accepted by WriteWAV.
const (
	PCM16   = 16 // 16-bit signed integer PCM
	PCM24   = 24 // 24-bit signed integer PCM
	Float32 = 32 // 32-bit IEEE float (WAVE_FORMAT_IEEE_FLOAT)
)

// WriteWAV writes channels (one slice per channel, all of one length) as a
// WAV file: bits = PCM16 or PCM24 through go-audio/wav's encoder, Float32 as
// IEEE float written here (go-audio/wav's encoder writes integers only).
// Samples are clamped to [-1, 1]; PCM rounds x·(2^(bits−1) − 1).
func WriteWAV(w io.WriteSeeker, channels [][]float32, sampleRate, bits int) error {
	if len(channels) == 0 {
		return errors.New("synth: WriteWAV: no channels")
	}
	n := len(channels[0])
	for _, ch := range channels {
		if len(ch) != n {
			return errors.New("synth: WriteWAV: channels differ in length")
		}
	}
	if sampleRate <= 0 {
		return fmt.Errorf("synth: WriteWAV: sample rate %d", sampleRate)
	}
	switch bits {
	case PCM16, PCM24:
		return writePCM(w, channels, sampleRate, bits)
	case Float32:
		return writeFloat(w, channels, sampleRate)
	}
	return fmt.Errorf("synth: WriteWAV: unsupported coding %d bits (want 16, 24 or 32 float)", bits)
}

func writePCM(w io.WriteSeeker, channels [][]float32, sampleRate, bits int) error {
	nch := len(channels)
	enc := wav.NewEncoder(w, sampleRate, bits, nch, 1)
	full := float64(int(1)<<(bits-1) - 1)
	const chunk = 4096
	buf := &audio.IntBuffer{
		Format:         &audio.Format{NumChannels: nch, SampleRate: sampleRate},
		SourceBitDepth: bits,
		Data:           make([]int, 0, chunk*nch),
	}
	n := len(channels[0])
	for start := 0; start < n; start += chunk {
		end := min(start+chunk, n)
		buf.Data = buf.Data[:0]
		for i := start; i < end; i++ {
			for _, ch := range channels {
				v := max(-1, min(1, float64(ch[i])))
				if math.IsNaN(v) {
					v = 0
				}
				buf.Data = append(buf.Data, int(math.Round(v*full)))
			}
		}
		if err := enc.Write(buf); err != nil {
			return fmt.Errorf("synth: WriteWAV: %w", err)
		}
	}
	if n == 0 {
		// The encoder writes its header with the first buffer.
		if err := enc.Write(buf); err != nil {
			return fmt.Errorf("synth: WriteWAV: %w", err)
		}
	}
	if err := enc.Close(); err != nil {
		return fmt.Errorf("synth: WriteWAV: %w", err)
	}
	return nil
}

// writeFloat writes a WAVE_FORMAT_IEEE_FLOAT (3) file with a fact chunk.
func writeFloat(w io.Writer, channels [][]float32, sampleRate int) error {
	nch := len(channels)
	n := len(channels[0])
	dataLen := uint64(n) * uint64(nch) * 4
	if dataLen > math.MaxUint32-64 {
		return errors.New("synth: WriteWAV: too long for a RIFF file")
	}
	h := make([]byte, 0, 58)
	le := binary.LittleEndian
	h = append(h, "RIFF"...)
	h = le.AppendUint32(h, uint32(4+(8+18)+(8+4)+8+dataLen))
	h = append(h, "WAVE"...)
	h = append(h, "fmt "...)
	h = le.AppendUint32(h, 18)
	h = le.AppendUint16(h, 3) // WAVE_FORMAT_IEEE_FLOAT
	h = le.AppendUint16(h, uint16(nch))
	h = le.AppendUint32(h, uint32(sampleRate))
	h = le.AppendUint32(h, uint32(sampleRate*nch*4))
	h = le.AppendUint16(h, uint16(nch*4))
	h = le.AppendUint16(h, 32)
	h = le.AppendUint16(h, 0) // cbSize
	h = append(h, "fact"...)
	h = le.AppendUint32(h, 4)
	h = le.AppendUint32(h, uint32(n))
	h = append(h, "data"...)
	h = le.AppendUint32(h, uint32(dataLen))
	if _, err := w.Write(h); err != nil {
		return fmt.Errorf("synth: WriteWAV: %w", err)
	}
	const chunk = 4096
	b := make([]byte, 0, chunk*nch*4)
	for start := 0; start < n; start += chunk {
		b = b[:0]
		for i := start; i < min(start+chunk, n); i++ {
			for _, ch := range channels {
				v := max(-1, min(1, ch[i]))
				if v != v {
					v = 0
				}
				b = le.AppendUint32(b, math.Float32bits(v))
			}
		}
		if _, err := w.Write(b); err != nil {
			return fmt.Errorf("synth: WriteWAV: %w", err)
		}
	}
	return nil
}

// EncodeWAV returns the WAV file WriteWAV would write, in memory.
func EncodeWAV(channels [][]float32, sampleRate, bits int) ([]byte, error) {
	var m memFile
	if err := WriteWAV(&m, channels, sampleRate, bits); err != nil {
		return nil, err
	}
	return m.buf, nil
}

// memFile is an in-memory io.WriteSeeker.
type memFile struct {
	buf []byte
	pos int
}

func (m *memFile) Write(p []byte) (int, error) {
	if end := m.pos + len(p); end > len(m.buf) {
		m.buf = append(m.buf, make([]byte, end-len(m.buf))...)
	}
	copy(m.buf[m.pos:], p)
	m.pos += len(p)
	return len(p), nil
}

func (m *memFile) Seek(off int64, whence int) (int64, error) {
	var p int64
	switch whence {
	case io.SeekStart:
		p = off
	case io.SeekCurrent:
		p = int64(m.pos) + off
	case io.SeekEnd:
		p = int64(len(m.buf)) + off
	default:
		return 0, errors.New("synth: bad whence")
	}
	if p < 0 {
		return 0, errors.New("synth: negative position")
	}
	m.pos = int(p)
	return p, nil
}
