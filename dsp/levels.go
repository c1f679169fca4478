package dsp

import (
	"math"
	"strings"
)

// SilenceDBFS is the level reported for digital silence, whose true level
// is −∞ dBFS. It lies below the quantization floor of every coding whirlfit
// reads (about −193 dBFS for 32-bit integers) and keeps JSON output finite.
const SilenceDBFS = -200

// LevelStats are the levels of a recording over all its channels.
type LevelStats struct {
	// PeakDBFS is 20·log10 of the largest |sample|, where 1.0 is full
	// scale; RMSDBFS is 20·log10 of the root mean square over every sample
	// of every channel. A full-scale sine therefore reads 0 dBFS peak and
	// −3.01 dBFS RMS (no AES17 +3 dB offset). Silence reads SilenceDBFS.
	PeakDBFS, RMSDBFS float64
	// Clipped counts samples at full scale: |x| ≥ 1 − 2^−(bits−1), i.e. the
	// largest positive code or beyond, for integer sources (WAV PCM, FLAC,
	// and what ffmpeg reports a bit depth for; MP3 counts as 16-bit, the
	// precision its decoder delivers); |x| ≥ 1.0 for float sources (IEEE
	// float WAV) and for lossy codings decoded by ffmpeg (no bit depth).
	Clipped int
}

// Levels measures the peak and RMS level and counts clipped samples.
func Levels(a *Audio) LevelStats {
	limit := clipLimit(a)
	var peak float32
	var sum float64
	n, clipped := 0, 0
	for _, ch := range a.Channels {
		var s float64 // per channel, then summed: keeps rounding small
		for _, v := range ch {
			m := v
			if m < 0 {
				m = -m
			}
			if m > peak {
				peak = m
			}
			if m >= limit {
				clipped++
			}
			s += float64(v) * float64(v)
		}
		sum += s
		n += len(ch)
	}
	st := LevelStats{PeakDBFS: SilenceDBFS, RMSDBFS: SilenceDBFS, Clipped: clipped}
	if peak > 0 {
		st.PeakDBFS = max(20*math.Log10(float64(peak)), SilenceDBFS)
	}
	if n > 0 && sum > 0 {
		st.RMSDBFS = max(10*math.Log10(sum/float64(n)), SilenceDBFS)
	}
	return st
}

// clipLimit returns the magnitude at or above which a sample counts as
// clipped.
func clipLimit(a *Audio) float32 {
	bits := a.Bits
	switch {
	case a.Container == "MP3":
		bits = 16
	case strings.Contains(a.Codec, "float"):
		return 1
	}
	if bits < 2 || bits > 32 {
		return 1 // lossy codings decoded by ffmpeg: float output
	}
	return float32(1 - math.Ldexp(1, -(bits-1)))
}
