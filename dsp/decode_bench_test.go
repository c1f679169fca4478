package dsp

import (
	"bytes"
	"encoding/binary"
	"math"
	"testing"

	"github.com/go-audio/wav"
)

// benchWAV is 60 s of a 16-bit 48 kHz mono sine as WAV bytes.
func benchWAV(b *testing.B) []byte {
	b.Helper()
	const fs, n = 48000, 48000 * 60
	pcm := make([]byte, 2*n)
	for i := range n {
		v := int16(math.Round(16384 * math.Sin(2*math.Pi*1000*float64(i)/fs)))
		binary.LittleEndian.PutUint16(pcm[2*i:], uint16(v))
	}
	return wavSpec{rate: fs, data: pcm, dataSize: -1}.bytes()
}

// BenchmarkDecodeWAV16Mono60s decodes 60 s of 16-bit 48 kHz mono from
// memory into float32.
func BenchmarkDecodeWAV16Mono60s(b *testing.B) {
	data := benchWAV(b)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Decode("bench.wav", data); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkGoAudioFullPCMBuffer is the same bytes through
// github.com/go-audio/wav v1.1.0 (ints only, no float conversion).
func BenchmarkGoAudioFullPCMBuffer(b *testing.B) {
	data := benchWAV(b)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		buf, err := wav.NewDecoder(bytes.NewReader(data)).FullPCMBuffer()
		if err != nil || len(buf.Data) != 48000*60 {
			b.Fatal(err)
		}
	}
}
