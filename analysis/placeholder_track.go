package analysis

// TEMPORARY scaffolding so the package builds while the tracker is written;
// the tracker's author deletes this file.

import (
	"context"
	"errors"

	"whirlfit/dsp"
)

// TrackConfig tunes the ridge tracker.
type TrackConfig struct {
	Blades         int
	MinShaftHz     float64
	MaxShaftHz     float64
	STFT           dsp.STFTConfig
	MaxAccelHzPerS float64
}

// TrackSignal tracks rotor speed.
func TrackSignal(ctx context.Context, sig dsp.Signal, cfg TrackConfig, progress func(done, total int)) (*Track, *dsp.Spectrogram, error) {
	return nil, nil, errors.New("tracker not written yet")
}
