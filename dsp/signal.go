package dsp

import (
	"fmt"
)

// Mix selects the average of all channels where a channel index is expected.
const Mix = -1

// Audio is a decoded recording: every channel as float32 samples in [-1, 1].
type Audio struct {
	// Container names the file type ("WAV", "FLAC", "MP3", or what ffmpeg
	// reported), Codec the sample coding inside it ("PCM", "IEEE float", …).
	Container string
	Codec     string
	// SampleRate in samples per second per channel.
	SampleRate int
	// Bits is the number of valid bits per sample of the source coding
	// (0 where the coding has none, as in MP3).
	Bits int
	// Channels holds one slice of samples per channel, all of one length.
	Channels [][]float32
	// NonFinite counts NaN or ±Inf samples found in a float file; they are
	// replaced by 0 so that they never propagate into the analysis.
	NonFinite int
	// Warnings lists recoverable faults met while decoding (for example a
	// data chunk that claims more bytes than the file holds).
	Warnings []string
}

// Frames returns the number of samples per channel.
func (a *Audio) Frames() int {
	if len(a.Channels) == 0 {
		return 0
	}
	return len(a.Channels[0])
}

// DurationS returns the length of the recording in seconds.
func (a *Audio) DurationS() float64 {
	if a.SampleRate <= 0 {
		return 0
	}
	return float64(a.Frames()) / float64(a.SampleRate)
}

// Signal returns one channel (0-based) or, for Mix, the mean of all channels.
// The returned samples share no memory with a when a mix is formed; a single
// channel is returned without copying.
func (a *Audio) Signal(channel int) (Signal, error) {
	if len(a.Channels) == 0 {
		return Signal{}, fmt.Errorf("dsp: recording has no channels")
	}
	fs := float64(a.SampleRate)
	if channel == Mix {
		if len(a.Channels) == 1 {
			return Signal{Samples: a.Channels[0], SampleRate: fs}, nil
		}
		out := make([]float32, a.Frames())
		inv := 1 / float32(len(a.Channels))
		for _, ch := range a.Channels {
			for i, v := range ch {
				out[i] += v * inv
			}
		}
		return Signal{Samples: out, SampleRate: fs}, nil
	}
	if channel < 0 || channel >= len(a.Channels) {
		return Signal{}, fmt.Errorf("dsp: channel %d out of range: the recording has %d channel(s), numbered from 0", channel, len(a.Channels))
	}
	return Signal{Samples: a.Channels[channel], SampleRate: fs}, nil
}

// Signal is one channel of audio ready for analysis.
type Signal struct {
	Samples []float32
	// SampleRate in Hz.
	SampleRate float64
}

// DurationS returns the length of the signal in seconds.
func (s Signal) DurationS() float64 {
	if s.SampleRate <= 0 {
		return 0
	}
	return float64(len(s.Samples)) / s.SampleRate
}
