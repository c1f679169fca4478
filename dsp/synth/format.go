package synth

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
)

// Format is a file format WriteFile can produce.
type Format string

// Formats. WAV is written here; the others are encoded by ffmpeg from a
// temporary 32-bit float WAV, as a recorder or phone would store them.
const (
	WAV16    Format = "wav16"  // 16-bit PCM WAV
	WAV24    Format = "wav24"  // 24-bit PCM WAV
	WAVFloat Format = "wavf32" // 32-bit IEEE float WAV
	FLAC     Format = "flac"   // FLAC, 16-bit
	MP3      Format = "mp3"    // MP3 (LAME), 128 kbit/s
	M4A      Format = "m4a"    // AAC in MP4, 128 kbit/s
	OGG      Format = "ogg"    // Vorbis in Ogg, quality 4
	Opus     Format = "opus"   // Opus in Ogg, 96 kbit/s; decodes at 48 kHz whatever the input rate
)

// Ext returns the usual file-name extension of the format, with the dot.
func (f Format) Ext() string {
	switch f {
	case WAV16, WAV24, WAVFloat:
		return ".wav"
	}
	return "." + string(f)
}

// Bits returns the WriteWAV coding of a WAV format (0 for the others).
func (f Format) Bits() int {
	switch f {
	case WAV16:
		return PCM16
	case WAV24:
		return PCM24
	case WAVFloat:
		return Float32
	}
	return 0
}

// ErrNoEncoder reports that a compressed format was asked for and ffmpeg is
// not on PATH.
var ErrNoEncoder = errors.New("synth: ffmpeg not on PATH: cannot encode this format")

// ffmpegArgs are the codec arguments for each compressed format.
var ffmpegArgs = map[Format][]string{
	FLAC: {"-c:a", "flac", "-sample_fmt", "s16"},
	MP3:  {"-c:a", "libmp3lame", "-b:a", "128k"},
	M4A:  {"-c:a", "aac", "-b:a", "128k"},
	OGG:  {"-c:a", "libvorbis", "-q:a", "4"},
	Opus: {"-c:a", "libopus", "-b:a", "96k"},
}

// WriteFile writes channels to path in format f. WAV formats need nothing
// outside Go; compressed ones run ffmpeg (with an argument list, never a
// shell) and return ErrNoEncoder when it is missing.
func WriteFile(ctx context.Context, path string, channels [][]float32, sampleRate int, f Format) error {
	if bits := f.Bits(); bits != 0 {
		data, err := EncodeWAV(channels, sampleRate, bits)
		if err != nil {
			return err
		}
		return os.WriteFile(path, data, 0o644)
	}
	args, ok := ffmpegArgs[f]
	if !ok {
		return fmt.Errorf("synth: unknown format %q", f)
	}
	ff, err := exec.LookPath("ffmpeg")
	if err != nil {
		return ErrNoEncoder
	}
	tmp, err := os.CreateTemp(filepath.Dir(path), ".synth-*.wav")
	if err != nil {
		return err
	}
	defer os.Remove(tmp.Name())
	data, err := EncodeWAV(channels, sampleRate, Float32)
	if err == nil {
		_, err = tmp.Write(data)
	}
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return err
	}
	cmd := exec.CommandContext(ctx, ff, append(append([]string{"-nostdin", "-y", "-loglevel", "error", "-i", tmp.Name()}, args...), path)...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Run(); err != nil {
		return fmt.Errorf("synth: ffmpeg encoding %s: %v: %s", f, err, strings.TrimSpace(stderr.String()))
	}
	return nil
}
